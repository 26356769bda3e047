//! CSV import of measurements. Columns (header required, any order):
//! `id, x_m, y_m, z_m, resultant_ut` and optionally `bx_ut, by_ut, bz_ut`.
//! Fields may be quoted (RFC 4180). Every problem names its line and column.

use super::wire::MeasurementDoc;

pub const REQUIRED: [&str; 5] = ["id", "x_m", "y_m", "z_m", "resultant_ut"];
pub const OPTIONAL: [&str; 3] = ["bx_ut", "by_ut", "bz_ut"];

/// Splits one CSV line into fields (quotes, doubled quotes inside).
fn fields(line: &str) -> Result<Vec<String>, &'static str> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match (c, quoted) {
            ('"', true) if chars.peek() == Some(&'"') => {
                cur.push('"');
                chars.next();
            }
            ('"', true) => quoted = false,
            ('"', false) if cur.is_empty() => quoted = true,
            (',', false) => out.push(std::mem::take(&mut cur)),
            (c, _) => cur.push(c),
        }
    }
    if quoted {
        return Err("unterminated quote");
    }
    out.push(cur);
    Ok(out.into_iter().map(|f| f.trim().to_string()).collect())
}

/// Parses the CSV text; errors read `line N, column NAME: …`.
pub fn parse_measurements(text: &str) -> Result<Vec<MeasurementDoc>, Vec<String>> {
    let mut lines = text.lines().enumerate().filter(|(_, l)| !l.trim().is_empty());
    let Some((_, header)) = lines.next() else { return Err(vec!["line 1: the CSV is empty".into()]) };
    let header = parse_header(header)?;
    let mut errors = Vec::new();
    let mut out = Vec::new();
    for (n, line) in lines {
        if let Some(m) = parse_row(&header, n + 1, line, &mut errors) {
            out.push(m);
        }
    }
    if errors.is_empty() { Ok(out) } else { Err(errors) }
}

/// The header's column names: every required column present, no unknown
/// one.
fn parse_header(line: &str) -> Result<Vec<String>, Vec<String>> {
    let header = fields(line).map_err(|e| vec![format!("line 1: {e}")])?;
    let mut errors = Vec::new();
    for h in &header {
        if !REQUIRED.contains(&h.as_str()) && !OPTIONAL.contains(&h.as_str()) {
            errors.push(format!(
                "line 1, column {h}: unknown column (expected {} and optionally {})",
                REQUIRED.join(", "),
                OPTIONAL.join(", ")
            ));
        }
    }
    for r in REQUIRED {
        if !header.iter().any(|h| h == r) {
            errors.push(format!("line 1: missing column {r}"));
        }
    }
    if errors.is_empty() { Ok(header) } else { Err(errors) }
}

/// One data row (1-based `line_no`); its problems go to `errors` and it
/// yields a measurement only when every value parsed. The axes are read only
/// when all three axis columns are present.
fn parse_row(header: &[String], line_no: usize, line: &str, errors: &mut Vec<String>) -> Option<MeasurementDoc> {
    let col = |name: &str| header.iter().position(|h| h == name);
    let row = match fields(line) {
        Ok(r) => r,
        Err(e) => {
            errors.push(format!("line {line_no}: {e}"));
            return None;
        }
    };
    if row.len() != header.len() {
        errors.push(format!("line {line_no}: {} fields, the header has {}", row.len(), header.len()));
        return None;
    }
    let mut num = |name: &str| -> Option<f64> {
        let i = col(name)?;
        match row[i].parse::<f64>() {
            Ok(v) if v.is_finite() => Some(v),
            _ => {
                errors.push(format!("line {line_no}, column {name}: '{}' is not a finite number", row[i]));
                None
            }
        }
    };
    let (x, y, z, b) = (num("x_m"), num("y_m"), num("z_m"), num("resultant_ut"));
    let axes = if OPTIONAL.iter().all(|c| col(c).is_some()) {
        match (num("bx_ut"), num("by_ut"), num("bz_ut")) {
            (Some(a), Some(b), Some(c)) => Some([a, b, c]),
            _ => None,
        }
    } else {
        None
    };
    let (x, y, z, b) = (x?, y?, z?, b?);
    Some(MeasurementDoc {
        id: row[col("id").unwrap_or(0)].clone(),
        at: vec![x, y, z],
        height_m: None,
        resultant_ut: b,
        axes_ut: axes,
    })
}
