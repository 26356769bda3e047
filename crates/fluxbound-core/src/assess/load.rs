//! Load cases: which currents an assessment uses.

use crate::site::{CircuitLoad, Pointer, Problems, Site};
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

    /// Per-circuit loads for `site`. `at` is where the load case sits in the
    /// request, for pointers; a rated case without a rated current points at
    /// the circuit in the site.
    pub fn resolve(&self, site: &Site, at: &Pointer) -> Result<Vec<CircuitLoad>, Problems> {
        let mut p = Problems::default();
        let index = |id: &str| site.circuits.iter().position(|c| c.id == id);
        let mut loads = vec![CircuitLoad::PRESENT; site.circuits.len()];
        match self {
            LoadCase::Present => {}
            LoadCase::Rated => {
                for (i, c) in site.circuits.iter().enumerate() {
                    match c.rated_current_a {
                        Some(r) => loads[i] = CircuitLoad::CurrentA(r),
                        None => p.push(
                            &Pointer::root().key("circuits").index(i).key("rated_current_a"),
                            format!("the rated load case needs rated_current_a for circuit '{}'", c.id),
                        ),
                    }
                }
            }
            LoadCase::Currents { currents_a } => {
                for (id, a) in currents_a {
                    let ap = at.key("currents_a").key(id);
                    match index(id) {
                        None => p.push(&ap, format!("unknown circuit '{id}'")),
                        Some(_) if !(a.is_finite() && (0.0..=crate::site::CURRENT_LIMIT_A).contains(a)) => {
                            p.push(&ap, "current must be between 0 and 1e6 A")
                        }
                        Some(i) => loads[i] = CircuitLoad::CurrentA(*a),
                    }
                }
            }
            LoadCase::Scale { factors } => {
                for (id, f) in factors {
                    let fp = at.key("factors").key(id);
                    match index(id) {
                        None => p.push(&fp, format!("unknown circuit '{id}'")),
                        Some(_) if !(f.is_finite() && (0.0..=100.0).contains(f)) => {
                            p.push(&fp, "scale factor must be between 0 and 100")
                        }
                        Some(i) => loads[i] = CircuitLoad::Scale(*f),
                    }
                }
            }
        }
        p.into_result(loads)
    }
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
            .circuits
            .iter()
            .zip(loads)
            .map(|(c, l)| CircuitLoadReport {
                id: c.id.clone(),
                present_a: c.current_a,
                assessed_a: c.nominal_current_a(*l),
            })
            .collect(),
    }
}
