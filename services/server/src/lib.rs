//! The binodal gRPC phase-state service.
//!
//! [`run`] serves `binodal.v1.PhaseService` together with the standard gRPC health service
//! (`grpc.health.v1.Health`) and, unless disabled, server reflection (`grpc.reflection.v1`), on a
//! listener the caller has bound. It returns once the shutdown future has completed and every
//! in-flight call has finished. [`settings`] reads and validates the configuration;
//! [`telemetry`] sets up logging and the per-request span; [`security`] holds TLS and the
//! bearer-token check; [`metrics`] the Prometheus endpoint and request ids. Every call passes the
//! layers of `serving.rs`: observation, authentication, then admission (concurrency limit, load
//! shedding, request timeout).
//!
//! ```no_run
//! use binodal_server::settings::Settings;
//!
//! # async fn example() -> anyhow::Result<()> {
//! let listener = tokio::net::TcpListener::bind("127.0.0.1:0").await?;
//! let (stop, stopped) = tokio::sync::oneshot::channel::<()>();
//! let server = tokio::spawn(binodal_server::run(listener, Settings::default(), async {
//!     stopped.await.ok();
//! }));
//! // ... talk to the server ...
//! stop.send(()).ok();
//! server.await??;
//! # Ok(())
//! # }
//! ```
//!
//! Results are advisory: fluids can be flammable, toxic or under high pressure, and every answer
//! defers to local codes and licensed practice.
#![deny(missing_docs)]

pub mod alarms;
mod batch;
mod convert;
mod curves;
mod engines;
mod framing;
mod limits;
pub mod metrics;
pub mod security;
mod service;
mod serving;
pub mod settings;
mod status;
pub mod telemetry;

use std::future::Future;
use std::sync::Arc;

use anyhow::Context as _;
use binodal_proto::v1::alarm_service_server::AlarmServiceServer;
use binodal_proto::v1::phase_service_server::PhaseServiceServer;
use tokio::net::TcpListener;
use tonic::transport::server::TcpIncoming;
use tonic_health::ServingStatus;
use tonic_health::server::HealthReporter;

use crate::engines::Engines;
pub use crate::service::PhaseApi;
use crate::settings::{EquationOfStateChoice, ReferenceStateChoice, Settings};

/// The gRPC name of the phase service, as reported by health checks and reflection.
pub const PHASE_SERVICE_NAME: &str = "binodal.v1.PhaseService";

/// Serves the phase service, health and reflection on `listener` until `shutdown` completes.
///
/// `settings.listen_address` is not used: the caller binds the listener (tests bind
/// `127.0.0.1:0`). When `shutdown` completes, health turns NOT_SERVING for the phase service and
/// for the server as a whole, the listener closes, and the function returns once every in-flight
/// call has finished.
pub async fn run(
    listener: TcpListener,
    settings: Settings,
    shutdown: impl Future<Output = ()>,
) -> anyhow::Result<()> {
    let address = listener
        .local_addr()
        .context("cannot read the listener's address")?;
    let engines = Arc::new(prepare_engines(&settings)?);
    let (health, health_service) = tonic_health::server::health_reporter();
    health.set_serving::<PhaseServiceServer<PhaseApi>>().await;

    let limits = &settings.limits;
    let (alarm_api, alarm_stop) = alarms::AlarmApi::new(
        Arc::clone(&engines),
        &settings.alarms,
        limits.max_batch_length,
        limits.max_message_size_bytes,
    )?;
    health
        .set_serving::<AlarmServiceServer<alarms::AlarmApi>>()
        .await;
    let alarm_service = AlarmServiceServer::new(metrics::MeteredAlarms(alarm_api))
        .max_decoding_message_size(limits.max_message_size_bytes)
        .max_encoding_message_size(limits.max_message_size_bytes);
    let api = PhaseApi::new(engines, limits.max_batch_length);
    let phase_service = PhaseServiceServer::new(metrics::Metered(api))
        .max_decoding_message_size(limits.max_message_size_bytes)
        .max_encoding_message_size(limits.max_message_size_bytes);
    let reflection_service = if settings.reflection {
        Some(
            tonic_reflection::server::Builder::configure()
                .register_encoded_file_descriptor_set(binodal_proto::FILE_DESCRIPTOR_SET)
                .register_encoded_file_descriptor_set(tonic_health::pb::FILE_DESCRIPTOR_SET)
                .build_v1()
                .context("cannot build the reflection service")?,
        )
    } else {
        None
    };

    let metrics_endpoint = metrics::start(&settings.metrics).await?;
    tracing::info!(
        %address,
        tls = settings.tls.enabled(),
        mutual_tls = settings.tls.mutual(),
        token_required = settings.auth.required(),
        metrics = ?metrics_endpoint.as_ref().map(|endpoint| endpoint.address),
        max_concurrent_requests = limits.max_concurrent_requests,
        load_shedding = limits.load_shedding,
        reflection = settings.reflection,
        default_equation_of_state = settings.default_equation_of_state.name(),
        default_reference_state = settings.default_reference_state.name(),
        "binodal server listening",
    );
    let protected = settings.tls.enabled() && settings.auth.required();
    if !address.ip().is_loopback() && !protected {
        tracing::warn!(
            %address,
            "listening beyond loopback without both TLS and a token: any host that reaches \
             this port can call the service (see the [tls] and [auth] settings)"
        );
    }
    serving::server_builder(&settings)?
        .add_service(health_service)
        .add_optional_service(reflection_service)
        .add_service(phase_service)
        .add_service(alarm_service)
        .serve_with_incoming_shutdown(
            TcpIncoming::from(listener).with_nodelay(Some(true)),
            drain_on(
                async {
                    shutdown.await;
                    // Open alarm streams end with UNAVAILABLE so that shutdown does not wait
                    // for dashboards that never close them.
                    alarm_stop.stop();
                },
                health,
            ),
        )
        .await
        .context("the gRPC server failed")?;
    drop(metrics_endpoint);
    tracing::info!("binodal server stopped");
    Ok(())
}

/// The phase service's handlers over engines prepared from `settings` (catalogue, curves,
/// defaults), without a network listener: the same handlers [`run`] serves, for in-process use
/// such as the batch benchmark (`cargo bench -p binodal-server`). Call them through the
/// `binodal_proto::v1::phase_service_server::PhaseService` trait.
pub fn phase_handlers(settings: &Settings) -> anyhow::Result<PhaseApi> {
    let engines = Arc::new(prepare_engines(settings)?);
    Ok(PhaseApi::new(engines, settings.limits.max_batch_length))
}

/// Loads the catalogue (with the user fluid file, if set) and prepares every engine.
fn prepare_engines(settings: &Settings) -> anyhow::Result<Engines> {
    let started = std::time::Instant::now();
    let builtin = binodal_fluids::Catalogue::builtin();
    let catalogue = match &settings.user_fluid_file {
        Some(path) => builtin
            .with_user_file(path)
            .with_context(|| format!("setting 'user_fluid_file' = {}", path.display()))?,
        None => builtin.clone(),
    };
    let model = match settings.default_equation_of_state {
        EquationOfStateChoice::VanDerWaals => binodal_eos::Model::VanDerWaals,
        EquationOfStateChoice::RedlichKwong => binodal_eos::Model::RedlichKwong,
        EquationOfStateChoice::SoaveRedlichKwong => binodal_eos::Model::SoaveRedlichKwong,
        EquationOfStateChoice::PengRobinson1976 => binodal_eos::Model::PengRobinson1976,
        EquationOfStateChoice::PengRobinson1978 => binodal_eos::Model::PengRobinson1978,
    };
    let reference = match settings.default_reference_state {
        ReferenceStateChoice::LiquidAtZeroCelsius => {
            binodal_eos::ReferenceState::LiquidAtZeroCelsius
        }
        ReferenceStateChoice::LiquidAtNormalBoilingPoint => {
            binodal_eos::ReferenceState::LiquidAtNormalBoilingPoint
        }
    };
    let engines = Engines::prepare(catalogue, model, reference);
    tracing::info!(
        fluids = engines.catalogue().fluids().len(),
        elapsed_ms = started.elapsed().as_secs_f64() * 1e3,
        "engines prepared"
    );
    Ok(engines)
}

/// Waits for `shutdown`, then reports NOT_SERVING so that clients and load balancers stop sending
/// new calls; the server then stops accepting connections and lets in-flight calls finish.
async fn drain_on(shutdown: impl Future<Output = ()>, health: HealthReporter) {
    shutdown.await;
    tracing::info!(
        calls_in_flight = metrics::active_calls(),
        "shutdown requested: reporting NOT_SERVING and finishing in-flight calls"
    );
    health
        .set_not_serving::<PhaseServiceServer<PhaseApi>>()
        .await;
    health
        .set_not_serving::<AlarmServiceServer<alarms::AlarmApi>>()
        .await;
    health
        .set_service_status("", ServingStatus::NotServing)
        .await;
}
