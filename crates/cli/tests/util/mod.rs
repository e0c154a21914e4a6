//! Helpers for the CLI's end-to-end tests: one real server per test process, started in-process on
//! `127.0.0.1:0` in a background thread with its own tokio runtime, and the built `binodal`
//! binary run against it with a bounded wait.

use std::io::Read as _;
use std::net::SocketAddr;
use std::path::PathBuf;
use std::process::{Child, Command, ExitStatus, Stdio};
use std::sync::OnceLock;
use std::time::{Duration, Instant};

use binodal_server::settings::Settings;

/// Longest time one `binodal` run may take before the test fails. A guard against a hung test,
/// not a speed check (a diagram samples 80 saturation points in a debug build).
pub const RUN_GUARD: Duration = Duration::from_secs(120);

/// Longest wait for the server thread to report its address.
const START_GUARD: Duration = Duration::from_secs(60);

static SERVER: OnceLock<SocketAddr> = OnceLock::new();

/// The URL of the shared test server, starting it on first use.
pub fn server_url() -> String {
    let address = SERVER.get_or_init(|| {
        let (sender, receiver) = std::sync::mpsc::channel();
        std::thread::Builder::new()
            .name("binodal-test-server".to_string())
            .spawn(move || {
                let runtime = tokio::runtime::Builder::new_multi_thread()
                    .worker_threads(2)
                    .enable_all()
                    .build()
                    .expect("server runtime");
                runtime.block_on(async move {
                    let listener = tokio::net::TcpListener::bind("127.0.0.1:0")
                        .await
                        .expect("bind 127.0.0.1:0");
                    sender
                        .send(listener.local_addr().expect("local address"))
                        .expect("report the address");
                    // The server runs until the test process exits.
                    binodal_server::run(listener, Settings::default(), std::future::pending())
                        .await
                        .expect("server runs");
                });
            })
            .expect("spawn the server thread");
        receiver
            .recv_timeout(START_GUARD)
            .expect("the test server reports its address")
    });
    format!("http://{address}")
}

/// A scratch directory for this test process (configuration home, diagram files).
pub fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir()
        .join(format!("binodal-cli-tests-{}", std::process::id()))
        .join(name);
    std::fs::create_dir_all(&dir).expect("create scratch directory");
    dir
}

/// What one run printed and how it ended.
#[derive(Debug)]
pub struct Run {
    /// Exit status.
    pub status: ExitStatus,
    /// Standard output.
    pub stdout: String,
    /// Standard error.
    pub stderr: String,
}

impl Run {
    /// Fails the test unless the run succeeded; returns standard output.
    pub fn ok(&self) -> &str {
        assert!(
            self.status.success(),
            "binodal failed ({:?})\nstdout:\n{}\nstderr:\n{}",
            self.status,
            self.stdout,
            self.stderr
        );
        &self.stdout
    }

    /// Fails the test unless the run failed; returns standard error.
    pub fn failed(&self) -> &str {
        assert!(
            !self.status.success(),
            "binodal should have failed\nstdout:\n{}\nstderr:\n{}",
            self.stdout,
            self.stderr
        );
        &self.stderr
    }

    /// Standard output parsed as JSON (the run must have succeeded).
    pub fn json(&self) -> serde_json::Value {
        serde_json::from_str(self.ok()).unwrap_or_else(|e| {
            panic!("stdout is not JSON ({e}):\n{}", self.stdout);
        })
    }
}

/// A `binodal` command isolated from the user's environment: no `BINODAL_*` variables and an
/// empty configuration directory.
pub fn binodal() -> Command {
    let mut command = Command::new(env!("CARGO_BIN_EXE_binodal"));
    command
        .env_remove("BINODAL_SERVER")
        .env_remove("BINODAL_CONFIG")
        .env("XDG_CONFIG_HOME", scratch("empty-config-home"))
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    command
}

/// Runs `binodal --server <test server> ARGS...`.
pub fn run(args: &[&str]) -> Run {
    let mut command = binodal();
    command.arg("--server").arg(server_url()).args(args);
    finish(command.spawn().expect("start binodal"))
}

/// Runs `binodal ARGS...` without adding a server.
pub fn run_bare(args: &[&str]) -> Run {
    let mut command = binodal();
    command.args(args);
    finish(command.spawn().expect("start binodal"))
}

/// Runs `binodal --server <test server> ARGS...` with `input` on its standard input. The input
/// is written from a thread of its own and the pipe is closed after it, so the command sees the
/// end of its input as it would at the end of a shell pipe.
#[allow(dead_code, reason = "used by tests/watch.rs, not by every test binary")]
pub fn run_with_stdin(args: &[&str], input: &str) -> Run {
    let mut command = binodal();
    command
        .arg("--server")
        .arg(server_url())
        .args(args)
        .stdin(Stdio::piped());
    let mut child = command.spawn().expect("start binodal");
    let mut stdin = child.stdin.take().expect("a standard input pipe");
    let input = input.to_owned();
    let writer = std::thread::spawn(move || {
        use std::io::Write as _;
        // A command that stops reading early closes the pipe; that is its business, not a
        // failure of the test's writer.
        stdin.write_all(input.as_bytes()).ok();
        // Dropping `stdin` closes the pipe.
    });
    let run = finish(child);
    writer.join().expect("standard input writer");
    run
}

/// Waits for a started run, at most [`RUN_GUARD`]; the child is killed and the test fails after.
pub fn finish(mut child: Child) -> Run {
    let mut stdout = child.stdout.take();
    let mut stderr = child.stderr.take();
    let out_reader = std::thread::spawn(move || {
        let mut text = String::new();
        if let Some(pipe) = stdout.as_mut() {
            pipe.read_to_string(&mut text).ok();
        }
        text
    });
    let err_reader = std::thread::spawn(move || {
        let mut text = String::new();
        if let Some(pipe) = stderr.as_mut() {
            pipe.read_to_string(&mut text).ok();
        }
        text
    });
    let deadline = Instant::now() + RUN_GUARD;
    let status = loop {
        if let Some(status) = child.try_wait().expect("poll binodal") {
            break status;
        }
        if Instant::now() > deadline {
            child.kill().ok();
            child.wait().ok();
            panic!("binodal did not finish within {RUN_GUARD:?}");
        }
        std::thread::sleep(Duration::from_millis(20));
    };
    Run {
        status,
        stdout: out_reader.join().expect("stdout reader"),
        stderr: err_reader.join().expect("stderr reader"),
    }
}

/// Natural-log interpolation of a saturation table between two rows `(T/K, P)`: the pressure at
/// `t` (ln P is close to linear in T over a fraction of a kelvin, Clausius-Clapeyron).
pub fn pressure_between(lower: (f64, f64), upper: (f64, f64), t: f64) -> f64 {
    let fraction = (t - lower.0) / (upper.0 - lower.0);
    (lower.1.ln() + fraction * (upper.1.ln() - lower.1.ln())).exp()
}

/// The temperature at pressure `p` between two rows `(T/K, P)`, by the same interpolation.
pub fn temperature_between(lower: (f64, f64), upper: (f64, f64), p: f64) -> f64 {
    let fraction = (p.ln() - lower.1.ln()) / (upper.1.ln() - lower.1.ln());
    lower.0 + fraction * (upper.0 - lower.0)
}

/// Slope d(ln P)/dT between two rows `(T/K, P)`, 1/K.
pub fn log_pressure_slope(lower: (f64, f64), upper: (f64, f64)) -> f64 {
    (upper.1.ln() - lower.1.ln()) / (upper.0 - lower.0)
}

/// Half of the last digit of the R-134a table's temperatures (given to 0.01 K), K.
pub const TABLE_TEMPERATURE_ROUNDING_K: f64 = 0.005;

/// The tolerance on a saturation temperature at a given pressure, K: the model's recorded
/// largest saturation-pressure deviation (percent, from the answer's `basis`) turned into
/// temperature with the table's slope d(ln P)/dT, plus the rounding of the table's temperatures.
pub fn saturation_temperature_tolerance(max_deviation_percent: f64, slope_per_k: f64) -> f64 {
    max_deviation_percent / 100.0 / slope_per_k + TABLE_TEMPERATURE_ROUNDING_K
}

/// The recorded largest saturation-pressure deviation of an answer, percent.
pub fn recorded_max_deviation_percent(answer: &serde_json::Value) -> f64 {
    answer["basis"]["recorded_deviation"]["saturation_pressure_max_percent"]
        .as_f64()
        .unwrap_or_else(|| panic!("the answer records no deviation: {answer}"))
}

/// A number field of a JSON answer.
pub fn number(answer: &serde_json::Value, key: &str) -> f64 {
    answer[key]
        .as_f64()
        .unwrap_or_else(|| panic!("`{key}` is not a number in {answer}"))
}

/// Asserts `|actual - expected| <= tolerance`, naming the quantity and the source.
pub fn assert_close(actual: f64, expected: f64, tolerance: f64, what: &str, source: &str) {
    assert!(
        (actual - expected).abs() <= tolerance,
        "{what}: got {actual}, expected {expected} ± {tolerance} ({source})"
    );
}

/// The data rows of a reference table kept in `crates/fluids/data/reference/` (the published
/// values the catalogue's recorded deviations were measured against), each row as numbers in
/// the order of the table's header. Lines starting with `#` (the table's provenance) and the
/// header line are skipped. A cell that is not a number (the R-134a table's heat capacity is
/// `undefined` in its last two rows, next to the critical point) is NaN.
pub fn reference_rows(file: &str) -> Vec<Vec<f64>> {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../fluids/data/reference")
        .join(file);
    let text = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("cannot read {}: {e}", path.display()));
    text.lines()
        .filter(|line| !line.starts_with('#') && !line.trim().is_empty())
        .skip(1)
        .map(|line| {
            line.split(',')
                .map(|cell| cell.trim().parse().unwrap_or(f64::NAN))
                .collect()
        })
        .collect()
}
