//! A small W3C WebDriver client over plain HTTP/1.1 on loopback, enough for
//! the browser tests: sessions, navigation, elements, keys, clicks, text.

use std::io::{Read, Write};
use std::net::{TcpListener, TcpStream};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use serde_json::{Value, json};

/// The W3C element reference key.
const ELEMENT: &str = "element-6066-11e4-a52e-4f735466cecf";

/// A running chromedriver.
pub struct Driver {
    child: Child,
    port: u16,
}

impl Drop for Driver {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

fn free_port() -> u16 {
    TcpListener::bind("127.0.0.1:0")
        .and_then(|l| l.local_addr())
        .map(|a| a.port())
        .expect("free port")
}

/// One HTTP request to the driver; returns the parsed JSON `value`.
fn request(port: u16, method: &str, path: &str, body: Option<&Value>) -> Result<Value, String> {
    let mut stream = TcpStream::connect(("127.0.0.1", port)).map_err(|e| e.to_string())?;
    stream
        .set_read_timeout(Some(Duration::from_secs(60)))
        .map_err(|e| e.to_string())?;
    let payload = body.map(Value::to_string).unwrap_or_default();
    write!(
        stream,
        "{method} {path} HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\nContent-Type: application/json\r\nContent-Length: {}\r\nConnection: close\r\n\r\n{payload}",
        payload.len()
    )
    .map_err(|e| e.to_string())?;
    // chromedriver may keep the connection open: read the head, then
    // exactly Content-Length bytes (or chunks).
    let mut raw = Vec::new();
    let mut buf = [0u8; 8192];
    let head_end = loop {
        if let Some(i) = raw.windows(4).position(|w| w == b"\r\n\r\n") {
            break i + 4;
        }
        let n = stream.read(&mut buf).map_err(|e| e.to_string())?;
        if n == 0 {
            return Err("connection closed before the response head".to_owned());
        }
        raw.extend_from_slice(&buf[..n]);
    };
    let head = String::from_utf8_lossy(&raw[..head_end]).to_ascii_lowercase();
    let length = head.lines().find_map(|l| {
        l.strip_prefix("content-length:")
            .and_then(|v| v.trim().parse::<usize>().ok())
    });
    let body = match length {
        Some(len) => {
            while raw.len() < head_end + len {
                let n = stream.read(&mut buf).map_err(|e| e.to_string())?;
                if n == 0 {
                    break;
                }
                raw.extend_from_slice(&buf[..n]);
            }
            String::from_utf8_lossy(&raw[head_end..(head_end + len).min(raw.len())]).into_owned()
        }
        None => {
            let _ = stream.read_to_end(&mut raw);
            let text = String::from_utf8_lossy(&raw[head_end..]).into_owned();
            if head.contains("transfer-encoding: chunked") {
                dechunk(&text)
            } else {
                text
            }
        }
    };
    let parsed: Value = serde_json::from_str(&body).map_err(|e| format!("{e}: {body}"))?;
    if let Some(error) = parsed["value"]["error"].as_str() {
        return Err(format!("{error}: {}", parsed["value"]["message"]));
    }
    Ok(parsed["value"].clone())
}

fn dechunk(body: &str) -> String {
    let mut out = String::new();
    let mut rest = body;
    while let Some((size, tail)) = rest.split_once("\r\n") {
        let n = usize::from_str_radix(size.trim(), 16).unwrap_or(0);
        if n == 0 || tail.len() < n {
            break;
        }
        out.push_str(&tail[..n]);
        rest = tail[n..].trim_start_matches("\r\n");
    }
    out
}

impl Driver {
    /// Starts chromedriver on a free loopback port and waits until ready.
    pub fn start() -> Self {
        let port = free_port();
        let binary = std::env::var("CHROMEDRIVER").unwrap_or_else(|_| "chromedriver".to_owned());
        let child = Command::new(&binary)
            .arg(format!("--port={port}"))
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .unwrap_or_else(|e| {
                panic!("cannot start {binary} ({e}); install Debian's chromium and chromium-driver")
            });
        let deadline = Instant::now() + Duration::from_secs(30);
        loop {
            if request(port, "GET", "/status", None).is_ok_and(|v| v["ready"] == true) {
                break;
            }
            assert!(
                Instant::now() < deadline,
                "chromedriver did not become ready"
            );
            std::thread::sleep(Duration::from_millis(100));
        }
        Self { child, port }
    }
}

/// A browser session.
pub struct Session<'a> {
    driver: &'a Driver,
    id: String,
}

impl Drop for Session<'_> {
    fn drop(&mut self) {
        let _ = request(
            self.driver.port,
            "DELETE",
            &format!("/session/{}", self.id),
            None,
        );
    }
}

impl<'a> Session<'a> {
    /// Opens headless Chromium.
    pub fn new(driver: &'a Driver) -> Self {
        let binary = std::env::var("CHROMIUM").unwrap_or_else(|_| "/usr/bin/chromium".to_owned());
        static SESSIONS: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);
        let n = SESSIONS.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
        let profile =
            std::env::temp_dir().join(format!("juncture-browser-{}-{n}", std::process::id()));
        let caps = json!({"capabilities": {"alwaysMatch": {
            "browserName": "chrome",
            "goog:chromeOptions": {
                "binary": binary,
                "args": ["--headless", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage",
                         "--disable-quic", "--no-first-run", "--disable-background-networking",
                         "--disable-component-update", "--disable-sync",
                         format!("--user-data-dir={}", profile.display()),
                         "--window-size=1280,2000"]
            }
        }}});
        let value = request(driver.port, "POST", "/session", Some(&caps)).expect("browser session");
        let id = value["sessionId"].as_str().expect("session id").to_owned();
        Self { driver, id }
    }

    fn call(&self, method: &str, path: &str, body: Option<Value>) -> Value {
        request(
            self.driver.port,
            method,
            &format!("/session/{}{path}", self.id),
            body.as_ref(),
        )
        .unwrap_or_else(|e| panic!("{method} {path}: {e}"))
    }

    /// Navigates to a URL.
    pub fn go(&mut self, url: &str) {
        self.call("POST", "/url", Some(json!({"url": url})));
    }

    /// The current URL.
    pub fn url(&self) -> String {
        self.call("GET", "/url", None)
            .as_str()
            .unwrap_or("")
            .to_owned()
    }

    /// The page source.
    pub fn source(&self) -> String {
        self.call("GET", "/source", None)
            .as_str()
            .unwrap_or("")
            .to_owned()
    }

    fn find(&self, css: &str) -> String {
        let v = self.call(
            "POST",
            "/element",
            Some(json!({"using": "css selector", "value": css})),
        );
        v[ELEMENT]
            .as_str()
            .unwrap_or_else(|| panic!("no element {css}"))
            .to_owned()
    }

    /// Types text into an element (WebDriver key codes allowed).
    pub fn type_into(&mut self, css: &str, text: &str) {
        let id = self.find(css);
        self.call(
            "POST",
            &format!("/element/{id}/value"),
            Some(json!({"text": text})),
        );
    }

    /// Clears an input or textarea.
    pub fn clear(&mut self, css: &str) {
        let id = self.find(css);
        self.call("POST", &format!("/element/{id}/clear"), Some(json!({})));
    }

    /// Clicks an element.
    pub fn click(&mut self, css: &str) {
        let id = self.find(css);
        self.call("POST", &format!("/element/{id}/click"), Some(json!({})));
    }

    /// Clicks a button that submits a form, then waits until the browser
    /// has left the old page and the new one has loaded (a click returns
    /// before the navigation it starts has finished).
    pub fn submit(&mut self, css: &str) {
        let old = self.find("html");
        self.click(css);
        let deadline = Instant::now() + Duration::from_secs(30);
        loop {
            let gone = request(
                self.driver.port,
                "GET",
                &format!("/session/{}/element/{old}/name", self.id),
                None,
            )
            .is_err();
            if gone {
                break;
            }
            assert!(
                Instant::now() < deadline,
                "the page did not change after clicking {css}"
            );
            std::thread::sleep(Duration::from_millis(50));
        }
        loop {
            let state = self.call(
                "POST",
                "/execute/sync",
                Some(json!({"script": "return document.readyState", "args": []})),
            );
            if state == "complete" {
                break;
            }
            assert!(
                Instant::now() < deadline,
                "the new page did not finish loading"
            );
            std::thread::sleep(Duration::from_millis(50));
        }
    }

    /// Fetches `url` from inside the page (with the page's cookies, as a
    /// download link would) and returns the status, the content type, the
    /// first bytes (as text, one char per byte) and the size.
    pub fn fetch(&self, url: &str) -> (u64, String, String, u64) {
        let script = "const done = arguments[arguments.length - 1];\
            fetch(arguments[0]).then(r => r.arrayBuffer().then(b => done({\
              status: r.status, type: r.headers.get('content-type'),\
              head: String.fromCharCode(...new Uint8Array(b.slice(0, 8))), size: b.byteLength})))\
            .catch(e => done({status: 0, type: String(e), head: '', size: 0}));";
        let v = self.call(
            "POST",
            "/execute/async",
            Some(json!({"script": script, "args": [url]})),
        );
        (
            v["status"].as_u64().unwrap_or(0),
            v["type"].as_str().unwrap_or("").to_owned(),
            v["head"].as_str().unwrap_or("").to_owned(),
            v["size"].as_u64().unwrap_or(0),
        )
    }

    /// The visible text of an element.
    pub fn text(&self, css: &str) -> String {
        let id = self.find(css);
        self.call("GET", &format!("/element/{id}/text"), None)
            .as_str()
            .unwrap_or("")
            .to_owned()
    }

    /// An attribute of an element, if present.
    pub fn attribute(&self, css: &str, name: &str) -> Option<String> {
        let id = self.find(css);
        self.call("GET", &format!("/element/{id}/attribute/{name}"), None)
            .as_str()
            .map(str::to_owned)
    }

    /// A DOM property of an element, as text.
    pub fn property(&self, css: &str, name: &str) -> String {
        let id = self.find(css);
        self.call("GET", &format!("/element/{id}/property/{name}"), None)
            .as_str()
            .unwrap_or("")
            .to_owned()
    }

    /// The `name` attribute of the focused element.
    pub fn active_element_name(&self) -> String {
        let v = self.call("GET", "/element/active", None);
        let id = v[ELEMENT].as_str().expect("active element").to_owned();
        self.call("GET", &format!("/element/{id}/attribute/name"), None)
            .as_str()
            .unwrap_or("")
            .to_owned()
    }
}
