//! Alarm rule kinds, their defaults and the checks on rule parameters.
//!
//! Defaults (the table is repeated in `docs/alarms.md` with the reasoning):
//!
//! | kind | limit | deadband | on-delay | off-delay | priority |
//! |---|---|---|---|---|---|
//! | `minimum-subcooling` | 3 K | 1 K | 15 s | 15 s | high |
//! | `minimum-superheat` | 5 K | 1 K | 15 s | 15 s | high |
//! | `minimum-dew-margin` | 5 K | 1 K | 60 s | 60 s | medium |
//! | `maximum-critical-pressure-fraction` | 0.90 | 0.02 | 15 s | 15 s | medium |
//! | `minimum-freezing-margin` | 2 K | 1 K | 15 s | 15 s | high |
//!
//! Sources: deadband and on/off-delay as the remedies for chattering alarms come from
//! IEC 62682:2014 / ANSI/ISA-18.2-2016. Their starting values follow the ISA-18.2 starting points
//! by signal type (pressure: 2 % of span and 15 s; temperature: 1 % of span and 60 s; `from
//! memory`, as tabulated in ISA-TR18.2.3): margins that follow the saturation temperature of a
//! measured pressure react like pressure (15 s); a gas-line dew margin moves with the line
//! temperature (60 s); 1 K is 1 % of a 100 K temperature span and 0.02 is 2 % of a span from 0 to
//! the critical pressure. The freezing margin keeps 15 s rather than 60 s because a tube can
//! freeze within minutes (`common practice`). The limits and priorities are `common practice`;
//! the 0.90 critical pressure fraction matches the service's own near-critical band (`GetState`
//! flags states within 10 % of the critical pressure).

use std::fmt;

use super::machine::{Bound, Limits};

/// What a rule watches.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum RuleKind {
    /// Subcooling below a limit: a liquid close to boiling.
    MinimumSubcooling,
    /// Superheat below a limit: a suction vapor close to its dew point.
    MinimumSuperheat,
    /// Dew margin below a limit: a gas line close to condensing.
    MinimumDewMargin,
    /// Pressure over critical pressure above a limit: close to the critical point.
    MaximumCriticalPressureFraction,
    /// Margin to the estimated freezing (or deposition) temperature below a limit.
    MinimumFreezingMargin,
}

/// How urgently an operator must respond.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Priority {
    /// Respond when convenient.
    Low,
    /// Respond soon.
    Medium,
    /// Respond at once.
    High,
}

impl Priority {
    /// Every priority, lowest first.
    pub const ALL: [Priority; 3] = [Priority::Low, Priority::Medium, Priority::High];

    /// The spelling in settings and messages: `low`, `medium`, `high`.
    pub fn name(self) -> &'static str {
        match self {
            Priority::Low => "low",
            Priority::Medium => "medium",
            Priority::High => "high",
        }
    }
}

/// The phase change a rule guards against.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Transition {
    /// Liquid to vapor.
    Boiling,
    /// Vapor to liquid.
    Condensation,
    /// Liquid to solid.
    Freezing,
    /// Solid to vapor.
    Sublimation,
    /// Vapor to solid.
    Deposition,
    /// Liquid and vapor merging at the critical point.
    CriticalPoint,
}

impl Transition {
    /// The word used in messages.
    pub fn word(self) -> &'static str {
        match self {
            Transition::Boiling => "boiling",
            Transition::Condensation => "condensation",
            Transition::Freezing => "freezing",
            Transition::Sublimation => "sublimation",
            Transition::Deposition => "deposition",
            Transition::CriticalPoint => "critical-point approach",
        }
    }
}

/// A kind's default parameters.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Defaults {
    /// Alarm limit, in the kind's unit.
    pub limit: f64,
    /// Deadband, in the kind's unit.
    pub deadband: f64,
    /// On-delay, s.
    pub on_delay_s: f64,
    /// Off-delay, s.
    pub off_delay_s: f64,
    /// Priority.
    pub priority: Priority,
}

/// Largest accepted delay: one day, in seconds.
pub const MAX_DELAY_S: f64 = 86_400.0;
/// Largest number of rules on one tag.
pub const MAX_RULES_PER_TAG: usize = 32;

impl RuleKind {
    /// Every kind, in the order of the proto enum.
    pub const ALL: [RuleKind; 5] = [
        RuleKind::MinimumSubcooling,
        RuleKind::MinimumSuperheat,
        RuleKind::MinimumDewMargin,
        RuleKind::MaximumCriticalPressureFraction,
        RuleKind::MinimumFreezingMargin,
    ];

    /// The spelling in settings, rule names and messages, e.g. `minimum-subcooling`.
    pub fn name(self) -> &'static str {
        match self {
            RuleKind::MinimumSubcooling => "minimum-subcooling",
            RuleKind::MinimumSuperheat => "minimum-superheat",
            RuleKind::MinimumDewMargin => "minimum-dew-margin",
            RuleKind::MaximumCriticalPressureFraction => "maximum-critical-pressure-fraction",
            RuleKind::MinimumFreezingMargin => "minimum-freezing-margin",
        }
    }

    /// The quantity watched, as written in messages.
    pub fn quantity(self) -> &'static str {
        match self {
            RuleKind::MinimumSubcooling => "subcooling",
            RuleKind::MinimumSuperheat => "superheat",
            RuleKind::MinimumDewMargin => "dew margin",
            RuleKind::MaximumCriticalPressureFraction => "pressure fraction of critical",
            RuleKind::MinimumFreezingMargin => "margin to freezing",
        }
    }

    /// Which side of the limit is abnormal.
    pub fn bound(self) -> Bound {
        match self {
            RuleKind::MaximumCriticalPressureFraction => Bound::Maximum,
            _ => Bound::Minimum,
        }
    }

    /// Whether the kind's value is a fraction (else a temperature difference in kelvin).
    pub fn is_fraction(self) -> bool {
        self == RuleKind::MaximumCriticalPressureFraction
    }

    /// The unit suffix used in messages: ` K` or nothing for a fraction.
    pub fn unit(self) -> &'static str {
        if self.is_fraction() { "" } else { " K" }
    }

    /// Formats a value of this kind for messages: `2.45 K` or `0.912`.
    pub fn format(self, value: f64) -> String {
        if self.is_fraction() {
            format!("{value:.3}")
        } else {
            format!("{value:.2} K")
        }
    }

    /// Valid range of the limit.
    pub fn limit_range(self) -> (f64, f64) {
        if self.is_fraction() {
            (0.0, 2.0)
        } else {
            (-100.0, 200.0)
        }
    }

    /// Largest deadband.
    pub fn max_deadband(self) -> f64 {
        if self.is_fraction() { 0.5 } else { 50.0 }
    }

    /// The kind's defaults (see the module documentation for their sources).
    pub fn defaults(self) -> Defaults {
        match self {
            // common practice: a refrigerant pump needs a few kelvin of subcooling at its suction
            // (its NPSH margin); delays after the ISA-18.2 pressure starting point (from memory).
            RuleKind::MinimumSubcooling => Defaults {
                limit: 3.0,
                deadband: 1.0,
                on_delay_s: 15.0,
                off_delay_s: 15.0,
                priority: Priority::High,
            },
            // common practice: about 5 K of suction superheat keeps liquid out of a compressor.
            RuleKind::MinimumSuperheat => Defaults {
                limit: 5.0,
                deadband: 1.0,
                on_delay_s: 15.0,
                off_delay_s: 15.0,
                priority: Priority::High,
            },
            // common practice: keep a gas line about 5 K above its dew point; delays after the
            // ISA-18.2 temperature starting point (from memory).
            RuleKind::MinimumDewMargin => Defaults {
                limit: 5.0,
                deadband: 1.0,
                on_delay_s: 60.0,
                off_delay_s: 60.0,
                priority: Priority::Medium,
            },
            // common practice, and the service's near-critical band (within 10 % of Pc).
            RuleKind::MaximumCriticalPressureFraction => Defaults {
                limit: 0.90,
                deadband: 0.02,
                on_delay_s: 15.0,
                off_delay_s: 15.0,
                priority: Priority::Medium,
            },
            // common practice: chiller freeze protection acts a couple of kelvin above freezing.
            RuleKind::MinimumFreezingMargin => Defaults {
                limit: 2.0,
                deadband: 1.0,
                on_delay_s: 15.0,
                off_delay_s: 15.0,
                priority: Priority::High,
            },
        }
    }

    /// The phase change this kind guards against, where it does not depend on the state (the
    /// freezing margin's does: see [`freezing_transition`]).
    pub fn fixed_transition(self) -> Option<Transition> {
        match self {
            RuleKind::MinimumSubcooling => Some(Transition::Boiling),
            RuleKind::MinimumSuperheat | RuleKind::MinimumDewMargin => {
                Some(Transition::Condensation)
            }
            RuleKind::MaximumCriticalPressureFraction => Some(Transition::CriticalPoint),
            RuleKind::MinimumFreezingMargin => None,
        }
    }

    /// What the transition means for the plant, for messages.
    pub fn consequence(self, transition: Transition) -> &'static str {
        match (self, transition) {
            (RuleKind::MinimumSubcooling, _) => {
                "the liquid is close to boiling: a pump drawing from this line may cavitate"
            }
            (RuleKind::MinimumSuperheat, _) => {
                "the vapor is close to its dew point: a compressor on this suction may take liquid"
            }
            (RuleKind::MinimumDewMargin, _) => {
                "the gas is close to its dew point: liquid may condense in the line"
            }
            (RuleKind::MaximumCriticalPressureFraction, _) => {
                "the pressure is approaching the critical pressure: liquid and vapor merge there, \
                 the plant behaves differently and the model's accuracy falls"
            }
            (RuleKind::MinimumFreezingMargin, Transition::Deposition) => {
                "below the triple-point pressure solid may deposit straight from the vapor (for \
                 carbon dioxide, dry ice)"
            }
            (RuleKind::MinimumFreezingMargin, Transition::Sublimation) => {
                "the state lies in the estimated solid region below the triple-point pressure: \
                 solid is present and will sublimate on warming, raising the pressure if trapped"
            }
            (RuleKind::MinimumFreezingMargin, _) => {
                "the liquid is close to freezing: ice can block or burst a tube"
            }
        }
    }
}

impl fmt::Display for RuleKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// The transition a freezing-margin rule guards against at pressure `pressure_pa`: freezing at
/// or above the triple-point pressure; below it, deposition, or sublimation when the state is
/// already in the estimated solid region.
pub fn freezing_transition(
    pressure_pa: f64,
    triple_pressure_pa: Option<f64>,
    solid: bool,
) -> Transition {
    match triple_pressure_pa {
        Some(ptp) if pressure_pa < ptp && solid => Transition::Sublimation,
        Some(ptp) if pressure_pa < ptp => Transition::Deposition,
        _ => Transition::Freezing,
    }
}

/// A rule as given (in an opening or the settings), before defaults and checks.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RuleInput {
    /// The kind; `None` when not stated (refused).
    pub kind: Option<RuleKind>,
    /// The name; empty for the kind's name.
    pub name: String,
    /// Limit, or the default.
    pub limit: Option<f64>,
    /// Deadband, or the default.
    pub deadband: Option<f64>,
    /// On-delay in seconds, or the default.
    pub on_delay_s: Option<f64>,
    /// Off-delay in seconds, or the default.
    pub off_delay_s: Option<f64>,
    /// Priority, or the default.
    pub priority: Option<Priority>,
}

/// A complete, checked rule.
#[derive(Debug, Clone, PartialEq)]
pub struct RuleSpec {
    /// What the rule watches.
    pub kind: RuleKind,
    /// Its name, unique within its tag.
    pub name: String,
    /// Limit, deadband and delays.
    pub limits: Limits,
    /// Priority.
    pub priority: Priority,
}

/// A rule parameter out of range: the field (relative to the rule) and what is valid.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RuleError {
    /// The field, e.g. `rules[1].deadband`.
    pub field: String,
    /// What is wrong and what is valid.
    pub message: String,
}

impl RuleError {
    fn new(field: impl Into<String>, message: impl Into<String>) -> RuleError {
        RuleError {
            field: field.into(),
            message: message.into(),
        }
    }
}

fn check_range(field: String, value: f64, lo: f64, hi: f64, unit: &str) -> Result<f64, RuleError> {
    if value.is_finite() && (lo..=hi).contains(&value) {
        Ok(value)
    } else {
        Err(RuleError::new(
            field,
            format!("{value} is outside the valid range {lo} to {hi}{unit}"),
        ))
    }
}

impl RuleInput {
    /// Fills the defaults and checks every parameter; `field` locates the rule, e.g.
    /// `opening.tags[0].rules[1]`.
    pub fn resolve(&self, field: &str) -> Result<RuleSpec, RuleError> {
        let kind = self.kind.ok_or_else(|| {
            let names: Vec<&str> = RuleKind::ALL.iter().map(|k| k.name()).collect();
            RuleError::new(
                format!("{field}.kind"),
                format!("missing: give one of {}", names.join(", ")),
            )
        })?;
        let defaults = kind.defaults();
        let (lo, hi) = kind.limit_range();
        let limit = check_range(
            format!("{field}.limit"),
            self.limit.unwrap_or(defaults.limit),
            lo,
            hi,
            kind.unit(),
        )?;
        if kind.is_fraction() && limit <= 0.0 {
            return Err(RuleError::new(
                format!("{field}.limit"),
                format!(
                    "{limit} is not a usable fraction of the critical pressure: give one above 0, at most 2"
                ),
            ));
        }
        let deadband = check_range(
            format!("{field}.deadband"),
            self.deadband.unwrap_or(defaults.deadband),
            0.0,
            kind.max_deadband(),
            kind.unit(),
        )?;
        let delay = |name: &str, value: Option<f64>, default: f64| {
            check_range(
                format!("{field}.{name}"),
                value.unwrap_or(default),
                0.0,
                MAX_DELAY_S,
                " s",
            )
            .map(|s| (s * 1000.0).round() as i64)
        };
        let on_delay_ms = delay("on_delay_s", self.on_delay_s, defaults.on_delay_s)?;
        let off_delay_ms = delay("off_delay_s", self.off_delay_s, defaults.off_delay_s)?;
        let name = if self.name.trim().is_empty() {
            kind.name().to_owned()
        } else {
            self.name.trim().to_owned()
        };
        Ok(RuleSpec {
            kind,
            name,
            limits: Limits {
                bound: kind.bound(),
                limit,
                deadband,
                on_delay_ms,
                off_delay_ms,
            },
            priority: self.priority.unwrap_or(defaults.priority),
        })
    }
}

/// Resolves a tag's rules, checking that there are at most [`MAX_RULES_PER_TAG`] and that their
/// names are unique. `field` locates the list, e.g. `opening.tags[2].rules`.
pub fn resolve_rules(inputs: &[RuleInput], field: &str) -> Result<Vec<RuleSpec>, RuleError> {
    if inputs.len() > MAX_RULES_PER_TAG {
        return Err(RuleError::new(
            field,
            format!(
                "{} rules on one tag exceed the limit of {MAX_RULES_PER_TAG}",
                inputs.len()
            ),
        ));
    }
    let mut rules: Vec<RuleSpec> = Vec::with_capacity(inputs.len());
    for (index, input) in inputs.iter().enumerate() {
        let rule = input.resolve(&format!("{field}[{index}]"))?;
        if rules.iter().any(|r| r.name == rule.name) {
            return Err(RuleError::new(
                format!("{field}[{index}].name"),
                format!(
                    "a second rule named \"{}\" on this tag: give each rule of one tag its own name",
                    rule.name
                ),
            ));
        }
        rules.push(rule);
    }
    Ok(rules)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// An empty rule of a kind takes that kind's defaults (the table in the module documentation,
    /// common practice and ISA-18.2 starting points as stated there).
    #[test]
    fn defaults_fill_every_absent_parameter() {
        for kind in RuleKind::ALL {
            let rule = RuleInput {
                kind: Some(kind),
                ..RuleInput::default()
            }
            .resolve("rule")
            .expect("defaults are valid");
            let d = kind.defaults();
            assert_eq!(rule.name, kind.name());
            assert_eq!(rule.limits.limit, d.limit);
            assert_eq!(rule.limits.deadband, d.deadband);
            assert_eq!(rule.limits.on_delay_ms, (d.on_delay_s * 1000.0) as i64);
            assert_eq!(rule.limits.off_delay_ms, (d.off_delay_s * 1000.0) as i64);
            assert_eq!(rule.priority, d.priority);
            assert_eq!(rule.limits.bound, kind.bound());
        }
    }

    /// Out-of-range parameters name the field and the valid range.
    #[test]
    fn bad_parameters_name_the_field_and_range() {
        let base = RuleInput {
            kind: Some(RuleKind::MinimumSubcooling),
            ..RuleInput::default()
        };
        let cases = [
            (
                RuleInput {
                    kind: None,
                    ..base.clone()
                },
                "r.kind",
                "minimum-subcooling",
            ),
            (
                RuleInput {
                    deadband: Some(-1.0),
                    ..base.clone()
                },
                "r.deadband",
                "0 to 50 K",
            ),
            (
                RuleInput {
                    limit: Some(f64::NAN),
                    ..base.clone()
                },
                "r.limit",
                "-100 to 200 K",
            ),
            (
                RuleInput {
                    on_delay_s: Some(90_000.0),
                    ..base.clone()
                },
                "r.on_delay_s",
                "0 to 86400 s",
            ),
            (
                RuleInput {
                    kind: Some(RuleKind::MaximumCriticalPressureFraction),
                    limit: Some(0.0),
                    ..base.clone()
                },
                "r.limit",
                "above 0",
            ),
        ];
        for (input, field, valid) in cases {
            let error = input.resolve("r").expect_err("refused");
            assert_eq!(error.field, field, "{error:?}");
            assert!(error.message.contains(valid), "{error:?} lacks {valid:?}");
        }
    }

    #[test]
    fn rule_names_must_be_unique_per_tag() {
        let rule = RuleInput {
            kind: Some(RuleKind::MinimumSuperheat),
            ..RuleInput::default()
        };
        let error = resolve_rules(&[rule.clone(), rule.clone()], "tags[0].rules")
            .expect_err("duplicate names refused");
        assert_eq!(error.field, "tags[0].rules[1].name");
        let named = RuleInput {
            name: "superheat-low-low".into(),
            limit: Some(2.0),
            ..rule.clone()
        };
        let rules = resolve_rules(&[rule, named], "tags[0].rules").expect("distinct names");
        assert_eq!(rules[1].name, "superheat-low-low");
    }

    /// Freezing above the triple-point pressure, deposition below it, sublimation when already
    /// solid below it (definitions of the phase changes; water's triple point 611.657 Pa, IAPWS
    /// R6-95 / NIST SRD 69).
    #[test]
    fn freezing_transition_depends_on_the_triple_point_pressure() {
        let ptp = Some(611.657);
        assert_eq!(freezing_transition(3.0e5, ptp, false), Transition::Freezing);
        assert_eq!(
            freezing_transition(300.0, ptp, false),
            Transition::Deposition
        );
        assert_eq!(
            freezing_transition(300.0, ptp, true),
            Transition::Sublimation
        );
        assert_eq!(
            freezing_transition(300.0, None, false),
            Transition::Freezing
        );
    }
}
