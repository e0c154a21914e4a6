//! Bad input gets a typed error naming the field and the valid range.

use crate::util;
use binodal_eos::{ErrorKind, FluidConstants, Model, PureEos};

#[test]
fn bad_inputs_give_precise_errors() {
    let eos = PureEos::new(&util::propane().constants, Model::PengRobinson1978).unwrap();
    type Case = (
        &'static str,
        fn(&PureEos) -> binodal_eos::Error,
        &'static [&'static str],
    );
    let cases: [Case; 10] = [
        (
            "NaN temperature",
            |e| e.saturation_pressure(f64::NAN).unwrap_err(),
            &["temperature_k", "finite"],
        ),
        (
            "infinite pressure",
            |e| e.saturation_temperature(f64::INFINITY).unwrap_err(),
            &["pressure_pa", "finite"],
        ),
        (
            "negative pressure",
            |e| e.state(300.0, -5.0).unwrap_err(),
            &["pressure_pa", "greater than zero"],
        ),
        (
            "zero temperature",
            |e| e.state(0.0, 1e5).unwrap_err(),
            &["temperature_k", "greater than zero"],
        ),
        (
            "below triple point",
            |e| e.saturation_pressure(50.0).unwrap_err(),
            &["temperature_k", "85.525", "valid"],
        ),
        (
            "above critical",
            |e| e.saturation_pressure(400.0).unwrap_err(),
            &["temperature_k", "369.8"],
        ),
        (
            "pressure above critical",
            |e| e.saturation_temperature(5e6).unwrap_err(),
            &["pressure_pa", "valid"],
        ),
        (
            "pressure below range",
            |e| e.saturation_temperature(1e-9).unwrap_err(),
            &["pressure_pa", "valid"],
        ),
        (
            "state pressure too high",
            |e| e.state(300.0, 1e10).unwrap_err(),
            &["pressure_pa", "valid"],
        ),
        (
            // Found by the property test: the molar volume overflowed to infinity here.
            "state pressure too low",
            |e| {
                e.state(148.75543008920064, 1.834273335694461e-308)
                    .unwrap_err()
            },
            &["pressure_pa", "1e-12", "valid"],
        ),
    ];
    for (what, call, fragments) in cases {
        let msg = call(&eos).to_string();
        for frag in fragments {
            assert!(msg.contains(frag), "{what}: `{msg}` lacks `{frag}`");
        }
    }
    let err = "benedict".parse::<Model>().unwrap_err();
    assert!(matches!(err.kind(), ErrorKind::UnknownModel { .. }));
    let bad = FluidConstants::new("x", 0.04, -5.0, 4e6, 0.1);
    let err = PureEos::new(&bad, Model::PengRobinson1978).unwrap_err();
    assert_eq!(err.field(), Some("critical_temperature_k"), "{err}");
}
