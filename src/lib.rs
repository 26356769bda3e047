//! Fluxbound: pre-screening of occupational exposure to power-frequency
//! magnetic fields.
//!
//! # Layout
//!
//! ```text
//! main.rs → cli.rs          argument parsing, exit codes, I/O
//! cli.rs  → domain/         the pure core
//! domain/                   no I/O, no async (tests/layering.rs enforces it)
//!   field/                  phasor Biot–Savart kernel, influence matrices
//!   site/                   site model, validation with JSON pointers
//!   evaluate.rs             the stateless evaluation document
//!   cautions.rs             the cautions every result carries
//! ```
//!
//! Dependencies point downward only. Later layers (`service/`, `store/`,
//! `http/`, `report/`) sit between `cli.rs` and `domain/`; see DEVELOPERS.md.
//!
//! Every result is a computed pre-screen: compliance is decided under local
//! codes by licensed or otherwise qualified assessors.

pub mod app;
pub mod cli;
pub mod config;
pub mod domain;
pub mod http;
pub mod report;
pub mod service;
pub mod store;
pub mod telemetry;
