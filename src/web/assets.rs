//! Static files embedded in the binary, so that a deployed service needs
//! nothing beside its executable and its database file.

use axum::extract::Path;
use axum::http::header;
use axum::response::{IntoResponse, Response};

use super::AppError;

/// (name, content type, body)
const FILES: &[(&str, &str, &str)] = &[
    (
        "juncture.css",
        "text/css; charset=utf-8",
        include_str!("../../static/juncture.css"),
    ),
    (
        "grid.js",
        "text/javascript; charset=utf-8",
        include_str!("../../static/grid.js"),
    ),
];

/// `GET /static/{file}`.
///
/// # Errors
/// [`AppError::NotFound`] for an unknown file name.
pub async fn serve(Path(file): Path<String>) -> Result<Response, AppError> {
    let (_, content_type, body) = FILES
        .iter()
        .find(|(name, _, _)| *name == file)
        .ok_or_else(|| AppError::NotFound(format!("there is no static file named {file:?}")))?;
    Ok((
        [
            (header::CONTENT_TYPE, *content_type),
            (header::CACHE_CONTROL, "public, max-age=3600"),
        ],
        *body,
    )
        .into_response())
}
