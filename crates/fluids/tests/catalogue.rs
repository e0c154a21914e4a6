//! Integration tests of the fluid catalogue: names, the accuracy record, consistency of the
//! data, user files and safety information.

#[path = "catalogue/accuracy.rs"]
mod accuracy;
#[path = "catalogue/blends.rs"]
mod blends;
#[path = "catalogue/consistency.rs"]
mod consistency;
#[path = "catalogue/gaps.rs"]
mod gaps;
#[path = "catalogue/names.rs"]
mod names;
#[path = "catalogue/safety.rs"]
mod safety;
#[path = "catalogue/user_files.rs"]
mod user_files;
