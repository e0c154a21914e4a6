//! The connection to the binodal service and the wording of its errors.

use std::time::Duration;

use binodal_proto::v1::phase_service_client::PhaseServiceClient;
use binodal_proto::v1::{DescribeFluidRequest, FluidDescription};
use tonic::{Code, Status};

use crate::transport::{Security, Transport};

/// Longest wait for one call's answer.
pub const CALL_TIMEOUT: Duration = Duration::from_secs(30);

/// Errors talking to the service, worded for the person at the terminal.
#[derive(Debug, thiserror::Error)]
pub enum ServiceError {
    /// The address is not an `http://host:port` URL.
    #[error(
        "server address `{url}` is not usable: {reason}; write it as http://HOST:PORT or https://HOST:PORT, e.g. http://127.0.0.1:50051 (several replicas: separated by commas)"
    )]
    BadAddress {
        /// The address as given.
        url: String,
        /// What is wrong with it.
        reason: String,
    },
    /// Nothing answered at the address.
    #[error(
        "cannot reach the binodal server at {url}; is the service running there? (set --server or BINODAL_SERVER)"
    )]
    Unreachable {
        /// The address tried.
        url: String,
        /// The transport's explanation.
        #[source]
        source: Box<dyn std::error::Error + Send + Sync>,
    },
    /// The server did not answer in time.
    #[error("the binodal server at {url} did not answer within {} s", CALL_TIMEOUT.as_secs())]
    TimedOut {
        /// The address tried.
        url: String,
    },
    /// The fluid name is unknown; the message carries the server's suggestions.
    #[error("{message} (list the fluids with `binodal fluids --search TEXT`)")]
    UnknownFluid {
        /// The server's message.
        message: String,
    },
    /// The server refused a value in the request.
    #[error("the server refused the request: {message}")]
    Refused {
        /// The server's message.
        message: String,
    },
    /// The server refused the credentials (token).
    #[error(
        "the binodal server at {url} refused the call: {message} (give the token with --token-file or BINODAL_TOKEN)"
    )]
    Unauthenticated {
        /// The address tried.
        url: String,
        /// The server's message.
        message: String,
    },
    /// The server does not offer this yet.
    #[error("the binodal server at {url} does not offer this yet: {message}")]
    NotOffered {
        /// The address tried.
        url: String,
        /// The server's message.
        message: String,
    },
    /// Any other failure reported by the server.
    #[error("the binodal server at {url} failed ({code:?}): {message}")]
    Failed {
        /// The address tried.
        url: String,
        /// The gRPC status code.
        code: Code,
        /// The server's message.
        message: String,
    },
}

/// A channel to the service (one replica, or several balanced) and the address it was opened to.
#[derive(Debug, Clone)]
pub struct Service {
    url: String,
    channel: Transport,
}

impl Service {
    /// A connection to `url` (`http://host:port` or `https://host:port`, or several separated by
    /// commas) with the TLS options and token of `security`. The connection opens at the first
    /// call; calls that find no server are retried with backoff (see [`crate::transport`]).
    pub async fn connect_with(url: &str, security: &Security) -> Result<Service, ServiceError> {
        let bad = |reason: &str| ServiceError::BadAddress {
            url: url.to_string(),
            reason: reason.to_string(),
        };
        let urls: Vec<&str> = url.split(',').map(str::trim).collect();
        for one in &urls {
            if !one.starts_with("http://") && !one.starts_with("https://") {
                return Err(bad("each address must start with http:// or https://"));
            }
            if let Some(reason) = port_problem(one) {
                return Err(bad(&reason));
            }
        }
        let channel = crate::transport::channel(&urls, security)
            .and_then(|channel| Transport::new(channel, security))
            .map_err(|e| bad(&format!("{e:#}")))?;
        Ok(Service {
            url: url.to_string(),
            channel,
        })
    }

    /// The address this service was reached at.
    pub fn url(&self) -> &str {
        &self.url
    }

    /// The channel, for other gRPC clients (health, alarms): it sends the token and retries the
    /// calls that may be retried.
    pub fn channel(&self) -> Transport {
        self.channel.clone()
    }

    /// A phase-service client on this connection.
    pub fn phase(&self) -> PhaseServiceClient<Transport> {
        PhaseServiceClient::new(self.channel.clone())
    }

    /// Words a failed call's status for people.
    pub fn error(&self, status: Status) -> ServiceError {
        let url = self.url.clone();
        let message = status.message().to_string();
        if broken_connection(&status) {
            return ServiceError::Unreachable {
                url,
                source: Box::new(status),
            };
        }
        match status.code() {
            Code::Unavailable => ServiceError::Unreachable {
                url,
                source: Box::new(status),
            },
            Code::Unauthenticated | Code::PermissionDenied => {
                ServiceError::Unauthenticated { url, message }
            }
            Code::DeadlineExceeded | Code::Cancelled => ServiceError::TimedOut { url },
            Code::NotFound => ServiceError::UnknownFluid { message },
            Code::InvalidArgument | Code::OutOfRange | Code::FailedPrecondition => {
                ServiceError::Refused { message }
            }
            Code::Unimplemented => ServiceError::NotOffered { url, message },
            code => ServiceError::Failed { url, code, message },
        }
    }

    /// The catalogue entry of `name`; an unknown name fails with the server's suggestions.
    pub async fn describe(&self, name: &str) -> Result<FluidDescription, ServiceError> {
        let response = self
            .phase()
            .describe_fluid(DescribeFluidRequest {
                fluid: name.to_string(),
            })
            .await
            .map_err(|status| self.error(status))?
            .into_inner();
        response.fluid.ok_or_else(|| ServiceError::Failed {
            url: self.url.clone(),
            code: Code::Internal,
            message: "the answer to DescribeFluid has no fluid".to_string(),
        })
    }
}

/// Whether a status was made by the client from a connection that broke or could not be made (a
/// refused TLS handshake, a reset): UNKNOWN or CANCELLED with a transport error as its source,
/// and not the call timeout running out.
fn broken_connection(status: &Status) -> bool {
    if !matches!(status.code(), Code::Unknown | Code::Cancelled) {
        return false;
    }
    let mut cause = std::error::Error::source(status);
    let transport = cause.is_some();
    while let Some(error) = cause {
        if error.is::<tonic::TimeoutExpired>() {
            return false;
        }
        cause = error.source();
    }
    transport
}

/// What is wrong with the port of an `http(s)://` address, if anything. The transport would take
/// an unreadable port (`:99999`, `:abc`) for none and call port 80.
fn port_problem(url: &str) -> Option<String> {
    let uri: tonic::transport::Uri = match url.parse() {
        Ok(uri) => uri,
        Err(e) => return Some(e.to_string()),
    };
    let Some(authority) = uri.authority() else {
        return Some("it names no host".to_string());
    };
    let text = authority.as_str();
    // After an IPv6 literal's closing bracket, or anywhere in a name or IPv4 address.
    let host_end = text.rfind(']').map_or(0, |i| i + 1);
    let colon = text[host_end..].rfind(':')?;
    let port = &text[host_end + colon + 1..];
    (!matches!(port.parse::<u16>(), Ok(1..)))
        .then(|| format!("port `{port}` is not a port number from 1 to 65535"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn server_addresses_need_a_real_port() {
        for good in [
            "http://127.0.0.1:50051",
            "https://binodal.example:443",
            "http://[::1]:50051",
            "http://localhost",
        ] {
            assert_eq!(port_problem(good), None, "{good}");
        }
        for (bad, port) in [
            ("http://127.0.0.1:99999", "99999"),
            ("http://127.0.0.1:65536", "65536"),
            ("http://127.0.0.1:abc", "abc"),
            ("http://127.0.0.1:0", "0"),
            ("http://[::1]:70000", "70000"),
        ] {
            let reason = port_problem(bad).expect(bad);
            assert!(
                reason.contains(&format!("port `{port}`")),
                "{bad}: {reason}"
            );
        }
    }
}
