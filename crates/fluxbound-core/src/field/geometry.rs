//! Conductor geometry in structure-of-arrays form, ready for the hot loop.
//!
//! Every conductor is a polyline of thin straight filaments. The kernel walks
//! each polyline vertex by vertex, so the vertices of all conductors are kept in
//! three flat coordinate arrays with an offset table, and the per-segment
//! squared lengths are precomputed once (they serve the inside-conductor test).

use nalgebra::Point3;

/// One conductor as the field engine sees it: a polyline in metres and the
/// radius in metres used to flag points that lie inside the conductor.
#[derive(Debug, Clone, PartialEq)]
pub struct Filament {
    /// Vertices in order of current flow (first to last), in metres.
    pub path: Vec<Point3<f64>>,
    /// Conductor radius in metres; points closer than this to any segment are
    /// flagged instead of being computed with the thin-wire formula.
    pub radius_m: f64,
}

/// Structure-of-arrays view of many polylines.
///
/// Invariant: `starts` has one entry per conductor plus a final sentinel, and
/// each conductor holds at least one vertex (callers validate ≥ 2).
#[derive(Debug, Clone, Default)]
pub struct Filaments {
    pub(crate) vx: Vec<f64>,
    pub(crate) vy: Vec<f64>,
    pub(crate) vz: Vec<f64>,
    /// `seg_len2[j]` is |v_j − v_{j−1}|² for the segment ending at vertex j;
    /// the entry of a conductor's first vertex is unused (0).
    pub(crate) seg_len2: Vec<f64>,
    pub(crate) starts: Vec<usize>,
    /// Radius (m) and its square per conductor: the square serves the
    /// inside test, the radius itself the chunk-far proof (no rounding
    /// through a square root, so that proof stays conservative).
    pub(crate) radius: Vec<f64>,
    pub(crate) radius2: Vec<f64>,
    /// Bounding box of each conductor's vertices, `[lo, hi]` per axis
    /// (all NaN if any vertex coordinate is NaN, so it proves nothing).
    /// Lets the kernel prove a whole conductor far from a chunk of points
    /// once instead of segment by segment.
    pub(crate) bbox: Vec<[[f64; 3]; 2]>,
}

impl Filaments {
    /// Lays out the given polylines. Polylines with fewer than two vertices
    /// contribute no segment (and therefore no field).
    pub fn new(filaments: &[Filament]) -> Self {
        let vertex_count: usize = filaments.iter().map(|f| f.path.len()).sum();
        let mut out = Filaments {
            vx: Vec::with_capacity(vertex_count),
            vy: Vec::with_capacity(vertex_count),
            vz: Vec::with_capacity(vertex_count),
            seg_len2: Vec::with_capacity(vertex_count),
            starts: Vec::with_capacity(filaments.len() + 1),
            radius: Vec::with_capacity(filaments.len()),
            radius2: Vec::with_capacity(filaments.len()),
            bbox: Vec::with_capacity(filaments.len()),
        };
        for f in filaments {
            out.starts.push(out.vx.len());
            out.radius.push(f.radius_m.abs());
            out.radius2.push(f.radius_m * f.radius_m);
            out.bbox.push(bounding_box(&f.path));
            for (j, v) in f.path.iter().enumerate() {
                let len2 = if j == 0 { 0.0 } else { (v - f.path[j - 1]).norm_squared() };
                out.vx.push(v.x);
                out.vy.push(v.y);
                out.vz.push(v.z);
                out.seg_len2.push(len2);
            }
        }
        out.starts.push(out.vx.len());
        out
    }

    /// Number of conductors (polylines).
    pub fn conductor_count(&self) -> usize {
        self.radius2.len()
    }

    /// Number of straight segments over all conductors.
    pub fn segment_count(&self) -> usize {
        (0..self.conductor_count()).map(|k| self.vertex_range(k).len().saturating_sub(1)).sum()
    }

    pub(crate) fn vertex_range(&self, k: usize) -> std::ops::Range<usize> {
        self.starts[k]..self.starts[k + 1]
    }
}

/// `[lo, hi]` of the vertices on each axis; NaN throughout if any
/// coordinate is NaN (`f64::min`/`max` would skip it), and inverted
/// (lo = +inf, hi = −inf) for an empty path.
fn bounding_box(path: &[nalgebra::Point3<f64>]) -> [[f64; 3]; 2] {
    let mut b = [[f64::INFINITY; 3], [f64::NEG_INFINITY; 3]];
    for v in path {
        for d in 0..3 {
            if v[d].is_nan() {
                return [[f64::NAN; 3]; 2];
            }
            b[0][d] = b[0][d].min(v[d]);
            b[1][d] = b[1][d].max(v[d]);
        }
    }
    b
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::Point3;

    #[test]
    fn conductor_box_spans_the_vertices_and_a_nan_proves_nothing() {
        let path = [Point3::new(1.0, -2.0, 3.0), Point3::new(-4.0, 5.0, 0.5), Point3::new(0.0, 0.0, 7.0)];
        assert_eq!(bounding_box(&path), [[-4.0, -2.0, 0.5], [1.0, 5.0, 7.0]]);
        let with_nan = [path[0], Point3::new(f64::NAN, 0.0, 0.0), path[2]];
        assert!(bounding_box(&with_nan).iter().flatten().all(|v| v.is_nan()));
    }
}
