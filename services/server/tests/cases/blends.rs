//! Blends and custom mixtures through the service: bubble and dew points, glide, two-phase
//! states, fraction checks, and the exact reduction to a pure fluid.

use binodal_proto::v1 as pb;
use tonic::Code;

use super::{fluid, phase_client};
use crate::util::TestServer;

fn mixture(parts: &[(&str, f64)], basis: pb::FractionBasis) -> Option<pb::FluidSelector> {
    Some(pb::FluidSelector {
        choice: Some(pb::fluid_selector::Choice::Mixture(pb::Mixture {
            components: parts
                .iter()
                .map(|(f, x)| pb::MixtureComponent {
                    fluid: f.to_string(),
                    fraction: *x,
                })
                .collect(),
            fraction_basis: basis as i32,
        })),
    })
}

fn at_temperature(selector: Option<pb::FluidSelector>, t: f64) -> pb::GetSaturationRequest {
    pb::GetSaturationRequest {
        fluid: selector,
        condition: Some(pb::get_saturation_request::Condition::TemperatureK(t)),
        ..Default::default()
    }
}

/// R-410A near 0 °C: about 8 bar absolute and a glide well under 0.5 K; R-407C: several
/// kelvin of glide (facts of the trade, common practice).
#[tokio::test]
async fn blend_saturation_reports_bubble_dew_and_glide() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    let r410a = client
        .get_saturation(at_temperature(fluid("R-410A"), 273.15))
        .await
        .unwrap()
        .into_inner();
    let bd = r410a
        .bubble_dew
        .expect("blends carry bubble and dew values");
    assert!((bd.bubble_pressure_pa / 8.0e5 - 1.0).abs() < 0.03, "{bd:?}");
    assert!(bd.bubble_pressure_pa >= bd.dew_pressure_pa);
    assert!(
        bd.temperature_glide_k > 0.0 && bd.temperature_glide_k < 0.5,
        "{bd:?}"
    );
    assert_eq!(bd.incipient_vapor_composition.len(), 2);
    let basis = r410a.basis.unwrap();
    assert_eq!(basis.fluid_id, "r410a");
    assert!(basis.expected_deviation.is_some());
    assert!(basis.caution.contains("A1"), "{}", basis.caution);

    let by_p = pb::GetSaturationRequest {
        fluid: fluid("R-407C"),
        condition: Some(pb::get_saturation_request::Condition::PressurePa(4.0e5)),
        ..Default::default()
    };
    let r407c = client
        .get_saturation(by_p)
        .await
        .unwrap()
        .into_inner()
        .bubble_dew
        .unwrap();
    assert!((4.0..8.0).contains(&r407c.temperature_glide_k), "{r407c:?}");
    assert!(r407c.dew_temperature_k > r407c.bubble_temperature_k);
    server.stop().await;
}

/// A custom mixture with one component at fraction 1 answers exactly as the pure fluid.
#[tokio::test]
async fn single_component_mixture_equals_the_pure_fluid() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    let pure = client
        .get_saturation(at_temperature(fluid("propane"), 280.0))
        .await
        .unwrap()
        .into_inner();
    let mix = client
        .get_saturation(at_temperature(
            mixture(&[("propane", 1.0)], pb::FractionBasis::Mole),
            280.0,
        ))
        .await
        .unwrap()
        .into_inner();
    // The pure answer is read from the server's precomputed curve, which follows the full solve
    // (the mixture's path) within binodal_eos::CURVE_TOLERANCE, relative.
    assert_eq!(pure.path, pb::ComputationPath::PrecomputedCurve as i32);
    let same = |a: f64, b: f64| (a / b - 1.0).abs() < binodal_eos::CURVE_TOLERANCE;
    let bubble_dew = mix.bubble_dew.unwrap();
    assert!(same(
        bubble_dew.bubble_pressure_pa,
        pure.saturation_pressure_pa
    ));
    assert!(same(
        bubble_dew.dew_pressure_pa,
        pure.saturation_pressure_pa
    ));
    server.stop().await;
}

/// Propane/isobutane 50/50 by mass: a two-phase state between bubble and dew has a vapor
/// fraction in (0, 1) and compositions that close the material balance; fractions that do
/// not sum to 1 are normalised with a warning.
#[tokio::test]
async fn custom_mixture_state_and_fraction_checks() {
    let server = TestServer::start().await;
    let mut client = phase_client(&server).await;
    let selector = mixture(&[("R-290", 0.5), ("R-600a", 0.5)], pb::FractionBasis::Mass);
    let sat = client
        .get_saturation(at_temperature(selector.clone(), 280.0))
        .await
        .unwrap()
        .into_inner();
    let bd = sat.bubble_dew.unwrap();
    let p_mid = 0.5 * (bd.bubble_pressure_pa + bd.dew_pressure_pa);
    let state = client
        .get_state(pb::GetStateRequest {
            fluid: selector.clone(),
            temperature_k: 280.0,
            pressure_pa: p_mid,
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    assert_eq!(state.phase, pb::Phase::TwoPhase as i32);
    let split = state.two_phase.unwrap();
    assert!(split.vapor_fraction_mol > 0.0 && split.vapor_fraction_mol < 1.0);
    let feed = &state.basis.as_ref().unwrap().composition;
    for (i, f) in feed.iter().enumerate() {
        let b = split.vapor_fraction_mol;
        let balance = (1.0 - b) * split.liquid_composition[i].mole_fraction
            + b * split.vapor_composition[i].mole_fraction;
        assert!((balance - f.mole_fraction).abs() < 1e-10);
    }
    // Subcooled above the bubble pressure: subcooling against the bubble point is positive.
    let liquid = client
        .get_state(pb::GetStateRequest {
            fluid: selector,
            temperature_k: 280.0,
            pressure_pa: 1.3 * bd.bubble_pressure_pa,
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    assert_eq!(liquid.phase, pb::Phase::SubcooledLiquid as i32);
    assert!(liquid.margins.unwrap().subcooling_k.unwrap() > 0.0);

    let skewed = mixture(
        &[("propane", 0.6), ("isobutane", 0.6)],
        pb::FractionBasis::Mole,
    );
    let answer = client
        .get_saturation(at_temperature(skewed, 280.0))
        .await
        .unwrap()
        .into_inner();
    let warnings = answer.basis.unwrap().warnings;
    assert!(
        warnings.iter().any(|w| w.contains("normalised")),
        "{warnings:?}"
    );

    let bad = [
        (
            mixture(
                &[("propane", -0.2), ("isobutane", 1.2)],
                pb::FractionBasis::Mole,
            ),
            "components[0].fraction",
        ),
        (
            mixture(
                &[("propane", 0.5), ("unobtainium", 0.5)],
                pb::FractionBasis::Mole,
            ),
            "components[1].fluid",
        ),
        (
            mixture(
                &[("propane", 0.5), ("isobutane", 0.5)],
                pb::FractionBasis::Unspecified,
            ),
            "fraction_basis",
        ),
        (mixture(&[], pb::FractionBasis::Mole), "components"),
    ];
    for (selector, fragment) in bad {
        let status = client
            .get_saturation(at_temperature(selector, 280.0))
            .await
            .unwrap_err();
        assert_eq!(status.code(), Code::InvalidArgument, "{status:?}");
        assert!(
            status.message().contains(fragment),
            "{fragment}: {}",
            status.message()
        );
    }
    server.stop().await;
}
