//! What the catalogue knows about one fluid.

use binodal_eos::{FluidConstants, Model, PureEos};
use std::collections::BTreeMap;
use std::fmt;
use std::str::FromStr;

/// ASHRAE Standard 34 safety classification: toxicity class (A lower, B higher) and
/// flammability class (1 none, 2L lower, 2 flammable, 3 higher).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum SafetyClass {
    /// Lower toxicity, no flame propagation.
    A1,
    /// Lower toxicity, lower flammability with a burning velocity of at most 10 cm/s.
    A2L,
    /// Lower toxicity, flammable.
    A2,
    /// Lower toxicity, higher flammability.
    A3,
    /// Higher toxicity, no flame propagation.
    B1,
    /// Higher toxicity, lower flammability with a burning velocity of at most 10 cm/s.
    B2L,
    /// Higher toxicity, flammable.
    B2,
    /// Higher toxicity, higher flammability.
    B3,
}

impl SafetyClass {
    /// Every class, from A1 to B3.
    pub const ALL: [SafetyClass; 8] = [
        SafetyClass::A1,
        SafetyClass::A2L,
        SafetyClass::A2,
        SafetyClass::A3,
        SafetyClass::B1,
        SafetyClass::B2L,
        SafetyClass::B2,
        SafetyClass::B3,
    ];

    /// The class as written in ASHRAE 34, e.g. `A2L`.
    pub fn as_str(self) -> &'static str {
        match self {
            SafetyClass::A1 => "A1",
            SafetyClass::A2L => "A2L",
            SafetyClass::A2 => "A2",
            SafetyClass::A3 => "A3",
            SafetyClass::B1 => "B1",
            SafetyClass::B2L => "B2L",
            SafetyClass::B2 => "B2",
            SafetyClass::B3 => "B3",
        }
    }

    /// Whether the class is of higher toxicity (B).
    pub fn is_higher_toxicity(self) -> bool {
        matches!(
            self,
            SafetyClass::B1 | SafetyClass::B2L | SafetyClass::B2 | SafetyClass::B3
        )
    }

    /// Whether the fluid can propagate a flame at all (classes 2L, 2 and 3).
    pub fn is_flammable(self) -> bool {
        !matches!(self, SafetyClass::A1 | SafetyClass::B1)
    }
}

impl fmt::Display for SafetyClass {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

impl FromStr for SafetyClass {
    type Err = String;

    /// Parses `A1`, `a2l`, ... (case-insensitive). The error names the valid classes.
    fn from_str(s: &str) -> Result<SafetyClass, String> {
        SafetyClass::ALL
            .into_iter()
            .find(|c| c.as_str().eq_ignore_ascii_case(s.trim()))
            .ok_or_else(|| {
                format!(
                    "one of the ASHRAE 34 classes {}",
                    SafetyClass::ALL.map(|c| c.as_str()).join(", ")
                )
            })
    }
}

/// How well one model reproduces one fluid's reference data, as recorded in
/// `data/accuracy.toml` by `catalogue-tool accuracy`.
#[derive(Debug, Clone, PartialEq)]
pub struct AccuracyRecord {
    /// The model.
    pub model: Model,
    /// `generalized` or `mathias-copeman-1983 (fitted)`.
    pub alpha: String,
    /// What the model was compared with (file and citation).
    pub checked_against: String,
    /// Vapor-pressure comparison, where the catalogue has reference data.
    pub vapor_pressure: Option<DeviationSummary>,
    /// Enthalpy-of-vaporization comparison up to 0.95 Tc, where the data has it.
    pub enthalpy_of_vaporization: Option<DeviationSummary>,
    /// The normal-boiling-point check, where the catalogue has a normal boiling point.
    pub normal_boiling_point: Option<BoilingPointCheck>,
}

/// Deviation statistics of a model against reference points, as printed in the data files.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DeviationSummary {
    /// Mean absolute deviation, %.
    pub mean_abs_percent: f64,
    /// Largest absolute deviation, %.
    pub max_abs_percent: f64,
    /// Temperature of the largest deviation, K.
    pub max_at_k: f64,
    /// Lowest temperature compared, K.
    pub t_min_k: f64,
    /// Highest temperature compared, K.
    pub t_max_k: f64,
    /// Number of points compared.
    pub points: usize,
}

/// Model saturation temperature at 101 325 Pa against the catalogue's normal boiling point.
#[derive(Debug, Clone, PartialEq)]
pub struct BoilingPointCheck {
    /// The catalogue's normal boiling point, K.
    pub catalogue_k: f64,
    /// The model's saturation temperature at 101 325 Pa, K, or why it has none.
    pub model: Result<f64, String>,
}

impl BoilingPointCheck {
    /// Model minus catalogue, K, where the model has a value.
    pub fn deviation_k(&self) -> Option<f64> {
        self.model.as_ref().ok().map(|t| t - self.catalogue_k)
    }
}

/// How a fitted alpha function was obtained, as recorded in `data/fits.toml` by
/// `catalogue-tool fit`.
#[derive(Debug, Clone, PartialEq)]
pub struct FitRecord {
    /// The model fitted.
    pub model: Model,
    /// The reference data file, relative to `crates/fluids/data/`.
    pub data_file: String,
    /// The data's citation.
    pub data_citation: String,
    /// Which points were used (range and selection rule).
    pub data_used: String,
    /// Vapor-pressure deviation of the fit over the points it was fitted to.
    pub vapor_pressure: DeviationSummary,
    /// Saturated-liquid density deviation with the fitted volume shift, over the density
    /// points up to 0.9 Tc, where the data has densities.
    pub liquid_density: Option<DeviationSummary>,
}

/// One fluid of the catalogue.
#[derive(Debug, Clone, PartialEq)]
pub struct FluidRecord {
    /// Stable identifier: lowercase letters and digits, e.g. `r134a`.
    pub id: String,
    /// Display name, e.g. `R-134a`.
    pub name: String,
    /// ASHRAE 34 refrigerant number, e.g. `R-717`, where one is assigned.
    pub ashrae_number: Option<String>,
    /// Chemical (IUPAC-style) name. Built-in fluids always have one.
    pub chemical_name: Option<String>,
    /// Structural formula, e.g. `CH2FCF3` (display only: formulas are not lookup keys).
    /// Built-in fluids always have one.
    pub formula: Option<String>,
    /// CAS registry number. Built-in fluids always have one.
    pub cas: Option<String>,
    /// Other names the fluid is known by.
    pub aliases: Vec<String>,
    /// Hazards to show with every result for this fluid. Never empty.
    pub caution: String,
    /// ASHRAE 34 safety class, where one is assigned.
    pub safety_class: Option<SafetyClass>,
    /// What the engine needs: corresponding-states constants, triple point, heat of fusion,
    /// melting volume change, ideal-gas heat capacity and fitted alpha functions.
    pub constants: FluidConstants,
    /// Critical density, kg/m^3.
    pub critical_density_kg_per_m3: Option<f64>,
    /// Normal boiling point (saturation at 101 325 Pa), K. Absent where the fluid has none
    /// (carbon dioxide sublimes at one atmosphere).
    pub normal_boiling_point_k: Option<f64>,
    /// Triple-point pressure, Pa.
    pub triple_point_pressure_pa: Option<f64>,
    /// Enthalpy of vaporization at the normal boiling point, J/mol.
    pub enthalpy_of_vaporization_at_nbp_j_per_mol: Option<f64>,
    /// Citation text of every sourced field, by field name (e.g. `critical_temperature_k`,
    /// `ideal_gas_cp`, `fit.peng-robinson-1978`).
    pub citations: BTreeMap<String, String>,
    /// Provenance and quality of each fitted alpha function in `constants.fits`.
    pub fit_records: Vec<FitRecord>,
    /// Accuracy of each model against reference data (built-in fluids only).
    pub accuracy: Vec<AccuracyRecord>,
    /// Whether the fluid came from a user file rather than the built-in catalogue.
    pub user_supplied: bool,
}

impl FluidRecord {
    /// The engine for this fluid under `model`: with the fitted alpha function and volume
    /// shift where the catalogue has a fit for the model, else the model's generalized alpha.
    pub fn eos(&self, model: Model) -> Result<PureEos, binodal_eos::Error> {
        PureEos::new(&self.constants, model)
    }

    /// The accuracy record for `model`, if one exists.
    pub fn accuracy_for(&self, model: Model) -> Option<&AccuracyRecord> {
        self.accuracy.iter().find(|a| a.model == model)
    }

    /// The fit record for `model`, if the catalogue has a fit for it.
    pub fn fit_record_for(&self, model: Model) -> Option<&FitRecord> {
        self.fit_records.iter().find(|f| f.model == model)
    }

    /// The citation of `field`, if the field is sourced.
    pub fn citation(&self, field: &str) -> Option<&str> {
        self.citations.get(field).map(String::as_str)
    }
}
