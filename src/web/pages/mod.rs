//! Browser pages, rendered on the server with askama. They work without
//! JavaScript; errors render as a readable page.

pub mod auth;
pub mod convert;
pub mod register;
pub mod review;
pub mod runs;

use askama::Template;
use axum::Router;
use axum::extract::{OriginalUri, Path, State};
use axum::http::StatusCode;
use axum::response::{Html, IntoResponse, Response};
use axum::routing::get;

use super::error::title_for;
use super::{AppError, AppState};
use crate::store;

/// Routes of the browser pages.
pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/", get(home))
        .route("/problems/{slug}", get(problem_type))
        .route("/convert", get(convert::page))
        .route("/sign-in", get(auth::sign_in_page).post(auth::sign_in))
        .route("/sign-out", axum::routing::post(auth::sign_out))
        .route("/work", get(runs::work))
        .route("/runs/new", get(runs::new_run_page).post(runs::new_run))
        .route("/runs/{id}", get(runs::run_page))
        .route(
            "/runs/{id}/set-points",
            axum::routing::post(runs::add_set_point),
        )
        .route(
            "/runs/{id}/set-points/{set_point_id}/delete",
            axum::routing::post(runs::delete_set_point),
        )
        .route("/runs/{id}/submit", axum::routing::post(runs::submit))
        .route(
            "/runs/{id}/switch",
            axum::routing::post(runs::switch_settings),
        )
        .route("/runs/{id}/ramps", axum::routing::post(runs::add_ramp))
        .route(
            "/runs/{id}/ramps/{ramp_id}/delete",
            axum::routing::post(runs::delete_ramp),
        )
        .route("/runs/{id}/approve", axum::routing::post(review::approve))
        .route(
            "/runs/{id}/return",
            axum::routing::post(review::return_to_technician),
        )
        .route("/review", get(review::queue))
        .route("/certificates", get(register::register))
        .route("/impact", get(register::impact))
        .route("/impact.csv", get(register::impact_csv))
        .route("/instruments/{serial}", get(register::history))
        .route("/verify", get(review::verify_page))
        .route("/certificates/{number}", get(review::certificate))
        .route("/certificates/{number}/pdf", get(review::certificate_pdf))
        .route(
            "/certificates/{number}/amend",
            axum::routing::post(review::amend),
        )
}

/// What the page header shows about the signed-in person.
#[derive(Debug, Clone, Default)]
pub struct Nav {
    /// Display name, when signed in.
    pub user: Option<String>,
    /// The session's CSRF token (for the sign-out form).
    pub csrf: String,
}

impl Nav {
    /// The header for `user`.
    #[must_use]
    pub fn of(user: Option<&super::session::PageUser>) -> Self {
        user.map_or_else(Self::default, |u| Self {
            user: Some(format!(
                "{} ({})",
                u.user.display_name,
                u.user.role.as_str()
            )),
            csrf: u.csrf.clone(),
        })
    }
}

/// An error shown to a person: the same [`AppError`], rendered as a page.
#[derive(Debug)]
pub struct PageError(pub AppError);

impl<E: Into<AppError>> From<E> for PageError {
    fn from(error: E) -> Self {
        Self(error.into())
    }
}

#[derive(Template)]
#[template(path = "error.html")]
struct ErrorPage<'a> {
    nav: Nav,
    title: &'a str,
    status: u16,
    detail: String,
    errors: &'a [super::FieldError],
}

impl IntoResponse for PageError {
    fn into_response(self) -> Response {
        let status = self.0.status();
        let page = ErrorPage {
            nav: Nav::default(),
            title: title_for(self.0.slug()),
            status: status.as_u16(),
            detail: self.0.public_detail(),
            errors: self.0.field_errors(),
        };
        match page.render() {
            Ok(html) => (status, Html(html)).into_response(),
            Err(e) => {
                tracing::error!(error = %e, "error page failed to render");
                (status, "The page could not be shown.").into_response()
            }
        }
    }
}

#[derive(Template)]
#[template(path = "home.html")]
struct HomePage {
    nav: Nav,
    lab: Option<store::lab::LabSettings>,
    coverage_percent: String,
    version: &'static str,
}

/// `GET /`: the laboratory's identity and settings, and where to go next.
async fn home(
    State(state): State<AppState>,
    super::session::MaybeUser(user): super::session::MaybeUser,
) -> Result<Html<String>, PageError> {
    let mut conn = state.db.acquire().await.map_err(AppError::from)?;
    let lab = store::lab::get(&mut conn).await.map_err(AppError::from)?;
    let coverage_percent = lab
        .as_ref()
        .map(|l| format!("{:.2} %", l.coverage_probability * 100.0))
        .unwrap_or_default();
    let page = HomePage {
        nav: Nav::of(user.as_ref()),
        lab,
        coverage_percent,
        version: crate::VERSION,
    };
    Ok(Html(page.render().map_err(AppError::from)?))
}

/// What each problem type means, for people following a `type` link.
const PROBLEM_TYPES: &[(&str, &str)] = &[
    (
        "bad-request",
        "The request could not be read: the body is not valid JSON, a required query parameter is missing, or a value has the wrong form. The detail names what could not be read.",
    ),
    (
        "invalid-input",
        "The request was read but a value is not acceptable, for example a temperature outside the range a reference function is defined for. The errors list names each field and what is allowed.",
    ),
    ("not-found", "The record or page asked for does not exist."),
    (
        "conflict",
        "The request conflicts with the current state of the record, for example an edit based on an outdated copy.",
    ),
    (
        "unsupported-media-type",
        "The request body was not sent as the type the endpoint reads; JSON endpoints need `Content-Type: application/json`.",
    ),
    (
        "payload-too-large",
        "The request body is larger than the service accepts. The detail states the limit.",
    ),
    (
        "unavailable",
        "The service cannot answer right now, usually because the database does not respond.",
    ),
    (
        "timeout",
        "The request took longer than the service allows.",
    ),
    (
        "server-error",
        "The service failed to complete the request. The failure is logged for the laboratory's administrator.",
    ),
];

#[derive(Template)]
#[template(path = "problem_type.html")]
struct ProblemTypePage<'a> {
    nav: Nav,
    slug: &'a str,
    title: &'a str,
    explanation: &'a str,
}

/// `GET /problems/{slug}`: explains a problem type named in an API error.
async fn problem_type(Path(slug): Path<String>) -> Result<Html<String>, PageError> {
    let (slug, explanation) = PROBLEM_TYPES
        .iter()
        .find(|(s, _)| *s == slug)
        .ok_or_else(|| AppError::NotFound(format!("there is no problem type {slug:?}")))?;
    let page = ProblemTypePage {
        nav: Nav::default(),
        slug,
        title: title_for(slug),
        explanation,
    };
    Ok(Html(page.render().map_err(AppError::from)?))
}

/// Fallback for unknown paths: problem details under `/api/`, a page
/// elsewhere.
pub async fn not_found(State(state): State<AppState>, OriginalUri(uri): OriginalUri) -> Response {
    state
        .metrics
        .observe("unmatched", "ANY", StatusCode::NOT_FOUND.as_u16(), 0.0);
    let error = AppError::NotFound(format!("there is nothing at {}", uri.path()));
    if uri.path().starts_with("/api/") {
        error.into_response()
    } else {
        PageError(error).into_response()
    }
}
