//! `spawn_app()`: the real server on a random port with a fresh database —
//! an SQLite file in a temporary directory, or, when
//! `FLUXBOUND_TEST_DATABASE_URL` names a PostgreSQL server, a uniquely named
//! database created on it for this test. Logs are muted unless `TEST_LOG`
//! is set. Every exchange goes through the contract proxy
//! (`contract::start_proxy`), which checks it against the served OpenAPI
//! document; what it finds fails the test when the `TestApp` is dropped.

use crate::contract::start_proxy;
use fluxbound::app::App;
use fluxbound::config::Config;
use fluxbound::service::{Limits, Role, Service};
use reqwest::{Client, Method, RequestBuilder, Response};
use serde_json::Value;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex, Once};
use tokio::sync::oneshot;
use tokio::task::JoinHandle;

static LOGS: Once = Once::new();

/// Where a test's data lives; kept across restarts of the same test (clones
/// share it) and removed when the last clone drops.
#[derive(Clone, Debug)]
pub struct TestDb {
    pub data_dir: PathBuf,
    pub database_url: Option<String>,
    _dir: Arc<TempDir>,
}

impl TestDb {
    pub async fn fresh() -> TestDb {
        let dir = TempDir::unique("fluxbound-test");
        let database_url = match std::env::var("FLUXBOUND_TEST_DATABASE_URL") {
            Ok(admin_url) if !admin_url.is_empty() => Some(create_pg_database(&admin_url).await),
            _ => None,
        };
        TestDb { data_dir: dir.path().to_path_buf(), database_url, _dir: Arc::new(dir) }
    }
}

/// A folder in the system temp directory, removed with everything in it
/// when the guard drops (also when the test panics). Nothing is created
/// until someone writes there.
#[derive(Debug)]
pub struct TempDir(PathBuf);

impl TempDir {
    /// `<temp>/<prefix>-<uuid>`: a name no other test or run uses.
    pub fn unique(prefix: &str) -> TempDir {
        TempDir(std::env::temp_dir().join(format!("{prefix}-{}", uuid::Uuid::new_v4().simple())))
    }

    pub fn path(&self) -> &Path {
        &self.0
    }
}

impl Drop for TempDir {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

/// Creates `<prefix><uuid>` on the server of `admin_url` and returns its
/// URL. The prefix is `FLUXBOUND_TEST_DATABASE_PREFIX` (CI sets one unique
/// to its run, so it drops only its own databases) or `fluxbound_test_`.
async fn create_pg_database(admin_url: &str) -> String {
    use sqlx::Connection;
    sqlx::any::install_default_drivers();
    let prefix = std::env::var("FLUXBOUND_TEST_DATABASE_PREFIX").unwrap_or_else(|_| "fluxbound_test_".into());
    assert!(
        !prefix.is_empty() && prefix.bytes().all(|b| b.is_ascii_lowercase() || b.is_ascii_digit() || b == b'_'),
        "FLUXBOUND_TEST_DATABASE_PREFIX must be lowercase letters, digits and underscores"
    );
    let name = format!("{prefix}{}", uuid::Uuid::new_v4().simple());
    let mut conn = sqlx::AnyConnection::connect(admin_url).await.expect("connect to the test PostgreSQL server");
    sqlx::query(sqlx::AssertSqlSafe(format!("CREATE DATABASE {name}")))
        .execute(&mut conn)
        .await
        .expect("create test database");
    conn.close().await.ok();
    let base = admin_url.rsplit_once('/').map(|(b, _)| b).unwrap_or(admin_url);
    format!("{base}/{name}")
}

pub struct TestApp {
    pub base: String,
    /// The server itself, without the contract proxy: for tests of what a
    /// connection does (the proxy would hold its own to the server).
    pub direct: std::net::SocketAddr,
    pub client: Client,
    pub service: Service,
    pub db: TestDb,
    /// The server itself, behind the proxy: for raw TCP tests that the
    /// proxy would get in the way of (it reads every body in full).
    pub server: std::net::SocketAddr,
    /// The draining flag and connection counters of the server.
    pub edge: fluxbound::http::server::EdgeState,
    shutdown: Option<oneshot::Sender<()>>,
    handle: Option<JoinHandle<std::io::Result<()>>>,
    /// Departures from the OpenAPI document seen by the contract proxy.
    violations: Arc<Mutex<Vec<String>>>,
    proxy_shutdown: Option<oneshot::Sender<()>>,
}

pub async fn spawn_app() -> TestApp {
    spawn_app_with(TestDb::fresh().await, Limits { rate_per_key: 0, ..Limits::default() }).await
}

pub async fn spawn_app_with(db: TestDb, limits: Limits) -> TestApp {
    spawn_app_configured(db, |c| c.limits = limits).await
}

/// A server on `db` with the test defaults changed by `adjust`.
pub async fn spawn_app_configured(db: TestDb, adjust: impl FnOnce(&mut Config)) -> TestApp {
    LOGS.call_once(|| {
        if std::env::var("TEST_LOG").is_ok() {
            fluxbound::telemetry::init(fluxbound::config::LogFormat::Human);
        }
    });
    let mut config = Config {
        listen: "127.0.0.1:0".into(),
        data_dir: db.data_dir.clone(),
        database_url: db.database_url.clone(),
        max_connections: 4,
        limits: Limits { rate_per_key: 0, ..Limits::default() },
        ..Config::new()
    };
    adjust(&mut config);
    let app = App::build(&config).await.expect("app builds");
    let server = app.local_addr();
    let base = format!("http://{server}");
    let direct = server;
    let service = app.service();
    let edge = app.edge();
    let (tx, rx) = oneshot::channel::<()>();
    let handle = tokio::spawn(app.serve(async move {
        let _ = rx.await;
    }));
    let proxy = start_proxy(base).await;
    TestApp {
        base: proxy.base,
        direct,
        client: Client::new(),
        service,
        db,
        server,
        edge,
        shutdown: Some(tx),
        handle: Some(handle),
        violations: proxy.violations,
        proxy_shutdown: Some(proxy.shutdown),
    }
}

impl TestApp {
    /// Fires the server's shutdown signal without waiting for it to exit.
    pub fn begin_stop(&mut self) {
        if let Some(tx) = self.shutdown.take() {
            let _ = tx.send(());
        }
    }

    /// Stops the server gracefully and waits until it has exited.
    pub async fn stop(mut self) -> TestDb {
        if let Some(tx) = self.shutdown.take() {
            let _ = tx.send(());
        }
        if let Some(h) = self.handle.take() {
            h.await.expect("server task").expect("server exits cleanly");
        }
        self.db.clone()
    }

    /// A new key of `role` in organisation `org`.
    pub async fn key(&self, org: &str, role: Role) -> String {
        self.service.keys_create_for_org(org, role, None).await.expect("key").1
    }

    pub fn req(&self, method: Method, path: &str, key: &str) -> RequestBuilder {
        let b = self.client.request(method, format!("{}{path}", self.base));
        if key.is_empty() { b } else { b.bearer_auth(key) }
    }
    pub async fn get(&self, path: &str, key: &str) -> Response {
        self.req(Method::GET, path, key).send().await.expect("request")
    }
    pub async fn post(&self, path: &str, key: &str, body: &Value) -> Response {
        self.req(Method::POST, path, key).json(body).send().await.expect("request")
    }
    pub async fn put(&self, path: &str, key: &str, body: &Value, if_match: Option<&str>) -> Response {
        let mut b = self.req(Method::PUT, path, key).json(body);
        if let Some(m) = if_match {
            b = b.header("If-Match", m);
        }
        b.send().await.expect("request")
    }
    pub async fn delete(&self, path: &str, key: &str) -> Response {
        self.req(Method::DELETE, path, key).send().await.expect("request")
    }

    /// Creates a site from a document; returns its id.
    pub async fn site(&self, key: &str, doc: &Value) -> String {
        let res = self.post("/v1/sites", key, doc).await;
        assert_eq!(res.status(), 201, "create site: {}", res.text().await.unwrap_or_default());
        res.json::<Value>().await.unwrap()["id"].as_str().unwrap().to_string()
    }
}

impl Drop for TestApp {
    fn drop(&mut self) {
        if let Some(tx) = self.shutdown.take() {
            let _ = tx.send(());
        }
        if let Some(tx) = self.proxy_shutdown.take() {
            let _ = tx.send(());
        }
        let violations = std::mem::take(&mut *self.violations.lock().unwrap_or_else(|p| p.into_inner()));
        // A test that already failed keeps its own message.
        if !violations.is_empty() && !std::thread::panicking() {
            panic!("the API departed from its OpenAPI document:\n{}", violations.join("\n"));
        }
    }
}

/// An example site shipped in `examples/` (invented scenarios).
pub fn example(name: &str) -> Value {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("examples").join(name);
    serde_json::from_str(&std::fs::read_to_string(path).expect("example")).expect("example JSON")
}

/// A small valid site: one long wire and one position.
pub fn small_site(name: &str) -> Value {
    serde_json::json!({
        "name": name,
        "frequency_hz": 50,
        "circuits": [{"id": "c", "kind": "single_phase", "current_a": 500, "rated_current_a": 1000}],
        "conductors": [{"id": "w", "circuit": "c", "phase": "A", "radius_m": 0.01, "path": [[-1000, 0, 0], [1000, 0, 0]]}],
        "positions": [{"id": "p", "at": [0.0, 0.5, 0.0]}]
    })
}

/// Asserts an RFC 9457 answer: status, media type, kind, and (optionally)
/// that one of its errors has `pointer`. Returns the body.
pub async fn assert_problem(res: Response, status: u16, kind: &str, pointer: Option<&str>) -> Value {
    assert_eq!(res.status().as_u16(), status, "status");
    let ct = res.headers().get("content-type").and_then(|v| v.to_str().ok()).unwrap_or("").to_string();
    assert_eq!(ct, "application/problem+json", "content type");
    let body: Value = res.json().await.expect("problem body is JSON");
    assert_eq!(body["type"], format!("urn:fluxbound:problem:{kind}"), "{body}");
    assert_eq!(body["status"], status, "{body}");
    assert!(body["title"].is_string() && body["detail"].is_string(), "{body}");
    if let Some(p) = pointer {
        let errors = body["errors"].as_array().cloned().unwrap_or_default();
        assert!(errors.iter().any(|e| e["pointer"] == p), "no error at {p}: {body}");
    }
    body
}
