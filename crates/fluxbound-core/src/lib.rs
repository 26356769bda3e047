//! The pure core of Fluxbound: no I/O, no async, no framework.
//!
//! Its normal dependencies are nalgebra, num-complex, serde, serde_json,
//! serde_path_to_error, thiserror, rayon, csv, geographiclib-rs, geojson and
//! sha2; the `dxf` crate enters only with the optional `dxf` feature (it
//! brings a clock and random GUIDs, see Cargo.toml);
//! `utoipa` enters only with the
//! optional `schema` feature, which the service turns on to generate its
//! OpenAPI document from these types. Cargo enforces the rule (the core
//! cannot name tokio, axum or sqlx because they are not its dependencies);
//! `tests/core/layering.rs` checks the graph from `cargo metadata`, and
//! `clippy.toml` forbids std's file, network, clock and process calls.
//!
//! # Layout
//!
//! ```text
//! field/      phasor Biot–Savart kernel, influence matrices, resultant and maximum,
//!             bounds of a segment's field and its rate of change (field/bound)
//! site/       the site document: wire types, strict parsing, validation with
//!             JSON pointers, the checked model, phase and harmonic conventions,
//!             model warnings (open ends, no return path, overlaps, …);
//!             busbar cross-sections (site/bar) and cable formations
//!             (site/formation), expanded into ordinary conductors;
//!             route import and export (site/exchange: GeoJSON, DXF, CSV)
//! limits/     reference-level tables as data: bands, lookup, validation, built-ins
//! assess/     exposure at positions and areas, load cases, ratios and verdicts,
//!             area grids and field maps, the proven area maximum (assess/peak)
//! survey/     measured against modelled (a checked survey carries its site),
//!             bounded least-squares load fit, extrapolation to rated load
//! survey/lm   the Levenberg–Marquardt solver of the fit, tuning named and cited
//! mitigate/   first crossing and clearance to a level or a table, proven by bounds;
//!             passive loops (mutual and self-inductance, induced current);
//!             two assessments side by side (mitigate/compare)
//! report/     pure renderers: text, CSV, SVG, GeoJSON, contours, geodesy
//! provenance  canonical JSON (RFC 8785), the site fingerprint, where a result came from
//! usecase     one function per thing a caller can do (CLI and service alike)
//! evaluate    the stateless evaluation document
//! cautions    the cautions every result carries
//! cancel      the flag that stops a computation between chunks of work
//! text        the one rule for given text: no control characters
//! ```
//!
//! Every result is a computed pre-screen: compliance is decided under local
//! codes by licensed or otherwise qualified assessors.

#![deny(clippy::print_stdout, clippy::print_stderr)]

pub mod assess;
pub mod cancel;
pub mod cautions;
pub mod evaluate;
pub mod field;
pub mod limits;
pub mod mitigate;
pub mod provenance;
pub mod report;
pub mod site;
pub mod survey;
pub mod text;
pub mod usecase;
