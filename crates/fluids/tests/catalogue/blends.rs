//! Blends: every catalogue blend solves, and the facts of the trade about glide and
//! pressure hold.

use binodal_eos::{Mixture, Model};
use binodal_fluids::Catalogue;

fn mixture(name: &str, model: Model) -> Mixture {
    let catalogue = Catalogue::builtin();
    let blend = catalogue
        .blend(name)
        .unwrap_or_else(|| panic!("{name} is a catalogue blend"));
    let parts = catalogue.blend_components(blend);
    let eos: Vec<_> = parts
        .iter()
        .map(|(record, _)| record.eos(model).unwrap())
        .collect();
    let mass: Vec<f64> = parts.iter().map(|(_, w)| *w).collect();
    let z = Mixture::mole_fractions_from_mass(&eos, &mass);
    Mixture::new(eos, z, None).unwrap()
}

/// Glide at the bubble pressure of 0 °C (an evaporating condition), Peng-Robinson 1978.
fn glide_at_zero_celsius(name: &str) -> f64 {
    let m = mixture(name, Model::PengRobinson1978);
    let p = m.bubble_at_temperature(273.15).unwrap().pressure_pa;
    m.glide_at_pressure(p).unwrap()
}

#[test]
fn every_blend_has_bubble_and_dew_points_under_every_model_but_van_der_waals() {
    let catalogue = Catalogue::builtin();
    let required = [
        "R-410A", "R-407C", "R-404A", "R-507A", "R-454B", "R-452B", "R-513A", "R-448A", "R-449A",
    ];
    for name in required {
        let blend = catalogue
            .blend(name)
            .unwrap_or_else(|| panic!("{name} missing"));
        assert!(blend.safety_class.is_some(), "{name} has a safety class");
        assert!(!blend.citation.is_empty() && !blend.caution.is_empty());
    }
    for blend in catalogue.blends() {
        for model in [
            Model::SoaveRedlichKwong,
            Model::PengRobinson1976,
            Model::PengRobinson1978,
        ] {
            let m = mixture(&blend.id, model);
            let b = m.bubble_at_temperature(263.15).unwrap();
            let d = m.dew_at_temperature(263.15).unwrap();
            assert!(
                b.pressure_pa >= d.pressure_pa,
                "{} {model}: bubble above dew",
                blend.id
            );
            assert!((b.incipient_mole_fractions.iter().sum::<f64>() - 1.0).abs() < 1e-12);
        }
    }
}

/// Facts of the trade (common practice): R-410A is near-azeotropic with a glide well under
/// 0.5 K; R-407C glides by several kelvin at evaporating conditions (about 5 to 7 K);
/// azeotropic R-507A has practically none.
#[test]
fn glides_match_the_trade() {
    let r410a = glide_at_zero_celsius("R-410A");
    assert!(r410a > 0.0 && r410a < 0.5, "R-410A glide {r410a}");
    let r407c = glide_at_zero_celsius("R-407C");
    assert!((4.0..8.0).contains(&r407c), "R-407C glide {r407c}");
    let r507a = glide_at_zero_celsius("R-507A");
    assert!(r507a < 0.1, "R-507A glide {r507a}");
}

/// R-410A saturation near 0 °C is about 8 bar absolute (common practice; pressure-
/// temperature charts of the trade give about 8.0 bar).
#[test]
fn r410a_at_zero_celsius_is_about_eight_bar() {
    let m = mixture("R-410A", Model::PengRobinson1978);
    let p = m.bubble_at_temperature(273.15).unwrap().pressure_pa;
    assert!((p / 8.0e5 - 1.0).abs() < 0.03, "{p} Pa");
}

/// A mixture state between bubble and dew is two-phase; outside, liquid or vapor with
/// margins of the right sign (the definitions of the trade: subcooling against the bubble
/// point, superheat against the dew point).
#[test]
fn r407c_states_and_margins() {
    let m = mixture("R-407C", Model::PengRobinson1978);
    let b = m.bubble_at_temperature(273.15).unwrap().pressure_pa;
    let d = m.dew_at_temperature(273.15).unwrap().pressure_pa;
    let mid = m.state(273.15, 0.5 * (b + d)).unwrap();
    assert_eq!(mid.phase, binodal_eos::Phase::TwoPhase);
    assert!(mid.flash.vapor_fraction > 0.0 && mid.flash.vapor_fraction < 1.0);
    let liquid = m.state(273.15, 1.2 * b).unwrap();
    assert_eq!(liquid.phase, binodal_eos::Phase::SubcooledLiquid);
    assert!(liquid.subcooling_k.unwrap() > 0.0);
    let vapor = m.state(273.15, 0.8 * d).unwrap();
    assert_eq!(vapor.phase, binodal_eos::Phase::SuperheatedVapor);
    assert!(vapor.superheat_k.unwrap() > 0.0);
}
