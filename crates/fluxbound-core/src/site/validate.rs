//! Wire model → checked model, collecting every problem at once.
//!
//! Each rule is a plain sentence in the detail text; limits are constants
//! here so the docs, the validator and the tests agree.

use super::model::*;
use super::problem::{Pointer, Problems};
use super::wire::*;
use crate::text::single_line_problem;
use nalgebra::{Point2, Point3};
use num_complex::Complex64;
use std::collections::{HashMap, HashSet};

/// Coordinates beyond ±100 km of the site origin are rejected: a local frame
/// never needs more, and bounding them keeps every square finite.
pub const COORDINATE_LIMIT_M: f64 = 100_000.0;
pub const FREQUENCY_RANGE_HZ: (f64, f64) = (1.0, 3000.0);
/// 1 MA RMS: above any real power conductor, low enough to catch unit slips.
pub const CURRENT_LIMIT_A: f64 = 1.0e6;
/// Conductor radius bounds: 0.1 mm wire to 2 m (a large busbar enclosure).
pub const RADIUS_RANGE_M: (f64, f64) = (1.0e-4, 2.0);
/// Segments shorter than this are taken as a repeated vertex.
pub const MIN_SEGMENT_M: f64 = 1.0e-6;
pub const MAX_VERTICES: usize = 100_000;
pub const HARMONIC_ORDERS: (u32, u32) = (2, 50);
pub const MAX_ID_CHARS: usize = 64;
pub const MAX_NAME_CHARS: usize = 200;
/// Body heights above a standing point, m.
pub const HEIGHT_RANGE_M: (f64, f64) = (0.0, 10.0);
pub const MAX_HEIGHTS: usize = 16;
pub const OCCUPANCY_RANGE_H: (f64, f64) = (0.0, 24.0);
pub const SPACING_RANGE_M: (f64, f64) = (0.01, 100.0);
pub const MAX_POLYGON_VERTICES: usize = 1000;

/// Checks a whole site document and builds the checked [`Site`].
pub fn validate_site(doc: &SiteDoc) -> Result<Site, Problems> {
    let root = Pointer::root();
    let mut p = Problems::default();
    let mut notes = Problems::default();
    if let Some(name) = &doc.name {
        check_name(name, &root.key("name"), &mut p);
    }
    check_frequency(doc.frequency_hz, &root.key("frequency_hz"), &mut p);
    let circuits = check_circuits(&doc.circuits, &root.key("circuits"), &mut p);
    let mut conductors = check_conductors(&doc.conductors, &root.key("conductors"), &doc.circuits, &mut p);
    let listed: Vec<&str> = doc.conductors.iter().map(|c| c.id.as_str()).collect();
    conductors.extend(super::formation::check_formations(
        &doc.formations,
        &root.key("formations"),
        &doc.circuits,
        &listed,
        &mut p,
    ));
    let conductors = super::overhead::expand_lines(doc, conductors, &mut p, &mut notes);
    let positions = check_positions(&doc.positions, &root.key("positions"), &mut p);
    let areas = check_areas(&doc.areas, &root.key("areas"), &mut p, &mut notes);
    if let Some(g) = &doc.georeference {
        let gp = root.key("georeference");
        check_range(g.origin_lon_deg, (-180.0, 180.0), "degrees", &gp.key("origin_lon_deg"), &mut p);
        // The tangent-plane conversion degenerates towards the poles.
        check_range(g.origin_lat_deg, (-80.0, 80.0), "degrees", &gp.key("origin_lat_deg"), &mut p);
        check_range(g.y_axis_bearing_deg, (-360.0, 360.0), "degrees", &gp.key("y_axis_bearing_deg"), &mut p);
    }
    let tp = root.key("tables");
    let mut seen = HashSet::new();
    for (i, t) in doc.tables.iter().enumerate() {
        if t.trim().is_empty() {
            p.push(&tp.index(i), "table id must not be empty");
        } else if !seen.insert(t.as_str()) {
            p.push(&tp.index(i), format!("table '{t}' is listed twice"));
        }
    }
    p.into_result(Site::from_checked(CheckedParts {
        name: doc.name.clone(),
        frequency_hz: doc.frequency_hz,
        circuits,
        conductors,
        positions,
        areas,
        tables: doc.tables.clone(),
        georeference: doc.georeference,
        notes,
    }))
}

/// A name or label: at most [`MAX_NAME_CHARS`] characters on one line (the
/// rule of [`crate::text`]).
pub(crate) fn check_name(name: &str, at: &Pointer, p: &mut Problems) {
    if name.chars().count() > MAX_NAME_CHARS {
        p.push(at, format!("name is longer than {MAX_NAME_CHARS} characters"));
    }
    if let Some(why) = single_line_problem(name) {
        p.push(at, why);
    }
}

pub(crate) fn check_frequency(f_hz: f64, at: &Pointer, p: &mut Problems) {
    let (lo, hi) = FREQUENCY_RANGE_HZ;
    if !f_hz.is_finite() {
        p.push(at, "must be a finite number");
    } else if !(lo..=hi).contains(&f_hz) {
        p.push(at, format!("frequency must be between {lo} and {hi} Hz"));
    }
}

/// Range check with one message shape for every bounded number.
pub(crate) fn check_range(v: f64, (lo, hi): (f64, f64), unit: &str, at: &Pointer, p: &mut Problems) -> bool {
    if !v.is_finite() {
        p.push(at, "must be a finite number");
        false
    } else if v < lo || v > hi {
        p.push(at, format!("must be between {lo} and {hi} {unit}"));
        false
    } else {
        true
    }
}

fn check_current(v: f64, at: &Pointer, p: &mut Problems) {
    if v.is_finite() && v < 0.0 {
        p.push(at, "current must not be negative (use the angle to reverse a phasor)");
    } else if v.is_finite() && v > CURRENT_LIMIT_A {
        p.push(at, format!("current above {CURRENT_LIMIT_A:e} A is not plausible; check the units"));
    } else {
        check_range(v, (0.0, CURRENT_LIMIT_A), "A", at, p);
    }
}

fn check_angle(v: f64, at: &Pointer, p: &mut Problems) {
    check_range(v, (-360.0, 360.0), "degrees", at, p);
}

pub(crate) fn check_coordinate(v: f64, at: &Pointer, p: &mut Problems) {
    check_coordinate_at(v, || at.clone(), p);
}

/// [`check_coordinate`] for long lists: the pointer is built only when the
/// value has a problem, so a valid list costs no allocation per element.
pub(crate) fn check_coordinate_at(v: f64, at: impl FnOnce() -> Pointer, p: &mut Problems) {
    if !v.is_finite() {
        p.push(&at(), "must be a finite number");
    } else if v.abs() > COORDINATE_LIMIT_M {
        p.push(&at(), format!("coordinate is beyond ±{COORDINATE_LIMIT_M} m of the site origin"));
    }
}

fn check_occupancy(v: Option<f64>, at: &Pointer, p: &mut Problems) {
    if let Some(h) = v {
        check_range(h, OCCUPANCY_RANGE_H, "hours per day", at, p);
    }
}

/// Ids: non-empty, short, printable, unique within their list.
pub(crate) fn check_ids<'a>(ids: impl Iterator<Item = &'a str>, list: &Pointer, what: &str, p: &mut Problems) {
    let mut seen: HashMap<&str, usize> = HashMap::new();
    for (i, id) in ids.enumerate() {
        // Built only for a problem: a valid list allocates no pointer.
        let at = || list.index(i).key("id");
        if id.trim().is_empty() {
            p.push(&at(), "id must not be empty");
        } else if id.chars().count() > MAX_ID_CHARS {
            p.push(&at(), format!("id is longer than {MAX_ID_CHARS} characters"));
        } else if let Some(why) = single_line_problem(id) {
            p.push(&at(), why);
        }
        if let Some(first) = seen.insert(id, i) {
            p.push(&at(), format!("duplicate {what} id '{id}' (first used at {})", list.index(first)));
        }
    }
}

pub(crate) fn check_circuits(docs: &[CircuitDoc], at: &Pointer, p: &mut Problems) -> Vec<Circuit> {
    check_ids(docs.iter().map(|c| c.id.as_str()), at, "circuit", p);
    check_load_groups(docs, at, p);
    docs.iter().enumerate().map(|(i, c)| check_circuit(c, &at.index(i), p)).collect()
}

/// Load groups: a printable name of 1–64 characters, shared by at least
/// two circuits (a group of one has nobody to take over its load).
fn check_load_groups(docs: &[CircuitDoc], at: &Pointer, p: &mut Problems) {
    for (i, c) in docs.iter().enumerate() {
        let Some(group) = &c.load_group else { continue };
        let gp = at.index(i).key("load_group");
        if group.trim().is_empty() || group.chars().count() > MAX_ID_CHARS {
            p.push(&gp, format!("load group must be 1 to {MAX_ID_CHARS} characters"));
        } else if let Some(why) = single_line_problem(group) {
            p.push(&gp, why);
        } else if docs.iter().filter(|d| d.load_group.as_ref() == Some(group)).count() < 2 {
            p.push(
                &gp,
                format!("circuit '{}' is the only one in load group '{group}': a load group names circuits that share one load, at least two", c.id),
            );
        }
    }
}

fn check_circuit(c: &CircuitDoc, at: &Pointer, p: &mut Problems) -> Circuit {
    check_current(c.current_a, &at.key("current_a"), p);
    if let Some(r) = c.rated_current_a {
        let rp = at.key("rated_current_a");
        if r.is_finite() && r <= 0.0 {
            p.push(&rp, "rated current must be positive");
        } else {
            check_current(r, &rp, p);
        }
    }
    check_angle(c.angle_deg, &at.key("angle_deg"), p);
    let mut overrides = [PhaseOverride::default(); 3];
    if let Some(ph) = &c.phases {
        let pp = at.key("phases");
        for (idx, name, o) in [(0, "A", &ph.a), (1, "B", &ph.b), (2, "C", &ph.c)] {
            let Some(o) = o else { continue };
            let op = pp.key(name);
            if c.kind == CircuitKind::SinglePhase && idx > 0 {
                p.push(&op, format!("a single-phase circuit has no phase {name}"));
            }
            if let Some(i) = o.current_a {
                check_current(i, &op.key("current_a"), p);
            }
            if let Some(a) = o.angle_deg {
                check_angle(a, &op.key("angle_deg"), p);
            }
            overrides[idx] = PhaseOverride { current_a: o.current_a, angle_deg: o.angle_deg };
        }
    }
    let hp = at.key("harmonics");
    let mut orders = HashSet::new();
    let (lo, hi) = HARMONIC_ORDERS;
    for (j, h) in c.harmonics.iter().enumerate() {
        let at_h = hp.index(j);
        if !(lo..=hi).contains(&h.order) {
            p.push(&at_h.key("order"), format!("harmonic order must be between {lo} and {hi}"));
        } else if !orders.insert(h.order) {
            p.push(&at_h.key("order"), format!("harmonic order {} is listed twice", h.order));
        }
        check_range(h.percent, (0.0, 100.0), "percent of the fundamental", &at_h.key("percent"), p);
        if let Some(a) = h.angle_deg {
            check_angle(a, &at_h.key("angle_deg"), p);
        }
    }
    let mut harmonics: Vec<Harmonic> = c
        .harmonics
        .iter()
        .map(|h| Harmonic {
            order: h.order,
            percent: h.percent,
            angle_deg: h.angle_deg.unwrap_or(0.0),
            angle_given: h.angle_deg.is_some(),
        })
        .collect();
    harmonics.sort_by_key(|h| h.order);
    Circuit {
        id: c.id.clone(),
        kind: c.kind,
        current_a: c.current_a,
        rated_current_a: c.rated_current_a,
        sequence: c.sequence,
        angle_deg: c.angle_deg,
        overrides,
        harmonics,
        load_group: c.load_group.clone(),
    }
}

pub(crate) fn check_conductors(
    docs: &[ConductorDoc],
    at: &Pointer,
    circuits: &[CircuitDoc],
    p: &mut Problems,
) -> Vec<Conductor> {
    check_ids(docs.iter().map(|c| c.id.as_str()), at, "conductor", p);
    // The first circuit with an id wins, as in the duplicate-id message.
    let mut by_id: HashMap<&str, usize> = HashMap::new();
    for (i, c) in circuits.iter().enumerate() {
        by_id.entry(c.id.as_str()).or_insert(i);
    }
    docs.iter()
        .enumerate()
        .flat_map(|(i, c)| {
            let conductor = check_conductor(c, &at.index(i), circuits, &by_id, p);
            match &c.cross_section {
                // A bar becomes its filaments (none after a problem).
                Some(section) => {
                    super::bar::expand(conductor, section, &at.index(i).key("cross_section"), p).unwrap_or_default()
                }
                None => vec![conductor],
            }
        })
        .collect()
}

fn check_conductor(
    c: &ConductorDoc,
    at: &Pointer,
    circuits: &[CircuitDoc],
    by_id: &HashMap<&str, usize>,
    p: &mut Problems,
) -> Conductor {
    let path = check_path(&c.path, &at.key("path"), p);
    let rp = at.key("radius_m");
    if c.radius_m.is_finite() && c.radius_m <= 0.0 {
        p.push(&rp, "radius must be positive");
    } else {
        check_range(c.radius_m, RADIUS_RANGE_M, "m", &rp, p);
    }
    let drive = check_drive(c, at, circuits, by_id, p);
    let continues = c.continues.map_or([false; 2], |k| [k.start, k.end]);
    Conductor {
        id: c.id.clone(),
        path,
        radius_m: c.radius_m,
        drive,
        continues,
        source: at.clone(),
        vertices_key: "path",
        cell: None,
    }
}

pub(super) fn check_path(path: &[[f64; 3]], at: &Pointer, p: &mut Problems) -> Vec<Point3<f64>> {
    if path.len() < 2 {
        p.push(at, "a path needs at least 2 vertices");
    } else if path.len() > MAX_VERTICES {
        p.push(at, format!("a path may have at most {MAX_VERTICES} vertices"));
    }
    for (j, v) in path.iter().enumerate() {
        for (d, x) in v.iter().enumerate() {
            check_coordinate_at(*x, || at.index(j).index(d), p);
        }
    }
    let pts: Vec<Point3<f64>> = path.iter().map(|v| Point3::new(v[0], v[1], v[2])).collect();
    for j in 1..pts.len() {
        let len = (pts[j] - pts[j - 1]).norm();
        if len.is_finite() && len < MIN_SEGMENT_M {
            p.push(
                &at.index(j),
                format!("segment {} → {} has zero length (vertex repeats the previous one)", j - 1, j),
            );
        }
    }
    pts
}

fn check_drive(
    c: &ConductorDoc,
    at: &Pointer,
    circuits: &[CircuitDoc],
    by_id: &HashMap<&str, usize>,
    p: &mut Problems,
) -> Drive {
    let none = Drive::Explicit { current_a: Complex64::new(0.0, 0.0) };
    match (&c.circuit, &c.current) {
        (Some(_), Some(_)) => {
            p.push(at, "give either circuit and phase, or current, not both");
            none
        }
        (None, None) => {
            p.push(at, "a conductor needs either circuit and phase, or an explicit current");
            none
        }
        (None, Some(cur)) => {
            check_current(cur.rms_a, &at.key("current").key("rms_a"), p);
            check_angle(cur.phase_deg, &at.key("current").key("phase_deg"), p);
            if c.phase.is_some() {
                p.push(&at.key("phase"), "phase applies only with circuit");
            }
            if c.share.is_some() {
                p.push(&at.key("share"), "share applies only with circuit");
            }
            Drive::Explicit { current_a: Complex64::from_polar(cur.rms_a, cur.phase_deg.to_radians()) }
        }
        (Some(cid), None) => {
            let share = c.share.unwrap_or(1.0);
            if !(share.is_finite() && share > 0.0 && share <= 1.0) {
                p.push(&at.key("share"), "share must be greater than 0 and at most 1");
            }
            let Some(&ci) = by_id.get(cid.as_str()) else {
                p.push(&at.key("circuit"), format!("unknown circuit '{cid}'"));
                return none;
            };
            let Some(phase) = c.phase else {
                p.push(&at.key("phase"), "phase is required with circuit (A, B, C or N)");
                return none;
            };
            if circuits[ci].kind == CircuitKind::SinglePhase && matches!(phase, Phase::B | Phase::C) {
                p.push(&at.key("phase"), format!("circuit '{cid}' is single-phase: use phase A or N"));
            }
            Drive::Phase { circuit: ci, phase, share }
        }
    }
}

fn check_positions(docs: &[PositionDoc], at: &Pointer, p: &mut Problems) -> Vec<Position> {
    check_ids(docs.iter().map(|d| d.id.as_str()), at, "position", p);
    docs.iter()
        .enumerate()
        .map(|(i, d)| {
            let pp = at.index(i);
            for (j, x) in d.at.iter().enumerate() {
                check_coordinate_at(*x, || pp.key("at").index(j), p);
            }
            let placement = match *d.at.as_slice() {
                [x, y] => {
                    let heights = d.heights_m.clone().unwrap_or_else(|| DEFAULT_HEIGHTS_M.to_vec());
                    let hp = pp.key("heights_m");
                    if heights.is_empty() {
                        p.push(&hp, "give at least one height");
                    } else if heights.len() > MAX_HEIGHTS {
                        p.push(&hp, format!("at most {MAX_HEIGHTS} heights"));
                    }
                    for (j, h) in heights.iter().enumerate() {
                        check_range(*h, HEIGHT_RANGE_M, "m above the standing point", &hp.index(j), p);
                    }
                    Placement::Standing { x_m: x, y_m: y, heights_m: heights }
                }
                [x, y, z] => {
                    if d.heights_m.is_some() {
                        p.push(
                            &pp.key("heights_m"),
                            "heights apply to a standing point [x, y]; a 3-D point is used as given",
                        );
                    }
                    Placement::Point(Point3::new(x, y, z))
                }
                _ => {
                    p.push(&pp.key("at"), "give a standing point [x, y] or a 3-D point [x, y, z]");
                    Placement::Point(Point3::origin())
                }
            };
            check_occupancy(d.occupancy_h, &pp.key("occupancy_h"), p);
            Position {
                id: d.id.clone(),
                placement,
                body_region: d.body_region,
                occupancy_h: d.occupancy_h,
                group: d.group,
            }
        })
        .collect()
}

fn check_areas(docs: &[AreaDoc], at: &Pointer, p: &mut Problems, notes: &mut Problems) -> Vec<Area> {
    check_ids(docs.iter().map(|d| d.id.as_str()), at, "area", p);
    docs.iter()
        .enumerate()
        .map(|(i, d)| {
            let ap = at.index(i);
            let polygon = check_polygon(open_ring(&d.polygon, &ap.key("polygon"), notes), &ap.key("polygon"), p);
            check_coordinate(d.height_m, &ap.key("height_m"), p);
            check_range(d.spacing_m, SPACING_RANGE_M, "m", &ap.key("spacing_m"), p);
            check_occupancy(d.occupancy_h, &ap.key("occupancy_h"), p);
            Area { id: d.id.clone(), polygon, height_m: d.height_m, spacing_m: d.spacing_m, occupancy_h: d.occupancy_h }
        })
        .collect()
}

/// A polygon written as a closed ring (its last vertex repeats the first,
/// as GIS files and our own GeoJSON export write it) without the repeat,
/// noted at the dropped vertex; any other polygon as given.
fn open_ring<'a>(poly: &'a [[f64; 2]], at: &Pointer, notes: &mut Problems) -> &'a [[f64; 2]] {
    let closed = poly.len() >= 4
        && poly.first().zip(poly.last()).is_some_and(|(a, b)| (a[0] - b[0]).hypot(a[1] - b[1]) < MIN_SEGMENT_M);
    if !closed {
        return poly;
    }
    let last = poly.len() - 1;
    notes.push(
        &at.index(last),
        format!("the last vertex repeats the first (a closed ring); it was dropped, leaving {last} vertices"),
    );
    &poly[..last]
}

fn check_polygon(poly: &[[f64; 2]], at: &Pointer, p: &mut Problems) -> Vec<Point2<f64>> {
    let mut ok = true;
    for (j, v) in poly.iter().enumerate() {
        for (d, x) in v.iter().enumerate() {
            let before = p.len();
            check_coordinate_at(*x, || at.index(j).index(d), p);
            ok &= p.len() == before;
        }
    }
    let pts: Vec<Point2<f64>> = poly.iter().map(|v| Point2::new(v[0], v[1])).collect();
    if pts.len() < 3 {
        p.push(at, "a polygon needs at least 3 vertices");
        return pts;
    }
    if pts.len() > MAX_POLYGON_VERTICES {
        p.push(at, format!("a polygon may have at most {MAX_POLYGON_VERTICES} vertices"));
        return pts;
    }
    if !ok {
        return pts;
    }
    let twice_area: f64 = (0..pts.len())
        .map(|j| {
            let (a, b) = (pts[j], pts[(j + 1) % pts.len()]);
            a.x * b.y - b.x * a.y
        })
        .sum();
    // Collinear vertices first (their edges overlap, which is no "crossing"
    // a user would recognise), then crossings (a symmetric bow-tie has zero
    // signed area too), then any remaining zero area.
    let crossing = first_crossing(&pts);
    if all_collinear(&pts) {
        p.push(at, "polygon encloses no area (its vertices are collinear or repeated)");
    } else if let Some((e1, e2)) = crossing {
        p.push(at, format!("polygon edges {e1} and {e2} cross: give a simple polygon"));
    } else if twice_area.abs() < 2.0e-6 {
        p.push(at, "polygon encloses no area (its vertices are collinear or repeated)");
    }
    pts
}

/// True if every vertex lies on one line (within 1e-9 m² of twice-area).
fn all_collinear(pts: &[Point2<f64>]) -> bool {
    let Some(far) = pts.iter().skip(1).max_by(|a, b| (*a - pts[0]).norm().total_cmp(&(*b - pts[0]).norm())) else {
        return true;
    };
    let d = far - pts[0];
    if d.norm() == 0.0 {
        return true;
    }
    pts.iter().all(|q| {
        let v = q - pts[0];
        (d.x * v.y - d.y * v.x).abs() / d.norm() < 1e-9
    })
}

/// First pair of non-adjacent polygon edges that intersect, if any.
fn first_crossing(pts: &[Point2<f64>]) -> Option<(usize, usize)> {
    let n = pts.len();
    let edge = |i: usize| (pts[i], pts[(i + 1) % n]);
    for i in 0..n {
        for j in i + 1..n {
            if j == i + 1 || (i == 0 && j == n - 1) {
                continue;
            }
            if segments_intersect(edge(i), edge(j)) {
                return Some((i, j));
            }
        }
    }
    None
}

fn segments_intersect((a, b): (Point2<f64>, Point2<f64>), (c, d): (Point2<f64>, Point2<f64>)) -> bool {
    let orient = |p: Point2<f64>, q: Point2<f64>, r: Point2<f64>| {
        let v = (q.x - p.x) * (r.y - p.y) - (q.y - p.y) * (r.x - p.x);
        if v > 0.0 {
            1
        } else if v < 0.0 {
            -1
        } else {
            0
        }
    };
    let on_seg = |p: Point2<f64>, q: Point2<f64>, r: Point2<f64>| {
        r.x >= p.x.min(q.x) && r.x <= p.x.max(q.x) && r.y >= p.y.min(q.y) && r.y <= p.y.max(q.y)
    };
    let (o1, o2, o3, o4) = (orient(a, b, c), orient(a, b, d), orient(c, d, a), orient(c, d, b));
    if o1 != o2 && o3 != o4 {
        return true;
    }
    (o1 == 0 && on_seg(a, b, c))
        || (o2 == 0 && on_seg(a, b, d))
        || (o3 == 0 && on_seg(c, d, a))
        || (o4 == 0 && on_seg(c, d, b))
}
