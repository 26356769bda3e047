//! The inside-conductor flags against plain geometry. The kernel skips its
//! inside test for a segment when a bounding-box bound proves the whole
//! 64-point chunk farther than the radius; these properties place points
//! inside conductors at chunk boundaries and in a chunk's partly filled
//! tail, among compact clusters of far points (so that the skip is taken
//! for most segments), and compare every flag with the point-to-segment
//! distance computed here, independently of the kernel.
//!
//! Tolerance: a point closer than `r·(1 − 1e-6)` must be flagged and one
//! farther than `r·(1 + 1e-6)` must not; between the two either is right.
//! The kernel decides without square roots (`|a×L|² < r²|L|²` and friends),
//! whose rounding is a few units of 1.1e-16 relative to `|a|²|b|²`, at most
//! ~1e-10 relative to `r²|L|²` for these sizes (|a|, |b| ≤ 30 m, r ≥ 5 mm,
//! |L| ≥ 0.1 m): far inside the band.

use super::*;
use fluxbound_core::field::{Variant, evaluate_using, influence_matrix};
use nalgebra::Vector3;
use proptest::prelude::*;

/// Distance from `p` to the segment `a`–`b`, by projection and clamping.
fn segment_distance(p: &Point3<f64>, a: &Point3<f64>, b: &Point3<f64>) -> f64 {
    let ab = b - a;
    let len2 = ab.norm_squared();
    let t = if len2 > 0.0 { ((p - a).dot(&ab) / len2).clamp(0.0, 1.0) } else { 0.0 };
    (p - (a + ab * t)).norm()
}

fn conductor_distance(p: &Point3<f64>, path: &[Point3<f64>]) -> f64 {
    path.windows(2).map(|w| segment_distance(p, &w[0], &w[1])).fold(f64::INFINITY, f64::min)
}

/// A unit vector perpendicular to `d` (any one), from a helper axis.
fn perpendicular(d: &Vector3<f64>, turn: f64) -> Vector3<f64> {
    let helper = if d.x.abs() < 0.6 * d.norm() { Vector3::x() } else { Vector3::y() };
    let u = d.cross(&helper).normalize();
    let v = d.cross(&u).normalize();
    u * turn.cos() + v * turn.sin()
}

#[derive(Debug, Clone)]
struct Case {
    paths: Vec<Vec<Point3<f64>>>,
    radii: Vec<f64>,
    points: Vec<Point3<f64>>,
}

/// Points inside a conductor: (point index, conductor, segment, position
/// along it, fraction of the radius, turn around it).
type Placement = (usize, usize, usize, f64, f64, f64);

fn case() -> impl Strategy<Value = Case> {
    let vertex = [-5.0..5.0f64, -5.0..5.0f64, -5.0..5.0f64];
    let paths = prop::collection::vec(prop::collection::vec(vertex, 2..6), 1..4);
    let radii = prop::collection::vec(0.005..0.3f64, 3);
    // 2 to 3 chunks of 64; the last one is partly filled.
    let count = 129usize..=192;
    let centres = prop::collection::vec([-12.0..12.0f64, -12.0..12.0f64, -12.0..12.0f64], 3);
    let scatter = prop::collection::vec([-0.4..0.4f64, -0.4..0.4f64, -0.4..0.4f64], 192);
    let boundary = prop::sample::select(vec![0usize, 1, 62, 63, 64, 65, 126, 127, 128, 129, 191]);
    let placement = (boundary, 0usize..3, 0usize..5, 0.0..=1.0f64, 0.0..0.95f64, 0.0..std::f64::consts::TAU);
    let placements = prop::collection::vec(placement, 1..8);
    (paths, radii, count, centres, scatter, placements).prop_map(|(paths, radii, count, centres, scatter, pl)| {
        let paths: Vec<Vec<Point3<f64>>> =
            paths.into_iter().map(|p| p.into_iter().map(Point3::from).collect()).collect();
        let mut points: Vec<Point3<f64>> = (0..count)
            .map(|i| {
                let (c, s) = (centres[i / 64], scatter[i]);
                Point3::new(c[0] + s[0], c[1] + s[1], c[2] + s[2])
            })
            .collect();
        let placements: Vec<Placement> = pl;
        for (index, k, seg, along, frac, turn) in placements {
            let path = &paths[k % paths.len()];
            let j = seg % (path.len() - 1);
            let (a, b) = (path[j], path[j + 1]);
            if (b - a).norm() < 0.1 {
                continue;
            }
            let foot = a + (b - a) * along;
            let p = foot + perpendicular(&(b - a), turn) * (frac * radii[k % paths.len()]);
            points[index.min(count - 1)] = p;
        }
        Case { radii: radii[..paths.len()].to_vec(), paths, points }
    })
}

/// Every flag agrees with the geometry outside the rounding band.
fn check(case: &Case, flagged: impl Fn(usize, usize) -> bool) -> Result<(), TestCaseError> {
    for (i, p) in case.points.iter().enumerate() {
        for (k, path) in case.paths.iter().enumerate() {
            let (d, r) = (conductor_distance(p, path), case.radii[k]);
            if d < r * (1.0 - 1e-6) {
                prop_assert!(flagged(i, k), "point {i} at {d} m of conductor {k} (radius {r} m) not flagged");
            } else if d > r * (1.0 + 1e-6) {
                prop_assert!(!flagged(i, k), "point {i} at {d} m of conductor {k} (radius {r} m) flagged");
            }
        }
    }
    Ok(())
}

fn filaments(case: &Case) -> Filaments {
    Filaments::new(
        &case
            .paths
            .iter()
            .zip(&case.radii)
            .map(|(p, r)| Filament { path: p.clone(), radius_m: *r })
            .collect::<Vec<_>>(),
    )
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    #[test]
    fn every_point_inside_a_conductor_is_flagged_by_every_variant(case in case()) {
        let fil = filaments(&case);
        let exc = Excitation {
            lines: vec![SpectralLine {
                order: 1,
                frequency_hz: 50.0,
                currents_a: vec![Complex64::new(1.0, 0.0); case.paths.len()],
            }],
        };
        for v in Variant::available() {
            let set = evaluate_using(v, &fil, &case.points, &exc);
            check(&case, |i, k| set.inside_of(i).any(|c| c == k))?;
        }
    }

    #[test]
    fn the_influence_matrix_flags_the_same_points(case in case()) {
        let m = influence_matrix(&filaments(&case), &case.points);
        let inside: Vec<bool> = (0..case.points.len()).map(|i| m.is_inside(i)).collect();
        for (i, p) in case.points.iter().enumerate() {
            let nearest = case.paths.iter().zip(&case.radii).map(|(path, r)| conductor_distance(p, path) / r);
            let ratio = nearest.fold(f64::INFINITY, f64::min);
            if ratio < 1.0 - 1e-6 {
                prop_assert!(inside[i], "point {i} at {ratio} radii not flagged");
            } else if ratio > 1.0 + 1e-6 {
                prop_assert!(!inside[i], "point {i} at {ratio} radii flagged");
            }
        }
    }
}
