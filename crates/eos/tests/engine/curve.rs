//! Precomputed saturation curves against the full solver they are built from: the recorded
//! and independently re-checked deviations, classification through the curve against the
//! full solve on a grid, saturated phases, the near-critical band and the fallbacks; then the
//! same for blends' bubble and dew lines (R-410A, R-407C, propane/isobutane).
//!
//! The reference in every comparison is the same engine without a curve (the argmin solve);
//! the limit is the crate's `CURVE_TOLERANCE` (1e-9 relative in pressure), the accuracy the
//! curves promise.

use crate::util;
use binodal_eos::{
    Alpha, BOUNDARY_CURVE_BAND, BOUNDARY_LIMIT_RESOLUTION_K, BoundaryCurves, BoundaryKind,
    CURVE_CRITICAL_BAND, CURVE_TOLERANCE, FluidConstants, Mixture, Model, NEAR_CRITICAL_BAND,
    Phase, PhaseBoundaryPoint, PureEos, SaturationCurve, SolvePath,
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
        // A pure fluid's line has no breakpoint below its critical temperature.
        assert_eq!(report.breakpoints, 0, "{name}");
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

// ---------------------------------------------------------------------------------------------
// Blend lines: a mixture's bubble and dew lines as precomputed curves.

/// R-32 (difluoromethane): the catalogue's sourced constants (crates/fluids/data/hfc.toml):
/// molar mass from the standard atomic weights, Tc 351.37 K and Pc 5.799 MPa from the
/// critical-property compilation of Biswas, Leenhouts, Green et al. (J. Chem. Inf. Model.
/// 2023), acentric factor 0.277 (Yaws 2014), triple point 136.35 K (CRC Handbook 95th ed.,
/// melting point).
fn r32() -> FluidConstants {
    let mut f = FluidConstants::new("R-32", 0.052_023_386, 351.37, 5.799e6, 0.277);
    f.triple_point_temperature_k = Some(136.35);
    f
}

/// R-125 (pentafluoroethane), as `r32`: Tc 339.2 K, Pc 3.617 MPa (Biswas et al. 2023
/// compilation), acentric factor 0.305 (Yaws 2014), triple point 172.55 K (CRC Handbook 95th
/// ed., melting point), molar mass from the standard atomic weights.
fn r125() -> FluidConstants {
    let mut f = FluidConstants::new("R-125", 0.120_021_356, 339.2, 3.617e6, 0.305);
    f.triple_point_temperature_k = Some(172.55);
    f
}

/// A mixture of `parts` (constants, mass fraction) under `model`, with `k_ij = 0`.
fn by_mass(parts: &[(FluidConstants, f64)], model: Model) -> Mixture {
    let components: Vec<PureEos> = parts
        .iter()
        .map(|(f, _)| PureEos::new(f, model).expect("component"))
        .collect();
    let mass: Vec<f64> = parts.iter().map(|p| p.1).collect();
    let x = Mixture::mole_fractions_from_mass(&components, &mass);
    Mixture::new(components, x, None).expect("mixture")
}

/// The test blends, each without and with its lines. Nominal compositions by mass (ASHRAE
/// Standard 34, as the catalogue's blends.toml records them, from memory): R-410A is
/// 50/50, R-407C is R-32/R-125/R-134a 23/25/52. The propane/isobutane pair is equimolar, with
/// Mathias-Copeman alpha functions fitted to the NIST tables (as in `mixtures`), so that
/// propane's critical temperature is a breakpoint inside the lines' range.
fn blends() -> Vec<(&'static str, Mixture, Mixture)> {
    let model = Model::PengRobinson1978;
    let r410a = by_mass(&[(r32(), 0.5), (r125(), 0.5)], model);
    let r407c = by_mass(
        &[
            (r32(), 0.23),
            (r125(), 0.25),
            (util::r134a().constants, 0.52),
        ],
        model,
    );
    let pair: Vec<PureEos> = [util::propane(), util::isobutane()]
        .iter()
        .map(|f| PureEos::new(&crate::accuracy::fitted(f, model), model).expect("fitted"))
        .collect();
    let hydrocarbons = Mixture::new(pair, vec![0.5, 0.5], None).expect("mixture");
    [
        ("R-410A", r410a),
        ("R-407C", r407c),
        ("propane/isobutane", hydrocarbons),
    ]
    .into_iter()
    .map(|(name, plain)| {
        let curved = plain.clone().with_boundary_curves().expect("lines");
        (name, plain, curved)
    })
    .collect()
}

/// The solver's value of `kind` at `t`: the pressure of the full bubble- or dew-point solve.
fn solved_pressure(m: &Mixture, kind: BoundaryKind, t: f64) -> Result<f64, binodal_eos::Error> {
    match kind {
        BoundaryKind::Bubble => m.bubble_at_temperature(t).map(|b| b.pressure_pa),
        BoundaryKind::Dew => m.dew_at_temperature(t).map(|d| d.pressure_pa),
    }
}

/// A line's pressure at `t` and temperature at `p` through the public lookups.
fn line_pressure(m: &Mixture, kind: BoundaryKind, t: f64) -> (f64, SolvePath) {
    match kind {
        BoundaryKind::Bubble => m.bubble_pressure(t),
        BoundaryKind::Dew => m.dew_pressure(t),
    }
    .expect("pressure")
}

fn line_temperature(m: &Mixture, kind: BoundaryKind, p: f64) -> (f64, SolvePath) {
    match kind {
        BoundaryKind::Bubble => m.bubble_temperature(p),
        BoundaryKind::Dew => m.dew_temperature(p),
    }
    .expect("temperature")
}

fn point_at_pressure(m: &Mixture, kind: BoundaryKind, p: f64) -> PhaseBoundaryPoint {
    match kind {
        BoundaryKind::Bubble => m.bubble_at_pressure(p),
        BoundaryKind::Dew => m.dew_at_pressure(p),
    }
    .expect("point at pressure")
}

/// Between the nodes, the lines agree with the solver to the curve tolerance in pressure (1e-9
/// relative, `CURVE_TOLERANCE`), forward and inverse; the recorded deviations say so too; the
/// range runs from the mixture's minimum temperature to the band below the convergence limit;
/// and a point at a pressure through the line carries the solver's own incipient composition
/// at the line's temperature.
#[test]
fn blend_lines_follow_the_solver_between_their_nodes() {
    for (name, plain, curved) in blends() {
        let curves = curved.boundary_curves().expect("attached");
        for kind in [BoundaryKind::Bubble, BoundaryKind::Dew] {
            let line = curves.line(kind);
            let at = |what: &str| format!("{name} {} line {what}", kind.id());
            let report = line.report();
            assert!(
                report.max_pressure_deviation < CURVE_TOLERANCE
                    && report.max_inverse_pressure_deviation < CURVE_TOLERANCE,
                "{}: {report:?}",
                at("report")
            );
            // The range: minimum temperature to the band below the convergence limit, where
            // the solve still converges.
            let (t_lo, t_hi) = line.temperature_range_k();
            let limit = curves.convergence_limit_k(kind);
            assert_eq!(t_lo, plain.minimum_temperature_k(), "{}", at("range"));
            assert!(
                relative(t_hi, limit * (1.0 - BOUNDARY_CURVE_BAND)) < 1e-15,
                "{}",
                at("range")
            );
            // The limit: the solve converges there and no longer one resolution step above.
            assert!(
                solved_pressure(&plain, kind, limit).is_ok(),
                "{}",
                at("limit")
            );
            assert!(
                solved_pressure(&plain, kind, limit + BOUNDARY_LIMIT_RESOLUTION_K).is_err(),
                "{}",
                at("limit")
            );
            // A breakpoint at the critical temperature of each component whose
            // Mathias-Copeman alpha changes form there, where it lies inside the range.
            let breakpoints = plain
                .components()
                .iter()
                .filter(|c| matches!(c.alpha(), Alpha::MathiasCopeman { .. }))
                .filter(|c| (t_lo..t_hi).contains(&c.critical_temperature_k()))
                .count();
            assert_eq!(report.breakpoints, breakpoints, "{}", at("breakpoints"));
            assert!(report.pieces > breakpoints, "{}", at("pieces"));
            // 61 temperatures at irrational fractions of the range (no node or build check
            // point among them), and both ends.
            let temperatures = (0..61)
                .map(|k| t_lo + (t_hi - t_lo) * ((k as f64 + 0.5) * 0.618_033_988_7).fract())
                .chain([t_lo, t_hi]);
            for t in temperatures {
                let (p_line, path) = line_pressure(&curved, kind, t);
                assert_eq!(path, SolvePath::Curve, "{}", at(&format!("at {t} K")));
                let p_solver = solved_pressure(&plain, kind, t).expect("solver");
                let dev = relative(p_line, p_solver);
                assert!(
                    dev < CURVE_TOLERANCE,
                    "{}: {dev:e}",
                    at(&format!("at {t} K"))
                );
                // Without lines the same call is the solver's answer, exactly.
                assert_eq!(
                    line_pressure(&plain, kind, t),
                    (p_solver, SolvePath::FullSolve)
                );
            }
            // The inverse: the solver's pressure at the line's temperature is the pressure
            // asked for, and the temperatures agree within 1e-6 K (1e-9 in pressure is under
            // 1e-7 K here: d ln P / d ln T > 5 below 400 K).
            let (p_lo, p_hi) = line.pressure_range_pa();
            for k in 0..17 {
                let f = ((k as f64 + 0.5) * 0.618_033_988_7).fract();
                let p = p_lo * (p_hi / p_lo).powf(f);
                let at_p = at(&format!("at {p} Pa"));
                let (t_line, path) = line_temperature(&curved, kind, p);
                assert_eq!(path, SolvePath::Curve, "{at_p}");
                let dev = relative(solved_pressure(&plain, kind, t_line).expect("solver"), p);
                assert!(dev < CURVE_TOLERANCE, "{at_p}: {dev:e}");
                let (t_solver, path) = line_temperature(&plain, kind, p);
                assert_eq!(path, SolvePath::FullSolve, "{at_p}");
                assert!((t_line - t_solver).abs() < 1e-6, "{at_p}");
                // The point at this pressure: the line's temperature, then the solver's point
                // there (pressure, incipient composition, bulk phase), exactly.
                let point = point_at_pressure(&curved, kind, p);
                assert_eq!(point.path, SolvePath::Curve, "{at_p}");
                assert_eq!(point.temperature_k, t_line, "{at_p}");
                let solved = match kind {
                    BoundaryKind::Bubble => plain.bubble_at_temperature(t_line),
                    BoundaryKind::Dew => plain.dew_at_temperature(t_line),
                }
                .expect("solver");
                assert_eq!(point.pressure_pa, solved.pressure_pa, "{at_p}");
                assert_eq!(
                    point.incipient_mole_fractions, solved.incipient_mole_fractions,
                    "{at_p}"
                );
                assert_eq!(point.bulk, solved.bulk, "{at_p}");
                // And the full solve at the pressure lands on the same composition: the two
                // temperatures differ by under 1e-6 K, and the incipient fractions change by
                // well under 0.01 per kelvin along these lines, so by under 1e-8.
                let full = point_at_pressure(&plain, kind, p);
                assert_eq!(full.path, SolvePath::FullSolve, "{at_p}");
                for (a, b) in point
                    .incipient_mole_fractions
                    .iter()
                    .zip(&full.incipient_mole_fractions)
                {
                    assert!((a - b).abs() < 1e-8, "{at_p}: {a} vs {b}");
                }
            }
        }
    }
}

/// A small deterministic generator for the random states (xorshift64*).
struct Draws(u64);

impl Draws {
    fn unit(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        (self.0.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// At random (T, P) away from the bubble and dew lines (more than 1e-6 relative in pressure
/// from both, a thousand times the curve tolerance), the classification through the lines is
/// the full solve's: the same phase, the same flash, margins within the curve tolerance; and
/// the path is the curve exactly where the lines cover all four bubble and dew values.
#[test]
fn blend_classification_through_the_lines_equals_the_full_solve() {
    let mut draws = Draws(0x9e37_79b9_7f4a_7c15);
    for (name, plain, curved) in blends() {
        let curves = curved.boundary_curves().expect("attached");
        let t_min = plain.minimum_temperature_k();
        let tc_max = plain
            .components()
            .iter()
            .map(|c| c.critical_temperature_k())
            .fold(0.0, f64::max);
        let pc_max = plain
            .components()
            .iter()
            .map(|c| c.critical_pressure_pa())
            .fold(0.0, f64::max);
        let p_floor = plain.dew_pressure(t_min).expect("dew at the minimum").0 / 10.0;
        let covers = |t: f64, p: f64| {
            [BoundaryKind::Bubble, BoundaryKind::Dew].iter().all(|&k| {
                let (t0, t1) = curves.line(k).temperature_range_k();
                let (p0, p1) = curves.line(k).pressure_range_pa();
                (t0..=t1).contains(&t) && (p0..=p1).contains(&p)
            })
        };
        // Random states over the whole range, then one state in the middle of the envelope
        // (geometric mean of the bubble and dew pressures) at each of 20 temperatures of the
        // lines' range: R-410A's envelope is too thin (a glide of about 0.1 K) for random
        // states to land in it.
        let (t_lo, t_hi) = curves.line(BoundaryKind::Dew).temperature_range_k();
        let inside: Vec<(f64, f64)> = (0..20)
            .map(|k| {
                let t = t_lo + (t_hi - t_lo) * (k as f64 + 0.5) / 20.0;
                let pb = plain.bubble_pressure(t).expect("bubble").0;
                let pd = plain.dew_pressure(t).expect("dew").0;
                (t, (pb * pd).sqrt())
            })
            .collect();
        let (mut compared, mut on_curve, mut two_phase) = (0, 0, 0);
        while compared < 150 + inside.len() {
            let (t, p) = match inside.get(compared.saturating_sub(150)) {
                Some(&state) if compared >= 150 => state,
                _ => (
                    t_min + (1.1 * tc_max - t_min) * draws.unit(),
                    p_floor * (1.5 * pc_max / p_floor).powf(draws.unit()),
                ),
            };
            let at = format!("{name} at {t} K, {p} Pa");
            let near_a_line = [plain.bubble_pressure(t), plain.dew_pressure(t)]
                .into_iter()
                .flatten()
                .any(|(pl, _)| relative(p, pl) <= 1e-6);
            if near_a_line {
                continue;
            }
            let (a, b) = match (curved.state(t, p), plain.state(t, p)) {
                (Ok(a), Ok(b)) => (a, b),
                (Err(a), Err(b)) => {
                    assert_eq!(a, b, "{at}");
                    continue;
                }
                (a, b) => panic!("{at}: lines {a:?}, solver {b:?}"),
            };
            compared += 1;
            assert_eq!(a.phase, b.phase, "{at}");
            assert_eq!(a.flash, b.flash, "{at}");
            assert_eq!(b.path, SolvePath::FullSolve, "{at}");
            for (x, y, what) in [
                (
                    a.bubble_pressure_pa,
                    b.bubble_pressure_pa,
                    "bubble pressure",
                ),
                (a.dew_pressure_pa, b.dew_pressure_pa, "dew pressure"),
            ] {
                match (x, y) {
                    (Some(x), Some(y)) => assert!(relative(x, y) < CURVE_TOLERANCE, "{at} {what}"),
                    (x, y) => assert_eq!(x, y, "{at} {what}"),
                }
            }
            for (x, y, what) in [
                (a.bubble_temperature_k, b.bubble_temperature_k, "bubble T"),
                (a.dew_temperature_k, b.dew_temperature_k, "dew T"),
                (a.subcooling_k, b.subcooling_k, "subcooling"),
                (a.superheat_k, b.superheat_k, "superheat"),
            ] {
                match (x, y) {
                    (Some(x), Some(y)) => assert!((x - y).abs() < 1e-6, "{at} {what}"),
                    (x, y) => assert_eq!(x, y, "{at} {what}"),
                }
            }
            let expected = if covers(t, p) {
                on_curve += 1;
                SolvePath::Curve
            } else {
                SolvePath::FullSolve
            };
            assert_eq!(a.path, expected, "{at}");
            if a.phase == Phase::TwoPhase {
                two_phase += 1;
            }
        }
        // The draws reach the lines' range often enough to mean something, and the states in
        // the middle of the envelope are two-phase.
        assert!(
            on_curve >= 50,
            "{name}: only {on_curve} states on the lines"
        );
        assert!(
            two_phase >= inside.len(),
            "{name}: only {two_phase} two-phase states"
        );
    }
}

/// Above the lines' range (the band below the convergence limit) and without lines the solver
/// answers, with the same values and refusals; lines are shared between mixtures; a mixture of
/// one component takes the pure fluid's saturation curve instead.
#[test]
fn blend_lines_leave_the_band_and_the_rest_to_the_solver() {
    let (_, plain, curved) = blends().swap_remove(0);
    let curves = Arc::clone(curved.boundary_curves().expect("attached"));
    // In the band: between the top of the line and its convergence limit.
    for kind in [BoundaryKind::Bubble, BoundaryKind::Dew] {
        let (_, t_hi) = curves.line(kind).temperature_range_k();
        let t = 0.5 * (t_hi + curves.convergence_limit_k(kind));
        let solved = solved_pressure(&plain, kind, t).expect("the solve converges in the band");
        assert_eq!(
            line_pressure(&curved, kind, t),
            (solved, SolvePath::FullSolve)
        );
    }
    // A state in the band is solved, and says so.
    let (_, t_hi) = curves.line(BoundaryKind::Bubble).temperature_range_k();
    let t = 0.5 * (t_hi + curves.convergence_limit_k(BoundaryKind::Bubble));
    let p = 1.05 * plain.bubble_pressure(t).unwrap().0;
    assert_eq!(curved.state(t, p).unwrap().path, SolvePath::FullSolve);
    assert_eq!(
        curved.state(t, p).unwrap().phase,
        plain.state(t, p).unwrap().phase
    );
    // Refusals are the same with or without lines.
    let t_min = plain.minimum_temperature_k();
    for t in [t_min - 1.0, 400.0, f64::NAN, -3.0] {
        assert!(plain.bubble_pressure(t).is_err(), "{t}");
        assert_eq!(curved.bubble_pressure(t), plain.bubble_pressure(t), "{t}");
        assert_eq!(curved.dew_pressure(t), plain.dew_pressure(t), "{t}");
    }
    for t in [t_min - 1.0, f64::NAN, -3.0] {
        assert!(plain.state(t, 1e6).is_err(), "{t}");
        assert_eq!(curved.state(t, 1e6), plain.state(t, 1e6), "{t}");
    }
    let p_low = plain.bubble_pressure(t_min).unwrap().0;
    for p in [0.5 * p_low, 0.0, f64::INFINITY] {
        assert_eq!(
            curved.bubble_temperature(p),
            plain.bubble_temperature(p),
            "{p}"
        );
        assert_eq!(
            curved.bubble_at_pressure(p),
            plain.bubble_at_pressure(p),
            "{p}"
        );
    }
    // Without lines: every value solved.
    assert!(plain.boundary_curves().is_none());
    assert_eq!(plain.state(250.0, 1e6).unwrap().path, SolvePath::FullSolve);
    assert_eq!(curved.state(250.0, 1e6).unwrap().path, SolvePath::Curve);
    // Shared lines: the same answers from one build.
    let shared = plain
        .clone()
        .with_shared_boundary_curves(Arc::clone(&curves));
    assert!(Arc::ptr_eq(shared.boundary_curves().unwrap(), &curves));
    assert_eq!(shared.bubble_pressure(250.0), curved.bubble_pressure(250.0));
    // The lines rebuilt from the same mixture report the same accuracy.
    let again = BoundaryCurves::build(&plain).expect("lines");
    for kind in [BoundaryKind::Bubble, BoundaryKind::Dew] {
        assert_eq!(again.line(kind).report(), curves.line(kind).report());
    }
    // One component: no separate lines, the pure fluid's curve instead.
    let propane = PureEos::new(&util::propane().constants, Model::PengRobinson1978).unwrap();
    let isobutane = PureEos::new(&util::isobutane().constants, Model::PengRobinson1978).unwrap();
    let single = Mixture::new(vec![propane.clone(), isobutane], vec![1.0, 0.0], None).unwrap();
    let err = BoundaryCurves::build(&single).unwrap_err();
    assert_eq!(err.field(), Some("mole_fractions"), "{err}");
    let single = single.with_boundary_curves().expect("the pure curve");
    assert!(single.boundary_curves().is_none());
    let curved_propane = propane.with_saturation_curve().unwrap();
    assert_eq!(
        single.bubble_pressure(250.0).unwrap(),
        (
            curved_propane.saturation_pressure(250.0).unwrap(),
            SolvePath::Curve
        )
    );
    assert_eq!(single.dew_at_pressure(1e6).unwrap().path, SolvePath::Curve);
}
