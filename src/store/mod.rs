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
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::Duration;

use sqlx::SqlitePool;
use sqlx::sqlite::{SqliteConnectOptions, SqliteJournalMode, SqlitePoolOptions, SqliteSynchronous};

/// The migrations in `migrations/`, embedded in the binary.
pub static MIGRATOR: sqlx::migrate::Migrator = sqlx::migrate!();

/// How long a connection waits for a lock held by another writer before
/// giving up. SQLite allows one writer at a time; short write transactions
/// plus this timeout keep "database is locked" away from users.
pub const BUSY_TIMEOUT: Duration = Duration::from_secs(10);

/// Rows a connection's worker thread may read ahead of the task that takes
/// them (sqlx's default is 50).
pub const ROW_BUFFER: usize = 1024;

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
        .busy_timeout(BUSY_TIMEOUT)
        .row_buffer_size(ROW_BUFFER);
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
pub async fn begin_write(pool: &SqlitePool) -> sqlx::Result<WriteTx> {
    Ok(WriteTx(pool.begin_with("BEGIN IMMEDIATE").await?))
}

/// A write transaction from [`begin_write`]. It derefs to the connection
/// like sqlx's transaction; [`WriteTx::commit`] also advances
/// [`change_count`] once the commit has succeeded, so that memory caches of
/// what the database says (`web::cache::Fresh`) drop what they held.
/// Dropped without commit, it rolls back.
#[derive(Debug)]
pub struct WriteTx(sqlx::Transaction<'static, sqlx::Sqlite>);

impl WriteTx {
    /// Commits, then advances [`change_count`] (also when the commit
    /// fails: the caches are then only emptied for nothing).
    ///
    /// # Errors
    /// Any database error.
    pub async fn commit(self) -> sqlx::Result<()> {
        let done = self.0.commit().await;
        note_change();
        done
    }
}

impl std::ops::Deref for WriteTx {
    type Target = sqlx::SqliteConnection;
    fn deref(&self) -> &Self::Target {
        &self.0
    }
}

impl std::ops::DerefMut for WriteTx {
    fn deref_mut(&mut self) -> &mut Self::Target {
        &mut self.0
    }
}

/// Counts the commits this process has seen: its own write transactions
/// and, through [`ChangeWatch`], those of other processes (the command
/// line) on the same file. Process-wide, only ever increasing.
static CHANGES: AtomicU64 = AtomicU64::new(0);

/// The number of database changes seen so far, without checking for other
/// processes' commits (use [`ChangeWatch::changes`] for that).
#[must_use]
pub fn change_count() -> u64 {
    CHANGES.load(Ordering::Acquire)
}

fn note_change() {
    CHANGES.fetch_add(1, Ordering::AcqRel);
}

/// Notices commits by other processes (for example `juncture token revoke`
/// or `juncture user deactivate` run beside the service) as soon as they
/// happen, so that caches of what the database says never outlive them.
///
/// In WAL mode every commit rewrites the wal-index header at the start of
/// the `-shm` file (its change counter, last frame and checksums; SQLite's
/// documented file format, <https://sqlite.org/walformat.html> section
/// 2.2.1). [`ChangeWatch::changes`] reads those 96 bytes (both copies of
/// the header) with one `pread` and advances [`change_count`] when they
/// differ from the last read. [`watch_other_writers`] backs it up with
/// `PRAGMA data_version` and re-opens the `-shm` file if SQLite replaced it.
#[derive(Debug)]
pub struct ChangeWatch {
    shm_path: Option<PathBuf>,
    inner: std::sync::Mutex<WatchInner>,
}

#[derive(Debug, Default)]
struct WatchInner {
    file: Option<std::fs::File>,
    inode: u64,
    header: Vec<u8>,
}

/// Bytes of the wal-index header read on each check: two copies of 48.
const WAL_INDEX_HEADER_BYTES: usize = 96;

impl ChangeWatch {
    /// A watch over the database file of `pool`; for an in-memory database
    /// (no `-shm` file) it only reports this process's own commits.
    #[must_use]
    pub fn for_pool(pool: &SqlitePool) -> Self {
        let path = pool.connect_options().get_filename().to_path_buf();
        let mut shm = path.into_os_string();
        shm.push("-shm");
        let shm_path = PathBuf::from(shm);
        let watch = Self {
            shm_path: shm_path.is_file().then_some(shm_path),
            inner: std::sync::Mutex::new(WatchInner::default()),
        };
        watch.reopen_if_replaced();
        watch
    }

    /// The number of database changes seen so far, after checking for a
    /// commit by another process. A cache reads it *before* asking the
    /// database and files the answer under it; an answer filed under an
    /// older count is never used (see `web::cache::Fresh`).
    #[must_use]
    pub fn changes(&self) -> u64 {
        use std::os::unix::fs::FileExt;
        if self.shm_path.is_some() {
            let mut inner = self
                .inner
                .lock()
                .unwrap_or_else(std::sync::PoisonError::into_inner);
            let mut now = [0_u8; WAL_INDEX_HEADER_BYTES];
            let read = inner.file.as_ref().map(|f| f.read_exact_at(&mut now, 0));
            match read {
                Some(Ok(())) if inner.header == now => {}
                Some(Ok(())) => {
                    inner.header = now.to_vec();
                    note_change();
                }
                // No file or a short read: nothing known, assume a change.
                _ => note_change(),
            }
        }
        change_count()
    }

    /// Opens the `-shm` file again when SQLite has replaced it (its inode
    /// changed), counting that as a change.
    pub fn reopen_if_replaced(&self) {
        use std::os::unix::fs::MetadataExt;
        let Some(path) = &self.shm_path else { return };
        let Ok(meta) = std::fs::metadata(path) else {
            return;
        };
        let mut inner = self
            .inner
            .lock()
            .unwrap_or_else(std::sync::PoisonError::into_inner);
        if inner.file.is_some() && inner.inode == meta.ino() {
            return;
        }
        inner.file = std::fs::File::open(path).ok();
        inner.inode = meta.ino();
        inner.header.clear();
        note_change();
    }
}

/// How often [`watch_other_writers`] asks SQLite whether another
/// connection wrote (the backstop of [`ChangeWatch`]).
pub const WATCH_INTERVAL: Duration = Duration::from_millis(100);

/// Backstop of [`ChangeWatch`]: asks SQLite's `PRAGMA data_version` (which
/// changes on a connection whenever another connection has committed) every
/// [`WATCH_INTERVAL`] and re-opens the `-shm` file if it was replaced. Runs
/// until the pool is closed.
pub async fn watch_other_writers(pool: SqlitePool, watch: std::sync::Arc<ChangeWatch>) {
    // A connection of its own, outside the pool's count: `data_version` is
    // per connection. Holding it open also keeps SQLite from removing the
    // `-shm` file while the service runs.
    let mut conn = match pool.acquire().await {
        Ok(c) => c.detach(),
        Err(e) => {
            tracing::error!(error = %e, "cannot watch the database for other writers");
            return;
        }
    };
    let mut last: Option<i64> = None;
    let mut tick = tokio::time::interval(WATCH_INTERVAL);
    tick.set_missed_tick_behavior(tokio::time::MissedTickBehavior::Delay);
    while !pool.is_closed() {
        tick.tick().await;
        watch.reopen_if_replaced();
        match sqlx::query_scalar::<_, i64>("PRAGMA data_version")
            .fetch_one(&mut conn)
            .await
        {
            Ok(v) => {
                if last.is_some_and(|l| l != v) {
                    note_change();
                }
                last = Some(v);
            }
            Err(e) => {
                // Unknown state: treat as changed so caches start afresh.
                tracing::warn!(error = %e, "data_version check failed");
                note_change();
            }
        }
    }
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
