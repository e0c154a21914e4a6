//! The `binodal.v1.PhaseService` implementation: each handler reads its request through
//! [`crate::convert`], asks the engine, and maps failures through [`crate::status`].

use std::sync::Arc;

use binodal_eos::SolvePath;
use binodal_fluids::normalize;
use binodal_proto::v1 as pb;
use binodal_proto::v1::phase_service_server::PhaseService;
use tonic::{Request, Response, Status};

use crate::convert::{self, FluidRequest};
use crate::engines::{Chosen, Engines, MixtureChoice};
use crate::status::ServiceError;
use crate::telemetry::{record_fluid, record_fluid_name};

/// Batches at least this long are computed on rayon's pool (one thread per core), so that a
/// large batch does not hold up the runtime's workers; batches of `batch::PARALLEL_MIN` points
/// or more are also split across that pool's threads.
const BLOCKING_BATCH: usize = 256;

/// The phase-state service handlers.
#[derive(Debug, Clone)]
pub struct PhaseApi {
    engines: Arc<Engines>,
    max_batch_length: usize,
}

impl PhaseApi {
    /// A service over prepared engines.
    pub fn new(engines: Arc<Engines>, max_batch_length: usize) -> PhaseApi {
        PhaseApi {
            engines,
            max_batch_length,
        }
    }
}

/// Checks that a numeric request field is finite; the message says what is valid (the model's
/// own range is checked, and named, once the value is a number).
fn finite(field: &str, value: f64) -> Result<f64, ServiceError> {
    if value.is_finite() {
        return Ok(value);
    }
    let valid = if field.ends_with("_k") {
        "a finite temperature in kelvin, above 0 K and within the model's range for the fluid"
    } else if field.ends_with("_pa") {
        "a finite absolute pressure in pascal, above 0 Pa and within the model's range for the fluid"
    } else {
        "a finite number"
    };
    Err(ServiceError::field(
        field,
        format!("{value} is not a finite number; valid: {valid}"),
    ))
}

fn state_batch(
    engines: &Engines,
    request: &pb::GetStateBatchRequest,
    max_batch_length: usize,
) -> Result<pb::GetStateBatchResponse, ServiceError> {
    let model = convert::model_from_proto(request.equation_of_state)?;
    let reference = convert::reference_from_proto(request.reference_state)?;
    let (ts, ps) = (&request.temperatures_k, &request.pressures_pa);
    if ts.is_empty() {
        return Err(ServiceError::field(
            "temperatures_k",
            "empty: give at least one point",
        ));
    }
    if ts.len() != ps.len() {
        return Err(ServiceError::field(
            "pressures_pa",
            format!(
                "has {} entries but temperatures_k has {}; they must match",
                ps.len(),
                ts.len()
            ),
        ));
    }
    if ts.len() > max_batch_length {
        return Err(ServiceError::field(
            "temperatures_k",
            format!(
                "{} points exceed the server's limit of {max_batch_length} per batch",
                ts.len()
            ),
        ));
    }
    let chosen = match target(engines, request.fluid.as_ref(), model, reference)? {
        Target::Pure(chosen) => chosen,
        Target::Mixture(choice) => return Ok(mixture_batch(&choice, ts, ps)),
    };
    Ok(crate::batch::pure_batch(
        chosen.eos,
        ts,
        ps,
        convert::basis(&chosen),
    ))
}

/// What a request computes on: a pure fluid's prepared engine, or a mixture.
enum Target<'a> {
    Pure(Chosen<'a>),
    Mixture(MixtureChoice),
}

impl PhaseApi {
    fn target(
        &self,
        selector: Option<&pb::FluidSelector>,
        model: Option<binodal_eos::Model>,
        reference: Option<binodal_eos::ReferenceState>,
    ) -> Result<Target<'_>, ServiceError> {
        target(&self.engines, selector, model, reference)
    }
}

/// Resolves a fluid selector once per request: a catalogue blend, a catalogue fluid, or a
/// custom mixture.
fn target<'a>(
    engines: &'a Engines,
    selector: Option<&pb::FluidSelector>,
    model: Option<binodal_eos::Model>,
    reference: Option<binodal_eos::ReferenceState>,
) -> Result<Target<'a>, ServiceError> {
    match convert::fluid_request(selector)? {
        FluidRequest::Name(name) => {
            if let Some(choice) = engines.choose_blend(name, model, reference)? {
                return Ok(Target::Mixture(choice));
            }
            Ok(Target::Pure(engines.choose(name, model, reference)?))
        }
        FluidRequest::Mixture {
            parts,
            mass_basis,
            warnings,
        } => Ok(Target::Mixture(engines.choose_custom(
            &parts, mass_basis, model, reference, warnings,
        )?)),
    }
}

/// A batch for a mixture: each point through the mixture's classification.
fn mixture_batch(choice: &MixtureChoice, ts: &[f64], ps: &[f64]) -> pb::GetStateBatchResponse {
    let n = ts.len();
    let nan = f64::NAN;
    let m = choice.mixture.molar_mass_kg_per_mol();
    let mut out = pb::GetStateBatchResponse {
        basis: Some(convert::mixture_basis(choice)),
        ..Default::default()
    };
    for (i, (&t, &p)) in ts.iter().zip(ps).enumerate() {
        let point = choice
            .mixture
            .state(t, p)
            .map(|s| convert::mixture_state(&s, choice));
        let (r, ok) = match point {
            Ok(r) => (r, true),
            Err(e) => {
                out.errors.push(convert::point_error(i, &e));
                (pb::GetStateResponse::default(), false)
            }
        };
        let props = r.properties.unwrap_or_default();
        let margins = r.margins.unwrap_or_default();
        let value = |x: f64| if ok { x } else { nan };
        out.phases.push(r.phase);
        out.densities_kg_per_m3.push(value(props.density_kg_per_m3));
        out.compressibility_factors
            .push(value(props.compressibility_factor));
        let h = props.enthalpy_j_per_mol.unwrap_or(nan);
        let s = props.entropy_j_per_mol_k.unwrap_or(nan);
        out.enthalpies_j_per_mol.push(h);
        out.enthalpies_j_per_kg.push(h / m);
        out.entropies_j_per_mol_k.push(s);
        out.entropies_j_per_kg_k.push(s / m);
        out.subcooling_k.push(margins.subcooling_k.unwrap_or(nan));
        out.superheat_k.push(margins.superheat_k.unwrap_or(nan));
        out.pressure_above_bubble_pa
            .push(margins.pressure_above_bubble_pa.unwrap_or(nan));
        out.pressure_below_dew_pa
            .push(margins.pressure_below_dew_pa.unwrap_or(nan));
        out.vapor_fractions_mol
            .push(r.two_phase.map_or(nan, |tp| tp.vapor_fraction_mol));
        out.estimated.push(r.estimated);
        out.near_critical.push(r.near_critical);
        out.paths.push(if ok {
            r.path
        } else {
            pb::ComputationPath::Unspecified as i32
        });
    }
    debug_assert_eq!(out.phases.len(), n);
    out
}

/// Bubble and dew points of a mixture at the requested temperature or pressure.
fn mixture_saturation(
    choice: &MixtureChoice,
    condition: Option<pb::get_saturation_request::Condition>,
) -> Result<pb::GetSaturationResponse, ServiceError> {
    use pb::get_saturation_request::Condition;
    let m = &choice.mixture;
    // The glide's own path where it needs a value besides the two points.
    let (bubble, dew, glide, glide_path) = match condition {
        Some(Condition::TemperatureK(t)) => {
            let t = finite("temperature_k", t)?;
            let bubble = m.bubble_at_temperature(t)?;
            let dew = m.dew_at_temperature(t)?;
            // Glide at the bubble pressure found for this temperature.
            let (dew_t, path) = m.dew_temperature(bubble.pressure_pa)?;
            (bubble, dew, dew_t - t, Some(path))
        }
        Some(Condition::PressurePa(p)) => {
            let p = finite("pressure_pa", p)?;
            let bubble = m.bubble_at_pressure(p)?;
            let dew = m.dew_at_pressure(p)?;
            let glide = dew.temperature_k - bubble.temperature_k;
            (bubble, dew, glide, None)
        }
        None => {
            return Err(ServiceError::field(
                "condition",
                "missing: give temperature_k or pressure_pa",
            ));
        }
    };
    // The answer comes from the lines only if every part of it did.
    let path = if [Some(bubble.path), Some(dew.path), glide_path]
        .into_iter()
        .flatten()
        .all(|p| p == SolvePath::Curve)
    {
        SolvePath::Curve
    } else {
        SolvePath::FullSolve
    };
    Ok(convert::mixture_saturation(
        &bubble, &dew, glide, path, choice,
    ))
}

#[tonic::async_trait]
impl PhaseService for PhaseApi {
    async fn list_fluids(
        &self,
        request: Request<pb::ListFluidsRequest>,
    ) -> Result<Response<pb::ListFluidsResponse>, Status> {
        let request = request.into_inner();
        let text = normalize(&request.text);
        if text.is_empty() && !request.text.is_empty() {
            // Matching ignores everything but letters and digits: such a text would keep all.
            return Err(ServiceError::field(
                "text",
                format!(
                    "`{}` has no letters or digits, so it matches every fluid; give part of a \
                     name, number or formula, or leave it empty to list all",
                    request.text
                ),
            )
            .into());
        }
        let fluids = self
            .engines
            .catalogue()
            .fluids()
            .iter()
            .filter(|f| {
                request.safety_classes.is_empty()
                    || request
                        .safety_classes
                        .iter()
                        .any(|&c| convert::safety_class_matches(f, c))
            })
            .filter(|f| {
                text.is_empty()
                    || [
                        Some(&f.id),
                        Some(&f.name),
                        f.ashrae_number.as_ref(),
                        f.chemical_name.as_ref(),
                        f.formula.as_ref(),
                    ]
                    .into_iter()
                    .flatten()
                    .chain(f.aliases.iter())
                    .any(|n| normalize(n).contains(&text))
            })
            .map(convert::summary)
            .collect::<Vec<_>>();
        let mut fluids = fluids;
        let catalogue = self.engines.catalogue();
        fluids.extend(
            catalogue
                .blends()
                .iter()
                .filter(|b| {
                    request.safety_classes.is_empty()
                        || request
                            .safety_classes
                            .iter()
                            .any(|&c| convert::class_matches(b.safety_class, c))
                })
                .filter(|b| {
                    text.is_empty()
                        || [Some(&b.id), Some(&b.name), b.ashrae_number.as_ref()]
                            .into_iter()
                            .flatten()
                            .chain(b.aliases.iter())
                            .any(|n| normalize(n).contains(&text))
                })
                .map(|b| convert::blend_summary(b, catalogue)),
        );
        fluids.sort_by(|a, b| a.fluid_id.cmp(&b.fluid_id));
        Ok(Response::new(pb::ListFluidsResponse { fluids }))
    }

    async fn describe_fluid(
        &self,
        request: Request<pb::DescribeFluidRequest>,
    ) -> Result<Response<pb::DescribeFluidResponse>, Status> {
        let name = &request.get_ref().fluid;
        record_fluid_name(name);
        if name.trim().is_empty() {
            return Err(
                ServiceError::field("fluid", "missing: give a catalogue fluid name").into(),
            );
        }
        let catalogue = self.engines.catalogue();
        if let Some(blend) = catalogue.blend(name) {
            let model = self.engines.default_model;
            let choice = self
                .engines
                .choose_blend(name, Some(model), None)?
                .expect("a blend");
            return Ok(Response::new(pb::DescribeFluidResponse {
                fluid: Some(convert::blend_description(blend, catalogue, &choice)),
            }));
        }
        let record = catalogue.get(name).map_err(ServiceError::from)?;
        // The default model's engine, for the estimated solid boundaries (none if it failed to
        // build: the description then goes without them).
        let engine = self.engines.choose(&record.id, None, None).ok();
        Ok(Response::new(pb::DescribeFluidResponse {
            fluid: Some(convert::description(record, engine.map(|c| c.eos))),
        }))
    }

    async fn get_saturation(
        &self,
        request: Request<pb::GetSaturationRequest>,
    ) -> Result<Response<pb::GetSaturationResponse>, Status> {
        let request = request.into_inner();
        record_fluid(request.fluid.as_ref());
        let model = convert::model_from_proto(request.equation_of_state)?;
        let reference = convert::reference_from_proto(request.reference_state)?;
        use pb::get_saturation_request::Condition;
        let chosen = match self.target(request.fluid.as_ref(), model, reference)? {
            Target::Pure(chosen) => chosen,
            Target::Mixture(choice) => {
                return Ok(Response::new(mixture_saturation(
                    &choice,
                    request.condition,
                )?));
            }
        };
        let sat = match request.condition {
            Some(Condition::TemperatureK(t)) => chosen
                .eos
                .saturation_at_temperature(finite("temperature_k", t)?),
            Some(Condition::PressurePa(p)) => {
                chosen.eos.saturation_at_pressure(finite("pressure_pa", p)?)
            }
            None => {
                return Err(ServiceError::field(
                    "condition",
                    "missing: give temperature_k or pressure_pa",
                )
                .into());
            }
        }
        .map_err(ServiceError::from)?;
        Ok(Response::new(convert::saturation(&sat, &chosen)))
    }

    async fn get_state(
        &self,
        request: Request<pb::GetStateRequest>,
    ) -> Result<Response<pb::GetStateResponse>, Status> {
        let request = request.into_inner();
        record_fluid(request.fluid.as_ref());
        let model = convert::model_from_proto(request.equation_of_state)?;
        let reference = convert::reference_from_proto(request.reference_state)?;
        let t = finite("temperature_k", request.temperature_k)?;
        let p = finite("pressure_pa", request.pressure_pa)?;
        let chosen = match self.target(request.fluid.as_ref(), model, reference)? {
            Target::Pure(chosen) => chosen,
            Target::Mixture(choice) => {
                let state = choice.mixture.state(t, p).map_err(ServiceError::from)?;
                return Ok(Response::new(convert::mixture_state(&state, &choice)));
            }
        };
        let state = chosen.eos.state(t, p).map_err(ServiceError::from)?;
        Ok(Response::new(convert::state(&state, &chosen)))
    }

    async fn get_state_batch(
        &self,
        request: Request<pb::GetStateBatchRequest>,
    ) -> Result<Response<pb::GetStateBatchResponse>, Status> {
        let request = request.into_inner();
        record_fluid(request.fluid.as_ref());
        let limit = self.max_batch_length;
        let response = if request.temperatures_k.len() >= BLOCKING_BATCH {
            let engines = Arc::clone(&self.engines);
            let (done, answer) = tokio::sync::oneshot::channel();
            rayon::spawn(move || {
                let result = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
                    state_batch(&engines, &request, limit)
                }));
                done.send(result).ok();
            });
            answer
                .await
                .map_err(|_| {
                    ServiceError::Internal("batch worker stopped without an answer".into())
                })?
                .map_err(|_| ServiceError::Internal("batch worker failed".into()))?
        } else {
            state_batch(&self.engines, &request, limit)
        };
        Ok(Response::new(response?))
    }
}
