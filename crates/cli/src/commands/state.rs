//! `binodal state NAME --temperature T --pressure P`: phase, margins and properties at (T, P).

use binodal_proto::v1::{GetStateRequest, Phase};

use crate::commands::{ambient_fields, connect, model, selector};
use crate::config::Settings;
use crate::report::{Basis, Body, Document, Field, caution, phase_key};
use crate::units::{PressureReading, Quantity, Temperature};

/// The state of `name` at a temperature and a pressure reading.
pub async fn run(
    settings: &Settings,
    name: &str,
    temperature: Temperature,
    pressure: PressureReading,
) -> anyhow::Result<Document> {
    use Quantity as Q;
    let pressure = pressure.to_absolute(settings.ambient.ambient)?;
    let service = connect(settings).await?;
    let fluid = service.describe(name).await?;
    let request = GetStateRequest {
        fluid: selector(&fluid.fluid_id),
        equation_of_state: model(settings).into(),
        reference_state: 0,
        temperature_k: temperature.kelvin(),
        pressure_pa: pressure.value_pa,
    };
    let response = service
        .phase()
        .get_state(request)
        .await
        .map_err(|status| service.error(status))?
        .into_inner();

    let margins = response.margins.unwrap_or_default();
    let properties = response.properties.as_ref();
    let mut fields = vec![
        Field::text("phase", "phase", phase_key(response.phase())),
        Field::quantity(
            "temperature_k",
            "temperature",
            Q::Temperature,
            temperature.kelvin(),
        ),
        Field::quantity("pressure_pa", "pressure", Q::Pressure, pressure.value_pa),
    ];
    fields.extend(ambient_fields(settings, Some(&pressure)));
    fields.extend([
        Field::maybe(
            "saturation_temperature_k",
            "saturation temperature at this pressure",
            Q::Temperature,
            margins.saturation_temperature_k,
        ),
        Field::maybe(
            "saturation_pressure_pa",
            "saturation pressure at this temperature",
            Q::Pressure,
            margins.saturation_pressure_pa,
        ),
        Field::maybe(
            "bubble_temperature_k",
            "bubble temperature at this pressure",
            Q::Temperature,
            margins.bubble_temperature_k,
        ),
        Field::maybe(
            "dew_temperature_k",
            "dew temperature at this pressure",
            Q::Temperature,
            margins.dew_temperature_k,
        ),
        Field::maybe(
            "bubble_pressure_pa",
            "bubble pressure at this temperature",
            Q::Pressure,
            margins.bubble_pressure_pa,
        ),
        Field::maybe(
            "dew_pressure_pa",
            "dew pressure at this temperature",
            Q::Pressure,
            margins.dew_pressure_pa,
        ),
        Field::maybe(
            "subcooling_k",
            "subcooling",
            Q::TemperatureDifference,
            margins.subcooling_k,
        ),
        Field::maybe(
            "superheat_k",
            "superheat",
            Q::TemperatureDifference,
            margins.superheat_k,
        ),
        Field::maybe(
            "pressure_above_bubble_pa",
            "pressure above the bubble (saturation) pressure",
            Q::PressureDifference,
            margins.pressure_above_bubble_pa,
        ),
        Field::maybe(
            "pressure_below_dew_pa",
            "pressure below the dew (saturation) pressure",
            Q::PressureDifference,
            margins.pressure_below_dew_pa,
        ),
        Field::maybe(
            "freezing_margin_k",
            "above the estimated freezing temperature",
            Q::TemperatureDifference,
            margins.freezing_margin_k,
        ),
        Field::maybe(
            "density_kg_per_m3",
            "density",
            Q::Density,
            properties.map(|p| p.density_kg_per_m3),
        ),
        Field::maybe(
            "enthalpy_j_per_kg",
            "enthalpy",
            Q::SpecificEnergy,
            properties.and_then(|p| p.enthalpy_j_per_kg),
        ),
        Field::maybe(
            "entropy_j_per_kg_k",
            "entropy",
            Q::SpecificEntropy,
            properties.and_then(|p| p.entropy_j_per_kg_k),
        ),
        Field::maybe(
            "isobaric_heat_capacity_j_per_kg_k",
            "isobaric heat capacity",
            Q::SpecificEntropy,
            properties.and_then(|p| p.isobaric_heat_capacity_j_per_kg_k),
        ),
        match properties {
            Some(p) => Field::number(
                "compressibility_factor",
                "compressibility factor",
                p.compressibility_factor,
                4,
            ),
            None => Field::absent("compressibility_factor", "compressibility factor"),
        },
        match &response.two_phase {
            Some(split) => Field::number(
                "vapor_mass_fraction",
                "vapor mass fraction",
                split.vapor_fraction_mass,
                4,
            ),
            None => Field::absent("vapor_mass_fraction", "vapor mass fraction"),
        },
        Field::number(
            "reduced_temperature",
            "reduced temperature T/Tc",
            response.reduced_temperature,
            4,
        ),
        Field::number(
            "reduced_pressure",
            "reduced pressure P/Pc",
            response.reduced_pressure,
            4,
        ),
        Field::flag(
            "estimated",
            "estimate only (below the triple point)",
            response.estimated,
        ),
        Field::flag(
            "near_critical",
            "near the critical point",
            response.near_critical,
        ),
    ]);

    let mut document = Document::new(Some(fluid.fluid_id.clone()), Body::Record(fields));
    document.basis = response.basis.as_ref().map(Basis::from_proto);
    if response.phase() == Phase::Saturated {
        document.notes.push(
            "on the saturation line: temperature and pressure do not fix the split between liquid \
             and vapor, so no bulk properties are given; `binodal saturation` shows both phases"
                .to_string(),
        );
    }
    if response.estimated {
        document.notes.push(
            "below the triple point the real fluid would be solid; the cubic model has no solid \
             phase, so these properties are only an estimate"
                .to_string(),
        );
    }
    if response.near_critical {
        document.notes.push(
            "near the critical point cubic models lose accuracy faster than the recorded \
             deviation suggests"
                .to_string(),
        );
    }
    document.caution = caution(&fluid, Some(pressure.value_pa), settings.units);
    Ok(document)
}
