//! End-to-end tests: the real server, started in-process on `127.0.0.1:0`, spoken to through real
//! gRPC clients over TCP.
//!
//! - health: the phase service reports SERVING;
//! - reflection: lists the phase service, and can be switched off;
//! - shutdown: health turns NOT_SERVING, then `run` returns;
//! - limits: the message size limit from the settings applies to the phase service;
//! - [`cases`]: every phase RPC against the engine and published values, a table of bad
//!   requests, and a generated Python client (tests/python/interop_test.py).

mod cases;
mod util;

use binodal_proto::v1::phase_service_client::PhaseServiceClient;
use binodal_proto::v1::{FluidSelector, GetStateBatchRequest, fluid_selector::Choice};
use binodal_server::PHASE_SERVICE_NAME;
use binodal_server::settings::Settings;
use tokio_stream::StreamExt as _;
use tonic::Code;
use tonic_health::pb::health_check_response::ServingStatus;
use tonic_health::pb::health_client::HealthClient;
use tonic_health::pb::{HealthCheckRequest, HealthCheckResponse};
use tonic_reflection::pb::v1::ServerReflectionRequest;
use tonic_reflection::pb::v1::server_reflection_client::ServerReflectionClient;
use tonic_reflection::pb::v1::server_reflection_request::MessageRequest;
use tonic_reflection::pb::v1::server_reflection_response::MessageResponse;
use util::{STOP_GUARD, TestServer};

fn health_request(service: &str) -> HealthCheckRequest {
    HealthCheckRequest {
        service: service.to_owned(),
    }
}

fn status_of(response: &HealthCheckResponse) -> ServingStatus {
    ServingStatus::try_from(response.status).expect("known serving status")
}

/// Lists the services through reflection, or returns the status the server answered with.
async fn reflected_services(server: &TestServer) -> Result<Vec<String>, tonic::Status> {
    let mut client = ServerReflectionClient::new(server.channel().await);
    let request = ServerReflectionRequest {
        host: String::new(),
        message_request: Some(MessageRequest::ListServices(String::new())),
    };
    let mut responses = client
        .server_reflection_info(tokio_stream::iter([request]))
        .await?
        .into_inner();
    let response = responses.next().await.expect("one reflection response")?;
    match response.message_response {
        Some(MessageResponse::ListServicesResponse(list)) => Ok(list
            .service
            .into_iter()
            .map(|service| service.name)
            .collect()),
        other => panic!("expected a service list, got {other:?}"),
    }
}

#[tokio::test]
async fn health_reports_the_phase_service_serving() {
    let server = TestServer::start().await;
    let mut health = HealthClient::new(server.channel().await);

    let phase = health
        .check(health_request(PHASE_SERVICE_NAME))
        .await
        .expect("health check of the phase service")
        .into_inner();
    assert_eq!(status_of(&phase), ServingStatus::Serving);

    let overall = health
        .check(health_request(""))
        .await
        .expect("health check of the whole server")
        .into_inner();
    assert_eq!(status_of(&overall), ServingStatus::Serving);

    let unknown = health
        .check(health_request("binodal.v1.NoSuchService"))
        .await
        .expect_err("unknown services are not reported");
    assert_eq!(unknown.code(), Code::NotFound);

    server.stop().await;
}

#[tokio::test]
async fn reflection_lists_the_phase_service() {
    let server = TestServer::start().await;
    let services = reflected_services(&server)
        .await
        .expect("reflection answers");
    assert!(
        services.iter().any(|name| name == PHASE_SERVICE_NAME),
        "{services:?} lacks {PHASE_SERVICE_NAME}"
    );
    assert!(
        services.iter().any(|name| name == "grpc.health.v1.Health"),
        "{services:?} lacks the health service"
    );
    server.stop().await;
}

#[tokio::test]
async fn reflection_can_be_switched_off() {
    let settings = Settings {
        reflection: false,
        ..Settings::default()
    };
    let server = TestServer::start_with(settings).await;
    let status = reflected_services(&server)
        .await
        .expect_err("reflection is not offered");
    assert_eq!(status.code(), Code::Unimplemented);
    server.stop().await;
}

#[tokio::test]
async fn shutdown_reports_not_serving_then_returns() {
    let mut server = TestServer::start().await;
    let mut health = HealthClient::new(server.channel().await);
    let mut updates = health
        .watch(health_request(PHASE_SERVICE_NAME))
        .await
        .expect("watch the phase service's health")
        .into_inner();
    let first = updates
        .next()
        .await
        .expect("a first health update")
        .expect("first update is not an error");
    assert_eq!(status_of(&first), ServingStatus::Serving);
    let mut alarm_updates = health
        .watch(health_request("binodal.v1.AlarmService"))
        .await
        .expect("watch the alarm service's health")
        .into_inner();
    let first = alarm_updates
        .next()
        .await
        .expect("a first alarm-service health update")
        .expect("first update is not an error");
    assert_eq!(status_of(&first), ServingStatus::Serving);

    server.begin_shutdown();
    for updates in [&mut updates, &mut alarm_updates] {
        let next = tokio::time::timeout(STOP_GUARD, updates.next())
            .await
            .expect("a health update after shutdown began")
            .expect("the watch stream stays open while draining")
            .expect("update is not an error");
        assert_eq!(status_of(&next), ServingStatus::NotServing);
    }

    // The watches are in-flight calls: the server waits for them. Ending them lets it return.
    drop(updates);
    drop(alarm_updates);
    drop(health);
    server.stop().await;
}

/// A batch of `points` states of ammonia at 240 K and 1 bar (the inputs only size the message).
fn batch_of(points: usize) -> GetStateBatchRequest {
    GetStateBatchRequest {
        fluid: Some(FluidSelector {
            choice: Some(Choice::Fluid("R-717".to_owned())),
        }),
        temperatures_k: vec![240.0; points],
        pressures_pa: vec![1.0e5; points],
        ..Default::default()
    }
}

#[tokio::test]
async fn message_size_limit_comes_from_the_settings() {
    let mut settings = Settings::default();
    settings.limits.max_message_size_bytes = 64 * 1024;
    let server = TestServer::start_with(settings).await;
    let mut client = PhaseServiceClient::new(server.channel().await);

    // 10 000 points are 2 x 80 000 bytes of packed doubles: above the 64 KiB limit.
    let too_large = client
        .get_state_batch(batch_of(10_000))
        .await
        .expect_err("a message above the limit is refused");
    assert_eq!(too_large.code(), Code::OutOfRange, "{too_large:?}");
    assert!(
        too_large.message().contains("65536"),
        "the refusal names the limit: {too_large:?}"
    );

    // 300 points (4 800 bytes in, about 28 000 bytes out) pass the limit both ways.
    let answer = client
        .get_state_batch(batch_of(300))
        .await
        .expect("within the limit");
    assert_eq!(answer.into_inner().phases.len(), 300);

    server.stop().await;
}
