//! One error type for the whole web layer.
//!
//! JSON API callers get RFC 9457 problem details
//! (`application/problem+json`); browser pages wrap the same error in a
//! readable page (see `pages::PageError`). Server-side failures are logged
//! with their cause and answered with a generic message: the client never
//! sees internal details.

use axum::Json;
use axum::http::{StatusCode, header};
use axum::response::{IntoResponse, Response};
use serde::Serialize;

/// A problem with one input field.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct FieldError {
    /// The field, as a path into the request (e.g. `points[3].y`, `t_c`).
    pub field: String,
    /// What is wrong and what is allowed.
    pub message: String,
}

impl FieldError {
    /// A field error.
    pub fn new(field: impl Into<String>, message: impl Into<String>) -> Self {
        Self {
            field: field.into(),
            message: message.into(),
        }
    }
}

/// Everything a handler can fail with.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum AppError {
    /// The request is malformed (unparseable body or query string).
    #[error("{0}")]
    BadRequest(String),
    /// Well-formed input that fails validation; one entry per field.
    #[error("{detail}")]
    Invalid {
        /// A sentence summarising the problem.
        detail: String,
        /// The offending fields.
        errors: Vec<FieldError>,
    },
    /// The thing asked for does not exist.
    #[error("{0}")]
    NotFound(String),
    /// The caller may not do this (e.g. a form without a valid CSRF token).
    #[error("{0}")]
    Forbidden(String),
    /// The request conflicts with the current state (e.g. a stale edit).
    #[error("{0}")]
    Conflict(String),
    /// The body is not sent as the media type the endpoint reads.
    #[error("{0}")]
    UnsupportedMediaType(String),
    /// The body exceeds the configured limit.
    #[error("the request body is larger than the limit of {limit_bytes} bytes")]
    PayloadTooLarge {
        /// The limit in bytes.
        limit_bytes: usize,
    },
    /// A dependency (the database) is not available.
    #[error("{0}")]
    Unavailable(String),
    /// A database error; logged, answered generically.
    #[error("database error: {0}")]
    Db(#[from] sqlx::Error),
    /// A template failed to render; logged, answered generically.
    #[error("template error: {0}")]
    Render(#[from] askama::Error),
    /// Any other server-side failure; logged, answered generically.
    #[error("internal error: {0}")]
    Internal(String),
}

impl AppError {
    /// A validation error for a single field.
    pub fn invalid(field: impl Into<String>, message: impl Into<String>) -> Self {
        let error = FieldError::new(field, message);
        Self::Invalid {
            detail: format!("{}: {}", error.field, error.message),
            errors: vec![error],
        }
    }

    /// The HTTP status for this error.
    #[must_use]
    pub fn status(&self) -> StatusCode {
        match self {
            Self::BadRequest(_) => StatusCode::BAD_REQUEST,
            Self::Invalid { .. } => StatusCode::UNPROCESSABLE_ENTITY,
            Self::NotFound(_) | Self::Db(sqlx::Error::RowNotFound) => StatusCode::NOT_FOUND,
            Self::Conflict(_) => StatusCode::CONFLICT,
            Self::Forbidden(_) => StatusCode::FORBIDDEN,
            Self::PayloadTooLarge { .. } => StatusCode::PAYLOAD_TOO_LARGE,
            Self::UnsupportedMediaType(_) => StatusCode::UNSUPPORTED_MEDIA_TYPE,
            Self::Unavailable(_) => StatusCode::SERVICE_UNAVAILABLE,
            Self::Db(_) | Self::Render(_) | Self::Internal(_) => StatusCode::INTERNAL_SERVER_ERROR,
        }
    }

    /// The problem type slug (the `type` member is `/problems/{slug}`).
    #[must_use]
    pub fn slug(&self) -> &'static str {
        match self {
            Self::BadRequest(_) => "bad-request",
            Self::Invalid { .. } => "invalid-input",
            Self::NotFound(_) | Self::Db(sqlx::Error::RowNotFound) => "not-found",
            Self::Conflict(_) => "conflict",
            Self::Forbidden(_) => "forbidden",
            Self::PayloadTooLarge { .. } => "payload-too-large",
            Self::UnsupportedMediaType(_) => "unsupported-media-type",
            Self::Unavailable(_) => "unavailable",
            Self::Db(_) | Self::Render(_) | Self::Internal(_) => "server-error",
        }
    }

    /// The message a client may see. Server-side errors are logged here and
    /// replaced by a generic sentence.
    #[must_use]
    pub fn public_detail(&self) -> String {
        match self {
            Self::Db(sqlx::Error::RowNotFound) => "the requested record does not exist".to_owned(),
            Self::Db(_) | Self::Render(_) | Self::Internal(_) => {
                tracing::error!(error = %self, "request failed on the server");
                "the server could not complete the request; the failure has been logged".to_owned()
            }
            other => other.to_string(),
        }
    }

    /// Field errors, if any.
    #[must_use]
    pub fn field_errors(&self) -> &[FieldError] {
        match self {
            Self::Invalid { errors, .. } => errors,
            _ => &[],
        }
    }
}

/// The RFC 9457 problem-details body.
#[derive(Debug, Serialize)]
pub struct Problem {
    /// A URI reference naming the problem type (`/problems/{slug}`).
    #[serde(rename = "type")]
    pub kind: String,
    /// A short summary of the problem type.
    pub title: &'static str,
    /// The HTTP status code.
    pub status: u16,
    /// What went wrong in this occurrence.
    pub detail: String,
    /// Field-level errors for validation problems.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub errors: Vec<FieldError>,
}

/// Short title per problem type.
#[must_use]
pub fn title_for(slug: &str) -> &'static str {
    match slug {
        "bad-request" => "Malformed request",
        "invalid-input" => "Invalid input",
        "not-found" => "Not found",
        "conflict" => "Conflict with the current state",
        "forbidden" => "Not allowed",
        "payload-too-large" => "Request body too large",
        "unsupported-media-type" => "Unsupported media type",
        "unavailable" => "Service unavailable",
        "timeout" => "Request timed out",
        _ => "Server error",
    }
}

impl AppError {
    /// The problem-details body for this error.
    #[must_use]
    pub fn problem(&self) -> Problem {
        let slug = self.slug();
        Problem {
            kind: format!("/problems/{slug}"),
            title: title_for(slug),
            status: self.status().as_u16(),
            detail: self.public_detail(),
            errors: self.field_errors().to_vec(),
        }
    }
}

impl IntoResponse for AppError {
    fn into_response(self) -> Response {
        let status = self.status();
        let body = self.problem();
        (
            status,
            [(header::CONTENT_TYPE, "application/problem+json")],
            Json(body),
        )
            .into_response()
    }
}
