//! Every RPC of `binodal.v1.PhaseService` through the tonic client, checked against the engine
//! (`binodal_eos` through `binodal_fluids`) and against published reference values, each with
//! its source named beside it. Reference values are accepted within the deviation the server
//! itself reports in `basis.expected_deviation`, which also checks that the recorded accuracy is
//! true.

use std::collections::BTreeSet;

use binodal_eos::{Model, Phase, ReferenceState};
use binodal_fluids::{Catalogue, SafetyClass};
use binodal_proto::v1 as pb;
use binodal_proto::v1::get_saturation_request::Condition;

use super::{
    RECORD_ROUNDING_PERCENT, assert_same, check_basis, deviation_percent, engine, fluid,
    phase_client,
};
use crate::util::TestServer;

/// The server's default model and reference state (`Settings::default`).
const DEFAULT_MODEL: Model = Model::PengRobinson1978;
const DEFAULT_EOS: pb::EquationOfState = pb::EquationOfState::PengRobinson1978;
const DEFAULT_REFERENCE: ReferenceState = ReferenceState::LiquidAtZeroCelsius;

/// The pure fluids of a listing (blends are checked separately).
fn ids(list: &pb::ListFluidsResponse) -> Vec<String> {
    list.fluids
        .iter()
        .filter(|f| f.kind == pb::FluidKind::Pure as i32)
        .map(|f| f.fluid_id.clone())
        .collect()
}

fn catalogue_ids<'a>(
    records: impl IntoIterator<Item = &'a binodal_fluids::FluidRecord>,
) -> BTreeSet<String> {
    records.into_iter().map(|r| r.id.clone()).collect()
}

#[tokio::test]
async fn list_fluids_filters_by_safety_class() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    let catalogue = Catalogue::builtin();

    let all = client
        .list_fluids(pb::ListFluidsRequest::default())
        .await
        .expect("list every fluid")
        .into_inner();
    assert_eq!(
        all.fluids.len(),
        catalogue.fluids().len() + catalogue.blends().len(),
        "an empty request lists every fluid and blend"
    );
    let blends = all
        .fluids
        .iter()
        .filter(|f| f.kind == pb::FluidKind::Blend as i32)
        .count();
    assert_eq!(blends, catalogue.blends().len());

    let a3 = client
        .list_fluids(pb::ListFluidsRequest {
            safety_classes: vec![pb::SafetyClass::A3 as i32],
            text: String::new(),
        })
        .await
        .expect("list A3 fluids")
        .into_inner();
    let found: BTreeSet<String> = ids(&a3).into_iter().collect();
    // ASHRAE 34 safety group A3 for R-290 propane and R-600a isobutane (ASHRAE Standard 34, as
    // recorded in the catalogue, marked there `from memory`).
    for expected in ["propane", "isobutane"] {
        assert!(found.contains(expected), "A3 lacks {expected}: {found:?}");
    }
    assert!(!found.contains("r134a"), "R-134a is A1, not A3: {found:?}");
    assert_eq!(
        found,
        catalogue_ids(catalogue.with_safety_class(SafetyClass::A3))
    );
    assert!(
        a3.fluids
            .iter()
            .all(|f| f.safety_class == pb::SafetyClass::A3 as i32)
    );

    // Several classes combine with OR.
    let a1_or_b2l = client
        .list_fluids(pb::ListFluidsRequest {
            safety_classes: vec![pb::SafetyClass::A1 as i32, pb::SafetyClass::B2l as i32],
            text: String::new(),
        })
        .await
        .expect("list A1 and B2L fluids")
        .into_inner();
    let expected = catalogue_ids(
        catalogue
            .with_safety_class(SafetyClass::A1)
            .into_iter()
            .chain(catalogue.with_safety_class(SafetyClass::B2L)),
    );
    assert_eq!(
        ids(&a1_or_b2l).into_iter().collect::<BTreeSet<_>>(),
        expected
    );
    // R-717 ammonia is B2L (ASHRAE Standard 34, catalogue entry marked `from memory`).
    assert!(expected.contains("ammonia"));
    // The A1 blends are listed too (R-410A, R-407C ... are A1, ASHRAE Standard 34, catalogue
    // entries marked `from memory`).
    let blends: BTreeSet<String> = a1_or_b2l
        .fluids
        .iter()
        .filter(|f| f.kind == pb::FluidKind::Blend as i32)
        .map(|f| f.fluid_id.clone())
        .collect();
    let expected_blends: BTreeSet<String> = catalogue
        .blends()
        .iter()
        .filter(|b| matches!(b.safety_class, Some(SafetyClass::A1 | SafetyClass::B2L)))
        .map(|b| b.id.clone())
        .collect();
    assert_eq!(blends, expected_blends);
    assert!(blends.contains("r410a"));

    // Fluids without a safety group are listed under NOT_CLASSIFIED.
    let unclassified = client
        .list_fluids(pb::ListFluidsRequest {
            safety_classes: vec![pb::SafetyClass::NotClassified as i32],
            text: String::new(),
        })
        .await
        .expect("list unclassified fluids")
        .into_inner();
    assert_eq!(
        ids(&unclassified).into_iter().collect::<BTreeSet<_>>(),
        catalogue_ids(catalogue.unclassified())
    );

    // UNSPECIFIED matches nothing (proto/binodal/v1/fluids.proto, SafetyClass).
    let none = client
        .list_fluids(pb::ListFluidsRequest {
            safety_classes: vec![pb::SafetyClass::Unspecified as i32],
            text: String::new(),
        })
        .await
        .expect("list with UNSPECIFIED")
        .into_inner();
    assert!(none.fluids.is_empty(), "{none:?}");
    server.stop().await;
}

#[tokio::test]
async fn list_fluids_filters_by_text() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    let text = |t: &str| pb::ListFluidsRequest {
        safety_classes: Vec::new(),
        text: t.to_owned(),
    };

    // ASHRAE number, any case.
    let found = ids(&client
        .list_fluids(text("r-134A"))
        .await
        .expect("by number")
        .into_inner());
    assert!(found.contains(&"r134a".to_owned()), "{found:?}");
    // Chemical name: R-134a is 1,1,1,2-tetrafluoroethane (CAS 811-97-2).
    let found = ids(&client
        .list_fluids(text("tetrafluoroeth"))
        .await
        .expect("by chemical name")
        .into_inner());
    assert!(found.contains(&"r134a".to_owned()), "{found:?}");
    // Substring of ids and names: n-butane and isobutane both contain "butane".
    let found = ids(&client
        .list_fluids(text("butane"))
        .await
        .expect("by name")
        .into_inner());
    for expected in ["butane", "isobutane"] {
        assert!(
            found.contains(&expected.to_owned()),
            "{found:?} lacks {expected}"
        );
    }
    assert!(!found.contains(&"propane".to_owned()), "{found:?}");
    // Text and safety class combine with AND (R-290 is propane; "propane" alone would also
    // match isobutane's alias 2-methylpropane).
    let both = client
        .list_fluids(pb::ListFluidsRequest {
            safety_classes: vec![pb::SafetyClass::A3 as i32],
            text: "r290".to_owned(),
        })
        .await
        .expect("A3 and text")
        .into_inner();
    assert_eq!(ids(&both), vec!["propane".to_owned()]);
    let nothing = client
        .list_fluids(pb::ListFluidsRequest {
            safety_classes: vec![pb::SafetyClass::A1 as i32],
            text: "r290".to_owned(),
        })
        .await
        .expect("A1 and R-290")
        .into_inner();
    assert!(nothing.fluids.is_empty(), "{nothing:?}");
    // A text of punctuation only would match every fluid: refused, naming the field.
    for punctuation in ["%", "  "] {
        let refused = client
            .list_fluids(text(punctuation))
            .await
            .expect_err("no letters or digits");
        assert_eq!(refused.code(), tonic::Code::InvalidArgument);
        assert!(
            refused.message().starts_with("text:"),
            "{}",
            refused.message()
        );
    }
    server.stop().await;
}

/// Two promises of the proto: ListFluids matches the formula, and orders its answer by fluid id (proto/binodal/v1/fluids.proto, ListFluidsRequest.text and
/// ListFluidsResponse.fluids).
#[tokio::test]
async fn list_fluids_matches_formula_and_orders_by_id() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    // R-134a's formula is CH2FCF3 (catalogue, crates/fluids/data/hfc.toml).
    let found = client
        .list_fluids(pb::ListFluidsRequest {
            safety_classes: Vec::new(),
            text: "CH2FCF3".to_owned(),
        })
        .await
        .expect("by formula")
        .into_inner();
    assert_eq!(ids(&found), vec!["r134a".to_owned()]);
    let all = ids(&client
        .list_fluids(pb::ListFluidsRequest::default())
        .await
        .expect("all")
        .into_inner());
    let mut sorted = all.clone();
    sorted.sort();
    assert_eq!(
        all, sorted,
        "ListFluidsResponse.fluids is ordered by fluid id"
    );
    server.stop().await;
}

#[tokio::test]
async fn describe_fluid_resolves_every_name_of_r134a() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    let record = Catalogue::builtin()
        .get("r134a")
        .expect("R-134a in the catalogue");
    for name in [
        "r134a",
        "R-134a",
        "HFC-134a",
        "1,1,1,2-tetrafluoroethane",
        "811-97-2",
    ] {
        let described = client
            .describe_fluid(pb::DescribeFluidRequest {
                fluid: name.to_owned(),
            })
            .await
            .unwrap_or_else(|e| panic!("describe {name}: {e:?}"))
            .into_inner()
            .fluid
            .expect("a description");
        assert_eq!(described.fluid_id, "r134a", "{name}");
        assert_eq!(described.ashrae_number, "R-134a");
        // CAS registry number of 1,1,1,2-tetrafluoroethane: 811-97-2 (CAS Registry, as cited in
        // the catalogue).
        assert_eq!(described.cas_number, "811-97-2");
        assert_eq!(described.safety_class, pb::SafetyClass::A1 as i32);
        assert_eq!(
            described.critical_temperature_k,
            record.constants.critical_temperature_k
        );
        assert_eq!(
            described.critical_pressure_pa,
            record.constants.critical_pressure_pa
        );
        assert!(
            described.caution.contains("advisory"),
            "{}",
            described.caution
        );
        assert!(!described.sources.is_empty(), "constants are cited");
        assert_eq!(
            described.models.len(),
            Model::ALL.len(),
            "one entry per model"
        );
        for support in &described.models {
            assert_ne!(
                support.equation_of_state,
                pb::EquationOfState::Unspecified as i32
            );
            assert_ne!(
                support.alpha_function,
                pb::AlphaFunction::Unspecified as i32
            );
            let accuracy = support
                .accuracy
                .as_ref()
                .expect("R-134a is checked under every model");
            assert_eq!(accuracy.equation_of_state, support.equation_of_state);
            assert!(
                accuracy
                    .saturation_pressure_max_abs_deviation_percent
                    .is_some_and(f64::is_finite)
            );
        }
    }
    server.stop().await;
}

/// One published saturation point, with the deviation the server records for it.
struct Published {
    /// Catalogue name.
    fluid: &'static str,
    /// Temperature, K.
    temperature_k: f64,
    /// Vapor pressure, Pa.
    pressure_pa: f64,
    /// Enthalpy of vaporization, J/kg, where the source gives it.
    hvap_j_per_kg: Option<f64>,
}

/// Spot values from the reference tables in crates/fluids/data/reference/.
const PUBLISHED: [Published; 3] = [
    // NIST Chemistry WebBook, SRD 69, propane saturation table (propane_saturation.csv, row
    // 280 K): 0.58173 MPa, h_vap - h_liq = 582.60 - 217.38 = 365.22 kJ/kg.
    Published {
        fluid: "propane",
        temperature_k: 280.0,
        pressure_pa: 0.58173e6,
        hvap_j_per_kg: Some(365.22e3),
    },
    // NIST Chemistry WebBook, SRD 69 (IAPWS-95), water saturation table (water_saturation.csv,
    // row 100 °C = 373.15 K): 1.0145 bar, hvap 2256.4 kJ/kg.
    Published {
        fluid: "water",
        temperature_k: 373.15,
        pressure_pa: 1.0145e5,
        hvap_j_per_kg: Some(2256.4e3),
    },
    // R-134a saturated-liquid table matching the NIST Chemistry WebBook export
    // (r134a_saturated_liquid.csv, row 273.01 K): 0.29128 MPa.
    Published {
        fluid: "r134a",
        temperature_k: 273.01,
        pressure_pa: 0.29128e6,
        hvap_j_per_kg: None,
    },
];

/// A fluid with no reference saturation data in the catalogue (R-1234yf) reports only its
/// normal-boiling-point check: the deviation figures it has none of are absent, not NaN.
#[tokio::test]
async fn unchecked_figures_are_absent() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    let described = client
        .describe_fluid(pb::DescribeFluidRequest {
            fluid: "R-1234yf".to_owned(),
        })
        .await
        .expect("describe R-1234yf")
        .into_inner()
        .fluid
        .expect("a description");
    let support = described
        .models
        .iter()
        .find(|m| m.equation_of_state == pb::EquationOfState::PengRobinson1978 as i32)
        .expect("PR-1978");
    let accuracy = support.accuracy.as_ref().expect("a boiling-point check");
    assert_eq!(
        accuracy.saturation_pressure_mean_abs_deviation_percent,
        None
    );
    assert_eq!(accuracy.saturation_pressure_max_abs_deviation_percent, None);
    assert_eq!(
        accuracy.enthalpy_of_vaporization_max_abs_deviation_percent,
        None
    );
    assert_eq!(accuracy.checked_min_temperature_k, None);
    assert_eq!(accuracy.checked_point_count, 0);
    // Normal boiling point 243.665 K (Richter, McLinden and Lemmon, J. Chem. Eng. Data 56
    // (2011) 3254, value from memory, as cited in the catalogue): the reported deviation is the
    // model's own saturation temperature at 101 325 Pa minus it.
    let deviation = accuracy
        .normal_boiling_point_deviation_k
        .expect("a boiling-point deviation");
    let model = engine(
        "r1234yf",
        Model::PengRobinson1978,
        ReferenceState::LiquidAtZeroCelsius,
    )
    .saturation_temperature(101_325.0)
    .expect("saturation at 1 atm");
    assert!(
        (deviation - (model - 243.665)).abs() < 1e-3,
        "{deviation} K against {model} - 243.665 K"
    );
    server.stop().await;
}

#[tokio::test]
async fn get_saturation_agrees_with_the_engine_and_published_values() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    for point in &PUBLISHED {
        let answer = client
            .get_saturation(pb::GetSaturationRequest {
                fluid: fluid(point.fluid),
                condition: Some(Condition::TemperatureK(point.temperature_k)),
                ..Default::default()
            })
            .await
            .unwrap_or_else(|e| {
                panic!(
                    "saturation of {} at {} K: {e:?}",
                    point.fluid, point.temperature_k
                )
            })
            .into_inner();
        let id = Catalogue::builtin()
            .get(point.fluid)
            .expect("catalogue fluid")
            .id
            .clone();
        let accuracy = check_basis(answer.basis.as_ref(), &id, DEFAULT_EOS);
        // Every published point lies below the curves' near-critical band.
        assert_eq!(answer.path, pb::ComputationPath::PrecomputedCurve as i32);

        // Against the engine.
        let eos = engine(point.fluid, DEFAULT_MODEL, DEFAULT_REFERENCE);
        let sat = eos
            .saturation_at_temperature(point.temperature_k)
            .expect("engine saturation");
        let m = eos.molar_mass_kg_per_mol();
        assert_same(
            "saturation pressure",
            answer.saturation_pressure_pa,
            sat.pressure_pa,
        );
        assert_same(
            "saturation temperature",
            answer.saturation_temperature_k,
            sat.temperature_k,
        );
        let liquid = answer
            .liquid
            .as_ref()
            .and_then(|p| p.properties.as_ref())
            .expect("liquid");
        let vapor = answer
            .vapor
            .as_ref()
            .and_then(|p| p.properties.as_ref())
            .expect("vapor");
        assert_same(
            "liquid density",
            liquid.density_kg_per_m3,
            sat.liquid.density_kg_per_m3,
        );
        assert_same(
            "vapor density",
            vapor.density_kg_per_m3,
            sat.vapor.density_kg_per_m3,
        );
        assert_same(
            "liquid enthalpy",
            liquid.enthalpy_j_per_mol.expect("h"),
            sat.liquid.enthalpy_j_per_mol.expect("engine h"),
        );
        assert_same(
            "hvap J/mol",
            answer.enthalpy_of_vaporization_j_per_mol,
            sat.enthalpy_of_vaporization_j_per_mol,
        );
        assert_same(
            "hvap J/kg",
            answer.enthalpy_of_vaporization_j_per_kg,
            sat.enthalpy_of_vaporization_j_per_mol / m,
        );
        assert!(liquid.density_kg_per_m3 > vapor.density_kg_per_m3);

        // Against the published value, within the deviation the server reports.
        let dp = deviation_percent(answer.saturation_pressure_pa, point.pressure_pa);
        let allowed = accuracy
            .saturation_pressure_max_abs_deviation_percent
            .expect("a checked saturation pressure")
            + RECORD_ROUNDING_PERCENT;
        assert!(
            dp <= allowed,
            "{}: {} Pa at {} K is {dp:.4} % from the published {} Pa; recorded max {allowed} %",
            point.fluid,
            answer.saturation_pressure_pa,
            point.temperature_k,
            point.pressure_pa
        );
        if let Some(hvap) = point.hvap_j_per_kg {
            let dh = deviation_percent(answer.enthalpy_of_vaporization_j_per_kg, hvap);
            let allowed = accuracy
                .enthalpy_of_vaporization_max_abs_deviation_percent
                .expect("a checked enthalpy of vaporization")
                + RECORD_ROUNDING_PERCENT;
            assert!(
                dh <= allowed,
                "{}: hvap {dh:.4} % from the published {hvap} J/kg; recorded max {allowed} %",
                point.fluid
            );
        }

        // The same point asked by pressure gives the same temperature back.
        let by_pressure = client
            .get_saturation(pb::GetSaturationRequest {
                fluid: fluid(point.fluid),
                condition: Some(Condition::PressurePa(answer.saturation_pressure_pa)),
                ..Default::default()
            })
            .await
            .expect("saturation by pressure")
            .into_inner();
        let engine_t = eos
            .saturation_at_pressure(answer.saturation_pressure_pa)
            .expect("engine by pressure");
        assert_same(
            "temperature by pressure",
            by_pressure.saturation_temperature_k,
            engine_t.temperature_k,
        );
        assert!((by_pressure.saturation_temperature_k - point.temperature_k).abs() < 1e-6);
        check_basis(by_pressure.basis.as_ref(), &id, DEFAULT_EOS);
    }
    server.stop().await;
}

/// Every point of the reference data set behind each recorded deviation, under every model,
/// through GetSaturation: no point may lie further from the reference than the maximum the
/// server reports in `basis.expected_deviation`. Vapor pressure over the recorded temperature
/// range; enthalpy of vaporization where the data give it, up to 0.95 Tc (the range the records
/// use, crates/fluids/data/accuracy.toml header).
#[tokio::test]
async fn recorded_deviation_holds_over_the_reference_tables() {
    let server = TestServer::start().await;
    let client = phase_client(&server).await;
    for name in ["propane", "water", "r134a"] {
        let record = Catalogue::builtin().get(name).expect("catalogue fluid");
        let data = binodal_fluids::reference::reference_data(record)
            .expect("reference data parse")
            .expect("the fluid has reference data");
        // propane and water: NIST Chemistry WebBook saturation tables; R-134a: the saturated-
        // liquid table matching the WebBook export (data.citation names each).
        assert!(data.citation.contains("NIST"), "{}", data.citation);
        let tc = record.constants.critical_temperature_k;
        for (model, eos) in super::MODELS {
            let mut checked = 0u32;
            let mut accuracy = None;
            // All points of one model at once: the calls overlap on one HTTP/2 connection.
            let mut calls = tokio::task::JoinSet::new();
            for (i, point) in data.points.iter().enumerate() {
                let mut client = client.clone();
                let request = pb::GetSaturationRequest {
                    fluid: fluid(name),
                    equation_of_state: eos as i32,
                    condition: Some(Condition::TemperatureK(point.temperature_k)),
                    ..Default::default()
                };
                calls.spawn(async move { (i, client.get_saturation(request).await) });
            }
            let mut answers: Vec<_> = calls.join_all().await;
            answers.sort_by_key(|(i, _)| *i);
            for (point, (_, answer)) in data.points.iter().zip(answers) {
                let answer = answer
                    .unwrap_or_else(|e| {
                        panic!("{name} {model:?} at {} K: {e:?}", point.temperature_k)
                    })
                    .into_inner();
                let acc = check_basis(answer.basis.as_ref(), &record.id, eos);
                let checked_range = acc
                    .checked_min_temperature_k
                    .zip(acc.checked_max_temperature_k)
                    .zip(acc.saturation_pressure_max_abs_deviation_percent);
                if let Some(((from, to), max)) = checked_range
                    && point.temperature_k >= from - 1e-3
                    && point.temperature_k <= to + 1e-3
                {
                    checked += 1;
                    let dp = deviation_percent(answer.saturation_pressure_pa, point.pressure_pa);
                    let allowed = max + RECORD_ROUNDING_PERCENT;
                    assert!(
                        dp <= allowed,
                        "{name} {model:?} at {} K: {dp} % from {} Pa ({}), recorded max {allowed} %",
                        point.temperature_k,
                        point.pressure_pa,
                        data.citation
                    );
                }
                if let Some(h) = point.enthalpy_of_vaporization_j_per_mol
                    && point.temperature_k <= 0.95 * tc
                    && let Some(h_max) = acc.enthalpy_of_vaporization_max_abs_deviation_percent
                {
                    let dh = deviation_percent(answer.enthalpy_of_vaporization_j_per_mol, h);
                    let allowed = h_max + RECORD_ROUNDING_PERCENT;
                    assert!(
                        dh <= allowed,
                        "{name} {model:?} at {} K: hvap {dh} % from {h} J/mol ({}), recorded max {allowed} %",
                        point.temperature_k,
                        data.citation
                    );
                }
                accuracy = Some(acc);
            }
            let accuracy = accuracy.expect("at least one point");
            assert_eq!(
                checked, accuracy.checked_point_count,
                "{name} {model:?}: the recorded point count matches the reference points in range"
            );
        }
    }
    server.stop().await;
}

#[tokio::test]
async fn get_state_agrees_with_the_engine() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    let eos = engine("propane", DEFAULT_MODEL, DEFAULT_REFERENCE);
    let m = eos.molar_mass_kg_per_mol();
    // (T K, P Pa, expected phase): propane's critical point is 369.89 K, 4.2512 MPa (NIST
    // Chemistry WebBook, propane), and 280 K boils at 0.58173 MPa (propane_saturation.csv).
    let cases = [
        (280.0, 1.0e6, pb::Phase::SubcooledLiquid),
        (280.0, 0.2e6, pb::Phase::SuperheatedVapor),
        (400.0, 6.0e6, pb::Phase::SupercriticalFluid),
        (400.0, 1.0e6, pb::Phase::GasAboveCriticalTemperature),
    ];
    for (t, p, phase) in cases {
        let answer = client
            .get_state(pb::GetStateRequest {
                fluid: fluid("R-290"),
                temperature_k: t,
                pressure_pa: p,
                ..Default::default()
            })
            .await
            .unwrap_or_else(|e| panic!("state at {t} K, {p} Pa: {e:?}"))
            .into_inner();
        check_basis(answer.basis.as_ref(), "propane", DEFAULT_EOS);
        let state = eos.state(t, p).expect("engine state");
        assert_eq!(answer.phase, phase as i32, "at {t} K, {p} Pa");
        assert_eq!(answer.phase, convert_phase(state.phase) as i32);
        let props = answer.properties.as_ref().expect("single-phase properties");
        assert_same(
            "density",
            props.density_kg_per_m3,
            state.properties.density_kg_per_m3,
        );
        assert_same(
            "Z",
            props.compressibility_factor,
            state.properties.compressibility,
        );
        let h = props
            .enthalpy_j_per_mol
            .expect("propane has ideal-gas data");
        assert_same(
            "h",
            h,
            state.properties.enthalpy_j_per_mol.expect("engine h"),
        );
        assert_same("h per kg", props.enthalpy_j_per_kg.expect("h/kg"), h / m);
        assert_same(
            "s",
            props.entropy_j_per_mol_k.expect("s"),
            state.properties.entropy_j_per_mol_k.expect("engine s"),
        );
        assert_same("Tr", answer.reduced_temperature, state.reduced_temperature);
        assert_same("Pr", answer.reduced_pressure, state.reduced_pressure);
        let margins = answer.margins.as_ref().expect("margins");
        assert_eq!(
            margins.superheat_k.is_some(),
            state.margins.temperature_margin_k.is_some()
        );
        if let (Some(superheat), Some(d)) =
            (margins.superheat_k, state.margins.temperature_margin_k)
        {
            assert_same("superheat", superheat, d);
            assert_same(
                "subcooling",
                margins.subcooling_k.expect("subcooling with superheat"),
                -d,
            );
        }
        if let (Some(above), Some(d)) = (
            margins.pressure_above_bubble_pa,
            state.margins.pressure_margin_pa,
        ) {
            assert_same("pressure above bubble", above, d);
        }
        match phase {
            pb::Phase::SubcooledLiquid => assert!(margins.subcooling_k.expect("subcooling") > 0.0),
            pb::Phase::SuperheatedVapor => assert!(margins.superheat_k.expect("superheat") > 0.0),
            _ => assert!(
                margins.saturation_pressure_pa.is_none(),
                "no saturation above Tc"
            ),
        }
    }
    server.stop().await;
}

fn convert_phase(phase: Phase) -> pb::Phase {
    match phase {
        Phase::SubcooledLiquid => pb::Phase::SubcooledLiquid,
        Phase::SuperheatedVapor => pb::Phase::SuperheatedVapor,
        Phase::Saturated => pb::Phase::Saturated,
        Phase::SupercriticalFluid => pb::Phase::SupercriticalFluid,
        Phase::GasAboveCriticalTemperature => pb::Phase::GasAboveCriticalTemperature,
        Phase::SolidEstimated => pb::Phase::SolidEstimated,
        Phase::TwoPhase => pb::Phase::TwoPhase,
    }
}

/// NaN-aware equality of a batch entry and the matching GetState value (absent = NaN).
fn same_or_both_missing(what: &str, batch: f64, single: Option<f64>) {
    match single {
        Some(v) => assert_same(what, batch, v),
        None => assert!(batch.is_nan(), "{what}: batch {batch}, GetState has none"),
    }
}

#[tokio::test]
async fn a_batch_of_1000_points_agrees_point_by_point_with_get_state() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    // 1000 points of R-134a from 150 K to 450 K and 10 kPa to 8 MPa (its triple point is
    // 169.86 K and critical point 374.21 K, 4.0591 MPa: NIST Chemistry WebBook, R-134a), so the
    // grid crosses liquid, vapor, supercritical and the estimated solid region; every 97th point
    // is made invalid (negative pressure) and every 89th far below the model's range (1 K).
    let n = 1000;
    let mut temperatures = Vec::with_capacity(n);
    let mut pressures = Vec::with_capacity(n);
    for i in 0..n {
        let t = 150.0 + 300.0 * ((i * 37) % n) as f64 / n as f64;
        let p = 1.0e4 * (800.0f64).powf((i % 50) as f64 / 49.0);
        let (t, p) = if i % 97 == 0 {
            (t, -p)
        } else if i % 89 == 0 {
            (1.0, p)
        } else {
            (t, p)
        };
        temperatures.push(t);
        pressures.push(p);
    }
    let batch = client
        .get_state_batch(pb::GetStateBatchRequest {
            fluid: fluid("R-134a"),
            temperatures_k: temperatures.clone(),
            pressures_pa: pressures.clone(),
            ..Default::default()
        })
        .await
        .expect("a batch of 1000 points")
        .into_inner();
    check_basis(batch.basis.as_ref(), "r134a", DEFAULT_EOS);
    for column in [
        batch.densities_kg_per_m3.len(),
        batch.compressibility_factors.len(),
        batch.enthalpies_j_per_mol.len(),
        batch.enthalpies_j_per_kg.len(),
        batch.entropies_j_per_mol_k.len(),
        batch.entropies_j_per_kg_k.len(),
        batch.subcooling_k.len(),
        batch.superheat_k.len(),
        batch.pressure_above_bubble_pa.len(),
        batch.pressure_below_dew_pa.len(),
        batch.vapor_fractions_mol.len(),
        batch.estimated.len(),
        batch.near_critical.len(),
        batch.paths.len(),
        batch.phases.len(),
    ] {
        assert_eq!(column, n, "every array has one entry per point");
    }
    let mut errors = batch.errors.iter().peekable();
    let mut failed = 0;
    let mut phases_seen = BTreeSet::new();
    // Every point through GetState, the calls overlapping on one HTTP/2 connection.
    let mut calls = tokio::task::JoinSet::new();
    for i in 0..n {
        let mut client = client.clone();
        let request = pb::GetStateRequest {
            fluid: fluid("R-134a"),
            temperature_k: temperatures[i],
            pressure_pa: pressures[i],
            ..Default::default()
        };
        calls.spawn(async move { (i, client.get_state(request).await) });
    }
    let mut singles: Vec<_> = calls.join_all().await;
    singles.sort_by_key(|(i, _)| *i);
    for (i, single) in singles {
        let point_error = errors.next_if(|e| e.index as usize == i);
        match single {
            Ok(single) => {
                assert!(
                    point_error.is_none(),
                    "point {i}: batch failed {point_error:?}, GetState answered"
                );
                let single = single.into_inner();
                assert_eq!(batch.phases[i], single.phase, "point {i}");
                phases_seen.insert(single.phase);
                assert_eq!(batch.estimated[i], single.estimated, "point {i}");
                assert_eq!(batch.near_critical[i], single.near_critical, "point {i}");
                assert_eq!(batch.paths[i], single.path, "point {i}");
                let props = single.properties.as_ref();
                same_or_both_missing(
                    "density",
                    batch.densities_kg_per_m3[i],
                    props.map(|p| p.density_kg_per_m3),
                );
                same_or_both_missing(
                    "Z",
                    batch.compressibility_factors[i],
                    props.map(|p| p.compressibility_factor),
                );
                same_or_both_missing(
                    "h",
                    batch.enthalpies_j_per_mol[i],
                    props.and_then(|p| p.enthalpy_j_per_mol),
                );
                same_or_both_missing(
                    "h/kg",
                    batch.enthalpies_j_per_kg[i],
                    props.and_then(|p| p.enthalpy_j_per_kg),
                );
                same_or_both_missing(
                    "s",
                    batch.entropies_j_per_mol_k[i],
                    props.and_then(|p| p.entropy_j_per_mol_k),
                );
                same_or_both_missing(
                    "s/kg",
                    batch.entropies_j_per_kg_k[i],
                    props.and_then(|p| p.entropy_j_per_kg_k),
                );
                let margins = single.margins.as_ref().expect("margins");
                same_or_both_missing("subcooling", batch.subcooling_k[i], margins.subcooling_k);
                same_or_both_missing("superheat", batch.superheat_k[i], margins.superheat_k);
                same_or_both_missing(
                    "above bubble",
                    batch.pressure_above_bubble_pa[i],
                    margins.pressure_above_bubble_pa,
                );
                same_or_both_missing(
                    "below dew",
                    batch.pressure_below_dew_pa[i],
                    margins.pressure_below_dew_pa,
                );
                assert!(
                    batch.vapor_fractions_mol[i].is_nan(),
                    "pure fluids have no two-phase split"
                );
            }
            Err(status) => {
                failed += 1;
                let point_error = point_error.unwrap_or_else(|| {
                    panic!("point {i}: GetState failed {status:?}, batch answered")
                });
                let expected = match status.code() {
                    tonic::Code::OutOfRange => pb::PointErrorCode::OutOfRange,
                    tonic::Code::InvalidArgument => pb::PointErrorCode::InvalidInput,
                    other => panic!("point {i}: unexpected GetState code {other:?}"),
                };
                assert_eq!(
                    point_error.code, expected as i32,
                    "point {i}: {point_error:?} vs {status:?}"
                );
                assert_eq!(point_error.message, status.message(), "point {i}");
                assert_eq!(batch.phases[i], pb::Phase::Unspecified as i32);
                assert!(batch.densities_kg_per_m3[i].is_nan());
            }
        }
    }
    assert!(errors.next().is_none(), "no batch error is left unmatched");
    // The points the engine itself refuses (including R-134a below its triple point, 169.86 K,
    // where the catalogue has no solid estimate) are exactly the points that failed.
    let engine = engine("R-134a", DEFAULT_MODEL, DEFAULT_REFERENCE);
    let refused = (0..n)
        .filter(|&i| engine.state(temperatures[i], pressures[i]).is_err())
        .count();
    assert_eq!(failed, refused);
    assert!(
        failed >= 22,
        "the 22 deliberately bad points fail: {failed}"
    );
    for phase in [
        pb::Phase::SubcooledLiquid,
        pb::Phase::SuperheatedVapor,
        pb::Phase::SupercriticalFluid,
    ] {
        assert!(
            phases_seen.contains(&(phase as i32)),
            "the grid reaches {phase:?}: {phases_seen:?}"
        );
    }
    server.stop().await;
}
