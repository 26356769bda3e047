//! Load cases: which currents an assessment uses.

use crate::site::wire::{CircuitKind, Phase};
use crate::site::{Circuit, CircuitLoad, Pointer, Problems, Site};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The currents an assessment is made at.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum LoadCase {
    /// Each circuit's `current_a` (the currents of the day).
    #[default]
    Present,
    /// Each circuit's `rated_current_a` (full load, the usual worst case).
    Rated,
    /// Explicit nominal RMS phase currents by circuit id, A; circuits not
    /// listed stay at their present current.
    // The kind and the map, nothing else (unknown keys are rejected).
    #[cfg_attr(feature = "schema", schema(max_properties = 2))]
    Currents { currents_a: BTreeMap<String, f64> },
    /// Factors on the present currents by circuit id; circuits not listed
    /// stay at 1.
    // The kind and the map, nothing else (unknown keys are rejected).
    #[cfg_attr(feature = "schema", schema(max_properties = 2))]
    Scale { factors: BTreeMap<String, f64> },
}

impl LoadCase {
    pub fn name(&self) -> &'static str {
        match self {
            LoadCase::Present => "present",
            LoadCase::Rated => "rated",
            LoadCase::Currents { .. } => "currents",
            LoadCase::Scale { .. } => "scale",
        }
    }

    /// Per-circuit loads for `site`, or every problem: those of the load
    /// case itself (an unknown circuit, a bad current) and those of the site
    /// (a rated case without a rated current).
    pub fn resolve(&self, site: &Site) -> Result<Vec<CircuitLoad>, LoadError> {
        let mut loads = vec![CircuitLoad::PRESENT; site.circuits().len()];
        let mut err = LoadError::default();
        match self {
            LoadCase::Present => {}
            LoadCase::Rated => err.in_site = rated_loads(site, &mut loads),
            LoadCase::Currents { currents_a } => {
                err.in_load = by_circuit(site, currents_a, "currents_a", &mut loads, |a| {
                    (a.is_finite() && (0.0..=crate::site::CURRENT_LIMIT_A).contains(&a))
                        .then_some(CircuitLoad::CurrentA(a))
                        .ok_or("current must be between 0 and 1e6 A")
                })
            }
            LoadCase::Scale { factors } => {
                err.in_load = by_circuit(site, factors, "factors", &mut loads, |f| {
                    (f.is_finite() && (0.0..=100.0).contains(&f))
                        .then_some(CircuitLoad::Scale(f))
                        .ok_or("scale factor must be between 0 and 100")
                })
            }
        }
        if err.is_empty() { Ok(loads) } else { Err(err) }
    }
}

/// Problems of a load case against a site, kept apart by whose input they
/// belong to, so each edge can address them (HTTP: `/load/…` in the request
/// body; CLI: the `--load` flag).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct LoadError {
    /// Pointers relative to the load case (`/currents_a/T9`).
    pub in_load: Problems,
    /// Pointers into the site (`/circuits/1/rated_current_a`).
    pub in_site: Problems,
}

impl LoadError {
    pub fn is_empty(&self) -> bool {
        self.in_load.is_empty() && self.in_site.is_empty()
    }
    /// Every problem, those of the load case under `load_at`.
    pub fn into_problems(self, load_at: &str) -> Problems {
        let mut all = crate::usecase::under(load_at, self.in_load);
        all.0.extend(self.in_site.0);
        all
    }
}

/// Rated currents of every circuit; a circuit without one is a problem at
/// its `rated_current_a` in the site.
fn rated_loads(site: &Site, loads: &mut [CircuitLoad]) -> Problems {
    let mut p = Problems::default();
    for (i, c) in site.circuits().iter().enumerate() {
        match c.rated_current_a {
            Some(r) => loads[i] = CircuitLoad::CurrentA(r),
            None => p.push(
                &Pointer::root().key("circuits").index(i).key("rated_current_a"),
                format!("the rated load case needs rated_current_a for circuit '{}'", c.id),
            ),
        }
    }
    p
}

/// Loads given per circuit id under `key`; `check` turns a value into a
/// load or says why it cannot be one.
fn by_circuit(
    site: &Site,
    values: &BTreeMap<String, f64>,
    key: &str,
    loads: &mut [CircuitLoad],
    check: impl Fn(f64) -> Result<CircuitLoad, &'static str>,
) -> Problems {
    let mut p = Problems::default();
    for (id, v) in values {
        let at = Pointer::root().key(key).key(id);
        match (site.circuits().iter().position(|c| &c.id == id), check(*v)) {
            (None, _) => p.push(&at, format!("unknown circuit '{id}'")),
            (Some(_), Err(why)) => p.push(&at, why),
            (Some(i), Ok(load)) => loads[i] = load,
        }
    }
    p
}

/// What a load case came to, per circuit, for the report.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct CircuitLoadReport {
    /// Circuit id.
    pub id: String,
    /// Present nominal RMS phase current, A.
    pub present_a: f64,
    /// Nominal RMS phase current assessed, A.
    pub assessed_a: f64,
    /// Every line phase's fundamental RMS current as assessed (per-phase
    /// overrides included): A, B, C for a three-phase circuit, A alone for
    /// a single-phase one.
    #[serde(default)]
    pub phases: Vec<PhaseLoadReport>,
}

/// One line phase's assessed fundamental current.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct PhaseLoadReport {
    /// The phase.
    pub phase: Phase,
    /// Fundamental RMS current, A.
    pub current_a: f64,
    /// Fundamental phase angle, degrees.
    pub angle_deg: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct LoadCaseReport {
    /// The load case: present, rated, currents or scale.
    #[cfg_attr(feature = "schema", schema(value_type = String, pattern = "^(present|rated|currents|scale)$"))]
    pub kind: String,
    /// Per circuit, the present and assessed currents.
    pub circuits: Vec<CircuitLoadReport>,
}

pub(crate) fn report(case: &LoadCase, site: &Site, loads: &[CircuitLoad]) -> LoadCaseReport {
    LoadCaseReport {
        kind: case.name().to_string(),
        circuits: site
            .circuits()
            .iter()
            .zip(loads)
            .map(|(c, l)| CircuitLoadReport {
                id: c.id.clone(),
                present_a: c.current_a,
                assessed_a: c.nominal_current_a(*l),
                phases: phase_loads(c, *l),
            })
            .collect(),
    }
}

/// The line phases of `c` at `load`, fundamental only.
fn phase_loads(c: &Circuit, load: CircuitLoad) -> Vec<PhaseLoadReport> {
    let lines: &[Phase] = match c.kind {
        CircuitKind::ThreePhase => &[Phase::A, Phase::B, Phase::C],
        CircuitKind::SinglePhase => &[Phase::A],
    };
    lines
        .iter()
        .filter_map(|&phase| {
            let (current_a, angle_deg) = c.line_fundamental_a(phase, load)?;
            Some(PhaseLoadReport { phase, current_a, angle_deg })
        })
        .collect()
}

impl LoadCaseReport {
    /// Each circuit's assessed phase currents in words:
    /// `LV-main: A 1400 A, B 1400 A, C 1250 A`.
    pub fn phase_lines(&self) -> Vec<String> {
        self.circuits
            .iter()
            .map(|c| {
                let phases: Vec<String> =
                    c.phases.iter().map(|p| format!("{:?} {} A", p.phase, round_a(p.current_a))).collect();
                format!("{}: {}", c.id, phases.join(", "))
            })
            .collect()
    }
}

/// A current rounded to 0.1 A for reading (the JSON keeps full precision).
fn round_a(v: f64) -> f64 {
    (v * 10.0).round() / 10.0
}
