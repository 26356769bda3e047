//! Schema migrations through sqlx's migrator, and the baseline of databases
//! made by the earlier runner (which recorded versions in
//! `schema_migrations`). Each test runs on SQLite, or on PostgreSQL when
//! `FLUXBOUND_TEST_DATABASE_URL` is set.

use crate::helpers::*;
use fluxbound::service::{Limits, Role};
use fluxbound::store::{Backend, MIGRATIONS_POSTGRES, MIGRATIONS_SQLITE, Store};
use sqlx::{AnyConnection, AssertSqlSafe, Connection, Executor};

/// The versions the earlier runner knew (its embedded list); a database it
/// made holds exactly these.
const LEGACY_VERSIONS: [i64; 2] = [1, 2];

/// The URL the app of `db` opens (as `Config::database_url` makes it), with
/// the data folder created.
fn url_of(db: &TestDb) -> String {
    std::fs::create_dir_all(&db.data_dir).unwrap();
    db.database_url
        .clone()
        .unwrap_or_else(|| format!("sqlite://{}?mode=rwc", db.data_dir.join("fluxbound.db").display()))
}

async fn connect(url: &str) -> AnyConnection {
    sqlx::any::install_default_drivers();
    AnyConnection::connect(url).await.expect("connect to the test database")
}

fn embedded(url: &str) -> &'static [(i64, &'static str, &'static str)] {
    match Backend::of_url(url).unwrap() {
        Backend::Sqlite => MIGRATIONS_SQLITE,
        Backend::Postgres => MIGRATIONS_POSTGRES,
    }
}

/// Makes the database the earlier runner left: its files applied, its
/// `schema_migrations` table listing them, and one organisation of data.
async fn make_legacy_database(url: &str, versions: &[i64]) {
    let mut conn = connect(url).await;
    conn.execute(
        "CREATE TABLE schema_migrations (version BIGINT PRIMARY KEY, name TEXT NOT NULL, applied_at TEXT NOT NULL)",
    )
    .await
    .unwrap();
    for version in versions {
        if let Some((_, name, sql)) = embedded(url).iter().find(|(v, ..)| v == version) {
            conn.execute(AssertSqlSafe(*sql)).await.unwrap();
            sqlx::query("INSERT INTO schema_migrations (version, name, applied_at) VALUES ($1, $2, $3)")
                .bind(version)
                .bind(*name)
                .bind("2025-01-01T00:00:00.000000Z")
                .execute(&mut conn)
                .await
                .unwrap();
        }
    }
    conn.execute("INSERT INTO organisations (id, name, created_at) VALUES ('org-legacy', 'legacy', '2025-01-01T00:00:00.000000Z')")
        .await
        .unwrap();
    conn.close().await.unwrap();
}

/// `(version, success)` of every row of `_sqlx_migrations`, by version.
async fn applied(url: &str) -> Vec<(i64, bool)> {
    let mut conn = connect(url).await;
    // Through the Any driver: `success` read as a BIGINT on both databases.
    let sql =
        "SELECT version, CAST(CASE WHEN success THEN 1 ELSE 0 END AS BIGINT) FROM _sqlx_migrations ORDER BY version";
    let rows: Vec<(i64, i64)> = sqlx::query_as(sql).fetch_all(&mut conn).await.unwrap();
    conn.close().await.unwrap();
    rows.into_iter().map(|(version, success)| (version, success == 1)).collect()
}

fn all_versions(url: &str) -> Vec<(i64, bool)> {
    embedded(url).iter().map(|(v, ..)| (*v, true)).collect()
}

#[tokio::test]
async fn a_database_made_by_the_earlier_runner_opens_without_rerunning_its_migrations() {
    let db = TestDb::fresh().await;
    let url = url_of(&db);
    make_legacy_database(&url, &LEGACY_VERSIONS).await;

    // Running 0001 again would fail ("table organisations already exists").
    let app = spawn_app_with(db.clone(), Limits { rate_per_key: 0, ..Limits::default() }).await;
    assert_eq!(applied(&url).await, all_versions(&url));
    let key = app.key("org-new", Role::Assessor).await;
    app.site(&key, &small_site("after the baseline")).await;
    drop(app.stop().await);

    // A second start finds everything applied and changes nothing.
    let again = spawn_app_with(db, Limits { rate_per_key: 0, ..Limits::default() }).await;
    assert_eq!(applied(&url).await, all_versions(&url));
    let mut conn = connect(&url).await;
    let legacy: String = sqlx::query_scalar("SELECT name FROM organisations WHERE id = 'org-legacy'")
        .fetch_one(&mut conn)
        .await
        .expect("the data of the earlier runner's database is kept");
    assert_eq!(legacy, "legacy");
    conn.close().await.unwrap();
    drop(again);
}

#[tokio::test]
async fn a_fresh_database_is_migrated_and_recorded_by_sqlx_only() {
    let db = TestDb::fresh().await;
    let url = url_of(&db);
    let app = spawn_app_with(db, Limits { rate_per_key: 0, ..Limits::default() }).await;
    assert_eq!(applied(&url).await, all_versions(&url));
    let mut conn = connect(&url).await;
    let legacy_table = sqlx::query("SELECT version FROM schema_migrations").fetch_all(&mut conn).await;
    assert!(legacy_table.is_err(), "the earlier runner's table is not made any more");
    conn.close().await.unwrap();
    drop(app);
}

#[tokio::test]
async fn an_applied_migration_whose_file_changed_stops_the_start() {
    let db = TestDb::fresh().await;
    let url = url_of(&db);
    Store::open(&url, 1).await.expect("first start migrates").close().await;
    let mut conn = connect(&url).await;
    sqlx::query("UPDATE _sqlx_migrations SET checksum = $1 WHERE version = 1")
        .bind(vec![0u8; 48])
        .execute(&mut conn)
        .await
        .unwrap();
    conn.close().await.unwrap();
    let err = Store::open(&url, 1).await.expect_err("a checksum mismatch is refused");
    assert!(err.to_string().contains("migration 1 was previously applied but has been modified"), "{err}");
}

#[tokio::test]
async fn a_legacy_database_naming_a_version_this_build_lacks_stops_the_start_and_is_left_as_it_was() {
    let db = TestDb::fresh().await;
    let url = url_of(&db);
    make_legacy_database(&url, &LEGACY_VERSIONS).await;
    let mut conn = connect(&url).await;
    conn.execute("INSERT INTO schema_migrations (version, name, applied_at) VALUES (9999, 'future', 'x')")
        .await
        .unwrap();
    conn.close().await.unwrap();
    let err = Store::open(&url, 1).await.expect_err("an unknown version is refused");
    assert!(err.to_string().contains("9999"), "{err}");
    let mut conn = connect(&url).await;
    let sqlx_table = sqlx::query("SELECT version FROM _sqlx_migrations").fetch_all(&mut conn).await;
    assert!(sqlx_table.is_err(), "the baseline transaction was rolled back whole");
    conn.close().await.unwrap();
}

#[tokio::test]
async fn replicas_starting_together_on_a_legacy_postgres_database_baseline_it_once() {
    let db = TestDb::fresh().await;
    let Some(url) = db.database_url.clone() else {
        eprintln!("skipped: set FLUXBOUND_TEST_DATABASE_URL to run this test on PostgreSQL");
        return;
    };
    make_legacy_database(&url, &LEGACY_VERSIONS).await;
    let opens = (0..4).map(|_| {
        let url = url.clone();
        async move { Store::open(&url, 1).await }
    });
    for opened in futures_join_all(opens).await {
        opened.expect("every replica starts").close().await;
    }
    assert_eq!(applied(&url).await, all_versions(&url));
}

/// Runs the futures concurrently on the test's runtime.
async fn futures_join_all<F>(futures: impl Iterator<Item = F>) -> Vec<F::Output>
where
    F: std::future::Future + Send + 'static,
    F::Output: Send + 'static,
{
    let handles: Vec<_> = futures.map(tokio::spawn).collect();
    let mut out = Vec::new();
    for handle in handles {
        out.push(handle.await.expect("task"));
    }
    out
}
