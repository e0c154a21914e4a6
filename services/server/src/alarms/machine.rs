//! The alarm state machine of one rule on one tag: a limit with a deadband, an on-delay and an
//! off-delay, in the sense of IEC 62682 / ANSI/ISA-18.2 and of the OPC UA alarm model (OPC 10000-9,
//! Annex B.1.5):
//!
//! - the alarm is **raised** when the value has been beyond the limit (below a minimum, above a
//!   maximum) at every reading for at least the on-delay;
//! - an active alarm is **cleared** when the value has been past the limit by at least the deadband,
//!   back on the normal side, at every reading for at least the off-delay. A value between the
//!   limit and the deadband keeps an active alarm active and restarts the off-delay.
//!
//! Time is the readings' own timestamps in milliseconds, never a clock of the server, so a replay
//! of recorded readings gives the same events as the live plant did. The caller feeds readings of
//! one tag in strictly rising time order (the session refuses the others) and calls
//! [`RuleMachine::interrupt`] when a reading of the tag is unusable: a gap in good data breaks the
//! "at every reading" condition, so pending delays start again; an active alarm stays active.
//!
//! No tonic, protobuf or engine types here: numbers in, changes out.

/// Which side of the limit is abnormal.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Bound {
    /// Abnormal below the limit (a minimum margin).
    Minimum,
    /// Abnormal above the limit (a maximum).
    Maximum,
}

/// The limit of a rule with its deadband and delays.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Limits {
    /// Which side of the limit is abnormal.
    pub bound: Bound,
    /// The alarm limit.
    pub limit: f64,
    /// How far past the limit, on the normal side, the value must go to clear; at least 0.
    pub deadband: f64,
    /// How long the value must stay beyond the limit before the alarm is raised, ms; at least 0.
    pub on_delay_ms: i64,
    /// How long the value must stay past the deadband before the alarm clears, ms; at least 0.
    pub off_delay_ms: i64,
}

impl Limits {
    /// Whether `value` is beyond the limit (strictly below a minimum, strictly above a maximum).
    pub fn beyond_limit(&self, value: f64) -> bool {
        match self.bound {
            Bound::Minimum => value < self.limit,
            Bound::Maximum => value > self.limit,
        }
    }

    /// The value an active alarm must reach to start clearing: the limit moved by the deadband
    /// towards the normal side.
    pub fn clear_threshold(&self) -> f64 {
        match self.bound {
            Bound::Minimum => self.limit + self.deadband,
            Bound::Maximum => self.limit - self.deadband,
        }
    }

    /// Whether `value` is past the clear threshold (or on it).
    pub fn past_deadband(&self, value: f64) -> bool {
        match self.bound {
            Bound::Minimum => value >= self.clear_threshold(),
            Bound::Maximum => value <= self.clear_threshold(),
        }
    }
}

/// A change of a rule's state, caused by one reading.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Change {
    /// The alarm became active.
    Raised {
        /// The value at the reading that completed the on-delay.
        value: f64,
        /// Timestamp of the first reading of the unbroken run beyond the limit, ms.
        since_ms: i64,
    },
    /// The alarm became inactive.
    Cleared {
        /// The value at the reading that completed the off-delay.
        value: f64,
        /// Timestamp of the first reading of the unbroken run past the deadband, ms.
        since_ms: i64,
    },
    /// The rule's value is not defined at this reading (first such reading after a defined one,
    /// or the first reading of all); the alarm state is held and pending delays restart.
    Undefined,
}

/// The state of one rule on one tag.
#[derive(Debug, Clone, PartialEq)]
pub struct RuleMachine {
    limits: Limits,
    active: bool,
    /// Start of the unbroken run of readings heading to the other state (beyond the limit while
    /// normal, past the deadband while active).
    pending_since_ms: Option<i64>,
    /// Whether the last reading left the value undefined (so that it is reported once).
    undefined: bool,
}

impl RuleMachine {
    /// A machine in the normal (inactive) state.
    pub fn new(limits: Limits) -> RuleMachine {
        RuleMachine {
            limits,
            active: false,
            pending_since_ms: None,
            undefined: false,
        }
    }

    /// The rule's limits.
    pub fn limits(&self) -> &Limits {
        &self.limits
    }

    /// Whether the alarm is active.
    pub fn is_active(&self) -> bool {
        self.active
    }

    /// Feeds one reading's value at `time_ms`: `None` (or a non-finite number) when the value is
    /// not defined there. Returns the change the reading caused, if any.
    pub fn observe(&mut self, time_ms: i64, value: Option<f64>) -> Option<Change> {
        let Some(value) = value.filter(|v| v.is_finite()) else {
            self.pending_since_ms = None;
            if self.undefined {
                return None;
            }
            self.undefined = true;
            return Some(Change::Undefined);
        };
        self.undefined = false;
        let heading_over = if self.active {
            self.limits.past_deadband(value)
        } else {
            self.limits.beyond_limit(value)
        };
        if !heading_over {
            self.pending_since_ms = None;
            return None;
        }
        let since_ms = *self.pending_since_ms.get_or_insert(time_ms);
        let delay_ms = if self.active {
            self.limits.off_delay_ms
        } else {
            self.limits.on_delay_ms
        };
        if time_ms.saturating_sub(since_ms) < delay_ms {
            return None;
        }
        self.pending_since_ms = None;
        self.active = !self.active;
        Some(if self.active {
            Change::Raised { value, since_ms }
        } else {
            Change::Cleared { value, since_ms }
        })
    }

    /// A reading of the tag was unusable: pending delays start again (the condition was not seen
    /// at every reading); an active alarm stays active.
    pub fn interrupt(&mut self) {
        self.pending_since_ms = None;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// Seconds to milliseconds.
    const S: i64 = 1000;

    /// Minimum subcooling, 3 K limit, 1 K deadband, 15 s on- and off-delay: the defaults of the
    /// `minimum-subcooling` rule kind (docs/alarms.md; common practice, delays after the
    /// ISA-18.2 starting point for pressure-driven signals, from memory).
    fn subcooling_rule() -> Limits {
        Limits {
            bound: Bound::Minimum,
            limit: 3.0,
            deadband: 1.0,
            on_delay_ms: 15 * S,
            off_delay_ms: 15 * S,
        }
    }

    /// Feeds `(seconds, value)` readings and returns the changes with the second they occurred.
    fn run(machine: &mut RuleMachine, readings: &[(i64, f64)]) -> Vec<(i64, Change)> {
        readings
            .iter()
            .filter_map(|&(t, v)| machine.observe(t * S, Some(v)).map(|c| (t, c)))
            .collect()
    }

    /// A reading every second from `from` to `to` inclusive, all with `value`.
    fn steady(from: i64, to: i64, value: f64) -> Vec<(i64, f64)> {
        (from..=to).map(|t| (t, value)).collect()
    }

    /// The scripted sequence of the issue: crossing the limit, hovering inside the deadband, and
    /// leaving it. The expected events follow from the definitions in the module documentation
    /// (IEC 62682 / ISA-18.2 on- and off-delay and deadband); the numbers are the script's own.
    #[test]
    fn crossing_hovering_and_leaving_give_one_raise_and_one_clear() {
        let mut machine = RuleMachine::new(subcooling_rule());
        let mut readings = steady(0, 4, 5.0); // normal, 2 K above the limit
        readings.extend(steady(5, 25, 2.5)); // beyond the limit from t = 5 s
        readings.extend([(26, 3.5), (27, 3.9), (28, 3.2), (29, 3.99)]); // inside the deadband
        readings.extend(steady(30, 40, 4.0)); // on the clear threshold from t = 30 s
        readings.extend([(41, 3.8)]); // back inside the deadband: the off-delay restarts
        readings.extend(steady(42, 60, 4.5)); // past the deadband from t = 42 s
        let changes = run(&mut machine, &readings);
        assert_eq!(
            changes,
            vec![
                // 15 s after the first reading beyond the limit (t = 5 s).
                (
                    20,
                    Change::Raised {
                        value: 2.5,
                        since_ms: 5 * S
                    }
                ),
                // 15 s after t = 42 s: the run from t = 30 s was broken at t = 41 s.
                (
                    57,
                    Change::Cleared {
                        value: 4.5,
                        since_ms: 42 * S
                    }
                ),
            ]
        );
        assert!(!machine.is_active());
    }

    /// A value chattering across the limit faster than the on-delay raises nothing.
    #[test]
    fn chatter_shorter_than_the_on_delay_raises_nothing() {
        let mut machine = RuleMachine::new(subcooling_rule());
        let readings: Vec<(i64, f64)> = (0..120)
            .map(|t| (t, if (t / 10) % 2 == 0 { 2.9 } else { 3.1 }))
            .collect();
        assert_eq!(run(&mut machine, &readings), vec![]);
        assert!(!machine.is_active());
    }

    /// Without delays and deadband the alarm follows the limit reading by reading.
    #[test]
    fn zero_delays_and_deadband_follow_the_limit() {
        let mut machine = RuleMachine::new(Limits {
            on_delay_ms: 0,
            off_delay_ms: 0,
            deadband: 0.0,
            ..subcooling_rule()
        });
        let changes = run(
            &mut machine,
            &[(0, 4.0), (1, 2.0), (2, 2.5), (3, 3.0), (4, 1.0)],
        );
        assert_eq!(
            changes,
            vec![
                (
                    1,
                    Change::Raised {
                        value: 2.0,
                        since_ms: S
                    }
                ),
                // Exactly on the limit is not beyond it, and is past a zero deadband.
                (
                    3,
                    Change::Cleared {
                        value: 3.0,
                        since_ms: 3 * S
                    }
                ),
                (
                    4,
                    Change::Raised {
                        value: 1.0,
                        since_ms: 4 * S
                    }
                ),
            ]
        );
    }

    /// A maximum rule (critical pressure fraction, 0.90 limit, 0.02 deadband) mirrors a minimum.
    #[test]
    fn maximum_rule_raises_above_and_clears_below_the_deadband() {
        let mut machine = RuleMachine::new(Limits {
            bound: Bound::Maximum,
            limit: 0.90,
            deadband: 0.02,
            on_delay_ms: 2 * S,
            off_delay_ms: 2 * S,
        });
        let changes = run(
            &mut machine,
            &[
                (0, 0.85),
                (1, 0.91),
                (2, 0.92),
                (3, 0.93), // 2 s beyond: raised
                (4, 0.89), // inside the deadband (clear threshold 0.88)
                (5, 0.89),
                (6, 0.89),
                (7, 0.88), // on the threshold: off-delay starts
                (8, 0.87),
                (9, 0.86), // 2 s past: cleared
            ],
        );
        assert_eq!(
            changes,
            vec![
                (
                    3,
                    Change::Raised {
                        value: 0.93,
                        since_ms: S
                    }
                ),
                (
                    9,
                    Change::Cleared {
                        value: 0.86,
                        since_ms: 7 * S
                    }
                ),
            ]
        );
    }

    /// An unusable reading restarts a pending on-delay but keeps an active alarm.
    #[test]
    fn interruption_restarts_delays_and_holds_the_state() {
        let mut machine = RuleMachine::new(subcooling_rule());
        assert_eq!(run(&mut machine, &steady(0, 10, 2.0)), vec![]);
        machine.interrupt();
        // The run restarts at t = 11 s, so the raise comes at 26 s rather than 15 s.
        let changes = run(&mut machine, &steady(11, 30, 2.0));
        assert_eq!(
            changes,
            vec![(
                26,
                Change::Raised {
                    value: 2.0,
                    since_ms: 11 * S
                }
            )]
        );
        machine.interrupt();
        assert!(machine.is_active(), "an interruption never clears an alarm");
    }

    /// An undefined value is reported once per stretch, holds the state and restarts delays.
    #[test]
    fn undefined_value_is_reported_once_and_holds_the_state() {
        let mut machine = RuleMachine::new(subcooling_rule());
        assert_eq!(machine.observe(0, None), Some(Change::Undefined));
        assert_eq!(machine.observe(S, None), None);
        assert_eq!(machine.observe(2 * S, Some(f64::NAN)), None);
        assert_eq!(run(&mut machine, &steady(3, 17, 2.0)), vec![]);
        assert_eq!(machine.observe(18 * S, None), Some(Change::Undefined));
        // The run beyond the limit restarts after the undefined reading.
        let changes = run(&mut machine, &steady(19, 34, 2.0));
        assert_eq!(
            changes,
            vec![(
                34,
                Change::Raised {
                    value: 2.0,
                    since_ms: 19 * S
                }
            )]
        );
    }

    proptest! {
        /// For any sequence of values, raises and clears alternate (starting with a raise), a
        /// raise only follows a run beyond the limit of at least the on-delay, and a clear only a
        /// run past the deadband of at least the off-delay.
        #[test]
        fn raises_and_clears_alternate_and_respect_the_rule(
            values in proptest::collection::vec(0.0f64..6.0, 1..200),
            deadband in 0.0f64..2.0,
            on_delay_s in 0i64..10,
            off_delay_s in 0i64..10,
        ) {
            let limits = Limits {
                bound: Bound::Minimum,
                limit: 3.0,
                deadband,
                on_delay_ms: on_delay_s * S,
                off_delay_ms: off_delay_s * S,
            };
            let mut machine = RuleMachine::new(limits);
            let mut expect_raise = true;
            for (i, &value) in values.iter().enumerate() {
                let t = i as i64;
                match machine.observe(t * S, Some(value)) {
                    Some(Change::Raised { since_ms, value: v }) => {
                        prop_assert!(expect_raise);
                        prop_assert!(v < limits.limit);
                        prop_assert!(t * S - since_ms >= limits.on_delay_ms);
                        let from = (since_ms / S) as usize;
                        prop_assert!(values[from..=i].iter().all(|&x| x < limits.limit));
                        expect_raise = false;
                    }
                    Some(Change::Cleared { since_ms, value: v }) => {
                        prop_assert!(!expect_raise);
                        prop_assert!(v >= limits.clear_threshold());
                        prop_assert!(t * S - since_ms >= limits.off_delay_ms);
                        let from = (since_ms / S) as usize;
                        prop_assert!(values[from..=i]
                            .iter()
                            .all(|&x| x >= limits.clear_threshold()));
                        expect_raise = true;
                    }
                    Some(Change::Undefined) => prop_assert!(false, "values are all defined"),
                    None => {}
                }
                prop_assert_eq!(machine.is_active(), !expect_raise);
            }
        }
    }
}
