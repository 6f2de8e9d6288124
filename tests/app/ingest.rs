//! Logger files through the streaming upload
//! (`POST /api/v1/runs/{id}/set-points/{sp}/readings/file`): stored whole
//! with the file's SHA-256 in the audit trail, refused whole with the line
//! named, and held to the upload limit.

use axum::body::Body;
use axum::http::{Request, StatusCode};
use juncture::config::HttpConfig;
use juncture::store::audit;
use juncture::web::{AppState, router};
use serde_json::{Value, json};
use sha2::{Digest, Sha256};
use sqlx::SqlitePool;

use crate::helpers::{Answer, send};
use crate::records::{Lab, call, customer_and_instrument, lab, ok, run_body};

/// A run of PT-2291 with one set point at 100 °C; returns (run id, set
/// point id). The run is then at version 2.
async fn run_with_set_point(lab: &Lab) -> (i64, i64) {
    customer_and_instrument(lab).await;
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
            Some(json!({"nominal_t_c": 100.0, "version": 1})),
        )
        .await,
        StatusCode::CREATED,
    );
    (id, sp["id"].as_i64().expect("set point"))
}

async fn upload(
    app: &axum::Router,
    uri: &str,
    token: &str,
    content_type: &str,
    body: Vec<u8>,
    content_length: bool,
) -> Answer {
    let mut request = Request::post(uri)
        .header("authorization", format!("Bearer {token}"))
        .header("content-type", content_type);
    if content_length {
        request = request.header("content-length", body.len());
    }
    send(app, request.body(Body::from(body)).expect("request")).await
}

/// An invented logger export: tab separated with decimal commas, a time
/// stamp per reading, `n` readings of a Pt100 near 100 °C.
fn logger_file(n: usize) -> String {
    let mut text = String::from("time\treference\tuut\n");
    for i in 0..n {
        text += &format!(
            "2026-11-20T10:{:02}:{:02}Z\t138,{:04}\t138,{:04}\n",
            (i / 60) % 60,
            i % 60,
            5080 + i % 37,
            5290 + i % 41
        );
    }
    text
}

async fn readings_of(lab: &Lab, id: i64) -> (i64, Vec<Value>) {
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
    (
        detail["version"].as_i64().expect("version"),
        detail["set_points"][0]["readings"]
            .as_array()
            .expect("readings")
            .clone(),
    )
}

#[sqlx::test]
async fn a_logger_file_is_stored_whole_with_its_fingerprint(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    let (id, sp) = run_with_set_point(&lab).await;
    let file = logger_file(3000);
    let answer = ok(
        &upload(
            &lab.app,
            &format!("/api/v1/runs/{id}/set-points/{sp}/readings/file?version=2"),
            &lab.tech,
            "text/tab-separated-values",
            file.clone().into_bytes(),
            false,
        )
        .await,
        StatusCode::CREATED,
    );
    assert_eq!(answer["added"], 3000);
    assert_eq!(answer["total"], 3000);
    assert_eq!(answer["version"], 3);
    assert_eq!(answer["bytes"], file.len());
    // FIPS 180-4 SHA-256 of the bytes as sent (sha2 crate).
    let sha = hex::encode(Sha256::digest(file.as_bytes()));
    assert_eq!(answer["sha256"], sha.as_str());

    // Every reading as written in the file (decimal comma read as a point).
    let (version, readings) = readings_of(&lab, id).await;
    assert_eq!(version, 3);
    assert_eq!(readings.len(), 3000);
    assert_eq!(readings[0]["taken_at"], "2026-11-20T10:00:00Z");
    assert_eq!(readings[0]["reference_signal"], 138.508);
    assert_eq!(readings[0]["uut_signal"], 138.529);
    assert_eq!(readings[2999]["position"], 3000);
    assert_eq!(readings[2999]["taken_at"], "2026-11-20T10:49:59Z");
    // i = 2999: 5080 + 2999 % 37 = 5080 + 2 ; 5290 + 2999 % 41 = 5290 + 6
    assert_eq!(readings[2999]["reference_signal"], 138.5082);
    assert_eq!(readings[2999]["uut_signal"], 138.5296);

    // The audit event names the file by its SHA-256 and the positions.
    let mut conn = pool.acquire().await.expect("conn");
    let events = audit::for_entity(&mut conn, "run", &id.to_string())
        .await
        .expect("events");
    let event = events
        .iter()
        .find(|e| e.action == "add_readings_file")
        .expect("upload event");
    let after: Value =
        serde_json::from_str(event.after_json.as_deref().expect("after")).expect("json");
    assert_eq!(after["file_sha256"], sha.as_str());
    assert_eq!(after["readings"], 3000);
    assert_eq!(after["positions"], json!([1, 3000]));
    drop(conn);

    // Readings typed after the file continue the positions; a second file
    // continues after them, and everything reads back in order.
    ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{id}/set-points/{sp}/readings"),
            Some(&lab.tech),
            Some(json!({"version": 3, "readings": [
                {"reference_signal": 138.5101, "uut_signal": 138.5302, "taken_at": "typed"},
                {"reference_signal": 138.5102, "uut_signal": 138.5303}]})),
        )
        .await,
        StatusCode::CREATED,
    );
    let second = ok(
        &upload(
            &lab.app,
            &format!("/api/v1/runs/{id}/set-points/{sp}/readings/file?version=4"),
            &lab.tech,
            "text/csv",
            b"reference,uut\n138.5111,138.5311\n138.5112,138.5312\n".to_vec(),
            true,
        )
        .await,
        StatusCode::CREATED,
    );
    assert_eq!(second["total"], 3004);
    let (_, readings) = readings_of(&lab, id).await;
    let positions: Vec<i64> = readings
        .iter()
        .map(|r| r["position"].as_i64().expect("position"))
        .collect();
    assert_eq!(positions, (1..=3004).collect::<Vec<_>>());
    assert_eq!(readings[3000]["taken_at"], "typed");
    assert_eq!(readings[3001]["reference_signal"], 138.5102);
    assert_eq!(readings[3001]["taken_at"], Value::Null);
    assert_eq!(readings[3003]["uut_signal"], 138.5312);
    assert_eq!(readings[3003]["taken_at"], Value::Null);

    // The results take all 3004 readings.
    let results = ok(
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
    assert_eq!(results["set_points"][0]["n"], 3004, "{results}");

    // The readings page by page, across rows and blocks, and the run
    // without its readings.
    let page = |query: &'static str| {
        let app = lab.app.clone();
        let reader = lab.reader.clone();
        async move {
            call(
                &app,
                "GET",
                &format!("/api/v1/runs/{id}/set-points/{sp}/readings{query}"),
                Some(&reader),
                None,
            )
            .await
        }
    };
    let first = ok(&page("?limit=1000").await, StatusCode::OK);
    assert_eq!(first["total"], 3004);
    assert_eq!(first["readings"].as_array().expect("page").len(), 1000);
    assert_eq!(first["readings"][999]["position"], 1000);
    assert_eq!(first["next_after"], 1000);
    let last = ok(&page("?after=2500&limit=1000").await, StatusCode::OK);
    let last_readings = last["readings"].as_array().expect("page");
    assert_eq!(last_readings.len(), 504);
    assert_eq!(last_readings[0]["position"], 2501);
    assert_eq!(last_readings[500]["taken_at"], "typed");
    assert_eq!(last_readings[503]["uut_signal"], 138.5312);
    assert!(last.get("next_after").is_none(), "{last}");
    for (query, field) in [
        ("?limit=0", "limit"),
        ("?limit=10001", "limit"),
        ("?after=-1", "after"),
    ] {
        let bad = page(query).await;
        assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY, "{query}");
        assert_eq!(bad.json()["errors"][0]["field"], field, "{query}");
    }
    let lean = ok(
        &call(
            &lab.app,
            "GET",
            &format!("/api/v1/runs/{id}?readings=false"),
            Some(&lab.reader),
            None,
        )
        .await,
        StatusCode::OK,
    );
    assert_eq!(lean["set_points"][0]["reading_count"], 3004);
    assert!(lean["set_points"][0].get("readings").is_none(), "{lean}");

    // Removing the set point removes its stored blocks too.
    let removed = call(
        &lab.app,
        "DELETE",
        &format!("/api/v1/runs/{id}/set-points/{sp}?version=5"),
        Some(&lab.tech),
        None,
    )
    .await;
    assert_eq!(removed.status, StatusCode::NO_CONTENT, "{}", removed.text());
    let blocks: i64 = sqlx::query_scalar("SELECT COUNT(*) FROM reading_block")
        .fetch_one(&pool)
        .await
        .expect("count");
    assert_eq!(blocks, 0);
}

#[sqlx::test]
async fn a_bad_logger_file_is_refused_whole_naming_the_line(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    let (id, sp) = run_with_set_point(&lab).await;
    let uri = format!("/api/v1/runs/{id}/set-points/{sp}/readings/file?version=2");
    let mut bad_number = logger_file(2000);
    bad_number += "2026-11-20T11:00:00Z\t138,5081\tover\n";
    bad_number += &logger_file(10).replace("time\treference\tuut\n", "");
    let negative = "reference,uut\n138.5,138.6\n138.5,-0.5\n";
    let control = "time,reference,uut\n10:00\u{7},138.5,138.6\n";
    for (body, content_type, field, words) in [
        (
            bad_number.as_str(),
            "text/tab-separated-values",
            "line 2002",
            "\"over\" in column `uut` is not a number",
        ),
        (
            negative,
            "text/csv",
            "line 3.uut_signal",
            "a resistance must be positive",
        ),
        (
            control,
            "text/csv",
            "line 2.time",
            "control character U+0007",
        ),
        ("", "text/csv", "line 1", "the file is empty"),
        (
            "reference,uut\n",
            "text/csv",
            "readings",
            "followed by no readings",
        ),
        ("a,b\n1,2\n", "text/csv", "line 1", "no `reference` column"),
    ] {
        let answer = upload(
            &lab.app,
            &uri,
            &lab.tech,
            content_type,
            body.as_bytes().to_vec(),
            true,
        )
        .await;
        assert_eq!(
            answer.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{}",
            answer.text()
        );
        let problem = answer.json();
        assert_eq!(problem["errors"][0]["field"], field, "{problem}");
        assert!(
            problem["errors"][0]["message"]
                .as_str()
                .expect("message")
                .contains(words),
            "{problem}"
        );
    }
    // Wrong media type, stale version, no version.
    let json_body = upload(
        &lab.app,
        &uri,
        &lab.tech,
        "application/json",
        b"{}".to_vec(),
        true,
    )
    .await;
    assert_eq!(json_body.status, StatusCode::UNSUPPORTED_MEDIA_TYPE);
    let stale = upload(
        &lab.app,
        &uri.replace("version=2", "version=1"),
        &lab.tech,
        "text/csv",
        negative.replace("-0.5", "138.6").into_bytes(),
        true,
    )
    .await;
    assert_eq!(stale.status, StatusCode::CONFLICT, "{}", stale.text());
    assert!(stale.text().contains("has changed since you loaded it"));
    let unversioned = upload(
        &lab.app,
        &uri.replace("?version=2", ""),
        &lab.tech,
        "text/csv",
        b"reference,uut\n1,2\n".to_vec(),
        true,
    )
    .await;
    assert_eq!(unversioned.status, StatusCode::UNPROCESSABLE_ENTITY);
    // A read-only token may not upload.
    let reader = upload(
        &lab.app,
        &uri,
        &lab.reader,
        "text/csv",
        b"reference,uut\n1,2\n".to_vec(),
        true,
    )
    .await;
    assert_eq!(reader.status, StatusCode::FORBIDDEN);

    // Nothing of any of them was stored and the run did not move on.
    let (version, readings) = readings_of(&lab, id).await;
    assert_eq!((version, readings.len()), (2, 0));
}

#[sqlx::test]
async fn a_logger_file_over_the_upload_limit_gets_413_with_the_limit(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    let (id, sp) = run_with_set_point(&lab).await;
    let small = router(AppState::new(
        pool.clone(),
        HttpConfig {
            upload_limit_bytes: 10_000,
            ..HttpConfig::default()
        },
    ));
    let uri = format!("/api/v1/runs/{id}/set-points/{sp}/readings/file?version=2");
    let file = logger_file(1000).into_bytes();
    assert!(file.len() > 10_000);
    // Announced by Content-Length, and found while streaming without it.
    for announced in [true, false] {
        let answer = upload(&small, &uri, &lab.tech, "text/csv", file.clone(), announced).await;
        assert_eq!(
            answer.status,
            StatusCode::PAYLOAD_TOO_LARGE,
            "{}",
            answer.text()
        );
        assert!(answer.text().contains("10000 bytes"), "{}", answer.text());
    }
    // The general body limit (8 MiB) does not apply to logger files: a
    // 9 MiB file goes in.
    let big = logger_file(260_000);
    assert!(big.len() > 9 * 1024 * 1024, "{}", big.len());
    let answer = ok(
        &upload(
            &lab.app,
            &uri,
            &lab.tech,
            "text/tab-separated-values",
            big.into_bytes(),
            true,
        )
        .await,
        StatusCode::CREATED,
    );
    assert_eq!(answer["added"], 260_000);
}

#[sqlx::test]
async fn readings_from_a_file_give_the_same_results_as_typed_ones(pool: SqlitePool) {
    let lab = lab(pool.clone()).await;
    let (from_file, sp_file) = run_with_set_point(&lab).await;
    let file = logger_file(40);
    ok(
        &upload(
            &lab.app,
            &format!("/api/v1/runs/{from_file}/set-points/{sp_file}/readings/file?version=2"),
            &lab.tech,
            "text/tab-separated-values",
            file.clone().into_bytes(),
            true,
        )
        .await,
        StatusCode::CREATED,
    );
    // The same readings typed as JSON into a second run of the instrument.
    let typed = ok(
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
    let typed = typed["id"].as_i64().expect("id");
    let sp_typed = ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{typed}/set-points"),
            Some(&lab.tech),
            Some(json!({"nominal_t_c": 100.0, "version": 1})),
        )
        .await,
        StatusCode::CREATED,
    )["id"]
        .as_i64()
        .expect("set point");
    let readings: Vec<Value> = file
        .lines()
        .skip(1)
        .map(|line| {
            let cells: Vec<&str> = line.split('\t').collect();
            let number = |c: &str| c.replace(',', ".").parse::<f64>().expect("number");
            json!({"taken_at": cells[0], "reference_signal": number(cells[1]), "uut_signal": number(cells[2])})
        })
        .collect();
    ok(
        &call(
            &lab.app,
            "POST",
            &format!("/api/v1/runs/{typed}/set-points/{sp_typed}/readings"),
            Some(&lab.tech),
            Some(json!({"version": 2, "readings": readings})),
        )
        .await,
        StatusCode::CREATED,
    );
    let results = |id: i64| {
        let app = lab.app.clone();
        let reader = lab.reader.clone();
        async move {
            ok(
                &call(
                    &app,
                    "GET",
                    &format!("/api/v1/runs/{id}/results"),
                    Some(&reader),
                    None,
                )
                .await,
                StatusCode::OK,
            )
        }
    };
    let (a, b) = (results(from_file).await, results(typed).await);
    assert_eq!(a["set_points"][0]["n"], 40);
    // Every number of the set point's result is the same to the last bit.
    assert_eq!(a["set_points"], b["set_points"]);
    assert_eq!(a["deviation_function"], b["deviation_function"]);
}
