//! The generated data files `data/fits.toml` and `data/accuracy.toml`: how they are
//! computed, written and read.
//!
//! They are written by `cargo run --release -p binodal-fluids --bin catalogue-tool -- fit`
//! and `... -- accuracy`, never by hand, and compiled into the crate. The test suite
//! recomputes the accuracy file and compares it with the committed one, so the record
//! cannot drift from what the code computes.

use crate::Catalogue;
use crate::error::CatalogueError;
use crate::record::{AccuracyRecord, BoilingPointCheck, DeviationSummary, FitRecord, FluidRecord};
use crate::reference::{self, MAX_REDUCED_TEMPERATURE, ReferenceData};
use binodal_eos::{
    Alpha, AlphaForm, Deviation, Model, ModelFit, ReferencePoint, VolumeShift, fit_saturation,
};
use std::fmt::Write as _;

/// The models that get a fitted alpha function.
pub const FITTED_MODELS: [Model; 2] = [Model::PengRobinson1978, Model::SoaveRedlichKwong];

/// At most this many points are fitted to; longer tables are thinned to the rows nearest
/// to evenly spaced temperatures (the fit costs one saturation solve per point and
/// iteration). The accuracy records use every point.
pub const MAX_FIT_POINTS: usize = 40;

/// Liquid densities up to this reduced temperature set the volume shift.
pub const DENSITY_MAX_REDUCED_TEMPERATURE: f64 = 0.9;

/// Enthalpies of vaporization are compared up to this reduced temperature.
pub const HVAP_MAX_REDUCED_TEMPERATURE: f64 = 0.95;

/// Pressure of the normal boiling point, Pa (one standard atmosphere).
pub const ONE_ATMOSPHERE_PA: f64 = 101_325.0;

/// A fit of one model to one fluid's reference data, ready to write to `data/fits.toml`.
#[derive(Debug, Clone, PartialEq)]
pub struct FitEntry {
    /// The fluid's id.
    pub fluid: String,
    /// The fitted parameters.
    pub fit: ModelFit,
    /// Provenance and quality of the fit.
    pub record: FitRecord,
}

/// An accuracy record of one fluid under one model, ready to write to `data/accuracy.toml`.
#[derive(Debug, Clone, PartialEq)]
pub struct AccuracyEntry {
    /// The fluid's id.
    pub fluid: String,
    /// The record.
    pub record: AccuracyRecord,
}

/// Errors of the generation commands.
#[derive(Debug, thiserror::Error)]
pub enum GenerateError {
    /// Reference data could not be read.
    #[error(transparent)]
    Data(#[from] CatalogueError),
    /// The engine failed for a fluid and model.
    #[error("{fluid} under {model}: {source}")]
    Engine {
        /// The fluid's id.
        fluid: String,
        /// The model.
        model: Model,
        /// The engine's error.
        #[source]
        source: binodal_eos::Error,
    },
}

/// Up to `max` points: all of them when there are few enough, else the rows nearest to
/// `max` evenly spaced temperatures over the data's range.
pub fn thin_points(points: &[ReferencePoint], max: usize) -> Vec<ReferencePoint> {
    if points.len() <= max || max < 2 {
        return points.to_vec();
    }
    let lo = points[0].temperature_k;
    let hi = points[points.len() - 1].temperature_k;
    let mut chosen: Vec<usize> = (0..max)
        .map(|k| {
            let target = lo + (hi - lo) * k as f64 / (max - 1) as f64;
            (0..points.len())
                .min_by(|&a, &b| {
                    let da = (points[a].temperature_k - target).abs();
                    let db = (points[b].temperature_k - target).abs();
                    da.total_cmp(&db)
                })
                .expect("points is not empty")
        })
        .collect();
    chosen.dedup();
    chosen.into_iter().map(|i| points[i]).collect()
}

fn summary(dev: Deviation, temperatures: impl Iterator<Item = f64>) -> DeviationSummary {
    let (mut t_min, mut t_max) = (f64::INFINITY, f64::NEG_INFINITY);
    for t in temperatures {
        t_min = t_min.min(t);
        t_max = t_max.max(t);
    }
    DeviationSummary {
        mean_abs_percent: dev.mean_abs_percent,
        max_abs_percent: dev.max_abs_percent,
        max_at_k: dev.max_at_temperature_k,
        t_min_k: t_min,
        t_max_k: t_max,
        points: dev.points,
    }
}

/// Fits a Mathias-Copeman alpha function for `model` to `data` with
/// [`binodal_eos::fit_saturation`], and the volume shift to the liquid densities up to
/// [`DENSITY_MAX_REDUCED_TEMPERATURE`] Tc where the data has them.
pub fn fit_fluid(
    fluid: &FluidRecord,
    data: &ReferenceData,
    model: Model,
) -> Result<FitEntry, binodal_eos::Error> {
    let mut constants = fluid.constants.clone();
    constants.fits.clear();
    let points = thin_points(&data.points, MAX_FIT_POINTS);
    let report = fit_saturation(
        &constants,
        model,
        AlphaForm::MathiasCopeman,
        &points,
        DENSITY_MAX_REDUCED_TEMPERATURE,
    )?;
    let tc = constants.critical_temperature_k;
    let t_of = |ps: &[ReferencePoint]| (ps[0].temperature_k, ps[ps.len() - 1].temperature_k);
    let (lo, hi) = t_of(&points);
    let thinned = if points.len() < data.points.len() {
        format!(
            "; the {} rows in range were thinned to the rows nearest to {MAX_FIT_POINTS} evenly \
             spaced temperatures",
            data.points.len()
        )
    } else {
        String::new()
    };
    let data_used = format!(
        "{} points from {lo:.3} K (triple point or lowest data temperature) to {hi:.3} K \
         (data limit or {MAX_REDUCED_TEMPERATURE} Tc = {:.3} K){thinned}",
        points.len(),
        MAX_REDUCED_TEMPERATURE * tc
    );
    let density_temperatures = points
        .iter()
        .filter(|p| p.liquid_density_kg_per_m3.is_some())
        .map(|p| p.temperature_k)
        .filter(|t| t / tc <= DENSITY_MAX_REDUCED_TEMPERATURE);
    let record = FitRecord {
        model,
        data_file: data.file.to_string(),
        data_citation: data.citation.clone(),
        data_used,
        vapor_pressure: summary(
            report.vapor_pressure,
            points.iter().map(|p| p.temperature_k),
        ),
        liquid_density: report
            .liquid_density
            .map(|d| summary(d, density_temperatures)),
    };
    Ok(FitEntry {
        fluid: fluid.id.clone(),
        fit: report.fit,
        record,
    })
}

/// Fits every fitted model of every built-in fluid that has reference data.
pub fn fit_all(
    catalogue: &Catalogue,
    mut progress: impl FnMut(&FitEntry),
) -> Result<Vec<FitEntry>, GenerateError> {
    let mut out = Vec::new();
    for fluid in catalogue.fluids().iter().filter(|f| !f.user_supplied) {
        let Some(data) = reference::reference_data(fluid)? else {
            continue;
        };
        for model in FITTED_MODELS {
            let entry = fit_fluid(fluid, &data, model).map_err(|source| GenerateError::Engine {
                fluid: fluid.id.clone(),
                model,
                source,
            })?;
            progress(&entry);
            out.push(entry);
        }
    }
    Ok(out)
}

/// The accuracy of `fluid` under `model` (with its catalogue fit where one exists)
/// against `data` (vapor pressure) and `enthalpy` (enthalpy of vaporization, up to
/// [`HVAP_MAX_REDUCED_TEMPERATURE`] Tc; usually the same set, see
/// [`reference::enthalpy_data`]), and the normal-boiling-point check.
pub fn accuracy_of(
    fluid: &FluidRecord,
    data: Option<&ReferenceData>,
    enthalpy: Option<&ReferenceData>,
    model: Model,
) -> Result<AccuracyRecord, binodal_eos::Error> {
    let eos = fluid.eos(model)?;
    let tc = fluid.constants.critical_temperature_k;
    let same_set = matches!((data, enthalpy), (Some(d), Some(h)) if d.file == h.file);
    let (mut p_rows, mut h_rows) = (Vec::new(), Vec::new());
    for pt in data.map_or(&[][..], |d| &d.points) {
        let sat = eos.saturation_at_temperature(pt.temperature_k)?;
        p_rows.push((pt.temperature_k, sat.pressure_pa, pt.pressure_pa));
        if let Some(h) = pt.enthalpy_of_vaporization_j_per_mol
            && same_set
            && pt.temperature_k / tc <= HVAP_MAX_REDUCED_TEMPERATURE
        {
            h_rows.push((pt.temperature_k, sat.enthalpy_of_vaporization_j_per_mol, h));
        }
    }
    if !same_set {
        for pt in enthalpy.map_or(&[][..], |d| &d.points) {
            if let Some(h) = pt.enthalpy_of_vaporization_j_per_mol
                && pt.temperature_k / tc <= HVAP_MAX_REDUCED_TEMPERATURE
            {
                let sat = eos.saturation_at_temperature(pt.temperature_k)?;
                h_rows.push((pt.temperature_k, sat.enthalpy_of_vaporization_j_per_mol, h));
            }
        }
    }
    let temps = |rows: &[(f64, f64, f64)]| rows.iter().map(|r| r.0).collect::<Vec<_>>();
    let (pt, ht) = (temps(&p_rows), temps(&h_rows));
    let vapor_pressure = Deviation::from_triples(p_rows).map(|d| summary(d, pt.into_iter()));
    let enthalpy_of_vaporization =
        Deviation::from_triples(h_rows).map(|d| summary(d, ht.into_iter()));
    let normal_boiling_point = fluid
        .normal_boiling_point_k
        .map(|catalogue_k| BoilingPointCheck {
            catalogue_k,
            model: eos
                .saturation_temperature(ONE_ATMOSPHERE_PA)
                .map_err(|e| e.to_string()),
        });
    let alpha = if eos.alpha_is_fitted() {
        format!("{} (fitted)", eos.alpha().id())
    } else {
        "generalized".to_string()
    };
    let nbp_source = fluid
        .citation("normal_boiling_point_k")
        .unwrap_or("not in the catalogue");
    let checked_against = match (data, enthalpy) {
        (Some(d), Some(h)) if !same_set => format!(
            "{}; enthalpy of vaporization checked against {}",
            d.citation, h.citation
        ),
        (Some(d), _) => d.citation.clone(),
        (None, _) => format!(
            "no reference vapor-pressure data in crates/fluids/data/reference/; only the normal \
             boiling point was checked, against the catalogue value ({nbp_source})"
        ),
    };
    Ok(AccuracyRecord {
        model,
        alpha,
        checked_against,
        vapor_pressure,
        enthalpy_of_vaporization,
        normal_boiling_point,
    })
}

/// Accuracy records of every model for every built-in fluid of `catalogue`.
pub fn accuracy_all(catalogue: &Catalogue) -> Result<Vec<AccuracyEntry>, GenerateError> {
    let mut out = Vec::new();
    for fluid in catalogue.fluids().iter().filter(|f| !f.user_supplied) {
        let data = reference::reference_data(fluid)?;
        let enthalpy = reference::enthalpy_data(fluid)?;
        for model in Model::ALL {
            let record =
                accuracy_of(fluid, data.as_ref(), enthalpy.as_ref(), model).map_err(|source| {
                    GenerateError::Engine {
                        fluid: fluid.id.clone(),
                        model,
                        source,
                    }
                })?;
            out.push(AccuracyEntry {
                fluid: fluid.id.clone(),
                record,
            });
        }
    }
    Ok(out)
}

// ---------------------------------------------------------------------------------------
// Writing. Percentages and temperatures are printed to 3 decimals: this is the precision
// at which the test suite compares a recomputation with the committed file. Fitted
// parameters are printed in full (shortest text that reads back to the same number).
// ---------------------------------------------------------------------------------------

fn quote(s: &str) -> String {
    toml::Value::String(s.to_string()).to_string()
}

fn write_summary(out: &mut String, prefix: &str, s: &DeviationSummary) {
    let _ = writeln!(out, "{prefix}_points = {}", s.points);
    let _ = writeln!(out, "{prefix}_from_k = {:.3}", s.t_min_k);
    let _ = writeln!(out, "{prefix}_to_k = {:.3}", s.t_max_k);
    let _ = writeln!(out, "{prefix}_mean_abs_percent = {:.3}", s.mean_abs_percent);
    let _ = writeln!(out, "{prefix}_max_abs_percent = {:.3}", s.max_abs_percent);
    let _ = writeln!(out, "{prefix}_max_at_k = {:.3}", s.max_at_k);
}

/// The text of `data/fits.toml`.
pub fn render_fits(entries: &[FitEntry]) -> String {
    let mut out = String::from(
        "# Fitted alpha functions of the fluid catalogue. GENERATED: do not edit by hand.\n\
         # Written by `cargo run --release -p binodal-fluids --bin catalogue-tool -- fit`:\n\
         # Mathias-Copeman (1983) alpha fitted with binodal_eos::fit_saturation to the reference\n\
         # data named in each entry (vapor pressure, plus enthalpy of vaporization below 0.95 Tc\n\
         # where the data has it); volume translation c(T) = c0 + c1 s + c2 s^2 (s a smooth blend\n\
         # from volume_shift_from_k to Tc) fitted to saturated-liquid densities up to 0.9 Tc\n\
         # where the data has them (else 0). psat_* and liquid_density_* are the fit's own\n\
         # deviations over the points it was fitted to, in percent.\n",
    );
    for e in entries {
        let (form, p) = match e.fit.alpha {
            Alpha::MathiasCopeman { c1, c2, c3 } => ("mathias-copeman-1983", [c1, c2, c3]),
            Alpha::Twu { l, m, n } => ("twu-1991", [l, m, n]),
            other => unreachable!("fits are Mathias-Copeman or Twu, not {other:?}"),
        };
        let _ = writeln!(out, "\n[[fit]]");
        let _ = writeln!(out, "fluid = {}", quote(&e.fluid));
        let _ = writeln!(out, "model = {}", quote(e.fit.model.id()));
        let _ = writeln!(out, "alpha = {}", quote(form));
        let _ = writeln!(out, "parameters = [{:?}, {:?}, {:?}]", p[0], p[1], p[2]);
        let shift = &e.fit.volume_shift;
        let _ = writeln!(
            out,
            "volume_shift_m3_per_mol = {:?}",
            shift.constant_m3_per_mol
        );
        if shift.depends_on_temperature() {
            let [c1, c2] = shift.temperature_terms_m3_per_mol;
            let _ = writeln!(out, "volume_shift_linear_m3_per_mol = {c1:?}");
            let _ = writeln!(out, "volume_shift_quadratic_m3_per_mol = {c2:?}");
            let _ = writeln!(out, "volume_shift_from_k = {:?}", shift.from_temperature_k);
        }
        let _ = writeln!(out, "data_file = {}", quote(&e.record.data_file));
        let _ = writeln!(out, "data_citation = {}", quote(&e.record.data_citation));
        let _ = writeln!(out, "data_used = {}", quote(&e.record.data_used));
        write_summary(&mut out, "psat", &e.record.vapor_pressure);
        if let Some(d) = &e.record.liquid_density {
            write_summary(&mut out, "liquid_density", d);
        }
    }
    out
}

/// The text of `data/accuracy.toml`.
pub fn render_accuracy(entries: &[AccuracyEntry]) -> String {
    let mut out = String::from(
        "# Accuracy of every model for every catalogue fluid. GENERATED: do not edit by hand.\n\
         # Written by `cargo run --release -p binodal-fluids --bin catalogue-tool -- accuracy`\n\
         # and checked by `cargo test -p binodal-fluids` (the test recomputes it). Deviations are\n\
         # absolute relative deviations in percent of model from reference, over the reference\n\
         # points from the triple point (or the data's lowest temperature) to 0.99 Tc; hvap only\n\
         # up to 0.95 Tc, against the first of the fluid's reference sets that has enthalpies\n\
         # (checked_against names it where it is not the vapor-pressure set). nbp_*: model\n\
         # saturation temperature at 101325 Pa against the catalogue normal boiling point, K.\n\
         # Results are advisory; see the catalogue's cautions.\n",
    );
    for e in entries {
        let r = &e.record;
        let _ = writeln!(out, "\n[[accuracy]]");
        let _ = writeln!(out, "fluid = {}", quote(&e.fluid));
        let _ = writeln!(out, "model = {}", quote(r.model.id()));
        let _ = writeln!(out, "alpha = {}", quote(&r.alpha));
        let _ = writeln!(out, "checked_against = {}", quote(&r.checked_against));
        if let Some(s) = &r.vapor_pressure {
            write_summary(&mut out, "psat", s);
        }
        if let Some(s) = &r.enthalpy_of_vaporization {
            write_summary(&mut out, "hvap", s);
        }
        if let Some(nbp) = &r.normal_boiling_point {
            let _ = writeln!(out, "nbp_catalogue_k = {:.3}", nbp.catalogue_k);
            match &nbp.model {
                Ok(t) => {
                    let _ = writeln!(out, "nbp_model_k = {t:.3}");
                    let _ = writeln!(out, "nbp_deviation_k = {:.3}", t - nbp.catalogue_k);
                }
                Err(message) => {
                    let _ = writeln!(out, "nbp_error = {}", quote(message));
                }
            }
        }
    }
    out
}

// ---------------------------------------------------------------------------------------
// Reading (for the loader).
// ---------------------------------------------------------------------------------------

/// The fields of one `[[fit]]` or `[[accuracy]]` table, taken one by one so that a
/// leftover (unknown) field can be reported.
struct Fields {
    what: String,
    map: toml::Table,
}

impl Fields {
    fn new(value: toml::Value, what: &str) -> Result<Fields, String> {
        match value {
            toml::Value::Table(map) => Ok(Fields {
                what: what.to_string(),
                map,
            }),
            other => Err(format!("{what}: expected a table, found {other}")),
        }
    }

    fn text(&mut self, key: &str) -> Result<String, String> {
        match self.map.remove(key) {
            Some(toml::Value::String(s)) => Ok(s),
            other => Err(format!(
                "{}: `{key}` must be a string, found {other:?}",
                self.what
            )),
        }
    }

    fn optional_text(&mut self, key: &str) -> Result<Option<String>, String> {
        if self.map.contains_key(key) {
            self.text(key).map(Some)
        } else {
            Ok(None)
        }
    }

    fn number(&mut self, key: &str) -> Result<f64, String> {
        match self.map.remove(key) {
            Some(toml::Value::Float(f)) => Ok(f),
            Some(toml::Value::Integer(i)) => Ok(i as f64),
            other => Err(format!(
                "{}: `{key}` must be a number, found {other:?}",
                self.what
            )),
        }
    }

    fn optional_number(&mut self, key: &str) -> Result<Option<f64>, String> {
        if self.map.contains_key(key) {
            self.number(key).map(Some)
        } else {
            Ok(None)
        }
    }

    /// The `<prefix>_*` statistics, if `<prefix>_points` is present.
    fn summary(&mut self, prefix: &str) -> Result<Option<DeviationSummary>, String> {
        if !self.map.contains_key(&format!("{prefix}_points")) {
            return Ok(None);
        }
        let mut get = |name: &str| self.number(&format!("{prefix}_{name}"));
        Ok(Some(DeviationSummary {
            points: get("points")? as usize,
            t_min_k: get("from_k")?,
            t_max_k: get("to_k")?,
            mean_abs_percent: get("mean_abs_percent")?,
            max_abs_percent: get("max_abs_percent")?,
            max_at_k: get("max_at_k")?,
        }))
    }

    fn model(&mut self) -> Result<Model, String> {
        let text = self.text("model")?;
        text.parse::<Model>()
            .map_err(|e| format!("{}: {e}", self.what))
    }

    /// Fails if any field was not taken.
    fn finish(self) -> Result<(), String> {
        match self.map.keys().next() {
            Some(key) => Err(format!("{}: unknown field `{key}`", self.what)),
            None => Ok(()),
        }
    }
}

/// The `[[name]]` tables of a generated file, with nothing else at the top level.
fn tables(text: &str, name: &str) -> Result<Vec<toml::Value>, String> {
    let mut doc: toml::Table = toml::from_str(text).map_err(|e| e.to_string())?;
    let rows = match doc.remove(name) {
        None => Vec::new(),
        Some(toml::Value::Array(rows)) => rows,
        Some(other) => {
            return Err(format!(
                "`{name}` must be an array of tables, found {other}"
            ));
        }
    };
    match doc.keys().next() {
        Some(key) => Err(format!("unknown top-level key `{key}`")),
        None => Ok(rows),
    }
}

/// `data/fits.toml` as entries.
pub(crate) fn read_fits(text: &str) -> Result<Vec<FitEntry>, String> {
    let mut out = Vec::new();
    for (i, row) in tables(text, "fit")?.into_iter().enumerate() {
        let mut f = Fields::new(row, &format!("fit #{}", i + 1))?;
        let fluid = f.text("fluid")?;
        let model = f.model()?;
        let form = f.text("alpha")?;
        let p = match f.map.remove("parameters") {
            Some(toml::Value::Array(items)) if items.len() == 3 => {
                let mut p = [0.0; 3];
                for (k, item) in items.iter().enumerate() {
                    p[k] = item
                        .as_float()
                        .ok_or_else(|| format!("{fluid}: parameters must be numbers"))?;
                }
                p
            }
            other => {
                return Err(format!(
                    "{fluid}: `parameters` must be 3 numbers, found {other:?}"
                ));
            }
        };
        let alpha = match form.as_str() {
            "mathias-copeman-1983" => Alpha::MathiasCopeman {
                c1: p[0],
                c2: p[1],
                c3: p[2],
            },
            "twu-1991" => Alpha::Twu {
                l: p[0],
                m: p[1],
                n: p[2],
            },
            other => return Err(format!("{fluid}: unknown alpha form `{other}`")),
        };
        let shift = VolumeShift {
            constant_m3_per_mol: f.number("volume_shift_m3_per_mol")?,
            temperature_terms_m3_per_mol: [
                f.optional_number("volume_shift_linear_m3_per_mol")?
                    .unwrap_or(0.0),
                f.optional_number("volume_shift_quadratic_m3_per_mol")?
                    .unwrap_or(0.0),
            ],
            from_temperature_k: f.optional_number("volume_shift_from_k")?.unwrap_or(0.0),
        };
        let record = FitRecord {
            model,
            data_file: f.text("data_file")?,
            data_citation: f.text("data_citation")?,
            data_used: f.text("data_used")?,
            vapor_pressure: f
                .summary("psat")?
                .ok_or_else(|| format!("{fluid}: no psat_* fields"))?,
            liquid_density: f.summary("liquid_density")?,
        };
        f.finish()?;
        out.push(FitEntry {
            fluid,
            fit: ModelFit {
                model,
                alpha,
                volume_shift: shift,
            },
            record,
        });
    }
    Ok(out)
}

/// `data/accuracy.toml` as entries.
pub(crate) fn read_accuracy(text: &str) -> Result<Vec<AccuracyEntry>, String> {
    let mut out = Vec::new();
    for (i, row) in tables(text, "accuracy")?.into_iter().enumerate() {
        let mut f = Fields::new(row, &format!("accuracy #{}", i + 1))?;
        let fluid = f.text("fluid")?;
        let model = f.model()?;
        let alpha = f.text("alpha")?;
        let checked_against = f.text("checked_against")?;
        let vapor_pressure = f.summary("psat")?;
        let enthalpy_of_vaporization = f.summary("hvap")?;
        let catalogue = f.optional_number("nbp_catalogue_k")?;
        let model_t = f.optional_number("nbp_model_k")?;
        // Model minus catalogue, printed for readers; recomputed from the two, not read.
        f.optional_number("nbp_deviation_k")?;
        let error = f.optional_text("nbp_error")?;
        f.finish()?;
        let normal_boiling_point = match (catalogue, model_t, error) {
            (None, None, None) => None,
            (Some(catalogue_k), Some(t), None) => Some(BoilingPointCheck {
                catalogue_k,
                model: Ok(t),
            }),
            (Some(catalogue_k), None, Some(e)) => Some(BoilingPointCheck {
                catalogue_k,
                model: Err(e),
            }),
            _ => {
                return Err(format!(
                    "{fluid} {model}: nbp_catalogue_k needs exactly one of nbp_model_k and nbp_error"
                ));
            }
        };
        out.push(AccuracyEntry {
            fluid,
            record: AccuracyRecord {
                model,
                alpha,
                checked_against,
                vapor_pressure,
                enthalpy_of_vaporization,
                normal_boiling_point,
            },
        });
    }
    Ok(out)
}
