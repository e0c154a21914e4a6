//! The transport around the services: TLS, HTTP/2 limits, and the layers every call passes
//! through, outermost first:
//!
//! 1. [`crate::metrics::ObserveLayer`]: request id, metrics, failure logs, bounded status
//!    messages (sees every call, refused ones included);
//! 2. [`crate::security::AuthLayer`]: the bearer-token check (health exempt);
//! 3. [`crate::limits::AdmissionLayer`]: the concurrency limit, load shedding and the request
//!    timeout (health exempt).
//!
//! tonic wraps all of them in the per-request `rpc` span and enforces a client's `grpc-timeout`.

use std::time::Duration;

use anyhow::Context as _;
use tonic::transport::Server;
use tower::layer::util::{Identity, Stack};

use crate::limits::AdmissionLayer;
use crate::metrics::ObserveLayer;
use crate::security::{self, AuthLayer};
use crate::settings::Settings;
use crate::telemetry;

/// The layer stack [`server_builder`] installs.
pub(crate) type ServingLayers =
    Stack<AdmissionLayer, Stack<AuthLayer, Stack<ObserveLayer, Identity>>>;

/// A server builder with the settings' TLS, limits and layers, ready for services.
pub(crate) fn server_builder(settings: &Settings) -> anyhow::Result<Server<ServingLayers>> {
    let limits = &settings.limits;
    // The request timeout is applied by the admission layer, which answers DEADLINE_EXCEEDED
    // (tonic's own server timeout would answer CANCELLED); tonic still enforces the deadline a
    // client sends in `grpc-timeout`.
    let mut builder = Server::builder()
        .trace_fn(telemetry::request_span)
        .max_concurrent_streams(limits.max_concurrent_streams);
    if limits.max_connection_age_s > 0 {
        // Clients reconnect when a connection reaches this age, and so spread over replicas
        // added since; in-flight calls get a grace period of the request timeout.
        builder = builder
            .max_connection_age(Duration::from_secs(limits.max_connection_age_s))
            .max_connection_age_grace(limits.request_timeout);
    }
    if let Some(tls) = security::server_tls_config(&settings.tls)? {
        builder = builder.tls_config(tls).context(
            "cannot use the TLS certificate, key or client CA of the [tls] settings \
             (PEM files expected)",
        )?;
    }
    Ok(builder
        .layer(ObserveLayer)
        .layer(AuthLayer::new(&settings.auth))
        .layer(AdmissionLayer::new(
            limits.max_concurrent_requests,
            limits.load_shedding,
            limits.request_timeout,
        )))
}
