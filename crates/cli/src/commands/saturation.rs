//! `binodal saturation NAME --at VALUE`: saturation at a temperature or a pressure.

use binodal_proto::v1::get_saturation_request;

use crate::commands::{
    ambient_fields, check_below_critical_pressure, check_below_critical_temperature, connect,
    get_saturation, highest_pressure, saturation_fields,
};
use crate::config::Settings;
use crate::reading::{Condition, Reading};
use crate::report::{Basis, Body, Document, caution};

/// Saturation of `name` at `at`.
pub async fn run(settings: &Settings, name: &str, at: Reading) -> anyhow::Result<Document> {
    let condition = Condition::from_reading(at, settings.ambient.ambient)?;
    let service = connect(settings).await?;
    let fluid = service.describe(name).await?;
    let units = settings.units;
    let (request, pressure) = match condition {
        Condition::Temperature(t) => {
            check_below_critical_temperature(&fluid, t.kelvin(), "--at", units)?;
            (
                get_saturation_request::Condition::TemperatureK(t.kelvin()),
                None,
            )
        }
        Condition::Pressure(p) => {
            check_below_critical_pressure(&fluid, p.value_pa, "--at", units)?;
            (
                get_saturation_request::Condition::PressurePa(p.value_pa),
                Some(p),
            )
        }
    };
    let response = get_saturation(&service, settings, &fluid, request).await?;
    let mut fields = saturation_fields(&response);
    fields.extend(ambient_fields(settings, pressure.as_ref()));
    let mut document = Document::new(Some(fluid.fluid_id.clone()), Body::Record(fields));
    document.basis = response.basis.as_ref().map(Basis::from_proto);
    document.caution = caution(&fluid, Some(highest_pressure(&response)), units);
    Ok(document)
}
