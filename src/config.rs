//! Run-time settings of the service, gathered from the command line and the
//! environment by `main.rs` (clap) and passed down as plain values.

use std::net::SocketAddr;
use std::path::PathBuf;
use std::time::Duration;

/// Default location of the embedded SQLite database file.
pub const DEFAULT_DATABASE: &str = "juncture.db";
/// Default listening address: loopback only, so a fresh install is never
/// exposed to the network by accident.
pub const DEFAULT_BIND: &str = "127.0.0.1:8080";

/// Settings of `juncture serve`.
#[derive(Debug, Clone)]
pub struct ServeConfig {
    /// Path of the SQLite database file (created when missing).
    pub database: PathBuf,
    /// Address to listen on.
    pub bind: SocketAddr,
    /// Settings of the HTTP layer.
    pub http: HttpConfig,
}

/// Limits applied to every HTTP request.
#[derive(Debug, Clone)]
pub struct HttpConfig {
    /// Requests taking longer than this are answered with 408.
    pub request_timeout: Duration,
    /// Largest accepted request body, in bytes (readings files are the
    /// largest bodies the service takes).
    pub body_limit_bytes: usize,
    /// Largest logger file accepted by the streaming upload
    /// (`.../readings/file`), in bytes.
    pub upload_limit_bytes: u64,
}

impl Default for HttpConfig {
    fn default() -> Self {
        Self {
            request_timeout: Duration::from_secs(30),
            body_limit_bytes: 8 * 1024 * 1024,
            upload_limit_bytes: 256 * 1024 * 1024,
        }
    }
}
