//! Bad input, generated: random bytes as messages, huge batches, NaN and infinities, extreme
//! temperatures and pressures, enum values out of range, long and strange strings. The server
//! (the real binary, as a child process) must answer each with a deliberate status and neither
//! panic nor stop answering. The alarm stream gets structured extreme readings (plausible ones
//! with faults injected): it must never end, answer every bad reading with a quality event, and
//! go on evaluating good readings.
//!
//! A deliberate status is one of those the service documents for bad requests (`status.rs`):
//! INVALID_ARGUMENT, NOT_FOUND, OUT_OF_RANGE, FAILED_PRECONDITION, UNIMPLEMENTED, or
//! RESOURCE_EXHAUSTED; or INTERNAL for bytes that do not decode as the request message, which is
//! the code the gRPC status code specification gives for "error parsing request proto"
//! (grpc/grpc, doc/statuscodes.md).

use binodal_proto::v1 as pb;
use binodal_proto::v1::phase_service_client::PhaseServiceClient;
use bytes::{Buf as _, BufMut as _};
use proptest::prelude::*;
use proptest::test_runner::{Config, TestCaseError, TestRunner};
use tonic::Code;
use tonic::codec::{Codec, DecodeBuf, Decoder, EncodeBuf, Encoder};
use tonic::transport::{Channel, Endpoint};
use tonic_health::pb::HealthCheckRequest;
use tonic_health::pb::health_check_response::ServingStatus;
use tonic_health::pb::health_client::HealthClient;

use crate::util::process::{Launch, ServerProcess};

/// `limits.max_batch_length` of the server under test: small, so that batches above it are
/// cheap to make.
const MAX_BATCH: usize = 2_000;
/// Generated cases per run.
const CASES: u32 = 256;

/// Unary methods that take a message, by gRPC path.
const UNARY_METHODS: [&str; 6] = [
    "/binodal.v1.PhaseService/ListFluids",
    "/binodal.v1.PhaseService/DescribeFluid",
    "/binodal.v1.PhaseService/GetSaturation",
    "/binodal.v1.PhaseService/GetState",
    "/binodal.v1.PhaseService/GetStateBatch",
    "/binodal.v1.AlarmService/EvaluateReadings",
];

/// A codec that sends and receives raw bytes, so any bytes can be sent as a request message.
#[derive(Debug, Clone, Default)]
struct RawCodec;

#[derive(Debug, Clone, Default)]
struct RawCoder;

impl Encoder for RawCoder {
    type Item = Vec<u8>;
    type Error = tonic::Status;

    fn encode(&mut self, item: Vec<u8>, dst: &mut EncodeBuf<'_>) -> Result<(), tonic::Status> {
        dst.put_slice(&item);
        Ok(())
    }
}

impl Decoder for RawCoder {
    type Item = Vec<u8>;
    type Error = tonic::Status;

    fn decode(&mut self, src: &mut DecodeBuf<'_>) -> Result<Option<Vec<u8>>, tonic::Status> {
        let mut bytes = vec![0; src.remaining()];
        src.copy_to_slice(&mut bytes);
        Ok(Some(bytes))
    }
}

impl Codec for RawCodec {
    type Encode = Vec<u8>;
    type Decode = Vec<u8>;
    type Encoder = RawCoder;
    type Decoder = RawCoder;

    fn encoder(&mut self) -> RawCoder {
        RawCoder
    }

    fn decoder(&mut self) -> RawCoder {
        RawCoder
    }
}

/// One generated request.
#[derive(Clone)]
enum Input {
    Raw { method: usize, bytes: Vec<u8> },
    List(pb::ListFluidsRequest),
    Describe(pb::DescribeFluidRequest),
    Saturation(pb::GetSaturationRequest),
    State(pb::GetStateRequest),
    Batch(pb::GetStateBatchRequest),
}

/// Shown shortened: a generated name can be 200 000 characters long.
impl std::fmt::Debug for Input {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let full = match self {
            Input::Raw { method, bytes } => {
                format!(
                    "Raw {{ method: {}, bytes: {bytes:?} }}",
                    UNARY_METHODS[*method]
                )
            }
            Input::List(request) => format!("{request:?}"),
            Input::Describe(request) => format!("{request:?}"),
            Input::Saturation(request) => format!("{request:?}"),
            Input::State(request) => format!("{request:?}"),
            Input::Batch(request) => format!("{request:?}"),
        };
        let shown: String = full.chars().take(600).collect();
        let omitted = full.chars().count().saturating_sub(600);
        if omitted > 0 {
            write!(f, "{shown}... ({omitted} more characters)")
        } else {
            f.write_str(&shown)
        }
    }
}

/// Numbers a client might send: special values, extremes, anything, and plausible ones.
fn number() -> impl Strategy<Value = f64> {
    prop_oneof![
        prop::sample::select(vec![
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            0.0,
            -0.0,
            f64::MIN_POSITIVE,
            5e-324,
            f64::MAX,
            -f64::MAX,
            1e-300,
            1e300,
            -273.15,
            1e-9,
        ]),
        any::<f64>(),
        -1.0e4..1.0e4f64,
        1.0e-3..1.0e9f64,
    ]
}

/// Fluid names: real ones, empty, any printable text, control characters, very long ones.
fn name() -> impl Strategy<Value = String> {
    prop_oneof![
        prop::sample::select(vec!["R-717", "R-744", "R-134a", "R-410A", "water", "", " "])
            .prop_map(str::to_owned),
        "\\PC{0,64}",
        prop::collection::vec(any::<char>(), 0..64).prop_map(|chars| chars.into_iter().collect()),
        (1_000usize..200_000).prop_map(|n| "R-".repeat(n / 2)),
    ]
}

fn selector() -> impl Strategy<Value = Option<pb::FluidSelector>> {
    let component =
        (name(), number()).prop_map(|(fluid, fraction)| pb::MixtureComponent { fluid, fraction });
    prop_oneof![
        Just(None),
        Just(Some(pb::FluidSelector { choice: None })),
        name().prop_map(|name| Some(pb::FluidSelector {
            choice: Some(pb::fluid_selector::Choice::Fluid(name)),
        })),
        (prop::collection::vec(component, 0..40), any::<i32>()).prop_map(
            |(components, fraction_basis)| Some(pb::FluidSelector {
                choice: Some(pb::fluid_selector::Choice::Mixture(pb::Mixture {
                    components,
                    fraction_basis,
                })),
            })
        ),
    ]
}

fn input() -> impl Strategy<Value = Input> {
    let raw = (
        0..UNARY_METHODS.len(),
        prop::collection::vec(any::<u8>(), 0..2048),
    )
        .prop_map(|(method, bytes)| Input::Raw { method, bytes });
    let list =
        (name(), prop::collection::vec(any::<i32>(), 0..8)).prop_map(|(text, safety_classes)| {
            Input::List(pb::ListFluidsRequest {
                text,
                safety_classes,
            })
        });
    let describe = name().prop_map(|fluid| Input::Describe(pb::DescribeFluidRequest { fluid }));
    let condition = prop_oneof![
        Just(None),
        number().prop_map(|t| Some(pb::get_saturation_request::Condition::TemperatureK(t))),
        number().prop_map(|p| Some(pb::get_saturation_request::Condition::PressurePa(p))),
    ];
    let saturation = (selector(), any::<i32>(), any::<i32>(), condition).prop_map(
        |(fluid, equation_of_state, reference_state, condition)| {
            Input::Saturation(pb::GetSaturationRequest {
                fluid,
                equation_of_state,
                reference_state,
                condition,
            })
        },
    );
    let state = (selector(), any::<i32>(), any::<i32>(), number(), number()).prop_map(
        |(fluid, equation_of_state, reference_state, temperature_k, pressure_pa)| {
            Input::State(pb::GetStateRequest {
                fluid,
                equation_of_state,
                reference_state,
                temperature_k,
                pressure_pa,
            })
        },
    );
    let points = prop_oneof![
        prop::collection::vec(number(), 0..64),
        (0usize..2 * MAX_BATCH).prop_flat_map(|n| prop::collection::vec(number(), n..=n)),
    ];
    let batch = (selector(), any::<i32>(), points.clone(), points).prop_map(
        |(fluid, equation_of_state, temperatures_k, pressures_pa)| {
            Input::Batch(pb::GetStateBatchRequest {
                fluid,
                equation_of_state,
                temperatures_k,
                pressures_pa,
                ..Default::default()
            })
        },
    );
    prop_oneof![raw, list, describe, saturation, state, batch]
}

/// Sends one input; `Ok(())` for an answer, or the status.
async fn send(channel: &Channel, input: Input) -> Result<(), tonic::Status> {
    let mut client = PhaseServiceClient::new(channel.clone());
    match input {
        Input::Raw { method, bytes } => {
            let mut grpc = tonic::client::Grpc::new(channel.clone());
            grpc.ready()
                .await
                .map_err(|error| tonic::Status::unavailable(error.to_string()))?;
            let path = http::uri::PathAndQuery::from_static(UNARY_METHODS[method]);
            grpc.unary(tonic::Request::new(bytes), path, RawCodec)
                .await
                .map(drop)
        }
        Input::List(request) => client.list_fluids(request).await.map(drop),
        Input::Describe(request) => client.describe_fluid(request).await.map(drop),
        Input::Saturation(request) => client.get_saturation(request).await.map(drop),
        Input::State(request) => client.get_state(request).await.map(drop),
        Input::Batch(request) => client.get_state_batch(request).await.map(drop),
    }
}

/// Whether `status` is a deliberate answer to a bad request.
fn deliberate(status: &tonic::Status) -> bool {
    match status.code() {
        Code::InvalidArgument
        | Code::NotFound
        | Code::OutOfRange
        | Code::FailedPrecondition
        | Code::Unimplemented
        | Code::ResourceExhausted => !status.message().is_empty(),
        Code::Internal => status.message().contains("decode"),
        _ => false,
    }
}

async fn serving(channel: &Channel) -> bool {
    HealthClient::new(channel.clone())
        .check(HealthCheckRequest::default())
        .await
        .is_ok_and(|answer| answer.into_inner().status == ServingStatus::Serving as i32)
}

#[test]
fn malformed_and_extreme_requests_get_deliberate_answers_and_no_panic() {
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .worker_threads(2)
        .enable_all()
        .build()
        .expect("runtime");
    let server = runtime.block_on(ServerProcess::start(
        &Launch::default().env("BINODAL_LIMITS__MAX_BATCH_LENGTH", MAX_BATCH),
    ));
    let channel = runtime.block_on(async {
        Endpoint::from_shared(server.url())
            .expect("endpoint")
            .connect()
            .await
            .expect("connect")
    });

    let mut runner = TestRunner::new(Config {
        cases: CASES,
        failure_persistence: None,
        ..Config::default()
    });
    let result = runner.run(&input(), |input| {
        let described = format!("{input:?}");
        let answer = runtime.block_on(send(&channel, input));
        if let Err(status) = &answer
            && !deliberate(status)
        {
            return Err(TestCaseError::fail(format!(
                "{described} got {:?}: {:.300}",
                status.code(),
                status.message()
            )));
        }
        Ok(())
    });
    if let Err(error) = result {
        panic!("{error}\nserver log:\n{}", server.log_lines().join("\n"));
    }

    // A batch far over the message size limit (4 MiB by default) is refused, not read.
    let huge = 300_000;
    let status = runtime
        .block_on(send(
            &channel,
            Input::Batch(pb::GetStateBatchRequest {
                fluid: crate::cases::fluid("R-717"),
                temperatures_k: vec![250.0; huge],
                pressures_pa: vec![1.0e5; huge],
                ..Default::default()
            }),
        ))
        .expect_err("a 4.8 MB batch is refused");
    assert!(deliberate(&status), "{status:?}");

    assert!(runtime.block_on(serving(&channel)), "still serving");
    let panics: Vec<String> = server
        .log_lines()
        .into_iter()
        .filter(|line| line.contains("panicked"))
        .collect();
    assert!(panics.is_empty(), "the server panicked: {panics:?}");
}

/// 2026-01-15T06:00:00Z in milliseconds since the Unix epoch (the generated readings' base time).
const STREAM_T0: i64 = 1_768_456_800_000;
/// 9999-12-31T23:59:59.999Z in ms, the last valid reading time of alarms.proto
/// (QUALITY_ISSUE_TIMESTAMP_INVALID); computed with Python's `datetime(9999, 12, 31, 23, 59, 59,
/// 999000, tzinfo=timezone.utc).timestamp()`.
const LAST_VALID_MS: i64 = 253_402_300_799_999;
/// Generated requests per run on the alarm stream.
const STREAM_CASES: u32 = 128;
/// Pure catalogue fluids of the generated readings; R-407C is the blend.
const PURE_FLUIDS: [&str; 4] = ["R-717", "R-744", "water", "R-134a"];
/// Above 100 times the critical pressure of every fluid used (the models' upper bound, `crates/eos`
/// `state_pressure_range_pa`); the largest is water's 22.064 MPa (IAPWS-95 via NIST SRD 69,
/// source key `iapws95-nist-srd69` in crates/fluids/data/inorganic.toml).
const CERTAINLY_TOO_HIGH_PA: f64 = 3.0e9;
/// Below half the triple-point temperature of every pure fluid used (the models' lower bound,
/// `state_temperature_range_k`); the lowest is ammonia's 195.492 K / 2 (Staveley et al. 1981,
/// source key `staveley-1981` in crates/fluids/data/inorganic.toml).
const CERTAINLY_TOO_COLD_K: f64 = 50.0;
/// Above max(5 Tc, 1500 K) of every pure fluid used (`state_temperature_range_k`); the largest is
/// water's 5 x 647.096 K (source key `iapws95-nist-srd69`).
const CERTAINLY_TOO_HOT_K: f64 = 1.0e4;

/// A generated reading and the fluid it certainly has, when the generator knows it.
#[derive(Clone)]
struct Plant {
    reading: pb::Reading,
    fluid: Option<&'static str>,
    /// Whether the timestamp is a fault's; otherwise the run gives it the next stream time.
    time_fault: bool,
}

/// Shown shortened: a generated tag can be 10 000 characters long.
impl std::fmt::Debug for Plant {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let mut shown = self.reading.clone();
        if shown.tag.chars().count() > 40 {
            shown.tag = format!(
                "{}... ({} characters)",
                shown.tag.chars().take(40).collect::<String>(),
                shown.tag.chars().count()
            );
        }
        write!(f, "{shown:?}")
    }
}

/// One way a field of a plant reading goes wrong.
#[derive(Debug, Clone)]
enum Fault {
    Tag(String),
    Fluid,
    Pressure(Option<f64>),
    Kind(i32),
    Ambient(f64),
    Temperature(Option<f64>),
    Timestamp(Option<i64>),
    Quality(i32),
}

/// Faults with extreme values: NaN, infinities, huge, negative and tiny numbers, timestamps at
/// and past both ends of their range, empty, blank, strange and very long tags, enum numbers no
/// proto version defines.
fn fault() -> impl Strategy<Value = Fault> {
    let tag = prop_oneof![
        Just(String::new()),
        Just("   ".to_owned()),
        "\\PC{1,32}",
        (1_000usize..10_000).prop_map(|n| "X".repeat(n)),
    ];
    let timestamp = prop_oneof![
        Just(None),
        prop::sample::select(vec![
            i64::MIN,
            i64::MAX,
            -1,
            0,
            LAST_VALID_MS,
            LAST_VALID_MS + 1
        ])
        .prop_map(Some),
        any::<i64>().prop_map(Some),
    ];
    prop_oneof![
        tag.prop_map(Fault::Tag),
        Just(Fault::Fluid),
        prop::option::of(number()).prop_map(Fault::Pressure),
        any::<i32>().prop_map(Fault::Kind),
        number().prop_map(Fault::Ambient),
        prop::option::of(number()).prop_map(Fault::Temperature),
        timestamp.prop_map(Fault::Timestamp),
        any::<i32>().prop_map(Fault::Quality),
    ]
}

/// A plausible reading of one of the plant's tags (each with its fluid), then 0 to 3 faults.
fn plant_reading() -> impl Strategy<Value = Plant> {
    let tag = prop::sample::select(vec![
        ("NH3-P101", "R-717"),
        ("CO2-RK2-GC", "R-744"),
        ("CH-2-CHWL", "water"),
        ("R134A-LIQ", "R-134a"),
        ("KL-CH2-SUC", "R-407C"),
    ]);
    (
        tag,
        1.0e4..1.0e7f64,
        1..=2i32,
        150.0..600.0f64,
        0..=2i32,
        prop::collection::vec(fault(), 0..=3),
    )
        .prop_map(
            |((tag, fluid), pressure, kind, temperature, quality, faults)| {
                let mut plant = Plant {
                    reading: pb::Reading {
                        tag: tag.to_owned(),
                        fluid: crate::cases::fluid(fluid),
                        pressure_pa: Some(pressure),
                        pressure_kind: kind,
                        ambient_pressure_pa: None,
                        temperature_k: Some(temperature),
                        timestamp_unix_ms: None,
                        quality,
                    },
                    fluid: Some(fluid),
                    time_fault: false,
                };
                let r = &mut plant.reading;
                let mut retagged = false;
                for fault in faults {
                    match fault {
                        Fault::Tag(tag) => {
                            r.tag = tag;
                            retagged = true;
                        }
                        // Left out: the stream may know it from the tag's earlier readings.
                        Fault::Fluid => r.fluid = None,
                        Fault::Pressure(p) => r.pressure_pa = p,
                        Fault::Kind(k) => r.pressure_kind = k,
                        Fault::Ambient(a) => r.ambient_pressure_pa = Some(a),
                        Fault::Temperature(t) => r.temperature_k = t,
                        Fault::Timestamp(ms) => {
                            r.timestamp_unix_ms = ms;
                            plant.time_fault = true;
                        }
                        Fault::Quality(q) => r.quality = q,
                    }
                }
                if retagged && r.fluid.is_none() {
                    // A generated tag without a fluid: its fluid, if any, is whatever the stream
                    // saw for it before.
                    plant.fluid = None;
                }
                plant
            },
        )
}

/// Why the service must refuse `plant`, if any reason is certain: a field missing, not finite,
/// outside its documented range (alarms.proto), or outside every model's range for its fluid.
fn certainly_bad(plant: &Plant) -> Option<&'static str> {
    let r = &plant.reading;
    let ambient_ok = |a: f64| a.is_finite() && (20_000.0..=130_000.0).contains(&a);
    let absolute = match (r.pressure_pa, r.pressure_kind) {
        (Some(p), 1) => Some(p),
        // The server's default ambient is 101 325 Pa (ISO 2533, Settings::default).
        (Some(p), 2) => r
            .ambient_pressure_pa
            .map_or(Some(p + 101_325.0), |a| ambient_ok(a).then_some(p + a)),
        _ => None,
    };
    let pure = plant.fluid.is_some_and(|f| PURE_FLUIDS.contains(&f));
    if r.tag.trim().is_empty() {
        Some("empty tag")
    } else if !r
        .timestamp_unix_ms
        .is_some_and(|ms| (0..=LAST_VALID_MS).contains(&ms))
    {
        Some("timestamp missing or outside 1970 to 9999")
    } else if !(0..=2).contains(&r.quality) {
        Some("quality bad or unknown")
    } else if r.pressure_kind != 1 && r.pressure_kind != 2 {
        Some("pressure kind missing or unknown")
    } else if !r.pressure_pa.is_some_and(f64::is_finite) {
        Some("pressure missing or not finite")
    } else if !absolute.is_some_and(|p| p > 0.0) {
        Some("ambient invalid or absolute pressure not above 0")
    } else if !r.temperature_k.is_some_and(|t| t.is_finite() && t > 0.0) {
        Some("temperature missing, not finite or not above 0 K")
    } else if absolute.is_some_and(|p| p > CERTAINLY_TOO_HIGH_PA) {
        Some("pressure above every model's range")
    } else if pure
        && r.temperature_k
            .is_some_and(|t| !(CERTAINLY_TOO_COLD_K..=CERTAINLY_TOO_HOT_K).contains(&t))
    {
        Some("temperature outside the model's range")
    } else {
        None
    }
}

/// An alarm rule of `kind` with every parameter at the kind's default.
fn default_rule(kind: pb::AlarmRuleKind) -> pb::AlarmRule {
    pb::AlarmRule {
        kind: kind as i32,
        ..Default::default()
    }
}

/// An open alarm stream on the server under test.
struct Stream {
    requests: tokio::sync::mpsc::Sender<pb::WatchRequest>,
    responses: tonic::Streaming<pb::WatchResponse>,
}

impl Stream {
    /// Sends `readings` in one request; the response, or the status that ended the stream.
    async fn send(&mut self, readings: Vec<pb::Reading>) -> Result<pb::WatchResponse, String> {
        self.requests
            .send(pb::WatchRequest {
                opening: None,
                readings,
            })
            .await
            .map_err(|_| "the stream stopped taking requests".to_owned())?;
        match tokio::time::timeout(crate::util::STOP_GUARD, self.responses.message()).await {
            Err(_) => Err("no response within the guard time".to_owned()),
            Ok(Err(status)) => Err(format!("the stream ended with {status:?}")),
            Ok(Ok(None)) => Err("the stream ended".to_owned()),
            Ok(Ok(Some(response))) => Ok(response),
        }
    }
}

/// Checks one outcome of a generated reading; the problem, if any.
fn judge(plant: &Plant, outcome: &pb::ReadingOutcome) -> Result<(), String> {
    let quality = outcome
        .events
        .iter()
        .filter(|e| e.kind == pb::AlarmEventKind::Quality as i32)
        .count();
    let alarms = outcome.events.iter().any(|e| {
        e.kind == pb::AlarmEventKind::Raised as i32 || e.kind == pb::AlarmEventKind::Cleared as i32
    });
    if let Some(reason) = certainly_bad(plant)
        && (outcome.evaluated || quality == 0)
    {
        return Err(format!(
            "a bad reading ({reason}) was evaluated or got no quality event"
        ));
    }
    if !outcome.evaluated {
        if quality == 0 {
            return Err("a reading was not evaluated and no quality event says why".to_owned());
        }
        if alarms {
            return Err("an unevaluated reading raised or cleared an alarm".to_owned());
        }
        return Ok(());
    }
    // Evaluated: no number may be silently wrong.
    let margins = outcome
        .margins
        .as_ref()
        .ok_or("evaluated without margins")?;
    let finite = [
        Some(margins.critical_pressure_fraction),
        Some(margins.pressure_below_critical_pa),
        outcome.absolute_pressure_pa,
        margins.saturation_temperature_k,
        margins.saturation_pressure_pa,
        margins.subcooling_k,
        margins.superheat_k,
        margins.dew_margin_k,
        margins.freezing_margin_k,
    ];
    if finite.iter().flatten().any(|v| !v.is_finite()) {
        return Err("an evaluated reading has a margin that is not a finite number".to_owned());
    }
    if outcome.phase == pb::Phase::Unspecified as i32 {
        return Err("an evaluated reading has no phase".to_owned());
    }
    Ok(())
}

/// The alarm stream fed generated extreme readings, a request of 1 to 8 of them per case: the
/// stream never ends with an error, every certainly bad reading gets a quality event (and no
/// evaluation), every reading is either evaluated with finite numbers or answered with a quality
/// event, and a good reading sent after each case is still evaluated. The server is the real
/// binary; at the end it is still serving and has not panicked.
#[test]
fn the_alarm_stream_survives_extreme_readings_and_keeps_evaluating() {
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .worker_threads(2)
        .enable_all()
        .build()
        .expect("runtime");
    let server = runtime.block_on(ServerProcess::start(&Launch::default()));
    let channel = runtime.block_on(async {
        Endpoint::from_shared(server.url())
            .expect("endpoint")
            .connect()
            .await
            .expect("connect")
    });
    let stream = runtime.block_on(async {
        let (requests, receiver) = tokio::sync::mpsc::channel(4);
        // Rules on every tag, so that evaluated readings drive alarm machines, with and without
        // delays: a subcooling limit of 150 K with no delays raises on any subcooled reading.
        let opening = pb::WatchOpening {
            default_rules: vec![
                pb::AlarmRule {
                    limit: Some(150.0),
                    deadband: Some(0.0),
                    on_delay_s: Some(0.0),
                    off_delay_s: Some(0.0),
                    ..default_rule(pb::AlarmRuleKind::MinimumSubcooling)
                },
                default_rule(pb::AlarmRuleKind::MinimumSuperheat),
                default_rule(pb::AlarmRuleKind::MaximumCriticalPressureFraction),
                default_rule(pb::AlarmRuleKind::MinimumFreezingMargin),
            ],
            ..Default::default()
        };
        requests
            .send(pb::WatchRequest {
                opening: Some(opening),
                readings: Vec::new(),
            })
            .await
            .expect("queue the opening");
        let responses =
            binodal_proto::v1::alarm_service_client::AlarmServiceClient::new(channel.clone())
                .watch_readings(tokio_stream::wrappers::ReceiverStream::new(receiver))
                .await
                .expect("the stream opens")
                .into_inner();
        let mut stream = Stream {
            requests,
            responses,
        };
        stream
            .responses
            .message()
            .await
            .expect("the opening is accepted")
            .expect("an answer to the opening");
        stream
    });
    let stream = std::cell::RefCell::new(stream);
    let checks = std::cell::Cell::new(0u64);
    // Readings evaluated, and readings certainly bad, over the run: the run must have seen both.
    let (evaluated, bad) = (std::cell::Cell::new(0u64), std::cell::Cell::new(0u64));

    let mut runner = TestRunner::new(Config {
        cases: STREAM_CASES,
        failure_persistence: None,
        ..Config::default()
    });
    let strategy = prop::collection::vec(plant_reading(), 1..=8);
    // The stream time of readings without a timestamp fault: one second further each time, so
    // that readings of one tag come in order.
    let clock = std::cell::Cell::new(STREAM_T0);
    let result = runner.run(&strategy, |mut plants| {
        for plant in plants.iter_mut().filter(|p| !p.time_fault) {
            clock.set(clock.get() + 1000);
            plant.reading.timestamp_unix_ms = Some(clock.get());
        }
        let readings: Vec<pb::Reading> = plants.iter().map(|p| p.reading.clone()).collect();
        let mut stream = stream.borrow_mut();
        let response = runtime
            .block_on(stream.send(readings))
            .map_err(TestCaseError::fail)?;
        prop_assert_eq!(response.outcomes.len(), plants.len());
        for (plant, outcome) in plants.iter().zip(&response.outcomes) {
            judge(plant, outcome)
                .map_err(|problem| TestCaseError::fail(format!("{plant:?}: {problem}")))?;
            evaluated.set(evaluated.get() + u64::from(outcome.evaluated));
            bad.set(bad.get() + u64::from(certainly_bad(plant).is_some()));
        }
        // A good reading on a fresh tag: ammonia at 250 K and 3 bar absolute, a subcooled
        // liquid (saturation at 3 bar is near 264 K: ammonia tables, `from memory`).
        let n = checks.get();
        checks.set(n + 1);
        let good = pb::Reading {
            tag: format!("NH3-CHECK-{n}"),
            fluid: crate::cases::fluid("R-717"),
            pressure_pa: Some(3.0e5),
            pressure_kind: pb::PressureKind::Absolute as i32,
            ambient_pressure_pa: None,
            temperature_k: Some(250.0),
            timestamp_unix_ms: Some(STREAM_T0),
            quality: pb::ReadingQuality::Good as i32,
        };
        let after = runtime
            .block_on(stream.send(vec![good]))
            .map_err(TestCaseError::fail)?;
        let outcome = &after.outcomes[0];
        prop_assert!(outcome.evaluated, "the good reading after: {:?}", outcome);
        prop_assert_eq!(outcome.phase, pb::Phase::SubcooledLiquid as i32);
        prop_assert!(
            !outcome
                .events
                .iter()
                .any(|e| e.kind == pb::AlarmEventKind::Quality as i32),
            "{:?}",
            outcome
        );
        Ok(())
    });
    if let Err(error) = result {
        panic!("{error}\nserver log:\n{}", server.log_lines().join("\n"));
    }
    assert!(checks.get() >= u64::from(STREAM_CASES));
    eprintln!(
        "alarm stream fuzz: {} readings evaluated, {} certainly bad",
        evaluated.get(),
        bad.get()
    );
    assert!(
        evaluated.get() > 0 && bad.get() > 0,
        "the generator made both usable and bad readings"
    );
    assert!(runtime.block_on(serving(&channel)), "still serving");
    let panics: Vec<String> = server
        .log_lines()
        .into_iter()
        .filter(|line| line.contains("panicked"))
        .collect();
    assert!(panics.is_empty(), "the server panicked: {panics:?}");
}
