//! Typed configuration of the service, built by the CLI from flags and
//! environment variables. Everything else is a function of this.

use crate::service::Limits;
use ipnet::IpNet;
use std::net::IpAddr;
use std::path::PathBuf;
use std::time::Duration;

/// Log line format.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LogFormat {
    Human,
    Json,
}

#[derive(Debug, Clone)]
pub struct Config {
    /// Address to bind; port 0 picks a free port (the real one is logged).
    pub listen: String,
    /// Directory of the embedded SQLite database (created if missing).
    pub data_dir: PathBuf,
    /// `postgres://…` selects PostgreSQL; `None` the embedded SQLite.
    pub database_url: Option<String>,
    /// Size of the database connection pool.
    pub max_connections: u32,
    pub limits: Limits,
    /// Timeouts and the cap of the client connections (the HTTP edge).
    pub connections: ConnectionLimits,
    /// Seed a demo organisation with the example sites and print a key.
    pub demo: bool,
    /// How clients are told apart, and their failed authentications.
    pub clients: ClientPolicy,
}

impl Config {
    /// Defaults: 127.0.0.1:8080, SQLite in `./fluxbound-data`.
    pub fn new() -> Self {
        Config {
            listen: "127.0.0.1:8080".into(),
            data_dir: PathBuf::from("fluxbound-data"),
            database_url: None,
            max_connections: 8,
            limits: Limits::default(),
            connections: ConnectionLimits::default(),
            demo: false,
            clients: ClientPolicy::default(),
        }
    }

    /// The database URL in force: the given one, else the SQLite file in the
    /// data directory (created on first start).
    pub fn database_url(&self) -> String {
        match &self.database_url {
            Some(url) if !url.trim().is_empty() => url.clone(),
            _ => format!("sqlite://{}?mode=rwc", self.data_dir.join("fluxbound.db").display()),
        }
    }
}

impl Default for Config {
    fn default() -> Self {
        Self::new()
    }
}

/// How long a client connection may take over each part of a request, how
/// many may be open, and how long a shutdown waits for them. The defaults
/// close a connection that sends nothing within 5 s and one that never
/// completes its request within 30 s (header 10 s, then body 20 s).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ConnectionLimits {
    /// Time to receive a complete request head, counted from when the
    /// server starts waiting for it (the connection opened, or the previous
    /// answer was sent). Cuts slow-header clients.
    pub header_read_timeout: Duration,
    /// A connection with no request in flight that receives nothing for
    /// this long is closed (keep-alive idle).
    pub idle_timeout: Duration,
    /// Time for a request body to arrive in full, counted from its head;
    /// past it the answer is 408.
    pub body_read_timeout: Duration,
    /// Open client connections at most. At the cap a new connection first
    /// displaces the connection idle the longest; with none idle it is
    /// closed unanswered.
    pub max_connections: usize,
    /// How long a shutdown waits for requests in flight before it drops
    /// their connections.
    pub drain_timeout: Duration,
}

impl ConnectionLimits {
    /// 10 s: a whole request head is a few hundred bytes, so even a slow
    /// mobile link sends it in well under a second; ten times that margin.
    pub const DEFAULT_HEADER_READ_TIMEOUT: Duration = Duration::from_secs(10);
    /// 5 s: the keep-alive timeout of Apache httpd and Node.js; reopening a
    /// connection costs one round trip, holding an idle one a file
    /// descriptor.
    pub const DEFAULT_IDLE_TIMEOUT: Duration = Duration::from_secs(5);
    /// 20 s: the largest body (4 MiB by default) at 2 Mbit/s, with room;
    /// shorter than the 30 s request timeout, so a slow upload is told 408,
    /// not 503.
    pub const DEFAULT_BODY_READ_TIMEOUT: Duration = Duration::from_secs(20);
    /// 200: fits the common default of 256 open files per process with room
    /// for the database pool, the SQLite files, the listener and the logs.
    pub const DEFAULT_MAX_CONNECTIONS: usize = 200;
    /// 25 s: longer than the body-read timeout, so an upload under way at
    /// shutdown is answered (or told 408) rather than cut, and inside the
    /// 30 s Kubernetes grants between SIGTERM and SIGKILL by default (Docker
    /// grants 10 s: raise it with `docker stop -t` or compose's
    /// `stop_grace_period`).
    pub const DEFAULT_DRAIN_TIMEOUT: Duration = Duration::from_secs(25);
}

impl Default for ConnectionLimits {
    fn default() -> Self {
        ConnectionLimits {
            header_read_timeout: Self::DEFAULT_HEADER_READ_TIMEOUT,
            idle_timeout: Self::DEFAULT_IDLE_TIMEOUT,
            body_read_timeout: Self::DEFAULT_BODY_READ_TIMEOUT,
            max_connections: Self::DEFAULT_MAX_CONNECTIONS,
            drain_timeout: Self::DEFAULT_DRAIN_TIMEOUT,
        }
    }
}

/// How the service tells clients apart and limits their failed
/// authentications (`serve --auth-failures`, `--auth-failure-window-s`,
/// `--trusted-proxy`; see `http::client` and `http::rate`).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ClientPolicy {
    /// Failed authentications allowed per client address within the
    /// window; the next request is answered 429. 0 = no limit.
    pub auth_failures: u32,
    /// The window, seconds.
    pub auth_failure_window_s: u64,
    /// Peers whose `X-Forwarded-For` names the client (load balancers).
    pub trusted_proxies: Vec<IpNet>,
}

impl ClientPolicy {
    /// 10 failures a minute: far more than a person mistyping a key makes,
    /// far fewer than a guesser needs (a key's secret is 256 random bits).
    pub const DEFAULT_AUTH_FAILURES: u32 = 10;
    pub const DEFAULT_AUTH_FAILURE_WINDOW_S: u64 = 60;
}

impl Default for ClientPolicy {
    fn default() -> Self {
        ClientPolicy {
            auth_failures: Self::DEFAULT_AUTH_FAILURES,
            auth_failure_window_s: Self::DEFAULT_AUTH_FAILURE_WINDOW_S,
            trusted_proxies: Vec::new(),
        }
    }
}

/// A trusted proxy as given on the command line: an address (`10.0.0.7`,
/// `::1`) or a CIDR network (`10.0.0.0/8`, `fd00::/8`).
pub fn parse_trusted_proxy(text: &str) -> Result<IpNet, String> {
    let text = text.trim();
    text.parse::<IpNet>()
        .or_else(|_| text.parse::<IpAddr>().map(IpNet::from))
        .map(|net| net.trunc())
        .map_err(|_| format!("'{text}' is neither an IP address nor a CIDR network such as 10.0.0.0/8"))
}
