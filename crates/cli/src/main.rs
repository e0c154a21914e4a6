#[allow(dead_code)]
mod units;

fn main() {}
