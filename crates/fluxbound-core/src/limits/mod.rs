//! Reference-level tables: data, not code. A table is a list of frequency
//! bands, each `B_RL(f) = coefficient · f^exponent` µT RMS, with the
//! population and body region it protects and its full citation. Built-in
//! tables ship as JSON (`builtin.json`) and go through the same validation as
//! a user's custom table.

mod builtin;
mod table;

pub use builtin::{DEFAULT_TABLE_IDS, IMPLANT_TABLE_ID, builtin_table, builtin_tables};
pub use table::*;

use crate::site::{Problems, parse_json};

/// Parses and checks a custom table document.
pub fn parse_table(text: &str) -> Result<ReferenceTable, Problems> {
    validate_table(parse_json(text)?)
}

use crate::site::Pointer;

/// The first non-empty list of table ids, with the pointer it came from;
/// the default set ([`DEFAULT_TABLE_IDS`]) at `default_at` when all are
/// empty. One rule for the CLI and the service: request, then survey or
/// site, then the defaults.
pub fn choose_table_ids(choices: Vec<(Vec<String>, Pointer)>, default_at: Pointer) -> (Vec<String>, Pointer) {
    choices
        .into_iter()
        .find(|(ids, _)| !ids.is_empty())
        .unwrap_or_else(|| (DEFAULT_TABLE_IDS.iter().map(|s| s.to_string()).collect(), default_at))
}

/// Looks up tables by id among the built-ins and `custom` (custom first, so
/// an organisation's table can never be shadowed by a built-in of the same
/// id — ids must differ anyway). Unknown ids are problems at `at/i`.
pub fn resolve_tables(
    ids: &[String],
    custom: &[ReferenceTable],
    at: &Pointer,
) -> Result<Vec<ReferenceTable>, Problems> {
    let mut p = Problems::default();
    let mut out = Vec::new();
    for (i, id) in ids.iter().enumerate() {
        match custom.iter().find(|t| t.id() == id).or_else(|| builtin_table(id)) {
            Some(t) => out.push(t.clone()),
            None => p.push(&at.index(i), format!("unknown reference-level table '{id}' (see `fluxbound tables`)")),
        }
    }
    p.into_result(out)
}
