//! Faults, with the real server binary as child processes on loopback:
//!
//! - SIGTERM, and SIGINT (Ctrl-C), while calls are in flight: every one of them is answered in
//!   full, then the process exits cleanly;
//! - an invalid setting, from the environment or from the `--config` file: start-up stops with a
//!   failure exit status and a message on standard error naming the setting and its valid values;
//! - SIGKILL of one of three replicas while a client balances over them: no idempotent call is
//!   lost (the client retries with backoff, `examples/support/resilience.rs`);
//! - a restart with the same settings: the same answers, byte for byte.
//!
//! Each test is bounded in count and time; no test asserts how long anything takes.

use std::io::Read as _;
use std::process::{Command, ExitStatus, Stdio};
use std::sync::Arc;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

use binodal_proto::v1 as pb;
use binodal_proto::v1::phase_service_client::PhaseServiceClient;
use prost::Message as _;
use tonic::transport::{Channel, Endpoint};

use crate::cases::{fluid, slow_mixture};
use crate::util::process::{Launch, PROCESS_GUARD, ServerProcess, sample};
use crate::util::resilience::{Backoff, balanced_channel, call_with_retry, refused_at_connect};

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

/// Points per batch in the drain tests, so that each call is still being computed when the signal
/// comes: states of the R-407C-like custom mixture go through bubble- and dew-point solves (no
/// precomputed lines), a fraction of a millisecond each.
const DRAIN_POINTS: usize = 3_000;
/// Calls in flight when the signal is sent, each on its own connection.
const DRAIN_CALLS: usize = 6;

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn sigterm_lets_every_call_in_flight_finish() {
    drain_on_signal("TERM", "SIGTERM received").await;
}

/// Ctrl-C drains like SIGTERM (issue 4: "graceful shutdown on SIGTERM and Ctrl-C"; main.rs
/// listens for both).
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn sigint_lets_every_call_in_flight_finish_like_sigterm() {
    drain_on_signal("INT", "Ctrl-C received").await;
}

/// Sends `signal` while [`DRAIN_CALLS`] batches are in flight; checks that the server logged
/// `logged` (the signal was the one handled), answered every call in full and exited cleanly.
async fn drain_on_signal(signal: &str, logged: &str) {
    let mut server = ServerProcess::start(
        &Launch::default()
            .with_metrics()
            .env("BINODAL_LIMITS__MAX_MESSAGE_SIZE_BYTES", 64 * 1024 * 1024)
            .env("BINODAL_LIMITS__MAX_BATCH_LENGTH", DRAIN_POINTS),
    )
    .await;
    let request = pb::GetStateBatchRequest {
        fluid: slow_mixture(),
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
    server.signal(signal);

    for call in calls {
        let answer = call
            .await
            .expect("call task")
            .unwrap_or_else(|e| panic!("a call in flight at SIG{signal} is not answered: {e:?}"))
            .into_inner();
        assert_eq!(answer.phases.len(), DRAIN_POINTS, "the answer is complete");
    }
    let status = server.wait_exit().await;
    assert!(status.success(), "clean exit after draining: {status}");
    // The signal handled was this one.
    server.wait_for_log(logged).await;
    // The server had calls in flight when the shutdown began: the drain was exercised.
    let in_flight = server
        .log_lines()
        .iter()
        .filter_map(|line| serde_json::from_str::<serde_json::Value>(line).ok())
        .find_map(|line| line["fields"]["calls_in_flight"].as_u64())
        .expect("the shutdown line counts the calls in flight");
    assert!(in_flight >= 1, "no call was in flight at SIG{signal}");
    println!("SIG{signal} with {in_flight} of {DRAIN_CALLS} calls in flight: all answered in full");
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

/// Runs the server binary with `args` and `env` (every other `BINODAL_*` variable removed) and
/// waits for it to exit, which it must do before serving: its exit status and standard error.
/// Fails the test if it is still running after [`PROCESS_GUARD`] (it would then be serving).
async fn failed_start(args: &[&std::ffi::OsStr], env: &[(&str, &str)]) -> (ExitStatus, String) {
    let mut command = Command::new(env!("CARGO_BIN_EXE_binodal-server"));
    for (name, _) in std::env::vars() {
        if name.starts_with("BINODAL_") || name == "RUST_LOG" {
            command.env_remove(name);
        }
    }
    let mut child = command
        .arg("--listen")
        .arg("127.0.0.1:0")
        .args(args)
        .envs(env.iter().copied())
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start the binodal-server binary");
    let started = Instant::now();
    let status = loop {
        if let Some(status) = child.try_wait().expect("poll the server process") {
            break status;
        }
        if started.elapsed() > PROCESS_GUARD {
            child.kill().ok();
            child.wait().ok();
            panic!("binodal-server started with {args:?} {env:?} instead of refusing to");
        }
        tokio::time::sleep(Duration::from_millis(20)).await;
    };
    let mut stderr = String::new();
    child
        .stderr
        .take()
        .expect("piped standard error")
        .read_to_string(&mut stderr)
        .expect("read standard error");
    (status, stderr)
}

/// Asserts a refused start: exit status 1 (`ExitCode::FAILURE`, src/main.rs; EXIT_FAILURE is 1
/// on POSIX systems), not a panic or a signal, nothing served, and a message naming each of
/// `fragments`.
fn assert_refused(what: &str, status: ExitStatus, stderr: &str, fragments: &[&str]) {
    assert_eq!(
        status.code(),
        Some(1),
        "{what}: exit status {status}\n{stderr}"
    );
    assert!(!stderr.contains("panicked"), "{what}: a panic\n{stderr}");
    assert!(
        !stderr.contains("binodal server listening"),
        "{what}: the server began serving\n{stderr}"
    );
    for fragment in fragments {
        assert!(
            stderr.contains(fragment),
            "{what}: standard error lacks {fragment:?}:\n{stderr}"
        );
    }
}

/// Issue 4: "Invalid settings stop start-up with a message that names the setting." The valid
/// ranges expected here are those binodal.example.toml documents for each setting.
#[tokio::test]
async fn an_invalid_setting_stops_start_up_naming_the_setting_and_its_range() {
    // From the environment: a batch limit of 0 ("from 1 to 10000000").
    let (status, stderr) = failed_start(&[], &[("BINODAL_LIMITS__MAX_BATCH_LENGTH", "0")]).await;
    assert_refused(
        "BINODAL_LIMITS__MAX_BATCH_LENGTH=0",
        status,
        &stderr,
        &[
            "limits.max_batch_length",
            "BINODAL_LIMITS__MAX_BATCH_LENGTH",
            "\"0\"",
            "from 1 to 10000000",
        ],
    );

    // From a --config file: a message size below the smallest allowed ("from 65536 to
    // 1073741824"), a request timeout of 0 ms ("from 1 to 3600000"), and a model that does not
    // exist (the example file lists the five).
    let dir = std::env::temp_dir().join(format!("binodal-bad-settings-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let files: [(&str, &str, &[&str]); 3] = [
        (
            "message-size.toml",
            "[limits]\nmax_message_size_bytes = 100\n",
            &[
                "limits.max_message_size_bytes",
                "\"100\"",
                "from 65536 to 1073741824",
            ],
        ),
        (
            "timeout.toml",
            "[limits]\nrequest_timeout_ms = 0\n",
            &["limits.request_timeout_ms", "from 1 to 3600000"],
        ),
        (
            "model.toml",
            "default_equation_of_state = \"peng-robinson\"\n",
            &[
                "default_equation_of_state",
                "\"peng-robinson\"",
                "van-der-waals, redlich-kwong, soave-redlich-kwong, peng-robinson-1976, \
                 peng-robinson-1978",
            ],
        ),
    ];
    for (file, text, fragments) in files {
        let path = dir.join(file);
        std::fs::write(&path, text).expect("write settings file");
        let (status, stderr) = failed_start(&["--config".as_ref(), path.as_os_str()], &[]).await;
        assert_refused(&format!("--config {file}"), status, &stderr, fragments);
    }
    std::fs::remove_dir_all(&dir).ok();
}

/// A call to a port where nothing listens is recognised as refused at connect (the retry rule
/// that lets a client steer around a replica that just died), and a refusal sent by a server is
/// not.
#[tokio::test]
async fn a_refused_connection_is_told_apart_from_a_refused_call() {
    let port = std::net::TcpListener::bind("127.0.0.1:0")
        .and_then(|listener| listener.local_addr())
        .expect("a free port")
        .port();
    let channel = Endpoint::from_shared(format!("http://127.0.0.1:{port}"))
        .expect("address")
        .connect_lazy();
    let status = PhaseServiceClient::new(channel)
        .get_saturation(saturation_request(0))
        .await
        .expect_err("nothing listens");
    assert!(refused_at_connect(&status), "{status:?}");
    assert!(!refused_at_connect(&tonic::Status::unavailable(
        "server busy"
    )));
}
