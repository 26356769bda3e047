//! Typed configuration of the service, built by the CLI from flags and
//! environment variables. Everything else is a function of this.

use crate::service::Limits;
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
