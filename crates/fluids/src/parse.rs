//! Reading catalogue TOML files: the built-in ones and user files share one format.
//!
//! The parser walks the TOML tree by hand instead of deriving serde structs so that it can
//! report every bad field of every fluid at once, each with the valid range.

use crate::error::{CatalogueError, Problem};
use crate::record::{FluidRecord, SafetyClass};
use binodal_eos::{
    Alpha, FluidConstants, GAS_CONSTANT, IdealGasCp, Model, ModelFit, PureEos, VolumeShift,
};
use std::collections::BTreeMap;
use toml::{Table, Value};

/// Built-in files must cite every value by a key of their `[sources]` table and give every
/// descriptive field; user files need only the constants the engine needs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Mode {
    /// A file compiled into the crate.
    Builtin,
    /// A file supplied at run time.
    User,
}

/// Caution shown for user fluids that give none.
pub(crate) const USER_CAUTION: &str = "User-supplied fluid: its hazards are not recorded in \
the catalogue; check the supplier's safety data sheet and local codes before use.";

const FLUID_KEYS: [&str; 22] = [
    "id",
    "name",
    "ashrae_number",
    "chemical_name",
    "formula",
    "cas",
    "aliases",
    "caution",
    "safety_class",
    "molar_mass_kg_per_mol",
    "critical_temperature_k",
    "critical_pressure_pa",
    "critical_density_kg_per_m3",
    "acentric_factor",
    "normal_boiling_point_k",
    "triple_point_temperature_k",
    "triple_point_pressure_pa",
    "heat_of_fusion_j_per_mol",
    "enthalpy_of_vaporization_at_nbp_j_per_mol",
    "melting_volume_change_fraction",
    "ideal_gas_cp",
    "fit",
];

/// A closed or open interval with a unit, for messages like `a number in [1, 2000] K`.
#[derive(Debug, Clone, Copy)]
struct Bounds {
    min: f64,
    max: f64,
    min_open: bool,
    unit: &'static str,
}

impl Bounds {
    const fn closed(min: f64, max: f64, unit: &'static str) -> Bounds {
        Bounds {
            min,
            max,
            min_open: false,
            unit,
        }
    }

    const fn above(min: f64, max: f64, unit: &'static str) -> Bounds {
        Bounds {
            min,
            max,
            min_open: true,
            unit,
        }
    }

    fn contains(&self, x: f64) -> bool {
        x.is_finite()
            && (if self.min_open {
                x > self.min
            } else {
                x >= self.min
            })
            && x <= self.max
    }

    fn describe(&self) -> String {
        let open = if self.min_open { '(' } else { '[' };
        let unit = if self.unit.is_empty() {
            String::new()
        } else {
            format!(" {}", self.unit)
        };
        format!("a number in {open}{}, {}]{unit}", self.min, self.max)
    }
}

// Ranges of the engine's own validation (binodal_eos::FluidConstants::validate), so that a
// fluid that passes here also passes there.
const MOLAR_MASS: Bounds = Bounds::closed(1e-3, 2.0, "kg/mol");
const CRITICAL_TEMPERATURE: Bounds = Bounds::closed(1.0, 2000.0, "K");
const CRITICAL_PRESSURE: Bounds = Bounds::closed(1e4, 1e9, "Pa");
const ACENTRIC_FACTOR: Bounds = Bounds::closed(-0.5, 2.0, "");
const MELTING_VOLUME_CHANGE: Bounds = Bounds::closed(-0.5, 0.5, "");
// Plausibility ranges of tools/catalogue/check_data.py (common practice for molecular fluids).
const CRITICAL_DENSITY: Bounds = Bounds::closed(10.0, 2000.0, "kg/m^3");
const HEAT_OF_FUSION: Bounds = Bounds::closed(50.0, 1e5, "J/mol");
const HVAP_AT_NBP: Bounds = Bounds::closed(500.0, 1e5, "J/mol");
const POSITIVE_TEMPERATURE: Bounds = Bounds::above(0.0, 2000.0, "K");
const POSITIVE_PRESSURE: Bounds = Bounds::above(0.0, 1e9, "Pa");
const PARAMETER: Bounds = Bounds::closed(-100.0, 100.0, "");
/// cp/R of an ideal gas is at least 5/2 (translation alone, common practice); 100 bounds
/// the largest molecules in the catalogue's scope (check_data.py uses (2.4, 100)).
const CP_OVER_R: Bounds = Bounds::above(2.4, 100.0, "");

/// What a catalogue file holds.
#[derive(Debug)]
pub(crate) struct Parsed {
    /// The fluids without problems.
    pub records: Vec<FluidRecord>,
    /// Every `[[fluid]]` table's label (its id, or `fluid #N`) and names, valid or not, so
    /// that name clashes can be reported alongside the other problems.
    pub names: Vec<(String, Vec<(String, String)>)>,
    /// Every problem found, fluid by fluid in file order.
    pub problems: Vec<Problem>,
}

/// The lookup names of a `[[fluid]]` table, in the order of [`crate::lookup::names_of`].
fn table_names(table: &Table) -> Vec<(String, String)> {
    let text = |key: &str| table.get(key).and_then(Value::as_str).map(str::to_string);
    let mut out: Vec<(String, String)> = Vec::new();
    out.extend(text("name").map(|n| ("name".to_string(), n)));
    out.extend(text("ashrae_number").map(|n| ("ashrae_number".to_string(), n)));
    if let Some(Value::Array(items)) = table.get("aliases") {
        for (i, item) in items.iter().enumerate() {
            out.extend(
                item.as_str()
                    .map(|a| (format!("aliases[{i}]"), a.to_string())),
            );
        }
    }
    out.extend(text("chemical_name").map(|n| ("chemical_name".to_string(), n)));
    out.extend(text("id").map(|n| ("id".to_string(), n)));
    out.extend(text("cas").map(|n| ("cas".to_string(), n)));
    out.retain(|(_, n)| !n.trim().is_empty());
    out
}

/// Parses one catalogue file. Only a TOML syntax error is an `Err`; every other problem is
/// listed in [`Parsed::problems`].
pub(crate) fn parse_file(text: &str, origin: &str, mode: Mode) -> Result<Parsed, CatalogueError> {
    let doc: Table = toml::from_str(text).map_err(|e| CatalogueError::Syntax {
        origin: origin.to_string(),
        message: e.to_string(),
    })?;
    let mut problems = Vec::new();
    let file_problem = |field: &str, value: String, expected: &str| Problem {
        fluid: "(file)".to_string(),
        field: field.to_string(),
        value,
        expected: expected.to_string(),
    };

    for key in doc.keys() {
        if key != "sources" && key != "fluid" {
            problems.push(file_problem(
                key,
                "(present)".into(),
                "only [sources] and [[fluid]] tables",
            ));
        }
    }
    let mut sources = BTreeMap::new();
    match doc.get("sources") {
        Some(Value::Table(t)) => {
            for (key, text) in t {
                match text.as_str() {
                    Some(s) if !s.trim().is_empty() => {
                        sources.insert(key.clone(), s.to_string());
                    }
                    _ => problems.push(file_problem(
                        &format!("sources.{key}"),
                        text.to_string(),
                        "a non-empty citation string",
                    )),
                }
            }
        }
        Some(other) => problems.push(file_problem(
            "sources",
            other.to_string(),
            "a table of citations",
        )),
        None if mode == Mode::Builtin => problems.push(file_problem(
            "sources",
            "(missing)".into(),
            "a [sources] table",
        )),
        None => {}
    }

    let mut records = Vec::new();
    let mut names = Vec::new();
    match doc.get("fluid") {
        Some(Value::Array(fluids)) if !fluids.is_empty() => {
            for (i, fluid) in fluids.iter().enumerate() {
                let label = format!("fluid #{}", i + 1);
                let Some(table) = fluid.as_table() else {
                    problems.push(Problem {
                        fluid: label,
                        field: "fluid".into(),
                        value: fluid.to_string(),
                        expected: "a [[fluid]] table".into(),
                    });
                    continue;
                };
                let mut reader = FluidReader {
                    table,
                    label,
                    sources: &sources,
                    mode,
                    origin,
                    problems: Vec::new(),
                    citations: BTreeMap::new(),
                };
                let record = reader.read();
                problems.append(&mut reader.problems);
                records.extend(record);
                names.push((reader.label, table_names(table)));
            }
        }
        Some(other) => problems.push(file_problem(
            "fluid",
            other.to_string(),
            "one or more [[fluid]] tables",
        )),
        None => problems.push(file_problem(
            "fluid",
            "(missing)".into(),
            "one or more [[fluid]] tables",
        )),
    }
    Ok(Parsed {
        records,
        names,
        problems,
    })
}

struct FluidReader<'a> {
    table: &'a Table,
    /// The fluid's id once known, else its position.
    label: String,
    sources: &'a BTreeMap<String, String>,
    mode: Mode,
    origin: &'a str,
    problems: Vec<Problem>,
    citations: BTreeMap<String, String>,
}

fn number(value: &Value) -> Option<f64> {
    match value {
        Value::Float(f) => Some(*f),
        Value::Integer(i) => Some(*i as f64),
        _ => None,
    }
}

fn cas_is_valid(cas: &str) -> bool {
    let parts: Vec<&str> = cas.split('-').collect();
    let [a, b, c] = parts.as_slice() else {
        return false;
    };
    let all_digits = |s: &str| !s.is_empty() && s.bytes().all(|b| b.is_ascii_digit());
    if !(2..=7).contains(&a.len()) || b.len() != 2 || c.len() != 1 {
        return false;
    }
    if !(all_digits(a) && all_digits(b) && all_digits(c)) {
        return false;
    }
    // Check digit: sum of digits weighted 1, 2, 3, ... from the right, modulo 10
    // (CAS Registry Number format, common practice).
    let body: Vec<u32> = format!("{a}{b}")
        .bytes()
        .map(|d| u32::from(d - b'0'))
        .collect();
    let sum: u32 = body
        .iter()
        .rev()
        .enumerate()
        .map(|(k, d)| (k as u32 + 1) * d)
        .sum();
    sum % 10 == u32::from(c.as_bytes()[0] - b'0')
}

impl<'a> FluidReader<'a> {
    fn problem(&mut self, field: &str, value: impl Into<String>, expected: impl Into<String>) {
        self.problems.push(Problem {
            fluid: self.label.clone(),
            field: field.to_string(),
            value: value.into(),
            expected: expected.into(),
        });
    }

    /// Resolves a `source` entry to citation text.
    fn cite(&mut self, field: &str, source: Option<&Value>) {
        let text = match (source, self.mode) {
            (Some(Value::String(key)), _) if self.sources.contains_key(key) => {
                self.sources[key].clone()
            }
            (Some(Value::String(text)), Mode::User) if !text.trim().is_empty() => text.clone(),
            (None, Mode::User) => format!("user-supplied in {}; no source given", self.origin),
            (Some(v), Mode::Builtin) => {
                self.problem(
                    &format!("{field}.source"),
                    v.to_string(),
                    "a key of the file's [sources] table",
                );
                return;
            }
            (Some(v), Mode::User) => {
                self.problem(
                    &format!("{field}.source"),
                    v.to_string(),
                    "a key of the file's [sources] table or a non-empty citation string",
                );
                return;
            }
            (None, Mode::Builtin) => {
                self.problem(
                    &format!("{field}.source"),
                    "(missing)",
                    "a key of the file's [sources] table",
                );
                return;
            }
        };
        self.citations.insert(field.to_string(), text);
    }

    /// A `{ value = ..., source = "..." }` entry (user files may also give the bare value).
    /// Returns the value and records its citation.
    fn sourced(&mut self, field: &str) -> Option<&'a Value> {
        let table = self.table;
        let entry = table.get(field)?;
        match entry {
            Value::Table(t) => {
                for key in t.keys() {
                    if key != "value" && key != "source" {
                        self.problem(
                            &format!("{field}.{key}"),
                            t[key].to_string(),
                            "only `value` and `source`",
                        );
                    }
                }
                let Some(value) = t.get("value") else {
                    self.problem(
                        field,
                        entry.to_string(),
                        "{ value = ..., source = \"...\" }",
                    );
                    return None;
                };
                self.cite(field, t.get("source"));
                Some(value)
            }
            bare if self.mode == Mode::User => {
                self.cite(field, None);
                Some(bare)
            }
            other => {
                self.problem(
                    field,
                    other.to_string(),
                    "{ value = ..., source = \"<key of [sources]>\" }",
                );
                None
            }
        }
    }

    /// A sourced number within `bounds`; `required` reports its absence.
    fn quantity(&mut self, field: &str, bounds: Bounds, required: bool) -> Option<f64> {
        let Some(value) = self.sourced(field) else {
            if required && !self.table.contains_key(field) {
                self.problem(field, "(missing)", bounds.describe());
            }
            return None;
        };
        match number(value) {
            Some(x) if bounds.contains(x) => Some(x),
            _ => {
                let shown = value.to_string();
                self.problem(field, shown, bounds.describe());
                None
            }
        }
    }

    /// A plain string field.
    fn text(&mut self, field: &str, required: bool) -> Option<String> {
        match self.table.get(field) {
            Some(Value::String(s)) if !s.trim().is_empty() => Some(s.clone()),
            Some(other) => {
                self.problem(field, other.to_string(), "a non-empty string");
                None
            }
            None => {
                if required {
                    self.problem(field, "(missing)", "a non-empty string");
                }
                None
            }
        }
    }

    fn read(&mut self) -> Option<FluidRecord> {
        let builtin = self.mode == Mode::Builtin;
        let table = self.table;
        let id = match table.get("id") {
            Some(Value::String(s))
                if !s.is_empty()
                    && s.len() <= 40
                    && s.bytes()
                        .all(|b| b.is_ascii_lowercase() || b.is_ascii_digit()) =>
            {
                self.label = s.clone();
                Some(s.clone())
            }
            Some(other) => {
                self.problem(
                    "id",
                    other.to_string(),
                    "1 to 40 lowercase ASCII letters and digits",
                );
                None
            }
            None => {
                self.problem(
                    "id",
                    "(missing)",
                    "1 to 40 lowercase ASCII letters and digits",
                );
                None
            }
        };
        for key in table.keys() {
            if !FLUID_KEYS.contains(&key.as_str()) {
                self.problem(
                    key,
                    table[key].to_string(),
                    format!("a known field: {}", FLUID_KEYS.join(", ")),
                );
            }
        }
        let name = self.text("name", true);
        let ashrae_number = self.text("ashrae_number", false);
        if let Some(n) = &ashrae_number
            && !n.starts_with("R-")
        {
            let n = n.clone();
            self.problem(
                "ashrae_number",
                format!("\"{n}\""),
                "an ASHRAE 34 number such as \"R-134a\"",
            );
        }
        let chemical_name = self.text("chemical_name", builtin);
        let formula = self.text("formula", builtin);
        let cas = self.text("cas", builtin);
        if let Some(c) = &cas
            && !cas_is_valid(c)
        {
            let c = c.clone();
            self.problem(
                "cas",
                format!("\"{c}\""),
                "a CAS number NNNNNNN-NN-N with a valid check digit",
            );
        }
        let caution = self.text("caution", builtin);
        let aliases = self.aliases();
        let safety_class = self.safety_class();
        if builtin && safety_class.is_some() && ashrae_number.is_none() {
            self.problem(
                "safety_class",
                "(present)",
                "an ashrae_number alongside a safety class",
            );
        }

        let molar_mass = self.quantity("molar_mass_kg_per_mol", MOLAR_MASS, true);
        let tc = self.quantity("critical_temperature_k", CRITICAL_TEMPERATURE, true);
        let pc = self.quantity("critical_pressure_pa", CRITICAL_PRESSURE, true);
        let omega = self.quantity("acentric_factor", ACENTRIC_FACTOR, true);
        let rhoc = self.quantity("critical_density_kg_per_m3", CRITICAL_DENSITY, builtin);
        let tb = self.quantity("normal_boiling_point_k", POSITIVE_TEMPERATURE, false);
        let tt = self.quantity("triple_point_temperature_k", POSITIVE_TEMPERATURE, builtin);
        let pt = self.quantity("triple_point_pressure_pa", POSITIVE_PRESSURE, false);
        let hfus = self.quantity("heat_of_fusion_j_per_mol", HEAT_OF_FUSION, false);
        let hvap = self.quantity(
            "enthalpy_of_vaporization_at_nbp_j_per_mol",
            HVAP_AT_NBP,
            false,
        );
        let dv = self.quantity(
            "melting_volume_change_fraction",
            MELTING_VOLUME_CHANGE,
            false,
        );
        let cp = self.ideal_gas_cp(builtin);

        // Relations between the values.
        if let (Some(tc), Some(tb)) = (tc, tb)
            && tb >= tc
        {
            self.problem(
                "normal_boiling_point_k",
                tb.to_string(),
                format!("a number in (0, {tc}) K (below Tc)"),
            );
        }
        if let Some(tt) = tt {
            if let Some(tc) = tc {
                // The engine's limit: the triple point must lie below 0.99 Tc.
                if tt >= 0.99 * tc {
                    self.problem(
                        "triple_point_temperature_k",
                        tt.to_string(),
                        format!("a number in (0, {}) K (below 0.99 Tc)", 0.99 * tc),
                    );
                }
            }
            if let Some(tb) = tb
                && tt >= tb
            {
                self.problem(
                    "triple_point_temperature_k",
                    tt.to_string(),
                    format!("a number in (0, {tb}) K (below the normal boiling point)"),
                );
            }
        }
        if let (Some(pt), Some(pc)) = (pt, pc)
            && pt >= pc
        {
            self.problem(
                "triple_point_pressure_pa",
                pt.to_string(),
                format!("a number in (0, {pc}) Pa (below Pc)"),
            );
        }
        if builtin && tb.is_none() && !pt.is_some_and(|p| p > 101_325.0) {
            // Only a fluid whose triple point lies above one atmosphere has no normal
            // boiling point.
            self.problem(
                "normal_boiling_point_k",
                "(missing)",
                "a normal boiling point, or a triple_point_pressure_pa above 101325 Pa",
            );
        }
        if tb.is_none() && hvap.is_some() {
            self.problem(
                "enthalpy_of_vaporization_at_nbp_j_per_mol",
                "(present)",
                "no value when the fluid has no normal boiling point",
            );
        }
        let fits = self.fits(tc, pc);

        let id = id?;
        let mut constants = FluidConstants::new(name.clone()?, molar_mass?, tc?, pc?, omega?);
        constants.triple_point_temperature_k = tt;
        constants.heat_of_fusion_j_per_mol = hfus;
        constants.melting_volume_change_fraction = dv;
        constants.ideal_gas_cp = cp;
        constants.fits = fits?;
        if let Err(e) = constants.validate() {
            self.problem(
                e.field().unwrap_or("constants"),
                "(as given)",
                e.to_string(),
            );
            return None;
        }
        if !self.problems.is_empty() {
            return None;
        }
        if self.mode == Mode::User {
            // Every model must be able to build its saturation curve from these constants.
            for model in Model::ALL {
                if let Err(e) = PureEos::new(&constants, model) {
                    let field = e.field().unwrap_or("constants").to_string();
                    self.problem(
                        &field,
                        "(as given)",
                        format!("constants the {model} model can use: {e}"),
                    );
                }
            }
            if !self.problems.is_empty() {
                return None;
            }
        }
        Some(FluidRecord {
            id,
            name: name?,
            ashrae_number,
            chemical_name,
            formula,
            cas,
            aliases,
            caution: caution.unwrap_or_else(|| USER_CAUTION.to_string()),
            safety_class,
            constants,
            critical_density_kg_per_m3: rhoc,
            normal_boiling_point_k: tb,
            triple_point_pressure_pa: pt,
            enthalpy_of_vaporization_at_nbp_j_per_mol: hvap,
            citations: std::mem::take(&mut self.citations),
            fit_records: Vec::new(),
            accuracy: Vec::new(),
            user_supplied: self.mode == Mode::User,
        })
    }

    fn aliases(&mut self) -> Vec<String> {
        match self.table.get("aliases") {
            None => {
                if self.mode == Mode::Builtin {
                    self.problem("aliases", "(missing)", "a list of strings (may be empty)");
                }
                Vec::new()
            }
            Some(Value::Array(items)) => {
                let mut out = Vec::new();
                for (i, item) in items.iter().enumerate() {
                    match item.as_str() {
                        Some(s) if !s.trim().is_empty() => out.push(s.to_string()),
                        _ => self.problem(
                            &format!("aliases[{i}]"),
                            item.to_string(),
                            "a non-empty string",
                        ),
                    }
                }
                out
            }
            Some(other) => {
                self.problem("aliases", other.to_string(), "a list of strings");
                Vec::new()
            }
        }
    }

    fn safety_class(&mut self) -> Option<SafetyClass> {
        let value = self.sourced("safety_class")?;
        let parsed = value.as_str().map(str::parse::<SafetyClass>);
        match parsed {
            Some(Ok(class)) => Some(class),
            Some(Err(expected)) => {
                let shown = value.to_string();
                self.problem("safety_class", shown, expected);
                None
            }
            None => {
                let shown = value.to_string();
                self.problem("safety_class", shown, "a string such as \"A2L\"");
                None
            }
        }
    }

    fn ideal_gas_cp(&mut self, required: bool) -> Option<IdealGasCp> {
        const FIELD: &str = "ideal_gas_cp";
        const FORM: &str = "{ form = \"cp_over_r_polynomial\", coefficients = [a0, a1, a2, a3, a4], \
                            t_min_k = ..., t_max_k = ..., source = \"...\" }";
        let table = self.table;
        let entry = match table.get(FIELD) {
            None => {
                if required {
                    self.problem(FIELD, "(missing)", FORM);
                }
                return None;
            }
            Some(Value::Table(t)) => t,
            Some(other) => {
                self.problem(FIELD, other.to_string(), FORM);
                return None;
            }
        };
        for key in entry.keys() {
            if !["form", "coefficients", "t_min_k", "t_max_k", "source"].contains(&key.as_str()) {
                self.problem(&format!("{FIELD}.{key}"), entry[key].to_string(), FORM);
            }
        }
        self.cite(FIELD, entry.get("source"));
        let problems_before = self.problems.len();
        if entry.get("form").and_then(Value::as_str) != Some("cp_over_r_polynomial") {
            let shown = entry
                .get("form")
                .map_or("(missing)".to_string(), Value::to_string);
            self.problem(&format!("{FIELD}.form"), shown, "\"cp_over_r_polynomial\"");
        }
        let mut coefficients = [0.0; 5];
        match entry.get("coefficients") {
            Some(Value::Array(items)) if items.len() == 5 => {
                for (i, item) in items.iter().enumerate() {
                    match number(item).filter(|x| x.is_finite()) {
                        Some(x) => coefficients[i] = x,
                        None => self.problem(
                            &format!("{FIELD}.coefficients[{i}]"),
                            item.to_string(),
                            "a finite number",
                        ),
                    }
                }
            }
            other => {
                let shown = other.map_or("(missing)".to_string(), Value::to_string);
                self.problem(
                    &format!("{FIELD}.coefficients"),
                    shown,
                    "a list of 5 numbers a0..a4 of cp/R",
                );
            }
        }
        let bound = |reader: &mut Self, key: &str| -> Option<f64> {
            let value = entry.get(key);
            match value.and_then(number) {
                Some(x) if POSITIVE_TEMPERATURE.contains(x) => Some(x),
                _ => {
                    let shown = value.map_or("(missing)".to_string(), Value::to_string);
                    reader.problem(
                        &format!("{FIELD}.{key}"),
                        shown,
                        POSITIVE_TEMPERATURE.describe(),
                    );
                    None
                }
            }
        };
        let t_min = bound(self, "t_min_k");
        let t_max = bound(self, "t_max_k");
        if let (Some(lo), Some(hi)) = (t_min, t_max)
            && hi <= lo
        {
            self.problem(
                &format!("{FIELD}.t_max_k"),
                hi.to_string(),
                format!("a number above t_min_k = {lo} K"),
            );
        }
        if self.problems.len() > problems_before {
            return None;
        }
        let cp = IdealGasCp {
            coefficients,
            t_min_k: t_min?,
            t_max_k: t_max?,
        };
        for k in 0..=20 {
            let t = cp.t_min_k + (cp.t_max_k - cp.t_min_k) * f64::from(k) / 20.0;
            let value = cp.cp_over_r(t);
            if !CP_OVER_R.contains(value) {
                self.problem(
                    &format!("{FIELD}.coefficients"),
                    format!("cp/R = {value} at {t} K"),
                    format!("cp/R {} over the stated range", CP_OVER_R.describe()),
                );
                return None;
            }
        }
        Some(cp)
    }

    /// `fit = [{ model, alpha, parameters, volume_shift_m3_per_mol, source }]`, optionally
    /// with the temperature terms of the shift: `volume_shift_linear_m3_per_mol`,
    /// `volume_shift_quadratic_m3_per_mol` and `volume_shift_from_k`, all three or none.
    fn fits(&mut self, tc: Option<f64>, pc: Option<f64>) -> Option<Vec<ModelFit>> {
        const FORM: &str = "[{ model = \"peng-robinson-1978\", alpha = \"mathias-copeman-1983\", \
                            parameters = [c1, c2, c3], volume_shift_m3_per_mol = 0.0 }]";
        let table = self.table;
        let entries = match table.get("fit") {
            None => return Some(Vec::new()),
            Some(Value::Array(items)) => items,
            Some(other) => {
                self.problem("fit", other.to_string(), FORM);
                return None;
            }
        };
        let problems_before = self.problems.len();
        let mut fits: Vec<ModelFit> = Vec::new();
        for (i, entry) in entries.iter().enumerate() {
            let at = |key: &str| format!("fit[{i}].{key}");
            let Some(t) = entry.as_table() else {
                self.problem(&format!("fit[{i}]"), entry.to_string(), FORM);
                continue;
            };
            for key in t.keys() {
                if ![
                    "model",
                    "alpha",
                    "parameters",
                    "volume_shift_m3_per_mol",
                    "volume_shift_linear_m3_per_mol",
                    "volume_shift_quadratic_m3_per_mol",
                    "volume_shift_from_k",
                    "source",
                ]
                .contains(&key.as_str())
                {
                    self.problem(&at(key), t[key].to_string(), FORM);
                }
            }
            let model = match t
                .get("model")
                .map(|v| (v, v.as_str().map(str::parse::<Model>)))
            {
                Some((_, Some(Ok(m)))) => Some(m),
                other => {
                    let shown = other.map_or("(missing)".to_string(), |(v, _)| v.to_string());
                    let valid = Model::ALL.map(Model::id).join(", ");
                    self.problem(&at("model"), shown, format!("one of {valid}"));
                    None
                }
            };
            if let Some(m) = model {
                if fits.iter().any(|f| f.model == m) {
                    self.problem(
                        &at("model"),
                        format!("\"{m}\""),
                        "at most one fit per model",
                    );
                }
                self.cite(&format!("fit.{m}"), t.get("source"));
            }
            let form = t.get("alpha").and_then(Value::as_str);
            if !matches!(form, Some("mathias-copeman-1983" | "twu-1991")) {
                let shown = t
                    .get("alpha")
                    .map_or("(missing)".to_string(), Value::to_string);
                self.problem(
                    &at("alpha"),
                    shown,
                    "\"mathias-copeman-1983\" or \"twu-1991\"",
                );
            }
            let mut p = [0.0; 3];
            match t.get("parameters") {
                Some(Value::Array(items)) if items.len() == 3 => {
                    for (k, item) in items.iter().enumerate() {
                        match number(item) {
                            Some(x) if PARAMETER.contains(x) => p[k] = x,
                            _ => self.problem(
                                &format!("fit[{i}].parameters[{k}]"),
                                item.to_string(),
                                PARAMETER.describe(),
                            ),
                        }
                    }
                }
                other => {
                    let shown = other.map_or("(missing)".to_string(), Value::to_string);
                    self.problem(&at("parameters"), shown, "a list of 3 numbers");
                }
            }
            let shift = self.volume_shift(t, i, model, tc, pc);
            let alpha = match form {
                Some("twu-1991") => Alpha::Twu {
                    l: p[0],
                    m: p[1],
                    n: p[2],
                },
                _ => Alpha::MathiasCopeman {
                    c1: p[0],
                    c2: p[1],
                    c3: p[2],
                },
            };
            if let Some(model) = model {
                fits.push(ModelFit {
                    model,
                    alpha,
                    volume_shift: shift,
                });
            }
        }
        (self.problems.len() == problems_before).then_some(fits)
    }

    /// The volume translation of fit entry `i`; its problems are recorded against the keys.
    fn volume_shift(
        &mut self,
        t: &Table,
        i: usize,
        model: Option<Model>,
        tc: Option<f64>,
        pc: Option<f64>,
    ) -> VolumeShift {
        let at = |key: &str| format!("fit[{i}].{key}");
        // The engine requires |c(T)| < b, the model's co-volume, at every temperature.
        let limit = match (model, tc, pc) {
            (Some(m), Some(tc), Some(pc)) => m.constants().omega_b * GAS_CONSTANT * tc / pc,
            _ => f64::INFINITY,
        };
        let mut read = |key: &str| -> Option<f64> {
            let v = t.get(key)?;
            match number(v) {
                Some(x) if x.is_finite() => Some(x),
                _ => {
                    self.problem(&at(key), v.to_string(), "a finite number");
                    None
                }
            }
        };
        let constant = read("volume_shift_m3_per_mol").unwrap_or(0.0);
        let terms = [
            read("volume_shift_linear_m3_per_mol"),
            read("volume_shift_quadratic_m3_per_mol"),
            read("volume_shift_from_k"),
        ];
        let mut shift = VolumeShift::constant(constant);
        match terms {
            [Some(c1), Some(c2), Some(from)] => {
                let top = tc.map_or(f64::INFINITY, |tc| 0.999 * tc);
                if from > 0.0 && from < top {
                    shift.temperature_terms_m3_per_mol = [c1, c2];
                    shift.from_temperature_k = from;
                } else {
                    self.problem(
                        &at("volume_shift_from_k"),
                        from.to_string(),
                        format!("a temperature in (0, {top}) K, below the critical temperature"),
                    );
                }
            }
            [None, None, None] => {}
            _ => {
                let shown = ["linear", "quadratic", "from"]
                    .iter()
                    .zip(terms)
                    .map(|(name, v)| format!("{name} = {v:?}"))
                    .collect::<Vec<_>>()
                    .join(", ");
                self.problem(
                    &at("volume_shift_linear_m3_per_mol"),
                    shown,
                    "volume_shift_linear_m3_per_mol, volume_shift_quadratic_m3_per_mol and \
                     volume_shift_from_k together, or none of them",
                );
            }
        }
        if shift.largest_magnitude() >= limit {
            self.problem(
                &at("volume_shift_m3_per_mol"),
                shift.largest_magnitude().to_string(),
                format!(
                    "|c(T)| in (-{limit:e}, {limit:e}) m^3/mol at every temperature (smaller \
                     than the co-volume b)"
                ),
            );
        }
        shift
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// CAS numbers of water (7732-18-5) and R-134a (811-97-2) (CAS Registry, common
    /// practice) pass; a changed check digit fails.
    #[test]
    fn cas_check_digit() {
        assert!(cas_is_valid("7732-18-5"));
        assert!(cas_is_valid("811-97-2"));
        assert!(!cas_is_valid("811-97-3"));
        assert!(!cas_is_valid("81197-2"));
    }

    #[test]
    fn bounds_describe_their_range() {
        assert_eq!(CRITICAL_TEMPERATURE.describe(), "a number in [1, 2000] K");
        assert_eq!(
            POSITIVE_PRESSURE.describe(),
            "a number in (0, 1000000000] Pa"
        );
        assert!(!POSITIVE_PRESSURE.contains(0.0));
        assert!(!CRITICAL_TEMPERATURE.contains(f64::NAN));
    }
}
