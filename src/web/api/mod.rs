//! The JSON API under `/api/v1`, plus `/healthz`.

pub mod compute;
pub mod equipment;
pub mod health;
pub mod media;
pub mod openapi;
pub mod records;
pub mod reference;
pub mod register;
pub mod results;
pub mod review;
pub mod runs;
pub mod switches;

use axum::Router;
use axum::routing::{get, post, put};

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
        .route(
            "/api/v1/customers",
            get(records::list_customers).post(records::create_customer),
        )
        .route(
            "/api/v1/customers/{id}",
            get(records::get_customer).put(records::update_customer),
        )
        .route(
            "/api/v1/instruments",
            get(records::list_instruments).post(records::create_instrument),
        )
        .route(
            "/api/v1/instruments/{serial}",
            get(records::get_instrument).put(records::describe_instrument),
        )
        .route(
            "/api/v1/equipment",
            get(equipment::list).post(equipment::create),
        )
        .route("/api/v1/equipment/{asset_id}", get(equipment::get))
        .route(
            "/api/v1/equipment/{asset_id}/status",
            put(equipment::set_status),
        )
        .route(
            "/api/v1/equipment/{asset_id}/certificates",
            post(equipment::add_certificate),
        )
        .route(
            "/api/v1/equipment/{asset_id}/characterisations",
            post(equipment::add_characterisation),
        )
        .route(
            "/api/v1/cmc",
            get(equipment::list_cmc).post(equipment::add_cmc),
        )
        .route(
            "/api/v1/budget-templates/{kind}",
            get(equipment::get_template).put(equipment::put_template),
        )
        .route("/api/v1/runs", get(runs::list).post(runs::create))
        .route("/api/v1/runs/{id}", get(runs::get))
        .route("/api/v1/runs/{id}/set-points", post(runs::add_set_point))
        .route(
            "/api/v1/runs/{id}/set-points/{set_point_id}",
            axum::routing::delete(runs::delete_set_point),
        )
        .route(
            "/api/v1/runs/{id}/set-points/{set_point_id}/readings",
            post(runs::add_readings).get(runs::readings_page),
        )
        .route("/api/v1/runs/{id}/submit", post(runs::submit))
        .route("/api/v1/runs/{id}/switch", put(switches::put_settings))
        .route("/api/v1/runs/{id}/ramps", post(switches::add_ramp))
        .route(
            "/api/v1/runs/{id}/ramps/{ramp_id}",
            axum::routing::delete(switches::delete_ramp),
        )
        .route("/api/v1/runs/{id}/results", get(results::get))
        .route("/api/v1/runs/{id}/approve", post(review::approve))
        .route(
            "/api/v1/runs/{id}/return",
            post(review::return_to_technician),
        )
        .route("/api/v1/review", get(review::queue))
        .route(
            "/api/v1/equipment/{asset_id}/characterisation-runs",
            get(media::list).post(media::add),
        )
        .route("/api/v1/certificates", get(register::list))
        .route(
            "/api/v1/certificates/{number}",
            get(review::certificate_json),
        )
        .route("/api/v1/equipment/{asset_id}/impact", get(register::impact))
        .route(
            "/api/v1/instruments/{serial}/history",
            get(register::history),
        )
        .route(
            "/api/v1/certificates/{number}/pdf",
            get(review::certificate_pdf),
        )
        .route("/api/v1/certificates/{number}/amend", post(review::amend))
        .route(
            "/api/v1/instruments/{serial}/deviation",
            get(review::deviation),
        )
        .route(
            "/api/v1/instruments/{serial}/deviation/evaluate",
            get(review::evaluate),
        )
        .route("/api/v1/impact", get(runs::impact))
}
