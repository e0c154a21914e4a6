//! `binodal superheat` and `binodal subcooling`: margins from field readings.
//!
//! Superheat is the line temperature minus the dew temperature at the line pressure; subcooling
//! is the bubble temperature at the line pressure minus the line temperature. For a pure fluid the
//! dew and bubble temperatures are both the saturation temperature.

use binodal_proto::v1::get_saturation_request;

use crate::commands::{
    ambient_fields, check_below_critical_pressure, connect, get_saturation, is_blend,
};
use crate::config::Settings;
use crate::report::{Basis, Body, Document, Field, caution};
use crate::units::{
    PressureReading, Quantity, Temperature, fmt_temperature, fmt_temperature_difference,
};

/// Which margin is asked for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Margin {
    /// Vapor side: temperature above the dew point.
    Superheat,
    /// Liquid side: temperature below the bubble point.
    Subcooling,
}

/// Computes the margin of a line at `pressure` and `temperature`.
pub async fn run(
    settings: &Settings,
    margin: Margin,
    name: &str,
    pressure: PressureReading,
    temperature: Temperature,
) -> anyhow::Result<Document> {
    use Quantity as Q;
    let pressure = pressure.to_absolute(settings.ambient.ambient)?;
    if temperature.kelvin() <= 0.0 {
        anyhow::bail!(
            "--temperature: {} is not above absolute zero; give the line temperature read at the \
             sensor",
            fmt_temperature(temperature.kelvin(), settings.units)
        );
    }
    let service = connect(settings).await?;
    let fluid = service.describe(name).await?;
    let units = settings.units;
    check_below_critical_pressure(&fluid, pressure.value_pa, "--pressure", units)?;
    let response = get_saturation(
        &service,
        settings,
        &fluid,
        get_saturation_request::Condition::PressurePa(pressure.value_pa),
    )
    .await?;

    let blend = is_blend(&fluid) || response.bubble_dew.is_some();
    let (point, label, reference_k) = match (margin, &response.bubble_dew) {
        (Margin::Superheat, Some(points)) => (
            "dew",
            "dew temperature at this pressure",
            points.dew_temperature_k,
        ),
        (Margin::Subcooling, Some(points)) => (
            "bubble",
            "bubble temperature at this pressure",
            points.bubble_temperature_k,
        ),
        (_, None) => (
            "saturation",
            "saturation temperature at this pressure",
            response.saturation_temperature_k,
        ),
    };
    if blend && response.bubble_dew.is_none() {
        anyhow::bail!(
            "the server gave no bubble and dew points for the blend {}; the margin cannot be \
             computed against the right point",
            fluid.display_name
        );
    }
    let value_k = match margin {
        Margin::Superheat => temperature.kelvin() - reference_k,
        Margin::Subcooling => reference_k - temperature.kelvin(),
    };
    let (key, margin_label) = match margin {
        Margin::Superheat => ("superheat_k", "superheat"),
        Margin::Subcooling => ("subcooling_k", "subcooling"),
    };

    let mut fields = vec![
        Field::quantity(
            "pressure_pa",
            "line pressure",
            Q::Pressure,
            pressure.value_pa,
        ),
        Field::quantity(
            "line_temperature_k",
            "line temperature",
            Q::Temperature,
            temperature.kelvin(),
        ),
        Field::quantity(
            "saturation_temperature_k",
            label,
            Q::Temperature,
            reference_k,
        ),
        Field::text("saturation_point", "compared with", point),
        Field::quantity(key, margin_label, Q::TemperatureDifference, value_k),
    ];
    fields.extend(ambient_fields(settings, Some(&pressure)));

    let mut document = Document::new(Some(fluid.fluid_id.clone()), Body::Record(fields));
    document.basis = response.basis.as_ref().map(Basis::from_proto);
    if let Some(triple) = fluid.triple_point_temperature_k
        && temperature.kelvin() < triple
    {
        document.notes.push(format!(
            "the line temperature lies below the triple point of {} ({}): the fluid would be \
             solid there, and the margin is not meaningful; check the reading",
            fluid.display_name,
            fmt_temperature(triple, units)
        ));
    }
    if value_k < 0.0 {
        let by = fmt_temperature_difference(-value_k, units);
        document.notes.push(match margin {
            Margin::Superheat => format!(
                "the line is {by} colder than the {point} point at this pressure: there is no \
                 superheat and liquid may be present; check the readings and where the sensor sits"
            ),
            Margin::Subcooling => format!(
                "the line is {by} warmer than the {point} point at this pressure: there is no \
                 subcooling and flash gas may be present; check the readings and where the sensor \
                 sits"
            ),
        });
    }
    document.caution = caution(&fluid, Some(pressure.value_pa), units);
    Ok(document)
}
