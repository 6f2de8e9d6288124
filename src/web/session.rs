//! Browser sessions: the cookie, the signed-in user extractor and the CSRF
//! check every form goes through.

use axum::extract::FromRequestParts;
use axum::http::request::Parts;
use axum::http::{HeaderMap, header};
use axum::response::{IntoResponse, Redirect, Response};

use super::auth::{Caller, token_hash};
use super::pages::PageError;
use super::{AppError, AppState};
use crate::store::accounts::{Scope, User};
use crate::store::sessions;

/// Name of the session cookie.
pub const SESSION_COOKIE: &str = "juncture_session";
/// Name of the cookie that protects the sign-in form (double submit).
pub const SIGN_IN_COOKIE: &str = "juncture_sign_in";
/// How long a session lasts, hours.
pub const SESSION_HOURS: i64 = 12;

/// The value of a cookie in a request.
#[must_use]
pub fn cookie<'a>(headers: &'a HeaderMap, name: &str) -> Option<&'a str> {
    headers
        .get_all(header::COOKIE)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(';'))
        .filter_map(|pair| pair.trim().split_once('='))
        .find(|(k, _)| *k == name)
        .map(|(_, v)| v)
}

/// Whether the request reached us over TLS (directly or through a proxy
/// that says so), so that cookies get the `Secure` attribute.
#[must_use]
pub fn over_tls(headers: &HeaderMap) -> bool {
    headers
        .get("x-forwarded-proto")
        .and_then(|v| v.to_str().ok())
        .is_some_and(|v| v.eq_ignore_ascii_case("https"))
}

/// A `Set-Cookie` value: HttpOnly, SameSite=Lax, Path=/, Secure over TLS.
#[must_use]
pub fn set_cookie(name: &str, value: &str, max_age_s: i64, secure: bool) -> String {
    format!(
        "{name}={value}; Path=/; HttpOnly; SameSite=Lax; Max-Age={max_age_s}{}",
        if secure { "; Secure" } else { "" }
    )
}

/// A random token (hex, 32 bytes).
#[must_use]
pub fn random_token() -> String {
    let secret = super::auth::new_token_secret();
    secret
        .trim_start_matches(super::auth::TOKEN_PREFIX)
        .to_owned()
}

/// The signed-in user of a page request.
#[derive(Debug, Clone)]
pub struct PageUser {
    /// The user.
    pub user: User,
    /// The session's CSRF token (put in every form).
    pub csrf: String,
    /// SHA-256 of the session cookie (to end the session).
    pub session_hash: String,
}

impl PageUser {
    /// The same person as an API caller with the write scope, so that pages
    /// go through the same checks as the API.
    #[must_use]
    pub fn caller(&self) -> Caller {
        Caller {
            user_id: self.user.id,
            username: self.user.username.clone(),
            display_name: self.user.display_name.clone(),
            role: self.user.role,
            scope: Scope::Write,
        }
    }

    /// Refuses a form whose CSRF token is not this session's.
    ///
    /// # Errors
    /// A 403 page.
    pub fn check_csrf(&self, token: &str) -> Result<(), PageError> {
        if constant_time_eq(token.as_bytes(), self.csrf.as_bytes()) {
            Ok(())
        } else {
            Err(PageError(AppError::Forbidden(
                "the form has expired or did not come from this site; reload the page and send it again"
                    .to_owned(),
            )))
        }
    }
}

/// Compares two byte strings in time independent of where they differ.
#[must_use]
pub fn constant_time_eq(a: &[u8], b: &[u8]) -> bool {
    a.len() == b.len() && a.iter().zip(b).fold(0u8, |acc, (x, y)| acc | (x ^ y)) == 0
}

/// Looks up the session of a request, if any.
///
/// # Errors
/// A database error.
pub async fn session_of(
    headers: &HeaderMap,
    state: &AppState,
) -> Result<Option<PageUser>, AppError> {
    let Some(secret) = cookie(headers, SESSION_COOKIE) else {
        return Ok(None);
    };
    let hash = token_hash(secret);
    // Live sessions are kept until the next database change; the end time
    // is checked on every use, as the query does.
    let changes = state.changes.changes();
    let session = match state.lookups.sessions.get(&hash, changes) {
        Some(s) if s.expires_at > crate::store::now_timestamp() => Some(s),
        Some(_) => None,
        None => {
            let mut conn = state.db.acquire().await?;
            let found = sessions::find(&mut conn, &hash).await?;
            if let Some(s) = &found {
                state
                    .lookups
                    .sessions
                    .insert(hash.clone(), s.clone(), changes);
            }
            found
        }
    };
    Ok(session.map(|s| PageUser {
        user: s.user,
        csrf: s.csrf_token,
        session_hash: hash,
    }))
}

impl FromRequestParts<AppState> for PageUser {
    type Rejection = Response;

    async fn from_request_parts(
        parts: &mut Parts,
        state: &AppState,
    ) -> Result<Self, Self::Rejection> {
        match session_of(&parts.headers, state).await {
            Ok(Some(user)) => Ok(user),
            Ok(None) => {
                let next = parts.uri.path();
                let target = if next.starts_with('/') && !next.starts_with("//") {
                    format!("/sign-in?next={}", percent_encode(next))
                } else {
                    "/sign-in".to_owned()
                };
                Err(Redirect::to(&target).into_response())
            }
            Err(e) => Err(PageError(e).into_response()),
        }
    }
}

/// The signed-in user, if any (for pages anyone may see).
#[derive(Debug, Clone)]
pub struct MaybeUser(pub Option<PageUser>);

impl FromRequestParts<AppState> for MaybeUser {
    type Rejection = Response;

    async fn from_request_parts(
        parts: &mut Parts,
        state: &AppState,
    ) -> Result<Self, Self::Rejection> {
        session_of(&parts.headers, state)
            .await
            .map(MaybeUser)
            .map_err(|e| PageError(e).into_response())
    }
}

/// Percent-encodes a path for a query parameter (unreserved characters and
/// `/` stay).
#[must_use]
pub fn percent_encode(text: &str) -> String {
    text.bytes()
        .map(|b| match b {
            b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'-' | b'_' | b'.' | b'~' | b'/' => {
                (b as char).to_string()
            }
            other => format!("%{other:02X}"),
        })
        .collect()
}
