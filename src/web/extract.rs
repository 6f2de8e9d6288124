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

/// The body limit of the router handling a request (a request extension).
#[derive(Debug, Clone, Copy)]
pub(crate) struct BodyLimit(pub(crate) usize);

/// A JSON request body with problem-details rejections: 415 without a JSON
/// content type, 413 over the body limit, 400 for text that is not JSON
/// (with line and column), 422 for JSON of the wrong shape, naming the
/// field by its path (e.g. `readings[3].uut_signal`).
#[derive(Debug)]
pub struct ApiJson<T>(pub T);

fn is_json(headers: &axum::http::HeaderMap) -> bool {
    headers
        .get(axum::http::header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.split(';').next())
        .map(|v| v.trim().to_ascii_lowercase())
        .is_some_and(|v| {
            v == "application/json" || (v.starts_with("application/") && v.ends_with("+json"))
        })
}

impl<T, S> FromRequest<S> for ApiJson<T>
where
    T: serde::de::DeserializeOwned,
    S: Send + Sync,
{
    type Rejection = AppError;

    async fn from_request(req: axum::extract::Request, state: &S) -> Result<Self, AppError> {
        if !is_json(req.headers()) {
            return Err(AppError::UnsupportedMediaType(
                "the request body must be JSON, sent with `Content-Type: application/json`"
                    .to_owned(),
            ));
        }
        let limit = req
            .extensions()
            .get::<BodyLimit>()
            .map_or_else(body_limit, |b| b.0);
        let bytes = axum::body::Bytes::from_request(req, state)
            .await
            .map_err(|r| {
                if r.status() == StatusCode::PAYLOAD_TOO_LARGE {
                    AppError::PayloadTooLarge { limit_bytes: limit }
                } else {
                    AppError::BadRequest(format!("the request body could not be read: {r}"))
                }
            })?;
        json_from_slice(&bytes).map(Self)
    }
}

/// Reads a JSON object body as `T`: 400 for text that is not JSON (with
/// line and column), 422 for JSON of the wrong shape, naming the field by
/// its path (e.g. `readings[3].uut_signal`).
///
/// # Errors
/// As above.
pub fn json_from_slice<T: serde::de::DeserializeOwned>(bytes: &[u8]) -> Result<T, AppError> {
    let first = bytes.iter().find(|b| !b.is_ascii_whitespace());
    if matches!(
        first,
        Some(b'[' | b'"' | b'0'..=b'9' | b'-' | b't' | b'f' | b'n')
    ) && serde_json::from_slice::<serde::de::IgnoredAny>(bytes).is_ok()
    {
        return Err(AppError::Invalid {
            detail: "the request body must be a JSON object, {...}".to_owned(),
            errors: vec![super::FieldError::new(
                "body",
                "must be a JSON object with the endpoint's fields",
            )],
        });
    }
    let mut de = serde_json::Deserializer::from_slice(bytes);
    match serde_path_to_error::deserialize(&mut de) {
        Ok(v) => {
            de.end().map_err(|e| {
                AppError::BadRequest(format!("the request body is not valid JSON: {e}"))
            })?;
            Ok(v)
        }
        Err(e) => {
            let path = e.path().to_string();
            let inner = e.into_inner();
            if inner.is_data() {
                let message = strip_position(&inner.to_string());
                // "missing field `name`" and "unknown field `x`" sit at the
                // object's path; the field named in the message is meant.
                let named = ["missing field `", "unknown field `"]
                    .iter()
                    .find_map(|p| message.strip_prefix(p))
                    .and_then(|rest| rest.split('`').next());
                let at = if path == "." || path.is_empty() {
                    None
                } else {
                    Some(path)
                };
                let field = match (at, named) {
                    (Some(at), Some(name)) if at == name || at.ends_with(&format!(".{name}")) => at,
                    (Some(at), Some(name)) => format!("{at}.{name}"),
                    (Some(at), None) => at,
                    (None, Some(name)) => name.to_owned(),
                    (None, None) => "body".to_owned(),
                };
                Err(AppError::Invalid {
                    detail: format!("{field}: {message}"),
                    errors: vec![super::FieldError::new(field, message)],
                })
            } else {
                Err(AppError::BadRequest(format!(
                    "the request body is not valid JSON: {inner}"
                )))
            }
        }
    }
}

/// serde_json's data errors end in " at line L column C"; the field path
/// says where, so the position is dropped.
fn strip_position(message: &str) -> String {
    match message.rfind(" at line ") {
        Some(i) => message[..i].to_owned(),
        None => message.to_owned(),
    }
}

/// `axum::extract::Query` with problem-details rejections.
#[derive(Debug, FromRequestParts)]
#[from_request(via(axum::extract::Query), rejection(AppError))]
pub struct ApiQuery<T>(pub T);

impl From<JsonRejection> for AppError {
    fn from(rejection: JsonRejection) -> Self {
        // Used where a handler takes `axum::Json` directly.
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
