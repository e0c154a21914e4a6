//! Property-based tests: random fluids, temperatures and pressures never panic and never
//! produce a non-finite number; every failure is a typed error.

use binodal_eos::{FluidConstants, Model, PureEos};
use proptest::prelude::*;

fn finite_state(s: &binodal_eos::State) -> bool {
    let p = &s.properties;
    [
        p.density_kg_per_m3,
        p.compressibility,
        p.fugacity_coefficient(),
        p.residual_enthalpy_j_per_mol,
    ]
    .iter()
    .all(|v| v.is_finite())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn random_states_never_panic(
        tc in 30.0f64..800.0,
        pc in 1e5f64..1e8,
        omega in -0.3f64..1.2,
        tr in 0.0f64..6.0,
        log_p in -6.0f64..10.0,
        model in 0usize..5,
    ) {
        let fluid = FluidConstants::new("random", 0.05, tc, pc, omega);
        if let Ok(eos) = PureEos::new(&fluid, Model::ALL[model]) {
            let t = tr * tc;
            let p = 10f64.powf(log_p);
            if let Ok(s) = eos.state(t, p) {
                prop_assert!(finite_state(&s));
            }
            if let Ok(s) = eos.saturation_at_temperature(t) {
                prop_assert!(s.pressure_pa.is_finite() && s.pressure_pa > 0.0);
                prop_assert!(s.enthalpy_of_vaporization_j_per_mol.is_finite());
                let back = eos.saturation_temperature(s.pressure_pa);
                prop_assert!(back.is_ok(), "{:?}", back);
            }
            if let Ok(t) = eos.saturation_temperature(p) {
                prop_assert!(t.is_finite());
            }
        }
    }

    #[test]
    fn nonsense_numbers_are_typed_errors(t in prop::num::f64::ANY, p in prop::num::f64::ANY) {
        let fluid = FluidConstants::new("propane", 0.044097, 369.89, 4.2512e6, 0.1521);
        let eos = PureEos::new(&fluid, Model::PengRobinson1978).unwrap();
        if let Ok(s) = eos.state(t, p) {
            prop_assert!(finite_state(&s));
        }
        let _ = eos.saturation_pressure(t);
        let _ = eos.saturation_temperature(p);
    }
}
