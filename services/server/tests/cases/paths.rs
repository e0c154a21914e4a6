//! Every pure-fluid answer says which path produced it: PRECOMPUTED_CURVE where the server's
//! start-up curve covers the request, FULL_SOLVE in the curve's near-critical band and where no
//! saturation quantity is needed, and the batch says it point by point, in agreement with
//! GetState. A large batch (computed in parallel) agrees with a small one point for point.
//! Catalogue blends answer from their bubble and dew lines in the same way, and agree with the
//! full solve of the same composition given as a custom mixture.

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

/// A catalogue blend answers from the bubble and dew lines the server built for it at start-up
/// (PRECOMPUTED_CURVE), and agrees with the full solve: the same blend given as a custom mixture
/// of its components by mass (custom mixtures have no lines, so every answer is solved and says
/// FULL_SOLVE). The lines follow the solver within binodal_eos::CURVE_TOLERANCE (1e-9 relative in
/// pressure); a temperature read from a line is within 1e-6 K of the solved one (1e-9 in
/// pressure is under 1e-7 K here, where d ln P / d ln T > 5).
#[tokio::test]
async fn blend_answers_name_the_lines_and_agree_with_the_full_solve() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    // R-407C, R-32/R-125/R-134a 23/25/52 by mass (the catalogue's blends.toml, ASHRAE 34).
    let blend = fluid("R-407C");
    let custom = Some(pb::FluidSelector {
        choice: Some(pb::fluid_selector::Choice::Mixture(pb::Mixture {
            components: [("r32", 0.23), ("r125", 0.25), ("r134a", 0.52)]
                .iter()
                .map(|&(f, x)| pb::MixtureComponent {
                    fluid: f.to_owned(),
                    fraction: x,
                })
                .collect(),
            fraction_basis: pb::FractionBasis::Mass as i32,
        })),
    });
    let same = |a: f64, b: f64| (a / b - 1.0).abs() < binodal_eos::CURVE_TOLERANCE;

    // Bubble and dew pressures at 0 °C, solved (a point at a temperature is always solved: the
    // solve that gives the incipient composition gives the pressure).
    let at_zero = client
        .get_saturation(pb::GetSaturationRequest {
            fluid: blend.clone(),
            condition: Some(Condition::TemperatureK(273.15)),
            ..Default::default()
        })
        .await
        .expect("saturation at 0 °C")
        .into_inner();
    assert_eq!(at_zero.path, SOLVE);
    let bd = at_zero.bubble_dew.expect("bubble and dew");
    let (pb_zero, pd_zero) = (bd.bubble_pressure_pa, bd.dew_pressure_pa);

    // States on either side of the envelope and inside it.
    let states = [
        (273.15, 1.2 * pb_zero, pb::Phase::SubcooledLiquid),
        (273.15, 0.8 * pd_zero, pb::Phase::SuperheatedVapor),
        (273.15, (pb_zero * pd_zero).sqrt(), pb::Phase::TwoPhase),
        (300.0, 2.5e6, pb::Phase::SubcooledLiquid),
        (320.0, 0.5e6, pb::Phase::SuperheatedVapor),
    ];
    for &(t, p, phase) in &states {
        let at = format!("R-407C at {t} K, {p} Pa");
        let request = |fluid: &Option<pb::FluidSelector>| pb::GetStateRequest {
            fluid: fluid.clone(),
            temperature_k: t,
            pressure_pa: p,
            ..Default::default()
        };
        let lines = client
            .get_state(request(&blend))
            .await
            .expect("blend state")
            .into_inner();
        let solved = client
            .get_state(request(&custom))
            .await
            .expect("custom mixture state")
            .into_inner();
        assert_eq!(lines.path, CURVE, "{at}");
        assert_eq!(solved.path, SOLVE, "{at}");
        assert_eq!(lines.phase, phase as i32, "{at}");
        assert_eq!(solved.phase, lines.phase, "{at}");
        let (ml, ms) = (lines.margins.unwrap(), solved.margins.unwrap());
        for (what, a, b) in [
            (
                "bubble pressure",
                ml.bubble_pressure_pa,
                ms.bubble_pressure_pa,
            ),
            ("dew pressure", ml.dew_pressure_pa, ms.dew_pressure_pa),
        ] {
            let (a, b) = (a.expect(what), b.expect(what));
            assert!(same(a, b), "{at} {what}: lines {a}, solver {b}");
        }
        for (what, a, b) in [
            (
                "bubble temperature",
                ml.bubble_temperature_k,
                ms.bubble_temperature_k,
            ),
            (
                "dew temperature",
                ml.dew_temperature_k,
                ms.dew_temperature_k,
            ),
        ] {
            let (a, b) = (a.expect(what), b.expect(what));
            assert!((a - b).abs() < 1e-6, "{at} {what}: lines {a}, solver {b}");
        }
        // The properties are the same computation on both paths (the feed on its stable root,
        // or the flash inside the envelope).
        let (pl, ps) = (lines.properties.unwrap(), solved.properties.unwrap());
        assert_same("density", pl.density_kg_per_m3, ps.density_kg_per_m3);
        assert_eq!(lines.two_phase, solved.two_phase, "{at}");
    }

    // A batch of the same states names the lines point by point, as GetState does.
    let batch = client
        .get_state_batch(pb::GetStateBatchRequest {
            fluid: blend.clone(),
            temperatures_k: states.iter().map(|s| s.0).collect(),
            pressures_pa: states.iter().map(|s| s.1).collect(),
            ..Default::default()
        })
        .await
        .expect("blend batch")
        .into_inner();
    assert_eq!(batch.paths, vec![CURVE; states.len()]);
    assert_eq!(
        batch.phases,
        states.iter().map(|s| s.2 as i32).collect::<Vec<_>>()
    );

    // At a pressure: both temperatures from the lines, then one solve each at those
    // temperatures for the compositions.
    let at_pressure = |fluid: &Option<pb::FluidSelector>| pb::GetSaturationRequest {
        fluid: fluid.clone(),
        condition: Some(Condition::PressurePa(1.0e6)),
        ..Default::default()
    };
    let lines = client
        .get_saturation(at_pressure(&blend))
        .await
        .expect("blend saturation at 1 MPa")
        .into_inner();
    let solved = client
        .get_saturation(at_pressure(&custom))
        .await
        .expect("custom saturation at 1 MPa")
        .into_inner();
    assert_eq!(lines.path, CURVE);
    assert_eq!(solved.path, SOLVE);
    let (bl, bs) = (lines.bubble_dew.unwrap(), solved.bubble_dew.unwrap());
    assert!((bl.bubble_temperature_k - bs.bubble_temperature_k).abs() < 1e-6);
    assert!((bl.dew_temperature_k - bs.dew_temperature_k).abs() < 1e-6);
    assert!(same(bl.bubble_pressure_pa, 1.0e6) && same(bl.dew_pressure_pa, 1.0e6));
    // The incipient fractions change by well under 0.01 per kelvin along these lines, so
    // temperatures 1e-6 K apart give fractions within 1e-8.
    for (a, b) in bl
        .incipient_vapor_composition
        .iter()
        .zip(&bs.incipient_vapor_composition)
    {
        assert!(
            (a.mole_fraction - b.mole_fraction).abs() < 1e-8,
            "{a:?} {b:?}"
        );
    }
    server.stop().await;
}
