//! Faults: the server killed with SIGKILL in the middle of large reading
//! uploads and certificate amendments, again and again, then restarted; and
//! many simultaneous writers on one SQLite file. Every operation is wholly
//! present or wholly absent, the file passes `PRAGMA integrity_check`, the
//! audit chain verifies, no user ever sees "database is locked", and stale
//! edits are refused with a clear message instead of being lost.

use std::path::Path;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::time::{Duration, Instant, SystemTime, UNIX_EPOCH};

use crate::process::{juncture, start, stop, try_http, with_db};

/// Readings per upload in the crash test (about 0.4 MB of JSON).
const CHUNK: usize = 5000;

fn token(db: &Path, user: &str) -> String {
    let out = juncture(
        db,
        &[
            "token",
            "create",
            "--username",
            user,
            "--name",
            &format!("faults-{user}"),
            "--scope",
            "write",
        ],
    );
    assert!(out.status.success(), "{out:?}");
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .last()
        .expect("secret")
        .trim()
        .to_owned()
}

fn json(reply: &crate::process::Reply) -> serde_json::Value {
    serde_json::from_str(&reply.body).unwrap_or(serde_json::Value::Null)
}

fn run_version(address: &str, auth: &str, run: i64) -> Option<i64> {
    let r = try_http(
        address,
        "GET",
        &format!("/api/v1/runs/{run}"),
        &[("Authorization", auth)],
        "",
    )
    .ok()?;
    let v = json(&r);
    v["run"]["version"]
        .as_i64()
        .or_else(|| v["version"].as_i64())
}

fn readings_body(version: i64, n: usize) -> String {
    let one = r#"{"reference_signal": 3.4, "uut_signal": 13.0}"#;
    let mut body = format!(r#"{{"version": {version}, "readings": ["#);
    for i in 0..n {
        if i > 0 {
            body.push(',');
        }
        body.push_str(one);
    }
    body.push_str("]}");
    body
}

/// What the database holds after a crash, checked for all-or-nothing.
fn check_after_crash(db: &Path, set_point: i64, initial: i64) -> (i64, i64) {
    let (integrity, readings, uploads, certificates, facts, replacements, amendments) = with_db(
        db,
        |pool| async move {
            let integrity: Vec<String> = sqlx::query_scalar("PRAGMA integrity_check")
                .fetch_all(&pool)
                .await
                .expect("integrity");
            let one = |sql: &'static str| {
                let pool = pool.clone();
                async move {
                    sqlx::query_scalar::<_, i64>(sql)
                        .fetch_one(&pool)
                        .await
                        .expect(sql)
                }
            };
            let readings: i64 =
                sqlx::query_scalar("SELECT COUNT(*) FROM reading WHERE set_point_id = ?")
                    .bind(set_point)
                    .fetch_one(&pool)
                    .await
                    .expect("readings");
            (
                integrity,
                readings,
                one("SELECT COUNT(*) FROM audit_event WHERE action = 'add_readings' AND entity_id = '2'").await,
                one("SELECT COUNT(*) FROM certificate").await,
                one("SELECT COUNT(*) FROM certificate_facts").await,
                one("SELECT COUNT(*) FROM certificate_replacement").await,
                one("SELECT COUNT(*) FROM audit_event WHERE action = 'amend'").await,
            )
        },
    );
    assert_eq!(integrity, ["ok"]);
    // Uploads: whole chunks only, each with its audit event.
    let added = readings - initial;
    assert_eq!(
        added % CHUNK as i64,
        0,
        "a partial upload survived: {added} readings"
    );
    assert_eq!(
        added / CHUNK as i64,
        uploads,
        "uploads and their audit events agree"
    );
    // Amendments: every revision but the last is replaced, each with its
    // facts row and audit event.
    assert_eq!(facts, certificates);
    assert_eq!(replacements, certificates - 1);
    assert_eq!(amendments, certificates - 1);
    let verify = juncture(db, &["audit", "verify"]);
    assert!(verify.status.success(), "{verify:?}");
    (uploads, certificates)
}

#[test]
fn killing_the_server_mid_write_leaves_each_operation_whole_or_absent() {
    let dir = tempfile::tempdir().expect("temp dir");
    let db = dir.path().join("lab.db");
    let log = dir.path().join("server.log");
    let (mut child, mut address) = start(&db, &log);
    let tech = format!("Bearer {}", token(&db, "demo-tech"));
    let reviewer = format!("Bearer {}", token(&db, "demo-reviewer"));
    // One certificate to amend again and again.
    let v1 = run_version(&address, &reviewer, 1).expect("run 1");
    let issued = try_http(
        &address,
        "POST",
        "/api/v1/runs/1/approve",
        &[
            ("Authorization", &reviewer),
            ("Content-Type", "application/json"),
        ],
        &format!(r#"{{"version": {v1}}}"#),
    )
    .expect("approve");
    assert_eq!(issued.status, 201, "{}", issued.body);
    let number = json(&issued)["number"].as_str().expect("number").to_owned();
    let run2 = try_http(
        &address,
        "GET",
        "/api/v1/runs/2",
        &[("Authorization", &tech)],
        "",
    )
    .expect("run 2");
    let sp = &json(&run2)["set_points"][0];
    let set_point = sp["id"]
        .as_i64()
        .or_else(|| sp["set_point"]["id"].as_i64())
        .expect("set point");
    let initial = sp["readings"].as_array().map_or(0, |r| r.len() as i64);
    let path = format!("/api/v1/runs/2/set-points/{set_point}/readings");

    let seed = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .expect("clock")
        .subsec_nanos();
    let (mut uploads_seen, mut certificates_seen) = (0, 1);
    for round in 0..10u32 {
        if round > 0 {
            (child, address) = start(&db, &log);
        }
        let writer = {
            let (address, tech, path) = (address.clone(), tech.clone(), path.clone());
            std::thread::spawn(move || {
                let mut done = 0;
                while let Some(version) = run_version(&address, &tech, 2) {
                    match try_http(
                        &address,
                        "POST",
                        &path,
                        &[
                            ("Authorization", &tech),
                            ("Content-Type", "application/json"),
                        ],
                        &readings_body(version, CHUNK),
                    ) {
                        Ok(r) if r.status == 201 => done += 1,
                        Ok(r) => {
                            assert!(r.status == 409, "upload answered {}: {}", r.status, r.body)
                        }
                        Err(_) => break,
                    }
                }
                done
            })
        };
        let amender = {
            let (address, reviewer, number) = (address.clone(), reviewer.clone(), number.clone());
            std::thread::spawn(move || {
                let mut done = 0;
                loop {
                    match try_http(
                        &address,
                        "POST",
                        &format!("/api/v1/certificates/{number}/amend"),
                        &[
                            ("Authorization", &reviewer),
                            ("Content-Type", "application/json"),
                        ],
                        r#"{"reason": "crash test amendment"}"#,
                    ) {
                        Ok(r) if r.status == 201 => done += 1,
                        Ok(r) => panic!("amendment answered {}: {}", r.status, r.body),
                        Err(_) => break,
                    }
                }
                done
            })
        };
        // Kill at a different moment each round, 300 ms to 1.5 s in.
        let wait = 300 + (seed.wrapping_mul(2_654_435_761).wrapping_add(round * 7919) % 1200);
        std::thread::sleep(Duration::from_millis(u64::from(wait)));
        child.kill().expect("SIGKILL");
        child.wait().expect("reaped");
        let ok_uploads = writer.join().expect("writer");
        let ok_amendments = amender.join().expect("amender");
        let (uploads, certificates) = check_after_crash(&db, set_point, initial);
        // Everything acknowledged before the kill is there (an operation
        // committed but not yet acknowledged may be there too).
        assert!(
            uploads >= uploads_seen + ok_uploads,
            "round {round}: acknowledged uploads were lost"
        );
        assert!(
            certificates >= certificates_seen + ok_amendments,
            "round {round}: acknowledged amendments were lost"
        );
        eprintln!("round {round}: {uploads} uploads, {certificates} revisions in the file");
        (uploads_seen, certificates_seen) = (uploads, certificates);
    }
    assert!(
        uploads_seen > 0 && certificates_seen > 1,
        "the rounds did some work: {uploads_seen} uploads, {certificates_seen} revisions"
    );
    let (mut last, _) = start(&db, &log);
    stop(&mut last);
}

#[test]
fn many_writers_at_once_never_see_a_locked_database_or_lose_an_update() {
    let dir = tempfile::tempdir().expect("temp dir");
    let db = dir.path().join("lab.db");
    let log = dir.path().join("server.log");
    let (mut child, address) = start(&db, &log);
    let tech = format!("Bearer {}", token(&db, "demo-tech"));
    let reviewer = format!("Bearer {}", token(&db, "demo-reviewer"));
    let run2 = try_http(
        &address,
        "GET",
        "/api/v1/runs/2",
        &[("Authorization", &tech)],
        "",
    )
    .expect("run 2");
    let sp = &json(&run2)["set_points"][0];
    let set_point = sp["id"]
        .as_i64()
        .or_else(|| sp["set_point"]["id"].as_i64())
        .expect("set point");
    let initial = sp["readings"].as_array().map_or(0, |r| r.len() as i64);
    let path = format!("/api/v1/runs/2/set-points/{set_point}/readings");

    let stop_at = Instant::now() + Duration::from_secs(4);
    let accepted = Arc::new(AtomicUsize::new(0));
    let stale = Arc::new(AtomicUsize::new(0));
    let failed = Arc::new(AtomicBool::new(false));
    let mut threads = Vec::new();
    // Six technicians saving readings on the same run at once.
    for _ in 0..6 {
        let (address, tech, path) = (address.clone(), tech.clone(), path.clone());
        let (accepted, stale) = (accepted.clone(), stale.clone());
        threads.push(std::thread::spawn(move || {
            while Instant::now() < stop_at {
                let version = run_version(&address, &tech, 2).expect("version");
                let r = try_http(
                    &address,
                    "POST",
                    &path,
                    &[
                        ("Authorization", &tech),
                        ("Content-Type", "application/json"),
                    ],
                    &readings_body(version, 10),
                )
                .expect("answer");
                assert!(!r.body.contains("locked"), "{}", r.body);
                match r.status {
                    201 => {
                        accepted.fetch_add(1, Ordering::Relaxed);
                    }
                    409 => {
                        assert!(
                            r.body.contains("version"),
                            "a stale edit says why: {}",
                            r.body
                        );
                        stale.fetch_add(1, Ordering::Relaxed);
                    }
                    other => panic!("upload answered {other}: {}", r.body),
                }
            }
        }));
    }
    // Two reviewers amending the demo certificate at the same time, and
    // readers polling the register.
    let v1 = run_version(&address, &reviewer, 1).expect("run 1");
    let issued = try_http(
        &address,
        "POST",
        "/api/v1/runs/1/approve",
        &[
            ("Authorization", &reviewer),
            ("Content-Type", "application/json"),
        ],
        &format!(r#"{{"version": {v1}}}"#),
    )
    .expect("approve");
    assert_eq!(issued.status, 201, "{}", issued.body);
    let number = json(&issued)["number"].as_str().expect("number").to_owned();
    for _ in 0..2 {
        let (address, reviewer, number, failed) = (
            address.clone(),
            reviewer.clone(),
            number.clone(),
            failed.clone(),
        );
        threads.push(std::thread::spawn(move || {
            while Instant::now() < stop_at {
                let r = try_http(
                    &address,
                    "POST",
                    &format!("/api/v1/certificates/{number}/amend"),
                    &[
                        ("Authorization", &reviewer),
                        ("Content-Type", "application/json"),
                    ],
                    r#"{"reason": "concurrency test"}"#,
                )
                .expect("answer");
                if r.status != 201 {
                    failed.store(true, Ordering::Relaxed);
                    panic!("amendment answered {}: {}", r.status, r.body);
                }
                let l = try_http(
                    &address,
                    "GET",
                    "/api/v1/certificates?limit=5",
                    &[("Authorization", &reviewer)],
                    "",
                )
                .expect("answer");
                assert_eq!(l.status, 200, "{}", l.body);
            }
        }));
    }
    for t in threads {
        t.join().expect("writer thread");
    }
    stop(&mut child);
    assert!(!failed.load(Ordering::Relaxed));
    let accepted = accepted.load(Ordering::Relaxed) as i64;
    assert!(accepted > 0, "some uploads went through");
    // No lost update: every acknowledged upload is there, and nothing else.
    let readings: i64 = with_db(&db, |pool| async move {
        sqlx::query_scalar("SELECT COUNT(*) FROM reading WHERE set_point_id = ?")
            .bind(set_point)
            .fetch_one(&pool)
            .await
            .expect("count")
    });
    assert_eq!(
        readings,
        initial + 10 * accepted,
        "{} stale edits refused",
        stale.load(Ordering::Relaxed)
    );
    let verify = juncture(&db, &["audit", "verify"]);
    assert!(verify.status.success(), "{verify:?}");
}
