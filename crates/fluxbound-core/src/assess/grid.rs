//! Sampling grids over work areas: one grid shape for assessments (cells
//! inside the polygon) and for field maps (the whole bounding box).

use crate::site::{Pointer, Problems, Site};
use nalgebra::{Point2, Point3};

/// A regular grid of nodes at `(x0 + (i + ½)·s, y0 + (j + ½)·s)`,
/// `i < nx`, `j < ny`, stored row by row (`j · nx + i`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GridSpec {
    pub x0_m: f64,
    pub y0_m: f64,
    pub spacing_m: f64,
    pub nx: usize,
    pub ny: usize,
}

/// Plan bounding box `(x0, y0, x1, y1)` of a polygon, m.
fn bounding_box(polygon: &[Point2<f64>]) -> (f64, f64, f64, f64) {
    let (mut x0, mut y0, mut x1, mut y1) = (f64::INFINITY, f64::INFINITY, f64::NEG_INFINITY, f64::NEG_INFINITY);
    for p in polygon {
        (x0, y0, x1, y1) = (x0.min(p.x), y0.min(p.y), x1.max(p.x), y1.max(p.y));
    }
    (x0, y0, x1, y1)
}

/// Cells of `spacing_m` needed to span `extent_m` (at least one). A hair
/// below the quotient, so 1.2 / 0.1 = 12.000000000000002 is 12 cells; the
/// cast saturates, and a huge count is rejected by the caller's budget.
fn cells_along(extent_m: f64, spacing_m: f64) -> usize {
    (extent_m / spacing_m * (1.0 - 1e-12)).ceil().max(1.0) as usize
}

impl GridSpec {
    /// The bounding box of `polygon` at exactly `spacing_m`; `None` for an
    /// empty polygon or a spacing that is not a positive number.
    pub fn bounding(polygon: &[Point2<f64>], spacing_m: f64) -> Option<GridSpec> {
        if polygon.is_empty() || !(spacing_m.is_finite() && spacing_m > 0.0) {
            return None;
        }
        let (x0, y0, x1, y1) = bounding_box(polygon);
        let (nx, ny) = (cells_along(x1 - x0, spacing_m), cells_along(y1 - y0, spacing_m));
        Some(GridSpec { x0_m: x0, y0_m: y0, spacing_m, nx, ny })
    }

    /// The bounding box of `polygon` at `spacing_m`, coarsened if needed so
    /// that it has at most `max_cells` nodes (the grid of a field map).
    pub fn covering(polygon: &[Point2<f64>], spacing_m: f64, max_cells: usize) -> GridSpec {
        let (x0, y0, x1, y1) = bounding_box(polygon);
        let (w, h) = ((x1 - x0).max(spacing_m), (y1 - y0).max(spacing_m));
        let s = spacing_m.max((w * h / max_cells.max(1) as f64).sqrt());
        GridSpec { x0_m: x0, y0_m: y0, spacing_m: s, nx: cells_along(w, s), ny: cells_along(h, s) }
    }
    pub fn len(&self) -> usize {
        self.nx * self.ny
    }
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// Plan coordinates of node `(i, j)`, m.
    pub fn node(&self, i: usize, j: usize) -> (f64, f64) {
        (self.x0_m + (i as f64 + 0.5) * self.spacing_m, self.y0_m + (j as f64 + 0.5) * self.spacing_m)
    }
    /// Every node at `height_m`, row by row.
    pub fn nodes_at(&self, height_m: f64) -> impl Iterator<Item = Point3<f64>> + '_ {
        (0..self.ny).flat_map(move |j| {
            (0..self.nx).map(move |i| {
                let (x, y) = self.node(i, j);
                Point3::new(x, y, height_m)
            })
        })
    }
}

/// Cell centres of a square grid of `spacing_m` over the polygon's bounding
/// box that fall inside the polygon (even–odd rule), at `height_m`. Each
/// centre stands for a `spacing_m²` cell, so area shares are cell counts.
pub fn area_grid(polygon: &[Point2<f64>], height_m: f64, spacing_m: f64) -> Vec<Point3<f64>> {
    match GridSpec::bounding(polygon, spacing_m) {
        Some(grid) => grid.nodes_at(height_m).filter(|p| contains(polygon, Point2::new(p.x, p.y))).collect(),
        None => Vec::new(),
    }
}

/// Cells of the bounding-box grid (an upper bound on [`area_grid`]'s
/// length), computed without building it, to enforce compute bounds first.
pub fn bounding_cells(polygon: &[Point2<f64>], spacing_m: f64) -> u64 {
    GridSpec::bounding(polygon, spacing_m).map_or(0, |g| g.nx as u64 * g.ny as u64)
}

/// Most grid cells over all areas of one assessment, by default (the
/// service's `max_grid_cells` starts here).
pub const DEFAULT_MAX_GRID_CELLS: u64 = 1_000_000;

/// The grid budget of a site: the bounding cells of its areas, summed in
/// order, must stay within `max_cells`. The problem points at the spacing of
/// the first area that crosses the budget (a pointer into the site).
pub fn check_grid_budget(site: &Site, max_cells: u64) -> Problems {
    let mut p = Problems::default();
    let mut total = 0u64;
    for (i, a) in site.areas().iter().enumerate() {
        total = total.saturating_add(bounding_cells(&a.polygon, a.spacing_m));
        if total > max_cells {
            p.push(
                &Pointer::root().key("areas").index(i).key("spacing_m"),
                format!("the area grids would exceed {max_cells} cells: increase spacing_m"),
            );
            break;
        }
    }
    p
}

/// The nodes of `grid` inside `polygon` (`j · nx + i`, ascending): for
/// each node, what [`contains`] says. Each row's crossings are computed
/// once, by the same [`crossing_x`] as `contains`, so the answers are the same
/// node by node; a node is inside when an odd number of crossings lies to
/// its right (`x < crossing`, as `contains` counts them).
pub(crate) fn nodes_inside(polygon: &[Point2<f64>], grid: &GridSpec) -> Vec<usize> {
    let n = polygon.len();
    let mut out = Vec::new();
    let mut crossings = Vec::with_capacity(n);
    for row in 0..grid.ny {
        let (_, y) = grid.node(0, row);
        crossings.clear();
        let mut j = n.wrapping_sub(1);
        for i in 0..n {
            // A NaN crossing never toggles `contains`.
            if let Some(x) = crossing_x(polygon[i], polygon[j], y).filter(|x| !x.is_nan()) {
                crossings.push(x);
            }
            j = i;
        }
        crossings.sort_by(f64::total_cmp);
        // Crossings at or left of the node so far (`x ≥ crossing`).
        let mut passed = 0;
        for col in 0..grid.nx {
            let (x, _) = grid.node(col, row);
            while passed < crossings.len() && crossings[passed] <= x {
                passed += 1;
            }
            if (crossings.len() - passed) % 2 == 1 {
                out.push(row * grid.nx + col);
            }
        }
    }
    out
}

/// Where the edge from `a` to `b` crosses the line at height `y`, if it
/// straddles it (one end above `y`, the other at or below).
fn crossing_x(a: Point2<f64>, b: Point2<f64>, y: f64) -> Option<f64> {
    ((a.y > y) != (b.y > y)).then(|| (b.x - a.x) * (y - a.y) / (b.y - a.y) + a.x)
}

/// Even–odd point-in-polygon test.
pub fn contains(polygon: &[Point2<f64>], p: Point2<f64>) -> bool {
    let n = polygon.len();
    let mut inside = false;
    let mut j = n.wrapping_sub(1);
    for i in 0..n {
        if crossing_x(polygon[i], polygon[j], p.y).is_some_and(|x| p.x < x) {
            inside = !inside;
        }
        j = i;
    }
    inside
}
