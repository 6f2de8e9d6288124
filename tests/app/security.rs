//! Security and operations of the real binary: no secret ever reaches the
//! log, sessions can be ended and users deactivated from the command line,
//! repeated failed sign-ins are throttled, and an online backup is a
//! consistent copy with a valid audit chain.

use std::path::Path;

use crate::process::{http, juncture, start, stop, with_db};

fn form_encode(fields: &[(&str, &str)]) -> String {
    fields
        .iter()
        .map(|(k, v)| {
            let enc: String = v
                .bytes()
                .map(|b| match b {
                    b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'-' | b'_' | b'.' => {
                        (b as char).to_string()
                    }
                    _ => format!("%{b:02X}"),
                })
                .collect();
            format!("{k}={enc}")
        })
        .collect::<Vec<_>>()
        .join("&")
}

fn hidden(html: &str, name: &str) -> String {
    let marker = format!("name=\"{name}\" value=\"");
    let start = html.find(&marker).expect("hidden field") + marker.len();
    html[start..].split('"').next().expect("value").to_owned()
}

/// Signs in; returns the session cookie value, or the page on failure.
fn sign_in(address: &str, username: &str, password: &str) -> Result<String, String> {
    let page = http(address, "GET", "/sign-in", &[], "");
    let csrf = hidden(&page.body, "csrf");
    let form_cookie = page.cookie("juncture_sign_in").expect("sign-in cookie");
    let body = form_encode(&[
        ("csrf", &csrf),
        ("username", username),
        ("password", password),
        ("next", "/work"),
    ]);
    let reply = http(
        address,
        "POST",
        "/sign-in",
        &[
            ("Content-Type", "application/x-www-form-urlencoded"),
            ("Cookie", &format!("juncture_sign_in={form_cookie}")),
        ],
        &body,
    );
    match (reply.status, reply.cookie("juncture_session")) {
        (303, Some(session)) if !session.is_empty() => Ok(session),
        _ => Err(reply.body),
    }
}

/// Every row of the record tables as text, in key order.
fn dump(path: &Path) -> String {
    use sqlx::{Column, Row, TypeInfo, ValueRef};
    with_db(path, |pool| async move {
        let mut out = String::new();
        for table in [
            "customer",
            "instrument",
            "equipment",
            "run",
            "set_point",
            "reading",
            "audit_event",
            "app_user",
            "certificate",
        ] {
            // The table names are the fixed list above.
            let rows = sqlx::query(sqlx::AssertSqlSafe(format!(
                "SELECT * FROM {table} ORDER BY 1"
            )))
            .fetch_all(&pool)
            .await
            .expect("select");
            out.push_str(&format!("{table}: {} rows\n", rows.len()));
            for row in rows {
                for (i, column) in row.columns().iter().enumerate() {
                    let raw = row.try_get_raw(i).expect("value");
                    let text = if raw.is_null() {
                        "NULL".to_owned()
                    } else {
                        match raw.type_info().name() {
                            "INTEGER" | "BOOLEAN" => row.get::<i64, _>(i).to_string(),
                            "REAL" => row.get::<f64, _>(i).to_string(),
                            "BLOB" => format!("{:?}", row.get::<Vec<u8>, _>(i)),
                            _ => row.get::<String, _>(i),
                        }
                    };
                    out.push_str(&format!("{}={text};", column.name()));
                }
                out.push('\n');
            }
        }
        out
    })
}

#[test]
fn secrets_never_reach_the_log_and_sessions_end_from_the_command_line() {
    let dir = tempfile::tempdir().expect("temp dir");
    let db = dir.path().join("lab.db");
    let log = dir.path().join("server.log");
    let (mut child, address) = start(&db, &log);

    // A wrong password, then the right one (the demo's published password).
    let wrong = "wrong-horse-battery-staple-41";
    assert!(sign_in(&address, "demo-tech", wrong).is_err());
    let session = sign_in(&address, "demo-tech", "juncture-demo").expect("signed in");
    let work = http(
        &address,
        "GET",
        "/work",
        &[("Cookie", &format!("juncture_session={session}"))],
        "",
    );
    assert_eq!(work.status, 200);

    // An API token, used once.
    let created = juncture(
        &db,
        &[
            "token",
            "create",
            "--username",
            "demo-reviewer",
            "--name",
            "log-check",
        ],
    );
    assert!(created.status.success(), "{created:?}");
    let token = String::from_utf8_lossy(&created.stdout)
        .lines()
        .last()
        .expect("secret line")
        .trim()
        .to_owned();
    assert!(token.len() > 20, "{token}");
    let api = http(
        &address,
        "GET",
        "/api/v1/review",
        &[("Authorization", &format!("Bearer {token}"))],
        "",
    );
    assert_eq!(api.status, 200, "{}", api.body);

    // Ending the user's sessions from the command line signs them out.
    let ended = juncture(&db, &["user", "end-sessions", "--username", "demo-tech"]);
    assert!(ended.status.success(), "{ended:?}");
    assert!(String::from_utf8_lossy(&ended.stdout).contains("ended 1 session(s) of demo-tech"));
    let after = http(
        &address,
        "GET",
        "/work",
        &[("Cookie", &format!("juncture_session={session}"))],
        "",
    );
    assert_eq!(after.status, 303, "back to the sign-in page");

    // A deactivated user can neither sign in nor use a token.
    let off = juncture(&db, &["user", "deactivate", "--username", "demo-reviewer"]);
    assert!(off.status.success(), "{off:?}");
    assert!(sign_in(&address, "demo-reviewer", "juncture-demo").is_err());
    let refused = http(
        &address,
        "GET",
        "/api/v1/review",
        &[("Authorization", &format!("Bearer {token}"))],
        "",
    );
    assert_eq!(refused.status, 401);

    stop(&mut child);
    let text = std::fs::read_to_string(&log).expect("log");
    // The log did record the traffic (so the checks below can fail)...
    assert!(text.contains("sign-in failed"), "{text}");
    assert!(text.contains("/api/v1/review"), "{text}");
    // ...but never a password, a session secret or a token secret.
    for secret in [wrong, "juncture-demo", session.as_str(), token.as_str()] {
        assert!(!text.contains(secret), "the log shows a secret: {secret}");
    }
    // The audit trail recorded both account actions and still verifies.
    let verify = juncture(&db, &["audit", "verify"]);
    assert!(verify.status.success(), "{verify:?}");
}

#[test]
fn repeated_failed_sign_ins_are_throttled() {
    let dir = tempfile::tempdir().expect("temp dir");
    let db = dir.path().join("lab.db");
    let log = dir.path().join("server.log");
    let (mut child, address) = start(&db, &log);
    for i in 0..5 {
        let page =
            sign_in(&address, "demo-tech", &format!("not-the-password-{i}")).expect_err("wrong");
        assert!(
            page.contains("The user name or the password is not right."),
            "{page}"
        );
    }
    // The sixth attempt is refused even with the right password, and the
    // case of the user name does not get around it.
    for name in ["demo-tech", "Demo-Tech"] {
        let page = sign_in(&address, name, "juncture-demo").expect_err("throttled");
        assert!(
            page.contains("Too many failed sign-ins for this user name (5 in the last 15 minutes)"),
            "{page}"
        );
    }
    // Another user is not affected.
    assert!(sign_in(&address, "demo-reviewer", "juncture-demo").is_ok());
    stop(&mut child);

    // Once the failures are older than the window, the right password works
    // again (the window is moved back in the file rather than waited for).
    let moved = with_db(&db, |pool| async move {
        sqlx::query("UPDATE sign_in_failure SET failed_at = '2000-01-01T00:00:00Z'")
            .execute(&pool)
            .await
            .expect("update")
            .rows_affected()
    });
    assert_eq!(moved, 5);
    let (mut child, address) = start(&db, &log);
    assert!(sign_in(&address, "demo-tech", "juncture-demo").is_ok());
    stop(&mut child);
}

#[test]
fn an_online_backup_is_a_consistent_copy_with_a_valid_audit_chain() {
    let dir = tempfile::tempdir().expect("temp dir");
    let db = dir.path().join("lab.db");
    let log = dir.path().join("server.log");
    let (mut child, address) = start(&db, &log);
    assert_eq!(http(&address, "GET", "/healthz", &[], "").status, 200);

    // While the service runs.
    let copy = dir.path().join("backup.db");
    let out = juncture(&db, &["backup", copy.to_str().expect("utf-8")]);
    assert!(out.status.success(), "{out:?}");
    let said = String::from_utf8_lossy(&out.stdout);
    assert!(said.contains("integrity ok; audit chain intact"), "{said}");
    // Never over an existing file.
    let again = juncture(&db, &["backup", copy.to_str().expect("utf-8")]);
    assert!(!again.status.success());
    assert!(String::from_utf8_lossy(&again.stderr).contains("already exists"));
    stop(&mut child);

    // Restoring is opening the copy: the same records, row for row.
    let (original, restored) = (dump(&db), dump(&copy));
    assert!(
        original.contains("CVW-PT-1187"),
        "the demo is in the original"
    );
    assert_eq!(original, restored);
    let verify = juncture(&copy, &["audit", "verify"]);
    assert!(verify.status.success(), "{verify:?}");
}
