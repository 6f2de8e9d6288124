//! Characterisation runs of comparison media: half-widths derived from the
//! raw readings, taken by every budget that uses the medium (interpolated
//! between characterised temperatures, refused outside them), and the
//! characterisation's age counted like a due date.

use axum::http::StatusCode;
use serde_json::{Value, json};
use sqlx::SqlitePool;

use crate::records::{call, lab};
use crate::results::{num, ok, record_run, results};

fn bath_readings() -> Value {
    json!({
        "characterised_on": "2026-06-01",
        "temperatures": [
            {"temperature_c": 0.0,
             "axial": [{"height_mm": 0, "t_c": 0.000}, {"height_mm": 20, "t_c": 0.004}, {"height_mm": 40, "t_c": 0.010}],
             "radial_bores_c": [0.001, 0.005, 0.002],
             "stability": [{"time_s": 0, "t_c": 0.000}, {"time_s": 600, "t_c": 0.006}, {"time_s": 1200, "t_c": 0.002}, {"time_s": 1800, "t_c": 0.004}]},
            {"temperature_c": 100.0,
             "axial": [{"height_mm": 0, "t_c": 100.000}, {"height_mm": 20, "t_c": 100.012}, {"height_mm": 40, "t_c": 100.030}],
             "radial_bores_c": [100.001, 100.009, 100.003],
             "stability": [{"time_s": 0, "t_c": 100.000}, {"time_s": 900, "t_c": 100.010}, {"time_s": 1800, "t_c": 100.004}],
             "loading_difference_c": -0.006}
        ]
    })
}

#[sqlx::test]
async fn a_characterisation_run_feeds_the_budgets_that_use_the_medium(pool: SqlitePool) {
    let lab = lab(pool).await;
    crate::records::customer_and_instrument(&lab).await;
    let made = call(
        &lab.app,
        "POST",
        "/api/v1/equipment/BATH-01/characterisation-runs",
        Some(&lab.admin),
        Some(bath_readings()),
    )
    .await;
    let made = ok(&made, StatusCode::CREATED);
    let t = made["temperatures"].as_array().expect("temperatures");
    // Hand calculation (EURAMET cg-13 approach, as the module documents it):
    // at 0 °C axial 0.010 - 0.000 = 0.010, bore spread 0.005 - 0.001 = 0.004,
    // uniformity √(0.010² + 0.004²) = 0.0107703; stability (0.006 - 0.000)/2 = 0.003.
    assert!(
        (num(&t[0]["uniformity_half_width_c"]) - 0.010_770_33).abs() < 1e-7,
        "{made}"
    );
    assert!((num(&t[0]["stability_half_width_c"]) - 0.003).abs() < 1e-12);
    // At 100 °C: √(0.030² + 0.008²) = 0.0310483; (0.010 - 0.000)/2 = 0.005; loading |−0.006|.
    assert!((num(&t[1]["uniformity_half_width_c"]) - 0.031_048_35).abs() < 1e-7);
    assert!((num(&t[1]["stability_half_width_c"]) - 0.005).abs() < 1e-12);
    assert!((num(&t[1]["loading_half_width_c"]) - 0.006).abs() < 1e-12);
    assert!(
        t[0]["derivation"]
            .as_str()
            .expect("text")
            .contains("uniformity")
    );

    // A Pt100 run at 50 °C in the bath takes the half-widths interpolated
    // halfway: uniformity (0.0107703 + 0.0310483)/2 = 0.0209093, u = a/√3.
    let reading = json!({"reference_signal": 119.4230, "uut_signal": 119.4075});
    let id = record_run(
        &lab,
        json!({"instrument_serial": "PT-2291", "reference": "REF-PRT-01", "medium": "BATH-01",
        "performed_on": "2026-11-20", "procedure_ref": "TP-04 rev 3", "decision_rule": "none"}),
        &[(50.0, vec![reading.clone(), reading.clone(), reading])],
    )
    .await;
    let res = results(&lab, id).await;
    let rows = res["set_points"][0]["budget"]["components"]
        .as_array()
        .expect("rows");
    let row = |name: &str| {
        rows.iter()
            .find(|r| r["name"].as_str().is_some_and(|n| n.contains(name)))
            .unwrap_or_else(|| panic!("{name}: {rows:?}"))
    };
    let u = num(&row("medium uniformity (BATH-01)")["standard_uncertainty"]);
    assert!((u - 0.020_909_34 / 3f64.sqrt()).abs() < 1e-7, "{u}");
    let u = num(&row("medium stability (BATH-01)")["standard_uncertainty"]);
    assert!((u - 0.004 / 3f64.sqrt()).abs() < 1e-9, "{u}");
    // Loading is known at 100 °C only, so it is not interpolated to 50 °C.
    assert!(
        !rows
            .iter()
            .any(|r| r["name"].as_str().is_some_and(|n| n.contains("loading")))
    );

    // A set point beyond the characterised range cannot be evaluated.
    let reading = json!({"reference_signal": 157.33, "uut_signal": 157.34});
    let id = record_run(
        &lab,
        json!({"instrument_serial": "PT-2291", "reference": "REF-PRT-01", "medium": "BATH-01",
        "performed_on": "2026-11-21", "procedure_ref": "TP-04 rev 3", "decision_rule": "none"}),
        &[(150.0, vec![reading.clone(), reading.clone(), reading])],
    )
    .await;
    let refused = call(
        &lab.app,
        "GET",
        &format!("/api/v1/runs/{id}/results"),
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(refused.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        refused
            .text()
            .contains("BATH-01 is characterised from 0 °C to 100 °C; 150 °C lies outside"),
        "{}",
        refused.text()
    );

    // The run is listed with its readings kept as recorded.
    let listed = ok(
        &call(
            &lab.app,
            "GET",
            "/api/v1/equipment/BATH-01/characterisation-runs",
            Some(&lab.reader),
            None,
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(listed.as_array().expect("runs").len(), 1);
    assert_eq!(listed[0]["characterised_on"], "2026-06-01");
}

#[sqlx::test]
async fn bad_characterisation_readings_are_refused_and_nothing_is_stored(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    let mut one_depth = bath_readings();
    one_depth["temperatures"][0]["axial"] = json!([{"height_mm": 0, "t_c": 0.0}]);
    let mut backwards = bath_readings();
    backwards["temperatures"][1]["stability"] =
        json!([{"time_s": 600, "t_c": 100.0}, {"time_s": 0, "t_c": 100.01}]);
    let mut twice = bath_readings();
    twice["temperatures"][1]["temperature_c"] = json!(0.0);
    for (body, says) in [
        (one_depth, "axial"),
        (backwards, "stability"),
        (twice, "0 °C"),
    ] {
        let answer = call(
            &lab.app,
            "POST",
            "/api/v1/equipment/BATH-01/characterisation-runs",
            Some(&lab.admin),
            Some(body),
        )
        .await;
        assert_eq!(
            answer.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{}",
            answer.text()
        );
        assert!(answer.text().contains(says), "{says}: {}", answer.text());
    }
    let not_a_medium = call(
        &lab.app,
        "POST",
        "/api/v1/equipment/REF-PRT-01/characterisation-runs",
        Some(&lab.admin),
        Some(bath_readings()),
    )
    .await;
    assert_eq!(not_a_medium.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        not_a_medium
            .text()
            .contains("only baths, furnaces and dry blocks")
    );
    let technician = call(
        &lab.app,
        "POST",
        "/api/v1/equipment/BATH-01/characterisation-runs",
        Some(&lab.tech),
        Some(bath_readings()),
    )
    .await;
    assert_eq!(technician.status, StatusCode::FORBIDDEN);
    let stored: i64 = sqlx::query_scalar("SELECT COUNT(*) FROM medium_characterisation_run")
        .fetch_one(&pool)
        .await
        .expect("count");
    assert_eq!(stored, 0);
}

#[sqlx::test]
async fn an_old_characterisation_makes_the_medium_overdue(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    let mut old = bath_readings();
    old["characterised_on"] = json!("2024-01-10");
    ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/equipment/FURN-9/characterisation-runs",
            Some(&lab.admin),
            Some(old.clone()),
        )
        .await,
        StatusCode::NOT_FOUND,
    );
    ok(&call(&lab.app, "POST", "/api/v1/equipment", Some(&lab.admin), Some(json!({"asset_id": "DRY-9", "kind": "dry_block", "description": "Peltier dry block (invented)"}))).await, StatusCode::CREATED);
    ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/equipment/DRY-9/characterisation-runs",
            Some(&lab.admin),
            Some(old),
        )
        .await,
        StatusCode::CREATED,
    );
    // The lab's interval is 365 days by default: a run in November 2026 may not use it.
    let refused = call(
        &lab.app,
        "POST",
        "/api/v1/runs",
        Some(&lab.tech),
        Some(
            json!({"instrument_serial": "PT-2291", "reference": "REF-PRT-01", "medium": "DRY-9",
        "performed_on": "2026-11-20", "procedure_ref": "TP-04 rev 3", "decision_rule": "none"}),
        ),
    )
    .await;
    assert_eq!(
        refused.status,
        StatusCode::UNPROCESSABLE_ENTITY,
        "{}",
        refused.text()
    );
    assert!(
        refused
            .text()
            .contains("DRY-9 was last characterised on 2024-01-10"),
        "{}",
        refused.text()
    );
}
