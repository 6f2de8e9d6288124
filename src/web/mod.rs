//! The axum application: shared state, the router with its middleware, and
//! the server loop with graceful shutdown.
//!
//! `api/` answers JSON under `/api/v1`, `pages/` renders the browser pages;
//! both share [`AppError`] and the extractors in [`extract`].

pub mod api;
pub mod assets;
pub mod auth;
pub mod cache;
pub mod error;
pub mod extract;
pub mod metrics;
pub mod pages;
pub mod session;

use std::sync::Arc;

use axum::Router;
use axum::extract::DefaultBodyLimit;
use axum::http::{HeaderName, HeaderValue, StatusCode, header};
use axum::routing::get;
use sqlx::SqlitePool;
use tokio::net::TcpListener;
use tower_http::compression::CompressionLayer;
use tower_http::limit::RequestBodyLimitLayer;
use tower_http::set_header::SetResponseHeaderLayer;
use tower_http::timeout::TimeoutLayer;
use tower_http::trace::TraceLayer;

pub use error::{AppError, FieldError};

use crate::config::HttpConfig;

/// State shared by every handler: one reference-counted pointer, so that
/// the clone each extractor makes costs one atomic increment (the fields
/// are reached through `Deref`, e.g. `state.db`).
#[derive(Debug, Clone)]
pub struct AppState(Arc<Shared>);

/// What [`AppState`] shares.
#[derive(Debug)]
pub struct Shared {
    /// The database pool.
    pub db: SqlitePool,
    /// Request counters and latency histograms for `/metrics`.
    pub metrics: metrics::Metrics,
    /// HTTP limits, shown in error messages (e.g. the body limit).
    pub http: HttpConfig,
    /// What is rendered from issued certificates, kept by fingerprint.
    pub artefacts: cache::Artefacts,
    /// Hot look-ups (token owners, current certificates) kept until the
    /// next database change.
    pub lookups: cache::Lookups,
    /// Notices commits, also by other processes, for those caches.
    pub changes: Arc<crate::store::ChangeWatch>,
}

impl std::ops::Deref for AppState {
    type Target = Shared;
    fn deref(&self) -> &Shared {
        &self.0
    }
}

impl AppState {
    /// State over an open, migrated pool with the given HTTP limits.
    #[must_use]
    pub fn new(db: SqlitePool, http: HttpConfig) -> Self {
        Self(Arc::new(Shared {
            metrics: metrics::Metrics::default(),
            http,
            artefacts: cache::Artefacts::default(),
            lookups: cache::Lookups::default(),
            changes: Arc::new(crate::store::ChangeWatch::for_pool(&db)),
            db,
        }))
    }
}

/// Content-Security-Policy for every response: only our own scripts,
/// styles and images; no framing; forms post only to us.
const CSP: &str = "default-src 'self'; img-src 'self' data:; style-src 'self'; script-src 'self'; \
                   object-src 'none'; frame-ancestors 'none'; form-action 'self'; base-uri 'none'";

/// Builds the application router with all middleware. Tests call this and
/// send requests in-process; `serve` binds it to a socket.
pub fn router(state: AppState) -> Router {
    let http = state.http.clone();
    extract::set_body_limit(http.body_limit_bytes);
    let routes = Router::new()
        .merge(api::routes())
        .merge(pages::routes())
        .route("/healthz", get(api::health::healthz))
        .route("/metrics", get(metrics::exposition))
        .route("/static/{file}", get(assets::serve))
        // A hard cap for bodies read without an extractor, slightly above
        // the extractor limit so that extractors produce the clearer error.
        .route_layer(RequestBodyLimitLayer::new(http.body_limit_bytes + 1024))
        // Logger files stream past that cap with their own limit.
        .merge(upload_routes(http.upload_limit_bytes))
        // Count and time every matched route. A route layer sees the
        // matched path template (e.g. `/api/v1/instruments/{serial}`), which
        // keeps the label set small.
        .route_layer(axum::middleware::from_fn_with_state(
            state.clone(),
            metrics::track,
        ))
        .fallback(pages::not_found);

    routes
        .with_state(state)
        .layer(DefaultBodyLimit::max(http.body_limit_bytes))
        // The limit travels with each request so that a 413 states the
        // limit of the router that answered (several routers may live in
        // one process, e.g. in tests).
        .layer(axum::Extension(extract::BodyLimit(http.body_limit_bytes)))
        .layer(TimeoutLayer::with_status_code(
            StatusCode::REQUEST_TIMEOUT,
            http.request_timeout,
        ))
        .layer(CompressionLayer::new())
        .layer(security_header(header::X_CONTENT_TYPE_OPTIONS, "nosniff"))
        .layer(security_header(header::X_FRAME_OPTIONS, "DENY"))
        .layer(security_header(header::REFERRER_POLICY, "same-origin"))
        .layer(security_header(header::CONTENT_SECURITY_POLICY, CSP))
        .layer(security_header(
            HeaderName::from_static("cross-origin-opener-policy"),
            "same-origin",
        ))
        .layer(TraceLayer::new_for_http())
}

/// Routes that stream logger files: kept apart so that the general body
/// limit does not apply to them; they take the upload limit instead.
fn upload_routes(limit_bytes: u64) -> Router<AppState> {
    Router::new()
        .route(
            "/api/v1/runs/{id}/set-points/{set_point_id}/readings/file",
            axum::routing::post(api::runs::add_readings_file),
        )
        // The run page's readings form: its file field streams through
        // the same reader; its other fields keep the general limit.
        .route(
            "/runs/{id}/set-points/{set_point_id}/readings",
            axum::routing::post(pages::runs::add_readings),
        )
        .layer(DefaultBodyLimit::max(
            usize::try_from(limit_bytes).unwrap_or(usize::MAX),
        ))
}

fn security_header(name: HeaderName, value: &'static str) -> SetResponseHeaderLayer<HeaderValue> {
    SetResponseHeaderLayer::if_not_present(name, HeaderValue::from_static(value))
}

/// Serves the application on `listener` until SIGINT or SIGTERM, then
/// stops accepting connections and lets requests in flight finish.
///
/// # Errors
/// An I/O error from the listener.
pub async fn serve(listener: TcpListener, state: AppState) -> std::io::Result<()> {
    tokio::spawn(crate::store::watch_other_writers(
        state.db.clone(),
        state.changes.clone(),
    ));
    let app = router(state.clone());
    axum::serve(listener, app)
        .with_graceful_shutdown(shutdown_signal())
        .await?;
    // Flush the write-ahead log into the main file so a copied database
    // file is complete on its own.
    state.db.close().await;
    Ok(())
}

async fn shutdown_signal() {
    let ctrl_c = async {
        if tokio::signal::ctrl_c().await.is_err() {
            // No handler could be installed; rely on SIGTERM alone.
            std::future::pending::<()>().await;
        }
    };
    #[cfg(unix)]
    let terminate = async {
        match tokio::signal::unix::signal(tokio::signal::unix::SignalKind::terminate()) {
            Ok(mut signal) => {
                signal.recv().await;
            }
            Err(_) => std::future::pending::<()>().await,
        }
    };
    #[cfg(not(unix))]
    let terminate = std::future::pending::<()>();
    tokio::select! {
        () = ctrl_c => {},
        () = terminate => {},
    }
    tracing::info!("shutdown signal received; finishing requests in flight");
}
