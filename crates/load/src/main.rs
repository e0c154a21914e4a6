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
    /// Process id of the server (on this machine): its CPU time is read from /proc before and
    /// after every slice, and the report adds the server's CPU per call for each RPC and its
    /// ratio to the health check's: the share of the health check's throughput the server
    /// could sustain with the load coming from other machines.
    #[arg(long, value_name = "PID")]
    server_pid: Option<u32>,
}

/// CPU time (user + system) of process `pid` so far, seconds, from `/proc/<pid>/stat`
/// (fields 14 and 15, in clock ticks of 1/100 s, the Linux `USER_HZ`).
fn process_cpu_s(pid: &str) -> anyhow::Result<f64> {
    let path = format!("/proc/{pid}/stat");
    let text = std::fs::read_to_string(&path).with_context(|| format!("reading {path}"))?;
    // The command name (field 2) is in parentheses and may hold spaces: split after it.
    let after = text
        .rsplit_once(')')
        .map(|(_, rest)| rest)
        .with_context(|| format!("{path}: no command field"))?;
    let fields: Vec<&str> = after.split_whitespace().collect();
    let ticks = |i: usize| -> anyhow::Result<f64> {
        fields
            .get(i)
            .and_then(|v| v.parse::<f64>().ok())
            .with_context(|| format!("{path}: field {} unreadable", i + 3))
    };
    // Fields 14 (utime) and 15 (stime) are at 11 and 12 after the command name.
    Ok((ticks(11)? + ticks(12)?) / 100.0)
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
    /// The health check again, reported against the floor: the spread of two measurements of
    /// one RPC in the same run.
    Control,
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
        ScenarioFlag::Control => Scenario::Control,
    }));
    let in_flight = flags.in_flight as usize;
    if !warm_up.is_zero() {
        for &scenario in &scenarios {
            plan.drive(scenario, in_flight, warm_up).await;
        }
    }
    let mut outcomes: Vec<(Scenario, Outcome)> =
        scenarios.iter().map(|&s| (s, Outcome::default())).collect();
    let server = flags.server_pid.map(|pid| pid.to_string());
    let mut cpu: Vec<(f64, f64)> = vec![(0.0, 0.0); outcomes.len()];
    for _ in 0..flags.rounds {
        for ((scenario, total), (server_s, tool_s)) in outcomes.iter_mut().zip(&mut cpu) {
            let before = (
                server.as_deref().map(process_cpu_s).transpose()?,
                process_cpu_s("self")?,
            );
            total.merge(plan.drive(*scenario, in_flight, slice).await);
            let after = (
                server.as_deref().map(process_cpu_s).transpose()?,
                process_cpu_s("self")?,
            );
            *server_s += after.0.unwrap_or(0.0) - before.0.unwrap_or(0.0);
            *tool_s += after.1 - before.1;
        }
    }
    print_report(&outcomes);
    print_cpu(&outcomes, &cpu, server.is_some());
    Ok(())
}

/// CPU per call of the server (when its pid was given) and of this tool, per RPC.
fn print_cpu(outcomes: &[(Scenario, Outcome)], cpu: &[(f64, f64)], with_server: bool) {
    let per_call = |seconds: f64, o: &Outcome| 1e6 * seconds / (o.calls.max(1) as f64);
    let health = outcomes
        .iter()
        .zip(cpu)
        .find(|((s, _), _)| *s == Scenario::Health)
        .map(|((_, o), &(server_s, _))| per_call(server_s, o));
    println!();
    println!(
        "{:<12} {:>18} {:>22} {:>16}",
        "rpc", "server CPU us/call", "health/rpc server CPU", "tool CPU us/call"
    );
    for ((scenario, o), &(server_s, tool_s)) in outcomes.iter().zip(cpu) {
        let (server, ratio) = match (with_server, health) {
            (true, Some(h)) => (
                format!("{:.1}", per_call(server_s, o)),
                format!("{:.3}", h / per_call(server_s, o)),
            ),
            _ => ("-".into(), "-".into()),
        };
        println!(
            "{:<12} {:>18} {:>22} {:>16.1}",
            scenario.name(),
            server,
            ratio,
            per_call(tool_s, o)
        );
    }
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
        let points = if matches!(scenario, Scenario::Health | Scenario::Control) {
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
