//! The load itself: connections, request mixes, workers that keep requests in flight until a
//! deadline, and the statistics of one scenario.

use std::net::SocketAddr;
use std::sync::Arc;
use std::time::{Duration, Instant};

use anyhow::Context as _;
use binodal_proto::v1 as pb;
use binodal_proto::v1::phase_service_client::PhaseServiceClient;
use prost::Message as _;
use tonic::transport::{Channel, Endpoint};
use tonic_health::pb::HealthCheckRequest;
use tonic_health::pb::health_client::HealthClient;

/// Longest wait for one call: a hung server cannot keep the tool running.
const CALL_TIMEOUT: Duration = Duration::from_secs(10);
/// Longest wait for a connection.
const CONNECT_TIMEOUT: Duration = Duration::from_secs(5);
/// Points in the state grid that single-point requests cycle through.
const GRID_SIDE: usize = 32;
/// Largest response the tool accepts (a batch of a million points is about 130 MB).
const MAX_MESSAGE: usize = 256 * 1024 * 1024;

/// One kind of request.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scenario {
    /// `grpc.health.v1.Health/Check` of the phase service: the framework floor.
    Health,
    /// The same health check once more, as a scenario of its own: its ratio to the floor shows
    /// how far two measurements of one RPC differ in the same run (the run's noise).
    Control,
    /// `GetState`.
    State,
    /// `GetStateBatch`.
    Batch,
    /// `GetSaturation` at a temperature.
    Saturation,
}

impl Scenario {
    /// The name in the report.
    pub fn name(self) -> &'static str {
        match self {
            Scenario::Health => "health",
            Scenario::Control => "control",
            Scenario::State => "state",
            Scenario::Batch => "state-batch",
            Scenario::Saturation => "saturation",
        }
    }
}

/// What one scenario measured.
#[derive(Debug, Clone, Default)]
pub struct Outcome {
    /// Successful calls.
    pub calls: u64,
    /// Points in the successful calls.
    pub points: u64,
    /// Calls that failed (status or timeout).
    pub errors: u64,
    /// Points that a successful batch reported as failed.
    pub point_errors: u64,
    /// The first failure's message.
    pub first_error: Option<String>,
    /// Encoded size of one answer, bytes.
    pub response_bytes: usize,
    /// Wall time from the first send to the last answer, s.
    pub elapsed_s: f64,
    /// Latencies of the successful calls, ns, sorted.
    latencies_ns: Vec<u64>,
}

impl Outcome {
    /// Adds another measurement of the same scenario (a later round) to this one.
    pub fn merge(&mut self, other: Outcome) {
        self.calls += other.calls;
        self.points += other.points;
        self.errors += other.errors;
        self.point_errors += other.point_errors;
        if self.first_error.is_none() {
            self.first_error = other.first_error;
        }
        self.response_bytes = self.response_bytes.max(other.response_bytes);
        self.elapsed_s += other.elapsed_s;
        self.latencies_ns.extend(other.latencies_ns);
        self.latencies_ns.sort_unstable();
    }

    /// Successful calls per second.
    pub fn requests_per_second(&self) -> f64 {
        self.calls as f64 / self.elapsed_s
    }

    /// Points per second in successful calls.
    pub fn points_per_second(&self) -> f64 {
        self.points as f64 / self.elapsed_s
    }

    fn percentile_us(&self, q: f64) -> f64 {
        if self.latencies_ns.is_empty() {
            return f64::NAN;
        }
        let i = ((self.latencies_ns.len() as f64 - 1.0) * q).round() as usize;
        self.latencies_ns[i] as f64 / 1e3
    }

    /// Median latency, microseconds.
    pub fn p50_us(&self) -> f64 {
        self.percentile_us(0.50)
    }

    /// 99th-percentile latency, microseconds.
    pub fn p99_us(&self) -> f64 {
        self.percentile_us(0.99)
    }
}

/// Connections and prepared requests.
#[derive(Debug)]
pub struct Plan {
    channels: Vec<Channel>,
    fluid_id: String,
    selector: pb::FluidSelector,
    /// (T K, P Pa) points spanning liquid, vapor and supercritical states.
    points: Arc<Vec<(f64, f64)>>,
    /// Saturation temperatures, K.
    saturation_temperatures: Arc<Vec<f64>>,
    batch: Arc<pb::GetStateBatchRequest>,
    t_span: (f64, f64),
    p_span: (f64, f64),
}

impl Plan {
    /// Opens `connections` HTTP/2 connections to `address`, reads the fluid's critical point
    /// and triple point, and builds the request mixes from them.
    pub async fn prepare(
        address: SocketAddr,
        connections: usize,
        fluid: &str,
        batch_points: usize,
    ) -> anyhow::Result<Plan> {
        let mut channels = Vec::with_capacity(connections);
        for _ in 0..connections {
            let channel = Endpoint::from_shared(format!("http://{address}"))
                .context("server address")?
                .connect_timeout(CONNECT_TIMEOUT)
                .tcp_nodelay(true)
                .connect()
                .await
                .with_context(|| format!("cannot connect to the binodal server at {address}"))?;
            channels.push(channel);
        }
        let mut client = PhaseServiceClient::new(channels[0].clone());
        let description = client
            .describe_fluid(pb::DescribeFluidRequest {
                fluid: fluid.to_string(),
            })
            .await
            .with_context(|| format!("DescribeFluid({fluid})"))?
            .into_inner()
            .fluid
            .context("DescribeFluid answered without a fluid")?;
        let tc = description.critical_temperature_k;
        let pc = description.critical_pressure_pa;
        let t_low = description
            .triple_point_temperature_k
            .unwrap_or(0.0)
            .max(0.55 * tc);
        let t_span = (t_low, 1.2 * tc);
        let p_span = (0.02 * pc, 2.0 * pc);
        // A grid uniform in T and in ln P, visited in a scrambled order so that neighbouring
        // requests land in different phases.
        let mut points = Vec::with_capacity(GRID_SIDE * GRID_SIDE);
        for i in 0..GRID_SIDE {
            for j in 0..GRID_SIDE {
                let ft = i as f64 / (GRID_SIDE - 1) as f64;
                let fp = j as f64 / (GRID_SIDE - 1) as f64;
                let t = t_span.0 + ft * (t_span.1 - t_span.0);
                let p = p_span.0 * (p_span.1 / p_span.0).powf(fp);
                points.push((t, p));
            }
        }
        let n = points.len();
        let points: Vec<(f64, f64)> = (0..n).map(|k| points[(k * 389) % n]).collect();
        let saturation_temperatures = (0..64)
            .map(|k| t_low + (0.97 * tc - t_low) * ((k * 23) % 64) as f64 / 63.0)
            .collect();
        let selector = pb::FluidSelector {
            choice: Some(pb::fluid_selector::Choice::Fluid(fluid.to_string())),
        };
        let batch = pb::GetStateBatchRequest {
            fluid: Some(selector.clone()),
            temperatures_k: (0..batch_points).map(|k| points[k % n].0).collect(),
            pressures_pa: (0..batch_points).map(|k| points[k % n].1).collect(),
            ..Default::default()
        };
        Ok(Plan {
            channels,
            fluid_id: description.fluid_id,
            selector,
            points: Arc::new(points),
            saturation_temperatures: Arc::new(saturation_temperatures),
            batch: Arc::new(batch),
            t_span,
            p_span,
        })
    }

    /// The catalogue id of the fluid.
    pub fn fluid_id(&self) -> &str {
        &self.fluid_id
    }

    /// Temperatures of the state points, K.
    pub fn temperature_span(&self) -> (f64, f64) {
        self.t_span
    }

    /// Pressures of the state points, Pa.
    pub fn pressure_span(&self) -> (f64, f64) {
        self.p_span
    }

    /// Runs `scenario` with `in_flight` workers spread over the connections until `duration`
    /// has passed, and returns what they measured.
    pub async fn drive(&self, scenario: Scenario, in_flight: usize, duration: Duration) -> Outcome {
        let start = Instant::now();
        let deadline = start + duration;
        let mut workers = tokio::task::JoinSet::new();
        for w in 0..in_flight {
            let channel = self.channels[w % self.channels.len()].clone();
            let caller = Caller {
                scenario,
                phase: PhaseServiceClient::new(channel.clone())
                    .max_decoding_message_size(MAX_MESSAGE)
                    .max_encoding_message_size(MAX_MESSAGE),
                health: HealthClient::new(channel),
                selector: self.selector.clone(),
                points: Arc::clone(&self.points),
                saturation_temperatures: Arc::clone(&self.saturation_temperatures),
                batch: Arc::clone(&self.batch),
            };
            workers.spawn(caller.run(w, deadline));
        }
        let mut outcome = Outcome::default();
        while let Some(joined) = workers.join_next().await {
            let worker = match joined {
                Ok(worker) => worker,
                Err(e) => {
                    outcome.errors += 1;
                    outcome
                        .first_error
                        .get_or_insert(format!("worker failed: {e}"));
                    continue;
                }
            };
            outcome.calls += worker.latencies_ns.len() as u64;
            outcome.points += worker.points;
            outcome.errors += worker.errors;
            outcome.point_errors += worker.point_errors;
            if outcome.first_error.is_none() {
                outcome.first_error = worker.first_error;
            }
            outcome.response_bytes = outcome.response_bytes.max(worker.response_bytes);
            outcome.latencies_ns.extend(worker.latencies_ns);
        }
        outcome.elapsed_s = start.elapsed().as_secs_f64();
        outcome.latencies_ns.sort_unstable();
        outcome
    }
}

/// One worker's clients and requests.
struct Caller {
    scenario: Scenario,
    phase: PhaseServiceClient<Channel>,
    health: HealthClient<Channel>,
    selector: pb::FluidSelector,
    points: Arc<Vec<(f64, f64)>>,
    saturation_temperatures: Arc<Vec<f64>>,
    batch: Arc<pb::GetStateBatchRequest>,
}

/// What one worker measured.
#[derive(Default)]
struct WorkerTally {
    latencies_ns: Vec<u64>,
    response_bytes: usize,
    points: u64,
    errors: u64,
    point_errors: u64,
    first_error: Option<String>,
}

impl Caller {
    /// Sends one request after another until `deadline`.
    async fn run(mut self, worker: usize, deadline: Instant) -> WorkerTally {
        let mut tally = WorkerTally {
            latencies_ns: Vec::with_capacity(1 << 14),
            ..WorkerTally::default()
        };
        let mut k = worker * 7919;
        while Instant::now() < deadline {
            k = k.wrapping_add(1);
            let sent = Instant::now();
            let measure = tally.response_bytes == 0;
            match tokio::time::timeout(CALL_TIMEOUT, self.call(k, measure)).await {
                Ok(Ok((points, point_errors, bytes))) => {
                    tally.latencies_ns.push(sent.elapsed().as_nanos() as u64);
                    tally.response_bytes = tally.response_bytes.max(bytes);
                    tally.points += points;
                    tally.point_errors += point_errors;
                }
                Ok(Err(status)) => {
                    tally.errors += 1;
                    tally.first_error.get_or_insert_with(|| {
                        format!("{:?}: {}", status.code(), status.message())
                    });
                }
                Err(_) => {
                    tally.errors += 1;
                    tally
                        .first_error
                        .get_or_insert_with(|| format!("no answer within {CALL_TIMEOUT:?}"));
                }
            }
        }
        tally
    }

    /// One call; returns (points answered, points failed, encoded answer size in bytes, which is
    /// measured only when `measure` is set).
    async fn call(&mut self, k: usize, measure: bool) -> Result<(u64, u64, usize), tonic::Status> {
        let size = |m: &dyn Fn() -> usize| if measure { m() } else { 0 };
        match self.scenario {
            Scenario::Health | Scenario::Control => {
                let answer = self
                    .health
                    .check(HealthCheckRequest {
                        service: "binodal.v1.PhaseService".into(),
                    })
                    .await?
                    .into_inner();
                Ok((1, 0, size(&|| answer.encoded_len())))
            }
            Scenario::State => {
                let (t, p) = self.points[k % self.points.len()];
                let answer = self
                    .phase
                    .get_state(pb::GetStateRequest {
                        fluid: Some(self.selector.clone()),
                        temperature_k: t,
                        pressure_pa: p,
                        ..Default::default()
                    })
                    .await?
                    .into_inner();
                Ok((1, 0, size(&|| answer.encoded_len())))
            }
            Scenario::Saturation => {
                let t = self.saturation_temperatures[k % self.saturation_temperatures.len()];
                let answer = self
                    .phase
                    .get_saturation(pb::GetSaturationRequest {
                        fluid: Some(self.selector.clone()),
                        condition: Some(pb::get_saturation_request::Condition::TemperatureK(t)),
                        ..Default::default()
                    })
                    .await?
                    .into_inner();
                Ok((1, 0, size(&|| answer.encoded_len())))
            }
            Scenario::Batch => {
                let request = (*self.batch).clone();
                let n = request.temperatures_k.len() as u64;
                let answer = self.phase.get_state_batch(request).await?.into_inner();
                Ok((
                    n,
                    answer.errors.len() as u64,
                    size(&|| answer.encoded_len()),
                ))
            }
        }
    }
}
