//! `binodal.v1.AlarmService` through the tonic client: deadband and delays on a scripted reading
//! sequence, margins against GetState, bad readings, stale tags, server-configured rules, the
//! unary form, and streams across the request timeout and shutdown.
//!
//! Scripted values (subcoolings, times) are the scripts' own inputs; the expected events follow
//! from the definitions of limit, deadband, on-delay and off-delay (IEC 62682 / ANSI/ISA-18.2, as
//! stated in `services/server/src/alarms/machine.rs`). Margins are checked against the service's
//! own GetState on the same absolute temperature and pressure.

use std::time::Duration;

use binodal_eos::{Model, Phase as EosPhase, ReferenceState};
use binodal_fluids::Catalogue;
use binodal_proto::v1 as pb;
use binodal_proto::v1::alarm_service_client::AlarmServiceClient;
use binodal_server::alarms::config::{TagPattern, TagRules};
use binodal_server::alarms::machine::{Bound, Limits};
use binodal_server::alarms::rules::{Priority, RuleKind, RuleSpec};
use binodal_server::settings::Settings;
use tokio::sync::mpsc;
use tokio_stream::wrappers::ReceiverStream;
use tonic::{Code, Streaming};

use super::{assert_same, engine, fluid, phase_client};
use crate::util::{STOP_GUARD, TestServer};

/// 2026-01-15T06:00:00Z in milliseconds since the Unix epoch (the scripts' start time).
const T0: i64 = 1_768_456_800_000;
/// Seconds to milliseconds.
const S: i64 = 1000;

/// An open alarm stream: requests go in through a channel, responses come back in order.
struct Watch {
    requests: mpsc::Sender<pb::WatchRequest>,
    responses: Streaming<pb::WatchResponse>,
}

impl Watch {
    async fn open(server: &TestServer, opening: Option<pb::WatchOpening>) -> Watch {
        let (requests, receiver) = mpsc::channel(16);
        let mut client = AlarmServiceClient::new(server.channel().await);
        requests
            .send(pb::WatchRequest {
                opening,
                readings: Vec::new(),
            })
            .await
            .expect("queue the opening");
        let responses = client
            .watch_readings(ReceiverStream::new(receiver))
            .await
            .expect("the stream opens")
            .into_inner();
        let mut watch = Watch {
            requests,
            responses,
        };
        watch.next().await.expect("the opening is accepted");
        watch
    }

    /// The next response, or the status that ended the stream.
    async fn next(&mut self) -> Result<pb::WatchResponse, tonic::Status> {
        tokio::time::timeout(STOP_GUARD, self.responses.message())
            .await
            .expect("a response within the guard time")
            .map(|response| response.expect("the stream is still open"))
    }

    /// Sends one request with `readings` and returns its response.
    async fn send(&mut self, readings: Vec<pb::Reading>) -> pb::WatchResponse {
        let count = readings.len();
        self.requests
            .send(pb::WatchRequest {
                opening: None,
                readings,
            })
            .await
            .expect("the stream accepts requests");
        let response = self.next().await.expect("a response, not an error");
        assert_eq!(response.outcomes.len(), count, "one outcome per reading");
        response
    }
}

/// NH3-P101 with one rule: at least 3 K subcooling (deadband 1 K, delays 15 s).
fn pump_subcooling_opening() -> pb::WatchOpening {
    opening(
        "NH3-P101",
        vec![rule(
            pb::AlarmRuleKind::MinimumSubcooling,
            3.0,
            1.0,
            15.0,
            15.0,
        )],
    )
}

/// `count` good absolute readings of the ammonia pump suction NH3-P101, one a second from
/// [`T0`], all at `temperature_k` and `pressure_pa`.
fn pump_readings(count: i64, temperature_k: f64, pressure_pa: f64) -> Vec<pb::Reading> {
    (0..count)
        .map(|i| reading("NH3-P101", "R-717", i, temperature_k, pressure_pa))
        .collect()
}

/// A good absolute reading of `tag` at `seconds` after [`T0`].
fn reading(
    tag: &str,
    name: &str,
    seconds: i64,
    temperature_k: f64,
    pressure_pa: f64,
) -> pb::Reading {
    pb::Reading {
        tag: tag.to_owned(),
        fluid: fluid(name),
        pressure_pa: Some(pressure_pa),
        pressure_kind: pb::PressureKind::Absolute as i32,
        ambient_pressure_pa: None,
        temperature_k: Some(temperature_k),
        timestamp_unix_ms: Some(T0 + seconds * S),
        quality: pb::ReadingQuality::Good as i32,
    }
}

fn rule(
    kind: pb::AlarmRuleKind,
    limit: f64,
    deadband: f64,
    on_s: f64,
    off_s: f64,
) -> pb::AlarmRule {
    pb::AlarmRule {
        kind: kind as i32,
        name: String::new(),
        limit: Some(limit),
        deadband: Some(deadband),
        on_delay_s: Some(on_s),
        off_delay_s: Some(off_s),
        priority: pb::AlarmPriority::Unspecified as i32,
    }
}

fn opening(tag: &str, rules: Vec<pb::AlarmRule>) -> pb::WatchOpening {
    pb::WatchOpening {
        tags: vec![pb::TagSetup {
            tag: tag.to_owned(),
            fluid: None,
            rules,
        }],
        ..Default::default()
    }
}

fn kind_of(event: &pb::AlarmEvent) -> pb::AlarmEventKind {
    pb::AlarmEventKind::try_from(event.kind).expect("known event kind")
}

/// Alarm events (raised or cleared) of a response's outcomes, as (seconds after T0, event).
fn alarm_events(response: &pb::WatchResponse) -> Vec<(i64, pb::AlarmEvent)> {
    response
        .outcomes
        .iter()
        .flat_map(|o| o.events.iter())
        .filter(|e| {
            matches!(
                kind_of(e),
                pb::AlarmEventKind::Raised | pb::AlarmEventKind::Cleared
            )
        })
        .map(|e| {
            (
                (e.timestamp_unix_ms.expect("alarm events are timed") - T0) / S,
                e.clone(),
            )
        })
        .collect()
}

/// The issue's scripted sequence on the ammonia pump suction NH3-P101: subcooling crossing the
/// 3 K limit, hovering inside the 1 K deadband, and leaving it, one reading a second, sent in
/// several requests of different sizes. Exactly one raise (15 s after the crossing) and one clear
/// (15 s after the last entry past the deadband) come out, at those reading times.
#[tokio::test]
async fn deadband_and_delays_give_exactly_the_expected_events() {
    let server = TestServer::start().await;
    let mut watch = Watch::open(&server, Some(pump_subcooling_opening())).await;
    // Suction at 2 bar absolute; the temperature is set from the engine's own saturation
    // temperature so that the subcooling is the script's value.
    let pressure = 2.0e5;
    let tsat = engine(
        "R-717",
        Model::PengRobinson1978,
        ReferenceState::LiquidAtZeroCelsius,
    )
    .saturation_temperature(pressure)
    .expect("ammonia saturates at 2 bar");
    let mut script: Vec<(i64, f64)> = (0..=4).map(|t| (t, 5.0)).collect();
    script.extend((5..=25).map(|t| (t, 2.5))); // beyond the limit from t = 5 s
    script.extend([(26, 3.5), (27, 3.9), (28, 3.2), (29, 3.8)]); // inside the deadband
    script.extend((30..=40).map(|t| (t, 4.2))); // past the deadband from t = 30 s
    script.push((41, 3.8)); // back inside the deadband: the off-delay restarts
    script.extend((42..=60).map(|t| (t, 4.5))); // past the deadband from t = 42 s
    let readings: Vec<pb::Reading> = script
        .iter()
        .map(|&(t, subcooling)| reading("NH3-P101", "R-717", t, tsat - subcooling, pressure))
        .collect();

    let mut events = Vec::new();
    let mut sent = 0;
    for size in [1, 1, 3, 10, 7, 19, 20] {
        let chunk: Vec<pb::Reading> = readings[sent..sent + size].to_vec();
        sent += size;
        let response = watch.send(chunk).await;
        for outcome in &response.outcomes {
            assert!(outcome.evaluated, "{outcome:?}");
            assert_eq!(outcome.fluid_id, "ammonia");
            assert_eq!(outcome.phase, pb::Phase::SubcooledLiquid as i32);
        }
        events.extend(alarm_events(&response));
    }
    assert_eq!(sent, readings.len());

    assert_eq!(
        events.len(),
        2,
        "exactly one raise and one clear: {events:#?}"
    );
    let (raised_at, raised) = &events[0];
    assert_eq!(*raised_at, 20);
    assert_eq!(kind_of(raised), pb::AlarmEventKind::Raised);
    assert_eq!(raised.condition_since_unix_ms, Some(T0 + 5 * S));
    assert!(
        (raised.value.expect("value") - 2.5).abs() < 1e-6,
        "{raised:?}"
    );
    assert_eq!(raised.limit, Some(3.0));
    assert_eq!(raised.transition, pb::AlarmTransition::Boiling as i32);
    assert_eq!(raised.priority, pb::AlarmPriority::High as i32);
    assert!(raised.message.contains("boiling"), "{}", raised.message);
    assert!(raised.message.contains("NH3-P101"), "{}", raised.message);
    let (cleared_at, cleared) = &events[1];
    assert_eq!(*cleared_at, 57);
    assert_eq!(kind_of(cleared), pb::AlarmEventKind::Cleared);
    assert_eq!(cleared.condition_since_unix_ms, Some(T0 + 42 * S));
    assert_eq!(cleared.limit, Some(4.0), "the limit moved by the deadband");
    server.stop().await;
}

/// Margins through the stream equal GetState's for the same absolute state: a subcooled ammonia
/// liquid, a superheated carbon dioxide suction, chilled water, a supercritical carbon dioxide
/// gas cooler, and a gauge reading converted with the opening's ambient pressure.
#[tokio::test]
async fn stream_margins_agree_with_get_state() {
    let server = TestServer::start().await;
    let mut phase = phase_client(&server).await;
    let ambient = 100_300.0;
    let mut watch = Watch::open(
        &server,
        Some(pb::WatchOpening {
            ambient_pressure_pa: Some(ambient),
            ..Default::default()
        }),
    )
    .await;
    // (tag, fluid, T in K, P in Pa absolute)
    let cases = [
        ("NH3-P101", "R-717", 250.0, 3.0e5),
        ("CO2-RK2-SUC", "R-744", 250.0, 1.4e6),
        ("CH-2-CHWL", "water", 279.15, 3.0e5),
        ("CO2-RK2-GC", "R-744", 313.15, 9.0e6),
    ];
    let mut readings: Vec<pb::Reading> = cases
        .iter()
        .map(|&(tag, name, t, p)| reading(tag, name, 0, t, p))
        .collect();
    // The same CO2 suction state given as a gauge reading.
    let mut gauge = reading("CO2-RK2-SUC-G", "R-744", 0, 250.0, 1.4e6 - ambient);
    gauge.pressure_kind = pb::PressureKind::Gauge as i32;
    readings.push(gauge);
    let response = watch.send(readings).await;

    let mut expected = cases.to_vec();
    expected.push(("CO2-RK2-SUC-G", "R-744", 250.0, 1.4e6));
    for (outcome, &(tag, name, t, p)) in response.outcomes.iter().zip(&expected) {
        assert_eq!(outcome.tag, tag);
        assert!(outcome.evaluated, "{outcome:?}");
        let state = phase
            .get_state(pb::GetStateRequest {
                fluid: fluid(name),
                temperature_k: t,
                pressure_pa: p,
                ..Default::default()
            })
            .await
            .expect("GetState answers")
            .into_inner();
        let m = outcome.margins.as_ref().expect("margins");
        let s = state.margins.as_ref().expect("GetState margins");
        assert_eq!(outcome.phase, state.phase, "{tag}");
        assert_same(
            &format!("{tag} pressure"),
            outcome.absolute_pressure_pa.unwrap(),
            p,
        );
        let pairs = [
            ("subcooling", m.subcooling_k, s.subcooling_k),
            ("superheat", m.superheat_k, s.superheat_k),
            ("dew margin", m.dew_margin_k, s.superheat_k),
            (
                "Tsat",
                m.saturation_temperature_k,
                s.saturation_temperature_k,
            ),
            ("Psat", m.saturation_pressure_pa, s.saturation_pressure_pa),
            ("freezing", m.freezing_margin_k, s.freezing_margin_k),
        ];
        for (what, stream, state) in pairs {
            assert_eq!(stream.is_some(), state.is_some(), "{tag} {what}");
            if let (Some(a), Some(b)) = (stream, state) {
                assert_same(&format!("{tag} {what}"), a, b);
            }
        }
        assert_same(
            &format!("{tag} P/Pc"),
            m.critical_pressure_fraction,
            state.reduced_pressure,
        );
        // Pc - P with the catalogue's critical pressure (carbon dioxide 7.38 MPa, ammonia
        // 11.303 MPa: the critical-property compilation of Biswas et al. 2023, source key
        // `crit-compilation`; water 22.064 MPa: IAPWS-95 via NIST SRD 69, source key
        // `iapws95-nist-srd69`; all in crates/fluids/data/inorganic.toml).
        let pc = Catalogue::builtin()
            .get(name)
            .expect("catalogue fluid")
            .constants
            .critical_pressure_pa;
        assert_same(
            &format!("{tag} Pc - P"),
            m.pressure_below_critical_pa,
            pc - p,
        );
        assert_eq!(outcome.near_critical, state.near_critical, "{tag}");
        assert_eq!(outcome.estimated, state.estimated, "{tag}");
    }
    let gauge = &response.outcomes[4];
    assert_eq!(gauge.ambient_pressure_pa, Some(ambient));
    assert_eq!(gauge.ambient_source, pb::AmbientSource::Opening as i32);
    server.stop().await;
}

/// Every kind of bad reading is answered with its documented quality event, never a phase alarm;
/// the stream keeps going and the server keeps answering.
#[tokio::test]
async fn bad_readings_get_quality_events_and_never_end_the_stream() {
    let server = TestServer::start().await;
    // A rule that would alarm at once on any evaluated reading (subcooling limit far above any
    // state here, no delays), so that a phase alarm from a bad reading could not hide.
    let mut watch = Watch::open(
        &server,
        Some(pb::WatchOpening {
            default_rules: vec![rule(
                pb::AlarmRuleKind::MinimumSubcooling,
                150.0,
                0.0,
                0.0,
                0.0,
            )],
            ..Default::default()
        }),
    )
    .await;
    let good = |t: i64| reading("NH3-P101", "R-717", t, 250.0, 3.0e5);
    use pb::QualityIssue as Q;
    let mut cases: Vec<(pb::Reading, Vec<Q>)> = Vec::new();
    cases.push((good(10), vec![])); // establishes the tag's time and fluid
    let mut r = good(11);
    r.temperature_k = Some(f64::NAN);
    cases.push((r, vec![Q::TemperatureInvalid]));
    let mut r = good(12);
    r.pressure_pa = None;
    cases.push((r, vec![Q::PressureMissing]));
    let mut r = good(13);
    r.pressure_kind = pb::PressureKind::Unspecified as i32;
    cases.push((r, vec![Q::PressureKindMissing]));
    let mut r = good(14);
    r.pressure_pa = None;
    r.temperature_k = None;
    cases.push((r, vec![Q::PressureMissing, Q::TemperatureMissing]));

    cases.push((good(9), vec![Q::TimestampOutOfOrder])); // timestamp going back
    cases.push((good(14), vec![Q::DuplicateTimestamp]));
    let mut r = good(15);
    r.timestamp_unix_ms = None;
    cases.push((r, vec![Q::TimestampMissing]));
    let mut r = good(16);
    r.quality = pb::ReadingQuality::Bad as i32;
    cases.push((r, vec![Q::BadQualityFlag]));
    let mut r = good(17);
    r.fluid = fluid("R-134a");
    cases.push((r, vec![Q::FluidChanged]));
    let mut r = good(18);
    r.pressure_kind = pb::PressureKind::Gauge as i32;
    r.pressure_pa = Some(-2.0e5); // below vacuum with any ambient
    cases.push((r, vec![Q::PressureInvalid]));
    let mut r = good(19);
    r.pressure_kind = pb::PressureKind::Gauge as i32;
    r.ambient_pressure_pa = Some(5.0);
    cases.push((r, vec![Q::AmbientInvalid]));
    let mut r = good(20);
    r.temperature_k = Some(5000.0); // above the model's range for ammonia
    cases.push((r, vec![Q::OutOfModelRange]));
    let mut r = reading("LPG-V1", "no-such-fluid", 20, 300.0, 5.0e5);
    r.fluid = fluid("propanne");
    cases.push((r, vec![Q::FluidUnknown]));
    let mut r = reading("MIX-1", "R-717", 20, 300.0, 5.0e5);
    r.fluid = Some(pb::FluidSelector {
        choice: Some(pb::fluid_selector::Choice::Mixture(pb::Mixture {
            components: vec![
                pb::MixtureComponent {
                    fluid: "R-32".into(),
                    fraction: 0.5,
                },
                pb::MixtureComponent {
                    fluid: "R-125".into(),
                    fraction: 0.5,
                },
            ],
            // No fraction basis: the mixture cannot be read.
            fraction_basis: pb::FractionBasis::Unspecified as i32,
        })),
    });
    cases.push((r, vec![Q::MixtureInvalid]));
    let mut r = reading("NO-FLUID", "R-717", 20, 300.0, 5.0e5);
    r.fluid = None;
    cases.push((r, vec![Q::FluidMissing]));
    cases.push((reading("", "R-717", 20, 250.0, 3.0e5), vec![Q::TagMissing]));
    let mut r = good(21);
    r.quality = pb::ReadingQuality::Uncertain as i32;
    cases.push((r, vec![Q::UncertainQualityFlag])); // evaluated all the same
    // A missing pressure with no kind (an empty cell) is one problem, not two.
    let mut r = good(22);
    r.pressure_pa = None;
    r.pressure_kind = pb::PressureKind::Unspecified as i32;
    cases.push((r, vec![Q::PressureMissing]));
    cases.push((good(23), vec![])); // the stream still evaluates

    // One reading per request, so that each response belongs to one case.
    for (index, (reading, expected)) in cases.into_iter().enumerate() {
        let response = watch.send(vec![reading]).await;
        let outcome = &response.outcomes[0];
        let quality: Vec<Q> = outcome
            .events
            .iter()
            .filter(|e| kind_of(e) == pb::AlarmEventKind::Quality)
            .map(|e| Q::try_from(e.quality_issue).expect("known issue"))
            .collect();
        assert_eq!(quality, expected, "case {index}: {outcome:#?}");
        for event in outcome
            .events
            .iter()
            .filter(|e| kind_of(e) == pb::AlarmEventKind::Quality)
        {
            assert!(
                !event.message.is_empty(),
                "case {index}: quality events say why"
            );
        }
        let evaluated = expected.is_empty() || expected == [Q::UncertainQualityFlag];
        assert_eq!(outcome.evaluated, evaluated, "case {index}: {outcome:#?}");
        let alarms = alarm_events(&response);
        if !evaluated {
            assert!(
                alarms.is_empty(),
                "case {index}: a bad reading raised {alarms:?}"
            );
        }
        if index == 0 {
            assert_eq!(
                alarms.len(),
                1,
                "the first good reading raises the test rule"
            );
        }
    }
    let mut phase = phase_client(&server).await;
    phase
        .get_state(pb::GetStateRequest {
            fluid: fluid("R-717"),
            temperature_k: 250.0,
            pressure_pa: 3.0e5,
            ..Default::default()
        })
        .await
        .expect("the server still answers");
    server.stop().await;
}

/// The quality messages name the field and what is valid (rule 4 of the brief).
#[tokio::test]
async fn quality_messages_name_the_field() {
    let server = TestServer::start().await;
    let mut watch = Watch::open(&server, None).await;
    let mut missing_kind = reading("NH3-P101", "R-717", 0, 250.0, 3.0e5);
    missing_kind.pressure_kind = pb::PressureKind::Unspecified as i32;
    let mut bad_ambient = reading("NH3-P102", "R-717", 0, 250.0, 3.0e5);
    bad_ambient.pressure_kind = pb::PressureKind::Gauge as i32;
    bad_ambient.ambient_pressure_pa = Some(5.0);
    let response = watch.send(vec![missing_kind, bad_ambient]).await;
    let message = |i: usize| response.outcomes[i].events[0].message.clone();
    assert!(message(0).contains("pressure_kind"), "{}", message(0));
    assert!(message(0).contains("gauge flag missing"), "{}", message(0));
    assert!(message(1).contains("ambient_pressure_pa"), "{}", message(1));
    assert!(message(1).contains("20000 to 130000 Pa"), "{}", message(1));
    server.stop().await;
}

/// A tag that stops sending is reported stale once the stream clock (other tags' readings) passes
/// the stale time, and resumes when it sends again. Gauge readings without an ambient use the
/// server default, which the stream states.
#[tokio::test]
async fn stale_tags_are_reported_and_resume() {
    let server = TestServer::start().await;
    let mut watch = Watch::open(
        &server,
        Some(pb::WatchOpening {
            stale_after_s: Some(5.0),
            ..Default::default()
        }),
    )
    .await;
    let gauge = |tag: &str, t: i64| {
        let mut r = reading(tag, "R-744", t, 250.0, 1.3e6);
        r.pressure_kind = pb::PressureKind::Gauge as i32;
        r
    };
    let first = watch
        .send(vec![gauge("CO2-RK2-SUC", 0), gauge("CO2-RK2-LT", 0)])
        .await;
    assert!(
        first
            .events
            .iter()
            .any(|e| kind_of(e) == pb::AlarmEventKind::Notice && e.message.contains("101325")),
        "the default ambient is stated: {:#?}",
        first.events
    );
    assert!(
        first.events.iter().any(|e| e.message.contains("advisory")),
        "the stream opens with the advisory notice"
    );
    assert_eq!(
        first.outcomes[0].ambient_source,
        pb::AmbientSource::ServerDefault as i32
    );
    let mut stale_at = None;
    for t in 1..=8 {
        let response = watch.send(vec![gauge("CO2-RK2-SUC", t)]).await;
        for event in &response.events {
            if kind_of(event) == pb::AlarmEventKind::TagStale {
                assert_eq!(event.tag, "CO2-RK2-LT");
                assert!(stale_at.is_none(), "stale is reported once");
                stale_at = Some(t);
            }
        }
    }
    // Silent since t = 0 with a 5 s stale time: stale once the clock passes 5 s.
    assert_eq!(stale_at, Some(6));
    let back = watch.send(vec![gauge("CO2-RK2-LT", 9)]).await;
    assert!(
        back.outcomes[0]
            .events
            .iter()
            .any(|e| kind_of(e) == pb::AlarmEventKind::TagResumed),
        "{:#?}",
        back.outcomes[0]
    );
    // Within one request too: seven seconds of the other tag in one batch make it stale again.
    let batch: Vec<pb::Reading> = (10..=16).map(|t| gauge("CO2-RK2-SUC", t)).collect();
    let response = watch.send(batch).await;
    let stale: Vec<&pb::AlarmEvent> = response
        .events
        .iter()
        .filter(|e| kind_of(e) == pb::AlarmEventKind::TagStale)
        .collect();
    assert_eq!(stale.len(), 1, "{:#?}", response.events);
    assert_eq!(stale[0].tag, "CO2-RK2-LT");
    // Last usable reading at t = 9 s: stale once the clock passes 14 s, at the 15 s reading.
    assert_eq!(stale[0].timestamp_unix_ms, Some(T0 + 15 * S));
    server.stop().await;
}

/// An opening with a rule out of range ends the stream with INVALID_ARGUMENT naming the field.
#[tokio::test]
async fn an_invalid_opening_is_refused_with_the_field_named() {
    let server = TestServer::start().await;
    let (requests, receiver) = mpsc::channel(4);
    let mut client = AlarmServiceClient::new(server.channel().await);
    requests
        .send(pb::WatchRequest {
            opening: Some(opening(
                "NH3-P101",
                vec![rule(
                    pb::AlarmRuleKind::MinimumSubcooling,
                    3.0,
                    -1.0,
                    15.0,
                    15.0,
                )],
            )),
            readings: Vec::new(),
        })
        .await
        .expect("queue the opening");
    let mut responses = client
        .watch_readings(ReceiverStream::new(receiver))
        .await
        .expect("the stream opens")
        .into_inner();
    let status = tokio::time::timeout(STOP_GUARD, responses.message())
        .await
        .expect("an answer")
        .expect_err("the opening is refused");
    assert_eq!(status.code(), Code::InvalidArgument);
    assert!(
        status
            .message()
            .contains("opening.tags[0].rules[0].deadband"),
        "{status:?}"
    );
    assert!(status.message().contains("0 to 50 K"), "{status:?}");
    drop(requests);
    server.stop().await;
}

fn settings_rule(kind: RuleKind, limit: f64) -> RuleSpec {
    RuleSpec {
        kind,
        name: kind.name().to_owned(),
        limits: Limits {
            bound: Bound::Minimum,
            limit,
            deadband: 0.5,
            on_delay_ms: 0,
            off_delay_ms: 0,
        },
        priority: Priority::High,
    }
}

/// Rules and fluid from the server's settings apply to a stream without an opening: chilled water
/// of the Kestrel Lane office chiller CH-2 at 3 bar and 1.5 °C is within 2.5 K of freezing (ice
/// melts at 273.15 K at atmospheric pressure, slightly lower at 3 bar: IAPWS R14-08 melting
/// curve, from memory), and carbon dioxide vapor at 3 bar and 215 K, below its triple-point
/// pressure of 0.518 MPa (NIST Chemistry WebBook), lies within 10 K of its sublimation
/// temperature at that pressure (about 209 K by Clausius-Clapeyron from the triple point, the
/// engine's own estimate), at risk of deposition.
#[tokio::test]
async fn settings_rules_apply_and_name_freezing_or_deposition() {
    let mut settings = Settings::default();
    settings.alarms.tags = vec![
        TagRules {
            pattern: TagPattern::Prefix("CH-2-".to_owned()),
            fluid: Some("water".to_owned()),
            rules: vec![settings_rule(RuleKind::MinimumFreezingMargin, 2.5)],
        },
        TagRules {
            pattern: TagPattern::Exact("CO2-RK2-VENT".to_owned()),
            fluid: Some("R-744".to_owned()),
            rules: vec![settings_rule(RuleKind::MinimumFreezingMargin, 10.0)],
        },
    ];
    let server = TestServer::start_with(settings).await;
    let mut watch = Watch::open(&server, None).await;
    let mut water = reading("CH-2-CHWL", "water", 0, 274.65, 3.0e5);
    water.fluid = None; // the settings name the fluid
    let mut vent = reading("CO2-RK2-VENT", "R-744", 0, 215.0, 3.0e5);
    vent.fluid = None;
    let response = watch.send(vec![water, vent]).await;
    let events = alarm_events(&response);
    assert_eq!(events.len(), 2, "{events:#?}");
    assert_eq!(events[0].1.tag, "CH-2-CHWL");
    assert_eq!(events[0].1.transition, pb::AlarmTransition::Freezing as i32);
    assert_eq!(events[1].1.tag, "CO2-RK2-VENT");
    assert_eq!(
        events[1].1.transition,
        pb::AlarmTransition::Deposition as i32
    );
    assert!(
        events[1].1.message.contains("deposition"),
        "{}",
        events[1].1.message
    );
    server.stop().await;
}

/// The unary form judges each reading on its own: a subcooling beyond the limit is flagged with
/// its transition, without delays; a bad reading gets its quality event; the answer opens with
/// the advisory notice and the fluid's caution.
#[tokio::test]
async fn evaluate_readings_judges_each_reading_without_state() {
    let server = TestServer::start().await;
    let mut client = AlarmServiceClient::new(server.channel().await);
    let tsat = engine(
        "R-717",
        Model::PengRobinson1978,
        ReferenceState::LiquidAtZeroCelsius,
    )
    .saturation_temperature(2.0e5)
    .expect("ammonia saturates at 2 bar");
    let mut bad = reading("NH3-P101", "R-717", 1, tsat - 1.0, 2.0e5);
    bad.pressure_kind = pb::PressureKind::Unspecified as i32;
    let request = pb::EvaluateReadingsRequest {
        setup: Some(pump_subcooling_opening()),
        readings: vec![
            reading("NH3-P101", "R-717", 0, tsat - 1.0, 2.0e5),
            reading("NH3-P101", "R-717", 0, tsat - 6.0, 2.0e5),
            bad,
        ],
    };
    let answer = client
        .evaluate_readings(request)
        .await
        .expect("evaluation answers")
        .into_inner();
    assert_eq!(answer.outcomes.len(), 3);
    let beyond = &answer.outcomes[0].checks[0];
    assert!(beyond.beyond_limit, "{beyond:?}");
    assert_eq!(beyond.transition, pb::AlarmTransition::Boiling as i32);
    assert!((beyond.value.expect("value") - 1.0).abs() < 1e-6);
    assert!(!answer.outcomes[1].checks[0].beyond_limit);
    assert!(!answer.outcomes[2].evaluated);
    assert_eq!(
        answer.outcomes[2].events[0].quality_issue,
        pb::QualityIssue::PressureKindMissing as i32
    );
    assert!(answer.events[0].message.contains("advisory"));
    assert!(
        answer.events.iter().any(|e| e.message.contains("B2L")),
        "ammonia's safety class B2L (ASHRAE 34, as in the catalogue) is in its caution: {:#?}",
        answer.events
    );
    server.stop().await;
}

/// A catalogue blend is evaluated against its dew point: the superheat of an R-407C suction
/// reading equals GetState's superheat (temperature minus the dew temperature at the reading's
/// pressure, the definition of the trade for zeotropic blends, common practice).
#[tokio::test]
async fn blend_readings_use_the_dew_point() {
    let server = TestServer::start().await;
    let mut alarms = AlarmServiceClient::new(server.channel().await);
    let mut phase = super::phase_client(&server).await;
    let (t, p) = (283.15, 4.0e5);
    let state = phase
        .get_state(pb::GetStateRequest {
            fluid: fluid("R-407C"),
            temperature_k: t,
            pressure_pa: p,
            ..Default::default()
        })
        .await
        .expect("state of R-407C")
        .into_inner();
    let expected = state
        .margins
        .expect("margins")
        .superheat_k
        .expect("superheat");
    let request = pb::EvaluateReadingsRequest {
        setup: Some(opening(
            "KL-CH2-SUC",
            vec![rule(
                pb::AlarmRuleKind::MinimumSuperheat,
                5.0,
                1.0,
                15.0,
                15.0,
            )],
        )),
        readings: vec![reading("KL-CH2-SUC", "R-407C", 0, t, p)],
    };
    let answer = alarms
        .evaluate_readings(request)
        .await
        .expect("evaluation")
        .into_inner();
    let outcome = &answer.outcomes[0];
    assert!(outcome.evaluated, "{outcome:?}");
    let value = outcome.checks[0].value.expect("superheat value");
    assert!((value - expected).abs() < 1e-9, "{value} vs {expected}");
    assert_eq!(
        outcome.checks[0].transition,
        pb::AlarmTransition::Condensation as i32
    );
    server.stop().await;
}

/// A custom mixture in a reading is evaluated like the same blend named by the catalogue:
/// 50/50 by mass is R-410A's nominal composition (ASHRAE 34, catalogue entry
/// marked `from memory`), so its superheat equals the R-410A tag's.
#[tokio::test]
async fn custom_mixture_readings_match_the_named_blend() {
    let server = TestServer::start().await;
    let mut alarms = AlarmServiceClient::new(server.channel().await);
    let (t, p) = (283.15, 8.0e5);
    let mut custom = reading("MIX-SUC", "R-410A", 0, t, p);
    custom.fluid = Some(pb::FluidSelector {
        choice: Some(pb::fluid_selector::Choice::Mixture(pb::Mixture {
            components: vec![
                pb::MixtureComponent {
                    fluid: "R-32".into(),
                    fraction: 0.5,
                },
                pb::MixtureComponent {
                    fluid: "R-125".into(),
                    fraction: 0.5,
                },
            ],
            fraction_basis: pb::FractionBasis::Mass as i32,
        })),
    });
    let rules = vec![rule(
        pb::AlarmRuleKind::MinimumSuperheat,
        5.0,
        1.0,
        15.0,
        15.0,
    )];
    let mut setup = opening("BLEND-SUC", rules.clone());
    setup.default_rules = rules;
    let request = pb::EvaluateReadingsRequest {
        setup: Some(setup),
        readings: vec![reading("BLEND-SUC", "R-410A", 0, t, p), custom],
    };
    let answer = alarms
        .evaluate_readings(request)
        .await
        .expect("evaluation")
        .into_inner();
    assert!(answer.outcomes[1].evaluated, "{:?}", answer.outcomes[1]);
    let named = answer.outcomes[0].checks[0]
        .value
        .expect("named blend superheat");
    let mixed = answer.outcomes[1].checks[0]
        .value
        .expect("custom mixture superheat");
    assert!((named - mixed).abs() < 1e-9, "{named} vs {mixed}");
    server.stop().await;
}

/// A stream outlives the server's request timeout (it limits calls, not stream lifetimes), and
/// ends with UNAVAILABLE when the server shuts down, so that shutdown does not wait for it.
#[tokio::test]
async fn streams_outlive_the_request_timeout_and_end_on_shutdown() {
    let mut settings = Settings::default();
    settings.limits.request_timeout = Duration::from_millis(300);
    let mut server = TestServer::start_with(settings).await;
    let mut watch = Watch::open(&server, None).await;
    watch
        .send(vec![reading("NH3-P101", "R-717", 0, 250.0, 3.0e5)])
        .await;
    // Three times the request timeout between two readings.
    tokio::time::sleep(Duration::from_millis(900)).await;
    let later = watch
        .send(vec![reading("NH3-P101", "R-717", 1, 250.0, 3.0e5)])
        .await;
    assert!(later.outcomes[0].evaluated);
    server.begin_shutdown();
    let status = watch.next().await.expect_err("shutdown ends the stream");
    assert_eq!(status.code(), Code::Unavailable, "{status:?}");
    assert!(status.message().contains("shutting down"), "{status:?}");
    drop(watch);
    server.stop().await;
}

/// The quality issues of an outcome's events, in order.
fn quality_issues(outcome: &pb::ReadingOutcome) -> Vec<pb::QualityIssue> {
    outcome
        .events
        .iter()
        .filter(|e| kind_of(e) == pb::AlarmEventKind::Quality)
        .map(|e| pb::QualityIssue::try_from(e.quality_issue).expect("known issue"))
        .collect()
}

/// The message of an outcome's first quality event.
fn quality_message(outcome: &pb::ReadingOutcome) -> &str {
    outcome
        .events
        .iter()
        .find(|e| kind_of(e) == pb::AlarmEventKind::Quality)
        .map(|e| e.message.as_str())
        .unwrap_or_else(|| panic!("no quality event: {outcome:#?}"))
}

/// A reading of a custom mixture `(component, fraction)` by mass.
fn mixture_reading(tag: &str, seconds: i64, parts: &[(&str, f64)]) -> pb::Reading {
    let mut r = reading(tag, "R-410A", seconds, 283.15, 8.0e5);
    r.fluid = Some(pb::FluidSelector {
        choice: Some(pb::fluid_selector::Choice::Mixture(pb::Mixture {
            components: parts
                .iter()
                .map(|&(name, fraction)| pb::MixtureComponent {
                    fluid: name.into(),
                    fraction,
                })
                .collect(),
            fraction_basis: pb::FractionBasis::Mass as i32,
        })),
    });
    r
}

/// A catalogue blend is a valid tag fluid in a stream opening and in the server's
/// `alarms.tags[].fluid` setting: readings that name no fluid are evaluated as R-407C, with the
/// same fluid id and margins as GetState gives for R-407C at the same state.
#[tokio::test]
async fn a_blend_is_a_tag_fluid_in_the_opening_and_the_settings() {
    let mut settings = Settings::default();
    settings.alarms.tags = vec![TagRules {
        pattern: TagPattern::Exact("KL-CH2-SUC".to_owned()),
        fluid: Some("R-407C".to_owned()),
        rules: Vec::new(),
    }];
    let server = TestServer::start_with(settings).await;
    let mut phase = phase_client(&server).await;
    let mut watch = Watch::open(
        &server,
        Some(pb::WatchOpening {
            tags: vec![pb::TagSetup {
                tag: "KL-CH2-LIQ".to_owned(),
                fluid: fluid("R-407C"),
                rules: Vec::new(),
            }],
            ..Default::default()
        }),
    )
    .await;
    // (tag, T in K, P in Pa absolute): a suction vapor and a liquid line (the scripts' inputs;
    // R-407C's dew point at 0.4 MPa is near 270 K and its bubble point at 2.0 MPa near 318 K,
    // `from memory`: the test compares with GetState and needs only each margin present).
    let cases = [("KL-CH2-SUC", 283.15, 4.0e5), ("KL-CH2-LIQ", 303.15, 2.0e6)];
    let readings: Vec<pb::Reading> = cases
        .iter()
        .map(|&(tag, t, p)| {
            let mut r = reading(tag, "R-407C", 0, t, p);
            r.fluid = None; // the settings or the opening name the blend
            r
        })
        .collect();
    let response = watch.send(readings).await;
    for (outcome, &(tag, t, p)) in response.outcomes.iter().zip(&cases) {
        assert!(outcome.evaluated, "{tag}: {outcome:#?}");
        let state = phase
            .get_state(pb::GetStateRequest {
                fluid: fluid("R-407C"),
                temperature_k: t,
                pressure_pa: p,
                ..Default::default()
            })
            .await
            .expect("GetState of R-407C")
            .into_inner();
        assert_eq!(
            outcome.fluid_id,
            state.basis.as_ref().expect("basis").fluid_id,
            "{tag}"
        );
        assert_eq!(outcome.phase, state.phase, "{tag}");
        let m = outcome.margins.as_ref().expect("margins");
        let s = state.margins.as_ref().expect("GetState margins");
        for (what, stream, state) in [
            ("subcooling", m.subcooling_k, s.subcooling_k),
            ("superheat", m.superheat_k, s.superheat_k),
        ] {
            assert_eq!(stream.is_some(), state.is_some(), "{tag} {what}");
            if let (Some(a), Some(b)) = (stream, state) {
                assert_same(&format!("{tag} {what}"), a, b);
            }
        }
    }
    // The suction is superheated and the liquid line subcooled, so each comparison above
    // compared a number, not two absences.
    let margins = |i: usize| response.outcomes[i].margins.expect("margins");
    assert!(margins(0).superheat_k.is_some());
    assert!(margins(1).subcooling_k.is_some());
    server.stop().await;
}

/// 9999-12-31T23:59:59.999Z in ms since 1970-01-01T00:00:00Z, the last valid reading time of
/// alarms.proto (QUALITY_ISSUE_TIMESTAMP_INVALID); computed independently with Python's
/// `datetime(9999, 12, 31, 23, 59, 59, 999000, tzinfo=timezone.utc).timestamp()`.
const LAST_VALID_MS: i64 = 253_402_300_799_999;

/// Timestamps outside 1970-01-01 to 9999-12-31 (the extremes of the field's type, and one
/// millisecond before 1970) get TIMESTAMP_INVALID, are not evaluated, and neither end the stream
/// nor disturb the tag: a normal reading after them on the same tag is evaluated. Both ends of
/// the valid range are accepted.
#[tokio::test]
async fn out_of_range_timestamps_are_quality_events_and_the_stream_goes_on() {
    let server = TestServer::start().await;
    let mut watch = Watch::open(&server, None).await;
    let at = |ms: i64| {
        let mut r = reading("NH3-P101", "R-717", 0, 250.0, 3.0e5);
        r.timestamp_unix_ms = Some(ms);
        r
    };
    let response = watch
        .send(vec![at(i64::MAX), at(i64::MIN), at(-1), at(T0)])
        .await;
    for (index, ms) in [i64::MAX, i64::MIN, -1].into_iter().enumerate() {
        let outcome = &response.outcomes[index];
        assert_eq!(
            quality_issues(outcome),
            [pb::QualityIssue::TimestampInvalid],
            "{ms}: {outcome:#?}"
        );
        assert!(!outcome.evaluated, "{ms}");
        let message = quality_message(outcome);
        assert!(message.contains("timestamp_unix_ms"), "{message}");
        assert!(message.contains(&ms.to_string()), "{message}");
        assert!(
            message.contains("9999-12-31T23:59:59.999Z"),
            "the message gives the valid range: {message}"
        );
    }
    let normal = &response.outcomes[3];
    assert!(normal.evaluated, "{normal:#?}");
    assert!(quality_issues(normal).is_empty(), "{normal:#?}");
    assert_eq!(normal.phase, pb::Phase::SubcooledLiquid as i32);

    // A request of its own after them, on the same tag, one second later: still evaluated.
    let later = watch
        .send(vec![reading("NH3-P101", "R-717", 1, 250.0, 3.0e5)])
        .await;
    assert!(later.outcomes[0].evaluated, "{:#?}", later.outcomes[0]);

    // The ends of the range: one past the last is refused, 0 and the last are evaluated.
    let edge = |ms: i64| {
        let mut r = reading("EDGE", "R-717", 0, 250.0, 3.0e5);
        r.timestamp_unix_ms = Some(ms);
        r
    };
    let response = watch
        .send(vec![edge(LAST_VALID_MS + 1), edge(0), edge(LAST_VALID_MS)])
        .await;
    assert_eq!(
        quality_issues(&response.outcomes[0]),
        [pb::QualityIssue::TimestampInvalid]
    );
    assert!(
        response.outcomes[1].evaluated,
        "{:#?}",
        response.outcomes[1]
    );
    assert!(
        response.outcomes[2].evaluated,
        "{:#?}",
        response.outcomes[2]
    );
    server.stop().await;
}

/// Invalid custom mixtures in readings get MIXTURE_INVALID naming the component, on the stream
/// and in the unary form: a component listed twice, and a catalogue blend given as a component.
/// The tag is not tied to the refused mixture: a valid one afterwards is evaluated.
#[tokio::test]
async fn invalid_custom_mixtures_get_mixture_invalid() {
    let server = TestServer::start().await;
    let twice = |tag: &str, s: i64| mixture_reading(tag, s, &[("R-32", 0.5), ("R-32", 0.5)]);
    let blend = |tag: &str, s: i64| mixture_reading(tag, s, &[("R-410A", 0.5), ("R-32", 0.5)]);
    // 50/50 by mass, R-410A's nominal composition (ASHRAE 34, catalogue entry marked
    // `from memory`): a valid mixture.
    let valid = |tag: &str, s: i64| mixture_reading(tag, s, &[("R-32", 0.5), ("R-125", 0.5)]);
    let check = |outcome: &pb::ReadingOutcome, fragments: &[&str]| {
        assert_eq!(
            quality_issues(outcome),
            [pb::QualityIssue::MixtureInvalid],
            "{outcome:#?}"
        );
        assert!(!outcome.evaluated);
        let message = quality_message(outcome);
        for fragment in fragments {
            assert!(message.contains(fragment), "{fragment:?} in {message}");
        }
    };
    let twice_words = ["fluid.mixture.components[1].fluid", "twice"];
    let blend_words = [
        "fluid.mixture.components[0].fluid",
        "is a blend",
        "pure fluids",
    ];

    let mut watch = Watch::open(&server, None).await;
    let response = watch.send(vec![twice("MIX-A", 0), blend("MIX-B", 0)]).await;
    check(&response.outcomes[0], &twice_words);
    check(&response.outcomes[1], &blend_words);
    let response = watch.send(vec![valid("MIX-A", 1), valid("MIX-B", 1)]).await;
    for outcome in &response.outcomes {
        assert!(outcome.evaluated, "{outcome:#?}");
        assert!(quality_issues(outcome).is_empty(), "{outcome:#?}");
    }

    let mut alarms = AlarmServiceClient::new(server.channel().await);
    let answer = alarms
        .evaluate_readings(pb::EvaluateReadingsRequest {
            setup: None,
            readings: vec![twice("MIX-A", 0), blend("MIX-B", 0), valid("MIX-C", 0)],
        })
        .await
        .expect("evaluation answers")
        .into_inner();
    check(&answer.outcomes[0], &twice_words);
    check(&answer.outcomes[1], &blend_words);
    assert!(answer.outcomes[2].evaluated, "{:#?}", answer.outcomes[2]);
    server.stop().await;
}

/// `alarms.max_streams` bounds the open alarm streams: with a limit of 2, a third WatchReadings
/// call is refused with RESOURCE_EXHAUSTED naming the setting; once a stream has ended, a new
/// one opens.
#[tokio::test]
async fn the_stream_limit_refuses_a_third_stream_until_one_ends() {
    let mut settings = Settings::default();
    settings.alarms.max_streams = 2;
    let server = TestServer::start_with(settings).await;
    let mut first = Watch::open(&server, None).await;
    let mut second = Watch::open(&server, None).await;

    let refused_open = || async {
        let (requests, receiver) = mpsc::channel(1);
        requests
            .send(pb::WatchRequest::default())
            .await
            .expect("queue the opening");
        let mut client = AlarmServiceClient::new(server.channel().await);
        let answer = client.watch_readings(ReceiverStream::new(receiver)).await;
        drop(requests);
        answer.map(drop)
    };
    let status = refused_open().await.expect_err("a third stream is refused");
    assert_eq!(status.code(), Code::ResourceExhausted, "{status:?}");
    assert!(
        status.message().contains("alarms.max_streams"),
        "{status:?}"
    );
    assert!(status.message().contains('2'), "the limit: {status:?}");

    // The open streams still work.
    for watch in [&mut first, &mut second] {
        let response = watch
            .send(vec![reading("NH3-P101", "R-717", 0, 250.0, 3.0e5)])
            .await;
        assert!(response.outcomes[0].evaluated);
    }

    // Close the first stream and wait for its end.
    let Watch {
        requests,
        mut responses,
    } = first;
    drop(requests);
    let end = tokio::time::timeout(STOP_GUARD, responses.message())
        .await
        .expect("the stream ends within the guard time")
        .expect("the stream ends without an error");
    assert!(end.is_none(), "no more responses: {end:?}");

    let mut third = Watch::open(&server, None).await;
    let response = third
        .send(vec![reading("NH3-P101", "R-717", 0, 250.0, 3.0e5)])
        .await;
    assert!(response.outcomes[0].evaluated);
    drop(second);
    drop(third);
    server.stop().await;
}

/// Carbon dioxide at 1 atm and 180 K lies in the estimated solid region: below the
/// triple-point pressure (0.51796 MPa at 216.589 K: Staveley, Lobo, Calado, Cryogenics 21
/// (1981) 131, source key `staveley-1981` in crates/fluids/data/inorganic.toml) the solid
/// boundary is the sublimation curve, which the engine estimates by Clausius-Clapeyron from its
/// triple point with the heat of sublimation (`crates/eos`, `SolidBoundary`). A freezing-margin
/// rule there names SUBLIMATION, with the engine's margin as its value.
#[tokio::test]
async fn a_solid_carbon_dioxide_reading_names_sublimation() {
    let server = TestServer::start().await;
    let eos = engine(
        "R-744",
        Model::PengRobinson1978,
        ReferenceState::LiquidAtZeroCelsius,
    );
    let solid = *eos
        .solid_boundary()
        .expect("carbon dioxide has a solid estimate");
    let (t, p) = (180.0, 101_325.0);
    assert!(
        p < solid.triple_pressure_pa,
        "1 atm is below the model's triple-point pressure {}",
        solid.triple_pressure_pa
    );
    let sublimation_t = solid.solid_temperature_k(p);
    assert!(t < sublimation_t, "{t} K is below {sublimation_t} K");
    let expected_margin = t - sublimation_t;

    let freezing = rule(pb::AlarmRuleKind::MinimumFreezingMargin, 2.0, 1.0, 0.0, 0.0);
    let mut watch = Watch::open(
        &server,
        Some(opening("CO2-RK2-VENT", vec![freezing.clone()])),
    )
    .await;
    let response = watch
        .send(vec![reading("CO2-RK2-VENT", "R-744", 0, t, p)])
        .await;
    let outcome = &response.outcomes[0];
    assert!(outcome.evaluated, "{outcome:#?}");
    assert_eq!(outcome.phase, pb::Phase::SolidEstimated as i32);
    assert!(outcome.estimated, "the solid region is an estimate");
    assert_same(
        "freezing margin",
        outcome
            .margins
            .as_ref()
            .and_then(|m| m.freezing_margin_k)
            .expect("a freezing margin"),
        expected_margin,
    );
    let events = alarm_events(&response);
    assert_eq!(events.len(), 1, "{events:#?}");
    let (_, raised) = &events[0];
    assert_eq!(kind_of(raised), pb::AlarmEventKind::Raised);
    assert_eq!(raised.transition, pb::AlarmTransition::Sublimation as i32);
    assert_same(
        "raised value",
        raised.value.expect("value"),
        expected_margin,
    );
    assert!(raised.message.contains("sublimat"), "{}", raised.message);
    assert_eq!(
        EosPhase::SolidEstimated,
        eos.state(t, p).expect("state").phase,
        "the engine agrees"
    );

    // The unary form names the same transition.
    let mut alarms = AlarmServiceClient::new(server.channel().await);
    let answer = alarms
        .evaluate_readings(pb::EvaluateReadingsRequest {
            setup: Some(opening("CO2-RK2-VENT", vec![freezing])),
            readings: vec![reading("CO2-RK2-VENT", "R-744", 0, t, p)],
        })
        .await
        .expect("evaluation")
        .into_inner();
    let check = &answer.outcomes[0].checks[0];
    assert!(check.beyond_limit, "{check:?}");
    assert_eq!(check.transition, pb::AlarmTransition::Sublimation as i32);
    server.stop().await;
}

/// A carbon dioxide receiver at 7.0 MPa is at 7.0 / 7.38 of its critical pressure (7.38 MPa: the
/// critical-property compilation of Biswas, Leenhouts, Green et al., J. Chem. Inf. Model. 2023,
/// source key `crit-compilation` in crates/fluids/data/inorganic.toml), above a 0.90 limit: the
/// maximum-critical-pressure-fraction rule raises a CRITICAL_POINT alarm with the kind's default
/// priority (medium, `common practice` in rules.rs), and clears when the pressure falls to
/// 3.0 MPa, below the limit minus the deadband.
#[tokio::test]
async fn a_pressure_near_critical_raises_a_critical_point_alarm() {
    let server = TestServer::start().await;
    let pc = 7.38e6;
    let critical = rule(
        pb::AlarmRuleKind::MaximumCriticalPressureFraction,
        0.90,
        0.02,
        0.0,
        0.0,
    );
    let mut watch = Watch::open(&server, Some(opening("CO2-RK2-REC", vec![critical]))).await;
    let response = watch
        .send(vec![
            reading("CO2-RK2-REC", "R-744", 0, 280.0, 7.0e6),
            reading("CO2-RK2-REC", "R-744", 1, 280.0, 7.0e6),
            reading("CO2-RK2-REC", "R-744", 2, 260.0, 3.0e6),
        ])
        .await;
    for outcome in &response.outcomes {
        assert!(outcome.evaluated, "{outcome:#?}");
    }
    let margins = response.outcomes[0].margins.expect("margins");
    assert_same("P/Pc", margins.critical_pressure_fraction, 7.0e6 / pc);
    assert_same("Pc - P", margins.pressure_below_critical_pa, pc - 7.0e6);
    let events = alarm_events(&response);
    assert_eq!(events.len(), 2, "one raise, one clear: {events:#?}");
    let (raised_at, raised) = &events[0];
    assert_eq!(*raised_at, 0);
    assert_eq!(kind_of(raised), pb::AlarmEventKind::Raised);
    assert_eq!(raised.transition, pb::AlarmTransition::CriticalPoint as i32);
    assert_eq!(raised.priority, pb::AlarmPriority::Medium as i32);
    assert_same("raised value", raised.value.expect("value"), 7.0e6 / pc);
    assert_eq!(raised.limit, Some(0.90));
    assert!(raised.message.contains("critical"), "{}", raised.message);
    let (cleared_at, cleared) = &events[1];
    assert_eq!(*cleared_at, 2);
    assert_eq!(kind_of(cleared), pb::AlarmEventKind::Cleared);
    assert_eq!(
        cleared.transition,
        pb::AlarmTransition::CriticalPoint as i32
    );
    assert_same("cleared value", cleared.value.expect("value"), 3.0e6 / pc);
    assert_same("clear threshold", cleared.limit.expect("limit"), 0.88);
    server.stop().await;
}

/// A subcooling rule on a gas cooler above the critical pressure has no value there: one
/// RULE_UNDEFINED event names the rule and the reason, the next undefined reading is quiet, and
/// after a defined reading the rule is reported undefined again.
#[tokio::test]
async fn an_undefined_rule_is_reported_once_per_spell() {
    let server = TestServer::start().await;
    // Limit -50 K: no state here comes near it, so only undefined events can appear.
    let subcooling = rule(pb::AlarmRuleKind::MinimumSubcooling, -50.0, 0.0, 0.0, 0.0);
    let mut watch = Watch::open(&server, Some(opening("CO2-RK2-GC", vec![subcooling]))).await;
    // 9.0 MPa is above carbon dioxide's critical pressure of 7.38 MPa (source key
    // `crit-compilation`, crates/fluids/data/inorganic.toml); 3.0 MPa is below it.
    let response = watch
        .send(vec![
            reading("CO2-RK2-GC", "R-744", 0, 313.15, 9.0e6),
            reading("CO2-RK2-GC", "R-744", 1, 314.15, 9.0e6),
            reading("CO2-RK2-GC", "R-744", 2, 260.0, 3.0e6),
            reading("CO2-RK2-GC", "R-744", 3, 313.15, 9.0e6),
        ])
        .await;
    let undefined: Vec<(usize, &pb::AlarmEvent)> = response
        .outcomes
        .iter()
        .enumerate()
        .flat_map(|(i, o)| o.events.iter().map(move |e| (i, e)))
        .filter(|(_, e)| kind_of(e) == pb::AlarmEventKind::RuleUndefined)
        .collect();
    assert_eq!(
        undefined.iter().map(|(i, _)| *i).collect::<Vec<_>>(),
        [0, 3],
        "{undefined:#?}"
    );
    for (_, event) in &undefined {
        assert_eq!(event.tag, "CO2-RK2-GC");
        assert_eq!(event.transition, pb::AlarmTransition::Boiling as i32);
        let rule = event.rule.as_ref().expect("the rule");
        assert_eq!(rule.name, "minimum-subcooling");
        assert!(
            event.message.contains("above the critical pressure"),
            "{}",
            event.message
        );
    }
    assert!(
        response.outcomes[2]
            .margins
            .and_then(|m| m.subcooling_k)
            .is_some(),
        "the subcooling is defined below the critical pressure"
    );
    assert!(alarm_events(&response).is_empty());
    server.stop().await;
}

/// With `alarms.max_tags_per_stream = 2`, a third tag's reading gets TAG_LIMIT naming the
/// setting and is not evaluated; the two tracked tags go on being evaluated.
#[tokio::test]
async fn the_tag_limit_refuses_new_tags_and_keeps_the_tracked_ones() {
    let mut settings = Settings::default();
    settings.alarms.max_tags_per_stream = 2;
    let server = TestServer::start_with(settings).await;
    let mut watch = Watch::open(&server, None).await;
    let response = watch
        .send(vec![
            reading("NH3-P101", "R-717", 0, 250.0, 3.0e5),
            reading("NH3-P102", "R-717", 0, 250.0, 3.0e5),
            reading("NH3-P103", "R-717", 0, 250.0, 3.0e5),
            reading("NH3-P101", "R-717", 1, 250.0, 3.0e5),
        ])
        .await;
    let outcomes = &response.outcomes;
    assert!(outcomes[0].evaluated && outcomes[1].evaluated);
    assert_eq!(quality_issues(&outcomes[2]), [pb::QualityIssue::TagLimit]);
    assert!(!outcomes[2].evaluated);
    let message = quality_message(&outcomes[2]);
    assert!(message.contains("alarms.max_tags_per_stream"), "{message}");
    assert!(message.contains("NH3-P103"), "{message}");
    assert!(outcomes[3].evaluated, "{:#?}", outcomes[3]);
    let later = watch
        .send(vec![
            reading("NH3-P102", "R-717", 2, 250.0, 3.0e5),
            reading("NH3-P104", "R-717", 2, 250.0, 3.0e5),
        ])
        .await;
    assert!(later.outcomes[0].evaluated);
    assert_eq!(
        quality_issues(&later.outcomes[1]),
        [pb::QualityIssue::TagLimit]
    );
    server.stop().await;
}

/// An opening in a later message is ignored with a notice: its rules do not apply (here a rule
/// that would raise at once on any subcooled reading), and the stream goes on.
#[tokio::test]
async fn a_second_opening_is_ignored_with_a_notice() {
    let server = TestServer::start().await;
    let mut watch = Watch::open(&server, None).await;
    watch
        .requests
        .send(pb::WatchRequest {
            opening: Some(pb::WatchOpening {
                default_rules: vec![rule(
                    pb::AlarmRuleKind::MinimumSubcooling,
                    150.0,
                    0.0,
                    0.0,
                    0.0,
                )],
                ..Default::default()
            }),
            readings: vec![reading("NH3-P101", "R-717", 0, 250.0, 3.0e5)],
        })
        .await
        .expect("the stream accepts requests");
    let response = watch.next().await.expect("a response, not an error");
    assert_eq!(response.outcomes.len(), 1);
    assert!(response.outcomes[0].evaluated);
    let notices: Vec<&pb::AlarmEvent> = response
        .events
        .iter()
        .filter(|e| kind_of(e) == pb::AlarmEventKind::Notice && e.message.contains("opening"))
        .collect();
    assert_eq!(notices.len(), 1, "{:#?}", response.events);
    assert!(
        notices[0].message.contains("ignored"),
        "{}",
        notices[0].message
    );
    assert!(notices[0].tag.is_empty(), "a stream-wide notice");
    assert!(
        alarm_events(&response).is_empty(),
        "the second opening's rule does not apply: {:#?}",
        alarm_events(&response)
    );
    // The next message, without an opening, has no such notice.
    let next = watch
        .send(vec![reading("NH3-P101", "R-717", 1, 250.0, 3.0e5)])
        .await;
    assert!(
        !next.events.iter().any(|e| e.message.contains("ignored")),
        "{:#?}",
        next.events
    );
    server.stop().await;
}

/// Enum numbers no version of alarms.proto defines: a pressure kind of 7 is treated as a missing
/// gauge flag and a quality flag of 9 as bad, each with a message naming the field, the number and
/// the valid values; on the stream and in the unary form.
#[tokio::test]
async fn unknown_pressure_kind_and_quality_numbers_are_quality_events() {
    let server = TestServer::start().await;
    let mut kind = reading("NH3-P101", "R-717", 0, 250.0, 3.0e5);
    kind.pressure_kind = 7;
    let mut quality = reading("NH3-P102", "R-717", 0, 250.0, 3.0e5);
    quality.quality = 9;
    let check = |outcomes: &[pb::ReadingOutcome]| {
        assert_eq!(
            quality_issues(&outcomes[0]),
            [pb::QualityIssue::PressureKindMissing]
        );
        let message = quality_message(&outcomes[0]);
        for fragment in ["pressure_kind", "7", "1 (absolute) or 2 (gauge)"] {
            assert!(message.contains(fragment), "{fragment:?} in {message}");
        }
        assert_eq!(
            quality_issues(&outcomes[1]),
            [pb::QualityIssue::BadQualityFlag]
        );
        let message = quality_message(&outcomes[1]);
        for fragment in ["quality", "9", "valid 0 to 3"] {
            assert!(message.contains(fragment), "{fragment:?} in {message}");
        }
        assert!(!outcomes[0].evaluated && !outcomes[1].evaluated);
    };
    let mut watch = Watch::open(&server, None).await;
    let response = watch.send(vec![kind.clone(), quality.clone()]).await;
    check(&response.outcomes);
    let mut alarms = AlarmServiceClient::new(server.channel().await);
    let answer = alarms
        .evaluate_readings(pb::EvaluateReadingsRequest {
            setup: None,
            readings: vec![kind, quality],
        })
        .await
        .expect("evaluation")
        .into_inner();
    check(&answer.outcomes);
    server.stop().await;
}

/// EvaluateReadings takes at most `limits.max_batch_length` readings: one more is refused with
/// INVALID_ARGUMENT naming the field and the limit; at the limit the batch is answered.
#[tokio::test]
async fn an_evaluation_batch_over_the_limit_is_refused_naming_the_limit() {
    let mut settings = Settings::default();
    settings.limits.max_batch_length = 10;
    let server = TestServer::start_with(settings).await;
    let mut alarms = AlarmServiceClient::new(server.channel().await);
    let batch = |n: i64| pb::EvaluateReadingsRequest {
        setup: None,
        readings: pump_readings(n, 250.0, 3.0e5),
    };
    let status = alarms
        .evaluate_readings(batch(11))
        .await
        .expect_err("11 readings over a limit of 10");
    assert_eq!(status.code(), Code::InvalidArgument, "{status:?}");
    for fragment in ["readings", "11", "limit of 10"] {
        assert!(
            status.message().contains(fragment),
            "{fragment:?}: {status:?}"
        );
    }
    let answer = alarms
        .evaluate_readings(batch(10))
        .await
        .expect("a batch at the limit")
        .into_inner();
    assert_eq!(answer.outcomes.len(), 10);
    server.stop().await;
}

/// A server whose message limit is 64 KiB, so that answers and requests reach it with little data.
async fn small_message_server() -> TestServer {
    let mut settings = Settings::default();
    settings.limits.max_message_size_bytes = 64 * 1024;
    TestServer::start_with(settings).await
}

/// An answer larger than the server's message limit is refused with the setting's name and how
/// many readings would fit, instead of the transport's bare "message length too large"; that
/// many readings are then answered.
#[tokio::test]
async fn an_answer_over_the_message_limit_says_how_many_readings_fit() {
    let server = small_message_server().await;
    let mut client = AlarmServiceClient::new(server.channel().await);
    let request = |count: i64| pb::EvaluateReadingsRequest {
        setup: Some(pump_subcooling_opening()),
        readings: pump_readings(count, 240.0, 2.0e5),
    };
    let status = client
        .evaluate_readings(request(600))
        .await
        .expect_err("an answer over 64 KiB to a request under it");
    assert_eq!(status.code(), Code::ResourceExhausted, "{status:?}");
    let message = status.message();
    assert!(
        message.contains("limits.max_message_size_bytes"),
        "{message}"
    );
    let fitting: i64 = message
        .split("at most about ")
        .nth(1)
        .and_then(|rest| rest.split(' ').next())
        .and_then(|n| n.parse().ok())
        .unwrap_or_else(|| panic!("no count in: {message}"));
    assert!((1..600).contains(&fitting), "{message}");
    let answer = client
        .evaluate_readings(request(fitting))
        .await
        .expect("the suggested count fits")
        .into_inner();
    assert_eq!(answer.outcomes.len(), fitting as usize);
    server.stop().await;
}

/// A stream request the server cannot read (here over a 64 KiB message limit, with a 100 000-byte
/// tag) ends the stream with the reason, not with a silent end that a client would take for
/// "nothing to report".
#[tokio::test]
async fn an_unreadable_stream_request_ends_the_stream_with_the_reason() {
    let server = small_message_server().await;
    let mut watch = Watch::open(&server, None).await;
    let huge = reading(&"T".repeat(100_000), "R-717", 0, 240.0, 2.0e5);
    watch
        .requests
        .send(pb::WatchRequest {
            opening: None,
            readings: vec![huge],
        })
        .await
        .expect("the stream accepts requests");
    let status = watch
        .next()
        .await
        .expect_err("the stream ends with a status");
    assert_eq!(status.code(), Code::OutOfRange, "{status:?}");
    assert!(
        status.message().contains("could not be read"),
        "{}",
        status.message()
    );
    server.stop().await;
}
