//! One answer, three renderings: aligned text for people, JSON (SI, stable keys) and CSV.
//!
//! A command builds a [`Document`]: its fields (or rows of fields), the basis of the result (model,
//! reference state, recorded deviation), notes, and a caution. Each field has a JSON key that ends
//! in its SI unit (`saturation_temperature_k`), a label for people, and a value that the renderer
//! converts to the chosen unit system for table and CSV output. JSON is always SI.

use std::io::Write as _;

use binodal_proto::v1::{
    EquationOfState, FluidDescription, ModelAccuracy, Phase, ReferenceState, ResultBasis,
    SafetyClass,
};
use comfy_table::{CellAlignment, ContentArrangement, Table, presets};
use serde_json::{Map, Value as Json, json};

use crate::cli::OutputFormat;
use crate::units::{Quantity, UnitSystem, convert, fmt_pressure, format_quantity};

/// The output was closed by its reader (standard output piped into `head`, say, or standard
/// error, where CSV output puts the basis and caution). The command ends with success: the
/// reader stopped reading.
///
/// Only errors from writing the output become this marker. A broken pipe anywhere else (a
/// connection the server closed, a refused TLS handshake) stays an error, so a call that never
/// reached the service can never exit with success.
#[derive(Debug, thiserror::Error)]
#[error("the output was closed by its reader")]
pub struct OutputClosed;

/// Whether `error` means the output was closed by its reader: the one rule `main` and `watch`
/// apply to end a command with success.
pub fn is_output_closed(error: &anyhow::Error) -> bool {
    error.is::<OutputClosed>()
}

/// An error from writing standard output or standard error: a closed pipe becomes
/// [`OutputClosed`].
pub fn output_error(error: std::io::Error) -> anyhow::Error {
    if error.kind() == std::io::ErrorKind::BrokenPipe {
        anyhow::Error::new(OutputClosed)
    } else {
        anyhow::Error::new(error).context("cannot write the output")
    }
}

/// [`output_error`] for the CSV writer, whose errors wrap the I/O error.
pub fn csv_output_error(error: csv::Error) -> anyhow::Error {
    if let csv::ErrorKind::Io(io) = error.kind()
        && io.kind() == std::io::ErrorKind::BrokenPipe
    {
        return anyhow::Error::new(OutputClosed);
    }
    anyhow::Error::new(error).context("cannot write the output")
}

/// Printed under every answer (a JSON field `advisory`).
pub const ADVISORY: &str = "Results are advisory: they come from cubic equations of state and \
                            defer to local codes and licensed practice.";

/// Absolute pressure above which a high-pressure caution is printed: 25 bar(a). This is a
/// `common practice` threshold for calling a refrigeration circuit "high pressure" in the field,
/// not a value from a standard; local codes set the binding limits.
pub const HIGH_PRESSURE_PA: f64 = 25.0e5;

/// A field's value.
#[derive(Debug, Clone, PartialEq)]
pub enum Value {
    /// A physical quantity in SI units.
    Quantity(Quantity, f64),
    /// Text.
    Text(String),
    /// A dimensionless number shown with this many decimals.
    Number(f64, usize),
    /// A whole number.
    Count(u64),
    /// Yes or no.
    Flag(bool),
    /// A list of texts (JSON array; joined with commas for people).
    List(Vec<String>),
    /// A structure: its JSON, and its lines for people (one per entry).
    Nested(Json, Vec<String>),
    /// Not defined here (JSON null, empty CSV cell, left out of text tables); the quantity it
    /// would have, for the column header.
    Absent(Option<Quantity>),
}

/// One named value of an answer.
#[derive(Debug, Clone, PartialEq)]
pub struct Field {
    /// JSON key; for a quantity it ends in its SI unit (`_k`, `_pa`, `_j_per_kg`, ...).
    pub key: &'static str,
    /// Label for people.
    pub label: &'static str,
    /// The value.
    pub value: Value,
}

impl Field {
    /// A quantity in SI units.
    pub fn quantity(key: &'static str, label: &'static str, quantity: Quantity, si: f64) -> Field {
        Field {
            key,
            label,
            value: Value::Quantity(quantity, si),
        }
    }

    /// A quantity that may be absent.
    pub fn maybe(
        key: &'static str,
        label: &'static str,
        quantity: Quantity,
        si: Option<f64>,
    ) -> Field {
        Field {
            key,
            label,
            value: si
                .filter(|v| v.is_finite())
                .map_or(Value::Absent(Some(quantity)), |v| {
                    Value::Quantity(quantity, v)
                }),
        }
    }

    /// A field that is not defined for this answer (JSON null).
    pub fn absent(key: &'static str, label: &'static str) -> Field {
        Field {
            key,
            label,
            value: Value::Absent(None),
        }
    }

    /// A text value.
    pub fn text(key: &'static str, label: &'static str, text: impl Into<String>) -> Field {
        Field {
            key,
            label,
            value: Value::Text(text.into()),
        }
    }

    /// A text value that may be absent.
    pub fn maybe_text(key: &'static str, label: &'static str, text: Option<String>) -> Field {
        Field {
            key,
            label,
            value: text.map_or(Value::Absent(None), Value::Text),
        }
    }

    /// A dimensionless number.
    pub fn number(key: &'static str, label: &'static str, value: f64, places: usize) -> Field {
        Field {
            key,
            label,
            value: Value::Number(value, places),
        }
    }

    /// A yes/no value.
    pub fn flag(key: &'static str, label: &'static str, value: bool) -> Field {
        Field {
            key,
            label,
            value: Value::Flag(value),
        }
    }

    /// The column header for CSV and row tables: the label and the unit in the chosen system.
    fn header(&self, units: UnitSystem) -> String {
        match &self.value {
            Value::Quantity(quantity, _) | Value::Absent(Some(quantity)) => {
                format!("{} ({})", self.label, convert(*quantity, 0.0, units).1)
            }
            _ => self.label.to_string(),
        }
    }

    /// The value as a cell, without its unit; empty when absent.
    fn cell(&self, units: UnitSystem) -> String {
        match &self.value {
            Value::Quantity(quantity, si) => {
                let text = format_quantity(*quantity, *si, units);
                let unit = convert(*quantity, 0.0, units).1;
                text.strip_suffix(unit)
                    .map(|number| number.trim_end().to_string())
                    .unwrap_or(text)
            }
            other => plain(other),
        }
    }

    /// The value with its unit, for key-value text.
    fn display(&self, units: UnitSystem) -> String {
        match &self.value {
            Value::Quantity(quantity, si) => format_quantity(*quantity, *si, units),
            other => plain(other),
        }
    }

    fn json(&self) -> Json {
        match &self.value {
            Value::Quantity(_, si) => number_json(*si),
            Value::Text(text) => Json::String(text.clone()),
            Value::Number(value, _) => number_json(*value),
            Value::Count(count) => json!(count),
            Value::Flag(flag) => Json::Bool(*flag),
            Value::List(items) => Json::Array(items.iter().cloned().map(Json::String).collect()),
            Value::Nested(json, _) => json.clone(),
            Value::Absent(_) => Json::Null,
        }
    }
}

fn plain(value: &Value) -> String {
    match value {
        Value::Quantity(_, si) => si.to_string(),
        Value::Text(text) => text.clone(),
        Value::Number(value, places) => format!("{value:.places$}"),
        Value::Count(count) => count.to_string(),
        Value::Flag(true) => "yes".to_string(),
        Value::Flag(false) => "no".to_string(),
        Value::List(items) => items.join(", "),
        Value::Nested(_, lines) => lines.join(" | "),
        Value::Absent(_) => String::new(),
    }
}

fn number_json(value: f64) -> Json {
    serde_json::Number::from_f64(value).map_or(Json::Null, Json::Number)
}

/// The body of an answer.
#[derive(Debug, Clone, PartialEq)]
pub enum Body {
    /// One answer: fields shown as `label  value`.
    Record(Vec<Field>),
    /// Rows of the same fields (a table); JSON key `rows`.
    Rows(Vec<Vec<Field>>),
}

/// What a result was computed with.
#[derive(Debug, Clone, PartialEq)]
pub struct Basis {
    /// The equation of state actually used.
    pub model: EquationOfState,
    /// The reference state of enthalpy and entropy.
    pub reference_state: ReferenceState,
    /// The fluid's recorded accuracy under this model, if checked.
    pub deviation: Option<ModelAccuracy>,
}

impl Basis {
    /// From a phase response's basis.
    pub fn from_proto(basis: &ResultBasis) -> Basis {
        Basis {
            model: basis.equation_of_state(),
            reference_state: basis.reference_state(),
            deviation: basis.expected_deviation.clone(),
        }
    }

    fn json(&self) -> Json {
        json!({
            "model": model_key(self.model),
            "reference_state": reference_key(self.reference_state),
            "recorded_deviation": self.deviation.as_ref().map_or(Json::Null, accuracy_json),
        })
    }

    fn lines(&self) -> Vec<String> {
        let mut lines = vec![format!(
            "model: {}; enthalpy and entropy relative to {}",
            model_label(self.model),
            reference_label(self.reference_state)
        )];
        lines.push(match &self.deviation {
            Some(accuracy) => format!("recorded deviation: {}", accuracy_sentence(accuracy)),
            None => "recorded deviation: not checked for this fluid and model".to_string(),
        });
        lines
    }
}

/// A model's recorded accuracy as JSON (shared by `fluid` and the phase commands); figures
/// that were not checked are null.
pub fn accuracy_json(accuracy: &ModelAccuracy) -> Json {
    let figure = |value: Option<f64>| value.map_or(Json::Null, number_json);
    json!({
        "saturation_pressure_mean_percent": figure(accuracy.saturation_pressure_mean_abs_deviation_percent),
        "saturation_pressure_max_percent": figure(accuracy.saturation_pressure_max_abs_deviation_percent),
        "enthalpy_of_vaporization_mean_percent": figure(accuracy.enthalpy_of_vaporization_mean_abs_deviation_percent),
        "enthalpy_of_vaporization_max_percent": figure(accuracy.enthalpy_of_vaporization_max_abs_deviation_percent),
        "checked_from_k": figure(accuracy.checked_min_temperature_k),
        "checked_to_k": figure(accuracy.checked_max_temperature_k),
        "checked_points": accuracy.checked_point_count,
        "normal_boiling_point_deviation_k": figure(accuracy.normal_boiling_point_deviation_k),
        "reference": accuracy.reference,
    })
}

/// A model's recorded accuracy in one sentence.
pub fn accuracy_sentence(accuracy: &ModelAccuracy) -> String {
    let boiling = accuracy
        .normal_boiling_point_deviation_k
        .map(|d| format!("; normal boiling point {d:+.2} K"))
        .unwrap_or_default();
    let (Some(mean), Some(max), Some(from), Some(to)) = (
        accuracy.saturation_pressure_mean_abs_deviation_percent,
        accuracy.saturation_pressure_max_abs_deviation_percent,
        accuracy.checked_min_temperature_k,
        accuracy.checked_max_temperature_k,
    ) else {
        return format!(
            "saturation pressure and enthalpy of vaporization not checked{boiling} (against {})",
            accuracy.reference
        );
    };
    let vaporization = match (
        accuracy.enthalpy_of_vaporization_mean_abs_deviation_percent,
        accuracy.enthalpy_of_vaporization_max_abs_deviation_percent,
    ) {
        (Some(h_mean), Some(h_max)) => {
            format!("enthalpy of vaporization mean {h_mean:.2} %, max {h_max:.2} %")
        }
        _ => "enthalpy of vaporization not checked".to_string(),
    };
    format!(
        "saturation pressure mean {mean:.2} %, max {max:.2} %; {vaporization}{boiling} ({from:.2} K \
         to {to:.2} K, {} points; against {})",
        accuracy.checked_point_count, accuracy.reference
    )
}

/// A complete answer.
#[derive(Debug, Clone, PartialEq)]
pub struct Document {
    /// The fluid's catalogue id (JSON `fluid`), if the answer is about one fluid.
    pub fluid: Option<String>,
    /// The answer.
    pub body: Body,
    /// What it was computed with, if it came from a phase calculation.
    pub basis: Option<Basis>,
    /// Remarks for people (ambient used, estimates); JSON `notes`.
    pub notes: Vec<String>,
    /// The one-line caution, if any; JSON `caution` (null when none).
    pub caution: Option<String>,
}

impl Document {
    /// A document about one fluid with the given body and nothing else yet.
    pub fn new(fluid: Option<String>, body: Body) -> Document {
        Document {
            fluid,
            body,
            basis: None,
            notes: Vec::new(),
            caution: None,
        }
    }

    /// Renders the document; `stdout` receives the answer, `stderr` the remarks of CSV output
    /// (so that CSV on standard output stays machine-readable).
    pub fn render(&self, format: OutputFormat, units: UnitSystem) -> Rendered {
        match format {
            OutputFormat::Table => Rendered {
                stdout: self.text(units),
                stderr: String::new(),
            },
            OutputFormat::Json => Rendered {
                stdout: format!(
                    "{}\n",
                    serde_json::to_string_pretty(&self.json()).unwrap_or_default()
                ),
                stderr: String::new(),
            },
            OutputFormat::Csv => Rendered {
                stdout: self.csv(units),
                stderr: self.footer().join("\n") + "\n",
            },
        }
    }

    /// Writes the rendering to standard output and standard error.
    pub fn emit(&self, format: OutputFormat, units: UnitSystem) -> anyhow::Result<()> {
        let rendered = self.render(format, units);
        let mut out = std::io::stdout().lock();
        out.write_all(rendered.stdout.as_bytes())
            .and_then(|()| out.flush())
            .map_err(output_error)?;
        if !rendered.stderr.is_empty() {
            let mut err = std::io::stderr().lock();
            err.write_all(rendered.stderr.as_bytes())
                .map_err(output_error)?;
        }
        Ok(())
    }

    fn footer(&self) -> Vec<String> {
        let mut lines = Vec::new();
        if let Some(basis) = &self.basis {
            lines.extend(basis.lines());
        }
        lines.extend(self.notes.iter().map(|note| format!("note: {note}")));
        if let Some(caution) = &self.caution {
            lines.push(format!("caution: {caution}"));
        }
        lines.push(ADVISORY.to_string());
        lines
    }

    fn text(&self, units: UnitSystem) -> String {
        let mut out = String::new();
        match &self.body {
            Body::Record(fields) => {
                let shown: Vec<&Field> = fields
                    .iter()
                    .filter(|f| !matches!(f.value, Value::Absent(_)))
                    .collect();
                let width = shown
                    .iter()
                    .filter(|f| !matches!(f.value, Value::Nested(..)))
                    .map(|f| f.label.chars().count())
                    .max()
                    .unwrap_or(0);
                for field in shown {
                    match &field.value {
                        Value::Nested(_, lines) => {
                            out.push_str(&format!("{}:\n", field.label));
                            for line in lines {
                                out.push_str(&format!("  {line}\n"));
                            }
                        }
                        _ => out.push_str(&format!(
                            "{:<width$}  {}\n",
                            field.label,
                            field.display(units)
                        )),
                    }
                }
            }
            Body::Rows(rows) => {
                let rows = present_columns(rows);
                let mut table = Table::new();
                table
                    .load_preset(presets::UTF8_BORDERS_ONLY)
                    .set_content_arrangement(ContentArrangement::Disabled);
                if let Some(first) = rows.first() {
                    // The unit on a second header line keeps the columns narrow.
                    table.set_header(
                        first
                            .iter()
                            .map(|f| f.header(units).replacen(" (", "\n(", 1)),
                    );
                }
                for row in &rows {
                    table.add_row(row.iter().map(|f| f.cell(units)));
                }
                if let Some(first) = rows.first() {
                    for (index, field) in first.iter().enumerate() {
                        if matches!(field.value, Value::Quantity(..) | Value::Number(..))
                            && let Some(column) = table.column_mut(index)
                        {
                            column.set_cell_alignment(CellAlignment::Right);
                        }
                    }
                }
                out.push_str(&table.to_string());
                out.push('\n');
            }
        }
        out.push('\n');
        for line in self.footer() {
            out.push_str(&line);
            out.push('\n');
        }
        out
    }

    fn json(&self) -> Json {
        let mut object = Map::new();
        if let Some(fluid) = &self.fluid {
            object.insert("fluid".to_string(), Json::String(fluid.clone()));
        }
        match &self.body {
            Body::Record(fields) => {
                for field in fields {
                    object.insert(field.key.to_string(), field.json());
                }
            }
            Body::Rows(rows) => {
                let rows = rows
                    .iter()
                    .map(|row| {
                        Json::Object(
                            row.iter()
                                .map(|f| (f.key.to_string(), f.json()))
                                .collect::<Map<_, _>>(),
                        )
                    })
                    .collect();
                object.insert("rows".to_string(), Json::Array(rows));
            }
        }
        if let Some(basis) = &self.basis {
            object.insert("basis".to_string(), basis.json());
        }
        object.insert(
            "notes".to_string(),
            Json::Array(self.notes.iter().cloned().map(Json::String).collect()),
        );
        object.insert(
            "caution".to_string(),
            self.caution.clone().map_or(Json::Null, Json::String),
        );
        object.insert("advisory".to_string(), Json::String(ADVISORY.to_string()));
        Json::Object(object)
    }

    fn csv(&self, units: UnitSystem) -> String {
        let rows: Vec<Vec<Field>> = match &self.body {
            Body::Record(fields) => vec![fields.clone()],
            Body::Rows(rows) => present_columns(rows),
        };
        let mut writer = csv::Writer::from_writer(Vec::new());
        if let Some(first) = rows.first() {
            // Writing to a Vec cannot fail.
            writer
                .write_record(first.iter().map(|f| f.header(units)))
                .ok();
        }
        for row in &rows {
            writer.write_record(row.iter().map(|f| f.cell(units))).ok();
        }
        let bytes = writer.into_inner().unwrap_or_default();
        String::from_utf8(bytes).unwrap_or_default()
    }
}

/// The rows without the columns that are absent in every row (e.g. bubble and dew columns of a
/// pure fluid). JSON keeps every key.
fn present_columns(rows: &[Vec<Field>]) -> Vec<Vec<Field>> {
    let columns = rows.first().map_or(0, Vec::len);
    let keep: Vec<bool> = (0..columns)
        .map(|i| {
            rows.iter().any(|row| {
                row.get(i)
                    .is_some_and(|f| !matches!(f.value, Value::Absent(_)))
            })
        })
        .collect();
    rows.iter()
        .map(|row| {
            row.iter()
                .zip(&keep)
                .filter(|(_, keep)| **keep)
                .map(|(field, _)| field.clone())
                .collect()
        })
        .collect()
}

/// The rendered text for each stream.
#[derive(Debug, Clone, PartialEq)]
pub struct Rendered {
    /// For standard output.
    pub stdout: String,
    /// For standard error.
    pub stderr: String,
}

// ---------------------------------------------------------------------------------------------
// Names of protobuf enums, for JSON (stable keys) and for people.
// ---------------------------------------------------------------------------------------------

/// JSON spelling of a model (the same as `--model`).
pub fn model_key(model: EquationOfState) -> &'static str {
    match model {
        EquationOfState::Unspecified => "unspecified",
        EquationOfState::VanDerWaals => "van-der-waals",
        EquationOfState::RedlichKwong => "redlich-kwong",
        EquationOfState::SoaveRedlichKwong => "soave-redlich-kwong",
        EquationOfState::PengRobinson1976 => "peng-robinson-1976",
        EquationOfState::PengRobinson1978 => "peng-robinson-1978",
    }
}

/// A model's name for people.
pub fn model_label(model: EquationOfState) -> &'static str {
    match model {
        EquationOfState::Unspecified => "not stated",
        EquationOfState::VanDerWaals => "van der Waals (1873)",
        EquationOfState::RedlichKwong => "Redlich-Kwong (1949)",
        EquationOfState::SoaveRedlichKwong => "Soave-Redlich-Kwong (1972)",
        EquationOfState::PengRobinson1976 => "Peng-Robinson (1976)",
        EquationOfState::PengRobinson1978 => "Peng-Robinson (1978 alpha)",
    }
}

fn reference_key(reference: ReferenceState) -> &'static str {
    match reference {
        ReferenceState::Unspecified => "unspecified",
        ReferenceState::LiquidAtZeroCelsius => "liquid-at-zero-celsius",
        ReferenceState::LiquidAtNormalBoilingPoint => "liquid-at-normal-boiling-point",
    }
}

fn reference_label(reference: ReferenceState) -> &'static str {
    match reference {
        ReferenceState::Unspecified => "a reference state the server did not state",
        ReferenceState::LiquidAtZeroCelsius => {
            "saturated liquid at 0 °C (h = 200 kJ/kg, s = 1 kJ/(kg K))"
        }
        ReferenceState::LiquidAtNormalBoilingPoint => {
            "saturated liquid at 101325 Pa (h = 0, s = 0)"
        }
    }
}

/// JSON spelling of a phase.
pub fn phase_key(phase: Phase) -> &'static str {
    match phase {
        Phase::Unspecified => "undetermined",
        Phase::SubcooledLiquid => "subcooled-liquid",
        Phase::SuperheatedVapor => "superheated-vapor",
        Phase::Saturated => "saturated",
        Phase::TwoPhase => "two-phase",
        Phase::SupercriticalFluid => "supercritical-fluid",
        Phase::GasAboveCriticalTemperature => "gas-above-critical-temperature",
        Phase::SolidEstimated => "solid-estimated",
    }
}

/// JSON spelling of a safety class (`A2L`, ..., `none`).
pub fn class_key(class: SafetyClass) -> &'static str {
    match class {
        SafetyClass::Unspecified => "unspecified",
        SafetyClass::A1 => "A1",
        SafetyClass::A2l => "A2L",
        SafetyClass::A2 => "A2",
        SafetyClass::A3 => "A3",
        SafetyClass::B1 => "B1",
        SafetyClass::B2l => "B2L",
        SafetyClass::B2 => "B2",
        SafetyClass::B3 => "B3",
        SafetyClass::NotClassified => "none",
    }
}

/// What a safety class means, for people (ASHRAE 34 group definitions).
fn class_hazard(class: SafetyClass) -> Option<&'static str> {
    match class {
        SafetyClass::A2l => Some("lower flammability"),
        SafetyClass::A2 => Some("flammable"),
        SafetyClass::A3 => Some("higher flammability"),
        SafetyClass::B1 => Some("higher toxicity"),
        SafetyClass::B2l => Some("higher toxicity and lower flammability"),
        SafetyClass::B2 => Some("higher toxicity and flammable"),
        SafetyClass::B3 => Some("higher toxicity and higher flammability"),
        SafetyClass::A1 | SafetyClass::NotClassified | SafetyClass::Unspecified => None,
    }
}

/// The server's caution text without what the caution line says anyway: a leading
/// `Safety class X. ` and the trailing advisory sentence (printed on its own line). Text that
/// does not have them is kept whole.
fn catalogue_hazards(text: &str, class: SafetyClass) -> &str {
    let prefix = format!("Safety class {}. ", class_key(class));
    let text = text.trim();
    let text = text.strip_prefix(prefix.as_str()).unwrap_or(text);
    let text = text
        .strip_suffix("Results are advisory; follow local codes and licensed practice.")
        .unwrap_or(text);
    text.trim()
}

/// The one-line caution for an answer about `fluid` at the highest absolute pressure `pressure_pa`
/// (if the answer has one): flammable (classes 2L, 2, 3), toxic (class B), a fluid without an
/// ASHRAE 34 class (its catalogue caution), or a pressure above [`HIGH_PRESSURE_PA`].
pub fn caution(
    fluid: &FluidDescription,
    pressure_pa: Option<f64>,
    units: UnitSystem,
) -> Option<String> {
    let class = fluid.safety_class();
    let mut reasons = Vec::new();
    if let Some(hazard) = class_hazard(class) {
        reasons.push(format!(
            "{} is {hazard} (ASHRAE 34 class {})",
            fluid.display_name,
            class_key(class)
        ));
    }
    if class == SafetyClass::NotClassified {
        reasons.push(format!(
            "{} has no ASHRAE 34 safety class",
            fluid.display_name
        ));
    }
    if let Some(pressure) = pressure_pa.filter(|p| *p > HIGH_PRESSURE_PA) {
        reasons.push(format!(
            "{} is above 25 bar(a): high pressure",
            fmt_pressure(pressure, units)
        ));
    }
    if reasons.is_empty() {
        return None;
    }
    let mut line = reasons.join("; ");
    let hazards = catalogue_hazards(&fluid.caution, class);
    if !hazards.is_empty() {
        line.push_str(". ");
        line.push_str(hazards);
    }
    Some(line)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fluid(class: SafetyClass) -> FluidDescription {
        let mut fluid = FluidDescription {
            display_name: "Test fluid".to_string(),
            caution: "Catalogue caution.".to_string(),
            ..Default::default()
        };
        fluid.set_safety_class(class);
        fluid
    }

    #[test]
    fn only_a_closed_output_counts_as_closed_output() {
        let pipe = || std::io::Error::from(std::io::ErrorKind::BrokenPipe);
        assert!(is_output_closed(&output_error(pipe())));
        // Still recognised under added context.
        assert!(is_output_closed(
            &output_error(pipe()).context("writing a table")
        ));
        assert!(is_output_closed(&csv_output_error(
            csv::Error::from(pipe())
        )));

        let full = std::io::Error::from(std::io::ErrorKind::StorageFull);
        assert!(!is_output_closed(&output_error(full)));

        // A broken pipe met by the transport (a server that dropped the connection, a refused
        // TLS handshake) reaches `main` as a cause inside another error: it stays a failure.
        let transport = anyhow::Error::new(pipe()).context("cannot reach https://[::1]:1");
        assert!(!is_output_closed(&transport));
    }

    #[test]
    fn cautions_follow_class_and_pressure() {
        // Thresholds: ASHRAE 34 classes (flammability 2L/2/3, toxicity B); 25 bar(a) is the
        // `common practice` high-pressure threshold.
        let units = UnitSystem::Metric;
        assert_eq!(caution(&fluid(SafetyClass::A1), Some(10.0e5), units), None);
        let high = caution(&fluid(SafetyClass::A1), Some(30.0e5), units).expect("high pressure");
        assert!(
            high.contains("30.0000 bar (abs) is above 25 bar(a)"),
            "{high}"
        );
        assert!(high.ends_with("Catalogue caution."), "{high}");
        let toxic = caution(&fluid(SafetyClass::B2l), None, units).expect("B2L");
        assert!(
            toxic.contains("higher toxicity and lower flammability"),
            "{toxic}"
        );
        let flammable = caution(&fluid(SafetyClass::A3), Some(2.0e5), units).expect("A3");
        assert!(flammable.contains("class A3"), "{flammable}");
        let unclassified = caution(&fluid(SafetyClass::NotClassified), None, units).expect("none");
        assert!(
            unclassified.contains("no ASHRAE 34 safety class"),
            "{unclassified}"
        );
        // Exactly at the threshold is not above it.
        assert_eq!(
            caution(&fluid(SafetyClass::A1), Some(HIGH_PRESSURE_PA), units),
            None
        );
    }

    #[test]
    fn renderings_agree() {
        // 298.15 K = 25 °C (ISO 80000-5); 1 bar = 1e5 Pa (NIST SP 811 B.9).
        let mut document = Document::new(
            Some("r134a".to_string()),
            Body::Record(vec![
                Field::quantity(
                    "temperature_k",
                    "temperature",
                    Quantity::Temperature,
                    298.15,
                ),
                Field::quantity("pressure_pa", "pressure", Quantity::Pressure, 1.0e5),
                Field::maybe(
                    "superheat_k",
                    "superheat",
                    Quantity::TemperatureDifference,
                    None,
                ),
                Field::text("phase", "phase", "subcooled-liquid"),
            ]),
        );
        document.caution = Some("careful".to_string());
        let units = UnitSystem::Metric;
        let text = document.render(OutputFormat::Table, units).stdout;
        assert!(text.contains("temperature  25.00 °C"), "{text}");
        assert!(!text.contains("superheat"), "{text}");
        assert!(text.contains("caution: careful"), "{text}");
        assert!(text.contains(ADVISORY), "{text}");

        let json: Json = serde_json::from_str(&document.render(OutputFormat::Json, units).stdout)
            .expect("valid JSON");
        assert_eq!(json["fluid"], "r134a");
        assert_eq!(json["temperature_k"], 298.15);
        assert_eq!(json["superheat_k"], Json::Null);
        assert_eq!(json["caution"], "careful");
        assert_eq!(json["advisory"], ADVISORY);

        let csv = document.render(OutputFormat::Csv, units);
        let mut lines = csv.stdout.lines();
        assert_eq!(
            lines.next(),
            Some("temperature (°C),pressure (bar (abs)),superheat (K),phase")
        );
        assert_eq!(lines.next(), Some("25.00,1.0000,,subcooled-liquid"));
        assert!(csv.stderr.contains("caution: careful"), "{}", csv.stderr);
    }
}
