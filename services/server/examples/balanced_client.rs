//! An example client that spreads its calls over several binodal replicas and retries the ones a
//! failing replica drops, with exponential backoff and jitter. See `support/resilience.rs` for
//! why per-connection load balancing is not enough for gRPC.
//!
//! It asks for the saturation pressure of ammonia (R-717) across the suction temperatures of the
//! Harrowgate Cold Store's pump NH3-P101, many times over, and reports how many calls succeeded
//! and how many attempts they took:
//!
//! ```text
//! cargo run -p binodal-server --example balanced_client -- \
//!     --servers http://127.0.0.1:50051,http://127.0.0.1:50052,http://127.0.0.1:50053 \
//!     --requests 2000 --concurrency 16
//! ```
//!
//! With tokens on, set `BINODAL_TOKEN` (or `--token-file`). Results are advisory and defer to
//! local codes and licensed practice.

#[path = "support/resilience.rs"]
mod resilience;

use std::path::PathBuf;
use std::sync::Arc;
use std::time::Instant;

use anyhow::Context as _;
use binodal_proto::v1::phase_service_client::PhaseServiceClient;
use binodal_proto::v1::{
    FluidSelector, GetSaturationRequest, fluid_selector::Choice, get_saturation_request::Condition,
};
use clap::Parser;
use tonic::metadata::MetadataValue;

use crate::resilience::{Backoff, balanced_channel, call_with_retry};

/// Spreads saturation calls over binodal replicas, retrying with backoff.
#[derive(Debug, Parser)]
struct Flags {
    /// Replica addresses, comma-separated, e.g. http://127.0.0.1:50051,http://127.0.0.1:50052
    #[arg(long, value_delimiter = ',', required = true)]
    servers: Vec<String>,
    /// Calls to make in all (at most 1 000 000).
    #[arg(long, default_value_t = 200, value_parser = clap::value_parser!(u32).range(1..=1_000_000))]
    requests: u32,
    /// Calls in flight at once (at most 1024).
    #[arg(long, default_value_t = 8, value_parser = clap::value_parser!(u32).range(1..=1024))]
    concurrency: u32,
    /// File holding the bearer token (first line); BINODAL_TOKEN is used otherwise.
    #[arg(long)]
    token_file: Option<PathBuf>,
}

#[tokio::main]
async fn main() -> anyhow::Result<()> {
    let flags = Flags::parse();
    let token = match &flags.token_file {
        Some(path) => Some(
            std::fs::read_to_string(path)
                .with_context(|| format!("cannot read the token file {}", path.display()))?
                .lines()
                .next()
                .unwrap_or_default()
                .trim()
                .to_owned(),
        ),
        None => std::env::var("BINODAL_TOKEN").ok(),
    };
    let authorization = match token.filter(|token| !token.is_empty()) {
        Some(token) => Some(
            MetadataValue::try_from(format!("Bearer {token}"))
                .context("the token is not valid metadata")?,
        ),
        None => None,
    };
    let channel = balanced_channel(&flags.servers).context("bad server address")?;
    let client =
        PhaseServiceClient::with_interceptor(channel, move |mut request: tonic::Request<()>| {
            if let Some(value) = &authorization {
                request
                    .metadata_mut()
                    .insert("authorization", value.clone());
            }
            Ok(request)
        });

    let next = Arc::new(std::sync::atomic::AtomicU32::new(0));
    let started = Instant::now();
    let mut workers = Vec::new();
    for _ in 0..flags.concurrency {
        let (client, next, total) = (client.clone(), Arc::clone(&next), flags.requests);
        workers.push(tokio::spawn(async move {
            let (mut succeeded, mut failed, mut attempts) = (0u32, 0u32, 0u32);
            let backoff = Backoff::default();
            loop {
                let index = next.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
                if index >= total {
                    break;
                }
                // Suction temperatures from -40 to +40 degC.
                let temperature_k = 233.15 + f64::from(index % 81);
                let outcome = call_with_retry(&backoff, || {
                    let mut client = client.clone();
                    async move {
                        client
                            .get_saturation(GetSaturationRequest {
                                fluid: Some(FluidSelector {
                                    choice: Some(Choice::Fluid("R-717".to_owned())),
                                }),
                                condition: Some(Condition::TemperatureK(temperature_k)),
                                ..Default::default()
                            })
                            .await
                    }
                })
                .await;
                attempts += outcome.attempts;
                match outcome.result {
                    Ok(_) => succeeded += 1,
                    Err(status) => {
                        failed += 1;
                        eprintln!("call {index} failed: {status}");
                    }
                }
            }
            (succeeded, failed, attempts)
        }));
    }
    let (mut succeeded, mut failed, mut attempts) = (0, 0, 0);
    for worker in workers {
        let (s, f, a) = worker.await.context("a worker panicked")?;
        succeeded += s;
        failed += f;
        attempts += a;
    }
    let seconds = started.elapsed().as_secs_f64();
    println!(
        "{succeeded} succeeded, {failed} failed, {attempts} attempts, {:.0} calls/s over {} replicas",
        f64::from(succeeded) / seconds,
        flags.servers.len()
    );
    if failed > 0 {
        anyhow::bail!("{failed} calls failed after retries");
    }
    Ok(())
}
