//! `binodal watch`: plays plant readings from a CSV file or standard input into the service's
//! alarm stream (`binodal.v1.AlarmService/WatchReadings`) and prints the events that come back.
//!
//! The CSV has a header row. Columns (any order; the first four are required):
//!
//! | column | meaning | example |
//! |---|---|---|
//! | `time` | when the reading was taken: RFC 3339 (`2026-01-15T06:00:00Z`, `...+01:00`) or seconds since 1970-01-01 UTC | `2026-01-15T06:00:15Z` |
//! | `tag` | instrument or point name | `NH3-P101` |
//! | `pressure` | with its unit; gauge or absolute is part of the unit | `1.2barg`, `14.1bar`, `180psig` |
//! | `temperature` | with its unit | `-31.5C`, `241.7K` |
//! | `fluid` | fluid name; may be empty after the tag's first row | `R-717` |
//! | `quality` | `good`, `uncertain` or `bad`; empty is good | `bad` |
//! | `ambient` | this row's barometric pressure, absolute | `1004mbar` |
//!
//! An empty pressure or temperature cell is sent as missing (the service answers with a quality
//! event). A cell that cannot be read is reported on standard error with its line and column and
//! the row is skipped; the exit code is then 1. Lines starting with `#` are comments.
//!
//! Rules come from `--rules FILE` (TOML, the shape of the server's `[[alarms.tags]]` entries) and
//! `--rule TAG=KIND[,key=value...]`, or from the server's settings when neither names the tag.
//!
//! The alarms are advisory: no substitute for a safety instrumented system or the plant's own
//! protection; every limit defers to local codes and licensed practice.

use std::collections::BTreeMap;
use std::io::{BufReader, Read, Write};
use std::path::{Path, PathBuf};
use std::pin::Pin;
use std::process::ExitCode;
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};
use std::task::{Context as TaskContext, Poll};
use std::time::Duration;

use anyhow::{Context as _, bail};
use binodal_proto::v1 as pb;
use binodal_proto::v1::alarm_service_client::AlarmServiceClient;
use clap::Args;
use serde::Deserialize;
use tokio::sync::mpsc;
use tokio::time::Instant;

use crate::cli::OutputFormat;
use crate::client::Service;
use crate::config::{AmbientOrigin, Settings};
use crate::report::{csv_output_error, is_output_closed, output_error};
use crate::units::{
    Ambient, PressureKind, PressureReading, Temperature, UnitSystem, fmt_pressure, fmt_temperature,
    fmt_temperature_difference,
};

/// Slowest replay factor: below it a replay of a few seconds of readings would take days.
const MIN_SPEED: f64 = 0.001;
/// Fastest replay factor: beyond it readings go as fast as they are read anyway.
const MAX_SPEED: f64 = 1e9;
/// Readings sent in one request at most.
const BATCH: usize = 500;
/// Largest message the command sends or accepts.
const MAX_MESSAGE: usize = 64 * 1024 * 1024;

/// Arguments of `binodal watch`.
#[derive(Debug, Args)]
pub struct WatchArgs {
    /// CSV file of readings; `-` or nothing reads standard input
    #[arg(value_name = "FILE")]
    pub file: Option<PathBuf>,
    /// Rules per tag, a TOML file of [[tags]] entries (tag, fluid, rules = [{ kind, limit, ... }])
    #[arg(long, value_name = "FILE")]
    pub rules: Option<PathBuf>,
    /// One rule: TAG=KIND[,limit=N][,deadband=N][,on_delay_s=N][,off_delay_s=N][,priority=P][,name=S]
    /// (repeatable; KIND is minimum-subcooling, minimum-superheat, minimum-dew-margin,
    /// maximum-critical-pressure-fraction or minimum-freezing-margin)
    #[arg(long = "rule", value_name = "TAG=KIND,...")]
    pub rule: Vec<String>,
    /// Seconds of reading time after which a silent tag is reported stale [default: the server's]
    #[arg(long, value_name = "SECONDS")]
    pub stale_after: Option<f64>,
    /// Replay at the pace of the timestamps, this many times faster (1 = real time; 0.001 to
    /// 1e9); without it readings are sent as fast as the service takes them
    #[arg(long, value_name = "FACTOR")]
    pub speed: Option<f64>,
    /// Also print every reading's phase and margins, not only the events
    #[arg(long)]
    pub readings: bool,
}

/// The rules file as written.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct RulesFile {
    /// Stale time in seconds.
    stale_after_s: Option<f64>,
    #[serde(default)]
    tags: Vec<TagEntry>,
}

/// One `[[tags]]` entry.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct TagEntry {
    tag: String,
    fluid: Option<String>,
    #[serde(default)]
    rules: Vec<RuleEntry>,
}

/// One rule of a `[[tags]]` entry.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct RuleEntry {
    kind: String,
    name: Option<String>,
    limit: Option<f64>,
    deadband: Option<f64>,
    on_delay_s: Option<f64>,
    off_delay_s: Option<f64>,
    priority: Option<String>,
}

const KINDS: [(&str, pb::AlarmRuleKind); 5] = [
    ("minimum-subcooling", pb::AlarmRuleKind::MinimumSubcooling),
    ("minimum-superheat", pb::AlarmRuleKind::MinimumSuperheat),
    ("minimum-dew-margin", pb::AlarmRuleKind::MinimumDewMargin),
    (
        "maximum-critical-pressure-fraction",
        pb::AlarmRuleKind::MaximumCriticalPressureFraction,
    ),
    (
        "minimum-freezing-margin",
        pb::AlarmRuleKind::MinimumFreezingMargin,
    ),
];

impl RuleEntry {
    fn proto(&self, place: &str) -> anyhow::Result<pb::AlarmRule> {
        let kind = KINDS
            .iter()
            .find(|(name, _)| name.eq_ignore_ascii_case(self.kind.trim()))
            .map(|(_, kind)| *kind)
            .with_context(|| {
                let names: Vec<&str> = KINDS.iter().map(|(name, _)| *name).collect();
                format!(
                    "{place}: unknown rule kind `{}`; accepted: {}",
                    self.kind,
                    names.join(", ")
                )
            })?;
        let priority = match self.priority.as_deref().map(str::trim) {
            None => pb::AlarmPriority::Unspecified,
            Some(p) if p.eq_ignore_ascii_case("low") => pb::AlarmPriority::Low,
            Some(p) if p.eq_ignore_ascii_case("medium") => pb::AlarmPriority::Medium,
            Some(p) if p.eq_ignore_ascii_case("high") => pb::AlarmPriority::High,
            Some(p) => bail!("{place}: unknown priority `{p}`; accepted: low, medium, high"),
        };
        Ok(pb::AlarmRule {
            kind: kind as i32,
            name: self.name.clone().unwrap_or_default(),
            limit: self.limit,
            deadband: self.deadband,
            on_delay_s: self.on_delay_s,
            off_delay_s: self.off_delay_s,
            priority: priority as i32,
        })
    }
}

/// Parses `TAG=KIND[,key=value...]`.
fn parse_rule_flag(text: &str) -> anyhow::Result<(String, RuleEntry)> {
    let place = format!("--rule {text}");
    let (tag, rest) = text.split_once('=').with_context(|| {
        format!(
            "{place}: expected TAG=KIND[,key=value...], e.g. NH3-P101=minimum-subcooling,limit=3"
        )
    })?;
    let mut parts = rest.split(',');
    let mut rule = RuleEntry {
        kind: parts.next().unwrap_or_default().trim().to_string(),
        ..RuleEntry::default()
    };
    for part in parts {
        let (key, value) = part
            .split_once('=')
            .with_context(|| format!("{place}: `{part}` is not key=value"))?;
        let (key, value) = (key.trim(), value.trim());
        let number = || -> anyhow::Result<Option<f64>> {
            value
                .parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .map(Some)
                .with_context(|| format!("{place}: {key} = `{value}` is not a number"))
        };
        match key {
            "limit" => rule.limit = number()?,
            "deadband" => rule.deadband = number()?,
            "on_delay_s" => rule.on_delay_s = number()?,
            "off_delay_s" => rule.off_delay_s = number()?,
            "priority" => rule.priority = Some(value.to_string()),
            "name" => rule.name = Some(value.to_string()),
            other => bail!(
                "{place}: unknown key `{other}`; accepted: limit, deadband, on_delay_s, \
                 off_delay_s, priority, name"
            ),
        }
    }
    if tag.trim().is_empty() {
        bail!("{place}: the tag before `=` is empty");
    }
    Ok((tag.trim().to_string(), rule))
}

/// The stream's opening from the settings, the rules file and the `--rule` flags.
fn opening(settings: &Settings, args: &WatchArgs) -> anyhow::Result<pb::WatchOpening> {
    let file = match &args.rules {
        Some(path) => {
            let text = std::fs::read_to_string(path)
                .with_context(|| format!("cannot read the rules file {}", path.display()))?;
            toml::from_str::<RulesFile>(&text).with_context(|| {
                format!(
                    "rules file {} is not valid (accepted keys: stale_after_s, and [[tags]] with \
                     tag, fluid, rules = [{{ kind, name, limit, deadband, on_delay_s, \
                     off_delay_s, priority }}])",
                    path.display()
                )
            })?
        }
        None => RulesFile::default(),
    };
    let mut tags: BTreeMap<String, pb::TagSetup> = BTreeMap::new();
    for (index, entry) in file.tags.iter().enumerate() {
        let place = format!("rules file, tags[{index}] ({})", entry.tag);
        if entry.tag.contains('*') {
            bail!(
                "{place}: a stream's rules name exact tags; `*` patterns belong in the server's settings"
            );
        }
        let rules = entry
            .rules
            .iter()
            .enumerate()
            .map(|(i, rule)| rule.proto(&format!("{place}, rules[{i}]")))
            .collect::<anyhow::Result<Vec<_>>>()?;
        let setup = pb::TagSetup {
            tag: entry.tag.clone(),
            fluid: entry.fluid.as_ref().map(|name| selector(name)),
            rules,
        };
        if tags.insert(entry.tag.clone(), setup).is_some() {
            bail!("{place}: the tag appears twice in the rules file");
        }
    }
    for text in &args.rule {
        let (tag, rule) = parse_rule_flag(text)?;
        let rule = rule.proto(&format!("--rule {text}"))?;
        tags.entry(tag.clone())
            .or_insert_with(|| pb::TagSetup {
                tag,
                fluid: None,
                rules: Vec::new(),
            })
            .rules
            .push(rule);
    }
    let ambient_pressure_pa = match settings.ambient.origin {
        // Leave it to the server, whose default the events then state.
        AmbientOrigin::Default => None,
        AmbientOrigin::Flag | AmbientOrigin::File => {
            Some(settings.ambient.ambient.resolve()?.pressure_pa)
        }
    };
    Ok(pb::WatchOpening {
        ambient_pressure_pa,
        equation_of_state: settings.model.map_or(0, |m| m.proto() as i32),
        tags: tags.into_values().collect(),
        default_rules: Vec::new(),
        stale_after_s: args.stale_after.or(file.stale_after_s),
    })
}

fn selector(name: &str) -> pb::FluidSelector {
    pb::FluidSelector {
        choice: Some(pb::fluid_selector::Choice::Fluid(name.to_string())),
    }
}

/// Days from 1970-01-01 to a proleptic Gregorian date (H. Hinnant, "chrono-Compatible Low-Level
/// Date Algorithms", days_from_civil).
fn days_from_civil(year: i64, month: i64, day: i64) -> i64 {
    let y = if month <= 2 { year - 1 } else { year };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let mp = (month + 9) % 12;
    let doy = (153 * mp + 2) / 5 + day - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

/// Formats ms since the Unix epoch as RFC 3339 UTC, e.g. `2026-01-15T06:00:15Z`.
fn format_time(ms: i64) -> String {
    let seconds = ms.div_euclid(1000);
    let millis = ms.rem_euclid(1000);
    let days = seconds.div_euclid(86_400);
    let of_day = seconds.rem_euclid(86_400);
    // civil_from_days, the inverse of `days_from_civil` (same source).
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    let year = yoe + era * 400 + i64::from(month <= 2);
    let (h, m, s) = (of_day / 3600, of_day % 3600 / 60, of_day % 60);
    let fraction = if millis == 0 {
        String::new()
    } else {
        format!(".{millis:03}")
    };
    format!("{year:04}-{month:02}-{day:02}T{h:02}:{m:02}:{s:02}{fraction}Z")
}

/// Parses a reading time: RFC 3339 with `Z` or an offset (a space may replace the `T`), or a
/// number of seconds since 1970-01-01 UTC. Returns ms since the Unix epoch.
fn parse_time(text: &str) -> Result<i64, String> {
    let text = text.trim();
    let accepted = "expected RFC 3339 such as 2026-01-15T06:00:15Z or 2026-01-15T07:00:15+01:00, \
                    or seconds since 1970-01-01 UTC";
    if let Ok(seconds) = text.parse::<f64>() {
        if seconds.is_finite() && seconds.abs() < 1.0e12 {
            return Ok((seconds * 1000.0).round() as i64);
        }
        return Err(format!("`{text}` is out of range; {accepted}"));
    }
    let bad = || format!("`{text}` is not a time; {accepted}");
    let bytes = text.as_bytes();
    if bytes.len() < 20 || !matches!(bytes[10], b'T' | b't' | b' ') {
        return Err(bad());
    }
    let number = |range: std::ops::Range<usize>| -> Result<i64, String> {
        let part = text.get(range).ok_or_else(bad)?;
        if part.bytes().all(|b| b.is_ascii_digit()) {
            part.parse::<i64>().map_err(|_| bad())
        } else {
            Err(bad())
        }
    };
    if &text[4..5] != "-" || &text[7..8] != "-" || &text[13..14] != ":" || &text[16..17] != ":" {
        return Err(bad());
    }
    let (year, month, day) = (number(0..4)?, number(5..7)?, number(8..10)?);
    let (hour, minute, second) = (number(11..13)?, number(14..16)?, number(17..19)?);
    if !(1..=12).contains(&month)
        || !(1..=31).contains(&day)
        || hour > 23
        || minute > 59
        || second > 60
    {
        return Err(bad());
    }
    let mut rest = &text[19..];
    let mut millis = 0;
    if let Some(fraction) = rest.strip_prefix('.') {
        let digits = fraction.bytes().take_while(u8::is_ascii_digit).count();
        if digits == 0 {
            return Err(bad());
        }
        let padded = format!("{:0<3}", &fraction[..digits.min(3)]);
        millis = padded.parse::<i64>().map_err(|_| bad())?;
        rest = &fraction[digits..];
    }
    let offset_minutes = match rest {
        "Z" | "z" => 0,
        _ if rest.len() == 6 && matches!(&rest[0..1], "+" | "-") && &rest[3..4] == ":" => {
            let hours = rest[1..3].parse::<i64>().map_err(|_| bad())?;
            let minutes = rest[4..6].parse::<i64>().map_err(|_| bad())?;
            let sign = if &rest[0..1] == "-" { -1 } else { 1 };
            sign * (hours * 60 + minutes)
        }
        _ => return Err(bad()),
    };
    let days = days_from_civil(year, month, day);
    let seconds = days * 86_400 + hour * 3600 + minute * 60 + second - offset_minutes * 60;
    Ok(seconds * 1000 + millis)
}

/// Column positions of the CSV header.
#[derive(Debug)]
struct Columns {
    time: usize,
    tag: usize,
    pressure: usize,
    temperature: usize,
    fluid: Option<usize>,
    quality: Option<usize>,
    ambient: Option<usize>,
}

const COLUMNS: &str = "time, tag, pressure, temperature (required); fluid, quality, ambient";

impl Columns {
    fn from_header(header: &csv::StringRecord) -> anyhow::Result<Columns> {
        let find = |name: &str| {
            header
                .iter()
                .position(|h| h.trim().eq_ignore_ascii_case(name))
        };
        for column in header {
            let known = [
                "time",
                "tag",
                "pressure",
                "temperature",
                "fluid",
                "quality",
                "ambient",
            ];
            if !known.iter().any(|k| k.eq_ignore_ascii_case(column.trim())) {
                bail!("CSV header: unknown column `{column}`; accepted: {COLUMNS}");
            }
        }
        let required = |name: &str| {
            find(name).with_context(|| {
                format!("CSV header: the column `{name}` is missing; accepted: {COLUMNS}")
            })
        };
        Ok(Columns {
            time: required("time")?,
            tag: required("tag")?,
            pressure: required("pressure")?,
            temperature: required("temperature")?,
            fluid: find("fluid"),
            quality: find("quality"),
            ambient: find("ambient"),
        })
    }

    /// One row as a reading, or the problem with it.
    fn reading(&self, row: &csv::StringRecord) -> Result<pb::Reading, String> {
        let cell = |index: usize| row.get(index).unwrap_or("").trim();
        let optional = |index: Option<usize>| index.map(cell).filter(|c| !c.is_empty());
        let time = parse_time(cell(self.time)).map_err(|e| format!("column `time`: {e}"))?;
        let mut reading = pb::Reading {
            tag: cell(self.tag).to_string(),
            fluid: optional(self.fluid).map(selector),
            timestamp_unix_ms: Some(time),
            ..pb::Reading::default()
        };
        let pressure = cell(self.pressure);
        if !pressure.is_empty() {
            let parsed =
                PressureReading::parse(pressure).map_err(|e| format!("column `pressure`: {e}"))?;
            reading.pressure_pa = Some(parsed.value_pa);
            reading.pressure_kind = match parsed.kind {
                PressureKind::Gauge => pb::PressureKind::Gauge,
                PressureKind::Absolute => pb::PressureKind::Absolute,
            } as i32;
        }
        let temperature = cell(self.temperature);
        if !temperature.is_empty() {
            let parsed = Temperature::parse(temperature)
                .map_err(|e| format!("column `temperature`: {e}"))?;
            reading.temperature_k = Some(parsed.kelvin());
        }
        if let Some(quality) = optional(self.quality) {
            reading.quality = match quality.to_ascii_lowercase().as_str() {
                "good" => pb::ReadingQuality::Good,
                "uncertain" => pb::ReadingQuality::Uncertain,
                "bad" => pb::ReadingQuality::Bad,
                _ => {
                    return Err(format!(
                        "column `quality`: `{quality}` is not good, uncertain or bad"
                    ));
                }
            } as i32;
        }
        if let Some(ambient) = optional(self.ambient) {
            let parsed =
                Ambient::parse_pressure(ambient).map_err(|e| format!("column `ambient`: {e}"))?;
            reading.ambient_pressure_pa =
                Some(parsed.resolve().map_err(|e| e.to_string())?.pressure_pa);
        }
        Ok(reading)
    }
}

/// The requests of the stream, as the gRPC client takes them.
struct Requests(mpsc::Receiver<pb::WatchRequest>);

impl tonic::codegen::tokio_stream::Stream for Requests {
    type Item = pb::WatchRequest;

    fn poll_next(mut self: Pin<&mut Self>, cx: &mut TaskContext<'_>) -> Poll<Option<Self::Item>> {
        self.0.poll_recv(cx)
    }
}

/// What the reader thread passes on.
enum Row {
    Reading(pb::Reading),
    Skipped(String),
}

/// Reads the CSV on a thread of its own (standard input may block) and passes rows on in order.
fn spawn_reader(source: Box<dyn Read + Send>, name: String, rows: mpsc::Sender<Row>) {
    std::thread::spawn(move || {
        let mut reader = csv::ReaderBuilder::new()
            .has_headers(true)
            .comment(Some(b'#'))
            .trim(csv::Trim::All)
            .flexible(true)
            .from_reader(BufReader::new(source));
        let columns = match reader.headers() {
            Ok(header) => match Columns::from_header(header) {
                Ok(columns) => columns,
                Err(e) => {
                    let _ = rows.blocking_send(Row::Skipped(format!("{name}: {e:#}")));
                    return;
                }
            },
            Err(e) => {
                let _ = rows
                    .blocking_send(Row::Skipped(format!("{name}: cannot read the header: {e}")));
                return;
            }
        };
        for record in reader.records() {
            let row = match record {
                Ok(record) => {
                    let line = record.position().map_or(0, |p| p.line());
                    match columns.reading(&record) {
                        Ok(reading) => Row::Reading(reading),
                        Err(e) => Row::Skipped(format!("{name} line {line}: {e}; row skipped")),
                    }
                }
                Err(e) => Row::Skipped(format!("{name}: {e}; row skipped")),
            };
            if rows.blocking_send(row).is_err() {
                return;
            }
        }
    });
}

/// Something to print from a response.
enum Item<'a> {
    Outcome(&'a pb::ReadingOutcome),
    Event(&'a pb::AlarmEvent),
}

/// Counts for the closing summary.
#[derive(Debug, Default)]
struct Tally {
    readings: u64,
    raised: u64,
    cleared: u64,
    quality: u64,
    stale: u64,
}

/// Prints events and (optionally) readings as they come back.
struct Printer {
    output: OutputFormat,
    units: UnitSystem,
    readings: bool,
    csv: Option<csv::Writer<std::io::Stdout>>,
    tally: Tally,
}

fn event_kind(event: &pb::AlarmEvent) -> &'static str {
    match pb::AlarmEventKind::try_from(event.kind) {
        Ok(pb::AlarmEventKind::Raised) => "RAISED",
        Ok(pb::AlarmEventKind::Cleared) => "CLEARED",
        Ok(pb::AlarmEventKind::Quality) => "QUALITY",
        Ok(pb::AlarmEventKind::TagStale) => "STALE",
        Ok(pb::AlarmEventKind::TagResumed) => "RESUMED",
        Ok(pb::AlarmEventKind::RuleUndefined) => "UNDEFINED",
        Ok(pb::AlarmEventKind::Notice) => "NOTICE",
        _ => "EVENT",
    }
}

fn enum_name<E: TryFrom<i32>>(value: i32, name: impl Fn(E) -> &'static str) -> String {
    E::try_from(value).map(name).unwrap_or("").to_lowercase()
}

impl Printer {
    fn new(settings: &Settings, readings: bool) -> Printer {
        let csv = (settings.output == OutputFormat::Csv).then(|| {
            let mut writer = csv::Writer::from_writer(std::io::stdout());
            let _ = writer.write_record([
                "time",
                "kind",
                "tag",
                "rule",
                "value",
                "limit",
                "transition",
                "priority",
                "quality_issue",
                "message",
            ]);
            writer
        });
        Printer {
            output: settings.output,
            units: settings.units,
            readings,
            csv,
            tally: Tally::default(),
        }
    }

    fn event(&mut self, event: &pb::AlarmEvent) -> anyhow::Result<()> {
        match pb::AlarmEventKind::try_from(event.kind) {
            Ok(pb::AlarmEventKind::Raised) => self.tally.raised += 1,
            Ok(pb::AlarmEventKind::Cleared) => self.tally.cleared += 1,
            Ok(pb::AlarmEventKind::Quality) => self.tally.quality += 1,
            Ok(pb::AlarmEventKind::TagStale) => self.tally.stale += 1,
            _ => {}
        }
        let time = event.timestamp_unix_ms.map(format_time).unwrap_or_default();
        let transition = enum_name(event.transition, |t: pb::AlarmTransition| t.as_str_name())
            .trim_start_matches("alarm_transition_")
            .replace("unspecified", "");
        let priority = enum_name(event.priority, |p: pb::AlarmPriority| p.as_str_name())
            .trim_start_matches("alarm_priority_")
            .replace("unspecified", "");
        let issue = enum_name(event.quality_issue, |q: pb::QualityIssue| q.as_str_name())
            .trim_start_matches("quality_issue_")
            .replace("unspecified", "");
        let rule = event
            .rule
            .as_ref()
            .map(|r| r.name.clone())
            .unwrap_or_default();
        let number = |v: Option<f64>| v.map(|v| format!("{v}")).unwrap_or_default();
        match self.output {
            OutputFormat::Table => {
                let mut out = std::io::stdout().lock();
                if time.is_empty() {
                    writeln!(out, "{:<9} {}", event_kind(event), event.message)
                } else {
                    writeln!(out, "{time}  {:<9} {}", event_kind(event), event.message)
                }
                .map_err(output_error)?;
            }
            OutputFormat::Json => {
                let value = serde_json::json!({
                    "type": "event",
                    "kind": event_kind(event).to_lowercase(),
                    "time": time,
                    "tag": event.tag,
                    "rule": rule,
                    "value": event.value,
                    "limit": event.limit,
                    "condition_since": event.condition_since_unix_ms.map(format_time),
                    "transition": transition,
                    "priority": priority,
                    "quality_issue": issue,
                    "message": event.message,
                });
                writeln!(std::io::stdout().lock(), "{value}").map_err(output_error)?;
            }
            OutputFormat::Csv => {
                if let Some(writer) = &mut self.csv {
                    writer
                        .write_record([
                            time.as_str(),
                            &event_kind(event).to_lowercase(),
                            &event.tag,
                            &rule,
                            &number(event.value),
                            &number(event.limit),
                            &transition,
                            &priority,
                            &issue,
                            &event.message,
                        ])
                        .map_err(csv_output_error)?;
                }
            }
        }
        Ok(())
    }

    fn outcome(&mut self, outcome: &pb::ReadingOutcome) -> anyhow::Result<()> {
        self.tally.readings += 1;
        if self.readings && outcome.evaluated && self.output != OutputFormat::Csv {
            let time = outcome
                .timestamp_unix_ms
                .map(format_time)
                .unwrap_or_default();
            let phase = pb::Phase::try_from(outcome.phase)
                .map(|p| p.as_str_name())
                .unwrap_or("PHASE_UNSPECIFIED")
                .trim_start_matches("PHASE_")
                .to_lowercase()
                .replace('_', " ");
            let m = outcome.margins.unwrap_or_default();
            match self.output {
                OutputFormat::Json => {
                    let value = serde_json::json!({
                        "type": "reading",
                        "time": time,
                        "tag": outcome.tag,
                        "fluid": outcome.fluid_id,
                        "phase": phase,
                        "absolute_pressure_pa": outcome.absolute_pressure_pa,
                        "subcooling_k": m.subcooling_k,
                        "superheat_k": m.superheat_k,
                        "dew_margin_k": m.dew_margin_k,
                        "critical_pressure_fraction": m.critical_pressure_fraction,
                        "freezing_margin_k": m.freezing_margin_k,
                        "saturation_temperature_k": m.saturation_temperature_k,
                    });
                    writeln!(std::io::stdout().lock(), "{value}").map_err(output_error)?;
                }
                _ => {
                    let units = self.units;
                    let difference = |v: Option<f64>| {
                        v.map_or("—".to_string(), |v| fmt_temperature_difference(v, units))
                    };
                    writeln!(
                        std::io::stdout().lock(),
                        "{time}  reading   {}: {} ({}), {}; Tsat {}, subcooling {}, superheat {}, \
                         P/Pc {:.3}, to freezing {}",
                        outcome.tag,
                        phase,
                        outcome.fluid_id,
                        outcome
                            .absolute_pressure_pa
                            .map_or("—".to_string(), |p| fmt_pressure(p, units)),
                        m.saturation_temperature_k
                            .map_or("—".to_string(), |t| fmt_temperature(t, units)),
                        difference(m.subcooling_k),
                        difference(m.superheat_k),
                        m.critical_pressure_fraction,
                        difference(m.freezing_margin_k),
                    )
                    .map_err(output_error)?;
                }
            }
        }
        for event in &outcome.events {
            self.event(event)?;
        }
        Ok(())
    }

    fn finish(&mut self) -> anyhow::Result<()> {
        if let Some(writer) = &mut self.csv {
            writer.flush().map_err(output_error)?;
        }
        std::io::stdout().flush().map_err(output_error)?;
        Ok(())
    }
}

/// Runs `binodal watch`. Exit code 0 when every row was read and the stream closed normally; 1
/// when rows were skipped (the count is printed).
pub async fn run(settings: &Settings, args: &WatchArgs) -> anyhow::Result<ExitCode> {
    if let Some(speed) = args.speed
        && !(MIN_SPEED..=MAX_SPEED).contains(&speed)
    {
        bail!(
            "--speed {speed}: give a factor from {MIN_SPEED} to {MAX_SPEED:e} (1 replays in real \
             time, 60 one minute per second, 0.001 one second in about 17 minutes)"
        );
    }
    let opening = opening(settings, args)?;
    let (source, name): (Box<dyn Read + Send>, String) = match &args.file {
        None => (Box::new(std::io::stdin()), "standard input".to_string()),
        Some(path) if path == Path::new("-") => {
            (Box::new(std::io::stdin()), "standard input".to_string())
        }
        Some(path) => (
            Box::new(
                std::fs::File::open(path)
                    .with_context(|| format!("cannot open the readings file {}", path.display()))?,
            ),
            path.display().to_string(),
        ),
    };
    let service = Service::connect_with(&settings.server, &settings.security).await?;
    let mut client = AlarmServiceClient::new(service.channel())
        .max_decoding_message_size(MAX_MESSAGE)
        .max_encoding_message_size(MAX_MESSAGE);

    let (requests, request_receiver) = mpsc::channel::<pb::WatchRequest>(16);
    requests
        .send(pb::WatchRequest {
            opening: Some(opening),
            readings: Vec::new(),
        })
        .await
        .context("cannot queue the stream's opening")?;
    let mut responses = client
        .watch_readings(Requests(request_receiver))
        .await
        .map_err(|status| service.error(status))?
        .into_inner();

    let (row_sender, mut rows) = mpsc::channel::<Row>(4 * BATCH);
    spawn_reader(source, name, row_sender);
    let speed = args.speed;
    // Counted as rows are read, so that a run whose output closes early still knows them.
    let skipped = Arc::new(AtomicU64::new(0));
    let skipped_by_sender = Arc::clone(&skipped);
    let sender = tokio::spawn(async move {
        let mut pace: Option<(Instant, i64)> = None;
        let mut batch: Vec<pb::Reading> = Vec::new();
        let flush = |batch: &mut Vec<pb::Reading>| pb::WatchRequest {
            opening: None,
            readings: std::mem::take(batch),
        };
        loop {
            let next = if batch.is_empty() {
                rows.recv().await
            } else {
                match rows.try_recv() {
                    Ok(row) => Some(row),
                    Err(mpsc::error::TryRecvError::Empty) => {
                        if requests.send(flush(&mut batch)).await.is_err() {
                            break;
                        }
                        continue;
                    }
                    Err(mpsc::error::TryRecvError::Disconnected) => None,
                }
            };
            let Some(row) = next else { break };
            match row {
                Row::Skipped(message) => {
                    skipped_by_sender.fetch_add(1, Ordering::Relaxed);
                    // A closed standard error loses the warning, not the failed exit status.
                    let _ = writeln!(std::io::stderr(), "warning: {message}");
                }
                Row::Reading(reading) => {
                    if let (Some(speed), Some(time)) = (speed, reading.timestamp_unix_ms) {
                        let (start, first) = *pace.get_or_insert((Instant::now(), time));
                        let offset = ((time - first).max(0) as f64 / speed) as u64;
                        let due = start + Duration::from_millis(offset);
                        if due > Instant::now() {
                            if !batch.is_empty() && requests.send(flush(&mut batch)).await.is_err()
                            {
                                break;
                            }
                            tokio::time::sleep_until(due).await;
                        }
                    }
                    batch.push(reading);
                    if batch.len() >= BATCH && requests.send(flush(&mut batch)).await.is_err() {
                        break;
                    }
                }
            }
        }
        if !batch.is_empty() {
            let _ = requests.send(flush(&mut batch)).await;
        }
        // Dropping `requests` closes the stream's sending side: the service answers what it has
        // and ends the stream.
    });

    let mut printer = Printer::new(settings, args.readings);
    let played = match print_stream(&mut responses, &mut printer, &service).await {
        // The output closed while the stream ran: stop at once (the reader of the readings may
        // never end).
        Err(e) if is_output_closed(&e) => Err(e),
        // A failed stream is reported as such, whatever became of the output.
        Err(e) => return Err(e),
        Ok(()) => {
            let finished = printer.finish();
            sender.await.context("the reading task failed")?;
            finished.and_then(|()| {
                let t = &printer.tally;
                writeln!(
                    std::io::stderr(),
                    "{} readings played: {} raised, {} cleared, {} quality events, {} stale-tag events; \
                     {} rows skipped. Alarms are advisory: no substitute for the plant's own \
                     protection.",
                    t.readings,
                    t.raised,
                    t.cleared,
                    t.quality,
                    t.stale,
                    skipped.load(Ordering::Relaxed)
                )
                .map_err(output_error)
            })
        }
    };
    // Skipped rows fail the run even when its output closed (as `health` keeps "not serving").
    let code = if skipped.load(Ordering::Relaxed) > 0 {
        ExitCode::FAILURE
    } else {
        ExitCode::SUCCESS
    };
    match played {
        Err(e) if !is_output_closed(&e) => Err(e),
        _ => Ok(code),
    }
}

/// Prints the stream's answers until the service ends it.
async fn print_stream(
    responses: &mut tonic::Streaming<pb::WatchResponse>,
    printer: &mut Printer,
    service: &Service,
) -> anyhow::Result<()> {
    loop {
        match responses.message().await {
            Ok(Some(response)) => {
                // In reading-time order: a request can span minutes of readings, and the stream's
                // own events (stale tags) come at the stream clock of their reading. Notices have
                // no time and come first.
                let mut items: Vec<(i64, Item<'_>)> = response
                    .outcomes
                    .iter()
                    .map(|o| (o.timestamp_unix_ms.unwrap_or(i64::MIN), Item::Outcome(o)))
                    .chain(
                        response
                            .events
                            .iter()
                            .map(|e| (e.timestamp_unix_ms.unwrap_or(i64::MIN), Item::Event(e))),
                    )
                    .collect();
                items.sort_by_key(|(time, _)| *time);
                for (_, item) in items {
                    match item {
                        Item::Outcome(outcome) => printer.outcome(outcome)?,
                        Item::Event(event) => printer.event(event)?,
                    }
                }
            }
            Ok(None) => return Ok(()),
            Err(status) => return Err(service.error(status).into()),
        }
    }
}

/// Reads all of `input` line by line (for tests of the CSV layer without a server).
#[cfg(test)]
fn read_rows(input: &str) -> Vec<Result<pb::Reading, String>> {
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .comment(Some(b'#'))
        .trim(csv::Trim::All)
        .flexible(true)
        .from_reader(BufReader::new(input.as_bytes()));
    let columns = Columns::from_header(reader.headers().expect("header")).expect("columns");
    reader
        .records()
        .map(|r| columns.reading(&r.expect("record")))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// 2026-01-15T06:00:00Z is 1768456800 s after the epoch (POSIX time, computed independently
    /// with Python's datetime); 2000-03-01 is 951868800 s.
    #[test]
    fn times_parse_in_both_forms_and_round_trip() {
        assert_eq!(parse_time("2026-01-15T06:00:00Z"), Ok(1_768_456_800_000));
        assert_eq!(
            parse_time("2026-01-15 07:00:00+01:00"),
            Ok(1_768_456_800_000)
        );
        assert_eq!(parse_time("2026-01-15T06:00:00.25Z"), Ok(1_768_456_800_250));
        assert_eq!(parse_time("1768456800"), Ok(1_768_456_800_000));
        assert_eq!(parse_time("2000-03-01T00:00:00Z"), Ok(951_868_800_000));
        assert_eq!(format_time(1_768_456_815_000), "2026-01-15T06:00:15Z");
        for bad in [
            "yesterday",
            "2026-13-01T00:00:00Z",
            "2026-01-15T06:00:00",
            "2026-01-15",
        ] {
            let error = parse_time(bad).expect_err(bad);
            assert!(error.contains("RFC 3339"), "{error}");
        }
    }

    #[test]
    fn rows_keep_gauge_and_absolute_and_report_bad_cells() {
        let rows = read_rows(
            "time,tag,fluid,pressure,temperature,quality\n\
             2026-01-15T06:00:00Z,NH3-P101,R-717,1.1barg,-30C,\n\
             2026-01-15T06:00:01Z,CO2-RK2-GC,R-744,85bar,33C,uncertain\n\
             2026-01-15T06:00:02Z,CH-2-CHWL,water,,4C,bad\n\
             2026-01-15T06:00:03Z,CH-2-CHWL,water,3barg,4 parsecs,\n",
        );
        let first = rows[0].as_ref().expect("good row");
        assert_eq!(first.pressure_kind, pb::PressureKind::Gauge as i32);
        // 1 bar = 100 000 Pa (SI Brochure); allow the rounding of 1.1 x 100 000.
        assert!((first.pressure_pa.expect("pressure") - 1.1e5).abs() < 1e-6);
        assert!((first.temperature_k.unwrap() - 243.15).abs() < 1e-9);
        let second = rows[1].as_ref().expect("good row");
        assert_eq!(second.pressure_kind, pb::PressureKind::Absolute as i32);
        assert_eq!(second.quality, pb::ReadingQuality::Uncertain as i32);
        let third = rows[2]
            .as_ref()
            .expect("missing pressure is sent as missing");
        assert_eq!(third.pressure_pa, None);
        assert_eq!(third.quality, pb::ReadingQuality::Bad as i32);
        let fourth = rows[3].as_ref().expect_err("unreadable temperature");
        assert!(fourth.contains("column `temperature`"), "{fourth}");
    }

    #[test]
    fn rule_flags_parse_and_name_their_mistakes() {
        let (tag, rule) =
            parse_rule_flag("NH3-P101=minimum-subcooling,limit=3,on_delay_s=15,priority=high")
                .expect("valid rule");
        assert_eq!(tag, "NH3-P101");
        let rule = rule.proto("test").expect("known kind");
        assert_eq!(rule.kind, pb::AlarmRuleKind::MinimumSubcooling as i32);
        assert_eq!(rule.limit, Some(3.0));
        assert_eq!(rule.on_delay_s, Some(15.0));
        assert_eq!(rule.priority, pb::AlarmPriority::High as i32);
        let error = parse_rule_flag("NH3-P101=minimum-subcooling,lmit=3").expect_err("typo");
        assert!(error.to_string().contains("lmit"), "{error}");
        let (_, unknown) = parse_rule_flag("P1=low-pressure").expect("parses");
        let error = unknown
            .proto("--rule P1=low-pressure")
            .expect_err("unknown kind");
        assert!(error.to_string().contains("minimum-subcooling"), "{error}");
    }

    /// The demo rules file parses into one setup per tag.
    #[test]
    fn the_demo_rules_file_is_valid() {
        let path =
            Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/harrowgate_cold_store.toml");
        let text = std::fs::read_to_string(&path).expect("demo rules file");
        let file: RulesFile = toml::from_str(&text).expect("valid TOML");
        assert!(!file.tags.is_empty());
        for (index, entry) in file.tags.iter().enumerate() {
            for rule in &entry.rules {
                rule.proto(&format!("tags[{index}]"))
                    .expect("known kind and priority");
            }
        }
    }

    /// Every row of the demo CSV can be read (the quality events in it come from the service).
    #[test]
    fn the_demo_readings_file_reads() {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/harrowgate_cold_store.csv");
        let mut text = String::new();
        std::fs::File::open(&path)
            .expect("demo readings")
            .read_to_string(&mut text)
            .expect("utf-8");
        let rows = read_rows(&text);
        assert!(rows.len() > 100, "{} rows", rows.len());
        for (index, row) in rows.iter().enumerate() {
            assert!(row.is_ok(), "row {index}: {row:?}");
        }
    }
}
