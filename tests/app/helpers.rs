//! Shared test plumbing.

use axum::Router;
use axum::body::Body;
use axum::http::{HeaderMap, Request, StatusCode};
use http_body_util::BodyExt;
use juncture::config::HttpConfig;
use juncture::web::{AppState, router};
use sqlx::SqlitePool;
use tower::ServiceExt;

/// The application over `pool`, as `serve` would build it.
pub fn app(pool: SqlitePool) -> Router {
    router(AppState::new(pool, HttpConfig::default()))
}

/// A finished response.
#[derive(Debug)]
pub struct Answer {
    pub status: StatusCode,
    pub headers: HeaderMap,
    pub body: Vec<u8>,
}

impl Answer {
    pub fn text(&self) -> String {
        String::from_utf8(self.body.clone()).expect("body is UTF-8")
    }

    pub fn json(&self) -> serde_json::Value {
        serde_json::from_slice(&self.body)
            .unwrap_or_else(|e| panic!("body is not JSON ({e}): {}", self.text()))
    }

    pub fn content_type(&self) -> &str {
        self.headers
            .get("content-type")
            .and_then(|v| v.to_str().ok())
            .unwrap_or("")
    }
}

/// Sends one request in-process.
pub async fn send(app: &Router, request: Request<Body>) -> Answer {
    let response = app
        .clone()
        .oneshot(request)
        .await
        .expect("router is infallible");
    let status = response.status();
    let headers = response.headers().clone();
    let body = response
        .into_body()
        .collect()
        .await
        .expect("body collects")
        .to_bytes()
        .to_vec();
    Answer {
        status,
        headers,
        body,
    }
}

/// `GET uri`.
pub async fn get(app: &Router, uri: &str) -> Answer {
    send(
        app,
        Request::get(uri)
            .body(Body::empty())
            .expect("valid request"),
    )
    .await
}

/// `POST uri` with a JSON body.
pub async fn post_json(app: &Router, uri: &str, body: &serde_json::Value) -> Answer {
    send(
        app,
        Request::post(uri)
            .header("content-type", "application/json")
            .body(Body::from(body.to_string()))
            .expect("valid request"),
    )
    .await
}
