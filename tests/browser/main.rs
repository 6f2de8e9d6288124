//! Browser tests: the real binary with the demo lab, driven in headless
//! Chromium over WebDriver (Debian's `chromium` and `chromium-driver`).
//!
//! Run with `cargo test --features system-tests --test browser` after
//! `apt-get install chromium chromium-driver` (`.ci/run` does both). The
//! WebDriver client below speaks the W3C protocol over plain HTTP on
//! loopback, so the tests need no extra crates.

mod webdriver;

use std::io::{BufRead, BufReader};
use std::process::{Child, Command, Stdio};
use std::sync::mpsc;
use std::time::Duration;

use webdriver::Session;

const BIN: &str = env!("CARGO_BIN_EXE_juncture");

struct Server {
    child: Child,
    base: String,
    _dir: tempfile::TempDir,
}

impl Drop for Server {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

fn start_server() -> Server {
    let dir = tempfile::tempdir().expect("temp dir");
    let db = dir.path().join("browser.db");
    let mut child = Command::new(BIN)
        .args(["serve", "--demo", "--bind", "127.0.0.1:0", "--database"])
        .arg(&db)
        .env("JUNCTURE_LOG", "warn")
        .stdout(Stdio::piped())
        .spawn()
        .expect("juncture starts");
    let stdout = child.stdout.take().expect("stdout");
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        for line in BufReader::new(stdout).lines().map_while(Result::ok) {
            if let Some(addr) = line.strip_prefix("juncture listening on ") {
                let _ = tx.send(addr.to_owned());
            }
        }
    });
    let base = rx
        .recv_timeout(Duration::from_secs(60))
        .expect("server address");
    Server {
        child,
        base,
        _dir: dir,
    }
}

#[test]
fn a_technician_records_a_run_in_the_browser() {
    let server = start_server();
    let driver = webdriver::Driver::start();
    let mut s = Session::new(&driver);
    let base = &server.base;

    // Sign in.
    s.go(&format!("{base}/sign-in"));
    s.type_into("#username", "demo-tech");
    s.type_into("#password", "juncture-demo");
    s.submit("form.stacked button[type=submit]");
    assert!(s.url().ends_with("/work"), "after sign-in: {}", s.url());
    assert!(s.text("main").contains("In progress"));

    // New run: out-of-service equipment cannot be chosen.
    s.go(&format!("{base}/runs/new"));
    assert!(s.source().contains("LTM-DMM-10 is out of service"));
    assert!(
        s.attribute("option[value='LTM-DMM-10']", "disabled")
            .is_some()
    );
    s.click("#instrument_serial option[value='CVW-PT-1187']");
    s.click("#reference option[value='LTM-PRT-02']");
    s.click("#reference_readout option[value='LTM-BRG-05']");
    s.click("#uut_readout option[value='LTM-BRG-05']");
    s.click("#medium option[value='LTM-BATH-07']");
    s.type_into("#procedure_ref", "LTM-P-04 rev 3");
    s.type_into("#tolerance_class", "A");
    s.submit("#new-run button[type=submit]");
    let run_url = s.url();
    assert!(run_url.contains("/runs/"), "a run page: {run_url}");

    // A set point, then a pasted block with a bad line.
    s.type_into("#nominal_t_c", "100");
    s.submit("form.inline button[type=submit]");
    s.type_into(
        "textarea[name=paste]",
        "reference;uut\n138,5110;138,5301\n138,5112;138,53O5\n138,5109;138,5299\n",
    );
    s.submit("form.readings-form button[type=submit]");
    let page = s.text("main");
    assert!(
        page.contains("line 3, column 2"),
        "the bad line is named: {page}"
    );
    // The pasted text is still there; fix the line and save again.
    let kept = s.property("textarea[name=paste]", "value");
    assert!(kept.contains("138,53O5"), "{kept}");
    s.clear("textarea[name=paste]");
    s.type_into(
        "textarea[name=paste]",
        "reference;uut\n138,5110;138,5301\n138,5112;138,5305\n138,5109;138,5299\n",
    );
    s.submit("form.readings-form button[type=submit]");
    let deviation = s.text("strong.deviation");
    let expanded = s.text("strong.expanded");
    assert!(
        deviation.ends_with("°C") && deviation.starts_with('+'),
        "{deviation}"
    );
    assert!(expanded.starts_with("U = 0.0"), "{expanded}");

    // Keyboard: typing in the grid and pressing Enter moves down a row.
    s.type_into("input[name=ref_0]", "138.5111\u{E007}");
    let focused = s.active_element_name();
    assert_eq!(focused, "ref_1", "Enter moves to the next row");

    // Submit for review: the page becomes read-only.
    s.submit("#submit-run");
    assert!(s.text("main").contains("waiting for review"));
    assert!(!s.source().contains("Save readings"));
}

#[test]
fn a_reviewer_approves_a_run_and_finds_its_certificate() {
    let server = start_server();
    let driver = webdriver::Driver::start();
    let mut s = Session::new(&driver);
    let base = &server.base;

    s.go(&format!("{base}/sign-in"));
    s.type_into("#username", "demo-reviewer");
    s.type_into("#password", "juncture-demo");
    s.submit("form.stacked button[type=submit]");

    // The review queue lists the demo's submitted run; open it and approve.
    s.go(&format!("{base}/review"));
    assert!(s.text("main").contains("CVW-PT-1187"), "{}", s.text("main"));
    s.submit("main a[href='/runs/1']");
    s.submit("#approve-run");
    let url = s.url();
    assert!(
        url.contains("/certificates/LTM-"),
        "the certificate page: {url}"
    );
    let number = url.rsplit('/').next().expect("number").to_owned();
    let page = s.text("main");
    assert!(
        page.contains(&format!("Calibration Certificate {number}")),
        "{page}"
    );
    assert!(page.contains("CVW-PT-1187"));
    assert!(page.contains("revision 0"));

    // Download the PDF through the page's own link.
    let href = s.attribute("a[href*='/pdf']", "href").expect("PDF link");
    let (status, kind, head, size) = s.fetch(&href);
    assert_eq!(status, 200);
    assert_eq!(kind, "application/pdf");
    assert!(head.starts_with("%PDF-"), "{head}");
    assert!(size > 10_000, "a PDF with an embedded font: {size} bytes");

    // Find it in the register by its serial number.
    s.go(&format!("{base}/certificates"));
    s.type_into("#q", "CVW-PT-1187");
    s.submit("form[action='/certificates'] button[type=submit]");
    let link = format!("a[href='/certificates/{number}']");
    assert_eq!(s.text(&link), number);
}
