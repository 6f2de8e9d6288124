//! Smoke tests of the real binary: it starts, answers over HTTP, stops on
//! SIGTERM, and fails loudly (non-zero exit, one clear line) when it cannot
//! open its database or its port.

use std::io::{BufRead, BufReader, Read, Write};
use std::net::{TcpListener, TcpStream};
use std::path::Path;
use std::process::{Child, Command, Stdio};
use std::sync::mpsc;
use std::time::Duration;

const BIN: &str = env!("CARGO_BIN_EXE_juncture");

fn juncture(args: &[&str]) -> Command {
    let mut cmd = Command::new(BIN);
    cmd.args(args)
        .env_remove("JUNCTURE_DATABASE")
        .env_remove("JUNCTURE_BIND")
        .env("JUNCTURE_LOG", "warn");
    cmd
}

/// Starts `juncture serve` on a free loopback port and returns the child
/// with the address it printed.
fn start(database: &Path, extra: &[&str]) -> (Child, String) {
    let db = database.to_str().expect("utf-8 path");
    let mut args = vec!["serve", "--database", db, "--bind", "127.0.0.1:0"];
    args.extend_from_slice(extra);
    let mut child = juncture(&args)
        .stdout(Stdio::piped())
        .stderr(Stdio::inherit())
        .spawn()
        .expect("binary starts");
    let stdout = child.stdout.take().expect("stdout piped");
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        for line in BufReader::new(stdout).lines().map_while(Result::ok) {
            if let Some(addr) = line.strip_prefix("juncture listening on http://") {
                let _ = tx.send(addr.to_owned());
            }
        }
    });
    let address = rx
        .recv_timeout(Duration::from_secs(60))
        .expect("server printed its address within 60 s");
    (child, address)
}

/// A minimal HTTP/1.1 GET over a plain socket; returns (status, body).
fn http_get(address: &str, path: &str) -> (u16, String) {
    let mut stream = TcpStream::connect(address).expect("connects");
    stream
        .set_read_timeout(Some(Duration::from_secs(30)))
        .expect("timeout");
    write!(
        stream,
        "GET {path} HTTP/1.1\r\nHost: {address}\r\nConnection: close\r\n\r\n"
    )
    .expect("writes");
    let mut raw = String::new();
    stream.read_to_string(&mut raw).expect("reads");
    let status = raw
        .split_whitespace()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .expect("status line");
    let body = raw
        .split_once("\r\n\r\n")
        .map(|(_, b)| b.to_owned())
        .unwrap_or_default();
    (status, body)
}

fn terminate(child: &mut Child) -> std::process::ExitStatus {
    let pid = child.id().to_string();
    let sent = Command::new("kill")
        .args(["-TERM", &pid])
        .status()
        .expect("kill runs");
    assert!(sent.success());
    for _ in 0..300 {
        if let Some(status) = child.try_wait().expect("wait") {
            return status;
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    let _ = child.kill();
    panic!("server did not stop within 30 s of SIGTERM");
}

#[test]
fn the_binary_serves_health_and_the_demo_lab_then_stops_on_sigterm() {
    let dir = tempfile::tempdir().expect("temp dir");
    let db = dir.path().join("smoke.db");
    let (mut child, address) = start(&db, &["--demo"]);

    let (status, body) = http_get(&address, "/healthz");
    assert_eq!(status, 200, "{body}");
    let health: serde_json::Value = serde_json::from_str(&body).expect("json");
    assert_eq!(health["status"], "ok");
    assert_eq!(health["version"], env!("CARGO_PKG_VERSION"));

    let (status, body) = http_get(&address, "/");
    assert_eq!(status, 200);
    assert!(body.contains("Larchmere Thermal Metrology"));

    let exit = terminate(&mut child);
    assert!(exit.success(), "graceful shutdown exits 0, got {exit:?}");
    assert!(db.exists(), "database file created where asked");

    // A second start on the same file keeps the lab and does not fail on
    // --demo (the demo is loaded only into an empty database).
    let (mut child, address) = start(&db, &["--demo"]);
    let (status, body) = http_get(&address, "/");
    assert_eq!(status, 200);
    assert!(body.contains("Larchmere Thermal Metrology"));
    assert!(terminate(&mut child).success());
}

#[test]
fn an_unwritable_database_path_is_a_clear_error_and_a_nonzero_exit() {
    // /proc refuses new files even to root, so this holds in CI as well.
    let out = juncture(&[
        "serve",
        "--database",
        "/proc/juncture-smoke.db",
        "--bind",
        "127.0.0.1:0",
    ])
    .output()
    .expect("runs");
    assert!(!out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stderr.contains("error: cannot open the database /proc/juncture-smoke.db"),
        "{stderr}"
    );

    let dir = tempfile::tempdir().expect("temp dir");
    let missing = dir.path().join("no-such-folder").join("lab.db");
    let out = juncture(&["demo", "--database", missing.to_str().expect("utf-8")])
        .output()
        .expect("runs");
    assert!(!out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("does not exist"), "{stderr}");
}

#[test]
fn a_port_in_use_is_a_clear_error_and_a_nonzero_exit() {
    let holder = TcpListener::bind("127.0.0.1:0").expect("bind");
    let port = holder.local_addr().expect("addr").port();
    let dir = tempfile::tempdir().expect("temp dir");
    let db = dir.path().join("port.db");
    let bind = format!("127.0.0.1:{port}");
    let out = juncture(&[
        "serve",
        "--database",
        db.to_str().expect("utf-8"),
        "--bind",
        &bind,
    ])
    .output()
    .expect("runs");
    assert!(!out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stderr.contains(&format!("error: cannot listen on {bind}")),
        "{stderr}"
    );
    drop(holder);
}

#[test]
fn the_demo_command_refuses_a_database_that_already_holds_a_lab() {
    let dir = tempfile::tempdir().expect("temp dir");
    let db = dir.path().join("twice.db");
    let db = db.to_str().expect("utf-8");
    let first = juncture(&["demo", "--database", db])
        .output()
        .expect("runs");
    assert!(first.status.success(), "{first:?}");
    let second = juncture(&["demo", "--database", db])
        .output()
        .expect("runs");
    assert!(!second.status.success());
    assert!(String::from_utf8_lossy(&second.stderr).contains("already holds the laboratory"));
    let show = juncture(&["lab", "show", "--database", db])
        .output()
        .expect("runs");
    assert!(show.status.success());
    assert!(String::from_utf8_lossy(&show.stdout).contains("Larchmere Thermal Metrology"));
}
