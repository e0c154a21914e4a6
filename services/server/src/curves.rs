//! Start-up preparation of the pure-fluid engines and the catalogue blends: every fluid of the
//! catalogue (built-in and user fluids alike) under every model gets a verified saturation
//! curve, and every catalogue blend under every model its verified bubble and dew lines, built
//! in parallel on the machine's cores (rayon's global pool); then one engine (or mixture) per
//! reference state shares them. A curve that cannot be built is logged and its engine answers
//! through the full solver; requests say which path answered them. Custom mixtures, made per
//! request, have no lines and always use the full solver.

use std::collections::HashMap;
use std::sync::Arc;
use std::time::Instant;

use binodal_eos::{
    BoundaryCurves, BoundaryKind, ErrorKind, Mixture, Model, PureEos, ReferenceState,
};
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

impl CurveSummary {
    /// Adds one verified curve's solves and deviations (forward and inverse series).
    fn record(&mut self, report: &binodal_eos::CurveReport) {
        self.solves += report.solves;
        self.max_pressure_deviation = self
            .max_pressure_deviation
            .max(report.max_pressure_deviation)
            .max(report.max_inverse_pressure_deviation);
        self.max_temperature_deviation_k = self
            .max_temperature_deviation_k
            .max(report.max_inverse_temperature_deviation_k);
    }
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
                    let with_references: Vec<_> = references
                        .iter()
                        .map(|&r| {
                            // Without ideal-gas data the engine answers without absolute h
                            // and s (documented in the proto); any other failure means the
                            // reference state cannot apply to this fluid, and requests for it
                            // are refused (`Engines::choose`).
                            let eos = match plain.clone().with_reference(r) {
                                Ok(eos) => Ok(eos),
                                Err(e) if matches!(e.kind(), ErrorKind::MissingData { .. }) => {
                                    Ok(plain.clone())
                                }
                                Err(e) => Err(e),
                            };
                            (r, eos)
                        })
                        .collect();
                    if with_references.iter().any(|(_, eos)| eos.is_ok()) {
                        with_references
                    } else {
                        // No reference state applies to this fluid under this model (e.g. a
                        // model whose saturation range misses both defining conditions): it
                        // answers without absolute h and s, as for a fluid without ideal-gas data.
                        references.iter().map(|&r| (r, Ok(plain.clone()))).collect()
                    }
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
            .iter()
            .find_map(|(_, e)| e.as_ref().ok())
            .map(|e| e.saturation_curve().map(|c| *c.report()));
        match curve {
            Some(Some(report)) => {
                summary.built += 1;
                summary.record(&report);
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

/// Every catalogue blend (by its position in the catalogue's blend list) under every model and
/// reference state: the prepared mixture, or its construction error.
pub type BlendMixtures =
    HashMap<(usize, Model, ReferenceState), Result<Arc<Mixture>, binodal_eos::Error>>;

/// Prepares `blends` catalogue blends under every model and each of `references`, in parallel
/// on rayon's pool: `build(blend, model, reference)` makes each mixture, and every blend and
/// model gets its bubble and dew lines ([`binodal_eos::BoundaryCurves`]), built once and shared
/// by its reference states. A pair whose lines cannot be built is logged and its mixtures
/// answer through the full solver.
pub fn prepare_blends(
    blends: usize,
    references: &[ReferenceState],
    build: impl Fn(usize, Model, ReferenceState) -> Result<Mixture, binodal_eos::Error> + Sync,
    name: impl Fn(usize) -> String + Sync,
) -> (BlendMixtures, CurveSummary) {
    let started = Instant::now();
    let jobs: Vec<(usize, Model)> = (0..blends)
        .flat_map(|i| Model::ALL.into_iter().map(move |m| (i, m)))
        .collect();
    type Prepared = (
        usize,
        Model,
        Option<Result<Arc<BoundaryCurves>, binodal_eos::Error>>,
        Vec<(ReferenceState, Result<Mixture, binodal_eos::Error>)>,
    );
    let built: Vec<Prepared> = jobs
        .par_iter()
        .map(|&(i, model)| {
            let mixtures: Vec<_> = references
                .iter()
                .map(|&r| (r, build(i, model, r)))
                .collect();
            // The lines do not depend on the reference state: build them from the first
            // mixture that exists.
            let curves = mixtures
                .iter()
                .find_map(|(_, m)| m.as_ref().ok())
                .map(|m| BoundaryCurves::build(m).map(Arc::new));
            (i, model, curves, mixtures)
        })
        .collect();

    let mut summary = CurveSummary {
        threads: rayon::current_num_threads(),
        ..CurveSummary::default()
    };
    let mut out = BlendMixtures::new();
    for (i, model, curves, mixtures) in built {
        let curves = match curves {
            Some(Ok(curves)) => {
                summary.built += 1;
                for kind in [BoundaryKind::Bubble, BoundaryKind::Dew] {
                    let line = curves.line(kind);
                    let report = line.report();
                    let (t_lo, t_hi) = line.temperature_range_k();
                    tracing::debug!(
                        blend = %name(i),
                        model = model.id(),
                        line = kind.id(),
                        from_k = t_lo,
                        to_k = t_hi,
                        convergence_limit_k = curves.convergence_limit_k(kind),
                        max_relative_pressure_deviation = report
                            .max_pressure_deviation
                            .max(report.max_inverse_pressure_deviation),
                        "blend line built"
                    );
                    summary.record(report);
                }
                Some(curves)
            }
            Some(Err(error)) => {
                summary.failed += 1;
                tracing::warn!(
                    blend = %name(i),
                    model = model.id(),
                    %error,
                    "no bubble and dew lines: this blend and model answer through the full solver"
                );
                None
            }
            None => None,
        };
        for (reference, mixture) in mixtures {
            let mixture = mixture.map(|m| match &curves {
                Some(c) => Arc::new(m.with_shared_boundary_curves(Arc::clone(c))),
                None => Arc::new(m),
            });
            out.insert((i, model, reference), mixture);
        }
    }
    summary.elapsed_ms = started.elapsed().as_secs_f64() * 1e3;
    tracing::info!(
        blends,
        lines = 2 * summary.built,
        without_lines = summary.failed,
        band_below_convergence_limit = binodal_eos::BOUNDARY_CURVE_BAND,
        max_relative_pressure_deviation = summary.max_pressure_deviation,
        max_temperature_deviation_k = summary.max_temperature_deviation_k,
        solves = summary.solves,
        threads = rayon::current_num_threads(),
        elapsed_ms = summary.elapsed_ms,
        "blend bubble and dew lines built"
    );
    (out, summary)
}
