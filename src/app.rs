//! Wiring: storage, service, router and listener from a [`Config`];
//! serving until a shutdown signal, then draining in-flight requests.

use crate::config::Config;
use crate::http::server::{self, EdgeState};
use crate::http::{AppState, router};
use crate::service::{Role, Service};
use crate::store::{Backend, Store, StoreError};
use fluxbound_core::site::wire::SiteDoc;
use std::future::Future;
use std::net::SocketAddr;
use tokio::net::TcpListener;

#[derive(Debug, thiserror::Error)]
pub enum AppError {
    #[error("cannot create the data directory {path}: {source}")]
    DataDir { path: String, source: std::io::Error },
    #[error("cannot open the database: {0}")]
    Store(#[from] StoreError),
    #[error("cannot listen on {addr}: {source}")]
    Bind { addr: String, source: std::io::Error },
    #[error("cannot seed the demo: {0}")]
    Demo(String),
}

/// A built application, bound and ready to serve.
pub struct App {
    listener: TcpListener,
    addr: SocketAddr,
    state: AppState,
    /// Set in demo mode: the seeded key and an example site id.
    pub demo: Option<DemoInfo>,
}

#[derive(Debug, Clone)]
pub struct DemoInfo {
    pub key: String,
    pub site_ids: Vec<(crate::ids::SiteId, String)>,
}

/// Opens the store the config selects (creating the SQLite data directory).
pub async fn open_store(config: &Config) -> Result<Store, AppError> {
    let url = config.database_url();
    if Backend::of_url(&url) == Some(Backend::Sqlite) && config.database_url.is_none() {
        std::fs::create_dir_all(&config.data_dir)
            .map_err(|source| AppError::DataDir { path: config.data_dir.display().to_string(), source })?;
    }
    Ok(Store::open(&url, config.max_connections).await?)
}

impl App {
    pub async fn build(config: &Config) -> Result<App, AppError> {
        let store = open_store(config).await?;
        let service = Service::new(store, config.limits.clone());
        let demo = if config.demo { Some(seed_demo(&service).await?) } else { None };
        let listener = TcpListener::bind(&config.listen)
            .await
            .map_err(|source| AppError::Bind { addr: config.listen.clone(), source })?;
        let addr = listener.local_addr().map_err(|source| AppError::Bind { addr: config.listen.clone(), source })?;
        tracing::info!(backend = service.store().backend().name(), "storage ready");
        let state = AppState::new(service, &config.clients).with_connections(config.connections.clone());
        Ok(App { listener, addr, state, demo })
    }

    /// The use cases behind the router (tests seed keys through it).
    pub fn service(&self) -> Service {
        self.state.service.clone()
    }

    /// The bound address (the real port when 0 was asked for).
    pub fn local_addr(&self) -> SocketAddr {
        self.addr
    }

    /// The edge's shared state: the draining flag (set once shutdown
    /// begins) and the connection counters.
    pub fn edge(&self) -> EdgeState {
        self.state.edge.clone()
    }

    /// Serves until `shutdown` completes, then marks the server not ready,
    /// stops accepting, lets requests in flight finish within the drain
    /// timeout and closes the database pool (see `http::server`).
    pub async fn serve(self, shutdown: impl Future<Output = ()> + Send + 'static) -> std::io::Result<()> {
        tracing::info!("listening on http://{}", self.addr);
        let store = self.state.service.store().clone();
        let edge = self.state.edge.clone();
        server::serve(self.listener, router(self.state), edge, shutdown).await;
        store.close().await;
        tracing::info!("stopped");
        Ok(())
    }
}

/// Completes on Ctrl-C (SIGINT) or SIGTERM. The handlers are registered
/// when this is called, not when the future is first polled, so a signal
/// that arrives right after the "listening" line is not lost. Call it inside
/// the runtime.
pub fn shutdown_signal() -> impl Future<Output = ()> + Send + 'static {
    #[cfg(unix)]
    {
        use tokio::signal::unix::{SignalKind, signal};
        let term = signal(SignalKind::terminate()).ok();
        let int = signal(SignalKind::interrupt()).ok();
        async move {
            let wait = |s: Option<tokio::signal::unix::Signal>| async move {
                match s {
                    Some(mut s) => {
                        s.recv().await;
                    }
                    None => std::future::pending::<()>().await,
                }
            };
            tokio::select! {
                _ = wait(term) => {},
                _ = wait(int) => {},
            }
            tracing::info!("shutdown signal received: draining requests");
        }
    }
    #[cfg(not(unix))]
    async move {
        let _ = tokio::signal::ctrl_c().await;
        tracing::info!("shutdown signal received: draining requests");
    }
}

/// The example sites seeded by `serve --demo` (invented scenarios).
const DEMO_SITES: [&str; 2] =
    [include_str!("../examples/site-furnace-feeder.json"), include_str!("../examples/site-switch-room.json")];

/// Seeds the `demo` organisation with the example sites (once) and makes a
/// fresh assessor key.
async fn seed_demo(service: &Service) -> Result<DemoInfo, AppError> {
    let err = |e: crate::service::ServiceError| AppError::Demo(e.to_string());
    let (_, key) = service.keys_create_for_org("demo", Role::Assessor, Some("demo")).await.map_err(err)?;
    let caller = service.authenticate(&key).await.map_err(err)?;
    let (existing, _) = service.sites_list(&caller, None, Some(10), None).await.map_err(err)?;
    let mut site_ids: Vec<(crate::ids::SiteId, String)> = existing.into_iter().map(|s| (s.id, s.name)).collect();
    if site_ids.is_empty() {
        for text in DEMO_SITES {
            let doc: SiteDoc = fluxbound_core::site::parse_json(text).map_err(|p| AppError::Demo(p.to_string()))?;
            let v = service.sites_create(&caller, doc).await.map_err(err)?;
            site_ids.push((v.row.site.id, v.row.site.name));
        }
    }
    Ok(DemoInfo { key, site_ids })
}
