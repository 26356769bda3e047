//! The pure core: no I/O, no async, no framework. It depends on nalgebra,
//! num-complex, serde, serde_json, thiserror and rayon only (checked by
//! `tests/layering.rs`).

pub mod assess;
pub mod cautions;
pub mod evaluate;
pub mod field;
pub mod limits;
pub mod mitigate;
pub mod site;
pub mod survey;
