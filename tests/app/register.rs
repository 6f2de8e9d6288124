//! The register, an instrument's history and the reference-standard impact
//! query: filters, keyset pages, E_n between consecutive calibrations and
//! the CSV export.

use axum::http::StatusCode;
use serde_json::{Value, json};
use sqlx::SqlitePool;

use crate::certificates::{ok, register_pt100, submitted_run_on};
use crate::records::{Lab, call, lab};

async fn approve(lab: &Lab, id: i64, version: i64) -> Value {
    ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/approve"),
            Some(&lab.reviewer),
            Some(json!({"version": version})),
        )
        .await,
        StatusCode::CREATED,
    )
}

async fn get(lab: &Lab, uri: &str) -> crate::helpers::Answer {
    call(&lab.app, "GET", uri, Some(&lab.reader), None).await
}

fn numbers(page: &Value) -> Vec<String> {
    page["certificates"]
        .as_array()
        .expect("certificates")
        .iter()
        .map(|c| c["number"].as_str().expect("number").to_owned())
        .collect()
}

/// Three certificates: PT-H1 calibrated in March and again in November
/// (reading 0.05 Ω higher the second time), PT-H2 in June.
async fn three_certificates(lab: &Lab) -> (String, String, String) {
    register_pt100(lab, &lab.tech, "PT-H1").await;
    register_pt100(lab, &lab.tech, "PT-H2").await;
    let (id, v) = submitted_run_on(lab, &lab.tech, "PT-H1", "2026-03-10", 0.0).await;
    let a = approve(lab, id, v).await;
    let (id, v) = submitted_run_on(lab, &lab.tech, "PT-H2", "2026-06-01", 0.0).await;
    let h2 = approve(lab, id, v).await;
    let (id, v) = submitted_run_on(lab, &lab.tech, "PT-H1", "2026-11-20", 0.05).await;
    let b = approve(lab, id, v).await;
    let n = |c: &Value| c["number"].as_str().expect("number").to_owned();
    (n(&a), n(&h2), n(&b))
}

#[sqlx::test]
async fn the_register_filters_by_type_outcome_and_standard_with_keyset_pages(pool: SqlitePool) {
    let lab = lab(pool).await;
    let (a, h2, b) = three_certificates(&lab).await;
    let all = ok(&get(&lab, "/api/v1/certificates").await, StatusCode::OK);
    // Newest first.
    assert_eq!(numbers(&all), [b.clone(), h2.clone(), a.clone()]);
    assert!(all.get("next_before").is_none(), "{all}");
    let line = &all["certificates"][0];
    assert_eq!(line["serial"], "PT-H1");
    assert_eq!(line["kind"], "prt");
    assert_eq!(line["reference"], "REF-PRT-01");
    assert_eq!(line["calibrated_on"], "2026-11-20");

    let prt = ok(
        &get(&lab, "/api/v1/certificates?kind=prt").await,
        StatusCode::OK,
    );
    assert_eq!(numbers(&prt).len(), 3);
    let tc = ok(
        &get(&lab, "/api/v1/certificates?kind=thermocouple").await,
        StatusCode::OK,
    );
    assert!(numbers(&tc).is_empty());
    let by_standard = ok(
        &get(&lab, "/api/v1/certificates?equipment=REF-PRT-01").await,
        StatusCode::OK,
    );
    assert_eq!(numbers(&by_standard).len(), 3);
    let by_medium = ok(
        &get(&lab, "/api/v1/certificates?equipment=BATH-01&q=PT-H2").await,
        StatusCode::OK,
    );
    assert_eq!(numbers(&by_medium), [h2.as_str()]);
    let unused = ok(
        &get(&lab, "/api/v1/certificates?equipment=DMM-01").await,
        StatusCode::OK,
    );
    assert!(numbers(&unused).is_empty());

    // The outcome filter agrees with the outcomes printed on each certificate:
    // the least favourable one over the set points (ILAC-G8:09/2019 4.2.3 order).
    for number in [&a, &h2, &b] {
        let snapshot = ok(
            &get(&lab, &format!("/api/v1/certificates/{number}")).await,
            StatusCode::OK,
        );
        let outcomes: Vec<&str> = snapshot["results"]
            .as_array()
            .expect("rows")
            .iter()
            .map(|r| {
                r["outcome"]
                    .as_str()
                    .expect("simple rule states an outcome")
            })
            .collect();
        let worst = ["fail", "conditional fail", "conditional pass", "pass"]
            .into_iter()
            .find(|o| outcomes.contains(o))
            .expect("an outcome")
            .replace(' ', "_");
        let found = ok(
            &get(
                &lab,
                &format!("/api/v1/certificates?outcome={worst}&q={number}"),
            )
            .await,
            StatusCode::OK,
        );
        assert_eq!(numbers(&found), [number.as_str()], "{worst}");
        let other = if worst == "pass" { "fail" } else { "pass" };
        let not_found = ok(
            &get(
                &lab,
                &format!("/api/v1/certificates?outcome={other}&q={number}"),
            )
            .await,
            StatusCode::OK,
        );
        assert!(numbers(&not_found).is_empty());
    }

    // Keyset pages: two, then the rest.
    let first = ok(
        &get(&lab, "/api/v1/certificates?limit=2").await,
        StatusCode::OK,
    );
    assert_eq!(numbers(&first), [b.clone(), h2.clone()]);
    let cursor = first["next_before"].as_i64().expect("cursor");
    let second = ok(
        &get(
            &lab,
            &format!("/api/v1/certificates?limit=2&before={cursor}"),
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(numbers(&second), [a.as_str()]);
    assert!(second.get("next_before").is_none());

    // Bad filters name the field and what is allowed.
    let bad = get(
        &lab,
        "/api/v1/certificates?kind=kettle&outcome=great&from=2026-13-01&limit=0",
    )
    .await;
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY);
    let fields: Vec<String> = bad.json()["errors"]
        .as_array()
        .expect("errors")
        .iter()
        .map(|e| e["field"].as_str().expect("field").to_owned())
        .collect();
    assert_eq!(fields, ["from", "kind", "outcome", "limit"]);
    assert!(
        bad.text()
            .contains("thermocouple, prt, sprt, indicating, switch")
    );
    let unknown = get(&lab, "/api/v1/certificates?equipment=NO-SUCH").await;
    assert_eq!(unknown.status, StatusCode::NOT_FOUND);
    let typo = get(&lab, "/api/v1/certificates?kinds=prt").await;
    assert_eq!(typo.status, StatusCode::BAD_REQUEST);
    assert!(typo.text().contains("kinds"), "{}", typo.text());
}

#[sqlx::test]
async fn history_judges_the_change_between_calibrations_by_e_n(pool: SqlitePool) {
    let lab = lab(pool).await;
    let (a, _, b) = three_certificates(&lab).await;
    let history = ok(
        &get(&lab, "/api/v1/instruments/PT-H1/history").await,
        StatusCode::OK,
    );
    let listed: Vec<&str> = history["certificates"]
        .as_array()
        .expect("certificates")
        .iter()
        .map(|c| c["number"].as_str().expect("n"))
        .collect();
    assert_eq!(listed, [a.as_str(), b.as_str()]);
    let drift = history["drift"].as_array().expect("drift");
    assert_eq!(drift.len(), 2);
    assert_eq!(drift[0]["nominal_t_c"], 50.0);
    assert_eq!(drift[0]["points"].as_array().expect("points").len(), 2);

    // E_n = (d2 - d1) / sqrt(U1² + U2²) (ISO/IEC 17043:2010 B.3.1.3), from the
    // deviations and U printed on the two certificates.
    let r1 = ok(
        &get(&lab, &format!("/api/v1/certificates/{a}")).await,
        StatusCode::OK,
    )["results"]
        .clone();
    let r2 = ok(
        &get(&lab, &format!("/api/v1/certificates/{b}")).await,
        StatusCode::OK,
    )["results"]
        .clone();
    let changes = history["changes"].as_array().expect("changes");
    assert_eq!(changes.len(), 2);
    for (i, change) in changes.iter().enumerate() {
        let f = |v: &Value, k: &str| v[i][k].as_f64().expect(k);
        let expected = (f(&r2, "deviation_c") - f(&r1, "deviation_c"))
            / (f(&r1, "expanded_uncertainty_c").powi(2) + f(&r2, "expanded_uncertainty_c").powi(2))
                .sqrt();
        let e_n = change["e_n"].as_f64().expect("e_n");
        assert!((e_n - expected).abs() < 1e-12, "{change}");
        // 0.05 Ω more is about +0.13 °C at 0.39 Ω/°C (IEC 60751 slope near
        // 50 °C), well beyond the few hundredths of U: a significant change.
        assert!(e_n > 1.0, "{change}");
        assert_eq!(change["verdict"], "significant change");
        assert_eq!(change["from_number"], a.as_str());
    }

    // An amendment replaces the March certificate: listed, but the drift
    // chart and comparisons use the current revision only.
    ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/certificates/{a}/amend"),
            Some(&lab.reviewer),
            Some(json!({"reason": "procedure reference corrected"})),
        )
        .await,
        StatusCode::CREATED,
    );
    let history = ok(
        &get(&lab, "/api/v1/instruments/PT-H1/history").await,
        StatusCode::OK,
    );
    let states: Vec<(i64, bool)> = history["certificates"]
        .as_array()
        .expect("certificates")
        .iter()
        .map(|c| {
            (
                c["revision"].as_i64().expect("rev"),
                c["replaced"].as_bool().expect("replaced"),
            )
        })
        .collect();
    assert_eq!(states, [(0, true), (1, false), (0, false)]);
    assert_eq!(
        history["drift"][0]["points"]
            .as_array()
            .expect("points")
            .len(),
        2
    );
    assert_eq!(history["changes"].as_array().expect("changes").len(), 2);
    let missing = get(&lab, "/api/v1/instruments/NOPE/history").await;
    assert_eq!(missing.status, StatusCode::NOT_FOUND);
}

#[sqlx::test]
async fn the_impact_of_a_standard_lists_certificates_and_exports_csv(pool: SqlitePool) {
    let lab = lab(pool).await;
    let (a, h2, _) = three_certificates(&lab).await;
    let impact = ok(
        &get(
            &lab,
            "/api/v1/equipment/REF-PRT-01/impact?from=2026-03-01&to=2026-06-30",
        )
        .await,
        StatusCode::OK,
    );
    let listed: Vec<&str> = impact["certificates"]
        .as_array()
        .expect("certificates")
        .iter()
        .map(|c| c["number"].as_str().expect("n"))
        .collect();
    assert_eq!(listed, [a.as_str(), h2.as_str()]);
    assert_eq!(impact["certificates"][0]["roles"], "reference");
    assert_eq!(impact["certificates"][0]["calibrated_on"], "2026-03-10");
    let medium = ok(
        &get(
            &lab,
            "/api/v1/equipment/BATH-01/impact?from=2026-06-01&to=2026-06-01",
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(medium["certificates"][0]["roles"], "medium");
    assert_eq!(medium["certificates"].as_array().expect("list").len(), 1);

    let csv = get(
        &lab,
        "/api/v1/equipment/REF-PRT-01/impact?from=2026-03-01&to=2026-06-30&format=csv",
    )
    .await;
    assert_eq!(csv.status, StatusCode::OK);
    assert_eq!(csv.content_type(), "text/csv; charset=utf-8");
    assert!(
        csv.headers["content-disposition"]
            .to_str()
            .expect("ascii")
            .contains("impact-REF-PRT-01-2026-03-01-2026-06-30.csv")
    );
    let text = csv.text();
    let lines: Vec<&str> = text.split("\r\n").filter(|l| !l.is_empty()).collect();
    assert_eq!(lines.len(), 3, "{text}");
    assert_eq!(
        lines[0],
        "certificate,revision,state,issued_on,calibrated_on,serial,kind,customer,customer_email,roles,outcome"
    );
    assert!(
        lines[1].starts_with(&format!("{a},0,current,")),
        "{}",
        lines[1]
    );
    assert!(
        lines[1].contains(",2026-03-10,PT-H1,prt,Owner of PT-H1 (invented),,reference,"),
        "{}",
        lines[1]
    );

    let bad = get(
        &lab,
        "/api/v1/equipment/REF-PRT-01/impact?from=2026-07-01&to=2026-06-30",
    )
    .await;
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(bad.text().contains("the last date comes before the first"));
    let format = get(
        &lab,
        "/api/v1/equipment/REF-PRT-01/impact?from=2026-01-01&to=2026-06-30&format=xls",
    )
    .await;
    assert_eq!(format.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(format.text().contains("use json or csv"));
    let unknown = get(
        &lab,
        "/api/v1/equipment/NOPE/impact?from=2026-01-01&to=2026-06-30",
    )
    .await;
    assert_eq!(unknown.status, StatusCode::NOT_FOUND);
}
