//! Who may talk to the server: transport security and bearer tokens.
//!
//! - **TLS** (rustls, through tonic): the `[tls]` settings name a PEM certificate chain and its
//!   private key. With `tls.client_ca_file` set as well, the handshake requires a client
//!   certificate signed by that CA (mutual TLS); a client without one is refused before any call.
//! - **Bearer tokens**: with `auth.token_file` or `auth.token` set, every call must carry the
//!   metadata `authorization: Bearer <token>` naming one of the accepted tokens. The check runs as
//!   an interceptor layer in front of every service, so services registered later are covered
//!   too. Presented tokens are hashed with SHA-256 and compared with every accepted token's hash
//!   in constant time, so neither the content nor the length of a token leaks through timing.
//!   Tokens are never logged: [`Secret`] prints as `Secret(hidden)`, and refusals never echo what
//!   was sent.
//! - **Health stays open**: `grpc.health.v1.Health` needs no token, so container and Kubernetes
//!   probes work without secrets. It reveals only whether the server is serving.

use std::future::Future;
use std::path::{Path, PathBuf};
use std::pin::Pin;
use std::sync::Arc;
use std::task::{Context, Poll};
use std::time::Duration;

use anyhow::Context as _;
use serde::{Deserialize, Serialize};
use sha2::{Digest as _, Sha256};
use subtle::ConstantTimeEq as _;
use tonic::Status;
use tonic::body::Body;
use tonic::transport::{Certificate, Identity, ServerTlsConfig};

use crate::settings::SettingsError;

/// Path prefix of the standard health service, which stays open to every caller.
pub(crate) const HEALTH_PATH_PREFIX: &str = "/grpc.health.v1.Health/";

/// Shortest accepted token, in characters. 32 hexadecimal digits carry 128 bits.
pub const MIN_TOKEN_LENGTH: usize = 32;
/// Longest accepted token, in characters.
pub const MAX_TOKEN_LENGTH: usize = 1024;
/// Longest time a client may take over the TLS handshake before the connection is dropped.
const TLS_HANDSHAKE_TIMEOUT: Duration = Duration::from_secs(10);

/// A value that must never be printed: `Debug` shows `Secret(hidden)`. Comparison is constant in
/// time for values of equal length.
#[derive(Clone)]
pub struct Secret(String);

impl Secret {
    /// Wraps a secret value.
    pub fn new(value: impl Into<String>) -> Secret {
        Secret(value.into())
    }

    /// The secret value. Do not log it.
    pub fn expose(&self) -> &str {
        &self.0
    }
}

impl std::fmt::Debug for Secret {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("Secret(hidden)")
    }
}

impl PartialEq for Secret {
    fn eq(&self, other: &Secret) -> bool {
        self.0.as_bytes().ct_eq(other.0.as_bytes()).into()
    }
}

impl Eq for Secret {}

/// TLS settings (`[tls]` section). Without a certificate the server speaks plain text.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct TlsSettings {
    /// PEM certificate chain, server certificate first (`tls.certificate_file`).
    pub certificate_file: Option<PathBuf>,
    /// PEM private key of the certificate (`tls.private_key_file`).
    pub private_key_file: Option<PathBuf>,
    /// PEM CA certificates that client certificates must chain to (`tls.client_ca_file`). When
    /// set, every client must present a certificate (mutual TLS).
    pub client_ca_file: Option<PathBuf>,
}

impl TlsSettings {
    /// Whether the server speaks TLS.
    pub fn enabled(&self) -> bool {
        self.certificate_file.is_some()
    }

    /// Whether clients must present a certificate.
    pub fn mutual(&self) -> bool {
        self.client_ca_file.is_some()
    }
}

/// Caller authentication settings (`[auth]` section).
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct AuthSettings {
    /// File of accepted tokens, one per line (`auth.token_file`); `#` starts a comment line.
    pub token_file: Option<PathBuf>,
    /// Every accepted token: those of the file and the `auth.token` setting (normally given as
    /// the environment variable `BINODAL_AUTH__TOKEN`). Empty: calls need no token.
    pub tokens: Vec<Secret>,
}

impl AuthSettings {
    /// Whether calls other than health need a token.
    pub fn required(&self) -> bool {
        !self.tokens.is_empty()
    }
}

/// The `[tls]` section as read.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawTls {
    certificate_file: String,
    private_key_file: String,
    client_ca_file: String,
}

/// The `[auth]` section as read.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawAuth {
    token_file: String,
    token: String,
}

fn path_text(path: Option<&PathBuf>) -> String {
    path.map(|path| path.display().to_string())
        .unwrap_or_default()
}

/// An optional path setting: empty means unset; when set, the file must exist.
fn existing_file(setting: &'static str, value: &str) -> Result<Option<PathBuf>, SettingsError> {
    let value = value.trim();
    if value.is_empty() {
        return Ok(None);
    }
    let path = PathBuf::from(value);
    if path.is_file() {
        Ok(Some(path))
    } else {
        Err(SettingsError::invalid(
            setting,
            value,
            "the path of an existing, readable PEM file, or an empty string for none",
        ))
    }
}

impl TlsSettings {
    /// These settings in the shape they are read in.
    pub(crate) fn raw(&self) -> RawTls {
        RawTls {
            certificate_file: path_text(self.certificate_file.as_ref()),
            private_key_file: path_text(self.private_key_file.as_ref()),
            client_ca_file: path_text(self.client_ca_file.as_ref()),
        }
    }

    /// Checks that the files exist and that they are given together where they must be.
    pub(crate) fn validate(raw: RawTls) -> Result<TlsSettings, SettingsError> {
        let settings = TlsSettings {
            certificate_file: existing_file("tls.certificate_file", &raw.certificate_file)?,
            private_key_file: existing_file("tls.private_key_file", &raw.private_key_file)?,
            client_ca_file: existing_file("tls.client_ca_file", &raw.client_ca_file)?,
        };
        match (&settings.certificate_file, &settings.private_key_file) {
            (Some(_), None) => {
                return Err(SettingsError::invalid(
                    "tls.private_key_file",
                    "",
                    "the key of tls.certificate_file: both are needed for TLS",
                ));
            }
            (None, Some(_)) => {
                return Err(SettingsError::invalid(
                    "tls.certificate_file",
                    "",
                    "the certificate for tls.private_key_file: both are needed for TLS",
                ));
            }
            _ => {}
        }
        if settings.client_ca_file.is_some() && settings.certificate_file.is_none() {
            return Err(SettingsError::invalid(
                "tls.certificate_file",
                "",
                "a server certificate: tls.client_ca_file (mutual TLS) needs TLS to be on",
            ));
        }
        Ok(settings)
    }
}

/// Checks one token's shape; the error never contains the token.
fn check_token(setting: &'static str, token: &str, origin: &str) -> Result<(), SettingsError> {
    let length = token.chars().count();
    let printable = token.bytes().all(|byte| byte.is_ascii_graphic());
    if (MIN_TOKEN_LENGTH..=MAX_TOKEN_LENGTH).contains(&length) && printable {
        Ok(())
    } else {
        Err(SettingsError::invalid(
            setting,
            format!("(hidden: {length} characters{origin})"),
            format!(
                "a token of {MIN_TOKEN_LENGTH} to {MAX_TOKEN_LENGTH} printable ASCII characters \
                 without spaces, e.g. 64 hexadecimal digits from `openssl rand -hex 32`"
            ),
        ))
    }
}

/// Reads the accepted tokens of a token file: one per line, blank lines and `#` comments skipped.
fn read_token_file(path: &Path) -> Result<Vec<Secret>, SettingsError> {
    let text = std::fs::read_to_string(path).map_err(|error| {
        SettingsError::invalid(
            "auth.token_file",
            path.display(),
            format!("a readable file of tokens, one per line ({error})"),
        )
    })?;
    let mut tokens = Vec::new();
    for (number, line) in text.lines().enumerate() {
        let token = line.trim();
        if token.is_empty() || token.starts_with('#') {
            continue;
        }
        check_token(
            "auth.token_file",
            token,
            &format!(", line {} of {}", number + 1, path.display()),
        )?;
        tokens.push(Secret::new(token));
    }
    if tokens.is_empty() {
        return Err(SettingsError::invalid(
            "auth.token_file",
            path.display(),
            "a file with at least one token line (blank lines and # comments do not count)",
        ));
    }
    Ok(tokens)
}

impl AuthSettings {
    /// These settings in the shape they are read in. Tokens are never written back: `token` is
    /// always empty here, and `token_file` names the file they came from.
    pub(crate) fn raw(&self) -> RawAuth {
        RawAuth {
            token_file: path_text(self.token_file.as_ref()),
            token: String::new(),
        }
    }

    /// Reads the token file and checks every token.
    pub(crate) fn validate(raw: RawAuth) -> Result<AuthSettings, SettingsError> {
        let token_file = match raw.token_file.trim() {
            "" => None,
            path => Some(PathBuf::from(path)),
        };
        let mut tokens = match &token_file {
            Some(path) => read_token_file(path)?,
            None => Vec::new(),
        };
        let token = raw.token.trim();
        if !token.is_empty() {
            check_token("auth.token", token, "")?;
            tokens.push(Secret::new(token));
        }
        Ok(AuthSettings { token_file, tokens })
    }
}

/// The server's TLS configuration, or `None` for plain text. Reads the PEM files named by the
/// settings; a file that cannot be read fails with the setting's name.
pub(crate) fn server_tls_config(tls: &TlsSettings) -> anyhow::Result<Option<ServerTlsConfig>> {
    let (Some(certificate_file), Some(key_file)) = (&tls.certificate_file, &tls.private_key_file)
    else {
        return Ok(None);
    };
    let read = |setting: &str, path: &Path| {
        std::fs::read(path)
            .with_context(|| format!("setting `{setting}`: cannot read {}", path.display()))
    };
    let certificate = read("tls.certificate_file", certificate_file)?;
    let key = read("tls.private_key_file", key_file)?;
    let mut config = ServerTlsConfig::new()
        .identity(Identity::from_pem(certificate, key))
        .timeout(TLS_HANDSHAKE_TIMEOUT);
    if let Some(ca_file) = &tls.client_ca_file {
        let ca = read("tls.client_ca_file", ca_file)?;
        config = config
            .client_ca_root(Certificate::from_pem(ca))
            .client_auth_optional(false);
    }
    Ok(Some(config))
}

/// SHA-256 digest of a token, the form in which accepted tokens are kept and compared.
fn digest(token: &[u8]) -> [u8; 32] {
    Sha256::digest(token).into()
}

/// The bearer-token check, as a layer in front of every service.
#[derive(Debug, Clone)]
pub(crate) struct AuthLayer {
    /// Digests of the accepted tokens; `None` when no token is required.
    accepted: Option<Arc<[[u8; 32]]>>,
}

impl AuthLayer {
    /// A layer accepting the configured tokens, or every call when none is configured.
    pub(crate) fn new(auth: &AuthSettings) -> AuthLayer {
        let accepted = auth
            .required()
            .then(|| auth.tokens.iter().map(|t| digest(t.expose().as_bytes())));
        AuthLayer {
            accepted: accepted.map(Iterator::collect),
        }
    }
}

impl<S> tower::Layer<S> for AuthLayer {
    type Service = Authenticated<S>;

    fn layer(&self, inner: S) -> Authenticated<S> {
        Authenticated {
            inner,
            accepted: self.accepted.clone(),
        }
    }
}

/// A service behind the bearer-token check.
#[derive(Debug, Clone)]
pub(crate) struct Authenticated<S> {
    inner: S,
    accepted: Option<Arc<[[u8; 32]]>>,
}

/// Why a call was refused, or `None` when it may go on. Never echoes the presented token.
fn refusal(accepted: &[[u8; 32]], headers: &http::HeaderMap) -> Option<Status> {
    let Some(value) = headers.get(http::header::AUTHORIZATION) else {
        return Some(Status::unauthenticated(
            "missing credentials: send the metadata `authorization: Bearer <token>`",
        ));
    };
    let bytes = value.as_bytes();
    let scheme = b"bearer ";
    if bytes.len() <= scheme.len() || !bytes[..scheme.len()].eq_ignore_ascii_case(scheme) {
        return Some(Status::unauthenticated(
            "the `authorization` metadata must read `Bearer <token>`",
        ));
    }
    let presented = digest(bytes[scheme.len()..].trim_ascii());
    // Compare with every accepted token, without stopping at the first match.
    let mut matched = subtle::Choice::from(0);
    for token in accepted {
        matched |= token.ct_eq(&presented);
    }
    if bool::from(matched) {
        None
    } else {
        Some(Status::unauthenticated("the bearer token is not accepted"))
    }
}

impl<S> tower::Service<http::Request<Body>> for Authenticated<S>
where
    S: tower::Service<http::Request<Body>, Response = http::Response<Body>>
        + Clone
        + Send
        + 'static,
    S::Future: Send + 'static,
    S::Error: Send + 'static,
{
    type Response = http::Response<Body>;
    type Error = S::Error;
    type Future = Pin<Box<dyn Future<Output = Result<Self::Response, Self::Error>> + Send>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), Self::Error>> {
        self.inner.poll_ready(cx)
    }

    fn call(&mut self, request: http::Request<Body>) -> Self::Future {
        if let Some(accepted) = &self.accepted
            && !request.uri().path().starts_with(HEALTH_PATH_PREFIX)
            && let Some(status) = refusal(accepted, request.headers())
        {
            return Box::pin(std::future::ready(Ok(status.into_http())));
        }
        Box::pin(self.inner.call(request))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn headers(authorization: Option<&str>) -> http::HeaderMap {
        let mut headers = http::HeaderMap::new();
        if let Some(value) = authorization {
            headers.insert(
                http::header::AUTHORIZATION,
                http::HeaderValue::from_str(value).expect("header value"),
            );
        }
        headers
    }

    const TOKEN: &str = "harrowgate-cold-store-0123456789abcdef";

    #[test]
    fn only_an_accepted_bearer_token_passes() {
        let accepted = [
            digest(TOKEN.as_bytes()),
            digest(b"another-token-0123456789abcdefgh"),
        ];
        assert!(refusal(&accepted, &headers(Some(&format!("Bearer {TOKEN}")))).is_none());
        assert!(refusal(&accepted, &headers(Some(&format!("bearer {TOKEN}")))).is_none());
        for refused in [
            None,
            Some("Bearer"),
            Some("Bearer "),
            Some("Basic aGFycm93Z2F0ZQ=="),
            Some("Bearer harrowgate-cold-store-0123456789abcdeX"),
            Some(TOKEN),
        ] {
            let status = refusal(&accepted, &headers(refused)).expect("refused");
            assert_eq!(status.code(), tonic::Code::Unauthenticated, "{refused:?}");
            assert!(
                !status.message().contains(TOKEN),
                "{status:?} echoes the token"
            );
        }
    }

    #[test]
    fn secrets_never_print() {
        let secret = Secret::new(TOKEN);
        assert_eq!(format!("{secret:?}"), "Secret(hidden)");
        let auth = AuthSettings {
            token_file: None,
            tokens: vec![secret],
        };
        assert!(!format!("{auth:?}").contains(TOKEN));
    }

    #[test]
    fn token_shape_errors_hide_the_token() {
        let short = "abc123";
        let error = AuthSettings::validate(RawAuth {
            token_file: String::new(),
            token: short.to_owned(),
        })
        .expect_err("short token refused");
        let message = error.to_string();
        assert!(message.contains("auth.token"), "{message}");
        assert!(message.contains("BINODAL_AUTH__TOKEN"), "{message}");
        assert!(message.contains("6 characters"), "{message}");
        assert!(!message.contains(short), "{message} shows the token");
    }

    #[test]
    fn token_file_lines_comments_and_errors() {
        let dir = std::env::temp_dir().join(format!("binodal-tokens-{}", std::process::id()));
        std::fs::create_dir_all(&dir).expect("temp dir");
        let file = dir.join("tokens");
        std::fs::write(
            &file,
            format!("# CO2-RK2 rack controller\n\n  {TOKEN}  \n# retired\n"),
        )
        .expect("write token file");
        let auth = AuthSettings::validate(RawAuth {
            token_file: file.display().to_string(),
            token: String::new(),
        })
        .expect("token file reads");
        assert_eq!(auth.tokens, [Secret::new(TOKEN)]);

        std::fs::write(&file, "# nothing yet\n").expect("write empty token file");
        let message = AuthSettings::validate(RawAuth {
            token_file: file.display().to_string(),
            token: String::new(),
        })
        .expect_err("a file without tokens is refused")
        .to_string();
        assert!(message.contains("at least one token"), "{message}");

        std::fs::write(&file, "short\n").expect("write bad token file");
        let message = AuthSettings::validate(RawAuth {
            token_file: file.display().to_string(),
            token: String::new(),
        })
        .expect_err("a short token is refused")
        .to_string();
        assert!(message.contains("line 1"), "{message}");
        assert!(!message.contains("short\""), "{message}");
        std::fs::remove_dir_all(&dir).ok();
    }

    #[test]
    fn tls_files_must_come_in_pairs() {
        let dir = std::env::temp_dir().join(format!("binodal-tls-{}", std::process::id()));
        std::fs::create_dir_all(&dir).expect("temp dir");
        let pem = dir.join("server.pem");
        std::fs::write(&pem, "not checked here").expect("write file");
        let pem = pem.display().to_string();
        let raw = |certificate: &str, key: &str, ca: &str| RawTls {
            certificate_file: certificate.to_owned(),
            private_key_file: key.to_owned(),
            client_ca_file: ca.to_owned(),
        };
        assert!(
            !TlsSettings::validate(raw("", "", ""))
                .expect("plain")
                .enabled()
        );
        let mutual = TlsSettings::validate(raw(&pem, &pem, &pem)).expect("mutual TLS");
        assert!(mutual.enabled() && mutual.mutual());
        for (bad, names) in [
            (raw(&pem, "", ""), "tls.private_key_file"),
            (raw("", &pem, ""), "tls.certificate_file"),
            (raw("", "", &pem), "tls.certificate_file"),
            (
                raw("/nonexistent/server.pem", &pem, ""),
                "tls.certificate_file",
            ),
        ] {
            let message = TlsSettings::validate(bad).expect_err("refused").to_string();
            assert!(message.contains(names), "{message} lacks {names}");
        }
        std::fs::remove_dir_all(&dir).ok();
    }
}
