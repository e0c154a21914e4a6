//! `binodal health`: asks the standard gRPC health service whether the phase service is serving.

use tonic_health::pb::HealthCheckRequest;
use tonic_health::pb::health_check_response::ServingStatus;
use tonic_health::pb::health_client::HealthClient;

use crate::commands::connect;
use crate::config::Settings;
use crate::report::{Body, Document, Field};

/// The gRPC name of the service whose health is checked.
pub const PHASE_SERVICE: &str = "binodal.v1.PhaseService";

/// The check's answer and whether it means "serving".
#[derive(Debug)]
pub struct Health {
    /// What to print.
    pub document: Document,
    /// True when the service reported SERVING.
    pub serving: bool,
}

fn status_key(status: ServingStatus) -> &'static str {
    match status {
        ServingStatus::Unknown => "unknown",
        ServingStatus::Serving => "serving",
        ServingStatus::NotServing => "not-serving",
        ServingStatus::ServiceUnknown => "service-unknown",
    }
}

/// Checks the phase service's health.
pub async fn run(settings: &Settings) -> anyhow::Result<Health> {
    let service = connect(settings).await?;
    let mut client = HealthClient::new(service.channel());
    let response = client
        .check(HealthCheckRequest {
            service: PHASE_SERVICE.to_string(),
        })
        .await
        .map_err(|status| service.error(status))?
        .into_inner();
    let status = ServingStatus::try_from(response.status).unwrap_or(ServingStatus::Unknown);
    let serving = status == ServingStatus::Serving;
    let document = Document::new(
        None,
        Body::Record(vec![
            Field::text("server", "server", service.url()),
            Field::text("service", "service", PHASE_SERVICE),
            Field::text("status", "status", status_key(status)),
        ]),
    );
    Ok(Health { document, serving })
}
