//! The `[alarms]` section of the server settings: stale time, default ambient pressure, tag limit,
//! and rules per tag (`[[alarms.tags]]`), read by [`crate::settings`] and validated here.
//!
//! ```toml
//! [alarms]
//! stale_after_s = 10.0
//! default_ambient_pressure_pa = 101325.0
//! max_tags_per_stream = 100000
//! max_streams = 64
//!
//! [[alarms.tags]]
//! tag = "NH3-P101"          # exact, or a prefix ending in `*` such as "CO2-RK2-*"
//! fluid = "R-717"           # optional: used when readings do not name a fluid
//! rules = [{ kind = "minimum-subcooling", limit = 3.0, priority = "high" }]
//! ```

use serde::{Deserialize, Serialize};

use super::rules::{Priority, RuleInput, RuleKind, RuleSpec, resolve_rules};

/// Ambient pressure for gauge readings when nothing else gives one: the ISO 2533 standard
/// atmosphere at sea level, 101 325 Pa (ISO 2533:1975).
pub const STANDARD_ATMOSPHERE_PA: f64 = 101_325.0;
/// Accepted ambient pressures, Pa: 20 000 to 130 000, the range the CLI accepts too (every
/// inhabited altitude and weather with room to spare; common practice).
pub const AMBIENT_RANGE_PA: (f64, f64) = (20_000.0, 130_000.0);
/// Default stale time, s: ten missed readings at one reading per second (common practice).
pub const DEFAULT_STALE_AFTER_S: f64 = 10.0;
/// Largest stale time, s (one day).
pub const MAX_STALE_AFTER_S: f64 = 86_400.0;
/// Default largest number of tags one stream tracks.
pub const DEFAULT_MAX_TAGS_PER_STREAM: usize = 100_000;
/// Largest accepted tag limit.
pub const MAX_TAGS_PER_STREAM: u64 = 10_000_000;
/// Default largest number of alarm streams open at once on the server: a few dashboards with
/// room to spare; every stream holds its tags' state in memory (common practice: bound every
/// long-lived resource a client can open).
pub const DEFAULT_MAX_STREAMS: usize = 64;
/// Largest accepted stream limit.
pub const MAX_STREAMS: u64 = 100_000;

/// Which tags a settings entry applies to.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum TagPattern {
    /// Exactly this tag.
    Exact(String),
    /// Every tag starting with this text (written `PREFIX*`).
    Prefix(String),
}

impl TagPattern {
    fn parse(text: &str) -> Option<TagPattern> {
        let text = text.trim();
        match text.strip_suffix('*') {
            Some(prefix) if prefix.contains('*') => None,
            Some(prefix) => Some(TagPattern::Prefix(prefix.to_owned())),
            None if text.is_empty() || text.contains('*') => None,
            None => Some(TagPattern::Exact(text.to_owned())),
        }
    }

    /// The pattern as written.
    pub fn text(&self) -> String {
        match self {
            TagPattern::Exact(tag) => tag.clone(),
            TagPattern::Prefix(prefix) => format!("{prefix}*"),
        }
    }
}

/// Rules of the settings for the tags a pattern matches.
#[derive(Debug, Clone, PartialEq)]
pub struct TagRules {
    /// Which tags.
    pub pattern: TagPattern,
    /// The tags' fluid when their readings name none.
    pub fluid: Option<String>,
    /// The rules.
    pub rules: Vec<RuleSpec>,
}

/// Validated `[alarms]` settings.
#[derive(Debug, Clone, PartialEq)]
pub struct AlarmSettings {
    /// Reading time after which a silent tag is reported stale, ms (`alarms.stale_after_s`).
    pub stale_after_ms: i64,
    /// Ambient pressure for gauge readings when neither reading nor opening gives one, Pa
    /// (`alarms.default_ambient_pressure_pa`).
    pub default_ambient_pressure_pa: f64,
    /// Largest number of tags one stream tracks (`alarms.max_tags_per_stream`).
    pub max_tags_per_stream: usize,
    /// Largest number of alarm streams open at once on the server (`alarms.max_streams`).
    pub max_streams: usize,
    /// Rules per tag (`alarms.tags`).
    pub tags: Vec<TagRules>,
}

impl Default for AlarmSettings {
    fn default() -> Self {
        AlarmSettings {
            stale_after_ms: (DEFAULT_STALE_AFTER_S * 1000.0) as i64,
            default_ambient_pressure_pa: STANDARD_ATMOSPHERE_PA,
            max_tags_per_stream: DEFAULT_MAX_TAGS_PER_STREAM,
            max_streams: DEFAULT_MAX_STREAMS,
            tags: Vec::new(),
        }
    }
}

impl AlarmSettings {
    /// The settings entry for `tag`: an exact entry, else the one with the longest matching prefix.
    pub fn entry_for(&self, tag: &str) -> Option<&TagRules> {
        self.tags
            .iter()
            .find(|entry| entry.pattern == TagPattern::Exact(tag.to_owned()))
            .or_else(|| {
                self.tags
                    .iter()
                    .filter_map(|entry| match &entry.pattern {
                        TagPattern::Prefix(prefix) if tag.starts_with(prefix.as_str()) => {
                            Some((prefix.len(), entry))
                        }
                        _ => None,
                    })
                    .max_by_key(|(length, _)| *length)
                    .map(|(_, entry)| entry)
            })
    }

    /// These settings in the shape they are read in.
    pub(crate) fn raw(&self) -> RawAlarms {
        RawAlarms {
            stale_after_s: self.stale_after_ms as f64 / 1000.0,
            default_ambient_pressure_pa: self.default_ambient_pressure_pa,
            max_tags_per_stream: self.max_tags_per_stream as u64,
            max_streams: self.max_streams as u64,
            tags: self
                .tags
                .iter()
                .map(|entry| RawTag {
                    tag: entry.pattern.text(),
                    fluid: entry.fluid.clone(),
                    rules: entry
                        .rules
                        .iter()
                        .map(|rule| RawRule {
                            kind: rule.kind.name().to_owned(),
                            name: Some(rule.name.clone()),
                            limit: Some(rule.limits.limit),
                            deadband: Some(rule.limits.deadband),
                            on_delay_s: Some(rule.limits.on_delay_ms as f64 / 1000.0),
                            off_delay_s: Some(rule.limits.off_delay_ms as f64 / 1000.0),
                            priority: Some(rule.priority.name().to_owned()),
                        })
                        .collect(),
                })
                .collect(),
        }
    }

    /// Checks the raw section; an error names the setting (`alarms.<key>`), the rejected value and
    /// what is valid.
    pub(crate) fn validate(raw: RawAlarms) -> Result<AlarmSettings, InvalidAlarmSetting> {
        let stale = raw.stale_after_s;
        if !(stale.is_finite() && stale > 0.0 && stale <= MAX_STALE_AFTER_S) {
            return Err(InvalidAlarmSetting::new(
                "alarms.stale_after_s",
                stale,
                format!("a number of seconds above 0, at most {MAX_STALE_AFTER_S}"),
            ));
        }
        let ambient = raw.default_ambient_pressure_pa;
        let (lo, hi) = AMBIENT_RANGE_PA;
        if !(ambient.is_finite() && (lo..=hi).contains(&ambient)) {
            return Err(InvalidAlarmSetting::new(
                "alarms.default_ambient_pressure_pa",
                ambient,
                format!("an absolute pressure in Pa from {lo} to {hi}"),
            ));
        }
        if !(1..=MAX_TAGS_PER_STREAM).contains(&raw.max_tags_per_stream) {
            return Err(InvalidAlarmSetting::new(
                "alarms.max_tags_per_stream",
                raw.max_tags_per_stream,
                format!("an integer from 1 to {MAX_TAGS_PER_STREAM}"),
            ));
        }
        if !(1..=MAX_STREAMS).contains(&raw.max_streams) {
            return Err(InvalidAlarmSetting::new(
                "alarms.max_streams",
                raw.max_streams,
                format!("an integer from 1 to {MAX_STREAMS}"),
            ));
        }
        let mut tags: Vec<TagRules> = Vec::with_capacity(raw.tags.len());
        for (index, entry) in raw.tags.into_iter().enumerate() {
            let at = format!("alarms.tags[{index}]");
            let pattern = TagPattern::parse(&entry.tag).ok_or_else(|| {
                InvalidAlarmSetting::new(
                    "alarms.tags",
                    format!("{at}.tag = {:?}", entry.tag),
                    "a tag name, or a prefix followed by one `*` at the end (e.g. \"CO2-RK2-*\")",
                )
            })?;
            if tags.iter().any(|t| t.pattern == pattern) {
                return Err(InvalidAlarmSetting::new(
                    "alarms.tags",
                    format!("{at}.tag = {:?}", entry.tag),
                    "each tag or prefix at most once",
                ));
            }
            let mut inputs = Vec::with_capacity(entry.rules.len());
            for (rule_index, rule) in entry.rules.iter().enumerate() {
                inputs.push(rule.input(&format!("{at}.rules[{rule_index}]"))?);
            }
            let rules = resolve_rules(&inputs, &format!("{at}.rules")).map_err(|e| {
                InvalidAlarmSetting::new(
                    "alarms.tags",
                    format!("{}: {}", e.field, e.message),
                    "rules as documented in binodal.example.toml (limit -100 to 200 K, or a \
                     critical pressure fraction above 0 and at most 2; deadband 0 to 50 K or 0 to \
                     0.5; delays 0 to 86400 s; names unique per tag)",
                )
            })?;
            let fluid = entry.fluid.filter(|f| !f.trim().is_empty());
            tags.push(TagRules {
                pattern,
                fluid,
                rules,
            });
        }
        Ok(AlarmSettings {
            stale_after_ms: (stale * 1000.0).round() as i64,
            default_ambient_pressure_pa: ambient,
            max_tags_per_stream: raw.max_tags_per_stream as usize,
            max_streams: raw.max_streams as usize,
            tags,
        })
    }
}

/// An `[alarms]` value outside what its setting accepts.
#[derive(Debug, Clone, PartialEq)]
pub struct InvalidAlarmSetting {
    /// The settings key, e.g. `alarms.stale_after_s`.
    pub setting: &'static str,
    /// The rejected value (for rules, the rule's place and field).
    pub value: String,
    /// What is valid.
    pub valid: String,
}

impl InvalidAlarmSetting {
    fn new(setting: &'static str, value: impl ToString, valid: impl Into<String>) -> Self {
        InvalidAlarmSetting {
            setting,
            value: value.to_string(),
            valid: valid.into(),
        }
    }
}

/// The `[alarms]` section as read.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawAlarms {
    stale_after_s: f64,
    default_ambient_pressure_pa: f64,
    max_tags_per_stream: u64,
    #[serde(default = "default_max_streams")]
    max_streams: u64,
    #[serde(default)]
    tags: Vec<RawTag>,
}

fn default_max_streams() -> u64 {
    DEFAULT_MAX_STREAMS as u64
}

/// One `[[alarms.tags]]` entry as read.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTag {
    tag: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    fluid: Option<String>,
    #[serde(default)]
    rules: Vec<RawRule>,
}

/// One rule of a `[[alarms.tags]]` entry as read.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRule {
    kind: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    name: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    limit: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    deadband: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    on_delay_s: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    off_delay_s: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    priority: Option<String>,
}

impl RawRule {
    fn input(&self, at: &str) -> Result<RuleInput, InvalidAlarmSetting> {
        let kind = RuleKind::ALL
            .into_iter()
            .find(|k| k.name().eq_ignore_ascii_case(self.kind.trim()))
            .ok_or_else(|| {
                let names: Vec<&str> = RuleKind::ALL.iter().map(|k| k.name()).collect();
                InvalidAlarmSetting::new(
                    "alarms.tags",
                    format!("{at}.kind = {:?}", self.kind),
                    format!("one of {}", names.join(", ")),
                )
            })?;
        let priority = match &self.priority {
            None => None,
            Some(text) => Some(
                Priority::ALL
                    .into_iter()
                    .find(|p| p.name().eq_ignore_ascii_case(text.trim()))
                    .ok_or_else(|| {
                        InvalidAlarmSetting::new(
                            "alarms.tags",
                            format!("{at}.priority = {text:?}"),
                            "one of low, medium, high",
                        )
                    })?,
            ),
        };
        Ok(RuleInput {
            kind: Some(kind),
            name: self.name.clone().unwrap_or_default(),
            limit: self.limit,
            deadband: self.deadband,
            on_delay_s: self.on_delay_s,
            off_delay_s: self.off_delay_s,
            priority,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn raw(tags: &str) -> RawAlarms {
        toml::from_str(&format!(
            "stale_after_s = 10.0\ndefault_ambient_pressure_pa = 101325.0\n\
             max_tags_per_stream = 100000\n{tags}"
        ))
        .expect("raw alarm settings parse")
    }

    #[test]
    fn tag_entries_resolve_exact_before_the_longest_prefix() {
        let settings = AlarmSettings::validate(raw(
            "[[tags]]\ntag = \"CO2-*\"\nrules = [{ kind = \"minimum-superheat\" }]\n\
             [[tags]]\ntag = \"CO2-RK2-*\"\nfluid = \"R-744\"\n\
             rules = [{ kind = \"maximum-critical-pressure-fraction\", limit = 0.85 }]\n\
             [[tags]]\ntag = \"CO2-RK2-GC\"\nrules = []\n",
        ))
        .expect("valid settings");
        let kinds = |tag: &str| -> Option<Vec<RuleKind>> {
            settings
                .entry_for(tag)
                .map(|e| e.rules.iter().map(|r| r.kind).collect())
        };
        assert_eq!(kinds("CO2-RK2-GC"), Some(vec![]));
        assert_eq!(
            kinds("CO2-RK2-SUC"),
            Some(vec![RuleKind::MaximumCriticalPressureFraction])
        );
        assert_eq!(kinds("CO2-RK1"), Some(vec![RuleKind::MinimumSuperheat]));
        assert_eq!(kinds("NH3-P101"), None);
        assert_eq!(
            settings
                .entry_for("CO2-RK2-SUC")
                .and_then(|e| e.fluid.clone()),
            Some("R-744".to_owned())
        );
    }

    #[test]
    fn bad_entries_name_the_place_and_what_is_valid() {
        let cases = [
            ("[[tags]]\ntag = \"A*B\"\n", "alarms.tags[0].tag", "prefix"),
            (
                "[[tags]]\ntag = \"P1\"\nrules = [{ kind = \"low-pressure\" }]\n",
                "alarms.tags[0].rules[0].kind",
                "minimum-subcooling",
            ),
            (
                "[[tags]]\ntag = \"P1\"\nrules = [{ kind = \"minimum-superheat\", deadband = 90.0 }]\n",
                "alarms.tags[0].rules[0].deadband",
                "0 to 50 K",
            ),
            (
                "[[tags]]\ntag = \"P1\"\nrules = [{ kind = \"minimum-superheat\", priority = \"urgent\" }]\n",
                "alarms.tags[0].rules[0].priority",
                "low, medium, high",
            ),
            (
                "[[tags]]\ntag = \"P1\"\n[[tags]]\ntag = \"P1\"\n",
                "alarms.tags[1].tag",
                "at most once",
            ),
        ];
        for (text, place, valid) in cases {
            let error = AlarmSettings::validate(raw(text)).expect_err(text);
            assert_eq!(error.setting, "alarms.tags");
            let said = format!("{} {}", error.value, error.valid);
            assert!(said.contains(place), "{error:?} lacks {place}");
            assert!(said.contains(valid), "{error:?} lacks {valid}");
        }
    }

    #[test]
    fn out_of_range_numbers_are_refused() {
        let mut bad = raw("");
        bad.stale_after_s = 0.0;
        assert_eq!(
            AlarmSettings::validate(bad).expect_err("zero").setting,
            "alarms.stale_after_s"
        );
        let mut bad = raw("");
        bad.default_ambient_pressure_pa = 10.0;
        assert_eq!(
            AlarmSettings::validate(bad).expect_err("ambient").setting,
            "alarms.default_ambient_pressure_pa"
        );
        let mut bad = raw("");
        bad.max_tags_per_stream = 0;
        assert_eq!(
            AlarmSettings::validate(bad).expect_err("tags").setting,
            "alarms.max_tags_per_stream"
        );
    }

    fn write_file(name: &str, text: &str) -> std::path::PathBuf {
        let dir =
            std::env::temp_dir().join(format!("binodal-alarm-settings-{}", std::process::id()));
        std::fs::create_dir_all(&dir).expect("temp dir");
        let path = dir.join(name);
        std::fs::write(&path, text).expect("write settings file");
        path
    }

    fn load(
        file: Option<std::path::PathBuf>,
        environment: &[(&str, &str)],
    ) -> Result<crate::settings::LoadedSettings, crate::settings::SettingsError> {
        crate::settings::Settings::load(&crate::settings::SettingsSources {
            file,
            environment: environment
                .iter()
                .map(|(name, value)| ((*name).to_owned(), (*value).to_owned()))
                .collect(),
            listen: None,
        })
    }

    /// The commented `tags = [...]` example of binodal.example.toml, uncommented, loads through
    /// the layered settings (so the documented form is the accepted one).
    #[test]
    fn the_documented_example_loads_when_uncommented() {
        let example = std::fs::read_to_string(
            std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("binodal.example.toml"),
        )
        .expect("example file");
        let start = example
            .find("# tags = [")
            .expect("the example documents alarms.tags");
        let block: Vec<&str> = example[start..]
            .lines()
            .take_while(|line| line.starts_with('#'))
            .map(|line| line.trim_start_matches('#').strip_prefix(' ').unwrap_or(""))
            .collect();
        let path = write_file(
            "example-tags.toml",
            &format!("[alarms]\nstale_after_s = 5\n{}\n", block.join("\n")),
        );
        let settings = load(Some(path), &[])
            .expect("example loads")
            .settings
            .alarms;
        assert_eq!(settings.stale_after_ms, 5000);
        let pump = settings.entry_for("NH3-P101").expect("pump entry");
        assert_eq!(pump.fluid.as_deref(), Some("R-717"));
        assert_eq!(pump.rules[0].kind, RuleKind::MinimumSubcooling);
        assert_eq!(pump.rules[0].limits.limit, 3.0);
        assert_eq!(pump.rules[1].kind, RuleKind::MinimumFreezingMargin);
        let rack = settings.entry_for("CO2-RK2-GC").expect("prefix entry");
        assert_eq!(rack.rules[0].limits.limit, 0.9);
    }

    /// An environment variable sets an alarm value, and a bad one names the setting, its
    /// variable and the valid range.
    #[test]
    fn environment_variables_reach_the_alarm_section() {
        let loaded = load(None, &[("BINODAL_ALARMS__STALE_AFTER_S", "30")]).expect("valid");
        assert_eq!(loaded.settings.alarms.stale_after_ms, 30_000);
        let error = load(
            None,
            &[("BINODAL_ALARMS__DEFAULT_AMBIENT_PRESSURE_PA", "5")],
        )
        .expect_err("out of range");
        let message = error.to_string();
        for part in [
            "alarms.default_ambient_pressure_pa",
            "BINODAL_ALARMS__DEFAULT_AMBIENT_PRESSURE_PA",
            "20000 to 130000",
        ] {
            assert!(message.contains(part), "{message:?} lacks {part}");
        }
    }

    /// Defaults survive a round trip through the raw shape.
    #[test]
    fn defaults_round_trip() {
        let settings = AlarmSettings::default();
        assert_eq!(
            AlarmSettings::validate(settings.raw()).expect("defaults valid"),
            settings
        );
    }
}
