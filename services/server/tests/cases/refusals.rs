//! Bad requests, one table: each with the status code it must get, fragments its message must
//! contain, and the request field a `google.rpc.BadRequest` violation must name (INVALID_ARGUMENT
//! and OUT_OF_RANGE, services/server/src/status.rs).

use binodal_eos::{Model, ReferenceState};
use binodal_proto::v1 as pb;
use binodal_proto::v1::get_saturation_request::Condition;
use binodal_proto::v1::phase_service_client::PhaseServiceClient;
use binodal_server::settings::Settings;
use tonic::Code;
use tonic::transport::Channel;
use tonic_types::StatusExt as _;

use super::{engine, fluid, phase_client};
use crate::util::TestServer;

/// A request to one of the RPCs.
#[derive(Debug, Clone)]
enum Call {
    Describe(pb::DescribeFluidRequest),
    Saturation(pb::GetSaturationRequest),
    State(pb::GetStateRequest),
    Batch(pb::GetStateBatchRequest),
}

/// One bad request and what the server must answer.
struct Refusal {
    what: &'static str,
    call: Call,
    code: Code,
    /// Each must appear in the message (compared ignoring case).
    fragments: Vec<String>,
    /// The field a BadRequest violation must name; `None` when no violation is expected.
    violation: Option<&'static str>,
}

async fn send(client: &mut PhaseServiceClient<Channel>, call: Call) -> Result<(), tonic::Status> {
    match call {
        Call::Describe(r) => client.describe_fluid(r).await.map(drop),
        Call::Saturation(r) => client.get_saturation(r).await.map(drop),
        Call::State(r) => client.get_state(r).await.map(drop),
        Call::Batch(r) => client.get_state_batch(r).await.map(drop),
    }
}

fn state(name: &str, t: f64, p: f64) -> Call {
    Call::State(pb::GetStateRequest {
        fluid: fluid(name),
        temperature_k: t,
        pressure_pa: p,
        ..Default::default()
    })
}

/// GetState at 280 K and 1 bar of a custom mixture of `(name, mole fraction)` components.
fn mixture_state(components: &[(&str, f64)]) -> Call {
    Call::State(pb::GetStateRequest {
        fluid: Some(pb::FluidSelector {
            choice: Some(pb::fluid_selector::Choice::Mixture(pb::Mixture {
                components: components
                    .iter()
                    .map(|&(name, fraction)| pb::MixtureComponent {
                        fluid: name.into(),
                        fraction,
                    })
                    .collect(),
                fraction_basis: pb::FractionBasis::Mole as i32,
            })),
        }),
        temperature_k: 280.0,
        pressure_pa: 1.0e5,
        ..Default::default()
    })
}

fn saturation(name: &str, condition: Option<Condition>) -> Call {
    Call::Saturation(pb::GetSaturationRequest {
        fluid: fluid(name),
        condition,
        ..Default::default()
    })
}

fn batch(name: &str, ts: Vec<f64>, ps: Vec<f64>) -> Call {
    Call::Batch(pb::GetStateBatchRequest {
        fluid: fluid(name),
        temperatures_k: ts,
        pressures_pa: ps,
        ..Default::default()
    })
}

/// `x` as engine messages print it: 12 significant digits, trailing zeros dropped (so
/// 5 x 369.89 K = 1849.4499999999998 K prints as 1849.45 K).
fn as_printed(x: f64) -> f64 {
    let decimals = (11 - x.abs().log10().floor() as i32).max(0) as usize;
    format!("{x:.decimals$}").parse().expect("a number")
}

fn words(list: &[&str]) -> Vec<String> {
    list.iter().map(|s| (*s).to_owned()).collect()
}

/// Sends every refusal and checks code, message and violation; collects every mismatch before
/// failing so that one run shows them all.
async fn check_all(client: &mut PhaseServiceClient<Channel>, table: Vec<Refusal>) {
    let mut failures = Vec::new();
    for refusal in table {
        let status = match send(client, refusal.call.clone()).await {
            Ok(()) => {
                failures.push(format!(
                    "{}: answered instead of {:?}",
                    refusal.what, refusal.code
                ));
                continue;
            }
            Err(status) => status,
        };
        if status.code() != refusal.code {
            failures.push(format!(
                "{}: code {:?}, expected {:?} ({})",
                refusal.what,
                status.code(),
                refusal.code,
                status.message()
            ));
        }
        let message = status.message().to_lowercase();
        for fragment in &refusal.fragments {
            if !message.contains(&fragment.to_lowercase()) {
                failures.push(format!(
                    "{}: message lacks `{fragment}`: {}",
                    refusal.what,
                    status.message()
                ));
            }
        }
        let violations: Vec<String> = status
            .get_error_details()
            .bad_request()
            .map(|b| b.field_violations.iter().map(|v| v.field.clone()).collect())
            .unwrap_or_default();
        match refusal.violation {
            Some(field) if !violations.iter().any(|v| v == field) => failures.push(format!(
                "{}: no BadRequest violation for `{field}` (violations: {violations:?}; {})",
                refusal.what,
                status.message()
            )),
            None if !violations.is_empty() => failures.push(format!(
                "{}: unexpected violations {violations:?}",
                refusal.what
            )),
            _ => {}
        }
    }
    assert!(
        failures.is_empty(),
        "{} refusal(s) wrong:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

#[tokio::test]
async fn bad_requests_get_precise_statuses() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;

    // The model's own limits, from the engine the server uses (default model PR-1978).
    let propane = engine(
        "propane",
        Model::PengRobinson1978,
        ReferenceState::LiquidAtZeroCelsius,
    );
    let (t_lo, t_hi) = propane.state_temperature_range_k();
    let tc = propane.critical_temperature_k();

    let table = vec![
        Refusal {
            what: "unknown fluid R-134 (GetState)",
            call: state("R-134", 280.0, 1.0e5),
            code: Code::NotFound,
            fragments: words(&["R-134", "did you mean", "R-134a"]),
            violation: None,
        },
        Refusal {
            what: "unknown fluid (DescribeFluid)",
            call: Call::Describe(pb::DescribeFluidRequest {
                fluid: "R-134".to_owned(),
            }),
            code: Code::NotFound,
            fragments: words(&["R-134a"]),
            violation: None,
        },
        Refusal {
            what: "unknown fluid (GetSaturation)",
            call: saturation("propanne", Some(Condition::TemperatureK(280.0))),
            code: Code::NotFound,
            fragments: words(&["propanne", "propane"]),
            violation: None,
        },
        // A name far longer than any catalogue name is refused at once, without comparing it
        // with every known name, and is not echoed back.
        Refusal {
            what: "3 MB fluid name (GetState)",
            call: state(&"x".repeat(3_000_000), 280.0, 1.0e5),
            code: Code::InvalidArgument,
            fragments: words(&["fluid name of 3000000 bytes", "at most 256 bytes"]),
            violation: None,
        },
        Refusal {
            what: "3 MB fluid name (DescribeFluid)",
            call: Call::Describe(pb::DescribeFluidRequest {
                fluid: "R".repeat(3_000_000),
            }),
            code: Code::InvalidArgument,
            fragments: words(&["at most 256 bytes"]),
            violation: None,
        },
        // Carbon dioxide's triple point lies above one atmosphere (0.518 MPa at 216.6 K, the
        // catalogue's inorganic.toml, `staveley-1981`): it has no liquid at the normal boiling
        // pressure, so that reference state cannot apply.
        Refusal {
            what: "normal-boiling-point reference for carbon dioxide (GetState)",
            call: Call::State(pb::GetStateRequest {
                fluid: fluid("R-744"),
                temperature_k: 300.0,
                pressure_pa: 1.0e5,
                reference_state: pb::ReferenceState::LiquidAtNormalBoilingPoint as i32,
                ..Default::default()
            }),
            code: Code::InvalidArgument,
            fragments: words(&[
                "reference_state",
                "Carbon dioxide",
                "another reference state",
            ]),
            violation: Some("reference_state"),
        },
        Refusal {
            what: "NaN temperature (GetState)",
            call: state("propane", f64::NAN, 1.0e5),
            code: Code::InvalidArgument,
            fragments: words(&["temperature_k", "valid", "kelvin", "above 0 K"]),
            violation: Some("temperature_k"),
        },
        Refusal {
            what: "NaN temperature (GetSaturation)",
            call: saturation("propane", Some(Condition::TemperatureK(f64::NAN))),
            code: Code::InvalidArgument,
            fragments: words(&["temperature_k", "valid", "kelvin", "above 0 K"]),
            violation: Some("temperature_k"),
        },
        Refusal {
            what: "infinite pressure (GetState)",
            call: state("propane", 280.0, f64::INFINITY),
            code: Code::InvalidArgument,
            fragments: words(&["pressure_pa", "valid", "pascal", "above 0 Pa"]),
            violation: Some("pressure_pa"),
        },
        Refusal {
            what: "negative pressure (GetState)",
            call: state("propane", 280.0, -1.0e5),
            code: Code::InvalidArgument,
            fragments: words(&["pressure_pa", "greater than zero"]),
            violation: Some("pressure_pa"),
        },
        Refusal {
            what: "negative pressure (GetSaturation)",
            call: saturation("propane", Some(Condition::PressurePa(-1.0e5))),
            code: Code::InvalidArgument,
            fragments: words(&["pressure_pa"]),
            violation: Some("pressure_pa"),
        },
        Refusal {
            what: "temperature below the model range (GetState)",
            call: state("propane", 10.0, 1.0e5),
            code: Code::OutOfRange,
            fragments: vec![
                "temperature_k".into(),
                format!("valid {} K to {} K", as_printed(t_lo), as_printed(t_hi)),
            ],
            violation: Some("temperature_k"),
        },
        Refusal {
            what: "saturation above Tc (GetSaturation)",
            call: saturation("propane", Some(Condition::TemperatureK(tc + 10.0))),
            code: Code::OutOfRange,
            fragments: words(&["temperature_k", "valid"]),
            violation: Some("temperature_k"),
        },
        Refusal {
            what: "saturation pressure above Pc (GetSaturation)",
            call: saturation(
                "propane",
                Some(Condition::PressurePa(2.0 * propane.critical_pressure_pa())),
            ),
            code: Code::OutOfRange,
            fragments: words(&["pressure_pa", "valid"]),
            violation: Some("pressure_pa"),
        },
        Refusal {
            what: "empty batch",
            call: batch("propane", Vec::new(), Vec::new()),
            code: Code::InvalidArgument,
            fragments: words(&["temperatures_k", "at least one"]),
            violation: Some("temperatures_k"),
        },
        Refusal {
            what: "batch with mismatched lengths",
            call: batch("propane", vec![280.0, 290.0], vec![1.0e5]),
            code: Code::InvalidArgument,
            fragments: words(&["pressures_pa", "temperatures_k", "1", "2"]),
            violation: Some("pressures_pa"),
        },
        Refusal {
            what: "missing fluid selector (GetState)",
            call: Call::State(pb::GetStateRequest {
                fluid: None,
                temperature_k: 280.0,
                pressure_pa: 1.0e5,
                ..Default::default()
            }),
            code: Code::InvalidArgument,
            fragments: words(&["fluid", "missing"]),
            violation: Some("fluid"),
        },
        Refusal {
            what: "empty fluid selector (GetStateBatch)",
            call: Call::Batch(pb::GetStateBatchRequest {
                fluid: Some(pb::FluidSelector { choice: None }),
                temperatures_k: vec![280.0],
                pressures_pa: vec![1.0e5],
                ..Default::default()
            }),
            code: Code::InvalidArgument,
            fragments: words(&["fluid"]),
            violation: Some("fluid"),
        },
        Refusal {
            what: "missing fluid (DescribeFluid)",
            call: Call::Describe(pb::DescribeFluidRequest {
                fluid: String::new(),
            }),
            code: Code::InvalidArgument,
            fragments: words(&["fluid"]),
            violation: Some("fluid"),
        },
        Refusal {
            what: "missing saturation condition",
            call: saturation("propane", None),
            code: Code::InvalidArgument,
            fragments: words(&["temperature_k", "pressure_pa"]),
            violation: Some("condition"),
        },
        Refusal {
            what: "unknown equation_of_state 42",
            call: Call::State(pb::GetStateRequest {
                fluid: fluid("propane"),
                equation_of_state: 42,
                temperature_k: 280.0,
                pressure_pa: 1.0e5,
                ..Default::default()
            }),
            code: Code::InvalidArgument,
            fragments: words(&["equation_of_state", "42"]),
            violation: Some("equation_of_state"),
        },
        Refusal {
            what: "unknown reference_state 9",
            call: Call::Saturation(pb::GetSaturationRequest {
                fluid: fluid("propane"),
                reference_state: 9,
                condition: Some(Condition::TemperatureK(280.0)),
                ..Default::default()
            }),
            code: Code::InvalidArgument,
            fragments: words(&["reference_state", "9"]),
            violation: Some("reference_state"),
        },
        Refusal {
            // Nitrogen's critical temperature is 126.19 K (NIST Chemistry WebBook, nitrogen),
            // below 0 °C: it has no saturated liquid at 0 °C.
            what: "liquid-at-0-°C reference for nitrogen",
            call: Call::State(pb::GetStateRequest {
                fluid: fluid("nitrogen"),
                reference_state: pb::ReferenceState::LiquidAtZeroCelsius as i32,
                temperature_k: 100.0,
                pressure_pa: 1.0e5,
                ..Default::default()
            }),
            code: Code::InvalidArgument,
            fragments: words(&["reference_state", "273.15"]),
            violation: Some("reference_state"),
        },
        Refusal {
            what: "mixture with a NaN fraction",
            call: mixture_state(&[("propane", f64::NAN), ("isobutane", 0.5)]),
            code: Code::InvalidArgument,
            fragments: words(&["fraction", "finite"]),
            violation: Some("fluid.mixture.components[0].fraction"),
        },
        Refusal {
            what: "a blend as a mixture component (GetState)",
            call: mixture_state(&[("R-410A", 0.5), ("propane", 0.5)]),
            code: Code::InvalidArgument,
            fragments: words(&["R-410A is a blend", "pure fluids"]),
            violation: Some("fluid.mixture.components[0].fluid"),
        },
    ];
    check_all(&mut client, table).await;
    server.stop().await;
}

#[tokio::test]
async fn an_oversized_batch_is_refused_naming_the_limit() {
    let mut settings = Settings::default();
    settings.limits.max_batch_length = 4;
    let server = TestServer::start_with(settings).await;
    let mut client = phase_client(&server).await;
    let table = vec![Refusal {
        what: "batch of 5 over a limit of 4",
        call: batch("propane", vec![280.0; 5], vec![1.0e5; 5]),
        code: Code::InvalidArgument,
        fragments: words(&["temperatures_k", "5", "limit of 4"]),
        violation: Some("temperatures_k"),
    }];
    check_all(&mut client, table).await;
    // At the limit, the batch is answered.
    let answer = client
        .get_state_batch(pb::GetStateBatchRequest {
            fluid: fluid("propane"),
            temperatures_k: vec![280.0; 4],
            pressures_pa: vec![1.0e5; 4],
            ..Default::default()
        })
        .await
        .expect("a batch at the limit")
        .into_inner();
    assert_eq!(answer.phases.len(), 4);
    server.stop().await;
}

/// proto/binodal/v1/fluids.proto: "an empty selector is rejected with INVALID_ARGUMENT naming
/// `fluid`"; the phase RPCs do so for an empty name too.
#[tokio::test]
async fn an_empty_fluid_name_is_an_invalid_argument() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    let table = vec![Refusal {
        what: "empty fluid name (GetState)",
        call: state("", 280.0, 1.0e5),
        code: Code::InvalidArgument,
        fragments: words(&["fluid"]),
        violation: Some("fluid"),
    }];
    check_all(&mut client, table).await;
    server.stop().await;
}

/// A bad point in a batch fails that point only, with a code and a message naming the input.
#[tokio::test]
async fn a_bad_point_fails_only_itself() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    let answer = client
        .get_state_batch(pb::GetStateBatchRequest {
            fluid: fluid("propane"),
            temperatures_k: vec![280.0, f64::NAN, 10.0, 300.0],
            pressures_pa: vec![1.0e6, 1.0e5, 1.0e5, 1.0e5],
            ..Default::default()
        })
        .await
        .expect("the batch is answered")
        .into_inner();
    let errors: Vec<(u32, i32)> = answer.errors.iter().map(|e| (e.index, e.code)).collect();
    assert_eq!(
        errors,
        vec![
            (1, pb::PointErrorCode::InvalidInput as i32),
            (2, pb::PointErrorCode::OutOfRange as i32)
        ]
    );
    assert!(
        answer
            .errors
            .iter()
            .all(|e| e.message.contains("temperature_k")),
        "{:?}",
        answer.errors
    );
    assert!(
        answer.errors[1].message.contains("valid"),
        "{:?}",
        answer.errors[1]
    );
    assert_eq!(answer.phases[0], pb::Phase::SubcooledLiquid as i32);
    assert_eq!(answer.phases[3], pb::Phase::SuperheatedVapor as i32);
    assert_eq!(answer.phases[1], pb::Phase::Unspecified as i32);
    assert!(answer.densities_kg_per_m3[2].is_nan());
    server.stop().await;
}
