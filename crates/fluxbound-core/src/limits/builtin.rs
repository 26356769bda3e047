//! The built-in tables, shipped as data in `builtin.json` and checked by the
//! same validator as a user's table (a test makes sure they all pass).

use super::table::{ReferenceTable, TableDoc, validate_table_at};
use crate::site::{Pointer, parse_json};
use std::sync::OnceLock;

/// Tables used when neither the request nor the site names any.
pub const DEFAULT_TABLE_IDS: [&str; 3] = ["icnirp-2010-occupational", "eu-2013-35-low", "eu-2013-35-limbs"];

/// The table every `implant_wearer` position is also screened against.
pub const IMPLANT_TABLE_ID: &str = "implant-screening-100";

static BUILTIN: OnceLock<Vec<ReferenceTable>> = OnceLock::new();

/// All built-in tables, in a stable order.
pub fn builtin_tables() -> &'static [ReferenceTable] {
    BUILTIN.get_or_init(|| {
        let docs: Vec<TableDoc> =
            parse_json(include_str!("builtin.json")).unwrap_or_else(|p| panic!("builtin.json does not parse: {p}"));
        docs.into_iter()
            .enumerate()
            .map(|(i, d)| {
                validate_table_at(d, &Pointer::root().index(i))
                    .unwrap_or_else(|p| panic!("built-in table {i} is invalid: {p}"))
            })
            .collect()
    })
}

/// A built-in table by id.
pub fn builtin_table(id: &str) -> Option<&'static ReferenceTable> {
    builtin_tables().iter().find(|t| t.id() == id)
}
