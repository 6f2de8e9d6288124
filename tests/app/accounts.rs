//! Users, tokens, the audit chain and the validation report, through the
//! store and the real binary.

use std::io::Write;
use std::process::{Command, Stdio};

use juncture::store::{self, audit};
use sqlx::SqlitePool;

const BIN: &str = env!("CARGO_BIN_EXE_juncture");

fn juncture(db: &std::path::Path, args: &[&str], stdin: Option<&str>) -> std::process::Output {
    let mut cmd = Command::new(BIN);
    cmd.args(args)
        .arg("--database")
        .arg(db)
        .env("JUNCTURE_LOG", "warn")
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    let mut child = cmd.spawn().expect("starts");
    if let Some(text) = stdin {
        child
            .stdin
            .take()
            .expect("stdin")
            .write_all(text.as_bytes())
            .expect("writes");
    }
    child.wait_with_output().expect("finishes")
}

async fn append(pool: &SqlitePool, action: &str, id: &str) {
    let mut tx = store::begin_write(pool).await.expect("tx");
    let after = serde_json::json!({"name": id});
    audit::append(
        &mut tx,
        &audit::NewEvent {
            actor: "tester",
            action,
            entity: "customer",
            entity_id: id,
            before: None,
            after: Some(&after),
        },
    )
    .await
    .expect("append");
    tx.commit().await.expect("commit");
}

#[sqlx::test]
async fn the_audit_chain_verifies_and_refuses_edits(pool: SqlitePool) {
    for i in 0..3 {
        append(&pool, "create", &format!("c{i}")).await;
    }
    let mut conn = pool.acquire().await.expect("conn");
    assert_eq!(
        audit::verify(&mut conn).await.expect("verify"),
        audit::Verification::Intact { events: 3 }
    );
    let first = audit::for_entity(&mut conn, "customer", "c0")
        .await
        .expect("events");
    assert_eq!(first.len(), 1);
    assert_eq!(first[0].prev_hash, audit::GENESIS_HASH);
    // SQLite triggers refuse UPDATE and DELETE.
    let update = sqlx::query("UPDATE audit_event SET actor = 'someone else' WHERE seq = 2")
        .execute(&mut *conn)
        .await
        .expect_err("update refused");
    assert!(update.to_string().contains("append-only"), "{update}");
    let delete = sqlx::query("DELETE FROM audit_event WHERE seq = 3")
        .execute(&mut *conn)
        .await
        .expect_err("delete refused");
    assert!(delete.to_string().contains("append-only"), "{delete}");

    // Behind the service's back: drop the trigger and alter event 2.
    sqlx::query("DROP TRIGGER audit_event_refuse_update")
        .execute(&mut *conn)
        .await
        .expect("drop");
    sqlx::query("UPDATE audit_event SET after_json = '{\"name\":\"forged\"}' WHERE seq = 2")
        .execute(&mut *conn)
        .await
        .expect("forge");
    match audit::verify(&mut conn).await.expect("verify") {
        audit::Verification::Broken { seq, reason } => {
            assert_eq!(seq, 2);
            assert!(reason.contains("altered"), "{reason}");
        }
        other => panic!("tampering not detected: {other:?}"),
    }
}

#[test]
fn users_tokens_and_audit_verify_from_the_command_line() {
    let dir = tempfile::tempdir().expect("dir");
    let db = dir.path().join("admin.db");
    let out = juncture(
        &db,
        &[
            "user",
            "add",
            "--username",
            "mira",
            "--display-name",
            "Mira Okafor",
            "--role",
            "technician",
        ],
        Some("a long enough password\n"),
    );
    assert!(out.status.success(), "{out:?}");
    let short = juncture(
        &db,
        &[
            "user",
            "add",
            "--username",
            "ivo",
            "--display-name",
            "Ivo Lind",
            "--role",
            "reviewer",
        ],
        Some("short\n"),
    );
    assert!(!short.status.success());
    assert!(String::from_utf8_lossy(&short.stderr).contains("at least 12 characters"));
    let bad_role = juncture(
        &db,
        &[
            "user",
            "add",
            "--username",
            "ivo",
            "--display-name",
            "Ivo Lind",
            "--role",
            "boss",
        ],
        Some("a long enough password\n"),
    );
    assert!(
        String::from_utf8_lossy(&bad_role.stderr)
            .contains("expected technician, reviewer or administrator")
    );

    let token = juncture(
        &db,
        &[
            "token",
            "create",
            "--username",
            "mira",
            "--name",
            "lims",
            "--scope",
            "write",
        ],
        None,
    );
    assert!(token.status.success(), "{token:?}");
    let secret = String::from_utf8_lossy(&token.stdout).trim().to_owned();
    assert!(secret.starts_with("jct_") && secret.len() == 68, "{secret}");

    let verify = juncture(&db, &["audit", "verify"], None);
    assert!(verify.status.success(), "{verify:?}");
    assert!(
        String::from_utf8_lossy(&verify.stdout).contains("audit chain intact: 2 events checked"),
        "{verify:?}"
    );
}

#[test]
fn the_validation_report_passes_and_states_its_checks() {
    let out = Command::new(BIN)
        .args(["validate", "--json"])
        .output()
        .expect("runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    assert_eq!(report["verdict"], "pass");
    assert_eq!(report["checks_failed"], 0);
    assert_eq!(report["checks_total"], 555);
    let first = &report["checks"][1];
    // NIST Monograph 175 (SRD 60 all.tab): type B at 0 °C is 0.000 mV.
    assert_eq!(first["area"], "thermocouples");
    assert!(
        first["source"]
            .as_str()
            .expect("source")
            .contains("NIST Monograph 175")
    );
}
