//! The site model: JSON wire types, the checked model, validation with RFC
//! 6901 pointers, and the phase-current conventions.

pub mod bar;
mod currents;
pub mod exchange;
pub mod formation;
mod model;
pub mod overhead;
mod parse;
mod problem;
mod strict;
mod validate;
pub mod warnings;
pub mod wire;

pub use currents::CircuitLoad;
pub(crate) use currents::{excitation_of, orders_of};
pub use model::*;
pub use parse::{Unreadable, json_syntax_error, parse_json, plain_words, read_json};
pub use problem::{Pointer, Problem, Problems};
pub use validate::{
    COORDINATE_LIMIT_M, CURRENT_LIMIT_A, FREQUENCY_RANGE_HZ, HARMONIC_ORDERS, MAX_VERTICES, MIN_SEGMENT_M,
    RADIUS_RANGE_M, validate_site,
};
pub(crate) use validate::{
    check_circuits, check_conductors, check_coordinate, check_coordinate_at, check_frequency, check_name,
};
pub use warnings::{Warning, WarningCode, site_warnings};

/// Parses and validates a site document in one step.
pub fn parse_site(text: &str) -> Result<Site, Problems> {
    let doc: wire::SiteDoc = parse_json(text)?;
    validate_site(&doc)
}

/// Sets the phase of a conductor that the site document does not list
/// itself but generates from another of its sections (an overhead line, a
/// cable formation), in that section, so that a what-if's revision carries
/// the change. False if no section generates a conductor of that id.
pub fn rephase_generated(doc: &mut wire::SiteDoc, conductor_id: &str, phase: wire::Phase) -> bool {
    // Each generating section adds its arm here.
    if formation::rephase(doc, conductor_id, phase) || overhead::rephase(doc, conductor_id, phase) {
        return true;
    }
    let _ = (doc, conductor_id, phase);
    false
}
