//! Extractors that turn malformed requests into our problem details instead
//! of axum's plain-text rejections.

use axum::extract::rejection::{JsonRejection, QueryRejection};
use axum::extract::{FromRequest, FromRequestParts};
use axum::http::StatusCode;

use super::AppError;

use std::sync::atomic::{AtomicUsize, Ordering};

/// The body limit in force, recorded by `web::router` so that rejections
/// (which have no access to the state) can state it.
static BODY_LIMIT: AtomicUsize = AtomicUsize::new(0);

pub(crate) fn set_body_limit(bytes: usize) {
    BODY_LIMIT.store(bytes, Ordering::Relaxed);
}

fn body_limit() -> usize {
    BODY_LIMIT.load(Ordering::Relaxed)
}

/// `axum::Json` with problem-details rejections.
#[derive(Debug, FromRequest)]
#[from_request(via(axum::Json), rejection(AppError))]
pub struct ApiJson<T>(pub T);

/// `axum::extract::Query` with problem-details rejections.
#[derive(Debug, FromRequestParts)]
#[from_request(via(axum::extract::Query), rejection(AppError))]
pub struct ApiQuery<T>(pub T);

impl From<JsonRejection> for AppError {
    fn from(rejection: JsonRejection) -> Self {
        match rejection.status() {
            StatusCode::PAYLOAD_TOO_LARGE => Self::PayloadTooLarge {
                limit_bytes: body_limit(),
            },
            StatusCode::UNSUPPORTED_MEDIA_TYPE => Self::BadRequest(
                "the request body must be JSON, sent with `Content-Type: application/json`"
                    .to_owned(),
            ),
            _ => Self::BadRequest(format!(
                "the request body is not valid JSON for this endpoint: {}",
                rejection.body_text()
            )),
        }
    }
}

impl From<QueryRejection> for AppError {
    fn from(rejection: QueryRejection) -> Self {
        Self::BadRequest(format!(
            "the query string is not valid for this endpoint: {}",
            rejection.body_text()
        ))
    }
}
