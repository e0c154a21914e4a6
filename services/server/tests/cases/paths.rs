//! Every pure-fluid answer says which path produced it: PRECOMPUTED_CURVE where the server's
//! start-up curve covers the request, FULL_SOLVE in the curve's near-critical band and where no
//! saturation quantity is needed, and the batch says it point by point, in agreement with
//! GetState. A large batch (computed in parallel) agrees with a small one point for point.

use binodal_eos::{CURVE_CRITICAL_BAND, Model, ReferenceState};
use binodal_proto::v1 as pb;
use pb::get_saturation_request::Condition;

use super::{assert_same, engine, fluid, phase_client};
use crate::util::TestServer;

const CURVE: i32 = pb::ComputationPath::PrecomputedCurve as i32;
const SOLVE: i32 = pb::ComputationPath::FullSolve as i32;

#[tokio::test]
async fn answers_name_the_curve_or_the_full_solve() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    // Carbon dioxide: critical point 304.13 K, 7.3773 MPa (NIST Chemistry WebBook,
    // carbon dioxide); the catalogue's engine has its own critical constants, read here.
    let eos = engine(
        "R-744",
        Model::PengRobinson1978,
        ReferenceState::LiquidAtZeroCelsius,
    );
    let tc = eos.critical_temperature_k();
    let saturation = |t: f64| pb::GetSaturationRequest {
        fluid: fluid("R-744"),
        condition: Some(Condition::TemperatureK(t)),
        ..Default::default()
    };
    let on_curve = client
        .get_saturation(saturation(270.0))
        .await
        .expect("saturation at 270 K")
        .into_inner();
    assert_eq!(on_curve.path, CURVE);
    let expected = eos.saturation_at_temperature(270.0).expect("engine");
    assert_same(
        "saturation pressure",
        on_curve.saturation_pressure_pa,
        expected.pressure_pa,
    );
    // In the curve's band (within 1e-4 Tc of the critical temperature) the solver answers.
    let in_band = client
        .get_saturation(saturation(tc * (1.0 - 0.5 * CURVE_CRITICAL_BAND)))
        .await
        .expect("saturation in the curve's band")
        .into_inner();
    assert_eq!(in_band.path, SOLVE);
    // At a pressure on the curve.
    let at_pressure = client
        .get_saturation(pb::GetSaturationRequest {
            fluid: fluid("R-744"),
            condition: Some(Condition::PressurePa(3.0e6)),
            ..Default::default()
        })
        .await
        .expect("saturation at 3 MPa")
        .into_inner();
    assert_eq!(at_pressure.path, CURVE);

    let state = |t: f64, p: f64| pb::GetStateRequest {
        fluid: fluid("R-744"),
        temperature_k: t,
        pressure_pa: p,
        ..Default::default()
    };
    // Subcooled liquid at 260 K and 5 MPa: both margins from the curve.
    let liquid = client
        .get_state(state(260.0, 5.0e6))
        .await
        .expect("state")
        .into_inner();
    assert_eq!(liquid.phase, pb::Phase::SubcooledLiquid as i32);
    assert_eq!(liquid.path, CURVE);
    // Above the critical temperature and every saturation pressure: nothing to read.
    let dense = client
        .get_state(state(350.0, 20.0e6))
        .await
        .expect("state")
        .into_inner();
    assert_eq!(dense.phase, pb::Phase::SupercriticalFluid as i32);
    assert_eq!(dense.path, SOLVE);
    server.stop().await;
}

#[tokio::test]
async fn a_parallel_batch_agrees_point_by_point_with_a_sequential_one() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    // 6000 points of ammonia, 200-450 K and 10 kPa-20 MPa (its triple point is 195.5 K and
    // critical point 405.4 K, 11.33 MPa: NIST Chemistry WebBook, ammonia), with every 101st
    // point invalid (negative pressure), so that failures land in several parallel chunks.
    let n: usize = 6000;
    let temperatures: Vec<f64> = (0..n)
        .map(|i| 200.0 + 250.0 * ((i * 37) % 97) as f64 / 96.0)
        .collect();
    let pressures: Vec<f64> = (0..n)
        .map(|i| {
            if i.is_multiple_of(101) {
                -1.0
            } else {
                1e4 * 2000f64.powf((i % 89) as f64 / 88.0)
            }
        })
        .collect();
    let batch = |ts: &[f64], ps: &[f64]| pb::GetStateBatchRequest {
        fluid: fluid("R-717"),
        temperatures_k: ts.to_vec(),
        pressures_pa: ps.to_vec(),
        ..Default::default()
    };
    let large = client
        .get_state_batch(batch(&temperatures, &pressures))
        .await
        .expect("a batch of 6000 points")
        .into_inner();
    assert_eq!(large.paths.len(), n);
    assert_eq!(large.errors.len(), n.div_ceil(101));
    assert!(
        large.errors.windows(2).all(|w| w[0].index < w[1].index),
        "point errors in index order"
    );
    assert!(large.errors.iter().all(|e| e.index.is_multiple_of(101)));
    let curve_points = large.paths.iter().filter(|&&p| p == CURVE).count();
    assert!(curve_points > n / 2, "{curve_points} of {n} from the curve");
    // The same points in small (sequential) batches of 500.
    for start in (0..n).step_by(500) {
        let end = start + 500;
        let small = client
            .get_state_batch(batch(&temperatures[start..end], &pressures[start..end]))
            .await
            .expect("a batch of 500 points")
            .into_inner();
        for i in 0..500 {
            let j = start + i;
            assert_eq!(small.phases[i], large.phases[j], "point {j}");
            assert_eq!(small.paths[i], large.paths[j], "point {j}");
            assert_eq!(small.estimated[i], large.estimated[j], "point {j}");
            for (what, a, b) in [
                (
                    "density",
                    small.densities_kg_per_m3[i],
                    large.densities_kg_per_m3[j],
                ),
                (
                    "h",
                    small.enthalpies_j_per_kg[i],
                    large.enthalpies_j_per_kg[j],
                ),
                ("subcooling", small.subcooling_k[i], large.subcooling_k[j]),
                ("superheat", small.superheat_k[i], large.superheat_k[j]),
                (
                    "above bubble",
                    small.pressure_above_bubble_pa[i],
                    large.pressure_above_bubble_pa[j],
                ),
            ] {
                assert!(a == b || a.is_nan() && b.is_nan(), "{what} at point {j}");
            }
        }
        let small_errors: Vec<u32> = small
            .errors
            .iter()
            .map(|e| e.index + start as u32)
            .collect();
        let large_errors: Vec<u32> = large
            .errors
            .iter()
            .map(|e| e.index)
            .filter(|&k| k >= start as u32 && k < end as u32)
            .collect();
        assert_eq!(small_errors, large_errors);
    }
    server.stop().await;
}
