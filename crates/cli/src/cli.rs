//! The command line: global options, commands, and their help text.

use std::path::PathBuf;

use binodal_proto::v1::{EquationOfState, SafetyClass};
use clap::{Args, Parser, Subcommand, ValueEnum};

use crate::reading::{Mark, Reading};
use crate::units::{Ambient, PressureReading, Temperature, UnitSystem};

const ABOUT: &str = "Phase states of refrigerants and process fluids from the binodal service";

const LONG_ABOUT: &str = "\
Phase states of refrigerants and process fluids from the binodal service.

Every quantity needs a unit: 25C, 77F, 298.15K; 8.2bar (absolute), 8.2barg or '8.2bar(g)' (gauge),
120psig, 850kPa. Gauge readings are converted to absolute with the ambient pressure from --ambient,
--altitude or the configuration file; without them, the ISO 2533 standard atmosphere at sea level
(101325 Pa) is used and the output says so.

Results come from cubic equations of state and are advisory: they defer to local codes and
licensed practice. Fluids can be flammable, toxic or under high pressure; cautions are printed
under the answer (a `caution` field in JSON).";

const EXAMPLES: &str = "\
Examples (Harrowgate Cold Store; Kestrel Lane office chiller CH-2):
  binodal fluids --class B2L
  binodal fluid R-717
  binodal saturation R-134a --at 25C
  binodal superheat R-717 --pressure 1.9barg --temperature -12C --altitude 85m   # NH3-P101 suction
  binodal subcooling R-134a --pressure 8.6barg --temperature 31C                 # CH-2 liquid line
  binodal state R-744 --temperature 12C --pressure '45bar(g)'                    # CO2-RK2 receiver
  binodal table R-134a --from -10C --to 50C --step 5C --output csv > ch2-saturation.csv
  binodal diagram R-744 --kind pt --out co2-rk2.svg --mark=-8C,26barg --mark 12C,45barg
  binodal health --server http://127.0.0.1:50051

Configuration file: <config dir>/binodal/config.toml (Linux: ~/.config/binodal/config.toml), or
--config / BINODAL_CONFIG. Keys: server, units, output, ambient, altitude, model.";

/// The `binodal` command line.
#[derive(Debug, Parser)]
#[command(
    name = "binodal",
    version,
    about = ABOUT,
    long_about = LONG_ABOUT,
    after_help = EXAMPLES,
    propagate_version = true
)]
pub struct Cli {
    /// Options shared by every command.
    #[command(flatten)]
    pub global: GlobalArgs,
    /// The command to run.
    #[command(subcommand)]
    pub command: Command,
}

/// Options shared by every command.
#[derive(Debug, Args)]
pub struct GlobalArgs {
    /// Address of the binodal service, http://HOST:PORT or https://HOST:PORT; several replicas
    /// separated by commas [default: http://127.0.0.1:50051]
    #[arg(long, global = true, env = "BINODAL_SERVER", value_name = "URL")]
    pub server: Option<String>,
    /// Output format [default: table]
    #[arg(long, global = true, value_enum, value_name = "FORMAT")]
    pub output: Option<OutputFormat>,
    /// Units of the output: si (K, Pa), metric (°C, bar), us (°F, psia) [default: metric]
    #[arg(long, global = true, value_enum, value_name = "SYSTEM")]
    pub units: Option<UnitsArg>,
    /// Ambient (barometric) pressure for gauge readings, absolute, e.g. 1009mbar or 14.6psia
    #[arg(
        long,
        global = true,
        value_name = "PRESSURE",
        value_parser = Ambient::parse_pressure,
        conflicts_with = "altitude"
    )]
    pub ambient: Option<Ambient>,
    /// Site altitude for gauge readings (ISO 2533 standard atmosphere), e.g. 350m or 1150ft
    #[arg(
        long,
        global = true,
        value_name = "ALTITUDE",
        value_parser = Ambient::parse_altitude,
        allow_hyphen_values = true
    )]
    pub altitude: Option<Ambient>,
    /// Equation of state [default: the server's]
    #[arg(long, global = true, value_enum, value_name = "MODEL")]
    pub model: Option<ModelArg>,
    /// Configuration file [default: <config dir>/binodal/config.toml]
    #[arg(long, global = true, env = "BINODAL_CONFIG", value_name = "FILE")]
    pub config: Option<PathBuf>,
    /// CA certificate (PEM) to trust for https:// servers
    #[arg(long, global = true, env = "BINODAL_TLS_CA", value_name = "FILE")]
    pub tls_ca: Option<PathBuf>,
    /// Client certificate (PEM) for servers that require mutual TLS; needs --tls-key
    #[arg(long, global = true, env = "BINODAL_TLS_CERT", value_name = "FILE")]
    pub tls_cert: Option<PathBuf>,
    /// Private key (PEM) of --tls-cert
    #[arg(long, global = true, env = "BINODAL_TLS_KEY", value_name = "FILE")]
    pub tls_key: Option<PathBuf>,
    /// File holding the bearer token (first line that is not blank or a # comment); without it,
    /// the BINODAL_TOKEN environment variable gives the token
    #[arg(long, global = true, env = "BINODAL_TOKEN_FILE", value_name = "FILE")]
    pub token_file: Option<PathBuf>,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// List the fluids the service knows
    #[command(
        after_help = "Examples:\n  binodal fluids\n  binodal fluids --class A2L,A3\n  binodal fluids --search ammonia"
    )]
    Fluids {
        /// Keep only these ASHRAE 34 safety classes (comma-separated or repeated)
        #[arg(long = "class", value_enum, value_delimiter = ',', ignore_case = true)]
        classes: Vec<ClassArg>,
        /// Keep only fluids whose names, number, formula or aliases contain this text
        #[arg(long, value_name = "TEXT")]
        search: Option<String>,
    },
    /// Show one fluid: constants, safety class, caution, recorded accuracy per model
    #[command(after_help = "Examples:\n  binodal fluid R-717\n  binodal fluid co2 --output json")]
    Fluid {
        /// Fluid name, ASHRAE number or alias (e.g. R-134a, ammonia, CO2)
        name: String,
    },
    /// Saturation at a temperature or a pressure (the unit tells which)
    #[command(
        after_help = "Examples:\n  binodal saturation R-134a --at 25C\n  binodal saturation R-717 --at 2.1barg --altitude 85m\n  binodal saturation R-744 --at=-8C --units us"
    )]
    Saturation {
        /// Fluid name, ASHRAE number or alias
        name: String,
        /// A temperature (25C) or a pressure (8.2bar, 4.1barg)
        #[arg(long, value_name = "VALUE", value_parser = Reading::parse, allow_hyphen_values = true)]
        at: Reading,
    },
    /// Phase, margins to saturation, density, enthalpy and entropy at a temperature and pressure
    #[command(
        after_help = "Example (CO2-RK2 receiver):\n  binodal state R-744 --temperature 12C --pressure '45bar(g)'"
    )]
    State {
        /// Fluid name, ASHRAE number or alias
        name: String,
        /// Temperature, e.g. 25C
        #[arg(long, value_name = "TEMPERATURE", value_parser = Temperature::parse, allow_hyphen_values = true)]
        temperature: Temperature,
        /// Pressure, gauge or absolute, e.g. 12barg or 13bar
        #[arg(long, value_name = "PRESSURE", value_parser = PressureReading::parse, allow_hyphen_values = true)]
        pressure: PressureReading,
    },
    /// Superheat from a suction pressure and line temperature (against the dew point)
    #[command(
        after_help = "Example (NH3-P101 suction, Harrowgate Cold Store at 85 m):\n  binodal superheat R-717 --pressure 1.9barg --temperature -12C --altitude 85m"
    )]
    Superheat(FieldReadings),
    /// Subcooling from a liquid-line pressure and temperature (against the bubble point)
    #[command(
        after_help = "Example (Kestrel Lane office chiller CH-2 liquid line):\n  binodal subcooling R-134a --pressure 8.6barg --temperature 31C"
    )]
    Subcooling(FieldReadings),
    /// Saturation table over a range of temperatures or pressures
    #[command(
        after_help = "Examples:\n  binodal table R-134a --from -10C --to 50C --step 5C\n  binodal table R-717 --from 1bar --to 12bar --step 0.5bar --output csv"
    )]
    Table {
        /// Fluid name, ASHRAE number or alias
        name: String,
        /// First row: a temperature (-40C) or a pressure (1bar)
        #[arg(long, value_name = "VALUE", value_parser = Reading::parse, allow_hyphen_values = true)]
        from: Reading,
        /// Last row, of the same kind as --from
        #[arg(long, value_name = "VALUE", value_parser = Reading::parse, allow_hyphen_values = true)]
        to: Reading,
        /// Step: a temperature difference (5C, 5K, 9F) or a pressure difference (0.5bar)
        #[arg(long, value_name = "STEP")]
        step: String,
    },
    /// Draw a pressure-temperature or pressure-enthalpy diagram to an SVG or PNG file
    #[command(
        after_help = "Examples:\n  binodal diagram R-744 --kind pt --out co2-rk2.svg --mark=-8C,26barg --mark 12C,45barg\n  binodal diagram R-134a --kind ph --out ch2.png --mark 5C,2.5bar --mark 45C,11.6bar"
    )]
    Diagram {
        /// Fluid name, ASHRAE number or alias
        name: String,
        /// pt: pressure against temperature; ph: pressure against enthalpy
        #[arg(long, value_enum)]
        kind: DiagramKind,
        /// Output file; its extension (.svg or .png) sets the format
        #[arg(long, value_name = "FILE")]
        out: PathBuf,
        /// Operating point to mark, temperature and pressure: 25C,12bar (repeatable)
        #[arg(long = "mark", value_name = "T,P", value_parser = Mark::parse, allow_hyphen_values = true)]
        marks: Vec<Mark>,
    },
    /// Check that the service answers (exit code 0 when it is serving; for probes)
    #[command(
        after_help = "Example (container probe):\n  binodal health --server http://127.0.0.1:50051 --output json"
    )]
    Health,
    /// Play plant readings (CSV file or standard input) into the alarm stream; print the events
    #[command(
        after_help = "Examples (Harrowgate Cold Store demo):\n  binodal watch crates/cli/examples/harrowgate_cold_store.csv \\\n      --rules crates/cli/examples/harrowgate_cold_store.toml --altitude 85m\n  tail -f readings.csv | binodal watch --rule NH3-P101=minimum-subcooling,limit=3 --speed 1\n\nCSV columns: time, tag, pressure, temperature (required); fluid, quality, ambient.\nAlarms are advisory: no substitute for a safety instrumented system or the plant's own\nprotection; limits defer to local codes and licensed practice."
    )]
    Watch(crate::watch::WatchArgs),
    /// Print a shell completion script
    #[command(
        after_help = "Example:\n  binodal completions bash > ~/.local/share/bash-completion/completions/binodal"
    )]
    Completions {
        /// The shell
        #[arg(value_enum)]
        shell: ShellArg,
    },
}

/// A pressure and a temperature read on a line in the field.
#[derive(Debug, Args)]
pub struct FieldReadings {
    /// Fluid name, ASHRAE number or alias
    pub name: String,
    /// Line pressure, gauge or absolute, e.g. 4.1barg
    #[arg(long, value_name = "PRESSURE", value_parser = PressureReading::parse, allow_hyphen_values = true)]
    pub pressure: PressureReading,
    /// Line temperature, e.g. 12C
    #[arg(long, value_name = "TEMPERATURE", value_parser = Temperature::parse, allow_hyphen_values = true)]
    pub temperature: Temperature,
}

/// Output format.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum OutputFormat {
    /// Aligned text for people.
    Table,
    /// JSON, SI units, stable keys (see the README).
    Json,
    /// Comma-separated values with a header row; units in the headers.
    Csv,
}

/// Output unit system, as typed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum UnitsArg {
    /// K, Pa, J/kg, J/(kg K), kg/m3.
    Si,
    /// °C, bar, kJ/kg, kJ/(kg K), kg/m3.
    Metric,
    /// °F, psia, Btu/lb, Btu/(lb °F), lb/ft3.
    Us,
}

impl UnitsArg {
    /// The unit system this argument stands for.
    pub fn system(self) -> UnitSystem {
        match self {
            UnitsArg::Si => UnitSystem::Si,
            UnitsArg::Metric => UnitSystem::Metric,
            UnitsArg::Us => UnitSystem::Us,
        }
    }
}

/// Equation of state, as typed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ModelArg {
    /// van der Waals (1873).
    VanDerWaals,
    /// Redlich-Kwong (1949).
    RedlichKwong,
    /// Soave-Redlich-Kwong (1972).
    SoaveRedlichKwong,
    /// Peng-Robinson with its 1976 alpha correlation.
    #[value(name = "peng-robinson-1976")]
    PengRobinson1976,
    /// Peng-Robinson with the 1978 alpha correlation.
    #[value(name = "peng-robinson-1978")]
    PengRobinson1978,
}

impl ModelArg {
    /// The protobuf value.
    pub fn proto(self) -> EquationOfState {
        match self {
            ModelArg::VanDerWaals => EquationOfState::VanDerWaals,
            ModelArg::RedlichKwong => EquationOfState::RedlichKwong,
            ModelArg::SoaveRedlichKwong => EquationOfState::SoaveRedlichKwong,
            ModelArg::PengRobinson1976 => EquationOfState::PengRobinson1976,
            ModelArg::PengRobinson1978 => EquationOfState::PengRobinson1978,
        }
    }

    /// Every accepted spelling, for messages.
    pub fn names() -> Vec<String> {
        ModelArg::value_variants()
            .iter()
            .filter_map(|m| m.to_possible_value())
            .map(|v| v.get_name().to_string())
            .collect()
    }
}

/// An ASHRAE 34 safety class, as typed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ClassArg {
    /// Lower toxicity, no flame propagation.
    #[value(name = "A1")]
    A1,
    /// Lower toxicity, lower flammability.
    #[value(name = "A2L")]
    A2l,
    /// Lower toxicity, flammable.
    #[value(name = "A2")]
    A2,
    /// Lower toxicity, higher flammability.
    #[value(name = "A3")]
    A3,
    /// Higher toxicity, no flame propagation.
    #[value(name = "B1")]
    B1,
    /// Higher toxicity, lower flammability.
    #[value(name = "B2L")]
    B2l,
    /// Higher toxicity, flammable.
    #[value(name = "B2")]
    B2,
    /// Higher toxicity, higher flammability.
    #[value(name = "B3")]
    B3,
    /// No ASHRAE 34 class (process fluids).
    #[value(name = "none")]
    Unclassified,
}

impl ClassArg {
    /// The protobuf value.
    pub fn proto(self) -> SafetyClass {
        match self {
            ClassArg::A1 => SafetyClass::A1,
            ClassArg::A2l => SafetyClass::A2l,
            ClassArg::A2 => SafetyClass::A2,
            ClassArg::A3 => SafetyClass::A3,
            ClassArg::B1 => SafetyClass::B1,
            ClassArg::B2l => SafetyClass::B2l,
            ClassArg::B2 => SafetyClass::B2,
            ClassArg::B3 => SafetyClass::B3,
            ClassArg::Unclassified => SafetyClass::NotClassified,
        }
    }
}

/// Kind of diagram.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum DiagramKind {
    /// Pressure (log scale) against temperature.
    Pt,
    /// Pressure (log scale) against specific enthalpy.
    Ph,
}

/// Shells with completion scripts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ShellArg {
    /// GNU bash.
    Bash,
    /// Z shell.
    Zsh,
    /// fish.
    Fish,
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory as _;

    #[test]
    fn the_command_line_is_consistent() {
        Cli::command().debug_assert();
    }

    #[test]
    fn negative_readings_are_values_not_flags() {
        let cli = Cli::try_parse_from([
            "binodal", "table", "R-744", "--from", "-40C", "--to", "-5C", "--step", "5C",
        ])
        .expect("negative temperatures parse");
        match cli.command {
            Command::Table { from, .. } => match from {
                Reading::Temperature(t) => assert!((t.kelvin() - 233.15).abs() < 1e-9),
                other => panic!("--from read as {other:?}"),
            },
            other => panic!("parsed as {other:?}"),
        }
    }

    #[test]
    fn model_names_match_the_json_names() {
        for model in ModelArg::value_variants() {
            let name = model
                .to_possible_value()
                .expect("named")
                .get_name()
                .to_string();
            assert_eq!(name, crate::report::model_key(model.proto()));
        }
    }

    #[test]
    fn classes_are_case_insensitive_and_comma_separated() {
        let cli = Cli::try_parse_from(["binodal", "fluids", "--class", "a2l,B2L"])
            .expect("classes parse");
        match cli.command {
            Command::Fluids { classes, .. } => assert_eq!(classes, [ClassArg::A2l, ClassArg::B2l]),
            other => panic!("parsed as {other:?}"),
        }
    }
}
