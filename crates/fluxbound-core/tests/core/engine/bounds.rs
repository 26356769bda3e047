//! The field bounds of `field::bound`, checked against the closed form of a
//! finite straight segment written here independently (Source: Griffiths,
//! *Introduction to Electrodynamics*, Example 5.5:
//! `B = (µ0 I / 4π s)(sin θ2 − sin θ1)`, direction `û × ŝ`), on random
//! configurations from a fixed-seed generator (reproducible).

use fluxbound_core::field::bound::{
    FIELD_BOUND_UT_M_PER_A, SLOPE_BOUND_UT_PER_M_M2_PER_A, SegmentBounds, point_segment_distance_m,
};
use fluxbound_core::field::{Excitation, Filament, Filaments, SpectralLine};
use nalgebra::{Point3, Vector3};
use num_complex::Complex64;

/// xorshift64*: a small reproducible generator, uniform in [0, 1).
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        (self.0.wrapping_mul(0x2545_F491_4F6C_DD1D) >> 11) as f64 / (1u64 << 53) as f64
    }
    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.next()
    }
    fn point(&mut self, half: f64) -> Point3<f64> {
        Point3::new(self.range(-half, half), self.range(-half, half), self.range(-half, half))
    }
    fn unit(&mut self) -> Vector3<f64> {
        loop {
            let v = Vector3::new(self.range(-1.0, 1.0), self.range(-1.0, 1.0), self.range(-1.0, 1.0));
            if v.norm() > 0.1 && v.norm() <= 1.0 {
                return v.normalize();
            }
        }
    }
}

/// Field vector (µT) of a segment `a`→`b` carrying `i_a` at `p`, from the
/// angle form: `s` the distance to the line, `t1`, `t2` the ends' axial
/// coordinates from the foot of the perpendicular.
fn segment_field(a: &Point3<f64>, b: &Point3<f64>, i_a: f64, p: &Point3<f64>) -> Vector3<f64> {
    let u = (b - a).normalize();
    let foot = a + u * (p - a).dot(&u);
    let sv = p - foot;
    let s = sv.norm();
    let (t1, t2) = ((a - foot).dot(&u), (b - foot).dot(&u));
    let sin = |t: f64| t / (t * t + s * s).sqrt();
    u.cross(&(sv / s)) * (0.1 * i_a / s * (sin(t2) - sin(t1)))
}

#[test]
fn one_segment_never_exceeds_point_two_i_over_its_distance_to_the_segment() {
    // 20 000 random segments (0.01–10 m) and points in a 10 m box: the
    // bound may be approached (beside a long segment, ratio → 1) but not
    // passed; 1e-12 relative allows for rounding only.
    let mut rng = Rng(0x5EED_0001);
    let mut worst = 0.0_f64;
    for _ in 0..20_000 {
        let a = rng.point(5.0);
        let b = a + rng.unit() * rng.range(0.01, 10.0);
        let p = rng.point(5.0);
        let d = point_segment_distance_m(&p, &a, &b);
        if d < 1e-6 {
            continue;
        }
        let ratio = segment_field(&a, &b, 1.0, &p).norm() / (FIELD_BOUND_UT_M_PER_A / d);
        worst = worst.max(ratio);
    }
    assert!(worst <= 1.0 + 1e-12, "worst |B| / (0.2 I/d) = {worst}");
    assert!(worst > 0.5, "the sample never came near the bound: {worst}");
}

#[test]
fn one_segments_field_changes_no_faster_than_point_four_i_over_d_squared() {
    // Difference quotients over a step h = 1e-4·d along random directions:
    // |B(p + h u) − B(p)| / h ≤ 0.4 I / (d − h)², d − h the least distance
    // along the step. Points beyond a segment's end, seen end-on, are
    // sampled on purpose: there the infinite-wire slope 0.2 I/d² is passed.
    let mut rng = Rng(0x5EED_0002);
    let (mut worst, mut beyond_infinite_wire) = (0.0_f64, 0);
    for k in 0..20_000 {
        let a = rng.point(5.0);
        let dir = rng.unit();
        let b = a + dir * rng.range(0.01, 10.0);
        let p = if k % 4 == 0 {
            // Near the axis beyond the end b.
            b + dir * rng.range(0.01, 2.0) + rng.unit() * rng.range(0.0, 0.05)
        } else {
            rng.point(5.0)
        };
        let d = point_segment_distance_m(&p, &a, &b);
        if d < 1e-3 {
            continue;
        }
        let h = 1e-4 * d;
        let u = rng.unit();
        let slope = (segment_field(&a, &b, 1.0, &(p + u * h)) - segment_field(&a, &b, 1.0, &p)).norm() / h;
        worst = worst.max(slope / (SLOPE_BOUND_UT_PER_M_M2_PER_A / ((d - h) * (d - h))));
        if slope > 0.2 / (d * d) * 1.01 {
            beyond_infinite_wire += 1;
        }
    }
    // 1e-6 relative: the bound is taken at the least distance along the
    // step, so the difference quotient is within it up to rounding; 1e-6
    // covers the cancellation in a difference over a step of 1e-4·d.
    assert!(worst <= 1.0 + 1e-6, "worst slope / (0.4 I/d²) = {worst}");
    assert!(beyond_infinite_wire > 0, "no sample showed a finite segment passing the infinite-wire slope");
}

/// `n` segments from random starts within 3 m, 0.1–6 m long.
fn random_segments(rng: &mut Rng, n: usize) -> Vec<(Point3<f64>, Point3<f64>)> {
    (0..n)
        .map(|_| {
            let a = rng.point(3.0);
            (a, a + rng.unit() * rng.range(0.1, 6.0))
        })
        .collect()
}

#[test]
fn the_bound_over_a_ball_holds_at_every_point_sampled_inside_it() {
    // Three segments with complex currents at two spectral lines; balls of
    // random radius; 200 points inside each. Each line's resultant at every
    // point must stay within `line_bounds` given the resultant at the
    // centre (1e-12 relative: rounding only).
    let mut rng = Rng(0x5EED_0003);
    for _ in 0..300 {
        let segs = random_segments(&mut rng, 3);
        let currents: Vec<[Complex64; 2]> = (0..3)
            .map(|_| {
                [
                    Complex64::from_polar(rng.range(1.0, 3000.0), rng.range(0.0, 6.3)),
                    Complex64::from_polar(rng.range(0.0, 300.0), rng.range(0.0, 6.3)),
                ]
            })
            .collect();
        let filaments = Filaments::new(
            &segs.iter().map(|(a, b)| Filament { path: vec![*a, *b], radius_m: 1e-3 }).collect::<Vec<_>>(),
        );
        let excitation = Excitation {
            lines: (0..2)
                .map(|f| SpectralLine {
                    order: [1, 5][f],
                    frequency_hz: [50.0, 250.0][f],
                    currents_a: currents.iter().map(|c| c[f]).collect(),
                })
                .collect(),
        };
        let bounds = SegmentBounds::new(&filaments, &excitation);
        let field = |p: &Point3<f64>, f: usize| -> f64 {
            // Phasor sum of the closed forms: real geometry times complex current.
            let (mut re, mut im) = (Vector3::zeros(), Vector3::zeros());
            for ((a, b), c) in segs.iter().zip(&currents) {
                let g = segment_field(a, b, 1.0, p);
                re += g * c[f].re;
                im += g * c[f].im;
            }
            (re.norm_squared() + im.norm_squared()).sqrt()
        };
        let centre = rng.point(4.0);
        let rho = rng.range(0.001, 0.5);
        let sampled = [field(&centre, 0), field(&centre, 1)];
        let bound = bounds.line_bounds(&centre, rho, Some(&sampled));
        for _ in 0..200 {
            let p = centre + rng.unit() * rho * rng.next();
            if segs.iter().any(|(a, b)| point_segment_distance_m(&p, a, b) < 1e-3) {
                continue;
            }
            for (f, limit) in bound.iter().enumerate() {
                let b = field(&p, f);
                assert!(b <= limit * (1.0 + 1e-12), "line {f}: {b} µT above the bound {limit} µT");
            }
        }
    }
}

#[test]
fn the_sums_over_a_big_ball_are_at_least_those_of_every_ball_inside_it() {
    // What lets the area refinement bound a block of cells at once: for any
    // ball inside the big one and any sampled centre value, the per-line
    // bound built from the big ball's sums, `min(value, sampled + ρ·slope)`,
    // is at least `line_bounds` of the small ball. Balls are placed up to
    // touching the big ball's surface; no tolerance, since the big ball's
    // sums carry their own margin for rounding.
    let mut rng = Rng(0x5EED_0004);
    let (mut compared, mut refused) = (0, 0);
    for _ in 0..300 {
        let segs = random_segments(&mut rng, 3);
        let radius_m = rng.range(1e-3, 0.05);
        let filaments =
            Filaments::new(&segs.iter().map(|(a, b)| Filament { path: vec![*a, *b], radius_m }).collect::<Vec<_>>());
        let excitation = Excitation {
            lines: (0..2)
                .map(|f| SpectralLine {
                    order: [1, 5][f],
                    frequency_hz: [50.0, 250.0][f],
                    currents_a: (0..3)
                        .map(|_| Complex64::from_polar(rng.range(0.0, [3000.0, 300.0][f]), rng.range(0.0, 6.3)))
                        .collect(),
                })
                .collect(),
        };
        let bounds = SegmentBounds::new(&filaments, &excitation);
        let centre = rng.point(6.0);
        let reach = rng.range(0.01, 2.0);
        let (mut value, mut slope) = (Vec::new(), Vec::new());
        if !bounds.ball_bounds_into(&centre, reach, &mut value, &mut slope) {
            refused += 1;
            continue;
        }
        for _ in 0..50 {
            let rho = reach * rng.next();
            // On the surface half the time: the tightest case.
            let off = if rng.next() < 0.5 { reach - rho } else { (reach - rho) * rng.next() };
            let c = centre + rng.unit() * off;
            let sampled = [rng.range(0.0, 100.0), rng.range(0.0, 10.0)];
            let small = bounds.line_bounds(&c, rho, Some(&sampled));
            let inside = bounds.line_bounds(&c, rho, None);
            for f in 0..2 {
                let big = value[f].min(sampled[f] + rho * slope[f]);
                assert!(small[f] <= big, "line {f}: ball bound {} above the big ball's {big}", small[f]);
                assert!(inside[f] <= value[f], "line {f}: value bound {} above the big ball's {}", inside[f], value[f]);
                compared += 1;
            }
        }
    }
    assert!(compared > 10_000 && refused > 0, "compared {compared}, refused {refused}");
}

#[test]
fn a_short_segment_stays_within_point_one_i_l_over_d_squared_and_its_slope_within_point_two_i_l_over_d_cubed() {
    // The short-segment bounds of `field::bound` (µ0/4π = 0.1 µT·m/A times
    // the length over d², and 2·µ0/4π times the length over d³ for the
    // slope), against the closed form on 20 000 random configurations;
    // the slope as a difference quotient over h = 1e-4·d (1e-6 relative
    // for its cancellation, as above).
    let mut rng = Rng(0x5EED_0005);
    let (mut worst_value, mut worst_slope) = (0.0_f64, 0.0_f64);
    for _ in 0..20_000 {
        let a = rng.point(5.0);
        let len = rng.range(0.01, 10.0);
        let b = a + rng.unit() * len;
        let p = rng.point(5.0);
        let d = point_segment_distance_m(&p, &a, &b);
        if d < 1e-3 {
            continue;
        }
        worst_value = worst_value.max(segment_field(&a, &b, 1.0, &p).norm() / (0.1 * len / (d * d)));
        let h = 1e-4 * d;
        let u = rng.unit();
        let slope = (segment_field(&a, &b, 1.0, &(p + u * h)) - segment_field(&a, &b, 1.0, &p)).norm() / h;
        worst_slope = worst_slope.max(slope / (0.2 * len / (d - h).powi(3)));
    }
    assert!(worst_value <= 1.0 + 1e-12, "worst |B| / (0.1 I ℓ/d²) = {worst_value}");
    assert!(worst_slope <= 1.0 + 1e-6, "worst slope / (0.2 I ℓ/d³) = {worst_slope}");
    assert!(worst_value > 0.5, "the sample never came near the bound: {worst_value}");
}

#[test]
fn a_conductor_cut_into_many_chords_is_bounded_about_as_tightly_as_one_segment() {
    // 100 m at 10 m: one segment's value bound is min(0.2/10, 0.1·100/100)
    // = 0.02 µT/A. Cut into 100 chords of 1 m, the length-free sum would
    // be Σ 0.2/dᵢ ≈ 0.2 · 2·asinh(5) = 0.92 µT/A (46 times more); with
    // the short-segment bound Σ 0.1/dᵢ² ≈ 0.02 · atan(5) = 0.0275 µT/A.
    let chain: Vec<Point3<f64>> = (0..=100).map(|i| Point3::new(i as f64 - 50.0, 0.0, 0.0)).collect();
    let one = vec![chain[0], chain[100]];
    let bound = |path: Vec<Point3<f64>>| {
        let filaments = Filaments::new(&[Filament { path, radius_m: 1e-3 }]);
        let excitation = Excitation {
            lines: vec![SpectralLine { order: 1, frequency_hz: 50.0, currents_a: vec![Complex64::new(1.0, 0.0)] }],
        };
        SegmentBounds::new(&filaments, &excitation).line_bounds(&Point3::new(0.0, 10.0, 0.0), 0.0, None)[0]
    };
    let (b_one, b_chain) = (bound(one), bound(chain));
    assert!((b_one - 0.02).abs() < 1e-9, "{b_one}");
    assert!(b_chain < 1.5 * b_one, "{b_chain} against {b_one}");
    // It still bounds the field: 0.2/10 · 50/√(50² + 10²) = 0.01961 µT/A.
    assert!(b_chain >= 0.2 / 10.0 * 50.0 / (2600.0f64).sqrt());
}
