//! Admission control: how many calls the server works on at once, what happens to the rest, and
//! how long one may take.
//!
//! At most `limits.max_concurrent_requests` calls run at once across all connections. A call
//! arriving when every slot is taken is either refused at once with UNAVAILABLE
//! (`limits.load_shedding = true`, the default: a client retries with backoff, or another
//! replica takes it) or waits for a free slot until the request timeout
//! (`limits.load_shedding = false`). A slot is held until the call's answer is ready; a stream
//! holds it until its first message, so long-lived streams do not starve unary calls (streams
//! are bounded per connection by `limits.max_concurrent_streams`).
//!
//! A call that takes longer than `limits.request_timeout_ms` (waiting for a slot included) is
//! answered DEADLINE_EXCEEDED, naming the setting. A shorter deadline the client sends itself, in
//! the `grpc-timeout` metadata, is answered the same way, naming the client's deadline: the gRPC
//! status codes (doc/statuscodes.md of the gRPC project) give DEADLINE_EXCEEDED for a deadline
//! that expires before the server returns a status. tonic's transport also enforces that header,
//! around this layer, but answers CANCELLED ("Timeout expired"); this layer's timer is therefore
//! set [`TIMER_RESOLUTION`] short of the client's deadline, so that it fires first. (A tonic
//! client runs the same timer on its side and may still report its own CANCELLED first.)
//!
//! Health checks are exempt from both: a busy server must still answer its probes, or an
//! orchestrator would restart a replica that is merely working hard; and a health watch is a
//! long-lived stream.

use std::future::Future;
use std::pin::Pin;
use std::sync::Arc;
use std::task::{Context, Poll};
use std::time::Duration;

use tokio::sync::Semaphore;
use tonic::Status;
use tonic::body::Body;

use crate::security::HEALTH_PATH_PREFIX;

/// The admission limit, as a layer in front of every service.
#[derive(Debug, Clone)]
pub(crate) struct AdmissionLayer {
    slots: Arc<Semaphore>,
    limit: usize,
    shed: bool,
    timeout: Duration,
}

impl AdmissionLayer {
    /// At most `limit` calls at once; `shed` refuses the rest instead of queueing them; each call
    /// may take up to `timeout`.
    pub(crate) fn new(limit: usize, shed: bool, timeout: Duration) -> AdmissionLayer {
        AdmissionLayer {
            slots: Arc::new(Semaphore::new(limit)),
            limit,
            shed,
            timeout,
        }
    }
}

/// Granularity of tokio's timers: a deadline fires in the millisecond tick at or after it
/// (tokio documentation of `tokio::time::Sleep`: "operates at millisecond granularity").
const TIMER_RESOLUTION: Duration = Duration::from_millis(1);

/// Whose limit ended a call.
#[derive(Debug, Clone, Copy)]
enum TimeLimit {
    /// The server's `limits.request_timeout_ms`.
    Server(Duration),
    /// The deadline the client sent in `grpc-timeout`.
    Client(Duration),
}

impl TimeLimit {
    /// The shorter of the server's limit and the client's deadline in `headers`, and the
    /// instant at which this layer gives up: for a client deadline, [`TIMER_RESOLUTION`] early,
    /// so that tonic's own timer for the same header (started just before, answering CANCELLED)
    /// never fires first.
    fn for_call(headers: &http::HeaderMap, server: Duration) -> (TimeLimit, tokio::time::Instant) {
        let now = tokio::time::Instant::now();
        match client_timeout(headers) {
            Some(client) if client < server => (
                TimeLimit::Client(client),
                now + client.saturating_sub(TIMER_RESOLUTION),
            ),
            _ => (TimeLimit::Server(server), now + server),
        }
    }

    /// The answer to a call that ran out of time.
    fn exceeded(self) -> http::Response<Body> {
        let message = match self {
            TimeLimit::Server(timeout) => format!(
                "the call took longer than the server's limit of {} ms (limits.request_timeout_ms)",
                timeout.as_millis()
            ),
            TimeLimit::Client(deadline) => format!(
                "the call took longer than the deadline of {} ms the client set (grpc-timeout)",
                deadline.as_millis()
            ),
        };
        Status::deadline_exceeded(message).into_http()
    }
}

/// The client's deadline from a `grpc-timeout` header: at most 8 digits and a unit, `H`, `M`,
/// `S`, `m`, `u` or `n` (gRPC over HTTP/2, doc/PROTOCOL-HTTP2.md of the gRPC project). A missing
/// or malformed header sets no deadline, as in tonic.
fn client_timeout(headers: &http::HeaderMap) -> Option<Duration> {
    let value = headers.get("grpc-timeout")?.to_str().ok()?;
    let digits = value.get(..value.len().checked_sub(1)?)?;
    if digits.is_empty() || digits.len() > 8 || !digits.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let amount: u64 = digits.parse().ok()?;
    Some(match value.as_bytes()[value.len() - 1] {
        b'H' => Duration::from_secs(amount * 3600),
        b'M' => Duration::from_secs(amount * 60),
        b'S' => Duration::from_secs(amount),
        b'm' => Duration::from_millis(amount),
        b'u' => Duration::from_micros(amount),
        b'n' => Duration::from_nanos(amount),
        _ => return None,
    })
}

impl<S> tower::Layer<S> for AdmissionLayer {
    type Service = Admitted<S>;

    fn layer(&self, inner: S) -> Admitted<S> {
        Admitted {
            inner,
            layer: self.clone(),
        }
    }
}

/// A service behind the admission limit.
#[derive(Debug, Clone)]
pub(crate) struct Admitted<S> {
    inner: S,
    layer: AdmissionLayer,
}

impl<S> tower::Service<http::Request<Body>> for Admitted<S>
where
    S: tower::Service<http::Request<Body>, Response = http::Response<Body>>
        + Clone
        + Send
        + 'static,
    S::Future: Send + 'static,
    S::Error: Send + 'static,
{
    type Response = http::Response<Body>;
    type Error = S::Error;
    type Future = Pin<Box<dyn Future<Output = Result<Self::Response, Self::Error>> + Send>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), Self::Error>> {
        self.inner.poll_ready(cx)
    }

    fn call(&mut self, request: http::Request<Body>) -> Self::Future {
        if request.uri().path().starts_with(HEALTH_PATH_PREFIX) {
            return Box::pin(self.inner.call(request));
        }
        let slots = Arc::clone(&self.layer.slots);
        let (limit, deadline) = TimeLimit::for_call(request.headers(), self.layer.timeout);
        if self.layer.shed {
            let Ok(slot) = slots.try_acquire_owned() else {
                crate::metrics::record_shed();
                let status = Status::unavailable(format!(
                    "server busy: {} calls in progress, the limit \
                     (limits.max_concurrent_requests); retry with backoff",
                    self.layer.limit
                ));
                return Box::pin(std::future::ready(Ok(status.into_http())));
            };
            let answer = self.inner.call(request);
            return Box::pin(async move {
                let response = tokio::time::timeout_at(deadline, answer).await;
                drop(slot);
                response.unwrap_or_else(|_| Ok(limit.exceeded()))
            });
        }
        // Queue for a slot; the wait counts against the timeout.
        let inner = self.inner.clone();
        let mut inner = std::mem::replace(&mut self.inner, inner);
        Box::pin(async move {
            let admitted = tokio::time::timeout_at(deadline, async move {
                let Ok(slot) = slots.acquire_owned().await else {
                    return Ok(Status::unavailable("server is shutting down").into_http());
                };
                let response = inner.call(request).await;
                drop(slot);
                response
            });
            admitted.await.unwrap_or_else(|_| Ok(limit.exceeded()))
        })
    }
}

/// Longest status message sent, in characters; longer ones are cut. Error messages can quote
/// what a caller sent (an unknown fluid name, say), and a status travels in HTTP/2 headers, which
/// clients cap (16 KiB by default in the common Rust and Go clients): an unbounded message would
/// break the connection instead of reporting the error.
const MAX_STATUS_MESSAGE_CHARS: usize = 512;
/// A `grpc-message` header longer than this (percent-encoded) is shortened.
const MAX_STATUS_MESSAGE_HEADER_BYTES: usize = 2048;
/// A `grpc-status-details-bin` header longer than this is dropped, and the message says so.
const MAX_STATUS_DETAILS_HEADER_BYTES: usize = 4096;

/// Shortens the status in `headers` (an answer's headers or trailers) to sizes every client
/// accepts. Statuses of ordinary size are left exactly as they are.
pub(crate) fn bound_status(headers: &mut http::HeaderMap) {
    let long_message = headers
        .get("grpc-message")
        .is_some_and(|value| value.len() > MAX_STATUS_MESSAGE_HEADER_BYTES);
    let large_details = headers
        .get("grpc-status-details-bin")
        .is_some_and(|value| value.len() > MAX_STATUS_DETAILS_HEADER_BYTES);
    if !long_message && !large_details {
        return;
    }
    let Some(status) = Status::from_header_map(headers) else {
        return;
    };
    let mut message: String = status
        .message()
        .chars()
        .take(MAX_STATUS_MESSAGE_CHARS)
        .collect();
    let omitted = status
        .message()
        .chars()
        .count()
        .saturating_sub(MAX_STATUS_MESSAGE_CHARS);
    if omitted > 0 {
        message.push_str(&format!("... ({omitted} more characters omitted)"));
    }
    if large_details {
        headers.remove("grpc-status-details-bin");
        message.push_str(" (error details omitted: too large)");
    }
    headers.remove("grpc-message");
    if Status::new(status.code(), message)
        .add_header(headers)
        .is_err()
    {
        headers.remove("grpc-message");
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `grpc-timeout` values as gRPC over HTTP/2 defines them (doc/PROTOCOL-HTTP2.md of the gRPC
    /// project: at most 8 digits, then one of H M S m u n); anything else sets no deadline.
    #[test]
    fn client_deadlines_are_read_from_grpc_timeout() {
        let read = |value: &str| {
            let mut headers = http::HeaderMap::new();
            headers.insert("grpc-timeout", value.parse().expect("header value"));
            client_timeout(&headers)
        };
        assert_eq!(read("20m"), Some(Duration::from_millis(20)));
        assert_eq!(read("2H"), Some(Duration::from_secs(7200)));
        assert_eq!(read("3M"), Some(Duration::from_secs(180)));
        assert_eq!(read("1S"), Some(Duration::from_secs(1)));
        assert_eq!(read("20000u"), Some(Duration::from_millis(20)));
        assert_eq!(read("99999999n"), Some(Duration::from_nanos(99_999_999)));
        for malformed in ["", "m", "20", "123456789m", "-5m", "5 m", "5x", "1.5S"] {
            assert_eq!(read(malformed), None, "{malformed:?}");
        }
        assert_eq!(client_timeout(&http::HeaderMap::new()), None);
    }

    #[test]
    fn long_status_messages_are_cut_and_short_ones_kept() {
        let long_name = "R-".repeat(20_000);
        let mut headers = http::HeaderMap::new();
        Status::not_found(format!("no fluid is named {long_name}"))
            .add_header(&mut headers)
            .expect("status headers");
        bound_status(&mut headers);
        let bounded = Status::from_header_map(&headers).expect("a status");
        assert_eq!(bounded.code(), tonic::Code::NotFound);
        assert!(bounded.message().starts_with("no fluid is named R-R-"));
        assert!(bounded.message().contains("more characters omitted"));
        assert!(headers["grpc-message"].len() <= MAX_STATUS_MESSAGE_HEADER_BYTES);

        let mut headers = http::HeaderMap::new();
        let short = Status::invalid_argument("temperature_k: NaN is not a finite number");
        short.add_header(&mut headers).expect("status headers");
        let before = headers.clone();
        bound_status(&mut headers);
        assert_eq!(headers, before);
    }
}
