//! The open client connections: what each is doing, the cap, and which one
//! gives way when a new connection arrives at the cap.
//!
//! Each connection has a [`Conn`] shared by three parties: its task in
//! [`crate::http::server`] (which closes it), its hyper service (which
//! counts requests in flight) and its socket wrapper [`Watched`] (which
//! notes when bytes arrive). The [`Registry`] holds them all under one
//! short-lived lock, taken on accept and on close only.

use std::collections::HashMap;
use std::fmt::Write;
use std::io;
use std::pin::Pin;
use std::sync::atomic::{AtomicBool, AtomicU64, AtomicUsize, Ordering};
use std::sync::{Arc, Mutex};
use std::task::{Context, Poll};
use std::time::{Duration, Instant};
use tokio::io::{AsyncRead, AsyncWrite, ReadBuf};
use tokio::net::TcpStream;
use tokio::sync::Notify;

/// One client connection's state.
#[derive(Debug)]
pub struct Conn {
    id: u64,
    /// The registry's clock origin; times below are milliseconds after it.
    epoch: Instant,
    /// Requests whose head has arrived and whose answer is not yet fully
    /// sent (the guard rides in the response body).
    in_flight: AtomicUsize,
    /// When a byte last arrived or an answer was last finished.
    last_active_ms: AtomicU64,
    /// Bytes of a request head have arrived but the request is not yet
    /// dispatched. A drain lets such a request finish; a shed does not.
    head_started: AtomicBool,
    /// Chosen to make room at the cap; its task closes it (see `server`).
    shedding: AtomicBool,
    pub shed: Notify,
    stats: ConnectionStats,
}

impl Conn {
    fn new(id: u64, epoch: Instant, stats: ConnectionStats) -> Conn {
        let conn = Conn {
            id,
            epoch,
            stats,
            in_flight: AtomicUsize::new(0),
            last_active_ms: AtomicU64::new(0),
            head_started: AtomicBool::new(false),
            shedding: AtomicBool::new(false),
            shed: Notify::new(),
        };
        conn.touch();
        conn
    }

    fn now_ms(&self) -> u64 {
        u64::try_from(self.epoch.elapsed().as_millis()).unwrap_or(u64::MAX)
    }

    fn touch(&self) {
        self.last_active_ms.store(self.now_ms(), Ordering::Relaxed);
    }

    /// Bytes arrived from the client.
    fn received(&self) {
        self.touch();
        if self.in_flight.load(Ordering::Acquire) == 0 {
            self.head_started.store(true, Ordering::Release);
        }
    }

    /// A request head was parsed and is being dispatched; the connection
    /// counts as busy until the returned guard drops (answer sent, or the
    /// request abandoned).
    pub fn begin_request(self: &Arc<Self>) -> InFlight {
        self.in_flight.fetch_add(1, Ordering::AcqRel);
        self.stats.0.in_flight.fetch_add(1, Ordering::Relaxed);
        self.head_started.store(false, Ordering::Release);
        self.touch();
        InFlight(self.clone())
    }

    /// No request in flight (a request head may be arriving).
    pub fn is_idle(&self) -> bool {
        self.in_flight.load(Ordering::Acquire) == 0
    }

    /// Idle, and no request head arriving either.
    pub fn is_quiet(&self) -> bool {
        self.is_idle() && !self.head_started.load(Ordering::Acquire)
    }

    /// How long the connection has been idle with nothing arriving; `None`
    /// while a request is in flight.
    pub fn idle_for(&self) -> Option<Duration> {
        let since = self.last_active_ms.load(Ordering::Relaxed);
        self.is_idle().then(|| Duration::from_millis(self.now_ms().saturating_sub(since)))
    }

    /// Time left before `timeout` of idleness is reached (the whole
    /// `timeout` while busy, to look again then).
    pub fn until_idle(&self, timeout: Duration) -> Duration {
        self.idle_for().map_or(timeout, |idle| timeout.saturating_sub(idle))
    }
}

/// Holds a connection busy while one request is in flight.
#[derive(Debug)]
pub struct InFlight(Arc<Conn>);

impl Drop for InFlight {
    fn drop(&mut self) {
        self.0.touch();
        self.0.in_flight.fetch_sub(1, Ordering::AcqRel);
        self.0.stats.0.in_flight.fetch_sub(1, Ordering::Relaxed);
    }
}

/// Counters of the edge, rendered into `/metrics`.
#[derive(Debug, Default)]
struct Counters {
    open: AtomicUsize,
    in_flight: AtomicUsize,
    shed: AtomicU64,
    refused: AtomicU64,
    idle_closed: AtomicU64,
    header_timeouts: AtomicU64,
}

/// Shared handle on the edge's counters (cheap to clone).
#[derive(Debug, Default, Clone)]
pub struct ConnectionStats(Arc<Counters>);

impl ConnectionStats {
    /// Client connections open now.
    pub fn open(&self) -> usize {
        self.0.open.load(Ordering::Relaxed)
    }
    /// Requests whose head has arrived and whose answer is not fully sent.
    pub fn in_flight(&self) -> usize {
        self.0.in_flight.load(Ordering::Relaxed)
    }
    pub fn idle_closed(&self) {
        self.0.idle_closed.fetch_add(1, Ordering::Relaxed);
    }
    pub fn header_timeout(&self) {
        self.0.header_timeouts.fetch_add(1, Ordering::Relaxed);
    }

    /// Prometheus text exposition of the counters.
    pub fn render(&self) -> String {
        let c = &self.0;
        let mut s = String::new();
        let _ = writeln!(s, "# HELP fluxbound_http_connections_open Client connections open now.");
        let _ = writeln!(s, "# TYPE fluxbound_http_connections_open gauge");
        let _ = writeln!(s, "fluxbound_http_connections_open {}", c.open.load(Ordering::Relaxed));
        let _ = writeln!(s, "# HELP fluxbound_http_requests_in_flight Requests received and not yet fully answered.");
        let _ = writeln!(s, "# TYPE fluxbound_http_requests_in_flight gauge");
        let _ = writeln!(s, "fluxbound_http_requests_in_flight {}", c.in_flight.load(Ordering::Relaxed));
        let counters = [
            ("shed", "Idle connections closed to make room at the connection cap.", &c.shed),
            ("refused", "Connections closed on arrival: at the cap with none idle.", &c.refused),
            ("idle_closed", "Connections closed after the idle timeout.", &c.idle_closed),
            ("header_timeouts", "Connections closed because a request head came too slowly.", &c.header_timeouts),
        ];
        for (name, help, value) in counters {
            let _ = writeln!(s, "# HELP fluxbound_http_connections_{name}_total {help}");
            let _ = writeln!(s, "# TYPE fluxbound_http_connections_{name}_total counter");
            let _ = writeln!(s, "fluxbound_http_connections_{name}_total {}", value.load(Ordering::Relaxed));
        }
        s
    }
}

/// Every open connection, and the cap.
#[derive(Debug)]
pub struct Registry {
    cap: usize,
    epoch: Instant,
    next_id: AtomicU64,
    conns: Mutex<HashMap<u64, Arc<Conn>>>,
    stats: ConnectionStats,
}

impl Registry {
    pub fn new(cap: usize, stats: ConnectionStats) -> Arc<Registry> {
        Arc::new(Registry {
            cap: cap.max(1),
            epoch: Instant::now(),
            next_id: AtomicU64::new(0),
            conns: Mutex::new(HashMap::new()),
            stats,
        })
    }

    /// Makes room for a new connection: under the cap it simply enters; at
    /// the cap the connection idle the longest is told to close and the new
    /// one enters in its place; with every connection busy, `None` (the
    /// caller closes the new one).
    pub fn admit(self: &Arc<Self>) -> Option<Slot> {
        let mut conns = self.conns.lock().unwrap_or_else(|p| p.into_inner());
        let staying = conns.values().filter(|c| !c.shedding.load(Ordering::Acquire)).count();
        if staying >= self.cap {
            let Some(victim) = shed_candidate(conns.values()) else {
                let refused = self.stats.0.refused.fetch_add(1, Ordering::Relaxed) + 1;
                // A line at 1, 2, 4, 8 … refusals: visible, but no log flood.
                if refused.is_power_of_two() {
                    tracing::warn!(refused, cap = self.cap, "connection cap reached with every connection busy");
                }
                return None;
            };
            victim.shedding.store(true, Ordering::Release);
            victim.shed.notify_one();
            self.stats.0.shed.fetch_add(1, Ordering::Relaxed);
        }
        let id = self.next_id.fetch_add(1, Ordering::Relaxed);
        let conn = Arc::new(Conn::new(id, self.epoch, self.stats.clone()));
        conns.insert(conn.id, conn.clone());
        self.stats.0.open.fetch_add(1, Ordering::Relaxed);
        Some(Slot { registry: self.clone(), conn })
    }
}

/// The connection to close first at the cap: among those with no request
/// in flight and not already closing, the one idle the longest (ties: the
/// older connection).
fn shed_candidate<'a>(conns: impl Iterator<Item = &'a Arc<Conn>>) -> Option<&'a Arc<Conn>> {
    conns
        .filter(|c| c.is_idle() && !c.shedding.load(Ordering::Acquire))
        .min_by_key(|c| (c.last_active_ms.load(Ordering::Relaxed), c.id))
}

/// A connection's place in the registry, given up when dropped.
#[derive(Debug)]
pub struct Slot {
    registry: Arc<Registry>,
    pub conn: Arc<Conn>,
}

impl Drop for Slot {
    fn drop(&mut self) {
        let mut conns = self.registry.conns.lock().unwrap_or_else(|p| p.into_inner());
        conns.remove(&self.conn.id);
        self.registry.stats.0.open.fetch_sub(1, Ordering::Relaxed);
    }
}

/// The client socket, noting on its [`Conn`] when bytes arrive (so a
/// connection that trickles a request head is not idle, and a drain knows
/// a request has begun).
#[derive(Debug)]
pub struct Watched {
    pub inner: TcpStream,
    pub conn: Arc<Conn>,
}

impl AsyncRead for Watched {
    fn poll_read(self: Pin<&mut Self>, cx: &mut Context<'_>, buf: &mut ReadBuf<'_>) -> Poll<io::Result<()>> {
        let this = self.get_mut();
        let before = buf.filled().len();
        let polled = Pin::new(&mut this.inner).poll_read(cx, buf);
        if buf.filled().len() > before {
            this.conn.received();
        }
        polled
    }
}

impl AsyncWrite for Watched {
    fn poll_write(self: Pin<&mut Self>, cx: &mut Context<'_>, buf: &[u8]) -> Poll<io::Result<usize>> {
        Pin::new(&mut self.get_mut().inner).poll_write(cx, buf)
    }
    fn poll_write_vectored(
        self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        bufs: &[io::IoSlice<'_>],
    ) -> Poll<io::Result<usize>> {
        Pin::new(&mut self.get_mut().inner).poll_write_vectored(cx, bufs)
    }
    fn is_write_vectored(&self) -> bool {
        self.inner.is_write_vectored()
    }
    fn poll_flush(self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        Pin::new(&mut self.get_mut().inner).poll_flush(cx)
    }
    fn poll_shutdown(self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        Pin::new(&mut self.get_mut().inner).poll_shutdown(cx)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn registry(cap: usize) -> Arc<Registry> {
        Registry::new(cap, ConnectionStats::default())
    }

    /// Sets when a connection was last active (ms after the registry's epoch).
    fn active_at(conn: &Conn, ms: u64) {
        conn.last_active_ms.store(ms, Ordering::Relaxed);
    }

    #[test]
    fn under_the_cap_a_connection_enters_and_leaves_when_its_slot_drops() {
        let r = registry(2);
        let a = r.admit().expect("room");
        assert_eq!(r.stats.open(), 1);
        drop(a);
        assert_eq!(r.stats.open(), 0);
    }

    #[test]
    fn at_the_cap_the_connection_idle_the_longest_is_shed() {
        let r = registry(3);
        let slots: Vec<Slot> = (0..3).map(|_| r.admit().expect("room")).collect();
        active_at(&slots[0].conn, 30);
        active_at(&slots[1].conn, 10);
        active_at(&slots[2].conn, 20);
        let _new = r.admit().expect("room made");
        let shed: Vec<bool> = slots.iter().map(|s| s.conn.shedding.load(Ordering::Acquire)).collect();
        assert_eq!(shed, [false, true, false]);
    }

    #[test]
    fn a_connection_with_a_request_in_flight_is_never_shed() {
        let r = registry(2);
        let busy = r.admit().expect("room");
        let idle = r.admit().expect("room");
        let _request = busy.conn.begin_request();
        active_at(&busy.conn, 0);
        active_at(&idle.conn, 50);
        let _new = r.admit().expect("room made");
        assert!(!busy.conn.shedding.load(Ordering::Acquire));
        assert!(idle.conn.shedding.load(Ordering::Acquire));
    }

    #[test]
    fn with_every_connection_busy_a_new_one_is_refused() {
        let r = registry(2);
        let slots: Vec<Slot> = (0..2).map(|_| r.admit().expect("room")).collect();
        let _requests: Vec<InFlight> = slots.iter().map(|s| s.conn.begin_request()).collect();
        assert!(r.admit().is_none());
        assert!(r.stats.render().contains("fluxbound_http_connections_refused_total 1"));
    }

    #[test]
    fn a_connection_already_shed_is_not_counted_against_the_cap_twice() {
        let r = registry(1);
        let first = r.admit().expect("room");
        let second = r.admit().expect("room made by shedding the first");
        assert!(first.conn.shedding.load(Ordering::Acquire));
        // The first is still closing: the third arrival sheds the second.
        let _third = r.admit().expect("room made by shedding the second");
        assert!(second.conn.shedding.load(Ordering::Acquire));
    }

    #[test]
    fn a_request_ending_makes_the_connection_idle_again() {
        let r = registry(1);
        let slot = r.admit().expect("room");
        slot.conn.received();
        assert!(!slot.conn.is_quiet(), "a head has begun to arrive");
        let request = slot.conn.begin_request();
        assert_eq!(slot.conn.idle_for(), None);
        drop(request);
        assert!(slot.conn.is_quiet());
        assert!(slot.conn.idle_for().is_some());
    }
}
