//! Users, their roles and passwords, and API tokens.

use sqlx::SqliteConnection;

/// What a user may do.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Role {
    /// Records runs and readings.
    Technician,
    /// Reviews and approves other people's runs.
    Reviewer,
    /// Manages equipment, users and lab settings.
    Administrator,
}

impl Role {
    /// The stored name.
    #[must_use]
    pub fn as_str(self) -> &'static str {
        match self {
            Role::Technician => "technician",
            Role::Reviewer => "reviewer",
            Role::Administrator => "administrator",
        }
    }

    /// Parses a stored or typed role name.
    ///
    /// # Errors
    /// A sentence naming the accepted roles.
    pub fn parse(text: &str) -> Result<Self, String> {
        match text.trim().to_ascii_lowercase().as_str() {
            "technician" => Ok(Role::Technician),
            "reviewer" => Ok(Role::Reviewer),
            "administrator" | "admin" => Ok(Role::Administrator),
            other => Err(format!(
                "unknown role {other:?}; expected technician, reviewer or administrator"
            )),
        }
    }
}

/// What a token may do.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Scope {
    /// Read only (GET).
    Read,
    /// Read and change, as far as the user's role allows.
    Write,
}

impl Scope {
    /// The stored name.
    #[must_use]
    pub fn as_str(self) -> &'static str {
        match self {
            Scope::Read => "read",
            Scope::Write => "write",
        }
    }

    /// Parses a scope name.
    ///
    /// # Errors
    /// A sentence naming the accepted scopes.
    pub fn parse(text: &str) -> Result<Self, String> {
        match text.trim().to_ascii_lowercase().as_str() {
            "read" => Ok(Scope::Read),
            "write" => Ok(Scope::Write),
            other => Err(format!("unknown scope {other:?}; expected read or write")),
        }
    }
}

/// A user as stored.
#[derive(Debug, Clone, PartialEq)]
pub struct User {
    /// Row id.
    pub id: i64,
    /// Sign-in name.
    pub username: String,
    /// Name shown on records and certificates.
    pub display_name: String,
    /// Role.
    pub role: Role,
    /// argon2id PHC string.
    pub password_hash: String,
    /// Whether the user may sign in.
    pub active: bool,
}

struct UserRow {
    id: i64,
    username: String,
    display_name: String,
    role: String,
    password_hash: String,
    active: bool,
}

impl TryFrom<UserRow> for User {
    type Error = sqlx::Error;
    fn try_from(r: UserRow) -> Result<Self, Self::Error> {
        Ok(User {
            id: r.id,
            username: r.username,
            display_name: r.display_name,
            role: Role::parse(&r.role).map_err(|e| sqlx::Error::Decode(e.into()))?,
            password_hash: r.password_hash,
            active: r.active,
        })
    }
}

/// Creates a user; returns its id.
///
/// # Errors
/// Any database error; a taken username is a unique violation.
pub async fn create_user(
    conn: &mut SqliteConnection,
    username: &str,
    display_name: &str,
    role: Role,
    password_hash: &str,
) -> sqlx::Result<i64> {
    let now = super::now_timestamp();
    let role = role.as_str();
    let row = sqlx::query!(
        r#"INSERT INTO app_user (username, display_name, role, password_hash, created_at)
         VALUES (?, ?, ?, ?, ?) RETURNING id AS "id!: i64""#,
        username,
        display_name,
        role,
        password_hash,
        now
    )
    .fetch_one(conn)
    .await?;
    Ok(row.id)
}

/// Finds a user by sign-in name.
///
/// # Errors
/// Any database error.
pub async fn user_by_username(
    conn: &mut SqliteConnection,
    username: &str,
) -> sqlx::Result<Option<User>> {
    let row = sqlx::query_as!(
        UserRow,
        r#"SELECT id AS "id!: i64", username, display_name, role, password_hash, active AS "active: bool"
           FROM app_user WHERE username = ?"#,
        username
    )
    .fetch_optional(conn)
    .await?;
    row.map(User::try_from).transpose()
}

/// Stores a token (only its hash); returns its id.
///
/// # Errors
/// Any database error.
pub async fn create_token(
    conn: &mut SqliteConnection,
    user_id: i64,
    name: &str,
    scope: Scope,
    token_hash: &str,
) -> sqlx::Result<i64> {
    let now = super::now_timestamp();
    let scope = scope.as_str();
    let row = sqlx::query!(
        r#"INSERT INTO api_token (user_id, name, token_hash, scope, created_at)
         VALUES (?, ?, ?, ?, ?) RETURNING id AS "id!: i64""#,
        user_id,
        name,
        token_hash,
        scope,
        now
    )
    .fetch_one(conn)
    .await?;
    Ok(row.id)
}

/// The user and scope behind a token hash, if the token exists, is not
/// revoked and its user is active.
///
/// # Errors
/// Any database error.
pub async fn token_owner(
    conn: &mut SqliteConnection,
    token_hash: &str,
) -> sqlx::Result<Option<(User, Scope)>> {
    let row = sqlx::query!(
        r#"SELECT u.id AS "id!: i64", u.username, u.display_name, u.role, u.password_hash,
                  u.active AS "active: bool", t.scope
           FROM api_token t JOIN app_user u ON u.id = t.user_id
           WHERE t.token_hash = ? AND t.revoked_at IS NULL AND u.active"#,
        token_hash
    )
    .fetch_optional(conn)
    .await?;
    let Some(r) = row else { return Ok(None) };
    let scope = Scope::parse(&r.scope).map_err(|e| sqlx::Error::Decode(e.into()))?;
    let user = User::try_from(UserRow {
        id: r.id,
        username: r.username,
        display_name: r.display_name,
        role: r.role,
        password_hash: r.password_hash,
        active: r.active,
    })?;
    Ok(Some((user, scope)))
}

/// Revokes a token by name for a user; returns whether one was revoked.
///
/// # Errors
/// Any database error.
pub async fn revoke_token(
    conn: &mut SqliteConnection,
    user_id: i64,
    name: &str,
) -> sqlx::Result<bool> {
    let now = super::now_timestamp();
    let done = sqlx::query!(
        "UPDATE api_token SET revoked_at = ? WHERE user_id = ? AND name = ? AND revoked_at IS NULL",
        now,
        user_id,
        name
    )
    .execute(conn)
    .await?;
    Ok(done.rows_affected() > 0)
}

/// Finds a user by id.
///
/// # Errors
/// Any database error.
pub async fn user_by_id(conn: &mut SqliteConnection, id: i64) -> sqlx::Result<Option<User>> {
    let row = sqlx::query_as!(
        UserRow,
        r#"SELECT id AS "id!: i64", username, display_name, role, password_hash, active AS "active: bool"
           FROM app_user WHERE id = ?"#,
        id
    )
    .fetch_optional(conn)
    .await?;
    row.map(User::try_from).transpose()
}

/// Activates or deactivates a user (a deactivated user cannot sign in and
/// their sessions and tokens stop working).
///
/// # Errors
/// Any database error.
pub async fn set_active(conn: &mut SqliteConnection, id: i64, active: bool) -> sqlx::Result<()> {
    sqlx::query!("UPDATE app_user SET active = ? WHERE id = ?", active, id)
        .execute(conn)
        .await?;
    Ok(())
}
