//! Surveys: spot measurements reconciled with the model, a least-squares fit
//! of circuit loads on the influence matrix, and extrapolation of each
//! measurement to rated load.

mod analysis;
mod csv;
pub mod wire;

pub use analysis::*;
pub use csv::{OPTIONAL as CSV_OPTIONAL_COLUMNS, REQUIRED as CSV_REQUIRED_COLUMNS, parse_measurements};

use crate::site::{CircuitLoad, Pointer, Problems, Site, check_coordinate};
use nalgebra::Point3;
use std::collections::HashSet;
use wire::SurveyDoc;

/// Most measurement points in one survey.
pub const MAX_POINTS: usize = 10_000;

/// One checked measurement.
#[derive(Debug, Clone, PartialEq)]
pub struct Measurement {
    pub id: String,
    pub at: Point3<f64>,
    pub measured_ut: f64,
    pub axes_ut: Option<[f64; 3]>,
}

/// A checked survey, tied to the site it was validated against.
#[derive(Debug, Clone, PartialEq)]
pub struct Survey {
    pub name: Option<String>,
    pub measured_at: String,
    /// Meter's expanded (k = 2) uncertainty as a fraction.
    pub meter_u: f64,
    /// Model's expanded (k = 2) uncertainty as a fraction.
    pub model_u: f64,
    /// Load of each site circuit at the time (index = circuit index).
    pub loads: Vec<CircuitLoad>,
    /// Whether the survey stated that circuit's load.
    pub load_stated: Vec<bool>,
    pub points: Vec<Measurement>,
    pub tables: Vec<String>,
}

/// Checks a survey document against `site`, collecting every problem.
pub fn validate_survey(doc: &SurveyDoc, site: &Site) -> Result<Survey, Problems> {
    let root = Pointer::root();
    let mut p = Problems::default();
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
    let mut loads = vec![CircuitLoad::PRESENT; site.circuits.len()];
    let mut stated = vec![false; site.circuits.len()];
    let lp = root.key("loads");
    for (i, l) in doc.loads.iter().enumerate() {
        let at = lp.index(i);
        let Some(ci) = site.circuits.iter().position(|c| c.id == l.circuit) else {
            p.push(&at.key("circuit"), format!("unknown circuit '{}'", l.circuit));
            continue;
        };
        if stated[ci] {
            p.push(&at.key("circuit"), format!("circuit '{}' is listed twice", l.circuit));
        }
        stated[ci] = true;
        let ok = |v: f64| v.is_finite() && (0.0..=crate::site::CURRENT_LIMIT_A).contains(&v);
        match (l.current_a, l.phases_a) {
            (Some(a), None) if ok(a) => loads[ci] = CircuitLoad::CurrentA(a),
            (Some(_), None) => p.push(&at.key("current_a"), "current must be between 0 and 1e6 A"),
            (None, Some(ph)) => {
                let nominal = ph.a;
                let all = [ph.a, ph.b.unwrap_or(nominal), ph.c.unwrap_or(nominal)];
                if all.iter().all(|v| ok(*v)) {
                    loads[ci] = CircuitLoad::PhasesA(all);
                } else {
                    p.push(&at.key("phases_a"), "phase currents must be between 0 and 1e6 A");
                }
            }
            _ => p.push(&at, "give either current_a or phases_a"),
        }
    }
    let points_doc = match (&doc.points_csv, doc.points.is_empty()) {
        (Some(_), false) => {
            p.push(&root, "give points or points_csv, not both");
            Vec::new()
        }
        (Some(text), true) => match parse_measurements(text) {
            Ok(v) => v,
            Err(errors) => {
                for e in errors {
                    p.push(&root.key("points_csv"), e);
                }
                Vec::new()
            }
        },
        (None, _) => doc.points.clone(),
    };
    let pp = if doc.points_csv.is_some() { root.key("points_csv") } else { root.key("points") };
    if points_doc.is_empty() && p.is_empty() {
        p.push(&pp, "a survey needs at least one measurement");
    }
    if points_doc.len() > MAX_POINTS {
        p.push(&pp, format!("at most {MAX_POINTS} measurements"));
    }
    let mut seen = HashSet::new();
    let mut points = Vec::new();
    for (i, m) in points_doc.iter().enumerate() {
        let at = if doc.points_csv.is_some() { pp.clone() } else { pp.index(i) };
        let row = |field: &str| if doc.points_csv.is_some() { at.clone() } else { at.key(field) };
        if m.id.trim().is_empty() || m.id.chars().count() > 64 {
            p.push(&row("id"), format!("measurement {}: id must be 1–64 characters", i + 1));
        } else if !seen.insert(m.id.clone()) {
            p.push(&row("id"), format!("duplicate measurement id '{}'", m.id));
        }
        for (d, x) in m.at.iter().enumerate() {
            check_coordinate(*x, &row("at").index(d), &mut p);
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
            let rss = axes.iter().map(|a| a * a).sum::<f64>().sqrt();
            if axes.iter().any(|a| !a.is_finite() || *a < 0.0) {
                p.push(&row("axes_ut"), "per-axis RMS values must be finite and not negative");
            } else if (rss - m.resultant_ut).abs() > 0.05 * m.resultant_ut.max(1e-9) {
                p.push(
                    &row("axes_ut"),
                    format!(
                        "measurement '{}': the axes give a resultant of {rss:.4} µT, not {} µT",
                        m.id, m.resultant_ut
                    ),
                );
            }
        }
        points.push(Measurement { id: m.id.clone(), at: point, measured_ut: m.resultant_ut, axes_ut: m.axes_ut });
    }
    p.into_result(Survey {
        name: doc.name.clone(),
        measured_at: doc.measured_at.clone(),
        meter_u: u / 100.0,
        model_u: mu / 100.0,
        loads,
        load_stated: stated,
        points,
        tables: doc.tables.clone(),
    })
}
