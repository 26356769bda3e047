//! PostgreSQL over TLS (rustls): `sslmode=require` encrypts the connection
//! (the certificate is not verified in that mode; `verify-full` with
//! `sslrootcert` verifies it). Needs a server with `ssl = on`; skipped with
//! a note when `FLUXBOUND_TEST_DATABASE_URL` is not set.

use crate::helpers::*;
use fluxbound::store::Store;
use sqlx::{AnyConnection, Connection};

/// `url` with one more query parameter.
fn with_param(url: &str, param: &str) -> String {
    let joiner = if url.contains('?') { '&' } else { '?' };
    format!("{url}{joiner}{param}")
}

/// Whether the server sees this connection as encrypted.
async fn encrypted(url: &str) -> bool {
    sqlx::any::install_default_drivers();
    let mut conn = AnyConnection::connect(url).await.expect("connect");
    let ssl: bool = sqlx::query_scalar("SELECT ssl FROM pg_stat_ssl WHERE pid = pg_backend_pid()")
        .fetch_one(&mut conn)
        .await
        .expect("read pg_stat_ssl");
    conn.close().await.ok();
    ssl
}

#[tokio::test]
async fn sslmode_require_gives_an_encrypted_postgres_connection() {
    let db = TestDb::fresh().await;
    let Some(url) = db.database_url.clone() else {
        eprintln!("skipped: set FLUXBOUND_TEST_DATABASE_URL (a server with ssl = on) to test TLS to PostgreSQL");
        return;
    };
    // The store (migrations included) works over TLS.
    let store = Store::open(&with_param(&url, "sslmode=require"), 1).await.expect("open the store over TLS");
    store.ping().await.unwrap();
    store.close().await;
    assert!(encrypted(&with_param(&url, "sslmode=require")).await, "sslmode=require must encrypt");
    // The same check sees a plain connection as plain, so it can fail.
    assert!(!encrypted(&with_param(&url, "sslmode=disable")).await, "sslmode=disable must not encrypt");
}

#[tokio::test]
async fn sslmode_verify_full_refuses_a_certificate_no_known_authority_signed() {
    let db = TestDb::fresh().await;
    let Some(url) = db.database_url.clone() else {
        eprintln!("skipped: set FLUXBOUND_TEST_DATABASE_URL (a server with ssl = on) to test TLS to PostgreSQL");
        return;
    };
    // The local test server's certificate is self-signed: checking it
    // against the built-in roots must fail, so certificates are checked.
    let err = Store::open(&with_param(&url, "sslmode=verify-full"), 1).await.expect_err("an unknown issuer is refused");
    assert!(err.to_string().to_lowercase().contains("certificate"), "{err}");
}
