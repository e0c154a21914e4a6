//! Readings that the units layer alone does not cover: a value that may be either a temperature or
//! a pressure (told apart by its unit), a pressure step for tables, and an operating point
//! (`25C,12bar`) for diagrams.

use std::fmt;

use crate::units::{
    AbsolutePressure, Ambient, InputKind, PressureKind, PressureReading, Temperature,
    TemperatureDifference, UnitError,
};

/// Why a temperature-or-pressure reading could not be read.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ReadingError {
    /// The unit is neither a temperature nor a pressure unit (or there is no unit at all).
    #[error(
        "`{input}` is neither a temperature nor a pressure; write a number with a unit. \
         Temperatures: {}. Pressures: {}",
        InputKind::Temperature.accepted_forms(),
        InputKind::Pressure.accepted_forms()
    )]
    NeitherTemperatureNorPressure {
        /// The text as typed.
        input: String,
    },
    /// The reading was recognised but is not valid (below absolute zero, bad number, ...).
    #[error(transparent)]
    Unit(#[from] UnitError),
    /// A pressure step written as a gauge reading.
    #[error(
        "`{input}`: a pressure step is a difference, neither gauge nor absolute; write e.g. 0.5bar, 50kPa or 5psi"
    )]
    GaugeStep {
        /// The text as typed.
        input: String,
    },
    /// A step that is zero or negative.
    #[error("`{input}`: the step must be greater than zero")]
    StepNotPositive {
        /// The text as typed.
        input: String,
    },
    /// An operating point that is not `temperature,pressure`.
    #[error(
        "`{input}`: an operating point is a temperature and a pressure separated by a comma, \
         e.g. 25C,12bar or -8C,26barg"
    )]
    MarkShape {
        /// The text as typed.
        input: String,
    },
}

/// A value that is either a temperature or a pressure, as typed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Reading {
    /// A temperature.
    Temperature(Temperature),
    /// A pressure, gauge or absolute.
    Pressure(PressureReading),
}

impl Reading {
    /// Reads `25C` as a temperature and `8.2bar`, `8.2barg` as a pressure; the unit decides.
    pub fn parse(input: &str) -> Result<Self, ReadingError> {
        let as_temperature = Temperature::parse(input);
        let temperature_error = match as_temperature {
            Ok(t) => return Ok(Reading::Temperature(t)),
            Err(e) => e,
        };
        let pressure_error = match PressureReading::parse(input) {
            Ok(p) => return Ok(Reading::Pressure(p)),
            Err(e) => e,
        };
        // A unit that one of the two recognised: report that parser's complaint (for example a
        // temperature below absolute zero). Otherwise list both sets of accepted forms.
        let unrecognised = |e: &UnitError| {
            matches!(
                e,
                UnitError::UnknownUnit { .. } | UnitError::MissingUnit { .. }
            )
        };
        match (
            unrecognised(&temperature_error),
            unrecognised(&pressure_error),
        ) {
            (false, true) => Err(temperature_error.into()),
            (true, false) => Err(pressure_error.into()),
            (true, true) => Err(ReadingError::NeitherTemperatureNorPressure {
                input: input.trim().to_string(),
            }),
            // Both failed for the same reason (not a number, a comma, empty): one message.
            (false, false) => Err(temperature_error.into()),
        }
    }
}

/// A temperature, or a pressure already converted to absolute with the ambient in force.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Condition {
    /// A temperature.
    Temperature(Temperature),
    /// An absolute pressure, with the reading and ambient it came from.
    Pressure(AbsolutePressure),
}

impl Condition {
    /// Converts a reading, applying `ambient` to a gauge pressure.
    pub fn from_reading(reading: Reading, ambient: Ambient) -> Result<Self, UnitError> {
        Ok(match reading {
            Reading::Temperature(t) => Condition::Temperature(t),
            Reading::Pressure(p) => Condition::Pressure(p.to_absolute(ambient)?),
        })
    }
}

/// A pressure difference for the step of a pressure table, Pa, greater than zero.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PressureStep {
    pascal: f64,
}

impl PressureStep {
    /// Reads `0.5bar`, `50kPa`, `5psi`; gauge spellings are refused (a step is a difference).
    pub fn parse(input: &str) -> Result<Self, ReadingError> {
        let reading = PressureReading::parse(input)?;
        if reading.kind == PressureKind::Gauge {
            return Err(ReadingError::GaugeStep {
                input: input.trim().to_string(),
            });
        }
        if reading.value_pa <= 0.0 {
            return Err(ReadingError::StepNotPositive {
                input: input.trim().to_string(),
            });
        }
        Ok(PressureStep {
            pascal: reading.value_pa,
        })
    }

    /// The step in pascal.
    pub fn pascal(self) -> f64 {
        self.pascal
    }
}

/// Reads a temperature step such as `5C`, `5K` or `9F`; it must be greater than zero.
pub fn parse_temperature_step(input: &str) -> Result<TemperatureDifference, ReadingError> {
    let step = TemperatureDifference::parse(input)?;
    if step.kelvin() <= 0.0 {
        return Err(ReadingError::StepNotPositive {
            input: input.trim().to_string(),
        });
    }
    Ok(step)
}

/// An operating point marked on a diagram: a temperature and a pressure as typed.
#[derive(Debug, Clone, PartialEq)]
pub struct Mark {
    /// The text as typed, used as the point's label.
    pub text: String,
    /// The temperature.
    pub temperature: Temperature,
    /// The pressure reading (gauge or absolute).
    pub pressure: PressureReading,
}

impl Mark {
    /// Reads `25C,12bar` (either order); numbers never contain commas, so the comma is
    /// unambiguous.
    pub fn parse(input: &str) -> Result<Self, ReadingError> {
        let shape = || ReadingError::MarkShape {
            input: input.trim().to_string(),
        };
        let (first, second) = input.split_once(',').ok_or_else(shape)?;
        if second.contains(',') {
            return Err(shape());
        }
        match (Reading::parse(first)?, Reading::parse(second)?) {
            (Reading::Temperature(temperature), Reading::Pressure(pressure))
            | (Reading::Pressure(pressure), Reading::Temperature(temperature)) => Ok(Mark {
                text: input.trim().to_string(),
                temperature,
                pressure,
            }),
            _ => Err(shape()),
        }
    }
}

impl fmt::Display for Mark {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.text)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::{BAR_PA, CELSIUS_ZERO_K, PSI_PA};

    #[test]
    fn the_unit_decides_between_temperature_and_pressure() {
        // Conversions: ISO 80000-5 (°C), NIST SP 811 (2008) B.9 (bar, psi).
        match Reading::parse("25C").expect("25C") {
            Reading::Temperature(t) => assert!((t.kelvin() - (25.0 + CELSIUS_ZERO_K)).abs() < 1e-9),
            other => panic!("25C read as {other:?}"),
        }
        match Reading::parse("8.2bar").expect("8.2bar") {
            Reading::Pressure(p) => {
                assert_eq!(p.kind, PressureKind::Absolute);
                assert!((p.value_pa - 8.2 * BAR_PA).abs() < 1e-6);
            }
            other => panic!("8.2bar read as {other:?}"),
        }
        match Reading::parse("4.1 bar(g)").expect("4.1 bar(g)") {
            Reading::Pressure(p) => assert_eq!(p.kind, PressureKind::Gauge),
            other => panic!("4.1 bar(g) read as {other:?}"),
        }
        match Reading::parse("120psig").expect("120psig") {
            Reading::Pressure(p) => assert!((p.value_pa - 120.0 * PSI_PA).abs() < 1e-6),
            other => panic!("120psig read as {other:?}"),
        }
    }

    #[test]
    fn unreadable_values_list_both_kinds_of_accepted_forms() {
        for input in ["25", "25 parsecs"] {
            let message = Reading::parse(input).expect_err(input).to_string();
            assert!(
                message.contains("neither a temperature nor a pressure"),
                "{message}"
            );
            assert!(message.contains("25C"), "{message}");
            assert!(message.contains("8.2barg"), "{message}");
        }
        // A recognised unit with an invalid value keeps the specific complaint.
        let message = Reading::parse("-300C").expect_err("-300C").to_string();
        assert!(message.contains("below absolute zero"), "{message}");
        let message = Reading::parse("-2bar").expect_err("-2bar").to_string();
        assert!(message.contains("negative absolute pressure"), "{message}");
    }

    #[test]
    fn steps_must_be_positive_differences() {
        assert!(
            (PressureStep::parse("0.5bar").expect("0.5bar").pascal() - 0.5 * BAR_PA).abs() < 1e-9
        );
        let message = PressureStep::parse("0.5barg")
            .expect_err("gauge")
            .to_string();
        assert!(message.contains("difference"), "{message}");
        let message = PressureStep::parse("0bar").expect_err("zero").to_string();
        assert!(message.contains("greater than zero"), "{message}");
        assert!((parse_temperature_step("5C").expect("5C").kelvin() - 5.0).abs() < 1e-12);
        let message = parse_temperature_step("-5K")
            .expect_err("negative")
            .to_string();
        assert!(message.contains("greater than zero"), "{message}");
    }

    #[test]
    fn marks_take_a_temperature_and_a_pressure_in_either_order() {
        let mark = Mark::parse("25C,12bar").expect("25C,12bar");
        assert!((mark.temperature.kelvin() - 298.15).abs() < 1e-9);
        assert!((mark.pressure.value_pa - 12.0 * BAR_PA).abs() < 1e-6);
        assert_eq!(mark.text, "25C,12bar");
        let swapped = Mark::parse("26barg, -8C").expect("swapped");
        assert_eq!(swapped.pressure.kind, PressureKind::Gauge);
        for bad in ["25C", "25C,30C", "12bar,13bar", "25C,12bar,1"] {
            let message = Mark::parse(bad).expect_err(bad).to_string();
            assert!(message.contains("operating point"), "{bad}: {message}");
        }
    }
}
