//! Busbars with a rectangular cross-section (`site/bar.rs`), against the
//! 2-D closed form of a rectangular conductor.
//!
//! Source of the closed form: the 2-D field of a line current along z,
//! B = µ0 I / (2π) · (−Y, X) / (X² + Y²) with (X, Y) from the source to the
//! field point (Ampère's law; any electromagnetism text, e.g. Griffiths,
//! *Introduction to Electrodynamics*, 4th ed., Ex. 5.7), integrated over a
//! rectangle of uniform current density J = I / (w h). With
//! G(X, Y) = X·atan(Y/X) + (Y/2)·ln(X² + Y²), ∂²G/∂X∂Y = X / (X² + Y²)
//! (derived here: ∂G/∂Y = X²/(X²+Y²) + ½ln(X²+Y²) + Y²/(X²+Y²) − 1 + 1 … the
//! linear term −Y of the full antiderivative cancels in the double
//! difference), so
//!   B_y = µ0 J / (2π) · [[G(X, Y)]] and B_x = −µ0 J / (2π) · [[G(Y, X)]]
//! over the rectangle's corners. This is the log/atan form of the
//! rectangular-bar field (as in J. Leuer's and Grover's treatments); it is
//! checked below against a brute-force midpoint sum so a slip in the
//! derivation cannot pass unnoticed.
//!
//! The bar is ±50 m long, so the 3-D field differs from the 2-D one by the
//! finite-length factor L/√(L² + d²) − 1 ≈ −d²/(2L²): −5 × 10⁻⁵ at 0.5 m,
//! below every tolerance used here.

use fluxbound_core::field::{self, total_resultant_ut};
use fluxbound_core::site::bar::cells;
use fluxbound_core::site::{WarningCode, filaments, parse_site, site_warnings};
use nalgebra::Point3;
use serde_json::{Value, json};

/// µ0 / (2π) · 1 kA in µT·m: 2 × 10⁻⁷ T·m/A × 1000 A.
const MU0_I_OVER_2PI_UT_M: f64 = 200.0;

fn g(x: f64, y: f64) -> f64 {
    let a = if x == 0.0 { 0.0 } else { x * (y / x).atan() };
    let l = if x == 0.0 && y == 0.0 { 0.0 } else { 0.5 * y * (x * x + y * y).ln() };
    a + l
}

/// 2-D field magnitude of a `w` × `h` bar centred at the origin (width
/// along u) at (u, v), per unit µ0 I / (2π), 1/m.
fn closed_form(u: f64, v: f64, w: f64, h: f64) -> f64 {
    let j = 1.0 / (w * h);
    let (x1, x2, y1, y2) = (u - w / 2.0, u + w / 2.0, v - h / 2.0, v + h / 2.0);
    let by = j * (g(x2, y2) - g(x1, y2) - g(x2, y1) + g(x1, y1));
    let bx = -j * (g(y2, x2) - g(y1, x2) - g(y2, x1) + g(y1, x1));
    bx.hypot(by)
}

/// The same by a midpoint sum over n × m sub-rectangles (brute force).
fn midpoint_sum(u: f64, v: f64, w: f64, h: f64, n: usize, m: usize) -> f64 {
    let (mut bx, mut by) = (0.0, 0.0);
    for i in 0..n {
        for k in 0..m {
            let x = u - (-w / 2.0 + (i as f64 + 0.5) * w / n as f64);
            let y = v - (-h / 2.0 + (k as f64 + 0.5) * h / m as f64);
            let r2 = x * x + y * y;
            bx -= y / r2;
            by += x / r2;
        }
    }
    bx.hypot(by) / (n * m) as f64
}

/// A ±50 m bar along x, 100 mm wide along y, 10 mm high along z, 1 kA.
fn bar_site(cross_section: bool) -> Value {
    let mut bar = json!({"id": "bus", "path": [[-50.0, 0.0, 0.0], [50.0, 0.0, 0.0]], "radius_m": 0.005,
                         "current": {"rms_a": 1000.0}});
    if cross_section {
        bar["cross_section"] = json!({"width_m": 0.1, "height_m": 0.01, "orientation": [0.0, 1.0, 0.0]});
    }
    json!({"frequency_hz": 50, "conductors": [bar]})
}

fn field_ut(v: &Value, points: &[Point3<f64>]) -> Vec<f64> {
    let site = parse_site(&v.to_string()).unwrap();
    let set = field::evaluate(&filaments(site.conductors()), points, &site.excitation());
    (0..points.len()).map(|i| total_resultant_ut(set.at(i))).collect()
}

#[test]
fn the_closed_form_agrees_with_a_brute_force_midpoint_sum() {
    // Midpoint rule error ~ (cell / distance)² / 24: 2000 × 200 cells of
    // 0.05 mm at ≥ 10 mm from the nearest cell gives < 10⁻⁵.
    for (u, v) in [(0.06, 0.0), (0.0, 0.06), (0.2, 0.0), (0.03, 0.04)] {
        let exact = closed_form(u, v, 0.1, 0.01);
        let brute = midpoint_sum(u, v, 0.1, 0.01, 2000, 200);
        assert!((exact / brute - 1.0).abs() < 1e-5, "at ({u}, {v}): {exact} against {brute}");
    }
}

#[test]
fn a_bar_matches_the_2d_closed_form_on_both_axes_within_the_stated_bounds() {
    // bar.rs states ≤ 1e-5 at twice the longer side and beyond, ≤ 1e-4 at
    // one shorter side from the surface and beyond; with the finite-length
    // term (≤ 5e-5) that is 0.1 % at 200 and 500 mm (the goal) and 2e-4
    // at 60 and 100 mm (60 mm on the wide axis is 10 mm, one thickness,
    // from the edge).
    let v = bar_site(true);
    for (d, tol) in [(0.06, 2e-4), (0.1, 2e-4), (0.2, 1e-3), (0.5, 1e-3)] {
        let got = field_ut(&v, &[Point3::new(0.0, d, 0.0), Point3::new(0.0, 0.0, d)]);
        let wide = MU0_I_OVER_2PI_UT_M * closed_form(d, 0.0, 0.1, 0.01);
        let thin = MU0_I_OVER_2PI_UT_M * closed_form(0.0, d, 0.1, 0.01);
        assert!((got[0] / wide - 1.0).abs() < tol, "wide axis at {d} m: {} against {wide} µT", got[0]);
        assert!((got[1] / thin - 1.0).abs() < tol, "thin axis at {d} m: {} against {thin} µT", got[1]);
    }
}

#[test]
fn the_thin_wire_misses_the_bar_field_by_the_amounts_the_closed_form_gives() {
    // Issue 15: −29 % at 10 mm from the edge, −8.9 % at 100 mm (wide axis),
    // i.e. 60 and 100 mm from the centre, from the closed form above.
    let v = bar_site(false);
    for (d, expected) in [(0.06, -0.294), (0.1, -0.0885)] {
        let thin_wire = field_ut(&v, &[Point3::new(0.0, d, 0.0)])[0];
        let error = thin_wire / (MU0_I_OVER_2PI_UT_M * closed_form(d, 0.0, 0.1, 0.01)) - 1.0;
        assert!((error - expected).abs() < 0.005, "thin wire at {d} m off by {error}");
    }
    let at_60 = field_ut(&v, &[Point3::new(0.0, 0.06, 0.0)])[0];
    assert!((at_60 / (MU0_I_OVER_2PI_UT_M * closed_form(0.06, 0.0, 0.1, 0.01)) - 1.0).abs() > 0.05);
}

#[test]
fn shares_of_a_bar_sum_to_one_and_follow_the_panel_rule() {
    // 100 × 10 mm: ⌈100/10⌉ = 10 square panels of 3 × 3 nodes; Gauss–
    // Legendre weights sum to the interval's length (A&S 25.4.29).
    let c = cells(0.1, 0.01);
    assert_eq!(c.len(), 90);
    assert!((c.iter().map(|c| c.share).sum::<f64>() - 1.0).abs() < 1e-12);
    // Every node lies inside the rectangle.
    assert!(c.iter().all(|c| c.along_width_m.abs() < 0.05 && c.along_height_m.abs() < 0.005));
    // A square bar: one panel, 9 filaments; a 1000:1 strip is capped at 16 panels.
    assert_eq!(cells(0.02, 0.02).len(), 9);
    assert_eq!(cells(1.0, 0.001).len(), 16 * 9);
}

#[test]
fn points_inside_the_rectangle_are_flagged_and_points_two_mm_outside_are_not() {
    let v = bar_site(true);
    let site = parse_site(&v.to_string()).unwrap();
    // Inside: centre, near each corner, mid-edges (y across the width, z
    // across the height).
    let inside = [(0.0, 0.0), (0.0499, 0.0049), (-0.0499, -0.0049), (0.0499, 0.0), (0.0, -0.0049), (0.025, 0.003)];
    // Outside by 2 mm: the cells reach at most 1.65 mm beyond the surface
    // (node 3.873 mm from a 10 mm panel's centre, cell [2.22, 5] mm:
    // √(2.22² + 1.65²) − 1.13 = 1.64 mm).
    let outside = [(0.0, 0.007), (0.052, 0.0), (-0.052, 0.0), (0.0, -0.007), (0.052, 0.007)];
    let points: Vec<Point3<f64>> = inside.iter().chain(&outside).map(|(y, z)| Point3::new(3.0, *y, *z)).collect();
    let set = field::evaluate(&filaments(site.conductors()), &points, &site.excitation());
    for (i, p) in points.iter().enumerate() {
        let flagged = set.inside_of(i).next().is_some();
        assert_eq!(flagged, i < inside.len(), "point {p}");
    }
}

#[test]
fn a_bar_warns_as_one_conductor_under_its_own_id_and_pointer() {
    let mut v = bar_site(true);
    v["conductors"].as_array_mut().unwrap().push(
        json!({"id": "after", "path": [[0.0, 5.0, 0.0], [1.0, 5.0, 0.0]], "radius_m": 0.01, "current": {"rms_a": 1.0}}),
    );
    v["positions"] = json!([{"id": "on-bar", "at": [0.0, 0.0, 0.0]}]);
    let site = parse_site(&v.to_string()).unwrap();
    let w = site_warnings(&site);
    assert!(!w.iter().any(|w| w.code == WarningCode::ConductorsOverlap), "{w:#?}");
    let open: Vec<&str> = w.iter().filter(|w| w.code == WarningCode::OpenEnd).map(|w| w.pointer.as_str()).collect();
    // The bar's two ends once each, and the conductor listed after it at
    // its own index.
    assert_eq!(open, ["/conductors/0/path/0", "/conductors/0/path/1", "/conductors/1/path/0", "/conductors/1/path/1"]);
    let inside: Vec<_> = w.iter().filter(|w| w.code == WarningCode::InsideConductor).collect();
    assert_eq!(inside.len(), 1);
    assert!(inside[0].detail.contains("'bus'"));
}

#[test]
fn bad_cross_sections_are_refused_with_pointers() {
    let mut v = bar_site(true);
    v["conductors"][0]["cross_section"] = json!({"width_m": 0.0, "height_m": 3.0, "orientation": [1.0, 0.05, 0.0]});
    let p = parse_site(&v.to_string()).unwrap_err();
    let at: Vec<&str> = p.iter().map(|p| p.pointer.as_str()).collect();
    assert_eq!(
        at,
        [
            "/conductors/0/cross_section/width_m",
            "/conductors/0/cross_section/height_m",
            "/conductors/0/cross_section/orientation"
        ]
    );
    v["conductors"][0]["cross_section"] = json!({"width_m": 0.1, "height_m": 0.01, "orientation": [0.0, 0.0, 0.0]});
    let p = parse_site(&v.to_string()).unwrap_err();
    assert_eq!(p.iter().next().unwrap().pointer, "/conductors/0/cross_section/orientation");
}

#[test]
fn a_bent_bar_keeps_its_filaments_parallel_through_the_bend() {
    // An L: east 10 m, then north 10 m, width vertical ([0, 0, 1]), so the
    // height lies horizontal: the filament at height offset v on the first
    // leg (t = x̂, e_h = x̂ × ẑ = −ŷ) sits at y = −v, on the second (t = ŷ,
    // e_h = ŷ × ẑ = x̂) at x = 10 + v: the corner vertex is (10 + v, −v).
    let v = json!({"frequency_hz": 50, "conductors": [{"id": "bus", "radius_m": 0.005, "current": {"rms_a": 100.0},
        "path": [[0.0, 0.0, 1.0], [10.0, 0.0, 1.0], [10.0, 10.0, 1.0]],
        "cross_section": {"width_m": 0.02, "height_m": 0.02, "orientation": [0.0, 0.0, 1.0]}}]});
    let site = parse_site(&v.to_string()).unwrap();
    assert_eq!(site.conductors().len(), 9);
    for c in site.conductors() {
        let off = -c.path[0].y; // the height offset, from the first vertex
        let corner = c.path[1];
        assert!((corner.x - (10.0 + off)).abs() < 1e-12 && (corner.y + off).abs() < 1e-12, "{corner}");
        assert!((c.path[2].x - (10.0 + off)).abs() < 1e-12);
        assert_eq!(c.id, "bus");
    }
}

#[test]
fn a_distance_search_from_conductor_id_starts_on_the_bars_axis() {
    use fluxbound_core::mitigate::{Direction, Meter, Origin, Target, distance};
    use fluxbound_core::site::CircuitLoad;
    use nalgebra::{Unit, Vector3};
    // The level is the closed-form field 0.2 m out on the wide axis, so the
    // search from `conductor:bus` along +y must stop 0.2 m from the axis.
    // Tolerance: the bisection's 1e-4 m plus the rule's 1e-5 and the
    // finite length's 4e-6 relative (B ∝ 1/d there, so as much in distance).
    let site = parse_site(&bar_site(true).to_string()).unwrap();
    let level_ut = MU0_I_OVER_2PI_UT_M * closed_form(0.2, 0.0, 0.1, 0.01);
    let loads = vec![CircuitLoad::PRESENT];
    let target = Target::LevelUt(level_ut);
    let meter = Meter::new(&site, &loads, &target).unwrap();
    let from = Origin::Conductor("bus".into()).locate(&site, &meter).unwrap();
    assert!(from.coords.norm() < 1e-12, "the bar's axis centre, not a filament's: {from}");
    let along = Direction::Along(Unit::new_normalize(Vector3::new(0.0, 1.0, 0.0)));
    let r = distance(&site, &loads, from, along, &target, u64::MAX).unwrap();
    assert!((r.distance_m.unwrap() - 0.2).abs() < 2e-4, "{r:?}");
}

#[test]
fn maps_and_exports_draw_a_bar_once_along_its_axis() {
    let site = parse_site(&bar_site(true).to_string()).unwrap();
    let drawn = fluxbound_core::site::bar::drawn(site.conductors());
    assert_eq!(drawn.len(), 1);
    assert_eq!(drawn[0].id, "bus");
    assert!((drawn[0].path[0] - Point3::new(-50.0, 0.0, 0.0)).norm() < 1e-12);
    assert!((drawn[0].path[1] - Point3::new(50.0, 0.0, 0.0)).norm() < 1e-12);
    // The tube holds the rectangle (half-diagonal √(50² + 5²) = 50.25 mm)
    // and reaches no more than the cells' 1.65 mm beyond it.
    assert!((0.05025..0.0525).contains(&drawn[0].radius_m), "{}", drawn[0].radius_m);
}
