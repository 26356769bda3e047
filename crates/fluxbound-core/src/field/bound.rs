//! Guaranteed bounds of a straight segment's field and of its rate of
//! change, from geometry alone, so a search can prove that a stretch of
//! space is above or below a level without sampling every point (distances)
//! and that no point of a region exceeds a sampled maximum by more than a
//! stated margin (area maxima).
//!
//! # The bounds (derived here; checked against the closed form in
//! `tests/core/engine/bounds.rs`)
//!
//! A segment carrying RMS current `I` (A) seen from a point at distance `ρ`
//! from its line, its ends at signed angles `α1 < α2` from the
//! perpendicular, has the field (Griffiths, *Introduction to
//! Electrodynamics*, Ex. 5.5; µ0/4π = 0.1 µT·m/A)
//!
//! ```text
//! B = F φ̂,   F = 0.1·I·(sin α2 − sin α1) / ρ
//! ```
//!
//! Let `d` be the distance from the point to the segment *itself* (not its
//! infinite line).
//!
//! **Field.** `|B| ≤ 0.2·|I|/d` µT ([`FIELD_BOUND_UT_M_PER_A`]). If the foot
//! of the perpendicular lies on the segment, `ρ = d` and
//! `|sin α2 − sin α1| ≤ 2`. Otherwise both ends lie on one side, say
//! `0 ≤ α1 < α2 < π/2` with the nearer end at `α1`, so `ρ = d·cos α1` and
//! `sin α2 − sin α1 ≤ 1 − sin α1 ≤ cos α1` (square both sides:
//! `(1 − s)² ≤ (1 − s)(1 + s)`), giving `|B| ≤ 0.1·|I|/d`.
//!
//! **Rate of change.** `|∂B/∂u| ≤ 0.4·|I|/d²` µT/m for every unit direction
//! `u` ([`SLOPE_BOUND_UT_PER_M_M2_PER_A`]). In cylindrical coordinates the
//! Jacobian of `F(ρ, z) φ̂` maps `u` to `(F_ρ u_ρ + F_z u_z) φ̂ − (F/ρ) u_φ ρ̂`;
//! the two parts are orthogonal in and out, so its norm is
//! `max(√(F_ρ² + F_z²), |F|/ρ)`. With `w_i = z_i − z = ρ tan α_i`,
//! differentiating gives `(F_ρ, F_z) = (0.1·I/ρ²)·(c(α1) − c(α2))` for the
//! curve `c(α) = (sin α (1 + cos² α), cos³ α)`, whose speed is
//! `|c′(α)| = cos α · √(1 + 3 cos² α)`. A chord is at most the arc between
//! its ends:
//! - foot on the segment (`ρ = d`, `α1 ≤ 0 ≤ α2`): the whole arc is
//!   `∫₋₁¹ √(4 − 3s²) ds = 1 + (4/√3)(π/3) ≈ 3.418`, so
//!   `√(F_ρ² + F_z²) ≤ 0.342·|I|/d²`, and `|F|/ρ ≤ 0.2·|I|/d²` from the field bound;
//! - foot off the segment (`ρ = d cos α1`): the arc from `α1` to `π/2` is
//!   `∫ √(4 − 3s²) ds ≤ 2(1 − sin α1)`, so both parts are
//!   `≤ 0.2·|I|/(d²(1 + sin α1)) ≤ 0.2·|I|/d²`.
//!
//! Hence 0.342 ≤ 0.4. (The infinite-wire slope `0.2·|I|/d²` is *not* a
//! bound: moving away from the middle of a segment seen under ±54.7°
//! (cos² α = 1/3) the slope is `0.218·|I|/d²`.)
//!
//! **Short segments.** Straight from the Biot–Savart integral, a segment
//! of length `ℓ` whose every point is at least `d` away adds at most
//! `0.1·|I|·ℓ/d²` µT, and its rate of change at most `0.2·|I|·ℓ/d³` µT/m
//! (the kernel `R/|R|³` has the Jacobian `(1 − 3R̂R̂ᵀ)/|R|³`, of norm
//! `2/|R|³`). Each segment counts with the smaller of its two bounds
//! ([`segment_field_bound_ut`], [`segment_slope_bound_ut_per_m`] are the
//! length-free ones): a conductor cut into many short chords (an overhead
//! span's catenary) then sums to about the bound of one long segment
//! instead of growing with the number of chords.
//!
//! For many segments and complex phasors the triangle inequality gives, per
//! spectral line, `|B_f| ≤ Σ_j 0.2·|I_jf|/d_j` and
//! `|d|B_f|/ds| ≤ Σ_j 0.4·|I_jf|/d_j²` (the resultant's rate of change is at
//! most the phasor vector's).
//!
//! # Using them over a region
//!
//! Distance to a segment (a convex set) changes by at most the distance
//! moved, so every point of a ball of radius `ρ` around a sample point `c`
//! is at least `d(c) − ρ` from the segment. Along the straight path from `c`
//! the difference of one spectral line's field phasor is then at most
//! `ρ · Σ 0.4·|I|/(d − ρ)²` (triangle inequality on the complex vector norm),
//! so its resultant anywhere in the ball is at most
//! `|B(c)| + ρ · Σ 0.4·|I|/(d − ρ)²`, and also at most `Σ 0.2·|I|/(d − ρ)`.
//! Points inside a conductor are excluded from every result, so a segment's
//! distance is also at least its conductor's radius: where the ball reaches
//! a conductor only the value bound applies (the straight path may pass
//! through the conductor), with `d ≥ radius`.

use super::{Excitation, Filaments};
use nalgebra::{Point3, Vector3};

/// `|B| ≤ FIELD_BOUND_UT_M_PER_A · |I| / d` for one segment, µT·m/A.
pub const FIELD_BOUND_UT_M_PER_A: f64 = 0.2;

/// `|∂B/∂u| ≤ SLOPE_BOUND_UT_PER_M_M2_PER_A · |I| / d²` for one segment,
/// µT·m/A (the derivation gives 0.342; 0.4 leaves margin).
pub const SLOPE_BOUND_UT_PER_M_M2_PER_A: f64 = 0.4;

/// Relative margin taken off computed distances so rounding can never make
/// a bound too small (distances are computed to ~1e-15 relative).
const DISTANCE_MARGIN: f64 = 1.0e-9;

/// Distance from `p` to the segment `a`–`b`, m (a degenerate segment is its
/// point).
pub fn point_segment_distance_m(p: &Point3<f64>, a: &Point3<f64>, b: &Point3<f64>) -> f64 {
    let ab = b - a;
    let l2 = ab.norm_squared();
    let t = if l2 > 0.0 { ((p - a).dot(&ab) / l2).clamp(0.0, 1.0) } else { 0.0 };
    (p - (a + ab * t)).norm()
}

/// Parameters `(s, t)` in [0, 1] of the closest points `p1 + s·(q1 − p1)`
/// and `p2 + t·(q2 − p2)` of two 3-D segments.
///
/// Ericson, *Real-Time Collision Detection* (2005), §5.1.9
/// "Closest points of two line segments": minimise over the unclamped lines,
/// clamp `s`, solve `t` for it, and re-solve `s` when `t` had to be
/// clamped. Parallel segments (`a·e − b² ≤ 1e-12·a·e`, relative so that
/// metre and kilometre segments behave alike) take `s = 0`; any `s` is then
/// optimal up to the clamping that follows.
pub fn segment_segment_closest(p1: &Point3<f64>, q1: &Point3<f64>, p2: &Point3<f64>, q2: &Point3<f64>) -> (f64, f64) {
    let (d1, d2, r): (Vector3<f64>, Vector3<f64>, Vector3<f64>) = (q1 - p1, q2 - p2, p1 - p2);
    let (a, e, f) = (d1.norm_squared(), d2.norm_squared(), d2.dot(&r));
    if a <= 0.0 && e <= 0.0 {
        return (0.0, 0.0);
    }
    if a <= 0.0 {
        return (0.0, (f / e).clamp(0.0, 1.0));
    }
    let c = d1.dot(&r);
    if e <= 0.0 {
        return ((-c / a).clamp(0.0, 1.0), 0.0);
    }
    let b = d1.dot(&d2);
    let denom = a * e - b * b;
    let mut s = if denom > 1e-12 * a * e { ((b * f - c * e) / denom).clamp(0.0, 1.0) } else { 0.0 };
    let mut t = (b * s + f) / e;
    if t < 0.0 {
        t = 0.0;
        s = (-c / a).clamp(0.0, 1.0);
    } else if t > 1.0 {
        t = 1.0;
        s = ((b - c) / a).clamp(0.0, 1.0);
    }
    (s, t)
}

/// Shortest distance between two 3-D segments, m (see
/// [`segment_segment_closest`]); exact up to rounding.
pub fn segment_segment_distance_m(p1: &Point3<f64>, q1: &Point3<f64>, p2: &Point3<f64>, q2: &Point3<f64>) -> f64 {
    let (s, t) = segment_segment_closest(p1, q1, p2, q2);
    ((p1 + (q1 - p1) * s) - (p2 + (q2 - p2) * t)).norm()
}

/// A lower bound (within 1e-9 relative) of the smallest distance between
/// the segments `p0`–`p1` and `a`–`b`, m: the closest-point distance with
/// rounding taken off, so a bound built on it is never too small.
pub fn segment_segment_distance_lower_bound_m(
    p0: &Point3<f64>,
    p1: &Point3<f64>,
    a: &Point3<f64>,
    b: &Point3<f64>,
) -> f64 {
    segment_segment_distance_m(p0, p1, a, b) * (1.0 - DISTANCE_MARGIN)
}

/// Upper bound of one segment's field, µT: `0.2·|I|/d` (∞ at `d = 0`).
pub fn segment_field_bound_ut(current_a: f64, d_m: f64) -> f64 {
    FIELD_BOUND_UT_M_PER_A * current_a.abs() / d_m
}

/// Upper bound of one segment's rate of change of field, µT/m:
/// `0.4·|I|/d²` (∞ at `d = 0`).
pub fn segment_slope_bound_ut_per_m(current_a: f64, d_m: f64) -> f64 {
    SLOPE_BOUND_UT_PER_M_M2_PER_A * current_a.abs() / (d_m * d_m)
}

/// The segments of a site with each one's RMS current magnitude per
/// spectral line: what the bounds need.
#[derive(Debug, Clone)]
pub struct SegmentBounds {
    segments: Vec<BoundSegment>,
    lines: usize,
}

#[derive(Debug, Clone)]
struct BoundSegment {
    a: Point3<f64>,
    b: Point3<f64>,
    radius_m: f64,
    /// Length, m, rounded up so a bound built on it is never too small.
    length_m: f64,
    /// `|I|` per spectral line, A RMS.
    current_a: Vec<f64>,
}

impl BoundSegment {
    /// The value and slope factors of the module docs at free distance
    /// `d` (times `|I|`): the smaller of the length-free and the
    /// short-segment bound.
    fn factors(&self, d: f64) -> (f64, f64) {
        let short = self.length_m / d;
        (
            (FIELD_BOUND_UT_M_PER_A / d).min(SHORT_FIELD_BOUND_UT_PER_A * short / d),
            (SLOPE_BOUND_UT_PER_M_M2_PER_A / (d * d)).min(SHORT_SLOPE_BOUND_UT_PER_A * short / (d * d)),
        )
    }
}

/// `|B| ≤ SHORT_FIELD_BOUND_UT_PER_A · |I| · ℓ / d²` for a segment of
/// length `ℓ`, µT·m/A (µ0/4π).
const SHORT_FIELD_BOUND_UT_PER_A: f64 = 0.1;

/// `|∂B/∂u| ≤ SHORT_SLOPE_BOUND_UT_PER_A · |I| · ℓ / d³`, µT·m/A (2·µ0/4π).
const SHORT_SLOPE_BOUND_UT_PER_A: f64 = 0.2;

impl SegmentBounds {
    pub fn new(filaments: &Filaments, excitation: &Excitation) -> SegmentBounds {
        let mut segments = Vec::new();
        for k in 0..filaments.conductor_count() {
            let current_a: Vec<f64> = excitation.lines.iter().map(|l| l.currents_a[k].norm()).collect();
            if current_a.iter().all(|i| *i == 0.0) {
                continue;
            }
            let r = filaments.vertex_range(k);
            let v = |j: usize| Point3::new(filaments.vx[j], filaments.vy[j], filaments.vz[j]);
            for j in r.start + 1..r.end {
                segments.push(BoundSegment {
                    a: v(j - 1),
                    b: v(j),
                    radius_m: filaments.radius2[k].sqrt(),
                    length_m: (v(j) - v(j - 1)).norm() * (1.0 + DISTANCE_MARGIN),
                    current_a: current_a.clone(),
                });
            }
        }
        SegmentBounds { segments, lines: excitation.lines.len() }
    }

    /// Upper bound of each spectral line's resultant, µT, anywhere within
    /// `rho_m` of `centre` and outside every conductor, given the line
    /// resultants `sampled_ut` at `centre` (`None` when the centre lies
    /// inside a conductor: the value bound alone applies).
    pub fn line_bounds(&self, centre: &Point3<f64>, rho_m: f64, sampled_ut: Option<&[f64]>) -> Vec<f64> {
        let mut out = Vec::new();
        self.line_bounds_into(centre, rho_m, sampled_ut, &mut out);
        out
    }

    /// [`SegmentBounds::line_bounds`] written into `out` (cleared first),
    /// so a caller bounding many regions allocates once.
    pub fn line_bounds_into(&self, centre: &Point3<f64>, rho_m: f64, sampled_ut: Option<&[f64]>, out: &mut Vec<f64>) {
        // `out` holds the value bounds, the slopes follow it until the end.
        let n = self.lines;
        out.clear();
        out.resize(2 * n, 0.0);
        let mut slope_valid = sampled_ut.is_some();
        for s in &self.segments {
            let free = point_segment_distance_m(centre, &s.a, &s.b) - rho_m;
            if free <= s.radius_m {
                slope_valid = false;
            }
            let d = free.max(s.radius_m);
            if d <= 0.0 {
                // A zero-radius filament within reach: no finite bound.
                out.clear();
                out.resize(n, f64::INFINITY);
                return;
            }
            let (value, slope) = out.split_at_mut(n);
            let (kv, ks) = s.factors(d);
            for (f, i) in s.current_a.iter().enumerate() {
                value[f] += kv * i;
                slope[f] += ks * i;
            }
        }
        if let Some(b) = sampled_ut.filter(|_| slope_valid) {
            for f in 0..n {
                out[f] = out[f].min(b[f] + rho_m * out[n + f]);
            }
        }
        out.truncate(n);
    }

    /// Per spectral line, upper bounds of the two sums that
    /// [`SegmentBounds::line_bounds_into`] forms for *any* ball that lies
    /// inside the ball of radius `reach_m` around `centre`: the value sum
    /// `Σ 0.2·|I|/d` into `value` and the slope sum `Σ 0.4·|I|/d²` (each
    /// term the smaller with its short-segment bound) into
    /// `slope` (both cleared first), so one call bounds a whole block of
    /// regions at once.
    ///
    /// Why it bounds them: a ball of radius `ρ` around `c` inside the big
    /// ball has `|c − centre| + ρ ≤ reach`, so its free distance to each
    /// segment is `d(c) − ρ ≥ d(centre) − reach` (distance changes at most
    /// by the distance moved). The big ball's free distance is lowered
    /// further by [`DISTANCE_MARGIN`] relative and by 1e-12 of the
    /// coordinates' size, far above the rounding of either computation, so
    /// each term here is at least the one the smaller ball computes, and
    /// rounding keeps sums of larger terms larger.
    ///
    /// `false` (the sums are then meaningless) when the reach comes within
    /// a conductor's radius of a segment: a ball inside may then have no
    /// slope bound, and each must be bounded on its own.
    pub fn ball_bounds_into(
        &self,
        centre: &Point3<f64>,
        reach_m: f64,
        value: &mut Vec<f64>,
        slope: &mut Vec<f64>,
    ) -> bool {
        let n = self.lines;
        value.clear();
        value.resize(n, 0.0);
        slope.clear();
        slope.resize(n, 0.0);
        let centre_size = centre.coords.norm();
        for s in &self.segments {
            let d = point_segment_distance_m(centre, &s.a, &s.b);
            let slack = DISTANCE_MARGIN * (d + reach_m) + 1e-12 * (centre_size + s.a.coords.norm() + s.b.coords.norm());
            let free = d - reach_m - slack;
            // A NaN also refuses.
            if free.is_nan() || free <= s.radius_m {
                return false;
            }
            let (kv, ks) = s.factors(free);
            for (f, i) in s.current_a.iter().enumerate() {
                value[f] += kv * i;
                slope[f] += ks * i;
            }
        }
        true
    }

    /// Number of segments with current (the cost of one bound or sample).
    pub fn len(&self) -> usize {
        self.segments.len()
    }
    pub fn is_empty(&self) -> bool {
        self.segments.is_empty()
    }
}
