//! The HTTP edge under careless and hostile clients: bodies refused from
//! their header, slow bodies, silent and slow-header connections, the
//! connection cap, readiness and the bounded drain, and the access log.
//!
//! These talk raw TCP to the server itself (`app.server`), not through the
//! contract proxy, which would read every body in full first. Raw sockets
//! are blocking `std` sockets run on the blocking pool, so a waiting read
//! never stalls the server sharing the test's runtime.

use crate::helpers::*;
use fluxbound::config::ConnectionLimits;
use fluxbound::service::Role;
use serde_json::Value;
use std::io::{ErrorKind, Read, Write};
use std::net::{SocketAddr, TcpStream};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

/// Generous limits; each test shortens the one it exercises.
fn quick() -> ConnectionLimits {
    ConnectionLimits {
        header_read_timeout: Duration::from_secs(10),
        idle_timeout: Duration::from_secs(10),
        body_read_timeout: Duration::from_secs(10),
        max_connections: 50,
        drain_timeout: Duration::from_secs(10),
    }
}

async fn spawn_edge(connections: ConnectionLimits) -> TestApp {
    spawn_app_configured(TestDb::fresh().await, |c| c.connections = connections).await
}

/// What a raw connection saw: the bytes that arrived, and whether (and
/// when, from the start of the read) the server closed it.
#[derive(Debug)]
struct Seen {
    text: String,
    closed_after: Option<Duration>,
}

/// Reads until the server closes the connection or `limit` passes.
fn read_until_closed(s: &mut TcpStream, limit: Duration) -> Seen {
    let start = Instant::now();
    let mut got = Vec::new();
    let mut buf = [0_u8; 4096];
    let closed_after = loop {
        let Some(left) = limit.checked_sub(start.elapsed()).filter(|d| !d.is_zero()) else { break None };
        s.set_read_timeout(Some(left)).expect("set a read timeout");
        match s.read(&mut buf) {
            Ok(0) => break Some(start.elapsed()),
            Ok(n) => got.extend_from_slice(&buf[..n]),
            Err(e) if matches!(e.kind(), ErrorKind::WouldBlock | ErrorKind::TimedOut) => break None,
            Err(e) if e.kind() == ErrorKind::Interrupted => {}
            Err(_) => break Some(start.elapsed()), // reset by the server
        }
    };
    Seen { text: String::from_utf8_lossy(&got).into_owned(), closed_after }
}

/// Opens a raw connection and sends `head` (and nothing more).
fn open_with(addr: SocketAddr, head: &str) -> TcpStream {
    let mut s = TcpStream::connect(addr).expect("connect to the server");
    s.write_all(head.as_bytes()).expect("send");
    s
}

async fn blocking<T: Send + 'static>(f: impl FnOnce() -> T + Send + 'static) -> T {
    tokio::task::spawn_blocking(f).await.expect("blocking part of the test")
}

/// Waits until `ready()` holds (the server's own counters), up to 10 s.
async fn until(what: &str, ready: impl Fn() -> bool) {
    let start = Instant::now();
    while !ready() {
        assert!(start.elapsed() < Duration::from_secs(10), "timed out waiting until {what}");
        tokio::time::sleep(Duration::from_millis(10)).await;
    }
}

/// A request head for `POST /v1/evaluate` announcing `length` bytes.
fn evaluate_head(key: &str, length: usize) -> String {
    format!(
        "POST /v1/evaluate HTTP/1.1\r\nHost: t\r\nAuthorization: Bearer {key}\r\n\
         Content-Type: application/json\r\nContent-Length: {length}\r\n\r\n"
    )
}

#[tokio::test]
async fn a_body_announced_over_the_bound_is_refused_413_without_100_continue() {
    let app = spawn_edge(quick()).await;
    let addr = app.server;
    let seen = blocking(move || {
        let mut s = open_with(
            addr,
            "POST /v1/sites HTTP/1.1\r\nHost: t\r\nContent-Type: application/json\r\n\
             Content-Length: 40000000\r\nExpect: 100-continue\r\n\r\n",
        );
        read_until_closed(&mut s, Duration::from_secs(10))
    })
    .await;
    assert!(seen.text.starts_with("HTTP/1.1 413 "), "{seen:?}");
    assert!(!seen.text.contains("100 Continue"), "{seen:?}");
    assert!(seen.text.contains("urn:fluxbound:problem:payload-too-large"), "{seen:?}");
    assert!(seen.text.to_ascii_lowercase().contains("connection: close"), "{seen:?}");
    assert!(seen.closed_after.is_some(), "the connection ends with the refusal: {seen:?}");
}

#[tokio::test]
async fn a_body_that_does_not_arrive_within_the_body_read_timeout_is_answered_408() {
    let app = spawn_edge(ConnectionLimits { body_read_timeout: Duration::from_secs(1), ..quick() }).await;
    let key = app.key("slow", Role::Viewer).await;
    let addr = app.server;
    let seen = blocking(move || {
        let mut s = open_with(addr, &format!("{}{{\"conduc", evaluate_head(&key, 400)));
        read_until_closed(&mut s, Duration::from_secs(10))
    })
    .await;
    assert!(seen.text.starts_with("HTTP/1.1 408 "), "{seen:?}");
    assert!(seen.text.contains("urn:fluxbound:problem:body-timeout"), "{seen:?}");
    assert!(seen.closed_after.is_some_and(|t| t >= Duration::from_millis(900)), "{seen:?}");
}

#[test]
fn the_document_names_408_where_bodies_are_read_and_413_everywhere() {
    let doc: Value = serde_json::from_str(&fluxbound::http::openapi::openapi_json()).unwrap();
    assert!(doc.pointer("/paths/~1v1~1evaluate/post/responses/408").is_some());
    assert!(doc.pointer("/paths/~1v1~1sites/post/responses/408").is_some());
    assert!(doc.pointer("/paths/~1v1~1sites/get/responses/408").is_none(), "a GET reads no body");
    assert!(doc.pointer("/paths/~1healthz/get/responses/413").is_some());
}

#[tokio::test]
async fn a_connection_that_sends_nothing_is_closed_after_the_idle_timeout() {
    let app = spawn_edge(ConnectionLimits { idle_timeout: Duration::from_secs(1), ..quick() }).await;
    let addr = app.server;
    let seen = blocking(move || read_until_closed(&mut open_with(addr, ""), Duration::from_secs(8))).await;
    let after = seen.closed_after.expect("the server closes a silent connection");
    assert!(after >= Duration::from_millis(900), "closed after {after:?}, before the idle timeout");
    assert!(seen.text.is_empty(), "{seen:?}");
}

#[tokio::test]
async fn a_request_head_sent_one_byte_at_a_time_is_cut_at_the_header_read_timeout() {
    // Bytes every 100 ms keep the idle timeout (1 s) from firing: only the
    // header-read timeout (2 s) can end this connection.
    let limits = ConnectionLimits {
        header_read_timeout: Duration::from_secs(2),
        idle_timeout: Duration::from_secs(1),
        ..quick()
    };
    let app = spawn_edge(limits).await;
    let addr = app.server;
    let cut_after = blocking(move || {
        let start = Instant::now();
        let mut s = open_with(addr, "");
        let mut buf = [0_u8; 256];
        for byte in b"GET /healthz HTTP/1.1\r\nX-Slow: ".iter().chain([b'a'; 200].iter()) {
            if s.write_all(&[*byte]).is_err() {
                return Some(start.elapsed());
            }
            s.set_read_timeout(Some(Duration::from_millis(100))).unwrap();
            match s.read(&mut buf) {
                Ok(_) => return Some(start.elapsed()),
                Err(e) if matches!(e.kind(), ErrorKind::WouldBlock | ErrorKind::TimedOut) => {}
                Err(_) => return Some(start.elapsed()),
            }
        }
        None
    })
    .await
    .expect("the server cuts a slow request head");
    assert!(cut_after >= Duration::from_millis(1_900), "cut after {cut_after:?}");
    assert!(cut_after < Duration::from_secs(8), "cut after {cut_after:?}");
    assert!(app.edge.stats.render().contains("fluxbound_http_connections_header_timeouts_total 1"));
}

#[tokio::test]
async fn at_the_cap_the_longest_idle_connection_gives_way_to_a_new_request() {
    let app = spawn_edge(ConnectionLimits { max_connections: 4, ..quick() }).await;
    let addr = app.server;
    // Whatever connected while the app started (the proxy fetching the
    // document) is gone first, so the four below are the oldest.
    until("no connection is open", || app.edge.stats.open() == 0).await;
    let idle: Vec<TcpStream> = blocking(move || (0..4).map(|_| open_with(addr, "")).collect()).await;
    until("four connections are open", || app.edge.stats.open() == 4).await;
    let (answer, mut idle) = blocking(move || {
        let mut s = open_with(addr, "GET /healthz HTTP/1.1\r\nHost: t\r\nConnection: close\r\n\r\n");
        (read_until_closed(&mut s, Duration::from_secs(10)), idle)
    })
    .await;
    assert!(answer.text.starts_with("HTTP/1.1 200 "), "{answer:?}");
    let oldest = blocking(move || read_until_closed(&mut idle[0], Duration::from_secs(5))).await;
    assert!(oldest.closed_after.is_some(), "the oldest idle connection was shed: {oldest:?}");
    assert!(app.edge.stats.render().contains("fluxbound_http_connections_shed_total 1"));
}

#[tokio::test]
async fn at_the_cap_with_every_connection_busy_a_new_one_is_closed_unanswered() {
    let app = spawn_edge(ConnectionLimits { max_connections: 2, ..quick() }).await;
    let key = app.key("busy", Role::Viewer).await;
    let addr = app.server;
    let head = evaluate_head(&key, 400);
    let busy: Vec<TcpStream> = blocking(move || (0..2).map(|_| open_with(addr, &head)).collect()).await;
    until("two requests are in flight", || app.edge.stats.in_flight() == 2).await;
    let refused = blocking(move || {
        let mut s = open_with(addr, "GET /healthz HTTP/1.1\r\nHost: t\r\n\r\n");
        read_until_closed(&mut s, Duration::from_secs(5))
    })
    .await;
    assert!(refused.closed_after.is_some() && refused.text.is_empty(), "{refused:?}");
    assert_eq!(app.edge.stats.in_flight(), 2, "the busy requests are untouched");
    drop(busy);
}

#[tokio::test]
async fn readyz_answers_503_once_shutdown_has_begun() {
    let mut app = spawn_edge(quick()).await;
    let addr = app.server;
    // A request whose head has begun to arrive is answered during the drain.
    let mut s = blocking(move || open_with(addr, "GET /readyz HTTP/1.1\r\nHost: t\r\n")).await;
    until("the connection is open", || app.edge.stats.open() == 1).await;
    // Let its task read the first bytes before the drain looks at it.
    tokio::time::sleep(Duration::from_millis(300)).await;
    app.begin_stop();
    until("the drain has begun", || app.edge.draining.is_draining()).await;
    let seen = blocking(move || {
        s.write_all(b"\r\n").expect("finish the head");
        read_until_closed(&mut s, Duration::from_secs(10))
    })
    .await;
    assert!(seen.text.starts_with("HTTP/1.1 503 "), "{seen:?}");
    assert!(seen.text.contains("urn:fluxbound:problem:shutting-down"), "{seen:?}");
    assert!(seen.closed_after.is_some(), "{seen:?}");
}

#[tokio::test]
async fn the_drain_drops_what_is_left_after_its_timeout_and_the_server_exits() {
    let limits = ConnectionLimits {
        drain_timeout: Duration::from_secs(1),
        body_read_timeout: Duration::from_secs(60),
        ..quick()
    };
    let app = spawn_edge(limits).await;
    let key = app.key("stuck", Role::Viewer).await;
    let addr = app.server;
    let head = evaluate_head(&key, 400);
    let mut stuck = blocking(move || open_with(addr, &head)).await;
    until("the request is in flight", || app.edge.stats.in_flight() == 1).await;
    let start = Instant::now();
    tokio::time::timeout(Duration::from_secs(10), app.stop()).await.expect("the server exits after the drain timeout");
    assert!(start.elapsed() >= Duration::from_millis(900), "the drain waited {:?}", start.elapsed());
    let seen = blocking(move || read_until_closed(&mut stuck, Duration::from_secs(5))).await;
    assert!(seen.closed_after.is_some() && seen.text.is_empty(), "{seen:?}");
}

/// A `MakeWriter` that keeps every log line in memory.
#[derive(Clone, Default)]
struct Captured(Arc<Mutex<Vec<u8>>>);

impl Write for Captured {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.0.lock().unwrap().extend_from_slice(buf);
        Ok(buf.len())
    }
    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

// One thread: the logger set for this test's thread also sees the server's
// tasks, which run on it.
#[tokio::test(flavor = "current_thread")]
async fn each_request_leaves_one_access_line_with_its_route_template_and_no_secrets() {
    let logs = Captured::default();
    let writer = logs.clone();
    let subscriber =
        tracing_subscriber::fmt().with_env_filter("info").with_ansi(false).with_writer(move || writer.clone()).finish();
    let _guard = tracing::subscriber::set_default(subscriber);
    let app = spawn_app().await;
    let key = app.key("logged", Role::Assessor).await;
    let id = app.site(&key, &small_site("Kesselhaus Ost 7731")).await;
    assert_eq!(app.get("/v1/sites?name=zeta-quokka&limit=5", &key).await.status(), 200);
    let res = app.get(&format!("/v1/sites/{id}"), &key).await;
    assert_eq!(res.status(), 200);
    let request_id = res.headers()["x-request-id"].to_str().unwrap().to_string();
    let text = String::from_utf8(logs.0.lock().unwrap().clone()).unwrap();
    let line = text
        .lines()
        .find(|l| l.contains(&format!("request_id={request_id}")) && l.contains("fluxbound::access"))
        .unwrap_or_else(|| panic!("no access line for {request_id} in:\n{text}"));
    for field in ["method=GET", "route=/v1/sites/{site_id}", "status=200", "latency_ms="] {
        assert!(line.contains(field), "{field} missing from {line}");
    }
    let create = text
        .lines()
        .filter(|l| l.contains("fluxbound::access") && l.contains("method=POST") && l.contains("route=/v1/sites "))
        .count();
    assert_eq!(create, 1, "one line for the one POST /v1/sites:\n{text}");
    for secret in [key.as_str(), "zeta-quokka", "Kesselhaus"] {
        assert!(!text.contains(secret), "the log carries '{secret}':\n{text}");
    }
}
