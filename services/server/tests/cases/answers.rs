//! Answers of the phase service that the other cases do not reach, end to end:
//!
//! - the entropy of vaporization, per mole and per kilogram, against published enthalpies of
//!   vaporization through the Gibbs identity, within the deviation the catalogue records;
//! - the reference state LIQUID_AT_NORMAL_BOILING_POINT: the saturated liquid at 101 325 Pa has
//!   h = 0 and s = 0, and differences of h and s do not depend on the reference state;
//! - the estimated solid answer below the triple point, and the near-critical flag;
//! - a deadline sent by the client that is shorter than the call: DEADLINE_EXCEEDED.

use std::collections::BTreeMap;
use std::time::Duration;

use binodal_eos::{CURVE_TOLERANCE, GAS_CONSTANT, Model, NEAR_CRITICAL_BAND, ReferenceState};
use binodal_fluids::Catalogue;
use binodal_fluids::generate::HVAP_MAX_REDUCED_TEMPERATURE;
use binodal_proto::v1 as pb;
use binodal_proto::v1::get_saturation_request::Condition;
use binodal_server::settings::Settings;
use tonic::Code;

use super::{
    MODELS, RECORD_ROUNDING_PERCENT, assert_same, check_basis, deviation_percent, engine, fluid,
    phase_client, slow_mixture,
};
use crate::util::TestServer;

/// The server's default model (`Settings::default`).
const DEFAULT_MODEL: Model = Model::PengRobinson1978;
const DEFAULT_EOS: pb::EquationOfState = pb::EquationOfState::PengRobinson1978;

/// One standard atmosphere, Pa (ISO 2533 / CGPM 1954 definition): the pressure of the normal
/// boiling point.
const ATMOSPHERE_PA: f64 = 101_325.0;

/// The properties of one saturated phase of a saturation answer.
fn phase_properties(phase: Option<&pb::SaturatedPhase>) -> &pb::ThermoProperties {
    phase
        .and_then(|p| p.properties.as_ref())
        .expect("a saturated phase with properties")
}

/// The entropy of vaporization against published data. At coexistence the liquid and the vapor
/// have the same molar Gibbs energy, g = h - T s, so `s_vap = h_vap / T` (the Gibbs identity
/// behind the Clausius-Clapeyron equation): the published enthalpies of vaporization of the
/// catalogue's reference tables give published entropies of vaporization at the same
/// temperatures, and since T is the same on both sides, the relative deviation of the entropy is
/// that of the enthalpy, which the catalogue records (`enthalpy_of_vaporization_max_abs_
/// deviation_percent`, crates/fluids/data/accuracy.toml). Every model, every reference point
/// the record was made from (up to 0.95 Tc, `HVAP_MAX_REDUCED_TEMPERATURE`).
///
/// Reference tables (their `#` headers cite them; `data.citation` is printed on failure):
/// propane, isobutane, nitrogen and water: NIST Chemistry WebBook, SRD 69, saturation tables
/// (`*_saturation.csv`); R-134a: VDI Heat Atlas, 2nd ed. (Springer 2010), saturated-state table
/// (`r134a_vdi_saturation.csv`).
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn entropy_of_vaporization_follows_published_enthalpies_within_the_recorded_deviation() {
    let server = TestServer::start().await;
    let client = phase_client(&server).await;
    for name in ["propane", "isobutane", "nitrogen", "water", "r134a"] {
        let record = Catalogue::builtin().get(name).expect("catalogue fluid");
        let data = binodal_fluids::reference::enthalpy_data(record)
            .expect("reference data parse")
            .expect("the fluid has published enthalpies of vaporization");
        let tc = record.constants.critical_temperature_k;
        let points: Vec<(f64, f64)> = data
            .points
            .iter()
            .filter(|p| p.temperature_k / tc <= HVAP_MAX_REDUCED_TEMPERATURE)
            .filter_map(|p| Some((p.temperature_k, p.enthalpy_of_vaporization_j_per_mol?)))
            .collect();
        for (model, eos) in MODELS {
            let recorded = record
                .accuracy_for(model)
                .and_then(|a| a.enthalpy_of_vaporization.as_ref())
                .expect("the catalogue records the enthalpy-of-vaporization deviation");
            assert_eq!(
                points.len(),
                recorded.points,
                "{name} {model:?}: the same points as the record ({})",
                data.citation
            );
            let mut calls = tokio::task::JoinSet::new();
            for (i, &(t, _)) in points.iter().enumerate() {
                let mut client = client.clone();
                let request = pb::GetSaturationRequest {
                    fluid: fluid(name),
                    equation_of_state: eos as i32,
                    condition: Some(Condition::TemperatureK(t)),
                    ..Default::default()
                };
                calls.spawn(async move { (i, client.get_saturation(request).await) });
            }
            let mut answers = calls.join_all().await;
            answers.sort_by_key(|(i, _)| *i);
            for (&(t, hvap_published), (_, answer)) in points.iter().zip(answers) {
                let answer = answer
                    .unwrap_or_else(|e| panic!("{name} {model:?} at {t} K: {e:?}"))
                    .into_inner();
                let accuracy = check_basis(answer.basis.as_ref(), &record.id, eos);
                let basis = answer.basis.as_ref().expect("basis");
                // The molar mass the answer converts with is the catalogue's (its source is cited
                // there).
                assert_eq!(
                    basis.molar_mass_kg_per_mol,
                    record.constants.molar_mass_kg_per_mol
                );
                let m = basis.molar_mass_kg_per_mol;
                let ds = answer.entropy_of_vaporization_j_per_mol_k;
                assert!(
                    ds > 0.0,
                    "{name} {model:?} at {t} K: vaporization gains entropy"
                );

                // Against the published value, within the recorded deviation.
                let published = hvap_published / t;
                let allowed = accuracy
                    .enthalpy_of_vaporization_max_abs_deviation_percent
                    .expect("a checked enthalpy of vaporization")
                    + RECORD_ROUNDING_PERCENT;
                let deviation = deviation_percent(ds, published);
                assert!(
                    deviation <= allowed,
                    "{name} {model:?} at {t} K: s_vap {ds} J/(mol K) is {deviation:.4} % from \
                     {published} J/(mol K) = h_vap / T ({}); recorded max {allowed} %",
                    data.citation
                );
                // Per kilogram: the molar value divided by the molar mass, and so as close to the
                // published value per kilogram.
                let ds_kg = answer.entropy_of_vaporization_j_per_kg_k;
                assert_same("s_vap per kg", ds_kg, ds / m);
                assert!(deviation_percent(ds_kg, published / m) <= allowed);

                // The identity within the answer: s_vap is the vapor's entropy minus the liquid's
                // as reported, and h_vap / T. The two phases share T and P, so the ideal-gas parts
                // and the reference offset cancel and
                // (h_v - h_l) - T (s_v - s_l) = R T (ln phi_v - ln phi_l).
                // The fugacity gap is zero at the solver's root; at a curve pressure off by at
                // most CURVE_TOLERANCE in ln P it is at most |Z_L - Z_V| CURVE_TOLERANCE, with
                // |Z_L - Z_V| < 1, so s_v - s_l is within R CURVE_TOLERANCE of h_vap / T.
                let s_liquid = phase_properties(answer.liquid.as_ref())
                    .entropy_j_per_mol_k
                    .expect("liquid entropy");
                let s_vapor = phase_properties(answer.vapor.as_ref())
                    .entropy_j_per_mol_k
                    .expect("vapor entropy");
                let gap = (s_vapor - s_liquid) - ds;
                assert!(
                    gap.abs() <= GAS_CONSTANT * CURVE_TOLERANCE,
                    "{name} {model:?} at {t} K: s_v - s_l = {} but s_vap = {ds}",
                    s_vapor - s_liquid
                );
                assert_same(
                    "s_vap = h_vap / T",
                    ds,
                    answer.enthalpy_of_vaporization_j_per_mol / answer.saturation_temperature_k,
                );
            }
        }
    }
    server.stop().await;
}

/// A saturation answer at 101 325 Pa.
fn at_one_atmosphere(name: &str, reference: pb::ReferenceState) -> pb::GetSaturationRequest {
    pb::GetSaturationRequest {
        fluid: fluid(name),
        reference_state: reference as i32,
        condition: Some(Condition::PressurePa(ATMOSPHERE_PA)),
        ..Default::default()
    }
}

/// The state at (t, p) in `reference`.
fn state_request(name: &str, reference: pb::ReferenceState, t: f64, p: f64) -> pb::GetStateRequest {
    pb::GetStateRequest {
        fluid: fluid(name),
        reference_state: reference as i32,
        temperature_k: t,
        pressure_pa: p,
        ..Default::default()
    }
}

/// (h J/mol, s J/(mol K)) of a state answer.
fn h_and_s(answer: &pb::GetStateResponse) -> (f64, f64) {
    let props = answer.properties.as_ref().expect("single-phase properties");
    (
        props.enthalpy_j_per_mol.expect("h"),
        props.entropy_j_per_mol_k.expect("s"),
    )
}

/// REFERENCE_STATE_LIQUID_AT_NORMAL_BOILING_POINT: "Saturated liquid at 101 325 Pa has h = 0 and
/// s = 0" (proto/binodal/v1/phase.proto, ReferenceState; the convention is common practice in
/// the refrigeration trade). The zero sits at the model's saturation temperature at 101 325 Pa,
/// which the catalogue records for each model (`nbp_model_k`, against the published normal
/// boiling point `nbp_catalogue_k`, crates/fluids/data/accuracy.toml). A reference state only
/// shifts h and s by constants, so differences between two states, and the enthalpy of
/// vaporization, are the same in both reference states (common practice).
#[tokio::test]
async fn the_normal_boiling_point_reference_zeroes_the_liquid_at_one_atmosphere() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    let nbp = pb::ReferenceState::LiquidAtNormalBoilingPoint;
    let zero_celsius = pb::ReferenceState::LiquidAtZeroCelsius;
    for name in ["R-717", "R-134a", "propane", "water", "nitrogen"] {
        let record = Catalogue::builtin().get(name).expect("catalogue fluid");
        let answer = client
            .get_saturation(at_one_atmosphere(name, nbp))
            .await
            .unwrap_or_else(|e| panic!("{name} at 101325 Pa: {e:?}"))
            .into_inner();
        check_basis(answer.basis.as_ref(), &record.id, DEFAULT_EOS);
        let basis = answer.basis.as_ref().expect("basis");
        assert_eq!(basis.reference_state, nbp as i32, "{name}: the state used");

        // The saturation temperature is the model's normal boiling point as recorded (three
        // decimals, so within 0.0005 K of the record).
        let t = answer.saturation_temperature_k;
        let recorded = record
            .accuracy_for(DEFAULT_MODEL)
            .and_then(|a| a.normal_boiling_point.as_ref())
            .and_then(|b| b.model.as_ref().ok().copied())
            .expect("the catalogue records the model's normal boiling point");
        assert!(
            (t - recorded).abs() <= 0.0005,
            "{name}: {t} K at 101325 Pa, recorded {recorded} K"
        );

        // h = 0 and s = 0 for the liquid, up to how far the answer's liquid may sit from the
        // zero: the reference is fixed with the full solver, the answer reads the saturation
        // curve, which may be off by CURVE_TOLERANCE in ln P; by Clausius-Clapeyron,
        // d ln P / dT = h_vap / (R T^2 (Z_V - Z_L)) >= h_vap / (R T^2), that is a temperature
        // offset of at most CURVE_TOLERANCE R T^2 / h_vap, and along the liquid line, to first
        // order, dh = c_p dT and ds = c_p dT / T (the pressure term v (1 - T beta) dP of a
        // liquid is far smaller at one atmosphere). On top, rounding: 1e-12 of h_vap (of
        // h_vap / T for s), as in `assert_same`.
        let liquid = phase_properties(answer.liquid.as_ref());
        let hvap = answer.enthalpy_of_vaporization_j_per_mol;
        let cp = liquid
            .isobaric_heat_capacity_j_per_mol_k
            .expect("liquid heat capacity");
        let dt = CURVE_TOLERANCE * GAS_CONSTANT * t * t / hvap;
        let h = liquid.enthalpy_j_per_mol.expect("liquid h");
        let s = liquid.entropy_j_per_mol_k.expect("liquid s");
        assert!(
            h.abs() <= cp * dt + 1e-12 * hvap,
            "{name}: saturated liquid at 101325 Pa has h = {h} J/mol"
        );
        assert!(
            s.abs() <= cp * dt / t + 1e-12 * hvap / t,
            "{name}: saturated liquid at 101325 Pa has s = {s} J/(mol K)"
        );
        let h_kg = liquid.enthalpy_j_per_kg.expect("liquid h per kg");
        assert_same("h per kg", h_kg, h / basis.molar_mass_kg_per_mol);

        let tc = record.constants.critical_temperature_k;
        if tc <= 273.15 {
            // Nitrogen (Tc 126.192 K, Span et al. 2000, from memory, as the catalogue cites it):
            // liquid at 0 °C does not exist, so
            // the server default falls back to this reference state (phase.proto,
            // REFERENCE_STATE_UNSPECIFIED).
            let unspecified = client
                .get_saturation(at_one_atmosphere(name, pb::ReferenceState::Unspecified))
                .await
                .expect("default reference")
                .into_inner();
            let basis = unspecified.basis.expect("basis");
            assert_eq!(basis.reference_state, nbp as i32, "{name}: the fallback");
            continue;
        }

        // Differences do not depend on the reference state: a subcooled liquid 10 K below the
        // normal boiling point and a superheated vapor 30 K above it, both at 101 325 Pa.
        let points = [(t - 10.0, ATMOSPHERE_PA), (t + 30.0, ATMOSPHERE_PA)];
        let mut by_reference = BTreeMap::new();
        for reference in [nbp, zero_celsius] {
            let mut values = Vec::new();
            for (tp, pp) in points {
                let answer = client
                    .get_state(state_request(name, reference, tp, pp))
                    .await
                    .unwrap_or_else(|e| panic!("{name} at {tp} K: {e:?}"))
                    .into_inner();
                assert_eq!(
                    answer.basis.as_ref().expect("basis").reference_state,
                    reference as i32
                );
                values.push(h_and_s(&answer));
            }
            let hvap = client
                .get_saturation(pb::GetSaturationRequest {
                    fluid: fluid(name),
                    reference_state: reference as i32,
                    condition: Some(Condition::TemperatureK(t)),
                    ..Default::default()
                })
                .await
                .expect("saturation at the normal boiling point")
                .into_inner()
                .enthalpy_of_vaporization_j_per_mol;
            by_reference.insert(reference as i32, (values, hvap));
        }
        let (nbp_values, nbp_hvap) = &by_reference[&(nbp as i32)];
        let (zc_values, zc_hvap) = &by_reference[&(zero_celsius as i32)];
        assert_ne!(
            nbp_values[0].0, zc_values[0].0,
            "{name}: the two reference states differ in absolute h"
        );
        // Rounding only: each absolute value carries its own offset, so a difference may be off
        // by 1e-12 of the absolute values involved (as in `assert_same`).
        let scale = |pick: fn(&(f64, f64)) -> f64| {
            nbp_values
                .iter()
                .chain(zc_values)
                .map(|v| pick(v).abs())
                .fold(0.0, f64::max)
        };
        let dh_nbp = nbp_values[1].0 - nbp_values[0].0;
        let dh_zc = zc_values[1].0 - zc_values[0].0;
        assert!(
            (dh_nbp - dh_zc).abs() <= 1e-12 * scale(|v| v.0),
            "{name}: h difference {dh_nbp} J/mol vs {dh_zc} J/mol"
        );
        let ds_nbp = nbp_values[1].1 - nbp_values[0].1;
        let ds_zc = zc_values[1].1 - zc_values[0].1;
        assert!(
            (ds_nbp - ds_zc).abs() <= 1e-12 * scale(|v| v.1),
            "{name}: s difference {ds_nbp} J/(mol K) vs {ds_zc} J/(mol K)"
        );
        assert!(dh_nbp > 0.0, "{name}: the vapor holds more enthalpy");
        assert_same("h_vap in both reference states", *nbp_hvap, *zc_hvap);
    }
    server.stop().await;
}

/// Below the triple point and above the estimated sublimation pressure the real fluid is solid;
/// the server answers PHASE_SOLID_ESTIMATED with `estimated` set (phase.proto, Phase and
/// GetStateResponse.estimated), properties of the model's fluid root, and a negative freezing
/// margin; below the sublimation pressure it answers vapor, not estimated. The estimated
/// boundary is the engine's own (checked against published points in `solids.rs`).
#[tokio::test]
async fn below_the_triple_point_the_answer_is_an_estimated_solid() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    // Carbon dioxide at its normal sublimation point, -78.5 °C = 194.65 K (CRC Handbook of
    // Chemistry and Physics, from memory), below its triple point 216.589 K (Staveley et al.
    // 1981, as cited in the catalogue); water at -10 °C = 263.15 K, below its triple point
    // 273.16 K (IAPWS-95 via NIST SRD 69, as cited in the catalogue).
    let cases = [
        ("R-744", "carbondioxide", 194.65),
        ("water", "water", 263.15),
    ];
    let mut batch_points = Vec::new();
    for (name, id, t) in cases {
        let eos = engine(id, DEFAULT_MODEL, ReferenceState::LiquidAtZeroCelsius);
        let solid = *eos.solid_boundary().expect("a solid estimate");
        assert!(t < solid.triple_temperature_k);
        let p_sublimation = solid.sublimation_pressure_pa(t);
        for (p, solid_expected) in [(2.0 * p_sublimation, true), (0.5 * p_sublimation, false)] {
            let answer = client
                .get_state(state_request(name, pb::ReferenceState::Unspecified, t, p))
                .await
                .unwrap_or_else(|e| panic!("{name} at {t} K, {p} Pa: {e:?}"))
                .into_inner();
            check_basis(answer.basis.as_ref(), id, DEFAULT_EOS);
            let margin = answer
                .margins
                .as_ref()
                .and_then(|m| m.freezing_margin_k)
                .expect("a freezing margin where the solid is estimated");
            assert_same("freezing margin", margin, t - solid.solid_temperature_k(p));
            let props = answer.properties.as_ref().expect("properties");
            assert!(props.density_kg_per_m3 > 0.0);
            if solid_expected {
                assert_eq!(
                    answer.phase,
                    pb::Phase::SolidEstimated as i32,
                    "{name} at {t} K, {p} Pa"
                );
                assert!(answer.estimated, "{name} at {t} K, {p} Pa: estimated");
                assert!(margin < 0.0, "{name}: inside the estimated solid region");
            } else {
                assert_eq!(
                    answer.phase,
                    pb::Phase::SuperheatedVapor as i32,
                    "{name} at {t} K, {p} Pa"
                );
                assert!(!answer.estimated, "{name} at {t} K, {p} Pa: not estimated");
                assert!(margin > 0.0, "{name}: outside the estimated solid region");
            }
            batch_points.push((name, t, p, answer.phase, answer.estimated));
        }
    }
    // Published anchors, independent of the estimate: carbon dioxide sublimes at one atmosphere
    // at 194.65 K (CRC Handbook, from memory), so at that temperature it is solid at two
    // atmospheres and vapor at half an atmosphere; water at -10 °C and one atmosphere is ice
    // (common practice), and at 100 Pa vapor, below ice's sublimation pressure at -10 °C of
    // about 260 Pa (from memory).
    for (name, t, p, phase) in [
        ("water", 263.15, ATMOSPHERE_PA, pb::Phase::SolidEstimated),
        ("water", 263.15, 100.0, pb::Phase::SuperheatedVapor),
        (
            "R-744",
            194.65,
            2.0 * ATMOSPHERE_PA,
            pb::Phase::SolidEstimated,
        ),
        (
            "R-744",
            194.65,
            0.5 * ATMOSPHERE_PA,
            pb::Phase::SuperheatedVapor,
        ),
    ] {
        let answer = client
            .get_state(state_request(name, pb::ReferenceState::Unspecified, t, p))
            .await
            .unwrap_or_else(|e| panic!("{name} at {t} K, {p} Pa: {e:?}"))
            .into_inner();
        assert_eq!(answer.phase, phase as i32, "{name} at {t} K, {p} Pa");
        assert_eq!(answer.estimated, phase == pb::Phase::SolidEstimated);
    }
    // The batch flags the same points the same way.
    for name in ["R-744", "water"] {
        let points: Vec<_> = batch_points.iter().filter(|p| p.0 == name).collect();
        let batch = client
            .get_state_batch(pb::GetStateBatchRequest {
                fluid: fluid(name),
                temperatures_k: points.iter().map(|p| p.1).collect(),
                pressures_pa: points.iter().map(|p| p.2).collect(),
                ..Default::default()
            })
            .await
            .expect("batch")
            .into_inner();
        for (i, point) in points.iter().enumerate() {
            assert_eq!(batch.phases[i], point.3, "{name} point {i}");
            assert_eq!(batch.estimated[i], point.4, "{name} point {i}");
        }
    }
    server.stop().await;
}

/// `near_critical` is set "when the state is close enough to the critical point that cubic
/// models lose accuracy faster than the recorded deviation suggests" (phase.proto); the engine
/// draws that band at 2 % of Tc and 10 % of Pc (crates/eos/src/classify.rs, `State::
/// near_critical`, common practice). Saturation itself is refused within NEAR_CRITICAL_BAND of
/// Tc (crates/eos/src/saturation.rs), with OUT_OF_RANGE.
#[tokio::test]
async fn the_near_critical_flag_marks_states_near_the_critical_point() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    // Carbon dioxide's critical point as the catalogue records it: 304.19 K, 7.38 MPa (handbook
    // compilation of critical constants, Biswas, Leenhouts, Green et al., J. Chem. Inf. Model.
    // 2023, source `crit-compilation` in crates/fluids/data/inorganic.toml).
    let record = Catalogue::builtin().get("R-744").expect("catalogue fluid");
    let tc = record.constants.critical_temperature_k;
    let pc = record.constants.critical_pressure_pa;
    // (T / Tc, P / Pc, inside the band)
    let cases = [
        (1.01, 1.05, true),
        (0.99, 0.95, true),
        (1.015, 0.92, true),
        (1.03, 1.0, false),
        (0.97, 1.0, false),
        (1.005, 1.15, false),
        (1.005, 0.85, false),
        (0.8, 0.4, false),
    ];
    let mut flags = Vec::new();
    for (tr, pr, inside) in cases {
        let (t, p) = (tr * tc, pr * pc);
        let answer = client
            .get_state(state_request(
                "R-744",
                pb::ReferenceState::Unspecified,
                t,
                p,
            ))
            .await
            .unwrap_or_else(|e| panic!("CO2 at Tr {tr}, Pr {pr}: {e:?}"))
            .into_inner();
        // The reduced values are taken against the catalogue's critical point.
        assert_same("Tr", answer.reduced_temperature, t / tc);
        assert_same("Pr", answer.reduced_pressure, p / pc);
        assert_eq!(answer.near_critical, inside, "CO2 at Tr {tr}, Pr {pr}");
        assert!(!answer.estimated);
        flags.push(answer.near_critical);
    }
    // The batch flags the same points the same way.
    let batch = client
        .get_state_batch(pb::GetStateBatchRequest {
            fluid: fluid("R-744"),
            temperatures_k: cases.iter().map(|c| c.0 * tc).collect(),
            pressures_pa: cases.iter().map(|c| c.1 * pc).collect(),
            ..Default::default()
        })
        .await
        .expect("batch")
        .into_inner();
    assert_eq!(batch.near_critical, flags);

    // Saturation just outside the solver's near-critical band is answered (by the full solver:
    // the curve stops at CURVE_CRITICAL_BAND, 1e-4, below); inside it, refused naming the field.
    let saturation = |t: f64| pb::GetSaturationRequest {
        fluid: fluid("R-744"),
        condition: Some(Condition::TemperatureK(t)),
        ..Default::default()
    };
    let outside = client
        .get_saturation(saturation(tc * (1.0 - 2.0 * NEAR_CRITICAL_BAND)))
        .await
        .expect("saturation just outside the near-critical band")
        .into_inner();
    assert_eq!(outside.path, pb::ComputationPath::FullSolve as i32);
    let refused = client
        .get_saturation(saturation(tc * (1.0 - 0.5 * NEAR_CRITICAL_BAND)))
        .await
        .expect_err("saturation inside the near-critical band is refused");
    assert_eq!(refused.code(), Code::OutOfRange, "{refused:?}");
    assert!(
        refused.message().contains("temperature_k"),
        "the refusal names the field: {refused:?}"
    );
    server.stop().await;
}

/// Points of the slow call. Each state of the R-407C-like custom mixture goes through bubble-
/// and dew-point solves (no precomputed lines, a fraction of a millisecond each): 2 000 points
/// are far more than a 20 ms deadline allows on any machine.
const SLOW_POINTS: usize = 2_000;
/// The client's deadline.
const CLIENT_DEADLINE: Duration = Duration::from_millis(20);

fn slow_batch() -> pb::GetStateBatchRequest {
    pb::GetStateBatchRequest {
        fluid: slow_mixture(),
        temperatures_k: (0..SLOW_POINTS)
            .map(|i| 200.0 + 200.0 * i as f64 / SLOW_POINTS as f64)
            .collect(),
        pressures_pa: vec![1.0e5; SLOW_POINTS],
        ..Default::default()
    }
}

/// One unary call over a plain HTTP/2 connection, framed as gRPC over HTTP/2 defines it
/// (doc/PROTOCOL-HTTP2.md of the gRPC project: a 5-byte prefix, uncompressed flag and length,
/// before the message), with `metadata` as extra headers. Returns the status (from the headers of
/// a trailers-only answer, else from the trailers) and the bytes of the answer's body.
async fn plain_http2_call(
    address: std::net::SocketAddr,
    path: &str,
    message: &impl prost::Message,
    metadata: &http::HeaderMap,
) -> (tonic::Status, usize) {
    use http_body_util::BodyExt as _;
    let stream = tokio::net::TcpStream::connect(address)
        .await
        .expect("connect to the test server");
    let (mut sender, connection) = hyper::client::conn::http2::handshake(
        hyper_util::rt::TokioExecutor::new(),
        hyper_util::rt::TokioIo::new(stream),
    )
    .await
    .expect("HTTP/2 handshake");
    tokio::spawn(connection);
    let payload = message.encode_to_vec();
    let mut frame = Vec::with_capacity(payload.len() + 5);
    frame.push(0);
    frame.extend_from_slice(&u32::try_from(payload.len()).expect("size").to_be_bytes());
    frame.extend_from_slice(&payload);
    let mut request = http::Request::builder()
        .method("POST")
        .uri(format!("http://{address}{path}"))
        .header("content-type", "application/grpc")
        .header("te", "trailers")
        .body(http_body_util::Full::new(bytes::Bytes::from(frame)))
        .expect("request");
    request.headers_mut().extend(metadata.clone());
    let response = sender.send_request(request).await.expect("an answer");
    let (parts, body) = response.into_parts();
    let body = body.collect().await.expect("the answer's body");
    let trailers = body.trailers().cloned();
    let status = tonic::Status::from_header_map(&parts.headers)
        .or_else(|| trailers.as_ref().and_then(tonic::Status::from_header_map))
        .expect("a gRPC status");
    (status, body.to_bytes().len())
}

/// A deadline the client sends, in the `grpc-timeout` header that `tonic::Request::set_timeout`
/// writes, shorter than the call: the server answers DEADLINE_EXCEEDED ("Deadline expires before
/// server returns status: DEADLINE_EXCEEDED, generated at client or server", gRPC status codes,
/// doc/statuscodes.md of the gRPC project), naming the client's deadline.
///
/// The call goes over a plain HTTP/2 connection because a tonic client enforces the same
/// deadline on its own side and reports its own expiry as CANCELLED "Timeout expired" (tonic maps
/// its TimeoutExpired error to CANCELLED); which of the two a tonic client shows depends on which
/// timer fires first, so only the server's answer can be checked without a race.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_client_deadline_shorter_than_the_call_ends_with_deadline_exceeded() {
    let mut settings = Settings::default();
    settings.limits.max_message_size_bytes = 64 * 1024 * 1024;
    settings.limits.max_batch_length = SLOW_POINTS;
    let server = TestServer::start_with(settings).await;
    let path = "/binodal.v1.PhaseService/GetStateBatch";

    // The header exactly as a tonic client writes it.
    let mut with_deadline = tonic::Request::new(());
    with_deadline.set_timeout(CLIENT_DEADLINE);
    let metadata = with_deadline.metadata().clone().into_headers();
    assert!(metadata.contains_key("grpc-timeout"), "{metadata:?}");

    // The same call without a deadline is answered in full: the call itself is sound.
    let (status, length) =
        plain_http2_call(server.address, path, &slow_batch(), &http::HeaderMap::new()).await;
    assert_eq!(status.code(), Code::Ok, "{status:?}");
    assert!(length > 0, "an answer");

    let (status, length) = plain_http2_call(server.address, path, &slow_batch(), &metadata).await;
    assert_eq!(status.code(), Code::DeadlineExceeded, "{status:?}");
    assert!(
        status.message().contains("grpc-timeout") && status.message().contains("20 ms"),
        "the status names the client's deadline: {status:?}"
    );
    assert_eq!(length, 0, "no answer message after the deadline");

    // The server goes on serving.
    phase_client(&server)
        .await
        .describe_fluid(pb::DescribeFluidRequest {
            fluid: "R-407C".to_owned(),
        })
        .await
        .expect("a call after the expired one");
    server.stop().await;
}
