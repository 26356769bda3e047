//! Persistence: one code path over sqlx's `Any` driver for SQLite (the
//! embedded default) and PostgreSQL (scale-out), with a portable schema
//! (TEXT and BIGINT only; JSON and RFC 3339 UTC timestamps as TEXT).
//!
//! Every query takes the caller's organisation id and filters by it, so a
//! row of another organisation is simply not found. Writes that touch more
//! than one row run in one transaction (SQLite: `BEGIN IMMEDIATE`, so a
//! writer waits for the lock instead of failing half-way), so a failed
//! request leaves nothing half-written.

mod assessments;
pub mod fold;
mod migrate;
mod orgs;
mod sites;
mod surveys;
mod tables;
mod whatif;

pub use assessments::{AssessmentRow, NewAssessment, PinnedVersion, RESULT_FORM};
pub use migrate::{MIGRATIONS_POSTGRES, MIGRATIONS_SQLITE, migrator};
pub use orgs::{KeyRow, OrgRow, Revoke};
pub use sites::{RevisionRow, SiteRow, UpdateOutcome};
pub use surveys::SurveyRow;
pub use tables::{TableRow, TableVersionRow, VersionReplace};
pub use whatif::{NewWhatIf, WhatIfRow};

use sqlx::any::{AnyPoolOptions, install_default_drivers};
use sqlx::{AnyPool, Executor};
use std::time::Duration;

/// Which database the URL selected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Backend {
    Sqlite,
    Postgres,
}

impl Backend {
    pub fn of_url(url: &str) -> Option<Backend> {
        if url.starts_with("sqlite:") {
            Some(Backend::Sqlite)
        } else if url.starts_with("postgres:") || url.starts_with("postgresql:") {
            Some(Backend::Postgres)
        } else {
            None
        }
    }
    pub fn name(self) -> &'static str {
        match self {
            Backend::Sqlite => "sqlite",
            Backend::Postgres => "postgres",
        }
    }
}

#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    #[error("database error: {0}")]
    Database(#[from] sqlx::Error),
    #[error("unsupported database URL: use sqlite:… or postgres://…")]
    UnsupportedUrl,
    #[error("stored data is unreadable: {0}")]
    Corrupt(String),
    #[error("migration failed: {0}")]
    Migration(#[from] sqlx::migrate::MigrateError),
}

impl StoreError {
    /// A unique constraint was violated (an id or name already taken).
    pub fn is_unique_violation(&self) -> bool {
        matches!(self, StoreError::Database(sqlx::Error::Database(e)) if e.is_unique_violation())
    }
    /// The database could not be reached or timed out.
    pub fn is_unavailable(&self) -> bool {
        matches!(self, StoreError::Database(sqlx::Error::PoolTimedOut | sqlx::Error::Io(_) | sqlx::Error::PoolClosed))
    }
}

pub type Result<T> = std::result::Result<T, StoreError>;

/// The connection pool and the backend it talks to. Cheap to clone.
///
/// On SQLite, write transactions also take `sqlite_writer`, an in-process
/// lock: SQLite admits one writer at a time anyway, and queueing writers
/// here avoids its busy-handler sleeps (which made the latency tail long).
/// PostgreSQL needs no such lock.
#[derive(Clone, Debug)]
pub struct Store {
    pool: AnyPool,
    backend: Backend,
    sqlite_writer: std::sync::Arc<tokio::sync::Mutex<()>>,
}

/// A write transaction (holding the SQLite writer lock where there is one).
pub(crate) struct WriteTx {
    tx: sqlx::Transaction<'static, sqlx::Any>,
    _writer: Option<tokio::sync::OwnedMutexGuard<()>>,
}

impl WriteTx {
    pub(crate) fn conn(&mut self) -> &mut sqlx::AnyConnection {
        &mut self.tx
    }
    pub(crate) async fn commit(self) -> Result<()> {
        Ok(self.tx.commit().await?)
    }
    pub(crate) async fn rollback(self) -> Result<()> {
        Ok(self.tx.rollback().await?)
    }
}

/// Current time (stored as fixed-width RFC 3339 UTC with microseconds, so
/// text order is time order: see [`crate::ids::Timestamp`]).
pub fn now() -> crate::ids::Timestamp {
    crate::ids::Timestamp::now()
}

impl Store {
    /// Connects and applies pending migrations. SQLite files are created on
    /// first start; WAL with `synchronous = FULL` gives durable commits.
    pub async fn open(url: &str, max_connections: u32) -> Result<Store> {
        install_default_drivers();
        let backend = Backend::of_url(url).ok_or(StoreError::UnsupportedUrl)?;
        let mut options =
            AnyPoolOptions::new().max_connections(max_connections.max(1)).acquire_timeout(Duration::from_secs(10));
        if backend == Backend::Sqlite {
            options = options.after_connect(|conn, _meta| {
                Box::pin(async move {
                    for pragma in [
                        "PRAGMA journal_mode = WAL",
                        "PRAGMA synchronous = FULL",
                        "PRAGMA busy_timeout = 10000",
                        "PRAGMA foreign_keys = ON",
                    ] {
                        conn.execute(pragma).await?;
                    }
                    Ok(())
                })
            });
        }
        let pool = options.connect(url).await?;
        let store = Store { pool, backend, sqlite_writer: Default::default() };
        migrate::apply(&store).await?;
        let filled = store.backfill_name_folded().await?;
        if filled > 0 {
            tracing::info!(sites = filled, "search keys of site names filled in");
        }
        let rewritten = store.refresh_stored_results().await?;
        if rewritten > 0 {
            tracing::info!(assessments = rewritten, "stored results rewritten in the current form");
        }
        Ok(store)
    }

    pub fn backend(&self) -> Backend {
        self.backend
    }

    pub(crate) fn pool(&self) -> &AnyPool {
        &self.pool
    }

    /// Begins a write transaction that holds the write lock from the start.
    pub(crate) async fn begin_write(&self) -> Result<WriteTx> {
        Ok(match self.backend {
            Backend::Sqlite => {
                let writer = self.sqlite_writer.clone().lock_owned().await;
                WriteTx { tx: self.pool.begin_with("BEGIN IMMEDIATE").await?, _writer: Some(writer) }
            }
            Backend::Postgres => WriteTx { tx: self.pool.begin().await?, _writer: None },
        })
    }

    /// The SQLite writer lock for a single-statement write (none on
    /// PostgreSQL). Hold the guard until the statement has run.
    pub(crate) async fn writer(&self) -> Option<tokio::sync::OwnedMutexGuard<()>> {
        match self.backend {
            Backend::Sqlite => Some(self.sqlite_writer.clone().lock_owned().await),
            Backend::Postgres => None,
        }
    }

    /// Round trip to the database (readiness probe).
    pub async fn ping(&self) -> Result<()> {
        sqlx::query("SELECT 1").execute(&self.pool).await?;
        Ok(())
    }

    /// Closes the pool, waiting for connections in use (shutdown).
    pub async fn close(&self) {
        self.pool.close().await;
    }
}

/// Reads a column, mapping a decode failure to [`StoreError::Corrupt`].
pub(crate) fn col<'r, T>(row: &'r sqlx::any::AnyRow, name: &str) -> Result<T>
where
    T: sqlx::Decode<'r, sqlx::Any> + sqlx::Type<sqlx::Any>,
{
    use sqlx::Row;
    row.try_get::<T, _>(name).map_err(|e| StoreError::Corrupt(format!("column {name}: {e}")))
}
