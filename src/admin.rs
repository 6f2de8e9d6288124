//! Administration from a shell: users, API tokens and the audit trail.
//! Every change is written with its audit event in one transaction.

use std::io::BufRead;

use clap::Subcommand;
use juncture::store::accounts::{self, Role, Scope};
use juncture::store::{self, audit, sessions};
use juncture::web::auth;
use sqlx::SqlitePool;

/// Actor name recorded for changes made from the command line.
const CLI_ACTOR: &str = "command line";

/// `juncture user ...`
#[derive(Debug, Subcommand)]
pub enum UserAction {
    /// Add a user; the password is read from the first line of standard input.
    Add {
        /// Sign-in name.
        #[arg(long)]
        username: String,
        /// Name shown on records and certificates.
        #[arg(long)]
        display_name: String,
        /// technician, reviewer or administrator.
        #[arg(long)]
        role: String,
    },
    /// End every browser session of a user (they must sign in again).
    EndSessions {
        /// Sign-in name.
        #[arg(long)]
        username: String,
    },
    /// Stop a user from signing in or using tokens, and end their sessions.
    Deactivate {
        /// Sign-in name.
        #[arg(long)]
        username: String,
    },
}

/// `juncture token ...`
#[derive(Debug, Subcommand)]
pub enum TokenAction {
    /// Create an API token for a user and print its secret (shown only once).
    Create {
        /// The user the token acts as.
        #[arg(long)]
        username: String,
        /// A name for the token, e.g. the system that will use it.
        #[arg(long)]
        name: String,
        /// read or write.
        #[arg(long, default_value = "read")]
        scope: String,
    },
    /// Revoke a user's token by name.
    Revoke {
        /// The user.
        #[arg(long)]
        username: String,
        /// The token's name.
        #[arg(long)]
        name: String,
    },
}

/// `juncture audit ...`
#[derive(Debug, Subcommand)]
pub enum AuditAction {
    /// Walk the audit chain and report the first broken link.
    Verify,
}

fn err(e: impl std::fmt::Display) -> String {
    e.to_string()
}

/// Runs `juncture user ...`.
///
/// # Errors
/// A sentence for the person at the shell.
pub async fn user(pool: &SqlitePool, action: UserAction) -> Result<(), String> {
    match action {
        UserAction::Add {
            username,
            display_name,
            role,
        } => {
            let role = Role::parse(&role)?;
            let username = username.trim().to_owned();
            if username.is_empty() || username.len() > 64 {
                return Err("--username must have 1 to 64 characters".to_owned());
            }
            let mut password = String::new();
            std::io::stdin()
                .lock()
                .read_line(&mut password)
                .map_err(|e| format!("cannot read the password from standard input: {e}"))?;
            let password = password.trim_end_matches(['\r', '\n']);
            let hash = auth::hash_password(password)?;
            let mut tx = store::begin_write(pool).await.map_err(err)?;
            if accounts::user_by_username(&mut tx, &username)
                .await
                .map_err(err)?
                .is_some()
            {
                return Err(format!("a user named {username:?} already exists"));
            }
            let id = accounts::create_user(&mut tx, &username, &display_name, role, &hash)
                .await
                .map_err(err)?;
            let after = serde_json::json!({"id": id, "username": username, "display_name": display_name, "role": role.as_str()});
            audit::append(
                &mut tx,
                &audit::NewEvent {
                    actor: CLI_ACTOR,
                    action: "create",
                    entity: "user",
                    entity_id: &id.to_string(),
                    before: None,
                    after: Some(&after),
                },
            )
            .await
            .map_err(err)?;
            tx.commit().await.map_err(err)?;
            println!("added {} ({}) as {}", username, display_name, role.as_str());
            Ok(())
        }
        UserAction::EndSessions { username } => {
            let mut tx = store::begin_write(pool).await.map_err(err)?;
            let user = accounts::user_by_username(&mut tx, &username)
                .await
                .map_err(err)?
                .ok_or_else(|| format!("there is no user named {username:?}"))?;
            let ended = sessions::delete_for_user(&mut tx, user.id)
                .await
                .map_err(err)?;
            let after = serde_json::json!({"username": username, "sessions_ended": ended});
            audit::append(
                &mut tx,
                &audit::NewEvent {
                    actor: CLI_ACTOR,
                    action: "end_sessions",
                    entity: "user",
                    entity_id: &user.id.to_string(),
                    before: None,
                    after: Some(&after),
                },
            )
            .await
            .map_err(err)?;
            tx.commit().await.map_err(err)?;
            println!("ended {ended} session(s) of {username}");
            Ok(())
        }
        UserAction::Deactivate { username } => {
            let mut tx = store::begin_write(pool).await.map_err(err)?;
            let user = accounts::user_by_username(&mut tx, &username)
                .await
                .map_err(err)?
                .ok_or_else(|| format!("there is no user named {username:?}"))?;
            accounts::set_active(&mut tx, user.id, false)
                .await
                .map_err(err)?;
            let ended = sessions::delete_for_user(&mut tx, user.id)
                .await
                .map_err(err)?;
            let before = serde_json::json!({"username": username, "active": user.active});
            let after =
                serde_json::json!({"username": username, "active": false, "sessions_ended": ended});
            audit::append(
                &mut tx,
                &audit::NewEvent {
                    actor: CLI_ACTOR,
                    action: "deactivate",
                    entity: "user",
                    entity_id: &user.id.to_string(),
                    before: Some(&before),
                    after: Some(&after),
                },
            )
            .await
            .map_err(err)?;
            tx.commit().await.map_err(err)?;
            println!(
                "deactivated {username}; ended {ended} session(s); their tokens no longer work"
            );
            Ok(())
        }
    }
}

/// Runs `juncture token ...`.
///
/// # Errors
/// A sentence for the person at the shell.
pub async fn token(pool: &SqlitePool, action: TokenAction) -> Result<(), String> {
    match action {
        TokenAction::Create {
            username,
            name,
            scope,
        } => {
            let scope = Scope::parse(&scope)?;
            let mut tx = store::begin_write(pool).await.map_err(err)?;
            let user = accounts::user_by_username(&mut tx, &username)
                .await
                .map_err(err)?
                .ok_or_else(|| format!("there is no user named {username:?}"))?;
            let secret = auth::new_token_secret();
            let id =
                accounts::create_token(&mut tx, user.id, &name, scope, &auth::token_hash(&secret))
                    .await
                    .map_err(err)?;
            let after = serde_json::json!({"id": id, "user": username, "name": name, "scope": scope.as_str()});
            audit::append(
                &mut tx,
                &audit::NewEvent {
                    actor: CLI_ACTOR,
                    action: "create",
                    entity: "api_token",
                    entity_id: &id.to_string(),
                    before: None,
                    after: Some(&after),
                },
            )
            .await
            .map_err(err)?;
            tx.commit().await.map_err(err)?;
            eprintln!(
                "token {name:?} for {username} ({} scope); store it now, it is not shown again:",
                scope.as_str()
            );
            println!("{secret}");
            Ok(())
        }
        TokenAction::Revoke { username, name } => {
            let mut tx = store::begin_write(pool).await.map_err(err)?;
            let user = accounts::user_by_username(&mut tx, &username)
                .await
                .map_err(err)?
                .ok_or_else(|| format!("there is no user named {username:?}"))?;
            if !accounts::revoke_token(&mut tx, user.id, &name)
                .await
                .map_err(err)?
            {
                return Err(format!("{username} has no active token named {name:?}"));
            }
            let after = serde_json::json!({"user": username, "name": name, "revoked": true});
            audit::append(
                &mut tx,
                &audit::NewEvent {
                    actor: CLI_ACTOR,
                    action: "revoke",
                    entity: "api_token",
                    entity_id: &name,
                    before: None,
                    after: Some(&after),
                },
            )
            .await
            .map_err(err)?;
            tx.commit().await.map_err(err)?;
            println!("revoked {username}'s token {name:?}");
            Ok(())
        }
    }
}

/// Runs `juncture audit ...`.
///
/// # Errors
/// A sentence naming the first broken link.
pub async fn audit_cmd(pool: &SqlitePool, action: AuditAction) -> Result<(), String> {
    match action {
        AuditAction::Verify => {
            let mut conn = pool.acquire().await.map_err(err)?;
            match audit::verify(&mut conn).await.map_err(err)? {
                audit::Verification::Intact { events } => {
                    println!("audit chain intact: {events} events checked");
                    Ok(())
                }
                audit::Verification::Broken { seq, reason } => {
                    Err(format!("audit chain broken at event {seq}: {reason}"))
                }
            }
        }
    }
}

/// Runs `juncture backup TARGET`: copies the database at `source` into
/// `target` with one consistent snapshot, then opens the copy and checks
/// `PRAGMA integrity_check` and the audit chain.
///
/// # Errors
/// A sentence for the person at the shell.
pub async fn backup(source: &std::path::Path, target: &std::path::Path) -> Result<(), String> {
    if !source.is_file() {
        return Err(format!(
            "there is no database at {}; give --database",
            source.display()
        ));
    }
    if target.exists() {
        return Err(format!(
            "{} already exists; a backup never overwrites a file",
            target.display()
        ));
    }
    let target_text = target
        .to_str()
        .ok_or_else(|| format!("{} is not a UTF-8 path", target.display()))?;
    let pool = store::connect(source).await.map_err(err)?;
    let mut conn = pool.acquire().await.map_err(err)?;
    store::backup_into(&mut conn, target_text)
        .await
        .map_err(|e| format!("cannot write the backup to {}: {e}", target.display()))?;
    drop(conn);
    pool.close().await;

    let copy = store::connect(target).await.map_err(err)?;
    let mut conn = copy.acquire().await.map_err(err)?;
    let integrity = store::integrity_check(&mut conn).await.map_err(err)?;
    if integrity != ["ok"] {
        return Err(format!(
            "the backup at {} fails its integrity check: {}",
            target.display(),
            integrity.join("; ")
        ));
    }
    let events = match audit::verify(&mut conn).await.map_err(err)? {
        audit::Verification::Intact { events } => events,
        audit::Verification::Broken { seq, reason } => {
            return Err(format!(
                "the backup's audit chain is broken at event {seq}: {reason}"
            ));
        }
    };
    drop(conn);
    copy.close().await;
    let bytes = std::fs::metadata(target).map(|m| m.len()).unwrap_or(0);
    println!(
        "backup written to {} ({bytes} bytes); integrity ok; audit chain intact ({events} events)",
        target.display()
    );
    Ok(())
}
