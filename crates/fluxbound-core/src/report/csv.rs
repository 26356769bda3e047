//! CSV of position results: one row per position, height and table, with
//! units in the headers (RFC 4180 quoting).

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

fn field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) { format!("\"{}\"", s.replace('"', "\"\"")) } else { s.to_string() }
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
                    field(&site),
                    field(&a.load_case.kind),
                    field(&p.id),
                    snake(&p.body_region),
                    snake(&p.group),
                    opt(h.height_m),
                    format!("{}", h.at[0]),
                    format!("{}", h.at[1]),
                    format!("{}", h.at[2]),
                    opt(h.resultant_ut),
                    opt(h.maximum_ut),
                    field(&c.table_id),
                    table.map(|t| t.version.to_string()).unwrap_or_default(),
                    opt(level),
                    opt(c.ratio),
                    c.verdict.word().to_string(),
                ];
                let _ = write!(s, "{}\r\n", row.join(","));
            }
        }
    }
    s
}
