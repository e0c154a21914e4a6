//! `binodal fluids` (list) and `binodal fluid NAME` (one entry).

use binodal_proto::v1::{FluidDescription, FluidKind, ListFluidsRequest, ModelSupport};
use serde_json::json;

use crate::cli::ClassArg;
use crate::commands::connect;
use crate::config::Settings;
use crate::report::{
    Body, Document, Field, Value, accuracy_json, accuracy_sentence, caution, class_key, model_key,
    model_label,
};
use crate::units::Quantity;

fn kind_key(kind: FluidKind) -> &'static str {
    match kind {
        FluidKind::Unspecified => "unspecified",
        FluidKind::Pure => "pure",
        FluidKind::Blend => "blend",
    }
}

/// Lists the catalogue, filtered by safety class and text.
pub async fn list(
    settings: &Settings,
    classes: &[ClassArg],
    search: Option<&str>,
) -> anyhow::Result<Document> {
    let service = connect(settings).await?;
    let request = ListFluidsRequest {
        safety_classes: classes.iter().map(|c| c.proto().into()).collect(),
        text: search.unwrap_or_default().to_string(),
    };
    let response = service
        .phase()
        .list_fluids(request)
        .await
        .map_err(|status| service.error(status))?
        .into_inner();
    let rows: Vec<Vec<Field>> = response
        .fluids
        .iter()
        .map(|fluid| {
            vec![
                Field::text("fluid_id", "id", fluid.fluid_id.clone()),
                Field::text("display_name", "name", fluid.display_name.clone()),
                Field::text("ashrae_number", "number", fluid.ashrae_number.clone()),
                Field::text(
                    "chemical_name",
                    "chemical name",
                    fluid.chemical_name.clone(),
                ),
                Field::text("safety_class", "class", class_key(fluid.safety_class())),
                Field::text("kind", "kind", kind_key(fluid.kind())),
            ]
        })
        .collect();
    let mut document = Document::new(None, Body::Rows(rows));
    if response.fluids.is_empty() {
        document
            .notes
            .push("no fluid matches these filters".to_string());
    }
    Ok(document)
}

/// Shows one catalogue entry.
pub async fn show(settings: &Settings, name: &str) -> anyhow::Result<Document> {
    let service = connect(settings).await?;
    let fluid = service.describe(name).await?;
    let mut document = Document::new(Some(fluid.fluid_id.clone()), Body::Record(fields(&fluid)));
    document.caution = caution(&fluid, None, settings.units);
    Ok(document)
}

fn non_empty(text: &str) -> Option<String> {
    (!text.is_empty()).then(|| text.to_string())
}

/// A blend's "critical" constants are the pseudo-critical point of Kay's rule (mole-fraction
/// averages of the components' critical constants), not the mixture's true critical point.
fn critical_label(blend: bool, label: &'static str) -> &'static str {
    match (blend, label) {
        (true, "critical temperature") => "pseudo-critical temperature (Kay's rule)",
        (true, "critical pressure") => "pseudo-critical pressure (Kay's rule)",
        _ => label,
    }
}

fn fields(fluid: &FluidDescription) -> Vec<Field> {
    use Quantity as Q;
    let blend = !fluid.blend_components.is_empty();
    let components: Vec<String> = fluid
        .blend_components
        .iter()
        .map(|c| format!("{} {:.4}", c.fluid_id, c.mass_fraction))
        .collect();
    vec![
        Field::text("display_name", "name", fluid.display_name.clone()),
        Field::maybe_text(
            "ashrae_number",
            "ASHRAE number",
            non_empty(&fluid.ashrae_number),
        ),
        Field::maybe_text(
            "chemical_name",
            "chemical name",
            non_empty(&fluid.chemical_name),
        ),
        Field::maybe_text("formula", "formula", non_empty(&fluid.formula)),
        Field::maybe_text("cas_number", "CAS number", non_empty(&fluid.cas_number)),
        Field::text("kind", "kind", kind_key(fluid.kind())),
        Field {
            key: "blend_components",
            label: "components (mass fraction)",
            value: if components.is_empty() {
                Value::Absent(None)
            } else {
                Value::List(components)
            },
        },
        Field::text(
            "safety_class",
            "safety class (ASHRAE 34)",
            class_key(fluid.safety_class()),
        ),
        Field::text("catalogue_caution", "hazards", fluid.caution.clone()),
        Field::number(
            "molar_mass_kg_per_mol",
            "molar mass (kg/mol)",
            fluid.molar_mass_kg_per_mol,
            6,
        ),
        Field::quantity(
            "critical_temperature_k",
            critical_label(blend, "critical temperature"),
            Q::Temperature,
            fluid.critical_temperature_k,
        ),
        Field::quantity(
            "critical_pressure_pa",
            critical_label(blend, "critical pressure"),
            Q::Pressure,
            fluid.critical_pressure_pa,
        ),
        Field::maybe(
            "critical_density_kg_per_m3",
            "critical density",
            Q::Density,
            fluid.critical_density_kg_per_m3,
        ),
        match fluid.acentric_factor {
            Some(omega) => Field::number("acentric_factor", "acentric factor", omega, 4),
            None => Field::absent("acentric_factor", "acentric factor"),
        },
        Field::maybe(
            "normal_boiling_point_k",
            "normal boiling point",
            Q::Temperature,
            fluid.normal_boiling_point_k,
        ),
        Field::maybe(
            "triple_point_temperature_k",
            "triple-point temperature",
            Q::Temperature,
            fluid.triple_point_temperature_k,
        ),
        Field::maybe(
            "triple_point_pressure_pa",
            "triple-point pressure",
            Q::Pressure,
            fluid.triple_point_pressure_pa,
        ),
        Field {
            key: "aliases",
            label: "also known as",
            value: Value::List(fluid.aliases.clone()),
        },
        Field::flag(
            "user_defined",
            "from the server's user fluid file",
            fluid.user_defined,
        ),
        models_field(&fluid.models),
        Field {
            key: "sources",
            label: "sources",
            value: Value::Nested(json!(fluid.sources), fluid.sources.clone()),
        },
    ]
}

fn models_field(models: &[ModelSupport]) -> Field {
    let json = models
        .iter()
        .map(|m| {
            json!({
                "model": model_key(m.equation_of_state()),
                "alpha_function": alpha_key(m.alpha_function()),
                "alpha_function_detail": m.alpha_function_detail,
                "recorded_deviation": m.accuracy.as_ref().map_or(serde_json::Value::Null, accuracy_json),
            })
        })
        .collect::<Vec<_>>();
    let lines = models
        .iter()
        .map(|m| {
            let accuracy = m.accuracy.as_ref().map_or(
                "not checked against reference data".to_string(),
                accuracy_sentence,
            );
            format!("{}: {accuracy}", model_label(m.equation_of_state()))
        })
        .collect();
    Field {
        key: "models",
        label: "models and recorded deviation",
        value: Value::Nested(serde_json::Value::Array(json), lines),
    }
}

fn alpha_key(alpha: binodal_proto::v1::AlphaFunction) -> &'static str {
    use binodal_proto::v1::AlphaFunction as A;
    match alpha {
        A::Unspecified => "unspecified",
        A::Constant => "constant",
        A::InverseSquareRoot => "inverse-square-root",
        A::AcentricCorrelation => "acentric-correlation",
        A::FluidFit => "fluid-fit",
    }
}
