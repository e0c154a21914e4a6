//! Admission limits: the concurrency limit with load shedding or queueing, the request timeout,
//! and the per-connection stream limit, each seen from a client.
//!
//! The slow call in these tests is a batch of 2 000 states of a custom mixture of R-407C's
//! composition (`slow_mixture`: no precomputed lines, every state solved): long enough that a
//! short call sent meanwhile finds the only slot taken. No test asserts how long anything takes.

use binodal_proto::v1 as pb;
use binodal_proto::v1::phase_service_client::PhaseServiceClient;
use binodal_server::settings::Settings;
use std::time::Duration;
use tonic::Code;
use tonic::transport::Channel;
use tonic_health::pb::HealthCheckRequest;
use tonic_health::pb::health_client::HealthClient;

use crate::cases::{fluid, slow_mixture};
use crate::util::TestServer;

/// Points in the slow batch. A blend's states go through bubble- and dew-point solves (no
/// precomputed curve), a fraction of a millisecond each, so this batch holds its slot for
/// about a second whatever the machine's speed.
const SLOW_POINTS: usize = 2_000;

/// A batch of `points` states of the R-407C-like custom mixture between 200 K and 400 K at 1 bar.
fn slow_batch(points: usize) -> pb::GetStateBatchRequest {
    pb::GetStateBatchRequest {
        fluid: slow_mixture(),
        temperatures_k: (0..points)
            .map(|i| 200.0 + 200.0 * i as f64 / points as f64)
            .collect(),
        pressures_pa: vec![1.0e5; points],
        ..Default::default()
    }
}

/// A quick call: ammonia at 25 degC and 10 bar.
fn quick_state() -> pb::GetStateRequest {
    pb::GetStateRequest {
        fluid: fluid("R-717"),
        temperature_k: 298.15,
        pressure_pa: 1.0e6,
        ..Default::default()
    }
}

/// Default settings with room for the slow call's answer.
fn roomy() -> Settings {
    let mut settings = Settings::default();
    settings.limits.max_message_size_bytes = 64 * 1024 * 1024;
    settings.limits.max_batch_length = SLOW_POINTS;
    settings
}

fn limited(max_concurrent_requests: usize, load_shedding: bool) -> Settings {
    let mut settings = roomy();
    settings.limits.max_concurrent_requests = max_concurrent_requests;
    settings.limits.load_shedding = load_shedding;
    settings
}

/// Sends quick calls on `channel` while `slow` runs; returns the first refusal, or `None` if the
/// slow call ended before any quick call was refused.
async fn refusal_while(
    channel: Channel,
    slow: &tokio::task::JoinHandle<Result<usize, tonic::Status>>,
) -> Option<tonic::Status> {
    let mut client = PhaseServiceClient::new(channel);
    while !slow.is_finished() {
        if let Err(status) = client.get_state(quick_state()).await {
            return Some(status);
        }
    }
    None
}

fn spawn_slow(channel: Channel) -> tokio::task::JoinHandle<Result<usize, tonic::Status>> {
    tokio::spawn(async move {
        let mut client =
            PhaseServiceClient::new(channel).max_decoding_message_size(64 * 1024 * 1024);
        // The slow call may itself be shed if a quick call holds the slot at that moment:
        // try again (bounded) until it gets the slot.
        let mut tries = 0;
        loop {
            match client.get_state_batch(slow_batch(SLOW_POINTS)).await {
                Err(status) if status.code() == Code::Unavailable && tries < 200 => tries += 1,
                answer => return Ok(answer?.into_inner().phases.len()),
            }
        }
    })
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_full_server_sheds_calls_with_unavailable_and_still_answers_health() {
    let server = TestServer::start_with(limited(1, true)).await;
    let slow = spawn_slow(server.channel().await);
    let quick = server.channel().await;
    let status = refusal_while(quick.clone(), &slow)
        .await
        .expect("a quick call is refused while the only slot is taken");
    assert_eq!(status.code(), Code::Unavailable, "{status:?}");
    assert!(
        status.message().contains("limits.max_concurrent_requests"),
        "{status:?}"
    );
    // Probes are exempt from the limit: health answers, and a quick call right after it is
    // still refused, so the slot was taken throughout the health check.
    let mut health = HealthClient::new(quick.clone());
    let mut client = PhaseServiceClient::new(quick);
    let mut proven = false;
    while !slow.is_finished() && !proven {
        health
            .check(HealthCheckRequest::default())
            .await
            .expect("health answers while the slot is taken");
        proven = client
            .get_state(quick_state())
            .await
            .is_err_and(|status| status.code() == Code::Unavailable);
    }
    assert!(proven, "health answered while the only slot was taken");
    assert_eq!(
        slow.await.expect("slow task").expect("slow call"),
        SLOW_POINTS
    );
    client
        .get_state(quick_state())
        .await
        .expect("a free slot admits the call");
    server.stop().await;
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn without_shedding_calls_wait_for_a_slot() {
    let server = TestServer::start_with(limited(1, false)).await;
    let slow = spawn_slow(server.channel().await);
    let refused = refusal_while(server.channel().await, &slow).await;
    assert!(
        refused.is_none(),
        "queued calls are not refused: {refused:?}"
    );
    assert_eq!(
        slow.await.expect("slow task").expect("slow call"),
        SLOW_POINTS
    );
    server.stop().await;
}

#[tokio::test]
async fn a_call_over_the_request_timeout_gets_deadline_exceeded() {
    let mut settings = roomy();
    settings.limits.request_timeout = Duration::from_millis(1);
    let server = TestServer::start_with(settings).await;
    let mut client = PhaseServiceClient::new(server.channel().await);
    let status = client
        .get_state_batch(slow_batch(SLOW_POINTS))
        .await
        .expect_err("the slow batch does not fit in 1 ms");
    assert_eq!(status.code(), Code::DeadlineExceeded, "{status:?}");
    assert!(
        status.message().contains("limits.request_timeout_ms"),
        "{status:?}"
    );
    server.stop().await;
}

/// With one stream per connection, a client's second call on the same connection waits in the
/// client for the first to end, so it never meets the full server: the limit of one call in
/// progress sheds nothing. (On a second connection it is shed, as the first test shows.)
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn the_stream_limit_holds_calls_back_on_their_connection() {
    let mut settings = limited(1, true);
    settings.limits.max_concurrent_streams = 1;
    let server = TestServer::start_with(settings).await;
    let channel = server.channel().await;
    // A first call lets the client learn the server's stream limit (HTTP/2 SETTINGS).
    PhaseServiceClient::new(channel.clone())
        .get_state(quick_state())
        .await
        .expect("a first call");
    let slow = spawn_slow(channel.clone());
    let refused = refusal_while(channel, &slow).await;
    assert!(
        refused.is_none(),
        "calls on the slow call's connection wait for its stream: {refused:?}"
    );
    assert_eq!(
        slow.await.expect("slow task").expect("slow call"),
        SLOW_POINTS
    );
    server.stop().await;
}
