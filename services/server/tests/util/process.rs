//! The real server binary run as a child process on loopback, for tests that need signals
//! (SIGTERM, SIGKILL, SIGHUP), several replicas, or the process's own memory figures.
//!
//! The child logs JSON to standard error; a reader thread keeps every line, and the addresses the
//! server reports (`binodal server listening`, `metrics endpoint listening at /metrics`) are read
//! from them, so the child can bind port 0 and no port is guessed.

use std::io::{BufRead as _, BufReader};
use std::net::SocketAddr;
use std::path::PathBuf;
use std::process::{Child, Command, ExitStatus, Stdio};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

/// Longest wait for a child to start serving or to exit. A guard against a hung test.
pub const PROCESS_GUARD: Duration = Duration::from_secs(20);

/// How to start a server process.
#[derive(Debug, Clone, Default)]
pub struct Launch {
    /// `--config` file.
    pub config: Option<PathBuf>,
    /// `--listen` address; `127.0.0.1:0` when `None`.
    pub listen: Option<SocketAddr>,
    /// Extra environment variables (settings as `BINODAL_*`).
    pub env: Vec<(String, String)>,
}

impl Launch {
    /// Adds an environment variable.
    pub fn env(mut self, name: &str, value: impl ToString) -> Self {
        self.env.push((name.to_owned(), value.to_string()));
        self
    }

    /// Enables the metrics endpoint on a free loopback port.
    pub fn with_metrics(self) -> Self {
        self.env("BINODAL_METRICS__ENABLED", "true")
            .env("BINODAL_METRICS__LISTEN_ADDRESS", "127.0.0.1:0")
    }
}

/// A running `binodal-server` child process.
pub struct ServerProcess {
    child: Child,
    /// The gRPC address it listens on.
    pub address: SocketAddr,
    /// The metrics endpoint's address, when enabled.
    pub metrics_address: Option<SocketAddr>,
    lines: Arc<Mutex<Vec<String>>>,
}

/// The `fields.address` of the first JSON log line whose message is `message`.
fn logged_address(lines: &[String], message: &str) -> Option<SocketAddr> {
    lines.iter().find_map(|line| {
        let value: serde_json::Value = serde_json::from_str(line).ok()?;
        let fields = value.get("fields")?;
        if fields.get("message")?.as_str()? != message {
            return None;
        }
        fields.get("address")?.as_str()?.parse().ok()
    })
}

impl ServerProcess {
    /// Starts the server and waits until it reports its address, failing the test if it does
    /// not within [`PROCESS_GUARD`] or exits first.
    pub async fn start(launch: &Launch) -> ServerProcess {
        let mut command = Command::new(env!("CARGO_BIN_EXE_binodal-server"));
        for (name, _) in std::env::vars() {
            if name.starts_with("BINODAL_") || name == "RUST_LOG" {
                command.env_remove(name);
            }
        }
        command
            .arg("--listen")
            .arg(
                launch
                    .listen
                    .map_or("127.0.0.1:0".to_owned(), |address| address.to_string()),
            )
            .env("BINODAL_LOG__FORMAT", "json")
            .envs(launch.env.iter().map(|(k, v)| (k, v)))
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .stderr(Stdio::piped());
        if let Some(config) = &launch.config {
            command.arg("--config").arg(config);
        }
        let mut child = command.spawn().expect("start the binodal-server binary");
        let stderr = child.stderr.take().expect("piped standard error");
        let lines = Arc::new(Mutex::new(Vec::new()));
        let sink = Arc::clone(&lines);
        std::thread::spawn(move || {
            for line in BufReader::new(stderr).lines() {
                let Ok(line) = line else { break };
                sink.lock().expect("log lines").push(line);
            }
        });
        let metrics_wanted = launch
            .env
            .iter()
            .any(|(name, value)| name == "BINODAL_METRICS__ENABLED" && value == "true");
        let started = Instant::now();
        loop {
            let (address, metrics_address) = {
                let lines = lines.lock().expect("log lines");
                (
                    logged_address(&lines, "binodal server listening"),
                    logged_address(&lines, "metrics endpoint listening at /metrics"),
                )
            };
            if let Some(address) = address
                && (metrics_address.is_some() || !metrics_wanted)
            {
                return ServerProcess {
                    child,
                    address,
                    metrics_address,
                    lines,
                };
            }
            if let Ok(Some(status)) = child.try_wait() {
                panic!(
                    "binodal-server exited with {status} before serving:\n{}",
                    lines.lock().expect("log lines").join("\n")
                );
            }
            assert!(
                started.elapsed() < PROCESS_GUARD,
                "binodal-server did not report its address in time"
            );
            tokio::time::sleep(Duration::from_millis(20)).await;
        }
    }

    /// The process id.
    pub fn pid(&self) -> u32 {
        self.child.id()
    }

    /// `http://address`, for clients.
    pub fn url(&self) -> String {
        format!("http://{}", self.address)
    }

    /// Sends a signal by name (`TERM`, `HUP`) with the system's `kill` command.
    pub fn signal(&self, name: &str) {
        let status = Command::new("kill")
            .arg(format!("-{name}"))
            .arg(self.pid().to_string())
            .status()
            .expect("run kill");
        assert!(status.success(), "kill -{name} failed");
    }

    /// Kills the process at once (SIGKILL), as a crash would.
    pub fn kill(&mut self) {
        self.child.kill().expect("SIGKILL the server");
        self.child.wait().expect("reap the killed server");
    }

    /// Waits for the process to exit, failing the test after [`PROCESS_GUARD`].
    pub async fn wait_exit(&mut self) -> ExitStatus {
        let started = Instant::now();
        loop {
            if let Some(status) = self.child.try_wait().expect("poll the server process") {
                return status;
            }
            assert!(
                started.elapsed() < PROCESS_GUARD,
                "binodal-server did not exit in time"
            );
            tokio::time::sleep(Duration::from_millis(20)).await;
        }
    }

    /// Every log line so far.
    pub fn log_lines(&self) -> Vec<String> {
        self.lines.lock().expect("log lines").clone()
    }

    /// Waits until a log line contains `text`, failing the test after [`PROCESS_GUARD`].
    pub async fn wait_for_log(&self, text: &str) {
        let started = Instant::now();
        while !self.log_lines().iter().any(|line| line.contains(text)) {
            assert!(
                started.elapsed() < PROCESS_GUARD,
                "no log line contains {text:?}:\n{}",
                self.log_lines().join("\n")
            );
            tokio::time::sleep(Duration::from_millis(20)).await;
        }
    }

    /// Resident memory of the process now, in KiB (Linux `/proc`).
    pub fn resident_kib(&self) -> u64 {
        let status = std::fs::read_to_string(format!("/proc/{}/status", self.pid()))
            .expect("read /proc/<pid>/status");
        binodal_server::metrics::parse_resident_kib(&status).expect("VmRSS line")
    }

    /// The metrics page, fetched over HTTP/1.1 from the metrics endpoint.
    pub async fn scrape(&self, path: &str) -> (u16, String) {
        let address = self.metrics_address.expect("metrics are enabled");
        http_get(address, path).await
    }
}

impl Drop for ServerProcess {
    fn drop(&mut self) {
        if let Ok(None) = self.child.try_wait() {
            self.child.kill().ok();
            self.child.wait().ok();
        }
    }
}

/// A plain HTTP/1.1 GET on loopback: the status code and the body.
pub async fn http_get(address: SocketAddr, path: &str) -> (u16, String) {
    let path = path.to_owned();
    tokio::task::spawn_blocking(move || {
        use std::io::{Read as _, Write as _};
        let mut stream = std::net::TcpStream::connect(address).expect("connect to metrics");
        stream
            .set_read_timeout(Some(PROCESS_GUARD))
            .expect("read timeout");
        write!(
            stream,
            "GET {path} HTTP/1.1\r\nHost: {address}\r\nConnection: close\r\n\r\n"
        )
        .expect("send request");
        let mut answer = String::new();
        stream.read_to_string(&mut answer).expect("read answer");
        let (head, body) = answer.split_once("\r\n\r\n").expect("HTTP head and body");
        let code = head
            .split_whitespace()
            .nth(1)
            .and_then(|code| code.parse().ok())
            .expect("HTTP status code");
        (code, body.to_owned())
    })
    .await
    .expect("HTTP GET task")
}

/// The value of the sample `name{labels}` (labels exactly as rendered) in a metrics page.
pub fn sample(page: &str, series: &str) -> Option<f64> {
    page.lines()
        .filter(|line| !line.starts_with('#'))
        .find_map(|line| {
            let (name, value) = line.rsplit_once(' ')?;
            (name == series).then(|| value.parse().ok())?
        })
}
