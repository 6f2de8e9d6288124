//! Helpers for tests that run the real binary: start it, talk HTTP/1.1 to
//! it over a plain socket, stop it, and open its database file.

use std::io::{BufRead, BufReader, Read, Write};
use std::net::TcpStream;
use std::path::Path;
use std::process::{Child, Command, Stdio};
use std::sync::mpsc;
use std::time::Duration;

pub const BIN: &str = env!("CARGO_BIN_EXE_juncture");

pub fn juncture(db: &Path, args: &[&str]) -> std::process::Output {
    Command::new(BIN)
        .args(args)
        .arg("--database")
        .arg(db)
        .env_remove("JUNCTURE_DATABASE")
        .env("JUNCTURE_LOG", "warn")
        .output()
        .expect("binary runs")
}

/// Starts `serve --demo` with debug logging written to `log`.
pub fn start(db: &Path, log: &Path) -> (Child, String) {
    let log_file = std::fs::File::create(log).expect("log file");
    let mut child = Command::new(BIN)
        .args(["serve", "--demo", "--bind", "127.0.0.1:0", "--database"])
        .arg(db)
        .env_remove("JUNCTURE_DATABASE")
        .env("JUNCTURE_LOG", "debug,sqlx=debug,tower_http=trace")
        .stdout(Stdio::piped())
        .stderr(Stdio::from(log_file))
        .spawn()
        .expect("binary starts");
    let stdout = child.stdout.take().expect("stdout");
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
        .expect("server address");
    (child, address)
}

pub struct Reply {
    pub status: u16,
    pub head: String,
    pub body: String,
}

impl Reply {
    pub fn cookie(&self, name: &str) -> Option<String> {
        self.head.lines().find_map(|l| {
            let v = l
                .strip_prefix("set-cookie: ")
                .or_else(|| l.strip_prefix("Set-Cookie: "))?;
            let pair = v.split(';').next()?;
            let (n, value) = pair.split_once('=')?;
            (n == name).then(|| value.to_owned())
        })
    }
}

pub fn http(
    address: &str,
    method: &str,
    path: &str,
    headers: &[(&str, &str)],
    body: &str,
) -> Reply {
    let mut stream = TcpStream::connect(address).expect("connects");
    stream
        .set_read_timeout(Some(Duration::from_secs(30)))
        .expect("timeout");
    let mut request =
        format!("{method} {path} HTTP/1.1\r\nHost: {address}\r\nConnection: close\r\n");
    for (k, v) in headers {
        request.push_str(&format!("{k}: {v}\r\n"));
    }
    request.push_str(&format!("Content-Length: {}\r\n\r\n{body}", body.len()));
    stream.write_all(request.as_bytes()).expect("writes");
    let mut raw = String::new();
    stream.read_to_string(&mut raw).expect("reads");
    let (head, body) = raw.split_once("\r\n\r\n").unwrap_or((&raw, ""));
    let status = head
        .split_whitespace()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .expect("status line");
    Reply {
        status,
        head: head.to_owned(),
        body: body.to_owned(),
    }
}

/// Runs `f` with a pool on the SQLite file at `path`.
pub fn with_db<T, F, Fut>(path: &Path, f: F) -> T
where
    F: FnOnce(sqlx::SqlitePool) -> Fut,
    Fut: std::future::Future<Output = T>,
{
    let runtime = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()
        .expect("runtime");
    runtime.block_on(async {
        let pool = sqlx::SqlitePool::connect(&format!("sqlite://{}", path.display()))
            .await
            .expect("opens");
        let out = f(pool.clone()).await;
        pool.close().await;
        out
    })
}

pub fn stop(child: &mut Child) {
    let _ = Command::new("kill")
        .args(["-TERM", &child.id().to_string()])
        .status();
    for _ in 0..300 {
        if child.try_wait().expect("wait").is_some() {
            return;
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    let _ = child.kill();
}

/// [`http`] that reports a dead server instead of panicking.
pub fn try_http(
    address: &str,
    method: &str,
    path: &str,
    headers: &[(&str, &str)],
    body: &str,
) -> Result<Reply, String> {
    let mut stream = TcpStream::connect(address).map_err(|e| e.to_string())?;
    stream
        .set_read_timeout(Some(Duration::from_secs(30)))
        .map_err(|e| e.to_string())?;
    let mut request =
        format!("{method} {path} HTTP/1.1\r\nHost: {address}\r\nConnection: close\r\n");
    for (k, v) in headers {
        request.push_str(&format!("{k}: {v}\r\n"));
    }
    request.push_str(&format!("Content-Length: {}\r\n\r\n{body}", body.len()));
    stream
        .write_all(request.as_bytes())
        .map_err(|e| e.to_string())?;
    let mut raw = String::new();
    stream.read_to_string(&mut raw).map_err(|e| e.to_string())?;
    let (head, body) = raw.split_once("\r\n\r\n").ok_or("no response")?;
    let status = head
        .split_whitespace()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .ok_or("no status line")?;
    Ok(Reply {
        status,
        head: head.to_owned(),
        body: body.to_owned(),
    })
}
