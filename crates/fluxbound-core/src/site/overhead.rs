//! Overhead lines as they appear on a line profile: structures with their
//! attachment heights, the phases carried, the conductor and its bundle,
//! and the sag. Each line expands, during validation, into ordinary
//! conductors: one per span, phase position and sub-conductor, following
//! the catenary of each span in chords ([`catenary`] states the curve, the
//! chord rule and the bound of the chords' under-estimate).
//!
//! # What to enter
//!
//! - `structures`, in order along the line: the plan position `[x, y]`
//!   (m, ground at z = 0), the attachment height above ground of each phase
//!   position (`heights_m`, one per entry of the line's `phases`), and
//!   optionally the horizontal offset of each phase position from the
//!   structure's axis (`offsets_m`, perpendicular to the line, positive to
//!   the left looking from the first structure towards the last; at an
//!   angle structure along the bisector of the two spans, as a cross-arm
//!   is set).
//! - `phases`: the circuit and phase carried at each position.
//! - `radius_m` of one conductor, and a `bundle` of 1 to 4 sub-conductors
//!   `spacing_m` apart (2: side by side; 3: a triangle, apex up; 4: a
//!   square), centred on the attachment point, each carrying an equal
//!   share of the phase current.
//! - Either `sag_m` with `sag_temperature_c`, the same sag in every span,
//!   or `catenary_m` (C = H/w, horizontal tension over weight per metre),
//!   the same in every span, so longer spans sag more. The sag is the
//!   largest vertical distance between the chord joining the two
//!   attachments and the conductor (at mid-span for equal heights).
//!
//! **The sag to enter is the one at the conductor temperature of the load
//! case assessed**: a hotter conductor is longer and hangs lower, nearer
//! the people below. For the rated load enter the sag at the maximum
//! operating temperature, which is the larger sag and the conservative
//! one. The assessment record repeats the sag and its temperature.
//!
//! # What it becomes
//!
//! Conductor `{line}-p{k}-s{j}` (with `-b{m}` for each sub-conductor of a
//! bundle) is phase position `k` (index into `phases`) over span `j`, from
//! structure `j` to structure `j + 1`; indices count from 0 as in the JSON
//! pointers. The spans of one position meet at the attachments, so only
//! the line's two ends can be open (`continues` marks them, as on a
//! conductor). The ground clearance is the lowest conductor height above
//! ground in a span; it sets the chord length (a different quantity from
//! the clearance distance of the what-if moves).

mod catenary;

pub use catenary::{
    CHORD_ERROR_BOUND, CHORD_PER_GROUND_CLEARANCE, Catenary, ChordChoice, MAX_CHORDS_PER_SPAN, MIN_CHORDS_PER_SPAN,
    chords_for,
};

use super::model::{Conductor, Drive};
use super::problem::{Pointer, Problems};
use super::validate::{RADIUS_RANGE_M, check_coordinate, check_ids, check_range};
use super::wire::{CircuitDoc, CircuitKind, ContinuesDoc, Phase, SiteDoc};
use nalgebra::{Point3, Vector2};
use serde::{Deserialize, Serialize};
use std::collections::HashSet;

/// Most structures on one line.
pub const MAX_STRUCTURES: usize = 500;
/// Most phase positions on one line (four three-phase circuits).
pub const MAX_PHASE_POSITIONS: usize = 12;
/// Most sub-conductors in a bundle.
pub const MAX_BUNDLE: u32 = 4;
/// Largest bundle spacing, m (real bundles: 0.3–0.6 m).
pub const MAX_BUNDLE_SPACING_M: f64 = 2.0;
/// Shortest span accepted, m: anything shorter is a repeated structure.
pub const MIN_SPAN_M: f64 = 1.0;
/// Most segments all lines of a site may expand into together (24 MB of
/// vertices): past it the document is refused before the memory is spent,
/// whatever the service's own bounds (which count the expanded site).
pub const MAX_GENERATED_SEGMENTS: usize = 1_000_000;
/// Conductor temperatures a sag may be stated at, °C.
pub const SAG_TEMPERATURE_RANGE_C: (f64, f64) = (-50.0, 250.0);

/// An overhead line: structures, phases, conductor, bundle and sag.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct OverheadLineDoc {
    /// Line id, unique among the lines (1–64 characters); the ids of its
    /// conductors start with it.
    #[cfg_attr(feature = "schema", schema(min_length = 1, max_length = 64))]
    pub id: String,
    /// The circuit and phase carried at each phase position (1–12), in the
    /// order of every structure's `heights_m` and `offsets_m`.
    #[cfg_attr(feature = "schema", schema(min_items = 1, max_items = 12))]
    pub phases: Vec<LinePhaseDoc>,
    /// Structures in order along the line (2–500).
    #[cfg_attr(feature = "schema", schema(min_items = 2, max_items = 500))]
    pub structures: Vec<StructureDoc>,
    /// Radius of one conductor (one sub-conductor of a bundle), m.
    #[cfg_attr(feature = "schema", schema(minimum = 0.0001, maximum = 2))]
    pub radius_m: f64,
    /// Sub-conductors per phase (default: a single conductor).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub bundle: Option<BundleDoc>,
    /// Sag of every span, m: the largest vertical distance between the
    /// chord joining the attachments and the conductor, at the conductor
    /// temperature of the load case assessed (rated load: at maximum
    /// operating temperature). Not with `catenary_m`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(exclusive_minimum = 0))]
    pub sag_m: Option<f64>,
    /// Conductor temperature at which `sag_m` holds, °C (−50 to 250;
    /// required with `sag_m`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(minimum = -50, maximum = 250))]
    pub sag_temperature_c: Option<f64>,
    /// Catenary parameter C = H/w of every span, m (horizontal tension
    /// over weight per metre). Not with `sag_m`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(exclusive_minimum = 0))]
    pub catenary_m: Option<f64>,
    /// Ends of the line where it continues beyond the model.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub continues: Option<ContinuesDoc>,
}

/// What one phase position of a line carries.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct LinePhaseDoc {
    /// Circuit id.
    pub circuit: String,
    /// Phase of the circuit at this position.
    pub phase: Phase,
}

/// One structure (tower, pole) of a line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct StructureDoc {
    /// Plan position `[x, y]` of the structure's axis, m.
    #[cfg_attr(feature = "schema", schema(schema_with = plan_point_m))]
    pub at: [f64; 2],
    /// Attachment height above ground of each phase position, m.
    pub heights_m: Vec<f64>,
    /// Horizontal offset of each phase position from the axis,
    /// perpendicular to the line, m; positive to the left looking along
    /// the line (default 0 for every position).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub offsets_m: Option<Vec<f64>>,
}

/// Sub-conductors sharing one phase's current.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct BundleDoc {
    /// Sub-conductors per phase (1–4).
    #[cfg_attr(feature = "schema", schema(minimum = 1, maximum = 4))]
    pub count: u32,
    /// Distance between neighbouring sub-conductors, m (more than two
    /// radii, at most 2).
    #[cfg_attr(feature = "schema", schema(exclusive_minimum = 0, maximum = 2))]
    pub spacing_m: f64,
}

#[cfg(feature = "schema")]
fn plan_point_m() -> utoipa::openapi::schema::Array {
    use super::validate::COORDINATE_LIMIT_M;
    use utoipa::openapi::schema::{ArrayBuilder, ObjectBuilder, Type};
    let coordinate = ObjectBuilder::new()
        .schema_type(Type::Number)
        .minimum(Some(-COORDINATE_LIMIT_M))
        .maximum(Some(COORDINATE_LIMIT_M));
    ArrayBuilder::new()
        .items(coordinate)
        .min_items(Some(2))
        .max_items(Some(2))
        .description(Some("Plan position `[x, y]`, m."))
        .build()
}

/// Checks the document's overhead lines and returns `conductors` followed
/// by the conductors they expand into; problems point at the lines'
/// fields, and each expanded line leaves a note saying how it was cut.
pub(super) fn expand_lines(
    doc: &SiteDoc,
    mut conductors: Vec<Conductor>,
    p: &mut Problems,
    notes: &mut Problems,
) -> Vec<Conductor> {
    let at = Pointer::root().key("overhead_lines");
    check_ids(doc.overhead_lines.iter().map(|l| l.id.as_str()), &at, "overhead line", p);
    let mut taken: HashSet<String> = doc.conductors.iter().map(|c| c.id.clone()).collect();
    let mut budget = MAX_GENERATED_SEGMENTS;
    for (i, line) in doc.overhead_lines.iter().enumerate() {
        let lp = at.index(i);
        let before = p.len();
        let Some(checked) = check_line(line, &lp, &doc.circuits, p) else { continue };
        if p.len() > before {
            continue;
        }
        let Some(expanded) = expand(line, &checked, &lp, &mut budget, p) else { continue };
        if let Some(long) = expanded.conductors.iter().find(|c| c.id.chars().count() > super::validate::MAX_ID_CHARS) {
            p.push(
                &lp.key("id"),
                format!(
                    "the line's id is too long for the conductor ids made from it ('{}' has more than {} characters): shorten it",
                    long.id,
                    super::validate::MAX_ID_CHARS
                ),
            );
            continue;
        }
        if let Some(clash) = expanded.conductors.iter().find(|c| !taken.insert(c.id.clone())) {
            p.push(
                &lp.key("id"),
                format!(
                    "line '{}' generates conductor id '{}', which is already used: rename the line",
                    line.id, clash.id
                ),
            );
            continue;
        }
        notes.push(&lp, expanded.note(line));
        conductors.extend(expanded.conductors);
    }
    conductors
}

/// The parts of a line the expansion needs, once every field is checked.
struct CheckedLine {
    /// Circuit index of each phase position.
    circuits: Vec<usize>,
    /// Sub-conductor offsets in a span's cross-section: (horizontal, to
    /// the left; vertical, up), m.
    bundle: Vec<(f64, f64)>,
}

fn check_line(line: &OverheadLineDoc, lp: &Pointer, circuits: &[CircuitDoc], p: &mut Problems) -> Option<CheckedLine> {
    let positions = check_phases(line, lp, circuits, p)?;
    let rp = lp.key("radius_m");
    if line.radius_m.is_finite() && line.radius_m <= 0.0 {
        p.push(&rp, "radius must be positive");
    } else {
        check_range(line.radius_m, RADIUS_RANGE_M, "m", &rp, p);
    }
    let bundle = check_bundle(line, lp, p);
    check_sag(line, lp, p);
    check_structures(line, lp, &bundle, p);
    Some(CheckedLine { circuits: positions, bundle })
}

/// The phases: known circuits, phases the circuit has, each circuit phase
/// at one position only. `None` if the list itself is unusable.
fn check_phases(line: &OverheadLineDoc, lp: &Pointer, circuits: &[CircuitDoc], p: &mut Problems) -> Option<Vec<usize>> {
    let pp = lp.key("phases");
    if line.phases.is_empty() || line.phases.len() > MAX_PHASE_POSITIONS {
        p.push(&pp, format!("a line carries 1 to {MAX_PHASE_POSITIONS} phase positions"));
        return None;
    }
    let mut seen: Vec<(&str, Phase, usize)> = Vec::new();
    let mut out = Vec::new();
    for (k, ph) in line.phases.iter().enumerate() {
        let kp = pp.index(k);
        let Some(ci) = circuits.iter().position(|c| c.id == ph.circuit) else {
            p.push(&kp.key("circuit"), format!("unknown circuit '{}'", ph.circuit));
            out.push(0);
            continue;
        };
        if circuits[ci].kind == CircuitKind::SinglePhase && matches!(ph.phase, Phase::B | Phase::C) {
            p.push(&kp.key("phase"), format!("circuit '{}' is single-phase: use phase A or N", ph.circuit));
        }
        if let Some(&(_, _, first)) = seen.iter().find(|s| s.0 == ph.circuit && s.1 == ph.phase) {
            p.push(
                &kp,
                format!(
                    "phase {:?} of circuit '{}' is already carried at position {first}: a phase hangs at one position (parallel conductors are a bundle)",
                    ph.phase, ph.circuit
                ),
            );
        }
        seen.push((ph.circuit.as_str(), ph.phase, k));
        out.push(ci);
    }
    Some(out)
}

/// Sub-conductor offsets in the span's cross-section, centred on the
/// attachment: 2 side by side, 3 a triangle with its apex up, 4 a square.
fn check_bundle(line: &OverheadLineDoc, lp: &Pointer, p: &mut Problems) -> Vec<(f64, f64)> {
    let Some(b) = line.bundle else { return vec![(0.0, 0.0)] };
    let bp = lp.key("bundle");
    if !(1..=MAX_BUNDLE).contains(&b.count) {
        p.push(&bp.key("count"), format!("a bundle has 1 to {MAX_BUNDLE} sub-conductors"));
        return vec![(0.0, 0.0)];
    }
    let s = b.spacing_m;
    let sp = bp.key("spacing_m");
    if !s.is_finite() {
        p.push(&sp, "must be a finite number");
    } else if b.count > 1 && (s <= 2.0 * line.radius_m || s > MAX_BUNDLE_SPACING_M) {
        p.push(
            &sp,
            format!("bundle spacing must be more than two conductor radii and at most {MAX_BUNDLE_SPACING_M} m"),
        );
    }
    let h = s / 2.0;
    let r3 = s / 3f64.sqrt();
    match b.count {
        2 => vec![(-h, 0.0), (h, 0.0)],
        3 => [90.0f64, 210.0, 330.0].iter().map(|a| (r3 * a.to_radians().cos(), r3 * a.to_radians().sin())).collect(),
        4 => vec![(-h, -h), (h, -h), (h, h), (-h, h)],
        _ => vec![(0.0, 0.0)],
    }
}

fn check_sag(line: &OverheadLineDoc, lp: &Pointer, p: &mut Problems) {
    match (line.sag_m, line.catenary_m) {
        (Some(_), Some(_)) => p.push(lp, "give either sag_m (with sag_temperature_c) or catenary_m, not both"),
        (None, None) => p.push(
            lp,
            "give the sag (sag_m, at the conductor temperature of the load case, with sag_temperature_c) or the catenary parameter catenary_m",
        ),
        (Some(s), None) => {
            if !(s.is_finite() && s > 0.0) {
                p.push(&lp.key("sag_m"), "sag must be a positive number of metres");
            }
            match line.sag_temperature_c {
                None => p.push(
                    &lp.key("sag_temperature_c"),
                    "state the conductor temperature of the sag (for rated load: the maximum operating temperature)",
                ),
                Some(t) => {
                    check_range(t, SAG_TEMPERATURE_RANGE_C, "°C", &lp.key("sag_temperature_c"), p);
                }
            }
        }
        (None, Some(c)) => {
            if !(c.is_finite() && c > 0.0) {
                p.push(&lp.key("catenary_m"), "the catenary parameter must be a positive number of metres");
            }
            if let Some(t) = line.sag_temperature_c {
                check_range(t, SAG_TEMPERATURE_RANGE_C, "°C", &lp.key("sag_temperature_c"), p);
            }
        }
    }
}

fn check_structures(line: &OverheadLineDoc, lp: &Pointer, bundle: &[(f64, f64)], p: &mut Problems) {
    let sp = lp.key("structures");
    let n = line.phases.len();
    if line.structures.len() < 2 || line.structures.len() > MAX_STRUCTURES {
        p.push(&sp, format!("a line needs 2 to {MAX_STRUCTURES} structures, in order along it"));
        return;
    }
    // Two attachments closer than this would put conductors into each other.
    let bundle_reach = bundle.iter().map(|(a, b)| a.hypot(*b)).fold(0.0, f64::max);
    let apart_m = 2.0 * (bundle_reach + line.radius_m);
    for (j, s) in line.structures.iter().enumerate() {
        let at = sp.index(j);
        check_coordinate(s.at[0], &at.key("at").index(0), p);
        check_coordinate(s.at[1], &at.key("at").index(1), p);
        let hp = at.key("heights_m");
        if s.heights_m.len() != n {
            p.push(&hp, format!("give one attachment height per phase position ({n})"));
            continue;
        }
        for (k, h) in s.heights_m.iter().enumerate() {
            if h.is_finite() && *h <= 0.0 {
                p.push(&hp.index(k), "an attachment height is above ground (positive)");
            } else {
                check_coordinate(*h, &hp.index(k), p);
            }
        }
        let offsets = match &s.offsets_m {
            Some(o) if o.len() != n => {
                p.push(&at.key("offsets_m"), format!("give one offset per phase position ({n})"));
                continue;
            }
            Some(o) => {
                for (k, x) in o.iter().enumerate() {
                    check_coordinate(*x, &at.key("offsets_m").index(k), p);
                }
                o.clone()
            }
            None => vec![0.0; n],
        };
        for k in 0..n {
            for m in 0..k {
                let d = (offsets[k] - offsets[m]).hypot(s.heights_m[k] - s.heights_m[m]);
                if d < apart_m {
                    p.push(
                        &hp.index(k),
                        format!("phase positions {m} and {k} are {d:.3} m apart: their conductors would touch"),
                    );
                }
            }
        }
    }
    for j in 1..line.structures.len() {
        let (a, b) = (line.structures[j - 1].at, line.structures[j].at);
        if (b[0] - a[0]).hypot(b[1] - a[1]) < MIN_SPAN_M {
            p.push(&sp.index(j).key("at"), format!("span from structure {} is shorter than {MIN_SPAN_M} m", j - 1));
        }
    }
    for j in 1..line.structures.len() - 1 {
        let [a, b, c] = [j - 1, j, j + 1].map(|k| plan(line.structures[k].at));
        if let (Some(u), Some(v)) = ((b - a).try_normalize(0.0), (c - b).try_normalize(0.0))
            && (u + v).norm() < 1e-6
        {
            p.push(&sp.index(j).key("at"), format!("the line turns back on itself at structure {j}"));
        }
    }
}

fn plan(at: [f64; 2]) -> Vector2<f64> {
    Vector2::new(at[0], at[1])
}

/// A line expanded into conductors, with what the record says about it.
struct Expanded {
    conductors: Vec<Conductor>,
    chords: (usize, usize),
    longest_chord_m: f64,
    ground_clearance_m: f64,
    error_bound: f64,
}

impl Expanded {
    fn note(&self, line: &OverheadLineDoc) -> String {
        let spans = line.structures.len() - 1;
        let (lo, hi) = self.chords;
        let chords = if lo == hi { format!("{lo}") } else { format!("{lo} to {hi}") };
        let sag = match (line.sag_m, line.sag_temperature_c, line.catenary_m) {
            (Some(s), Some(t), _) => format!("sag {s} m at a conductor temperature of {t} °C"),
            (_, t, Some(c)) => {
                let at = t.map(|t| format!(" at a conductor temperature of {t} °C")).unwrap_or_default();
                format!("catenary parameter {c} m{at}")
            }
            _ => String::new(),
        };
        format!(
            "overhead line '{}': {spans} span(s) expanded into {} conductors, each span cut into {chords} chords (at least {MIN_CHORDS_PER_SPAN}, none longer than ¼ of the ground clearance; longest {:.2} m); ground clearance (lowest conductor above ground) {:.2} m; the chords under-estimate each conductor's field by at most {:.3} % at points up to half the ground clearance above ground; {sag}: the sag must be the one at the conductor temperature of the load case assessed (for rated load, at the maximum operating temperature)",
            line.id,
            self.conductors.len(),
            self.longest_chord_m,
            self.ground_clearance_m,
            self.error_bound * 100.0,
        )
    }
}

/// One phase position's attachment at one structure: plan point, height.
type Attachment = (Vector2<f64>, f64);

/// Expands a checked line; problems (a sag the span cannot take, a
/// conductor reaching the ground) point at the sag or the structure.
fn expand(
    line: &OverheadLineDoc,
    checked: &CheckedLine,
    lp: &Pointer,
    budget: &mut usize,
    p: &mut Problems,
) -> Option<Expanded> {
    let normals = structure_normals(line);
    let attach: Vec<Vec<Attachment>> = line
        .structures
        .iter()
        .zip(&normals)
        .map(|(s, n)| {
            (0..line.phases.len())
                .map(|k| {
                    let off = s.offsets_m.as_ref().map_or(0.0, |o| o[k]);
                    (plan(s.at) + n * off, s.heights_m[k])
                })
                .collect()
        })
        .collect();
    let lowest_sub = checked.bundle.iter().map(|b| b.1).fold(0.0, f64::min);
    let share = 1.0 / checked.bundle.len() as f64;
    let cont = line.continues.unwrap_or_default();
    let spans = line.structures.len() - 1;
    let mut out = Expanded {
        conductors: Vec::new(),
        chords: (usize::MAX, 0),
        longest_chord_m: 0.0,
        ground_clearance_m: f64::INFINITY,
        error_bound: 0.0,
    };
    for j in 0..spans {
        let curves = span_curves(line, &attach[j], &attach[j + 1], j, lp, p)?;
        let clearance = curves.iter().map(|k| k.lowest_m()).fold(f64::INFINITY, f64::min) + lowest_sub - line.radius_m;
        if clearance <= 0.0 {
            let what = if line.sag_m.is_some() { "sag_m" } else { "catenary_m" };
            p.push(
                &lp.key(what),
                format!("in span {j} a conductor would reach the ground: reduce the sag or raise the attachments"),
            );
            return None;
        }
        let Some(choice) = chords_for(&curves, clearance) else {
            p.push(
                &lp.key("structures").index(j + 1),
                format!("span {j} is too long for its ground clearance of {clearance:.2} m (more than {MAX_CHORDS_PER_SPAN} chords needed)"),
            );
            return None;
        };
        let segments = choice.count * curves.len() * checked.bundle.len();
        if segments > *budget {
            p.push(
                lp,
                format!("the overhead lines would expand into more than {MAX_GENERATED_SEGMENTS} segments (at span {j} of this one): split the site"),
            );
            return None;
        }
        *budget -= segments;
        out.chords = (out.chords.0.min(choice.count), out.chords.1.max(choice.count));
        out.longest_chord_m = out.longest_chord_m.max(choice.longest_m);
        out.ground_clearance_m = out.ground_clearance_m.min(clearance);
        out.error_bound = out.error_bound.max(choice.error_bound);
        for (k, curve) in curves.iter().enumerate() {
            let ends = (attach[j][k], attach[j + 1][k]);
            let drive = Drive::Phase { circuit: checked.circuits[k], phase: line.phases[k].phase, share };
            for (m, sub) in checked.bundle.iter().enumerate() {
                let id = if checked.bundle.len() == 1 {
                    format!("{}-p{k}-s{j}", line.id)
                } else {
                    format!("{}-p{k}-s{j}-b{m}", line.id)
                };
                out.conductors.push(Conductor {
                    id,
                    path: sub_path(curve, ends, (normals[j], normals[j + 1]), *sub, choice.count),
                    radius_m: line.radius_m,
                    drive,
                    continues: [j == 0 && cont.start, j + 1 == spans && cont.end],
                    // Warnings point at the span's first structure: the
                    // chords' vertices are not listed in the document.
                    source: lp.key("structures").index(j),
                    vertices_key: "",
                    cell: None,
                });
            }
        }
    }
    Some(out)
}

/// The catenary of each phase position over span `j`.
fn span_curves(
    line: &OverheadLineDoc,
    from: &[Attachment],
    to: &[Attachment],
    j: usize,
    lp: &Pointer,
    p: &mut Problems,
) -> Option<Vec<Catenary>> {
    let mut out = Vec::with_capacity(from.len());
    for (k, (a, b)) in from.iter().zip(to).enumerate() {
        let span_m = (b.0 - a.0).norm();
        if span_m < MIN_SPAN_M {
            p.push(
                &lp.key("structures").index(j + 1).key("offsets_m").index(k),
                format!("phase position {k} spans less than {MIN_SPAN_M} m in span {j}"),
            );
            return None;
        }
        let (curve, what) = match (line.sag_m, line.catenary_m) {
            (Some(s), _) if s >= span_m / 2.0 => {
                p.push(
                    &lp.key("sag_m"),
                    format!("a sag of {s} m is half or more of span {j} ({span_m:.2} m): check the units"),
                );
                return None;
            }
            (Some(s), _) => (Catenary::with_sag(span_m, a.1, b.1, s), "sag_m"),
            (None, Some(c)) => (Catenary::through(span_m, a.1, b.1, c), "catenary_m"),
            (None, None) => return None,
        };
        match curve {
            Some(k) if k.sag_m() < span_m / 2.0 => out.push(k),
            _ => {
                p.push(
                    &lp.key(what),
                    format!("in span {j} ({span_m:.2} m) the conductor would hang deeper than half the span: check the units"),
                );
                return None;
            }
        }
    }
    Some(out)
}

/// The horizontal unit normal (to the left) of the line at each
/// structure: of its one span at the ends, of the bisector between.
fn structure_normals(line: &OverheadLineDoc) -> Vec<Vector2<f64>> {
    let pts: Vec<Vector2<f64>> = line.structures.iter().map(|s| plan(s.at)).collect();
    let last = pts.len() - 1;
    (0..=last)
        .map(|j| {
            let dir = |a: usize, b: usize| (pts[b] - pts[a]).normalize();
            let t = match j {
                0 => dir(0, 1),
                j if j == last => dir(last - 1, last),
                j => (dir(j - 1, j) + dir(j, j + 1)).normalize(),
            };
            Vector2::new(-t.y, t.x)
        })
        .collect()
}

/// One sub-conductor's chords over a span: the phase's catenary, moved
/// across by the sub-conductor's offset. The horizontal offset turns
/// linearly from one structure's normal to the next, so that the spans of
/// a sub-conductor meet at an angle structure.
fn sub_path(
    curve: &Catenary,
    (a, b): (Attachment, Attachment),
    (na, nb): (Vector2<f64>, Vector2<f64>),
    (across, up): (f64, f64),
    chords: usize,
) -> Vec<Point3<f64>> {
    curve
        .heights_m(chords)
        .iter()
        .enumerate()
        .map(|(i, z)| {
            let t = i as f64 / chords as f64;
            let xy = a.0 + (b.0 - a.0) * t + (na * (1.0 - t) + nb * t) * across;
            Point3::new(xy.x, xy.y, z + up)
        })
        .collect()
}

/// Sets, in the line that generates conductor `conductor_id`, the phase of
/// that conductor's position. False if no line generates that id.
pub(super) fn rephase(doc: &mut SiteDoc, conductor_id: &str, phase: Phase) -> bool {
    for line in &mut doc.overhead_lines {
        let Some(rest) = conductor_id.strip_prefix(line.id.as_str()).and_then(|r| r.strip_prefix("-p")) else {
            continue;
        };
        if let Some(k) = position_of(rest)
            && let Some(slot) = line.phases.get_mut(k)
        {
            slot.phase = phase;
            return true;
        }
    }
    false
}

/// The position `k` of a generated id's tail `{k}-s{j}` or `{k}-s{j}-b{m}`.
fn position_of(tail: &str) -> Option<usize> {
    let digits = |s: &str| !s.is_empty() && s.bytes().all(|b| b.is_ascii_digit());
    let (k, rest) = tail.split_once("-s")?;
    let span_ok = match rest.split_once("-b") {
        Some((j, m)) => digits(j) && digits(m),
        None => digits(rest),
    };
    (digits(k) && span_ok).then(|| k.parse().ok()).flatten()
}
