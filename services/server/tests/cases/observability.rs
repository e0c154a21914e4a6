//! What operators see: Prometheus metrics on their own port, request ids on every answer and in
//! the logs, and a log level that changes on SIGHUP without a restart.

use binodal_proto::v1 as pb;
use binodal_proto::v1::phase_service_client::PhaseServiceClient;
use tonic::Code;
use tonic::metadata::MetadataValue;
use tonic::transport::Endpoint;

use crate::cases::fluid;
use crate::util::TestServer;
use crate::util::process::{Launch, ServerProcess, sample};

fn state(name: &str) -> pb::GetStateRequest {
    pb::GetStateRequest {
        fluid: fluid(name),
        temperature_k: 298.15,
        pressure_pa: 1.0e6,
        ..Default::default()
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn metrics_count_calls_by_method_and_code_on_their_own_port() {
    let server = ServerProcess::start(&Launch::default().with_metrics()).await;
    let metrics_address = server.metrics_address.expect("metrics enabled");
    assert_ne!(metrics_address.port(), server.address.port());

    let channel = Endpoint::from_shared(server.url())
        .expect("endpoint")
        .connect()
        .await
        .expect("connect");
    let mut client = PhaseServiceClient::new(channel);
    for _ in 0..3 {
        client.get_state(state("R-717")).await.expect("state");
    }
    let unknown = client
        .get_state(state("R-9999"))
        .await
        .expect_err("unknown fluid");
    assert_eq!(unknown.code(), Code::NotFound);
    client
        .get_state_batch(pb::GetStateBatchRequest {
            fluid: fluid("R-744"),
            temperatures_k: vec![280.0, 290.0, 300.0, 310.0],
            pressures_pa: vec![1.0e5; 4],
            ..Default::default()
        })
        .await
        .expect("batch");

    // A reading the source reports as bad raises a quality event (alarms.proto).
    let mut alarms = binodal_proto::v1::alarm_service_client::AlarmServiceClient::new(
        Endpoint::from_shared(server.url())
            .expect("endpoint")
            .connect()
            .await
            .expect("connect"),
    );
    let evaluated = alarms
        .evaluate_readings(pb::EvaluateReadingsRequest {
            setup: None,
            readings: vec![pb::Reading {
                tag: "CO2-RK2".to_owned(),
                fluid: fluid("R-744"),
                pressure_pa: Some(3.0e6),
                pressure_kind: pb::PressureKind::Absolute as i32,
                ambient_pressure_pa: None,
                temperature_k: Some(270.0),
                timestamp_unix_ms: Some(1_767_225_600_000),
                quality: pb::ReadingQuality::Bad as i32,
            }],
        })
        .await
        .expect("evaluation")
        .into_inner();
    let all_events: Vec<&pb::AlarmEvent> = evaluated
        .events
        .iter()
        .chain(
            evaluated
                .outcomes
                .iter()
                .flat_map(|outcome| &outcome.events),
        )
        .collect();
    let count = |kind: pb::AlarmEventKind| {
        all_events
            .iter()
            .filter(|event| event.kind == kind as i32)
            .count() as f64
    };
    let (quality_events, notices) = (
        count(pb::AlarmEventKind::Quality),
        count(pb::AlarmEventKind::Notice),
    );
    assert!(quality_events > 0.0, "{evaluated:?}");

    let (code, page) = server.scrape("/metrics").await;
    assert_eq!(code, 200);
    assert_eq!(
        sample(
            &page,
            "binodal_alarm_events_total{kind=\"quality\",priority=\"none\"}"
        ),
        Some(quality_events),
        "{page}"
    );
    assert_eq!(
        sample(
            &page,
            "binodal_alarm_events_total{kind=\"notice\",priority=\"none\"}"
        )
        .unwrap_or(0.0),
        notices,
        "{page}"
    );
    let get_state = "method=\"/binodal.v1.PhaseService/GetState\"";
    assert_eq!(
        sample(
            &page,
            &format!("binodal_requests_total{{{get_state},code=\"OK\"}}")
        ),
        Some(3.0),
        "{page}"
    );
    assert_eq!(
        sample(
            &page,
            &format!("binodal_requests_total{{{get_state},code=\"NOT_FOUND\"}}")
        ),
        Some(1.0),
        "{page}"
    );
    assert_eq!(
        sample(
            &page,
            &format!("binodal_request_duration_seconds_count{{{get_state},code=\"OK\"}}")
        ),
        Some(3.0),
        "{page}"
    );
    assert_eq!(
        sample(
            &page,
            &format!(
                "binodal_request_duration_seconds_bucket{{{get_state},code=\"OK\",le=\"+Inf\"}}"
            )
        ),
        Some(3.0),
        "{page}"
    );
    // Three single states and four batch points: each is either a full solve or a hit on a
    // precomputed saturation curve.
    let full = sample(&page, "binodal_computations_total{path=\"full_solve\"}").unwrap_or(0.0);
    let curve = sample(
        &page,
        "binodal_computations_total{path=\"precomputed_curve\"}",
    )
    .unwrap_or(0.0);
    assert_eq!(full + curve, 7.0, "{page}");
    assert_eq!(sample(&page, "binodal_active_streams"), Some(0.0), "{page}");
    assert!(
        sample(&page, "binodal_process_resident_memory_bytes").is_some_and(|bytes| bytes > 0.0),
        "{page}"
    );
    assert!(page.contains("# HELP binodal_requests_total"), "{page}");

    let (code, _) = server.scrape("/elsewhere").await;
    assert_eq!(code, 404);
}

#[tokio::test]
async fn answers_carry_the_request_id() {
    let server = TestServer::start().await;
    let mut client = PhaseServiceClient::new(server.channel().await);

    let mut request = tonic::Request::new(state("R-134a"));
    request
        .metadata_mut()
        .insert("x-request-id", MetadataValue::from_static("ch2-poll-0042"));
    let answer = client.get_state(request).await.expect("state");
    assert_eq!(
        answer.metadata().get("x-request-id").expect("echoed id"),
        "ch2-poll-0042"
    );

    let answer = client
        .get_state(state("R-134a"))
        .await
        .expect("state without an id");
    let made = answer
        .metadata()
        .get("x-request-id")
        .expect("a request id is made")
        .to_str()
        .expect("ASCII id")
        .to_owned();
    let again = client
        .get_state(state("R-134a"))
        .await
        .expect("state")
        .metadata()
        .get("x-request-id")
        .expect("id")
        .to_str()
        .expect("ASCII id")
        .to_owned();
    assert_ne!(made, again, "each call gets its own id");

    let refused = client
        .get_state(state("R-9999"))
        .await
        .expect_err("unknown fluid");
    assert!(
        refused.metadata().get("x-request-id").is_some(),
        "refusals carry the id too: {refused:?}"
    );
    server.stop().await;
}

/// The JSON log lines whose current span is the `rpc` span of the call `request_id`.
fn rpc_lines(server: &ServerProcess, request_id: &str) -> Vec<serde_json::Value> {
    server
        .log_lines()
        .iter()
        .filter_map(|line| serde_json::from_str::<serde_json::Value>(line).ok())
        .filter(|line| {
            line.get("span")
                .and_then(|span| span.get("request_id"))
                .and_then(|id| id.as_str())
                == Some(request_id)
        })
        .collect()
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn sighup_changes_the_log_level_without_a_restart() {
    let dir = std::env::temp_dir().join(format!("binodal-sighup-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let config = dir.join("binodal.toml");
    std::fs::write(&config, "[log]\nlevel = \"info\"\n").expect("write settings");
    let token = "b1f3d5c7a9e0b2d4f6a8c0e2b4d6f8a0c2e4b6d8f0a2c4e6b8d0f2a4c6e8b0d2";
    let server = ServerProcess::start(
        &Launch {
            config: Some(config.clone()),
            ..Launch::default()
        }
        .env("BINODAL_AUTH__TOKEN", token),
    )
    .await;
    let channel = Endpoint::from_shared(server.url())
        .expect("endpoint")
        .connect()
        .await
        .expect("connect");
    let mut client = PhaseServiceClient::new(channel);
    let bearer = MetadataValue::try_from(format!("Bearer {token}")).expect("metadata");
    let call = |id: &'static str| {
        let mut request = tonic::Request::new(state("R-717"));
        request
            .metadata_mut()
            .insert("x-request-id", MetadataValue::from_static(id));
        request
            .metadata_mut()
            .insert("authorization", bearer.clone());
        request
    };

    client.get_state(call("before-hup")).await.expect("state");
    // A refused call is logged at INFO with its request id, and the token is never logged.
    let mut anonymous = tonic::Request::new(state("R-717"));
    anonymous
        .metadata_mut()
        .insert("x-request-id", MetadataValue::from_static("no-token-1"));
    let refused = client.get_state(anonymous).await.expect_err("no token");
    assert_eq!(refused.code(), Code::Unauthenticated);
    server.wait_for_log("no-token-1").await;
    let refusal_logged = server.log_lines().iter().any(|line| {
        serde_json::from_str::<serde_json::Value>(line).is_ok_and(|line| {
            let fields = &line["fields"];
            fields["message"] == "call refused"
                && fields["request_id"] == "no-token-1"
                && fields["code"] == "UNAUTHENTICATED"
                && line["level"] == "INFO"
        })
    });
    assert!(refusal_logged, "{}", server.log_lines().join("\n"));

    std::fs::write(&config, "[log]\nlevel = \"debug\"\n").expect("rewrite settings");
    server.signal("HUP");
    server.wait_for_log("SIGHUP: log level applied").await;
    client.get_state(call("after-hup")).await.expect("state");
    server.wait_for_log("after-hup").await;

    assert!(
        rpc_lines(&server, "before-hup").is_empty(),
        "at info, calls leave no per-request line"
    );
    let after = rpc_lines(&server, "after-hup");
    assert!(
        !after.is_empty(),
        "at debug, the call's span carries its request id:\n{}",
        server.log_lines().join("\n")
    );
    assert!(after.iter().any(|line| {
        line.get("span")
            .and_then(|span| span.get("method"))
            .and_then(|m| m.as_str())
            == Some("/binodal.v1.PhaseService/GetState")
    }));
    assert!(
        !server.log_lines().iter().any(|line| line.contains(token)),
        "the token never appears in the log"
    );
    std::fs::remove_dir_all(&dir).ok();
}
