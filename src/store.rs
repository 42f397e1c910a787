//! The store: SQLite through sqlx, behind a narrow set of named async
//! functions (no SQL outside this module).
//!
//! The database runs in WAL mode with `synchronous=FULL` (a field laptop
//! loses power), foreign keys on and a busy timeout; migrations are embedded
//! in the binary and run on open. SQLite-only features stay behind these
//! functions so that a shared PostgreSQL server remains possible.

pub mod drafts;
pub mod samples;

use std::path::Path;
use std::str::FromStr;
use std::time::Duration;

use sqlx::SqlitePool;
use sqlx::migrate::Migrator;
use sqlx::sqlite::{SqliteConnectOptions, SqliteJournalMode, SqlitePoolOptions, SqliteSynchronous};

/// Migrations, embedded at compile time from `migrations/`.
pub static MIGRATOR: Migrator = sqlx::migrate!("./migrations");

/// Why the store failed.
#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    /// The folder for the database file could not be created.
    #[error("cannot create the folder {path} for the database: {source}")]
    Folder {
        /// The folder.
        path: String,
        /// The I/O error.
        source: std::io::Error,
    },
    /// SQLite or sqlx failed.
    #[error("database error while {context}: {source}")]
    Sqlx {
        /// What the store was doing.
        context: &'static str,
        /// The sqlx error.
        source: sqlx::Error,
    },
    /// A stored value does not decode (a bug or a hand-edited file).
    #[error("stored {what} of {id} does not decode: {detail}")]
    Corrupt {
        /// What was being decoded.
        what: &'static str,
        /// The record.
        id: String,
        /// The decoder's message.
        detail: String,
    },
    /// The file was migrated by a newer basal: its schema is ahead of the
    /// migrations this binary knows, so it is left exactly as it is.
    #[error(
        "the database {path} was written by a newer basal: its schema is at version {found}, and this basal \
         knows versions up to {known}. Nothing in the file was changed. Run the newer basal on it, or give this \
         one another file with --db"
    )]
    Newer {
        /// The database file.
        path: String,
        /// The highest migration recorded in the file.
        found: i64,
        /// The highest migration this binary knows.
        known: i64,
    },
    /// A migration failed.
    #[error("database migration failed: {0}")]
    Migrate(#[from] sqlx::migrate::MigrateError),
}

pub(crate) trait Context<T> {
    fn context(self, what: &'static str) -> Result<T, StoreError>;
}

impl<T> Context<T> for Result<T, sqlx::Error> {
    fn context(self, what: &'static str) -> Result<T, StoreError> {
        self.map_err(|source| StoreError::Sqlx {
            context: what,
            source,
        })
    }
}

/// Opens (creating it and its folder when missing) and migrates the
/// database at `path`.
#[tracing::instrument]
pub async fn open(path: &Path) -> Result<SqlitePool, StoreError> {
    if let Some(dir) = path.parent()
        && !dir.as_os_str().is_empty()
    {
        std::fs::create_dir_all(dir).map_err(|source| StoreError::Folder {
            path: dir.display().to_string(),
            source,
        })?;
    }
    let opts = SqliteConnectOptions::from_str("sqlite:")
        .context("reading connect options")?
        .filename(path)
        .create_if_missing(true)
        .journal_mode(SqliteJournalMode::Wal)
        .synchronous(SqliteSynchronous::Full)
        .busy_timeout(Duration::from_secs(10))
        .foreign_keys(true);
    let pool = SqlitePoolOptions::new()
        .max_connections(8)
        .connect_with(opts)
        .await
        .context("opening the database")?;
    if let Err(e) = refuse_newer(&pool, path).await {
        pool.close().await;
        return Err(e);
    }
    MIGRATOR.run(&pool).await?;
    drafts::remove_stale_empty(&pool, std::time::SystemTime::now()).await?;
    Ok(pool)
}

/// The highest migration this binary knows.
pub fn schema_version() -> i64 {
    MIGRATOR.iter().map(|m| m.version).max().unwrap_or(0)
}

/// Fails, reading only, when the file records a migration this binary
/// does not know (a newer basal wrote it).
async fn refuse_newer(pool: &SqlitePool, path: &Path) -> Result<(), StoreError> {
    let has_table: Option<String> = sqlx::query_scalar(
        "SELECT name FROM sqlite_master WHERE type = 'table' AND name = '_sqlx_migrations'",
    )
    .fetch_optional(pool)
    .await
    .context("reading the schema version")?;
    if has_table.is_none() {
        return Ok(());
    }
    let applied: Vec<i64> = sqlx::query_scalar("SELECT version FROM _sqlx_migrations")
        .fetch_all(pool)
        .await
        .context("reading the schema version")?;
    let known = schema_version();
    let unknown = applied
        .iter()
        .any(|v| !MIGRATOR.iter().any(|m| m.version == *v));
    if unknown {
        return Err(StoreError::Newer {
            path: path.display().to_string(),
            found: applied.iter().copied().max().unwrap_or(0),
            known,
        });
    }
    Ok(())
}

/// Starts a write transaction: the one path every write takes.
///
/// `BEGIN IMMEDIATE` takes SQLite's write lock at the start, so concurrent
/// writers queue on the busy timeout. A deferred transaction that reads
/// first and writes later could instead fail at once with "database is
/// locked" when another writer committed in between (WAL cannot upgrade a
/// stale read snapshot).
pub async fn write_tx(
    pool: &SqlitePool,
) -> Result<sqlx::Transaction<'static, sqlx::Sqlite>, StoreError> {
    pool.begin_with("BEGIN IMMEDIATE")
        .await
        .context("starting a write transaction")
}

/// True when the database answers a trivial query.
#[tracing::instrument(skip(pool))]
pub async fn ping(pool: &SqlitePool) -> Result<(), StoreError> {
    sqlx::query("SELECT 1")
        .execute(pool)
        .await
        .context("pinging")?;
    Ok(())
}

/// Records the property-base version this service runs with, returning the
/// one recorded before (if any).
#[tracing::instrument(skip(pool))]
pub async fn note_base_version(
    pool: &SqlitePool,
    version: &str,
) -> Result<Option<String>, StoreError> {
    let mut tx = write_tx(pool).await?;
    let previous: Option<String> =
        sqlx::query_scalar("SELECT value FROM meta WHERE key = 'base_version'")
            .fetch_optional(&mut *tx)
            .await
            .context("reading the base version")?;
    sqlx::query(
        "INSERT INTO meta (key, value) VALUES ('base_version', ?1)
         ON CONFLICT (key) DO UPDATE SET value = excluded.value",
    )
    .bind(version)
    .execute(&mut *tx)
    .await
    .context("recording the base version")?;
    tx.commit().await.context("committing")?;
    Ok(previous)
}

/// Writes a consistent copy of the whole database to `path` with
/// `VACUUM INTO`: a single read transaction, so a running service can keep
/// writing (WAL) while the copy is made.
#[tracing::instrument(skip(pool))]
pub async fn backup_to(pool: &SqlitePool, path: &Path) -> Result<(), StoreError> {
    let target = path.to_string_lossy().into_owned();
    sqlx::query("VACUUM INTO ?1")
        .bind(target)
        .execute(pool)
        .await
        .context("writing the backup")?;
    Ok(())
}

/// Reads one pragma as text, for checks of how the database is opened.
#[tracing::instrument(skip(pool))]
pub async fn pragma(pool: &SqlitePool, name: Pragma) -> Result<String, StoreError> {
    let sql = match name {
        Pragma::JournalMode => "PRAGMA journal_mode",
        Pragma::Synchronous => "PRAGMA synchronous",
        Pragma::ForeignKeys => "PRAGMA foreign_keys",
    };
    let v: sqlx::sqlite::SqliteRow = sqlx::query(sql)
        .fetch_one(pool)
        .await
        .context("reading a pragma")?;
    use sqlx::Row;
    let s = v
        .try_get::<String, _>(0)
        .or_else(|_| v.try_get::<i64, _>(0).map(|i| i.to_string()))
        .context("decoding a pragma")?;
    Ok(s)
}

/// Pragmas [`pragma`] can read.
#[derive(Clone, Copy, Debug)]
pub enum Pragma {
    /// `journal_mode` (expect `wal`).
    JournalMode,
    /// `synchronous` (expect 2, FULL).
    Synchronous,
    /// `foreign_keys` (expect 1).
    ForeignKeys,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[tokio::test]
    async fn a_database_from_a_newer_basal_is_refused_in_words_and_left_as_it_was() {
        // Arrange: a migrated file that records a migration from the future.
        let dir = tempfile::tempdir().expect("tempdir");
        let path = dir.path().join("newer.sqlite");
        let pool = open(&path).await.expect("open");
        sqlx::query(
            "INSERT INTO _sqlx_migrations (version, description, success, checksum, execution_time)
             VALUES (9999, 'from a newer basal', 1, x'00', 0)",
        )
        .execute(&pool)
        .await
        .expect("fake row");
        sqlx::query("PRAGMA wal_checkpoint(TRUNCATE)")
            .execute(&pool)
            .await
            .expect("checkpoint");
        pool.close().await;
        let before = std::fs::read(&path).expect("read");
        // Act
        let err = open(&path).await.expect_err("a newer schema is refused");
        // Assert
        let msg = err.to_string();
        assert!(msg.contains("newer basal"), "{msg}");
        assert!(msg.contains("version 9999"), "{msg}");
        assert!(
            msg.contains(&format!("versions up to {}", schema_version())),
            "{msg}"
        );
        assert!(msg.contains("Nothing in the file was changed"), "{msg}");
        assert!(
            std::fs::read(&path).expect("read") == before,
            "the file is byte-identical after the attempt"
        );
    }

    #[tokio::test]
    async fn opening_creates_the_folder_and_file_and_sets_durability() {
        let dir = tempfile::tempdir().expect("tempdir");
        let path = dir.path().join("nested/deeper/basal.sqlite");
        let pool = open(&path).await.expect("opens");
        assert!(path.exists());
        assert_eq!(pragma(&pool, Pragma::JournalMode).await.expect("jm"), "wal");
        assert_eq!(pragma(&pool, Pragma::Synchronous).await.expect("sync"), "2");
        assert_eq!(pragma(&pool, Pragma::ForeignKeys).await.expect("fk"), "1");
        ping(&pool).await.expect("ping");
    }

    #[tokio::test]
    async fn the_base_version_is_remembered_across_opens() {
        let dir = tempfile::tempdir().expect("tempdir");
        let path = dir.path().join("basal.sqlite");
        let pool = open(&path).await.expect("opens");
        assert_eq!(note_base_version(&pool, "v1").await.expect("note"), None);
        pool.close().await;
        let pool = open(&path).await.expect("reopens");
        assert_eq!(
            note_base_version(&pool, "v2").await.expect("note"),
            Some("v1".to_string())
        );
    }
}
