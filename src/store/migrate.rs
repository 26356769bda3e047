//! Schema migrations through `sqlx::migrate`.
//!
//! The files of `migrations/sqlite` and `migrations/postgres` are embedded
//! at build time (`build.rs` lists every `NNNN_name.sql` of each folder), and
//! sqlx's [`Migrator`] applies the pending ones in version order, each in
//! its own transaction, recording version and SHA-384 checksum in
//! `_sqlx_migrations`. A file changed after it was applied stops the start
//! with a version-mismatch error instead of being silently skipped.
//!
//! Databases made by the earlier runner (which recorded versions in
//! `schema_migrations`) are first *baselined*: in one transaction, every
//! version listed there is recorded in `_sqlx_migrations` with the checksum
//! of the embedded file, without running its SQL. `schema_migrations` is
//! left as it was.
//!
//! Concurrency: on PostgreSQL the whole step (baseline and migrator) runs
//! under the advisory lock [`LOCK_KEY`], so replicas that start together
//! neither baseline nor migrate twice (sqlx's migrator takes a lock of its
//! own around its part as well). On SQLite one process owns the data folder;
//! the baseline transaction is `BEGIN IMMEDIATE`.

use super::{Backend, Result, Store, StoreError};
use sqlx::migrate::{Migrate, Migration, MigrationType, Migrator};
use sqlx::{AnyConnection, Connection, SqlStr};

include!(concat!(env!("OUT_DIR"), "/migrations.rs"));

/// The table where sqlx's migrator records applied versions.
const APPLIED_TABLE: &str = "_sqlx_migrations";

/// The table where the earlier runner recorded applied versions.
const LEGACY_TABLE: &str = "schema_migrations";

/// Key of the PostgreSQL advisory lock held while baselining and migrating.
const LOCK_KEY: i64 = 0x666c_7578_626e_6431;

/// The embedded migrations of `backend` as sqlx migrations. The
/// description is the file's name part with `_` read as a space, as sqlx's
/// own folder loader makes it (the checksum covers the SQL only).
pub fn migrator(backend: Backend) -> Migrator {
    let files = match backend {
        Backend::Sqlite => MIGRATIONS_SQLITE,
        Backend::Postgres => MIGRATIONS_POSTGRES,
    };
    let migrations = files
        .iter()
        .map(|(version, name, sql)| {
            let description = name.replace('_', " ").into();
            Migration::new(*version, description, MigrationType::Simple, SqlStr::from_static(sql), false)
        })
        .collect();
    Migrator::with_migrations(migrations)
}

pub(super) async fn apply(store: &Store) -> Result<()> {
    let migrator = migrator(store.backend);
    let mut conn = store.pool.acquire().await?;
    if store.backend == Backend::Postgres {
        sqlx::query("SELECT pg_advisory_lock($1)").bind(LOCK_KEY).execute(&mut *conn).await?;
    }
    let result = async {
        baseline(&mut conn, store.backend, &migrator).await?;
        // `run_direct` is `run` on a connection we hold (so the lock
        // above covers it); `run` itself would make `Store::open`'s future
        // not `Send` (sqlx's "Acquire is not general enough" limitation).
        migrator.run_direct(None, &mut *conn, false).await?;
        Ok::<(), StoreError>(())
    }
    .await;
    match result {
        Ok(()) => {
            if store.backend == Backend::Postgres {
                sqlx::query("SELECT pg_advisory_unlock($1)").bind(LOCK_KEY).execute(&mut *conn).await?;
            }
            Ok(())
        }
        Err(e) => {
            // Closing the session releases every advisory lock it holds
            // (ours and, after a failed migration, sqlx's).
            let _ = conn.detach().close().await;
            Err(e)
        }
    }
}

/// Records the versions of `schema_migrations` in `_sqlx_migrations` when
/// only the former exists (a database made by the earlier runner), so that
/// the migrator does not run them again. One transaction: a crash leaves
/// either no `_sqlx_migrations` or a complete one.
async fn baseline(conn: &mut AnyConnection, backend: Backend, migrator: &Migrator) -> Result<()> {
    let mut tx = match backend {
        Backend::Sqlite => conn.begin_with("BEGIN IMMEDIATE").await?,
        Backend::Postgres => conn.begin().await?,
    };
    if !table_exists(&mut tx, backend, LEGACY_TABLE).await? || table_exists(&mut tx, backend, APPLIED_TABLE).await? {
        return Ok(());
    }
    let versions: Vec<i64> =
        sqlx::query_scalar("SELECT version FROM schema_migrations ORDER BY version").fetch_all(&mut *tx).await?;
    tx.ensure_migrations_table(APPLIED_TABLE).await?;
    for version in versions {
        let migration = migrator.iter().find(|m| m.version == version).ok_or_else(|| {
            StoreError::Corrupt(format!("schema_migrations lists version {version}, which this build does not have"))
        })?;
        tx.skip(APPLIED_TABLE, migration).await?;
    }
    tx.commit().await?;
    Ok(())
}

async fn table_exists(conn: &mut AnyConnection, backend: Backend, table: &str) -> Result<bool> {
    let sql = match backend {
        Backend::Sqlite => "SELECT COUNT(*) FROM sqlite_master WHERE type = 'table' AND name = $1",
        Backend::Postgres => {
            "SELECT COUNT(*) FROM information_schema.tables WHERE table_schema = current_schema() AND table_name = $1"
        }
    };
    let count: i64 = sqlx::query_scalar(sql).bind(table).fetch_one(&mut *conn).await?;
    Ok(count > 0)
}
