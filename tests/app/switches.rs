//! Temperature-switch tests through the API: settings and ramps recorded,
//! switch and reset points computed with their budgets, bad ramps refused
//! with the temperatures involved, and the certificate carrying the switch
//! results like any other run.

use axum::http::StatusCode;
use serde_json::{Value, json};
use sqlx::SqlitePool;

use crate::records::{Lab, call, lab};
use crate::results::{num, ok};

/// A ramp from `from` to `to` in 0.2 °C steps, the contact in `before`
/// until the reading passes `change_after` (rising) or falls below it.
fn ramp(
    direction: &str,
    from: f64,
    to: f64,
    change_between: (f64, f64),
    before: &str,
    after: &str,
) -> Vec<Value> {
    let steps = ((to - from).abs() / 0.2).round() as i32;
    let sign = if to > from { 1.0 } else { -1.0 };
    (0..=steps)
        .map(|i| {
            let t = from + sign * 0.2 * f64::from(i);
            let t = (t * 1000.0).round() / 1000.0;
            let changed = if direction == "rising" {
                t >= change_between.1 - 1e-9
            } else {
                t <= change_between.1 + 1e-9
            };
            json!({"t_ref_c": t, "state": if changed { after } else { before }})
        })
        .collect()
}

async fn switch_run(lab: &Lab) -> (i64, i64) {
    let customer = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/customers",
            Some(&lab.tech),
            Some(json!({"name": "Hollin Dairy Co-operative (invented)"})),
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
            Some(json!({"serial": "HD-TS-0085", "kind": "switch",
        "description": "bimetal thermostat, 85 °C, opens on rise", "customer_id": customer["id"]})),
        )
        .await,
        StatusCode::CREATED,
    );
    let run = ok(&call(&lab.app, "POST", "/api/v1/runs", Some(&lab.tech), Some(json!({"instrument_serial": "HD-TS-0085", "reference": "REF-PRT-01",
        "medium": "BATH-01", "performed_on": "2026-11-20", "procedure_ref": "TP-21 rev 1 (switches)", "tolerance_limit_c": 1.0, "decision_rule": "simple"}))).await, StatusCode::CREATED);
    let id = run["id"].as_i64().expect("id");
    let set = ok(&call(&lab.app, "PUT", &format!("/api/v1/runs/{id}/switch"), Some(&lab.tech), Some(json!({"version": 1, "nominal_t_c": 85.0,
        "actuation_direction": "rising", "contact_action": "opens", "ramp_rate_c_per_min": 0.5, "time_constant_s": 12.0}))).await, StatusCode::OK);
    assert_eq!(set["nominal_t_c"], 85.0);
    (id, 2)
}

async fn add_ramp(
    lab: &Lab,
    id: i64,
    version: i64,
    direction: &str,
    readings: Vec<Value>,
) -> crate::helpers::Answer {
    call(
        &lab.app,
        "POST",
        &format!("/api/v1/runs/{id}/ramps"),
        Some(&lab.tech),
        Some(json!({"version": version, "direction": direction, "readings": readings})),
    )
    .await
}

#[sqlx::test]
async fn a_thermostat_test_gives_switch_and_reset_points_and_a_certificate(pool: SqlitePool) {
    let lab = lab(pool).await;
    crate::certificates::set_up_lab(&lab).await;
    let (id, mut version) = switch_run(&lab).await;
    // Rising: the contact opens between 85.2 and 85.4, 85.4 and 85.6, 85.2 and 85.4 °C.
    for between in [(85.2, 85.4), (85.4, 85.6), (85.2, 85.4)] {
        let added = ok(
            &add_ramp(
                &lab,
                id,
                version,
                "rising",
                ramp("rising", 84.0, 86.0, between, "closed", "open"),
            )
            .await,
            StatusCode::CREATED,
        );
        version = added["version"].as_i64().expect("version");
    }
    // Falling: it closes again between 78.2 and 78.0, 78.4 and 78.2, 78.2 and 78.0 °C.
    for between in [(78.2, 78.0), (78.4, 78.2), (78.2, 78.0)] {
        let added = ok(
            &add_ramp(
                &lab,
                id,
                version,
                "falling",
                ramp("falling", 80.0, 76.0, between, "open", "closed"),
            )
            .await,
            StatusCode::CREATED,
        );
        version = added["version"].as_i64().expect("version");
    }
    let res = ok(
        &call(
            &lab.app,
            "GET",
            &format!("/api/v1/runs/{id}/results"),
            Some(&lab.reader),
            None,
        )
        .await,
        StatusCode::OK,
    );
    let sw = &res["switch"];
    // Hand calculation: midpoints 85.3, 85.5, 85.3 → mean 85.366667,
    // s = √(((−0.0667)² · 2 + 0.1333²)/2) = 0.115470; reset midpoints 78.1,
    // 78.3, 78.1 → 78.166667; differential 7.2 °C.
    assert!(
        (num(&sw["switch_point"]["value"]["value_c"]) - 85.366_666_7).abs() < 1e-6,
        "{sw}"
    );
    assert!((num(&sw["switch_point"]["std_dev_c"]) - 0.115_470_05).abs() < 1e-7);
    assert_eq!(sw["switch_point"]["n"], 3);
    assert!((num(&sw["reset_point"]["value"]["value_c"]) - 78.166_666_7).abs() < 1e-6);
    assert!((num(&sw["differential"]["value_c"]) - 7.2).abs() < 1e-9);
    let changes: Vec<f64> = sw["changes"]
        .as_array()
        .expect("changes")
        .iter()
        .map(|c| num(&c["t_c"]))
        .collect();
    for (got, want) in changes.iter().zip([85.3, 85.5, 85.3, 78.1, 78.3, 78.1]) {
        assert!((got - want).abs() < 1e-9, "{changes:?}");
    }
    // The budget names the reference's certificate and the thermal lag.
    let names: Vec<&str> = res["switch_point_budget"]
        .as_array()
        .expect("budget")
        .iter()
        .map(|r| r["name"].as_str().expect("name"))
        .collect();
    assert!(
        names.iter().any(|n| n.contains("NMI-2026-118")),
        "{names:?}"
    );
    assert!(names.iter().any(|n| n.contains("lag")), "{names:?}");
    // 85.37 °C is inside 85 ± 1 °C with U a few tenths: a pass under simple acceptance.
    assert_eq!(sw["outcome"], "pass");

    // Submitted, approved by another person, and issued as a certificate.
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
    let number = issued["number"].as_str().expect("number");
    let cert = ok(
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
    assert_eq!(
        cert["switch"]["switch_point"]["value"],
        sw["switch_point"]["value"]
    );
    assert_eq!(cert["switch"]["actuation"], "opens on rising temperature");
    assert!(cert["results"].as_array().expect("rows").is_empty());
    assert_eq!(cert["conformity"]["statement"], "switch point: pass");
    assert!(
        cert["statements"][2]
            .as_str()
            .expect("statement")
            .contains("switch and reset points are the reference temperatures")
    );
    let register = ok(
        &call(
            &lab.app,
            "GET",
            "/api/v1/certificates?kind=switch&outcome=pass",
            Some(&lab.reader),
            None,
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(register["certificates"][0]["number"], number);
    let pdf = call(
        &lab.app,
        "GET",
        &format!("/api/v1/certificates/{number}/pdf"),
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(pdf.status, StatusCode::OK);
    assert!(pdf.body.starts_with(b"%PDF-"));
}

#[sqlx::test]
async fn bad_ramps_are_refused_with_the_temperatures_involved(pool: SqlitePool) {
    let lab = lab(pool).await;
    let (id, mut version) = switch_run(&lab).await;
    // Bouncing contacts: open, closed, open within one rising ramp.
    let bouncing = vec![
        json!({"t_ref_c": 84.8, "state": "closed"}),
        json!({"t_ref_c": 85.0, "state": "open"}),
        json!({"t_ref_c": 85.2, "state": "closed"}),
        json!({"t_ref_c": 85.4, "state": "open"}),
        json!({"t_ref_c": 85.6, "state": "open"}),
    ];
    let added = ok(
        &add_ramp(&lab, id, version, "rising", bouncing).await,
        StatusCode::CREATED,
    );
    version = added["version"].as_i64().expect("version");
    let res = call(
        &lab.app,
        "GET",
        &format!("/api/v1/runs/{id}/results"),
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(
        res.status,
        StatusCode::UNPROCESSABLE_ENTITY,
        "{}",
        res.text()
    );
    assert!(
        res.text().contains("bounced")
            && res.text().contains("84.9")
            && res.text().contains("85.1"),
        "{}",
        res.text()
    );
    // The bouncing ramp is removed; a ramp without any change is refused too.
    let gone = call(
        &lab.app,
        "DELETE",
        &format!("/api/v1/runs/{id}/ramps/{}?version={version}", added["id"]),
        Some(&lab.tech),
        None,
    )
    .await;
    assert_eq!(gone.status, StatusCode::NO_CONTENT, "{}", gone.text());
    version += 1;
    let flat: Vec<Value> = (0..5)
        .map(|i| json!({"t_ref_c": 84.0 + 0.5 * f64::from(i), "state": "closed"}))
        .collect();
    ok(
        &add_ramp(&lab, id, version, "rising", flat).await,
        StatusCode::CREATED,
    );
    let res = call(
        &lab.app,
        "GET",
        &format!("/api/v1/runs/{id}/results"),
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(res.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        res.text()
            .contains("never changed state between 84 °C and 86 °C"),
        "{}",
        res.text()
    );
    // Input mistakes are named field by field.
    let bad = call(
        &lab.app,
        "POST",
        &format!("/api/v1/runs/{id}/ramps"),
        Some(&lab.tech),
        Some(json!({"version": version + 1, "direction": "sideways",
        "readings": [{"t_ref_c": 85.0, "state": "ajar"}, {"t_ref_c": 85.2, "state": "open"}]})),
    )
    .await;
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY);
    let fields: Vec<String> = bad.json()["errors"]
        .as_array()
        .expect("errors")
        .iter()
        .map(|e| e["field"].as_str().expect("f").to_owned())
        .collect();
    assert_eq!(fields, ["direction", "readings[0].state"]);
    let not_a_switch = call(
        &lab.app,
        "PUT",
        "/api/v1/runs/999/switch",
        Some(&lab.tech),
        Some(json!({"version": 1, "nominal_t_c": 85.0,
        "actuation_direction": "rising", "contact_action": "opens", "lag_half_width_c": 0.1})),
    )
    .await;
    assert_eq!(not_a_switch.status, StatusCode::NOT_FOUND);
}
