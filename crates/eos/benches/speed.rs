//! Speed of the lookup paths, each beside a trivial floor timed in the same run:
//!
//! | benchmark | floor |
//! |---|---|
//! | cubic solve | evaluating the same cubic once (Horner) |
//! | saturation pressure through the curve | a bare Chebyshev evaluation of the curve's degree (Clenshaw), and the same-degree polynomial by Estrin's scheme as the curve evaluates it |
//! | saturation pressure through the full solve | the same Chebyshev evaluation |
//! | both saturated phases through the curve | a plain cubic solve |
//! | classification at (T, P) through the curve | a plain cubic solve |
//! | 10 000 classifications in one thread | 10 000 plain cubic solves |
//! | blend (R-407C) one-phase state at (T, P) through its bubble and dew lines | a plain cubic solve |
//! | blend (R-407C) one-phase state at (T, P) through the full solve | the lines |
//! | blend (R-407C) two-phase state at (T, P) through its lines (the split is the flash) | a plain cubic solve |
//! | blend (R-407C) two-phase state at (T, P) through the full solve | the lines |
//!
//! After criterion's own report the ratios are printed (mean time per call of each benchmark
//! over the mean of its floor, both measured in this run). Run with
//! `cargo bench -p binodal-eos --bench speed` (only the blends: `... --bench speed -- blend`).

use std::cell::RefCell;
use std::collections::BTreeMap;
use std::hint::black_box;
use std::time::{Duration, Instant};

use binodal_eos::{
    CURVE_DEGREE, FluidConstants, IdealGasCp, Mixture, Model, Phase, PureEos, ReferenceState,
    clenshaw, estrin, solve_cubic,
};
use criterion::Criterion;

/// Propane with the data a catalogue fluid has. Critical point, acentric factor and triple
/// point: Lemmon, McLinden and Wagner (2009) (from memory); ideal-gas cp polynomial: Poling,
/// Prausnitz and O'Connell (2001), Appendix A (from memory).
fn propane() -> FluidConstants {
    let mut f = FluidConstants::new("propane", 0.044_097, 369.89, 4.2512e6, 0.1521);
    f.triple_point_temperature_k = Some(85.525);
    f.heat_of_fusion_j_per_mol = Some(3_500.0);
    f.ideal_gas_cp = Some(IdealGasCp {
        coefficients: [3.847, 5.131e-3, 6.011e-5, -7.893e-8, 3.079e-11],
        t_min_k: 50.0,
        t_max_k: 1000.0,
    });
    f
}

/// R-407C: R-32/R-125/R-134a 23/25/52 by mass (ASHRAE Standard 34 nominal composition, from
/// memory, as the catalogue records it), Peng-Robinson 1978 with the generalized alpha and
/// `k_ij = 0`. Component constants as the catalogue's hfc.toml gives them: R-32 Tc 351.37 K,
/// Pc 5.799 MPa and R-125 Tc 339.2 K, Pc 3.617 MPa (critical-property compilation of Biswas,
/// Leenhouts, Green et al., J. Chem. Inf. Model. 2023), acentric factors 0.277, 0.305 and 0.327
/// (Yaws 2014); R-134a Tc 374.21 K, Pc 4.0591 MPa (NIST Chemistry WebBook); triple points
/// (CRC Handbook 95th ed.; R-134a: NIST Chemistry WebBook); molar masses from the standard
/// atomic weights.
fn r407c() -> Mixture {
    let fluid = |name: &str, m: f64, tc: f64, pc: f64, omega: f64, triple: f64| {
        let mut f = FluidConstants::new(name, m, tc, pc, omega);
        f.triple_point_temperature_k = Some(triple);
        PureEos::new(&f, Model::PengRobinson1978).expect("component")
    };
    let components = vec![
        fluid("R-32", 0.052_023_386, 351.37, 5.799e6, 0.277, 136.35),
        fluid("R-125", 0.120_021_356, 339.2, 3.617e6, 0.305, 172.55),
        fluid("R-134a", 0.102_030_893, 374.21, 4.0591e6, 0.327, 169.86),
    ];
    let x = Mixture::mole_fractions_from_mass(&components, &[0.23, 0.25, 0.52]);
    Mixture::new(components, x, None).expect("R-407C")
}

/// Mean time per call of every benchmark, accumulated over all of criterion's batches.
#[derive(Default)]
struct Tally(RefCell<BTreeMap<&'static str, (Duration, u64)>>);

impl Tally {
    fn bench<R>(
        &self,
        c: &mut Criterion,
        name: &'static str,
        calls: u64,
        mut f: impl FnMut() -> R,
    ) {
        c.bench_function(name, |b| {
            b.iter_custom(|iters| {
                let start = Instant::now();
                for _ in 0..iters {
                    black_box(f());
                }
                let elapsed = start.elapsed();
                let mut map = self.0.borrow_mut();
                let entry = map.entry(name).or_default();
                entry.0 += elapsed;
                entry.1 += iters * calls;
                elapsed
            })
        });
    }

    fn mean_ns(&self, name: &str) -> Option<f64> {
        let map = self.0.borrow();
        let (total, calls) = map.get(name)?;
        (*calls > 0).then(|| total.as_secs_f64() * 1e9 / *calls as f64)
    }

    fn print_ratio(&self, what: &str, floor: &str) {
        if let (Some(a), Some(b)) = (self.mean_ns(what), self.mean_ns(floor)) {
            println!(
                "ratio  {what}: {a:.1} ns per call / {floor}: {b:.1} ns = {:.2}",
                a / b
            );
        }
    }
}

const CUBIC: &str = "cubic solve";
const CUBIC_FLOOR: &str = "floor: cubic evaluated once";
const SAT_CURVE: &str = "saturation pressure, curve";
const SAT_SOLVE: &str = "saturation pressure, full solve";
const CHEB_FLOOR: &str = "floor: Chebyshev evaluation of the curve's degree";
const ESTRIN_FLOOR: &str = "floor: same-degree polynomial, Estrin's scheme";
const SATPHASES_CURVE: &str = "saturated phases at T, curve";
const SATPHASES_SOLVE: &str = "saturated phases at T, full solve";
const STATE_CURVE: &str = "classification at (T, P), curve";
const STATE_SOLVE: &str = "classification at (T, P), full solve";
const PLAIN_CUBIC: &str = "floor: plain cubic solve";
const BATCH: &str = "10 000 classifications, one thread";
const BATCH_FLOOR: &str = "floor: 10 000 plain cubic solves";
const BLEND_ONE_CURVE: &str = "blend one-phase state at (T, P), lines";
const BLEND_ONE_SOLVE: &str = "blend one-phase state at (T, P), full solve";
const BLEND_TWO_CURVE: &str = "blend two-phase state at (T, P), lines";
const BLEND_TWO_SOLVE: &str = "blend two-phase state at (T, P), full solve";

fn main() {
    let mut c = Criterion::default().configure_from_args();
    let tally = Tally::default();

    let solved = PureEos::new(&propane(), Model::PengRobinson1978)
        .and_then(|e| e.with_reference(ReferenceState::LiquidAtZeroCelsius))
        .expect("propane engine");
    let curved = solved
        .clone()
        .with_saturation_curve()
        .expect("propane curve");

    // Inputs cycle through a few values so that no call is a repeat of the last.
    let temps: Vec<f64> = (0..64).map(|i| 200.0 + 2.3 * i as f64).collect();
    let states: Vec<(f64, f64)> = (0..64)
        .map(|i| (220.0 + 2.1 * i as f64, 0.15e6 * 1.05f64.powi(i)))
        .collect();
    let cubics: Vec<(f64, f64, f64)> = (0..64)
        .map(|i| (-1.0 - 0.001 * i as f64, 0.2, -0.001))
        .collect();
    let coefficients: Vec<f64> = (0..=CURVE_DEGREE).map(|k| 0.5f64.powi(k as i32)).collect();

    let mut k = 0usize;
    let mut next = move || {
        k = (k + 1) & 63;
        k
    };

    tally.bench(&mut c, CUBIC, 1, || {
        let (a, b, d) = cubics[next()];
        solve_cubic(a, b, d)
    });
    tally.bench(&mut c, CUBIC_FLOOR, 1, || {
        let (a, b, d) = cubics[next()];
        let z = black_box(0.9);
        ((z + a) * z + b) * z + d
    });
    tally.bench(&mut c, CHEB_FLOOR, 1, || {
        let u = -0.9 + 0.028 * next() as f64;
        clenshaw(&coefficients, u)
    });
    let monomial: [f64; CURVE_DEGREE + 1] = std::array::from_fn(|k| coefficients[k]);
    tally.bench(&mut c, ESTRIN_FLOOR, 1, || {
        let u = -0.9 + 0.028 * next() as f64;
        estrin(&monomial, u)
    });
    tally.bench(&mut c, SAT_CURVE, 1, || {
        curved.saturation_pressure(temps[next()]).expect("in range")
    });
    tally.bench(&mut c, SAT_SOLVE, 1, || {
        solved.saturation_pressure(temps[next()]).expect("in range")
    });
    tally.bench(&mut c, PLAIN_CUBIC, 1, || {
        let (t, p) = states[next()];
        curved.compressibility_roots(t, p)
    });
    tally.bench(&mut c, SATPHASES_CURVE, 1, || {
        curved
            .saturation_at_temperature(temps[next()])
            .expect("in range")
    });
    tally.bench(&mut c, SATPHASES_SOLVE, 1, || {
        solved
            .saturation_at_temperature(temps[next()])
            .expect("in range")
    });
    tally.bench(&mut c, STATE_CURVE, 1, || {
        let (t, p) = states[next()];
        curved.state(t, p).expect("in range")
    });
    tally.bench(&mut c, STATE_SOLVE, 1, || {
        let (t, p) = states[next()];
        solved.state(t, p).expect("in range")
    });

    // 10 000 points spanning liquid, vapor and supercritical states.
    let points: Vec<(f64, f64)> = (0..10_000)
        .map(|i| {
            let t = 200.0 + 250.0 * ((i * 37) % 100) as f64 / 99.0;
            let p = 0.05e6 * (160.0f64).powf((i % 100) as f64 / 99.0);
            (t, p)
        })
        .collect();
    let mut phases = vec![0u8; points.len()];
    let mut densities = vec![0.0; points.len()];
    tally.bench(&mut c, BATCH, points.len() as u64, || {
        for (i, &(t, p)) in points.iter().enumerate() {
            let s = curved.state(t, p).expect("in range");
            phases[i] = s.phase as u8;
            densities[i] = s.properties.density_kg_per_m3;
        }
        densities[0]
    });
    tally.bench(&mut c, BATCH_FLOOR, points.len() as u64, || {
        for (i, &(t, p)) in points.iter().enumerate() {
            densities[i] = curved.compressibility_roots(t, p).largest();
        }
        densities[0]
    });

    // R-407C: 64 temperatures inside the lines' range (230-325 K); at each, a one-phase state
    // (alternately 30 % above the bubble pressure and 30 % below the dew pressure) and a
    // two-phase state (the geometric mean of the two). The same states through the lines and
    // through the full solve.
    let blend = r407c();
    let blend_lines = blend.clone().with_boundary_curves().expect("R-407C lines");
    let mut one_phase = Vec::new();
    let mut two_phase = Vec::new();
    for i in 0..64 {
        let t = 230.0 + 1.5 * i as f64;
        let pb = blend.bubble_pressure(t).expect("bubble").0;
        let pd = blend.dew_pressure(t).expect("dew").0;
        one_phase.push((t, if i % 2 == 0 { 1.3 * pb } else { 0.7 * pd }));
        two_phase.push((t, (pb * pd).sqrt()));
    }
    for (states, phases) in [
        (
            &one_phase,
            [Phase::SubcooledLiquid, Phase::SuperheatedVapor],
        ),
        (&two_phase, [Phase::TwoPhase, Phase::TwoPhase]),
    ] {
        for (i, &(t, p)) in states.iter().enumerate() {
            let lines = blend_lines.state(t, p).expect("in range");
            assert_eq!(lines.phase, phases[i % 2], "at {t} K, {p} Pa");
            assert_eq!(lines.phase, blend.state(t, p).expect("in range").phase);
        }
    }
    tally.bench(&mut c, BLEND_ONE_CURVE, 1, || {
        let (t, p) = one_phase[next()];
        blend_lines.state(t, p).expect("in range")
    });
    tally.bench(&mut c, BLEND_ONE_SOLVE, 1, || {
        let (t, p) = one_phase[next()];
        blend.state(t, p).expect("in range")
    });
    tally.bench(&mut c, BLEND_TWO_CURVE, 1, || {
        let (t, p) = two_phase[next()];
        blend_lines.state(t, p).expect("in range")
    });
    tally.bench(&mut c, BLEND_TWO_SOLVE, 1, || {
        let (t, p) = two_phase[next()];
        blend.state(t, p).expect("in range")
    });

    c.final_summary();
    println!();

    tally.print_ratio(CUBIC, CUBIC_FLOOR);
    tally.print_ratio(SAT_CURVE, CHEB_FLOOR);
    tally.print_ratio(SAT_CURVE, ESTRIN_FLOOR);
    tally.print_ratio(SAT_SOLVE, CHEB_FLOOR);
    tally.print_ratio(SAT_SOLVE, SAT_CURVE);
    tally.print_ratio(SATPHASES_CURVE, PLAIN_CUBIC);
    tally.print_ratio(SATPHASES_SOLVE, SATPHASES_CURVE);
    tally.print_ratio(STATE_CURVE, PLAIN_CUBIC);
    tally.print_ratio(STATE_SOLVE, STATE_CURVE);
    tally.print_ratio(BATCH, BATCH_FLOOR);
    tally.print_ratio(BLEND_ONE_CURVE, PLAIN_CUBIC);
    tally.print_ratio(BLEND_ONE_SOLVE, BLEND_ONE_CURVE);
    tally.print_ratio(BLEND_TWO_CURVE, PLAIN_CUBIC);
    tally.print_ratio(BLEND_TWO_SOLVE, BLEND_TWO_CURVE);
}
