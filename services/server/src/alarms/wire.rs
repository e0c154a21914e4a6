//! Protobuf messages of `binodal.v1.AlarmService` to and from the alarm types of
//! [`super::session`] and [`super::rules`]. Engine types reach protobuf only through
//! [`crate::convert`] (the phase, the model); an invalid opening becomes a [`ServiceError`] whose
//! status [`crate::status`] chooses.

use std::collections::HashMap;
use std::sync::Arc;

use binodal_proto::v1 as pb;

use super::config::AMBIENT_RANGE_PA;
use super::rules::{
    MAX_DELAY_S, Priority, RuleInput, RuleKind, RuleSpec, Transition, resolve_rules,
};
use super::session::{
    AlarmMargins, AmbientSource, Batch, Check, Event, EventKind, FluidChoice, Outcome,
    PressureKindIn, QualityIn, QualityIssue, ReadingIn, Setup, TagSetup,
};
use crate::convert;
use crate::engines::Engines;
use crate::status::ServiceError;

/// A fluid selector as a choice; an empty name counts as absent.
fn fluid_choice(selector: Option<&pb::FluidSelector>) -> FluidChoice {
    match selector.and_then(|s| s.choice.as_ref()) {
        Some(pb::fluid_selector::Choice::Fluid(name)) if !name.trim().is_empty() => {
            FluidChoice::Named(name.clone())
        }
        Some(pb::fluid_selector::Choice::Mixture(_)) => {
            FluidChoice::Mixture(match crate::convert::fluid_request(selector) {
                Ok(crate::convert::FluidRequest::Mixture {
                    parts, mass_basis, ..
                }) => Ok((parts, mass_basis)),
                Ok(_) => Err("fluid: not a mixture".to_string()),
                Err(ServiceError::InvalidField { field, message }) => {
                    Err(format!("{field}: {message}"))
                }
                Err(other) => Err(format!("fluid: {other:?}")),
            })
        }
        _ => FluidChoice::Absent,
    }
}

/// A reading as the session takes it.
pub fn reading(reading: pb::Reading) -> ReadingIn {
    let pressure_kind = match pb::PressureKind::try_from(reading.pressure_kind) {
        Ok(pb::PressureKind::Unspecified) => PressureKindIn::Missing,
        Ok(pb::PressureKind::Absolute) => PressureKindIn::Absolute,
        Ok(pb::PressureKind::Gauge) => PressureKindIn::Gauge,
        Err(_) => PressureKindIn::Unknown(reading.pressure_kind),
    };
    let quality = match pb::ReadingQuality::try_from(reading.quality) {
        Ok(pb::ReadingQuality::Unspecified | pb::ReadingQuality::Good) => QualityIn::Good,
        Ok(pb::ReadingQuality::Uncertain) => QualityIn::Uncertain,
        Ok(pb::ReadingQuality::Bad) => QualityIn::Bad,
        Err(_) => QualityIn::Unknown(reading.quality),
    };
    ReadingIn {
        fluid: fluid_choice(reading.fluid.as_ref()),
        tag: reading.tag,
        pressure_pa: reading.pressure_pa,
        pressure_kind,
        ambient_pressure_pa: reading.ambient_pressure_pa,
        temperature_k: reading.temperature_k,
        timestamp_ms: reading.timestamp_unix_ms,
        quality,
    }
}

fn rule_kind_from_proto(value: i32) -> Option<RuleKind> {
    match pb::AlarmRuleKind::try_from(value).ok()? {
        pb::AlarmRuleKind::Unspecified => None,
        pb::AlarmRuleKind::MinimumSubcooling => Some(RuleKind::MinimumSubcooling),
        pb::AlarmRuleKind::MinimumSuperheat => Some(RuleKind::MinimumSuperheat),
        pb::AlarmRuleKind::MinimumDewMargin => Some(RuleKind::MinimumDewMargin),
        pb::AlarmRuleKind::MaximumCriticalPressureFraction => {
            Some(RuleKind::MaximumCriticalPressureFraction)
        }
        pb::AlarmRuleKind::MinimumFreezingMargin => Some(RuleKind::MinimumFreezingMargin),
    }
}

fn rule_kind_to_proto(kind: RuleKind) -> pb::AlarmRuleKind {
    match kind {
        RuleKind::MinimumSubcooling => pb::AlarmRuleKind::MinimumSubcooling,
        RuleKind::MinimumSuperheat => pb::AlarmRuleKind::MinimumSuperheat,
        RuleKind::MinimumDewMargin => pb::AlarmRuleKind::MinimumDewMargin,
        RuleKind::MaximumCriticalPressureFraction => {
            pb::AlarmRuleKind::MaximumCriticalPressureFraction
        }
        RuleKind::MinimumFreezingMargin => pb::AlarmRuleKind::MinimumFreezingMargin,
    }
}

fn priority_to_proto(priority: Priority) -> pb::AlarmPriority {
    match priority {
        Priority::Low => pb::AlarmPriority::Low,
        Priority::Medium => pb::AlarmPriority::Medium,
        Priority::High => pb::AlarmPriority::High,
    }
}

fn transition_to_proto(transition: Option<Transition>) -> pb::AlarmTransition {
    match transition {
        None => pb::AlarmTransition::Unspecified,
        Some(Transition::Boiling) => pb::AlarmTransition::Boiling,
        Some(Transition::Condensation) => pb::AlarmTransition::Condensation,
        Some(Transition::Freezing) => pb::AlarmTransition::Freezing,
        Some(Transition::Sublimation) => pb::AlarmTransition::Sublimation,
        Some(Transition::Deposition) => pb::AlarmTransition::Deposition,
        Some(Transition::CriticalPoint) => pb::AlarmTransition::CriticalPoint,
    }
}

fn quality_to_proto(issue: QualityIssue) -> pb::QualityIssue {
    use QualityIssue as Q;
    match issue {
        Q::BadQualityFlag => pb::QualityIssue::BadQualityFlag,
        Q::UncertainQualityFlag => pb::QualityIssue::UncertainQualityFlag,
        Q::TagMissing => pb::QualityIssue::TagMissing,
        Q::TimestampMissing => pb::QualityIssue::TimestampMissing,
        Q::TimestampInvalid => pb::QualityIssue::TimestampInvalid,
        Q::TimestampOutOfOrder => pb::QualityIssue::TimestampOutOfOrder,
        Q::DuplicateTimestamp => pb::QualityIssue::DuplicateTimestamp,
        Q::FluidMissing => pb::QualityIssue::FluidMissing,
        Q::FluidUnknown => pb::QualityIssue::FluidUnknown,
        Q::MixtureInvalid => pb::QualityIssue::MixtureInvalid,
        Q::FluidChanged => pb::QualityIssue::FluidChanged,
        Q::PressureMissing => pb::QualityIssue::PressureMissing,
        Q::PressureKindMissing => pb::QualityIssue::PressureKindMissing,
        Q::PressureInvalid => pb::QualityIssue::PressureInvalid,
        Q::AmbientInvalid => pb::QualityIssue::AmbientInvalid,
        Q::TemperatureMissing => pb::QualityIssue::TemperatureMissing,
        Q::TemperatureInvalid => pb::QualityIssue::TemperatureInvalid,
        Q::OutOfModelRange => pb::QualityIssue::OutOfModelRange,
        Q::CalculationFailed => pb::QualityIssue::CalculationFailed,
        Q::TagLimit => pb::QualityIssue::TagLimit,
    }
}

/// A rule as given on the wire; `field` locates it for error messages.
fn rule_input(rule: &pb::AlarmRule, field: &str) -> Result<RuleInput, ServiceError> {
    let kind = match pb::AlarmRuleKind::try_from(rule.kind) {
        Ok(_) => rule_kind_from_proto(rule.kind),
        Err(_) => {
            return Err(ServiceError::field(
                format!("{field}.kind"),
                format!(
                    "unknown value {}; valid 1 to {}",
                    rule.kind,
                    RuleKind::ALL.len()
                ),
            ));
        }
    };
    let priority = match pb::AlarmPriority::try_from(rule.priority) {
        Ok(pb::AlarmPriority::Unspecified) => None,
        Ok(pb::AlarmPriority::Low) => Some(Priority::Low),
        Ok(pb::AlarmPriority::Medium) => Some(Priority::Medium),
        Ok(pb::AlarmPriority::High) => Some(Priority::High),
        Err(_) => {
            return Err(ServiceError::field(
                format!("{field}.priority"),
                format!(
                    "unknown value {}; valid 0 (the kind's default) to 3",
                    rule.priority
                ),
            ));
        }
    };
    Ok(RuleInput {
        kind,
        name: rule.name.clone(),
        limit: rule.limit,
        deadband: rule.deadband,
        on_delay_s: rule.on_delay_s,
        off_delay_s: rule.off_delay_s,
        priority,
    })
}

/// A list of rules on the wire, checked; `field` locates the list, e.g. `opening.default_rules`.
fn rules(list: &[pb::AlarmRule], field: &str) -> Result<Arc<[RuleSpec]>, ServiceError> {
    let inputs = list
        .iter()
        .enumerate()
        .map(|(index, rule)| rule_input(rule, &format!("{field}[{index}]")))
        .collect::<Result<Vec<_>, _>>()?;
    resolve_rules(&inputs, field)
        .map(Arc::from)
        .map_err(|e| ServiceError::field(e.field, e.message))
}

/// A stream opening (or an evaluation setup) checked into a [`Setup`]; `field` names the message,
/// `opening` or `setup`. Every problem names its field and the valid range.
pub fn setup(
    opening: Option<&pb::WatchOpening>,
    field: &str,
    engines: &Engines,
) -> Result<Setup, ServiceError> {
    let Some(opening) = opening else {
        return Ok(Setup::default());
    };
    let ambient_pressure_pa = match opening.ambient_pressure_pa {
        None => None,
        Some(value) => {
            let (lo, hi) = AMBIENT_RANGE_PA;
            if !(value.is_finite() && (lo..=hi).contains(&value)) {
                return Err(ServiceError::field(
                    format!("{field}.ambient_pressure_pa"),
                    format!("{value} is outside the valid range {lo} to {hi} Pa (absolute)"),
                ));
            }
            Some(value)
        }
    };
    let model = convert::model_from_proto(opening.equation_of_state).map_err(|e| match e {
        ServiceError::InvalidField {
            field: inner,
            message,
        } => ServiceError::field(format!("{field}.{inner}"), message),
        other => other,
    })?;
    let stale_after_ms = match opening.stale_after_s {
        None => None,
        Some(value) => {
            if !(value.is_finite() && value > 0.0 && value <= MAX_DELAY_S) {
                return Err(ServiceError::field(
                    format!("{field}.stale_after_s"),
                    format!("{value} is outside the valid range: above 0, at most {MAX_DELAY_S} s"),
                ));
            }
            Some((value * 1000.0).round().max(1.0) as i64)
        }
    };
    let mut tags = HashMap::with_capacity(opening.tags.len());
    for (index, tag) in opening.tags.iter().enumerate() {
        let at = format!("{field}.tags[{index}]");
        if tag.tag.trim().is_empty() {
            return Err(ServiceError::field(
                format!("{at}.tag"),
                "empty: give the tag these rules belong to",
            ));
        }
        let fluid = fluid_choice(tag.fluid.as_ref());
        if let FluidChoice::Named(name) = &fluid {
            // A catalogue blend or a catalogue fluid.
            let catalogue = engines.catalogue();
            if catalogue.blend(name).is_none() {
                catalogue
                    .get(name)
                    .map_err(|e| ServiceError::field(format!("{at}.fluid"), e.to_string()))?;
            }
        }
        let setup = TagSetup {
            fluid,
            rules: rules(&tag.rules, &format!("{at}.rules"))?,
        };
        if tags.insert(tag.tag.clone(), setup).is_some() {
            return Err(ServiceError::field(
                format!("{at}.tag"),
                format!(
                    "\"{}\" has a second setup: give each tag at most one",
                    tag.tag
                ),
            ));
        }
    }
    let default_rules = if opening.default_rules.is_empty() {
        None
    } else {
        Some(rules(
            &opening.default_rules,
            &format!("{field}.default_rules"),
        )?)
    };
    Ok(Setup {
        ambient_pressure_pa,
        model,
        tags,
        default_rules,
        stale_after_ms,
    })
}

fn rule_to_proto(rule: &RuleSpec) -> pb::AlarmRule {
    pb::AlarmRule {
        kind: rule_kind_to_proto(rule.kind) as i32,
        name: rule.name.clone(),
        limit: Some(rule.limits.limit),
        deadband: Some(rule.limits.deadband),
        on_delay_s: Some(rule.limits.on_delay_ms as f64 / 1000.0),
        off_delay_s: Some(rule.limits.off_delay_ms as f64 / 1000.0),
        priority: priority_to_proto(rule.priority) as i32,
    }
}

fn event_to_proto(event: Event) -> pb::AlarmEvent {
    let (kind, quality) = match event.kind {
        EventKind::Raised => (pb::AlarmEventKind::Raised, pb::QualityIssue::Unspecified),
        EventKind::Cleared => (pb::AlarmEventKind::Cleared, pb::QualityIssue::Unspecified),
        EventKind::Quality(issue) => (pb::AlarmEventKind::Quality, quality_to_proto(issue)),
        EventKind::TagStale => (pb::AlarmEventKind::TagStale, pb::QualityIssue::Unspecified),
        EventKind::TagResumed => (
            pb::AlarmEventKind::TagResumed,
            pb::QualityIssue::Unspecified,
        ),
        EventKind::RuleUndefined => (
            pb::AlarmEventKind::RuleUndefined,
            pb::QualityIssue::Unspecified,
        ),
        EventKind::Notice => (pb::AlarmEventKind::Notice, pb::QualityIssue::Unspecified),
    };
    let priority = match (event.kind, &event.rule) {
        (EventKind::Raised | EventKind::Cleared, Some(rule)) => priority_to_proto(rule.priority),
        _ => pb::AlarmPriority::Unspecified,
    };
    pb::AlarmEvent {
        tag: event.tag,
        kind: kind as i32,
        timestamp_unix_ms: event.timestamp_ms,
        rule: event.rule.as_ref().map(rule_to_proto),
        value: event.value,
        limit: event.limit,
        condition_since_unix_ms: event.since_ms,
        transition: transition_to_proto(event.transition) as i32,
        priority: priority as i32,
        quality_issue: quality as i32,
        message: event.message,
    }
}

fn margins_to_proto(m: &AlarmMargins) -> pb::AlarmMargins {
    pb::AlarmMargins {
        saturation_temperature_k: m.saturation_temperature_k,
        saturation_pressure_pa: m.saturation_pressure_pa,
        subcooling_k: m.subcooling_k,
        superheat_k: m.superheat_k,
        dew_margin_k: m.dew_margin_k,
        critical_pressure_fraction: m.critical_pressure_fraction,
        pressure_below_critical_pa: m.pressure_below_critical_pa,
        freezing_margin_k: m.freezing_margin_k,
    }
}

fn check_to_proto(check: Check) -> pb::RuleCheck {
    pb::RuleCheck {
        rule: Some(rule_to_proto(&check.rule)),
        value: check.value,
        beyond_limit: check.beyond_limit,
        transition: transition_to_proto(Some(check.transition)) as i32,
        message: check.message,
    }
}

fn outcome_to_proto(outcome: Outcome) -> pb::ReadingOutcome {
    let mut out = pb::ReadingOutcome {
        tag: outcome.tag,
        timestamp_unix_ms: outcome.timestamp_ms,
        events: outcome.events.into_iter().map(event_to_proto).collect(),
        checks: outcome.checks.into_iter().map(check_to_proto).collect(),
        ..pb::ReadingOutcome::default()
    };
    if let Some(evaluation) = outcome.evaluation {
        out.evaluated = true;
        out.fluid_id = evaluation.fluid_id;
        out.phase = convert::phase_to_proto(evaluation.phase) as i32;
        out.margins = Some(margins_to_proto(&evaluation.margins));
        out.absolute_pressure_pa = Some(evaluation.absolute_pressure_pa);
        out.estimated = evaluation.estimated;
        out.near_critical = evaluation.near_critical;
        if let Some((ambient, source)) = evaluation.ambient {
            out.ambient_pressure_pa = Some(ambient);
            out.ambient_source = match source {
                AmbientSource::Reading => pb::AmbientSource::Reading,
                AmbientSource::Opening => pb::AmbientSource::Opening,
                AmbientSource::ServerDefault => pb::AmbientSource::ServerDefault,
            } as i32;
        }
    }
    out
}

/// A stream response.
pub fn watch_response(batch: Batch) -> pb::WatchResponse {
    pb::WatchResponse {
        outcomes: batch.outcomes.into_iter().map(outcome_to_proto).collect(),
        events: batch.events.into_iter().map(event_to_proto).collect(),
    }
}

/// An evaluation response.
pub fn evaluate_response(batch: Batch) -> pb::EvaluateReadingsResponse {
    pb::EvaluateReadingsResponse {
        outcomes: batch.outcomes.into_iter().map(outcome_to_proto).collect(),
        events: batch.events.into_iter().map(event_to_proto).collect(),
    }
}
