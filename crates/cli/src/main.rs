//! `binodal`: the engineers' command-line client of the binodal phase-state service.
//!
//! Exit codes: 0 success (also when the reader closes standard output or standard error early,
//! e.g. piped into `head`); 1 an error (printed once, with its causes), also when a call failed
//! on a broken connection; 2 a usage error (from the argument parser); for `health`, 1 when the
//! service is reachable but not serving, and for `watch`, 1 when rows read were skipped, whether
//! or not the answer could be printed.

mod cli;
mod client;
mod commands;
mod config;
mod reading;
mod report;
mod transport;
// The units layer offers more than the commands use so far (lengths, per-quantity formatters).
#[allow(dead_code)]
mod units;
mod watch;

use std::io::Write as _;
use std::process::ExitCode;

use clap::{CommandFactory as _, Parser as _};

use crate::cli::{Cli, Command, ShellArg};
use crate::commands::margin::Margin;
use crate::report::{Document, is_output_closed};

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            // Help and version go to standard output with success; usage errors to standard
            // error with exit code 2.
            let _ = e.print();
            return ExitCode::from(e.exit_code().clamp(0, 255) as u8);
        }
    };
    match run(cli) {
        Ok(code) => code,
        Err(e) if is_output_closed(&e) => ExitCode::SUCCESS,
        Err(e) => {
            let mut stderr = std::io::stderr().lock();
            let _ = writeln!(stderr, "error: {e}");
            // Transport errors often repeat a cause word for word: print each one once.
            let mut previous = e.to_string();
            for cause in e.chain().skip(1) {
                let text = cause.to_string();
                if text != previous {
                    let _ = writeln!(stderr, "  caused by: {text}");
                }
                previous = text;
            }
            ExitCode::FAILURE
        }
    }
}

/// Prints a completion script; needs neither settings nor the server.
fn completions(shell: ShellArg) -> anyhow::Result<ExitCode> {
    let shell = match shell {
        ShellArg::Bash => clap_complete::Shell::Bash,
        ShellArg::Zsh => clap_complete::Shell::Zsh,
        ShellArg::Fish => clap_complete::Shell::Fish,
    };
    let mut script = Vec::new();
    clap_complete::generate(shell, &mut Cli::command(), "binodal", &mut script);
    let mut stdout = std::io::stdout().lock();
    stdout
        .write_all(&script)
        .and_then(|()| stdout.flush())
        .map_err(report::output_error)?;
    Ok(ExitCode::SUCCESS)
}

fn run(cli: Cli) -> anyhow::Result<ExitCode> {
    // Completions first: a broken configuration file must not stop them.
    if let Command::Completions { shell } = cli.command {
        return completions(shell);
    }
    let settings = config::resolve(&cli.global)?;
    let runtime = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()?;
    runtime.block_on(async {
        let document: Document = match cli.command {
            Command::Fluids { classes, search } => {
                commands::fluids::list(&settings, &classes, search.as_deref()).await?
            }
            Command::Fluid { name } => commands::fluids::show(&settings, &name).await?,
            Command::Saturation { name, at } => {
                commands::saturation::run(&settings, &name, at).await?
            }
            Command::State {
                name,
                temperature,
                pressure,
            } => commands::state::run(&settings, &name, temperature, pressure).await?,
            Command::Superheat(readings) => {
                commands::margin::run(
                    &settings,
                    Margin::Superheat,
                    &readings.name,
                    readings.pressure,
                    readings.temperature,
                )
                .await?
            }
            Command::Subcooling(readings) => {
                commands::margin::run(
                    &settings,
                    Margin::Subcooling,
                    &readings.name,
                    readings.pressure,
                    readings.temperature,
                )
                .await?
            }
            Command::Table {
                name,
                from,
                to,
                step,
            } => commands::table::run(&settings, &name, from, to, &step).await?,
            Command::Diagram {
                name,
                kind,
                out,
                marks,
            } => commands::diagram::run(&settings, &name, kind, &out, &marks).await?,
            Command::Health => {
                let health = commands::health::run(&settings).await?;
                match health.document.emit(settings.output, settings.units) {
                    // A closed output does not turn "not serving" into success.
                    Err(e) if is_output_closed(&e) => {}
                    emitted => emitted?,
                }
                return Ok(if health.serving {
                    ExitCode::SUCCESS
                } else {
                    ExitCode::FAILURE
                });
            }
            Command::Watch(args) => return watch::run(&settings, &args).await,
            Command::Completions { shell } => return completions(shell),
        };
        document.emit(settings.output, settings.units)?;
        Ok(ExitCode::SUCCESS)
    })
}
