//! The one place where protobuf messages and engine types meet: request fields in, engine
//! results out. Nothing else in the server builds or reads a `binodal_proto` message field
//! by field.

use binodal_eos::{Model, Phase, PhaseProperties, ReferenceState, Saturation, SolvePath, State};
use binodal_fluids::{AccuracyRecord, FluidRecord, SafetyClass};
use binodal_proto::v1 as pb;

use crate::engines::{Chosen, MixtureChoice};
use crate::status::ServiceError;

/// What a fluid selector asks for.
#[derive(Debug)]
pub enum FluidRequest<'a> {
    /// A catalogue fluid or blend by name.
    Name(&'a str),
    /// A custom mixture: `(fluid name, fraction)`, fractions on a mass or mole basis, checked
    /// and (if they did not sum to 1) normalised with a warning.
    Mixture {
        /// Components and fractions.
        parts: Vec<(String, f64)>,
        /// Whether the fractions are mass fractions.
        mass_basis: bool,
        /// Notes for the answer.
        warnings: Vec<String>,
    },
}

/// Relative tolerance within which mixture fractions count as summing to 1.
const FRACTION_SUM_TOLERANCE: f64 = 1e-6;

/// Reads and checks a fluid selector.
pub fn fluid_request(
    selector: Option<&pb::FluidSelector>,
) -> Result<FluidRequest<'_>, ServiceError> {
    if let Some(pb::fluid_selector::Choice::Mixture(mixture)) =
        selector.and_then(|s| s.choice.as_ref())
    {
        let mass_basis = match pb::FractionBasis::try_from(mixture.fraction_basis) {
            Ok(pb::FractionBasis::Mass) => true,
            Ok(pb::FractionBasis::Mole) => false,
            _ => {
                return Err(ServiceError::field(
                    "fluid.mixture.fraction_basis",
                    format!(
                        "{} is not a basis: give FRACTION_BASIS_MOLE (1) or FRACTION_BASIS_MASS (2)",
                        mixture.fraction_basis
                    ),
                ));
            }
        };
        if mixture.components.is_empty() {
            return Err(ServiceError::field(
                "fluid.mixture.components",
                "empty: give at least one component",
            ));
        }
        if mixture.components.len() > 20 {
            return Err(ServiceError::field(
                "fluid.mixture.components",
                format!("{} components; at most 20", mixture.components.len()),
            ));
        }
        let mut sum = 0.0;
        for (i, c) in mixture.components.iter().enumerate() {
            if !(c.fraction.is_finite() && c.fraction > 0.0) {
                return Err(ServiceError::field(
                    format!("fluid.mixture.components[{i}].fraction"),
                    format!(
                        "{} must be a finite number above 0 and at most 1",
                        c.fraction
                    ),
                ));
            }
            if c.fluid.trim().is_empty() {
                return Err(ServiceError::field(
                    format!("fluid.mixture.components[{i}].fluid"),
                    "empty name",
                ));
            }
            sum += c.fraction;
        }
        let mut warnings = Vec::new();
        if (sum - 1.0).abs() > FRACTION_SUM_TOLERANCE {
            warnings.push(format!(
                "mixture fractions summed to {sum}; they were normalised to sum to 1"
            ));
        }
        let parts = mixture
            .components
            .iter()
            .map(|c| (c.fluid.clone(), c.fraction / sum))
            .collect();
        return Ok(FluidRequest::Mixture {
            parts,
            mass_basis,
            warnings,
        });
    }
    fluid_name(selector).map(FluidRequest::Name)
}

/// The fluid name of a selector.
fn fluid_name(selector: Option<&pb::FluidSelector>) -> Result<&str, ServiceError> {
    match selector.and_then(|s| s.choice.as_ref()) {
        Some(pb::fluid_selector::Choice::Fluid(name)) if name.trim().is_empty() => {
            Err(ServiceError::field(
                "fluid",
                "empty: give a catalogue fluid name, e.g. \"R-134a\"",
            ))
        }
        Some(pb::fluid_selector::Choice::Fluid(name)) => Ok(name),
        Some(pb::fluid_selector::Choice::Mixture(_)) => unreachable!("handled by fluid_request"),
        None => Err(ServiceError::field(
            "fluid",
            "missing: give a catalogue fluid name, e.g. \"R-134a\" (ListFluids lists them)",
        )),
    }
}

/// The requested model; `None` means the server default.
pub fn model_from_proto(value: i32) -> Result<Option<Model>, ServiceError> {
    use pb::EquationOfState as E;
    match E::try_from(value) {
        Ok(E::Unspecified) => Ok(None),
        Ok(E::VanDerWaals) => Ok(Some(Model::VanDerWaals)),
        Ok(E::RedlichKwong) => Ok(Some(Model::RedlichKwong)),
        Ok(E::SoaveRedlichKwong) => Ok(Some(Model::SoaveRedlichKwong)),
        Ok(E::PengRobinson1976) => Ok(Some(Model::PengRobinson1976)),
        Ok(E::PengRobinson1978) => Ok(Some(Model::PengRobinson1978)),
        Err(_) => Err(ServiceError::field(
            "equation_of_state",
            format!("unknown value {value}; valid 0 (server default) to 5"),
        )),
    }
}

/// The proto value of a model.
pub fn model_to_proto(model: Model) -> pb::EquationOfState {
    match model {
        Model::VanDerWaals => pb::EquationOfState::VanDerWaals,
        Model::RedlichKwong => pb::EquationOfState::RedlichKwong,
        Model::SoaveRedlichKwong => pb::EquationOfState::SoaveRedlichKwong,
        Model::PengRobinson1976 => pb::EquationOfState::PengRobinson1976,
        Model::PengRobinson1978 => pb::EquationOfState::PengRobinson1978,
    }
}

/// The requested reference state; `None` means the server default.
pub fn reference_from_proto(value: i32) -> Result<Option<ReferenceState>, ServiceError> {
    use pb::ReferenceState as R;
    match R::try_from(value) {
        Ok(R::Unspecified) => Ok(None),
        Ok(R::LiquidAtZeroCelsius) => Ok(Some(ReferenceState::LiquidAtZeroCelsius)),
        Ok(R::LiquidAtNormalBoilingPoint) => Ok(Some(ReferenceState::LiquidAtNormalBoilingPoint)),
        Err(_) => Err(ServiceError::field(
            "reference_state",
            format!("unknown value {value}; valid 0 (server default) to 2"),
        )),
    }
}

fn reference_to_proto(reference: Option<ReferenceState>) -> pb::ReferenceState {
    match reference {
        None => pb::ReferenceState::Unspecified,
        Some(ReferenceState::LiquidAtZeroCelsius) => pb::ReferenceState::LiquidAtZeroCelsius,
        Some(ReferenceState::LiquidAtNormalBoilingPoint) => {
            pb::ReferenceState::LiquidAtNormalBoilingPoint
        }
    }
}

/// The proto value of the path that produced a result (a pure fluid's saturation curve, or a
/// blend's bubble and dew lines; or the full solve).
pub fn path_to_proto(path: SolvePath) -> pb::ComputationPath {
    match path {
        SolvePath::Curve => pb::ComputationPath::PrecomputedCurve,
        SolvePath::FullSolve => pb::ComputationPath::FullSolve,
    }
}

/// The proto value of a phase.
pub fn phase_to_proto(phase: Phase) -> pb::Phase {
    match phase {
        Phase::SubcooledLiquid => pb::Phase::SubcooledLiquid,
        Phase::SuperheatedVapor => pb::Phase::SuperheatedVapor,
        Phase::Saturated => pb::Phase::Saturated,
        Phase::SupercriticalFluid => pb::Phase::SupercriticalFluid,
        Phase::GasAboveCriticalTemperature => pb::Phase::GasAboveCriticalTemperature,
        Phase::SolidEstimated => pb::Phase::SolidEstimated,
        Phase::TwoPhase => pb::Phase::TwoPhase,
    }
}

fn safety_class_to_proto(class: Option<SafetyClass>) -> pb::SafetyClass {
    let Some(class) = class else {
        return pb::SafetyClass::NotClassified;
    };
    match class.as_str() {
        "A1" => pb::SafetyClass::A1,
        "A2L" => pb::SafetyClass::A2l,
        "A2" => pb::SafetyClass::A2,
        "A3" => pb::SafetyClass::A3,
        "B1" => pb::SafetyClass::B1,
        "B2L" => pb::SafetyClass::B2l,
        "B2" => pb::SafetyClass::B2,
        "B3" => pb::SafetyClass::B3,
        _ => pb::SafetyClass::NotClassified,
    }
}

/// Whether a fluid's safety class is the proto value `wanted`.
pub fn safety_class_matches(record: &FluidRecord, wanted: i32) -> bool {
    class_matches(record.safety_class, wanted)
}

/// Whether a safety class (`None`: not classified) is the proto value `wanted`.
pub fn class_matches(class: Option<SafetyClass>, wanted: i32) -> bool {
    safety_class_to_proto(class) as i32 == wanted
}

/// A listing entry for a blend.
pub fn blend_summary(
    blend: &binodal_fluids::BlendRecord,
    catalogue: &binodal_fluids::Catalogue,
) -> pb::FluidSummary {
    pb::FluidSummary {
        fluid_id: blend.id.clone(),
        display_name: blend.name.clone(),
        ashrae_number: blend.ashrae_number.clone().unwrap_or_default(),
        chemical_name: blend_composition_text(blend, catalogue),
        safety_class: safety_class_to_proto(blend.safety_class) as i32,
        kind: pb::FluidKind::Blend as i32,
    }
}

fn blend_composition_text(
    blend: &binodal_fluids::BlendRecord,
    catalogue: &binodal_fluids::Catalogue,
) -> String {
    let parts = catalogue.blend_components(blend);
    let names: Vec<&str> = parts.iter().map(|(f, _)| f.name.as_str()).collect();
    let shares: Vec<String> = parts
        .iter()
        .map(|(_, w)| format!("{}", (w * 1000.0).round() / 10.0))
        .collect();
    format!("{} ({} % by mass)", names.join("/"), shares.join("/"))
}

/// A full description of a blend. Its critical temperature and pressure are the
/// pseudo-critical values (Kay's rule), as the sources list says.
pub fn blend_description(
    blend: &binodal_fluids::BlendRecord,
    catalogue: &binodal_fluids::Catalogue,
    choice: &MixtureChoice,
) -> pb::FluidDescription {
    let (tc, pc) = choice.mixture.pseudo_critical();
    let basis = mixture_basis(choice);
    let models = Model::ALL
        .iter()
        .map(|&model| {
            let worst = choice
                .components
                .iter()
                .filter_map(|(f, _)| accuracy_to_proto(f.accuracy_for(model), model))
                .max_by(|a, b| unchecked_worst(a).total_cmp(&unchecked_worst(b)));
            pb::ModelSupport {
                equation_of_state: model_to_proto(model) as i32,
                alpha_function: pb::AlphaFunction::AcentricCorrelation as i32,
                alpha_function_detail: "each component's own alpha (fitted where the catalogue has a fit); one-fluid mixing rules with k_ij = 0".into(),
                accuracy: worst,
            }
        })
        .collect();
    pb::FluidDescription {
        fluid_id: blend.id.clone(),
        display_name: blend.name.clone(),
        ashrae_number: blend.ashrae_number.clone().unwrap_or_default(),
        aliases: blend.aliases.clone(),
        chemical_name: blend_composition_text(blend, catalogue),
        formula: String::new(),
        cas_number: String::new(),
        molar_mass_kg_per_mol: choice.mixture.molar_mass_kg_per_mol(),
        critical_temperature_k: tc,
        critical_pressure_pa: pc,
        critical_density_kg_per_m3: None,
        acentric_factor: None,
        normal_boiling_point_k: None,
        triple_point_temperature_k: None,
        triple_point_pressure_pa: None,
        safety_class: safety_class_to_proto(blend.safety_class) as i32,
        caution: basis.caution,
        kind: pb::FluidKind::Blend as i32,
        blend_components: catalogue
            .blend_components(blend)
            .iter()
            .map(|(f, w)| pb::BlendComponent {
                fluid_id: f.id.clone(),
                display_name: f.name.clone(),
                mass_fraction: *w,
            })
            .collect(),
        models,
        sources: vec![
            format!("composition and safety class: {}", blend.citation),
            "critical_temperature_k, critical_pressure_pa: pseudo-critical values (Kay's rule, mole-fraction averages of the components), not the blend's true critical point".into(),
        ],
        user_defined: false,
        estimated_sublimation_curve: Vec::new(),
        estimated_melting_curve: Vec::new(),
    }
}

fn alpha_to_proto(chosen: &binodal_eos::PureEos) -> pb::AlphaFunction {
    if chosen.alpha_is_fitted() {
        return pb::AlphaFunction::FluidFit;
    }
    match chosen.model() {
        Model::VanDerWaals => pb::AlphaFunction::Constant,
        Model::RedlichKwong => pb::AlphaFunction::InverseSquareRoot,
        _ => pb::AlphaFunction::AcentricCorrelation,
    }
}

/// The largest saturation-pressure deviation of a record, for finding a mixture's worst
/// component: a component never checked counts as the worst, since its deviation is unknown.
fn unchecked_worst(accuracy: &pb::ModelAccuracy) -> f64 {
    accuracy
        .saturation_pressure_max_abs_deviation_percent
        .unwrap_or(f64::INFINITY)
}

/// The recorded accuracy of `model` for a fluid.
fn accuracy_to_proto(record: Option<&AccuracyRecord>, model: Model) -> Option<pb::ModelAccuracy> {
    let record = record?;
    let psat = record.vapor_pressure.as_ref();
    let hvap = record.enthalpy_of_vaporization.as_ref();
    Some(pb::ModelAccuracy {
        equation_of_state: model_to_proto(model) as i32,
        saturation_pressure_mean_abs_deviation_percent: psat.map(|d| d.mean_abs_percent),
        saturation_pressure_max_abs_deviation_percent: psat.map(|d| d.max_abs_percent),
        enthalpy_of_vaporization_mean_abs_deviation_percent: hvap.map(|d| d.mean_abs_percent),
        enthalpy_of_vaporization_max_abs_deviation_percent: hvap.map(|d| d.max_abs_percent),
        checked_min_temperature_k: psat.map(|d| d.t_min_k),
        checked_max_temperature_k: psat.map(|d| d.t_max_k),
        checked_point_count: psat.map_or(0, |d| d.points as u32),
        normal_boiling_point_deviation_k: record
            .normal_boiling_point
            .as_ref()
            .and_then(|c| c.deviation_k()),
        reference: format!("{} (alpha: {})", record.checked_against, record.alpha),
    })
}

/// What every phase answer says about how it was computed: prepared once per fluid, model and
/// reference state at start-up ([`prepare_basis`]) and copied into each answer.
pub fn basis(chosen: &Chosen<'_>) -> pb::ResultBasis {
    chosen.basis.clone()
}

/// The basis of every answer computed with `eos` for `fluid` (built once, at start-up).
pub fn prepare_basis(fluid: &FluidRecord, eos: &binodal_eos::PureEos) -> pb::ResultBasis {
    let model = eos.model();
    pb::ResultBasis {
        fluid_id: fluid.id.clone(),
        composition: Vec::new(),
        molar_mass_kg_per_mol: eos.molar_mass_kg_per_mol(),
        equation_of_state: model_to_proto(model) as i32,
        alpha_function: alpha_to_proto(eos) as i32,
        reference_state: reference_to_proto(eos.reference_state()) as i32,
        expected_deviation: accuracy_to_proto(fluid.accuracy_for(model), model),
        caution: caution(fluid),
        warnings: Vec::new(),
    }
}

/// The fluid's caution with the advisory notice every answer carries.
fn caution(fluid: &FluidRecord) -> String {
    let class = fluid
        .safety_class
        .map(|c| format!("Safety class {}. ", c.as_str()))
        .unwrap_or_default();
    format!(
        "{class}{} Results are advisory; follow local codes and licensed practice.",
        fluid.caution
    )
}

/// Properties of one phase, per mole and per kilogram.
pub fn thermo(props: &PhaseProperties, molar_mass: f64) -> pb::ThermoProperties {
    let per_kg = |x: Option<f64>| x.map(|v| v / molar_mass);
    pb::ThermoProperties {
        density_kg_per_m3: props.density_kg_per_m3,
        molar_volume_m3_per_mol: props.molar_volume_m3_per_mol,
        compressibility_factor: props.compressibility,
        enthalpy_j_per_mol: props.enthalpy_j_per_mol,
        enthalpy_j_per_kg: per_kg(props.enthalpy_j_per_mol),
        entropy_j_per_mol_k: props.entropy_j_per_mol_k,
        entropy_j_per_kg_k: per_kg(props.entropy_j_per_mol_k),
        isobaric_heat_capacity_j_per_mol_k: props.isobaric_heat_capacity_j_per_mol_k,
        isobaric_heat_capacity_j_per_kg_k: per_kg(props.isobaric_heat_capacity_j_per_mol_k),
        isochoric_heat_capacity_j_per_mol_k: props.isochoric_heat_capacity_j_per_mol_k,
        isochoric_heat_capacity_j_per_kg_k: per_kg(props.isochoric_heat_capacity_j_per_mol_k),
    }
}

/// A saturation answer.
pub fn saturation(sat: &Saturation, chosen: &Chosen<'_>) -> pb::GetSaturationResponse {
    let m = chosen.eos.molar_mass_kg_per_mol();
    let phase = |props: &PhaseProperties| pb::SaturatedPhase {
        temperature_k: sat.temperature_k,
        pressure_pa: sat.pressure_pa,
        properties: Some(thermo(props, m)),
        composition: Vec::new(),
    };
    pb::GetSaturationResponse {
        saturation_temperature_k: sat.temperature_k,
        saturation_pressure_pa: sat.pressure_pa,
        bubble_dew: None,
        liquid: Some(phase(&sat.liquid)),
        vapor: Some(phase(&sat.vapor)),
        enthalpy_of_vaporization_j_per_mol: sat.enthalpy_of_vaporization_j_per_mol,
        enthalpy_of_vaporization_j_per_kg: sat.enthalpy_of_vaporization_j_per_mol / m,
        entropy_of_vaporization_j_per_mol_k: sat.entropy_of_vaporization_j_per_mol_k,
        entropy_of_vaporization_j_per_kg_k: sat.entropy_of_vaporization_j_per_mol_k / m,
        path: path_to_proto(sat.path) as i32,
        basis: Some(basis(chosen)),
    }
}

/// Margins of a pure-fluid state: signed, positive on the side their name gives.
pub fn margins(state: &State) -> pb::SaturationMargins {
    let m = &state.margins;
    pb::SaturationMargins {
        saturation_temperature_k: m.saturation_temperature_k,
        saturation_pressure_pa: m.saturation_pressure_pa,
        bubble_temperature_k: None,
        dew_temperature_k: None,
        bubble_pressure_pa: None,
        dew_pressure_pa: None,
        subcooling_k: m.temperature_margin_k.map(|d| -d),
        superheat_k: m.temperature_margin_k,
        pressure_above_bubble_pa: m.pressure_margin_pa,
        pressure_below_dew_pa: m.pressure_margin_pa.map(|d| -d),
        freezing_margin_k: m.freezing_margin_k,
    }
}

/// A state answer.
pub fn state(state: &State, chosen: &Chosen<'_>) -> pb::GetStateResponse {
    let m = chosen.eos.molar_mass_kg_per_mol();
    pb::GetStateResponse {
        phase: phase_to_proto(state.phase) as i32,
        // On the saturation line T and P do not fix the liquid/vapor split.
        properties: (state.phase != Phase::Saturated).then(|| thermo(&state.properties, m)),
        margins: Some(margins(state)),
        two_phase: None,
        reduced_temperature: state.reduced_temperature,
        reduced_pressure: state.reduced_pressure,
        estimated: state.estimated,
        near_critical: state.near_critical,
        path: path_to_proto(state.path) as i32,
        basis: Some(basis(chosen)),
    }
}

/// A listing entry.
pub fn summary(record: &FluidRecord) -> pb::FluidSummary {
    pb::FluidSummary {
        fluid_id: record.id.clone(),
        display_name: record.name.clone(),
        ashrae_number: record.ashrae_number.clone().unwrap_or_default(),
        chemical_name: record.chemical_name.clone().unwrap_or_default(),
        safety_class: safety_class_to_proto(record.safety_class) as i32,
        kind: pb::FluidKind::Pure as i32,
    }
}

/// Number of points sent on each estimated solid boundary.
const SOLID_CURVE_POINTS: usize = 24;
/// Lowest temperature of the estimated sublimation curve, as a fraction of the triple-point
/// temperature.
const SUBLIMATION_START_FRACTION: f64 = 0.6;
/// Highest pressure of the estimated melting line, as a multiple of the critical pressure (the
/// top of the pressure range the engine classifies states in).
const MELTING_END_REDUCED_PRESSURE: f64 = 100.0;
/// Highest pressure of the estimated melting line in any case, Pa. A cap, not a validity limit:
/// the constant-slope Clapeyron line from the triple point knows only the solid that melts there
/// (water's ordinary ice, for one, gives way to denser forms at a few hundred MPa, from memory),
/// so the line is least trustworthy far up.
const MELTING_END_MAX_PRESSURE_PA: f64 = 1.0e9;

/// Points of an estimated solid boundary in the pressure-temperature plane.
pub type SolidCurve = Vec<pb::PressureTemperaturePoint>;

/// The estimated solid boundaries of a pure fluid under `eos`: the sublimation curve from
/// [`SUBLIMATION_START_FRACTION`] of the triple-point temperature up to the triple point, by
/// rising temperature, and the melting line from the triple-point pressure up to the smaller of
/// [`MELTING_END_REDUCED_PRESSURE`] Pc and [`MELTING_END_MAX_PRESSURE_PA`], log-spaced in
/// pressure. Both are empty where the engine has no solid estimate (the catalogue lacks the
/// triple point or the heat of fusion).
pub fn solid_curves(eos: &binodal_eos::PureEos) -> (SolidCurve, SolidCurve) {
    let Some(solid) = eos.solid_boundary() else {
        return (Vec::new(), Vec::new());
    };
    let point = |temperature_k: f64, pressure_pa: f64| pb::PressureTemperaturePoint {
        temperature_k,
        pressure_pa,
    };
    let last = (SOLID_CURVE_POINTS - 1) as f64;
    let tt = solid.triple_temperature_k;
    let pt = solid.triple_pressure_pa;
    let sublimation = (0..SOLID_CURVE_POINTS)
        .map(|i| {
            let share = i as f64 / last;
            let t = if i + 1 == SOLID_CURVE_POINTS {
                tt
            } else {
                tt * (SUBLIMATION_START_FRACTION + (1.0 - SUBLIMATION_START_FRACTION) * share)
            };
            point(t, solid.sublimation_pressure_pa(t))
        })
        .collect();
    let top = (MELTING_END_REDUCED_PRESSURE * eos.critical_pressure_pa())
        .min(MELTING_END_MAX_PRESSURE_PA);
    let melting = if top > pt {
        (0..SOLID_CURVE_POINTS)
            .map(|i| {
                let p = if i == 0 {
                    pt
                } else {
                    pt * (top / pt).powf(i as f64 / last)
                };
                point(solid.solid_temperature_k(p), p)
            })
            .collect()
    } else {
        Vec::new()
    };
    (sublimation, melting)
}

/// A full description, with each model's alpha function and recorded accuracy. `eos` is the
/// fluid's engine under the server's default equation of state, which the estimated solid
/// boundaries come from; `None` (no engine) leaves them empty.
pub fn description(
    record: &FluidRecord,
    eos: Option<&binodal_eos::PureEos>,
) -> pb::FluidDescription {
    let c = &record.constants;
    let (estimated_sublimation_curve, estimated_melting_curve) =
        eos.map(solid_curves).unwrap_or_default();
    let models = Model::ALL
        .iter()
        .map(|&model| {
            let fitted = c.fit_for(model).is_some();
            let (alpha, detail) = match (fitted, model) {
                (true, _) => (
                    pb::AlphaFunction::FluidFit,
                    format!(
                        "Mathias-Copeman (1983) fitted to {}",
                        record
                            .fit_record_for(model)
                            .map_or("reference data", |f| f.data_citation.as_str())
                    ),
                ),
                (false, Model::VanDerWaals) => {
                    (pb::AlphaFunction::Constant, "alpha = 1".to_string())
                }
                (false, Model::RedlichKwong) => (
                    pb::AlphaFunction::InverseSquareRoot,
                    "alpha = Tr^-0.5".to_string(),
                ),
                (false, _) => (
                    pb::AlphaFunction::AcentricCorrelation,
                    "the model's generalized alpha from the acentric factor".to_string(),
                ),
            };
            pb::ModelSupport {
                equation_of_state: model_to_proto(model) as i32,
                alpha_function: alpha as i32,
                alpha_function_detail: detail,
                accuracy: accuracy_to_proto(record.accuracy_for(model), model),
            }
        })
        .collect();
    pb::FluidDescription {
        fluid_id: record.id.clone(),
        display_name: record.name.clone(),
        ashrae_number: record.ashrae_number.clone().unwrap_or_default(),
        aliases: record.aliases.clone(),
        chemical_name: record.chemical_name.clone().unwrap_or_default(),
        formula: record.formula.clone().unwrap_or_default(),
        cas_number: record.cas.clone().unwrap_or_default(),
        molar_mass_kg_per_mol: c.molar_mass_kg_per_mol,
        critical_temperature_k: c.critical_temperature_k,
        critical_pressure_pa: c.critical_pressure_pa,
        critical_density_kg_per_m3: record.critical_density_kg_per_m3,
        acentric_factor: Some(c.acentric_factor),
        normal_boiling_point_k: record.normal_boiling_point_k,
        triple_point_temperature_k: c.triple_point_temperature_k,
        triple_point_pressure_pa: record.triple_point_pressure_pa,
        safety_class: safety_class_to_proto(record.safety_class) as i32,
        caution: caution(record),
        kind: pb::FluidKind::Pure as i32,
        blend_components: Vec::new(),
        models,
        sources: record
            .citations
            .iter()
            .map(|(field, cite)| format!("{field}: {cite}"))
            .collect(),
        user_defined: record.user_supplied,
        estimated_sublimation_curve,
        estimated_melting_curve,
    }
}

fn fractions(choice: &MixtureChoice, x: &[f64]) -> Vec<pb::ComponentFraction> {
    let comps = choice.mixture.components();
    let mass_total: f64 = comps
        .iter()
        .zip(x)
        .map(|(c, xi)| xi * c.molar_mass_kg_per_mol())
        .sum();
    choice
        .components
        .iter()
        .zip(comps.iter().zip(x))
        .map(|((record, _), (c, &xi))| pb::ComponentFraction {
            fluid_id: record.id.clone(),
            mole_fraction: xi,
            mass_fraction: xi * c.molar_mass_kg_per_mol() / mass_total,
        })
        .collect()
}

/// The basis of a mixture answer. The expected deviation is the worst recorded
/// saturation-pressure deviation among the components under this model: the mixture's own
/// phase equilibrium has no recorded deviation.
pub fn mixture_basis(choice: &MixtureChoice) -> pb::ResultBasis {
    let model = choice.mixture.model();
    let worst = choice
        .components
        .iter()
        .filter_map(|(f, _)| accuracy_to_proto(f.accuracy_for(model), model).map(|a| (f, a)))
        .max_by(|(_, a), (_, b)| unchecked_worst(a).total_cmp(&unchecked_worst(b)))
        .map(|(f, mut a)| {
            a.reference = format!(
                "worst recorded pure-component deviation ({}); the mixture's phase equilibrium \
                 (k_ij = 0) is not checked against measured mixture data",
                f.name
            );
            a
        });
    let class = choice
        .safety_class
        .map(|c| format!("Safety class {}. ", c.as_str()))
        .unwrap_or_default();
    pb::ResultBasis {
        fluid_id: choice.id.clone(),
        composition: fractions(choice, choice.mixture.mole_fractions()),
        molar_mass_kg_per_mol: choice.mixture.molar_mass_kg_per_mol(),
        equation_of_state: model_to_proto(model) as i32,
        alpha_function: if choice
            .mixture
            .components()
            .iter()
            .all(|c| c.alpha_is_fitted())
        {
            pb::AlphaFunction::FluidFit as i32
        } else {
            pb::AlphaFunction::AcentricCorrelation as i32
        },
        reference_state: reference_to_proto(choice.reference) as i32,
        expected_deviation: worst,
        caution: format!(
            "{class}{} Results are advisory; follow local codes and licensed practice.",
            choice.caution
        ),
        warnings: choice.warnings.clone(),
    }
}

fn mixture_thermo(phase: &binodal_eos::MixturePhase) -> pb::ThermoProperties {
    let m = phase.molar_mass_kg_per_mol;
    pb::ThermoProperties {
        density_kg_per_m3: phase.density_kg_per_m3,
        molar_volume_m3_per_mol: phase.molar_volume_m3_per_mol,
        compressibility_factor: phase.compressibility,
        enthalpy_j_per_mol: phase.enthalpy_j_per_mol,
        enthalpy_j_per_kg: phase.enthalpy_j_per_mol.map(|h| h / m),
        entropy_j_per_mol_k: phase.entropy_j_per_mol_k,
        entropy_j_per_kg_k: phase.entropy_j_per_mol_k.map(|s| s / m),
        isobaric_heat_capacity_j_per_mol_k: None,
        isobaric_heat_capacity_j_per_kg_k: None,
        isochoric_heat_capacity_j_per_mol_k: None,
        isochoric_heat_capacity_j_per_kg_k: None,
    }
}

/// A mixture's saturation answer from its bubble and dew points (at one temperature or
/// one pressure) and the glide. `path` is the path of all three together: the curve only if
/// each came from the mixture's lines.
pub fn mixture_saturation(
    bubble: &binodal_eos::PhaseBoundaryPoint,
    dew: &binodal_eos::PhaseBoundaryPoint,
    glide_k: f64,
    path: SolvePath,
    choice: &MixtureChoice,
) -> pb::GetSaturationResponse {
    let z = choice.mixture.mole_fractions();
    let m = choice.mixture.molar_mass_kg_per_mol();
    let dh = match (dew.bulk.enthalpy_j_per_mol, bubble.bulk.enthalpy_j_per_mol) {
        (Some(hv), Some(hl)) => hv - hl,
        _ => f64::NAN,
    };
    let ds = match (
        dew.bulk.entropy_j_per_mol_k,
        bubble.bulk.entropy_j_per_mol_k,
    ) {
        (Some(sv), Some(sl)) => sv - sl,
        _ => f64::NAN,
    };
    pb::GetSaturationResponse {
        saturation_temperature_k: bubble.temperature_k,
        saturation_pressure_pa: bubble.pressure_pa,
        bubble_dew: Some(pb::BubbleDewPoints {
            bubble_temperature_k: bubble.temperature_k,
            dew_temperature_k: dew.temperature_k,
            bubble_pressure_pa: bubble.pressure_pa,
            dew_pressure_pa: dew.pressure_pa,
            temperature_glide_k: glide_k,
            incipient_vapor_composition: fractions(choice, &bubble.incipient_mole_fractions),
            incipient_liquid_composition: fractions(choice, &dew.incipient_mole_fractions),
        }),
        liquid: Some(pb::SaturatedPhase {
            temperature_k: bubble.temperature_k,
            pressure_pa: bubble.pressure_pa,
            properties: Some(mixture_thermo(&bubble.bulk)),
            composition: fractions(choice, z),
        }),
        vapor: Some(pb::SaturatedPhase {
            temperature_k: dew.temperature_k,
            pressure_pa: dew.pressure_pa,
            properties: Some(mixture_thermo(&dew.bulk)),
            composition: fractions(choice, z),
        }),
        enthalpy_of_vaporization_j_per_mol: dh,
        enthalpy_of_vaporization_j_per_kg: dh / m,
        entropy_of_vaporization_j_per_mol_k: ds,
        entropy_of_vaporization_j_per_kg_k: ds / m,
        path: path_to_proto(path) as i32,
        basis: Some(mixture_basis(choice)),
    }
}

/// A mixture's state answer.
pub fn mixture_state(
    state: &binodal_eos::MixtureState,
    choice: &MixtureChoice,
) -> pb::GetStateResponse {
    let f = &state.flash;
    let properties = if f.single_phase {
        mixture_thermo(&f.liquid)
    } else {
        let b = f.vapor_fraction;
        let v = (1.0 - b) * f.liquid.molar_volume_m3_per_mol + b * f.vapor.molar_volume_m3_per_mol;
        let m = choice.mixture.molar_mass_kg_per_mol();
        let entropy = match (f.liquid.entropy_j_per_mol_k, f.vapor.entropy_j_per_mol_k) {
            (Some(sl), Some(sv)) => Some((1.0 - b) * sl + b * sv),
            _ => None,
        };
        pb::ThermoProperties {
            density_kg_per_m3: m / v,
            molar_volume_m3_per_mol: v,
            compressibility_factor: state.pressure_pa * v
                / (binodal_eos::GAS_CONSTANT * state.temperature_k),
            enthalpy_j_per_mol: f.enthalpy_j_per_mol,
            enthalpy_j_per_kg: f.enthalpy_j_per_mol.map(|h| h / m),
            entropy_j_per_mol_k: entropy,
            entropy_j_per_kg_k: entropy.map(|s| s / m),
            isobaric_heat_capacity_j_per_mol_k: None,
            isobaric_heat_capacity_j_per_kg_k: None,
            isochoric_heat_capacity_j_per_mol_k: None,
            isochoric_heat_capacity_j_per_kg_k: None,
        }
    };
    let two_phase = (!f.single_phase).then(|| {
        let comps = choice.mixture.components();
        let mass = |x: &[f64]| -> f64 {
            comps
                .iter()
                .zip(x)
                .map(|(c, xi)| xi * c.molar_mass_kg_per_mol())
                .sum()
        };
        let (ml, mv) = (
            mass(&f.liquid_mole_fractions),
            mass(&f.vapor_mole_fractions),
        );
        let b = f.vapor_fraction;
        pb::TwoPhaseSplit {
            vapor_fraction_mol: b,
            vapor_fraction_mass: b * mv / ((1.0 - b) * ml + b * mv),
            liquid_composition: fractions(choice, &f.liquid_mole_fractions),
            vapor_composition: fractions(choice, &f.vapor_mole_fractions),
        }
    });
    pb::GetStateResponse {
        phase: phase_to_proto(state.phase) as i32,
        properties: Some(properties),
        margins: Some(pb::SaturationMargins {
            saturation_temperature_k: None,
            saturation_pressure_pa: None,
            bubble_temperature_k: state.bubble_temperature_k,
            dew_temperature_k: state.dew_temperature_k,
            bubble_pressure_pa: state.bubble_pressure_pa,
            dew_pressure_pa: state.dew_pressure_pa,
            subcooling_k: state.subcooling_k,
            superheat_k: state.superheat_k,
            pressure_above_bubble_pa: state.pressure_above_bubble_pa,
            pressure_below_dew_pa: state.pressure_below_dew_pa,
            freezing_margin_k: None,
        }),
        two_phase,
        reduced_temperature: state.reduced_temperature,
        reduced_pressure: state.reduced_pressure,
        estimated: false,
        near_critical: state.near_critical,
        path: path_to_proto(state.path) as i32,
        basis: Some(mixture_basis(choice)),
    }
}

/// A failed point of a batch, with the code its engine error maps to.
pub fn point_error(index: usize, e: &binodal_eos::Error) -> pb::PointError {
    let code = match crate::status::engine_code(e) {
        tonic::Code::OutOfRange => pb::PointErrorCode::OutOfRange,
        tonic::Code::Internal => pb::PointErrorCode::NotConverged,
        tonic::Code::InvalidArgument => pb::PointErrorCode::InvalidInput,
        _ => pb::PointErrorCode::Internal,
    };
    pb::PointError {
        index: index as u32,
        code: code as i32,
        message: e.to_string(),
    }
}

/// A pure-fluid batch response of `n` points: every column sized once, then filled in place by
/// `fill` (which may split the columns and fill the parts on several threads) and the point
/// errors it returns, in index order.
pub fn state_batch_response(
    n: usize,
    basis: pb::ResultBasis,
    fill: impl FnOnce(BatchColumns<'_>) -> Vec<pb::PointError>,
) -> pb::GetStateBatchResponse {
    let mut out = pb::GetStateBatchResponse {
        phases: vec![0; n],
        densities_kg_per_m3: vec![0.0; n],
        compressibility_factors: vec![0.0; n],
        enthalpies_j_per_mol: vec![0.0; n],
        enthalpies_j_per_kg: vec![0.0; n],
        entropies_j_per_mol_k: vec![0.0; n],
        entropies_j_per_kg_k: vec![0.0; n],
        subcooling_k: vec![0.0; n],
        superheat_k: vec![0.0; n],
        pressure_above_bubble_pa: vec![0.0; n],
        pressure_below_dew_pa: vec![0.0; n],
        vapor_fractions_mol: vec![f64::NAN; n],
        estimated: vec![false; n],
        near_critical: vec![false; n],
        paths: vec![0; n],
        errors: Vec::new(),
        basis: Some(basis),
    };
    let columns = BatchColumns {
        phases: &mut out.phases,
        densities: &mut out.densities_kg_per_m3,
        compressibilities: &mut out.compressibility_factors,
        enthalpies_mol: &mut out.enthalpies_j_per_mol,
        enthalpies_kg: &mut out.enthalpies_j_per_kg,
        entropies_mol: &mut out.entropies_j_per_mol_k,
        entropies_kg: &mut out.entropies_j_per_kg_k,
        subcooling: &mut out.subcooling_k,
        superheat: &mut out.superheat_k,
        above_bubble: &mut out.pressure_above_bubble_pa,
        below_dew: &mut out.pressure_below_dew_pa,
        estimated: &mut out.estimated,
        near_critical: &mut out.near_critical,
        paths: &mut out.paths,
    };
    let errors = fill(columns);
    out.errors = errors;
    out
}

/// The columns of a pure-fluid batch response (all of the same length), borrowed for filling.
/// Vapor fractions stay NaN: a pure fluid has no two-phase split at a given (T, P).
#[derive(Debug)]
pub struct BatchColumns<'a> {
    phases: &'a mut [i32],
    densities: &'a mut [f64],
    compressibilities: &'a mut [f64],
    enthalpies_mol: &'a mut [f64],
    enthalpies_kg: &'a mut [f64],
    entropies_mol: &'a mut [f64],
    entropies_kg: &'a mut [f64],
    subcooling: &'a mut [f64],
    superheat: &'a mut [f64],
    above_bubble: &'a mut [f64],
    below_dew: &'a mut [f64],
    estimated: &'a mut [bool],
    near_critical: &'a mut [bool],
    paths: &'a mut [i32],
}

impl<'a> BatchColumns<'a> {
    /// Points in these columns.
    pub fn len(&self) -> usize {
        self.phases.len()
    }

    /// The first `mid` points and the rest.
    pub fn split_at(self, mid: usize) -> (BatchColumns<'a>, BatchColumns<'a>) {
        let (phases, phases_b) = self.phases.split_at_mut(mid);
        let (densities, densities_b) = self.densities.split_at_mut(mid);
        let (compressibilities, compressibilities_b) = self.compressibilities.split_at_mut(mid);
        let (enthalpies_mol, enthalpies_mol_b) = self.enthalpies_mol.split_at_mut(mid);
        let (enthalpies_kg, enthalpies_kg_b) = self.enthalpies_kg.split_at_mut(mid);
        let (entropies_mol, entropies_mol_b) = self.entropies_mol.split_at_mut(mid);
        let (entropies_kg, entropies_kg_b) = self.entropies_kg.split_at_mut(mid);
        let (subcooling, subcooling_b) = self.subcooling.split_at_mut(mid);
        let (superheat, superheat_b) = self.superheat.split_at_mut(mid);
        let (above_bubble, above_bubble_b) = self.above_bubble.split_at_mut(mid);
        let (below_dew, below_dew_b) = self.below_dew.split_at_mut(mid);
        let (estimated, estimated_b) = self.estimated.split_at_mut(mid);
        let (near_critical, near_critical_b) = self.near_critical.split_at_mut(mid);
        let (paths, paths_b) = self.paths.split_at_mut(mid);
        (
            BatchColumns {
                phases,
                densities,
                compressibilities,
                enthalpies_mol,
                enthalpies_kg,
                entropies_mol,
                entropies_kg,
                subcooling,
                superheat,
                above_bubble,
                below_dew,
                estimated,
                near_critical,
                paths,
            },
            BatchColumns {
                phases: phases_b,
                densities: densities_b,
                compressibilities: compressibilities_b,
                enthalpies_mol: enthalpies_mol_b,
                enthalpies_kg: enthalpies_kg_b,
                entropies_mol: entropies_mol_b,
                entropies_kg: entropies_kg_b,
                subcooling: subcooling_b,
                superheat: superheat_b,
                above_bubble: above_bubble_b,
                below_dew: below_dew_b,
                estimated: estimated_b,
                near_critical: near_critical_b,
                paths: paths_b,
            },
        )
    }

    /// Writes point `i` from its state. On the saturation line T and P do not fix the split, so
    /// the bulk properties are NaN there, as in GetState where they are absent.
    pub fn put_state(&mut self, i: usize, s: &State, molar_mass: f64) {
        let nan = f64::NAN;
        let props = &s.properties;
        let saturated = s.phase == Phase::Saturated;
        let value = |x: f64| if saturated { nan } else { x };
        let margin = s.margins.temperature_margin_k;
        let dp = s.margins.pressure_margin_pa;
        let h = props.enthalpy_j_per_mol.map_or(nan, value);
        let s_mol = props.entropy_j_per_mol_k.map_or(nan, value);
        self.phases[i] = phase_to_proto(s.phase) as i32;
        self.densities[i] = value(props.density_kg_per_m3);
        self.compressibilities[i] = value(props.compressibility);
        self.enthalpies_mol[i] = h;
        self.enthalpies_kg[i] = h / molar_mass;
        self.entropies_mol[i] = s_mol;
        self.entropies_kg[i] = s_mol / molar_mass;
        self.subcooling[i] = margin.map_or(nan, |d| -d);
        self.superheat[i] = margin.unwrap_or(nan);
        self.above_bubble[i] = dp.unwrap_or(nan);
        self.below_dew[i] = dp.map_or(nan, |d| -d);
        self.estimated[i] = s.estimated;
        self.near_critical[i] = s.near_critical;
        self.paths[i] = path_to_proto(s.path) as i32;
    }

    /// Marks point `i` as failed: unspecified phase and path, NaN values.
    pub fn put_failure(&mut self, i: usize) {
        let nan = f64::NAN;
        self.phases[i] = pb::Phase::Unspecified as i32;
        for column in [
            &mut *self.densities,
            &mut *self.compressibilities,
            &mut *self.enthalpies_mol,
            &mut *self.enthalpies_kg,
            &mut *self.entropies_mol,
            &mut *self.entropies_kg,
            &mut *self.subcooling,
            &mut *self.superheat,
            &mut *self.above_bubble,
            &mut *self.below_dew,
        ] {
            column[i] = nan;
        }
        self.estimated[i] = false;
        self.near_critical[i] = false;
        self.paths[i] = pb::ComputationPath::Unspecified as i32;
    }
}
