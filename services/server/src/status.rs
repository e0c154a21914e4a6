//! The one place where engine and catalogue errors become gRPC status codes.
//!
//! | error | code |
//! |---|---|
//! | a request field is missing, malformed, NaN, non-positive, or names no known model | INVALID_ARGUMENT (with a `BadRequest` field violation) |
//! | the fluid name is unknown | NOT_FOUND (the message lists the closest names) |
//! | a temperature or pressure outside the model's range, in the near-critical band, or outside a mixture's two-phase envelope | OUT_OF_RANGE (with a `BadRequest` field violation) |
//! | the fluid lacks data for the quantity (e.g. no ideal-gas heat capacity) | FAILED_PRECONDITION |
//! | a server-wide limit reached (open alarm streams) | RESOURCE_EXHAUSTED (the message names the setting) |
//! | a solver that did not converge, or a worker thread that failed | INTERNAL (a defect: the message names the solve or the worker) |

use binodal_eos::ErrorKind;
use binodal_fluids::LookupError;
use tonic::{Code, Status};
use tonic_types::{ErrorDetails, StatusExt};

/// Why a request failed, before it becomes a status.
#[derive(Debug)]
pub enum ServiceError {
    /// A request field is missing or invalid.
    InvalidField {
        /// The field's name in the request, e.g. `temperature_k`.
        field: String,
        /// What is wrong and what is valid.
        message: String,
    },
    /// The fluid name is unknown.
    UnknownFluid(LookupError),
    /// The engine refused or failed; `field_prefix` locates the engine's field in the
    /// request (e.g. `temperatures_k[3]`), empty for a top-level field.
    Engine(binodal_eos::Error),
    /// A server-wide limit on long-lived resources is reached (e.g. open alarm streams); the
    /// message names the setting.
    LimitReached(String),
    /// A defect inside the server (a worker thread that stopped without an answer).
    Internal(String),
}

impl ServiceError {
    /// A missing or invalid request field.
    pub fn field(field: impl Into<String>, message: impl Into<String>) -> ServiceError {
        ServiceError::InvalidField {
            field: field.into(),
            message: message.into(),
        }
    }
}

impl From<binodal_eos::Error> for ServiceError {
    fn from(e: binodal_eos::Error) -> ServiceError {
        ServiceError::Engine(e)
    }
}

impl From<LookupError> for ServiceError {
    fn from(e: LookupError) -> ServiceError {
        ServiceError::UnknownFluid(e)
    }
}

/// The gRPC code for an engine error.
pub fn engine_code(e: &binodal_eos::Error) -> Code {
    match e.kind() {
        ErrorKind::OutOfRange { .. }
        | ErrorKind::NearCritical { .. }
        | ErrorKind::OutsideEnvelope { .. } => Code::OutOfRange,
        ErrorKind::MissingData { .. } => Code::FailedPrecondition,
        ErrorKind::NoConvergence { .. } => Code::Internal,
        _ => Code::InvalidArgument,
    }
}

impl From<ServiceError> for Status {
    fn from(e: ServiceError) -> Status {
        match e {
            ServiceError::InvalidField { field, message } => {
                let text = format!("{field}: {message}");
                Status::with_error_details(
                    Code::InvalidArgument,
                    text,
                    ErrorDetails::with_bad_request_violation(field, message),
                )
            }
            ServiceError::UnknownFluid(e @ LookupError::TooLong { .. }) => {
                Status::invalid_argument(e.to_string())
            }
            ServiceError::UnknownFluid(e) => Status::not_found(e.to_string()),
            ServiceError::Engine(e) => {
                let code = engine_code(&e);
                match e.field() {
                    Some(field) => Status::with_error_details(
                        code,
                        e.to_string(),
                        ErrorDetails::with_bad_request_violation(field, e.to_string()),
                    ),
                    None => Status::new(code, e.to_string()),
                }
            }
            ServiceError::LimitReached(what) => Status::resource_exhausted(what),
            ServiceError::Internal(what) => Status::internal(what),
        }
    }
}
