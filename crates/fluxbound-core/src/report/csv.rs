//! CSV of position results: one row per position, height and table, with
//! units in the headers (RFC 4180 quoting).
//!
//! Text cells that a spreadsheet would run as a formula are defused: a cell
//! starting with `=`, `+`, `-`, `@`, a tab or a carriage return gets a
//! leading `'` and is quoted (OWASP, "CSV Injection", from memory: the
//! characters and the single-quote prefix are its advice). Only text cells
//! (names, ids, words) are treated; numbers are written as numbers, negative
//! ones included, so that they stay numbers in a spreadsheet.

use super::snake;
use crate::assess::Assessment;
use std::fmt::Write;

pub const CSV_HEADER: [&str; 16] = [
    "site",
    "load_case",
    "position_id",
    "body_region",
    "group",
    "height_m",
    "x_m",
    "y_m",
    "z_m",
    "resultant_ut",
    "maximum_ut",
    "table_id",
    "table_version",
    "level_ut",
    "ratio",
    "verdict",
];

/// First characters that make a spreadsheet read a cell as a formula (or,
/// for tab and carriage return, that some spreadsheets strip before doing
/// so).
pub const FORMULA_TRIGGERS: [char; 6] = ['=', '+', '-', '@', '\t', '\r'];

/// A text cell: defused when it could be read as a formula, then quoted
/// (RFC 4180) when it holds a delimiter, a quote or a line break, or was
/// defused.
pub fn text_cell(s: &str) -> String {
    let defused = s.starts_with(FORMULA_TRIGGERS);
    let s = if defused { format!("'{s}") } else { s.to_string() };
    if defused || s.contains([',', '"', '\n', '\r']) { format!("\"{}\"", s.replace('"', "\"\"")) } else { s }
}

fn opt(v: Option<f64>) -> String {
    v.map(|x| format!("{x}")).unwrap_or_default()
}

/// The position results of an assessment as CSV text.
pub fn positions_csv(a: &Assessment) -> String {
    let mut s = CSV_HEADER.join(",");
    s.push_str("\r\n");
    let site = a.site_name.clone().unwrap_or_default();
    for p in &a.positions {
        for h in &p.heights {
            for c in &h.comparisons {
                let table = a.tables.iter().find(|t| t.id == c.table_id);
                let level = p.comparisons.iter().find(|pc| pc.table_id == c.table_id).and_then(|pc| pc.level_ut);
                let row = [
                    text_cell(&site),
                    text_cell(&a.load_case.kind),
                    text_cell(&p.id),
                    text_cell(&snake(&p.body_region)),
                    text_cell(&snake(&p.group)),
                    opt(h.height_m),
                    format!("{}", h.at[0]),
                    format!("{}", h.at[1]),
                    format!("{}", h.at[2]),
                    opt(h.resultant_ut),
                    opt(h.maximum_ut),
                    text_cell(&c.table_id),
                    table.map(|t| t.version.to_string()).unwrap_or_default(),
                    opt(level),
                    opt(c.ratio),
                    text_cell(c.verdict.word()),
                ];
                let _ = write!(s, "{}\r\n", row.join(","));
            }
        }
    }
    s
}
