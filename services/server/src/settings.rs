//! Server settings, read once at start-up from layered sources (later ones win):
//!
//! 1. built-in defaults ([`Settings::default`]);
//! 2. an optional TOML file (the `--config` flag; `binodal.example.toml` documents every key);
//! 3. environment variables `BINODAL_<KEY>`, with `__` between a section and its key, e.g.
//!    `BINODAL_LISTEN_ADDRESS` or `BINODAL_LIMITS__MAX_BATCH_LENGTH`;
//! 4. the `--listen` flag.
//!
//! Every value is validated before the server starts; an invalid one stops start-up with a
//! [`SettingsError`] naming the setting, its environment variable and the valid values.

use std::net::SocketAddr;
use std::path::PathBuf;
use std::time::Duration;

use config::{Config, Environment, File, FileFormat};
use serde::{Deserialize, Serialize};

/// Prefix of the environment variables that hold settings.
const ENV_PREFIX: &str = "BINODAL";
/// Separator between a section and a key in environment variable names.
const ENV_SECTION_SEPARATOR: &str = "__";

/// Every settings key, as written in the TOML file (section and key joined by a dot).
pub const SETTING_KEYS: [&str; 26] = [
    "listen_address",
    "default_equation_of_state",
    "default_reference_state",
    "user_fluid_file",
    "reflection",
    "log.format",
    "log.level",
    "limits.max_message_size_bytes",
    "limits.max_batch_length",
    "limits.request_timeout_ms",
    "limits.max_concurrent_requests",
    "limits.load_shedding",
    "limits.max_concurrent_streams",
    "limits.max_connection_age_s",
    "tls.certificate_file",
    "tls.private_key_file",
    "tls.client_ca_file",
    "auth.token_file",
    "auth.token",
    "metrics.enabled",
    "metrics.listen_address",
    "alarms.stale_after_s",
    "alarms.default_ambient_pressure_pa",
    "alarms.max_tags_per_stream",
    "alarms.max_streams",
    "alarms.tags",
];

/// Smallest accepted message size limit: 64 KiB.
const MIN_MESSAGE_SIZE_BYTES: u64 = 64 * 1024;
/// Largest accepted message size limit: 1 GiB.
const MAX_MESSAGE_SIZE_BYTES: u64 = 1024 * 1024 * 1024;
/// Largest accepted batch length.
const MAX_BATCH_LENGTH: u64 = 10_000_000;
/// Largest accepted request timeout: one hour.
const MAX_REQUEST_TIMEOUT_MS: u64 = 3_600_000;
/// Largest accepted limit on calls in progress.
const MAX_CONCURRENT_REQUESTS: u64 = 100_000;
/// Largest accepted limit on HTTP/2 streams per connection.
const MAX_CONCURRENT_STREAMS: u64 = 10_000;
/// Largest accepted connection age: one week.
const MAX_CONNECTION_AGE_S: u64 = 7 * 24 * 3600;

/// Validated server settings.
#[derive(Debug, Clone, PartialEq)]
pub struct Settings {
    /// Address the server listens on (`listen_address`). Ignored by [`crate::run`], which is
    /// handed a bound listener.
    pub listen_address: SocketAddr,
    /// Equation of state used when a request leaves it unspecified (`default_equation_of_state`).
    pub default_equation_of_state: EquationOfStateChoice,
    /// Reference state used when a request leaves it unspecified (`default_reference_state`).
    pub default_reference_state: ReferenceStateChoice,
    /// Extra fluids to load at start-up (`user_fluid_file`); the file must exist.
    pub user_fluid_file: Option<PathBuf>,
    /// Whether the gRPC reflection service is offered (`reflection`).
    pub reflection: bool,
    /// Logging (`[log]` section).
    pub log: LogSettings,
    /// Size, length and time limits (`[limits]` section).
    pub limits: Limits,
    /// Transport security (`[tls]` section).
    pub tls: crate::security::TlsSettings,
    /// Caller authentication (`[auth]` section).
    pub auth: crate::security::AuthSettings,
    /// Metrics endpoint (`[metrics]` section).
    pub metrics: crate::metrics::MetricsSettings,
    /// Alarm watch: stale time, default ambient pressure, tag limit, rules per tag (`[alarms]`
    /// section).
    pub alarms: crate::alarms::config::AlarmSettings,
}

/// Logging settings (`[log]` section).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct LogSettings {
    /// Line format (`log.format`).
    pub format: LogFormat,
    /// Level filter in `tracing` directive syntax, e.g. `info` or `binodal_server=debug,warn`
    /// (`log.level`). The `RUST_LOG` environment variable, when set, takes precedence.
    pub level: String,
}

/// Limits on requests (`[limits]` section).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Limits {
    /// Largest gRPC message accepted or sent, in bytes (`limits.max_message_size_bytes`).
    pub max_message_size_bytes: usize,
    /// Largest number of points in one batch request (`limits.max_batch_length`).
    pub max_batch_length: usize,
    /// Time a request may take before it fails with DEADLINE_EXCEEDED
    /// (`limits.request_timeout_ms`).
    pub request_timeout: Duration,
    /// Calls in progress at once, across all connections (`limits.max_concurrent_requests`);
    /// health checks do not count.
    pub max_concurrent_requests: usize,
    /// Whether a call finding every slot taken is refused at once with UNAVAILABLE (`true`) or
    /// waits for a slot until the request timeout (`false`) (`limits.load_shedding`).
    pub load_shedding: bool,
    /// HTTP/2 streams (calls) open at once on one connection (`limits.max_concurrent_streams`).
    pub max_concurrent_streams: u32,
    /// Age in seconds after which a connection is closed gracefully so that clients reconnect and
    /// rebalance; 0 keeps connections open (`limits.max_connection_age_s`).
    pub max_connection_age_s: u64,
}

/// Format of log lines.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LogFormat {
    /// Human-readable lines (`text`).
    Text,
    /// One JSON object per line (`json`).
    Json,
}

/// Equation of state named in the settings.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EquationOfStateChoice {
    /// van der Waals (`van-der-waals`).
    VanDerWaals,
    /// Redlich-Kwong (`redlich-kwong`).
    RedlichKwong,
    /// Soave-Redlich-Kwong (`soave-redlich-kwong`).
    SoaveRedlichKwong,
    /// Peng-Robinson with the 1976 alpha correlation (`peng-robinson-1976`).
    PengRobinson1976,
    /// Peng-Robinson with the 1978 alpha correlation (`peng-robinson-1978`).
    PengRobinson1978,
}

/// Reference state named in the settings.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ReferenceStateChoice {
    /// Saturated liquid at 0 degrees Celsius: h = 200 kJ/kg, s = 1 kJ/(kg K)
    /// (`liquid-at-zero-celsius`).
    LiquidAtZeroCelsius,
    /// Saturated liquid at 101 325 Pa: h = 0, s = 0 (`liquid-at-normal-boiling-point`).
    LiquidAtNormalBoilingPoint,
}

/// A closed set of values a setting accepts, each with its spelling in the settings.
trait Choice: Copy + 'static {
    /// Every value, in the order they are listed in error messages.
    const ALL: &'static [Self];
    /// The spelling of this value in the settings.
    fn name(self) -> &'static str;
}

impl Choice for LogFormat {
    const ALL: &'static [Self] = &[Self::Text, Self::Json];
    fn name(self) -> &'static str {
        match self {
            Self::Text => "text",
            Self::Json => "json",
        }
    }
}

impl Choice for EquationOfStateChoice {
    const ALL: &'static [Self] = &[
        Self::VanDerWaals,
        Self::RedlichKwong,
        Self::SoaveRedlichKwong,
        Self::PengRobinson1976,
        Self::PengRobinson1978,
    ];
    fn name(self) -> &'static str {
        match self {
            Self::VanDerWaals => "van-der-waals",
            Self::RedlichKwong => "redlich-kwong",
            Self::SoaveRedlichKwong => "soave-redlich-kwong",
            Self::PengRobinson1976 => "peng-robinson-1976",
            Self::PengRobinson1978 => "peng-robinson-1978",
        }
    }
}

impl Choice for ReferenceStateChoice {
    const ALL: &'static [Self] = &[Self::LiquidAtZeroCelsius, Self::LiquidAtNormalBoilingPoint];
    fn name(self) -> &'static str {
        match self {
            Self::LiquidAtZeroCelsius => "liquid-at-zero-celsius",
            Self::LiquidAtNormalBoilingPoint => "liquid-at-normal-boiling-point",
        }
    }
}

impl LogFormat {
    /// The spelling of this format in the settings.
    pub fn name(self) -> &'static str {
        Choice::name(self)
    }
}

impl EquationOfStateChoice {
    /// The spelling of this equation of state in the settings.
    pub fn name(self) -> &'static str {
        Choice::name(self)
    }
}

impl ReferenceStateChoice {
    /// The spelling of this reference state in the settings.
    pub fn name(self) -> &'static str {
        Choice::name(self)
    }
}

/// Why the settings could not be used.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum SettingsError {
    /// A source could not be read, or a value has the wrong type or an unknown key.
    #[error("cannot read settings")]
    Load(#[from] config::ConfigError),
    /// A value is outside what its setting accepts.
    #[error(
        "setting `{setting}` (environment variable {variable}) has the invalid value {value:?}; \
         valid values: {valid}"
    )]
    Invalid {
        /// The settings key, e.g. `limits.max_batch_length`.
        setting: &'static str,
        /// The environment variable that sets it.
        variable: String,
        /// The rejected value as read.
        value: String,
        /// What the setting accepts.
        valid: String,
    },
}

impl SettingsError {
    pub(crate) fn invalid(
        setting: &'static str,
        value: impl ToString,
        valid: impl Into<String>,
    ) -> Self {
        Self::Invalid {
            setting,
            variable: environment_variable(setting),
            value: value.to_string(),
            valid: valid.into(),
        }
    }
}

/// The environment variable that sets a settings key, e.g. `BINODAL_LOG__LEVEL` for `log.level`.
pub fn environment_variable(key: &str) -> String {
    format!(
        "{ENV_PREFIX}_{}",
        key.to_uppercase().replace('.', ENV_SECTION_SEPARATOR)
    )
}

/// The places settings are read from, besides the built-in defaults.
#[derive(Debug, Clone, Default)]
pub struct SettingsSources {
    /// TOML settings file (the `--config` flag). When given, it must exist.
    pub file: Option<PathBuf>,
    /// Environment variables as (name, value) pairs; only `BINODAL_*` ones are read.
    pub environment: Vec<(String, String)>,
    /// Listen address from the `--listen` flag; overrides every other source.
    pub listen: Option<String>,
}

impl SettingsSources {
    /// Sources for a real start: the given file and flag, and this process's environment.
    pub fn from_process(file: Option<PathBuf>, listen: Option<String>) -> Self {
        Self {
            file,
            environment: std::env::vars().collect(),
            listen,
        }
    }
}

/// Settings as loaded, with what was left out.
#[derive(Debug, Clone, PartialEq)]
pub struct LoadedSettings {
    /// The validated settings.
    pub settings: Settings,
    /// `BINODAL_*` environment variables that name no setting and were ignored (other programs,
    /// such as the CLI, may use the same prefix). The server logs them as warnings.
    pub ignored_variables: Vec<String>,
}

impl Default for Settings {
    fn default() -> Self {
        Self {
            listen_address: SocketAddr::from(([127, 0, 0, 1], 50051)),
            default_equation_of_state: EquationOfStateChoice::PengRobinson1978,
            default_reference_state: ReferenceStateChoice::LiquidAtZeroCelsius,
            user_fluid_file: None,
            reflection: true,
            log: LogSettings {
                format: LogFormat::Text,
                level: "info".to_owned(),
            },
            limits: Limits {
                max_message_size_bytes: 4 * 1024 * 1024,
                max_batch_length: 40_000,
                request_timeout: Duration::from_secs(10),
                max_concurrent_requests: 256,
                load_shedding: true,
                max_concurrent_streams: 128,
                max_connection_age_s: 0,
            },
            tls: crate::security::TlsSettings::default(),
            auth: crate::security::AuthSettings::default(),
            metrics: crate::metrics::MetricsSettings::default(),
            alarms: crate::alarms::config::AlarmSettings::default(),
        }
    }
}

impl Settings {
    /// Reads and validates the settings from the built-in defaults and `sources`.
    pub fn load(sources: &SettingsSources) -> Result<LoadedSettings, SettingsError> {
        let mut builder = Config::builder().add_source(Config::try_from(&Self::default().raw())?);
        if let Some(path) = &sources.file {
            builder = builder.add_source(File::from(path.as_path()).format(FileFormat::Toml));
        }
        let (variables, ignored_variables) = split_environment(&sources.environment);
        builder = builder.add_source(
            Environment::with_prefix(ENV_PREFIX)
                .prefix_separator("_")
                .separator(ENV_SECTION_SEPARATOR)
                .source(Some(variables)),
        );
        if let Some(listen) = &sources.listen {
            builder = builder.set_override("listen_address", listen.as_str())?;
        }
        let raw: RawSettings = builder.build()?.try_deserialize()?;
        Ok(LoadedSettings {
            settings: Self::validate(raw)?,
            ignored_variables,
        })
    }

    /// These settings in the shape they are read in.
    fn raw(&self) -> RawSettings {
        RawSettings {
            listen_address: self.listen_address.to_string(),
            default_equation_of_state: self.default_equation_of_state.name().to_owned(),
            default_reference_state: self.default_reference_state.name().to_owned(),
            user_fluid_file: self
                .user_fluid_file
                .as_ref()
                .map(|path| path.display().to_string()),
            reflection: self.reflection,
            log: RawLog {
                format: self.log.format.name().to_owned(),
                level: self.log.level.clone(),
            },
            limits: RawLimits {
                max_message_size_bytes: self.limits.max_message_size_bytes as u64,
                max_batch_length: self.limits.max_batch_length as u64,
                request_timeout_ms: self.limits.request_timeout.as_millis() as u64,
                max_concurrent_requests: self.limits.max_concurrent_requests as u64,
                load_shedding: self.limits.load_shedding,
                max_concurrent_streams: u64::from(self.limits.max_concurrent_streams),
                max_connection_age_s: self.limits.max_connection_age_s,
            },
            tls: self.tls.raw(),
            auth: self.auth.raw(),
            metrics: self.metrics.raw(),
            alarms: self.alarms.raw(),
        }
    }

    fn validate(raw: RawSettings) -> Result<Self, SettingsError> {
        let listen_address = raw.listen_address.parse::<SocketAddr>().map_err(|_| {
            SettingsError::invalid(
                "listen_address",
                &raw.listen_address,
                "an IP address and port such as 127.0.0.1:50051 or [::1]:50051",
            )
        })?;
        let user_fluid_file = match raw.user_fluid_file.as_deref() {
            None | Some("") => None,
            Some(path) if PathBuf::from(path).is_file() => Some(PathBuf::from(path)),
            Some(path) => {
                return Err(SettingsError::invalid(
                    "user_fluid_file",
                    path,
                    "the path of an existing fluid file, or no value",
                ));
            }
        };
        let level = raw.log.level.trim().to_owned();
        if !is_level_filter(&level) {
            return Err(SettingsError::invalid(
                "log.level",
                &raw.log.level,
                "a level (off, error, warn, info, debug, trace) or comma-separated directives \
                 such as `binodal_server=debug,info`",
            ));
        }
        Ok(Self {
            listen_address,
            default_equation_of_state: parse_choice(
                "default_equation_of_state",
                &raw.default_equation_of_state,
            )?,
            default_reference_state: parse_choice(
                "default_reference_state",
                &raw.default_reference_state,
            )?,
            user_fluid_file,
            reflection: raw.reflection,
            log: LogSettings {
                format: parse_choice("log.format", &raw.log.format)?,
                level,
            },
            limits: Limits {
                max_message_size_bytes: in_range(
                    "limits.max_message_size_bytes",
                    raw.limits.max_message_size_bytes,
                    MIN_MESSAGE_SIZE_BYTES,
                    MAX_MESSAGE_SIZE_BYTES,
                )?,
                max_batch_length: in_range(
                    "limits.max_batch_length",
                    raw.limits.max_batch_length,
                    1,
                    MAX_BATCH_LENGTH,
                )?,
                request_timeout: Duration::from_millis(in_range(
                    "limits.request_timeout_ms",
                    raw.limits.request_timeout_ms,
                    1,
                    MAX_REQUEST_TIMEOUT_MS,
                )? as u64),
                max_concurrent_requests: in_range(
                    "limits.max_concurrent_requests",
                    raw.limits.max_concurrent_requests,
                    1,
                    MAX_CONCURRENT_REQUESTS,
                )?,
                load_shedding: raw.limits.load_shedding,
                max_concurrent_streams: in_range(
                    "limits.max_concurrent_streams",
                    raw.limits.max_concurrent_streams,
                    1,
                    MAX_CONCURRENT_STREAMS,
                )? as u32,
                max_connection_age_s: in_range(
                    "limits.max_connection_age_s",
                    raw.limits.max_connection_age_s,
                    0,
                    MAX_CONNECTION_AGE_S,
                )? as u64,
            },
            tls: crate::security::TlsSettings::validate(raw.tls)?,
            auth: crate::security::AuthSettings::validate(raw.auth)?,
            metrics: crate::metrics::MetricsSettings::validate(raw.metrics)?,
            alarms: crate::alarms::config::AlarmSettings::validate(raw.alarms)
                .map_err(|e| SettingsError::invalid(e.setting, e.value, e.valid))?,
        })
    }
}

/// Settings as read from the layered sources, before validation.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSettings {
    listen_address: String,
    default_equation_of_state: String,
    default_reference_state: String,
    #[serde(default)]
    user_fluid_file: Option<String>,
    reflection: bool,
    log: RawLog,
    limits: RawLimits,
    tls: crate::security::RawTls,
    auth: crate::security::RawAuth,
    metrics: crate::metrics::RawMetrics,
    alarms: crate::alarms::config::RawAlarms,
}

/// The `[log]` section as read.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLog {
    format: String,
    level: String,
}

/// The `[limits]` section as read.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLimits {
    max_message_size_bytes: u64,
    max_batch_length: u64,
    request_timeout_ms: u64,
    max_concurrent_requests: u64,
    load_shedding: bool,
    max_concurrent_streams: u64,
    max_connection_age_s: u64,
}

/// Splits the `BINODAL_*` variables into those that name a setting and the names of the rest.
fn split_environment(
    environment: &[(String, String)],
) -> (config::Map<String, String>, Vec<String>) {
    let prefix = format!("{ENV_PREFIX}_");
    let mut settings = config::Map::new();
    let mut ignored = Vec::new();
    for (name, value) in environment {
        let upper = name.to_uppercase();
        let Some(rest) = upper.strip_prefix(&prefix) else {
            continue;
        };
        let key = rest.to_lowercase().replace(ENV_SECTION_SEPARATOR, ".");
        if SETTING_KEYS.contains(&key.as_str()) {
            settings.insert(name.clone(), value.clone());
        } else {
            ignored.push(name.clone());
        }
    }
    ignored.sort();
    (settings, ignored)
}

/// Level names accepted on their own in a level filter.
const LEVEL_NAMES: [&str; 6] = ["off", "error", "warn", "info", "debug", "trace"];

/// Whether `filter` is a usable level filter: `tracing` directives in which every bare word is a
/// level name. A bare word that is not a level (say a misspelt `debgu`) would otherwise be taken as
/// a target name and silently hide every line; targets must be written `target=level`.
fn is_level_filter(filter: &str) -> bool {
    let directives: Vec<&str> = filter.split(',').map(str::trim).collect();
    let bare_words_are_levels = directives.iter().all(|directive| {
        directive.contains(['=', '[', ':'])
            || LEVEL_NAMES
                .iter()
                .any(|level| level.eq_ignore_ascii_case(directive))
    });
    !filter.is_empty()
        && bare_words_are_levels
        && tracing_subscriber::EnvFilter::try_new(filter).is_ok()
}

fn parse_choice<T: Choice>(setting: &'static str, value: &str) -> Result<T, SettingsError> {
    let wanted = value.trim();
    T::ALL
        .iter()
        .copied()
        .find(|choice| choice.name().eq_ignore_ascii_case(wanted))
        .ok_or_else(|| {
            let names: Vec<&str> = T::ALL.iter().map(|choice| choice.name()).collect();
            SettingsError::invalid(setting, value, names.join(", "))
        })
}

fn in_range(setting: &'static str, value: u64, min: u64, max: u64) -> Result<usize, SettingsError> {
    if (min..=max).contains(&value) {
        usize::try_from(value).map_err(|_| {
            SettingsError::invalid(
                setting,
                value,
                format!("at most {} on this machine", usize::MAX),
            )
        })
    } else {
        Err(SettingsError::invalid(
            setting,
            value,
            format!("an integer from {min} to {max}"),
        ))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn load(
        file: Option<PathBuf>,
        environment: &[(&str, &str)],
    ) -> Result<LoadedSettings, SettingsError> {
        Settings::load(&SettingsSources {
            file,
            environment: environment
                .iter()
                .map(|(name, value)| ((*name).to_owned(), (*value).to_owned()))
                .collect(),
            listen: None,
        })
    }

    /// The error and its causes, as the server prints them.
    fn full_message(error: &SettingsError) -> String {
        let mut message = error.to_string();
        let mut cause = std::error::Error::source(error);
        while let Some(inner) = cause {
            message = format!("{message}: {inner}");
            cause = inner.source();
        }
        message
    }

    fn example_file() -> PathBuf {
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("binodal.example.toml")
    }

    /// The defaults are the values the project brief sets for phase 1 (project brief, not a
    /// physical check value).
    #[test]
    fn defaults_without_any_source() {
        let loaded = load(None, &[]).expect("defaults are valid");
        let settings = loaded.settings;
        assert_eq!(settings, Settings::default());
        assert_eq!(settings.listen_address.to_string(), "127.0.0.1:50051");
        assert_eq!(
            settings.default_equation_of_state,
            EquationOfStateChoice::PengRobinson1978
        );
        assert_eq!(settings.limits.max_message_size_bytes, 4_194_304);
        assert_eq!(settings.limits.max_batch_length, 40_000);
        assert_eq!(settings.limits.request_timeout, Duration::from_secs(10));
        assert!(settings.reflection);
        assert_eq!(settings.log.format, LogFormat::Text);
        assert!(loaded.ignored_variables.is_empty());
    }

    /// The example file states every default, so loading it changes nothing.
    #[test]
    fn example_file_matches_the_defaults() {
        let loaded = load(Some(example_file()), &[]).expect("example file loads");
        assert_eq!(loaded.settings, Settings::default());
    }

    /// Every settings key appears in the example file, set or commented out.
    #[test]
    fn example_file_documents_every_key() {
        let text = std::fs::read_to_string(example_file()).expect("example file readable");
        for key in SETTING_KEYS {
            let bare = key.rsplit('.').next().unwrap_or(key);
            let written = text.lines().any(|line| {
                let line = line.trim_start_matches(['#', ' ']);
                line.starts_with(&format!("{bare} ="))
            });
            assert!(written, "`{key}` is not in binodal.example.toml");
        }
    }

    /// SETTING_KEYS is exactly the set of keys the raw settings have.
    #[test]
    fn setting_keys_match_the_settings_shape() {
        let settings = Settings {
            user_fluid_file: Some(PathBuf::from("fluids.toml")),
            ..Settings::default()
        };
        let table = toml::Table::try_from(settings.raw()).expect("raw settings serialize");
        let mut keys = Vec::new();
        for (key, value) in &table {
            match value.as_table() {
                Some(section) => keys.extend(section.keys().map(|inner| format!("{key}.{inner}"))),
                None => keys.push(key.clone()),
            }
        }
        keys.sort();
        let mut expected: Vec<String> = SETTING_KEYS.iter().map(|key| (*key).to_owned()).collect();
        expected.sort();
        assert_eq!(keys, expected);
    }

    #[test]
    fn environment_overrides_the_file_and_the_flag_overrides_both() {
        let dir = std::env::temp_dir().join(format!("binodal-settings-{}", std::process::id()));
        std::fs::create_dir_all(&dir).expect("temp dir");
        let file = dir.join("layered.toml");
        std::fs::write(
            &file,
            "listen_address = \"127.0.0.1:7000\"\n\
             default_equation_of_state = \"soave-redlich-kwong\"\n\
             [limits]\nmax_batch_length = 500\n",
        )
        .expect("write settings file");
        let environment = [
            ("BINODAL_LISTEN_ADDRESS", "127.0.0.1:7001"),
            ("BINODAL_LIMITS__MAX_BATCH_LENGTH", "2500"),
            ("BINODAL_LOG__FORMAT", "json"),
            ("BINODAL_REFLECTION", "false"),
            ("HOME", "/root"),
        ];
        let loaded = load(Some(file.clone()), &environment).expect("layered settings load");
        let settings = &loaded.settings;
        assert_eq!(settings.listen_address.to_string(), "127.0.0.1:7001");
        assert_eq!(
            settings.default_equation_of_state,
            EquationOfStateChoice::SoaveRedlichKwong
        );
        assert_eq!(settings.limits.max_batch_length, 2500);
        assert_eq!(settings.log.format, LogFormat::Json);
        assert!(!settings.reflection);

        let with_flag = Settings::load(&SettingsSources {
            file: Some(file),
            environment: environment
                .iter()
                .map(|(name, value)| ((*name).to_owned(), (*value).to_owned()))
                .collect(),
            listen: Some("127.0.0.1:7002".to_owned()),
        })
        .expect("flag override loads");
        assert_eq!(
            with_flag.settings.listen_address.to_string(),
            "127.0.0.1:7002"
        );
        std::fs::remove_dir_all(&dir).ok();
    }

    #[test]
    fn unrelated_prefixed_variables_are_ignored_and_reported() {
        let loaded = load(None, &[("BINODAL_SERVER", "http://127.0.0.1:50051")])
            .expect("unrelated variable does not stop start-up");
        assert_eq!(loaded.settings, Settings::default());
        assert_eq!(loaded.ignored_variables, ["BINODAL_SERVER"]);
    }

    /// Each invalid value is rejected with the setting, its variable and the valid values named.
    #[test]
    fn invalid_values_name_the_setting_and_the_valid_values() {
        let cases: [(&str, &str, &[&str]); 9] = [
            (
                "BINODAL_LISTEN_ADDRESS",
                "localhost",
                &["listen_address", "127.0.0.1:50051"],
            ),
            (
                "BINODAL_DEFAULT_EQUATION_OF_STATE",
                "peng-robinson",
                &[
                    "default_equation_of_state",
                    "peng-robinson-1976",
                    "peng-robinson-1978",
                ],
            ),
            (
                "BINODAL_DEFAULT_REFERENCE_STATE",
                "triple-point",
                &["default_reference_state", "liquid-at-zero-celsius"],
            ),
            ("BINODAL_LOG__FORMAT", "xml", &["log.format", "text, json"]),
            ("BINODAL_LOG__LEVEL", "debgu", &["log.level", "debug"]),
            (
                "BINODAL_LIMITS__MAX_BATCH_LENGTH",
                "0",
                &["limits.max_batch_length", "from 1 to 10000000"],
            ),
            (
                "BINODAL_LIMITS__MAX_MESSAGE_SIZE_BYTES",
                "100",
                &["limits.max_message_size_bytes", "from 65536 to 1073741824"],
            ),
            (
                "BINODAL_LIMITS__REQUEST_TIMEOUT_MS",
                "0",
                &["limits.request_timeout_ms", "from 1 to 3600000"],
            ),
            (
                "BINODAL_USER_FLUID_FILE",
                "/nonexistent/fluids.toml",
                &["user_fluid_file", "existing fluid file"],
            ),
        ];
        for (variable, value, expected) in cases {
            let error = load(None, &[(variable, value)])
                .expect_err(&format!("{variable}={value} must be rejected"));
            let message = full_message(&error);
            assert!(message.contains(variable), "{message:?} lacks {variable}");
            for part in expected {
                assert!(message.contains(part), "{message:?} lacks {part:?}");
            }
        }
    }

    /// Level names and target directives pass; a bare word that is no level is refused, since
    /// the filter would take it for a target and hide every line.
    #[test]
    fn level_filters() {
        for accepted in [
            "info",
            "WARN",
            "off",
            "binodal_server=debug,info",
            "tonic::transport",
        ] {
            assert!(is_level_filter(accepted), "{accepted:?} should be accepted");
        }
        for refused in ["", "debgu", "info,verbose", "binodal_server=loud"] {
            assert!(!is_level_filter(refused), "{refused:?} should be refused");
        }
    }

    #[test]
    fn unknown_file_key_and_missing_file_are_rejected() {
        let dir = std::env::temp_dir().join(format!("binodal-unknown-{}", std::process::id()));
        std::fs::create_dir_all(&dir).expect("temp dir");
        let file = dir.join("typo.toml");
        std::fs::write(&file, "listen_adress = \"127.0.0.1:7000\"\n").expect("write file");
        let message = full_message(&load(Some(file), &[]).expect_err("typo rejected"));
        assert!(message.contains("listen_adress"), "{message:?}");

        let missing = dir.join("absent.toml");
        let message = full_message(&load(Some(missing), &[]).expect_err("missing file rejected"));
        assert!(message.contains("absent.toml"), "{message:?}");
        std::fs::remove_dir_all(&dir).ok();
    }

    #[test]
    fn wrongly_typed_value_names_the_key() {
        let message = full_message(
            &load(None, &[("BINODAL_LIMITS__MAX_BATCH_LENGTH", "many")])
                .expect_err("non-number rejected"),
        );
        assert!(message.contains("max_batch_length"), "{message:?}");
    }

    #[test]
    fn environment_variable_names() {
        assert_eq!(environment_variable("log.level"), "BINODAL_LOG__LEVEL");
        assert_eq!(
            environment_variable("listen_address"),
            "BINODAL_LISTEN_ADDRESS"
        );
    }
}
