//! What an evaluation answers with, written without building the text (or a
//! value per point) first.
//!
//! [`Evaluated`] holds the computed phasors; its `Serialize` walks them and
//! computes each point's summary while it is written, so the writer (a
//! buffered standard output, an HTTP body buffer) is the only place the text
//! exists. Two forms:
//!
//! - **points** (the default): one object per point, as [`EvaluateResponse`].
//!   With one spectral line, the per-frequency entries omit `resultant_ut`
//!   and `maximum_ut`, which would only repeat the point's own values.
//! - **columns**: `{"columns": {"<name>": [value per point, …], …}}` for the
//!   columns asked for, in the order asked, values in point order.
//!
//! Column names ([`Column`]): `x_m`, `y_m`, `z_m` (the point),
//! `resultant_ut`, `maximum_ut` (over all frequencies),
//! `resultant_ut@<order>`, `maximum_ut@<order>` (one spectral line, by
//! harmonic order: `@1` is the fundamental) and `inside_conductors` (the ids
//! of the conductors a point lies inside, `[]` for none). A field value at a
//! point inside a conductor is `null`, never a number.

use super::{ComponentsUt, EvaluateResponse, Evaluation, FrequencyResult, PointResult};
use crate::cautions::cautions;
use crate::field::{self, FieldSet};
use crate::site::Warning;
use serde::ser::{SerializeMap, SerializeStruct};
use serde::{Serialize, Serializer};
use std::io;

/// One column of the column form.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Column {
    /// The point's x, m.
    X,
    /// The point's y, m.
    Y,
    /// The point's z, m.
    Z,
    /// Resultant RMS over all frequencies, µT.
    Resultant,
    /// Maximum RMS over all frequencies, µT.
    Maximum,
    /// Resultant RMS of the spectral line of this harmonic order, µT.
    LineResultant(u32),
    /// Maximum RMS of the spectral line of this harmonic order, µT.
    LineMaximum(u32),
    /// Ids of the conductors the point lies inside.
    Inside,
}

/// The fixed column names, for messages and documentation.
pub const COLUMN_NAMES: &str =
    "x_m, y_m, z_m, resultant_ut, maximum_ut, resultant_ut@<order>, maximum_ut@<order>, inside_conductors";

impl Column {
    /// Parses a column name; `orders` are the harmonic orders the document
    /// has (a per-line column must name one of them).
    pub fn parse(name: &str, orders: &[u32]) -> Result<Column, String> {
        let fixed = match name {
            "x_m" => Some(Column::X),
            "y_m" => Some(Column::Y),
            "z_m" => Some(Column::Z),
            "resultant_ut" => Some(Column::Resultant),
            "maximum_ut" => Some(Column::Maximum),
            "inside_conductors" => Some(Column::Inside),
            _ => None,
        };
        if let Some(c) = fixed {
            return Ok(c);
        }
        let unknown = || format!("unknown column '{name}' (columns: {COLUMN_NAMES})");
        let (base, order) = name.split_once('@').ok_or_else(unknown)?;
        let make: fn(u32) -> Column = match base {
            "resultant_ut" => Column::LineResultant,
            "maximum_ut" => Column::LineMaximum,
            _ => return Err(unknown()),
        };
        let order: u32 = order.parse().map_err(|_| unknown())?;
        if !orders.contains(&order) {
            let have: Vec<String> = orders.iter().map(u32::to_string).collect();
            return Err(format!(
                "column '{name}': the document has no spectral line of order {order} (its orders: {})",
                have.join(", ")
            ));
        }
        Ok(make(order))
    }

    /// The name the column is written under.
    pub fn name(&self) -> String {
        match self {
            Column::X => "x_m".into(),
            Column::Y => "y_m".into(),
            Column::Z => "z_m".into(),
            Column::Resultant => "resultant_ut".into(),
            Column::Maximum => "maximum_ut".into(),
            Column::LineResultant(n) => format!("resultant_ut@{n}"),
            Column::LineMaximum(n) => format!("maximum_ut@{n}"),
            Column::Inside => "inside_conductors".into(),
        }
    }
}

/// Parses a list of column names: every problem as `(index, detail)`.
pub fn parse_columns<S: AsRef<str>>(names: &[S], orders: &[u32]) -> Result<Vec<Column>, Vec<(usize, String)>> {
    let mut problems = Vec::new();
    let mut out: Vec<Column> = Vec::with_capacity(names.len());
    for (i, name) in names.iter().enumerate() {
        match Column::parse(name.as_ref(), orders) {
            Ok(c) if out.contains(&c) => problems.push((i, format!("column '{}' is listed twice", name.as_ref()))),
            Ok(c) => out.push(c),
            Err(why) => problems.push((i, why)),
        }
    }
    if names.is_empty() {
        problems.push((0, format!("give at least one column ({COLUMN_NAMES})")));
    }
    if problems.is_empty() { Ok(out) } else { Err(problems) }
}

/// Which form the answer takes.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub enum Output {
    /// One object per point (the default).
    #[default]
    Points,
    /// The named columns, in this order.
    Columns(Vec<Column>),
}

/// A computed evaluation, written as JSON by its `Serialize` in the form
/// its [`Output`] asks for.
#[derive(Debug, Clone)]
pub struct Evaluated {
    pub(super) ev: Evaluation,
    /// `(order, frequency_hz)` per spectral line, in the field set's order.
    pub(super) lines: Vec<(u32, f64)>,
    pub(super) set: FieldSet,
    pub(super) warnings: Vec<Warning>,
}

impl Evaluated {
    /// Segment–point pairs computed.
    pub fn pair_count(&self) -> u64 {
        self.ev.pair_count()
    }

    /// The typed per-point form (the default output), built in memory.
    pub fn to_response(&self) -> EvaluateResponse {
        EvaluateResponse {
            frequency_hz: self.ev.frequency_hz,
            points: (0..self.ev.points.len()).map(|i| self.point_result(i)).collect(),
            segment_point_pairs: self.pair_count(),
            cautions: cautions(),
            warnings: self.warnings.clone(),
        }
    }

    fn is_inside(&self, i: usize) -> bool {
        self.set.inside_of(i).next().is_some()
    }

    fn resultant_ut(&self, i: usize) -> Option<f64> {
        (!self.is_inside(i)).then(|| field::total_resultant_ut(self.set.at(i)))
    }

    fn maximum_ut(&self, i: usize) -> Option<f64> {
        (!self.is_inside(i)).then(|| field::total_maximum_ut(self.set.at(i)))
    }

    /// Line `f` at point `i`; its resultant and maximum are left out when
    /// the document has one line (they equal the point's own).
    fn line_result(&self, i: usize, f: usize) -> FrequencyResult {
        let b = &self.set.at(i)[f];
        let (order, frequency_hz) = self.lines[f];
        let several = self.lines.len() > 1;
        FrequencyResult {
            order,
            frequency_hz,
            resultant_ut: several.then(|| field::resultant_ut(b)),
            maximum_ut: several.then(|| field::maximum_ut(b)),
            components_ut: ComponentsUt::from(b),
        }
    }

    /// The lines at point `i`: none inside a conductor.
    fn line_results(&self, i: usize) -> impl Iterator<Item = FrequencyResult> + '_ {
        let count = if self.is_inside(i) { 0 } else { self.lines.len() };
        (0..count).map(move |f| self.line_result(i, f))
    }

    fn inside_ids(&self, i: usize) -> impl Iterator<Item = &str> + '_ {
        // A bar's filaments share its id: name the bar once.
        let mut ids: Vec<&str> = self.set.inside_of(i).map(|k| self.ev.conductors[k].id.as_str()).collect();
        ids.dedup();
        ids.into_iter()
    }

    fn at(&self, i: usize) -> [f64; 3] {
        let p = &self.ev.points[i];
        [p.x, p.y, p.z]
    }

    fn point_result(&self, i: usize) -> PointResult {
        PointResult {
            at: self.at(i),
            resultant_ut: self.resultant_ut(i),
            maximum_ut: self.maximum_ut(i),
            frequencies: self.line_results(i).collect(),
            inside_conductors: self.inside_ids(i).map(str::to_string).collect(),
        }
    }

    /// Index of the line of harmonic `order` (checked when the column was
    /// parsed; the fundamental is always present).
    fn line_index(&self, order: u32) -> Option<usize> {
        self.lines.iter().position(|(o, _)| *o == order)
    }
}

impl Serialize for Evaluated {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_struct("EvaluateResponse", 5)?;
        m.serialize_field("frequency_hz", &self.ev.frequency_hz)?;
        match &self.ev.output {
            Output::Points => m.serialize_field("points", &Points(self))?,
            Output::Columns(cols) => m.serialize_field("columns", &Columns(self, cols))?,
        }
        m.serialize_field("segment_point_pairs", &self.pair_count())?;
        m.serialize_field("cautions", &cautions())?;
        m.serialize_field("warnings", &self.warnings)?;
        m.end()
    }
}

struct Points<'a>(&'a Evaluated);

impl Serialize for Points<'_> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_seq((0..self.0.ev.points.len()).map(|i| OnePoint(self.0, i)))
    }
}

/// One point of the per-point form, the keys of [`PointResult`].
struct OnePoint<'a>(&'a Evaluated, usize);

impl Serialize for OnePoint<'_> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let (e, i) = (self.0, self.1);
        let mut m = s.serialize_struct("PointResult", 5)?;
        m.serialize_field("at", &e.at(i))?;
        m.serialize_field("resultant_ut", &e.resultant_ut(i))?;
        m.serialize_field("maximum_ut", &e.maximum_ut(i))?;
        m.serialize_field("frequencies", &Lines(e, i))?;
        m.serialize_field("inside_conductors", &Inside(e, i))?;
        m.end()
    }
}

struct Lines<'a>(&'a Evaluated, usize);

impl Serialize for Lines<'_> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_seq(self.0.line_results(self.1))
    }
}

struct Inside<'a>(&'a Evaluated, usize);

impl Serialize for Inside<'_> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_seq(self.0.inside_ids(self.1))
    }
}

struct Columns<'a>(&'a Evaluated, &'a [Column]);

impl Serialize for Columns<'_> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.1.len()))?;
        for c in self.1 {
            m.serialize_entry(&c.name(), &OneColumn(self.0, *c))?;
        }
        m.end()
    }
}

struct OneColumn<'a>(&'a Evaluated, Column);

impl Serialize for OneColumn<'_> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let e = self.0;
        let n = e.ev.points.len();
        let on_line = |order: u32, f: fn(&field::FieldPhasor) -> f64| {
            let line = e.line_index(order);
            move |i: usize| line.filter(|_| !e.is_inside(i)).map(|l| f(&e.set.at(i)[l]))
        };
        match self.1 {
            Column::X => s.collect_seq(e.ev.points.iter().map(|p| p.x)),
            Column::Y => s.collect_seq(e.ev.points.iter().map(|p| p.y)),
            Column::Z => s.collect_seq(e.ev.points.iter().map(|p| p.z)),
            Column::Resultant => s.collect_seq((0..n).map(|i| e.resultant_ut(i))),
            Column::Maximum => s.collect_seq((0..n).map(|i| e.maximum_ut(i))),
            Column::LineResultant(order) => s.collect_seq((0..n).map(on_line(order, field::resultant_ut))),
            Column::LineMaximum(order) => s.collect_seq((0..n).map(on_line(order, field::maximum_ut))),
            Column::Inside => s.collect_seq((0..n).map(|i| Inside(e, i))),
        }
    }
}

/// The compact JSON text of `value` written to `out`: byte for byte what
/// `serde_json::to_writer` writes (tested in `tests/core/evaluate/output.rs`),
/// but the per-point form is written straight from the phasors, with its
/// fixed keys as literal bytes. The generic serializer escapes every key and
/// calls the writer for every piece; on the HTTP evaluate path (100 points,
/// 17 keys each) that was a quarter of the server's time (`perf record`,
/// 2026-12-03). The column form and the tail (cautions, warnings) go
/// through serde.
pub fn write_compact<W: io::Write + ?Sized>(out: &mut W, value: &Evaluated) -> io::Result<()> {
    if !matches!(value.ev.output, Output::Points) {
        return Ok(serde_json::to_writer(out, value)?);
    }
    out.write_all(b"{\"frequency_hz\":")?;
    number(out, value.ev.frequency_hz)?;
    out.write_all(b",\"points\":[")?;
    for i in 0..value.ev.points.len() {
        if i > 0 {
            out.write_all(b",")?;
        }
        compact_point(out, value, i)?;
    }
    out.write_all(b"],\"segment_point_pairs\":")?;
    serde_json::to_writer(&mut *out, &value.pair_count())?;
    out.write_all(b",\"cautions\":")?;
    serde_json::to_writer(&mut *out, &crate::cautions::CAUTIONS)?;
    out.write_all(b",\"warnings\":")?;
    serde_json::to_writer(&mut *out, &value.warnings)?;
    out.write_all(b"}")?;
    Ok(())
}

/// A number as serde_json writes it: the shortest text that reads back to
/// the same `f64`, `null` if not finite.
fn number<W: io::Write + ?Sized>(out: &mut W, v: f64) -> io::Result<()> {
    use serde_json::ser::Formatter;
    if v.is_finite() { serde_json::ser::CompactFormatter.write_f64(out, v) } else { out.write_all(b"null") }
}

fn optional_number<W: io::Write + ?Sized>(out: &mut W, v: Option<f64>) -> io::Result<()> {
    match v {
        Some(v) => number(out, v),
        None => out.write_all(b"null"),
    }
}

/// One point of the per-point form, in the keys and order of [`OnePoint`].
fn compact_point<W: io::Write + ?Sized>(out: &mut W, e: &Evaluated, i: usize) -> io::Result<()> {
    let [x, y, z] = e.at(i);
    out.write_all(b"{\"at\":[")?;
    number(out, x)?;
    out.write_all(b",")?;
    number(out, y)?;
    out.write_all(b",")?;
    number(out, z)?;
    out.write_all(b"],\"resultant_ut\":")?;
    optional_number(out, e.resultant_ut(i))?;
    out.write_all(b",\"maximum_ut\":")?;
    optional_number(out, e.maximum_ut(i))?;
    out.write_all(b",\"frequencies\":[")?;
    for (f, line) in e.line_results(i).enumerate() {
        if f > 0 {
            out.write_all(b",")?;
        }
        out.write_all(b"{\"order\":")?;
        serde_json::to_writer(&mut *out, &line.order)?;
        out.write_all(b",\"frequency_hz\":")?;
        number(out, line.frequency_hz)?;
        if let Some(r) = line.resultant_ut {
            out.write_all(b",\"resultant_ut\":")?;
            number(out, r)?;
        }
        if let Some(m) = line.maximum_ut {
            out.write_all(b",\"maximum_ut\":")?;
            number(out, m)?;
        }
        let c = &line.components_ut;
        for (key, v) in [(&b",\"components_ut\":{\"x\":"[..], c.x), (b",\"y\":", c.y), (b",\"z\":", c.z)] {
            out.write_all(key)?;
            out.write_all(b"{\"re\":")?;
            number(out, v.re)?;
            out.write_all(b",\"im\":")?;
            number(out, v.im)?;
            out.write_all(b"}")?;
        }
        out.write_all(b"}}")?;
    }
    out.write_all(b"],\"inside_conductors\":")?;
    serde_json::to_writer(&mut *out, &Inside(e, i))?;
    out.write_all(b"}")?;
    Ok(())
}

/// Writes `value` as JSON to `out`: on one line when `compact`, else
/// indented. The column form keeps each column's array on one line (a
/// number per line would only lengthen the text); the per-point form is
/// indented throughout.
pub fn write_evaluated(out: &mut dyn io::Write, value: &Evaluated, compact: bool) -> io::Result<()> {
    let result = match (compact, &value.ev.output) {
        (true, _) => {
            write_compact(&mut *out, value)?;
            return out.write_all(b"\n");
        }
        (false, Output::Points) => serde_json::to_writer_pretty(&mut *out, value),
        (false, Output::Columns(_)) => {
            let mut ser = serde_json::Serializer::with_formatter(&mut *out, InlineArrays::default());
            value.serialize(&mut ser)
        }
    };
    result.map_err(io::Error::from)?;
    out.write_all(b"\n")
}

/// Indented objects, arrays (and everything inside them) on one line.
#[derive(Default)]
struct InlineArrays {
    pretty: serde_json::ser::PrettyFormatter<'static>,
    /// Arrays open around the current value.
    depth: usize,
}

impl serde_json::ser::Formatter for InlineArrays {
    fn begin_array<W: ?Sized + io::Write>(&mut self, w: &mut W) -> io::Result<()> {
        self.depth += 1;
        w.write_all(b"[")
    }
    fn end_array<W: ?Sized + io::Write>(&mut self, w: &mut W) -> io::Result<()> {
        self.depth -= 1;
        w.write_all(b"]")
    }
    fn begin_array_value<W: ?Sized + io::Write>(&mut self, w: &mut W, first: bool) -> io::Result<()> {
        if first { Ok(()) } else { w.write_all(b",") }
    }
    fn end_array_value<W: ?Sized + io::Write>(&mut self, _w: &mut W) -> io::Result<()> {
        Ok(())
    }
    fn begin_object<W: ?Sized + io::Write>(&mut self, w: &mut W) -> io::Result<()> {
        if self.depth > 0 { w.write_all(b"{") } else { self.pretty.begin_object(w) }
    }
    fn end_object<W: ?Sized + io::Write>(&mut self, w: &mut W) -> io::Result<()> {
        if self.depth > 0 { w.write_all(b"}") } else { self.pretty.end_object(w) }
    }
    fn begin_object_key<W: ?Sized + io::Write>(&mut self, w: &mut W, first: bool) -> io::Result<()> {
        match (self.depth > 0, first) {
            (true, true) => Ok(()),
            (true, false) => w.write_all(b","),
            (false, _) => self.pretty.begin_object_key(w, first),
        }
    }
    fn begin_object_value<W: ?Sized + io::Write>(&mut self, w: &mut W) -> io::Result<()> {
        if self.depth > 0 { w.write_all(b":") } else { self.pretty.begin_object_value(w) }
    }
    fn end_object_value<W: ?Sized + io::Write>(&mut self, w: &mut W) -> io::Result<()> {
        if self.depth > 0 { Ok(()) } else { self.pretty.end_object_value(w) }
    }
}
