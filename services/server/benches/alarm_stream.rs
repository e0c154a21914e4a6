//! Alarm watch throughput: one `WatchReadings` stream carrying 10,000 tags at one reading per
//! second each, through the real server on loopback (`127.0.0.1:0`, in-process, real TCP and
//! HTTP/2, client and server sharing the machine's cores).
//!
//! One iteration is one second of plant time: 10,000 readings (one per tag, timestamps one second
//! after the previous iteration's) sent in requests of 1,000 readings, and every response received.
//! The stream and its alarm state live across iterations, so the benchmark runs through as many
//! seconds of plant time as criterion asks for. The stream keeps up with the plant when one
//! iteration takes less than one second; criterion reports the rate as readings per second.
//!
//! The tags are the Harrowgate Cold Store's kinds of points repeated: ammonia pump suctions
//! (subcooled liquid, minimum-subcooling rule), carbon dioxide booster suctions (superheated
//! vapor, gauge pressure, minimum-superheat), propane vaporiser lines (minimum-dew-margin),
//! carbon dioxide gas coolers (maximum-critical-pressure-fraction) and chilled water
//! (minimum-freezing-margin). Every reading moves a little each second, so no two are alike.
//!
//! Run with `cargo bench -p binodal-server --bench alarm_stream`.

use std::hint::black_box;
use std::time::Duration;

use binodal_proto::v1 as pb;
use binodal_proto::v1::alarm_service_client::AlarmServiceClient;
use binodal_server::settings::Settings;
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use tokio::runtime::Runtime;
use tokio::sync::mpsc;
use tokio_stream::wrappers::ReceiverStream;
use tonic::Streaming;

/// Tags on the stream.
const TAGS: usize = 10_000;
/// Readings per request.
const READINGS_PER_REQUEST: usize = 1_000;
/// 2026-01-15T06:00:00Z, ms since the Unix epoch.
const T0: i64 = 1_768_456_800_000;

/// One kind of plant point: tag prefix, fluid, rule, and the reading at phase `x` in [0, 1).
struct Point {
    prefix: &'static str,
    fluid: &'static str,
    rule: pb::AlarmRuleKind,
    gauge: bool,
    /// Temperature in K and pressure in Pa (absolute, or gauge when `gauge`) at `x`.
    at: fn(f64) -> (f64, f64),
}

const POINTS: [Point; 5] = [
    Point {
        prefix: "NH3-P",
        fluid: "R-717",
        rule: pb::AlarmRuleKind::MinimumSubcooling,
        gauge: false,
        at: |x| (244.0 + 2.0 * x, 2.0e5 + 1.0e4 * x),
    },
    Point {
        prefix: "CO2-RK-SUC",
        fluid: "R-744",
        rule: pb::AlarmRuleKind::MinimumSuperheat,
        gauge: true,
        at: |x| (250.0 + 3.0 * x, 1.3e6 + 2.0e4 * x),
    },
    Point {
        prefix: "LPG-V",
        fluid: "propane",
        rule: pb::AlarmRuleKind::MinimumDewMargin,
        gauge: false,
        at: |x| (290.0 + 4.0 * x, 4.0e5 + 1.0e4 * x),
    },
    Point {
        prefix: "CO2-RK-GC",
        fluid: "R-744",
        rule: pb::AlarmRuleKind::MaximumCriticalPressureFraction,
        gauge: false,
        at: |x| (305.0 + 5.0 * x, 8.0e6 + 5.0e5 * x),
    },
    Point {
        prefix: "CH-CHWL",
        fluid: "water",
        rule: pb::AlarmRuleKind::MinimumFreezingMargin,
        gauge: false,
        at: |x| (277.0 + 3.0 * x, 3.0e5),
    },
];

fn tag(index: usize) -> String {
    let point = &POINTS[index % POINTS.len()];
    format!("{}{:05}", point.prefix, index)
}

fn opening() -> pb::WatchOpening {
    pb::WatchOpening {
        ambient_pressure_pa: Some(100_300.0),
        tags: (0..TAGS)
            .map(|index| {
                let point = &POINTS[index % POINTS.len()];
                pb::TagSetup {
                    tag: tag(index),
                    fluid: Some(pb::FluidSelector {
                        choice: Some(pb::fluid_selector::Choice::Fluid(point.fluid.to_owned())),
                    }),
                    rules: vec![pb::AlarmRule {
                        kind: point.rule as i32,
                        ..Default::default()
                    }],
                }
            })
            .collect(),
        ..Default::default()
    }
}

/// The readings of plant second `second`, in requests of [`READINGS_PER_REQUEST`].
fn requests(second: i64, tags: &[String]) -> Vec<pb::WatchRequest> {
    let readings: Vec<pb::Reading> = tags
        .iter()
        .enumerate()
        .map(|(index, tag)| {
            let point = &POINTS[index % POINTS.len()];
            // A slow wave per tag, so that values differ between tags and between seconds.
            let x = ((second as f64 * 0.05 + index as f64 * 0.618).sin() + 1.0) / 2.0;
            let (t, p) = (point.at)(x);
            pb::Reading {
                tag: tag.clone(),
                fluid: None,
                pressure_pa: Some(if point.gauge { p - 100_300.0 } else { p }),
                pressure_kind: if point.gauge {
                    pb::PressureKind::Gauge
                } else {
                    pb::PressureKind::Absolute
                } as i32,
                ambient_pressure_pa: None,
                temperature_k: Some(t),
                timestamp_unix_ms: Some(T0 + second * 1000),
                quality: pb::ReadingQuality::Good as i32,
            }
        })
        .collect();
    readings
        .chunks(READINGS_PER_REQUEST)
        .map(|chunk| pb::WatchRequest {
            opening: None,
            readings: chunk.to_vec(),
        })
        .collect()
}

/// An open stream with its plant clock.
struct Plant {
    requests: mpsc::Sender<pb::WatchRequest>,
    responses: Streaming<pb::WatchResponse>,
    tags: Vec<String>,
    second: i64,
}

impl Plant {
    /// Sends one second of readings and receives every response; returns the outcomes counted
    /// and the alarm events seen (so the work cannot be optimised away).
    async fn one_second(&mut self) -> (usize, usize) {
        self.second += 1;
        let batch = requests(self.second, &self.tags);
        let expected = batch.len();
        let sender = self.requests.clone();
        let send = tokio::spawn(async move {
            for request in batch {
                sender
                    .send(request)
                    .await
                    .expect("the stream accepts requests");
            }
        });
        let (mut outcomes, mut events) = (0, 0);
        for _ in 0..expected {
            let response = self
                .responses
                .message()
                .await
                .expect("a response, not an error")
                .expect("the stream stays open");
            outcomes += response.outcomes.len();
            assert!(
                response.outcomes.iter().all(|outcome| outcome.evaluated),
                "every reading is evaluated: {:?}",
                response.outcomes.iter().find(|outcome| !outcome.evaluated)
            );
            events += response
                .outcomes
                .iter()
                .map(|outcome| outcome.events.len())
                .sum::<usize>();
        }
        send.await.expect("the sender finished");
        assert_eq!(outcomes, self.tags.len(), "one outcome per reading");
        (outcomes, events)
    }
}

fn alarm_stream(c: &mut Criterion) {
    let runtime = Runtime::new().expect("tokio runtime");
    let (address, _stop) = runtime.block_on(async {
        let listener = tokio::net::TcpListener::bind("127.0.0.1:0")
            .await
            .expect("bind loopback");
        let address = listener.local_addr().expect("address");
        let mut settings = Settings::default();
        // The opening of 10,000 tag setups is about 0.5 MB; one second of responses about 1.5 MB.
        settings.limits.max_message_size_bytes = 64 * 1024 * 1024;
        let (stop, stopped) = tokio::sync::oneshot::channel::<()>();
        tokio::spawn(binodal_server::run(listener, settings, async {
            stopped.await.ok();
        }));
        (address, stop)
    });
    let mut plant = runtime.block_on(async {
        let channel = tonic::transport::Endpoint::from_shared(format!("http://{address}"))
            .expect("endpoint")
            .connect()
            .await
            .expect("connect to the bench server");
        let mut client = AlarmServiceClient::new(channel)
            .max_decoding_message_size(64 * 1024 * 1024)
            .max_encoding_message_size(64 * 1024 * 1024);
        let (requests, receiver) = mpsc::channel(64);
        requests
            .send(pb::WatchRequest {
                opening: Some(opening()),
                readings: Vec::new(),
            })
            .await
            .expect("queue the opening");
        let mut responses = client
            .watch_readings(ReceiverStream::new(receiver))
            .await
            .expect("the stream opens")
            .into_inner();
        responses
            .message()
            .await
            .expect("the opening is accepted")
            .expect("a first response");
        let mut plant = Plant {
            requests,
            responses,
            tags: (0..TAGS).map(tag).collect(),
            second: 0,
        };
        // A first second outside the measurement: every tag's state is created.
        plant.one_second().await;
        plant
    });

    let mut group = c.benchmark_group("alarm stream");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(20));
    group.throughput(Throughput::Elements(TAGS as u64));
    group.bench_function("one plant second of 10000 tags (readings/s)", |b| {
        b.iter(|| black_box(runtime.block_on(plant.one_second())))
    });
    group.finish();
}

criterion_group!(benches, alarm_stream);
criterion_main!(benches);
