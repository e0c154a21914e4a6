//! Engine benchmarks: one cubic solve, one saturation solve through argmin, one
//! classification at (T, P), one fit. Run with `cargo bench -p binodal-eos`.

use binodal_eos::{
    AlphaForm, FluidConstants, Model, PureEos, ReferencePoint, fit_saturation, solve_cubic,
};
use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;

/// Propane, constants from Lemmon, McLinden and Wagner (2009) (from memory).
fn propane() -> FluidConstants {
    let mut f = FluidConstants::new("propane", 0.044_097, 369.89, 4.2512e6, 0.1521);
    f.triple_point_temperature_k = Some(85.525);
    f
}

fn engine(c: &mut Criterion) {
    let eos = PureEos::new(&propane(), Model::PengRobinson1978).unwrap();
    c.bench_function("cubic solve (three roots)", |b| {
        b.iter(|| solve_cubic(black_box(-1.0), black_box(0.2), black_box(-0.001)))
    });
    c.bench_function("saturation pressure at 300 K (argmin BrentRoot)", |b| {
        b.iter(|| eos.saturation_pressure(black_box(300.0)).unwrap())
    });
    c.bench_function("saturation temperature at 1 MPa", |b| {
        b.iter(|| eos.saturation_temperature(black_box(1.0e6)).unwrap())
    });
    c.bench_function("state at 280 K, 1 MPa (with margins)", |b| {
        b.iter(|| eos.state(black_box(280.0), black_box(1.0e6)).unwrap())
    });
    // NIST Chemistry WebBook propane vapor pressures (propane_saturation.csv), 200-350 K.
    let points: Vec<ReferencePoint> = [
        (200.0, 0.020194e6),
        (230.0, 0.096787e6),
        (260.0, 0.31070e6),
        (290.0, 0.76921e6),
        (320.0, 1.5992e6),
        (350.0, 2.9527e6),
    ]
    .into_iter()
    .map(|(t, p)| ReferencePoint {
        temperature_k: t,
        pressure_pa: p,
        liquid_density_kg_per_m3: None,
        enthalpy_of_vaporization_j_per_mol: None,
    })
    .collect();
    let mut group = c.benchmark_group("fit");
    group.sample_size(10);
    group.bench_function("Mathias-Copeman fit to 6 points", |b| {
        b.iter(|| {
            fit_saturation(
                &propane(),
                Model::PengRobinson1978,
                AlphaForm::MathiasCopeman,
                &points,
                0.9,
            )
            .unwrap()
        })
    });
    group.finish();
}

criterion_group!(benches, engine);
criterion_main!(benches);
