//! CSV import of measurements. Columns (header required, any order):
//! `id, x_m, y_m, z_m, resultant_ut` and optionally `bx_ut, by_ut, bz_ut`.
//!
//! Read by the `csv` crate (RFC 4180: quoted fields, doubled quotes, line
//! breaks inside quotes), with what spreadsheets write on top:
//! - a UTF-8 byte-order mark before the header is dropped;
//! - the delimiter is `,`, `;` or a tab: given by the survey's
//!   `csv_delimiter`, else detected from the header line (the one of the
//!   three that occurs most often there outside quotes; `,` on a tie);
//! - with `;` as delimiter a decimal comma is read as a decimal point
//!   (`12,5` is 12.5), since spreadsheets that write `;` do so because the
//!   comma is their decimal separator;
//! - blank lines are skipped; fields are trimmed.
//!
//! Every problem reads `line N, column NAME: …` or `line N: …`, with N the
//! physical line (1-based) where the record starts, so a record with a
//! quoted line break is named by its first line.

use super::wire::MeasurementDoc;

pub const REQUIRED: [&str; 5] = ["id", "x_m", "y_m", "z_m", "resultant_ut"];
pub const OPTIONAL: [&str; 3] = ["bx_ut", "by_ut", "bz_ut"];
/// The delimiters accepted, as bytes.
pub const DELIMITERS: [u8; 3] = [b',', b';', b'\t'];

const BOM: char = '\u{feff}';

/// One record: the line it starts on and its trimmed fields.
struct Record {
    line: u64,
    fields: Vec<String>,
}

/// Parses the CSV text, detecting the delimiter from the header line.
pub fn parse_measurements(text: &str) -> Result<Vec<MeasurementDoc>, Vec<String>> {
    parse_measurements_with(text, None)
}

/// Parses the CSV text with `delimiter` (one of [`DELIMITERS`]) or, when
/// `None`, the one detected from the header line.
pub fn parse_measurements_with(text: &str, delimiter: Option<u8>) -> Result<Vec<MeasurementDoc>, Vec<String>> {
    let text = text.strip_prefix(BOM).unwrap_or(text);
    let delimiter = delimiter.unwrap_or_else(|| detect_delimiter(text));
    if let Some(line) = unclosed_quote_line(text, delimiter) {
        return Err(vec![format!("line {line}: a quoted field is never closed (a \" is missing)")]);
    }
    let mut records = records(text, delimiter)?.into_iter();
    let Some(header) = records.next() else { return Err(vec!["line 1: the CSV is empty".into()]) };
    let columns = parse_header(&header)?;
    let mut errors = Vec::new();
    let out = records.filter_map(|r| parse_row(&columns, &r, delimiter, &mut errors)).collect();
    if errors.is_empty() { Ok(out) } else { Err(errors) }
}

/// The delimiter of the first non-blank line: whichever of `,`, `;` and tab
/// occurs most often outside quotes (`,` when none does or on a tie).
fn detect_delimiter(text: &str) -> u8 {
    let header = text.lines().find(|l| !l.trim().is_empty()).unwrap_or("");
    let mut counts = [0usize; 3];
    let mut quoted = false;
    for b in header.bytes() {
        if b == b'"' {
            quoted = !quoted;
        } else if !quoted && let Some(k) = DELIMITERS.iter().position(|d| *d == b) {
            counts[k] += 1;
        }
    }
    let mut best = 0;
    for k in 1..DELIMITERS.len() {
        if counts[k] > counts[best] {
            best = k;
        }
    }
    DELIMITERS[best]
}

/// The line (1-based) where a quoted field opens and never closes, if any.
/// Mirrors RFC 4180 as the `csv` crate reads it: a quote opens a quoted
/// field only at the start of a field, a doubled quote inside stands for
/// one quote, and a quote elsewhere is an ordinary character. The crate
/// itself reads an unclosed quote to the end of the text without an error,
/// which would silently merge every later row into one field.
fn unclosed_quote_line(text: &str, delimiter: u8) -> Option<usize> {
    let (mut line, mut opened_at) = (1usize, 0usize);
    let (mut quoted, mut field_start) = (false, true);
    let mut chars = text.chars().peekable();
    while let Some(c) = chars.next() {
        match (c, quoted) {
            ('"', true) if chars.peek() == Some(&'"') => {
                chars.next();
            }
            ('"', true) => quoted = false,
            ('"', false) if field_start => {
                quoted = true;
                opened_at = line;
            }
            _ => {}
        }
        if c == '\n' {
            line += 1;
        }
        field_start = !quoted && (c == '\n' || c == '\r' || c == char::from(delimiter));
    }
    quoted.then_some(opened_at)
}

/// Every non-blank record with the line it starts on.
fn records(text: &str, delimiter: u8) -> Result<Vec<Record>, Vec<String>> {
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .trim(csv::Trim::All)
        .delimiter(delimiter)
        .from_reader(text.as_bytes());
    let mut out = Vec::new();
    for (k, result) in reader.records().enumerate() {
        let record = result.map_err(|e| {
            let line = e.position().map_or(k as u64 + 1, |p| p.line());
            vec![format!("line {line}: this row cannot be read as CSV")]
        })?;
        if record.iter().all(str::is_empty) {
            continue;
        }
        let line = record.position().map_or(k as u64 + 1, |p| first_line_of(text, p));
        out.push(Record { line, fields: record.iter().map(str::to_string).collect() });
    }
    Ok(out)
}

/// The line where a record's text starts. The `csv` crate reports the
/// position where it began reading, which is before any blank lines it
/// skipped; those are counted here.
fn first_line_of(text: &str, p: &csv::Position) -> u64 {
    let rest = usize::try_from(p.byte()).ok().and_then(|b| text.get(b..)).unwrap_or("");
    let blank = rest.bytes().take_while(|b| *b == b'\n' || *b == b'\r').filter(|b| *b == b'\n').count();
    p.line() + blank as u64
}

/// The header's column names: every required column present, no unknown
/// one.
fn parse_header(header: &Record) -> Result<Vec<String>, Vec<String>> {
    let n = header.line;
    let mut errors = Vec::new();
    for h in &header.fields {
        if !REQUIRED.contains(&h.as_str()) && !OPTIONAL.contains(&h.as_str()) {
            errors.push(format!(
                "line {n}, column {h}: unknown column (expected {} and optionally {})",
                REQUIRED.join(", "),
                OPTIONAL.join(", ")
            ));
        }
    }
    for r in REQUIRED {
        if !header.fields.iter().any(|h| h == r) {
            errors.push(format!("line {n}: missing column {r}"));
        }
    }
    if errors.is_empty() { Ok(header.fields.clone()) } else { Err(errors) }
}

/// A number as written: with `;` as delimiter a single decimal comma is
/// read as a point. Only finite values pass.
fn number(text: &str, delimiter: u8) -> Option<f64> {
    let text = if delimiter == b';' && !text.contains('.') && text.matches(',').count() == 1 {
        text.replace(',', ".")
    } else {
        text.to_string()
    };
    text.parse::<f64>().ok().filter(|v| v.is_finite())
}

/// One data row; its problems go to `errors` and it yields a measurement
/// only when every value parsed. The axes are read only when all three axis
/// columns are present.
fn parse_row(header: &[String], r: &Record, delimiter: u8, errors: &mut Vec<String>) -> Option<MeasurementDoc> {
    let line_no = r.line;
    let col = |name: &str| header.iter().position(|h| h == name);
    if r.fields.len() != header.len() {
        errors.push(format!("line {line_no}: {} fields, the header has {}", r.fields.len(), header.len()));
        return None;
    }
    let mut num = |name: &str| -> Option<f64> {
        let i = col(name)?;
        let v = number(&r.fields[i], delimiter);
        if v.is_none() {
            errors.push(format!("line {line_no}, column {name}: '{}' is not a finite number", r.fields[i]));
        }
        v
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
        id: r.fields[col("id").unwrap_or(0)].clone(),
        at: vec![x, y, z],
        height_m: None,
        resultant_ut: b,
        axes_ut: axes,
    })
}
