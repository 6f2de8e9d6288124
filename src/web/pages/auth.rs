//! Signing in and out of the browser pages.

use std::collections::HashMap;

use askama::Template;
use axum::Form;
use axum::extract::{Query, State};
use axum::http::{HeaderMap, HeaderValue, header};
use axum::response::{Html, IntoResponse, Redirect, Response};

use super::{Nav, PageError};
use crate::store::{accounts, sessions};
use crate::web::auth::{token_hash, verify_password};
use crate::web::session::{
    MaybeUser, PageUser, SESSION_COOKIE, SESSION_HOURS, SIGN_IN_COOKIE, constant_time_eq, cookie,
    over_tls, random_token, set_cookie,
};
use crate::web::{AppError, AppState};

#[derive(Template)]
#[template(path = "sign_in.html")]
struct SignInPage {
    nav: Nav,
    csrf: String,
    next: String,
    username: String,
    error: Option<String>,
}

/// Failed sign-ins allowed for one user name within
/// [`THROTTLE_WINDOW_MINUTES`] before further attempts are refused.
pub const MAX_FAILED_SIGN_INS: i64 = 5;
/// Length of the throttling window, minutes.
pub const THROTTLE_WINDOW_MINUTES: i64 = 15;

const STAMP: &[time::format_description::BorrowedFormatItem<'static>] =
    time::macros::format_description!("[year]-[month]-[day]T[hour]:[minute]:[second]Z");

fn utc_stamp(t: time::OffsetDateTime) -> String {
    t.format(STAMP)
        .unwrap_or_else(|_| t.unix_timestamp().to_string())
}

/// Only local paths may be a redirect target after signing in.
fn safe_next(next: Option<&String>) -> String {
    match next {
        Some(n) if n.starts_with('/') && !n.starts_with("//") && !n.contains('\\') => n.clone(),
        _ => "/work".to_owned(),
    }
}

fn render_sign_in(
    headers: &HeaderMap,
    next: String,
    username: String,
    error: Option<String>,
) -> Result<Response, PageError> {
    let csrf = random_token();
    let page = SignInPage {
        nav: Nav::default(),
        csrf: csrf.clone(),
        next,
        username,
        error,
    };
    let html = page.render().map_err(AppError::from)?;
    let mut response = Html(html).into_response();
    let cookie = set_cookie(SIGN_IN_COOKIE, &csrf, 3600, over_tls(headers));
    if let Ok(value) = HeaderValue::from_str(&cookie) {
        response.headers_mut().append(header::SET_COOKIE, value);
    }
    Ok(response)
}

/// `GET /sign-in`.
pub async fn sign_in_page(
    headers: HeaderMap,
    MaybeUser(user): MaybeUser,
    Query(q): Query<HashMap<String, String>>,
) -> Result<Response, PageError> {
    if user.is_some() {
        return Ok(Redirect::to(&safe_next(q.get("next"))).into_response());
    }
    render_sign_in(&headers, safe_next(q.get("next")), String::new(), None)
}

/// `POST /sign-in`.
pub async fn sign_in(
    State(state): State<AppState>,
    headers: HeaderMap,
    Form(form): Form<HashMap<String, String>>,
) -> Result<Response, PageError> {
    let username = form.get("username").map_or("", |s| s.trim()).to_owned();
    let password = form.get("password").map_or("", String::as_str);
    let next = safe_next(form.get("next"));
    // Double-submit check: the form's token must match the cookie set with it.
    let sent = form.get("csrf").map_or("", String::as_str);
    let expected = cookie(&headers, SIGN_IN_COOKIE).unwrap_or("");
    if sent.is_empty() || !constant_time_eq(sent.as_bytes(), expected.as_bytes()) {
        return render_sign_in(
            &headers,
            next,
            username,
            Some("The sign-in form had expired. Please sign in again.".to_owned()),
        );
    }
    let mut conn = state.db.acquire().await.map_err(AppError::from)?;
    // Throttling by user name (any spelling of its case): after
    // MAX_FAILED_SIGN_INS failures within the window, no password is even
    // checked until the oldest of them leaves the window.
    let key = username.to_lowercase();
    let now = time::OffsetDateTime::now_utc();
    let window = time::Duration::minutes(THROTTLE_WINDOW_MINUTES);
    let (failures, first) = sessions::failures_since(&mut conn, &key, &utc_stamp(now - window))
        .await
        .map_err(AppError::from)?;
    if failures >= MAX_FAILED_SIGN_INS {
        let until = first
            .and_then(|f| {
                time::PrimitiveDateTime::parse(&f, STAMP)
                    .ok()
                    .map(|t| t.assume_utc() + window)
            })
            .unwrap_or(now + window);
        tracing::warn!(username = %key, failures, "sign-in refused: too many recent failures");
        return render_sign_in(
            &headers,
            next,
            username,
            Some(format!(
                "Too many failed sign-ins for this user name ({failures} in the last {THROTTLE_WINDOW_MINUTES} minutes). Try again after {:02}:{:02} UTC, or ask an administrator.",
                until.hour(),
                until.minute()
            )),
        );
    }
    let user = accounts::user_by_username(&mut conn, &username)
        .await
        .map_err(AppError::from)?;
    // Argon2id takes tens of milliseconds: keep it off the async workers.
    let candidate = user.clone();
    let given = password.to_owned();
    let verified = tokio::task::spawn_blocking(move || {
        candidate.is_some_and(|u| u.active && verify_password(&given, &u.password_hash))
    })
    .await
    .map_err(|e| AppError::Internal(format!("password check failed: {e}")))?;
    let user = match user {
        Some(u) if verified => u,
        _ => {
            sessions::record_failure(&mut conn, &key, &utc_stamp(now), &utc_stamp(now - window))
                .await
                .map_err(AppError::from)?;
            tracing::info!(username = %key, "sign-in failed");
            return render_sign_in(
                &headers,
                next,
                username,
                Some("The user name or the password is not right.".to_owned()),
            );
        }
    };
    sessions::clear_failures(&mut conn, &key)
        .await
        .map_err(AppError::from)?;
    let secret = random_token();
    let expires = time::OffsetDateTime::now_utc() + time::Duration::hours(SESSION_HOURS);
    let expires = expires
        .format(&time::macros::format_description!(
            "[year]-[month]-[day]T[hour]:[minute]:[second]Z"
        ))
        .map_err(|e| AppError::Internal(e.to_string()))?;
    sessions::create(
        &mut conn,
        &token_hash(&secret),
        user.id,
        &random_token(),
        &expires,
    )
    .await
    .map_err(AppError::from)?;
    let mut response = Redirect::to(&next).into_response();
    let tls = over_tls(&headers);
    for value in [
        set_cookie(SESSION_COOKIE, &secret, SESSION_HOURS * 3600, tls),
        set_cookie(SIGN_IN_COOKIE, "", 0, tls),
    ] {
        if let Ok(v) = HeaderValue::from_str(&value) {
            response.headers_mut().append(header::SET_COOKIE, v);
        }
    }
    Ok(response)
}

/// `POST /sign-out`.
pub async fn sign_out(
    State(state): State<AppState>,
    headers: HeaderMap,
    user: PageUser,
    Form(form): Form<HashMap<String, String>>,
) -> Result<Response, PageError> {
    user.check_csrf(form.get("csrf").map_or("", String::as_str))?;
    // A write transaction, so that the session cache drops it at once.
    let mut tx = crate::store::begin_write(&state.db)
        .await
        .map_err(AppError::from)?;
    sessions::delete(&mut tx, &user.session_hash)
        .await
        .map_err(AppError::from)?;
    tx.commit().await.map_err(AppError::from)?;
    let mut response = Redirect::to("/sign-in").into_response();
    let value = set_cookie(SESSION_COOKIE, "", 0, over_tls(&headers));
    if let Ok(v) = HeaderValue::from_str(&value) {
        response.headers_mut().append(header::SET_COOKIE, v);
    }
    Ok(response)
}
