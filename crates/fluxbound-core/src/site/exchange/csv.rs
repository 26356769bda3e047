//! Route vertices as CSV: one row per vertex.
//!
//! Columns (header row required, any order, `,` or `;`):
//! `conductor_id, seq, x_m, y_m, z_m` required; `circuit, phase,
//! radius_m, share` optional (stated on any row of the conductor; rows of
//! one conductor that disagree skip it). Rows are ordered by `seq` (a
//! number) within each conductor; conductors come out in the order of
//! their first row. Coordinates are metres unless the mapping gives
//! `units` (then x_m, y_m, z_m are read in those units; `radius_m` stays
//! metres); the mapping's origin and rotation apply. A conductor without
//! a radius takes `defaults.radius_m` (noted), one without a circuit and
//! phase is skipped.

use super::mapping::{Placement, Units};
use super::{Collector, ImportError, Imported, MAX_ITEMS, MappingDoc};
use crate::site::problem::{Problem, Problems};
use crate::site::wire::{ConductorDoc, Phase};

/// The columns every vertex file has, in the documented order.
pub const CSV_COLUMNS: [&str; 5] = ["conductor_id", "seq", "x_m", "y_m", "z_m"];
const OPTIONAL: [&str; 4] = ["circuit", "phase", "radius_m", "share"];

struct Row {
    line: u64,
    seq: f64,
    point: [f64; 3],
    circuit: String,
    phase: String,
    radius: String,
    share: String,
}

/// Reads a CSV of route vertices into a site of conductors.
pub fn import_csv(text: &str, mapping: &MappingDoc) -> Result<Imported, ImportError> {
    let header_line = text.lines().next().unwrap_or("");
    let delimiter = if header_line.contains(';') && !header_line.contains(',') { b';' } else { b',' };
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .flexible(true)
        .trim(csv::Trim::All)
        .delimiter(delimiter)
        .from_reader(text.as_bytes());
    let header: Vec<String> = reader
        .headers()
        .map_err(|_| ImportError::file("", "line 1: the header row cannot be read as CSV"))?
        .iter()
        .map(str::to_string)
        .collect();
    let column = |name: &str| header.iter().position(|h| h == name);
    let mut problems = Vec::new();
    for h in &header {
        if !CSV_COLUMNS.contains(&h.as_str()) && !OPTIONAL.contains(&h.as_str()) {
            problems.push(format!(
                "line 1, column {h}: unknown column (expected {} and optionally {})",
                CSV_COLUMNS.join(", "),
                OPTIONAL.join(", ")
            ));
        }
    }
    for r in CSV_COLUMNS {
        if column(r).is_none() {
            problems.push(format!("line 1: missing column {r}"));
        }
    }
    if !problems.is_empty() {
        return Err(file_problems(problems));
    }
    let col = |name: &str| column(name).unwrap_or(usize::MAX);
    let placement = Placement::new(mapping, mapping.units.unwrap_or(Units::Metre).metres());
    let mut groups: Vec<(String, Vec<Row>)> = Vec::new();
    for (k, record) in reader.records().enumerate() {
        let record = match record {
            Ok(r) => r,
            Err(e) => {
                let line = e.position().map_or(k as u64 + 2, |p| p.line());
                problems.push(format!("line {line}: this row cannot be read as CSV"));
                continue;
            }
        };
        if record.iter().all(str::is_empty) {
            continue;
        }
        if k >= MAX_ITEMS {
            return Err(ImportError::file("", format!("more than {MAX_ITEMS} rows")));
        }
        let line = record.position().map_or(k as u64 + 2, |p| p.line());
        let field = |name: &str| record.get(col(name)).unwrap_or("").to_string();
        let number = |name: &str, problems: &mut Vec<String>| -> f64 {
            let raw = field(name);
            match raw.parse::<f64>() {
                Ok(v) if v.is_finite() => v,
                _ => {
                    problems.push(format!("line {line}, column {name}: {raw:?} is not a finite number"));
                    f64::NAN
                }
            }
        };
        let id = field("conductor_id");
        if id.is_empty() {
            problems.push(format!("line {line}, column conductor_id: empty"));
            continue;
        }
        let seq = number("seq", &mut problems);
        let (x, y, z) = (number("x_m", &mut problems), number("y_m", &mut problems), number("z_m", &mut problems));
        let row = Row {
            line,
            seq,
            point: placement.local([x, y, z]),
            circuit: field("circuit"),
            phase: field("phase"),
            radius: field("radius_m"),
            share: field("share"),
        };
        match groups.iter_mut().find(|(g, _)| *g == id) {
            Some((_, rows)) => rows.push(row),
            None => groups.push((id, vec![row])),
        }
    }
    for (id, rows) in &groups {
        let mut seqs: Vec<(f64, u64)> = rows.iter().map(|r| (r.seq, r.line)).collect();
        seqs.sort_by(|a, b| a.0.total_cmp(&b.0));
        for w in seqs.windows(2) {
            if w[0].0 == w[1].0 {
                problems.push(format!(
                    "line {}, column seq: conductor {id:?} already has seq {} (line {})",
                    w[1].1, w[1].0, w[0].1
                ));
            }
        }
    }
    if !problems.is_empty() {
        return Err(file_problems(problems));
    }
    let mut c = Collector::new(mapping);
    for (id, mut rows) in groups {
        rows.sort_by(|a, b| a.seq.total_cmp(&b.seq));
        conductor(&mut c, mapping, &id, &rows);
    }
    Ok(c.finish(mapping, false))
}

fn file_problems(details: Vec<String>) -> ImportError {
    ImportError::File(Problems(details.into_iter().map(|detail| Problem { pointer: String::new(), detail }).collect()))
}

/// The one value the rows of a conductor give for a column: empty if
/// none, an error if two rows differ.
fn agreed<'a>(rows: &'a [Row], get: impl Fn(&'a Row) -> &'a str) -> Result<&'a str, ()> {
    let mut found = "";
    for r in rows {
        let v = get(r);
        if !v.is_empty() {
            if !found.is_empty() && found != v {
                return Err(());
            }
            found = v;
        }
    }
    Ok(found)
}

fn conductor(c: &mut Collector, mapping: &MappingDoc, id: &str, rows: &[Row]) {
    let at = format!("line {}", rows[0].line);
    let what = format!("conductor {id:?}");
    let (Ok(circuit), Ok(phase), Ok(radius), Ok(share)) = (
        agreed(rows, |r| &r.circuit),
        agreed(rows, |r| &r.phase),
        agreed(rows, |r| &r.radius),
        agreed(rows, |r| &r.share),
    ) else {
        c.skip(at, what, None, "its rows give different circuit, phase, radius_m or share values");
        return;
    };
    if circuit.is_empty() || phase.is_empty() {
        c.skip(at, what, None, "missing circuit or phase");
        return;
    }
    if !c.has_circuit(circuit) {
        c.skip(at, what, None, format!("circuit {circuit:?} is not declared: add it to the mapping's circuits"));
        return;
    }
    let phase = match phase {
        "A" => Phase::A,
        "B" => Phase::B,
        "C" => Phase::C,
        "N" => Phase::N,
        other => {
            c.skip(at, what, None, format!("phase {other:?} is not A, B, C or N"));
            return;
        }
    };
    let radius_m = if radius.is_empty() {
        match mapping.defaults.radius_m {
            Some(r) => {
                c.notes.push(format!("{what}: radius_m {r} m taken from the mapping's defaults"));
                r
            }
            None => {
                c.skip(at, what, None, "missing radius_m (or give defaults.radius_m in the mapping)");
                return;
            }
        }
    } else {
        match radius.parse::<f64>() {
            Ok(r) if r.is_finite() => r,
            _ => {
                c.skip(at, what, None, format!("radius_m {radius:?} is not a finite number"));
                return;
            }
        }
    };
    let share = if share.is_empty() {
        None
    } else {
        match share.parse::<f64>() {
            Ok(s) if s.is_finite() => Some(s),
            _ => {
                c.skip(at, what, None, format!("share {share:?} is not a finite number"));
                return;
            }
        }
    };
    let doc = ConductorDoc {
        id: c.conductor_id(id),
        path: rows.iter().map(|r| r.point).collect(),
        radius_m,
        circuit: Some(circuit.to_string()),
        phase: Some(phase),
        share,
        current: None,
        continues: None,
        cross_section: None,
    };
    c.site.conductors.push(doc);
}
