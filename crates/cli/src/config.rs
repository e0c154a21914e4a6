//! Defaults from a TOML file in the user's configuration directory, merged with the command line.
//!
//! Precedence, strongest first: a command-line flag, its environment variable (`BINODAL_SERVER`
//! for the server), the configuration file, the built-in default. The file is
//! `<config dir>/binodal/config.toml` (on Linux `$XDG_CONFIG_HOME/binodal/config.toml`, usually
//! `~/.config/binodal/config.toml`), or the path given by `--config` / `BINODAL_CONFIG`. A missing
//! file at the default place is fine; a missing file that was named explicitly is an error.
//!
//! ```toml
//! # Harrowgate Cold Store engineering laptop
//! server = "http://127.0.0.1:50051"
//! units = "metric"      # si | metric | us
//! output = "table"      # table | json | csv
//! altitude = "85m"      # or: ambient = "1009mbar" (not both)
//! model = "peng-robinson-1978"
//! ```

use std::path::{Path, PathBuf};

use anyhow::{Context as _, bail};
use serde::Deserialize;

use crate::cli::{GlobalArgs, ModelArg, OutputFormat};
use crate::units::{Ambient, AmbientUsed, UnitSystem};

/// The server address used when nothing else names one.
pub const DEFAULT_SERVER: &str = "http://127.0.0.1:50051";

/// The keys the configuration file accepts, for error messages.
const FILE_KEYS: &str = "server, units, output, ambient, altitude, model";

/// The configuration file as written. Every key is optional; unknown keys are refused.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileDefaults {
    server: Option<String>,
    units: Option<String>,
    output: Option<String>,
    ambient: Option<String>,
    altitude: Option<String>,
    model: Option<String>,
}

/// Where the ambient pressure for gauge readings comes from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum AmbientOrigin {
    /// Nothing set it: the ISO 2533 standard atmosphere at sea level.
    Default,
    /// The `--ambient` or `--altitude` flag.
    Flag,
    /// The configuration file.
    File,
}

/// The ambient in force, its origin, and its resolved pressure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AmbientSetting {
    /// The ambient as given.
    pub ambient: Ambient,
    /// Where it came from.
    pub origin: AmbientOrigin,
}

impl AmbientSetting {
    /// Where the ambient came from, for people and for the JSON field `ambient_source`, e.g.
    /// `ISO 2533 standard atmosphere at 0 m (default: set --ambient or --altitude for your site)`.
    pub fn source_text(&self, used: &AmbientUsed) -> String {
        let source = match used.source {
            crate::units::AmbientSource::Given => "given".to_string(),
            other => other.to_string(),
        };
        match self.origin {
            AmbientOrigin::Default => {
                format!("{source} (default: set --ambient or --altitude for your site)")
            }
            AmbientOrigin::Flag => format!("{source} (command line)"),
            AmbientOrigin::File => format!("{source} (configuration file)"),
        }
    }
}

/// Settings after merging flags, environment, file and defaults.
#[derive(Debug, Clone)]
pub struct Settings {
    /// Server URL.
    pub server: String,
    /// Output unit system.
    pub units: UnitSystem,
    /// Output format.
    pub output: OutputFormat,
    /// Ambient pressure for gauge readings.
    pub ambient: AmbientSetting,
    /// Equation of state; `None` leaves the choice to the server.
    pub model: Option<ModelArg>,
    /// TLS options and token for reaching the server.
    pub security: crate::transport::Security,
}

/// The default configuration file path, if the platform has a configuration directory.
pub fn default_path() -> Option<PathBuf> {
    dirs::config_dir().map(|dir| dir.join("binodal").join("config.toml"))
}

/// Reads the configuration file (if any) and merges it with the command line.
pub fn resolve(global: &GlobalArgs) -> anyhow::Result<Settings> {
    let file = match &global.config {
        Some(path) => read_file(path, true)?,
        None => match default_path() {
            Some(path) => read_file(&path, false)?,
            None => None,
        },
    };
    let (path, file) = match file {
        Some((path, file)) => (Some(path), file),
        None => (None, FileDefaults::default()),
    };
    let in_file = |key: &str| match &path {
        Some(path) => format!("configuration file {}: key `{key}`", path.display()),
        None => format!("key `{key}`"),
    };

    let server = match (&global.server, &file.server) {
        (Some(server), _) => server.clone(),
        (None, Some(server)) => server.clone(),
        (None, None) => DEFAULT_SERVER.to_string(),
    };

    let units = match (global.units, &file.units) {
        (Some(units), _) => units.system(),
        (None, Some(text)) => text
            .parse::<UnitSystem>()
            .with_context(|| in_file("units"))?,
        (None, None) => UnitSystem::Metric,
    };

    let output = match (global.output, &file.output) {
        (Some(output), _) => output,
        (None, Some(text)) => {
            <OutputFormat as clap::ValueEnum>::from_str(text, true).map_err(|_| {
                anyhow::anyhow!(
                    "{}: `{text}` is not an output format; accepted: table, json, csv",
                    in_file("output")
                )
            })?
        }
        (None, None) => OutputFormat::Table,
    };

    let ambient = match (
        global.ambient.or(global.altitude),
        &file.ambient,
        &file.altitude,
    ) {
        (Some(ambient), _, _) => AmbientSetting {
            ambient,
            origin: AmbientOrigin::Flag,
        },
        (None, Some(_), Some(_)) => bail!(
            "configuration file {}: set either `ambient` or `altitude`, not both",
            path.as_deref()
                .map(Path::display)
                .map(|d| d.to_string())
                .unwrap_or_default()
        ),
        (None, Some(text), None) => AmbientSetting {
            ambient: Ambient::parse_pressure(text).with_context(|| in_file("ambient"))?,
            origin: AmbientOrigin::File,
        },
        (None, None, Some(text)) => AmbientSetting {
            ambient: Ambient::parse_altitude(text).with_context(|| in_file("altitude"))?,
            origin: AmbientOrigin::File,
        },
        (None, None, None) => AmbientSetting {
            ambient: Ambient::Altitude(0.0),
            origin: AmbientOrigin::Default,
        },
    };

    let model = match (global.model, &file.model) {
        (Some(model), _) => Some(model),
        (None, Some(text)) => Some(<ModelArg as clap::ValueEnum>::from_str(text, true).map_err(
            |_| {
                anyhow::anyhow!(
                    "{}: `{text}` is not a model; accepted: {}",
                    in_file("model"),
                    ModelArg::names().join(", ")
                )
            },
        )?),
        (None, None) => None,
    };

    let security = crate::transport::Security::new(
        global.tls_ca.clone(),
        global.tls_cert.clone(),
        global.tls_key.clone(),
        global.token_file.as_deref(),
        std::env::var("BINODAL_TOKEN").ok(),
    )?;

    Ok(Settings {
        server,
        units,
        output,
        ambient,
        model,
        security,
    })
}

/// Reads and parses one file. `required`: a missing file is an error (it was named explicitly).
fn read_file(path: &Path, required: bool) -> anyhow::Result<Option<(PathBuf, FileDefaults)>> {
    let text = match std::fs::read_to_string(path) {
        Ok(text) => text,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound && !required => return Ok(None),
        Err(e) => {
            return Err(e)
                .with_context(|| format!("cannot read the configuration file {}", path.display()));
        }
    };
    let file: FileDefaults = toml::from_str(&text).with_context(|| {
        format!(
            "configuration file {} is not valid (accepted keys: {FILE_KEYS})",
            path.display()
        )
    })?;
    Ok(Some((path.to_path_buf(), file)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::Parser as _;

    fn write_config(name: &str, text: &str) -> PathBuf {
        let dir = std::env::temp_dir().join(format!("binodal-cli-config-{}", std::process::id()));
        std::fs::create_dir_all(&dir).expect("temp dir");
        let path = dir.join(name);
        std::fs::write(&path, text).expect("write config");
        path
    }

    fn global(args: &[&str]) -> GlobalArgs {
        let mut argv = vec!["binodal"];
        argv.extend_from_slice(args);
        argv.push("health");
        crate::cli::Cli::try_parse_from(argv)
            .expect("arguments parse")
            .global
    }

    #[test]
    fn file_values_apply_and_flags_win() {
        let path = write_config(
            "layered.toml",
            "server = \"http://127.0.0.1:6000\"\nunits = \"us\"\noutput = \"json\"\naltitude = \"350m\"\nmodel = \"soave-redlich-kwong\"\n",
        );
        let config = path.to_str().expect("utf-8 path");
        let from_file = resolve(&global(&["--config", config])).expect("file settings");
        assert_eq!(from_file.server, "http://127.0.0.1:6000");
        assert_eq!(from_file.units, UnitSystem::Us);
        assert_eq!(from_file.output, OutputFormat::Json);
        assert_eq!(from_file.ambient.origin, AmbientOrigin::File);
        assert_eq!(from_file.ambient.ambient, Ambient::Altitude(350.0));
        assert_eq!(from_file.model, Some(ModelArg::SoaveRedlichKwong));

        let flags = resolve(&global(&[
            "--config",
            config,
            "--server",
            "http://127.0.0.1:7000",
            "--units",
            "si",
            "--output",
            "csv",
            "--ambient",
            "1009mbar",
        ]))
        .expect("flag settings");
        assert_eq!(flags.server, "http://127.0.0.1:7000");
        assert_eq!(flags.units, UnitSystem::Si);
        assert_eq!(flags.output, OutputFormat::Csv);
        assert_eq!(flags.ambient.origin, AmbientOrigin::Flag);
        assert_eq!(flags.ambient.ambient, Ambient::Pressure(100_900.0));
    }

    #[test]
    fn bad_files_name_the_file_and_key() {
        let typo = write_config("typo.toml", "unit = \"us\"\n");
        let message = format!(
            "{:#}",
            resolve(&global(&["--config", typo.to_str().expect("path")])).expect_err("typo")
        );
        assert!(message.contains("typo.toml"), "{message}");
        assert!(message.contains("unit"), "{message}");
        assert!(message.contains(FILE_KEYS), "{message}");

        let bad_units = write_config("units.toml", "units = \"imperial\"\n");
        let message = format!(
            "{:#}",
            resolve(&global(&["--config", bad_units.to_str().expect("path")])).expect_err("units")
        );
        assert!(message.contains("key `units`"), "{message}");
        assert!(message.contains("si (K, Pa), metric"), "{message}");

        let both = write_config("both.toml", "ambient = \"1009mbar\"\naltitude = \"85m\"\n");
        let message = format!(
            "{:#}",
            resolve(&global(&["--config", both.to_str().expect("path")])).expect_err("both")
        );
        assert!(message.contains("not both"), "{message}");

        let missing = std::env::temp_dir().join("binodal-no-such-dir/config.toml");
        let message = format!(
            "{:#}",
            resolve(&global(&["--config", missing.to_str().expect("path")])).expect_err("missing")
        );
        assert!(message.contains("binodal-no-such-dir"), "{message}");
    }
}
