//! The batch RPC in-process: `GetStateBatch` of 10 000 points through the server's own handler
//! (request checks, fluid look-up, the parallel batch, the packed response), without the
//! network, beside a floor timed in the same run: 10 000 plain cubic solves of the same
//! points. Also one `GetState` through the handler (what a single query costs the server
//! beyond the framework), beside one plain cubic solve. After criterion's report the ratios are
//! printed. Run with `cargo bench -p binodal-server --bench batch`.

use std::cell::Cell;
use std::hint::black_box;
use std::time::{Duration, Instant};

use binodal_fluids::Catalogue;
use binodal_proto::v1 as pb;
use binodal_proto::v1::phase_service_server::PhaseService;
use binodal_server::settings::Settings;
use criterion::Criterion;

const POINTS: usize = 10_000;

fn main() {
    let mut c = Criterion::default().configure_from_args();
    let runtime = tokio::runtime::Builder::new_current_thread()
        .build()
        .expect("runtime");
    let handlers = binodal_server::phase_handlers(&Settings::default()).expect("handlers");
    // R-134a from 200 K to 450 K and 50 kPa to 8 MPa: liquid, vapor and supercritical states.
    let temperatures: Vec<f64> = (0..POINTS)
        .map(|i| 200.0 + 250.0 * ((i * 37) % 100) as f64 / 99.0)
        .collect();
    let pressures: Vec<f64> = (0..POINTS)
        .map(|i| 0.05e6 * 160f64.powf((i % 100) as f64 / 99.0))
        .collect();
    let request = pb::GetStateBatchRequest {
        fluid: Some(pb::FluidSelector {
            choice: Some(pb::fluid_selector::Choice::Fluid("R-134a".into())),
        }),
        temperatures_k: temperatures.clone(),
        pressures_pa: pressures.clone(),
        ..Default::default()
    };
    let total = Cell::new((Duration::ZERO, 0u64));
    c.bench_function("GetStateBatch, 10 000 points, in-process", |b| {
        b.iter_custom(|iters| {
            let start = Instant::now();
            for _ in 0..iters {
                let answer = runtime
                    .block_on(handlers.get_state_batch(tonic::Request::new(request.clone())))
                    .expect("batch");
                black_box(answer);
            }
            let elapsed = start.elapsed();
            let (t, n) = total.get();
            total.set((t + elapsed, n + iters));
            elapsed
        })
    });
    let record = Catalogue::builtin().get("R-134a").expect("R-134a");
    let eos = record
        .eos(binodal_eos::Model::PengRobinson1978)
        .expect("engine");
    let mut out = vec![0.0; POINTS];
    let floor = Cell::new((Duration::ZERO, 0u64));
    c.bench_function("floor: 10 000 plain cubic solves", |b| {
        b.iter_custom(|iters| {
            let start = Instant::now();
            for _ in 0..iters {
                for (i, (&t, &p)) in temperatures.iter().zip(&pressures).enumerate() {
                    out[i] = eos.compressibility_roots(t, p).largest();
                }
                black_box(&out);
            }
            let elapsed = start.elapsed();
            let (t, n) = floor.get();
            floor.set((t + elapsed, n + iters));
            elapsed
        })
    });
    let single = Cell::new((Duration::ZERO, 0u64));
    let mut k = 0usize;
    c.bench_function("GetState, one point, in-process", |b| {
        b.iter_custom(|iters| {
            let start = Instant::now();
            for _ in 0..iters {
                k = (k + 1) % 1000;
                let state = pb::GetStateRequest {
                    fluid: request.fluid.clone(),
                    temperature_k: temperatures[k],
                    pressure_pa: pressures[k],
                    ..Default::default()
                };
                let answer = runtime
                    .block_on(handlers.get_state(tonic::Request::new(state)))
                    .expect("state");
                black_box(answer);
            }
            let elapsed = start.elapsed();
            let (t, n) = single.get();
            single.set((t + elapsed, n + iters));
            elapsed
        })
    });
    c.final_summary();
    let per_point = |(t, n): (Duration, u64)| t.as_secs_f64() * 1e9 / (n as f64 * POINTS as f64);
    let (batch, cubic) = (per_point(total.get()), per_point(floor.get()));
    let (t, n) = single.get();
    let one = t.as_secs_f64() * 1e9 / n as f64;
    if one.is_finite() && cubic.is_finite() {
        println!(
            "ratio  GetState in-process: {one:.1} ns per call / floor: plain cubic solve: \
             {cubic:.1} ns = {:.2}",
            one / cubic
        );
    }
    if batch.is_finite() && cubic.is_finite() {
        println!();
        println!(
            "ratio  GetStateBatch in-process: {batch:.1} ns per point ({:.2} M points/s) / \
             floor: plain cubic solve: {cubic:.1} ns per point = {:.2}",
            1e3 / batch,
            batch / cubic
        );
    }
}
