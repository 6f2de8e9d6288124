//! Persistence on SQLite through sqlx: the only module with SQL.
//!
//! [`connect`] opens (or creates) the database file with the settings the
//! service relies on, [`migrate`] applies the embedded migrations, and one
//! sub-module per group of tables holds the queries.

pub mod accounts;
pub mod audit;
pub mod bulk;
pub mod certificates;
pub mod equipment;
pub mod lab;
pub mod lookups;
pub mod records;
pub mod register;
pub mod runs;
pub mod sessions;
pub mod switches;
pub mod templates;

use std::path::{Path, PathBuf};
use std::str::FromStr;
use std::time::Duration;

use sqlx::SqlitePool;
use sqlx::sqlite::{SqliteConnectOptions, SqliteJournalMode, SqlitePoolOptions, SqliteSynchronous};

/// The migrations in `migrations/`, embedded in the binary.
pub static MIGRATOR: sqlx::migrate::Migrator = sqlx::migrate!();

/// How long a connection waits for a lock held by another writer before
/// giving up. SQLite allows one writer at a time; short write transactions
/// plus this timeout keep "database is locked" away from users.
pub const BUSY_TIMEOUT: Duration = Duration::from_secs(10);

/// Errors when opening or preparing the database.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum StoreError {
    /// The folder that should hold the database file does not exist.
    #[error("cannot create the database {path}: the folder {folder} does not exist")]
    MissingFolder {
        /// The database file asked for.
        path: PathBuf,
        /// Its parent folder.
        folder: PathBuf,
    },
    /// What should be the database's folder is a file.
    #[error("cannot create the database {path}: {folder} is a file, not a folder")]
    NotAFolder {
        /// The database file asked for.
        path: PathBuf,
        /// Its parent, which is not a folder.
        folder: PathBuf,
    },
    /// SQLite could not open or create the file.
    #[error("cannot open the database {path}: {source}")]
    Open {
        /// The database file asked for.
        path: PathBuf,
        /// What SQLite reported.
        #[source]
        source: sqlx::Error,
    },
    /// A migration failed.
    #[error("cannot bring the database schema up to date: {0}")]
    Migrate(#[from] sqlx::migrate::MigrateError),
    /// Any other database error.
    #[error(transparent)]
    Db(#[from] sqlx::Error),
}

/// Opens the SQLite database at `path`, creating the file if it is missing.
///
/// The pool uses write-ahead logging (readers never block the writer),
/// foreign keys on, `synchronous = NORMAL` (durable at each checkpoint and
/// safe against corruption in WAL mode) and a busy timeout of
/// [`BUSY_TIMEOUT`]. A connection is opened before returning, so an
/// unwritable location is reported here, not at the first request.
///
/// # Errors
/// [`StoreError::MissingFolder`] or [`StoreError::NotAFolder`] when the
/// parent folder does not exist or is a file,
/// [`StoreError::Open`] when SQLite cannot open or create the file.
pub async fn connect(path: &Path) -> Result<SqlitePool, StoreError> {
    if let Some(folder) = path.parent().filter(|p| !p.as_os_str().is_empty()) {
        if !folder.exists() {
            return Err(StoreError::MissingFolder {
                path: path.to_path_buf(),
                folder: folder.to_path_buf(),
            });
        }
        if !folder.is_dir() {
            return Err(StoreError::NotAFolder {
                path: path.to_path_buf(),
                folder: folder.to_path_buf(),
            });
        }
    }
    let options = SqliteConnectOptions::new()
        .filename(path)
        .create_if_missing(true)
        .journal_mode(SqliteJournalMode::Wal)
        .synchronous(SqliteSynchronous::Normal)
        .foreign_keys(true)
        .busy_timeout(BUSY_TIMEOUT);
    let pool = SqlitePoolOptions::new()
        .max_connections(8)
        .min_connections(1)
        .connect_with(options)
        .await
        .map_err(|source| StoreError::Open {
            path: path.to_path_buf(),
            source,
        })?;
    Ok(pool)
}

/// Begins a write transaction that takes SQLite's write lock at once
/// (`BEGIN IMMEDIATE`). Two deferred transactions that both read and then
/// write can deadlock; an immediate one waits its turn (up to the busy
/// timeout) instead.
///
/// # Errors
/// Any database error, including a busy timeout.
pub async fn begin_write(
    pool: &SqlitePool,
) -> sqlx::Result<sqlx::Transaction<'static, sqlx::Sqlite>> {
    pool.begin_with("BEGIN IMMEDIATE").await
}

/// Opens an in-memory database (for tools and tests that need no file).
///
/// # Errors
/// Any error from SQLite.
pub async fn connect_in_memory() -> Result<SqlitePool, StoreError> {
    let options = SqliteConnectOptions::from_str("sqlite::memory:")?.foreign_keys(true);
    // One connection: every connection to ":memory:" is its own database.
    let pool = SqlitePoolOptions::new()
        .max_connections(1)
        .connect_with(options)
        .await?;
    Ok(pool)
}

/// Applies every embedded migration not yet applied. Running it again on an
/// up-to-date database changes nothing.
///
/// # Errors
/// [`StoreError::Migrate`] when a migration fails or the database holds a
/// migration this binary does not know (a newer schema).
pub async fn migrate(pool: &SqlitePool) -> Result<(), StoreError> {
    MIGRATOR.run(pool).await?;
    Ok(())
}

/// The newest applied migration number, or `None` on an empty database.
///
/// # Errors
/// Any database error (including a database that was never migrated).
pub async fn schema_version(pool: &SqlitePool) -> sqlx::Result<Option<i64>> {
    let row = sqlx::query!(
        r#"SELECT MAX(version) AS "version: i64" FROM _sqlx_migrations WHERE success = TRUE"#
    )
    .fetch_one(pool)
    .await?;
    Ok(row.version)
}

/// Checks that the database answers a trivial query.
///
/// # Errors
/// Any database error.
pub async fn ping(pool: &SqlitePool) -> sqlx::Result<()> {
    sqlx::query!("SELECT 1 AS one").fetch_one(pool).await?;
    Ok(())
}

/// The current time as an ISO 8601 UTC timestamp with second precision,
/// the form every `*_at` column holds.
#[must_use]
pub fn now_timestamp() -> String {
    let now = time::OffsetDateTime::now_utc();
    let format =
        time::macros::format_description!("[year]-[month]-[day]T[hour]:[minute]:[second]Z");
    now.format(&format)
        .unwrap_or_else(|_| now.unix_timestamp().to_string())
}

/// Writes a consistent copy of the whole database to `target` with SQLite's
/// `VACUUM INTO`: a single read transaction, so the copy is a snapshot even
/// while the service keeps writing. The target file must not exist.
///
/// # Errors
/// Any database error (an existing target is refused by SQLite).
pub async fn backup_into(conn: &mut sqlx::SqliteConnection, target: &str) -> sqlx::Result<()> {
    sqlx::query("VACUUM INTO ?")
        .bind(target)
        .execute(conn)
        .await?;
    Ok(())
}

/// The lines of `PRAGMA integrity_check`: exactly `["ok"]` for a sound file.
///
/// # Errors
/// Any database error.
pub async fn integrity_check(conn: &mut sqlx::SqliteConnection) -> sqlx::Result<Vec<String>> {
    sqlx::query_scalar::<_, String>("PRAGMA integrity_check")
        .fetch_all(conn)
        .await
}
