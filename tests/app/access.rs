//! Who may do what: every API route walked with an anonymous client, a
//! read-scoped token, and write-scoped tokens of each role; every page with
//! no session and with each role's session. A refused call is 401 (no
//! identity) or 403 (not allowed) and changes nothing; an allowed call is
//! never 401 or 403 (it may still be 404, 409 or 422 on the demo data).

use axum::http::StatusCode;
use juncture::store::accounts::{Role, Scope};
use serde_json::{Value, json};
use sqlx::SqlitePool;

use crate::helpers::app;
use crate::records::{call, token_for};

#[derive(Clone, Copy, Debug, PartialEq)]
enum Who {
    Anonymous,
    Reader,
    Technician,
    Reviewer,
    Administrator,
}

const TECH: &[Who] = &[Who::Technician, Who::Administrator];
const RECEIVING: &[Who] = &[Who::Technician, Who::Reviewer, Who::Administrator];
const REGISTER: &[Who] = &[Who::Reviewer, Who::Administrator];
const ADMIN: &[Who] = &[Who::Administrator];
const READERS: &[Who] = &[
    Who::Reader,
    Who::Technician,
    Who::Reviewer,
    Who::Administrator,
];

async fn audit_events(pool: &SqlitePool) -> i64 {
    sqlx::query_scalar("SELECT COUNT(*) FROM audit_event")
        .fetch_one(pool)
        .await
        .expect("count")
}

#[sqlx::test]
async fn every_api_route_answers_each_kind_of_caller_as_its_role_allows(pool: SqlitePool) {
    juncture::demo::load(&pool).await.expect("demo");
    let app = app(pool.clone());
    let reader = token_for(&pool, "demo-admin", Role::Administrator, Scope::Read).await;
    let tech = token_for(&pool, "demo-tech", Role::Technician, Scope::Write).await;
    let reviewer = token_for(&pool, "demo-reviewer", Role::Reviewer, Scope::Write).await;
    let admin = token_for(&pool, "demo-admin", Role::Administrator, Scope::Write).await;
    let token = |who: Who| match who {
        Who::Anonymous => None,
        Who::Reader => Some(reader.as_str()),
        Who::Technician => Some(tech.as_str()),
        Who::Reviewer => Some(reviewer.as_str()),
        Who::Administrator => Some(admin.as_str()),
    };
    let run2 = call(&app, "GET", "/api/v1/runs/2", Some(&reader), None)
        .await
        .json();
    let sp = &run2["set_points"][0];
    let set_point = sp["id"]
        .as_i64()
        .or_else(|| sp["set_point"]["id"].as_i64())
        .expect("set point id");

    let run1 = call(&app, "GET", "/api/v1/runs/1", Some(&reader), None)
        .await
        .json();
    let run1_version = run1["run"]["version"]
        .as_i64()
        .or_else(|| run1["version"].as_i64())
        .expect("run version");
    // (method, path, body, who may)
    let routes: Vec<(&str, String, Option<Value>, &[Who])> = vec![
        ("GET", "/api/v1/customers".into(), None, READERS),
        ("GET", "/api/v1/customers/1".into(), None, READERS),
        ("GET", "/api/v1/instruments".into(), None, READERS),
        (
            "GET",
            "/api/v1/instruments/CVW-PT-1187".into(),
            None,
            READERS,
        ),
        ("GET", "/api/v1/equipment".into(), None, READERS),
        ("GET", "/api/v1/equipment/LTM-SPRT-01".into(), None, READERS),
        ("GET", "/api/v1/cmc".into(), None, READERS),
        ("GET", "/api/v1/budget-templates/prt".into(), None, READERS),
        ("GET", "/api/v1/runs".into(), None, READERS),
        ("GET", "/api/v1/runs/1".into(), None, READERS),
        ("GET", "/api/v1/runs/1/results".into(), None, READERS),
        (
            "GET",
            "/api/v1/runs/1/set-points/1/readings?limit=2".into(),
            None,
            READERS,
        ),
        ("GET", "/api/v1/review".into(), None, READERS),
        ("GET", "/api/v1/certificates".into(), None, READERS),
        (
            "GET",
            "/api/v1/certificates/LTM-2026-0001".into(),
            None,
            READERS,
        ),
        (
            "GET",
            "/api/v1/certificates/LTM-2026-0001/pdf".into(),
            None,
            READERS,
        ),
        (
            "GET",
            "/api/v1/instruments/CVW-PT-1187/deviation".into(),
            None,
            READERS,
        ),
        (
            "GET",
            "/api/v1/instruments/CVW-PT-1187/deviation/evaluate?t_c=50".into(),
            None,
            READERS,
        ),
        (
            "GET",
            "/api/v1/instruments/CVW-PT-1187/history".into(),
            None,
            READERS,
        ),
        (
            "GET",
            "/api/v1/equipment/LTM-SPRT-01/impact?from=2026-01-01&to=2026-12-31".into(),
            None,
            READERS,
        ),
        (
            "GET",
            "/api/v1/impact?asset_id=LTM-SPRT-01&from=2026-01-01&to=2026-12-31".into(),
            None,
            READERS,
        ),
        (
            "POST",
            "/api/v1/customers".into(),
            Some(json!({"name": "Matrix customer (invented)"})),
            RECEIVING,
        ),
        (
            "PUT",
            "/api/v1/customers/1".into(),
            Some(json!({"name": "Corrow Valley Water Authority (invented)"})),
            RECEIVING,
        ),
        (
            "POST",
            "/api/v1/instruments".into(),
            Some(json!({"serial": "MX-1", "kind": "prt", "r0_ohm": 100.0, "customer_id": 1})),
            RECEIVING,
        ),
        (
            "PUT",
            "/api/v1/instruments/CVW-PT-1187".into(),
            Some(json!({"description": "Pt100, 4 mm sheath"})),
            RECEIVING,
        ),
        (
            "POST",
            "/api/v1/equipment".into(),
            Some(json!({"asset_id": "MX-EQ-1", "kind": "bath"})),
            REGISTER,
        ),
        (
            "PUT",
            "/api/v1/equipment/LTM-DMM-10/status".into(),
            Some(json!({"status": "out_of_service", "reason": "display fault"})),
            REGISTER,
        ),
        (
            "POST",
            "/api/v1/equipment/LTM-DMM-10/certificates".into(),
            Some(
                json!({"number": "MX-C-1", "issuer": "Example laboratory", "calibrated_on": "2026-10-01", "due_on": "2027-10-01"}),
            ),
            REGISTER,
        ),
        (
            "POST",
            "/api/v1/equipment/LTM-BATH-07/characterisations".into(),
            Some(
                json!({"characterised_on": "2026-10-01", "ranges": [{"t_lo_c": -50.0, "t_hi_c": 300.0, "uniformity_half_width_c": 0.01, "stability_half_width_c": 0.005}]}),
            ),
            REGISTER,
        ),
        (
            "POST",
            "/api/v1/cmc".into(),
            Some(
                json!({"instrument_kind": "prt", "t_lo_c": 300.0, "t_hi_c": 400.0, "expanded_c": 0.05}),
            ),
            ADMIN,
        ),
        (
            "PUT",
            "/api/v1/budget-templates/prt".into(),
            Some(
                json!({"rows": [{"name": "immersion", "distribution": "rectangular", "value_c": 0.005}]}),
            ),
            REGISTER,
        ),
        (
            "POST",
            "/api/v1/runs".into(),
            Some(
                json!({"instrument_serial": "CVW-PT-1187", "reference": "LTM-SPRT-01", "performed_on": "2026-11-30", "procedure_ref": "LTM-P-04 rev 3", "decision_rule": "none"}),
            ),
            TECH,
        ),
        (
            "POST",
            "/api/v1/runs/2/set-points".into(),
            Some(json!({"nominal_t_c": 700.0, "version": 1})),
            TECH,
        ),
        (
            "POST",
            format!("/api/v1/runs/2/set-points/{set_point}/readings"),
            Some(json!({"version": 1, "readings": [{"reference_signal": 1.0, "uut_signal": 1.0}]})),
            TECH,
        ),
        (
            // A JSON body: the allowed roles get 415 (a logger file is
            // text), after the role check.
            "POST",
            format!("/api/v1/runs/2/set-points/{set_point}/readings/file?version=1"),
            Some(json!({"version": 1})),
            TECH,
        ),
        (
            "DELETE",
            format!("/api/v1/runs/2/set-points/{set_point}?version=1"),
            None,
            TECH,
        ),
        (
            "POST",
            "/api/v1/runs/3/submit".into(),
            Some(json!({"version": 1})),
            TECH,
        ),
        (
            "POST",
            "/api/v1/runs/1/approve".into(),
            Some(json!({"version": run1_version})),
            REGISTER,
        ),
        (
            "POST",
            "/api/v1/runs/1/return".into(),
            Some(json!({"version": run1_version, "reason": "check the immersion depth"})),
            REGISTER,
        ),
        (
            "POST",
            "/api/v1/certificates/LTM-2026-0001/amend".into(),
            Some(json!({"reason": "typing error in the address"})),
            REGISTER,
        ),
    ];
    let everyone = [
        Who::Anonymous,
        Who::Reader,
        Who::Technician,
        Who::Reviewer,
        Who::Administrator,
    ];
    for (method, path, body, allowed) in &routes {
        for who in everyone {
            let before = audit_events(&pool).await;
            let answer = call(&app, method, path, token(who), body.clone()).await;
            let status = answer.status;
            if who == Who::Anonymous {
                assert_eq!(
                    status,
                    StatusCode::UNAUTHORIZED,
                    "{method} {path} anonymous: {}",
                    answer.text()
                );
            } else if allowed.contains(&who) {
                assert!(
                    status != StatusCode::UNAUTHORIZED && status != StatusCode::FORBIDDEN,
                    "{method} {path} as {who:?} was refused: {status} {}",
                    answer.text()
                );
            } else {
                assert_eq!(
                    status,
                    StatusCode::FORBIDDEN,
                    "{method} {path} as {who:?}: {}",
                    answer.text()
                );
                assert_eq!(answer.content_type(), "application/problem+json");
            }
            if status == StatusCode::UNAUTHORIZED || status == StatusCode::FORBIDDEN {
                assert_eq!(
                    audit_events(&pool).await,
                    before,
                    "a refused {method} {path} changed nothing"
                );
            }
        }
    }
    // The allowed calls did their work: the reviewer approved run 1 and both
    // review roles amended its certificate once each.
    let issued = call(
        &app,
        "GET",
        "/api/v1/certificates/LTM-2026-0001",
        Some(&reader),
        None,
    )
    .await;
    assert_eq!(issued.status, StatusCode::OK);
    assert_eq!(issued.json()["revision"], 2);
    // The open routes need no identity.
    for (method, path, body) in [
        ("GET", "/healthz", None),
        ("GET", "/api/v1/openapi.json", None),
        ("GET", "/api/v1/reference/thermocouple?type=K&t_c=100", None),
        (
            "POST",
            "/api/v1/compute/fit",
            Some(json!({"x": [0.0, 1.0, 2.0], "y": [0.0, 1.0, 2.0], "degree": 1})),
        ),
    ] {
        let answer = call(&app, method, path, None, body).await;
        assert_eq!(
            answer.status,
            StatusCode::OK,
            "{method} {path}: {}",
            answer.text()
        );
    }
}
