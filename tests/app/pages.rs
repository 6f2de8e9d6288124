//! The technician's pages through the real router: sign-in, CSRF, the new
//! run form with blocked equipment, readings pasted with a bad line and
//! fixed, results on the page, submission, and escaping of what people type.

use axum::Router;
use axum::body::Body;
use axum::http::{Request, StatusCode};
use sqlx::SqlitePool;

use crate::helpers::{Answer, app, send};

/// A browser: keeps the session cookie and the page's CSRF token.
struct Browser {
    app: Router,
    cookies: Vec<(String, String)>,
}

impl Browser {
    fn cookie_header(&self) -> String {
        self.cookies
            .iter()
            .map(|(k, v)| format!("{k}={v}"))
            .collect::<Vec<_>>()
            .join("; ")
    }

    fn keep_cookies(&mut self, answer: &Answer) {
        for value in answer.headers.get_all("set-cookie") {
            let text = value.to_str().expect("ascii");
            let (pair, _) = text.split_once(';').unwrap_or((text, ""));
            let (k, v) = pair.split_once('=').expect("name=value");
            self.cookies.retain(|(name, _)| name != k);
            if !v.is_empty() {
                self.cookies.push((k.to_owned(), v.to_owned()));
            }
        }
    }

    async fn get(&mut self, uri: &str) -> Answer {
        let request = Request::get(uri)
            .header("cookie", self.cookie_header())
            .body(Body::empty())
            .expect("request");
        let answer = send(&self.app, request).await;
        self.keep_cookies(&answer);
        answer
    }

    async fn post_form(&mut self, uri: &str, fields: &[(&str, &str)]) -> Answer {
        let body: String = fields
            .iter()
            .map(|(k, v)| format!("{}={}", encode(k), encode(v)))
            .collect::<Vec<_>>()
            .join("&");
        let request = Request::post(uri)
            .header("cookie", self.cookie_header())
            .header("content-type", "application/x-www-form-urlencoded")
            .body(Body::from(body))
            .expect("request");
        let answer = send(&self.app, request).await;
        self.keep_cookies(&answer);
        answer
    }

    async fn post_multipart(&mut self, uri: &str, fields: &[(&str, &str)]) -> Answer {
        let boundary = "----juncture-test-boundary";
        let mut body = String::new();
        for (k, v) in fields {
            body.push_str(&format!(
                "--{boundary}\r\nContent-Disposition: form-data; name=\"{k}\"\r\n\r\n{v}\r\n"
            ));
        }
        body.push_str(&format!("--{boundary}--\r\n"));
        let request = Request::post(uri)
            .header("cookie", self.cookie_header())
            .header(
                "content-type",
                format!("multipart/form-data; boundary={boundary}"),
            )
            .body(Body::from(body))
            .expect("request");
        let answer = send(&self.app, request).await;
        self.keep_cookies(&answer);
        answer
    }
}

fn encode(text: &str) -> String {
    text.bytes()
        .map(|b| match b {
            b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'-' | b'_' | b'.' | b'~' => {
                (b as char).to_string()
            }
            other => format!("%{other:02X}"),
        })
        .collect()
}

/// The value of the first hidden input named `name` in a page.
fn hidden(html: &str, name: &str) -> String {
    let marker = format!("name=\"{name}\" value=\"");
    let start = html
        .find(&marker)
        .unwrap_or_else(|| panic!("no {name} in page"))
        + marker.len();
    html[start..].split('"').next().expect("value").to_owned()
}

fn location(answer: &Answer) -> String {
    answer.headers["location"]
        .to_str()
        .expect("ascii")
        .to_owned()
}

async fn signed_in(pool: SqlitePool, username: &str) -> Browser {
    juncture::demo::load(&pool).await.expect("demo");
    let mut browser = Browser {
        app: app(pool),
        cookies: Vec::new(),
    };
    let page = browser.get("/sign-in").await;
    let csrf = hidden(&page.text(), "csrf");
    let done = browser
        .post_form(
            "/sign-in",
            &[
                ("csrf", &csrf),
                ("username", username),
                ("password", "juncture-demo"),
                ("next", "/work"),
            ],
        )
        .await;
    assert_eq!(done.status, StatusCode::SEE_OTHER, "{}", done.text());
    browser
}

#[sqlx::test]
async fn pages_need_a_session_and_sign_in_sets_a_safe_cookie(pool: SqlitePool) {
    juncture::demo::load(&pool).await.expect("demo");
    let mut browser = Browser {
        app: app(pool),
        cookies: Vec::new(),
    };
    let away = browser.get("/work").await;
    assert_eq!(away.status, StatusCode::SEE_OTHER);
    assert_eq!(location(&away), "/sign-in?next=/work");

    let page = browser.get("/sign-in?next=/runs/new").await;
    assert_eq!(page.status, StatusCode::OK);
    let html = page.text();
    assert!(html.contains("<label for=\"username\">User name</label>"));
    let csrf = hidden(&html, "csrf");
    let wrong = browser
        .post_form(
            "/sign-in",
            &[
                ("csrf", &csrf),
                ("username", "demo-tech"),
                ("password", "not it at all"),
                ("next", "/runs/new"),
            ],
        )
        .await;
    assert_eq!(wrong.status, StatusCode::OK);
    assert!(
        wrong
            .text()
            .contains("The user name or the password is not right.")
    );
    assert!(
        wrong.text().contains("value=\"demo-tech\""),
        "the user name is kept"
    );
    // A form without the sign-in cookie's token is refused.
    let forged = browser
        .post_form(
            "/sign-in",
            &[
                ("csrf", "forged"),
                ("username", "demo-tech"),
                ("password", "juncture-demo"),
            ],
        )
        .await;
    assert!(forged.text().contains("The sign-in form had expired"));

    let csrf = hidden(&forged.text(), "csrf");
    let ok = browser
        .post_form(
            "/sign-in",
            &[
                ("csrf", &csrf),
                ("username", "demo-tech"),
                ("password", "juncture-demo"),
                ("next", "/runs/new"),
            ],
        )
        .await;
    assert_eq!(ok.status, StatusCode::SEE_OTHER);
    assert_eq!(location(&ok), "/runs/new");
    let session = ok
        .headers
        .get_all("set-cookie")
        .iter()
        .map(|v| v.to_str().expect("ascii").to_owned())
        .find(|c| c.starts_with("juncture_session="))
        .expect("session cookie");
    assert!(
        session.contains("HttpOnly") && session.contains("SameSite=Lax"),
        "{session}"
    );
    assert!(
        !session.contains("Secure"),
        "plain HTTP on loopback: no Secure flag"
    );
    let work = browser.get("/work").await;
    assert_eq!(work.status, StatusCode::OK);
    assert!(work.text().contains("Tamsin Hale"));
    // An offsite next= is not followed.
    let csrf = hidden(&work.text(), "csrf");
    let signed_in_cookies = browser.cookies.clone();
    let out = browser.post_form("/sign-out", &[("csrf", &csrf)]).await;
    assert_eq!(out.status, StatusCode::SEE_OTHER);
    assert_eq!(browser.get("/work").await.status, StatusCode::SEE_OTHER);
    // The old cookie, sent again after signing out, opens nothing (the
    // session was in the service's memory after the page above).
    browser.cookies = signed_in_cookies;
    assert_eq!(browser.get("/work").await.status, StatusCode::SEE_OTHER);
}

#[sqlx::test]
async fn forms_without_the_session_token_are_refused(pool: SqlitePool) {
    let mut browser = signed_in(pool, "demo-tech").await;
    let refused = browser
        .post_form(
            "/runs/new",
            &[
                ("csrf", "not-the-token"),
                ("instrument_serial", "CVW-PT-1187"),
            ],
        )
        .await;
    assert_eq!(refused.status, StatusCode::FORBIDDEN);
    assert!(refused.text().contains("did not come from this site"));
    let refused = browser
        .post_form("/runs/1/submit", &[("version", "1")])
        .await;
    assert_eq!(refused.status, StatusCode::FORBIDDEN);
}

#[sqlx::test]
async fn the_new_run_form_shows_blocked_equipment_and_keeps_entries_on_error(pool: SqlitePool) {
    let mut browser = signed_in(pool, "demo-tech").await;
    let page = browser.get("/runs/new?performed_on=2026-11-20").await;
    let html = page.text();
    assert!(
        html.contains("<option value=\"LTM-DMM-10\" disabled>"),
        "out of service item is disabled"
    );
    assert!(
        html.contains("LTM-DMM-10 is out of service (failed its intermediate check on 2026-11-03)")
    );
    assert!(html.contains("LTM-PRT-11 was due for calibration on 2026-10-01"));
    let csrf = hidden(&html, "csrf");
    // Missing procedure and a non-number: both named, entries kept.
    let again = browser
        .post_form(
            "/runs/new",
            &[
                ("csrf", &csrf),
                ("instrument_serial", "CVW-PT-1187"),
                ("reference", "LTM-SPRT-01"),
                ("performed_on", "2026-11-20"),
                ("procedure_ref", ""),
                ("ambient_t_c", "warm"),
                ("location", "<script>x</script>"),
                ("decision_rule", "none"),
            ],
        )
        .await;
    assert_eq!(again.status, StatusCode::OK);
    let html = again.text();
    assert!(html.contains("&#34;warm&#34; is not a number"), "{html}");
    assert!(
        html.contains("value=\"&#60;script&#62;x&#60;/script&#62;\""),
        "typed text is kept and escaped"
    );
    assert!(!html.contains("<script>x</script>"));
}

#[sqlx::test]
async fn a_technician_records_a_run_fixes_a_bad_line_and_submits(pool: SqlitePool) {
    let mut browser = signed_in(pool, "demo-tech").await;
    let csrf = hidden(&browser.get("/runs/new").await.text(), "csrf");
    let created = browser
        .post_form(
            "/runs/new",
            &[
                ("csrf", &csrf),
                ("instrument_serial", "CVW-PT-1187"),
                ("reference", "LTM-PRT-02"),
                ("reference_readout", "LTM-BRG-05"),
                ("uut_readout", "LTM-BRG-05"),
                ("medium", "LTM-BATH-07"),
                ("performed_on", "2026-11-30"),
                ("procedure_ref", "LTM-P-04 rev 3 <b>"),
                ("tolerance_class", "A"),
                ("decision_rule", "simple"),
                ("guard_band_factor", "1"),
            ],
        )
        .await;
    assert_eq!(created.status, StatusCode::SEE_OTHER, "{}", created.text());
    let run_url = location(&created);
    let page = browser.get(&run_url).await;
    let html = page.text();
    assert!(
        html.contains("LTM-P-04 rev 3 &#60;b&#62;"),
        "procedure is escaped"
    );
    let version = hidden(&html, "version");
    let added = browser
        .post_form(
            &format!("{run_url}/set-points"),
            &[
                ("csrf", &csrf),
                ("version", &version),
                ("nominal_t_c", "100"),
            ],
        )
        .await;
    assert_eq!(added.status, StatusCode::SEE_OTHER, "{}", added.text());
    let html = browser.get(&run_url).await.text();
    let version = hidden(&html, "version");
    let action_start = html.find("/readings\"").expect("readings form");
    let form_url = html[..action_start]
        .rsplit("action=\"")
        .next()
        .expect("action")
        .to_owned()
        + "/readings";

    // A pasted block with a bad third line: the page names line and column
    // and keeps the text.
    let bad_block = "reference\tuut\n138,5110\t138,5301\n138,5112\t138,53O5\n138,5109\t138,5299\n";
    let answer = browser
        .post_multipart(
            &form_url,
            &[("csrf", &csrf), ("version", &version), ("paste", bad_block)],
        )
        .await;
    assert_eq!(answer.status, StatusCode::OK);
    let html = answer.text();
    assert!(
        html.contains("line 3, column 2: &#34;138.53O5&#34; in column `uut` is not a number")
            || html.contains("line 3, column 2"),
        "{html}"
    );
    assert!(html.contains("138,53O5"), "the pasted text is still there");
    // Fixed and saved: results appear.
    let good_block = bad_block.replace("138,53O5", "138,5305");
    let saved = browser
        .post_multipart(
            &form_url,
            &[
                ("csrf", &csrf),
                ("version", &version),
                ("paste", &good_block),
            ],
        )
        .await;
    assert_eq!(saved.status, StatusCode::SEE_OTHER, "{}", saved.text());
    let html = browser.get(&run_url).await.text();
    assert!(
        html.contains("class=\"deviation\">+0.1"),
        "mean deviation shown"
    );
    assert!(html.contains("class=\"expanded\">U = 0.0"), "U shown");
    assert!(
        html.contains("<meter min=\"0\" max=\"1\""),
        "variance shares drawn"
    );
    assert!(
        html.contains("Only 3 readings"),
        "the few-readings warning is next to the set point"
    );
    // Typed grid with a bad row: the row is named.
    let version = hidden(&html, "version");
    let typed = browser
        .post_multipart(
            &form_url,
            &[
                ("csrf", &csrf),
                ("version", &version),
                ("ref_0", "138.5111"),
                ("uut_0", "x"),
            ],
        )
        .await;
    assert!(
        typed
            .text()
            .contains("row 1: the UUT reading &#34;x&#34; is not a number"),
        "{}",
        typed.text()
    );
    // Submit: read-only afterwards.
    let submitted = browser
        .post_form(
            &format!("{run_url}/submit"),
            &[("csrf", &csrf), ("version", &version)],
        )
        .await;
    assert_eq!(
        submitted.status,
        StatusCode::SEE_OTHER,
        "{}",
        submitted.text()
    );
    let html = browser.get(&run_url).await.text();
    assert!(html.contains("waiting for review"));
    assert!(!html.contains("Save readings"), "no more forms");
    assert!(html.contains("This run cannot be changed now."));
}

#[sqlx::test]
async fn a_logger_file_can_be_uploaded_to_a_set_point(pool: SqlitePool) {
    let mut browser = signed_in(pool, "demo-tech").await;
    // Demo run 3 (handheld thermometer in the dry block) is open.
    let html = browser.get("/runs/3").await.text();
    let csrf = hidden(&html, "csrf");
    let version = hidden(&html, "version");
    let action_start = html.find("/readings\"").expect("readings form");
    let form_url = html[..action_start]
        .rsplit("action=\"")
        .next()
        .expect("action")
        .to_owned()
        + "/readings";
    let before = html.matches("<td class=\"num\">").count();
    let bad = browser
        .post_multipart(
            &form_url,
            &[
                ("csrf", &csrf),
                ("version", &version),
                (
                    "file",
                    "time,reference,uut\n09:00,-20.01,-20.05\n09:01,-20.00\n",
                ),
            ],
        )
        .await;
    assert!(
        bad.text()
            .contains("line 3, column 0: 2 columns; the header has 3"),
        "{}",
        bad.text()
    );
    let good = browser
        .post_multipart(
            &form_url,
            &[
                ("csrf", &csrf),
                ("version", &version),
                (
                    "file",
                    "time,reference,uut\n09:00,-20.01,-20.05\n09:01,-20.00,-20.06\n",
                ),
            ],
        )
        .await;
    assert_eq!(good.status, StatusCode::SEE_OTHER, "{}", good.text());
    let after = browser.get("/runs/3").await.text();
    assert!(
        after.contains(">09:01<"),
        "the logger's time stamps are kept"
    );
    assert!(after.matches("<td class=\"num\">").count() > before);

    // A file larger than the general body limit (8 MiB) streams in through
    // the same form.
    let version = hidden(&after, "version");
    let mut big = String::from("time,reference,uut\n");
    for i in 0..300_000 {
        big += &format!(
            "2026-11-28T09:{:02}:{:02}Z,-20.0{:02},-20.0{:02}\n",
            (i / 60) % 60,
            i % 60,
            i % 97,
            i % 89
        );
    }
    assert!(big.len() > 9 * 1024 * 1024, "{}", big.len());
    let stored = browser
        .post_multipart(
            &form_url,
            &[("csrf", &csrf), ("version", &version), ("file", &big)],
        )
        .await;
    assert_eq!(stored.status, StatusCode::SEE_OTHER, "{}", stored.text());
    let page = browser.get("/runs/3").await.text();
    assert!(page.contains("Readings as taken (300008)"), "{page}");
    // A bad reading deep in a file is named by its line, and nothing of the
    // file is stored.
    let version = hidden(&page, "version");
    let bad_big = big.replacen("-20.042,-20.011\n", "-20.042,x\n", 1);
    assert_ne!(bad_big, big);
    let refused = browser
        .post_multipart(
            &form_url,
            &[("csrf", &csrf), ("version", &version), ("file", &bad_big)],
        )
        .await;
    assert_eq!(refused.status, StatusCode::OK);
    // The first reading with both 42 and 11 is the first i with i % 97 == 42
    // and i % 89 == 11; the header is line 1.
    let first = (0..300_000)
        .find(|i| i % 97 == 42 && i % 89 == 11)
        .expect("one");
    let message = format!(
        "line {}, column 3: &#34;x&#34; in column `uut` is not a number",
        first + 2
    );
    assert!(refused.text().contains(&message), "{}", refused.text());
    assert!(refused.text().contains("Readings as taken (300008)"));
}

#[sqlx::test]
async fn a_set_point_with_many_readings_lists_both_ends_and_counts_the_rest(pool: SqlitePool) {
    let mut browser = signed_in(pool.clone(), "demo-tech").await;
    let token = crate::records::token_for(
        &pool,
        "demo-tech",
        juncture::store::accounts::Role::Technician,
        juncture::store::accounts::Scope::Write,
    )
    .await;
    // Demo run 3, set point 10 (0 °C) holds 6 readings; a logger file adds
    // 250 (positions 7 to 256).
    let mut file = String::from("time,reference,uut\n");
    for i in 0..250 {
        file += &format!("L{i},-0.01{:02},-0.04{:02}\n", i % 100, (i * 7) % 100);
    }
    let added = send(
        &browser.app,
        Request::post("/api/v1/runs/3/set-points/10/readings/file?version=1")
            .header("authorization", format!("Bearer {token}"))
            .header("content-type", "text/csv")
            .body(Body::from(file))
            .expect("request"),
    )
    .await;
    assert_eq!(added.status, StatusCode::CREATED, "{}", added.text());
    let html = browser.get("/runs/3").await.text();
    assert!(html.contains("Readings as taken (256)"), "{html}");
    assert!(
        html.contains(
            "56 more readings, all kept in the records and used in the results, are not listed here"
        ),
        "{html}"
    );
    // Positions 1-100 and 157-256 are listed, 101-156 are not.
    for (position, stamp) in [(100, "L93"), (157, "L150"), (256, "L249")] {
        assert!(
            html.contains(&format!("<tr><td>{position}</td><td>{stamp}</td>")),
            "position {position}"
        );
    }
    for position in [101, 156] {
        assert!(
            !html.contains(&format!("<tr><td>{position}</td>")),
            "position {position} is not listed"
        );
    }
}

#[sqlx::test]
async fn a_reviewer_approves_the_demo_run_and_reads_its_certificate(pool: SqlitePool) {
    let mut browser = signed_in(pool, "demo-reviewer").await;
    let queue = browser.get("/review").await.text();
    assert!(queue.contains("href=\"/runs/1\""), "{queue}");
    let run = browser.get("/runs/1").await.text();
    assert!(run.contains("Approve and issue the certificate"));
    // The reviewer sees the equipment as it stood on the run date.
    assert!(run.contains("Equipment on the run date"), "{run}");
    assert!(run.contains("LTM-SPRT-01") && run.contains("LTM-BATH-07"));
    assert_eq!(run.matches("usable on 2026-11-18").count(), 4, "{run}");
    let csrf = hidden(&run, "csrf");
    let version = hidden(&run, "version");
    let approved = browser
        .post_form("/runs/1/approve", &[("csrf", &csrf), ("version", &version)])
        .await;
    assert_eq!(
        approved.status,
        StatusCode::SEE_OTHER,
        "{}",
        approved.text()
    );
    let url = location(&approved);
    // The demo lab numbers certificates LTM-{year}-{seq:4}.
    assert!(
        url.starts_with("/certificates/LTM-") && url.ends_with("-0001"),
        "{url}"
    );
    let html = browser.get(&url).await.text();
    // ISO/IEC 17025:2017 7.8.2.1 and 7.8.4 items (REQUIREMENTS.md 1.1, 1.2).
    for item in [
        "Calibration Certificate",
        "Larchmere Thermal Metrology",
        "Unit 7, Foundry Lane",
        "Corrow Valley Water Authority (invented)",
        "CVW-PT-1187",
        "LTM-P-04 rev 3",
        "2026-11-18",
        "LTM-BATH-07",
        "Immersion",
        "as found",
        "U, °C",
        "Deviation function",
        "IEC 60751:2008 class A",
        "ENSL-26-0310",
        "Example National Standards Laboratory (invented)",
        "relate only to the item calibrated",
        "Rowan Pike (demo reviewer)",
        "Tamsin Hale (demo technician)",
        "End of certificate",
    ] {
        assert!(html.contains(item), "certificate page lacks {item:?}");
    }
    let pdf = browser.get(&format!("{url}/pdf")).await;
    assert_eq!(pdf.status, StatusCode::OK);
    assert_eq!(pdf.headers["content-type"], "application/pdf");
    assert!(pdf.body.starts_with(b"%PDF-"));
    let again = browser.get(&format!("{url}/pdf")).await;
    assert_eq!(pdf.body, again.body, "rendered twice, the same bytes");
    // The technician's own run cannot be approved by its technician.
    let mut tech = Browser {
        app: browser.app.clone(),
        cookies: Vec::new(),
    };
    let page = tech.get("/sign-in").await;
    let csrf = hidden(&page.text(), "csrf");
    tech.post_form(
        "/sign-in",
        &[
            ("csrf", &csrf),
            ("username", "demo-tech"),
            ("password", "juncture-demo"),
        ],
    )
    .await;
    let run = tech.get("/runs/2").await.text();
    assert!(!run.contains("Approve and issue"));
}

#[sqlx::test]
async fn certificates_are_found_in_the_register_and_can_be_checked_by_anyone(pool: SqlitePool) {
    let mut browser = signed_in(pool, "demo-reviewer").await;
    let run = browser.get("/runs/1").await.text();
    let csrf = hidden(&run, "csrf");
    let version = hidden(&run, "version");
    let approved = browser
        .post_form("/runs/1/approve", &[("csrf", &csrf), ("version", &version)])
        .await;
    let url = location(&approved);
    let number = url.trim_start_matches("/certificates/").to_owned();
    let page = browser.get(&url).await.text();
    let marker = "fingerprint (SHA-256 of the snapshot) <code>";
    let start = page.find(marker).expect("fingerprint shown") + marker.len();
    let fingerprint = page[start..].split('<').next().expect("hash").to_owned();
    assert_eq!(fingerprint.len(), 64);

    let register = browser.get("/certificates?q=CVW-PT").await.text();
    assert!(
        register.contains(&format!("href=\"/certificates/{number}\"")),
        "{register}"
    );
    assert!(register.contains("Corrow Valley Water Authority (invented)"));
    let none = browser.get("/certificates?q=no-such-thing").await.text();
    assert!(none.contains("No certificate matches."));
    let dated = browser
        .get("/certificates?from=2000-01-01&to=2000-12-31")
        .await
        .text();
    assert!(dated.contains("No certificate matches."));
    // Filters: instrument type, standard used, and a refused bad value.
    let link = format!("href=\"/certificates/{number}\"");
    assert!(
        browser
            .get("/certificates?kind=prt")
            .await
            .text()
            .contains(&link)
    );
    assert!(
        !browser
            .get("/certificates?kind=thermocouple")
            .await
            .text()
            .contains(&link)
    );
    assert!(
        browser
            .get("/certificates?equipment=LTM-SPRT-01")
            .await
            .text()
            .contains(&link)
    );
    assert!(
        !browser
            .get("/certificates?equipment=LTM-FURN-08")
            .await
            .text()
            .contains(&link)
    );
    let bad = browser.get("/certificates?kind=kettle").await.text();
    assert!(bad.contains("is not an instrument kind"), "{bad}");

    // The impact list of the reference SPRT, on screen and as CSV.
    let impact = browser
        .get("/impact?equipment=LTM-SPRT-01&from=2026-11-01&to=2026-11-30")
        .await
        .text();
    assert!(impact.contains(&link), "{impact}");
    assert!(impact.contains("Download as CSV"));
    let csv = browser
        .get("/impact.csv?equipment=LTM-SPRT-01&from=2026-11-01&to=2026-11-30")
        .await;
    assert_eq!(csv.content_type(), "text/csv; charset=utf-8");
    assert!(csv.text().starts_with("certificate,revision,state,"));
    assert!(
        csv.text().contains(&format!("{number},0,current,")),
        "{}",
        csv.text()
    );

    // The instrument's history: its certificate and the drift chart.
    let history = browser.get("/instruments/CVW-PT-1187").await.text();
    assert!(
        history.contains(&format!("/certificates/{number}?revision=0")),
        "{history}"
    );
    assert!(
        history.contains("<svg")
            && history.contains("Deviation of CVW-PT-1187 by calibration date")
    );
    assert!(history.contains("Needs two current certificates"));

    // A stranger (no session) checks the certificate.
    let mut stranger = Browser {
        app: browser.app.clone(),
        cookies: Vec::new(),
    };
    let good = stranger
        .get(&format!(
            "/verify?number={number}&fingerprint={fingerprint}"
        ))
        .await;
    assert_eq!(good.status, StatusCode::OK);
    assert!(
        good.text().contains("Authentic and current"),
        "{}",
        good.text()
    );
    let mut forged = fingerprint.clone();
    forged.replace_range(
        0..1,
        if fingerprint.starts_with('0') {
            "1"
        } else {
            "0"
        },
    );
    let bad = stranger
        .get(&format!("/verify?number={number}&fingerprint={forged}"))
        .await
        .text();
    assert!(
        bad.contains("Not found") && bad.contains("not authentic"),
        "{bad}"
    );
    // The register needs a session.
    assert_eq!(
        stranger.get("/certificates").await.status,
        StatusCode::SEE_OTHER
    );
}

#[sqlx::test]
async fn the_reviewer_sees_equipment_taken_out_of_service_after_the_run(pool: SqlitePool) {
    let mut browser = signed_in(pool.clone(), "demo-reviewer").await;
    let mut conn = pool.acquire().await.expect("conn");
    let bath = juncture::store::equipment::by_asset_id(&mut conn, "LTM-BATH-07")
        .await
        .expect("query")
        .expect("bath");
    juncture::store::equipment::set_status(&mut conn, bath.id, "out_of_service", "heater fault")
        .await
        .expect("status");
    let run = browser.get("/runs/1").await.text();
    assert!(
        run.contains("LTM-BATH-07 is out of service (heater fault)"),
        "{run}"
    );
    assert_eq!(run.matches("usable on 2026-11-18").count(), 3);
}

#[sqlx::test]
async fn every_page_needs_a_session_and_forms_follow_the_roles(pool: SqlitePool) {
    let protected = [
        "/work",
        "/runs/new",
        "/runs/1",
        "/review",
        "/certificates",
        "/impact",
        "/instruments/CVW-PT-1187",
    ];
    let public = ["/", "/convert", "/sign-in", "/verify"];
    let tech = signed_in(pool.clone(), "demo-tech").await;
    let mut anonymous = Browser {
        app: tech.app.clone(),
        cookies: Vec::new(),
    };
    for path in protected {
        let answer = anonymous.get(path).await;
        assert_eq!(answer.status, StatusCode::SEE_OTHER, "{path}");
        assert!(location(&answer).starts_with("/sign-in"), "{path}");
    }
    for path in public {
        assert_eq!(anonymous.get(path).await.status, StatusCode::OK, "{path}");
    }
    let mut users = vec![tech];
    for name in ["demo-reviewer", "demo-admin"] {
        let mut b = Browser {
            app: users[0].app.clone(),
            cookies: Vec::new(),
        };
        let page = b.get("/sign-in").await;
        let csrf = hidden(&page.text(), "csrf");
        let done = b
            .post_form(
                "/sign-in",
                &[
                    ("csrf", &csrf),
                    ("username", name),
                    ("password", "juncture-demo"),
                    ("next", "/work"),
                ],
            )
            .await;
        assert_eq!(done.status, StatusCode::SEE_OTHER);
        users.push(b);
    }
    for user in &mut users {
        for path in protected {
            assert_eq!(user.get(path).await.status, StatusCode::OK, "{path}");
        }
    }
    // A form posted without a session goes to the sign-in page and changes nothing.
    let refused = anonymous
        .post_form("/runs/1/approve", &[("csrf", "x"), ("version", "1")])
        .await;
    assert_eq!(refused.status, StatusCode::SEE_OTHER);
    assert!(location(&refused).starts_with("/sign-in"));
    // A technician may not approve; a reviewer may not enter readings.
    let (tech, reviewer) = {
        let (a, b) = users.split_at_mut(1);
        (&mut a[0], &mut b[0])
    };
    let run = tech.get("/runs/1").await.text();
    let csrf = hidden(&run, "csrf");
    let no = tech
        .post_form("/runs/1/approve", &[("csrf", &csrf), ("version", "1")])
        .await;
    assert_eq!(no.status, StatusCode::FORBIDDEN, "{}", no.text());
    assert!(
        no.text()
            .contains("approving runs is for reviewer or administrator")
    );
    let run2 = reviewer.get("/runs/2").await.text();
    let csrf = hidden(&run2, "csrf");
    let no = reviewer
        .post_form(
            "/runs/2/set-points",
            &[("csrf", &csrf), ("version", "1"), ("nominal_t_c", "700")],
        )
        .await;
    assert_eq!(no.status, StatusCode::FORBIDDEN, "{}", no.text());
    let certificates: i64 = sqlx::query_scalar("SELECT COUNT(*) FROM certificate")
        .fetch_one(&pool)
        .await
        .expect("count");
    assert_eq!(certificates, 0);
    let set_points: i64 = sqlx::query_scalar("SELECT COUNT(*) FROM set_point WHERE run_id = 2")
        .fetch_one(&pool)
        .await
        .expect("count");
    assert_eq!(
        set_points, 4,
        "the demo's type N run keeps its four set points"
    );
}

#[sqlx::test]
async fn markup_in_any_text_field_is_shown_as_text(pool: SqlitePool) {
    let mut browser = signed_in(pool.clone(), "demo-tech").await;
    let token = crate::records::token_for(
        &pool,
        "demo-admin",
        juncture::store::accounts::Role::Administrator,
        juncture::store::accounts::Scope::Write,
    )
    .await;
    let customer = crate::records::call(
        &browser.app,
        "POST",
        "/api/v1/customers",
        Some(&token),
        Some(serde_json::json!({"name": "<script>alert('c')</script> (invented)"})),
    )
    .await
    .json();
    let made = crate::records::call(
        &browser.app,
        "POST",
        "/api/v1/instruments",
        Some(&token),
        Some(
            serde_json::json!({"serial": "<b>SN-1</b>", "kind": "indicating",
            "description": "<img src=x onerror=alert(1)>", "customer_id": customer["id"]}),
        ),
    )
    .await;
    assert_eq!(made.status, StatusCode::CREATED, "{}", made.text());
    let page = browser.get("/runs/new").await.text();
    assert!(
        page.contains("&lt;b&gt;SN-1&lt;/b&gt;") || page.contains("&#60;b&#62;SN-1"),
        "{page}"
    );
    assert!(!page.contains("<b>SN-1</b>"));
    assert!(!page.contains("<img src=x"));
    let history = browser
        .get("/instruments/%3Cb%3ESN-1%3C%2Fb%3E")
        .await
        .text();
    assert!(!history.contains("<b>SN-1</b>"), "{history}");
    assert!(history.contains("SN-1"));
}

#[sqlx::test]
async fn a_technician_records_switch_ramps_on_the_run_page(pool: SqlitePool) {
    let mut browser = signed_in(pool, "demo-tech").await;
    // Demo run 4: the bimetal thermostat, three cycles recorded.
    let page = browser.get("/runs/4").await.text();
    assert!(page.contains("Switch test"), "{page}");
    assert!(page.contains("class=\"switch-point\""), "{page}");
    assert_eq!(page.matches("41 readings").count(), 6, "{page}");
    let csrf = hidden(&page, "csrf");
    let version = hidden(&page, "version");
    // A pasted ramp with a mistyped state is refused, naming the line.
    let bad = browser
        .post_form(
            "/runs/4/ramps",
            &[
                ("csrf", &csrf),
                ("version", &version),
                ("direction", "rising"),
                ("lines", "85,2 closed\n85,4 opne\n"),
            ],
        )
        .await
        .text();
    assert!(
        bad.contains("line 2: &#34;opne&#34; is not a contact state"),
        "{bad}"
    );
    // A good one is added (decimal commas accepted) and listed.
    let done = browser
        .post_form(
            "/runs/4/ramps",
            &[
                ("csrf", &csrf),
                ("version", &version),
                ("direction", "rising"),
                (
                    "lines",
                    "84,8 closed\n85,0 closed\n85,2 closed\n85,4 open\n85,6 open\n86,2 open\n",
                ),
            ],
        )
        .await;
    assert_eq!(done.status, StatusCode::SEE_OTHER, "{}", done.text());
    let page = browser.get("/runs/4").await.text();
    assert!(
        page.contains("6 readings, 84.8 °C (closed) to 86.2 °C (open)"),
        "{page}"
    );
    // The new ramp's change at 85.3 °C joins the switch-point mean.
    assert!(page.contains("<h3>Results</h3>"));
}
