//! Health, metrics, migrations, database files, errors and pages.

use axum::body::Body;
use axum::http::{Request, StatusCode};
use juncture::{demo, store};
use sqlx::SqlitePool;

use crate::helpers::{app, get, send};

#[sqlx::test]
async fn healthz_reports_ok_with_version_and_schema_version(pool: SqlitePool) {
    let app = app(pool);
    let answer = get(&app, "/healthz").await;
    assert_eq!(answer.status, StatusCode::OK);
    let body = answer.json();
    assert_eq!(body["status"], "ok");
    assert_eq!(body["database"], "ok");
    assert_eq!(body["version"], env!("CARGO_PKG_VERSION"));
    let newest = store::MIGRATOR
        .iter()
        .map(|m| m.version)
        .max()
        .expect("at least one migration");
    assert_eq!(body["schema_version"], newest);
}

#[sqlx::test]
async fn healthz_answers_503_problem_when_the_database_is_closed(pool: SqlitePool) {
    let app = app(pool.clone());
    pool.close().await;
    let answer = get(&app, "/healthz").await;
    assert_eq!(answer.status, StatusCode::SERVICE_UNAVAILABLE);
    assert_eq!(answer.content_type(), "application/problem+json");
    let body = answer.json();
    assert_eq!(body["status"], 503);
    assert_eq!(body["type"], "/problems/unavailable");
    assert_eq!(body["detail"], "the database is not answering");
}

#[sqlx::test]
async fn metrics_count_requests_by_route_and_status(pool: SqlitePool) {
    let app = app(pool);
    for _ in 0..3 {
        assert_eq!(get(&app, "/healthz").await.status, StatusCode::OK);
    }
    assert_eq!(
        get(&app, "/no/such/page").await.status,
        StatusCode::NOT_FOUND
    );
    let answer = get(&app, "/metrics").await;
    assert_eq!(answer.status, StatusCode::OK);
    assert!(
        answer
            .content_type()
            .starts_with("text/plain; version=0.0.4")
    );
    let text = answer.text();
    assert!(
        text.contains(
            "juncture_http_requests_total{route=\"/healthz\",method=\"GET\",status=\"200\"} 3"
        ),
        "{text}"
    );
    assert!(text.contains(
        "juncture_http_request_duration_seconds_count{route=\"/healthz\",method=\"GET\",status=\"200\"} 3"
    ));
    assert!(text.contains(
        "juncture_http_request_duration_seconds_bucket{route=\"/healthz\",method=\"GET\",status=\"200\",le=\"+Inf\"} 3"
    ));
    assert!(text.contains(
        "juncture_http_requests_total{route=\"unmatched\",method=\"ANY\",status=\"404\"} 1"
    ));
    assert!(text.contains("# TYPE juncture_http_request_duration_seconds histogram"));
}

#[sqlx::test]
async fn running_the_migrations_again_changes_nothing(pool: SqlitePool) {
    let count = || async {
        sqlx::query_scalar::<_, i64>("SELECT COUNT(*) FROM _sqlx_migrations")
            .fetch_one(&pool)
            .await
            .expect("count")
    };
    let before = count().await;
    assert_eq!(before, store::MIGRATOR.iter().count() as i64);
    store::migrate(&pool).await.expect("second run succeeds");
    store::migrate(&pool).await.expect("third run succeeds");
    assert_eq!(count().await, before);
}

#[tokio::test]
async fn connect_creates_the_database_file_where_asked() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("nested-name.db");
    assert!(!path.exists());
    let pool = store::connect(&path).await.expect("opens");
    store::migrate(&pool).await.expect("migrates");
    assert!(path.exists(), "database file was not created at {path:?}");
    let mode: String = sqlx::query_scalar("PRAGMA journal_mode")
        .fetch_one(&pool)
        .await
        .expect("pragma");
    assert_eq!(mode, "wal");
    let fk: i64 = sqlx::query_scalar("PRAGMA foreign_keys")
        .fetch_one(&pool)
        .await
        .expect("pragma");
    assert_eq!(fk, 1);
    let busy: i64 = sqlx::query_scalar("PRAGMA busy_timeout")
        .fetch_one(&pool)
        .await
        .expect("pragma");
    assert_eq!(busy, store::BUSY_TIMEOUT.as_millis() as i64);
}

#[tokio::test]
async fn connect_names_a_missing_folder() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("absent").join("lab.db");
    let error = store::connect(&path).await.expect_err("must fail");
    let message = error.to_string();
    assert!(message.contains("does not exist"), "{message}");
    assert!(message.contains("absent"), "{message}");
}

#[sqlx::test]
async fn the_demo_loads_once_and_refuses_a_second_time(pool: SqlitePool) {
    demo::load(&pool)
        .await
        .expect("loads into an empty database");
    let mut conn = pool.acquire().await.expect("conn");
    let lab = store::lab::get(&mut conn)
        .await
        .expect("query")
        .expect("lab exists");
    assert_eq!(lab.name, demo::DEMO_LAB_NAME);
    assert!((lab.coverage_probability - 0.9545).abs() < 1e-12);
    let error = demo::load(&pool).await.expect_err("second load refused");
    assert!(error.to_string().contains("already holds the laboratory"));
}

#[sqlx::test]
async fn the_home_page_shows_the_demo_lab_and_the_safety_caution(pool: SqlitePool) {
    demo::load(&pool).await.expect("demo");
    let app = app(pool);
    let answer = get(&app, "/").await;
    assert_eq!(answer.status, StatusCode::OK);
    let html = answer.text();
    assert!(html.contains("Larchmere Thermal Metrology"));
    assert!(html.contains("95.45 %"));
    assert!(html.contains("cryogens"));
    assert_eq!(answer.headers["x-content-type-options"], "nosniff");
    assert_eq!(answer.headers["x-frame-options"], "DENY");
    assert!(
        answer.headers["content-security-policy"]
            .to_str()
            .expect("ascii")
            .contains("frame-ancestors 'none'")
    );
}

#[sqlx::test]
async fn the_home_page_explains_how_to_set_up_an_empty_database(pool: SqlitePool) {
    let app = app(pool);
    let answer = get(&app, "/").await;
    assert_eq!(answer.status, StatusCode::OK);
    assert!(answer.text().contains("No laboratory set up yet"));
}

#[sqlx::test]
async fn unknown_api_paths_get_problem_details_and_pages_get_html(pool: SqlitePool) {
    let app = app(pool);
    let api = get(&app, "/api/v1/nothing-here").await;
    assert_eq!(api.status, StatusCode::NOT_FOUND);
    assert_eq!(api.content_type(), "application/problem+json");
    let body = api.json();
    assert_eq!(body["type"], "/problems/not-found");
    assert_eq!(body["title"], "Not found");
    assert_eq!(body["detail"], "there is nothing at /api/v1/nothing-here");

    let page = get(&app, "/nothing-here?x=%3Cscript%3E").await;
    assert_eq!(page.status, StatusCode::NOT_FOUND);
    assert!(page.content_type().starts_with("text/html"));
    assert!(page.text().contains("there is nothing at /nothing-here"));

    let problem = get(&app, "/problems/invalid-input").await;
    assert_eq!(problem.status, StatusCode::OK);
    assert!(problem.text().contains("Invalid input"));
}

#[sqlx::test]
async fn static_css_is_served_and_unknown_files_are_404(pool: SqlitePool) {
    let app = app(pool);
    let css = get(&app, "/static/juncture.css").await;
    assert_eq!(css.status, StatusCode::OK);
    assert_eq!(css.content_type(), "text/css; charset=utf-8");
    assert!(css.text().contains("--accent"));
    let missing = get(&app, "/static/../Cargo.toml").await;
    assert_eq!(missing.status, StatusCode::NOT_FOUND);
}

#[sqlx::test]
async fn responses_are_compressed_when_the_client_accepts_gzip(pool: SqlitePool) {
    let app = app(pool);
    let answer = send(
        &app,
        Request::get("/static/juncture.css")
            .header("accept-encoding", "gzip")
            .body(Body::empty())
            .expect("request"),
    )
    .await;
    assert_eq!(answer.status, StatusCode::OK);
    assert_eq!(answer.headers["content-encoding"], "gzip");
    assert_eq!(&answer.body[..2], &[0x1f, 0x8b], "gzip magic bytes");
}
