//! How the CLI reaches the service: TLS, the bearer token, several replicas, and retries.
//!
//! - **TLS**: an `https://` address is reached over TLS, trusting the CA of `--tls-ca` (and the
//!   public web roots); `--tls-cert`/`--tls-key` present a client certificate to servers that
//!   require mutual TLS.
//! - **Token**: the token from `--token-file` (its first line that is neither blank nor a `#`
//!   comment) or the `BINODAL_TOKEN` environment variable is sent on every call as
//!   `authorization: Bearer <token>`. It is never printed.
//! - **Replicas**: `--server` may list several addresses separated by commas; calls are spread
//!   over the replicas that answer.
//! - **Retries**: the CLI only reads (every phase-service call and the health check is
//!   idempotent), so a call that found no server (connection refused or reset, a replica
//!   shutting down, a server shedding load with UNAVAILABLE) is sent again after a wait that
//!   doubles each time, with jitter: 5 attempts within about 1.5 s. Streaming calls (alarm
//!   watches) are not retried.

use std::future::Future;
use std::path::{Path, PathBuf};
use std::pin::Pin;
use std::task::{Context, Poll};
use std::time::Duration;

use anyhow::Context as _;
use bytes::Bytes;
use http_body_util::{BodyExt as _, Full};
use tonic::body::Body;
use tonic::transport::{Certificate, Channel, ClientTlsConfig, Endpoint, Identity};

/// Attempts for an idempotent call, the first included.
const ATTEMPTS: u32 = 5;
/// Bound of the first wait; it doubles with each retry (100, 200, 400, 800 ms).
const FIRST_WAIT: Duration = Duration::from_millis(100);
/// Longest wait for a TCP (and TLS) connection to one replica.
pub const CONNECT_TIMEOUT: Duration = Duration::from_secs(5);

/// Paths of the calls that may be retried: they only read.
const IDEMPOTENT_PREFIXES: [&str; 2] =
    ["/binodal.v1.PhaseService/", "/grpc.health.v1.Health/Check"];

/// The transport options from the command line and the environment.
#[derive(Clone, Default)]
pub struct Security {
    /// CA certificate file (PEM) to trust for `https://` servers.
    pub tls_ca: Option<PathBuf>,
    /// Client certificate and key files (PEM), for mutual TLS.
    pub identity: Option<(PathBuf, PathBuf)>,
    /// Bearer token.
    pub token: Option<String>,
}

impl std::fmt::Debug for Security {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Security")
            .field("tls_ca", &self.tls_ca)
            .field("identity", &self.identity)
            .field("token", &self.token.as_ref().map(|_| "(hidden)"))
            .finish()
    }
}

/// The first line of a token file that is neither blank nor a `#` comment.
fn read_token_file(path: &Path) -> anyhow::Result<String> {
    let text = std::fs::read_to_string(path)
        .with_context(|| format!("cannot read the token file {}", path.display()))?;
    text.lines()
        .map(str::trim)
        .find(|line| !line.is_empty() && !line.starts_with('#'))
        .map(str::to_owned)
        .with_context(|| format!("the token file {} holds no token", path.display()))
}

impl Security {
    /// Options from the flags; the token comes from `token_file`, else from `env_token` (the
    /// value of `BINODAL_TOKEN`).
    pub fn new(
        tls_ca: Option<PathBuf>,
        tls_cert: Option<PathBuf>,
        tls_key: Option<PathBuf>,
        token_file: Option<&Path>,
        env_token: Option<String>,
    ) -> anyhow::Result<Security> {
        let identity = match (tls_cert, tls_key) {
            (Some(certificate), Some(key)) => Some((certificate, key)),
            (None, None) => None,
            _ => anyhow::bail!("--tls-cert and --tls-key go together: give both or neither"),
        };
        let token = match token_file {
            Some(path) => Some(read_token_file(path)?),
            None => env_token
                .map(|token| token.trim().to_owned())
                .filter(|token| !token.is_empty()),
        };
        if let Some(token) = &token
            && !token.bytes().all(|byte| byte.is_ascii_graphic())
        {
            anyhow::bail!("the token holds spaces or characters that are not printable ASCII");
        }
        Ok(Security {
            tls_ca,
            identity,
            token,
        })
    }

    /// The client TLS configuration for `https://` addresses.
    fn tls_config(&self) -> anyhow::Result<ClientTlsConfig> {
        let mut config = ClientTlsConfig::new().with_enabled_roots();
        if let Some(path) = &self.tls_ca {
            let pem = std::fs::read(path).with_context(|| {
                format!("cannot read the CA file {} (--tls-ca)", path.display())
            })?;
            config = config.ca_certificate(Certificate::from_pem(pem));
        }
        if let Some((certificate, key)) = &self.identity {
            let certificate_pem = std::fs::read(certificate).with_context(|| {
                format!(
                    "cannot read the client certificate {} (--tls-cert)",
                    certificate.display()
                )
            })?;
            let key_pem = std::fs::read(key).with_context(|| {
                format!("cannot read the client key {} (--tls-key)", key.display())
            })?;
            config = config.identity(Identity::from_pem(certificate_pem, key_pem));
        }
        Ok(config)
    }

    /// The endpoint for one address.
    pub fn endpoint(&self, url: &str) -> anyhow::Result<Endpoint> {
        let mut endpoint = Endpoint::from_shared(url.to_owned())?
            .connect_timeout(CONNECT_TIMEOUT)
            .timeout(crate::client::CALL_TIMEOUT)
            .tcp_nodelay(true);
        if url.starts_with("https://") {
            endpoint = endpoint.tls_config(self.tls_config()?)?;
        }
        Ok(endpoint)
    }
}

/// The channel to one replica or, for several addresses, balanced over all of them. Connections
/// are opened at the first call, so an address that does not answer yet is retried like a call.
pub fn channel(urls: &[&str], security: &Security) -> anyhow::Result<Channel> {
    let endpoints = urls
        .iter()
        .map(|url| security.endpoint(url))
        .collect::<anyhow::Result<Vec<_>>>()?;
    Ok(match endpoints.as_slice() {
        [one] => one.connect_lazy(),
        _ => Channel::balance_list(endpoints.into_iter()),
    })
}

/// A number in [0, 1) from the standard library's random hasher keys.
fn random_fraction() -> f64 {
    use std::hash::{BuildHasher as _, Hasher as _};
    let bits = std::collections::hash_map::RandomState::new()
        .build_hasher()
        .finish();
    (bits >> 11) as f64 / (1u64 << 53) as f64
}

/// The wait before retry number `retry` (1 for the first): half the doubling bound plus a random
/// part of the other half, so that clients failing together spread out.
fn backoff(retry: u32) -> Duration {
    let bound = FIRST_WAIT.saturating_mul(1 << retry.saturating_sub(1).min(10));
    bound / 2 + (bound / 2).mul_f64(random_fraction())
}

/// Whether an error is the call timeout running out: such a call is not sent again (the server
/// may be slow rather than gone, and the wait is already long).
fn timed_out(error: &tonic::transport::Error) -> bool {
    let mut cause: Option<&(dyn std::error::Error + 'static)> = Some(error);
    while let Some(current) = cause {
        if current.is::<tonic::TimeoutExpired>() {
            return true;
        }
        cause = current.source();
    }
    false
}

/// Whether an answer's headers say UNAVAILABLE (a trailers-only answer with `grpc-status: 14`).
fn unavailable(response: &http::Response<Body>) -> bool {
    response
        .headers()
        .get("grpc-status")
        .is_some_and(|code| code == "14")
}

/// The channel with the token added to every call and idempotent calls retried.
#[derive(Debug, Clone)]
pub struct Transport {
    channel: Channel,
    authorization: Option<http::HeaderValue>,
}

impl Transport {
    /// A transport over `channel` sending `security`'s token.
    pub fn new(channel: Channel, security: &Security) -> anyhow::Result<Transport> {
        let authorization = match &security.token {
            Some(token) => {
                let mut value = http::HeaderValue::try_from(format!("Bearer {token}"))
                    .context("the token cannot be sent as metadata")?;
                value.set_sensitive(true);
                Some(value)
            }
            None => None,
        };
        Ok(Transport {
            channel,
            authorization,
        })
    }
}

type BoxError = Box<dyn std::error::Error + Send + Sync>;

impl tower::Service<http::Request<Body>> for Transport {
    type Response = http::Response<Body>;
    type Error = BoxError;
    type Future = Pin<Box<dyn Future<Output = Result<Self::Response, BoxError>> + Send>>;

    fn poll_ready(&mut self, _cx: &mut Context<'_>) -> Poll<Result<(), BoxError>> {
        // Each call readies its own clone of the channel.
        Poll::Ready(Ok(()))
    }

    fn call(&mut self, mut request: http::Request<Body>) -> Self::Future {
        use tower::ServiceExt as _;
        if let Some(value) = &self.authorization {
            request
                .headers_mut()
                .insert(http::header::AUTHORIZATION, value.clone());
        }
        let channel = self.channel.clone();
        let path = request.uri().path().to_owned();
        if !IDEMPOTENT_PREFIXES
            .iter()
            .any(|prefix| path.starts_with(prefix))
        {
            return Box::pin(async move { Ok(channel.oneshot(request).await?) });
        }
        Box::pin(async move {
            // A unary request body is one short message: keep it to send again.
            let (parts, body) = request.into_parts();
            let bytes: Bytes = body.collect().await?.to_bytes();
            let mut attempt = 1;
            loop {
                let request =
                    http::Request::from_parts(parts.clone(), Body::new(Full::new(bytes.clone())));
                let answer = channel.clone().oneshot(request).await;
                let retry = match &answer {
                    Ok(response) => unavailable(response),
                    Err(error) => !timed_out(error),
                };
                if !retry || attempt >= ATTEMPTS {
                    return Ok(answer?);
                }
                tokio::time::sleep(backoff(attempt)).await;
                attempt += 1;
            }
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn waits_double_and_stay_within_their_bounds() {
        for retry in 1..=4 {
            let bound = FIRST_WAIT * (1 << (retry - 1));
            for _ in 0..50 {
                let wait = backoff(retry);
                assert!(
                    wait >= bound / 2 && wait <= bound,
                    "retry {retry}: {wait:?}"
                );
            }
        }
    }

    #[test]
    fn the_token_comes_from_the_file_first_and_is_never_shown() {
        let dir = std::env::temp_dir().join(format!("binodal-cli-token-{}", std::process::id()));
        std::fs::create_dir_all(&dir).expect("temp dir");
        let file = dir.join("token");
        std::fs::write(
            &file,
            "# Harrowgate Cold Store SCADA\n\nfile-token-0123456789\n",
        )
        .expect("write token file");
        let security = Security::new(None, None, None, Some(&file), Some("env-token".into()))
            .expect("security");
        assert_eq!(security.token.as_deref(), Some("file-token-0123456789"));
        assert!(!format!("{security:?}").contains("file-token"));

        let from_env =
            Security::new(None, None, None, None, Some(" env-token \n".into())).expect("security");
        assert_eq!(from_env.token.as_deref(), Some("env-token"));

        std::fs::write(&file, "# nothing here\n").expect("write empty token file");
        let error = Security::new(None, None, None, Some(&file), None).expect_err("no token");
        assert!(error.to_string().contains("holds no token"), "{error}");

        let error = Security::new(None, Some(file.clone()), None, None, None)
            .expect_err("certificate without key");
        assert!(error.to_string().contains("--tls-key"), "{error}");
        std::fs::remove_dir_all(&dir).ok();
    }
}
