//! Logging and per-request tracing.
//!
//! [`init_logging`] installs a `tracing-subscriber` formatter, human-readable or JSON as the
//! settings say, filtered by `RUST_LOG` when that is set and by the `log.level` setting otherwise.
//!
//! Each gRPC request runs inside one `rpc` span at DEBUG level, opened by [`request_span`] with the
//! method path; handlers add the fluid with [`record_fluid`]. The formatter reports the span when
//! it closes, with its busy and idle time, so the duration of every request is visible at DEBUG
//! level while INFO carries no line per request.
//!
//! Every request span carries the call's `request_id` (see [`crate::metrics`]), and failed calls
//! are logged with it at INFO and above. [`LogReload`] changes the level filter of the running
//! process; the server binary applies the `log.level` setting again on SIGHUP, so the level
//! changes without a rebuild or a restart.

use binodal_proto::v1::{FluidSelector, fluid_selector::Choice};
use tonic::codegen::http;
use tracing::Span;
use tracing_subscriber::fmt::format::FmtSpan;
use tracing_subscriber::layer::SubscriberExt as _;
use tracing_subscriber::util::SubscriberInitExt as _;
use tracing_subscriber::{EnvFilter, Registry, reload};

use crate::settings::{LogFormat, LogSettings};

/// Why logging could not be started.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum LoggingError {
    /// `RUST_LOG` is set but is not a valid filter.
    #[error("environment variable RUST_LOG = {value:?} is not a valid log filter: {reason}")]
    InvalidRustLog {
        /// The value of `RUST_LOG`.
        value: String,
        /// The parser's complaint.
        reason: String,
    },
    /// The `log.level` setting is not a valid filter (normally caught when settings load).
    #[error("setting `log.level` = {value:?} is not a valid log filter: {reason}")]
    InvalidLevel {
        /// The value of the setting.
        value: String,
        /// The parser's complaint.
        reason: String,
    },
    /// A global subscriber was already installed.
    #[error("logging was already initialised")]
    AlreadyInitialised(#[from] tracing_subscriber::util::TryInitError),
}

/// Changes the level filter of the installed log subscriber.
#[derive(Debug, Clone)]
pub struct LogReload {
    handle: reload::Handle<EnvFilter, Registry>,
}

impl LogReload {
    /// Replaces the level filter with `level` (`tracing` directive syntax, as the `log.level`
    /// setting). An invalid filter leaves the current one in place.
    pub fn set_level(&self, level: &str) -> Result<(), LoggingError> {
        let filter = EnvFilter::try_new(level).map_err(|error| LoggingError::InvalidLevel {
            value: level.to_owned(),
            reason: error.to_string(),
        })?;
        self.handle
            .reload(filter)
            .map_err(|error| LoggingError::InvalidLevel {
                value: level.to_owned(),
                reason: error.to_string(),
            })
    }
}

/// Installs the global log subscriber. Call once, before the server starts. The returned handle
/// changes the level filter later.
pub fn init_logging(log: &LogSettings) -> Result<LogReload, LoggingError> {
    let filter = match std::env::var("RUST_LOG") {
        Ok(value) if !value.trim().is_empty() => {
            EnvFilter::try_new(&value).map_err(|error| LoggingError::InvalidRustLog {
                value,
                reason: error.to_string(),
            })?
        }
        _ => EnvFilter::try_new(&log.level).map_err(|error| LoggingError::InvalidLevel {
            value: log.level.clone(),
            reason: error.to_string(),
        })?,
    };
    let (filter, handle) = reload::Layer::new(filter);
    let text = (log.format == LogFormat::Text).then(|| {
        tracing_subscriber::fmt::layer()
            .with_span_events(FmtSpan::CLOSE)
            .with_writer(std::io::stderr)
    });
    let json = (log.format == LogFormat::Json).then(|| {
        tracing_subscriber::fmt::layer()
            .json()
            .with_current_span(true)
            .with_span_events(FmtSpan::CLOSE)
            .with_writer(std::io::stderr)
    });
    tracing_subscriber::registry()
        .with(filter)
        .with(text)
        .with(json)
        .try_init()?;
    Ok(LogReload { handle })
}

/// The span one gRPC request runs in: DEBUG level, named `rpc`, with the method path and
/// initially empty `request_id` and `fluid` fields. Installed with
/// `tonic::transport::Server::trace_fn`.
pub fn request_span(request: &http::Request<()>) -> Span {
    tracing::debug_span!(
        "rpc",
        method = %request.uri().path(),
        request_id = tracing::field::Empty,
        fluid = tracing::field::Empty,
    )
}

/// Records the fluid a request names on the current request span. Does nothing when the span is
/// disabled (log level above DEBUG), so it costs nothing in normal operation.
pub fn record_fluid(selector: Option<&FluidSelector>) {
    let span = Span::current();
    if span.is_disabled() {
        return;
    }
    span.record("fluid", fluid_label(selector).as_str());
}

/// Records a fluid given by name (as in DescribeFluid) on the current request span.
pub fn record_fluid_name(name: &str) {
    Span::current().record("fluid", name);
}

/// A short label for a fluid selector: the name as given, or the components of a mixture joined
/// with `+`.
fn fluid_label(selector: Option<&FluidSelector>) -> String {
    match selector.and_then(|selector| selector.choice.as_ref()) {
        Some(Choice::Fluid(name)) => name.clone(),
        Some(Choice::Mixture(mixture)) => {
            let names: Vec<&str> = mixture
                .components
                .iter()
                .map(|component| component.fluid.as_str())
                .collect();
            format!("mixture({})", names.join("+"))
        }
        None => "(none)".to_owned(),
    }
}

#[cfg(test)]
mod tests {
    use super::fluid_label;
    use binodal_proto::v1::{FluidSelector, Mixture, MixtureComponent, fluid_selector::Choice};

    #[test]
    fn labels_name_the_fluid_or_the_mixture_components() {
        let named = FluidSelector {
            choice: Some(Choice::Fluid("R-717".to_owned())),
        };
        assert_eq!(fluid_label(Some(&named)), "R-717");

        let component = |fluid: &str| MixtureComponent {
            fluid: fluid.to_owned(),
            fraction: 0.5,
        };
        let mixture = FluidSelector {
            choice: Some(Choice::Mixture(Mixture {
                components: vec![component("R-32"), component("R-125")],
                fraction_basis: 2,
            })),
        };
        assert_eq!(fluid_label(Some(&mixture)), "mixture(R-32+R-125)");
        assert_eq!(fluid_label(None), "(none)");
        assert_eq!(fluid_label(Some(&FluidSelector { choice: None })), "(none)");
    }
}
