//! Cable formations: a circuit's cables laid in trefoil, flat touching or
//! flat spaced formation along a route, expanded into one conductor per
//! cable.
//!
//! # Where the cables lie
//!
//! The route is the formation's centre line: the centroid of each cable
//! set's cross-section, and of all sets together. On each route segment
//! (direction t, never vertical: within [`MIN_HORIZONTAL`] as a sine, the
//! side-by-side direction would be undefined) the cross-section's axes are
//! - *right*: horizontal, to the right looking along the route, t × ẑ
//!   normalised;
//! - *up*: the vertical made square to the route, ẑ − (ẑ·t) t normalised.
//!
//! Cable positions of one set (d the cable diameter), numbered as the
//! set's `phases` list them:
//! - `flat_touching`: in one horizontal row, left to right, axes d apart;
//! - `flat_spaced`: the same row with axes `spacing_m` apart;
//! - `trefoil` (apex up): bottom left (−d/2, −√3·d/6), apex (0, √3·d/3),
//!   bottom right (d/2, −√3·d/6) as (right, up) offsets from the centroid.
//!
//! Parallel sets lie side by side in the horizontal, left to right in the
//! order listed, their centres `set_spacing_m` apart. At a bend each cable
//! turns where its two offset lines meet ([`super::bar::offset_path`]).
//!
//! # Currents
//!
//! A phase's current divides equally over the cables that carry it (the
//! sets are taken as identical cables of equal length; unequal sharing from
//! the sets' different mutual impedances is not modelled).
//!
//! Each cable is a conductor `{id}-{set}-{position}` (both from 1) of
//! radius d/2; warnings point at the formation's `route`.

use super::model::{Conductor, Drive};
use super::problem::{Pointer, Problems};
use super::wire::{CircuitDoc, CircuitKind, ContinuesDoc, Phase, SiteDoc};
use nalgebra::{Point3, Vector3};
use serde::{Deserialize, Serialize};

/// How the cables of one set lie.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum Layout {
    /// Three cables touching at the corners of an equilateral triangle, apex up.
    Trefoil,
    /// Cables in a horizontal row, touching.
    FlatTouching,
    /// Cables in a horizontal row, `spacing_m` between axes.
    FlatSpaced,
}

/// A circuit's cables laid in a formation along a route.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct FormationDoc {
    /// Formation id, unique among formations (1–64 characters); the cables
    /// are conductors `{id}-{set}-{position}`.
    #[cfg_attr(feature = "schema", schema(min_length = 1, max_length = 64))]
    pub id: String,
    /// The circuit whose phase currents the cables carry.
    pub circuit: String,
    pub layout: Layout,
    /// The formation's centre line `[[x, y, z], …]`, m; current flows from
    /// first to last; no segment vertical.
    #[cfg_attr(feature = "schema", schema(schema_with = crate::site::wire::bounds::path_m))]
    pub route: Vec<[f64; 3]>,
    /// Outer diameter of each cable, m (0.2 mm to 4 m).
    #[cfg_attr(feature = "schema", schema(minimum = 0.0002, maximum = 4))]
    pub cable_diameter_m: f64,
    /// Distance between the axes of neighbouring cables, m: `flat_spaced`
    /// only, at least the diameter.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(minimum = 0.0002, maximum = 100))]
    pub spacing_m: Option<f64>,
    /// The parallel cable sets, each with its phase order (1–12 sets).
    #[cfg_attr(feature = "schema", schema(min_items = 1, max_items = 12))]
    pub sets: Vec<CableSetDoc>,
    /// Distance between the centres of neighbouring sets, m, side by side
    /// in the horizontal; needed with two or more sets.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(minimum = 0.0002, maximum = 100))]
    pub set_spacing_m: Option<f64>,
    /// Which ends of the route continue beyond the model.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub continues: Option<ContinuesDoc>,
}

/// One set of cables: the phase of each cable position, in the layout's
/// position order (what the what-if phase search re-orders).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct CableSetDoc {
    /// Phase per cable position: three for `trefoil`, two to four for the
    /// flat layouts, each phase once.
    #[cfg_attr(feature = "schema", schema(min_items = 2, max_items = 4))]
    pub phases: Vec<Phase>,
}

/// At most this many parallel sets per formation.
pub const MAX_SETS: usize = 12;
/// A route segment must rise at most this steeply (the sine of its angle
/// from the vertical must reach this, ≈ 5.7°).
pub const MIN_HORIZONTAL: f64 = 0.1;
/// Cable diameter bounds, m: twice the conductor radius bounds.
pub const DIAMETER_RANGE_M: (f64, f64) = (2.0 * super::RADIUS_RANGE_M.0, 2.0 * super::RADIUS_RANGE_M.1);
/// Spacing bounds (cables, sets), m.
pub const SPACING_RANGE_M: (f64, f64) = (DIAMETER_RANGE_M.0, 100.0);

/// The id of the cable at `position` of set `set` (both from 0).
pub fn cable_id(formation: &str, set: usize, position: usize) -> String {
    format!("{formation}-{}-{}", set + 1, position + 1)
}

/// (right, up) offsets of a set's cable positions from its centroid, m.
pub fn set_offsets(layout: Layout, diameter_m: f64, spacing_m: Option<f64>, count: usize) -> Vec<(f64, f64)> {
    let d = diameter_m;
    match layout {
        Layout::Trefoil => {
            let s3 = 3f64.sqrt();
            vec![(-d / 2.0, -s3 * d / 6.0), (0.0, s3 * d / 3.0), (d / 2.0, -s3 * d / 6.0)]
        }
        Layout::FlatTouching | Layout::FlatSpaced => {
            let pitch = if layout == Layout::FlatSpaced { spacing_m.unwrap_or(d) } else { d };
            (0..count).map(|k| ((k as f64 - (count as f64 - 1.0) / 2.0) * pitch, 0.0)).collect()
        }
    }
}

/// Horizontal extent of one set, m (for the sets' spacing check).
fn set_width_m(layout: Layout, diameter_m: f64, spacing_m: Option<f64>, count: usize) -> f64 {
    let offs = set_offsets(layout, diameter_m, spacing_m, count);
    let (lo, hi) = offs.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), o| (l.min(o.0), h.max(o.0)));
    hi - lo + diameter_m
}

/// Checks every formation and expands the valid ones into conductors.
/// `taken` are the ids of the listed conductors, which cables may not reuse.
pub(super) fn check_formations(
    docs: &[FormationDoc],
    at: &Pointer,
    circuits: &[CircuitDoc],
    taken: &[&str],
    p: &mut Problems,
) -> Vec<Conductor> {
    super::validate::check_ids(docs.iter().map(|f| f.id.as_str()), at, "formation", p);
    let out: Vec<Conductor> =
        docs.iter().enumerate().flat_map(|(i, f)| check_formation(f, &at.index(i), circuits, taken, p)).collect();
    long_generated_ids(&out, "formation", p);
    out
}

/// Generated conductor ids longer than any id may be (they appear in every
/// result): the problem is at the generating section's `id`.
pub(super) fn long_generated_ids(conductors: &[Conductor], what: &str, p: &mut Problems) {
    let mut seen = std::collections::BTreeSet::new();
    for c in conductors.iter().filter(|c| c.id.chars().count() > super::validate::MAX_ID_CHARS) {
        // The section's own pointer: `/formations/0` or `/overhead_lines/0`.
        let section: String = c.source.to_string().split('/').take(3).collect::<Vec<_>>().join("/");
        if seen.insert(section.clone()) {
            p.0.push(super::Problem {
                pointer: format!("{section}/id"),
                detail: format!(
                    "the {what}'s id is too long for the conductor ids made from it ('{}' has more than {} characters): shorten it",
                    c.id,
                    super::validate::MAX_ID_CHARS
                ),
            });
        }
    }
}

fn check_formation(
    f: &FormationDoc,
    at: &Pointer,
    circuits: &[CircuitDoc],
    taken: &[&str],
    p: &mut Problems,
) -> Vec<Conductor> {
    let before = p.len();
    let route = super::validate::check_path(&f.route, &at.key("route"), p);
    for (j, w) in route.windows(2).enumerate() {
        let Some(t) = (w[1] - w[0]).try_normalize(0.0) else { continue };
        if t.cross(&Vector3::z()).norm() < MIN_HORIZONTAL {
            p.push(
                &at.key("route").index(j + 1),
                format!("route segment {j} → {} is vertical: a formation lies along a route that runs across the ground (model a riser as conductors)", j + 1),
            );
        }
    }
    let circuit = circuits.iter().position(|c| c.id == f.circuit);
    if circuit.is_none() {
        p.push(&at.key("circuit"), format!("unknown circuit '{}'", f.circuit));
    }
    let d = f.cable_diameter_m;
    let (lo, hi) = DIAMETER_RANGE_M;
    if !(d.is_finite() && (lo..=hi).contains(&d)) {
        p.push(&at.key("cable_diameter_m"), format!("must be between {lo} and {hi} m"));
    }
    check_spacing(f, at, p);
    check_sets(f, at, circuit.map(|c| circuits[c].kind), p);
    for (j, set) in f.sets.iter().enumerate() {
        for k in 0..set.phases.len() {
            let id = cable_id(&f.id, j, k);
            if taken.contains(&id.as_str()) {
                p.push(&at.key("id"), format!("cable '{id}' of this formation has the id of a listed conductor"));
            }
        }
    }
    match circuit {
        Some(c) if p.len() == before => expand(f, &route, c, at),
        _ => Vec::new(),
    }
}

fn check_spacing(f: &FormationDoc, at: &Pointer, p: &mut Problems) {
    let (lo, hi) = SPACING_RANGE_M;
    let sp = at.key("spacing_m");
    match (f.layout, f.spacing_m) {
        (Layout::FlatSpaced, None) => p.push(&sp, "flat_spaced needs spacing_m, the distance between cable axes"),
        (Layout::FlatSpaced, Some(s)) if !(s.is_finite() && (lo..=hi).contains(&s)) => {
            p.push(&sp, format!("must be between {lo} and {hi} m"))
        }
        (Layout::FlatSpaced, Some(s)) if s < f.cable_diameter_m => {
            p.push(&sp, "spacing between cable axes is less than the cable diameter: the cables would overlap")
        }
        (Layout::Trefoil | Layout::FlatTouching, Some(_)) => {
            p.push(&sp, "spacing_m applies to flat_spaced only (these cables touch)")
        }
        _ => {}
    }
}

fn check_sets(f: &FormationDoc, at: &Pointer, kind: Option<CircuitKind>, p: &mut Problems) {
    let sp = at.key("sets");
    if f.sets.is_empty() || f.sets.len() > MAX_SETS {
        p.push(&sp, format!("give between 1 and {MAX_SETS} cable sets"));
    }
    for (j, set) in f.sets.iter().enumerate() {
        let pp = sp.index(j).key("phases");
        let n = set.phases.len();
        match f.layout {
            Layout::Trefoil if n != 3 => p.push(&pp, "a trefoil set has three cables: give three phases"),
            Layout::FlatTouching | Layout::FlatSpaced if !(2..=4).contains(&n) => {
                p.push(&pp, "a flat set has two to four cables: give two to four phases")
            }
            _ => {}
        }
        for (k, ph) in set.phases.iter().enumerate() {
            if set.phases[..k].contains(ph) {
                p.push(&pp.index(k), format!("phase {ph:?} is listed twice in this set"));
            }
            if kind == Some(CircuitKind::SinglePhase) && matches!(ph, Phase::B | Phase::C) {
                p.push(&pp.index(k), format!("circuit '{}' is single-phase: use phase A or N", f.circuit));
            }
        }
    }
    let sets = at.key("set_spacing_m");
    let (lo, hi) = SPACING_RANGE_M;
    match f.set_spacing_m {
        None if f.sets.len() > 1 => {
            p.push(&sets, "two or more sets need set_spacing_m, the distance between the sets' centres")
        }
        Some(s) if !(s.is_finite() && (lo..=hi).contains(&s)) => {
            p.push(&sets, format!("must be between {lo} and {hi} m"))
        }
        Some(s) if f.sets.len() > 1 => {
            let widest = f
                .sets
                .iter()
                .map(|set| set_width_m(f.layout, f.cable_diameter_m, f.spacing_m, set.phases.len()))
                .fold(0.0, f64::max);
            if s < widest {
                p.push(&sets, format!("sets {s} m apart overlap: each is {widest} m wide"));
            }
        }
        _ => {}
    }
}

/// The cables of a checked formation.
fn expand(f: &FormationDoc, route: &[Point3<f64>], circuit: usize, at: &Pointer) -> Vec<Conductor> {
    let frames: Vec<(Vector3<f64>, Vector3<f64>)> = route
        .windows(2)
        .map(|w| {
            let t = (w[1] - w[0]).normalize();
            let right = t.cross(&Vector3::z()).normalize();
            let up = (Vector3::z() - t.z * t).normalize();
            (right, up)
        })
        .collect();
    let count_of = |ph: Phase| f.sets.iter().filter(|s| s.phases.contains(&ph)).count() as f64;
    let sets = f.sets.len() as f64;
    let mut out = Vec::new();
    for (j, set) in f.sets.iter().enumerate() {
        let centre = (j as f64 - (sets - 1.0) / 2.0) * f.set_spacing_m.unwrap_or(0.0);
        let offsets = set_offsets(f.layout, f.cable_diameter_m, f.spacing_m, set.phases.len());
        for (k, (&phase, (a, b))) in set.phases.iter().zip(offsets).enumerate() {
            out.push(Conductor {
                id: cable_id(&f.id, j, k),
                path: super::bar::offset_path(route, &frames, centre + a, b),
                radius_m: f.cable_diameter_m / 2.0,
                drive: Drive::Phase { circuit, phase, share: 1.0 / count_of(phase) },
                continues: f.continues.map_or([false; 2], |c| [c.start, c.end]),
                source: at.clone(),
                vertices_key: "route",
                cell: None,
            });
        }
    }
    out
}

/// Sets the phase of formation cable `conductor_id` in its set's phase
/// order; false if no formation has that cable.
pub(super) fn rephase(doc: &mut SiteDoc, conductor_id: &str, phase: Phase) -> bool {
    for f in &mut doc.formations {
        for j in 0..f.sets.len() {
            for k in 0..f.sets[j].phases.len() {
                if cable_id(&f.id, j, k) == conductor_id {
                    f.sets[j].phases[k] = phase;
                    return true;
                }
            }
        }
    }
    false
}
