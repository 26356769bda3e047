//! Marching squares over a regular grid of node values.
//!
//! Saddle cells (two diagonally opposite corners above the level) are
//! resolved by the mean of the four corners, the usual asymptotic-decider
//! approximation, so a saddle's two segments never cross. Nodes flagged as
//! inside a conductor count as above every level (the zone around a
//! conductor always includes the conductor). Crossings are placed by linear
//! interpolation along the cell edge.

use crate::assess::GridSpec;
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
    /// A ring of below-level nodes around the grid, so every line closes.
    padded: bool,
}

impl Lattice<'_> {
    fn dims(&self) -> (usize, usize) {
        if self.padded { (self.grid.nx + 2, self.grid.ny + 2) } else { (self.grid.nx, self.grid.ny) }
    }
    /// Value at lattice node (i, j); `None` for padding.
    fn value(&self, i: usize, j: usize) -> Option<f64> {
        let (gi, gj) = if self.padded {
            if i == 0 || j == 0 || i > self.grid.nx || j > self.grid.ny {
                return None;
            }
            (i - 1, j - 1)
        } else {
            (i, j)
        };
        let k = gj * self.grid.nx + gi;
        Some(if self.inside.get(k).copied().unwrap_or(false) { ABOVE } else { self.values[k] })
    }
    fn position(&self, i: usize, j: usize) -> [f64; 2] {
        let off = if self.padded { 1.0 } else { 0.0 };
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
    let l = Lattice { grid, values, inside, padded: false };
    chain(&l, level, segments(&l, level))
}

/// Closed rings bounding the zones at or above `level`, closed along the
/// grid's edge where a zone reaches it: the zone to mark off.
pub fn zone_rings(grid: &GridSpec, values: &[f64], inside: &[bool], level: f64) -> Vec<Polyline> {
    let l = Lattice { grid, values, inside, padded: true };
    chain(&l, level, segments(&l, level))
}

/// Twice the signed area of a closed ring (positive counter-clockwise).
pub fn signed_area2(points: &[[f64; 2]]) -> f64 {
    points.windows(2).map(|w| w[0][0] * w[1][1] - w[1][0] * w[0][1]).sum()
}
