//! Solver properties over the whole range: round trips, coverage, the near-critical band,
//! volume translation.

use crate::util;
use binodal_eos::{ErrorKind, Model, NEAR_CRITICAL_BAND, PureEos};

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

/// A Peneloux shift changes densities but not phase equilibrium.
#[test]
fn volume_translation_leaves_equilibrium_unchanged() {
    let f = util::isobutane();
    let fitted = crate::accuracy::fitted(&f, Model::PengRobinson1978);
    let mut unshifted = fitted.clone();
    unshifted.fits[0].volume_shift_m3_per_mol = 0.0;
    let a = PureEos::new(&fitted, Model::PengRobinson1978).unwrap();
    let b = PureEos::new(&unshifted, Model::PengRobinson1978).unwrap();
    assert!(a.volume_shift_m3_per_mol() != 0.0);
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
