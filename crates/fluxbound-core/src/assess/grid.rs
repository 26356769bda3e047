//! Sampling grids over work areas.

use nalgebra::{Point2, Point3};

/// Cell centres of a square grid of `spacing_m` over the polygon's bounding
/// box that fall inside the polygon (even–odd rule), at `height_m`. Each
/// centre stands for a `spacing_m²` cell, so area shares are cell counts.
pub fn area_grid(polygon: &[Point2<f64>], height_m: f64, spacing_m: f64) -> Vec<Point3<f64>> {
    let (nx, ny, x0, y0) = grid_shape(polygon, spacing_m);
    let mut out = Vec::new();
    for j in 0..ny {
        let y = y0 + (j as f64 + 0.5) * spacing_m;
        for i in 0..nx {
            let x = x0 + (i as f64 + 0.5) * spacing_m;
            if contains(polygon, Point2::new(x, y)) {
                out.push(Point3::new(x, y, height_m));
            }
        }
    }
    out
}

/// Cells of the bounding-box grid (an upper bound on [`area_grid`]'s
/// length), computed without building it, to enforce compute bounds first.
pub fn bounding_cells(polygon: &[Point2<f64>], spacing_m: f64) -> u64 {
    let (nx, ny, _, _) = grid_shape(polygon, spacing_m);
    nx as u64 * ny as u64
}

fn grid_shape(polygon: &[Point2<f64>], spacing_m: f64) -> (usize, usize, f64, f64) {
    let (mut x0, mut y0, mut x1, mut y1) = (f64::INFINITY, f64::INFINITY, f64::NEG_INFINITY, f64::NEG_INFINITY);
    for p in polygon {
        x0 = x0.min(p.x);
        y0 = y0.min(p.y);
        x1 = x1.max(p.x);
        y1 = y1.max(p.y);
    }
    if polygon.is_empty() || spacing_m <= 0.0 || !spacing_m.is_finite() {
        return (0, 0, 0.0, 0.0);
    }
    // Saturating casts: a huge count is rejected by the caller's bound.
    // A hair below the quotient, so 1.2 / 0.1 = 12.000000000000002 is 12.
    let nx = ((x1 - x0) / spacing_m * (1.0 - 1e-12)).ceil().max(1.0) as usize;
    let ny = ((y1 - y0) / spacing_m * (1.0 - 1e-12)).ceil().max(1.0) as usize;
    (nx, ny, x0, y0)
}

/// Even–odd point-in-polygon test.
pub fn contains(polygon: &[Point2<f64>], p: Point2<f64>) -> bool {
    let n = polygon.len();
    let mut inside = false;
    let mut j = n.wrapping_sub(1);
    for i in 0..n {
        let (a, b) = (polygon[i], polygon[j]);
        if (a.y > p.y) != (b.y > p.y) && p.x < (b.x - a.x) * (p.y - a.y) / (b.y - a.y) + a.x {
            inside = !inside;
        }
        j = i;
    }
    inside
}
