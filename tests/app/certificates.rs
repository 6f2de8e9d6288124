//! Review and certificates: four-eyes approval, frozen snapshots with their
//! SHA-256, refusal of edits, return with a reason, and the deviation API.

use axum::http::StatusCode;
use juncture::report::snapshot::CertificateSnapshot;
use juncture::store::accounts::{Role, Scope};
use serde_json::{Value, json};
use sha2::{Digest, Sha256};
use sqlx::SqlitePool;

use crate::records::{Lab, call, lab, token_for};

/// Gives the test lab its identity (a certificate prints it).
pub async fn set_up_lab(lab: &Lab) {
    let mut conn = lab.pool.acquire().await.expect("conn");
    if juncture::store::lab::get(&mut conn)
        .await
        .expect("query")
        .is_none()
    {
        let mut settings = juncture::demo::demo_lab();
        settings.certificate_number_pattern = "C{year}-{seq:5}".to_owned();
        juncture::store::lab::put(&mut conn, &settings)
            .await
            .expect("lab");
    }
}

pub fn ok(answer: &crate::helpers::Answer, status: StatusCode) -> Value {
    assert_eq!(answer.status, status, "{}", answer.text());
    answer.json()
}

/// A Pt100 run against the reference PRT at 50 °C and 100 °C, submitted by
/// `token`'s user; returns (run id, version).
pub async fn submitted_run(lab: &Lab, token: &str, serial: &str) -> (i64, i64) {
    register_pt100(lab, token, serial).await;
    submitted_run_on(lab, token, serial, "2026-11-20", 0.0).await
}

/// Registers a Pt100 of an invented customer.
pub async fn register_pt100(lab: &Lab, token: &str, serial: &str) {
    set_up_lab(lab).await;
    let customer = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/customers",
            Some(token),
            Some(json!({"name": format!("Owner of {serial} (invented)")})),
        )
        .await,
        StatusCode::CREATED,
    );
    ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/instruments",
            Some(token),
            Some(json!({
        "serial": serial, "kind": "prt", "r0_ohm": 100.0, "customer_id": customer["id"]})),
        )
        .await,
        StatusCode::CREATED,
    );
}

/// A run of `serial` on `date` whose unit reads `shift_ohm` more than in
/// [`submitted_run`], submitted by `token`'s user; returns (run id, version).
pub async fn submitted_run_on(
    lab: &Lab,
    token: &str,
    serial: &str,
    date: &str,
    shift_ohm: f64,
) -> (i64, i64) {
    let run = ok(&call(&lab.app, "POST", "/api/v1/runs", Some(token), Some(json!({
        "instrument_serial": serial, "reference": "REF-PRT-01", "medium": "BATH-01", "performed_on": date,
        "procedure_ref": "TP-04 rev 3", "tolerance_class": "A", "decision_rule": "simple"}))).await, StatusCode::CREATED);
    let id = run["id"].as_i64().expect("id");
    let mut version = 1;
    for (t, r_ref, r_uut) in [(50.0, 119.4230, 119.4075), (100.0, 138.5110, 138.5301)] {
        let sp = ok(
            &call(
                &lab.app,
                "POST",
                &format!("/api/v1/runs/{id}/set-points"),
                Some(token),
                Some(json!({"nominal_t_c": t, "version": version})),
            )
            .await,
            StatusCode::CREATED,
        );
        let readings: Vec<Value> = (0..4).map(|i| json!({"reference_signal": r_ref + 1e-4 * f64::from(i), "uut_signal": r_uut + shift_ohm + 1e-4 * f64::from(i % 2)})).collect();
        let added = ok(
            &call(
                &lab.app,
                "POST",
                &format!("/api/v1/runs/{id}/set-points/{}/readings", sp["id"]),
                Some(token),
                Some(json!({"version": version + 1, "readings": readings})),
            )
            .await,
            StatusCode::CREATED,
        );
        version = added["version"].as_i64().expect("version");
    }
    let submitted = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/submit"),
            Some(token),
            Some(json!({"version": version})),
        )
        .await,
        StatusCode::OK,
    );
    (id, submitted["version"].as_i64().expect("version"))
}

#[sqlx::test]
async fn approval_issues_a_frozen_certificate_that_cannot_be_edited(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    let (id, version) = submitted_run(&lab, &lab.tech, "PT-C1").await;
    let queue = ok(
        &call(&lab.app, "GET", "/api/v1/review", Some(&lab.reviewer), None).await,
        StatusCode::OK,
    );
    assert_eq!(queue[0]["id"], id);
    // Technicians do not approve.
    let refused = call(
        &lab.app,
        "POST",
        &format!("/api/v1/runs/{id}/approve"),
        Some(&lab.tech),
        Some(json!({"version": version})),
    )
    .await;
    assert_eq!(refused.status, StatusCode::FORBIDDEN);
    let issued = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/approve"),
            Some(&lab.reviewer),
            Some(json!({"version": version})),
        )
        .await,
        StatusCode::CREATED,
    );
    let number = issued["number"].as_str().expect("number").to_owned();
    assert!(
        number.starts_with('C') && number.ends_with("-00001"),
        "default pattern C{{year}}-{{seq:5}}: {number}"
    );
    assert_eq!(issued["revision"], 0);
    // Approving twice is refused.
    let again = call(
        &lab.app,
        "POST",
        &format!("/api/v1/runs/{id}/approve"),
        Some(&lab.reviewer),
        Some(json!({"version": version + 1})),
    )
    .await;
    assert_eq!(again.status, StatusCode::CONFLICT);

    // The snapshot is served byte for byte with its SHA-256 (FIPS 180-4),
    // recomputed here from the body.
    let answer = call(
        &lab.app,
        "GET",
        &format!("/api/v1/certificates/{number}"),
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(answer.status, StatusCode::OK);
    let digest = hex::encode(Sha256::digest(&answer.body));
    assert_eq!(answer.headers["x-certificate-sha256"], digest.as_str());
    assert_eq!(digest, issued["sha256"]);
    let snapshot: CertificateSnapshot = serde_json::from_slice(&answer.body).expect("snapshot");
    assert_eq!(snapshot.number, number);
    assert_eq!(snapshot.item.serial, "PT-C1");
    assert_eq!(snapshot.results.len(), 2);
    assert_eq!(snapshot.traceability[0].certificate_number, "NMI-2026-118");
    assert!(snapshot.statements[0].contains("relate only to the item calibrated"));
    assert_eq!(snapshot.approved_by, "rhea");
    assert_eq!(snapshot.performed_by, "tomas");
    // Re-serialising gives the same bytes (canonical), and any printed
    // change gives another fingerprint.
    assert_eq!(
        snapshot.canonical_json().expect("json").as_bytes(),
        &answer.body[..]
    );
    let mut changed = snapshot.clone();
    changed.customer.name.push('.');
    assert_ne!(changed.fingerprint().expect("hash"), digest);

    // Issued certificates are never edited or deleted (database triggers).
    let mut conn = pool.acquire().await.expect("conn");
    let update = sqlx::query("UPDATE certificate SET issued_on = '2000-01-01'")
        .execute(&mut *conn)
        .await
        .expect_err("refused");
    assert!(update.to_string().contains("never edited"), "{update}");
    let delete = sqlx::query("DELETE FROM certificate")
        .execute(&mut *conn)
        .await
        .expect_err("refused");
    assert!(delete.to_string().contains("never deleted"), "{delete}");
    // The run is approved and read-only.
    let run = ok(
        &call(
            &lab.app,
            "GET",
            &format!("/api/v1/runs/{id}"),
            Some(&lab.reader),
            None,
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(run["status"], "approved");
}

#[sqlx::test]
async fn nobody_approves_a_run_they_performed(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    let (id, version) = submitted_run(&lab, &lab.admin, "PT-C2").await;
    let refused = call(
        &lab.app,
        "POST",
        &format!("/api/v1/runs/{id}/approve"),
        Some(&lab.admin),
        Some(json!({"version": version})),
    )
    .await;
    assert_eq!(refused.status, StatusCode::FORBIDDEN);
    assert!(
        refused.text().contains("you performed run"),
        "{}",
        refused.text()
    );
    let other_admin = token_for(&pool, "olga", Role::Administrator, Scope::Write).await;
    ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/approve"),
            Some(&other_admin),
            Some(json!({"version": version})),
        )
        .await,
        StatusCode::CREATED,
    );
}

#[sqlx::test]
async fn a_returned_run_comes_back_to_its_technician_with_the_reason(pool: SqlitePool) {
    let lab = lab(pool).await;
    let (id, version) = submitted_run(&lab, &lab.tech, "PT-C3").await;
    let empty = call(
        &lab.app,
        "POST",
        &format!("/api/v1/runs/{id}/return"),
        Some(&lab.reviewer),
        Some(json!({"version": version, "reason": " "})),
    )
    .await;
    assert_eq!(empty.status, StatusCode::UNPROCESSABLE_ENTITY);
    let returned = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/return"),
            Some(&lab.reviewer),
            Some(json!({"version": version, "reason": "add a set point at 0 °C"})),
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(returned["status"], "returned");
    assert_eq!(returned["returned_reason"], "add a set point at 0 °C");
    // The technician may change it again and resubmit.
    let v = returned["version"].as_i64().expect("version");
    ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/set-points"),
            Some(&lab.tech),
            Some(json!({"nominal_t_c": 0.0, "version": v})),
        )
        .await,
        StatusCode::CREATED,
    );
}

#[sqlx::test]
async fn the_deviation_api_serves_the_current_certificate(pool: SqlitePool) {
    let lab = lab(pool).await;
    let (id, version) = submitted_run(&lab, &lab.tech, "PT-C4").await;
    let missing = call(
        &lab.app,
        "GET",
        "/api/v1/instruments/PT-C4/deviation",
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(missing.status, StatusCode::NOT_FOUND);
    let issued = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/approve"),
            Some(&lab.reviewer),
            Some(json!({"version": version})),
        )
        .await,
        StatusCode::CREATED,
    );
    let answer = call(
        &lab.app,
        "GET",
        "/api/v1/instruments/PT-C4/deviation",
        Some(&lab.reader),
        None,
    )
    .await;
    let d = ok(&answer, StatusCode::OK);
    // DESIGN.md section 5 contract fields.
    for field in [
        "serial",
        "certificate_number",
        "revision",
        "issued_on",
        "form",
        "variable",
        "coefficients",
        "covariance",
        "valid_from_t_c",
        "valid_to_t_c",
        "expanded_uncertainty_c",
        "coverage_factor",
    ] {
        assert!(!d[field].is_null(), "{field} missing: {d}");
    }
    assert_eq!(d["form"], "polynomial");
    assert_eq!(d["variable"], "t_c");
    assert_eq!(d["certificate_number"], issued["number"]);
    // Polling with the ETag costs nothing.
    let etag = answer.headers["etag"].to_str().expect("etag").to_owned();
    let request = axum::http::Request::get("/api/v1/instruments/PT-C4/deviation")
        .header("authorization", format!("Bearer {}", lab.reader))
        .header("if-none-match", etag)
        .body(axum::body::Body::empty())
        .expect("request");
    assert_eq!(
        crate::helpers::send(&lab.app, request).await.status,
        StatusCode::NOT_MODIFIED
    );

    // The evaluate endpoint reproduces the certificate's own table at the
    // set points: two set points, a straight line through both.
    let cert = ok(
        &call(
            &lab.app,
            "GET",
            &format!(
                "/api/v1/certificates/{}",
                issued["number"].as_str().expect("n")
            ),
            Some(&lab.reader),
            None,
        )
        .await,
        StatusCode::OK,
    );
    for row in cert["results"].as_array().expect("rows") {
        let t = row["t_ref_c"].as_f64().expect("t");
        let e = ok(
            &call(
                &lab.app,
                "GET",
                &format!("/api/v1/instruments/PT-C4/deviation/evaluate?t_c={t}"),
                Some(&lab.reader),
                None,
            )
            .await,
            StatusCode::OK,
        );
        assert!(
            (e["deviation_c"].as_f64().expect("d") - row["deviation_c"].as_f64().expect("d")).abs()
                < 1e-9,
            "{e} vs {row}"
        );
        assert_eq!(
            e["correction_c"].as_f64().expect("c"),
            -e["deviation_c"].as_f64().expect("d")
        );
    }
    let outside = call(
        &lab.app,
        "GET",
        "/api/v1/instruments/PT-C4/deviation/evaluate?t_c=300",
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(outside.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(outside.text().contains("never extrapolated"));
    let not_tc = call(
        &lab.app,
        "GET",
        "/api/v1/instruments/PT-C4/deviation/evaluate?emf_mv=4.0",
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(not_tc.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        not_tc.text().contains("not a thermocouple"),
        "{}",
        not_tc.text()
    );
}

#[sqlx::test]
async fn an_amendment_issues_a_new_revision_and_keeps_the_old_one(pool: SqlitePool) {
    let lab = lab(pool).await;
    let (id, version) = submitted_run(&lab, &lab.tech, "PT-C5").await;
    let first = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/approve"),
            Some(&lab.reviewer),
            Some(json!({"version": version})),
        )
        .await,
        StatusCode::CREATED,
    );
    let number = first["number"].as_str().expect("number").to_owned();
    // Read the latest revision and the deviation function once before the
    // amendment, so that the service holds them in its look-up caches: the
    // answers after the amendment below must not come from there.
    for path in [
        format!("/api/v1/certificates/{number}"),
        "/api/v1/instruments/PT-C5/deviation".to_owned(),
    ] {
        let before = ok(
            &call(&lab.app, "GET", &path, Some(&lab.reader), None).await,
            StatusCode::OK,
        );
        assert_eq!(before["revision"], 0, "{path}");
    }
    let no_reason = call(
        &lab.app,
        "POST",
        &format!("/api/v1/certificates/{number}/amend"),
        Some(&lab.reviewer),
        Some(json!({"reason": ""})),
    )
    .await;
    assert_eq!(no_reason.status, StatusCode::UNPROCESSABLE_ENTITY);
    let refused = call(
        &lab.app,
        "POST",
        &format!("/api/v1/certificates/{number}/amend"),
        Some(&lab.tech),
        Some(json!({"reason": "typo"})),
    )
    .await;
    assert_eq!(refused.status, StatusCode::FORBIDDEN);
    // The customer's address was missing on revision 0.
    ok(
        &call(
            &lab.app,
            "PUT",
            "/api/v1/customers/1",
            Some(&lab.tech),
            Some(json!({"name": "Owner of PT-C5 (invented)", "address": "1 Mill Road"})),
        )
        .await,
        StatusCode::OK,
    );
    let second = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/certificates/{number}/amend"),
            Some(&lab.reviewer),
            Some(json!({"reason": "customer address added"})),
        )
        .await,
        StatusCode::CREATED,
    );
    assert_eq!(second["revision"], 1);
    assert_ne!(second["sha256"], first["sha256"]);
    // The latest revision names the one it replaces and why.
    let latest = ok(
        &call(
            &lab.app,
            "GET",
            &format!("/api/v1/certificates/{number}"),
            Some(&lab.reader),
            None,
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(latest["revision"], 1);
    assert_eq!(
        latest["replaces"],
        json!({"number": number, "revision": 0, "reason": "customer address added"})
    );
    assert_eq!(latest["customer"]["address"], "1 Mill Road");
    // Revision 0 stays retrievable, unchanged.
    let old = call(
        &lab.app,
        "GET",
        &format!("/api/v1/certificates/{number}?revision=0"),
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(
        old.headers["x-certificate-sha256"],
        first["sha256"].as_str().expect("sha")
    );
    // The deviation API follows the current revision.
    let d = ok(
        &call(
            &lab.app,
            "GET",
            "/api/v1/instruments/PT-C5/deviation",
            Some(&lab.reader),
            None,
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(d["revision"], 1);
}

#[sqlx::test]
async fn a_thermocouple_certificate_answers_emf_queries(pool: SqlitePool) {
    let lab = lab(pool).await;
    set_up_lab(&lab).await;
    let customer = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/customers",
            Some(&lab.tech),
            Some(json!({"name": "Kiln owner (invented)"})),
        )
        .await,
        StatusCode::CREATED,
    );
    ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/instruments",
            Some(&lab.tech),
            Some(json!({"serial": "K-EMF", "kind": "thermocouple", "tc_type": "K", "customer_id": customer["id"]})),
        )
        .await,
        StatusCode::CREATED,
    );
    let run = ok(&call(&lab.app, "POST", "/api/v1/runs", Some(&lab.tech), Some(json!({
        "instrument_serial": "K-EMF", "reference": "REF-PRT-01", "medium": "BATH-01", "performed_on": "2026-11-20",
        "procedure_ref": "TP-11 rev 2", "rj_method": "ice_point", "decision_rule": "none"}))).await, StatusCode::CREATED);
    let id = run["id"].as_i64().expect("id");
    let mut version = 1;
    // Resistances of the reference PRT near 50 °C and 150 °C; the type K emf
    // near the table values (NIST SRD 60: 2.023 mV at 50 °C, 6.138 mV at
    // 150 °C) plus a few µV of deviation.
    for (t, r_ref, e_uut) in [(50.0, 119.4103, 2.0262), (150.0, 157.3390, 6.1455)] {
        let sp = ok(
            &call(
                &lab.app,
                "POST",
                &format!("/api/v1/runs/{id}/set-points"),
                Some(&lab.tech),
                Some(json!({"nominal_t_c": t, "version": version})),
            )
            .await,
            StatusCode::CREATED,
        );
        let readings: Vec<Value> = (0..4)
            .map(|i| json!({"reference_signal": r_ref + 1e-4 * f64::from(i), "uut_signal": e_uut + 2e-4 * f64::from(i % 2)}))
            .collect();
        let added = ok(
            &call(
                &lab.app,
                "POST",
                &format!("/api/v1/runs/{id}/set-points/{}/readings", sp["id"]),
                Some(&lab.tech),
                Some(json!({"version": version + 1, "readings": readings})),
            )
            .await,
            StatusCode::CREATED,
        );
        version = added["version"].as_i64().expect("version");
    }
    let submitted = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/submit"),
            Some(&lab.tech),
            Some(json!({"version": version})),
        )
        .await,
        StatusCode::OK,
    );
    let issued = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/approve"),
            Some(&lab.reviewer),
            Some(json!({"version": submitted["version"]})),
        )
        .await,
        StatusCode::CREATED,
    );
    let cert = ok(
        &call(
            &lab.app,
            "GET",
            &format!(
                "/api/v1/certificates/{}",
                issued["number"].as_str().expect("n")
            ),
            Some(&lab.reader),
            None,
        )
        .await,
        StatusCode::OK,
    );
    let k = juncture::metrology::thermo::ThermocoupleType::K;
    for row in cert["results"].as_array().expect("rows") {
        let t_ref = row["t_ref_c"].as_f64().expect("t");
        let d_emf = row["deviation_emf_mv"].as_f64().expect("emf deviation");
        // The emf this thermocouple shows at the row's reference temperature,
        // by the certificate's own table: E_ref(t_ref) + dE.
        let emf = k.emf(t_ref).expect("emf") + d_emf;
        let e = ok(
            &call(
                &lab.app,
                "GET",
                &format!("/api/v1/instruments/K-EMF/deviation/evaluate?emf_mv={emf}"),
                Some(&lab.reader),
                None,
            )
            .await,
            StatusCode::OK,
        );
        // Two set points, a straight line through both: the certificate's
        // own reference temperature comes back.
        assert!(
            (e["t_c"].as_f64().expect("t") - t_ref).abs() < 1e-6,
            "{e} vs {row}"
        );
        assert!(
            (e["emf_deviation_mv"].as_f64().expect("dE") - d_emf).abs() < 1e-9,
            "{e}"
        );
        // The reference function alone would read t_ref + dt; the gap is the
        // printed deviation (dt and dE describe the same readings).
        let gap = e["indicated_t_c"].as_f64().expect("ind") - e["t_c"].as_f64().expect("t");
        assert!(
            (gap - row["deviation_c"].as_f64().expect("dt")).abs() < 1e-4,
            "{e} vs {row}"
        );
    }
    // Outside the calibrated range (type K, 20.644 mV is 500 °C by NIST SRD 60).
    let outside = call(
        &lab.app,
        "GET",
        "/api/v1/instruments/K-EMF/deviation/evaluate?emf_mv=20.644",
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(outside.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        outside.text().contains("never extrapolated"),
        "{}",
        outside.text()
    );
    let both = call(
        &lab.app,
        "GET",
        "/api/v1/instruments/K-EMF/deviation/evaluate?emf_mv=4&t_c=100",
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(both.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        both.text().contains("exactly one of t_c"),
        "{}",
        both.text()
    );
}
