//! The JSON API under `/api/v1`, plus `/healthz`.

pub mod health;

use axum::Router;

use super::AppState;

/// Routes of the JSON API.
pub fn routes() -> Router<AppState> {
    Router::new()
}
