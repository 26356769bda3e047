//! Surveys: spot measurements reconciled with the model, a least-squares fit
//! of circuit loads on the influence matrix, and extrapolation of each
//! measurement to rated load.

mod analysis;
mod csv;
pub mod lm;
pub mod wire;

pub use analysis::*;
pub use csv::{
    DELIMITERS as CSV_DELIMITERS, OPTIONAL as CSV_OPTIONAL_COLUMNS, REQUIRED as CSV_REQUIRED_COLUMNS,
    parse_measurements, parse_measurements_with,
};

use crate::site::{CircuitLoad, Pointer, Problems, Site, check_coordinate};
use nalgebra::Point3;
use std::collections::HashSet;
use wire::{MeasurementDoc, MeterQuantity, SurveyDoc};

/// Most measurement points in one survey.
pub const MAX_POINTS: usize = 10_000;

/// One checked measurement. Built only by [`validate_survey`].
#[derive(Debug, Clone, PartialEq)]
pub struct Measurement {
    id: String,
    at: Point3<f64>,
    measured_ut: f64,
    axes_ut: Option<[f64; 3]>,
}

impl Measurement {
    pub fn id(&self) -> &str {
        &self.id
    }
    /// Where it was taken, site frame, m.
    pub fn at(&self) -> Point3<f64> {
        self.at
    }
    /// Measured resultant, µT RMS.
    pub fn measured_ut(&self) -> f64 {
        self.measured_ut
    }
    /// Measured RMS per axis (x, y, z), µT, if the meter gave them.
    pub fn axes_ut(&self) -> Option<[f64; 3]> {
        self.axes_ut
    }
}

/// A checked survey, tied to the site it was validated against: it carries
/// that site, so [`analyse`] takes no site and a survey cannot be analysed
/// against another one (whose circuits its loads would index wrongly). The
/// fields are private; only [`validate_survey`] builds one.
///
/// It owns its copy of the site (not a borrow) so that it can move to a
/// worker thread on its own; the copy costs far less than the field
/// computation that follows.
///
/// Swapping its site does not compile (the field is private):
///
/// ```compile_fail,E0616
/// # fn f(mut survey: fluxbound_core::survey::Survey, other: fluxbound_core::site::Site) {
/// survey.site = other;
/// # }
/// ```
///
/// nor does passing a second site to [`analyse`]:
///
/// ```compile_fail,E0061
/// # fn f(site: &fluxbound_core::site::Site, survey: &fluxbound_core::survey::Survey) {
/// let _ = fluxbound_core::survey::analyse(site, survey, &[], fluxbound_core::assess::ReviewFraction::DEFAULT);
/// # }
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Survey {
    site: Site,
    name: Option<String>,
    measured_at: String,
    /// Meter's expanded (k = 2) uncertainty as a fraction.
    meter_u: f64,
    /// What the meter reads; the model is compared in the same quantity.
    quantity: MeterQuantity,
    /// Model's expanded (k = 2) uncertainty as a fraction.
    model_u: f64,
    /// Load of each site circuit at the time (index = circuit index).
    loads: Vec<CircuitLoad>,
    /// Whether the survey stated that circuit's load.
    load_stated: Vec<bool>,
    points: Vec<Measurement>,
    tables: Vec<String>,
}

impl Survey {
    /// The site the survey was checked against.
    pub fn site(&self) -> &Site {
        &self.site
    }
    pub fn name(&self) -> Option<&str> {
        self.name.as_deref()
    }
    /// When the measurements were taken (RFC 3339 text as given).
    pub fn measured_at(&self) -> &str {
        &self.measured_at
    }
    /// Meter's expanded (k = 2) uncertainty as a fraction of the reading.
    pub fn meter_uncertainty(&self) -> f64 {
        self.meter_u
    }
    /// What the meter reads (resultant unless the survey says maximum).
    pub fn meter_quantity(&self) -> MeterQuantity {
        self.quantity
    }
    /// Model's expanded (k = 2) uncertainty as a fraction.
    pub fn model_uncertainty(&self) -> f64 {
        self.model_u
    }
    /// Load of each site circuit at the time, in the site's circuit order.
    pub fn loads(&self) -> &[CircuitLoad] {
        &self.loads
    }
    /// Whether the survey stated each circuit's load (site circuit order).
    pub fn load_stated(&self) -> &[bool] {
        &self.load_stated
    }
    pub fn points(&self) -> &[Measurement] {
        &self.points
    }
    /// Table ids the survey asked for (empty: the caller chooses).
    pub fn tables(&self) -> &[String] {
        &self.tables
    }
}

/// Checks a survey document against `site`, collecting every problem; the
/// checked survey carries a copy of `site`.
pub fn validate_survey(doc: &SurveyDoc, site: &Site) -> Result<Survey, Problems> {
    let mut p = Problems::default();
    let (meter_u, model_u) = check_header(doc, &mut p);
    let (loads, load_stated) = check_loads(doc, site, &mut p);
    let points = check_points(doc, doc.meter.quantity.unwrap_or_default(), &mut p);
    if !p.is_empty() {
        return Err(p);
    }
    Ok(Survey {
        site: site.clone(),
        name: doc.name.clone(),
        measured_at: doc.measured_at.clone(),
        meter_u,
        quantity: doc.meter.quantity.unwrap_or_default(),
        model_u,
        loads,
        load_stated,
        points,
        tables: doc.tables.clone(),
    })
}

/// Time and uncertainties; returns the meter's and the model's expanded
/// uncertainties as fractions.
fn check_header(doc: &SurveyDoc, p: &mut Problems) -> (f64, f64) {
    let root = Pointer::root();
    if let Some(name) = &doc.name {
        crate::site::check_name(name, &root.key("name"), p);
    }
    if let Some(model) = &doc.meter.model {
        crate::site::check_name(model, &root.key("meter").key("model"), p);
    }
    if doc.measured_at.trim().is_empty() || doc.measured_at.len() > 40 {
        p.push(&root.key("measured_at"), "give the time of measurement (RFC 3339, e.g. 2026-11-20T09:30:00Z)");
    }
    let u = doc.meter.expanded_uncertainty_percent;
    if !(u.is_finite() && u > 0.0 && u <= 100.0) {
        p.push(
            &root.key("meter").key("expanded_uncertainty_percent"),
            "must be greater than 0 and at most 100 percent",
        );
    }
    let mu = doc.model_uncertainty_percent;
    if !(mu.is_finite() && (0.0..=200.0).contains(&mu)) {
        p.push(&root.key("model_uncertainty_percent"), "must be between 0 and 200 percent");
    }
    (u / 100.0, mu / 100.0)
}

/// The load of every site circuit (present current unless stated) and
/// whether the survey stated it.
fn check_loads(doc: &SurveyDoc, site: &Site, p: &mut Problems) -> (Vec<CircuitLoad>, Vec<bool>) {
    let mut loads = vec![CircuitLoad::PRESENT; site.circuits().len()];
    let mut stated = vec![false; site.circuits().len()];
    let lp = Pointer::root().key("loads");
    for (i, l) in doc.loads.iter().enumerate() {
        let at = lp.index(i);
        let Some(ci) = site.circuits().iter().position(|c| c.id == l.circuit) else {
            p.push(&at.key("circuit"), format!("unknown circuit '{}'", l.circuit));
            continue;
        };
        if stated[ci] {
            p.push(&at.key("circuit"), format!("circuit '{}' is listed twice", l.circuit));
        }
        stated[ci] = true;
        if let Some(load) = check_load(l, &at, p) {
            loads[ci] = load;
        }
    }
    (loads, stated)
}

/// One stated load: a nominal current or per-phase currents (B and C
/// default to A), each within the site's current limit.
fn check_load(l: &wire::LoadDoc, at: &Pointer, p: &mut Problems) -> Option<CircuitLoad> {
    let ok = |v: f64| v.is_finite() && (0.0..=crate::site::CURRENT_LIMIT_A).contains(&v);
    match (l.current_a, l.phases_a) {
        (Some(a), None) if ok(a) => Some(CircuitLoad::CurrentA(a)),
        (Some(_), None) => {
            p.push(&at.key("current_a"), "current must be between 0 and 1e6 A");
            None
        }
        (None, Some(ph)) => {
            let nominal = ph.a;
            let all = [ph.a, ph.b.unwrap_or(nominal), ph.c.unwrap_or(nominal)];
            if all.iter().all(|v| ok(*v)) {
                Some(CircuitLoad::PhasesA(all))
            } else {
                p.push(&at.key("phases_a"), "phase currents must be between 0 and 1e6 A");
                None
            }
        }
        _ => {
            p.push(at, "give either current_a or phases_a");
            None
        }
    }
}

/// The measurement documents, from `points` or parsed from `points_csv`.
fn measurement_docs(doc: &SurveyDoc, p: &mut Problems) -> Vec<MeasurementDoc> {
    let root = Pointer::root();
    match (&doc.points_csv, doc.points.is_empty()) {
        (Some(_), false) => {
            p.push(&root, "give points or points_csv, not both");
            Vec::new()
        }
        (Some(text), true) => match parse_measurements_with(text, csv_delimiter(doc, p)) {
            Ok(v) => v,
            Err(errors) => {
                for e in errors {
                    p.push(&root.key("points_csv"), e);
                }
                Vec::new()
            }
        },
        (None, _) => {
            if doc.csv_delimiter.is_some() {
                p.push(&root.key("csv_delimiter"), "csv_delimiter applies to points_csv, which is not given");
            }
            doc.points.clone()
        }
    }
}

/// The explicit CSV delimiter, if the survey gives one; a problem at
/// `/csv_delimiter` when it is not one of the accepted ones.
fn csv_delimiter(doc: &SurveyDoc, p: &mut Problems) -> Option<u8> {
    let given = doc.csv_delimiter.as_deref()?;
    let at = Pointer::root().key("csv_delimiter");
    let d = given.as_bytes();
    match d {
        [b] if csv::DELIMITERS.contains(b) => Some(*b),
        _ => {
            p.push(&at, "the CSV delimiter must be \",\", \";\" or a tab");
            None
        }
    }
}

/// Every measurement, checked; a CSV row's problems point at `/points_csv`
/// (the message names its line), a JSON point's at its field.
fn check_points(doc: &SurveyDoc, quantity: MeterQuantity, p: &mut Problems) -> Vec<Measurement> {
    let root = Pointer::root();
    let points_doc = measurement_docs(doc, p);
    let from_csv = doc.points_csv.is_some();
    let pp = if from_csv { root.key("points_csv") } else { root.key("points") };
    if points_doc.is_empty() && p.is_empty() {
        p.push(&pp, "a survey needs at least one measurement");
    }
    if points_doc.len() > MAX_POINTS {
        p.push(&pp, format!("at most {MAX_POINTS} measurements"));
    }
    let mut seen = HashSet::new();
    let mut points = Vec::new();
    for (i, m) in points_doc.iter().enumerate() {
        let at = if from_csv { pp.clone() } else { pp.index(i) };
        let row = |field: &str| if from_csv { at.clone() } else { at.key(field) };
        if m.id.trim().is_empty() || m.id.chars().count() > 64 {
            p.push(&row("id"), format!("measurement {}: id must be 1–64 characters", i + 1));
        } else if let Some(why) = crate::text::single_line_problem(&m.id) {
            p.push(&row("id"), format!("measurement {}: {why}", i + 1));
        } else if !seen.insert(m.id.clone()) {
            p.push(&row("id"), format!("duplicate measurement id '{}'", m.id));
        }
        points.push(check_measurement(m, quantity, &row, p));
    }
    points
}

/// One measurement's position, reading and per-axis values.
fn check_measurement(
    m: &MeasurementDoc,
    quantity: MeterQuantity,
    row: &dyn Fn(&str) -> Pointer,
    p: &mut Problems,
) -> Measurement {
    for (d, x) in m.at.iter().enumerate() {
        check_coordinate(*x, &row("at").index(d), p);
    }
    let point = match (m.at.as_slice(), m.height_m) {
        (&[x, y], h) => Point3::new(x, y, h.unwrap_or(1.0)),
        (&[x, y, z], None) => Point3::new(x, y, z),
        (&[_, _, _], Some(_)) => {
            p.push(&row("height_m"), "height_m applies to a standing point [x, y]");
            Point3::origin()
        }
        _ => {
            p.push(&row("at"), "give [x, y] (with height_m) or [x, y, z]");
            Point3::origin()
        }
    };
    if !(m.resultant_ut.is_finite() && (0.0..=1.0e7).contains(&m.resultant_ut)) {
        p.push(&row("resultant_ut"), format!("measurement '{}': resultant must be between 0 and 1e7 µT", m.id));
    }
    if let Some(axes) = m.axes_ut {
        check_axes(m, axes, quantity, &row("axes_ut"), p);
    }
    Measurement { id: m.id.clone(), at: point, measured_ut: m.resultant_ut, axes_ut: m.axes_ut }
}

/// Per-axis values must be finite, not negative, and agree with the
/// reading within 5 %: their root sum of squares is the resultant; a
/// maximum lies between resultant/√3 and the resultant (docs/REFERENCES.md,
/// "Measurement practice"; √3 with several frequencies, see
/// `field::total_maximum_ut`).
fn check_axes(m: &MeasurementDoc, axes: [f64; 3], quantity: MeterQuantity, at: &Pointer, p: &mut Problems) {
    const SLACK: f64 = 0.05;
    let rss = axes.iter().map(|a| a * a).sum::<f64>().sqrt();
    let reading = m.resultant_ut;
    if axes.iter().any(|a| !a.is_finite() || *a < 0.0) {
        p.push(at, "per-axis RMS values must be finite and not negative");
        return;
    }
    match quantity {
        MeterQuantity::Resultant if (rss - reading).abs() > SLACK * reading.max(1e-9) => p.push(
            at,
            format!("measurement '{}': the axes give a resultant of {rss:.4} µT, not {} µT", m.id, reading),
        ),
        MeterQuantity::Maximum
            if reading > (1.0 + SLACK) * rss || reading < (1.0 - SLACK) * rss / 3f64.sqrt() =>
        {
            p.push(
                at,
                format!(
                    "measurement '{}': a maximum of {} µT cannot come from axes whose resultant is {rss:.4} µT (it lies between resultant/√3 and the resultant)",
                    m.id, reading
                ),
            )
        }
        _ => {}
    }
}
