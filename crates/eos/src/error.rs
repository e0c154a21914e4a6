//! Typed errors of the engine. Every variant names the offending field and, where one
//! exists, the valid range, so that a caller can show the user exactly what to change.

use std::fmt;

/// An error from the engine: a kind with the details the user needs.
#[derive(Debug, Clone, PartialEq)]
pub struct Error {
    kind: ErrorKind,
}

/// What went wrong.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum ErrorKind {
    /// An input was NaN or infinite.
    NonFinite {
        /// Name of the input field, e.g. `temperature_k`.
        field: &'static str,
    },
    /// An input that must be positive was zero or negative.
    NonPositive {
        /// Name of the input field.
        field: &'static str,
        /// The value given.
        value: f64,
    },
    /// An input lies outside the range the model covers.
    OutOfRange {
        /// Name of the input field.
        field: &'static str,
        /// The value given.
        value: f64,
        /// Lowest valid value.
        min: f64,
        /// Highest valid value.
        max: f64,
        /// Unit of value, min and max (e.g. `K`, `Pa`).
        unit: &'static str,
    },
    /// The input lies in the band just below the critical point where two-phase
    /// results are not resolvable in double precision.
    NearCritical {
        /// Name of the input field.
        field: &'static str,
        /// The value given.
        value: f64,
        /// The upper end of the solvable range; the band runs from here to the critical value.
        limit: f64,
        /// The critical value.
        critical: f64,
        /// Unit of the values.
        unit: &'static str,
    },
    /// A mixture has no bubble or dew point at this input: near or above its critical
    /// region, or outside its two-phase envelope.
    OutsideEnvelope {
        /// Name of the input field.
        field: &'static str,
        /// The value given.
        value: f64,
        /// What is wrong and, where known, the valid range.
        detail: String,
    },
    /// A model name that the engine does not know.
    UnknownModel {
        /// The name given.
        name: String,
    },
    /// A fluid constant or model parameter is not acceptable.
    InvalidParameter {
        /// Name of the parameter, e.g. `acentric_factor`.
        field: &'static str,
        /// The value given.
        value: f64,
        /// Why it is rejected, including the valid range.
        reason: String,
    },
    /// Data needed for the requested quantity is missing (e.g. no ideal-gas heat capacity).
    MissingData {
        /// What is missing.
        what: String,
    },
    /// A solver did not converge. This is a defect or an input very close to a
    /// singular point; the message says which solve failed.
    NoConvergence {
        /// Which solve failed.
        what: &'static str,
        /// Detail for the log.
        detail: String,
    },
}

impl Error {
    /// Builds an error of the given kind.
    pub fn new(kind: ErrorKind) -> Error {
        Error { kind }
    }

    /// The kind of error with its details.
    pub fn kind(&self) -> &ErrorKind {
        &self.kind
    }

    /// The name of the field at fault, if the error concerns one field.
    pub fn field(&self) -> Option<&'static str> {
        match &self.kind {
            ErrorKind::NonFinite { field }
            | ErrorKind::NonPositive { field, .. }
            | ErrorKind::OutOfRange { field, .. }
            | ErrorKind::NearCritical { field, .. }
            | ErrorKind::OutsideEnvelope { field, .. }
            | ErrorKind::InvalidParameter { field, .. } => Some(field),
            _ => None,
        }
    }

    pub(crate) fn non_finite(field: &'static str) -> Error {
        Error::new(ErrorKind::NonFinite { field })
    }

    pub(crate) fn out_of_range(
        field: &'static str,
        value: f64,
        min: f64,
        max: f64,
        unit: &'static str,
    ) -> Error {
        Error::new(ErrorKind::OutOfRange {
            field,
            value,
            min,
            max,
            unit,
        })
    }

    pub(crate) fn outside_envelope(
        field: &'static str,
        value: f64,
        detail: impl Into<String>,
    ) -> Error {
        Error::new(ErrorKind::OutsideEnvelope {
            field,
            value,
            detail: detail.into(),
        })
    }

    pub(crate) fn no_convergence(what: &'static str, detail: impl Into<String>) -> Error {
        Error::new(ErrorKind::NoConvergence {
            what,
            detail: detail.into(),
        })
    }

    pub(crate) fn invalid(field: &'static str, value: f64, reason: impl Into<String>) -> Error {
        Error::new(ErrorKind::InvalidParameter {
            field,
            value,
            reason: reason.into(),
        })
    }
}

/// A number in a message: to 12 significant digits for ordinary magnitudes (enough for every
/// digit a person typed, without the last bits of rounding, so 374.20962578999996 prints as
/// 374.20962579), in scientific notation below 1e-4 and from 1e15 up (so that 1.8e-308 does not
/// print as 300 zeros).
struct Number(f64);

impl fmt::Display for Number {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let magnitude = self.0.abs();
        if self.0 == 0.0 || !self.0.is_finite() {
            write!(f, "{}", self.0)
        } else if (1e-4..1e15).contains(&magnitude) {
            let decimals = (11 - magnitude.log10().floor() as i32).max(0) as usize;
            let text = format!("{:.*}", decimals, self.0);
            let text = if text.contains('.') {
                text.trim_end_matches('0').trim_end_matches('.')
            } else {
                &text
            };
            f.write_str(text)
        } else {
            write!(f, "{:e}", self.0)
        }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.kind {
            ErrorKind::NonFinite { field } => write!(
                f,
                "{field} must be a finite number (valid: finite and, for temperatures and \
                 pressures, above zero)"
            ),
            ErrorKind::NonPositive { field, value } => {
                let value = Number(*value);
                write!(f, "{field} = {value} must be greater than zero")
            }
            ErrorKind::OutOfRange {
                field,
                value,
                min,
                max,
                unit,
            } => write!(
                f,
                "{field} = {} {unit} is outside the model's range: valid {} {unit} to {} {unit}",
                Number(*value),
                Number(*min),
                Number(*max)
            ),
            ErrorKind::NearCritical {
                field,
                value,
                limit,
                critical,
                unit,
            } => {
                let (value, limit, critical) = (Number(*value), Number(*limit), Number(*critical));
                write!(
                    f,
                    "{field} = {value} {unit} is within the near-critical band ({limit} {unit} to \
                     the critical value {critical} {unit}) where the two saturated phases cannot \
                     be told apart; valid up to {limit} {unit}"
                )
            }
            ErrorKind::OutsideEnvelope {
                field,
                value,
                detail,
            } => {
                write!(f, "{field} = {}: {detail}", Number(*value))
            }
            ErrorKind::UnknownModel { name } => write!(
                f,
                "unknown equation of state `{name}`; valid: {}",
                crate::Model::ALL
                    .iter()
                    .map(|m| m.id())
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
            ErrorKind::InvalidParameter {
                field,
                value,
                reason,
            } => {
                write!(f, "{field} = {} is not valid: {reason}", Number(*value))
            }
            ErrorKind::MissingData { what } => write!(f, "missing data: {what}"),
            ErrorKind::NoConvergence { what, detail } => {
                write!(f, "{what} did not converge: {detail}")
            }
        }
    }
}

impl std::error::Error for Error {}

/// Checks that `value` is finite and positive.
pub(crate) fn positive(field: &'static str, value: f64) -> Result<f64, Error> {
    if !value.is_finite() {
        return Err(Error::non_finite(field));
    }
    if value <= 0.0 {
        return Err(Error::new(ErrorKind::NonPositive { field, value }));
    }
    Ok(value)
}

#[cfg(test)]
mod tests {
    use super::Number;

    #[test]
    fn numbers_in_messages_drop_rounding_noise_and_keep_typed_digits() {
        for (value, shown) in [
            (374.209_625_789_999_96, "374.20962579"),
            (113.75, "113.75"),
            (0.1 + 0.2, "0.3"),
            (101_325.0, "101325"),
            (-40.0, "-40"),
            (1.834_273_335_694_461e-308, "1.834273335694461e-308"),
            (1e300, "1e300"),
            (0.0, "0"),
            (12_345.678_901_234, "12345.6789012"),
        ] {
            assert_eq!(Number(value).to_string(), shown, "{value:?}");
        }
    }
}
