//! Faults, with the real server binary as child processes on loopback:
//!
//! - SIGTERM while calls are in flight: every one of them is answered in full, then the process
//!   exits cleanly;
//! - SIGKILL of one of three replicas while a client balances over them: no idempotent call is
//!   lost (the client retries with backoff, `examples/support/resilience.rs`);
//! - a restart with the same settings: the same answers, byte for byte.
//!
//! Each test is bounded in count and time; no test asserts how long anything takes.

use std::sync::Arc;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

use binodal_proto::v1 as pb;
use binodal_proto::v1::phase_service_client::PhaseServiceClient;
use prost::Message as _;
use tonic::transport::{Channel, Endpoint};

use crate::cases::fluid;
use crate::util::process::{Launch, PROCESS_GUARD, ServerProcess, sample};
use crate::util::resilience::{Backoff, balanced_channel, call_with_retry};

async fn connect(url: &str) -> Channel {
    Endpoint::from_shared(url.to_owned())
        .expect("endpoint")
        .connect()
        .await
        .expect("connect to the server process")
}

/// Waits until the server reports at least `wanted` gRPC calls in progress.
async fn wait_for_active_calls(server: &ServerProcess, wanted: f64) {
    let started = Instant::now();
    loop {
        let (_, page) = server.scrape("/metrics").await;
        if sample(&page, "binodal_active_streams").is_some_and(|active| active >= wanted) {
            return;
        }
        assert!(
            started.elapsed() < PROCESS_GUARD,
            "the server never had {wanted} calls in progress:\n{page}"
        );
        tokio::time::sleep(Duration::from_millis(10)).await;
    }
}

/// Points per batch in the drain test, so that each call is still being computed when the signal
/// comes: states of the blend R-407C go through bubble- and dew-point solves (no precomputed
/// curve), a fraction of a millisecond each.
const DRAIN_POINTS: usize = 3_000;
/// Calls in flight when SIGTERM is sent, each on its own connection.
const DRAIN_CALLS: usize = 6;

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn sigterm_lets_every_call_in_flight_finish() {
    let mut server = ServerProcess::start(
        &Launch::default()
            .with_metrics()
            .env("BINODAL_LIMITS__MAX_MESSAGE_SIZE_BYTES", 64 * 1024 * 1024)
            .env("BINODAL_LIMITS__MAX_BATCH_LENGTH", DRAIN_POINTS),
    )
    .await;
    let request = pb::GetStateBatchRequest {
        fluid: fluid("R-407C"),
        temperatures_k: (0..DRAIN_POINTS)
            .map(|i| 200.0 + 200.0 * i as f64 / DRAIN_POINTS as f64)
            .collect(),
        pressures_pa: vec![1.0e5; DRAIN_POINTS],
        ..Default::default()
    };
    let mut calls = Vec::new();
    for _ in 0..DRAIN_CALLS {
        let mut client = PhaseServiceClient::new(connect(&server.url()).await)
            .max_decoding_message_size(64 * 1024 * 1024);
        let request = request.clone();
        calls.push(tokio::spawn(async move {
            client.get_state_batch(request).await
        }));
    }
    wait_for_active_calls(&server, DRAIN_CALLS as f64).await;
    server.signal("TERM");

    for call in calls {
        let answer = call
            .await
            .expect("call task")
            .expect("a call in flight at SIGTERM is answered")
            .into_inner();
        assert_eq!(answer.phases.len(), DRAIN_POINTS, "the answer is complete");
    }
    let status = server.wait_exit().await;
    assert!(status.success(), "clean exit after draining: {status}");
    // The server had calls in flight when the shutdown began: the drain was exercised.
    let in_flight = server
        .log_lines()
        .iter()
        .filter_map(|line| serde_json::from_str::<serde_json::Value>(line).ok())
        .find_map(|line| line["fields"]["calls_in_flight"].as_u64())
        .expect("the shutdown line counts the calls in flight");
    assert!(in_flight >= 1, "no call was in flight at SIGTERM");
    println!("SIGTERM with {in_flight} of {DRAIN_CALLS} calls in flight: all answered in full");
    assert!(
        Endpoint::from_shared(server.url())
            .expect("endpoint")
            .connect()
            .await
            .is_err(),
        "the port is closed after exit"
    );
}

/// Replicas the client balances over.
const REPLICAS: usize = 3;
/// Calls in all, and how many have finished when one replica is killed.
const CALLS: usize = 1_500;
const KILL_AFTER: usize = 400;
/// Calls in flight at once.
const WORKERS: usize = 12;

/// The saturation call for call number `index`: ammonia at -40 to +40 degC (the Harrowgate Cold
/// Store's pump NH3-P101 suction range).
fn saturation_request(index: usize) -> pb::GetSaturationRequest {
    pb::GetSaturationRequest {
        fluid: fluid("R-717"),
        condition: Some(pb::get_saturation_request::Condition::TemperatureK(
            233.15 + (index % 81) as f64,
        )),
        ..Default::default()
    }
}

/// Completed `GetSaturation` calls of a replica, from its metrics.
async fn served(server: &ServerProcess) -> f64 {
    let (_, page) = server.scrape("/metrics").await;
    sample(
        &page,
        "binodal_requests_total{method=\"/binodal.v1.PhaseService/GetSaturation\",code=\"OK\"}",
    )
    .unwrap_or(0.0)
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn sigkill_of_one_replica_costs_no_idempotent_call() {
    let mut replicas = Vec::new();
    for _ in 0..REPLICAS {
        replicas.push(ServerProcess::start(&Launch::default().with_metrics()).await);
    }
    let urls: Vec<String> = replicas.iter().map(ServerProcess::url).collect();

    // The expected answers, from replica 0 before any fault.
    let mut direct = PhaseServiceClient::new(connect(&urls[0]).await);
    let mut expected = Vec::new();
    for index in 0..81 {
        let answer = direct
            .get_saturation(saturation_request(index))
            .await
            .expect("reference answer")
            .into_inner();
        expected.push(answer.encode_to_vec());
    }
    let expected = Arc::new(expected);

    let client = PhaseServiceClient::new(balanced_channel(&urls).expect("balanced channel"));
    let next = Arc::new(AtomicUsize::new(0));
    let finished = Arc::new(AtomicUsize::new(0));
    let mut workers = Vec::new();
    for _ in 0..WORKERS {
        let (client, next, finished, expected) = (
            client.clone(),
            Arc::clone(&next),
            Arc::clone(&finished),
            Arc::clone(&expected),
        );
        workers.push(tokio::spawn(async move {
            let (mut wrong, mut lost, mut attempts) = (Vec::new(), Vec::new(), 0);
            loop {
                let index = next.fetch_add(1, Ordering::Relaxed);
                if index >= CALLS {
                    break;
                }
                let outcome = call_with_retry(&Backoff::default(), || {
                    let mut client = client.clone();
                    async move { client.get_saturation(saturation_request(index)).await }
                })
                .await;
                attempts += outcome.attempts;
                match outcome.result {
                    Ok(answer) if answer.get_ref().encode_to_vec() == expected[index % 81] => {}
                    Ok(_) => wrong.push(index),
                    Err(status) => lost.push((index, status)),
                }
                finished.fetch_add(1, Ordering::Relaxed);
            }
            (wrong, lost, attempts)
        }));
    }

    let started = Instant::now();
    while finished.load(Ordering::Relaxed) < KILL_AFTER {
        assert!(started.elapsed() < PROCESS_GUARD, "calls do not progress");
        tokio::time::sleep(Duration::from_millis(5)).await;
    }
    for replica in &replicas {
        assert!(
            served(replica).await > 0.0,
            "the client balances over every replica before the fault"
        );
    }
    replicas[1].kill();

    let (mut wrong, mut lost, mut attempts) = (Vec::new(), Vec::new(), 0);
    for worker in workers {
        let (w, l, a) = worker.await.expect("worker");
        wrong.extend(w);
        lost.extend(l);
        attempts += a;
    }
    println!(
        "SIGKILL of 1 of {REPLICAS} replicas: {CALLS} calls, {attempts} attempts, {} lost",
        lost.len()
    );
    assert!(lost.is_empty(), "lost calls: {lost:?}");
    assert!(wrong.is_empty(), "calls with a different answer: {wrong:?}");
    let survivors = served(&replicas[0]).await + served(&replicas[2]).await;
    assert!(
        survivors > KILL_AFTER as f64 / 3.0,
        "the surviving replicas took over the calls"
    );
}

/// One of each call, and a refused one, with every answer encoded (statuses as code and text).
async fn answers(url: &str) -> Vec<Vec<u8>> {
    let mut client = PhaseServiceClient::new(connect(url).await);
    let mut out = Vec::new();
    out.push(
        client
            .list_fluids(pb::ListFluidsRequest::default())
            .await
            .expect("list")
            .into_inner()
            .encode_to_vec(),
    );
    out.push(
        client
            .describe_fluid(pb::DescribeFluidRequest {
                fluid: "R-717".to_owned(),
            })
            .await
            .expect("describe")
            .into_inner()
            .encode_to_vec(),
    );
    out.push(
        client
            .get_saturation(pb::GetSaturationRequest {
                fluid: fluid("R-134a"),
                condition: Some(pb::get_saturation_request::Condition::TemperatureK(298.15)),
                ..Default::default()
            })
            .await
            .expect("saturation")
            .into_inner()
            .encode_to_vec(),
    );
    out.push(
        client
            .get_state(pb::GetStateRequest {
                fluid: fluid("R-744"),
                temperature_k: 285.15,
                pressure_pa: 4.6e6,
                ..Default::default()
            })
            .await
            .expect("state")
            .into_inner()
            .encode_to_vec(),
    );
    out.push(
        client
            .get_state_batch(pb::GetStateBatchRequest {
                fluid: fluid("R-717"),
                temperatures_k: (0..50).map(|i| 220.0 + 4.0 * f64::from(i)).collect(),
                pressures_pa: vec![5.0e5; 50],
                ..Default::default()
            })
            .await
            .expect("batch")
            .into_inner()
            .encode_to_vec(),
    );
    let refused = client
        .describe_fluid(pb::DescribeFluidRequest {
            fluid: "R-9999".to_owned(),
        })
        .await
        .expect_err("unknown fluid");
    out.push(format!("{:?} {}", refused.code(), refused.message()).into_bytes());
    out
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_restarted_server_serves_the_same_answers() {
    let dir = std::env::temp_dir().join(format!("binodal-restart-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let config = dir.join("binodal.toml");
    std::fs::write(
        &config,
        "default_equation_of_state = \"soave-redlich-kwong\"\n\
         default_reference_state = \"liquid-at-normal-boiling-point\"\n",
    )
    .expect("write settings");
    let launch = Launch {
        config: Some(config),
        ..Launch::default()
    };

    let mut first = ServerProcess::start(&launch).await;
    let before = answers(&first.url()).await;
    first.signal("TERM");
    assert!(first.wait_exit().await.success());

    let second = ServerProcess::start(&Launch {
        listen: Some(first.address),
        ..launch
    })
    .await;
    assert_eq!(second.address, first.address, "same settings, same address");
    let after = answers(&second.url()).await;
    assert_eq!(before.len(), after.len());
    for (index, (a, b)) in before.iter().zip(&after).enumerate() {
        assert!(a == b, "answer {index} differs after the restart");
    }
    drop(second);
    std::fs::remove_dir_all(&dir).ok();
}
