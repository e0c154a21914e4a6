//! Every catalogue fluid under every model gets a precomputed saturation curve whose deviation
//! from the full solver, recorded at its build check points and re-checked here at points of
//! our own, stays below the engine's `CURVE_TOLERANCE` (1e-9 relative in pressure) outside the
//! near-critical band (`CURVE_CRITICAL_BAND`). The server builds exactly these curves at
//! start-up.

use binodal_eos::{CURVE_CRITICAL_BAND, CURVE_TOLERANCE, Model, SolvePath};
use binodal_fluids::Catalogue;

#[test]
fn every_catalogue_fluid_and_model_has_a_curve_within_tolerance() {
    let mut curves = 0;
    for record in Catalogue::builtin().fluids() {
        for model in Model::ALL {
            let name = format!("{} under {}", record.id, model.id());
            let plain = record.eos(model).unwrap_or_else(|e| panic!("{name}: {e}"));
            let curved = plain
                .clone()
                .with_saturation_curve()
                .unwrap_or_else(|e| panic!("{name}: no curve: {e}"));
            let curve = curved.saturation_curve().expect("attached");
            let report = curve.report();
            assert!(
                report.max_pressure_deviation < CURVE_TOLERANCE
                    && report.max_inverse_pressure_deviation < CURVE_TOLERANCE,
                "{name}: {report:?}"
            );
            // The curve covers the whole saturation range but the band.
            let (t_lo, t_hi) = curve.temperature_range_k();
            assert_eq!(t_lo, plain.minimum_temperature_k(), "{name}");
            let top = plain.critical_temperature_k() * (1.0 - CURVE_CRITICAL_BAND);
            assert!((t_hi / top - 1.0).abs() < 1e-15, "{name}");
            // Seven temperatures of our own, neither nodes nor build check points.
            for k in 0..7 {
                let f = ((k as f64 + 0.5) * 0.618_033_988_7).fract();
                let t = t_lo + (t_hi - t_lo) * f;
                let a = curved.saturation_at_temperature(t).expect("curve");
                let b = plain.saturation_at_temperature(t).expect("solver");
                assert_eq!(a.path, SolvePath::Curve, "{name} at {t} K");
                let dev = (a.pressure_pa / b.pressure_pa - 1.0).abs();
                assert!(dev < CURVE_TOLERANCE, "{name} at {t} K: {dev:e}");
            }
            curves += 1;
        }
    }
    // 37 catalogue fluids, 5 models each.
    assert_eq!(curves, 5 * Catalogue::builtin().fluids().len());
    assert!(curves >= 5 * 37);
}
