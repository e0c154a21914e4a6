//! Precomputed saturation curves against the full solver they are built from: the recorded
//! and independently re-checked deviations, classification through the curve against the
//! full solve on a grid, saturated phases, the near-critical band and the fallbacks.
//!
//! The reference in every comparison is the same engine without a curve (the argmin solve);
//! the limit is the crate's `CURVE_TOLERANCE` (1e-9 relative in pressure), the accuracy the
//! curves promise.

use crate::util;
use binodal_eos::{
    CURVE_CRITICAL_BAND, CURVE_TOLERANCE, Model, NEAR_CRITICAL_BAND, Phase, PureEos,
    SaturationCurve, SolvePath,
};
use std::sync::Arc;

/// The five test fluids under every model, without and with a curve.
fn engines() -> Vec<(String, PureEos, PureEos)> {
    let mut out = Vec::new();
    for f in util::all() {
        for model in Model::ALL {
            let plain = PureEos::new(&f.constants, model).expect("engine");
            let curved = plain.clone().with_saturation_curve().expect("curve");
            out.push((format!("{} {model:?}", f.constants.name), plain, curved));
        }
    }
    out
}

fn relative(a: f64, b: f64) -> f64 {
    (a / b - 1.0).abs()
}

#[test]
fn recorded_and_rechecked_deviations_stay_below_the_tolerance() {
    for (name, plain, curved) in engines() {
        let curve = curved.saturation_curve().expect("attached");
        let report = curve.report();
        assert!(report.check_points >= 2 * 16, "{name}: {report:?}");
        assert!(
            report.max_pressure_deviation < CURVE_TOLERANCE
                && report.max_inverse_pressure_deviation < CURVE_TOLERANCE,
            "{name}: {report:?}"
        );
        // Our own check points, none of them a node or a build check point: 61 temperatures
        // at irrational fractions of the range, and the two ends.
        let (t_lo, t_hi) = curve.temperature_range_k();
        assert_eq!(t_lo, plain.minimum_temperature_k(), "{name}");
        assert!(
            relative(
                t_hi,
                plain.critical_temperature_k() * (1.0 - CURVE_CRITICAL_BAND)
            ) < 1e-15,
            "{name}"
        );
        let temperatures = (0..61)
            .map(|k| t_lo + (t_hi - t_lo) * ((k as f64 + 0.5) * 0.618_033_988_7).fract())
            .chain([t_lo, t_hi]);
        for t in temperatures {
            let p_curve = curved.saturation_pressure(t).expect("curve pressure");
            let p_solver = plain.saturation_pressure(t).expect("solver pressure");
            let dev = relative(p_curve, p_solver);
            assert!(dev < CURVE_TOLERANCE, "{name} at {t} K: {dev:e}");
        }
        // The inverse: the solver's vapor pressure at the curve's saturation temperature is
        // the pressure asked for, and the two temperatures agree within 1e-6 K (1e-9 in
        // pressure is under 1.3e-7 K for these fluids: d ln P / d ln T >= 5 and T < 650 K).
        let (p_lo, p_hi) = curve.pressure_range_pa();
        for k in 0..13 {
            let f = ((k as f64 + 0.5) * 0.618_033_988_7).fract();
            let p = p_lo * (p_hi / p_lo).powf(f);
            let t_curve = curved.saturation_temperature(p).expect("curve temperature");
            let dev = relative(plain.saturation_pressure(t_curve).expect("solver"), p);
            assert!(dev < CURVE_TOLERANCE, "{name} at {p} Pa: {dev:e}");
            let t_solver = plain.saturation_temperature(p).expect("solver temperature");
            assert!((t_curve - t_solver).abs() < 1e-6, "{name} at {p} Pa");
        }
    }
}

#[test]
fn classification_through_the_curve_equals_the_full_solve_on_a_grid() {
    for f in util::all() {
        let plain = PureEos::new(&f.constants, Model::PengRobinson1978).expect("engine");
        let curved = plain.clone().with_saturation_curve().expect("curve");
        let name = &f.constants.name;
        let (tc, pc) = (plain.critical_temperature_k(), plain.critical_pressure_pa());
        let (t_lo, _) = plain.state_temperature_range_k();
        let mut temperatures: Vec<f64> = (0..24)
            .map(|i| t_lo + (1.3 * tc - t_lo) * i as f64 / 23.0)
            .collect();
        // Inside the curve's band, inside the solver's band, at Tc.
        temperatures.extend([
            tc * (1.0 - 0.5 * CURVE_CRITICAL_BAND),
            tc * (1.0 - 0.5 * NEAR_CRITICAL_BAND),
            tc,
        ]);
        let mut checked_curve = 0;
        for &t in &temperatures {
            let mut pressures: Vec<f64> = (0..24)
                .map(|j| 1e-4 * pc * (3e4f64).powf(j as f64 / 23.0))
                .collect();
            // Either side of the saturation tolerance (1e-6), and on the line.
            if let Ok(psat) = plain.saturation_pressure(t) {
                pressures.extend([psat * (1.0 + 3e-6), psat * (1.0 - 3e-6), psat]);
            }
            for p in pressures {
                match (curved.state(t, p), plain.state(t, p)) {
                    (Ok(a), Ok(b)) => {
                        let at = format!("{name} at {t} K, {p} Pa");
                        assert_eq!(a.phase, b.phase, "{at}");
                        assert_eq!(a.properties, b.properties, "{at}");
                        assert_eq!(b.path, SolvePath::FullSolve, "{at}");
                        let (ma, mb) = (a.margins, b.margins);
                        assert_eq!(ma.freezing_margin_k, mb.freezing_margin_k, "{at}");
                        match (ma.saturation_pressure_pa, mb.saturation_pressure_pa) {
                            (Some(x), Some(y)) => assert!(relative(x, y) < CURVE_TOLERANCE),
                            (x, y) => assert_eq!(x, y, "{at}"),
                        }
                        match (ma.saturation_temperature_k, mb.saturation_temperature_k) {
                            (Some(x), Some(y)) => assert!((x - y).abs() < 1e-6, "{at}"),
                            (x, y) => assert_eq!(x, y, "{at}"),
                        }
                        assert_eq!(ma.subcooling_k.is_some(), mb.subcooling_k.is_some());
                        assert_eq!(ma.superheat_k.is_some(), mb.superheat_k.is_some());
                        // The curve answers wherever it covers every margin the state needs.
                        let covered = curved.saturation_curve().is_some_and(|c| {
                            let (t0, t1) = c.temperature_range_k();
                            let (p0, p1) = c.pressure_range_pa();
                            let t_ok = ma.saturation_pressure_pa.is_none() || t <= t1 && t >= t0;
                            let p_ok = ma.saturation_temperature_k.is_none() || p <= p1 && p >= p0;
                            let any = ma.saturation_pressure_pa.is_some()
                                || ma.saturation_temperature_k.is_some();
                            any && t_ok && p_ok
                        });
                        let expected = if covered {
                            checked_curve += 1;
                            SolvePath::Curve
                        } else {
                            SolvePath::FullSolve
                        };
                        assert_eq!(a.path, expected, "{at}");
                    }
                    (Err(a), Err(b)) => assert_eq!(a, b, "{name} at {t} K, {p} Pa"),
                    (a, b) => panic!("{name} at {t} K, {p} Pa: curve {a:?}, solver {b:?}"),
                }
            }
        }
        assert!(
            checked_curve > 200,
            "{name}: only {checked_curve} states on the curve"
        );
    }
}

#[test]
fn saturated_phases_through_the_curve_match_the_full_solve() {
    for f in util::all() {
        let plain = PureEos::new(&f.constants, Model::PengRobinson1978).expect("engine");
        let curved = plain.clone().with_saturation_curve().expect("curve");
        let name = &f.constants.name;
        let (t_lo, t_hi) = curved
            .saturation_curve()
            .expect("curve")
            .temperature_range_k();
        for k in 0..40 {
            let t = t_lo + (t_hi - t_lo) * ((k as f64 + 0.5) * 0.618_033_988_7).fract();
            let a = curved.saturation_at_temperature(t).expect("curve");
            let b = plain.saturation_at_temperature(t).expect("solver");
            assert_eq!(a.path, SolvePath::Curve, "{name} at {t} K");
            assert_eq!(b.path, SolvePath::FullSolve, "{name} at {t} K");
            assert!(relative(a.pressure_pa, b.pressure_pa) < CURVE_TOLERANCE);
            // Densities and the enthalpy of vaporization follow the pressure's deviation,
            // amplified by the phases' compressibility, which grows toward the critical
            // point; 1e-8 allows ten times the pressure tolerance up to the curve's top
            // (1 - T/Tc = 1e-4).
            for (x, y, what) in [
                (
                    a.liquid.density_kg_per_m3,
                    b.liquid.density_kg_per_m3,
                    "liquid density",
                ),
                (
                    a.vapor.density_kg_per_m3,
                    b.vapor.density_kg_per_m3,
                    "vapor density",
                ),
                (
                    a.enthalpy_of_vaporization_j_per_mol,
                    b.enthalpy_of_vaporization_j_per_mol,
                    "enthalpy of vaporization",
                ),
            ] {
                assert!(relative(x, y) < 1e-8, "{name} {what} at {t} K: {x} vs {y}");
            }
            // And at the pressure: the same saturation temperature within 1e-6 K.
            let a = curved.saturation_at_pressure(b.pressure_pa).expect("curve");
            assert_eq!(a.path, SolvePath::Curve, "{name} at {} Pa", b.pressure_pa);
            assert!((a.temperature_k - t).abs() < 1e-6, "{name} at {t} K");
            assert!(relative(a.pressure_pa, b.pressure_pa) < CURVE_TOLERANCE);
        }
    }
}

#[test]
fn the_band_and_engines_without_a_curve_use_the_full_solver() {
    let f = util::propane();
    let plain = PureEos::new(&f.constants, Model::PengRobinson1978).expect("engine");
    let curved = plain.clone().with_saturation_curve().expect("curve");
    let tc = plain.critical_temperature_k();
    // Inside the curve's band but below the solver's: the full solver, the same answer.
    let t = tc * (1.0 - 0.5 * CURVE_CRITICAL_BAND);
    let a = curved.saturation_at_temperature(t).expect("band");
    let b = plain.saturation_at_temperature(t).expect("band");
    assert_eq!(a.path, SolvePath::FullSolve);
    assert_eq!(a, b);
    assert_eq!(
        curved.saturation_pressure(t).unwrap(),
        plain.saturation_pressure(t).unwrap()
    );
    let p = b.pressure_pa;
    assert_eq!(
        curved.saturation_temperature(p).unwrap(),
        plain.saturation_temperature(p).unwrap()
    );
    assert_eq!(
        curved.state(t, 1.01 * p).unwrap().path,
        SolvePath::FullSolve
    );
    // Without a curve, everything is solved.
    assert!(plain.saturation_curve().is_none());
    assert_eq!(
        plain.saturation_at_temperature(250.0).unwrap().path,
        SolvePath::FullSolve
    );
    assert_eq!(plain.state(250.0, 1e6).unwrap().path, SolvePath::FullSolve);
    assert_eq!(curved.state(250.0, 1e6).unwrap().path, SolvePath::Curve);
    // Above Tc and the curve's pressures: no saturation quantity, so no curve.
    assert_eq!(
        curved.state(1.2 * tc, 10e6).unwrap().path,
        SolvePath::FullSolve
    );
    // Refusals are the same with or without a curve.
    for t in [
        plain.minimum_temperature_k() - 1.0,
        tc * (1.0 - 0.5 * NEAR_CRITICAL_BAND),
        tc + 1.0,
        f64::NAN,
        -3.0,
    ] {
        assert_eq!(
            curved.saturation_pressure(t),
            plain.saturation_pressure(t),
            "{t}"
        );
        assert_eq!(
            curved.saturation_at_temperature(t),
            plain.saturation_at_temperature(t),
            "{t}"
        );
    }
    // A curve is shared between engines that differ only in reference state.
    let curve = Arc::clone(curved.saturation_curve().unwrap());
    let shared = plain.clone().with_shared_curve(Arc::clone(&curve));
    assert!(Arc::ptr_eq(shared.saturation_curve().unwrap(), &curve));
    assert_eq!(
        shared.saturation_pressure(250.0).unwrap(),
        curved.saturation_pressure(250.0).unwrap()
    );
    // The curve can be built on its own, and it reports the same accuracy.
    let own = SaturationCurve::for_pure(&plain).expect("curve");
    assert_eq!(own.report(), curve.report());
    // Where the three-root window is open, a curve state is liquid on one side and vapor on
    // the other.
    let psat = curved.saturation_pressure(300.0).unwrap();
    assert_eq!(
        curved.state(300.0, psat * 1.001).unwrap().phase,
        Phase::SubcooledLiquid
    );
    assert_eq!(
        curved.state(300.0, psat * 0.999).unwrap().phase,
        Phase::SuperheatedVapor
    );
}
