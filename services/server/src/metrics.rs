//! What the server is doing, for operators: Prometheus metrics on a port of their own, and a
//! request id on every call.
//!
//! # Metrics
//!
//! With `metrics.enabled = true` the server answers `GET /metrics` on `metrics.listen_address`
//! (default `127.0.0.1:9464`, separate from the gRPC port, so it can stay inside the host or the
//! cluster while gRPC is exposed). The series:
//!
//! | name | type | labels | meaning |
//! |---|---|---|---|
//! | `binodal_requests_total` | counter | `method`, `code` | finished gRPC calls |
//! | `binodal_request_duration_seconds` | histogram | `method`, `code` | time from request to the end of the answer |
//! | `binodal_active_streams` | gauge | | gRPC calls (HTTP/2 streams) open now, streams included |
//! | `binodal_requests_shed_total` | counter | | calls refused because every slot was taken |
//! | `binodal_solver_failures_total` | counter | | solves that did not converge: INTERNAL answers of the phase service, batch points with NOT_CONVERGED, and alarm readings with CALCULATION_FAILED |
//! | `binodal_computations_total` | counter | `path` | answers by how they were computed: `full_solve` or `precomputed_curve` (saturation-curve hits) |
//! | `binodal_alarm_events_total` | counter | `kind`, `priority` | alarm events sent (watch streams and evaluations) |
//! | `binodal_process_resident_memory_bytes` | gauge | | resident memory, read from `/proc` at each scrape |
//! | `binodal_build_info` | gauge | `version` | always 1 |
//!
//! `method` is the gRPC path (`/binodal.v1.PhaseService/GetState`) for methods the server
//! offers and `unknown` for anything else, so callers cannot grow the label set; `code` is the
//! gRPC status name (`OK`, `INVALID_ARGUMENT`, ...).
//!
//! # Request ids
//!
//! Every call gets an id: the caller's own `x-request-id` metadata when it is 1 to 64 characters
//! of letters, digits and `-_.:`, otherwise a new one (a random per-process prefix and a counter).
//! The id is echoed in the answer's `x-request-id` metadata, recorded on the `rpc` log span, and
//! written on the log line of every call that fails on the server's side, so an operator can match
//! a client's complaint to the server's log.

use std::collections::HashSet;
use std::collections::hash_map::RandomState;
use std::convert::Infallible;
use std::future::Future;
use std::hash::{BuildHasher as _, Hasher as _};
use std::net::SocketAddr;
use std::pin::Pin;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{LazyLock, OnceLock};
use std::task::{Context, Poll};
use std::time::{Duration, Instant};

use anyhow::Context as _;
use bytes::Bytes;
use http_body::Frame;
use http_body_util::Full;
use metrics_exporter_prometheus::{Matcher, PrometheusBuilder, PrometheusHandle};
use prost::Message as _;
use serde::{Deserialize, Serialize};
use tonic::Code;
use tonic::body::Body;

use binodal_proto::v1 as pb;
use binodal_proto::v1::alarm_service_server::AlarmService;
use binodal_proto::v1::phase_service_server::PhaseService;

use crate::settings::SettingsError;

/// Metadata key of the request id.
pub const REQUEST_ID_HEADER: &str = "x-request-id";
/// Longest request id taken from a caller.
const MAX_REQUEST_ID_LENGTH: usize = 64;
/// Upper bounds of the latency histogram's buckets, in seconds: from half a millisecond (a
/// single state) to ten seconds (the default request timeout).
const LATENCY_BUCKETS: [f64; 14] = [
    0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1.0, 2.5, 5.0, 10.0,
];
/// Longest time a scraper may take to send its request headers.
const SCRAPE_HEADER_TIMEOUT: Duration = Duration::from_secs(10);

/// Metrics endpoint settings (`[metrics]` section).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct MetricsSettings {
    /// Whether the metrics endpoint is served (`metrics.enabled`).
    pub enabled: bool,
    /// Address of the metrics endpoint (`metrics.listen_address`); port 0 picks a free port.
    pub listen_address: SocketAddr,
}

impl Default for MetricsSettings {
    fn default() -> Self {
        MetricsSettings {
            enabled: false,
            listen_address: SocketAddr::from(([127, 0, 0, 1], 9464)),
        }
    }
}

/// The `[metrics]` section as read.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawMetrics {
    enabled: bool,
    listen_address: String,
}

impl MetricsSettings {
    /// These settings in the shape they are read in.
    pub(crate) fn raw(&self) -> RawMetrics {
        RawMetrics {
            enabled: self.enabled,
            listen_address: self.listen_address.to_string(),
        }
    }

    /// Checks the address.
    pub(crate) fn validate(raw: RawMetrics) -> Result<MetricsSettings, SettingsError> {
        let listen_address = raw.listen_address.trim().parse().map_err(|_| {
            SettingsError::invalid(
                "metrics.listen_address",
                &raw.listen_address,
                "an IP address and port such as 127.0.0.1:9464 or 0.0.0.0:9464",
            )
        })?;
        Ok(MetricsSettings {
            enabled: raw.enabled,
            listen_address,
        })
    }
}

/// The process's Prometheus recorder, installed on first use.
static RECORDER: OnceLock<PrometheusHandle> = OnceLock::new();

/// Installs the Prometheus recorder for this process (once) and returns its handle. Until it is
/// installed, recording a metric does nothing and costs next to nothing.
fn recorder() -> anyhow::Result<PrometheusHandle> {
    if let Some(handle) = RECORDER.get() {
        return Ok(handle.clone());
    }
    let recorder = PrometheusBuilder::new()
        .set_buckets_for_metric(
            Matcher::Full("binodal_request_duration_seconds".to_owned()),
            &LATENCY_BUCKETS,
        )
        .context("cannot set the latency buckets")?
        .build_recorder();
    let handle = recorder.handle();
    let installed = RECORDER.get_or_init(|| {
        if metrics::set_global_recorder(recorder).is_err() {
            tracing::warn!("another metrics recorder is installed: /metrics will stay empty");
        }
        handle
    });
    describe();
    metrics::gauge!("binodal_build_info", "version" => env!("CARGO_PKG_VERSION")).set(1.0);
    Ok(installed.clone())
}

/// Help texts of the series.
fn describe() {
    metrics::describe_counter!("binodal_requests_total", "Finished gRPC calls.");
    metrics::describe_histogram!(
        "binodal_request_duration_seconds",
        metrics::Unit::Seconds,
        "Time from a gRPC request to the end of its answer."
    );
    metrics::describe_gauge!(
        "binodal_active_streams",
        "gRPC calls (HTTP/2 streams) open now, streaming calls included."
    );
    metrics::describe_counter!(
        "binodal_requests_shed_total",
        "Calls refused with UNAVAILABLE because every admission slot was taken."
    );
    metrics::describe_counter!(
        "binodal_solver_failures_total",
        "Equation-of-state solves that did not converge (single calls and batch points)."
    );
    metrics::describe_counter!(
        "binodal_computations_total",
        "Answers by computation path: full_solve, or precomputed_curve (saturation-curve hits)."
    );
    metrics::describe_counter!(
        "binodal_alarm_events_total",
        "Alarm events sent to watchers, by event kind and priority."
    );
    metrics::describe_gauge!(
        "binodal_process_resident_memory_bytes",
        metrics::Unit::Bytes,
        "Resident memory of the server process, read at each scrape."
    );
}

/// The metrics endpoint while it runs; dropping it stops the endpoint.
#[derive(Debug)]
pub(crate) struct MetricsEndpoint {
    /// Where the endpoint listens.
    pub(crate) address: SocketAddr,
    task: tokio::task::JoinHandle<()>,
}

impl Drop for MetricsEndpoint {
    fn drop(&mut self) {
        self.task.abort();
    }
}

/// Starts the metrics endpoint when the settings enable it.
pub(crate) async fn start(settings: &MetricsSettings) -> anyhow::Result<Option<MetricsEndpoint>> {
    if !settings.enabled {
        return Ok(None);
    }
    let handle = recorder()?;
    let listener = tokio::net::TcpListener::bind(settings.listen_address)
        .await
        .with_context(|| {
            format!(
                "cannot listen on {} (setting `metrics.listen_address`)",
                settings.listen_address
            )
        })?;
    let address = listener
        .local_addr()
        .context("cannot read the metrics listener's address")?;
    let task = tokio::spawn(serve_scrapes(listener, handle));
    tracing::info!(%address, "metrics endpoint listening at /metrics");
    Ok(Some(MetricsEndpoint { address, task }))
}

/// Answers HTTP/1.1 scrapes until aborted.
async fn serve_scrapes(listener: tokio::net::TcpListener, handle: PrometheusHandle) {
    loop {
        let stream = match listener.accept().await {
            Ok((stream, _)) => stream,
            Err(error) => {
                tracing::warn!(%error, "metrics endpoint cannot accept a connection");
                tokio::time::sleep(Duration::from_millis(100)).await;
                continue;
            }
        };
        let handle = handle.clone();
        tokio::spawn(async move {
            let service = hyper::service::service_fn(move |request| {
                let answer = scrape(&handle, &request);
                async move { Ok::<_, Infallible>(answer) }
            });
            let connection = hyper::server::conn::http1::Builder::new()
                .timer(hyper_util::rt::TokioTimer::new())
                .header_read_timeout(SCRAPE_HEADER_TIMEOUT)
                .serve_connection(hyper_util::rt::TokioIo::new(stream), service);
            if let Err(error) = connection.await {
                tracing::debug!(%error, "metrics scrape connection ended with an error");
            }
        });
    }
}

/// The answer to one HTTP request on the metrics port.
fn scrape<B>(handle: &PrometheusHandle, request: &http::Request<B>) -> http::Response<Full<Bytes>> {
    let reply = |status: http::StatusCode, content_type: &'static str, body: String| {
        let mut response = http::Response::new(Full::new(Bytes::from(body)));
        *response.status_mut() = status;
        response.headers_mut().insert(
            http::header::CONTENT_TYPE,
            http::HeaderValue::from_static(content_type),
        );
        response
    };
    if request.uri().path() != "/metrics" {
        return reply(
            http::StatusCode::NOT_FOUND,
            "text/plain; charset=utf-8",
            "binodal metrics are at /metrics\n".to_owned(),
        );
    }
    if request.method() != http::Method::GET && request.method() != http::Method::HEAD {
        return reply(
            http::StatusCode::METHOD_NOT_ALLOWED,
            "text/plain; charset=utf-8",
            "use GET\n".to_owned(),
        );
    }
    if let Some(bytes) = resident_memory_bytes() {
        metrics::gauge!("binodal_process_resident_memory_bytes").set(bytes as f64);
    }
    handle.run_upkeep();
    reply(
        http::StatusCode::OK,
        "text/plain; version=0.0.4; charset=utf-8",
        handle.render(),
    )
}

/// Resident memory of this process from `/proc/self/status` (Linux), in bytes.
pub fn resident_memory_bytes() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    parse_resident_kib(&status).map(|kib| kib * 1024)
}

/// The `VmRSS` line of a `/proc/<pid>/status` text, in KiB.
pub fn parse_resident_kib(status: &str) -> Option<u64> {
    status
        .lines()
        .find_map(|line| line.strip_prefix("VmRSS:"))
        .and_then(|rest| rest.trim().trim_end_matches("kB").trim().parse().ok())
}

/// Counts a call refused by load shedding.
pub(crate) fn record_shed() {
    metrics::counter!("binodal_requests_shed_total").increment(1);
}

/// Counts a solve that did not converge.
fn record_solver_failure() {
    metrics::counter!("binodal_solver_failures_total").increment(1);
}

/// Counts answers by computation path (`binodal.v1.ComputationPath` values); unspecified paths
/// (points that failed) are not counted.
fn record_paths(paths: &[i32]) {
    let (mut full, mut curve) = (0u64, 0u64);
    for &path in paths {
        match pb::ComputationPath::try_from(path) {
            Ok(pb::ComputationPath::FullSolve) => full += 1,
            Ok(pb::ComputationPath::PrecomputedCurve) => curve += 1,
            _ => {}
        }
    }
    if full > 0 {
        metrics::counter!("binodal_computations_total", "path" => "full_solve").increment(full);
    }
    if curve > 0 {
        metrics::counter!("binodal_computations_total", "path" => "precomputed_curve")
            .increment(curve);
    }
}

/// Counts one alarm event sent to a watcher, by its kind and priority (the lower-case names of
/// `binodal.v1.AlarmEventKind` and `binodal.v1.AlarmPriority`, e.g. `raised` and `high`).
pub fn record_alarm_event(kind: &'static str, priority: &'static str) {
    metrics::counter!("binodal_alarm_events_total", "kind" => kind, "priority" => priority)
        .increment(1);
}

/// The phase service with its answers counted: computation paths (full solves against
/// saturation-curve hits) and solver failures. Delegates every call unchanged.
#[derive(Debug, Clone)]
pub(crate) struct Metered<T>(pub(crate) T);

/// Counts a single answer's computation path, or a solver failure: the service answers
/// INTERNAL only when a solver did not converge or a batch worker failed (see `status.rs`).
fn count_answer<T>(answer: &Result<tonic::Response<T>, tonic::Status>, path: impl Fn(&T) -> i32) {
    match answer {
        Ok(response) => record_paths(&[path(response.get_ref())]),
        Err(status) if status.code() == Code::Internal => record_solver_failure(),
        Err(_) => {}
    }
}

#[tonic::async_trait]
impl<T: PhaseService> PhaseService for Metered<T> {
    async fn list_fluids(
        &self,
        request: tonic::Request<pb::ListFluidsRequest>,
    ) -> Result<tonic::Response<pb::ListFluidsResponse>, tonic::Status> {
        self.0.list_fluids(request).await
    }

    async fn describe_fluid(
        &self,
        request: tonic::Request<pb::DescribeFluidRequest>,
    ) -> Result<tonic::Response<pb::DescribeFluidResponse>, tonic::Status> {
        self.0.describe_fluid(request).await
    }

    async fn get_saturation(
        &self,
        request: tonic::Request<pb::GetSaturationRequest>,
    ) -> Result<tonic::Response<pb::GetSaturationResponse>, tonic::Status> {
        let answer = self.0.get_saturation(request).await;
        count_answer(&answer, |response| response.path);
        answer
    }

    async fn get_state(
        &self,
        request: tonic::Request<pb::GetStateRequest>,
    ) -> Result<tonic::Response<pb::GetStateResponse>, tonic::Status> {
        let answer = self.0.get_state(request).await;
        count_answer(&answer, |response| response.path);
        answer
    }

    async fn get_state_batch(
        &self,
        request: tonic::Request<pb::GetStateBatchRequest>,
    ) -> Result<tonic::Response<pb::GetStateBatchResponse>, tonic::Status> {
        let answer = self.0.get_state_batch(request).await;
        match &answer {
            Ok(response) => {
                let batch = response.get_ref();
                record_paths(&batch.paths);
                let not_converged = batch
                    .errors
                    .iter()
                    .filter(|error| error.code == pb::PointErrorCode::NotConverged as i32)
                    .count();
                if not_converged > 0 {
                    metrics::counter!("binodal_solver_failures_total")
                        .increment(not_converged as u64);
                }
            }
            Err(status) if status.code() == Code::Internal => record_solver_failure(),
            Err(_) => {}
        }
        answer
    }
}

/// The `kind` label of an alarm event kind (`binodal.v1.AlarmEventKind`).
fn alarm_kind_label(kind: i32) -> &'static str {
    match pb::AlarmEventKind::try_from(kind) {
        Ok(pb::AlarmEventKind::Raised) => "raised",
        Ok(pb::AlarmEventKind::Cleared) => "cleared",
        Ok(pb::AlarmEventKind::Quality) => "quality",
        Ok(pb::AlarmEventKind::TagStale) => "tag_stale",
        Ok(pb::AlarmEventKind::TagResumed) => "tag_resumed",
        Ok(pb::AlarmEventKind::RuleUndefined) => "rule_undefined",
        Ok(pb::AlarmEventKind::Notice) => "notice",
        _ => "unspecified",
    }
}

/// The `priority` label of an alarm priority (`binodal.v1.AlarmPriority`).
fn alarm_priority_label(priority: i32) -> &'static str {
    match pb::AlarmPriority::try_from(priority) {
        Ok(pb::AlarmPriority::Low) => "low",
        Ok(pb::AlarmPriority::Medium) => "medium",
        Ok(pb::AlarmPriority::High) => "high",
        _ => "none",
    }
}

/// Counts the alarm events of one answer: those of the answer as a whole and those of each
/// reading's outcome. A reading whose calculation failed (quality issue CALCULATION_FAILED) also
/// counts as a solver failure.
fn count_alarm_events(events: &[pb::AlarmEvent], outcomes: &[pb::ReadingOutcome]) {
    let per_reading = outcomes.iter().flat_map(|outcome| &outcome.events);
    for event in events.iter().chain(per_reading) {
        record_alarm_event(
            alarm_kind_label(event.kind),
            alarm_priority_label(event.priority),
        );
        if event.quality_issue == pb::QualityIssue::CalculationFailed as i32 {
            record_solver_failure();
        }
    }
}

/// The alarm service with the events it sends counted. Delegates every call unchanged.
#[derive(Debug, Clone)]
pub(crate) struct MeteredAlarms<T>(pub(crate) T);

/// The answer stream of a watched alarm service.
type AlarmStream =
    Pin<Box<dyn tokio_stream::Stream<Item = Result<pb::WatchResponse, tonic::Status>> + Send>>;

#[tonic::async_trait]
impl<T: AlarmService> AlarmService for MeteredAlarms<T> {
    type WatchReadingsStream = AlarmStream;

    async fn watch_readings(
        &self,
        request: tonic::Request<tonic::Streaming<pb::WatchRequest>>,
    ) -> Result<tonic::Response<AlarmStream>, tonic::Status> {
        use tokio_stream::StreamExt as _;
        let answer = self.0.watch_readings(request).await?;
        Ok(answer.map(|stream| {
            let counted = stream.map(|item| {
                if let Ok(response) = &item {
                    count_alarm_events(&response.events, &response.outcomes);
                }
                item
            });
            Box::pin(counted) as AlarmStream
        }))
    }

    async fn evaluate_readings(
        &self,
        request: tonic::Request<pb::EvaluateReadingsRequest>,
    ) -> Result<tonic::Response<pb::EvaluateReadingsResponse>, tonic::Status> {
        let answer = self.0.evaluate_readings(request).await;
        if let Ok(response) = &answer {
            let response = response.get_ref();
            count_alarm_events(&response.events, &response.outcomes);
        }
        answer
    }
}

/// The gRPC paths of every method the server can offer: the label values of `method`.
static KNOWN_METHODS: LazyLock<HashSet<String>> = LazyLock::new(|| {
    let mut methods = HashSet::new();
    for encoded in [
        binodal_proto::FILE_DESCRIPTOR_SET,
        tonic_health::pb::FILE_DESCRIPTOR_SET,
        tonic_reflection::pb::v1::FILE_DESCRIPTOR_SET,
    ] {
        let Ok(set) = prost_types::FileDescriptorSet::decode(encoded) else {
            continue;
        };
        for file in &set.file {
            for service in &file.service {
                for method in &service.method {
                    methods.insert(format!(
                        "/{}.{}/{}",
                        file.package(),
                        service.name(),
                        method.name()
                    ));
                }
            }
        }
    }
    methods
});

/// The `method` label for a request path.
fn method_label(path: &str) -> &'static str {
    KNOWN_METHODS
        .get(path)
        .map_or("unknown", |known| known.as_str())
}

/// The upper-case name of a gRPC status code, as in the gRPC specification.
pub fn code_name(code: Code) -> &'static str {
    match code {
        Code::Ok => "OK",
        Code::Cancelled => "CANCELLED",
        Code::Unknown => "UNKNOWN",
        Code::InvalidArgument => "INVALID_ARGUMENT",
        Code::DeadlineExceeded => "DEADLINE_EXCEEDED",
        Code::NotFound => "NOT_FOUND",
        Code::AlreadyExists => "ALREADY_EXISTS",
        Code::PermissionDenied => "PERMISSION_DENIED",
        Code::ResourceExhausted => "RESOURCE_EXHAUSTED",
        Code::FailedPrecondition => "FAILED_PRECONDITION",
        Code::Aborted => "ABORTED",
        Code::OutOfRange => "OUT_OF_RANGE",
        Code::Unimplemented => "UNIMPLEMENTED",
        Code::Internal => "INTERNAL",
        Code::Unavailable => "UNAVAILABLE",
        Code::DataLoss => "DATA_LOSS",
        Code::Unauthenticated => "UNAUTHENTICATED",
    }
}

/// Per-process prefix of generated request ids, so that ids from replicas do not collide.
static REQUEST_ID_PREFIX: LazyLock<String> = LazyLock::new(|| {
    let random = RandomState::new().build_hasher().finish();
    format!("{:08x}", random as u32)
});
/// Counter of generated request ids.
static NEXT_REQUEST_ID: AtomicU64 = AtomicU64::new(1);

/// The caller's request id when it is usable, otherwise a new one.
fn request_id(headers: &http::HeaderMap) -> String {
    let given = headers
        .get(REQUEST_ID_HEADER)
        .and_then(|value| value.to_str().ok())
        .filter(|id| {
            (1..=MAX_REQUEST_ID_LENGTH).contains(&id.len())
                && id
                    .bytes()
                    .all(|byte| byte.is_ascii_alphanumeric() || b"-_.:".contains(&byte))
        });
    match given {
        Some(id) => id.to_owned(),
        None => format!(
            "{}-{}",
            *REQUEST_ID_PREFIX,
            NEXT_REQUEST_ID.fetch_add(1, Ordering::Relaxed)
        ),
    }
}

/// Calls open now, as the `binodal_active_streams` gauge shows them.
static ACTIVE_CALLS: AtomicU64 = AtomicU64::new(0);

/// gRPC calls open in this process now (streams included), for log lines.
pub fn active_calls() -> u64 {
    ACTIVE_CALLS.load(Ordering::Relaxed)
}

/// One call being observed, from request to the end of its answer.
#[derive(Debug)]
struct Call {
    method: &'static str,
    request_id: String,
    started: Instant,
}

impl Call {
    fn begin(method: &'static str, request_id: String) -> Call {
        metrics::gauge!("binodal_active_streams").increment(1.0);
        ACTIVE_CALLS.fetch_add(1, Ordering::Relaxed);
        Call {
            method,
            request_id,
            started: Instant::now(),
        }
    }

    /// Records the call's outcome: metrics, and a log line at a level fitting the code.
    fn finish(self, code: Code, message: &str) {
        let elapsed = self.started.elapsed();
        let code_label = code_name(code);
        metrics::gauge!("binodal_active_streams").decrement(1.0);
        ACTIVE_CALLS.fetch_sub(1, Ordering::Relaxed);
        metrics::counter!("binodal_requests_total", "method" => self.method, "code" => code_label)
            .increment(1);
        metrics::histogram!(
            "binodal_request_duration_seconds",
            "method" => self.method,
            "code" => code_label
        )
        .record(elapsed.as_secs_f64());
        let elapsed_ms = elapsed.as_secs_f64() * 1e3;
        let (request_id, method) = (self.request_id.as_str(), self.method);
        match code {
            Code::Internal | Code::Unknown | Code::DataLoss => tracing::error!(
                request_id,
                method,
                code = code_label,
                elapsed_ms,
                detail = message,
                "call failed"
            ),
            Code::Unavailable | Code::ResourceExhausted | Code::DeadlineExceeded => {
                tracing::warn!(
                    request_id,
                    method,
                    code = code_label,
                    elapsed_ms,
                    detail = message,
                    "call not served"
                )
            }
            Code::Unauthenticated | Code::PermissionDenied => tracing::info!(
                request_id,
                method,
                code = code_label,
                detail = message,
                "call refused"
            ),
            _ => tracing::debug!(
                request_id,
                method,
                code = code_label,
                elapsed_ms,
                "call finished"
            ),
        }
    }
}

/// A call not finished yet; if dropped unfinished (the caller went away, or the request timeout
/// struck), it is recorded as CANCELLED, the code the client sees.
#[derive(Debug)]
struct Pending(Option<Call>);

impl Pending {
    fn take(&mut self) -> Option<Call> {
        self.0.take()
    }
}

impl Drop for Pending {
    fn drop(&mut self) {
        if let Some(call) = self.0.take() {
            call.finish(Code::Cancelled, "ended before its answer was complete");
        }
    }
}

/// The gRPC status in a header map, if any.
fn status_in(headers: &http::HeaderMap) -> Option<(Code, String)> {
    headers.get("grpc-status")?;
    tonic::Status::from_header_map(headers)
        .map(|status| (status.code(), status.message().to_owned()))
}

/// An answer's body, watched for the trailers that carry the call's status, its data handed
/// on in pieces where that saves a write (`crate::framing`).
struct ObservedBody {
    inner: crate::framing::Pieced,
    pending: Pending,
}

impl http_body::Body for ObservedBody {
    type Data = Bytes;
    type Error = tonic::Status;

    fn poll_frame(
        mut self: Pin<&mut Self>,
        cx: &mut Context<'_>,
    ) -> Poll<Option<Result<Frame<Bytes>, Self::Error>>> {
        let mut polled = Pin::new(&mut self.inner).poll_frame(cx);
        if let Poll::Ready(Some(Ok(frame))) = &mut polled
            && let Some(trailers) = frame.trailers_mut()
        {
            crate::limits::bound_status(trailers);
        }
        match &polled {
            Poll::Ready(Some(Ok(frame))) => {
                if let Some((code, message)) = frame.trailers_ref().and_then(status_in)
                    && let Some(call) = self.pending.take()
                {
                    call.finish(code, &message);
                }
            }
            Poll::Ready(Some(Err(status))) => {
                if let Some(call) = self.pending.take() {
                    call.finish(status.code(), status.message());
                }
            }
            Poll::Ready(None) => {
                if let Some(call) = self.pending.take() {
                    call.finish(Code::Unknown, "the answer ended without a gRPC status");
                }
            }
            Poll::Pending => {}
        }
        polled
    }

    fn is_end_stream(&self) -> bool {
        self.inner.is_end_stream()
    }

    fn size_hint(&self) -> http_body::SizeHint {
        self.inner.size_hint()
    }
}

/// Request ids, metrics and failure logs for every call, as the outermost layer. It also keeps
/// every status it passes to sizes clients accept ([`crate::limits::bound_status`]).
#[derive(Debug, Clone, Default)]
pub(crate) struct ObserveLayer;

impl<S> tower::Layer<S> for ObserveLayer {
    type Service = Observed<S>;

    fn layer(&self, inner: S) -> Observed<S> {
        Observed { inner }
    }
}

/// A service whose calls are observed.
#[derive(Debug, Clone)]
pub(crate) struct Observed<S> {
    inner: S,
}

impl<S> tower::Service<http::Request<Body>> for Observed<S>
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

    fn call(&mut self, mut request: http::Request<Body>) -> Self::Future {
        let method = method_label(request.uri().path());
        let id = request_id(request.headers());
        let header = http::HeaderValue::from_str(&id).ok();
        if let Some(value) = &header {
            request
                .headers_mut()
                .insert(REQUEST_ID_HEADER, value.clone());
        }
        let mut pending = Pending(Some(Call::begin(method, id)));
        let answer = self.inner.call(request);
        Box::pin(async move {
            // Polled inside the request's `rpc` span (tonic enters it around this future).
            if let Some(call) = &pending.0 {
                tracing::Span::current().record("request_id", call.request_id.as_str());
            }
            let mut response = answer.await?;
            if let Some(value) = header {
                response.headers_mut().insert(REQUEST_ID_HEADER, value);
            }
            crate::limits::bound_status(response.headers_mut());
            if let Some((code, message)) = status_in(response.headers()) {
                // A trailers-only answer: the status is already known.
                if let Some(call) = pending.take() {
                    call.finish(code, &message);
                }
                return Ok(response);
            }
            Ok(response.map(|inner| {
                Body::new(ObservedBody {
                    inner: crate::framing::Pieced::new(inner),
                    pending,
                })
            }))
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn request_ids_are_taken_when_sensible_and_made_otherwise() {
        let mut headers = http::HeaderMap::new();
        headers.insert(
            REQUEST_ID_HEADER,
            http::HeaderValue::from_static("ch2-poll.42"),
        );
        assert_eq!(request_id(&headers), "ch2-poll.42");

        let made = request_id(&http::HeaderMap::new());
        let again = request_id(&http::HeaderMap::new());
        assert_ne!(made, again, "generated ids differ");
        assert!(made.starts_with(REQUEST_ID_PREFIX.as_str()), "{made}");

        for unusable in ["", "has space", "x".repeat(65).as_str(), "semi;colon"] {
            let mut headers = http::HeaderMap::new();
            headers.insert(
                REQUEST_ID_HEADER,
                http::HeaderValue::from_str(unusable).expect("header value"),
            );
            let id = request_id(&headers);
            assert_ne!(id, unusable);
            assert!(id.starts_with(REQUEST_ID_PREFIX.as_str()), "{id}");
        }
    }

    #[test]
    fn method_labels_are_limited_to_offered_methods() {
        assert_eq!(
            method_label("/binodal.v1.PhaseService/GetState"),
            "/binodal.v1.PhaseService/GetState"
        );
        assert_eq!(
            method_label("/grpc.health.v1.Health/Check"),
            "/grpc.health.v1.Health/Check"
        );
        assert_eq!(
            method_label("/binodal.v1.PhaseService/DropTables"),
            "unknown"
        );
        assert_eq!(method_label("/"), "unknown");
    }

    /// The `VmRSS` line format of proc(5) (Linux man-pages, /proc/pid/status).
    #[test]
    fn resident_memory_line() {
        let status = "Name:\tbinodal-server\nVmPeak:\t  200000 kB\nVmRSS:\t   51234 kB\n";
        assert_eq!(parse_resident_kib(status), Some(51_234));
        assert_eq!(parse_resident_kib("Name:\tx\n"), None);
        assert!(resident_memory_bytes().is_some_and(|bytes| bytes > 0));
    }
}
