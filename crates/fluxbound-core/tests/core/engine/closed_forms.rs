//! Closed forms from textbooks and derived laws (docs/REFERENCES.md, "Closed forms
//! for the field engine"). µ0 = 4π×10⁻⁷ T·m/A, so µ0/2π = 0.2 µT·m/A.

use super::*;
use fluxbound_core::field::{maximum_ut, resultant_ut, segment_unit_field};
use std::f64::consts::PI;

const MU0_OVER_2PI_UT: f64 = 0.2;

// Source: OpenStax University Physics Vol. 2, §12.2: B = µ0 I / (2π R).
// Derived: 1000 A at 1 m → 200.0 µT.
#[test]
fn a_very_long_wire_gives_the_infinite_wire_law_at_one_metre() {
    let w = [wire(&[[-5.0e4, 0.0, 0.0], [5.0e4, 0.0, 0.0]], 1000.0, 0.0)];
    let b = resultant_at(&w, [0.0, 1.0, 0.0]);
    // Finite-length error (2a/L)²/2 = 2e-10; rounding far below.
    assert!(rel(b, 200.0) < 1e-9, "{b}");
}

// Source: Griffiths, Introduction to Electrodynamics, Example 5.5 (edition
// from memory): on the bisector B = (µ0 I / 2π a) / sqrt(1 + (2a/L)²).
#[test]
fn a_finite_segment_of_length_twenty_times_the_distance_is_within_half_a_percent_of_the_infinite_wire() {
    let (a, l, i) = (0.5, 10.0, 300.0);
    let w = [wire(&[[-l / 2.0, 0.0, 0.0], [l / 2.0, 0.0, 0.0]], i, 0.0)];
    let b = resultant_at(&w, [0.0, 0.0, a]);
    let infinite = MU0_OVER_2PI_UT * i / a;
    let exact = infinite / (1.0 + (2.0 * a / l).powi(2)).sqrt();
    assert!(rel(b, exact) < 1e-12, "{b} vs {exact}");
    assert!(rel(b, infinite) < 0.005, "{b} vs {infinite}");
}

// Derived (docs/REFERENCES.md, D): L = 2 m, 100 A, bisector at 1 m → 14.142 µT.
#[test]
fn a_two_metre_segment_seen_from_one_metre_on_its_bisector_gives_14_142_microtesla() {
    let w = [wire(&[[0.0, -1.0, 0.0], [0.0, 1.0, 0.0]], 100.0, 0.0)];
    let b = resultant_at(&w, [1.0, 0.0, 0.0]);
    assert!(rel(b, 20.0 / 2.0_f64.sqrt()) < 1e-12, "{b}");
    assert!((b - 14.142).abs() < 5e-4);
}

// Source: Griffiths Example 5.5: B = (µ0 I / 4π s)(sin θ2 − sin θ1), the
// angles measured from the perpendicular foot, at points off the bisector
// and beyond the segment's end.
#[test]
fn a_finite_segment_matches_the_angle_form_off_its_bisector() {
    let i = 50.0;
    for (x, s) in [(0.3, 0.2), (1.7, 0.05), (-2.5, 1.3), (4.0, 0.01), (0.999, 3.0)] {
        let w = [wire(&[[0.0, 0.0, 0.0], [1.0, 0.0, 0.0]], i, 0.0)];
        let b = resultant_at(&w, [x, s, 0.0]);
        let (sin1, sin2) = ((0.0 - x) / (s * s + x * x).sqrt(), (1.0 - x) / (s * s + (1.0 - x).powi(2)).sqrt());
        let expected = 0.1 * i / s * (sin2 - sin1);
        assert!(rel(b, expected) < 1e-11, "x={x} s={s}: {b} vs {expected}");
    }
}

// Source: OpenStax University Physics Vol. 2, ch. 12 example: a 1.0 cm
// segment with 2.0 A seen perpendicularly from 1 m gives 2.0×10⁻⁹ T.
#[test]
fn a_one_centimetre_element_at_one_metre_gives_two_nanotesla() {
    let w = [wire(&[[-0.005, 0.0, 0.0], [0.005, 0.0, 0.0]], 2.0, 0.0)];
    let b_t = resultant_at(&w, [0.0, 1.0, 0.0]) * 1e-6;
    assert!(rel(b_t, 2.0e-9) < 1e-4, "{b_t}");
}

// Source: OpenStax University Physics Vol. 2, ch. 12 example: three long
// wires at three corners of a 1 cm square, 2 A each in the same direction,
// give 8×10⁻⁵ T at the fourth corner. The published answer has one
// significant figure; the exact superposition (derived) is
// 0.2·2/0.01·√2 + 0.2·2/(0.01√2) = 84.85 µT.
#[test]
fn three_long_wires_at_corners_of_a_square_give_the_published_field_at_the_fourth() {
    let l = 1.0e3;
    let w = [
        wire(&[[0.0, 0.0, -l], [0.0, 0.0, l]], 2.0, 0.0),
        wire(&[[0.01, 0.0, -l], [0.01, 0.0, l]], 2.0, 0.0),
        wire(&[[0.0, 0.01, -l], [0.0, 0.01, l]], 2.0, 0.0),
    ];
    let b = resultant_at(&w, [0.01, 0.01, 0.0]);
    let derived = 40.0 * 2.0_f64.sqrt() + 0.4 / (0.01 * 2.0_f64.sqrt());
    assert!(rel(b, derived) < 1e-9, "{b} vs {derived}");
    assert!((b - 80.0).abs() < 5.0, "one significant figure: 8e-5 T");
}

// Source: OpenStax University Physics Vol. 2, §12.1 problem answer: square
// loop of side a: B = 2√2 µ0 I / (π a); 20 cm, 10 A → 5.66×10⁻⁵ T.
#[test]
fn a_square_loop_gives_two_root_two_mu0_i_over_pi_a_at_its_centre() {
    let a = 0.2;
    let h = a / 2.0;
    let path = [[-h, -h, 0.0], [h, -h, 0.0], [h, h, 0.0], [-h, h, 0.0], [-h, -h, 0.0]];
    let b = resultant_at(&[wire(&path, 10.0, 0.0)], [0.0, 0.0, 0.0]);
    let exact = 2.0 * 2.0_f64.sqrt() * 4.0e-7 * PI * 10.0 / (PI * a) * 1e6;
    assert!(rel(b, exact) < 1e-12, "{b} vs {exact}");
    assert!(rel(b, 56.6) < 1e-3, "published 56.6 µT");
}

// Source: OpenStax University Physics Vol. 2, §12.4: on the axis of a
// circular loop B = µ0 I R² / (2 (z² + R²)^{3/2}). Derived: R = 0.5 m,
// 100 A → 125.66 µT at the centre, 44.43 µT at z = 0.5 m.
// An inscribed N-gon converges to the circle with error ∝ 1/N² (its
// perimeter deficit is ∝ 1/N²), so doubling N divides the error by ≈ 4.
#[test]
fn polygons_inscribed_in_a_circular_loop_converge_to_the_loop_law_at_second_order() {
    let (r, i) = (0.5, 100.0);
    let loop_law = |z: f64| 2.0 * PI * 0.1 * i * r * r / (z * z + r * r).powf(1.5);
    assert!((loop_law(0.0) - 125.66).abs() < 0.01);
    assert!((loop_law(0.5) - 44.43).abs() < 0.01);
    for z in [0.0, 0.5] {
        let exact = loop_law(z);
        let err = |n: usize| rel(resultant_at(&[wire(&polygon_loop(n, r), i, 0.0)], [0.0, 0.0, z]), exact);
        let (e1, e2, e3) = (err(64), err(128), err(256));
        for (a, b) in [(e1, e2), (e2, e3)] {
            let ratio = a / b;
            assert!((ratio - 4.0).abs() < 0.05, "z={z}: convergence ratio {ratio}");
        }
        assert!(err(4096) < 1e-6);
    }
}

// Source: OpenStax University Physics Vol. 2, §12.6: a finite solenoid on
// its axis gives (µ0 n I / 2)(cos β1 − cos β2); ch. 12 example: 300 turns
// over 14.0 cm at 0.410 A → 1.10 mT at the centre (long-solenoid value).
// Modelled here as a 300-turn helix of radius 1 cm, 48 segments per turn.
#[test]
fn a_helix_of_three_hundred_turns_gives_the_solenoid_field_at_its_centre() {
    let (turns, len, r, i, per_turn) = (300usize, 0.14, 0.01, 0.410, 48usize);
    let n = turns * per_turn;
    let path: Vec<[f64; 3]> = (0..=n)
        .map(|j| {
            let t = std::f64::consts::TAU * j as f64 / per_turn as f64;
            [r * t.cos(), r * t.sin(), -len / 2.0 + len * j as f64 / n as f64]
        })
        .collect();
    let b_ut = resultant_at(&[wire(&path, i, 0.0)], [0.0, 0.0, 0.0]);
    let n_per_m = turns as f64 / len;
    let half = len / 2.0;
    let cos_b = half / (half * half + r * r).sqrt();
    let finite = 0.5 * 4.0e-7 * PI * n_per_m * i * (2.0 * cos_b) * 1e6;
    // The helix differs from an ideal current sheet by its pitch and the
    // polygon deficit (48-gon: 0.3 %); 0.5 % covers both.
    assert!(rel(b_ut, finite) < 5e-3, "{b_ut} vs {finite}");
    assert!(rel(b_ut * 1e-3, 1.10) < 0.01, "published 1.10 mT: {b_ut} µT");
}

// Derived (docs/REFERENCES.md, D): two antiparallel long wires a distance d apart
// give |B| = µ0 I d / (2π r1 r2) exactly; d = 1 m at x = ±0.5 m, 100 A →
// 80.00 µT at the midpoint.
#[test]
fn an_antiparallel_pair_follows_the_exact_two_wire_form_everywhere() {
    let (l, i, d) = (2.0e4, 100.0, 1.0);
    let pair = [wire(&[[-0.5, 0.0, -l], [-0.5, 0.0, l]], i, 0.0), wire(&[[0.5, 0.0, l], [0.5, 0.0, -l]], i, 0.0)];
    for (x, y) in [(0.0, 0.0), (0.0, 1.0), (2.0, 0.3), (-3.0, -4.0), (10.0, 10.0), (0.2, -0.1)] {
        let (r1, r2) = (((x + 0.5_f64).powi(2) + y * y).sqrt(), ((x - 0.5_f64).powi(2) + y * y).sqrt());
        let exact = MU0_OVER_2PI_UT * i * d / (r1 * r2);
        let b = resultant_at(&pair, [x, y, 0.0]);
        // Finite length 2e4 m: relative error below (r/L)² ≈ 1e-6.
        assert!(rel(b, exact) < 1e-6, "({x},{y}): {b} vs {exact}");
    }
    assert!(rel(resultant_at(&pair, [0.0, 0.0, 0.0]), 80.0) < 1e-6);
}

fn three_phase(positions: [[f64; 2]; 3], i: f64) -> Vec<Wire> {
    let l = 2.0e4;
    positions
        .iter()
        .zip([0.0, -120.0, 120.0])
        .map(|(p, ang)| wire(&[[p[0], p[1], -l], [p[0], p[1], l]], i, ang))
        .collect()
}

/// Resultant and maximum (µT) of `wires` at `p`. `maximum_ut` clamps its
/// result to the resultant, so a polarisation check on it alone could not see
/// an overshoot: it must first match the major semi-axis found from the
/// ellipse itself (`ellipse_major_rms`, no clamp) to 1e-9 of the resultant
/// (the search's angle step of 1e-10 rad leaves an error far below that).
fn at(wires: &[Wire], p: [f64; 3]) -> (f64, f64) {
    let b = field_at(wires, &[Point3::new(p[0], p[1], p[2])])[0];
    let (r, m) = (resultant_ut(&b), maximum_ut(&b));
    let major = ellipse_major_rms(&b);
    assert!((m - major).abs() <= 1e-9 * r, "maximum_ut {m} vs the ellipse's major semi-axis {major}");
    (r, major)
}

// Derived (docs/REFERENCES.md, D): a balanced flat set, spacing d centre to
// outer, far field B ≈ √3 µ0 I d / (2π r²) = 0.346 I d / r² µT (the 2-D
// dipole term; within 1 % at r = 10 d broadside), nearly linear
// polarisation. In line with the conductors the next term is larger: summing
// the three infinite-wire phasors by hand at r = 10 d gives
// |e^{j120°}/9 − 1/11| / (√3/10) = 0.175246 / 0.173205 = 1.0118.
#[test]
fn a_balanced_flat_three_phase_set_falls_as_one_over_r_squared_with_linear_polarisation() {
    let (d, i) = (0.3, 1000.0);
    let set = three_phase([[-d, 0.0], [0.0, 0.0], [d, 0.0]], i);
    let r = 10.0 * d;
    let law = 3.0_f64.sqrt() * MU0_OVER_2PI_UT * i * d / (r * r);
    let (broadside, m) = at(&set, [0.0, r, 0.0]);
    assert!(rel(broadside, law) < 0.01, "{broadside} vs {law}");
    assert!(m / broadside > 0.99, "nearly linear: max/resultant = {}", m / broadside);
    let (in_line, _) = at(&set, [r, 0.0, 0.0]);
    assert!(rel(in_line / law, 1.0118) < 1e-4, "in line: {}", in_line / law);
    for dir in [[0.0, 1.0], [1.0, 0.0], [0.6, 0.8]] {
        let (b1, m1) = at(&set, [r * dir[0], r * dir[1], 0.0]);
        let (b2, _) = at(&set, [2.0 * r * dir[0], 2.0 * r * dir[1], 0.0]);
        assert!(rel(b1 / b2, 4.0) < 0.03, "1/r² law along {dir:?}: ratio {}", b1 / b2);
        assert!(m1 / b1 > 0.99, "nearly linear along {dir:?}");
    }
}

// Derived (docs/REFERENCES.md, D): a balanced equilateral (trefoil) set of side s,
// far field B ≈ √(3/2) µ0 I s / (2π r²) = 0.245 I s / r² µT, circular
// polarisation: maximum → resultant / √2 as r grows (the correction is of
// order s/r, so it halves when r doubles).
#[test]
fn a_balanced_trefoil_set_falls_as_one_over_r_squared_with_circular_polarisation() {
    let (s, i) = (0.1, 800.0);
    let h = s * 3.0_f64.sqrt() / 2.0;
    let set = three_phase([[-s / 2.0, -h / 3.0], [s / 2.0, -h / 3.0], [0.0, 2.0 * h / 3.0]], i);
    for dir in [[0.0, 1.0], [1.0, 0.0], [-0.8, 0.6]] {
        let r = 20.0 * s;
        let (b, _) = at(&set, [r * dir[0], r * dir[1], 0.0]);
        let law = 1.5_f64.sqrt() * MU0_OVER_2PI_UT * i * s / (r * r);
        assert!(rel(b, law) < 0.02, "dir {dir:?}: {b} vs {law}");
        let (b2, _) = at(&set, [2.0 * r * dir[0], 2.0 * r * dir[1], 0.0]);
        assert!(rel(b / b2, 4.0) < 0.03, "1/r² law: ratio {}", b / b2);
        let off = |k: f64| {
            let (b, m) = at(&set, [k * s * dir[0], k * s * dir[1], 0.0]);
            (m / b - 1.0 / 2.0_f64.sqrt()).abs()
        };
        let (e20, e40, e80) = (off(20.0), off(40.0), off(80.0));
        assert!(e40 < 0.6 * e20 && e80 < 0.6 * e40, "polarisation converges: {e20} {e40} {e80}");
        assert!(off(200.0) < 0.01 / 2.0_f64.sqrt());
    }
}

// Source: public information pages of a national grid operator
// (docs/REFERENCES.md, V): 1/r for a net current. Checked against the infinite-wire law.
#[test]
fn an_unbalanced_set_falls_as_one_over_r_far_away() {
    let mut set = three_phase([[-0.2, 0.0], [0.0, 0.0], [0.2, 0.0]], 500.0);
    set[0].current_a *= 1.2; // 100 A of net current
    let (b1, _) = at(&set, [0.0, 50.0, 0.0]);
    let (b2, _) = at(&set, [0.0, 100.0, 0.0]);
    assert!(rel(b1 / b2, 2.0) < 0.01, "1/r law: ratio {}", b1 / b2);
}

// DESIGN.md: a point on a segment's axis line outside it gets exactly zero
// from that segment (a × b = 0), never NaN.
#[test]
fn a_point_on_the_axis_line_beyond_a_segment_gets_exactly_zero_from_it() {
    let b = segment_unit_field(&Point3::new(0.0, 0.0, 0.0), &Point3::new(2.0, 0.0, 0.0), &Point3::new(5.0, 0.0, 0.0));
    assert_eq!(b.map(|v| v.norm()), Some(0.0));
    let b = segment_unit_field(&Point3::new(0.0, 0.0, 0.0), &Point3::new(0.0, 0.0, 3.0), &Point3::new(0.0, 0.0, -1.0));
    assert_eq!(b.map(|v| v.norm()), Some(0.0));
    // Oblique axis: a × b is only rounding noise, far below any real field
    // (1e-15 of the 1/distance scale of the same current).
    let (p1, p2) = (Point3::new(0.1, 0.2, 0.3), Point3::new(1.1, 2.2, 3.3));
    let p = Point3::new(0.1 + 3.0, 0.2 + 6.0, 0.3 + 9.0);
    let g = segment_unit_field(&p1, &p2, &p).unwrap();
    assert!(g.iter().all(|v| v.is_finite()) && g.norm() < 1e-15, "{g:?}");
}

#[test]
fn a_point_on_the_filament_or_at_a_vertex_is_flagged_not_computed() {
    let (p1, p2) = (Point3::new(0.0, 0.0, 0.0), Point3::new(1.0, 1.0, 0.0));
    assert_eq!(segment_unit_field(&p1, &p2, &Point3::new(0.5, 0.5, 0.0)), None);
    assert_eq!(segment_unit_field(&p1, &p2, &p1), None);
    let w = [wire(&[[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [1.0, 1.0, 0.0]], 100.0, 0.0)];
    let fil = Filaments::new(&[Filament { path: w[0].path.clone(), radius_m: 0.02 }]);
    let exc =
        Excitation { lines: vec![SpectralLine { order: 1, frequency_hz: 50.0, currents_a: vec![w[0].current_a] }] };
    let points = [
        Point3::new(0.5, 0.0, 0.0),    // on the filament
        Point3::new(0.5, 0.019, 0.0),  // inside the radius beside a segment
        Point3::new(1.0, 0.0, 0.0),    // at the corner vertex
        Point3::new(-0.015, 0.0, 0.0), // beyond the end, within the radius of the end
        Point3::new(0.5, 0.021, 0.0),  // just outside
    ];
    let set = field::evaluate(&fil, &points, &exc);
    let flagged: Vec<bool> = (0..points.len()).map(|i| set.inside_of(i).next().is_some()).collect();
    assert_eq!(flagged, [true, true, true, true, false]);
    for i in 0..points.len() {
        assert!(set.at(i)[0].iter().all(|c| c.re.is_finite() && c.im.is_finite()));
    }
    // Just outside: both segments by the angle form of Griffiths Example
    // 5.5, B = (µ0 I / 4π s)(sin θ2 − sin θ1); both point along +z here.
    let b = resultant_ut(&set.at(4)[0]);
    let angle_form = |s: f64, from: f64, to: f64| {
        0.1 * 100.0 / s * (to / (s * s + to * to).sqrt() - from / (s * s + from * from).sqrt())
    };
    let expected = angle_form(0.021, -0.5, 0.5) + angle_form(0.5, -0.021, 1.0 - 0.021);
    assert!(rel(b, expected) < 1e-12, "{b} vs {expected}");
}
