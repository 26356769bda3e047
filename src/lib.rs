//! Fluxbound, the service crate: storage, the service layer, the HTTP API,
//! the command line and their wiring, over the pure core in
//! `fluxbound-core` (`crates/fluxbound-core`).
//!
//! # Layout
//!
//! ```text
//! main.rs → cli.rs     argument parsing, exit codes, file I/O; calls the core's
//!                      use cases directly (no database) or starts the service
//! app.rs               wiring: store + service + router + listener; serve, shutdown
//! config.rs            typed configuration (storage, bounds, connection limits)
//! health.rs            `fluxbound health`: GET /healthz over plain TCP
//! telemetry.rs         tracing subscriber (human or JSON)
//! http/                axum routes (thin handlers), auth, problem+json, OpenAPI;
//!                      server.rs + connections.rs: our accept loop over hyper
//!                      (timeouts, the connection cap, the drain); body.rs: 413
//!                      from Content-Length, 408 for slow bodies; access.rs: the
//!                      access log
//! service/             authorisation, transactions, budgets; calls the core's use cases
//!                      in computation slots, each with a flag its request's drop sets
//! store/               sqlx over the Any driver: SQLite (default) or PostgreSQL
//! ```
//!
//! Dependencies point downward only: `cli → app → http → service → store`,
//! and everything above may use `fluxbound_core`, which uses none of them.
//! Every result is a computed pre-screen: compliance is decided under local
//! codes by licensed or otherwise qualified assessors.

pub mod app;
pub mod cli;
pub mod config;
pub mod health;
pub mod http;
pub mod ids;
pub mod service;
pub mod store;
pub mod telemetry;
