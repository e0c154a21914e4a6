//! Mixtures: reduction to the pure fluid, a near-ideal hydrocarbon pair, Rachford-Rice,
//! the k_ij fit, and flash invariants.

use crate::util;
use binodal_eos::{BinaryBubblePoint, Mixture, Model, PureEos, fit_kij, rachford_rice};
use proptest::prelude::*;

fn pair() -> [PureEos; 2] {
    let model = Model::PengRobinson1978;
    [
        PureEos::new(&crate::accuracy::fitted(&util::propane(), model), model).unwrap(),
        PureEos::new(&crate::accuracy::fitted(&util::isobutane(), model), model).unwrap(),
    ]
}

/// With one component at fraction 1 every mixture answer is the pure fluid's, exactly.
#[test]
fn mixture_reduces_exactly_to_the_pure_fluid() {
    let [propane, isobutane] = pair();
    let mix = Mixture::new(vec![propane.clone(), isobutane], vec![1.0, 0.0], None).unwrap();
    for t in [200.0, 280.0, 340.0] {
        let pure = propane.saturation_at_temperature(t).unwrap();
        let bubble = mix.bubble_at_temperature(t).unwrap();
        let dew = mix.dew_at_temperature(t).unwrap();
        assert_eq!(bubble.pressure_pa, pure.pressure_pa);
        assert_eq!(dew.pressure_pa, pure.pressure_pa);
        assert_eq!(bubble.bulk.density_kg_per_m3, pure.liquid.density_kg_per_m3);
        let back = mix.bubble_at_pressure(pure.pressure_pa).unwrap();
        assert!((back.temperature_k / t - 1.0).abs() < 1e-9);
    }
}

/// Propane and isobutane form a nearly ideal liquid solution (common practice: alkanes of
/// similar size follow Raoult's law within a few percent). At 280 K the NIST Chemistry
/// WebBook vapor pressures are 0.58173 MPa (propane) and 0.19876 MPa (isobutane)
/// (propane_saturation.csv, isobutane_saturation.csv), so an equimolar liquid boils near
/// 0.5 (0.58173 + 0.19876) = 0.39025 MPa, and its dew pressure is near
/// 1 / (0.5/0.58173 + 0.5/0.19876) = 0.29629 MPa.
#[test]
fn propane_isobutane_is_nearly_ideal() {
    let mix = Mixture::new(pair().to_vec(), vec![0.5, 0.5], None).unwrap();
    let bubble = mix.bubble_at_temperature(280.0).unwrap().pressure_pa;
    let dew = mix.dew_at_temperature(280.0).unwrap().pressure_pa;
    assert!((bubble / 0.39025e6 - 1.0).abs() < 0.03, "bubble {bubble}");
    assert!((dew / 0.29629e6 - 1.0).abs() < 0.03, "dew {dew}");
    // The incipient vapor at the bubble point is richer in the lighter propane.
    let y = mix
        .bubble_at_temperature(280.0)
        .unwrap()
        .incipient_mole_fractions;
    assert!(y[0] > 0.5 && (y[0] + y[1] - 1.0).abs() < 1e-12);
    // Glide at the bubble pressure: the dew point lies above the bubble point.
    assert!(mix.glide_at_pressure(bubble).unwrap() > 1.0);
}

/// Rachford-Rice for z = (0.5, 0.5), K = (2, 0.5): the vapor fraction solves
/// 0.5/(1 + b) = 0.25/(1 - b/2), i.e. b = 0.5 exactly (worked by hand).
#[test]
fn rachford_rice_matches_a_hand_solution() {
    let beta = rachford_rice(&[0.5, 0.5], &[2.0, 0.5]).unwrap();
    assert!((beta - 0.5).abs() < 1e-12, "{beta}");
    // All K > 1 with sum z K > 1 and sum z/K < 1: all vapor.
    assert_eq!(rachford_rice(&[0.5, 0.5], &[3.0, 2.0]).unwrap(), 1.0);
}

/// The k_ij fit recovers the parameter that generated its data (a test of the numerical
/// method on data made by the model itself, not a physical check).
#[test]
fn kij_fit_recovers_the_generating_value() {
    let p = pair();
    let truth = 0.03;
    let k = vec![vec![0.0, truth], vec![truth, 0.0]];
    let data: Vec<BinaryBubblePoint> = [(260.0, 0.3), (280.0, 0.5), (300.0, 0.7)]
        .into_iter()
        .map(|(t, x1)| {
            let mix = Mixture::new(p.to_vec(), vec![x1, 1.0 - x1], Some(k.clone())).unwrap();
            BinaryBubblePoint {
                temperature_k: t,
                x1,
                pressure_pa: mix.bubble_at_temperature(t).unwrap().pressure_pa,
            }
        })
        .collect();
    let (kij, dev) = fit_kij(&p, &data).unwrap();
    assert!((kij - truth).abs() < 1e-4, "{kij}");
    assert!(dev.max_abs_percent < 1e-3, "{dev:?}");
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(60))]

    /// The flash never returns negative fractions, compositions sum to 1 and the material
    /// balance z = (1 - b) x + b y closes to 1e-10.
    #[test]
    fn flash_invariants(x1 in 0.01f64..0.99, t in 200.0f64..360.0, log_p in 4.0f64..6.6) {
        let mix = Mixture::new(pair().to_vec(), vec![x1, 1.0 - x1], None).unwrap();
        let p = 10f64.powf(log_p);
        if let Ok(f) = mix.flash(t, p) {
            prop_assert!((0.0..=1.0).contains(&f.vapor_fraction));
            for comp in [&f.liquid_mole_fractions, &f.vapor_mole_fractions] {
                prop_assert!(comp.iter().all(|&v| v >= 0.0));
                prop_assert!((comp.iter().sum::<f64>() - 1.0).abs() < 1e-12);
            }
            let b = f.vapor_fraction;
            for (i, z) in [x1, 1.0 - x1].iter().enumerate() {
                let balance = (1.0 - b) * f.liquid_mole_fractions[i] + b * f.vapor_mole_fractions[i];
                prop_assert!((balance - z).abs() < 1e-10, "component {}: {} vs {}", i, balance, z);
            }
        }
    }
}

/// At the ends of the envelope the solvers refuse with an error naming the field, never a
/// wrong number: above both critical temperatures (propane 369.89 K, isobutane 407.81 K)
/// and above the two-phase region in pressure.
#[test]
fn outside_the_envelope_is_a_precise_error() {
    let mix = Mixture::new(pair().to_vec(), vec![0.5, 0.5], None).unwrap();
    let err = mix.bubble_at_temperature(420.0).unwrap_err();
    assert_eq!(err.field(), Some("temperature_k"), "{err}");
    let err = mix.bubble_at_pressure(8.0e6).unwrap_err();
    assert_eq!(err.field(), Some("pressure_pa"), "{err}");
    assert!(err.to_string().contains("two-phase region"), "{err}");
    // A state below the lowest computed pressure (as for a pure fluid, where the molar volume
    // overflowed at 1.8e-308 Pa) is refused with the valid range.
    let err = mix.state(300.0, 1.834_273_335_694_461e-308).unwrap_err();
    assert_eq!(err.field(), Some("pressure_pa"), "{err}");
    assert!(err.to_string().contains("1e-12"), "{err}");
    // Temperatures are bounded above as for a pure fluid (5 times the pseudo-critical
    // temperature, at least 1500 K): a finite range, not "to inf".
    for t in [1.0e300, 1.0e5, 0.1] {
        let err = mix.state(t, 1.0e5).unwrap_err();
        assert_eq!(err.field(), Some("temperature_k"), "{err}");
        assert!(!err.to_string().contains("inf"), "{err}");
    }
    assert!(mix.state(1400.0, 1.0e5).is_ok());
    // Close below the mixture's critical region either a consistent answer or an error.
    for t in [385.0, 390.0, 395.0, 400.0] {
        match (mix.bubble_at_temperature(t), mix.dew_at_temperature(t)) {
            (Ok(b), Ok(d)) => assert!(
                b.pressure_pa >= d.pressure_pa * (1.0 - 1e-9),
                "{t}: {b:?} {d:?}"
            ),
            (b, d) => assert!(b.is_err() || d.is_err()),
        }
    }
}

/// A query by pressure names the pressure when the mixture's own line cannot be found at its
/// lowest temperature (water with nitrogen: nitrogen is far above its critical temperature,
/// 126.2 K, at water's triple point, 273.16 K; NIST Chemistry WebBook), never a temperature the
/// caller did not send.
#[test]
fn a_pressure_query_names_the_pressure() {
    let model = Model::PengRobinson1978;
    let water = PureEos::new(&crate::accuracy::fitted(&util::water(), model), model).unwrap();
    let nitrogen = PureEos::new(&crate::accuracy::fitted(&util::nitrogen(), model), model).unwrap();
    let mix = Mixture::new(vec![water, nitrogen], vec![0.5, 0.5], None).unwrap();
    let err = mix.bubble_at_pressure(1.0e5).unwrap_err();
    assert_eq!(err.field(), Some("pressure_pa"), "{err}");
    assert!(err.to_string().contains("lowest temperature"), "{err}");
    // The dew point exists: water condenses where its partial pressure, 0.5 x 1e5 Pa, reaches
    // its vapor pressure (nitrogen barely dissolves), i.e. where the IAPWS-IF97 saturation
    // pressure is 50 kPa, within the fitted water model's recorded deviation (under 1 %).
    let dew = mix.dew_at_pressure(1.0e5).unwrap();
    let p_water = crate::accuracy::if97_saturation_pressure_pa(dew.temperature_k);
    assert!(
        (p_water / 0.5e5 - 1.0).abs() < 0.01,
        "dew at {} K, where IF97 gives {p_water} Pa",
        dew.temperature_k
    );
}
