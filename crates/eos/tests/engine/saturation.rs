//! Solver properties over the whole range: round trips, coverage, the near-critical band,
//! volume translation.

use crate::util;
use binodal_eos::{ErrorKind, Model, NEAR_CRITICAL_BAND, PureEos, ReferenceState, VolumeShift};

fn temperatures(eos: &PureEos, n: usize, top_reduced: f64) -> Vec<f64> {
    let lo = eos.minimum_temperature_k();
    let hi = top_reduced * eos.critical_temperature_k();
    (0..n)
        .map(|i| lo + (hi - lo) * i as f64 / (n - 1) as f64)
        .collect()
}

/// 500 temperatures from the triple point to 0.999 Tc all solve, for every test fluid and
/// every model, with finite, ordered results.
#[test]
fn five_hundred_temperatures_solve_for_every_model() {
    for f in util::all() {
        for model in Model::ALL {
            let eos = PureEos::new(&f.constants, model).unwrap();
            for t in temperatures(&eos, 500, 0.999) {
                let s = eos
                    .saturation_at_temperature(t)
                    .unwrap_or_else(|e| panic!("{} {model} at {t} K: {e}", f.constants.name));
                assert!(s.pressure_pa.is_finite() && s.pressure_pa > 0.0);
                assert!(s.liquid.density_kg_per_m3 > s.vapor.density_kg_per_m3);
                assert!(s.enthalpy_of_vaporization_j_per_mol > 0.0);
                assert!(s.enthalpy_of_vaporization_j_per_mol.is_finite());
            }
        }
    }
}

/// Tsat(Psat(T)) = T to 1e-9 relative over the whole range.
#[test]
fn saturation_round_trips() {
    for f in util::all() {
        for model in [
            Model::PengRobinson1978,
            Model::SoaveRedlichKwong,
            Model::VanDerWaals,
        ] {
            let eos = PureEos::new(&f.constants, model).unwrap();
            for t in temperatures(&eos, 60, 0.999) {
                let p = eos.saturation_pressure(t).unwrap();
                let back = eos.saturation_temperature(p).unwrap();
                assert!(
                    ((back - t) / t).abs() < 1e-9,
                    "{} {model}: {t} -> {p} -> {back}",
                    f.constants.name
                );
            }
        }
    }
}

#[test]
fn near_critical_band_is_solved_or_refused_precisely() {
    let f = util::propane();
    let eos = PureEos::new(&f.constants, Model::PengRobinson1978).unwrap();
    let tc = eos.critical_temperature_k();
    // Just outside the band: a consistent two-phase answer.
    let t = tc * (1.0 - 2.0 * NEAR_CRITICAL_BAND);
    let s = eos.saturation_at_temperature(t).unwrap();
    assert!(s.liquid.density_kg_per_m3 > s.vapor.density_kg_per_m3);
    assert!(s.pressure_pa < eos.critical_pressure_pa());
    // Inside it: a precise error.
    let err = eos
        .saturation_at_temperature(tc * (1.0 - 0.1 * NEAR_CRITICAL_BAND))
        .unwrap_err();
    assert!(
        matches!(err.kind(), ErrorKind::NearCritical { .. }),
        "{err}"
    );
    assert!(err.to_string().contains("temperature_k"), "{err}");
}

/// A volume translation (here the fitted temperature-dependent one) changes densities but
/// not phase equilibrium.
#[test]
fn volume_translation_leaves_equilibrium_unchanged() {
    let f = util::isobutane();
    let fitted = crate::accuracy::fitted(&f, Model::PengRobinson1978);
    let mut unshifted = fitted.clone();
    unshifted.fits[0].volume_shift = VolumeShift::default();
    let a = PureEos::new(&fitted, Model::PengRobinson1978).unwrap();
    let b = PureEos::new(&unshifted, Model::PengRobinson1978).unwrap();
    assert!(a.volume_shift().depends_on_temperature());
    for t in [200.0, 300.0, 400.0] {
        let (sa, sb) = (
            a.saturation_at_temperature(t).unwrap(),
            b.saturation_at_temperature(t).unwrap(),
        );
        assert!((sa.pressure_pa / sb.pressure_pa - 1.0).abs() < 1e-12);
        let dh = sa.enthalpy_of_vaporization_j_per_mol / sb.enthalpy_of_vaporization_j_per_mol;
        assert!((dh - 1.0).abs() < 1e-12);
        assert!(sa.liquid.density_kg_per_m3 != sb.liquid.density_kg_per_m3);
    }
}

/// With a temperature-dependent translation the reported h, s, cp and v still obey the
/// thermodynamic identities (Maxwell relations, e.g. Poling, Prausnitz and O'Connell 2001,
/// ch. 6): cp = (dh/dT)_P, cp / T = (ds/dT)_P, (ds/dP)_T = -(dv/dT)_P and
/// (dh/dP)_T = v - T (dv/dT)_P, by central differences, in the liquid and the vapor.
#[test]
fn translated_properties_obey_the_thermodynamic_identities() {
    let f = util::propane();
    let mut constants = crate::accuracy::fitted(&f, Model::PengRobinson1978);
    constants.ideal_gas_cp = Some(util::propane_ideal_gas_from_table());
    let eos = PureEos::new(&constants, Model::PengRobinson1978)
        .unwrap()
        .with_reference(ReferenceState::LiquidAtZeroCelsius)
        .unwrap();
    assert!(eos.volume_shift().depends_on_temperature());
    let props = |t: f64, p: f64| eos.phase_properties(t, p, eos.stable_root(t, p));
    // (T, P): compressed liquid at 5 MPa in the blend's steepest part, saturated-liquid
    // region, and vapor.
    for (t, p) in [(250.0, 5.0e6), (300.0, 2.0e6), (320.0, 0.5e6)] {
        let (dt, dp) = (1e-3, p * 1e-5);
        let (lo, hi, at) = (props(t - dt, p), props(t + dt, p), props(t, p));
        let h = |x: &binodal_eos::PhaseProperties| x.enthalpy_j_per_mol.unwrap();
        let s_of = |x: &binodal_eos::PhaseProperties| x.entropy_j_per_mol_k.unwrap();
        let cp = at.isobaric_heat_capacity_j_per_mol_k.unwrap();
        let dh_dt = (h(&hi) - h(&lo)) / (2.0 * dt);
        let ds_dt = (s_of(&hi) - s_of(&lo)) / (2.0 * dt);
        let dv_dt = (hi.molar_volume_m3_per_mol - lo.molar_volume_m3_per_mol) / (2.0 * dt);
        assert!(
            (dh_dt / cp - 1.0).abs() < 1e-5,
            "{t} K {p} Pa: dh/dT {dh_dt} cp {cp}"
        );
        assert!(
            (ds_dt * t / cp - 1.0).abs() < 1e-5,
            "{t} K: T ds/dT {} cp {cp}",
            ds_dt * t
        );
        let (plo, phi) = (props(t, p - dp), props(t, p + dp));
        let ds_dp = (s_of(&phi) - s_of(&plo)) / (2.0 * dp);
        let dh_dp = (h(&phi) - h(&plo)) / (2.0 * dp);
        assert!(
            (ds_dp / -dv_dt - 1.0).abs() < 1e-4,
            "{t} K: ds/dP {ds_dp} -dv/dT {dv_dt}"
        );
        let expected = at.molar_volume_m3_per_mol - t * dv_dt;
        assert!(
            (dh_dp / expected - 1.0).abs() < 1e-4,
            "{t} K: dh/dP {dh_dp} {expected}"
        );
    }
}
