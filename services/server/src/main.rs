//! `binodal-server`: serves the binodal phase-state API over gRPC.
//!
//! Settings come from built-in defaults, the `--config` TOML file, `BINODAL_*` environment
//! variables and the `--listen` flag, in rising priority (see `binodal.example.toml`). The server
//! stops gracefully on SIGTERM or Ctrl-C. On SIGHUP it reads the settings again and applies
//! `log.level`; other changed settings take effect at the next start.

use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::Context as _;
use binodal_server::settings::{Settings, SettingsSources};
use binodal_server::telemetry;
use clap::Parser;

/// Serves the binodal phase-state API over gRPC. Results are advisory and defer to local codes and
/// licensed practice.
#[derive(Debug, Parser)]
#[command(name = "binodal-server", version)]
struct Flags {
    /// Address to listen on, as IP:PORT; overrides the `listen_address` setting.
    #[arg(long, value_name = "IP:PORT")]
    listen: Option<String>,
    /// TOML settings file; BINODAL_* environment variables override its values.
    #[arg(long, value_name = "FILE")]
    config: Option<PathBuf>,
}

#[tokio::main]
async fn main() -> ExitCode {
    let flags = Flags::parse();
    match serve(flags).await {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            eprintln!("binodal-server: {error:#}");
            ExitCode::FAILURE
        }
    }
}

async fn serve(flags: Flags) -> anyhow::Result<()> {
    let sources = SettingsSources::from_process(flags.config, flags.listen);
    let loaded = Settings::load(&sources)?;
    let settings = loaded.settings;
    let log_reload = telemetry::init_logging(&settings.log)?;
    #[cfg(unix)]
    tokio::spawn(reload_on_hangup(sources, settings.clone(), log_reload));
    #[cfg(not(unix))]
    drop((sources, log_reload));
    for variable in &loaded.ignored_variables {
        tracing::warn!(%variable, "ignoring environment variable: it names no setting");
    }
    let listener = tokio::net::TcpListener::bind(settings.listen_address)
        .await
        .with_context(|| {
            format!(
                "cannot listen on {} (setting `listen_address`)",
                settings.listen_address
            )
        })?;
    binodal_server::run(listener, settings, shutdown_signal()).await
}

/// On every SIGHUP, reads the settings again from the same sources and applies `log.level`.
/// Settings that are invalid are reported and change nothing; other settings that changed are
/// named, since they take effect only at the next start.
#[cfg(unix)]
async fn reload_on_hangup(
    sources: SettingsSources,
    running: Settings,
    log_reload: telemetry::LogReload,
) {
    use tokio::signal::unix::{SignalKind, signal};
    let mut hangups = match signal(SignalKind::hangup()) {
        Ok(stream) => stream,
        Err(error) => {
            tracing::error!(%error, "cannot listen for SIGHUP: the log level cannot be reloaded");
            return;
        }
    };
    while hangups.recv().await.is_some() {
        let sources = SettingsSources {
            environment: std::env::vars().collect(),
            ..sources.clone()
        };
        let reloaded = match Settings::load(&sources) {
            Ok(loaded) => loaded.settings,
            Err(error) => {
                tracing::error!(
                    error = %anyhow::Error::from(error).chain().map(ToString::to_string)
                        .collect::<Vec<_>>().join(": "),
                    "SIGHUP: settings not reloaded; the running ones stay in force"
                );
                continue;
            }
        };
        match log_reload.set_level(&reloaded.log.level) {
            Ok(()) => tracing::info!(level = %reloaded.log.level, "SIGHUP: log level applied"),
            Err(error) => tracing::error!(%error, "SIGHUP: log level not applied"),
        }
        let restart_needed = Settings {
            log: running.log.clone(),
            ..reloaded
        } != running;
        if restart_needed {
            tracing::warn!(
                "SIGHUP: other settings changed too; they take effect at the next start"
            );
        }
    }
}

/// Completes on SIGTERM or Ctrl-C (SIGINT). If a signal handler cannot be installed, that signal
/// is logged as unavailable and the other one still works.
async fn shutdown_signal() {
    let interrupt = async {
        match tokio::signal::ctrl_c().await {
            Ok(()) => tracing::info!("Ctrl-C received"),
            Err(error) => {
                tracing::error!(%error, "cannot listen for Ctrl-C");
                std::future::pending::<()>().await;
            }
        }
    };
    #[cfg(unix)]
    let terminate = async {
        use tokio::signal::unix::{SignalKind, signal};
        match signal(SignalKind::terminate()) {
            Ok(mut stream) => {
                stream.recv().await;
                tracing::info!("SIGTERM received");
            }
            Err(error) => {
                tracing::error!(%error, "cannot listen for SIGTERM");
                std::future::pending::<()>().await;
            }
        }
    };
    #[cfg(not(unix))]
    let terminate = std::future::pending::<()>();
    tokio::select! {
        () = interrupt => {}
        () = terminate => {}
    }
}
