//! Upper bounds on the field of straight segments, for results that must be
//! guaranteed rather than sampled (the area maximum).
//!
//! # The bounds and their derivation
//!
//! One straight segment carrying `I` (A RMS; for a phasor `|I|`) at a point
//! a distance `d` from the segment itself (not from its infinite line):
//!
//! 1. **Value**: `|B| ≤ 0.2·|I|/d` µT (d in m).
//!    Griffiths, *Introduction to Electrodynamics*, Example 5.5:
//!    `B = (µ0 I / 4π s)·(sin θ2 − sin θ1)`, `s` the distance to the line.
//!    If the foot of the perpendicular lies on the segment, `d = s` and
//!    `|sin θ2 − sin θ1| ≤ 2`, so `B ≤ 2·0.1·I/d`. Otherwise both ends lie
//!    on one side at axial distances `0 ≤ t1 < t2` with `d² = s² + t1²`, and
//!    `sin θ2 − sin θ1 ≤ 1 − t1/d = s²/(d(d + t1)) ≤ s/d`, so
//!    `B ≤ 0.1·I/s · s/d = 0.1·I/d`. Both are within `0.2·I/d`.
//! 2. **Rate of change**: every directional derivative of the segment's
//!    field vector is at most `0.4·|I|/d²` µT/m.
//!    Biot–Savart, `B = (µ0 I/4π) ∫ dl × r/|r|³`, `r` from the element to the
//!    point. The Jacobian of `r/|r|³` is `(1 − 3 r̂ r̂ᵀ)/|r|³`, of operator
//!    norm `2/|r|³`, so a derivative is at most `0.1·I·2·∫ dl/|r|³`. Along
//!    the whole line through the segment `∫ dl/(s² + l²)^{3/2} = 2/s²`; with
//!    the foot on the segment (`s = d`) that gives `0.4·I/d²`. With the foot
//!    outside, the segment lies beyond the nearest end at axial distance
//!    `t1`, and `∫₀^∞ dl/(s² + (t1 + l)²)^{3/2} = 1/(d(d + t1)) ≤ 1/d²`,
//!    half as much. (The infinite-wire slope `0.2·I/d²` is not a bound: a
//!    finite segment seen end-on varies faster.)
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
use nalgebra::Point3;

/// µT·m/A: `|B| ≤ VALUE_BOUND · |I| / d` for one segment (2·µ0/4π).
pub const VALUE_BOUND_UT_M_PER_A: f64 = 0.2;
/// µT·m/A: `|∂B/∂u| ≤ SLOPE_BOUND · |I| / d²` for one segment (4·µ0/4π).
pub const SLOPE_BOUND_UT_M_PER_A: f64 = 0.4;

/// Distance from `p` to the segment `a`–`b`, m.
pub fn distance_to_segment(p: &Point3<f64>, a: &Point3<f64>, b: &Point3<f64>) -> f64 {
    let ab = b - a;
    let len2 = ab.norm_squared();
    let t = if len2 > 0.0 { ((p - a).dot(&ab) / len2).clamp(0.0, 1.0) } else { 0.0 };
    (p - (a + ab * t)).norm()
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
    /// `|I|` per spectral line, A RMS.
    current_a: Vec<f64>,
}

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
        let mut value = vec![0.0; self.lines];
        let mut slope = vec![0.0; self.lines];
        let mut slope_valid = sampled_ut.is_some();
        for s in &self.segments {
            let free = distance_to_segment(centre, &s.a, &s.b) - rho_m;
            if free <= s.radius_m {
                slope_valid = false;
            }
            let d = free.max(s.radius_m);
            if d <= 0.0 {
                // A zero-radius filament within reach: no finite bound.
                return vec![f64::INFINITY; self.lines];
            }
            for (f, i) in s.current_a.iter().enumerate() {
                value[f] += VALUE_BOUND_UT_M_PER_A * i / d;
                slope[f] += SLOPE_BOUND_UT_M_PER_A * i / (d * d);
            }
        }
        match sampled_ut {
            Some(b) if slope_valid => (0..self.lines).map(|f| value[f].min(b[f] + rho_m * slope[f])).collect(),
            _ => value,
        }
    }

    /// Number of segments with current (the cost of one bound or sample).
    pub fn len(&self) -> usize {
        self.segments.len()
    }
    pub fn is_empty(&self) -> bool {
        self.segments.is_empty()
    }
}
