//! Helpers shared by the end-to-end tests: a real server started in-process on `127.0.0.1:0`, and
//! clients connected to it over TCP.

pub mod certs;
pub mod process;
#[path = "../../examples/support/resilience.rs"]
pub mod resilience;

use std::net::SocketAddr;
use std::time::Duration;

use binodal_server::settings::Settings;
use tokio::sync::oneshot;
use tokio::task::JoinHandle;
use tonic::transport::{Channel, Endpoint};

/// Longest wait for the server to stop before a test fails. A guard against a hung test, not a
/// speed check.
pub const STOP_GUARD: Duration = Duration::from_secs(20);

/// A server running in-process on an ephemeral loopback port.
pub struct TestServer {
    /// Address the server listens on.
    pub address: SocketAddr,
    stop: Option<oneshot::Sender<()>>,
    task: JoinHandle<anyhow::Result<()>>,
}

impl TestServer {
    /// Starts a server with default settings.
    pub async fn start() -> Self {
        Self::start_with(Settings::default()).await
    }

    /// Starts a server with the given settings (their listen address is not used).
    pub async fn start_with(settings: Settings) -> Self {
        let listener = tokio::net::TcpListener::bind("127.0.0.1:0")
            .await
            .expect("bind 127.0.0.1:0");
        let address = listener.local_addr().expect("local address");
        let (stop, stopped) = oneshot::channel::<()>();
        let task = tokio::spawn(binodal_server::run(listener, settings, async {
            // A dropped sender also stops the server.
            stopped.await.ok();
        }));
        Self {
            address,
            stop: Some(stop),
            task,
        }
    }

    /// A channel connected to the server.
    pub async fn channel(&self) -> Channel {
        Endpoint::from_shared(format!("http://{}", self.address))
            .expect("valid endpoint")
            .connect()
            .await
            .expect("connect to the test server")
    }

    /// Starts the graceful shutdown without waiting for it.
    pub fn begin_shutdown(&mut self) {
        if let Some(stop) = self.stop.take() {
            stop.send(()).ok();
        }
    }

    /// Starts the shutdown if needed and waits for `run` to return, failing the test if it does
    /// not return within [`STOP_GUARD`] or returns an error.
    pub async fn stop(mut self) {
        self.begin_shutdown();
        let result = tokio::time::timeout(STOP_GUARD, self.task)
            .await
            .expect("server stops after shutdown")
            .expect("server task did not panic");
        result.expect("server returned without error");
    }
}
