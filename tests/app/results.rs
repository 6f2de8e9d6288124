//! Results of whole runs through the API, checked against values computed
//! here from the published functions and tables (not by the service).

use axum::http::StatusCode;
use juncture::store::accounts::{Role, Scope};
use serde_json::{Value, json};
use sqlx::SqlitePool;

use crate::records::{Lab, call, lab, token_for};

pub fn ok(answer: &crate::helpers::Answer, status: StatusCode) -> Value {
    assert_eq!(answer.status, status, "{}", answer.text());
    answer.json()
}

pub fn num(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// Records a run with set points and readings; returns its id.
pub async fn record_run(lab: &Lab, body: Value, points: &[(f64, Vec<Value>)]) -> i64 {
    let run = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/runs",
            Some(&lab.tech),
            Some(body),
        )
        .await,
        StatusCode::CREATED,
    );
    let id = run["id"].as_i64().expect("id");
    let mut version = 1;
    for (t, readings) in points {
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
        version += 1;
        let added = ok(
            &call(
                &lab.app,
                "POST",
                &format!("/api/v1/runs/{id}/set-points/{}/readings", sp["id"]),
                Some(&lab.tech),
                Some(json!({"version": version, "readings": readings})),
            )
            .await,
            StatusCode::CREATED,
        );
        version = added["version"].as_i64().expect("version");
    }
    id
}

pub async fn results(lab: &Lab, id: i64) -> Value {
    ok(
        &call(
            &lab.app,
            "GET",
            &format!("/api/v1/runs/{id}/results"),
            Some(&lab.reader),
            None,
        )
        .await,
        StatusCode::OK,
    )
}

/// IEC 60751:2008 Callendar-Van Dusen for t >= 0 °C, solved for t by the
/// quadratic formula: t = (-A + sqrt(A² - 4B(1 - R/R0))) / (2B).
fn cvd_t(r: f64, r0: f64, a: f64, b: f64) -> f64 {
    (-a + (a * a - 4.0 * b * (1.0 - r / r0)).sqrt()) / (2.0 * b)
}

fn mean(v: &[f64]) -> f64 {
    v.iter().sum::<f64>() / v.len() as f64
}

fn std_dev_of_mean(v: &[f64]) -> f64 {
    let m = mean(v);
    let n = v.len() as f64;
    (v.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (n - 1.0) / n).sqrt()
}

#[sqlx::test]
async fn a_pt100_against_a_reference_prt_in_a_bath(pool: SqlitePool) {
    let lab = lab(pool).await;
    let customer = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/customers",
            Some(&lab.tech),
            Some(json!({"name": "Test customer (invented)"})),
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
            Some(json!({
        "serial": "PT-7", "kind": "prt", "r0_ohm": 100.0, "customer_id": customer["id"]})),
        )
        .await,
        StatusCode::CREATED,
    );
    // Invented readings at 50 °C and 100 °C.
    let points = [
        (
            50.0,
            vec![
                (119.4230, 119.4075),
                (119.4233, 119.4079),
                (119.4229, 119.4074),
                (119.4232, 119.4078),
            ],
        ),
        (
            100.0,
            vec![
                (138.5110, 138.5301),
                (138.5112, 138.5305),
                (138.5109, 138.5299),
                (138.5111, 138.5303),
            ],
        ),
    ];
    let body = json!({"instrument_serial": "PT-7", "reference": "REF-PRT-01", "reference_readout": "DMM-01",
        "uut_readout": "DMM-01", "medium": "BATH-01", "performed_on": "2026-11-20", "procedure_ref": "TP-04 rev 3",
        "tolerance_class": "A", "decision_rule": "simple",
        "extra_budget": [{"name": "immersion", "distribution": "rectangular", "value_c": 0.004}]});
    let readings: Vec<(f64, Vec<Value>)> = points
        .iter()
        .map(|(t, rs)| {
            (
                *t,
                rs.iter()
                    .map(|(r, u)| json!({"reference_signal": r, "uut_signal": u}))
                    .collect(),
            )
        })
        .collect();
    let id = record_run(&lab, body, &readings).await;
    let res = results(&lab, id).await;
    assert_eq!(res["provenance"]["reference_certificate"], "NMI-2026-118");

    for (i, (_, rs)) in points.iter().enumerate() {
        let sp = &res["set_points"][i];
        // Reference: its certificate's CVD (R0 100.012, A 3.9081e-3, B -5.78e-7).
        // UUT: the IEC 60751 nominal curve (R0 100, A 3.9083e-3, B -5.775e-7).
        let t_ref: Vec<f64> = rs
            .iter()
            .map(|(r, _)| cvd_t(*r, 100.012, 3.9081e-3, -5.78e-7))
            .collect();
        let dt: Vec<f64> = rs
            .iter()
            .map(|(r, u)| {
                cvd_t(*u, 100.0, 3.9083e-3, -5.775e-7) - cvd_t(*r, 100.012, 3.9081e-3, -5.78e-7)
            })
            .collect();
        assert!(
            (num(&sp["mean_t_ref_c"]) - mean(&t_ref)).abs() < 1e-9,
            "{sp}"
        );
        assert!(
            (num(&sp["mean_deviation_c"]) - mean(&dt)).abs() < 1e-9,
            "{sp}"
        );
        assert!((num(&sp["type_a_c"]) - std_dev_of_mean(&dt)).abs() < 1e-12);
        assert_eq!(sp["n"], 4);
        // Budget rows come from the records: the reference certificate's
        // U = 0.02 °C (k = 2) -> 0.01 °C; the bath's characterisation
        // (uniformity 0.01, stability 0.005 °C, rectangular) -> a/√3;
        // the lab-entered immersion row 0.004 °C rectangular.
        let rows = sp["budget"]["components"].as_array().expect("rows");
        let find = |prefix: &str| {
            rows.iter()
                .find(|r| r["name"].as_str().expect("name").starts_with(prefix))
                .unwrap_or_else(|| panic!("no {prefix} row in {rows:?}"))
        };
        assert!((num(&find("reference calibration")["contribution_c"]).abs() - 0.01).abs() < 1e-12);
        assert!(
            (num(&find("BATH-01 uniformity")["contribution_c"]) - 0.01 / 3f64.sqrt()).abs() < 1e-12
        );
        assert!(
            (num(&find("BATH-01 stability")["contribution_c"]) - 0.005 / 3f64.sqrt()).abs() < 1e-12
        );
        assert!((num(&find("immersion")["contribution_c"]) - 0.004 / 3f64.sqrt()).abs() < 1e-12);
        // JCGM 100:2008 5.1.2: u_c is the root sum of squares of the contributions.
        let rss: f64 = rows
            .iter()
            .map(|r| num(&r["contribution_c"]).powi(2))
            .sum::<f64>()
            .sqrt();
        assert!((num(&sp["budget"]["combined_standard_uncertainty_c"]) - rss).abs() < 1e-12);
        let shares: f64 = rows.iter().map(|r| num(&r["variance_share"])).sum();
        assert!((shares - 1.0).abs() < 1e-9);
        // IEC 60751:2008 class A: ±(0.15 + 0.002|t|) °C.
        let limit = 0.15 + 0.002 * mean(&t_ref).abs();
        assert!((num(&sp["conformity"]["tolerance_limits_c"][1]) - limit).abs() < 1e-9);
        assert_eq!(sp["conformity"]["outcome"], "pass");
    }
    // Two set points: a straight line through both means.
    let f = &res["deviation_function"];
    assert_eq!(f["degree"], 1);
    let (t0, t1) = (
        num(&res["set_points"][0]["mean_t_ref_c"]),
        num(&res["set_points"][1]["mean_t_ref_c"]),
    );
    let (d0, d1) = (
        num(&res["set_points"][0]["mean_deviation_c"]),
        num(&res["set_points"][1]["mean_deviation_c"]),
    );
    let slope = (d1 - d0) / (t1 - t0);
    assert!((num(&f["coefficients"][1]) - slope).abs() < 1e-9);
    assert!((num(&f["coefficients"][0]) - (d0 - slope * t0)).abs() < 1e-9);
}

#[sqlx::test]
async fn a_type_n_thermocouple_against_a_type_r_reference_in_a_furnace(pool: SqlitePool) {
    let lab = lab(pool).await;
    for (asset, kind, extra) in [
        ("TCR-1", "reference_thermocouple", json!({"tc_type": "R"})),
        (
            "DVM-1",
            "readout",
            json!({"spec_unit": "mV", "spec_offset": 0.002, "spec_relative": 20e-6, "spec_resolution": 0.0001}),
        ),
        ("FURN-1", "furnace", json!({})),
    ] {
        let mut body = json!({"asset_id": asset, "kind": kind});
        body.as_object_mut()
            .expect("object")
            .extend(extra.as_object().expect("object").clone());
        ok(
            &call(
                &lab.app,
                "POST",
                "/api/v1/equipment",
                Some(&lab.admin),
                Some(body),
            )
            .await,
            StatusCode::CREATED,
        );
    }
    ok(&call(&lab.app, "POST", "/api/v1/equipment/TCR-1/certificates", Some(&lab.admin), Some(json!({
        "number": "TC-R-26", "issuer": "Example laboratory", "calibrated_on": "2026-02-01", "due_on": "2027-02-01",
        "coefficients": {"form": "emf_deviation", "coefficients_mv": [0.0]},
        "uncertainties": [{"t_lo_c": 0.0, "t_hi_c": 1100.0, "expanded_c": 0.6}]}))).await, StatusCode::CREATED);
    ok(&call(&lab.app, "POST", "/api/v1/equipment/DVM-1/certificates", Some(&lab.admin), Some(json!({
        "number": "DVM-26", "issuer": "Example laboratory", "calibrated_on": "2026-02-01", "due_on": "2027-02-01"}))).await, StatusCode::CREATED);
    ok(&call(&lab.app, "POST", "/api/v1/equipment/FURN-1/characterisations", Some(&lab.admin), Some(json!({
        "characterised_on": "2026-06-01",
        "ranges": [{"t_lo_c": 50.0, "t_hi_c": 1100.0, "uniformity_half_width_c": 0.5, "stability_half_width_c": 0.1}]}))).await, StatusCode::CREATED);
    let customer = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/customers",
            Some(&lab.tech),
            Some(json!({"name": "Kiln maker (invented)"})),
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
            Some(json!({
        "serial": "N-1", "kind": "thermocouple", "tc_type": "N", "customer_id": customer["id"]})),
        )
        .await,
        StatusCode::CREATED,
    );
    // NIST Monograph 175 (SRD 60 all.tab): type R 0.647 mV at 100 °C and
    // 10.506 mV at 1000 °C; type N 2.774 mV and 36.256 mV. The UUT reads
    // 0.039 mV high at 1000 °C and 0.010 mV high at 100 °C (invented).
    let reading = |r: f64, n: f64| json!({"reference_signal": r, "uut_signal": n});
    let points = vec![
        (
            100.0,
            vec![
                reading(0.647, 2.784),
                reading(0.647, 2.784),
                reading(0.647, 2.784),
            ],
        ),
        (
            1000.0,
            vec![
                reading(10.506, 36.295),
                reading(10.506, 36.295),
                reading(10.506, 36.295),
            ],
        ),
    ];
    let id = record_run(&lab, json!({"instrument_serial": "N-1", "reference": "TCR-1", "reference_readout": "DVM-1",
        "uut_readout": "DVM-1", "medium": "FURN-1", "performed_on": "2026-11-20", "procedure_ref": "TP-09 rev 1",
        "rj_method": "ice_point", "tolerance_class": "2", "decision_rule": "simple",
        "extra_budget": [{"name": "ice point", "distribution": "rectangular", "value_c": 0.02, "kind": "reference_junction"}]}), &points).await;
    let res = results(&lab, id).await;
    let hot = &res["set_points"][1];
    // The tables print 0.001 mV: t_ref is 1000 °C within 0.0005 mV / 11.5 µV/K
    // (type R slope) = 0.044 °C.
    assert!((num(&hot["mean_t_ref_c"]) - 1000.0).abs() < 0.044, "{hot}");
    // dE = 36.295 - E_N(t_ref) = 0.039 mV within the table rounding of both
    // thermocouples (0.0005 mV + 0.044 °C x 39 µV/K = 0.0022 mV).
    assert!(
        (num(&hot["mean_deviation_emf_mv"]) - 0.039).abs() < 0.0022,
        "{hot}"
    );
    // dt = 0.039 mV / S_N; S_N near 1000 °C is about 39 µV/K (table slope
    // 800 -> 1000 °C: (36.256 - 28.455) / 200 = 0.039 mV/K), so about 1.0 °C.
    assert!((num(&hot["mean_deviation_c"]) - 1.0).abs() < 0.07, "{hot}");
    // Identical readings: Type A is zero; three readings are flagged as few.
    assert_eq!(num(&hot["type_a_c"]), 0.0);
    assert!(
        hot["warnings"].to_string().contains("Only 3 readings"),
        "{hot}"
    );
    // IEC 60584-1 class 2, type N: ±0.0075·|t| above 333 °C -> ±7.5 °C at
    // 1000 °C. (Class 1 ends at 1000 °C, just below this set point's t_ref.)
    assert!(
        (num(&hot["conformity"]["tolerance_limits_c"][1]) - 0.0075 * num(&hot["mean_t_ref_c"]))
            .abs()
            < 1e-9
    );
    assert_eq!(hot["conformity"]["outcome"], "pass");
    // The reference's certificate U of 0.6 °C (k = 2) dominates: 0.3 °C.
    let rows = hot["budget"]["components"].as_array().expect("rows");
    let reference = rows
        .iter()
        .find(|r| {
            r["name"]
                .as_str()
                .expect("name")
                .starts_with("reference calibration")
        })
        .expect("row");
    assert!((num(&reference["contribution_c"]).abs() - 0.3).abs() < 1e-12);
    // CMC of the lab (none entered): no floor.
    assert_eq!(hot["reported"]["cmc_floor_applied"], false);
    let cold = &res["set_points"][0];
    assert!(
        (num(&cold["mean_deviation_emf_mv"]) - 0.010).abs() < 0.0022,
        "{cold}"
    );
    assert!(res["emf_deviation_function"]["coefficients"].is_array());
}

#[sqlx::test]
async fn a_type_k_thermocouple_with_its_junction_at_room_temperature(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/equipment",
            Some(&lab.admin),
            Some(json!({"asset_id": "DIG-1", "kind": "reference_indicating"})),
        )
        .await,
        StatusCode::CREATED,
    );
    ok(&call(&lab.app, "POST", "/api/v1/equipment/DIG-1/certificates", Some(&lab.admin), Some(json!({
        "number": "DIG-26", "issuer": "Example laboratory", "calibrated_on": "2026-02-01", "due_on": "2027-02-01",
        "coefficients": {"form": "correction", "coefficients_c": [0.012, -1.0e-4]},
        "uncertainties": [{"t_lo_c": -30.0, "t_hi_c": 250.0, "expanded_c": 0.05}]}))).await, StatusCode::CREATED);
    let customer = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/customers",
            Some(&lab.tech),
            Some(json!({"name": "Oven user (invented)"})),
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
            Some(json!({
        "serial": "K-9", "kind": "thermocouple", "tc_type": "K", "customer_id": customer["id"]})),
        )
        .await,
        StatusCode::CREATED,
    );
    // NIST Monograph 175, type K: E(100 °C) = 4.096 mV, E(25 °C) = 1.000 mV;
    // with the junction at 25 °C the thermocouple shows 3.096 mV. The
    // reference indicates 100.000 °C; its correction 0.012 - 1e-4 x 100
    // makes t_ref = 100.002 °C.
    let reading = json!({"reference_signal": 100.0, "uut_signal": 3.096, "rj_t_c": 25.0});
    let id = record_run(
        &lab,
        json!({"instrument_serial": "K-9", "reference": "DIG-1", "medium": "BATH-01",
        "performed_on": "2026-11-20", "procedure_ref": "TP-11 rev 2", "rj_method": "measured",
        "tolerance_class": "2", "decision_rule": "simple"}),
        &[(100.0, vec![reading.clone(), reading.clone(), reading])],
    )
    .await;
    let res = results(&lab, id).await;
    let sp = &res["set_points"][0];
    assert!((num(&sp["mean_t_ref_c"]) - 100.002).abs() < 1e-9, "{sp}");
    // t_uut = 100 °C within the table's 0.0005 mV / 41 µV/K = 0.013 °C
    // (twice: two table values), so dt = -0.002 °C within 0.026 °C. Without
    // the junction correction the answer would be about 25 °C low.
    assert!(
        (num(&sp["mean_deviation_c"]) - -0.002).abs() < 0.026,
        "{sp}"
    );
    // A run whose readings lack the junction temperature is refused.
    let tech = token_for(&pool, "tomas", Role::Technician, Scope::Write).await;
    let run = ok(&call(&lab.app, "POST", "/api/v1/runs", Some(&tech), Some(json!({"instrument_serial": "K-9", "reference": "DIG-1",
        "performed_on": "2026-11-20", "procedure_ref": "TP-11 rev 2", "rj_method": "measured", "decision_rule": "none"}))).await, StatusCode::CREATED);
    let sp = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{}/set-points", run["id"]),
            Some(&tech),
            Some(json!({"nominal_t_c": 100.0, "version": 1})),
        )
        .await,
        StatusCode::CREATED,
    );
    let refused = call(
        &lab.app,
        "POST",
        &format!(
            "/api/v1/runs/{}/set-points/{}/readings",
            run["id"], sp["id"]
        ),
        Some(&tech),
        Some(json!({"version": 2, "readings": [{"reference_signal": 100.0, "uut_signal": 3.096}]})),
    )
    .await;
    assert_eq!(refused.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(refused.json()["errors"][0]["field"], "readings[0].rj_t_c");
}

#[sqlx::test]
async fn an_indicating_thermometer_against_a_reference_prt(pool: SqlitePool) {
    let lab = lab(pool).await;
    let customer = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/customers",
            Some(&lab.tech),
            Some(json!({"name": "Food plant (invented)"})),
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
            Some(json!({
        "serial": "DT-1", "kind": "indicating", "customer_id": customer["id"]})),
        )
        .await,
        StatusCode::CREATED,
    );
    let reading = |r: f64, ind: f64| json!({"reference_signal": r, "uut_signal": ind});
    let id = record_run(&lab, json!({"instrument_serial": "DT-1", "reference": "REF-PRT-01", "reference_readout": "DMM-01",
        "medium": "BATH-01", "performed_on": "2026-11-20", "procedure_ref": "TP-02 rev 5",
        "tolerance_limit_c": 0.2, "decision_rule": "guarded_non_binary", "guard_band_factor": 1.0,
        "extra_budget": [{"name": "display step", "distribution": "rectangular", "value_c": 0.01, "kind": "uut_resolution"}]}),
        &[(100.0, vec![reading(138.5110, 100.15), reading(138.5112, 100.16), reading(138.5109, 100.15)])]).await;
    let res = results(&lab, id).await;
    let sp = &res["set_points"][0];
    // dt = indication - t_ref, t_ref from the certificate's CVD (IEC 60751 form).
    let t_ref = [138.5110, 138.5112, 138.5109].map(|r| cvd_t(r, 100.012, 3.9081e-3, -5.78e-7));
    let dt: Vec<f64> = [100.15, 100.16, 100.15]
        .iter()
        .zip(t_ref)
        .map(|(i, t)| i - t)
        .collect();
    assert!((num(&sp["mean_deviation_c"]) - mean(&dt)).abs() < 1e-9);
    // The display step of 0.01 °C enters as rectangular with a = 0.005 °C.
    let rows = sp["budget"]["components"].as_array().expect("rows");
    let step = rows
        .iter()
        .find(|r| r["name"] == "display step")
        .expect("row");
    assert!((num(&step["contribution_c"]) - 0.005 / 3f64.sqrt()).abs() < 1e-12);
    // ILAC-G8 4.2.3 with w = U: the outcome follows the zones.
    let u = num(&sp["budget"]["expanded_uncertainty_c"]);
    let d = mean(&dt);
    let expected = if d <= 0.2 - u {
        "pass"
    } else if d <= 0.2 {
        "conditional pass"
    } else if d <= 0.2 + u {
        "conditional fail"
    } else {
        "fail"
    };
    let reported_u: f64 = sp["reported"]["expanded_uncertainty_c"]
        .as_str()
        .expect("u")
        .parse()
        .expect("number");
    let expected_reported = if d <= 0.2 - reported_u {
        "pass"
    } else if d <= 0.2 {
        "conditional pass"
    } else if d <= 0.2 + reported_u {
        "conditional fail"
    } else {
        "fail"
    };
    let outcome = sp["conformity"]["outcome"].as_str().expect("outcome");
    assert!(
        outcome == expected || outcome == expected_reported,
        "{outcome} vs {expected} (U = {u}, dt = {d})"
    );
}

#[sqlx::test]
async fn results_refuse_a_set_point_outside_the_medium_characterisation(pool: SqlitePool) {
    let lab = lab(pool).await;
    let customer = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/customers",
            Some(&lab.tech),
            Some(json!({"name": "Someone (invented)"})),
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
            Some(json!({
        "serial": "PT-9", "kind": "prt", "r0_ohm": 100.0, "customer_id": customer["id"]})),
        )
        .await,
        StatusCode::CREATED,
    );
    let reading = json!({"reference_signal": 175.86, "uut_signal": 175.87});
    let id = record_run(
        &lab,
        json!({"instrument_serial": "PT-9", "reference": "REF-PRT-01", "medium": "BATH-01",
        "performed_on": "2026-11-20", "procedure_ref": "TP-04 rev 3", "decision_rule": "none"}),
        &[
            (200.0, vec![reading.clone(), reading.clone()]),
            (240.0, vec![reading.clone(), reading]),
        ],
    )
    .await;
    let answer = call(
        &lab.app,
        "GET",
        &format!("/api/v1/runs/{id}/results"),
        Some(&lab.reader),
        None,
    )
    .await;
    assert_eq!(answer.status, StatusCode::UNPROCESSABLE_ENTITY);
    let problem = answer.json();
    assert_eq!(problem["errors"][0]["field"], "medium");
    assert_eq!(
        problem["errors"][0]["message"],
        "BATH-01 is characterised from -40 °C to 200 °C; the set point 240 °C lies outside"
    );
}

#[sqlx::test]
async fn the_demo_runs_have_results_at_once(pool: SqlitePool) {
    juncture::demo::load(&pool).await.expect("demo loads");
    let reader = token_for(&pool, "demo-reader", Role::Technician, Scope::Read).await;
    let app = crate::helpers::app(pool);
    let runs = ok(
        &call(&app, "GET", "/api/v1/runs", Some(&reader), None).await,
        StatusCode::OK,
    );
    let mut runs = runs.as_array().expect("runs").clone();
    runs.sort_by_key(|r| r["id"].as_i64());
    let runs = &runs;
    assert_eq!(runs.len(), 5, "three sensor runs and two switch tests");
    let (sensors, switches) = runs.split_at(3);
    // The switch tests: the thermostat's three cycles were invented to open
    // at 85.6 + 0.2·(0, 0.6, −0.4) °C, i.e. midway between the 0.1 °C
    // readings around 85.6, 85.72 and 85.52 °C (hand calculation: mean
    // 85.6167 °C within the 0.05 °C of the reading step).
    for (run, nominal) in switches.iter().zip([85.0, -18.0]) {
        let res = ok(
            &call(
                &app,
                "GET",
                &format!("/api/v1/runs/{}/results", run["id"]),
                Some(&reader),
                None,
            )
            .await,
            StatusCode::OK,
        );
        assert_eq!(res["switch"]["nominal_t_c"], nominal, "{res}");
        if nominal > 0.0 {
            assert!(
                (num(&res["switch"]["switch_point"]["value"]["value_c"]) - 85.6167).abs() < 0.05,
                "{res}"
            );
        } else {
            // Observed directly: (−18.32 − 18.27 − 18.35)/3 = −18.3133 °C.
            assert!(
                (num(&res["switch"]["switch_point"]["value"]["value_c"]) + 18.313_333).abs() < 1e-5,
                "{res}"
            );
            assert!(
                (num(&res["switch"]["reset_point"]["value"]["value_c"]) + 16.88).abs() < 1e-9,
                "{res}"
            );
        }
    }
    for run in sensors {
        let res = ok(
            &call(
                &app,
                "GET",
                &format!("/api/v1/runs/{}/results", run["id"]),
                Some(&reader),
                None,
            )
            .await,
            StatusCode::OK,
        );
        assert_eq!(
            res["set_points"].as_array().expect("set points").len(),
            4,
            "{res}"
        );
        assert!(
            res["deviation_function"]["coefficients"].is_array(),
            "{res}"
        );
    }
    // The demo Pt100 was invented to read 0.03 °C + 0.00013·t high: about
    // 0.043 °C at 100 °C (readings rounded to 0.1 mΩ, i.e. 0.3 mK).
    let pt = runs
        .iter()
        .find(|r| r["status"] == "submitted")
        .expect("submitted run");
    let res = ok(
        &call(
            &app,
            "GET",
            &format!("/api/v1/runs/{}/results", pt["id"]),
            Some(&reader),
            None,
        )
        .await,
        StatusCode::OK,
    );
    let at100 = &res["set_points"][2];
    assert!(
        (num(&at100["mean_deviation_c"]) - 0.043).abs() < 0.001,
        "{at100}"
    );
}

#[sqlx::test]
async fn a_pt100_against_an_sprt_at_its90_fixed_point_temperatures(pool: SqlitePool) {
    let lab = lab(pool).await;
    ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/equipment",
            Some(&lab.admin),
            Some(json!({"asset_id": "SPRT-1", "kind": "reference_sprt"})),
        )
        .await,
        StatusCode::CREATED,
    );
    // An SPRT with no deviation from the reference function (a = b = 0):
    // W = W_r, so R = R_tpw x W_r.
    ok(&call(&lab.app, "POST", "/api/v1/equipment/SPRT-1/certificates", Some(&lab.admin), Some(json!({
        "number": "SPRT-26", "issuer": "Example laboratory", "calibrated_on": "2026-02-01", "due_on": "2028-02-01",
        "coefficients": {"form": "its90", "r_tpw_ohm": 25.0, "sub_range": "water-to-tin", "a": 0.0, "b": 0.0},
        "uncertainties": [{"t_lo_c": 0.0, "t_hi_c": 232.0, "expanded_c": 0.002}]}))).await, StatusCode::CREATED);
    let customer = ok(
        &call(
            &lab.app,
            "POST",
            "/api/v1/customers",
            Some(&lab.tech),
            Some(json!({"name": "Water utility (invented)"})),
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
            Some(json!({
        "serial": "PT-S", "kind": "prt", "r0_ohm": 100.0, "customer_id": customer["id"]})),
        )
        .await,
        StatusCode::CREATED,
    );
    // ITS-90 Table 1 (Metrologia 27 (1990) 3-10): W_r at the gallium
    // (29.7646 °C) and indium (156.5985 °C) points, inside the bath's
    // characterised range.
    let fixed = [(29.7646, 1.118_138_89), (156.5985, 1.609_801_85)];
    // IEC 60751:2008 Pt100: R = 100 (1 + A t + B t²); the UUT reads 0.02 Ω high.
    let pt100 = |t: f64| 100.0 * (1.0 + 3.9083e-3 * t - 5.775e-7 * t * t);
    let points: Vec<(f64, Vec<Value>)> = fixed
        .iter()
        .map(|&(t, w)| {
            let reading = json!({"reference_signal": 25.0 * w, "uut_signal": pt100(t) + 0.02});
            (t.round(), vec![reading.clone(), reading.clone(), reading])
        })
        .collect();
    let id = record_run(
        &lab,
        json!({"instrument_serial": "PT-S", "reference": "SPRT-1", "medium": "BATH-01",
        "performed_on": "2026-11-20", "procedure_ref": "TP-05 rev 2", "decision_rule": "none"}),
        &points,
    )
    .await;
    let res = results(&lab, id).await;
    for (i, (t, _)) in fixed.iter().enumerate() {
        let sp = &res["set_points"][i];
        // W_r is printed to 8 decimals: 5e-9 / (dW_r/dT ≈ 0.004 /K) ≈ 1.3 mK.
        assert!((num(&sp["mean_t_ref_c"]) - t).abs() < 0.0015, "{sp}");
        // dt = t_nominal(R) - t_ref = 0.02 Ω / (dR/dt = 100 (A + 2 B t)).
        let slope = 100.0 * (3.9083e-3 - 2.0 * 5.775e-7 * t);
        assert!(
            (num(&sp["mean_deviation_c"]) - 0.02 / slope).abs() < 0.0015,
            "{sp}"
        );
        assert!((num(&sp["mean_deviation_ohm"]) - 0.02).abs() < 1e-5, "{sp}");
    }
}
