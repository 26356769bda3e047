//! Marching squares over a regular grid of node values.
//!
//! Saddle cells (two diagonally opposite corners above the level) are
//! resolved by the mean of the four corners, the usual asymptotic-decider
//! approximation, so a saddle's two segments never cross. Nodes flagged as
//! inside a conductor count as above every level (the zone around a
//! conductor always includes the conductor). Crossings are placed by linear
//! interpolation along the cell edge.
//!
//! Zones and contours of an area are clipped exactly to its polygon (also
//! non-convex) by the `i_overlay` crate; a zone is first extended one cell
//! beyond the grid's outer nodes with their values, so that where it reaches
//! the area's edge it closes along the polygon rather than half a cell
//! inside it. Within that outer half cell the zone follows the outermost
//! node's value (the map's resolution: one grid band).

use crate::assess::GridSpec;
use i_overlay::core::fill_rule::FillRule;
use i_overlay::core::overlay_rule::OverlayRule;
use i_overlay::float::clip::FloatClip;
use i_overlay::float::single::SingleFloatOverlay;
use i_overlay::string::clip::ClipRule;
use nalgebra::Point2;
use std::collections::HashMap;

/// A contour line in plan coordinates, m. Closed when `closed` (the last
/// point is then equal to the first).
#[derive(Debug, Clone, PartialEq)]
pub struct Polyline {
    pub points: Vec<[f64; 2]>,
    pub closed: bool,
}

/// Value used for nodes inside conductors: above any level.
const ABOVE: f64 = 1.0e300;

/// Edge id: (i, j, horizontal?) of the padded or plain grid.
type Edge = (usize, usize, bool);

struct Lattice<'a> {
    grid: &'a GridSpec,
    values: &'a [f64],
    inside: &'a [bool],
    /// Nodes added around the grid.
    pad: Pad,
}

/// Nodes added around the grid.
#[derive(Clone, Copy, PartialEq)]
enum Pad {
    None,
    /// A ring of below-level nodes, so every line closes.
    Below,
    /// A ring repeating the outer nodes one cell further out, then a ring
    /// below the level: zones reach past the grid, to be clipped.
    Extend,
}

impl Pad {
    fn rings(self) -> usize {
        match self {
            Pad::None => 0,
            Pad::Below => 1,
            Pad::Extend => 2,
        }
    }
}

impl Lattice<'_> {
    fn dims(&self) -> (usize, usize) {
        let r = 2 * self.pad.rings();
        (self.grid.nx + r, self.grid.ny + r)
    }
    /// Value at lattice node (i, j); `None` for below-level padding.
    fn value(&self, i: usize, j: usize) -> Option<f64> {
        let r = self.pad.rings();
        let (nx, ny) = (self.grid.nx, self.grid.ny);
        if r > 0 && (i == 0 || j == 0 || i + 1 >= nx + 2 * r || j + 1 >= ny + 2 * r) {
            return None;
        }
        // Padding rings inside the outermost one repeat the nearest node.
        let gi = (i.saturating_sub(r)).min(nx - 1);
        let gj = (j.saturating_sub(r)).min(ny - 1);
        let k = gj * nx + gi;
        Some(if self.inside.get(k).copied().unwrap_or(false) { ABOVE } else { self.values[k] })
    }
    fn position(&self, i: usize, j: usize) -> [f64; 2] {
        let off = self.pad.rings() as f64;
        let s = self.grid.spacing_m;
        [self.grid.x0_m + (i as f64 - off + 0.5) * s, self.grid.y0_m + (j as f64 - off + 0.5) * s]
    }
    fn above(&self, i: usize, j: usize, level: f64) -> bool {
        self.value(i, j).is_some_and(|v| v >= level)
    }
    /// Crossing point on an edge. Against padding the crossing sits on the
    /// real node, so zones end at the last grid node.
    fn crossing(&self, (i, j, horizontal): Edge, level: f64) -> [f64; 2] {
        let (i2, j2) = if horizontal { (i + 1, j) } else { (i, j + 1) };
        let (a, b) = (self.value(i, j), self.value(i2, j2));
        let (pa, pb) = (self.position(i, j), self.position(i2, j2));
        let t = match (a, b) {
            (Some(a), Some(b)) if a != b => ((level - a) / (b - a)).clamp(0.0, 1.0),
            (None, Some(_)) => 1.0,
            (Some(_), None) => 0.0,
            _ => 0.5,
        };
        [pa[0] + t * (pb[0] - pa[0]), pa[1] + t * (pb[1] - pa[1])]
    }
}

fn segments(l: &Lattice<'_>, level: f64) -> Vec<(Edge, Edge)> {
    let (nx, ny) = l.dims();
    let mut out = Vec::new();
    for j in 0..ny.saturating_sub(1) {
        for i in 0..nx.saturating_sub(1) {
            let c = [
                l.above(i, j, level),
                l.above(i + 1, j, level),
                l.above(i + 1, j + 1, level),
                l.above(i, j + 1, level),
            ];
            let case = c.iter().enumerate().fold(0u8, |acc, (k, a)| acc | ((*a as u8) << k));
            let e = [(i, j, true), (i + 1, j, false), (i, j + 1, true), (i, j, false)];
            let centre_above = || {
                let vals: Vec<f64> = [(i, j), (i + 1, j), (i + 1, j + 1), (i, j + 1)]
                    .iter()
                    .map(|&(a, b)| l.value(a, b).map_or(f64::NEG_INFINITY, |v| v.min(1e150)))
                    .collect();
                vals.iter().sum::<f64>() / 4.0 >= level
            };
            match case {
                0 | 15 => {}
                5 => {
                    if centre_above() {
                        out.extend([(e[0], e[1]), (e[2], e[3])]);
                    } else {
                        out.extend([(e[3], e[0]), (e[1], e[2])]);
                    }
                }
                10 => {
                    if centre_above() {
                        out.extend([(e[3], e[0]), (e[1], e[2])]);
                    } else {
                        out.extend([(e[0], e[1]), (e[2], e[3])]);
                    }
                }
                _ => {
                    // Exactly two edges have corners on different sides.
                    let crossed: Vec<Edge> = (0..4).filter(|&k| c[k] != c[(k + 1) % 4]).map(|k| e[k]).collect();
                    out.push((crossed[0], crossed[1]));
                }
            }
        }
    }
    out
}

/// Chains segments that share edges into polylines.
fn chain(l: &Lattice<'_>, level: f64, segs: Vec<(Edge, Edge)>) -> Vec<Polyline> {
    let mut at: HashMap<Edge, Vec<usize>> = HashMap::new();
    for (k, (a, b)) in segs.iter().enumerate() {
        at.entry(*a).or_default().push(k);
        at.entry(*b).or_default().push(k);
    }
    let mut used = vec![false; segs.len()];
    let mut out = Vec::new();
    // Open lines first (start at an edge with one segment), then loops.
    let mut starts: Vec<Edge> = at.iter().filter(|(_, v)| v.len() == 1).map(|(e, _)| *e).collect();
    starts.sort_unstable();
    let mut loop_starts: Vec<usize> = (0..segs.len()).collect();
    let walk = |start_edge: Edge, first: usize, used: &mut Vec<bool>| {
        let mut edges = vec![start_edge];
        let (mut current, mut seg) = (start_edge, first);
        loop {
            used[seg] = true;
            let (a, b) = segs[seg];
            let next = if a == current { b } else { a };
            edges.push(next);
            current = next;
            match at[&current].iter().find(|&&s| !used[s]) {
                Some(&s) => seg = s,
                None => break,
            }
        }
        let closed = edges.len() > 2 && edges.first() == edges.last();
        Polyline { points: edges.iter().map(|e| l.crossing(*e, level)).collect(), closed }
    };
    for e in starts {
        if let Some(&s) = at[&e].iter().find(|&&s| !used[s]) {
            out.push(walk(e, s, &mut used));
        }
    }
    loop_starts.retain(|&s| !used[s]);
    for s in loop_starts {
        if !used[s] {
            out.push(walk(segs[s].0, s, &mut used));
        }
    }
    out
}

/// Contour lines at `level` (lines that reach the grid's edge stay open).
pub fn isolines(grid: &GridSpec, values: &[f64], inside: &[bool], level: f64) -> Vec<Polyline> {
    let l = Lattice { grid, values, inside, pad: Pad::None };
    chain(&l, level, segments(&l, level))
}

/// Closed rings bounding the zones at or above `level`, closed along the
/// grid's edge where a zone reaches it: the zone to mark off.
pub fn zone_rings(grid: &GridSpec, values: &[f64], inside: &[bool], level: f64) -> Vec<Polyline> {
    let l = Lattice { grid, values, inside, pad: Pad::Below };
    chain(&l, level, segments(&l, level))
}

/// Twice the signed area of a closed ring (positive counter-clockwise).
pub fn signed_area2(points: &[[f64; 2]]) -> f64 {
    points.windows(2).map(|w| w[0][0] * w[1][1] - w[1][0] * w[0][1]).sum()
}

/// A zone polygon: its exterior ring first (counter-clockwise), then its
/// holes (clockwise), each ring closed (last point equal to the first), as
/// RFC 7946 §3.1.6 recommends.
pub type ZonePolygon = Vec<Vec<[f64; 2]>>;

/// The zones at or above `level` inside `polygon` (the area), clipped
/// exactly to it and closed along it.
pub fn clipped_zones(
    grid: &GridSpec,
    values: &[f64],
    inside: &[bool],
    level: f64,
    polygon: &[Point2<f64>],
) -> Vec<ZonePolygon> {
    if grid.is_empty() || values.len() < grid.len() {
        return Vec::new();
    }
    let l = Lattice { grid, values, inside, pad: Pad::Extend };
    let rings: Vec<Vec<[f64; 2]>> = chain(&l, level, segments(&l, level))
        .into_iter()
        .filter(|r| r.closed && r.points.len() >= 4)
        .map(|mut r| {
            r.points.pop();
            r.points
        })
        .collect();
    if rings.is_empty() {
        return Vec::new();
    }
    let clip: Vec<[f64; 2]> = polygon.iter().map(|p| [p.x, p.y]).collect();
    // Even–odd: a ring inside another is a hole, whatever its direction.
    let shapes = rings.overlay(&clip, OverlayRule::Intersect, FillRule::EvenOdd);
    shapes
        .into_iter()
        .map(|shape| shape.into_iter().enumerate().map(|(k, ring)| closed_ring(ring, k == 0)).collect())
        .collect()
}

/// `ring` turned counter-clockwise (or clockwise) and closed.
fn closed_ring(mut ring: Vec<[f64; 2]>, counter_clockwise: bool) -> Vec<[f64; 2]> {
    if let Some(first) = ring.first().copied() {
        ring.push(first);
    }
    if (signed_area2(&ring) > 0.0) != counter_clockwise {
        ring.reverse();
    }
    ring
}

/// Contour lines at `level` clipped exactly to `polygon` (the area).
pub fn clipped_isolines(
    grid: &GridSpec,
    values: &[f64],
    inside: &[bool],
    level: f64,
    polygon: &[Point2<f64>],
) -> Vec<Polyline> {
    let lines: Vec<Vec<[f64; 2]>> =
        isolines(grid, values, inside, level).into_iter().map(|l| l.points).filter(|p| p.len() >= 2).collect();
    if lines.is_empty() {
        return Vec::new();
    }
    let clip: Vec<[f64; 2]> = polygon.iter().map(|p| [p.x, p.y]).collect();
    let rule = ClipRule { invert: false, boundary_included: true };
    lines
        .clip_by(&clip, FillRule::EvenOdd, rule)
        .into_iter()
        .filter(|p| p.len() >= 2)
        .map(|points| {
            let (a, b) = (points[0], points[points.len() - 1]);
            let closed = points.len() > 2 && (a[0] - b[0]).abs() < 1e-9 && (a[1] - b[1]).abs() < 1e-9;
            Polyline { points, closed }
        })
        .collect()
}

/// Area of a zone polygon (exterior minus holes), m².
pub fn zone_area(zone: &ZonePolygon) -> f64 {
    zone.iter().enumerate().map(|(k, r)| if k == 0 { 1.0 } else { -1.0 } * signed_area2(r).abs() / 2.0).sum()
}
