//! The one place where protobuf messages and engine types meet: request fields in, engine
//! results out. Nothing else in the server builds or reads a `binodal_proto` message field
//! by field.

use binodal_eos::{Model, Phase, PhaseProperties, ReferenceState, Saturation, State};
use binodal_fluids::{AccuracyRecord, FluidRecord, SafetyClass};
use binodal_proto::v1 as pb;

use crate::engines::Chosen;
use crate::status::ServiceError;

/// The fluid name of a selector; mixtures are not built yet.
pub fn fluid_name(selector: Option<&pb::FluidSelector>) -> Result<&str, ServiceError> {
    match selector.and_then(|s| s.choice.as_ref()) {
        Some(pb::fluid_selector::Choice::Fluid(name)) if name.trim().is_empty() => {
            Err(ServiceError::field(
                "fluid",
                "empty: give a catalogue fluid name, e.g. \"R-134a\"",
            ))
        }
        Some(pb::fluid_selector::Choice::Fluid(name)) => Ok(name),
        Some(pb::fluid_selector::Choice::Mixture(_)) => Err(ServiceError::Unimplemented(
            "mixtures are not available yet: ask for a pure catalogue fluid by name".into(),
        )),
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

/// The catalogue's safety class for a proto value, `None` for not classified.
pub fn safety_class_matches(record: &FluidRecord, wanted: i32) -> bool {
    safety_class_to_proto(record.safety_class) as i32 == wanted
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

/// The recorded accuracy of `model` for a fluid.
fn accuracy_to_proto(record: Option<&AccuracyRecord>, model: Model) -> Option<pb::ModelAccuracy> {
    let record = record?;
    let psat = record.vapor_pressure.as_ref();
    let hvap = record.enthalpy_of_vaporization.as_ref();
    Some(pb::ModelAccuracy {
        equation_of_state: model_to_proto(model) as i32,
        saturation_pressure_mean_abs_deviation_percent: psat
            .map_or(f64::NAN, |d| d.mean_abs_percent),
        saturation_pressure_max_abs_deviation_percent: psat.map_or(f64::NAN, |d| d.max_abs_percent),
        enthalpy_of_vaporization_mean_abs_deviation_percent: hvap
            .map_or(f64::NAN, |d| d.mean_abs_percent),
        enthalpy_of_vaporization_max_abs_deviation_percent: hvap
            .map_or(f64::NAN, |d| d.max_abs_percent),
        checked_min_temperature_k: psat.map_or(f64::NAN, |d| d.t_min_k),
        checked_max_temperature_k: psat.map_or(f64::NAN, |d| d.t_max_k),
        checked_point_count: psat.map_or(0, |d| d.points as u32),
        reference: format!("{} (alpha: {})", record.checked_against, record.alpha),
    })
}

/// What every phase answer says about how it was computed.
pub fn basis(chosen: &Chosen<'_>) -> pb::ResultBasis {
    let model = chosen.eos.model();
    pb::ResultBasis {
        fluid_id: chosen.fluid.id.clone(),
        composition: Vec::new(),
        molar_mass_kg_per_mol: chosen.eos.molar_mass_kg_per_mol(),
        equation_of_state: model_to_proto(model) as i32,
        alpha_function: alpha_to_proto(chosen.eos) as i32,
        reference_state: reference_to_proto(chosen.reference) as i32,
        expected_deviation: accuracy_to_proto(chosen.fluid.accuracy_for(model), model),
        caution: caution(chosen.fluid),
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
        path: pb::ComputationPath::FullSolve as i32,
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
        path: pb::ComputationPath::FullSolve as i32,
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

/// A full description, with each model's alpha function and recorded accuracy.
pub fn description(record: &FluidRecord) -> pb::FluidDescription {
    let c = &record.constants;
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
    }
}
