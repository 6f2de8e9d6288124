//! Hostile and mistaken input, table-driven, through the HTTP API: each
//! case gets a clear 4xx problem-details answer naming what was wrong, and
//! the database is exactly as it was (every record table counted before and
//! after). Text that is accepted is stored verbatim and rendered escaped.

use axum::body::Body;
use axum::http::{Request, StatusCode};
use juncture::store::accounts::{Role, Scope};
use serde_json::json;
use sqlx::SqlitePool;

use crate::helpers::{app, send};
use crate::records::{call, token_for};

const TABLES: &[&str] = &[
    "customer",
    "instrument",
    "equipment",
    "equipment_certificate",
    "certificate_uncertainty",
    "medium_characterisation",
    "cmc",
    "run",
    "set_point",
    "reading",
    "certificate",
    "audit_event",
];

async fn counts(pool: &SqlitePool) -> Vec<i64> {
    let mut out = Vec::new();
    for table in TABLES {
        // The table names are the fixed list above.
        let n: i64 =
            sqlx::query_scalar(sqlx::AssertSqlSafe(format!("SELECT COUNT(*) FROM {table}")))
                .fetch_one(pool)
                .await
                .expect("count");
        out.push(n);
    }
    out
}

struct Case {
    what: &'static str,
    method: &'static str,
    path: String,
    content_type: Option<&'static str>,
    body: Vec<u8>,
    status: u16,
    /// Text the answer must contain (the field or the rule broken).
    says: &'static str,
}

fn case(
    what: &'static str,
    method: &'static str,
    path: &str,
    body: &str,
    status: u16,
    says: &'static str,
) -> Case {
    Case {
        what,
        method,
        path: path.to_owned(),
        content_type: Some("application/json"),
        body: body.as_bytes().to_vec(),
        status,
        says,
    }
}

#[sqlx::test]
async fn hostile_input_is_refused_clearly_and_changes_nothing(pool: SqlitePool) {
    juncture::demo::load(&pool).await.expect("demo");
    let app = app(pool.clone());
    let admin = token_for(&pool, "demo-admin", Role::Administrator, Scope::Write).await;
    let run2 = call(&app, "GET", "/api/v1/runs/2", Some(&admin), None)
        .await
        .json();
    let version = run2["run"]["version"]
        .as_i64()
        .or_else(|| run2["version"].as_i64())
        .expect("version");
    let sp = &run2["set_points"][0];
    let set_point = sp["id"]
        .as_i64()
        .or_else(|| sp["set_point"]["id"].as_i64())
        .expect("set point");
    let readings = format!("/api/v1/runs/2/set-points/{set_point}/readings");
    let reading = |r: &str, u: &str| {
        format!(
            r#"{{"version": {version}, "readings": [{{"reference_signal": {r}, "uut_signal": {u}}}]}}"#
        )
    };
    let many: Vec<serde_json::Value> = (0..100_001)
        .map(|_| json!({"reference_signal": 1, "uut_signal": 1}))
        .collect();
    let too_many =
        serde_json::to_string(&json!({"version": version, "readings": many})).expect("json");
    let long_name = "x".repeat(201);
    let huge = vec![b' '; 9 * 1024 * 1024];

    let mut cases = vec![
        case(
            "malformed JSON",
            "POST",
            "/api/v1/customers",
            r#"{"name": "#,
            400,
            "JSON",
        ),
        case(
            "truncated JSON",
            "POST",
            "/api/v1/customers",
            r#"{"name": "Truncated (invented)""#,
            400,
            "JSON",
        ),
        case(
            "a JSON array instead of an object",
            "POST",
            "/api/v1/customers",
            r#"["name"]"#,
            422,
            "must be a JSON object",
        ),
        case(
            "null for a required text",
            "POST",
            "/api/v1/customers",
            r#"{"name": null}"#,
            422,
            "name",
        ),
        case(
            "a number for a text",
            "POST",
            "/api/v1/customers",
            r#"{"name": 42}"#,
            422,
            "name",
        ),
        case(
            "an unknown field",
            "POST",
            "/api/v1/customers",
            r#"{"name": "A (invented)", "vip": true}"#,
            422,
            "unknown field `vip`",
        ),
        case(
            "a blank name",
            "POST",
            "/api/v1/customers",
            r#"{"name": "   "}"#,
            422,
            "must not be empty",
        ),
        case(
            "a name over 200 characters",
            "POST",
            "/api/v1/customers",
            &format!(r#"{{"name": "{long_name}"}}"#),
            422,
            "201 characters long; at most 200",
        ),
        case(
            "a NUL character in a name",
            "POST",
            "/api/v1/customers",
            r#"{"name": "Null\u0000Byte (invented)"}"#,
            422,
            "U+0000",
        ),
        case(
            "a bell character in an address",
            "POST",
            "/api/v1/customers",
            r#"{"name": "B (invented)", "address": "1 Ring Road\u0007"}"#,
            422,
            "address",
        ),
        case(
            "an escape sequence in a serial",
            "POST",
            "/api/v1/instruments",
            r#"{"serial": "PT\u001b[31m", "kind": "prt", "r0_ohm": 100, "customer_id": 1}"#,
            422,
            "serial",
        ),
        case(
            "an e-mail without @",
            "POST",
            "/api/v1/customers",
            r#"{"name": "C (invented)", "contact_email": "nobody"}"#,
            422,
            "contact_email",
        ),
        case(
            "an unknown instrument kind",
            "POST",
            "/api/v1/instruments",
            r#"{"serial": "K-1", "kind": "kettle", "customer_id": 1}"#,
            422,
            "unknown kind",
        ),
        case(
            "an unknown thermocouple type",
            "POST",
            "/api/v1/instruments",
            r#"{"serial": "TC-Q", "kind": "thermocouple", "tc_type": "Q", "customer_id": 1}"#,
            422,
            "tc_type",
        ),
        case(
            "a negative R0",
            "POST",
            "/api/v1/instruments",
            r#"{"serial": "PT-NEG", "kind": "prt", "r0_ohm": -100, "customer_id": 1}"#,
            422,
            "r0_ohm",
        ),
        case(
            "a zero R0",
            "POST",
            "/api/v1/instruments",
            r#"{"serial": "PT-ZERO", "kind": "prt", "r0_ohm": 0, "customer_id": 1}"#,
            422,
            "r0_ohm",
        ),
        case(
            "R0 as a string",
            "POST",
            "/api/v1/instruments",
            r#"{"serial": "PT-STR", "kind": "prt", "r0_ohm": "100", "customer_id": 1}"#,
            422,
            "r0_ohm",
        ),
        case(
            "a missing customer",
            "POST",
            "/api/v1/instruments",
            r#"{"serial": "PT-ORPHAN", "kind": "prt", "r0_ohm": 100, "customer_id": 999}"#,
            422,
            "customer",
        ),
        case(
            "a duplicate serial",
            "POST",
            "/api/v1/instruments",
            r#"{"serial": "CVW-PT-1187", "kind": "prt", "r0_ohm": 100, "customer_id": 1}"#,
            409,
            "CVW-PT-1187",
        ),
        case(
            "a duplicate asset id",
            "POST",
            "/api/v1/equipment",
            r#"{"asset_id": "LTM-SPRT-01", "kind": "reference_sprt"}"#,
            409,
            "LTM-SPRT-01",
        ),
        case(
            "NaN as a literal",
            "POST",
            &readings,
            &reading("NaN", "1"),
            400,
            "JSON",
        ),
        case(
            "Infinity as a literal",
            "POST",
            &readings,
            &reading("Infinity", "1"),
            400,
            "JSON",
        ),
        case(
            "1e400",
            "POST",
            &readings,
            &reading("1e400", "1"),
            400,
            "JSON",
        ),
        case(
            "a reading as a string",
            "POST",
            &readings,
            &reading("\"1.5\"", "1"),
            422,
            "reference_signal",
        ),
        case(
            "an emf outside every type N value",
            "POST",
            &readings,
            &reading("1.0", "99.0"),
            422,
            "readings[0].uut_signal",
        ),
        case(
            "an emf in µV instead of mV",
            "POST",
            &readings,
            &reading("1.0", "13012"),
            422,
            "outside the emf range of type N",
        ),
        case(
            "no readings",
            "POST",
            &readings,
            &format!(r#"{{"version": {version}, "readings": []}}"#),
            422,
            "no readings given",
        ),
        case(
            "more readings than one request takes",
            "POST",
            &readings,
            &too_many,
            422,
            "at most 100000",
        ),
        case(
            "a stale version",
            "POST",
            &readings,
            &format!(
                r#"{{"version": {}, "readings": [{{"reference_signal": 1, "uut_signal": 13.0}}]}}"#,
                version - 1
            ),
            409,
            "version",
        ),
        case(
            "readings for a set point of another run",
            "POST",
            "/api/v1/runs/3/set-points/1/readings",
            &reading("1.0", "1.0"),
            404,
            "set point",
        ),
        case(
            "a run that does not exist",
            "POST",
            "/api/v1/runs/99999/set-points",
            r#"{"nominal_t_c": 100, "version": 1}"#,
            404,
            "99999",
        ),
        case(
            "a duplicate set point",
            "POST",
            "/api/v1/runs/2/set-points",
            &format!(r#"{{"nominal_t_c": 400, "version": {version}}}"#),
            422,
            "already has a set point",
        ),
        case(
            "a set point outside every reference function",
            "POST",
            "/api/v1/runs/2/set-points",
            &format!(r#"{{"nominal_t_c": 5000, "version": {version}}}"#),
            422,
            "nominal_t_c",
        ),
        case(
            "an impossible date",
            "POST",
            "/api/v1/runs",
            r#"{"instrument_serial": "CVW-PT-1187", "reference": "LTM-SPRT-01", "performed_on": "2026-02-30", "procedure_ref": "P-1", "decision_rule": "none"}"#,
            422,
            "performed_on",
        ),
        case(
            "a date in another format",
            "POST",
            "/api/v1/runs",
            r#"{"instrument_serial": "CVW-PT-1187", "reference": "LTM-SPRT-01", "performed_on": "30/11/2026", "procedure_ref": "P-1", "decision_rule": "none"}"#,
            422,
            "YYYY-MM-DD",
        ),
        case(
            "an out-of-service reference",
            "POST",
            "/api/v1/runs",
            r#"{"instrument_serial": "CVW-PT-1187", "reference": "LTM-PRT-11", "performed_on": "2026-11-30", "procedure_ref": "P-1", "decision_rule": "none"}"#,
            422,
            "LTM-PRT-11",
        ),
        case(
            "an unknown decision rule",
            "POST",
            "/api/v1/runs",
            r#"{"instrument_serial": "CVW-PT-1187", "reference": "LTM-SPRT-01", "performed_on": "2026-11-30", "procedure_ref": "P-1", "decision_rule": "lenient"}"#,
            422,
            "decision_rule",
        ),
        case(
            "a fit with mismatched lengths",
            "POST",
            "/api/v1/compute/fit",
            r#"{"x": [1, 2, 3], "y": [1, 2], "degree": 1}"#,
            422,
            "y",
        ),
        case(
            "a fit of too high a degree",
            "POST",
            "/api/v1/compute/fit",
            r#"{"x": [1, 2, 3], "y": [1, 2, 3], "degree": 5}"#,
            422,
            "degree",
        ),
        case(
            "a negative half-width",
            "POST",
            "/api/v1/compute/uncertainty",
            r#"{"components": [{"name": "bath", "distribution": "rectangular", "half_width": -0.1}]}"#,
            422,
            "half",
        ),
        case(
            "a return without a reason",
            "POST",
            "/api/v1/runs/1/return",
            r#"{"version": 1, "reason": "  "}"#,
            422,
            "reason",
        ),
        case(
            "a control character in a return reason",
            "POST",
            "/api/v1/runs/1/return",
            r#"{"version": 1, "reason": "see\u0000"}"#,
            422,
            "U+0000",
        ),
    ];
    cases.push(Case {
        what: "JSON sent as text/plain",
        method: "POST",
        path: "/api/v1/customers".to_owned(),
        content_type: Some("text/plain"),
        body: br#"{"name": "Plain (invented)"}"#.to_vec(),
        status: 415,
        says: "application/json",
    });
    cases.push(Case {
        what: "no content type",
        method: "POST",
        path: "/api/v1/customers".to_owned(),
        content_type: None,
        body: br#"{"name": "None (invented)"}"#.to_vec(),
        status: 415,
        says: "application/json",
    });
    cases.push(Case {
        what: "a body over the size limit",
        method: "POST",
        path: "/api/v1/customers".to_owned(),
        content_type: Some("application/json"),
        body: huge,
        status: 413,
        says: "8388608 bytes",
    });
    cases.push(case(
        "invalid UTF-8",
        "POST",
        "/api/v1/customers",
        "",
        400,
        "JSON",
    ));
    cases.last_mut().expect("case").body = b"{\"name\":\"\xff\xfe\"}".to_vec();
    for (what, path, says) in [
        (
            "a query value that is not a number",
            "/api/v1/reference/thermocouple?type=K&t_c=hot",
            "t_c",
        ),
        (
            "a temperature outside type K",
            "/api/v1/reference/thermocouple?type=K&t_c=5000",
            "type K",
        ),
        (
            "a NaN temperature in a query",
            "/api/v1/reference/prt?t_c=NaN",
            "t_c",
        ),
        (
            "path traversal to a static file",
            "/static/..%2F..%2FCargo.toml",
            "",
        ),
        (
            "SQL in a query value",
            "/api/v1/certificates?q=%27%3B%20DROP%20TABLE%20certificate%3B--&kind=prt%27--",
            "kind",
        ),
    ] {
        cases.push(Case {
            what,
            method: "GET",
            path: path.to_owned(),
            content_type: None,
            body: Vec::new(),
            status: 0,
            says,
        });
    }
    assert!(cases.len() >= 40, "{} cases", cases.len());

    for c in cases {
        let before = counts(&pool).await;
        let mut request = Request::builder()
            .method(c.method)
            .uri(&c.path)
            .header("authorization", format!("Bearer {admin}"));
        if let Some(t) = c.content_type {
            request = request.header("content-type", t);
        }
        let answer = send(&app, request.body(Body::from(c.body)).expect("request")).await;
        let status = answer.status.as_u16();
        if c.status == 0 {
            assert!(
                (400..500).contains(&status),
                "{}: {status} {}",
                c.what,
                answer.text()
            );
        } else {
            assert_eq!(status, c.status, "{}: {}", c.what, answer.text());
        }
        if c.path.starts_with("/api/") {
            assert_eq!(
                answer.content_type(),
                "application/problem+json",
                "{}",
                c.what
            );
            let text = answer.text();
            assert!(
                text.contains(c.says),
                "{}: the answer should mention {:?}: {text}",
                c.what,
                c.says
            );
        }
        assert_eq!(
            counts(&pool).await,
            before,
            "{} changed the database",
            c.what
        );
    }
}

#[sqlx::test]
async fn accepted_text_is_stored_verbatim_and_rendered_escaped(pool: SqlitePool) {
    juncture::demo::load(&pool).await.expect("demo");
    let app = app(pool.clone());
    let admin = token_for(&pool, "demo-admin", Role::Administrator, Scope::Write).await;
    let script = "<script>alert('x')</script> Ltd (invented)";
    let sql = "Robert'); DROP TABLE customer;-- (invented)";
    let unicode = "Ørsted Målteknik ÅB — 温度 (invented)";
    for name in [script, sql, unicode] {
        let made = call(
            &app,
            "POST",
            "/api/v1/customers",
            Some(&admin),
            Some(json!({"name": name})),
        )
        .await;
        assert_eq!(made.status, StatusCode::CREATED, "{}", made.text());
        assert_eq!(made.json()["name"], name);
    }
    // The customer table survived the SQL-shaped name.
    let names: Vec<String> = sqlx::query_scalar("SELECT name FROM customer ORDER BY id")
        .fetch_all(&pool)
        .await
        .expect("customers");
    assert!(names.iter().any(|n| n == sql) && names.iter().any(|n| n == unicode));
    // An instrument of the script-named customer appears escaped on the pages.
    let id = call(&app, "GET", "/api/v1/customers", Some(&admin), None)
        .await
        .json()
        .as_array()
        .expect("list")
        .iter()
        .find(|c| c["name"] == script)
        .map(|c| c["id"].clone())
        .expect("customer");
    let made = call(&app, "POST", "/api/v1/instruments", Some(&admin), Some(json!({"serial": "<b>SN</b>", "kind": "indicating", "description": "<img src=x onerror=alert(1)>", "customer_id": id}))).await;
    assert_eq!(made.status, StatusCode::CREATED, "{}", made.text());
    let history = call(
        &app,
        "GET",
        "/api/v1/instruments/%3Cb%3ESN%3C%2Fb%3E/history",
        Some(&admin),
        None,
    )
    .await;
    assert_eq!(history.json()["serial"], "<b>SN</b>");
}
