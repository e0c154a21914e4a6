//! The commands. Each builds a [`crate::report::Document`] from the service's answers.

pub mod diagram;
pub mod fluids;
pub mod health;
pub mod margin;
pub mod saturation;
pub mod state;
pub mod table;

use std::io::IsTerminal as _;

use anyhow::bail;
use binodal_proto::v1::fluid_selector::Choice;
use binodal_proto::v1::{
    EquationOfState, FluidDescription, FluidKind, FluidSelector, GetSaturationRequest,
    GetSaturationResponse, SaturatedPhase, get_saturation_request,
};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

use crate::client::Service;
use crate::config::Settings;
use crate::report::Field;
use crate::units::{AbsolutePressure, Quantity, UnitSystem, fmt_pressure, fmt_temperature};

/// Work with more steps than this shows a progress bar on standard error.
const PROGRESS_FROM_STEPS: usize = 20;

/// A progress bar on standard error for `steps` calls, shown only when there are more than
/// [`PROGRESS_FROM_STEPS`] and standard error is a terminal; hidden otherwise.
pub fn progress_bar(steps: usize, message: String) -> ProgressBar {
    if steps <= PROGRESS_FROM_STEPS || !std::io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::with_draw_target(Some(steps as u64), ProgressDrawTarget::stderr());
    if let Ok(style) = ProgressStyle::with_template("{msg} [{wide_bar}] {pos}/{len}") {
        bar.set_style(style);
    }
    bar.set_message(message);
    bar
}

/// Connects to the configured server.
pub async fn connect(settings: &Settings) -> anyhow::Result<Service> {
    Ok(Service::connect_with(&settings.server, &settings.security).await?)
}

/// The selector for a catalogue fluid.
pub fn selector(name: &str) -> Option<FluidSelector> {
    Some(FluidSelector {
        choice: Some(Choice::Fluid(name.to_string())),
    })
}

/// The model to request: the chosen one, or the server's default.
pub fn model(settings: &Settings) -> EquationOfState {
    settings
        .model
        .map_or(EquationOfState::Unspecified, |m| m.proto())
}

/// Whether the fluid is a blend.
pub fn is_blend(fluid: &FluidDescription) -> bool {
    fluid.kind() == FluidKind::Blend
}

/// Saturation of `fluid` at a temperature (K) or an absolute pressure (Pa).
pub async fn get_saturation(
    service: &Service,
    settings: &Settings,
    fluid: &FluidDescription,
    condition: get_saturation_request::Condition,
) -> anyhow::Result<GetSaturationResponse> {
    let request = GetSaturationRequest {
        fluid: selector(&fluid.fluid_id),
        equation_of_state: model(settings).into(),
        reference_state: 0,
        condition: Some(condition),
    };
    Ok(service
        .phase()
        .get_saturation(request)
        .await
        .map_err(|status| service.error(status))?
        .into_inner())
}

/// Refuses a temperature at or above the critical temperature, where there is no saturation.
/// `what` names the option, e.g. `--at 110C`.
pub fn check_below_critical_temperature(
    fluid: &FluidDescription,
    kelvin: f64,
    what: &str,
    units: UnitSystem,
) -> anyhow::Result<()> {
    let critical = fluid.critical_temperature_k;
    if critical > 0.0 && kelvin >= critical {
        bail!(
            "{what}: {} is at or above the critical temperature of {} ({}); saturation exists only \
             below it",
            fmt_temperature(kelvin, units),
            fluid.display_name,
            fmt_temperature(critical, units)
        );
    }
    Ok(())
}

/// Refuses a pressure at or above the critical pressure, where there is no saturation.
pub fn check_below_critical_pressure(
    fluid: &FluidDescription,
    pascal: f64,
    what: &str,
    units: UnitSystem,
) -> anyhow::Result<()> {
    let critical = fluid.critical_pressure_pa;
    if critical > 0.0 && pascal >= critical {
        bail!(
            "{what}: {} is at or above the critical pressure of {} ({}); saturation exists only \
             below it",
            fmt_pressure(pascal, units),
            fluid.display_name,
            fmt_pressure(critical, units)
        );
    }
    Ok(())
}

/// The ambient fields of an answer: the ambient pressure added to a gauge reading and where it
/// came from; both absent for an absolute reading.
pub fn ambient_fields(settings: &Settings, pressure: Option<&AbsolutePressure>) -> Vec<Field> {
    let used = pressure.and_then(|p| p.ambient);
    vec![
        Field::maybe(
            "ambient_pressure_pa",
            "ambient pressure (added to the gauge reading)",
            Quantity::Pressure,
            used.map(|u| u.pressure_pa),
        ),
        Field::maybe_text(
            "ambient_source",
            "ambient source",
            used.map(|u| settings.ambient.source_text(&u)),
        ),
    ]
}

/// Density, enthalpy and entropy of a saturated phase (NaN-free options).
fn phase_values(phase: Option<&SaturatedPhase>) -> (Option<f64>, Option<f64>, Option<f64>) {
    match phase.and_then(|p| p.properties.as_ref()) {
        Some(p) => (
            Some(p.density_kg_per_m3),
            p.enthalpy_j_per_kg,
            p.entropy_j_per_kg_k,
        ),
        None => (None, None, None),
    }
}

/// The fields of one saturation answer. Keys are the same for pure fluids and blends; the
/// bubble/dew/glide fields are absent (null) for pure fluids.
pub fn saturation_fields(response: &GetSaturationResponse) -> Vec<Field> {
    use Quantity as Q;
    let points = response.bubble_dew.as_ref();
    let (liquid_density, liquid_enthalpy, liquid_entropy) = phase_values(response.liquid.as_ref());
    let (vapor_density, vapor_enthalpy, vapor_entropy) = phase_values(response.vapor.as_ref());
    vec![
        Field::quantity(
            "saturation_temperature_k",
            if points.is_some() {
                "saturation temperature (bubble)"
            } else {
                "saturation temperature"
            },
            Q::Temperature,
            response.saturation_temperature_k,
        ),
        Field::quantity(
            "saturation_pressure_pa",
            if points.is_some() {
                "saturation pressure (bubble)"
            } else {
                "saturation pressure"
            },
            Q::Pressure,
            response.saturation_pressure_pa,
        ),
        Field::maybe(
            "bubble_temperature_k",
            "bubble temperature",
            Q::Temperature,
            points.map(|b| b.bubble_temperature_k),
        ),
        Field::maybe(
            "dew_temperature_k",
            "dew temperature",
            Q::Temperature,
            points.map(|b| b.dew_temperature_k),
        ),
        Field::maybe(
            "bubble_pressure_pa",
            "bubble pressure",
            Q::Pressure,
            points.map(|b| b.bubble_pressure_pa),
        ),
        Field::maybe(
            "dew_pressure_pa",
            "dew pressure",
            Q::Pressure,
            points.map(|b| b.dew_pressure_pa),
        ),
        Field::maybe(
            "glide_k",
            "temperature glide",
            Q::TemperatureDifference,
            points.map(|b| b.temperature_glide_k),
        ),
        Field::maybe(
            "liquid_density_kg_per_m3",
            "liquid density",
            Q::Density,
            liquid_density,
        ),
        Field::maybe(
            "vapor_density_kg_per_m3",
            "vapor density",
            Q::Density,
            vapor_density,
        ),
        Field::maybe(
            "liquid_enthalpy_j_per_kg",
            "liquid enthalpy",
            Q::SpecificEnergy,
            liquid_enthalpy,
        ),
        Field::maybe(
            "vapor_enthalpy_j_per_kg",
            "vapor enthalpy",
            Q::SpecificEnergy,
            vapor_enthalpy,
        ),
        Field::quantity(
            "latent_heat_j_per_kg",
            "latent heat",
            Q::SpecificEnergy,
            response.enthalpy_of_vaporization_j_per_kg,
        ),
        Field::maybe(
            "liquid_entropy_j_per_kg_k",
            "liquid entropy",
            Q::SpecificEntropy,
            liquid_entropy,
        ),
        Field::maybe(
            "vapor_entropy_j_per_kg_k",
            "vapor entropy",
            Q::SpecificEntropy,
            vapor_entropy,
        ),
    ]
}

/// The highest absolute pressure in a saturation answer (the dew pressure of a blend can differ
/// from its bubble pressure), for the high-pressure caution.
pub fn highest_pressure(response: &GetSaturationResponse) -> f64 {
    let mut highest = response.saturation_pressure_pa;
    if let Some(points) = &response.bubble_dew {
        highest = highest
            .max(points.bubble_pressure_pa)
            .max(points.dew_pressure_pa);
    }
    highest
}
