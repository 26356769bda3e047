#![allow(clippy::disallowed_methods, clippy::disallowed_types)] // tests read fixtures and run `cargo metadata`

//! The pure core's tests, in one binary (one link instead of six).
//!
//! - `engine`: closed forms, magpylib conformance, invariants, variants;
//! - `site`: one test per validation rule, current conventions;
//! - `limits`: built-in table values, band edges, custom tables;
//! - `assess`: hand-computable assessments;
//! - `mitigate`: distances to a level or a table, against closed forms;
//! - `report`: contours, distances, pictures, exports, geodesy;
//! - `survey`: synthetic surveys, fit, extrapolation, CSV rows;
//! - `cancel`: a set flag stops every use case, an unset one changes nothing;
//! - `fuzz`: property tests with large case counts over the site, survey,
//!   CSV, table and regime parsers (no panic, every problem located);
//! - `layering`: the core's dependency graph is pure (from `cargo metadata`).

mod assess;
mod cancel;
mod engine;
mod evaluate;
mod fuzz;
mod layering;
mod limits;
mod mitigate;
mod provenance;
mod report;
mod site;
mod survey;
mod text;
