//! The accept loop: our own over hyper (not `axum::serve`), so that each
//! connection is ours to time and to close.
//!
//! - **Header read**: hyper's `header_read_timeout`, armed whenever the
//!   connection waits for a request head (on open and after each answer):
//!   a client that trickles its head is cut.
//! - **Idle**: a connection with no request in flight on which nothing
//!   arrives for the idle timeout is closed by its task (a silent client).
//! - **Cap**: at `max_connections` a new connection displaces the one idle
//!   the longest ([`Registry::admit`]); with none idle it is closed
//!   unanswered, so the cap holds whatever clients do.
//! - **Drain**: when the shutdown future completes, [`Draining`] is set
//!   first (`/readyz` answers 503), then the listener closes, quiet
//!   connections close at once, requests in flight (or whose head has begun
//!   to arrive) are answered with `Connection: close`, and whatever is left
//!   after the drain timeout is dropped and counted in the log.
//!
//! Request bodies (413 from the header, 408 when slow) are judged by
//! middleware in [`crate::http::body`], where the answer can be a problem.

use super::connections::{Conn, ConnectionStats, InFlight, Registry, Slot, Watched};
use crate::config::ConnectionLimits;
use axum::Router;
use axum::body::{Body, Bytes};
use axum::extract::ConnectInfo;
use axum::http::{Request, Response};
use hyper::body::Incoming;
use hyper::server::conn::http1;
use hyper_util::rt::{TokioIo, TokioTimer};
use std::convert::Infallible;
use std::future::Future;
use std::net::SocketAddr;
use std::pin::Pin;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::task::{Context, Poll};
use std::time::Duration;
use tokio::net::{TcpListener, TcpStream};
use tokio::sync::watch;
use tokio::task::JoinSet;

/// Pause after a failed accept (typically EMFILE, out of file descriptors)
/// so the loop does not spin while connections close.
const ACCEPT_RETRY_PAUSE: Duration = Duration::from_millis(250);

/// Set once shutdown begins, before the drain; `/readyz` answers 503 from
/// then on so a balancer stops sending new work here.
#[derive(Debug, Clone, Default)]
pub struct Draining(Arc<AtomicBool>);

impl Draining {
    pub fn begin(&self) {
        self.0.store(true, Ordering::Release);
    }
    pub fn is_draining(&self) -> bool {
        self.0.load(Ordering::Acquire)
    }
}

/// What the edge shares between the accept loop and the handlers.
#[derive(Debug, Clone)]
pub struct EdgeState {
    pub draining: Draining,
    pub stats: ConnectionStats,
    pub limits: ConnectionLimits,
}

impl EdgeState {
    pub fn new(limits: ConnectionLimits) -> Self {
        EdgeState { draining: Draining::default(), stats: ConnectionStats::default(), limits }
    }
}

/// Serves `router` on `listener` until `shutdown` completes, then drains
/// (see the module docs). Returns when every connection has closed or been
/// dropped.
pub async fn serve(listener: TcpListener, router: Router, edge: EdgeState, shutdown: impl Future<Output = ()>) {
    let registry = Registry::new(edge.limits.max_connections, edge.stats.clone());
    // Tells every connection task that the drain has begun; kept alive
    // until the drain ends so no task sees it closed early.
    let (drain_tx, drain_rx) = watch::channel(false);
    let mut tasks = JoinSet::new();
    let mut shutdown = std::pin::pin!(shutdown);
    loop {
        tokio::select! {
            () = &mut shutdown => break,
            accepted = listener.accept() => match accepted {
                Ok((stream, peer)) => match registry.admit() {
                    Some(slot) => {
                        let conn = Connection { peer, router: router.clone(), limits: edge.limits.clone(), stats: edge.stats.clone() };
                        tasks.spawn(conn.run(stream, slot, drain_rx.clone()));
                    }
                    None => drop(stream),
                },
                Err(e) => {
                    tracing::warn!(error = %e, "cannot accept a connection");
                    tokio::time::sleep(ACCEPT_RETRY_PAUSE).await;
                }
            },
            // Reap finished connection tasks as they end.
            Some(_) = tasks.join_next() => {}
        }
    }
    edge.draining.begin();
    drop(listener);
    let _ = drain_tx.send(true);
    drain(tasks, edge.limits.drain_timeout).await;
}

/// Waits for the connection tasks up to `timeout`, then drops the rest.
async fn drain(mut tasks: JoinSet<()>, timeout: Duration) {
    tracing::info!(connections = tasks.len(), timeout_s = timeout.as_secs_f64(), "draining connections");
    let all_closed = async { while tasks.join_next().await.is_some() {} };
    if tokio::time::timeout(timeout, all_closed).await.is_ok() {
        tracing::info!("all connections closed");
        return;
    }
    tasks.abort_all();
    let mut cut = 0_usize;
    while let Some(ended) = tasks.join_next().await {
        cut += usize::from(ended.is_err_and(|e| e.is_cancelled()));
    }
    tracing::warn!(cut, timeout_s = timeout.as_secs_f64(), "drain timeout: connections dropped unanswered");
}

/// One accepted connection's task.
struct Connection {
    peer: SocketAddr,
    router: Router,
    limits: ConnectionLimits,
    stats: ConnectionStats,
}

impl Connection {
    /// Serves the connection until it ends, is idle too long, is shed, or
    /// the drain closes it. Dropping hyper's connection future closes the
    /// socket; that is done only when no request is in flight (checked here,
    /// between polls of that future, so no request can start meanwhile).
    async fn run(self, stream: TcpStream, slot: Slot, mut drain: watch::Receiver<bool>) {
        let conn = slot.conn.clone();
        let _ = stream.set_nodelay(true);
        let io = TokioIo::new(Watched { inner: stream, conn: conn.clone() });
        let service = PerConnection { router: self.router, conn: conn.clone(), peer: self.peer };
        let http = http1::Builder::new()
            .timer(TokioTimer::new())
            .header_read_timeout(self.limits.header_read_timeout)
            .serve_connection(io, service);
        let mut http = std::pin::pin!(http);
        let mut closing = false;
        loop {
            let idle_check = tokio::time::sleep(conn.until_idle(self.limits.idle_timeout));
            tokio::select! {
                ended = http.as_mut() => {
                    if let Err(e) = ended {
                        if e.is_timeout() {
                            self.stats.header_timeout();
                        }
                        tracing::debug!(error = %e, peer = %self.peer, "connection ended with an error");
                    }
                    return;
                }
                () = conn.shed.notified(), if !closing => {
                    if conn.is_idle() {
                        tracing::debug!(peer = %self.peer, "idle connection shed at the connection cap");
                        return;
                    }
                    closing = true;
                    http.as_mut().graceful_shutdown();
                }
                _ = drain.changed(), if !closing => {
                    if conn.is_quiet() {
                        return;
                    }
                    closing = true;
                    http.as_mut().graceful_shutdown();
                }
                () = idle_check => {
                    if conn.idle_for().is_some_and(|idle| idle >= self.limits.idle_timeout) {
                        self.stats.idle_closed();
                        tracing::debug!(peer = %self.peer, "idle connection closed");
                        return;
                    }
                }
            }
        }
    }
}

/// The router as one connection's hyper service: marks each request in
/// flight until its answer is sent, and gives handlers the peer address
/// (`ConnectInfo<SocketAddr>`, as `into_make_service_with_connect_info`
/// would).
#[derive(Clone)]
struct PerConnection {
    router: Router,
    conn: Arc<Conn>,
    peer: SocketAddr,
}

type Answer = Result<Response<Body>, Infallible>;

impl hyper::service::Service<Request<Incoming>> for PerConnection {
    type Response = Response<Body>;
    type Error = Infallible;
    type Future = Pin<Box<dyn Future<Output = Answer> + Send>>;

    fn call(&self, mut req: Request<Incoming>) -> Self::Future {
        // Counted here, synchronously, so a connection is never seen idle
        // between its head being parsed and its handler starting.
        let in_flight = self.conn.begin_request();
        req.extensions_mut().insert(ConnectInfo(self.peer));
        let router = self.router.clone();
        Box::pin(async move {
            let res = tower::ServiceExt::oneshot(router, req).await?;
            Ok(res.map(|body| Body::new(Answering { body, _in_flight: in_flight })))
        })
    }
}

/// A response body that keeps its request in flight until it is sent in
/// full (or dropped): an answer still streaming is not idle.
struct Answering {
    body: Body,
    _in_flight: InFlight,
}

impl http_body::Body for Answering {
    type Data = Bytes;
    type Error = axum::Error;

    fn poll_frame(
        self: Pin<&mut Self>,
        cx: &mut Context<'_>,
    ) -> Poll<Option<Result<http_body::Frame<Bytes>, axum::Error>>> {
        Pin::new(&mut self.get_mut().body).poll_frame(cx)
    }
    fn is_end_stream(&self) -> bool {
        self.body.is_end_stream()
    }
    fn size_hint(&self) -> http_body::SizeHint {
        self.body.size_hint()
    }
}
