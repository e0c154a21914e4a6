//! A bounded load test: the server binary held at high concurrency for a fixed time on loopback.
//!
//! It asserts what must hold under load: no call fails, and the server's resident memory does
//! not grow once warm. It prints the throughput, the latency percentiles and the peak resident
//! memory (docs/operations.md records them) but asserts none of them: speed belongs in the
//! criterion benchmarks, and these figures depend on the machine and on what else runs.

use std::time::{Duration, Instant};

use binodal_proto::v1 as pb;
use binodal_proto::v1::phase_service_client::PhaseServiceClient;
use tonic::transport::Endpoint;

use crate::cases::fluid;
use crate::util::process::{Launch, ServerProcess};

/// Connections the load is spread over.
const CONNECTIONS: usize = 8;
/// Calls in flight at once.
const CONCURRENCY: usize = 64;
/// Time before memory is taken as the warm baseline.
const WARM_UP: Duration = Duration::from_secs(2);
/// Time the load is held, warm-up included.
const HOLD: Duration = Duration::from_secs(6);
/// Growth of resident memory allowed after warm-up, as a fraction of the warm baseline (about
/// 1.4 MiB of 14 MiB). Memory that grows with the number of calls exceeds it: a leak of a few
/// tens of bytes per call over the tens of thousands of calls made here would. Allocator noise
/// stays well inside.
const MEMORY_GROWTH_ALLOWED: f64 = 0.10;

/// The call a worker makes on its `n`-th turn: states and saturation of the plant's fluids.
async fn one_call(
    client: &mut PhaseServiceClient<tonic::transport::Channel>,
    n: usize,
) -> Result<(), tonic::Status> {
    let fluids = ["R-717", "R-744", "R-134a", "R-290"];
    let name = fluids[n % fluids.len()];
    if n.is_multiple_of(2) {
        client
            .get_state(pb::GetStateRequest {
                fluid: fluid(name),
                temperature_k: 250.0 + (n % 50) as f64,
                pressure_pa: 1.0e5,
                ..Default::default()
            })
            .await?;
    } else {
        client
            .get_saturation(pb::GetSaturationRequest {
                fluid: fluid(name),
                condition: Some(pb::get_saturation_request::Condition::TemperatureK(
                    240.0 + (n % 40) as f64,
                )),
                ..Default::default()
            })
            .await?;
    }
    Ok(())
}

fn percentile(sorted: &[Duration], fraction: f64) -> Duration {
    let index = ((sorted.len() as f64 - 1.0) * fraction).round() as usize;
    sorted[index]
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn held_load_has_no_errors_and_flat_memory() {
    let server = ServerProcess::start(&Launch::default()).await;
    let mut channels = Vec::new();
    for _ in 0..CONNECTIONS {
        channels.push(
            Endpoint::from_shared(server.url())
                .expect("endpoint")
                .connect()
                .await
                .expect("connect"),
        );
    }
    let started = Instant::now();
    let deadline = started + HOLD;
    let mut workers = Vec::new();
    for worker in 0..CONCURRENCY {
        let mut client = PhaseServiceClient::new(channels[worker % CONNECTIONS].clone());
        workers.push(tokio::spawn(async move {
            let (mut latencies, mut errors) = (Vec::new(), Vec::new());
            let mut n = worker;
            while Instant::now() < deadline {
                let call_started = Instant::now();
                match one_call(&mut client, n).await {
                    Ok(()) => latencies.push(call_started.elapsed()),
                    Err(status) => errors.push(status),
                }
                n += CONCURRENCY;
            }
            (latencies, errors)
        }));
    }
    // Resident memory, sampled every 100 ms while the load runs.
    let mut samples = Vec::new();
    while Instant::now() < deadline {
        samples.push((started.elapsed(), server.resident_kib()));
        tokio::time::sleep(Duration::from_millis(100)).await;
    }
    let (mut latencies, mut errors) = (Vec::new(), Vec::new());
    for worker in workers {
        let (l, e) = worker.await.expect("worker");
        latencies.extend(l);
        errors.extend(e);
    }
    let elapsed = started.elapsed();
    samples.push((elapsed, server.resident_kib()));

    latencies.sort_unstable();
    let calls = latencies.len();
    let peak_kib = samples.iter().map(|(_, kib)| *kib).max().unwrap_or(0);
    let warm: Vec<u64> = samples
        .iter()
        .filter(|(at, _)| *at >= WARM_UP)
        .map(|(_, kib)| *kib)
        .collect();
    let (warm_kib, end_kib) = (warm[0], *warm.last().expect("samples after warm-up"));
    println!(
        "load: {CONCURRENCY} calls in flight over {CONNECTIONS} connections for {:.1} s: \
         {calls} calls, {:.0} calls/s, p50 {:.2} ms, p99 {:.2} ms, peak RSS {:.1} MiB, \
         RSS after warm-up {:.1} MiB, at the end {:.1} MiB, {} errors",
        elapsed.as_secs_f64(),
        calls as f64 / elapsed.as_secs_f64(),
        percentile(&latencies, 0.50).as_secs_f64() * 1e3,
        percentile(&latencies, 0.99).as_secs_f64() * 1e3,
        peak_kib as f64 / 1024.0,
        warm_kib as f64 / 1024.0,
        end_kib as f64 / 1024.0,
        errors.len(),
    );
    assert!(
        errors.is_empty(),
        "calls failed under load: {:?}",
        &errors[..errors.len().min(5)]
    );
    assert!(calls > CONCURRENCY, "the load ran");
    assert!(
        end_kib as f64 <= warm_kib as f64 * (1.0 + MEMORY_GROWTH_ALLOWED),
        "resident memory grew from {warm_kib} KiB to {end_kib} KiB under steady load"
    );
}
