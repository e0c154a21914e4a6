//! Interoperability with a client nobody here wrote: tests/python/interop_test.py generates its
//! stubs from proto/ with the gRPC project's own `grpc_tools.protoc` and calls the running
//! server. Python 3 and tests/python/requirements.txt are required: without them this test fails
//! with a message saying what to install; it never skips.

use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use crate::util::TestServer;

/// The script, relative to this crate.
const SCRIPT: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/../../tests/python/interop_test.py"
);

/// Longest wait for the script before the test fails: a guard against a hung client, not a speed
/// check (stub generation and a dozen calls take a few seconds).
const SCRIPT_GUARD: Duration = Duration::from_secs(120);

/// Reads a child's pipe to the end on its own thread, so a full pipe cannot block the child.
fn drain(pipe: Option<impl std::io::Read + Send + 'static>) -> std::thread::JoinHandle<String> {
    std::thread::spawn(move || {
        let mut text = String::new();
        if let Some(mut pipe) = pipe {
            pipe.read_to_string(&mut text).ok();
        }
        text
    })
}

/// Runs the script to completion or until [`SCRIPT_GUARD`]; returns (exit code, stdout, stderr).
fn run_script(address: String) -> (Option<i32>, String, String) {
    let mut child: Child = Command::new("python3")
        .arg(SCRIPT)
        .arg(address)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap_or_else(|e| {
            panic!(
                "cannot start `python3` ({e}): the interoperability test needs Python 3 with \
                 `python3 -m pip install -r tests/python/requirements.txt`"
            )
        });
    let stdout = drain(child.stdout.take());
    let stderr = drain(child.stderr.take());
    let started = Instant::now();
    let code = loop {
        match child.try_wait().expect("wait for the script") {
            Some(status) => break status.code(),
            None if started.elapsed() > SCRIPT_GUARD => {
                child.kill().ok();
                child.wait().ok();
                let (out, err) = (
                    stdout.join().unwrap_or_default(),
                    stderr.join().unwrap_or_default(),
                );
                panic!(
                    "interop_test.py did not finish within {SCRIPT_GUARD:?}\n--- stdout\n{out}\n--- stderr\n{err}"
                );
            }
            None => std::thread::sleep(Duration::from_millis(50)),
        }
    };
    (
        code,
        stdout.join().unwrap_or_default(),
        stderr.join().unwrap_or_default(),
    )
}

#[tokio::test]
async fn a_generated_python_client_talks_to_the_server() {
    let server = TestServer::start().await;
    let address = server.address.to_string();
    // The script blocks; run it off the runtime so the in-process server keeps answering.
    let (code, out, err) = tokio::task::spawn_blocking(move || run_script(address))
        .await
        .expect("script runner did not panic");
    assert_eq!(
        code,
        Some(0),
        "interop_test.py failed (exit {code:?})\n--- stdout\n{out}\n--- stderr\n{err}"
    );
    assert!(
        out.contains("interop: all checks passed"),
        "--- stdout\n{out}\n--- stderr\n{err}"
    );
    server.stop().await;
}
