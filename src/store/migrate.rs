//! The migration runner: embedded SQL files applied in version order, each
//! in its own transaction, recorded in `schema_migrations`.

use super::{Backend, Result, Store, StoreError, now};
use sqlx::Executor;

/// `(version, name, sql)` for SQLite.
pub const MIGRATIONS_SQLITE: &[(i64, &str, &str)] = &[
    (1, "init", include_str!("../../migrations/sqlite/0001_init.sql")),
    (2, "surveys", include_str!("../../migrations/sqlite/0002_surveys.sql")),
    (3, "name_folded", include_str!("../../migrations/sqlite/0003_name_folded.sql")),
];

/// `(version, name, sql)` for PostgreSQL.
pub const MIGRATIONS_POSTGRES: &[(i64, &str, &str)] = &[
    (1, "init", include_str!("../../migrations/postgres/0001_init.sql")),
    (2, "surveys", include_str!("../../migrations/postgres/0002_surveys.sql")),
    (3, "name_folded", include_str!("../../migrations/postgres/0003_name_folded.sql")),
];

/// Key of the PostgreSQL advisory lock held while migrating.
const LOCK_KEY: i64 = 0x666c_7578_626e_6431;

pub(super) async fn apply(store: &Store) -> Result<()> {
    let migrations = match store.backend {
        Backend::Sqlite => MIGRATIONS_SQLITE,
        Backend::Postgres => MIGRATIONS_POSTGRES,
    };
    let mut conn = store.pool.acquire().await?;
    if store.backend == Backend::Postgres {
        sqlx::query("SELECT pg_advisory_lock($1)").bind(LOCK_KEY).execute(&mut *conn).await?;
    }
    let result = apply_locked(&mut conn, store.backend, migrations).await;
    if store.backend == Backend::Postgres {
        sqlx::query("SELECT pg_advisory_unlock($1)").bind(LOCK_KEY).execute(&mut *conn).await?;
    }
    result
}

async fn apply_locked(
    conn: &mut sqlx::pool::PoolConnection<sqlx::Any>,
    backend: Backend,
    migrations: &[(i64, &str, &str)],
) -> Result<()> {
    conn.execute(
        "CREATE TABLE IF NOT EXISTS schema_migrations (version BIGINT PRIMARY KEY, name TEXT NOT NULL, applied_at TEXT NOT NULL)",
    )
    .await?;
    for (version, name, sql) in migrations {
        let done: Option<i64> = sqlx::query_scalar("SELECT version FROM schema_migrations WHERE version = $1")
            .bind(version)
            .fetch_optional(&mut **conn)
            .await?;
        if done.is_some() {
            continue;
        }
        let begin = if backend == Backend::Sqlite { "BEGIN IMMEDIATE" } else { "BEGIN" };
        conn.execute(begin).await?;
        let run = async {
            for statement in statements(sql) {
                conn.execute(sqlx::AssertSqlSafe(statement)).await?;
            }
            sqlx::query("INSERT INTO schema_migrations (version, name, applied_at) VALUES ($1, $2, $3)")
                .bind(version)
                .bind(*name)
                .bind(now())
                .execute(&mut **conn)
                .await?;
            Ok::<(), StoreError>(())
        }
        .await;
        match run {
            Ok(()) => {
                conn.execute("COMMIT").await?;
            }
            Err(e) => {
                let _ = conn.execute("ROLLBACK").await;
                return Err(e);
            }
        }
    }
    Ok(())
}

/// Splits a migration file at semicolons that end a line, dropping `--`
/// comment lines.
fn statements(sql: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut current = String::new();
    for line in sql.lines() {
        let trimmed = line.trim();
        if trimmed.starts_with("--") || trimmed.is_empty() {
            continue;
        }
        current.push_str(line);
        current.push('\n');
        if trimmed.ends_with(';') {
            out.push(std::mem::take(&mut current));
        }
    }
    if !current.trim().is_empty() {
        out.push(current);
    }
    out
}
