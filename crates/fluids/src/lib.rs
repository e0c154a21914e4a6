//! # binodal-fluids
//!
//! The binodal fluid catalogue: 37 pure fluids (refrigerants and process fluids) with
//! sourced constants, looked up by any of their names, plus fluids from user files in the
//! same format.
//!
//! - [`Catalogue::builtin`]: the built-in catalogue, compiled in from `data/*.toml`.
//! - [`Catalogue::get`]: lookup by id, display name, ASHRAE number, chemical name, CAS
//!   number or alias, ignoring case and punctuation (`r134a`, `R-134a`, `HFC-134a` and
//!   `1,1,1,2-tetrafluoroethane` are one fluid). Unknown names come back with suggestions.
//! - [`FluidRecord`]: one fluid: descriptive fields, a non-empty caution, the ASHRAE 34
//!   safety class, the engine constants ([`binodal_eos::FluidConstants`], with fitted alpha
//!   functions where the catalogue has them), a citation for every sourced field, and the
//!   recorded accuracy of every model. [`FluidRecord::eos`] builds the engine.
//! - [`Catalogue::with_user_file`] / [`Catalogue::with_user_toml`]: add user fluids. Every
//!   bad field is reported at once, and a file with any problem loads nothing.
//!
//! ```
//! use binodal_eos::Model;
//! use binodal_fluids::Catalogue;
//!
//! let r134a = Catalogue::builtin().get("HFC-134a").unwrap();
//! assert_eq!(r134a.name, "R-134a");
//! assert!(!r134a.caution.is_empty()); // show it with every result
//! let eos = r134a.eos(Model::PengRobinson1978).unwrap();
//! let p = eos.saturation_pressure(260.85).unwrap();
//! // NIST Chemistry WebBook table (data/reference/r134a_saturated_liquid.csv): 0.18304 MPa
//! // at 260.85 K; the fit's recorded largest deviation bounds the difference.
//! let record = r134a.accuracy_for(Model::PengRobinson1978).unwrap();
//! let max_percent = record.vapor_pressure.unwrap().max_abs_percent;
//! assert!((p / 0.18304e6 - 1.0).abs() * 100.0 <= max_percent);
//! ```
//!
//! ## Data files
//!
//! Every numeric value in `data/*.toml` is `{ value = ..., source = "key" }` with the key
//! resolved in the file's `[sources]` table; the files are written by
//! `tools/catalogue/build_catalogue.py`. `data/fits.toml` (fitted Mathias-Copeman alpha
//! functions for Peng-Robinson 1978 and Soave-Redlich-Kwong) and `data/accuracy.toml` (each
//! model's deviation from reference data) are generated, never typed:
//!
//! ```text
//! cargo run --release -p binodal-fluids --bin catalogue-tool -- fit
//! cargo run --release -p binodal-fluids --bin catalogue-tool -- accuracy
//! ```
//!
//! (two separate runs: the second must be built with the new fits compiled in). The test
//! suite recomputes `accuracy.toml` and fails if it differs from the committed file.
//!
//! ## User files
//!
//! ```toml
//! [[fluid]]
//! id = "harrowgatebrine"
//! name = "Harrowgate test fluid"
//! molar_mass_kg_per_mol = 0.1
//! critical_temperature_k = { value = 400.0, source = "supplier data sheet HB-2" }
//! critical_pressure_pa = 4.0e6
//! acentric_factor = 0.25
//! # optional: fit = [{ model = "peng-robinson-1978", alpha = "mathias-copeman-1983",
//! #                    parameters = [0.8, -0.1, 0.2], volume_shift_m3_per_mol = 0.0 }]
//! # a temperature-dependent translation adds volume_shift_linear_m3_per_mol,
//! # volume_shift_quadratic_m3_per_mol and volume_shift_from_k (all three; see
//! # binodal_eos::VolumeShift)
//! ```
//!
//! Results are advisory: fluids can be flammable, toxic or at high pressure; show each
//! fluid's [`FluidRecord::caution`] with its results and defer to local codes and licensed
//! practice.
#![deny(missing_docs)]

mod blend;
mod error;
pub mod generate;
mod lookup;
mod parse;
mod record;
pub mod reference;

pub use blend::BlendRecord;
pub use error::{CatalogueError, LookupError, Problem};
pub use lookup::normalize;
pub use record::{
    AccuracyRecord, BoilingPointCheck, DeviationSummary, FitRecord, FluidRecord, SafetyClass,
};

use lookup::NameIndex;
use parse::Mode;
use std::path::Path;
use std::sync::OnceLock;

/// The built-in catalogue files, in catalogue order.
const BUILTIN_FILES: [(&str, &str); 5] = [
    ("data/hfc.toml", include_str!("../data/hfc.toml")),
    ("data/hcfc_hfo.toml", include_str!("../data/hcfc_hfo.toml")),
    (
        "data/hydrocarbons.toml",
        include_str!("../data/hydrocarbons.toml"),
    ),
    (
        "data/inorganic.toml",
        include_str!("../data/inorganic.toml"),
    ),
    (
        "data/oxygenates_aromatics.toml",
        include_str!("../data/oxygenates_aromatics.toml"),
    ),
];

/// Longest fluid name a look-up accepts, bytes: far above every catalogue name (the longest
/// chemical names have about 60), low enough that a name's suggestions stay cheap.
pub const MAX_NAME_BYTES: usize = 256;

/// The compiled-in text of `data/fits.toml`.
pub const FITS_TOML: &str = include_str!("../data/fits.toml");

/// The compiled-in text of `data/accuracy.toml`.
pub const ACCURACY_TOML: &str = include_str!("../data/accuracy.toml");

/// A set of fluids with a name index.
#[derive(Debug, Clone)]
pub struct Catalogue {
    fluids: Vec<FluidRecord>,
    index: NameIndex,
    blends: Vec<BlendRecord>,
}

impl Catalogue {
    /// The built-in catalogue, parsed once on first use.
    ///
    /// # Panics
    ///
    /// If the compiled-in data does not parse: that is a defect of this crate, caught by
    /// its tests, and the message names the file.
    pub fn builtin() -> &'static Catalogue {
        static BUILTIN: OnceLock<Catalogue> = OnceLock::new();
        BUILTIN.get_or_init(load_builtin)
    }

    /// This catalogue plus the fluids of the user file at `path`. See
    /// [`Catalogue::with_user_toml`].
    pub fn with_user_file(&self, path: &Path) -> Result<Catalogue, CatalogueError> {
        let text = std::fs::read_to_string(path).map_err(|source| CatalogueError::Io {
            path: path.to_path_buf(),
            source,
        })?;
        self.with_user_toml(&text, &path.display().to_string())
    }

    /// This catalogue plus the fluids of a user file's text; `origin` names it in messages
    /// and citations. Each fluid needs `id`, `name`, `molar_mass_kg_per_mol`,
    /// `critical_temperature_k`, `critical_pressure_pa` and `acentric_factor`; the other
    /// fields of the built-in files are optional, values may be bare numbers or
    /// `{ value = ..., source = "..." }` with a key of the file's `[sources]` or the citation
    /// itself. A fluid may not reuse a name of another fluid. Every problem is reported at
    /// once and a file with any problem adds nothing.
    pub fn with_user_toml(&self, text: &str, origin: &str) -> Result<Catalogue, CatalogueError> {
        let parsed = parse::parse_file(text, origin, Mode::User)?;
        let mut problems = parsed.problems;
        // Name clashes, with the built-in and earlier fluids and within the file, for every
        // fluid of the file whether or not it has other problems.
        let mut index = self.index.clone();
        let mut labels: Vec<&str> = self.fluids.iter().map(|f| f.id.as_str()).collect();
        labels.extend(parsed.names.iter().map(|(label, _)| label.as_str()));
        for (i, (label, names)) in parsed.names.iter().enumerate() {
            problems.extend(index.add(label, names, self.fluids.len() + i, &labels));
        }
        if !problems.is_empty() {
            return Err(CatalogueError::Invalid {
                origin: origin.to_string(),
                problems,
            });
        }
        let mut fluids = self.fluids.clone();
        fluids.extend(parsed.records);
        Ok(Catalogue {
            fluids,
            index,
            blends: self.blends.clone(),
        })
    }

    /// The fluid known by `name`: its id, display name, ASHRAE number, chemical name, CAS
    /// number or an alias, compared ignoring case and everything but letters and digits.
    pub fn get(&self, name: &str) -> Result<&FluidRecord, LookupError> {
        // Checked first: the suggestions compare the name with every known one, at a cost
        // that grows with its length.
        if name.len() > MAX_NAME_BYTES {
            return Err(LookupError::TooLong {
                length: name.len(),
                max: MAX_NAME_BYTES,
            });
        }
        if normalize(name).is_empty() {
            return Err(LookupError::Empty {
                name: name.to_string(),
            });
        }
        match self.index.find(name) {
            Some(i) => Ok(&self.fluids[i]),
            None => Err(LookupError::Unknown {
                name: name.to_string(),
                suggestions: self.index.suggestions(name, 3),
            }),
        }
    }

    /// Every blend (`data/blends.toml`).
    pub fn blends(&self) -> &[BlendRecord] {
        &self.blends
    }

    /// The blend known by `name` (id, display name, ASHRAE number or alias).
    pub fn blend(&self, name: &str) -> Option<&BlendRecord> {
        self.blends.iter().find(|b| b.is_named(name))
    }

    /// The components of a blend as catalogue records with their mass fractions.
    pub fn blend_components(&self, blend: &BlendRecord) -> Vec<(&FluidRecord, f64)> {
        blend
            .components
            .iter()
            .map(|(id, w)| {
                (
                    self.get(id).expect("blend components are checked on load"),
                    *w,
                )
            })
            .collect()
    }

    /// Every fluid: the built-in ones in catalogue order, then user fluids in file order.
    pub fn fluids(&self) -> &[FluidRecord] {
        &self.fluids
    }

    /// The fluids of ASHRAE 34 safety class `class`.
    pub fn with_safety_class(&self, class: SafetyClass) -> Vec<&FluidRecord> {
        self.fluids
            .iter()
            .filter(|f| f.safety_class == Some(class))
            .collect()
    }

    /// The fluids whose safety class is flammable (2L, 2 or 3).
    pub fn flammable(&self) -> Vec<&FluidRecord> {
        self.fluids
            .iter()
            .filter(|f| f.safety_class.is_some_and(SafetyClass::is_flammable))
            .collect()
    }

    /// The fluids whose safety class is of higher toxicity (B).
    pub fn higher_toxicity(&self) -> Vec<&FluidRecord> {
        self.fluids
            .iter()
            .filter(|f| f.safety_class.is_some_and(SafetyClass::is_higher_toxicity))
            .collect()
    }

    /// The fluids with no ASHRAE 34 safety class in the catalogue (check their caution).
    pub fn unclassified(&self) -> Vec<&FluidRecord> {
        self.fluids
            .iter()
            .filter(|f| f.safety_class.is_none())
            .collect()
    }
}

fn load_builtin() -> Catalogue {
    let mut fluids = Vec::new();
    for (file, text) in BUILTIN_FILES {
        match parse::parse_file(text, file, Mode::Builtin) {
            Ok(parsed) if parsed.problems.is_empty() => fluids.extend(parsed.records),
            Ok(parsed) => {
                let e = CatalogueError::Invalid {
                    origin: file.to_string(),
                    problems: parsed.problems,
                };
                panic!("built-in catalogue file {file} does not load: {e}")
            }
            Err(e) => panic!("built-in catalogue file {file} does not load: {e}"),
        }
    }
    let position = |fluids: &[FluidRecord], id: &str, file: &str| {
        fluids
            .iter()
            .position(|f| f.id == id)
            .unwrap_or_else(|| panic!("{file}: unknown fluid id `{id}`"))
    };
    let fits = generate::read_fits(FITS_TOML).unwrap_or_else(|e| panic!("data/fits.toml: {e}"));
    for entry in fits {
        let i = position(&fluids, &entry.fluid, "data/fits.toml");
        let fluid = &mut fluids[i];
        if fluid.constants.fit_for(entry.fit.model).is_some() {
            panic!(
                "data/fits.toml: two fits of {} for {}",
                entry.fluid, entry.fit.model
            );
        }
        fluid.citations.insert(
            format!("fit.{}", entry.fit.model),
            format!(
                "{} alpha fitted by catalogue-tool (data/fits.toml) to {}",
                entry.fit.alpha.id(),
                entry.record.data_citation
            ),
        );
        fluid.constants.fits.push(entry.fit);
        fluid.fit_records.push(entry.record);
    }
    let accuracy = generate::read_accuracy(ACCURACY_TOML)
        .unwrap_or_else(|e| panic!("data/accuracy.toml: {e}"));
    for entry in accuracy {
        let i = position(&fluids, &entry.fluid, "data/accuracy.toml");
        fluids[i].accuracy.push(entry.record);
    }
    let mut index = NameIndex::default();
    let ids: Vec<String> = fluids.iter().map(|f| f.id.clone()).collect();
    let ids: Vec<&str> = ids.iter().map(String::as_str).collect();
    for (i, fluid) in fluids.iter().enumerate() {
        let problems = index.add(&fluid.id, &lookup::names_of(fluid), i, &ids);
        if let Some(p) = problems.first() {
            panic!("built-in catalogue: name clash: {p}");
        }
    }
    let blends = blend::parse(include_str!("../data/blends.toml"), |id| {
        fluids.iter().any(|f| f.id == id)
    })
    .unwrap_or_else(|e| panic!("data/blends.toml: {e}"));
    Catalogue {
        fluids,
        index,
        blends,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The compiled-in data parses (a failure here is a defect of the data files).
    #[test]
    fn builtin_parses() {
        let c = Catalogue::builtin();
        assert_eq!(c.fluids().len(), 37, "data/*.toml hold 37 fluids");
        assert!(c.fluids().iter().all(|f| !f.user_supplied));
    }

    /// Water's melting volume change: 1 - 999.8/916.7 = -0.0907 (densities of liquid water
    /// and ice Ih at 0 °C, CRC Handbook, from memory).
    #[test]
    fn water_has_its_melting_volume_change() {
        let water = Catalogue::builtin().get("water").unwrap();
        assert_eq!(
            water.constants.melting_volume_change_fraction,
            Some(-0.0907)
        );
        assert!((1.0_f64 - 999.8 / 916.7 - (-0.0907)).abs() < 5e-5);
    }
}
