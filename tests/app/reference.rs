//! The stateless reference endpoints, the converter page and
//! `juncture convert`, checked against published tables.

use axum::http::StatusCode;
use sqlx::SqlitePool;

use crate::helpers::{app, get};

/// Published tables print emf to 0.001 mV; half of that digit.
const TABLE_HALF_DIGIT_MV: f64 = 0.0005;

#[sqlx::test]
async fn thermocouple_forward_matches_the_nist_table(pool: SqlitePool) {
    let app = app(pool);
    // NIST Monograph 175 (SRD 60 all.tab): type K, 1000 °C -> 41.276 mV;
    // type S, 1064 °C -> 10.332 mV; type T, -200 °C -> -5.603 mV.
    for (kind, t_c, emf_mv) in [
        ("K", 1000.0, 41.276),
        ("S", 1064.0, 10.332),
        ("T", -200.0, -5.603),
    ] {
        let answer = get(
            &app,
            &format!("/api/v1/reference/thermocouple?type={kind}&t_c={t_c}"),
        )
        .await;
        assert_eq!(answer.status, StatusCode::OK, "{}", answer.text());
        let body = answer.json();
        assert_eq!(body["type"], kind);
        assert_eq!(body["t_c"], t_c);
        let got = body["emf_mv"].as_f64().expect("emf_mv");
        assert!(
            (got - emf_mv).abs() <= TABLE_HALF_DIGIT_MV,
            "{kind} {t_c}: {got}"
        );
    }
}

#[sqlx::test]
async fn thermocouple_seebeck_coefficient_is_the_slope_of_the_table(pool: SqlitePool) {
    let app = app(pool);
    // NIST Monograph 175 (SRD 60 all.tab), type K: 33.275 mV at 800 °C and
    // 41.276 mV at 1000 °C give a mean slope of 40.005 µV/K over the
    // interval; the slope at 900 °C lies within 0.3 µV/K of that mean (the
    // curvature of E(t) is small there: common practice check).
    let body = get(&app, "/api/v1/reference/thermocouple?type=K&t_c=900")
        .await
        .json();
    let s = body["seebeck_uv_per_k"].as_f64().expect("seebeck");
    assert!((s - 40.005).abs() < 0.3, "{s}");
}

#[sqlx::test]
async fn thermocouple_inverse_solves_the_table_emf(pool: SqlitePool) {
    let app = app(pool);
    // NIST Monograph 175, type K: 41.276 mV at 1000 °C. The table value is
    // rounded to 0.001 mV, i.e. +-0.0005 mV / 39 µV/K = +-0.013 °C.
    let body = get(&app, "/api/v1/reference/thermocouple?type=K&emf_mv=41.276")
        .await
        .json();
    let t = body["t_c"].as_f64().expect("t_c");
    assert!((t - 1000.0).abs() < 0.013, "{t}");
    // The refined answer reproduces the emf far better than the table digit.
    let back = get(
        &app,
        &format!("/api/v1/reference/thermocouple?type=K&t_c={t}"),
    )
    .await
    .json();
    assert!((back["emf_mv"].as_f64().expect("emf") - 41.276).abs() < 1e-9);
    // The published inverse polynomial is reported with its printed band
    // (NIST Monograph 175, type K 500..1372 °C inverse: -0.05 to +0.06 °C).
    let published = body["published_inverse_t_c"].as_f64().expect("published");
    assert!((published - t).abs() < 0.06);
    assert_eq!(
        body["published_inverse_error_band_c"],
        serde_json::json!([-0.05, 0.06])
    );
}

#[sqlx::test]
async fn thermocouple_reference_junction_uses_intermediate_temperatures(pool: SqlitePool) {
    let app = app(pool);
    // NIST Monograph 175, type K: E(100 °C) = 4.096 mV, E(25 °C) = 1.000 mV.
    // With the reference junction at 25 °C a junction at 100 °C shows
    // 4.096 - 1.000 = 3.096 mV (law of intermediate temperatures).
    let body = get(
        &app,
        "/api/v1/reference/thermocouple?type=K&t_c=100&rj_t_c=25",
    )
    .await
    .json();
    let emf = body["emf_mv"].as_f64().expect("emf");
    assert!((emf - 3.096).abs() <= 2.0 * TABLE_HALF_DIGIT_MV, "{emf}");
    let rj = body["emf_rj_mv"].as_f64().expect("emf_rj");
    assert!((rj - 1.000).abs() <= TABLE_HALF_DIGIT_MV);
    let solved = get(
        &app,
        "/api/v1/reference/thermocouple?type=K&emf_mv=3.096&rj_t_c=25",
    )
    .await
    .json();
    let t = solved["t_c"].as_f64().expect("t_c");
    assert!((t - 100.0).abs() < 0.03, "{t}");
}

#[sqlx::test]
async fn prt_matches_the_iec_60751_table(pool: SqlitePool) {
    let app = app(pool);
    // IEC 60751:2008 Pt100: 138.5055 Ω at 100 °C (computed from A, B; the
    // published table prints 138.51 Ω) and 60.26 Ω at -100 °C.
    let body = get(&app, "/api/v1/reference/prt?r_ohm=138.5055")
        .await
        .json();
    assert!((body["t_c"].as_f64().expect("t") - 100.0).abs() < 1e-9);
    assert_eq!(body["coefficients"], "iec_60751");
    let slope = body["dr_dt_ohm_per_k"].as_f64().expect("slope");
    // dR/dt = R0 (A + 2 B t) = 100 (3.9083e-3 - 2 * 5.775e-7 * 100) = 0.37928 Ω/K.
    assert!((slope - 0.37928).abs() < 1e-12);
    let cold = get(&app, "/api/v1/reference/prt?t_c=-100").await.json();
    let r = cold["r_ohm"].as_f64().expect("r");
    assert!((r - 60.26).abs() <= 0.005, "{r}");
    // Pt1000: ten times the Pt100 value.
    let pt1000 = get(&app, "/api/v1/reference/prt?t_c=100&r0_ohm=1000")
        .await
        .json();
    assert!((pt1000["r_ohm"].as_f64().expect("r") - 1385.055).abs() < 1e-9);
}

#[sqlx::test]
async fn its90_fixed_point_and_an_sprt_conversion(pool: SqlitePool) {
    let app = app(pool);
    // ITS-90 Table 1 (Metrologia 27 (1990) 3-10): gallium melting point,
    // t90 = 29.7646 °C, W_r = 1.11813889.
    let body = get(&app, "/api/v1/reference/its90?w_r=1.11813889")
        .await
        .json();
    assert!((body["t_c"].as_f64().expect("t") - 29.7646).abs() < 1e-4);
    let fwd = get(&app, "/api/v1/reference/its90?t_c=29.7646")
        .await
        .json();
    assert!((fwd["w_r"].as_f64().expect("w") - 1.118_138_89).abs() < 1e-8);
    assert!((fwd["t90_k"].as_f64().expect("k") - 302.9146).abs() < 1e-9);
    // An SPRT with no deviation (a = 0) reads the reference function: at
    // R = 25.5 Ω x 1.11813889 it is at the gallium point.
    let r = 25.5 * 1.118_138_89;
    let sprt = get(
        &app,
        &format!("/api/v1/reference/its90?r_ohm={r}&r_tpw_ohm=25.5&sub_range=water-to-gallium&a=0"),
    )
    .await
    .json();
    assert!(
        (sprt["t_c"].as_f64().expect("t") - 29.7646).abs() < 1e-4,
        "{sprt}"
    );
    assert_eq!(sprt["sub_range"], "water-to-gallium");
}

#[sqlx::test]
async fn tolerance_classes_follow_the_standards(pool: SqlitePool) {
    let app = app(pool);
    // IEC 60584-1:2013 class 1, types K/N: ±1.5 °C or ±0.004·|t| above
    // 375 °C -> ±2.0 °C at 500 °C.
    let tc = get(
        &app,
        "/api/v1/reference/tolerance?sensor=thermocouple&type=K&class=1&t_c=500",
    )
    .await;
    assert_eq!(tc.status, StatusCode::OK);
    assert!((tc.json()["tolerance_c"].as_f64().expect("tol") - 2.0).abs() < 1e-12);
    // IEC 60751:2008 class A: ±(0.15 + 0.002·|t|) -> ±0.35 °C at 100 °C.
    let prt = get(
        &app,
        "/api/v1/reference/tolerance?sensor=prt&class=A&t_c=100",
    )
    .await
    .json();
    assert!((prt["tolerance_c"].as_f64().expect("tol") - 0.35).abs() < 1e-12);
    assert_eq!(prt["standard"], "IEC 60751:2008");
    let outside = get(
        &app,
        "/api/v1/reference/tolerance?sensor=thermocouple&type=K&class=1&t_c=1200",
    )
    .await;
    assert_eq!(outside.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(
        outside.json()["errors"][0]["message"],
        "class 1 is not defined for type K at 1200 °C; it covers -40 °C to 1000 °C"
    );
}

#[sqlx::test]
async fn bad_reference_queries_get_problem_details_naming_the_field(pool: SqlitePool) {
    let app = app(pool);
    let cases: &[(&str, u16, &str, &str)] = &[
        (
            "/api/v1/reference/thermocouple?type=K&t_c=1500",
            422,
            "t_c",
            "type K is defined from -270 °C to 1372 °C; got 1500 °C",
        ),
        (
            "/api/v1/reference/thermocouple?type=Q&t_c=100",
            422,
            "type",
            "unknown thermocouple type 'Q'; expected one of B, E, J, K, N, R, S, T",
        ),
        (
            "/api/v1/reference/thermocouple?type=K&t_c=NaN",
            422,
            "t_c",
            "must be a finite number",
        ),
        (
            "/api/v1/reference/thermocouple?type=K&emf_mv=1&rj_t_c=2000",
            422,
            "rj_t_c",
            "reference junction",
        ),
        ("/api/v1/reference/prt?r_ohm=-5", 422, "r_ohm", "resistance"),
        ("/api/v1/reference/prt?t_c=900", 422, "t_c", "850 °C"),
        ("/api/v1/reference/its90?t_c=2000", 422, "t_c", "1234.93 K"),
        (
            "/api/v1/reference/its90?r_ohm=30&r_tpw_ohm=25.5&sub_range=water-to-mars",
            422,
            "sub_range",
            "unknown sub-range",
        ),
    ];
    for (uri, status, field, needle) in cases {
        let answer = get(&app, uri).await;
        assert_eq!(answer.status.as_u16(), *status, "{uri}: {}", answer.text());
        assert_eq!(answer.content_type(), "application/problem+json");
        let body = answer.json();
        assert_eq!(body["errors"][0]["field"], *field, "{uri}: {body}");
        let message = body["errors"][0]["message"].as_str().expect("message");
        assert!(message.contains(needle), "{uri}: {message}");
    }

    for (uri, needle) in [
        ("/api/v1/reference/thermocouple?type=K", "give t_c"),
        (
            "/api/v1/reference/thermocouple?type=K&t_c=1&emf_mv=1",
            "not both",
        ),
        (
            "/api/v1/reference/thermocouple?type=K&tc=100",
            "unknown field `tc`",
        ),
        ("/api/v1/reference/thermocouple?type=K&t_c=hot", "t_c"),
        (
            "/api/v1/reference/thermocouple?t_c=100",
            "missing field `type`",
        ),
    ] {
        let answer = get(&app, uri).await;
        assert_eq!(answer.status, StatusCode::BAD_REQUEST, "{uri}");
        let body = answer.json();
        assert_eq!(body["type"], "/problems/bad-request");
        let detail = body["detail"].as_str().expect("detail");
        assert!(detail.contains(needle), "{uri}: {detail}");
    }
}

#[sqlx::test]
async fn the_openapi_document_lists_every_reference_endpoint(pool: SqlitePool) {
    let app = app(pool);
    let answer = get(&app, "/api/v1/openapi.json").await;
    assert_eq!(answer.status, StatusCode::OK);
    let doc = answer.json();
    assert_eq!(doc["openapi"], "3.1.0");
    for path in [
        "/healthz",
        "/api/v1/openapi.json",
        "/api/v1/reference/thermocouple",
        "/api/v1/reference/prt",
        "/api/v1/reference/its90",
        "/api/v1/reference/tolerance",
    ] {
        assert!(doc["paths"][path]["get"].is_object(), "{path} undocumented");
        // Each documented path answers something other than 404.
        let probe = get(&app, path).await;
        assert_ne!(probe.status, StatusCode::NOT_FOUND, "{path}");
    }
    for path in ["/api/v1/compute/fit", "/api/v1/compute/uncertainty"] {
        assert!(
            doc["paths"][path]["post"].is_object(),
            "{path} undocumented"
        );
        let probe = crate::helpers::post_json(&app, path, &serde_json::json!({})).await;
        assert_ne!(probe.status, StatusCode::NOT_FOUND, "{path}");
    }
    for (path, method) in [
        ("/api/v1/customers", "post"),
        ("/api/v1/instruments/{serial}", "get"),
        ("/api/v1/equipment/{asset_id}/certificates", "post"),
        (
            "/api/v1/runs/{id}/set-points/{set_point_id}/readings",
            "post",
        ),
        ("/api/v1/runs/{id}/submit", "post"),
        ("/api/v1/impact", "get"),
        ("/api/v1/runs/{id}/approve", "post"),
        ("/api/v1/certificates/{number}/pdf", "get"),
        ("/api/v1/instruments/{serial}/deviation", "get"),
        ("/api/v1/instruments/{serial}/deviation/evaluate", "get"),
    ] {
        assert!(
            doc["paths"][path][method].is_object(),
            "{method} {path} undocumented"
        );
        assert_eq!(
            doc["paths"][path][method]["security"][0]["bearer"],
            serde_json::json!([])
        );
    }
    // Every $ref resolves to a schema in components.
    let text = doc.to_string();
    for piece in text.split("\"$ref\":\"#/components/schemas/").skip(1) {
        let name = piece.split('"').next().expect("name");
        assert!(doc["components"]["schemas"][name].is_object(), "{name}");
    }
}

#[sqlx::test]
async fn the_converter_page_shows_results_and_errors_next_to_fields(pool: SqlitePool) {
    let app = app(pool);
    let page = get(
        &app,
        "/convert?form=thermocouple&type=K&t_c=1000&emf_mv=&rj_t_c=",
    )
    .await;
    assert_eq!(page.status, StatusCode::OK);
    let html = page.text();
    // NIST Monograph 175: type K at 1000 °C -> 41.276 mV.
    assert!(html.contains("41.275606 mV"), "{html}");

    // A decimal comma is accepted.
    let comma = get(&app, "/convert?form=prt&t_c=&r_ohm=138%2C5055")
        .await
        .text();
    assert!(comma.contains("100.0000 °C"));

    let bad = get(
        &app,
        "/convert?form=thermocouple&type=K&t_c=%3Cb%3Ehot&emf_mv=",
    )
    .await;
    assert_eq!(bad.status, StatusCode::OK);
    let html = bad.text();
    assert!(html.contains("is not a number"), "{html}");
    assert!(html.contains("&#60;b&#62;hot"), "input is kept and escaped");
    assert!(!html.contains("<b>hot"));

    let out_of_range = get(&app, "/convert?form=thermocouple&type=K&t_c=1500")
        .await
        .text();
    assert!(out_of_range.contains("type K is defined from -270 °C to 1372 °C; got 1500 °C"));
}

#[test]
fn the_convert_command_prints_text_and_json() {
    let bin = env!("CARGO_BIN_EXE_juncture");
    let out = std::process::Command::new(bin)
        .args([
            "convert",
            "thermocouple",
            "--type",
            "K",
            "--t-c",
            "1000",
            "--json",
        ])
        .output()
        .expect("runs");
    assert!(out.status.success());
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    // NIST Monograph 175: type K at 1000 °C -> 41.276 mV.
    assert!((json["emf_mv"].as_f64().expect("emf") - 41.276).abs() <= TABLE_HALF_DIGIT_MV);

    let out = std::process::Command::new(bin)
        .args(["convert", "prt", "--t-c", "-100"])
        .output()
        .expect("runs");
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    // IEC 60751:2008 Pt100 at -100 °C: 60.26 Ω (computed 60.25584 Ω).
    assert!(text.contains("60.255840 Ω"), "{text}");

    let out = std::process::Command::new(bin)
        .args(["convert", "thermocouple", "--type", "K", "--t-c", "1500"])
        .output()
        .expect("runs");
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("--t-c: type K is defined from -270 °C to 1372 °C; got 1500 °C"),
        "{err}"
    );
}
