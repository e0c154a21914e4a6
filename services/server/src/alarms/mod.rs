//! Alarm watch: `binodal.v1.AlarmService` turns plant readings into phase, margins and alarm
//! events that follow IEC 62682 / ANSI/ISA-18.2 practice (limit, deadband, on- and off-delay,
//! priority), timed by the readings' own timestamps.
//!
//! - [`machine`]: the state machine of one rule on one tag; pure, no I/O, no wire types.
//! - [`rules`]: rule kinds, their defaults with sources, and parameter checks.
//! - [`config`]: the `[alarms]` settings section (stale time, default ambient, rules per tag).
//! - `session`: the state of one stream (tags, order checks, stale tags) and the stateless
//!   evaluation of single readings; engine and catalogue types, no wire types.
//! - `wire`: protobuf to and from the session's types.
//! - `service`: the tonic handlers and the stream task.
//!
//! The alarms are advisory: no substitute for a safety instrumented system or the plant's own
//! protection, deferring to local codes and licensed practice (`docs/alarms.md`).

pub mod config;
pub mod machine;
pub mod rules;
mod service;
mod session;
mod wire;

pub use service::{AlarmApi, AlarmStop};
