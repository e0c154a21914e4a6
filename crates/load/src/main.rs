//! `binodal-load`: drives a running binodal server with C connections and K requests in flight
//! for a fixed, bounded time per scenario, and reports requests per second, points per second,
//! p50, p99 and errors. The server's health check (`grpc.health.v1.Health/Check`) is measured in
//! the same run as the framework floor, and every binodal RPC is reported as a ratio to it. The
//! scenarios take turns in short rounds, so that the machine's background load weighs on the
//! floor and the RPCs alike.
//!
//! The tool only talks to loopback addresses unless `--allow-remote` is given, every call has a
//! timeout, and every scenario stops at its deadline: a run ends by itself.

mod drive;

use std::net::SocketAddr;
use std::time::Duration;

use anyhow::{Context as _, bail};
use clap::{Parser, ValueEnum};

use crate::drive::{Outcome, Plan, Scenario};

/// Drives a running binodal server for a bounded time and reports throughput and latency of
/// each RPC against the health check measured in the same run.
#[derive(Debug, Parser)]
#[command(name = "binodal-load", version)]
struct Flags {
    /// Server address, IP:PORT.
    #[arg(long, default_value = "127.0.0.1:50051", value_name = "IP:PORT")]
    address: SocketAddr,
    /// HTTP/2 connections to open (C); requests are spread over them.
    #[arg(long, default_value_t = 2, value_parser = clap::value_parser!(u32).range(1..=256))]
    connections: u32,
    /// Requests in flight at once across all connections (K).
    #[arg(long, default_value_t = 32, value_parser = clap::value_parser!(u32).range(1..=4096))]
    in_flight: u32,
    /// Measured seconds per scenario (1 to 600).
    #[arg(long, default_value_t = 10, value_parser = clap::value_parser!(u64).range(1..=600))]
    seconds: u64,
    /// Unmeasured warm-up seconds before each scenario (0 to 60).
    #[arg(long, default_value_t = 2, value_parser = clap::value_parser!(u64).range(0..=60))]
    warm_up_seconds: u64,
    /// Rounds: each scenario's measured time is cut into this many slices, and the scenarios
    /// take turns slice by slice, so that a change in the machine's background load during the
    /// run weighs on the health floor and the RPCs alike (1 to 60).
    #[arg(long, default_value_t = 5, value_parser = clap::value_parser!(u32).range(1..=60))]
    rounds: u32,
    /// Scenarios to run, in order; the health check always runs first as the floor.
    #[arg(long, value_delimiter = ',', default_value = "state,batch")]
    scenarios: Vec<ScenarioFlag>,
    /// Points per GetStateBatch request (1 to 1 000 000).
    #[arg(long, default_value_t = 1000, value_parser = clap::value_parser!(u32).range(1..=1_000_000))]
    batch_points: u32,
    /// Catalogue fluid to query.
    #[arg(long, default_value = "R-134a")]
    fluid: String,
    /// Worker threads of the tool's own runtime (it shares the machine with the server).
    #[arg(long, default_value_t = 1, value_parser = clap::value_parser!(u32).range(1..=64))]
    threads: u32,
    /// Allow an address outside the loopback range.
    #[arg(long)]
    allow_remote: bool,
}

/// A scenario named on the command line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
enum ScenarioFlag {
    /// GetState, one point per request.
    State,
    /// GetStateBatch, `--batch-points` points per request.
    Batch,
    /// GetSaturation at a temperature.
    Saturation,
}

fn main() -> anyhow::Result<()> {
    let flags = Flags::parse();
    if !flags.address.ip().is_loopback() && !flags.allow_remote {
        bail!(
            "--address {} is not a loopback address; pass --allow-remote to load another host",
            flags.address
        );
    }
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .worker_threads(flags.threads as usize)
        .enable_all()
        .build()
        .context("cannot start the tool's async runtime")?;
    runtime.block_on(run(flags))
}

async fn run(flags: Flags) -> anyhow::Result<()> {
    let plan = Plan::prepare(
        flags.address,
        flags.connections as usize,
        &flags.fluid,
        flags.batch_points as usize,
    )
    .await?;
    let slice = Duration::from_secs(flags.seconds) / flags.rounds;
    let warm_up = Duration::from_secs(flags.warm_up_seconds);
    let cpus = std::thread::available_parallelism().map_or(0, |n| n.get());
    println!(
        "binodal-load: {} | {} connection(s), {} in flight | {} s per scenario in {} rounds, \
         after {} s warm-up | {} tool thread(s) | {cpus} CPU(s) on this machine",
        flags.address,
        flags.connections,
        flags.in_flight,
        flags.seconds,
        flags.rounds,
        flags.warm_up_seconds,
        flags.threads
    );
    println!(
        "fluid {} ({}); state points span {:.1}-{:.1} K and {:.4}-{:.3} MPa; batch {} points per \
         request",
        flags.fluid,
        plan.fluid_id(),
        plan.temperature_span().0,
        plan.temperature_span().1,
        plan.pressure_span().0 / 1e6,
        plan.pressure_span().1 / 1e6,
        flags.batch_points
    );
    let mut scenarios = vec![Scenario::Health];
    scenarios.extend(flags.scenarios.iter().map(|s| match s {
        ScenarioFlag::State => Scenario::State,
        ScenarioFlag::Batch => Scenario::Batch,
        ScenarioFlag::Saturation => Scenario::Saturation,
    }));
    let in_flight = flags.in_flight as usize;
    if !warm_up.is_zero() {
        for &scenario in &scenarios {
            plan.drive(scenario, in_flight, warm_up).await;
        }
    }
    let mut outcomes: Vec<(Scenario, Outcome)> =
        scenarios.iter().map(|&s| (s, Outcome::default())).collect();
    for _ in 0..flags.rounds {
        for (scenario, total) in &mut outcomes {
            total.merge(plan.drive(*scenario, in_flight, slice).await);
        }
    }
    print_report(&outcomes);
    Ok(())
}

fn print_report(outcomes: &[(Scenario, Outcome)]) {
    let floor = outcomes
        .iter()
        .find(|(s, _)| *s == Scenario::Health)
        .map(|(_, o)| o.clone());
    println!();
    println!(
        "{:<12} {:>8} {:>11} {:>13} {:>9} {:>9} {:>8} {:>12} {:>14} {:>13}",
        "rpc",
        "bytes",
        "requests/s",
        "points/s",
        "p50 us",
        "p99 us",
        "errors",
        "point errs",
        "rate/health",
        "p99/health"
    );
    for (scenario, o) in outcomes {
        let (rate_ratio, p99_ratio) = match &floor {
            Some(f) if f.requests_per_second() > 0.0 && f.p99_us() > 0.0 => (
                format!("{:.3}", o.requests_per_second() / f.requests_per_second()),
                format!("{:.2}", o.p99_us() / f.p99_us()),
            ),
            _ => ("-".into(), "-".into()),
        };
        let points = if *scenario == Scenario::Health {
            "-".to_string()
        } else {
            format!("{:.0}", o.points_per_second())
        };
        println!(
            "{:<12} {:>8} {:>11.0} {:>13} {:>9.0} {:>9.0} {:>8} {:>12} {:>14} {:>13}",
            scenario.name(),
            o.response_bytes,
            o.requests_per_second(),
            points,
            o.p50_us(),
            o.p99_us(),
            o.errors,
            o.point_errors,
            rate_ratio,
            p99_ratio
        );
    }
    for (scenario, o) in outcomes {
        if let Some(first) = &o.first_error {
            println!("first error of {}: {first}", scenario.name());
        }
    }
}
