//! Reference-level tables: the built-in figures against the published values
//! in docs/REFERENCES.md, band-edge rules, coverage, and the validation
//! of custom tables with their RFC 6901 pointers.

mod bands;
mod builtin;
mod coverage;
mod custom;
mod regimes;

use fluxbound_core::limits::{ReferenceTable, builtin_table};

/// A built-in table by id, or a failed test naming the id.
pub fn table(id: &str) -> &'static ReferenceTable {
    builtin_table(id).unwrap_or_else(|| panic!("no built-in table '{id}'"))
}

/// The level of built-in `id` at `frequency_hz`, µT RMS, which must exist.
pub fn level(id: &str, frequency_hz: f64) -> f64 {
    table(id).level_ut(frequency_hz).unwrap_or_else(|e| panic!("{id} at {frequency_hz} Hz: {e}"))
}

/// Asserts `actual` is within 1e-12 relative of `expected`. A level is one
/// multiply and one `powf` (correctly rounded to an ulp or two), so the only
/// difference from the hand arithmetic is a few ulps (~1e-16); 1e-12 leaves
/// room for that and still catches a wrong band, coefficient or exponent.
pub fn assert_level(actual: f64, expected: f64, what: &str) {
    let rel = (actual - expected).abs() / expected.abs();
    assert!(rel < 1e-12, "{what}: got {actual} µT, expected {expected} µT (relative difference {rel:e})");
}
