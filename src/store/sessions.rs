//! Browser sessions (table `web_session`).

use sqlx::SqliteConnection;

use super::accounts::{Role, User};

/// A live session with its user.
#[derive(Debug, Clone)]
pub struct Session {
    /// The signed-in user.
    pub user: User,
    /// The token every form of this session must carry.
    pub csrf_token: String,
    /// When it ends (UTC, the `*_at` text form).
    pub expires_at: String,
}

/// Stores a new session.
///
/// # Errors
/// Any database error.
pub async fn create(
    conn: &mut SqliteConnection,
    id_hash: &str,
    user_id: i64,
    csrf_token: &str,
    expires_at: &str,
) -> sqlx::Result<()> {
    let now = super::now_timestamp();
    sqlx::query!(
        "INSERT INTO web_session (id_hash, user_id, csrf_token, created_at, expires_at) VALUES (?, ?, ?, ?, ?)",
        id_hash,
        user_id,
        csrf_token,
        now,
        expires_at
    )
    .execute(conn)
    .await?;
    Ok(())
}

/// The session behind a cookie hash, if it exists, has not expired and its
/// user is active.
///
/// # Errors
/// Any database error.
pub async fn find(conn: &mut SqliteConnection, id_hash: &str) -> sqlx::Result<Option<Session>> {
    let now = super::now_timestamp();
    let row = sqlx::query!(
        r#"SELECT u.id AS "id!: i64", u.username, u.display_name, u.role, u.password_hash,
                  u.active AS "active: bool", s.csrf_token, s.expires_at
           FROM web_session s JOIN app_user u ON u.id = s.user_id
           WHERE s.id_hash = ? AND s.expires_at > ? AND u.active"#,
        id_hash,
        now
    )
    .fetch_optional(conn)
    .await?;
    let Some(r) = row else { return Ok(None) };
    let role = Role::parse(&r.role).map_err(|e| sqlx::Error::Decode(e.into()))?;
    Ok(Some(Session {
        user: User {
            id: r.id,
            username: r.username,
            display_name: r.display_name,
            role,
            password_hash: r.password_hash,
            active: r.active,
        },
        csrf_token: r.csrf_token,
        expires_at: r.expires_at,
    }))
}

/// Ends a session.
///
/// # Errors
/// Any database error.
pub async fn delete(conn: &mut SqliteConnection, id_hash: &str) -> sqlx::Result<()> {
    sqlx::query!("DELETE FROM web_session WHERE id_hash = ?", id_hash)
        .execute(conn)
        .await?;
    Ok(())
}

/// Ends every session of a user; returns how many there were.
///
/// # Errors
/// Any database error.
pub async fn delete_for_user(conn: &mut SqliteConnection, user_id: i64) -> sqlx::Result<u64> {
    let done = sqlx::query!("DELETE FROM web_session WHERE user_id = ?", user_id)
        .execute(conn)
        .await?;
    Ok(done.rows_affected())
}

/// Records a failed sign-in for `username` at `at` (ISO 8601 UTC) and
/// forgets failures older than `forget_before`.
///
/// # Errors
/// Any database error.
pub async fn record_failure(
    conn: &mut SqliteConnection,
    username: &str,
    at: &str,
    forget_before: &str,
) -> sqlx::Result<()> {
    sqlx::query!(
        "DELETE FROM sign_in_failure WHERE failed_at < ?",
        forget_before
    )
    .execute(&mut *conn)
    .await?;
    sqlx::query!(
        "INSERT INTO sign_in_failure (username, failed_at) VALUES (?, ?)",
        username,
        at
    )
    .execute(conn)
    .await?;
    Ok(())
}

/// Failed sign-ins of `username` at or after `since`: how many, and the
/// earliest of them.
///
/// # Errors
/// Any database error.
pub async fn failures_since(
    conn: &mut SqliteConnection,
    username: &str,
    since: &str,
) -> sqlx::Result<(i64, Option<String>)> {
    let row = sqlx::query!(
        r#"SELECT COUNT(*) AS "count!: i64", MIN(failed_at) AS "first?: String"
           FROM sign_in_failure WHERE username = ? AND failed_at >= ?"#,
        username,
        since
    )
    .fetch_one(conn)
    .await?;
    Ok((row.count, row.first))
}

/// Forgets the failed sign-ins of `username` (after a successful one).
///
/// # Errors
/// Any database error.
pub async fn clear_failures(conn: &mut SqliteConnection, username: &str) -> sqlx::Result<()> {
    sqlx::query!("DELETE FROM sign_in_failure WHERE username = ?", username)
        .execute(conn)
        .await?;
    Ok(())
}
