//! Phase classification at (T, P) with margins, checked against the NIST tables.

use crate::util;
use binodal_eos::{Model, Phase, PureEos};

#[test]
fn classification_and_margins_of_propane() {
    let f = util::propane();
    let mut c = crate::accuracy::fitted(&f, Model::PengRobinson1978);
    c.heat_of_fusion_j_per_mol = Some(3_524.0); // from memory (Lemmon et al. 2009 triple-point data)
    let eos = PureEos::new(&c, Model::PengRobinson1978).unwrap();
    // NIST WebBook (propane_saturation.csv): Psat(280 K) = 0.58173 MPa.
    // At 280 K and 1 MPa the liquid is subcooled; Tsat(1 MPa) is about 300 K
    // (Psat(300 K) = 0.99780 MPa in the same table), so subcooling is about 20 K.
    let s = eos.state(280.0, 1.0e6).unwrap();
    assert_eq!(s.phase, Phase::SubcooledLiquid);
    let sub = s.margins.subcooling_k.unwrap();
    assert!((sub - 20.1).abs() < 0.5, "subcooling {sub}");
    assert!((s.margins.pressure_margin_pa.unwrap() - (1.0e6 - 0.58173e6)).abs() < 0.01e6);
    // At 300 K and 0.58173 MPa the vapor is superheated by about 20 K (Tsat = 280 K).
    let s = eos.state(300.0, 0.58173e6).unwrap();
    assert_eq!(s.phase, Phase::SuperheatedVapor);
    assert!((s.margins.superheat_k.unwrap() - 20.0).abs() < 0.5);
    // Above Tc (369.89 K) and Pc (4.2512 MPa): supercritical; above Tc below Pc: gas.
    assert_eq!(
        eos.state(400.0, 5e6).unwrap().phase,
        Phase::SupercriticalFluid
    );
    assert_eq!(
        eos.state(400.0, 1e6).unwrap().phase,
        Phase::GasAboveCriticalTemperature
    );
    // On the curve itself: saturated.
    let psat = eos.saturation_pressure(250.0).unwrap();
    assert_eq!(eos.state(250.0, psat).unwrap().phase, Phase::Saturated);
    // Below the triple point (85.525 K) at 1 bar: solid, flagged as an estimate.
    let s = eos.state(70.0, 1e5).unwrap();
    assert_eq!(s.phase, Phase::SolidEstimated);
    assert!(s.estimated);
    assert!(s.margins.freezing_margin_k.unwrap() < 0.0);
}

/// Water contracts on melting, so it is liquid just above 0 °C and solid just below at
/// 1 atm (common practice); the estimated melting temperature at 1 atm lies within
/// 0.05 K of 273.15 K (the ice point, ITS-90).
#[test]
fn water_freezes_at_the_ice_point() {
    let f = util::water();
    let mut c = crate::accuracy::fitted(&f, Model::PengRobinson1978);
    c.heat_of_fusion_j_per_mol = Some(6_007.0); // CRC Handbook: 6.01 kJ/mol (from memory)
    c.melting_volume_change_fraction = Some(-0.0907); // ice 916.7 vs water 999.8 kg/m3 (from memory)
    let eos = PureEos::new(&c, Model::PengRobinson1978).unwrap();
    let solid_t = eos.solid_boundary().unwrap().solid_temperature_k(101_325.0);
    assert!(
        (solid_t - 273.15).abs() < 0.05,
        "melting at 1 atm: {solid_t}"
    );
    assert_eq!(
        eos.state(274.0, 101_325.0).unwrap().phase,
        Phase::SubcooledLiquid
    );
    assert_eq!(
        eos.state(272.0, 101_325.0).unwrap().phase,
        Phase::SolidEstimated
    );
    let margin = eos
        .state(277.15, 101_325.0)
        .unwrap()
        .margins
        .freezing_margin_k
        .unwrap();
    assert!((margin - 4.0).abs() < 0.05, "{margin}");
}
