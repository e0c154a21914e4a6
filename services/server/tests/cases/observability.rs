//! What operators see: Prometheus metrics on their own port, request ids on every answer and in
//! the logs, and a log level that changes on SIGHUP without a restart.

use binodal_proto::v1 as pb;
use binodal_proto::v1::alarm_service_client::AlarmServiceClient;
use binodal_proto::v1::phase_service_client::PhaseServiceClient;
use tonic::Code;
use tonic::metadata::MetadataValue;
use tonic::transport::Endpoint;

use crate::cases::{fluid, slow_mixture};
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

/// Points in the slow batch of the shedding test: 2 000 states of the R-407C-like custom mixture,
/// each through bubble- and dew-point solves, hold the only slot (as in `admission.rs`).
const SLOW_POINTS: usize = 2_000;

/// Whether `status` is the load-shedding refusal (limits.rs).
fn shed(status: &tonic::Status) -> bool {
    status.code() == Code::Unavailable
        && status.message().contains("limits.max_concurrent_requests")
}

/// `binodal_requests_shed_total` counts the calls refused by load shedding, and the refused calls
/// are counted under their method with UNAVAILABLE: with a concurrency limit of 1, a slow batch
/// holds the only slot while quick calls are sent until one is refused. Every refusal either call
/// met is counted by the client and compared with the metrics.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn shed_calls_are_counted() {
    let server = ServerProcess::start(
        &Launch::default()
            .with_metrics()
            .env("BINODAL_LIMITS__MAX_CONCURRENT_REQUESTS", 1)
            .env("BINODAL_LIMITS__LOAD_SHEDDING", true)
            .env("BINODAL_LIMITS__MAX_BATCH_LENGTH", SLOW_POINTS)
            .env("BINODAL_LIMITS__MAX_MESSAGE_SIZE_BYTES", 64 * 1024 * 1024),
    )
    .await;
    let connect = || async {
        Endpoint::from_shared(server.url())
            .expect("endpoint")
            .connect()
            .await
            .expect("connect")
    };
    let slow_channel = connect().await;
    let slow = tokio::spawn(async move {
        let mut client =
            PhaseServiceClient::new(slow_channel).max_decoding_message_size(64 * 1024 * 1024);
        let request = pb::GetStateBatchRequest {
            fluid: slow_mixture(),
            temperatures_k: (0..SLOW_POINTS)
                .map(|i| 200.0 + 200.0 * i as f64 / SLOW_POINTS as f64)
                .collect(),
            pressures_pa: vec![1.0e5; SLOW_POINTS],
            ..Default::default()
        };
        // The slow call may itself be shed while a quick call holds the slot: count and retry
        // (bounded) until it gets the slot.
        let mut refused = 0u32;
        loop {
            match client.get_state_batch(request.clone()).await {
                Err(status) if shed(&status) && refused < 200 => refused += 1,
                answer => {
                    let points = answer.expect("the slow call").into_inner().phases.len();
                    return (points, refused);
                }
            }
        }
    });
    let mut quick = PhaseServiceClient::new(connect().await);
    let mut quick_answered = 0u32;
    let mut quick_refused = 0u32;
    while !slow.is_finished() && quick_refused == 0 {
        match quick.get_state(state("R-717")).await {
            Ok(_) => quick_answered += 1,
            Err(status) if shed(&status) => quick_refused += 1,
            Err(status) => panic!("unexpected refusal: {status:?}"),
        }
    }
    let (points, slow_refused) = slow.await.expect("slow task");
    assert_eq!(points, SLOW_POINTS);
    assert_eq!(
        quick_refused, 1,
        "a quick call is refused while the only slot is taken"
    );

    let (code, page) = server.scrape("/metrics").await;
    assert_eq!(code, 200);
    assert_eq!(
        sample(&page, "binodal_requests_shed_total"),
        Some(f64::from(quick_refused + slow_refused)),
        "{page}"
    );
    let series = |method: &str, code: &str| {
        sample(
            &page,
            &format!(
                "binodal_requests_total{{method=\"/binodal.v1.PhaseService/{method}\",code=\"{code}\"}}"
            ),
        )
        .unwrap_or(0.0)
    };
    assert_eq!(
        series("GetState", "UNAVAILABLE"),
        f64::from(quick_refused),
        "{page}"
    );
    assert_eq!(
        series("GetState", "OK"),
        f64::from(quick_answered),
        "{page}"
    );
    assert_eq!(
        series("GetStateBatch", "UNAVAILABLE"),
        f64::from(slow_refused),
        "{page}"
    );
    assert_eq!(series("GetStateBatch", "OK"), 1.0, "{page}");
}

/// An alarm rule with no delays or deadband issues (`limit`, `priority`).
fn alarm_rule(kind: pb::AlarmRuleKind, limit: f64, priority: pb::AlarmPriority) -> pb::AlarmRule {
    pb::AlarmRule {
        kind: kind as i32,
        name: String::new(),
        limit: Some(limit),
        deadband: Some(0.0),
        on_delay_s: Some(0.0),
        off_delay_s: Some(0.0),
        priority: priority as i32,
    }
}

/// A good absolute reading at `seconds` after 2026-01-15T06:00:00Z.
fn plant_reading(tag: &str, name: &str, seconds: i64, t: f64, p: f64) -> pb::Reading {
    pb::Reading {
        tag: tag.to_owned(),
        fluid: fluid(name),
        pressure_pa: Some(p),
        pressure_kind: pb::PressureKind::Absolute as i32,
        ambient_pressure_pa: None,
        temperature_k: Some(t),
        timestamp_unix_ms: Some(1_768_456_800_000 + 1000 * seconds),
        quality: pb::ReadingQuality::Good as i32,
    }
}

/// `binodal_alarm_events_total` counts raised and cleared alarms on a watch stream under their
/// priority: a low-priority subcooling alarm on the ammonia pump and a critical-pressure alarm on
/// the carbon dioxide receiver at its kind's default priority (medium, rules.rs), each raised
/// and cleared once. The counts on the metrics page equal the events the stream sent.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn alarm_events_are_counted_by_kind_and_priority() {
    let server = ServerProcess::start(&Launch::default().with_metrics()).await;
    let channel = Endpoint::from_shared(server.url())
        .expect("endpoint")
        .connect()
        .await
        .expect("connect");
    let mut alarms = AlarmServiceClient::new(channel);
    let (requests, receiver) = tokio::sync::mpsc::channel(4);
    let opening = pb::WatchOpening {
        tags: vec![
            pb::TagSetup {
                tag: "NH3-P101".to_owned(),
                fluid: None,
                rules: vec![alarm_rule(
                    pb::AlarmRuleKind::MinimumSubcooling,
                    20.0,
                    pb::AlarmPriority::Low,
                )],
            },
            pb::TagSetup {
                tag: "CO2-RK2-REC".to_owned(),
                fluid: None,
                rules: vec![alarm_rule(
                    pb::AlarmRuleKind::MaximumCriticalPressureFraction,
                    0.90,
                    pb::AlarmPriority::Unspecified,
                )],
            },
        ],
        ..Default::default()
    };
    // Ammonia at 3 bar: subcooled by 10 K (below the 20 K limit), then by 30 K. The
    // temperatures come from the engine's own saturation temperature at 3 bar, so that the
    // subcoolings are the script's values.
    let tsat = crate::cases::engine(
        "R-717",
        binodal_eos::Model::PengRobinson1978,
        binodal_eos::ReferenceState::LiquidAtZeroCelsius,
    )
    .saturation_temperature(3.0e5)
    .expect("ammonia saturates at 3 bar");
    // Carbon dioxide at 7.0 MPa is at 7.0/7.38 = 0.949 of its critical pressure (7.38 MPa,
    // source key `crit-compilation` in crates/fluids/data/inorganic.toml), then at 3.0 MPa 0.41.
    let script = vec![
        vec![
            plant_reading("NH3-P101", "R-717", 0, tsat - 10.0, 3.0e5),
            plant_reading("CO2-RK2-REC", "R-744", 0, 280.0, 7.0e6),
        ],
        vec![
            plant_reading("NH3-P101", "R-717", 1, tsat - 30.0, 3.0e5),
            plant_reading("CO2-RK2-REC", "R-744", 1, 260.0, 3.0e6),
        ],
    ];
    requests
        .send(pb::WatchRequest {
            opening: Some(opening),
            readings: Vec::new(),
        })
        .await
        .expect("queue the opening");
    let mut responses = alarms
        .watch_readings(tokio_stream::wrappers::ReceiverStream::new(receiver))
        .await
        .expect("the stream opens")
        .into_inner();
    let mut received = vec![
        responses
            .message()
            .await
            .expect("an answer to the opening")
            .expect("the stream is open"),
    ];
    for readings in script {
        requests
            .send(pb::WatchRequest {
                opening: None,
                readings,
            })
            .await
            .expect("the stream accepts readings");
        received.push(
            responses
                .message()
                .await
                .expect("an answer")
                .expect("the stream is open"),
        );
    }
    let events: Vec<&pb::AlarmEvent> = received
        .iter()
        .flat_map(|r| {
            r.events
                .iter()
                .chain(r.outcomes.iter().flat_map(|o| &o.events))
        })
        .collect();
    let count = |kind: pb::AlarmEventKind, priority: pb::AlarmPriority| {
        events
            .iter()
            .filter(|e| e.kind == kind as i32 && e.priority == priority as i32)
            .count() as f64
    };
    use pb::AlarmEventKind::{Cleared, Raised};
    use pb::AlarmPriority::{Low, Medium};
    // The script raises and clears each alarm exactly once.
    for (kind, priority) in [
        (Raised, Low),
        (Cleared, Low),
        (Raised, Medium),
        (Cleared, Medium),
    ] {
        assert_eq!(
            count(kind, priority),
            1.0,
            "{kind:?} {priority:?}: {events:#?}"
        );
    }

    let (code, page) = server.scrape("/metrics").await;
    assert_eq!(code, 200);
    for (kind, priority, label) in [
        (Raised, Low, "kind=\"raised\",priority=\"low\""),
        (Cleared, Low, "kind=\"cleared\",priority=\"low\""),
        (Raised, Medium, "kind=\"raised\",priority=\"medium\""),
        (Cleared, Medium, "kind=\"cleared\",priority=\"medium\""),
    ] {
        assert_eq!(
            sample(&page, &format!("binodal_alarm_events_total{{{label}}}")),
            Some(count(kind, priority)),
            "{label}: {page}"
        );
    }
    assert_eq!(
        sample(
            &page,
            "binodal_alarm_events_total{kind=\"raised\",priority=\"high\"}"
        ),
        None,
        "no high-priority alarm was raised: {page}"
    );
    drop(requests);
}
