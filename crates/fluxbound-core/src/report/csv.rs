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

/// The columns. The first sixteen are the original ones, unchanged; the
/// rest (from `ratio_kind`) make each row traceable on its own: how the
/// ratio was formed and its terms, uncovered frequencies, the table's
/// citation, the assessed phase currents and the provenance.
pub const CSV_HEADER: [&str; 26] = [
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
    "ratio_kind",
    "ratio_terms",
    "uncovered_hz",
    "table_source",
    "phase_currents_a",
    "computed_at_utc",
    "tool_version",
    "build_commit",
    "site_sha256",
    "site_source",
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
    let tail = trace_cells(a);
    for p in &a.positions {
        for h in &p.heights {
            for c in &h.comparisons {
                let table = a.tables.iter().find(|t| t.id == c.table_id);
                let pc = p.comparisons.iter().find(|pc| pc.table_id == c.table_id);
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
                    opt(pc.and_then(|pc| pc.level_ut)),
                    opt(c.ratio),
                    text_cell(c.verdict.word()),
                    text_cell(if h.frequencies.len() > 1 { "sum_over_frequencies" } else { "single_frequency" }),
                    text_cell(&terms(h, pc)),
                    text_cell(&pc.map(|pc| hz_list(&pc.uncovered_hz)).unwrap_or_default()),
                    text_cell(&table.map(|t| t.source.clone()).unwrap_or_default()),
                ];
                let _ = write!(s, "{},{}\r\n", row.join(","), tail);
            }
        }
    }
    s
}

/// The cells every row shares: phase currents and provenance, joined.
fn trace_cells(a: &Assessment) -> String {
    let p = a.provenance.as_ref();
    let field = |f: fn(&crate::provenance::Provenance) -> String| p.map(f).unwrap_or_default();
    [
        text_cell(&a.load_case.phase_lines().join("; ")),
        text_cell(&field(|p| p.computed_at.clone())),
        text_cell(&field(|p| p.tool_version.clone())),
        text_cell(&field(|p| p.build_commit.clone())),
        text_cell(&field(|p| p.site_sha256.clone())),
        text_cell(&field(|p| p.site_source())),
    ]
    .join(",")
}

/// The terms of a height's ratio: `50 Hz: 80 µT / 100 µT = 0.8; …`, with
/// each frequency's level taken from the position's comparison (levels
/// depend on frequency only, not on the height).
fn terms(h: &crate::assess::HeightResult, pc: Option<&crate::assess::PositionComparison>) -> String {
    let Some(pc) = pc else { return String::new() };
    h.frequencies
        .iter()
        .filter_map(|f| {
            let level = pc.per_frequency.iter().find(|t| t.frequency_hz == f.frequency_hz)?.level_ut;
            Some(format!("{} Hz: {} µT / {} µT = {}", f.frequency_hz, f.resultant_ut, level, f.resultant_ut / level))
        })
        .collect::<Vec<_>>()
        .join("; ")
}

fn hz_list(hz: &[f64]) -> String {
    hz.iter().map(|f| f.to_string()).collect::<Vec<_>>().join(" ")
}
