//! Who is calling: bearer tokens for the API (browser sessions join later),
//! and the checks of scope and role each handler asks for.

use argon2::Argon2;
use argon2::password_hash::{PasswordHash, PasswordHasher, PasswordVerifier, SaltString};
use axum::extract::FromRequestParts;
use axum::http::request::Parts;
use axum::http::{StatusCode, header};
use axum::response::{IntoResponse, Response};
use rand::RngCore;
use sha2::{Digest, Sha256};

use super::{AppError, AppState};
use crate::store::accounts::{self, Role, Scope};

/// Prefix of every token secret, so that leaked tokens are easy to find.
pub const TOKEN_PREFIX: &str = "jct_";
/// Shortest password accepted.
pub const MIN_PASSWORD_CHARS: usize = 12;

/// Hashes a password with argon2id (default parameters of the argon2 crate).
///
/// # Errors
/// A sentence when the password is too short or hashing fails.
pub fn hash_password(password: &str) -> Result<String, String> {
    if password.chars().count() < MIN_PASSWORD_CHARS {
        return Err(format!(
            "the password must have at least {MIN_PASSWORD_CHARS} characters"
        ));
    }
    let mut salt = [0u8; 16];
    rand::rng().fill_bytes(&mut salt);
    let salt = SaltString::encode_b64(&salt).map_err(|e| e.to_string())?;
    Argon2::default()
        .hash_password(password.as_bytes(), &salt)
        .map(|h| h.to_string())
        .map_err(|e| e.to_string())
}

/// Checks a password against a stored argon2 hash.
#[must_use]
pub fn verify_password(password: &str, stored: &str) -> bool {
    PasswordHash::new(stored).is_ok_and(|h| {
        Argon2::default()
            .verify_password(password.as_bytes(), &h)
            .is_ok()
    })
}

/// A fresh token secret: the prefix and 32 random bytes in hex.
#[must_use]
pub fn new_token_secret() -> String {
    let mut bytes = [0u8; 32];
    rand::rng().fill_bytes(&mut bytes);
    format!("{TOKEN_PREFIX}{}", hex::encode(bytes))
}

/// The stored form of a token secret (SHA-256, hex). Tokens are long
/// random strings, so a fast hash is enough; passwords use argon2.
#[must_use]
pub fn token_hash(secret: &str) -> String {
    hex::encode(Sha256::digest(secret.as_bytes()))
}

/// The authenticated caller of an API request.
#[derive(Debug, Clone)]
pub struct Caller {
    /// User id.
    pub user_id: i64,
    /// Sign-in name (written into the audit trail).
    pub username: String,
    /// Display name.
    pub display_name: String,
    /// Role.
    pub role: Role,
    /// Token scope.
    pub scope: Scope,
}

/// Why a request was refused.
#[derive(Debug)]
pub enum AuthError {
    /// No or an unknown credential: 401.
    Unauthenticated(String),
    /// Known caller without the right: 403.
    Forbidden(String),
    /// The store failed.
    Store(AppError),
}

impl IntoResponse for AuthError {
    fn into_response(self) -> Response {
        let (status, detail, slug, title) = match self {
            AuthError::Store(e) => return e.into_response(),
            AuthError::Unauthenticated(d) => (
                StatusCode::UNAUTHORIZED,
                d,
                "unauthenticated",
                "Sign-in required",
            ),
            AuthError::Forbidden(d) => (StatusCode::FORBIDDEN, d, "forbidden", "Not allowed"),
        };
        let body = serde_json::json!({
            "type": format!("/problems/{slug}"),
            "title": title,
            "status": status.as_u16(),
            "detail": detail,
        });
        let mut response = (
            status,
            [(header::CONTENT_TYPE, "application/problem+json")],
            body.to_string(),
        )
            .into_response();
        if status == StatusCode::UNAUTHORIZED {
            response.headers_mut().insert(
                header::WWW_AUTHENTICATE,
                header::HeaderValue::from_static("Bearer realm=\"juncture\""),
            );
        }
        response
    }
}

impl FromRequestParts<AppState> for Caller {
    type Rejection = AuthError;

    async fn from_request_parts(
        parts: &mut Parts,
        state: &AppState,
    ) -> Result<Self, Self::Rejection> {
        let value = parts
            .headers
            .get(header::AUTHORIZATION)
            .ok_or_else(|| {
                AuthError::Unauthenticated(
                    "this endpoint needs an API token: send `Authorization: Bearer <token>` (create one with `juncture token create`)"
                        .to_owned(),
                )
            })?
            .to_str()
            .map_err(|_| AuthError::Unauthenticated("the Authorization header is not readable text".to_owned()))?;
        let secret = value
            .strip_prefix("Bearer ")
            .map(str::trim)
            .filter(|s| !s.is_empty())
            .ok_or_else(|| {
                AuthError::Unauthenticated(
                    "the Authorization header must read `Bearer <token>`".to_owned(),
                )
            })?;
        let hash = token_hash(secret);
        // Known tokens are kept until the next database change (a revoked
        // token or deactivated user is a change); unknown ones are always
        // asked for.
        let changes = state.changes.changes();
        if let Some(caller) = state.lookups.tokens.get(&hash, changes) {
            return Ok(caller);
        }
        let mut conn = state
            .db
            .acquire()
            .await
            .map_err(|e| AuthError::Store(e.into()))?;
        let (user, scope) = accounts::token_owner(&mut conn, &hash)
            .await
            .map_err(|e| AuthError::Store(e.into()))?
            .ok_or_else(|| {
                AuthError::Unauthenticated("the token is unknown or has been revoked".to_owned())
            })?;
        let caller = Caller {
            user_id: user.id,
            username: user.username,
            display_name: user.display_name,
            role: user.role,
            scope,
        };
        state.lookups.tokens.insert(hash, caller.clone(), changes);
        Ok(caller)
    }
}

impl Caller {
    /// Refuses callers whose token is read-only or whose role is not in
    /// `roles`.
    ///
    /// # Errors
    /// [`AuthError::Forbidden`] naming what is missing.
    pub fn may_change(&self, roles: &[Role], what: &str) -> Result<(), AuthError> {
        if self.scope != Scope::Write {
            return Err(AuthError::Forbidden(format!(
                "this token is read-only; {what} needs a token with the write scope"
            )));
        }
        if !roles.contains(&self.role) {
            let allowed: Vec<&str> = roles.iter().map(|r| r.as_str()).collect();
            return Err(AuthError::Forbidden(format!(
                "{what} is for {}; {} is a {}",
                allowed.join(" or "),
                self.username,
                self.role.as_str()
            )));
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn passwords_hash_with_argon2id_and_verify() {
        let stored = hash_password("correct horse battery").expect("hash");
        assert!(stored.starts_with("$argon2id$"), "{stored}");
        assert!(verify_password("correct horse battery", &stored));
        assert!(!verify_password("correct horse batterx", &stored));
        assert!(hash_password("short").is_err());
    }

    #[test]
    fn token_secrets_are_random_and_stored_as_sha256() {
        let a = new_token_secret();
        let b = new_token_secret();
        assert_ne!(a, b);
        assert!(a.starts_with(TOKEN_PREFIX));
        assert_eq!(a.len(), TOKEN_PREFIX.len() + 64);
        // FIPS 180-4 test vector: SHA-256("abc").
        assert_eq!(
            token_hash("abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }
}
