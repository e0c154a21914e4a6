//! Start-up preparation of the pure-fluid engines: every fluid of the catalogue (built-in and
//! user fluids alike) under every model gets a verified saturation curve, built in parallel on
//! the machine's cores (rayon's global pool), and then one engine per reference state sharing
//! that curve. A curve that cannot be built is logged and its engine answers through the full
//! solver; requests say which path answered them.

use std::collections::HashMap;
use std::time::Instant;

use binodal_eos::{Model, PureEos, ReferenceState};
use binodal_fluids::FluidRecord;
use rayon::prelude::*;

/// One fluid's engines by model and reference state (or the engine's construction error).
pub type ByModel = HashMap<(Model, ReferenceState), Result<PureEos, binodal_eos::Error>>;

/// One fluid and model: its position in the catalogue, the model, and its engines by reference
/// state.
type Built = (
    usize,
    Model,
    Vec<(ReferenceState, Result<PureEos, binodal_eos::Error>)>,
);

/// What the curve builds did, for the start-up log.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct CurveSummary {
    /// Curves built and verified.
    pub built: usize,
    /// Fluid and model pairs left without a curve (their engines use the full solver).
    pub failed: usize,
    /// Largest recorded relative pressure deviation of any curve from the solver.
    pub max_pressure_deviation: f64,
    /// Largest recorded deviation of any inverse curve, as a temperature, K.
    pub max_temperature_deviation_k: f64,
    /// Full solves run by all builds.
    pub solves: usize,
    /// Wall time of the parallel build, ms.
    pub elapsed_ms: f64,
    /// Threads that built them.
    pub threads: usize,
}

/// Builds the engines of `records` under every model and each of `references`, with a
/// saturation curve per fluid and model, in parallel. Returns `(fluid id, engines)` in catalogue
/// order.
pub fn prepare_pure(
    records: &[FluidRecord],
    references: &[ReferenceState],
) -> (Vec<(String, ByModel)>, CurveSummary) {
    let started = Instant::now();
    let jobs: Vec<(usize, Model)> = (0..records.len())
        .flat_map(|i| Model::ALL.into_iter().map(move |m| (i, m)))
        .collect();
    let built: Vec<Built> = jobs
        .par_iter()
        .map(|&(i, model)| {
            let record = &records[i];
            let engines = match record.eos(model) {
                Ok(plain) => {
                    let plain = match plain.clone().with_saturation_curve() {
                        Ok(curved) => curved,
                        Err(error) => {
                            tracing::warn!(
                                fluid = %record.id,
                                model = model.id(),
                                %error,
                                "no saturation curve: this fluid and model answer through \
                                 the full solver"
                            );
                            plain
                        }
                    };
                    references
                        .iter()
                        .map(|&r| {
                            let eos = plain
                                .clone()
                                .with_reference(r)
                                .unwrap_or_else(|_| plain.clone());
                            (r, Ok(eos))
                        })
                        .collect()
                }
                Err(e) => references.iter().map(|&r| (r, Err(e.clone()))).collect(),
            };
            (i, model, engines)
        })
        .collect();

    let mut summary = CurveSummary {
        threads: rayon::current_num_threads(),
        ..CurveSummary::default()
    };
    let mut out: Vec<(String, ByModel)> = records
        .iter()
        .map(|r| (r.id.clone(), HashMap::new()))
        .collect();
    for (i, model, engines) in built {
        let curve = engines
            .first()
            .and_then(|(_, e)| e.as_ref().ok())
            .map(|e| e.saturation_curve().map(|c| *c.report()));
        match curve {
            Some(Some(report)) => {
                summary.built += 1;
                summary.solves += report.solves;
                summary.max_pressure_deviation = summary
                    .max_pressure_deviation
                    .max(report.max_pressure_deviation)
                    .max(report.max_inverse_pressure_deviation);
                summary.max_temperature_deviation_k = summary
                    .max_temperature_deviation_k
                    .max(report.max_inverse_temperature_deviation_k);
            }
            Some(None) => summary.failed += 1,
            None => {}
        }
        for (reference, eos) in engines {
            out[i].1.insert((model, reference), eos);
        }
    }
    summary.elapsed_ms = started.elapsed().as_secs_f64() * 1e3;
    tracing::info!(
        curves = summary.built,
        without_curve = summary.failed,
        max_relative_pressure_deviation = summary.max_pressure_deviation,
        max_temperature_deviation_k = summary.max_temperature_deviation_k,
        solves = summary.solves,
        threads = summary.threads,
        elapsed_ms = summary.elapsed_ms,
        "saturation curves built"
    );
    (out, summary)
}
