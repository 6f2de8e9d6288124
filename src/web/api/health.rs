//! `GET /healthz`: liveness and database readiness for load balancers and
//! container health checks.

use axum::Json;
use axum::extract::State;
use serde::Serialize;

use crate::store;
use crate::web::{AppError, AppState};

/// The health report.
#[derive(Debug, Serialize)]
pub struct Health {
    /// Always `"ok"` when the answer is 200.
    pub status: &'static str,
    /// The service version.
    pub version: &'static str,
    /// The newest applied database migration.
    pub schema_version: Option<i64>,
    /// `"ok"` when the database answered a query.
    pub database: &'static str,
}

/// `GET /healthz`: 200 with the versions when the database answers, 503
/// with a problem document when it does not.
pub async fn healthz(State(state): State<AppState>) -> Result<Json<Health>, AppError> {
    let unavailable = |e: sqlx::Error| {
        tracing::error!(error = %e, "health check: database not answering");
        AppError::Unavailable("the database is not answering".to_owned())
    };
    store::ping(&state.db).await.map_err(unavailable)?;
    let schema_version = store::schema_version(&state.db)
        .await
        .map_err(unavailable)?;
    Ok(Json(Health {
        status: "ok",
        version: crate::VERSION,
        schema_version,
        database: "ok",
    }))
}
