//! The lab's records through the JSON API: equipment and certificates,
//! customers and instruments, runs with set points and readings, the rules
//! that block unusable equipment, roles and scopes, and the audit trail.

use axum::Router;
use axum::body::Body;
use axum::http::{Request, StatusCode};
use juncture::store::accounts::{self, Role, Scope};
use juncture::store::{self, audit};
use juncture::web::auth;
use serde_json::{Value, json};
use sqlx::SqlitePool;

use crate::helpers::{Answer, app, send};

/// Creates a user with a token and returns the bearer secret.
pub async fn token_for(pool: &SqlitePool, username: &str, role: Role, scope: Scope) -> String {
    let mut conn = pool.acquire().await.expect("conn");
    let hash = auth::hash_password("test password long enough").expect("hash");
    let id = match accounts::user_by_username(&mut conn, username)
        .await
        .expect("query")
    {
        Some(user) => user.id,
        None => accounts::create_user(&mut conn, username, username, role, &hash)
            .await
            .expect("user"),
    };
    let secret = auth::new_token_secret();
    accounts::create_token(
        &mut conn,
        id,
        &format!("{username}-{}", scope.as_str()),
        scope,
        &auth::token_hash(&secret),
    )
    .await
    .expect("token");
    secret
}

pub async fn call(
    app: &Router,
    method: &str,
    uri: &str,
    token: Option<&str>,
    body: Option<Value>,
) -> Answer {
    let mut request = Request::builder().method(method).uri(uri);
    if let Some(t) = token {
        request = request.header("authorization", format!("Bearer {t}"));
    }
    let request = match body {
        Some(b) => request
            .header("content-type", "application/json")
            .body(Body::from(b.to_string())),
        None => request.body(Body::empty()),
    }
    .expect("request");
    send(app, request).await
}

async fn text(app: &Router, uri: &str, token: &str, content_type: &str, body: &str) -> Answer {
    send(
        app,
        Request::post(uri)
            .header("authorization", format!("Bearer {token}"))
            .header("content-type", content_type)
            .body(Body::from(body.to_owned()))
            .expect("request"),
    )
    .await
}

pub fn ok(answer: &Answer, status: StatusCode) -> Value {
    assert_eq!(answer.status, status, "{}", answer.text());
    answer.json()
}

/// The people and equipment of a small lab.
pub struct Lab {
    pub app: Router,
    pub pool: SqlitePool,
    pub admin: String,
    pub tech: String,
    pub reviewer: String,
    pub reader: String,
}

pub async fn lab(pool: SqlitePool) -> Lab {
    let admin = token_for(&pool, "ada", Role::Administrator, Scope::Write).await;
    let tech = token_for(&pool, "tomas", Role::Technician, Scope::Write).await;
    let reviewer = token_for(&pool, "rhea", Role::Reviewer, Scope::Write).await;
    let reader = token_for(&pool, "lims", Role::Technician, Scope::Read).await;
    let app = app(pool.clone());
    // A reference PRT with its certificate (invented), a DMM and a bath.
    ok(
        &call(
            &app,
            "POST",
            "/api/v1/equipment",
            Some(&admin),
            Some(json!({
        "asset_id": "REF-PRT-01", "kind": "reference_prt", "description": "reference PRT, 450 mm",
        "manufacturer": "Example Sensors", "serial": "EX-4471"})),
        )
        .await,
        StatusCode::CREATED,
    );
    ok(&call(&app, "POST", "/api/v1/equipment/REF-PRT-01/certificates", Some(&admin), Some(json!({
        "number": "NMI-2026-118", "issuer": "Example national laboratory",
        "calibrated_on": "2026-01-15", "due_on": "2027-01-15",
        "coefficients": {"form": "cvd", "r0_ohm": 100.012, "a": 3.9081e-3, "b": -5.78e-7, "c": -4.2e-12},
        "uncertainties": [{"t_lo_c": -50.0, "t_hi_c": 250.0, "expanded_c": 0.02, "k": 2.0}]}))).await, StatusCode::CREATED);
    ok(&call(&app, "POST", "/api/v1/equipment", Some(&admin), Some(json!({
        "asset_id": "DMM-01", "kind": "readout", "firmware": "2.14",
        "spec_unit": "ohm", "spec_offset": 0.001, "spec_relative": 10e-6, "spec_resolution": 0.0001}))).await, StatusCode::CREATED);
    ok(
        &call(
            &app,
            "POST",
            "/api/v1/equipment/DMM-01/certificates",
            Some(&admin),
            Some(json!({
        "number": "EL-5521", "issuer": "Example electrical laboratory",
        "calibrated_on": "2026-02-01", "due_on": "2027-02-01"})),
        )
        .await,
        StatusCode::CREATED,
    );
    ok(
        &call(
            &app,
            "POST",
            "/api/v1/equipment",
            Some(&admin),
            Some(json!({
        "asset_id": "BATH-01", "kind": "bath", "description": "stirred oil bath"})),
        )
        .await,
        StatusCode::CREATED,
    );
    ok(&call(&app, "POST", "/api/v1/equipment/BATH-01/characterisations", Some(&admin), Some(json!({
        "characterised_on": "2026-03-01",
        "ranges": [{"t_lo_c": -40.0, "t_hi_c": 200.0, "uniformity_half_width_c": 0.01, "stability_half_width_c": 0.005}]}))).await, StatusCode::CREATED);
    Lab {
        app,
        pool,
        admin,
        tech,
        reviewer,
        reader,
    }
}

pub fn run_body(date: &str) -> Value {
    json!({"instrument_serial": "PT-2291", "reference": "REF-PRT-01", "reference_readout": "DMM-01",
           "uut_readout": "DMM-01", "medium": "BATH-01", "performed_on": date,
           "procedure_ref": "TP-04 rev 3", "ambient_t_c": 21.5, "tolerance_class": "A",
           "decision_rule": "guarded_non_binary", "guard_band_factor": 1.0})
}

pub async fn customer_and_instrument(lab: &Lab) {
    let customer = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/customers",
            Some(&lab.tech),
            Some(json!({
        "name": "Northfield Dairy Co-op (invented)", "contact_email": "qa@northfield.invalid"})),
        )
        .await,
        StatusCode::CREATED,
    );
    ok(&call(&lab.app, "POST", "/api/v1/instruments", Some(&lab.tech), Some(json!({
        "serial": "PT-2291", "kind": "prt", "r0_ohm": 100.0, "description": "Pt100 class A, 6 mm sheath",
        "customer_id": customer["id"]}))).await, StatusCode::CREATED);
}

#[sqlx::test]
async fn a_run_is_recorded_with_raw_readings_and_then_locked(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    customer_and_instrument(&lab).await;
    let run = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/runs",
            Some(&lab.tech),
            Some(run_body("2026-11-20")),
        )
        .await,
        StatusCode::CREATED,
    );
    let id = run["id"].as_i64().expect("id");
    assert_eq!(run["status"], "open");
    assert_eq!(run["version"], 1);
    let sp = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/set-points"),
            Some(&lab.tech),
            Some(json!({"nominal_t_c": 100.0, "version": 1})),
        )
        .await,
        StatusCode::CREATED,
    );
    let sp_id = sp["id"].as_i64().expect("sp");
    // A second set point at the same temperature is refused.
    let dup = call(
        &lab.app,
        "POST",
        &format!("/api/v1/runs/{id}/set-points"),
        Some(&lab.tech),
        Some(json!({"nominal_t_c": 100.0, "version": 2})),
    )
    .await;
    assert_eq!(dup.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(dup.text().contains("already has a set point at 100"));
    // Readings as JSON, then pasted from a spreadsheet (tab, decimal comma).
    let added = ok(&call(&lab.app, "POST", &format!("/api/v1/runs/{id}/set-points/{sp_id}/readings"), Some(&lab.tech),
        Some(json!({"version": 2, "readings": [
            {"taken_at": "2026-11-20T10:00:00Z", "reference_signal": 138.5110, "uut_signal": 138.5301},
            {"taken_at": "2026-11-20T10:00:30Z", "reference_signal": 138.5112, "uut_signal": 138.5305}]}))).await, StatusCode::CREATED);
    assert_eq!(added["total"], 2);
    assert_eq!(added["version"], 3);
    let pasted = ok(
        &text(
            &lab.app,
            &format!("/api/v1/runs/{id}/set-points/{sp_id}/readings?version=3"),
            &lab.tech,
            "text/tab-separated-values",
            "time\treference\tuut\n10:01:00\t138,5109\t138,5299\n10:01:30\t138,5111\t138,5303\n",
        )
        .await,
        StatusCode::CREATED,
    );
    assert_eq!(pasted["total"], 4);
    // A block with a bad line is refused whole, naming line and column.
    let bad = text(
        &lab.app,
        &format!("/api/v1/runs/{id}/set-points/{sp_id}/readings?version=4"),
        &lab.tech,
        "text/csv",
        "reference,uut\n138.51,138.53\n138.51,oops\n",
    )
    .await;
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(bad.text().contains("line 3, column 2"), "{}", bad.text());
    // A stale version is refused with a clear message.
    let stale = call(
        &lab.app,
        "POST",
        &format!("/api/v1/runs/{id}/set-points"),
        Some(&lab.tech),
        Some(json!({"nominal_t_c": 50.0, "version": 1})),
    )
    .await;
    assert_eq!(stale.status, StatusCode::CONFLICT);
    assert!(stale.text().contains("has changed since you loaded it"));

    let detail = ok(
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
    let readings = detail["set_points"][0]["readings"]
        .as_array()
        .expect("readings");
    assert_eq!(readings.len(), 4, "nothing of the bad block was stored");
    assert_eq!(readings[2]["reference_signal"], 138.5109);
    assert_eq!(readings[0]["taken_at"], "2026-11-20T10:00:00Z");

    // Another technician may not submit; the owner may; then it is read-only.
    let other = token_for(&pool, "otto", Role::Technician, Scope::Write).await;
    let refused = call(
        &lab.app,
        "POST",
        &format!("/api/v1/runs/{id}/submit"),
        Some(&other),
        Some(json!({"version": 4})),
    )
    .await;
    assert_eq!(refused.status, StatusCode::CONFLICT);
    assert!(refused.text().contains("belongs to another technician"));
    let submitted = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/submit"),
            Some(&lab.tech),
            Some(json!({"version": 4})),
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(submitted["status"], "submitted");
    let locked = call(
        &lab.app,
        "POST",
        &format!("/api/v1/runs/{id}/set-points/{sp_id}/readings"),
        Some(&lab.tech),
        Some(json!({"version": 5, "readings": [{"reference_signal": 138.5, "uut_signal": 138.5}]})),
    )
    .await;
    assert_eq!(locked.status, StatusCode::CONFLICT);
    assert!(
        locked
            .text()
            .contains("has been submitted and is read-only")
    );

    // The impact query finds the run through the reference standard.
    let impact = ok(
        &call(
            &lab.app,
            "GET",
            "/api/v1/impact?asset_id=REF-PRT-01&from=2026-11-01&to=2026-11-30",
            Some(&lab.reviewer),
            None,
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(impact["runs"].as_array().expect("runs").len(), 1);
    assert_eq!(impact["runs"][0]["id"], id);
    let none = ok(
        &call(
            &lab.app,
            "GET",
            "/api/v1/impact?asset_id=REF-PRT-01&from=2026-12-01&to=2026-12-31",
            Some(&lab.reviewer),
            None,
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(none["runs"], json!([]));

    // Every write left an audit event, and the chain is intact.
    let mut conn = pool.acquire().await.expect("conn");
    match audit::verify(&mut conn).await.expect("verify") {
        // 6 set-up writes, customer and instrument, and 5 on the run.
        audit::Verification::Intact { events } => assert_eq!(events, 13),
        broken => panic!("{broken:?}"),
    }
    let run_events = audit::for_entity(&mut conn, "run", &id.to_string())
        .await
        .expect("events");
    let actions: Vec<&str> = run_events.iter().map(|e| e.action.as_str()).collect();
    assert_eq!(
        actions,
        [
            "create",
            "add_set_point",
            "add_readings",
            "add_readings",
            "submit"
        ]
    );
    assert!(run_events.iter().all(|e| e.actor == "tomas"));
}

#[sqlx::test]
async fn equipment_past_due_or_out_of_service_cannot_be_used(pool: SqlitePool) {
    let lab = lab(pool).await;
    customer_and_instrument(&lab).await;
    // The reference's certificate is due on 2027-01-15.
    let late = call(
        &lab.app,
        "POST",
        "/api/v1/runs",
        Some(&lab.tech),
        Some(run_body("2027-02-01")),
    )
    .await;
    assert_eq!(
        late.status,
        StatusCode::UNPROCESSABLE_ENTITY,
        "{}",
        late.text()
    );
    let problem = late.json();
    let fields: Vec<&str> = problem["errors"]
        .as_array()
        .expect("errors")
        .iter()
        .map(|e| e["field"].as_str().expect("field"))
        .collect();
    assert!(fields.contains(&"reference"), "{problem}");
    assert!(
        late.text().contains(
            "REF-PRT-01 was due for calibration on 2027-01-15 (certificate NMI-2026-118)"
        ),
        "{}",
        late.text()
    );
    // Before its first certificate there is none in force.
    let early = call(
        &lab.app,
        "POST",
        "/api/v1/runs",
        Some(&lab.tech),
        Some(run_body("2025-12-01")),
    )
    .await;
    assert!(
        early
            .text()
            .contains("has no calibration certificate dated on or before 2025-12-01")
    );

    ok(
        &call(
            &lab.app,
            "PUT",
            "/api/v1/equipment/DMM-01/status",
            Some(&lab.admin),
            Some(json!({"status": "out_of_service", "reason": "display fault"})),
        )
        .await,
        StatusCode::OK,
    );
    let refused = call(
        &lab.app,
        "POST",
        "/api/v1/runs",
        Some(&lab.tech),
        Some(run_body("2026-11-20")),
    )
    .await;
    assert_eq!(refused.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        refused
            .text()
            .contains("DMM-01 is out of service (display fault); it cannot be used"),
        "{}",
        refused.text()
    );
    // Taking an item out of service needs a reason.
    let no_reason = call(
        &lab.app,
        "PUT",
        "/api/v1/equipment/BATH-01/status",
        Some(&lab.admin),
        Some(json!({"status": "out_of_service"})),
    )
    .await;
    assert_eq!(no_reason.status, StatusCode::UNPROCESSABLE_ENTITY);
    // Nothing was stored by the refused runs.
    let runs = ok(
        &call(&lab.app, "GET", "/api/v1/runs", Some(&lab.reader), None).await,
        StatusCode::OK,
    );
    assert_eq!(runs, json!([]));
}

/// (method, uri, body, caller's token, expected status)
type Case<'a> = (&'a str, &'a str, Option<Value>, Option<&'a str>, StatusCode);

#[sqlx::test]
async fn roles_and_scopes_decide_who_may_do_what(pool: SqlitePool) {
    let lab = lab(pool).await;
    customer_and_instrument(&lab).await;
    let equipment = json!({"asset_id": "FURN-02", "kind": "furnace"});
    let customer = json!({"name": "Another customer (invented)"});
    let matrix: Vec<Case<'_>> = vec![
        (
            "GET",
            "/api/v1/customers",
            None,
            None,
            StatusCode::UNAUTHORIZED,
        ),
        (
            "GET",
            "/api/v1/customers",
            None,
            Some("jct_not_a_real_token"),
            StatusCode::UNAUTHORIZED,
        ),
        (
            "GET",
            "/api/v1/customers",
            None,
            Some(&lab.reader),
            StatusCode::OK,
        ),
        (
            "GET",
            "/api/v1/equipment",
            None,
            Some(&lab.reader),
            StatusCode::OK,
        ),
        (
            "GET",
            "/api/v1/runs",
            None,
            Some(&lab.reader),
            StatusCode::OK,
        ),
        (
            "GET",
            "/api/v1/cmc",
            None,
            Some(&lab.reader),
            StatusCode::OK,
        ),
        (
            "POST",
            "/api/v1/customers",
            Some(customer.clone()),
            Some(&lab.reader),
            StatusCode::FORBIDDEN,
        ),
        (
            "POST",
            "/api/v1/customers",
            Some(customer.clone()),
            None,
            StatusCode::UNAUTHORIZED,
        ),
        (
            "POST",
            "/api/v1/equipment",
            Some(equipment.clone()),
            Some(&lab.tech),
            StatusCode::FORBIDDEN,
        ),
        (
            "POST",
            "/api/v1/equipment",
            Some(equipment.clone()),
            Some(&lab.reader),
            StatusCode::FORBIDDEN,
        ),
        (
            "POST",
            "/api/v1/equipment",
            Some(equipment.clone()),
            Some(&lab.reviewer),
            StatusCode::CREATED,
        ),
        (
            "POST",
            "/api/v1/cmc",
            Some(
                json!({"instrument_kind": "prt", "t_lo_c": -40.0, "t_hi_c": 250.0, "expanded_c": 0.03}),
            ),
            Some(&lab.reviewer),
            StatusCode::FORBIDDEN,
        ),
        (
            "POST",
            "/api/v1/cmc",
            Some(
                json!({"instrument_kind": "prt", "t_lo_c": -40.0, "t_hi_c": 250.0, "expanded_c": 0.03}),
            ),
            Some(&lab.admin),
            StatusCode::CREATED,
        ),
        (
            "POST",
            "/api/v1/runs",
            Some(run_body("2026-11-20")),
            Some(&lab.reviewer),
            StatusCode::FORBIDDEN,
        ),
        (
            "POST",
            "/api/v1/runs",
            Some(run_body("2026-11-20")),
            Some(&lab.reader),
            StatusCode::FORBIDDEN,
        ),
        (
            "POST",
            "/api/v1/runs",
            Some(run_body("2026-11-20")),
            Some(&lab.tech),
            StatusCode::CREATED,
        ),
        (
            "POST",
            "/api/v1/customers",
            Some(customer.clone()),
            Some(&lab.tech),
            StatusCode::CREATED,
        ),
    ];
    for (method, uri, body, token, expected) in matrix {
        let answer = call(&lab.app, method, uri, token, body).await;
        assert_eq!(
            answer.status,
            expected,
            "{method} {uri} as {token:?}: {}",
            answer.text()
        );
        if expected == StatusCode::UNAUTHORIZED {
            assert!(answer.headers.contains_key("www-authenticate"));
            assert_eq!(answer.json()["type"], "/problems/unauthenticated");
        }
        if expected == StatusCode::FORBIDDEN {
            assert_eq!(answer.json()["type"], "/problems/forbidden");
        }
    }
    // A read-only token is told why.
    let answer = call(
        &lab.app,
        "POST",
        "/api/v1/customers",
        Some(&lab.reader),
        Some(json!({"name": "x"})),
    )
    .await;
    assert!(answer.text().contains("this token is read-only"));
}

#[sqlx::test]
async fn bad_records_get_field_errors_and_store_nothing(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    let bad_instrument = call(
        &lab.app,
        "POST",
        "/api/v1/instruments",
        Some(&lab.tech),
        Some(json!({
        "serial": "TC-1", "kind": "thermocouple", "tc_type": "Q", "customer_id": 999})),
    )
    .await;
    assert_eq!(bad_instrument.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(bad_instrument.json()["errors"][0]["field"], "tc_type");
    let no_customer = call(
        &lab.app,
        "POST",
        "/api/v1/instruments",
        Some(&lab.tech),
        Some(json!({
        "serial": "TC-1", "kind": "thermocouple", "tc_type": "K", "customer_id": 999})),
    )
    .await;
    assert_eq!(no_customer.json()["errors"][0]["field"], "customer_id");
    let bad_cert = call(
        &lab.app,
        "POST",
        "/api/v1/equipment/REF-PRT-01/certificates",
        Some(&lab.admin),
        Some(json!({
        "number": "X-1", "issuer": "Someone", "calibrated_on": "2026-05-01", "due_on": "2026-04-01",
        "coefficients": {"form": "emf_deviation", "coefficients_mv": [0.0]}})),
    )
    .await;
    assert_eq!(bad_cert.status, StatusCode::UNPROCESSABLE_ENTITY);
    let fields: Vec<String> = bad_cert.json()["errors"]
        .as_array()
        .expect("errors")
        .iter()
        .map(|e| e["field"].as_str().expect("f").to_owned())
        .collect();
    assert_eq!(fields, ["due_on", "coefficients.form", "uncertainties"]);
    let dup = call(
        &lab.app,
        "POST",
        "/api/v1/equipment",
        Some(&lab.admin),
        Some(json!({"asset_id": "BATH-01", "kind": "bath"})),
    )
    .await;
    assert_eq!(dup.status, StatusCode::CONFLICT);
    assert!(dup.text().contains("already in the register"));
    let mut conn = pool.acquire().await.expect("conn");
    let instruments: i64 = sqlx::query_scalar("SELECT COUNT(*) FROM instrument")
        .fetch_one(&mut *conn)
        .await
        .expect("count");
    assert_eq!(instruments, 0);
    let certificates: i64 = sqlx::query_scalar("SELECT COUNT(*) FROM equipment_certificate")
        .fetch_one(&mut *conn)
        .await
        .expect("count");
    assert_eq!(certificates, 2);
    let _ = store::schema_version(&pool).await.expect("schema");
}

#[sqlx::test]
async fn a_new_run_takes_the_budget_template_of_its_kind(pool: SqlitePool) {
    let lab = lab(pool).await;
    customer_and_instrument(&lab).await;
    let rows = json!({"rows": [
        {"name": "immersion", "distribution": "rectangular", "value_c": 0.005},
        {"name": "self-heating", "distribution": "rectangular", "value_c": 0.003}]});
    let refused = call(
        &lab.app,
        "PUT",
        "/api/v1/budget-templates/prt",
        Some(&lab.tech),
        Some(rows.clone()),
    )
    .await;
    assert_eq!(refused.status, StatusCode::FORBIDDEN);
    ok(
        &call(
            &lab.app,
            "PUT",
            "/api/v1/budget-templates/prt",
            Some(&lab.reviewer),
            Some(rows),
        )
        .await,
        StatusCode::OK,
    );
    let bad = call(
        &lab.app,
        "PUT",
        "/api/v1/budget-templates/prt",
        Some(&lab.reviewer),
        Some(json!({"rows": [{"name": "x", "distribution": "gaussian", "value_c": 0.1}]})),
    )
    .await;
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(bad.json()["errors"][0]["field"], "rows[0]");
    let unknown = call(
        &lab.app,
        "GET",
        "/api/v1/budget-templates/kettle",
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(unknown.status, StatusCode::NOT_FOUND);
    let template = ok(
        &call(
            &lab.app,
            "GET",
            "/api/v1/budget-templates/prt",
            Some(&lab.reader),
            None,
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(template["rows"][1]["name"], "self-heating");

    let run = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/runs",
            Some(&lab.tech),
            Some(run_body("2026-11-20")),
        )
        .await,
        StatusCode::CREATED,
    );
    let stored: Value =
        serde_json::from_str(run["extra_budget"].as_str().expect("text")).expect("json");
    assert_eq!(stored, template["rows"]);
    // Rows given with the run replace the template.
    let mut own = run_body("2026-11-21");
    own["extra_budget"] =
        json!([{"name": "stem conduction", "distribution": "triangular", "value_c": 0.01}]);
    let run = ok(
        &call(&lab.app, "POST", "/api/v1/runs", Some(&lab.tech), Some(own)).await,
        StatusCode::CREATED,
    );
    assert!(
        run["extra_budget"]
            .as_str()
            .expect("text")
            .contains("stem conduction")
    );
}

#[sqlx::test]
async fn instruments_can_be_described_and_set_points_removed(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    customer_and_instrument(&lab).await;
    let changed = ok(&call(&lab.app, "PUT", "/api/v1/instruments/PT-2291", Some(&lab.tech),
        Some(json!({"description": "Pt100 class A, 6 mm x 250 mm", "manufacturer": "Example Sensors"}))).await, StatusCode::OK);
    assert_eq!(changed["description"], "Pt100 class A, 6 mm x 250 mm");
    assert_eq!(changed["serial"], "PT-2291");
    let run = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/runs",
            Some(&lab.tech),
            Some(run_body("2026-11-20")),
        )
        .await,
        StatusCode::CREATED,
    );
    let id = run["id"].as_i64().expect("id");
    let sp = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/set-points"),
            Some(&lab.tech),
            Some(json!({"nominal_t_c": 60.0, "version": 1})),
        )
        .await,
        StatusCode::CREATED,
    );
    ok(&call(&lab.app, "POST", &format!("/api/v1/runs/{id}/set-points/{}/readings", sp["id"]), Some(&lab.tech),
        Some(json!({"version": 2, "readings": [{"reference_signal": 123.24, "uut_signal": 123.25}]}))).await, StatusCode::CREATED);
    let stale = call(
        &lab.app,
        "DELETE",
        &format!("/api/v1/runs/{id}/set-points/{}?version=2", sp["id"]),
        Some(&lab.tech),
        None,
    )
    .await;
    assert_eq!(stale.status, StatusCode::CONFLICT);
    let gone = call(
        &lab.app,
        "DELETE",
        &format!("/api/v1/runs/{id}/set-points/{}?version=3", sp["id"]),
        Some(&lab.tech),
        None,
    )
    .await;
    assert_eq!(gone.status, StatusCode::NO_CONTENT, "{}", gone.text());
    let detail = ok(
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
    assert_eq!(detail["set_points"], json!([]));
    assert_eq!(detail["version"], 4);
    // The removed readings stay in the audit trail.
    let mut conn = pool.acquire().await.expect("conn");
    let events = audit::for_entity(&mut conn, "run", &id.to_string())
        .await
        .expect("events");
    let last = events.last().expect("event");
    assert_eq!(last.action, "delete_set_point");
    assert!(
        last.before_json
            .as_deref()
            .expect("before")
            .contains("123.24")
    );
}

/// Who may call each route: every route of the records API against no
/// token, a read-only token, and write tokens of each role.
#[sqlx::test]
async fn every_records_route_checks_token_scope_and_role(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    customer_and_instrument(&lab).await;
    let run = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/runs",
            Some(&lab.tech),
            Some(run_body("2026-11-20")),
        )
        .await,
        StatusCode::CREATED,
    );
    let id = run["id"].as_i64().expect("id");
    let sp = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/set-points"),
            Some(&lab.tech),
            Some(json!({"nominal_t_c": 60.0, "version": 1})),
        )
        .await,
        StatusCode::CREATED,
    );
    let sp_id = sp["id"].as_i64().expect("sp");
    use Role::{Administrator as A, Reviewer as R, Technician as T};
    // (method, uri, body, roles allowed to change)
    let writes: Vec<(&str, String, Value, Vec<Role>)> = vec![
        (
            "POST",
            "/api/v1/customers".into(),
            json!({"name": "Matrix customer"}),
            vec![T, R, A],
        ),
        (
            "PUT",
            "/api/v1/customers/1".into(),
            json!({"name": "Northfield Dairy Co-op (invented)"}),
            vec![T, R, A],
        ),
        (
            "POST",
            "/api/v1/instruments".into(),
            json!({"serial": "M-1", "kind": "indicating", "customer_id": 1}),
            vec![T, R, A],
        ),
        (
            "PUT",
            "/api/v1/instruments/PT-2291".into(),
            json!({"description": "x"}),
            vec![T, R, A],
        ),
        (
            "POST",
            "/api/v1/equipment".into(),
            json!({"asset_id": "M-EQ", "kind": "bath"}),
            vec![R, A],
        ),
        (
            "PUT",
            "/api/v1/equipment/BATH-01/status".into(),
            json!({"status": "in_service"}),
            vec![R, A],
        ),
        (
            "POST",
            "/api/v1/equipment/DMM-01/certificates".into(),
            json!({"number": "M", "issuer": "M", "calibrated_on": "2026-05-01", "due_on": "2027-05-01"}),
            vec![R, A],
        ),
        (
            "POST",
            "/api/v1/equipment/BATH-01/characterisations".into(),
            json!({"characterised_on": "2026-05-01", "ranges": [{"t_lo_c": 0.0, "t_hi_c": 10.0, "uniformity_half_width_c": 0.01, "stability_half_width_c": 0.01}]}),
            vec![R, A],
        ),
        (
            "POST",
            "/api/v1/cmc".into(),
            json!({"instrument_kind": "prt", "t_lo_c": 0.0, "t_hi_c": 10.0, "expanded_c": 0.02}),
            vec![A],
        ),
        (
            "PUT",
            "/api/v1/budget-templates/prt".into(),
            json!({"rows": []}),
            vec![R, A],
        ),
        (
            "POST",
            "/api/v1/runs".into(),
            run_body("2026-11-20"),
            vec![T, A],
        ),
        (
            "POST",
            format!("/api/v1/runs/{id}/set-points"),
            json!({"nominal_t_c": 70.0, "version": 99}),
            vec![T, A],
        ),
        (
            "POST",
            format!("/api/v1/runs/{id}/set-points/{sp_id}/readings"),
            json!({"version": 99, "readings": [{"reference_signal": 123.2, "uut_signal": 123.2}]}),
            vec![T, A],
        ),
        (
            "DELETE",
            format!("/api/v1/runs/{id}/set-points/{sp_id}?version=99"),
            Value::Null,
            vec![T, A],
        ),
        (
            "POST",
            format!("/api/v1/runs/{id}/submit"),
            json!({"version": 99}),
            vec![T, A],
        ),
    ];
    let callers = [
        (T, lab.tech.clone()),
        (R, lab.reviewer.clone()),
        (A, lab.admin.clone()),
    ];
    for (method, uri, body, allowed) in &writes {
        let body = (!body.is_null()).then(|| body.clone());
        let none = call(&lab.app, method, uri, None, body.clone()).await;
        assert_eq!(
            none.status,
            StatusCode::UNAUTHORIZED,
            "{method} {uri} without a token"
        );
        let read = call(&lab.app, method, uri, Some(&lab.reader), body.clone()).await;
        assert_eq!(
            read.status,
            StatusCode::FORBIDDEN,
            "{method} {uri} with a read-only token"
        );
        for (role, token) in &callers {
            let answer = call(&lab.app, method, uri, Some(token), body.clone()).await;
            if allowed.contains(role) {
                assert!(
                    answer.status != StatusCode::FORBIDDEN
                        && answer.status != StatusCode::UNAUTHORIZED,
                    "{method} {uri} as {role:?} should be allowed: {}",
                    answer.text()
                );
            } else {
                assert_eq!(
                    answer.status,
                    StatusCode::FORBIDDEN,
                    "{method} {uri} as {role:?}: {}",
                    answer.text()
                );
            }
        }
    }
    let reads = [
        "/api/v1/customers".to_owned(),
        "/api/v1/customers/1".to_owned(),
        "/api/v1/instruments".to_owned(),
        "/api/v1/instruments/PT-2291".to_owned(),
        "/api/v1/equipment".to_owned(),
        "/api/v1/equipment/BATH-01".to_owned(),
        "/api/v1/cmc".to_owned(),
        "/api/v1/budget-templates/prt".to_owned(),
        "/api/v1/runs".to_owned(),
        format!("/api/v1/runs/{id}"),
        format!("/api/v1/runs/{id}/results"),
        "/api/v1/impact?asset_id=BATH-01&from=2026-01-01&to=2026-12-31".to_owned(),
    ];
    for uri in &reads {
        assert_eq!(
            call(&lab.app, "GET", uri, None, None).await.status,
            StatusCode::UNAUTHORIZED,
            "GET {uri}"
        );
        let answer = call(&lab.app, "GET", uri, Some(&lab.reader), None).await;
        assert!(
            answer.status != StatusCode::UNAUTHORIZED && answer.status != StatusCode::FORBIDDEN,
            "GET {uri}: {}",
            answer.text()
        );
    }
}
