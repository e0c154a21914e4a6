//! Binary interaction parameters `k_ij` of the van der Waals mixing rule, fitted to binary
//! bubble-point data (`data/reference/*_gerg2008.csv`) and recorded in the generated
//! `data/interactions.toml`. Pairs without a record use `k_ij = 0`.
//!
//! ```text
//! cargo run --release -p binodal-fluids --bin catalogue-tool -- interactions
//! ```

use crate::Catalogue;
use crate::generate::{FITTED_MODELS, GenerateError};
use binodal_eos::{BinaryBubblePoint, Deviation, Mixture, Model, fit_kij};
use serde::Deserialize;
use std::fmt::Write as _;

/// The compiled-in text of `data/interactions.toml`.
pub const INTERACTIONS_TOML: &str = include_str!("../data/interactions.toml");

/// One fitted binary interaction parameter.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InteractionRecord {
    /// The two catalogue fluid ids; `k_ij` is symmetric.
    pub pair: [String; 2],
    /// The model it was fitted with (with the catalogue's fitted pure-fluid alphas).
    #[serde(deserialize_with = "model_id")]
    pub model: Model,
    /// The fitted `k_ij`.
    pub kij: f64,
    /// The data file, relative to `crates/fluids/data/`.
    pub data_file: String,
    /// The published source the data file's header names.
    pub data_citation: String,
    /// Bubble points fitted to (mixtures only, not the pure endpoints).
    pub points: usize,
    /// Bubble-pressure deviation with the fitted `k_ij`, mean and max, %.
    pub bubble_pressure_mean_abs_percent: f64,
    /// See `bubble_pressure_mean_abs_percent`.
    pub bubble_pressure_max_abs_percent: f64,
    /// The same with `k_ij = 0`, for comparison, mean and max, %.
    pub zero_kij_mean_abs_percent: f64,
    /// See `zero_kij_mean_abs_percent`.
    pub zero_kij_max_abs_percent: f64,
}

fn model_id<'de, D: serde::Deserializer<'de>>(d: D) -> Result<Model, D::Error> {
    let text = String::deserialize(d)?;
    text.parse().map_err(serde::de::Error::custom)
}

/// A binary bubble-point data set compiled into the crate.
struct BinaryData {
    pair: [&'static str; 2],
    file: &'static str,
    text: &'static str,
}

const BINARY_DATA: [BinaryData; 2] = [
    BinaryData {
        pair: ["propane", "isobutane"],
        file: "reference/propane_isobutane_gerg2008.csv",
        text: include_str!("../data/reference/propane_isobutane_gerg2008.csv"),
    },
    BinaryData {
        pair: ["propane", "butane"],
        file: "reference/propane_butane_gerg2008.csv",
        text: include_str!("../data/reference/propane_butane_gerg2008.csv"),
    },
];

impl BinaryData {
    /// The `# model:` and `# evaluated with` header lines, joined.
    fn citation(&self) -> String {
        let header: Vec<&str> = self
            .text
            .lines()
            .filter_map(|l| l.strip_prefix("# "))
            .filter(|l| l.starts_with("model:") || l.starts_with("evaluated with"))
            .collect();
        header.join("; ")
    }

    /// The mixture rows `(T K, x of the first component, bubble pressure Pa)`.
    fn bubble_points(&self) -> Vec<BinaryBubblePoint> {
        self.text
            .lines()
            .filter(|l| !l.starts_with('#'))
            .skip(1)
            .filter_map(|l| {
                let v: Vec<f64> = l.split(',').filter_map(|x| x.trim().parse().ok()).collect();
                (v.len() == 4 && v[1] > 0.0 && v[1] < 1.0).then(|| BinaryBubblePoint {
                    temperature_k: v[0],
                    x1: v[1],
                    pressure_pa: v[2],
                })
            })
            .collect()
    }
}

/// Fits `k_ij` for every compiled-in data set under every model with fitted alphas.
pub fn fit_all(catalogue: &Catalogue) -> Result<Vec<InteractionRecord>, GenerateError> {
    let mut out = Vec::new();
    for data in &BINARY_DATA {
        let points = data.bubble_points();
        for model in FITTED_MODELS {
            let engine = |id: &str| -> Result<_, GenerateError> {
                let record = catalogue.get(id)?;
                record.eos(model).map_err(|source| GenerateError::Engine {
                    fluid: id.to_string(),
                    model,
                    source,
                })
            };
            let pair = [engine(data.pair[0])?, engine(data.pair[1])?];
            let fail = |source| GenerateError::Engine {
                fluid: data.pair.join("+"),
                model,
                source,
            };
            let (kij, fitted) = fit_kij(&pair, &points).map_err(fail)?;
            let zero = zero_kij_deviation(&pair, &points).map_err(fail)?;
            out.push(InteractionRecord {
                pair: data.pair.map(str::to_string),
                model,
                kij,
                data_file: data.file.to_string(),
                data_citation: data.citation(),
                points: points.len(),
                bubble_pressure_mean_abs_percent: fitted.mean_abs_percent,
                bubble_pressure_max_abs_percent: fitted.max_abs_percent,
                zero_kij_mean_abs_percent: zero.mean_abs_percent,
                zero_kij_max_abs_percent: zero.max_abs_percent,
            });
        }
    }
    Ok(out)
}

fn zero_kij_deviation(
    pair: &[binodal_eos::PureEos; 2],
    points: &[BinaryBubblePoint],
) -> Result<Deviation, binodal_eos::Error> {
    let mut rows = Vec::new();
    for pt in points {
        let mix = Mixture::new(pair.to_vec(), vec![pt.x1, 1.0 - pt.x1], None)?;
        let p = mix.bubble_at_temperature(pt.temperature_k)?.pressure_pa;
        rows.push((pt.temperature_k, p, pt.pressure_pa));
    }
    Ok(Deviation::from_triples(rows).expect("the data sets have points"))
}

/// `data/interactions.toml` for `records`.
pub fn render(records: &[InteractionRecord]) -> String {
    let mut out = String::from(
        "# Binary interaction parameters k_ij (van der Waals one-fluid mixing rule). GENERATED:\n\
         # do not edit by hand. Written by\n\
         # `cargo run --release -p binodal-fluids --bin catalogue-tool -- interactions`\n\
         # and checked by `cargo test -p binodal-fluids` (the test recomputes it). Each k_ij is\n\
         # fitted with argmin (binodal_eos::fit_kij) to the bubble pressures of the data file,\n\
         # with the catalogue's fitted pure-fluid alphas; deviations are absolute relative\n\
         # bubble-pressure deviations in percent, with the fitted k_ij and with k_ij = 0.\n\
         # Pairs not listed use k_ij = 0.\n",
    );
    for r in records {
        let _ = writeln!(out, "\n[[interaction]]");
        let _ = writeln!(out, "pair = [\"{}\", \"{}\"]", r.pair[0], r.pair[1]);
        let _ = writeln!(out, "model = \"{}\"", r.model.id());
        let _ = writeln!(out, "kij = {:.5}", r.kij);
        let _ = writeln!(out, "data_file = \"{}\"", r.data_file);
        let _ = writeln!(out, "data_citation = {:?}", r.data_citation);
        let _ = writeln!(out, "points = {}", r.points);
        for (key, value) in [
            (
                "bubble_pressure_mean_abs_percent",
                r.bubble_pressure_mean_abs_percent,
            ),
            (
                "bubble_pressure_max_abs_percent",
                r.bubble_pressure_max_abs_percent,
            ),
            ("zero_kij_mean_abs_percent", r.zero_kij_mean_abs_percent),
            ("zero_kij_max_abs_percent", r.zero_kij_max_abs_percent),
        ] {
            let _ = writeln!(out, "{key} = {value:.3}");
        }
    }
    out
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct File {
    #[serde(default)]
    interaction: Vec<InteractionRecord>,
}

/// Parses `data/interactions.toml`, checking that every pair names catalogue fluids.
pub(crate) fn parse(
    text: &str,
    known_fluid: impl Fn(&str) -> bool,
) -> Result<Vec<InteractionRecord>, String> {
    let file: File = toml::from_str(text).map_err(|e| e.to_string())?;
    for r in &file.interaction {
        for id in &r.pair {
            if !known_fluid(id) {
                return Err(format!("interaction {:?}: unknown fluid `{id}`", r.pair));
            }
        }
        if !r.kij.is_finite() || r.kij.abs() >= 0.3 {
            return Err(format!(
                "interaction {:?}: kij = {} outside (-0.3, 0.3)",
                r.pair, r.kij
            ));
        }
    }
    Ok(file.interaction)
}
