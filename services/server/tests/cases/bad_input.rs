//! Bad input, generated: random bytes as messages, huge batches, NaN and infinities, extreme
//! temperatures and pressures, enum values out of range, long and strange strings. The server
//! (the real binary, as a child process) must answer each with a deliberate status and neither
//! panic nor stop answering.
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
