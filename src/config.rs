//! Typed configuration of the service, built by the CLI from flags and
//! environment variables. Everything else is a function of this.

use crate::service::Limits;
use ipnet::IpNet;
use std::net::IpAddr;
use std::path::PathBuf;

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
    pub max_connections: u32,
    pub limits: Limits,
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
