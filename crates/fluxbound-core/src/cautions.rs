//! The cautions every result carries (DESIGN.md, "Cautions"). One list, used
//! by the CLI, the HTTP API, reports and the docs, so their wording agrees.

/// Cautions, in the order they are shown.
pub const CAUTIONS: [&str; 5] = [
    "Results are a computed pre-screen. Compliance is decided under local codes by licensed or otherwise qualified assessors.",
    "Thin-wire model: no ferromagnetic materials, eddy currents in structures, earth return or induced electric fields.",
    "People with active implanted medical devices need separate assessment at lower levels.",
    "Verify high results by measurement.",
    "Fields scale with current: results hold only for the currents given.",
];

/// The cautions as owned strings, for serialisation.
pub fn cautions() -> Vec<String> {
    CAUTIONS.iter().map(|s| s.to_string()).collect()
}
