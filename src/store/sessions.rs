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
                  u.active AS "active: bool", s.csrf_token
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
