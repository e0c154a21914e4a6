//! The `binodal.v1.AlarmService` handlers: the gRPC glue around [`super::session`].
//!
//! Each stream runs in its own task: it reads one request, has the session process it (on the
//! blocking pool when it carries many readings, so a large batch never holds up the runtime's
//! workers), and sends one response before reading the next request. The response queue is
//! bounded, so a client that stops reading responses stops being read from (back-pressure) rather
//! than growing the server's memory.

use std::sync::Arc;

use prost::Message as _;

use anyhow::Context as _;
use binodal_proto::v1 as pb;
use binodal_proto::v1::alarm_service_server::AlarmService;
use tokio::sync::{mpsc, watch};
use tokio_stream::wrappers::ReceiverStream;
use tonic::{Request, Response, Status, Streaming};
use tracing::Instrument as _;

use super::config::AlarmSettings;
use super::session::{Evaluator, ReadingIn, Session};
use super::wire;
use crate::engines::Engines;
use crate::status::ServiceError;

/// Requests with at least this many readings are processed on the blocking thread pool.
const BLOCKING_READINGS: usize = 64;
/// Responses a stream may have queued before it stops reading requests.
const RESPONSE_QUEUE: usize = 8;

/// The alarm service handlers.
#[derive(Debug, Clone)]
pub struct AlarmApi {
    engines: Arc<Engines>,
    settings: Arc<AlarmSettings>,
    max_batch_length: usize,
    /// `limits.max_message_size_bytes`: the largest answer the server sends.
    max_message_size: usize,
    stop: watch::Receiver<bool>,
    /// One permit per open stream (`alarms.max_streams`).
    streams: Arc<tokio::sync::Semaphore>,
}

/// Ends every open alarm stream when the server shuts down (see [`AlarmStop::stop`]).
#[derive(Debug)]
pub struct AlarmStop(watch::Sender<bool>);

impl AlarmStop {
    /// Ends every open stream with UNAVAILABLE ("the server is shutting down"), so that a graceful
    /// shutdown does not wait for dashboards that never close their streams.
    pub fn stop(&self) {
        self.0.send_replace(true);
    }
}

impl AlarmApi {
    /// The service over prepared engines. Fails when a fluid named in the alarm settings is not in
    /// the catalogue.
    pub fn new(
        engines: Arc<Engines>,
        settings: &AlarmSettings,
        max_batch_length: usize,
        max_message_size: usize,
    ) -> anyhow::Result<(AlarmApi, AlarmStop)> {
        for (index, entry) in settings.tags.iter().enumerate() {
            if let Some(fluid) = &entry.fluid
                && engines.catalogue().blend(fluid).is_none()
            {
                engines.catalogue().get(fluid).with_context(|| {
                    format!(
                        "setting `alarms.tags[{index}].fluid` = {fluid:?} (tag {})",
                        entry.pattern.text()
                    )
                })?;
            }
        }
        let (sender, stop) = watch::channel(false);
        Ok((
            AlarmApi {
                engines,
                settings: Arc::new(settings.clone()),
                max_batch_length,
                max_message_size,
                stop,
                streams: Arc::new(tokio::sync::Semaphore::new(settings.max_streams)),
            },
            AlarmStop(sender),
        ))
    }

    /// Refuses an answer the message limit would refuse on the wire (there as a bare "message
    /// length too large"), saying how many readings would fit. `size` is the whole answer's
    /// encoded size and `outcomes` its per-reading part (field 1 of both answer messages).
    fn check_answer_size(
        &self,
        size: usize,
        outcomes: &[pb::ReadingOutcome],
    ) -> Result<(), ServiceError> {
        let limit = self.max_message_size;
        if size <= limit {
            return Ok(());
        }
        let readings = outcomes.len();
        let fixed = size - prost::encoding::message::encoded_len_repeated(1, outcomes).min(size);
        let per_reading = (size - fixed) as f64 / readings.max(1) as f64;
        let fitting = (limit.saturating_sub(fixed) as f64 / per_reading.max(1.0)).floor();
        Err(ServiceError::LimitReached(format!(
            "the answer to these {readings} readings is {size} bytes, over the server's message \
             limit of {limit} bytes (setting limits.max_message_size_bytes); send at most about \
             {fitting} readings per request, or follow fewer tags per stream"
        )))
    }

    fn evaluator(&self, setup: super::session::Setup) -> Evaluator {
        Evaluator::new(Arc::clone(&self.engines), Arc::clone(&self.settings), setup)
    }

    /// Serves one stream until the client closes it, the client goes away, the opening is
    /// invalid, or the server shuts down. `slot` is the stream's permit of `alarms.max_streams`.
    async fn serve_stream(
        self,
        mut inbound: Streaming<pb::WatchRequest>,
        responses: mpsc::Sender<Result<pb::WatchResponse, Status>>,
        slot: tokio::sync::OwnedSemaphorePermit,
    ) {
        let mut stop = self.stop.clone();
        let mut session: Option<Session> = None;
        let mut readings_seen: u64 = 0;
        loop {
            let next = tokio::select! {
                biased;
                () = stopped(&mut stop) => {
                    let _ = responses
                        .send(Err(Status::unavailable(
                            "the server is shutting down: reconnect and send the opening again",
                        )))
                        .await;
                    break;
                }
                next = inbound.message() => next,
            };
            let request = match next {
                Ok(Some(request)) => request,
                Ok(None) => break,
                Err(status) => {
                    tracing::debug!(%status, "alarm stream: a request could not be read");
                    // A request the server could not read (over the message limit, malformed)
                    // ends the stream with the reason; a client that has gone receives nothing.
                    let _ = responses
                        .send(Err(Status::new(
                            status.code(),
                            format!(
                                "a request on this stream could not be read: {}",
                                status.message()
                            ),
                        )))
                        .await;
                    break;
                }
            };
            let repeated_opening = session.is_some() && request.opening.is_some();
            let mut current = match session.take() {
                Some(current) => current,
                None => match wire::setup(request.opening.as_ref(), "opening", &self.engines) {
                    Ok(setup) => Session::new(self.evaluator(setup)),
                    Err(error) => {
                        let _ = responses.send(Err(Status::from(error))).await;
                        break;
                    }
                },
            };
            let readings: Vec<ReadingIn> =
                request.readings.into_iter().map(wire::reading).collect();
            readings_seen += readings.len() as u64;
            let response = if readings.len() >= BLOCKING_READINGS {
                let work = tokio::task::spawn_blocking(move || {
                    let response = wire::watch_response(current.handle(readings, repeated_opening));
                    (current, response)
                });
                match work.await {
                    Ok((returned, response)) => {
                        current = returned;
                        response
                    }
                    Err(error) => {
                        let _ = responses
                            .send(Err(ServiceError::Internal(format!(
                                "alarm stream worker failed: {error}"
                            ))
                            .into()))
                            .await;
                        break;
                    }
                }
            } else {
                wire::watch_response(current.handle(readings, repeated_opening))
            };
            let tags = current.tag_count();
            session = Some(current);
            // An answer over the message limit cannot be sent: the stream ends with the reason.
            if let Err(error) = self.check_answer_size(response.encoded_len(), &response.outcomes) {
                let _ = responses.send(Err(error.into())).await;
                break;
            }
            if responses.send(Ok(response)).await.is_err() {
                tracing::debug!(tags, "alarm stream: the client stopped reading");
                break;
            }
        }
        tracing::debug!(
            readings = readings_seen,
            tags = session.as_ref().map_or(0, Session::tag_count),
            "alarm stream closed"
        );
        // The slot is free before `responses` is dropped, which ends the stream for the client:
        // a client that opens a new stream once it has seen the end is never refused for it.
        drop(slot);
        drop(responses);
    }
}

/// Completes when the stop flag is set; never, if the flag's sender is gone without setting it.
async fn stopped(stop: &mut watch::Receiver<bool>) {
    if stop.wait_for(|stopping| *stopping).await.is_err() {
        std::future::pending::<()>().await;
    }
}

#[tonic::async_trait]
impl AlarmService for AlarmApi {
    type WatchReadingsStream = ReceiverStream<Result<pb::WatchResponse, Status>>;

    async fn watch_readings(
        &self,
        request: Request<Streaming<pb::WatchRequest>>,
    ) -> Result<Response<Self::WatchReadingsStream>, Status> {
        let Ok(permit) = Arc::clone(&self.streams).try_acquire_owned() else {
            return Err(ServiceError::LimitReached(format!(
                "{} alarm streams are open, the server's limit (setting alarms.max_streams); \
                 close a stream or retry later",
                self.settings.max_streams
            ))
            .into());
        };
        let inbound = request.into_inner();
        let (sender, receiver) = mpsc::channel(RESPONSE_QUEUE);
        tokio::spawn(
            self.clone()
                .serve_stream(inbound, sender, permit)
                .instrument(tracing::Span::current()),
        );
        Ok(Response::new(ReceiverStream::new(receiver)))
    }

    async fn evaluate_readings(
        &self,
        request: Request<pb::EvaluateReadingsRequest>,
    ) -> Result<Response<pb::EvaluateReadingsResponse>, Status> {
        let request = request.into_inner();
        let count = request.readings.len();
        if count > self.max_batch_length {
            return Err(ServiceError::field(
                "readings",
                format!(
                    "{count} readings exceed the server's limit of {} per request",
                    self.max_batch_length
                ),
            )
            .into());
        }
        let setup = wire::setup(request.setup.as_ref(), "setup", &self.engines)?;
        let evaluator = self.evaluator(setup);
        let readings: Vec<ReadingIn> = request.readings.into_iter().map(wire::reading).collect();
        let compute = move || wire::evaluate_response(evaluator.evaluate_each(&readings));
        let response = if count >= BLOCKING_READINGS {
            tokio::task::spawn_blocking(compute)
                .await
                .map_err(|e| ServiceError::Internal(format!("evaluation worker failed: {e}")))?
        } else {
            compute()
        };
        self.check_answer_size(response.encoded_len(), &response.outcomes)?;
        Ok(Response::new(response))
    }
}
