//! The stateless evaluation document: conductors and points in, field out.
//!
//! The same JSON is read by `fluxbound evaluate` and (in the service) by
//! `POST /v1/evaluate`, so its key names are a published interface.
//!
//! Layout: this file holds the wire types and the check of a request;
//! `evaluate/output.rs` the answer's two forms (per point, or columns) and their
//! streaming serialisation.

mod output;

pub use output::{COLUMN_NAMES, Column, Evaluated, Output, parse_columns, write_compact, write_evaluated};

use crate::cancel::{Cancel, Cancelled};
use crate::field::{self, FieldPhasor};
use crate::site::warnings::{Probe, ProbeSource, model_warnings};
use crate::site::wire::{CircuitDoc, ConductorDoc};
use crate::site::{
    self, Conductor, Pointer, Problems, check_circuits, check_conductors, check_coordinate_at, check_frequency,
    excitation_of, orders_of,
};
use nalgebra::Point3;
use serde::{Deserialize, Serialize};

/// Most points one document may ask for (the HTTP layer sets its own,
/// smaller, configurable bound).
pub const MAX_POINTS: usize = 10_000_000;

/// Request: conductors (explicit phasors or circuit + phase) and points.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct EvaluateRequest {
    /// Fundamental frequency, Hz (1–3000).
    #[cfg_attr(feature = "schema", schema(minimum = 1, maximum = 3000))]
    pub frequency_hz: f64,
    /// Circuits for conductors given by circuit and phase.
    #[serde(default)]
    pub circuits: Vec<CircuitDoc>,
    /// Conductors as polylines.
    pub conductors: Vec<ConductorDoc>,
    /// Points `[x, y, z]`, m.
    #[cfg_attr(feature = "schema", schema(schema_with = crate::site::wire::bounds::points_m))]
    pub points: Vec<[f64; 3]>,
    /// The form of the answer; absent for one object per point.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub output: Option<OutputDoc>,
}

/// How the answer is written.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct OutputDoc {
    /// Answer with these columns, one array per column in point order,
    /// instead of one object per point: `x_m`, `y_m`, `z_m`,
    /// `resultant_ut`, `maximum_ut` (over all frequencies; `null` inside a
    /// conductor), `resultant_ut@<order>`, `maximum_ut@<order>` (one
    /// spectral line by harmonic order, `@1` the fundamental; `null` inside
    /// a conductor), `inside_conductors` (ids, `[]` for none). Each at most
    /// once.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub columns: Option<Vec<String>>,
}

/// A real and imaginary part, µT RMS.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct ComplexUt {
    /// Real part, µT RMS.
    pub re: f64,
    /// Imaginary part, µT RMS.
    pub im: f64,
}

/// Complex RMS components along x, y, z, µT.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct ComponentsUt {
    pub x: ComplexUt,
    pub y: ComplexUt,
    pub z: ComplexUt,
}

impl From<&FieldPhasor> for ComponentsUt {
    fn from(b: &FieldPhasor) -> Self {
        let c = |i: usize| ComplexUt { re: b[i].re, im: b[i].im };
        ComponentsUt { x: c(0), y: c(1), z: c(2) }
    }
}

/// Field at one frequency.
///
/// When the document has a single spectral line (the fundamental only),
/// `resultant_ut` and `maximum_ut` are absent here: they equal the point's
/// own `resultant_ut` and `maximum_ut`, which are not repeated.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct FrequencyResult {
    /// Harmonic order (1 = fundamental).
    pub order: u32,
    /// Frequency, Hz.
    pub frequency_hz: f64,
    /// Resultant RMS flux density at this frequency, µT; absent when the
    /// document has one spectral line (then it is the point's `resultant_ut`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub resultant_ut: Option<f64>,
    /// Major semi-axis of the polarisation ellipse (RMS), µT; absent when
    /// the document has one spectral line (then it is the point's `maximum_ut`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub maximum_ut: Option<f64>,
    pub components_ut: ComponentsUt,
}

/// Field at one point. When the point lies inside a conductor the thin-wire
/// field is meaningless there: `resultant_ut` and `maximum_ut` are `null`,
/// `frequencies` is empty and `inside_conductors` names the conductors.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct PointResult {
    /// The point `[x, y, z]`, m.
    pub at: [f64; 3],
    /// Resultant RMS over all frequencies (quadrature sum), µT.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub resultant_ut: Option<f64>,
    /// RMS along the direction of largest field over all frequencies, µT.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub maximum_ut: Option<f64>,
    /// Per frequency (empty inside a conductor).
    pub frequencies: Vec<FrequencyResult>,
    /// Conductors the point lies inside.
    pub inside_conductors: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct EvaluateResponse {
    /// Fundamental frequency, Hz.
    pub frequency_hz: f64,
    /// One result per input point, in input order.
    pub points: Vec<PointResult>,
    /// Segment–point pairs computed (a measure of the work done).
    pub segment_point_pairs: u64,
    /// Cautions that apply to every result.
    pub cautions: Vec<String>,
    /// Model warnings (open ends, no return path, overlapping conductors,
    /// points inside conductors or below ground), each with its pointer into
    /// the request document. They never block the result.
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub warnings: Vec<site::Warning>,
}

/// The column form of the answer (`output.columns` given): one array per
/// column, in point order. Described for the contract; the service writes
/// it straight from the computed field, without building this value.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct EvaluateColumnsResponse {
    /// Fundamental frequency, Hz.
    pub frequency_hz: f64,
    /// One array per requested column, keyed by the column's name, one
    /// value per input point in input order. Field columns (µT) hold `null`
    /// for a point inside a conductor, never a number.
    pub columns: std::collections::BTreeMap<String, Vec<ColumnValue>>,
    /// Segment–point pairs computed.
    pub segment_point_pairs: u64,
    /// Cautions that apply to every result.
    pub cautions: Vec<String>,
    /// Model warnings, as in the per-point form.
    pub warnings: Vec<site::Warning>,
}

/// One value of a column: a number (m or µT), `null` (a field inside a
/// conductor) or a list of conductor ids (`inside_conductors`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(untagged)]
pub enum ColumnValue {
    Number(f64),
    Ids(Vec<String>),
    Null,
}

/// The answer in either form: per point (default) or columns.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(untagged)]
pub enum EvaluateAnswer {
    Points(EvaluateResponse),
    Columns(EvaluateColumnsResponse),
}

/// A checked request, ready to compute.
#[derive(Debug, Clone)]
pub struct Evaluation {
    frequency_hz: f64,
    conductors: Vec<Conductor>,
    circuits: Vec<site::Circuit>,
    points: Vec<Point3<f64>>,
    output: Output,
}

impl Evaluation {
    /// Segment–point pairs this evaluation will compute.
    pub fn pair_count(&self) -> u64 {
        crate::usecase::segment_count(&self.conductors).saturating_mul(self.points.len() as u64)
    }

    /// Harmonic orders of the document's spectral lines, ascending (1 first).
    pub fn orders(&self) -> Vec<u32> {
        orders_of(&self.circuits)
    }

    /// Replaces the form of the answer (the command line's `--columns`
    /// overrides the document's `output`).
    pub fn set_output(&mut self, output: Output) {
        self.output = output;
    }
}

/// Checks a request, reporting every problem with its pointer.
pub fn validate_request(req: &EvaluateRequest) -> Result<Evaluation, Problems> {
    let root = Pointer::root();
    let mut p = Problems::default();
    check_frequency(req.frequency_hz, &root.key("frequency_hz"), &mut p);
    let circuits = check_circuits(&req.circuits, &root.key("circuits"), &mut p);
    let conductors = check_conductors(&req.conductors, &root.key("conductors"), &req.circuits, &mut p);
    let pp = root.key("points");
    if req.points.len() > MAX_POINTS {
        p.push(&pp, format!("at most {MAX_POINTS} points per document"));
    }
    for (i, pt) in req.points.iter().enumerate() {
        for (d, x) in pt.iter().enumerate() {
            check_coordinate_at(*x, || pp.index(i).index(d), &mut p);
        }
    }
    let output = check_output(req.output.as_ref(), &orders_of(&circuits), &root.key("output"), &mut p);
    let points = req.points.iter().map(|v| Point3::new(v[0], v[1], v[2])).collect();
    p.into_result(Evaluation { frequency_hz: req.frequency_hz, conductors, circuits, points, output })
}

fn check_output(doc: Option<&OutputDoc>, orders: &[u32], at: &Pointer, p: &mut Problems) -> Output {
    let Some(names) = doc.and_then(|o| o.columns.as_deref()) else { return Output::Points };
    match parse_columns(names, orders) {
        Ok(cols) => Output::Columns(cols),
        Err(problems) => {
            let cp = at.key("columns");
            for (i, why) in problems {
                // An empty list is a problem of the list itself.
                let where_ = if names.is_empty() { cp.clone() } else { cp.index(i) };
                p.push(&where_, why);
            }
            Output::Points
        }
    }
}

/// Computes the field at every point, in input order.
pub fn evaluate(ev: &Evaluation) -> EvaluateResponse {
    crate::cancel::uncancelled(try_evaluate(ev, &Cancel::never()))
}

/// [`evaluate`] that stops with [`Cancelled`] soon after `cancel` is set.
pub fn try_evaluate(ev: &Evaluation, cancel: &Cancel) -> Result<EvaluateResponse, Cancelled> {
    Ok(try_compute(ev.clone(), cancel)?.to_response())
}

/// Computes the field at every point and keeps it for writing in the form
/// the evaluation asks for (see [`Evaluated`]); stops with [`Cancelled`]
/// soon after `cancel` is set.
pub fn try_compute(ev: Evaluation, cancel: &Cancel) -> Result<Evaluated, Cancelled> {
    let filaments = site::filaments(&ev.conductors);
    let drives: Vec<_> = ev.conductors.iter().map(|c| c.drive).collect();
    let excitation = excitation_of(ev.frequency_hz, &ev.circuits, &drives, &[]);
    let set = field::try_evaluate(&filaments, &ev.points, &excitation, cancel)?;
    let lines = excitation.lines.iter().map(|l| (l.order, l.frequency_hz)).collect();
    let warnings = evaluation_warnings(&ev);
    Ok(Evaluated { ev, lines, set, warnings })
}

/// The model warnings of a checked request, pointers into the request.
pub fn evaluation_warnings(ev: &Evaluation) -> Vec<site::Warning> {
    let probes: Vec<Probe> = ev
        .points
        .iter()
        .enumerate()
        .map(|(i, at)| Probe { at: *at, source: ProbeSource::Point(i), group: i })
        .collect();
    model_warnings(ev.frequency_hz, &ev.circuits, &ev.conductors, &probes, Vec::new())
}

/// Parses, checks and computes a request document.
pub fn evaluate_json(text: &str) -> Result<EvaluateResponse, Problems> {
    let req: EvaluateRequest = site::parse_json(text)?;
    let ev = validate_request(&req)?;
    Ok(evaluate(&ev))
}
