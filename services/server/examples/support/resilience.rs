//! Client-side resilience for binodal: one channel balanced over several replicas, and retries
//! with exponential backoff and jitter for idempotent calls.
//!
//! Every `binodal.v1.PhaseService` call only reads, so it is idempotent: sending it again after a
//! failure cannot do harm. A call is retried when the failure says that the server did not
//! answer it: UNAVAILABLE (the replica was unreachable, shut down, went away mid-call, or shed
//! the load), and UNKNOWN or CANCELLED raised by this client's own transport (a connection reset
//! or closed by a replica that died while the call was on it).
//! Answers the server gave on purpose (INVALID_ARGUMENT, NOT_FOUND, ...) are never retried.
//!
//! gRPC keeps one long-lived HTTP/2 connection per server, so a load balancer that balances
//! connections sends all of one client's calls to one replica. [`balanced_channel`] instead opens
//! a connection to every replica and spreads the calls (power of two choices), so losing a
//! replica costs at most the calls that were on it, and those are retried on the others.
//!
//! This file is shared by the example client (`examples/balanced_client.rs`) and the server's
//! fault tests, so the tests prove the code that integrators are shown.

use std::future::Future;
use std::time::Duration;

use tonic::transport::{Channel, Endpoint};
use tonic::{Code, Status};

/// How often and how long to wait between attempts.
#[derive(Debug, Clone, Copy)]
pub struct Backoff {
    /// Largest wait before the first retry; it doubles with each retry.
    pub first: Duration,
    /// Largest wait between two attempts.
    pub max: Duration,
    /// Attempts in all, the first included.
    pub attempts: u32,
}

impl Default for Backoff {
    /// Up to 6 attempts, waiting up to 50, 100, 200, 400 and 800 ms: about 1.5 s at most.
    fn default() -> Self {
        Backoff {
            first: Duration::from_millis(50),
            max: Duration::from_secs(1),
            attempts: 6,
        }
    }
}

impl Backoff {
    /// The wait before retry number `retry` (1 for the first retry): a random time up to the
    /// exponential bound ("full jitter"), so that clients that failed together do not come back
    /// together.
    pub fn wait(&self, retry: u32) -> Duration {
        let bound = self
            .first
            .saturating_mul(1 << retry.saturating_sub(1).min(16))
            .min(self.max);
        bound.mul_f64(random_fraction())
    }
}

/// A number in [0, 1) from the standard library's random hasher keys (no extra dependency).
fn random_fraction() -> f64 {
    use std::hash::{BuildHasher as _, Hasher as _};
    let bits = std::collections::hash_map::RandomState::new()
        .build_hasher()
        .finish();
    (bits >> 11) as f64 / (1u64 << 53) as f64
}

/// Whether a failed idempotent call may be sent again.
pub fn is_retryable(status: &Status) -> bool {
    match status.code() {
        Code::Unavailable => true,
        // A connection that broke mid-call (a replica killed) surfaces as UNKNOWN (reset) or
        // CANCELLED (closed) with the client's transport error as its source; the same codes
        // sent by a server arrive as trailers and carry no source.
        Code::Unknown | Code::Cancelled => std::error::Error::source(status).is_some(),
        _ => false,
    }
}

/// Retries allowed, beyond `Backoff::attempts`, for calls refused at connect (see
/// [`call_with_retry`]).
pub const REFUSED_RETRIES: u32 = 20;

/// Whether the call never left this client: the connection to the replica the balancer chose
/// was refused (a replica that is down). Such a call is safe to send again, even if it were not
/// idempotent.
pub fn refused_at_connect(status: &Status) -> bool {
    let mut source = std::error::Error::source(status);
    while let Some(error) = source {
        if error
            .downcast_ref::<std::io::Error>()
            .is_some_and(|io| io.kind() == std::io::ErrorKind::ConnectionRefused)
        {
            return true;
        }
        source = error.source();
    }
    false
}

/// What a call with retries came to.
#[derive(Debug)]
pub struct Outcome<T> {
    /// The answer, or the last failure.
    pub result: Result<T, Status>,
    /// Attempts made, the first included.
    pub attempts: u32,
}

/// Runs `call` until it succeeds, fails in a way that is not retryable, or `backoff.attempts`
/// attempts have been made. Use only for idempotent calls.
///
/// Attempts refused at connect do not count against `backoff.attempts` (up to
/// [`REFUSED_RETRIES`] of them, each after the first, shortest wait): right after a replica
/// dies, the balancer still offers its endpoint until it has failed to reconnect, and a call may
/// be sent there several times in a row before the balancer steers around it.
pub async fn call_with_retry<T, F, Fut>(backoff: &Backoff, mut call: F) -> Outcome<T>
where
    F: FnMut() -> Fut,
    Fut: Future<Output = Result<T, Status>>,
{
    let (mut attempts, mut refused) = (0, 0);
    loop {
        attempts += 1;
        let result = call().await;
        match result {
            Err(status) if refused < REFUSED_RETRIES && refused_at_connect(&status) => {
                refused += 1;
                tokio::time::sleep(backoff.wait(1)).await;
            }
            Err(status) if attempts - refused < backoff.attempts && is_retryable(&status) => {
                tokio::time::sleep(backoff.wait(attempts - refused)).await;
            }
            result => return Outcome { result, attempts },
        }
    }
}

/// One channel over every replica in `urls` (`http://host:port` or `https://...`), balancing
/// calls across the replicas that are up. Connections open lazily and are re-opened when lost.
pub fn balanced_channel(urls: &[String]) -> Result<Channel, tonic::transport::Error> {
    let endpoints = urls
        .iter()
        .map(|url| {
            Ok(Endpoint::from_shared(url.clone())?
                .connect_timeout(Duration::from_secs(2))
                .tcp_nodelay(true))
        })
        .collect::<Result<Vec<_>, tonic::transport::Error>>()?;
    Ok(Channel::balance_list(endpoints.into_iter()))
}
