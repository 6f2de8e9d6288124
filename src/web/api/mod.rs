//! The JSON API under `/api/v1`, plus `/healthz`.

pub mod compute;
pub mod health;
pub mod openapi;
pub mod reference;

use axum::Router;
use axum::routing::{get, post};

use super::AppState;

/// Routes of the JSON API.
pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/api/v1/openapi.json", get(openapi::document))
        .route(
            "/api/v1/reference/thermocouple",
            get(reference::get_thermocouple),
        )
        .route("/api/v1/reference/prt", get(reference::get_prt))
        .route("/api/v1/reference/its90", get(reference::get_its90))
        .route("/api/v1/reference/tolerance", get(reference::get_tolerance))
        .route("/api/v1/compute/fit", post(compute::post_fit))
        .route(
            "/api/v1/compute/uncertainty",
            post(compute::post_uncertainty),
        )
}
