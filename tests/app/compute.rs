//! `POST /api/v1/compute/fit` and `POST /api/v1/compute/uncertainty`,
//! checked against published worked examples and tables.

use axum::body::Body;
use axum::http::{Request, StatusCode};
use juncture::config::HttpConfig;
use juncture::web::{AppState, router};
use serde_json::{Value, json};
use sqlx::SqlitePool;

use crate::helpers::{app, post_json, send};

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// Half a unit of the last published digit.
fn half_digit(published_decimals: i32) -> f64 {
    0.5 * 10f64.powi(-published_decimals)
}

// JCGM 100:2008 (GUM) Annex H.3: 11 thermometer readings t_k (°C) and
// corrections b_k (°C); the fit is b = y1 + y2 (t - 20 °C).
const H3_T: [f64; 11] = [
    21.521, 22.012, 22.512, 23.003, 23.507, 23.999, 24.513, 25.002, 25.503, 26.010, 26.511,
];
const H3_B: [f64; 11] = [
    -0.171, -0.169, -0.166, -0.159, -0.164, -0.165, -0.156, -0.157, -0.159, -0.161, -0.160,
];

#[sqlx::test]
async fn fit_reproduces_the_gum_h3_thermometer_calibration(pool: SqlitePool) {
    let app = app(pool);
    let x: Vec<f64> = H3_T.iter().map(|t| t - 20.0).collect();
    let answer = post_json(
        &app,
        "/api/v1/compute/fit",
        &json!({"x": x, "y": H3_B, "degree": 1, "intercept": true, "weights": null,
                "evaluate_at": [10.0]}),
    )
    .await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.text());
    let fit = answer.json();
    // GUM H.3 published: y1 = -0.1712 °C, s(y1) = 0.0029 °C, y2 = 0.00218,
    // s(y2) = 0.00067, r = -0.930, s = 0.0035 °C, b(30 °C) = -0.1494 °C with
    // u = 0.0041 °C.
    assert!((num(&fit["coefficients"][0]) - -0.1712).abs() <= half_digit(4));
    assert!((num(&fit["standard_uncertainties"][0]) - 0.0029).abs() <= half_digit(4));
    assert!((num(&fit["coefficients"][1]) - 0.00218).abs() <= half_digit(5));
    assert!((num(&fit["standard_uncertainties"][1]) - 0.00067).abs() <= half_digit(5));
    assert!((num(&fit["correlation"][0][1]) - -0.930).abs() <= half_digit(3));
    assert!((num(&fit["residual_std_dev"]) - 0.0035).abs() <= half_digit(4));
    assert_eq!(fit["dof"], 9);
    assert_eq!(fit["covariance_scaled"], true);
    let at30 = &fit["evaluations"][0];
    assert!((num(&at30["y"]) - -0.1494).abs() <= half_digit(4));
    assert!((num(&at30["standard_uncertainty"]) - 0.0041).abs() <= half_digit(4));
    // 30 °C lies outside the readings (21.5 °C to 26.5 °C): the GUM's own
    // example extrapolates, and the answer says so.
    assert_eq!(at30["extrapolated"], true);
    // Covariance is symmetric and its diagonal squares the uncertainties.
    let cov = &fit["covariance"];
    assert!((num(&cov[0][1]) - num(&cov[1][0])).abs() < 1e-18);
    assert!((num(&cov[0][0]).sqrt() - num(&fit["standard_uncertainties"][0])).abs() < 1e-15);
}

#[sqlx::test]
async fn fit_recovers_an_exact_quintic_and_a_no_intercept_line(pool: SqlitePool) {
    let app = app(pool);
    // Exact data (common practice check): y = 1 + x + x² + x³ + x⁴ + x⁵,
    // x = 0..20, must return every coefficient 1.
    let x: Vec<f64> = (0..=20).map(f64::from).collect();
    let y: Vec<f64> = x.iter().map(|v| (0..=5).map(|k| v.powi(k)).sum()).collect();
    let fit = post_json(
        &app,
        "/api/v1/compute/fit",
        &json!({"x": x, "y": y, "degree": 5}),
    )
    .await
    .json();
    for c in fit["coefficients"].as_array().expect("array") {
        assert!((num(c) - 1.0).abs() < 1e-9, "{c}");
    }
    // Without intercept coefficients[0] multiplies x (DESIGN.md contract).
    let fit = post_json(
        &app,
        "/api/v1/compute/fit",
        &json!({"x": [1.0, 2.0, 3.0, 4.0], "y": [2.0, 4.0, 6.0, 8.0], "degree": 1, "intercept": false}),
    )
    .await
    .json();
    assert_eq!(fit["powers"], json!([1]));
    assert!((num(&fit["coefficients"][0]) - 2.0).abs() < 1e-14);
}

#[sqlx::test]
async fn fit_with_known_uncertainties_reports_chi_square_and_flags(pool: SqlitePool) {
    let app = app(pool);
    // A straight line through (0,0), (1,1), (2,2), (3,3.5) with u = 0.1:
    // weighted closed-form slope/intercept (common practice formulas).
    let x = [0.0, 1.0, 2.0, 3.0];
    let y = [0.0, 1.0, 2.0, 3.5];
    let fit = post_json(
        &app,
        "/api/v1/compute/fit",
        &json!({"x": x, "y": y, "degree": 1, "uncertainties": [0.1, 0.1, 0.1, 0.1],
                "expanded_uncertainties": [0.2, 0.2, 0.2, 0.2], "evaluate_at": [5.0]}),
    )
    .await
    .json();
    // Equal weights, by hand: x̄ = 1.5, ȳ = 1.625, Sxx = 5, Sxy = 5.75
    // -> slope 1.15, intercept 1.625 - 1.15 * 1.5 = -0.1.
    assert!((num(&fit["coefficients"][1]) - 1.15).abs() < 1e-12);
    assert!((num(&fit["coefficients"][0]) - -0.1).abs() < 1e-12);
    // Unscaled covariance: var(slope) = u²/Sxx = 0.01/5.
    assert!((num(&fit["covariance"][1][1]) - 0.002).abs() < 1e-15);
    assert_eq!(fit["covariance_scaled"], false);
    // Residuals 0.1, -0.05, -0.2, 0.15 -> chi² = (0.01+0.0025+0.04+0.0225)/0.01 = 7.5.
    assert!((num(&fit["chi_square"]["chi_square"]) - 7.5).abs() < 1e-9);
    assert_eq!(fit["chi_square"]["dof"], 2);
    // Point 2 deviates by 0.2: not more than its U = 0.2; none is flagged;
    // evaluating at 5 is an extrapolation and says so.
    assert_eq!(fit["flagged_residuals"], json!([]));
    assert_eq!(fit["evaluations"][0]["extrapolated"], true);
    let warnings = fit["warnings"].to_string();
    assert!(warnings.contains("extrapolation"), "{warnings}");
    assert!(warnings.contains("chi-square"), "{warnings}");
}

#[sqlx::test]
async fn bad_fit_requests_name_the_field(pool: SqlitePool) {
    let app = app(pool);
    let cases = [
        (
            json!({"x": [1.0, 2.0, 3.0], "y": [1.0, 2.0, 3.0], "degree": 4}),
            "x",
            "degree 4 needs at least 5 points, got 3",
        ),
        (
            json!({"x": [1.0, 2.0, 3.0], "y": [1.0, 2.0], "degree": 1}),
            "y",
            "y has 2 entries, expected 3",
        ),
        (
            json!({"x": [1.0, 2.0, 3.0], "y": [1.0, 2.0, 3.0], "degree": 11}),
            "degree",
            "allowed 0 to 10",
        ),
        (
            json!({"x": [1.0, 2.0, 3.0], "y": [1.0, 2.0, 3.0], "degree": 1, "weights": [1.0, -1.0, 1.0]}),
            "weights[1]",
            "weights must be finite and > 0",
        ),
        (
            json!({"x": [1.0, 1.0, 1.0], "y": [1.0, 2.0, 3.0], "degree": 1}),
            "x",
            "rank",
        ),
        // Found by fuzzing: a value beyond the floating-point range was answered 200 with
        // null in place of the number.
        (
            json!({"x": [0.0, 1.0, 2.0, 3.0, 4.0, 5.0], "y": [0.0, 1.0, 4.0, 9.0, 16.0, 26.0],
                "degree": 4, "evaluate_at": [1.0, 1e300]}),
            "evaluate_at[1]",
            "beyond the floating-point range",
        ),
    ];
    for (body, field, needle) in cases {
        let answer = post_json(&app, "/api/v1/compute/fit", &body).await;
        assert_eq!(
            answer.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{body}: {}",
            answer.text()
        );
        let problem = answer.json();
        assert_eq!(problem["errors"][0]["field"], field, "{problem}");
        let message = problem["errors"][0]["message"].as_str().expect("message");
        assert!(message.contains(needle), "{message}");
    }
    // Malformed JSON is 400 with the parser's words.
    let answer = send(
        &app,
        Request::post("/api/v1/compute/fit")
            .header("content-type", "application/json")
            .body(Body::from("{\"x\": [1, 2,"))
            .expect("request"),
    )
    .await;
    assert_eq!(answer.status, StatusCode::BAD_REQUEST);
    assert_eq!(answer.json()["type"], "/problems/bad-request");
    let answer = post_json(
        &app,
        "/api/v1/compute/fit",
        &json!({"x": [1.0], "y": [1.0], "degree": 0, "colour": "red"}),
    )
    .await;
    // An unknown field is well-formed JSON of the wrong shape: 422 naming it.
    assert_eq!(answer.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(answer.json()["errors"][0]["field"], "colour");
    assert!(
        answer.json()["detail"]
            .as_str()
            .expect("detail")
            .contains("unknown field `colour`")
    );
    let answer = send(
        &app,
        Request::post("/api/v1/compute/fit")
            .header("content-type", "text/plain")
            .body(Body::from("x=1"))
            .expect("request"),
    )
    .await;
    assert_eq!(answer.status, StatusCode::UNSUPPORTED_MEDIA_TYPE);
    assert!(
        answer.json()["detail"]
            .as_str()
            .expect("detail")
            .contains("application/json")
    );
}

#[sqlx::test]
async fn an_oversized_body_is_refused_with_the_limit_stated(pool: SqlitePool) {
    let app = router(AppState::new(
        pool,
        HttpConfig {
            body_limit_bytes: 1024,
            ..HttpConfig::default()
        },
    ));
    let big: Vec<f64> = (0..2000).map(f64::from).collect();
    let answer = post_json(
        &app,
        "/api/v1/compute/fit",
        &json!({"x": big, "y": big, "degree": 1}),
    )
    .await;
    assert_eq!(
        answer.status,
        StatusCode::PAYLOAD_TOO_LARGE,
        "{}",
        answer.text()
    );
    let problem = answer.json();
    assert_eq!(problem["type"], "/problems/payload-too-large");
    assert_eq!(
        problem["detail"],
        "the request body is larger than the limit of 1024 bytes"
    );
}

#[sqlx::test]
async fn welch_satterthwaite_and_the_coverage_factor_follow_tn_1297(pool: SqlitePool) {
    let app = app(pool);
    // Type A: s(x̄) = 0.1 from n = 5 (ν = 4); Type B: U = 0.2, k = 2 (ν = ∞).
    // u_c = √0.02; ν_eff = u_c⁴ / (0.1⁴ / 4) = 16 (JCGM 100:2008 G.4.1);
    // k for 95.45 % at ν = 16 is 2.17 (NIST TN 1297 Table B.1).
    let body = json!({"components": [
        {"name": "repeatability", "distribution": "type_a", "estimate": 0.0, "standard_uncertainty": 0.1, "n": 5},
        {"name": "reference", "distribution": "normal", "estimate": 0.0, "expanded": 0.2, "k": 2}
    ]});
    let answer = post_json(&app, "/api/v1/compute/uncertainty", &body).await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.text());
    let u = answer.json();
    assert!((num(&u["combined_standard_uncertainty"]) - 0.02f64.sqrt()).abs() < 1e-15);
    assert!((num(&u["effective_dof"]) - 16.0).abs() < 1e-9);
    assert!((num(&u["coverage_factor"]) - 2.17).abs() <= half_digit(2));
    let shares: f64 = u["components"]
        .as_array()
        .expect("array")
        .iter()
        .map(|c| num(&c["variance_share"]))
        .sum();
    assert!((shares - 1.0).abs() < 1e-12);
    assert!((num(&u["components"][0]["variance_share"]) - 0.5).abs() < 1e-12);
    assert!(u["monte_carlo"].is_null());
}

#[sqlx::test]
async fn reported_values_follow_ilac_p14_rounding_and_the_cmc_floor(pool: SqlitePool) {
    let app = app(pool);
    // One normal component, U = 0.0123 at k = 2 and ν = ∞: k = 2 at the
    // default 95.45 % (erf(2/√2)), U = 0.0123 -> reported "0.013" (two
    // significant digits, rounded up: ILAC-P14); estimate to the same place.
    let body = json!({"components": [
        {"name": "reference", "distribution": "normal", "estimate": 1.23456, "expanded": 0.0123, "k": 2}
    ]});
    let u = post_json(&app, "/api/v1/compute/uncertainty", &body)
        .await
        .json();
    assert!((num(&u["coverage_factor"]) - 2.0).abs() < 1e-9);
    assert!(u["effective_dof"].is_null());
    assert_eq!(u["reported"]["expanded_uncertainty"], "0.013");
    assert_eq!(u["reported"]["estimate"], "1.235");
    assert_eq!(u["reported"]["cmc_floor_applied"], false);
    // With a CMC of 0.02 the reported U is the CMC.
    let mut with_cmc = body.clone();
    with_cmc["cmc"] = json!(0.02);
    let u = post_json(&app, "/api/v1/compute/uncertainty", &with_cmc)
        .await
        .json();
    assert_eq!(u["reported"]["expanded_uncertainty"], "0.020");
    assert_eq!(u["reported"]["cmc_floor_applied"], true);
}

#[sqlx::test]
async fn monte_carlo_reproduces_the_jcgm_101_additive_examples(pool: SqlitePool) {
    let app = app(pool);
    // JCGM 101:2008 9.2: Y = X1 + X2 + X3 + X4. Normal inputs u = 1: the
    // exact shortest 95 % interval is ±3.9199 and the GUM agrees; four
    // rectangular inputs of half-width √3 (u = 1): exact ±3.8794
    // (tests/data/jcgm101_additive.json, 40-digit computation).
    let normal = json!({"coverage_probability": 0.95, "monte_carlo": {"trials": 1000000, "seed": 7},
        "components": (0..4).map(|i| json!({"name": format!("X{i}"), "distribution": "normal", "standard_uncertainty": 1.0})).collect::<Vec<_>>()});
    let u = post_json(&app, "/api/v1/compute/uncertainty", &normal)
        .await
        .json();
    let mc = &u["monte_carlo"];
    assert!((num(&u["expanded_uncertainty"]) - 3.919_927_969).abs() < 1e-6);
    assert!(
        (num(&mc["standard_uncertainty"]) - 2.0).abs() < 0.01,
        "{mc}"
    );
    // Symmetric interval ends scatter with s ≈ 0.006 at 1e6 trials (measured
    // over 16 seeds); 0.025 is four of those.
    assert!(
        (num(&mc["symmetric_interval"][1]) - 3.9199).abs() < 0.025,
        "{mc}"
    );
    assert!(
        (num(&mc["symmetric_interval"][0]) + 3.9199).abs() < 0.025,
        "{mc}"
    );
    assert_eq!(mc["gum_validated"], true);
    assert_eq!(mc["trials"], 1_000_000);

    let rect = json!({"coverage_probability": 0.95, "monte_carlo": {"trials": 1000000, "seed": 7},
        "components": (0..4).map(|i| json!({"name": format!("X{i}"), "distribution": "rectangular", "half_width": 3f64.sqrt()})).collect::<Vec<_>>()});
    let u = post_json(&app, "/api/v1/compute/uncertainty", &rect)
        .await
        .json();
    let mc = &u["monte_carlo"];
    assert!(
        (num(&mc["symmetric_interval"][1]) - 3.8794).abs() < 0.025,
        "{mc}"
    );
    // Shortest-interval ends converge slowly (s ≈ 0.03 at 1e6): 0.13 bound.
    assert!(
        (num(&mc["shortest_interval"][1]) - 3.8794).abs() < 0.13,
        "{mc}"
    );
    // The GUM says ±3.92: the difference (about 0.04) is inside the
    // two-digit tolerance δ = 0.05 for u = 2.0 (JCGM 101 clause 8).
    assert!((num(&mc["numerical_tolerance"]) - 0.05).abs() < 1e-12);
    let d_high = num(&mc["d_high"]);
    assert!((d_high - 0.0405).abs() < 0.025, "{mc}");
}

#[sqlx::test]
async fn decisions_follow_ilac_g8(pool: SqlitePool) {
    let app = app(pool);
    // Deviation 0.9 °C with U = 0.2 °C against a ±1 °C tolerance:
    // ILAC-G8:09/2019 4.2.1 simple acceptance -> pass; 4.2.3 non-binary with
    // w = U -> 0.9 lies in [TL - w, TL] = [0.8, 1.0] -> conditional pass.
    let budget = |rule: &str| {
        json!({"components": [
        {"name": "all", "distribution": "normal", "estimate": 0.9, "expanded": 0.2, "k": 2}],
        "decision": {"lower": -1.0, "upper": 1.0, "rule": rule, "guard_band_factor": 1.0}})
    };
    let simple = post_json(&app, "/api/v1/compute/uncertainty", &budget("simple"))
        .await
        .json();
    assert_eq!(simple["decision"]["outcome"], "pass");
    let guarded = post_json(
        &app,
        "/api/v1/compute/uncertainty",
        &budget("guarded_non_binary"),
    )
    .await
    .json();
    assert_eq!(guarded["decision"]["outcome"], "conditional pass");
    assert!((num(&guarded["decision"]["guard_band"]) - 0.2).abs() < 1e-12);
    let binary = post_json(&app, "/api/v1/compute/uncertainty", &budget("guarded"))
        .await
        .json();
    assert_eq!(binary["decision"]["outcome"], "fail");
}

#[sqlx::test]
async fn bad_budgets_name_the_component_field(pool: SqlitePool) {
    let app = app(pool);
    let cases = [
        (json!({"components": []}), "components", "no components"),
        (
            json!({"components": [{"name": "a", "distribution": "gaussian", "standard_uncertainty": 1.0}]}),
            "components[0].distribution",
            "unknown distribution",
        ),
        (
            json!({"components": [{"name": "a", "distribution": "normal", "standard_uncertainty": 1.0},
                               {"name": "b", "distribution": "rectangular"}]}),
            "components[1].half_width",
            "needs half_width",
        ),
        (
            json!({"components": [{"name": "a", "distribution": "type_a", "standard_uncertainty": 1.0}]}),
            "components[0].n",
            "number of readings",
        ),
        (
            json!({"components": [{"name": "a", "distribution": "normal", "standard_uncertainty": 1.0}],
                "monte_carlo": {"trials": 10}}),
            "monte_carlo.trials",
            "allowed 10000",
        ),
        (
            json!({"components": [{"name": "a", "distribution": "normal", "standard_uncertainty": 1.0}],
                "decision": {"rule": "lenient", "upper": 1.0}}),
            "decision.rule",
            "unknown rule",
        ),
        // Found by fuzzing: a guard band of 1e308 × U made the acceptance limits infinite,
        // answered 200 with null limits.
        (
            json!({"components": [{"name": "a", "distribution": "normal", "standard_uncertainty": 1.0}],
                "decision": {"rule": "guarded", "lower": -1.0, "upper": 1.0, "guard_band_factor": 1e308}}),
            "decision.guard_band_factor",
            "overflow the floating-point range",
        ),
    ];
    for (body, field, needle) in cases {
        let answer = post_json(&app, "/api/v1/compute/uncertainty", &body).await;
        assert_eq!(
            answer.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{body}: {}",
            answer.text()
        );
        let problem = answer.json();
        assert_eq!(problem["errors"][0]["field"], field, "{problem}");
        let message = problem["errors"][0]["message"].as_str().expect("message");
        assert!(message.contains(needle), "{message}");
    }
}
