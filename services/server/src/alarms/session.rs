//! Readings in, outcomes and events out: the alarm state of one stream ([`Session`]) and the
//! stateless evaluation of single readings ([`Evaluator::evaluate_each`]).
//!
//! A reading passes these checks in order; the first that fails answers it with a quality event
//! and, on a stream, restarts the tag's pending delays (alarm states are held):
//!
//! 1. the tag is not empty, and the stream tracks fewer than `alarms.max_tags_per_stream` tags;
//! 2. (stream) a timestamp is present and later than the tag's previous one: an earlier one is
//!    "out of order", an equal one a "duplicate"; both are ignored without touching the tag;
//! 3. the quality flag is not BAD;
//! 4. a pure catalogue fluid is named (by the reading, the tag's setup, the settings or an earlier
//!    reading), and on a stream it is the tag's earlier fluid; a custom mixture is checked
//!    and tracked by its components and fractions;
//! 5. pressure, its kind (gauge or absolute), the ambient for a gauge reading, and temperature
//!    are present and valid (every problem among them is reported);
//! 6. the engine can classify the state.
//!
//! No tonic or protobuf types here: [`super::wire`] converts.

use std::collections::{HashMap, HashSet};
use std::sync::Arc;

use binodal_eos::{Model, Phase};

use super::config::{AMBIENT_RANGE_PA, AlarmSettings};
use super::machine::{Bound, Change, RuleMachine};
use super::rules::{RuleKind, RuleSpec, Transition, freezing_transition};
use crate::convert;
use crate::engines::Engines;
use crate::status::{ServiceError, engine_code};

/// The statement every stream and every evaluation opens with.
pub const ADVISORY_NOTICE: &str = "binodal alarms are advisory: they are computed from cubic \
     equations of state with a stated accuracy, are no substitute for a safety instrumented \
     system or the plant's own protection (relief valves, trips, freeze protection), and defer \
     to local codes, the equipment maker's instructions and licensed practice.";

/// How a reading names its fluid.
#[derive(Debug, Clone, PartialEq)]
pub enum FluidChoice {
    /// Not named.
    Absent,
    /// A catalogue fluid by name, number or alias.
    Named(String),
    /// A custom mixture: its components and fractions (normalised) and whether they are mass
    /// fractions, or why the mixture as sent is not valid.
    Mixture(MixtureIn),
}

/// A custom mixture as read from a reading: `(components with normalised fractions, whether
/// the fractions are by mass)`, or why it could not be read.
pub type MixtureIn = Result<(Vec<(String, f64)>, bool), String>;

/// The prefix of the key under which a custom mixture is tracked per tag.
const MIXTURE_KEY: &str = "mixture:";

/// The pressure kind as sent.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PressureKindIn {
    /// Not stated.
    Missing,
    /// Absolute.
    Absolute,
    /// Gauge.
    Gauge,
    /// A number that is no known kind.
    Unknown(i32),
}

/// The quality flag as sent.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum QualityIn {
    /// Good (or not stated).
    Good,
    /// Uncertain: evaluated, with a quality event.
    Uncertain,
    /// Bad: not evaluated.
    Bad,
    /// A number that is no known flag: treated as bad.
    Unknown(i32),
}

/// One reading.
#[derive(Debug, Clone, PartialEq)]
pub struct ReadingIn {
    /// The tag.
    pub tag: String,
    /// The fluid.
    pub fluid: FluidChoice,
    /// Pressure, Pa, gauge or absolute.
    pub pressure_pa: Option<f64>,
    /// Gauge or absolute.
    pub pressure_kind: PressureKindIn,
    /// The reading's own ambient pressure, Pa.
    pub ambient_pressure_pa: Option<f64>,
    /// Temperature, K.
    pub temperature_k: Option<f64>,
    /// Time of the reading, ms since the Unix epoch.
    pub timestamp_ms: Option<i64>,
    /// Quality flag.
    pub quality: QualityIn,
}

/// A tag's setup from a stream opening.
#[derive(Debug, Clone, PartialEq)]
pub struct TagSetup {
    /// The tag's fluid when readings name none.
    pub fluid: FluidChoice,
    /// The tag's rules.
    pub rules: Arc<[RuleSpec]>,
}

/// A checked stream opening (or evaluation setup).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Setup {
    /// Ambient pressure for gauge readings, Pa.
    pub ambient_pressure_pa: Option<f64>,
    /// The model; `None` for the server default.
    pub model: Option<Model>,
    /// Per-tag setups.
    pub tags: HashMap<String, TagSetup>,
    /// Rules for tags without a setup, ahead of the settings.
    pub default_rules: Option<Arc<[RuleSpec]>>,
    /// Stale time, ms; `None` for the settings'.
    pub stale_after_ms: Option<i64>,
}

/// Where a gauge reading's ambient pressure came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AmbientSource {
    /// The reading.
    Reading,
    /// The opening.
    Opening,
    /// The server's default.
    ServerDefault,
}

/// Why a reading is unusable or doubtful.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum QualityIssue {
    /// Quality flag BAD (or unknown).
    BadQualityFlag,
    /// Quality flag UNCERTAIN.
    UncertainQualityFlag,
    /// Empty tag.
    TagMissing,
    /// No timestamp.
    TimestampMissing,
    /// Timestamp before 1970 or after year 9999.
    TimestampInvalid,
    /// Earlier than the tag's previous reading.
    TimestampOutOfOrder,
    /// Same time as the tag's previous reading.
    DuplicateTimestamp,
    /// No fluid named anywhere.
    FluidMissing,
    /// Fluid not in the catalogue.
    FluidUnknown,
    /// A mixture.
    MixtureInvalid,
    /// A different fluid from the tag's earlier one.
    FluidChanged,
    /// No pressure.
    PressureMissing,
    /// Gauge or absolute not stated.
    PressureKindMissing,
    /// Pressure not finite, or absolute pressure not above zero.
    PressureInvalid,
    /// Reading's ambient pressure out of range.
    AmbientInvalid,
    /// No temperature.
    TemperatureMissing,
    /// Temperature not finite or not above zero.
    TemperatureInvalid,
    /// Outside the model's range.
    OutOfModelRange,
    /// A solver failed.
    CalculationFailed,
    /// Too many tags on the stream.
    TagLimit,
}

/// A quality problem with its message.
#[derive(Debug, Clone, PartialEq)]
pub struct Problem {
    /// What kind of problem.
    pub issue: QualityIssue,
    /// The message, naming the field and what is valid.
    pub message: String,
}

impl Problem {
    fn new(issue: QualityIssue, message: impl Into<String>) -> Problem {
        Problem {
            issue,
            message: message.into(),
        }
    }
}

/// Margins of an evaluated reading (signed as in `GetState`).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct AlarmMargins {
    /// Saturation temperature at the pressure, K.
    pub saturation_temperature_k: Option<f64>,
    /// Saturation pressure at the temperature, Pa.
    pub saturation_pressure_pa: Option<f64>,
    /// `Tsat(P) - T`, K.
    pub subcooling_k: Option<f64>,
    /// `T - Tsat(P)`, K.
    pub superheat_k: Option<f64>,
    /// `T - Tdew(P)`, K (for a pure fluid the superheat).
    pub dew_margin_k: Option<f64>,
    /// `P / Pc`.
    pub critical_pressure_fraction: f64,
    /// `Pc - P`, Pa.
    pub pressure_below_critical_pa: f64,
    /// `T - T_solid(P)`, K (estimated).
    pub freezing_margin_k: Option<f64>,
}

impl AlarmMargins {
    /// The value a rule of `kind` watches.
    pub fn value(&self, kind: RuleKind) -> Option<f64> {
        match kind {
            RuleKind::MinimumSubcooling => self.subcooling_k,
            RuleKind::MinimumSuperheat => self.superheat_k,
            RuleKind::MinimumDewMargin => self.dew_margin_k,
            RuleKind::MaximumCriticalPressureFraction => Some(self.critical_pressure_fraction),
            RuleKind::MinimumFreezingMargin => self.freezing_margin_k,
        }
    }
}

/// An evaluated reading.
#[derive(Debug, Clone, PartialEq)]
pub struct Evaluation {
    /// Catalogue id of the fluid.
    pub fluid_id: String,
    /// The phase.
    pub phase: Phase,
    /// The margins.
    pub margins: AlarmMargins,
    /// Absolute pressure used, Pa.
    pub absolute_pressure_pa: f64,
    /// Temperature, K.
    pub temperature_k: f64,
    /// Ambient added to a gauge reading, Pa, and its origin.
    pub ambient: Option<(f64, AmbientSource)>,
    /// The phase rests on the estimated solid boundary.
    pub estimated: bool,
    /// Close to the critical point.
    pub near_critical: bool,
    /// Critical pressure of the model, Pa.
    pub critical_pressure_pa: f64,
    /// What a freezing-margin rule guards against at this reading.
    pub freezing_transition: Transition,
    /// Whether the fluid has an estimated solid boundary (triple point and heat of fusion).
    pub has_solid_boundary: bool,
}

impl Evaluation {
    /// The transition a rule of `kind` guards against at this reading.
    pub fn transition(&self, kind: RuleKind) -> Transition {
        kind.fixed_transition().unwrap_or(self.freezing_transition)
    }
}

/// What an event reports.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EventKind {
    /// An alarm became active.
    Raised,
    /// An alarm became inactive.
    Cleared,
    /// A reading is unusable or doubtful.
    Quality(QualityIssue),
    /// A tag went silent.
    TagStale,
    /// A stale tag sent a usable reading.
    TagResumed,
    /// A rule's value is not defined.
    RuleUndefined,
    /// Stream-wide information.
    Notice,
}

/// An event.
#[derive(Debug, Clone, PartialEq)]
pub struct Event {
    /// The tag; empty for notices.
    pub tag: String,
    /// What happened.
    pub kind: EventKind,
    /// Time of the causing reading (or the stream clock for a stale tag), ms.
    pub timestamp_ms: Option<i64>,
    /// The rule, for alarm and undefined events.
    pub rule: Option<RuleSpec>,
    /// The value at the event.
    pub value: Option<f64>,
    /// The limit (raised) or the clear threshold (cleared).
    pub limit: Option<f64>,
    /// Start of the condition, ms.
    pub since_ms: Option<i64>,
    /// The transition at risk.
    pub transition: Option<Transition>,
    /// A readable sentence.
    pub message: String,
}

impl Event {
    fn plain(tag: &str, kind: EventKind, timestamp_ms: Option<i64>, message: String) -> Event {
        Event {
            tag: tag.to_owned(),
            kind,
            timestamp_ms,
            rule: None,
            value: None,
            limit: None,
            since_ms: None,
            transition: None,
            message,
        }
    }

    fn notice(message: String) -> Event {
        Event::plain("", EventKind::Notice, None, message)
    }

    fn quality(tag: &str, timestamp_ms: Option<i64>, problem: Problem) -> Event {
        Event::plain(
            tag,
            EventKind::Quality(problem.issue),
            timestamp_ms,
            format!("{}: {}", display_tag(tag), problem.message),
        )
    }
}

/// One rule checked against one reading without history.
#[derive(Debug, Clone, PartialEq)]
pub struct Check {
    /// The rule.
    pub rule: RuleSpec,
    /// Its value at the reading.
    pub value: Option<f64>,
    /// Whether the value is beyond the limit.
    pub beyond_limit: bool,
    /// The transition at risk.
    pub transition: Transition,
    /// A readable sentence.
    pub message: String,
}

/// The result of one reading.
#[derive(Debug, Clone, PartialEq)]
pub struct Outcome {
    /// The reading's tag.
    pub tag: String,
    /// The reading's timestamp.
    pub timestamp_ms: Option<i64>,
    /// The evaluation, when the reading was usable.
    pub evaluation: Option<Evaluation>,
    /// Events the reading caused.
    pub events: Vec<Event>,
    /// Rule checks (stateless evaluation only).
    pub checks: Vec<Check>,
}

impl Outcome {
    fn of(reading: &ReadingIn) -> Outcome {
        Outcome {
            tag: reading.tag.clone(),
            timestamp_ms: reading.timestamp_ms,
            evaluation: None,
            events: Vec::new(),
            checks: Vec::new(),
        }
    }

    fn problem(&mut self, problem: Problem) {
        self.events
            .push(Event::quality(&self.tag, self.timestamp_ms, problem));
    }
}

/// The results of one request: an outcome per reading and the events tied to none.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Batch {
    /// One per reading, in order.
    pub outcomes: Vec<Outcome>,
    /// Notices and stale tags.
    pub events: Vec<Event>,
}

fn display_tag(tag: &str) -> &str {
    if tag.is_empty() { "(no tag)" } else { tag }
}

/// The last valid reading time, 9999-12-31T23:59:59.999Z in milliseconds since 1970: every
/// sum of a reading time and a stream duration stays far from overflow.
pub const LAST_TIMESTAMP_MS: i64 = 253_402_300_799_999;

/// Formats a time in ms since the Unix epoch as `2026-01-15T06:00:15Z` (with `.250` when it has
/// milliseconds), proleptic Gregorian calendar, UTC.
pub fn format_time(ms: i64) -> String {
    let seconds = ms.div_euclid(1000);
    let millis = ms.rem_euclid(1000);
    let days = seconds.div_euclid(86_400);
    let of_day = seconds.rem_euclid(86_400);
    // Civil date from days since 1970-01-01 (H. Hinnant, "chrono-Compatible Low-Level Date
    // Algorithms", civil_from_days).
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    let year = yoe + era * 400 + i64::from(month <= 2);
    let (h, m, s) = (of_day / 3600, of_day % 3600 / 60, of_day % 60);
    if millis == 0 {
        format!("{year:04}-{month:02}-{day:02}T{h:02}:{m:02}:{s:02}Z")
    } else {
        format!("{year:04}-{month:02}-{day:02}T{h:02}:{m:02}:{s:02}.{millis:03}Z")
    }
}

fn seconds(ms: i64) -> String {
    let s = ms as f64 / 1000.0;
    if ms % 1000 == 0 {
        format!("{s:.0} s")
    } else {
        format!("{s:.3} s")
    }
}

/// Judges readings: resolves rules and fluids, converts pressures, asks the engine.
#[derive(Debug, Clone)]
pub struct Evaluator {
    engines: Arc<Engines>,
    settings: Arc<AlarmSettings>,
    setup: Setup,
}

impl Evaluator {
    /// An evaluator with a checked setup.
    pub fn new(engines: Arc<Engines>, settings: Arc<AlarmSettings>, setup: Setup) -> Evaluator {
        Evaluator {
            engines,
            settings,
            setup,
        }
    }

    /// The rules of `tag`: its setup's, else the opening's defaults, else the settings', else none.
    pub fn rules_for(&self, tag: &str) -> Arc<[RuleSpec]> {
        if let Some(setup) = self.setup.tags.get(tag) {
            return Arc::clone(&setup.rules);
        }
        if let Some(rules) = &self.setup.default_rules {
            return Arc::clone(rules);
        }
        match self.settings.entry_for(tag) {
            Some(entry) => entry.rules.clone().into(),
            None => Arc::from(Vec::new()),
        }
    }

    /// The fluid `tag` has when its readings name none.
    fn default_fluid(&self, tag: &str) -> FluidChoice {
        match self.setup.tags.get(tag) {
            Some(setup) if setup.fluid != FluidChoice::Absent => setup.fluid.clone(),
            _ => match self.settings.entry_for(tag).and_then(|e| e.fluid.clone()) {
                Some(name) => FluidChoice::Named(name),
                None => FluidChoice::Absent,
            },
        }
    }

    /// Checks a custom mixture and returns the key it is tracked under: its components and
    /// fractions in a canonical text, so that a tag keeps one mixture per stream.
    fn mixture_key(&self, mixture: &MixtureIn) -> Result<String, Problem> {
        let (parts, mass_basis) = mixture
            .as_ref()
            .map_err(|message| Problem::new(QualityIssue::MixtureInvalid, message.clone()))?;
        let mass_basis = *mass_basis;
        let mut key = String::from(MIXTURE_KEY);
        key.push_str(if mass_basis { "mass" } else { "mole" });
        for (name, fraction) in parts.iter() {
            let id = self.resolve(name)?;
            key.push_str(&format!(";{id}={fraction}"));
        }
        Ok(key)
    }

    /// The mixture behind a key made by [`Self::mixture_key`].
    fn mixture_from_key(&self, key: &str) -> Result<crate::engines::MixtureChoice, Problem> {
        let rest = key.strip_prefix(MIXTURE_KEY).ok_or_else(mixture_problem)?;
        let mut fields = rest.split(';');
        let mass_basis = fields.next() == Some("mass");
        let parts: Vec<(String, f64)> = fields
            .filter_map(|f| f.split_once('='))
            .filter_map(|(id, x)| x.parse().ok().map(|x| (id.to_string(), x)))
            .collect();
        self.engines
            .choose_custom(&parts, mass_basis, self.setup.model, None, Vec::new())
            .map_err(service_problem)
    }

    /// The catalogue id of a fluid name.
    fn resolve(&self, name: &str) -> Result<String, Problem> {
        let catalogue = self.engines.catalogue();
        if let Some(blend) = catalogue.blend(name) {
            return Ok(blend.id.clone());
        }
        catalogue
            .get(name)
            .map(|record| record.id.clone())
            .map_err(|e| Problem::new(QualityIssue::FluidUnknown, format!("fluid: {e}")))
    }

    /// The catalogue id for a fluid choice, with the tag's default when the reading names none.
    fn choose_fluid(&self, tag: &str, choice: &FluidChoice) -> Result<String, Problem> {
        let choice = match choice {
            FluidChoice::Absent => &self.default_fluid(tag),
            other => other,
        };
        match choice {
            FluidChoice::Named(name) => self.resolve(name),
            FluidChoice::Mixture(mixture) => self.mixture_key(mixture),
            FluidChoice::Absent => Err(Problem::new(
                QualityIssue::FluidMissing,
                "fluid: missing; name the fluid in the reading, in the tag's setup of the opening \
                 or in the server's alarm settings",
            )),
        }
    }

    /// The ambient for a gauge reading, checked, with its origin.
    fn ambient(&self, reading: &ReadingIn) -> Result<(f64, AmbientSource), Problem> {
        let (lo, hi) = AMBIENT_RANGE_PA;
        match reading.ambient_pressure_pa {
            Some(value) if value.is_finite() && (lo..=hi).contains(&value) => {
                Ok((value, AmbientSource::Reading))
            }
            Some(value) => Err(Problem::new(
                QualityIssue::AmbientInvalid,
                format!(
                    "ambient_pressure_pa: {value} is outside the valid range {lo} to {hi} Pa \
                     (absolute)"
                ),
            )),
            None => Ok(match self.setup.ambient_pressure_pa {
                Some(value) => (value, AmbientSource::Opening),
                None => (
                    self.settings.default_ambient_pressure_pa,
                    AmbientSource::ServerDefault,
                ),
            }),
        }
    }

    /// Converts the pressure to absolute and checks the temperature; reports every problem.
    fn inputs(&self, reading: &ReadingIn) -> Result<Inputs, Vec<Problem>> {
        let mut problems = Vec::new();
        let pressure = match reading.pressure_pa {
            None => {
                problems.push(Problem::new(
                    QualityIssue::PressureMissing,
                    "pressure_pa: missing; give the measured pressure in Pa",
                ));
                None
            }
            Some(p) if !p.is_finite() => {
                problems.push(Problem::new(
                    QualityIssue::PressureInvalid,
                    format!("pressure_pa: {p} is not a finite number; give a finite pressure in Pa, above zero once absolute"),
                ));
                None
            }
            Some(p) => Some(p),
        };
        let ambient = match reading.pressure_kind {
            // Without a pressure, its kind is no second problem.
            PressureKindIn::Missing if reading.pressure_pa.is_none() => None,
            PressureKindIn::Missing => {
                problems.push(Problem::new(
                    QualityIssue::PressureKindMissing,
                    "pressure_kind: missing (gauge flag missing); say PRESSURE_KIND_GAUGE or \
                     PRESSURE_KIND_ABSOLUTE: the two differ by the ambient pressure, about 1 bar",
                ));
                None
            }
            PressureKindIn::Unknown(value) => {
                problems.push(Problem::new(
                    QualityIssue::PressureKindMissing,
                    format!(
                        "pressure_kind: unknown value {value}; valid 1 (absolute) or 2 (gauge)"
                    ),
                ));
                None
            }
            PressureKindIn::Absolute => Some(None),
            PressureKindIn::Gauge => match self.ambient(reading) {
                Ok(ambient) => Some(Some(ambient)),
                Err(problem) => {
                    problems.push(problem);
                    None
                }
            },
        };
        let absolute = match (pressure, ambient) {
            (Some(p), Some(None)) if p <= 0.0 => {
                problems.push(Problem::new(
                    QualityIssue::PressureInvalid,
                    format!("pressure_pa: absolute pressure {p} Pa is not above 0"),
                ));
                None
            }
            (Some(p), Some(Some((ambient, source)))) if p + ambient <= 0.0 => {
                problems.push(Problem::new(
                    QualityIssue::PressureInvalid,
                    format!(
                        "pressure_pa: gauge {p} Pa with an ambient of {ambient} Pa ({}) gives an \
                         absolute pressure of {} Pa, not above 0",
                        ambient_words(source),
                        p + ambient
                    ),
                ));
                None
            }
            (Some(p), Some(None)) => Some((p, None)),
            (Some(p), Some(Some(ambient))) => Some((p + ambient.0, Some(ambient))),
            _ => None,
        };
        let temperature = match reading.temperature_k {
            None => {
                problems.push(Problem::new(
                    QualityIssue::TemperatureMissing,
                    "temperature_k: missing; give the measured temperature in K",
                ));
                None
            }
            Some(t) if !(t.is_finite() && t > 0.0) => {
                problems.push(Problem::new(
                    QualityIssue::TemperatureInvalid,
                    format!("temperature_k: {t} is not a finite temperature above 0 K"),
                ));
                None
            }
            Some(t) => Some(t),
        };
        match (absolute, temperature) {
            (Some((pressure_pa, ambient)), Some(temperature_k)) if problems.is_empty() => {
                Ok(Inputs {
                    pressure_pa,
                    temperature_k,
                    ambient,
                })
            }
            _ => Err(problems),
        }
    }

    /// Evaluates a reading of fluid `fluid_id`: checks its inputs and asks the engine.
    fn measure(&self, reading: &ReadingIn, fluid_id: &str) -> Result<Evaluation, Vec<Problem>> {
        let inputs = self.inputs(reading)?;
        if fluid_id.starts_with(MIXTURE_KEY) {
            let mixture = self.mixture_from_key(fluid_id).map_err(|p| vec![p])?;
            return self.measure_blend(&inputs, &mixture);
        }
        if let Some(blend) = self
            .engines
            .choose_blend(fluid_id, self.setup.model, None)
            .map_err(|e| vec![service_problem(e)])?
        {
            return self.measure_blend(&inputs, &blend);
        }
        let chosen = self
            .engines
            .choose(fluid_id, self.setup.model, None)
            .map_err(|e| vec![service_problem(e)])?;
        let eos = chosen.eos;
        let state = eos
            .state(inputs.temperature_k, inputs.pressure_pa)
            .map_err(|e| vec![engine_problem(&e)])?;
        let m = &state.margins;
        let pc = eos.critical_pressure_pa();
        let triple_pressure = eos.solid_boundary().map(|s| s.triple_pressure_pa);
        Ok(Evaluation {
            fluid_id: chosen.fluid.id.clone(),
            phase: state.phase,
            margins: AlarmMargins {
                saturation_temperature_k: m.saturation_temperature_k,
                saturation_pressure_pa: m.saturation_pressure_pa,
                subcooling_k: m.temperature_margin_k.map(|d| -d),
                superheat_k: m.temperature_margin_k,
                dew_margin_k: m.temperature_margin_k,
                critical_pressure_fraction: state.reduced_pressure,
                pressure_below_critical_pa: pc - inputs.pressure_pa,
                freezing_margin_k: m.freezing_margin_k,
            },
            absolute_pressure_pa: inputs.pressure_pa,
            temperature_k: inputs.temperature_k,
            ambient: inputs.ambient,
            estimated: state.estimated,
            near_critical: state.near_critical,
            critical_pressure_pa: pc,
            freezing_transition: freezing_transition(
                inputs.pressure_pa,
                triple_pressure,
                state.phase == Phase::SolidEstimated,
            ),
            has_solid_boundary: triple_pressure.is_some(),
        })
    }

    /// Evaluates a blend or custom mixture: subcooling against the bubble point, superheat and dew margin
    /// against the dew point, the critical fraction against the pseudo-critical pressure
    /// (Kay's rule). Blends have no solid estimate, so no freezing margin.
    fn measure_blend(
        &self,
        inputs: &Inputs,
        blend: &crate::engines::MixtureChoice,
    ) -> Result<Evaluation, Vec<Problem>> {
        let state = blend
            .mixture
            .state(inputs.temperature_k, inputs.pressure_pa)
            .map_err(|e| vec![engine_problem(&e)])?;
        let (_, pc) = blend.mixture.pseudo_critical();
        Ok(Evaluation {
            fluid_id: blend.id.clone(),
            phase: state.phase,
            margins: AlarmMargins {
                saturation_temperature_k: state.dew_temperature_k,
                saturation_pressure_pa: state.bubble_pressure_pa,
                subcooling_k: state.subcooling_k,
                superheat_k: state.superheat_k,
                dew_margin_k: state.superheat_k,
                critical_pressure_fraction: state.reduced_pressure,
                pressure_below_critical_pa: pc - inputs.pressure_pa,
                freezing_margin_k: None,
            },
            absolute_pressure_pa: inputs.pressure_pa,
            temperature_k: inputs.temperature_k,
            ambient: inputs.ambient,
            estimated: false,
            near_critical: state.near_critical,
            critical_pressure_pa: pc,
            freezing_transition: freezing_transition(inputs.pressure_pa, None, false),
            has_solid_boundary: false,
        })
    }

    /// The caution notice for a fluid (its safety class and caution, as `GetState` gives them).
    fn caution(&self, fluid_id: &str) -> Option<Event> {
        if fluid_id.starts_with(MIXTURE_KEY) {
            let mixture = self.mixture_from_key(fluid_id).ok()?;
            return Some(Event::notice(format!(
                "{}: {}",
                mixture.name,
                convert::mixture_basis(&mixture).caution
            )));
        }
        if let Ok(Some(blend)) = self.engines.choose_blend(fluid_id, self.setup.model, None) {
            return Some(Event::notice(format!(
                "{} ({}): {}",
                blend.name,
                blend.id,
                convert::mixture_basis(&blend).caution
            )));
        }
        let chosen = self.engines.choose(fluid_id, self.setup.model, None).ok()?;
        Some(Event::notice(format!(
            "{} ({}): {}",
            chosen.fluid.name,
            chosen.fluid.id,
            convert::basis(&chosen).caution
        )))
    }

    /// Judges each reading on its own (no history: no delays, no deadband, no order checks; the
    /// timestamp is optional): quality checks, phase, margins and each rule's check.
    pub fn evaluate_each(&self, readings: &[ReadingIn]) -> Batch {
        let mut batch = Batch {
            outcomes: Vec::with_capacity(readings.len()),
            events: vec![Event::notice(ADVISORY_NOTICE.to_owned())],
        };
        let mut cautioned: HashSet<String> = HashSet::new();
        let mut default_ambient_noticed = false;
        for reading in readings {
            let mut outcome = Outcome::of(reading);
            if let Err(problem) = self.usable(reading) {
                outcome.problem(problem);
                batch.outcomes.push(outcome);
                continue;
            }
            if reading.quality == QualityIn::Uncertain {
                outcome.problem(uncertain_problem());
            }
            let fluid_id = match self.choose_fluid(&reading.tag, &reading.fluid) {
                Ok(id) => id,
                Err(problem) => {
                    outcome.problem(problem);
                    batch.outcomes.push(outcome);
                    continue;
                }
            };
            match self.measure(reading, &fluid_id) {
                Err(problems) => problems.into_iter().for_each(|p| outcome.problem(p)),
                Ok(evaluation) => {
                    if cautioned.insert(evaluation.fluid_id.clone()) {
                        batch.events.extend(self.caution(&evaluation.fluid_id));
                    }
                    if !default_ambient_noticed && uses_default_ambient(&evaluation) {
                        default_ambient_noticed = true;
                        batch.events.push(default_ambient_notice(&evaluation));
                    }
                    outcome.checks = self
                        .rules_for(&reading.tag)
                        .iter()
                        .map(|rule| check(&reading.tag, rule, &evaluation))
                        .collect();
                    outcome.evaluation = Some(evaluation);
                }
            }
            batch.outcomes.push(outcome);
        }
        batch
    }

    /// Checks 1 and 3 of the module documentation (tag present, quality flag not bad).
    fn usable(&self, reading: &ReadingIn) -> Result<(), Problem> {
        if reading.tag.trim().is_empty() {
            return Err(Problem::new(
                QualityIssue::TagMissing,
                "tag: empty; give the instrument or point name, e.g. \"NH3-P101\"",
            ));
        }
        match reading.quality {
            QualityIn::Bad => Err(Problem::new(
                QualityIssue::BadQualityFlag,
                "quality: the source reports this reading as bad; not evaluated, alarm states \
                 held",
            )),
            QualityIn::Unknown(value) => Err(Problem::new(
                QualityIssue::BadQualityFlag,
                format!(
                    "quality: unknown value {value} (valid 0 to 3); treated as bad: not \
                     evaluated, alarm states held"
                ),
            )),
            QualityIn::Good | QualityIn::Uncertain => Ok(()),
        }
    }
}

/// Checked inputs of the engine.
struct Inputs {
    pressure_pa: f64,
    temperature_k: f64,
    ambient: Option<(f64, AmbientSource)>,
}

fn mixture_problem() -> Problem {
    Problem::new(
        QualityIssue::MixtureInvalid,
        "fluid: the mixture could not be read; give components and fractions with a fraction basis",
    )
}

fn uncertain_problem() -> Problem {
    Problem::new(
        QualityIssue::UncertainQualityFlag,
        "quality: the source reports this reading as uncertain; evaluated, check the instrument",
    )
}

fn service_problem(error: ServiceError) -> Problem {
    match error {
        ServiceError::Engine(e) => engine_problem(&e),
        ServiceError::UnknownFluid(e) => Problem::new(QualityIssue::FluidUnknown, e.to_string()),
        // Fields of the fluid selector (a custom mixture's components and fractions).
        ServiceError::InvalidField { field, message } if field.starts_with("fluid") => {
            Problem::new(QualityIssue::MixtureInvalid, format!("{field}: {message}"))
        }
        ServiceError::InvalidField { field, message } => Problem::new(
            QualityIssue::CalculationFailed,
            format!("{field}: {message}"),
        ),
        ServiceError::Internal(what) | ServiceError::LimitReached(what) => {
            Problem::new(QualityIssue::CalculationFailed, what)
        }
    }
}

/// The quality issue for an engine error, classified as the batch RPC classifies point errors.
fn engine_problem(error: &binodal_eos::Error) -> Problem {
    let issue = match (engine_code(error), error.field()) {
        (tonic::Code::InvalidArgument, Some(field)) if field.starts_with("temperature") => {
            QualityIssue::TemperatureInvalid
        }
        (tonic::Code::InvalidArgument, Some(field)) if field.starts_with("pressure") => {
            QualityIssue::PressureInvalid
        }
        (tonic::Code::OutOfRange | tonic::Code::InvalidArgument, _) => {
            QualityIssue::OutOfModelRange
        }
        _ => QualityIssue::CalculationFailed,
    };
    let message = if issue == QualityIssue::CalculationFailed {
        format!("the calculation failed ({error}); please report this reading")
    } else {
        error.to_string()
    };
    Problem::new(issue, message)
}

fn ambient_words(source: AmbientSource) -> &'static str {
    match source {
        AmbientSource::Reading => "from the reading",
        AmbientSource::Opening => "from the stream's opening",
        AmbientSource::ServerDefault => "the server's default",
    }
}

fn uses_default_ambient(evaluation: &Evaluation) -> bool {
    matches!(evaluation.ambient, Some((_, AmbientSource::ServerDefault)))
}

fn default_ambient_notice(evaluation: &Evaluation) -> Event {
    let ambient = evaluation.ambient.map_or(0.0, |(value, _)| value);
    Event::notice(format!(
        "gauge pressures are converted to absolute with the server's default ambient pressure of \
         {ambient} Pa (ISO 2533 standard atmosphere at sea level unless the server's settings say \
         otherwise); set ambient_pressure_pa in the opening or the reading for the site's \
         altitude and weather"
    ))
}

/// The sentence added to alarm messages of readings that used the default ambient.
fn ambient_note(evaluation: &Evaluation) -> String {
    match evaluation.ambient {
        Some((value, AmbientSource::ServerDefault)) => format!(
            " (gauge pressure taken against the server's default ambient of {value} Pa; set \
             ambient_pressure_pa for the site)"
        ),
        _ => String::new(),
    }
}

/// Why a rule's value is undefined at an evaluated reading.
fn undefined_reason(kind: RuleKind, evaluation: &Evaluation) -> String {
    match kind {
        RuleKind::MinimumFreezingMargin if !evaluation.has_solid_boundary => {
            "the catalogue lacks this fluid's triple point or heat of fusion, so no freezing \
             temperature can be estimated"
                .to_owned()
        }
        RuleKind::MinimumFreezingMargin => "no estimated freezing temperature here".to_owned(),
        _ if evaluation.margins.critical_pressure_fraction >= 1.0 => format!(
            "no saturation temperature at {} Pa, above the critical pressure of {:.0} Pa",
            evaluation.absolute_pressure_pa, evaluation.critical_pressure_pa
        ),
        _ => format!(
            "no saturation temperature at {} Pa, outside the model's saturation range",
            evaluation.absolute_pressure_pa
        ),
    }
}

/// The check of one rule against one evaluated reading (stateless).
fn check(tag: &str, rule: &RuleSpec, evaluation: &Evaluation) -> Check {
    let kind = rule.kind;
    let transition = evaluation.transition(kind);
    let value = evaluation.margins.value(kind);
    let limits = &rule.limits;
    let (beyond_limit, message) = match value {
        None => (
            false,
            format!(
                "{tag}: {} is not defined here: {}",
                kind.quantity(),
                undefined_reason(kind, evaluation)
            ),
        ),
        Some(v) if limits.beyond_limit(v) => (
            true,
            format!(
                "{tag}: {} {} is {} the limit {}: {} (transition at risk: {}){}",
                kind.quantity(),
                kind.format(v),
                side(limits.bound),
                kind.format(limits.limit),
                kind.consequence(transition),
                transition.word(),
                ambient_note(evaluation)
            ),
        ),
        Some(v) => (
            false,
            format!(
                "{tag}: {} {} is within the limit {}",
                kind.quantity(),
                kind.format(v),
                kind.format(limits.limit)
            ),
        ),
    };
    Check {
        rule: rule.clone(),
        value,
        beyond_limit,
        transition,
        message,
    }
}

fn side(bound: Bound) -> &'static str {
    match bound {
        Bound::Minimum => "below",
        Bound::Maximum => "above",
    }
}

fn back_side(bound: Bound) -> &'static str {
    match bound {
        Bound::Minimum => "at or above",
        Bound::Maximum => "at or below",
    }
}

/// The event for a rule's change.
fn alarm_event(
    tag: &str,
    time_ms: i64,
    rule: &RuleSpec,
    machine: &RuleMachine,
    change: Change,
    evaluation: &Evaluation,
) -> Event {
    let kind = rule.kind;
    let limits = machine.limits();
    let transition = evaluation.transition(kind);
    let mut event = Event::plain(tag, EventKind::Notice, Some(time_ms), String::new());
    event.rule = Some(rule.clone());
    event.transition = Some(transition);
    match change {
        Change::Raised { value, since_ms } => {
            event.kind = EventKind::Raised;
            event.value = Some(value);
            event.limit = Some(limits.limit);
            event.since_ms = Some(since_ms);
            event.message = format!(
                "{tag}: {} priority alarm {} raised: {} {} {} the limit {} since {} ({}; \
                 on-delay {}): {} (transition at risk: {}){}",
                rule.priority.name(),
                rule.name,
                kind.quantity(),
                kind.format(value),
                side(limits.bound),
                kind.format(limits.limit),
                format_time(since_ms),
                seconds(time_ms - since_ms),
                seconds(limits.on_delay_ms),
                kind.consequence(transition),
                transition.word(),
                ambient_note(evaluation)
            );
        }
        Change::Cleared { value, since_ms } => {
            event.kind = EventKind::Cleared;
            event.value = Some(value);
            event.limit = Some(limits.clear_threshold());
            event.since_ms = Some(since_ms);
            event.message = format!(
                "{tag}: alarm {} cleared: {} {} {} {} (limit {} with deadband {}) since {} ({}; \
                 off-delay {}): risk of {} has receded{}",
                rule.name,
                kind.quantity(),
                kind.format(value),
                back_side(limits.bound),
                kind.format(limits.clear_threshold()),
                kind.format(limits.limit),
                kind.format(limits.deadband),
                format_time(since_ms),
                seconds(time_ms - since_ms),
                seconds(limits.off_delay_ms),
                transition.word(),
                ambient_note(evaluation)
            );
        }
        Change::Undefined => {
            event.kind = EventKind::RuleUndefined;
            event.message = format!(
                "{tag}: rule {} cannot be evaluated: {} is not defined here ({}); the alarm stays \
                 {}",
                rule.name,
                kind.quantity(),
                undefined_reason(kind, evaluation),
                if machine.is_active() {
                    "active"
                } else {
                    "inactive"
                }
            );
        }
    }
    event
}

/// The alarm state of one tag on a stream.
#[derive(Debug)]
struct TagState {
    rules: Arc<[RuleSpec]>,
    machines: Vec<RuleMachine>,
    /// Catalogue id of the tag's fluid, once known.
    fluid_id: Option<String>,
    /// The last fluid name the tag's readings gave, to skip the look-up when it repeats.
    fluid_given: Option<String>,
    /// Timestamp of the tag's last reading that passed the order checks.
    last_ms: Option<i64>,
    /// Time staleness is measured from: the last usable reading, or the first timestamp seen.
    reference_ms: Option<i64>,
    stale: bool,
}

impl TagState {
    fn new(rules: Arc<[RuleSpec]>) -> TagState {
        let machines = rules.iter().map(|r| RuleMachine::new(r.limits)).collect();
        TagState {
            rules,
            machines,
            fluid_id: None,
            fluid_given: None,
            last_ms: None,
            reference_ms: None,
            stale: false,
        }
    }

    fn interrupt(&mut self) {
        self.machines.iter_mut().for_each(RuleMachine::interrupt);
    }
}

/// The alarm state of one stream: every tag's rules and machines, the stream clock, and which
/// notices have been given.
#[derive(Debug)]
pub struct Session {
    evaluator: Evaluator,
    tags: HashMap<String, TagState>,
    stale_after_ms: i64,
    /// The latest timestamp seen on the stream, ms.
    clock_ms: Option<i64>,
    next_sweep_ms: i64,
    advised: bool,
    cautioned: HashSet<String>,
    default_ambient_noticed: bool,
}

impl Session {
    /// A session over a checked opening.
    pub fn new(evaluator: Evaluator) -> Session {
        let stale_after_ms = evaluator
            .setup
            .stale_after_ms
            .unwrap_or(evaluator.settings.stale_after_ms);
        Session {
            evaluator,
            tags: HashMap::new(),
            stale_after_ms,
            clock_ms: None,
            next_sweep_ms: i64::MIN,
            advised: false,
            cautioned: HashSet::new(),
            default_ambient_noticed: false,
        }
    }

    /// Number of tags the stream tracks.
    pub fn tag_count(&self) -> usize {
        self.tags.len()
    }

    /// Processes one request's readings in order, reporting tags gone stale as the stream clock
    /// passes their stale time.
    pub fn handle(&mut self, readings: Vec<ReadingIn>, repeated_opening: bool) -> Batch {
        let mut batch = Batch {
            outcomes: Vec::with_capacity(readings.len()),
            events: Vec::new(),
        };
        if !self.advised {
            self.advised = true;
            batch.events.push(Event::notice(ADVISORY_NOTICE.to_owned()));
        }
        if repeated_opening {
            batch.events.push(Event::notice(
                "opening: ignored; only the first message of a stream may carry one (rules, \
                 ambient and stale time are fixed for the stream's life: open a new stream to \
                 change them)"
                    .to_owned(),
            ));
        }
        for reading in readings {
            let outcome = self.process(reading, &mut batch.events);
            batch.outcomes.push(outcome);
            // The stream clock may have moved: tags silent for too long are reported in the
            // request where the clock passes their stale time, however the readings are batched.
            self.sweep(&mut batch.events);
        }
        batch
    }

    fn process(&mut self, reading: ReadingIn, notices: &mut Vec<Event>) -> Outcome {
        let mut outcome = Outcome::of(&reading);
        let evaluator = &self.evaluator;
        if reading.tag.trim().is_empty() {
            outcome.problem(Problem::new(
                QualityIssue::TagMissing,
                "tag: empty; give the instrument or point name, e.g. \"NH3-P101\"",
            ));
            return outcome;
        }
        if !self.tags.contains_key(&reading.tag) {
            let limit = evaluator.settings.max_tags_per_stream;
            if self.tags.len() >= limit {
                outcome.problem(Problem::new(
                    QualityIssue::TagLimit,
                    format!(
                        "tag: this stream already tracks {limit} tags, the server's limit \
                         (setting alarms.max_tags_per_stream); open another stream for more tags"
                    ),
                ));
                return outcome;
            }
            let state = TagState::new(evaluator.rules_for(&reading.tag));
            self.tags.insert(reading.tag.clone(), state);
        }
        let Some(tag) = self.tags.get_mut(&reading.tag) else {
            return outcome;
        };

        // 2. Time order.
        let Some(time_ms) = reading.timestamp_ms else {
            tag.interrupt();
            outcome.problem(Problem::new(
                QualityIssue::TimestampMissing,
                "timestamp_unix_ms: missing; give the time the reading was taken, in milliseconds \
                 since 1970-01-01T00:00:00Z",
            ));
            return outcome;
        };
        if !(0..=LAST_TIMESTAMP_MS).contains(&time_ms) {
            tag.interrupt();
            outcome.problem(Problem::new(
                QualityIssue::TimestampInvalid,
                format!(
                    "timestamp_unix_ms: {time_ms} is outside the valid range 0 \
                     (1970-01-01T00:00:00Z) to {LAST_TIMESTAMP_MS} (9999-12-31T23:59:59.999Z) \
                     milliseconds; this reading is ignored"
                ),
            ));
            return outcome;
        }
        if let Some(last) = tag.last_ms {
            if time_ms < last {
                outcome.problem(Problem::new(
                    QualityIssue::TimestampOutOfOrder,
                    format!(
                        "timestamp_unix_ms: {} is {} before this tag's previous reading at {}; \
                         readings of one tag must come in time order: this one is ignored",
                        format_time(time_ms),
                        seconds(last - time_ms),
                        format_time(last)
                    ),
                ));
                return outcome;
            }
            if time_ms == last {
                outcome.problem(Problem::new(
                    QualityIssue::DuplicateTimestamp,
                    format!(
                        "timestamp_unix_ms: {} repeats this tag's previous reading; the first \
                         reading for an instant stands, this one is ignored",
                        format_time(time_ms)
                    ),
                ));
                return outcome;
            }
        }
        tag.last_ms = Some(time_ms);
        tag.reference_ms.get_or_insert(time_ms);
        self.clock_ms = Some(self.clock_ms.map_or(time_ms, |c| c.max(time_ms)));

        // 3. Quality flag.
        if let Err(problem) = evaluator.usable(&reading) {
            tag.interrupt();
            outcome.problem(problem);
            return outcome;
        }
        if reading.quality == QualityIn::Uncertain {
            outcome.problem(uncertain_problem());
        }

        // 4. Fluid.
        let fluid_id = match tag_fluid(evaluator, tag, &reading) {
            Ok(id) => id,
            Err(problem) => {
                tag.interrupt();
                outcome.problem(problem);
                return outcome;
            }
        };

        // 5 and 6. Inputs and engine.
        let evaluation = match evaluator.measure(&reading, &fluid_id) {
            Ok(evaluation) => evaluation,
            Err(problems) => {
                tag.interrupt();
                problems.into_iter().for_each(|p| outcome.problem(p));
                return outcome;
            }
        };
        if tag.stale {
            tag.stale = false;
            let since = tag.reference_ms.unwrap_or(time_ms);
            outcome.events.push(Event::plain(
                &reading.tag,
                EventKind::TagResumed,
                Some(time_ms),
                format!(
                    "{}: usable readings resumed after {} without one (last at {})",
                    reading.tag,
                    seconds(time_ms - since),
                    format_time(since)
                ),
            ));
        }
        tag.reference_ms = Some(time_ms);
        if self.cautioned.insert(evaluation.fluid_id.clone()) {
            notices.extend(evaluator.caution(&evaluation.fluid_id));
        }
        if !self.default_ambient_noticed && uses_default_ambient(&evaluation) {
            self.default_ambient_noticed = true;
            notices.push(default_ambient_notice(&evaluation));
        }
        let TagState {
            rules, machines, ..
        } = tag;
        for (rule, machine) in rules.iter().zip(machines.iter_mut()) {
            let value = evaluation.margins.value(rule.kind);
            if let Some(change) = machine.observe(time_ms, value) {
                outcome.events.push(alarm_event(
                    &reading.tag,
                    time_ms,
                    rule,
                    machine,
                    change,
                    &evaluation,
                ));
            }
        }
        outcome.evaluation = Some(evaluation);
        outcome
    }

    /// Reports tags with no usable reading for longer than the stale time, by the stream clock.
    /// Looks at the tags at most every quarter of the stale time (at most every second) of stream
    /// time, so that it costs little however many readings a request carries.
    fn sweep(&mut self, events: &mut Vec<Event>) {
        let Some(clock) = self.clock_ms else {
            return;
        };
        if clock < self.next_sweep_ms {
            return;
        }
        self.next_sweep_ms = clock + (self.stale_after_ms / 4).clamp(1, 1000);
        let mut stale: Vec<Event> = Vec::new();
        for (name, tag) in &mut self.tags {
            let Some(reference) = tag.reference_ms else {
                continue;
            };
            if tag.stale || clock - reference <= self.stale_after_ms {
                continue;
            }
            tag.stale = true;
            tag.interrupt();
            stale.push(Event::plain(
                name,
                EventKind::TagStale,
                Some(clock),
                format!(
                    "{name}: stale: no usable reading for {} of stream time (last at {}; stale \
                     after {}); its alarm states are held",
                    seconds(clock - reference),
                    format_time(reference),
                    seconds(self.stale_after_ms)
                ),
            ));
        }
        stale.sort_by(|a, b| a.tag.cmp(&b.tag));
        events.extend(stale);
    }
}

/// The catalogue id of a stream reading's fluid, checked against the tag's earlier fluid.
fn tag_fluid(
    evaluator: &Evaluator,
    tag: &mut TagState,
    reading: &ReadingIn,
) -> Result<String, Problem> {
    if let (FluidChoice::Named(name), Some(given), Some(id)) =
        (&reading.fluid, &tag.fluid_given, &tag.fluid_id)
        && name == given
    {
        return Ok(id.clone());
    }
    let id = match (&reading.fluid, &tag.fluid_id) {
        (FluidChoice::Absent, Some(id)) => return Ok(id.clone()),
        (choice, _) => evaluator.choose_fluid(&reading.tag, choice)?,
    };
    match &tag.fluid_id {
        Some(earlier) if *earlier != id => Err(Problem::new(
            QualityIssue::FluidChanged,
            format!(
                "fluid: {id} differs from this tag's fluid earlier on this stream ({earlier}); a \
                 tag keeps one fluid per stream: open a new stream to change it"
            ),
        )),
        earlier => {
            // A custom mixture is only fully checked when it is built: build it before the tag
            // keeps it, so that a refused mixture does not tie the tag to it.
            if earlier.is_none() && id.starts_with(MIXTURE_KEY) {
                evaluator.mixture_from_key(&id)?;
            }
            tag.fluid_id = Some(id.clone());
            if let FluidChoice::Named(name) = &reading.fluid {
                tag.fluid_given = Some(name.clone());
            }
            Ok(id)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Calendar dates of known instants: the Unix epoch, and 2000-03-01 (951868800 s after the
    /// epoch, a date after a leap day in a year divisible by 400; POSIX time definition).
    #[test]
    fn times_format_as_utc_calendar_dates() {
        assert_eq!(format_time(0), "1970-01-01T00:00:00Z");
        assert_eq!(format_time(951_868_800_000), "2000-03-01T00:00:00Z");
        assert_eq!(format_time(951_868_800_250), "2000-03-01T00:00:00.250Z");
        assert_eq!(format_time(-1000), "1969-12-31T23:59:59Z");
    }
}
