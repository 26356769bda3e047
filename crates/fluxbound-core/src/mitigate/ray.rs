//! A guaranteed search along one ray: the first point where the searched
//! quantity falls below its threshold, and the clearance (the distance
//! beyond which it stays below, up to the searched range).
//!
//! Intervals of the ray are classified with the bounds of
//! [`crate::field::bound`]: on an interval `J` of half-width `h` whose
//! distance to segment `j` is at least `d_j`, every spectral line satisfies
//! `|B_f| ≤ Σ_j 0.2·|I_jf|/d_j` and `| |B_f(s)| − |B_f(mid)| | ≤ h·Σ_j 0.4·|I_jf|/d_j²`.
//! An interval whose upper bound is below the threshold is *certified
//! below*, one whose lower bound is at or above it *certified above*; any
//! other interval is halved. A narrow null or a re-rise therefore cannot be
//! stepped over: it keeps its interval from being certified. Intervals
//! narrower than [`RESOLUTION_M`] that no bound settles count as above —
//! the side that makes both distances longer, never shorter.

use super::Meter;
use super::distance::Sample;
use crate::field::bound::{
    segment_field_bound_ut, segment_segment_distance_lower_bound_m, segment_slope_bound_ut_per_m,
};
use nalgebra::{Point3, Unit, Vector3};

/// Intervals narrower than this are not split further, m. Both distances
/// are reported to within it (it is below the documented 0.1 mm).
pub const RESOLUTION_M: f64 = 1.0e-6;

/// What a search along a ray found.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RayOutcome {
    /// Distance to the first point found below the threshold, m; `None`
    /// when none within the range.
    pub first_below_m: Option<f64>,
    /// Distance beyond which the quantity stays below up to the range, m;
    /// `None` when it does not come below before the range's end.
    pub clearance_m: Option<f64>,
    /// The farthest point found at or above the threshold on the way to
    /// the clearance, m: the true clearance lies between it and
    /// `clearance_m` (`None` when no point was found above).
    pub above_m: Option<f64>,
}

/// Why a search stopped before its answer.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Stopped {
    /// Its budget of segment–point pairs is spent.
    OutOfBudget,
    /// Its meter's cancellation flag was set.
    Cancelled,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Class {
    Above,
    Below,
    /// Narrower than the resolution and unsettled; whether its midpoint
    /// was sampled below the threshold.
    Unsettled {
        mid_below: bool,
    },
    Split,
}

/// One ray of the search.
pub(super) struct Ray<'a> {
    pub meter: &'a Meter<'a>,
    pub from: Point3<f64>,
    pub dir: Unit<Vector3<f64>>,
    pub range_m: f64,
}

impl Ray<'_> {
    fn point(&self, s: f64) -> Point3<f64> {
        self.from + self.dir.into_inner() * s
    }

    /// Both distances along this ray.
    pub fn search(&self, spent: &mut u64, budget: u64) -> Result<RayOutcome, Stopped> {
        let first_below_m = self.first_below(spent, budget)?;
        let (clearance_m, above_m) = self.clearance(spent, budget)?;
        Ok(RayOutcome { first_below_m, clearance_m, above_m })
    }

    /// Depth-first from the origin: the first interval not certified above
    /// holds the first crossing.
    fn first_below(&self, spent: &mut u64, budget: u64) -> Result<Option<f64>, Stopped> {
        if self.meter.below_at(&self.from, spent, budget)? {
            return Ok(Some(0.0));
        }
        let mut stack = vec![(0.0, self.range_m)];
        while let Some((a, b)) = stack.pop() {
            match self.classify(a, b, spent, budget)?.0 {
                Class::Above | Class::Unsettled { mid_below: false } => {}
                Class::Below => return Ok(Some(a)),
                Class::Unsettled { mid_below: true } => return Ok(Some(0.5 * (a + b))),
                Class::Split => {
                    let m = 0.5 * (a + b);
                    stack.push((m, b));
                    stack.push((a, m));
                }
            }
        }
        Ok(None)
    }

    /// Depth-first from the range's end: the last interval not certified
    /// below ends at the clearance. Also the farthest point seen at or above
    /// the threshold on the way (a sampled midpoint, or the end of an
    /// interval certified above).
    fn clearance(&self, spent: &mut u64, budget: u64) -> Result<(Option<f64>, Option<f64>), Stopped> {
        let mut stack = vec![(0.0, self.range_m)];
        let mut above: Option<f64> = None;
        while let Some((a, b)) = stack.pop() {
            let (class, mid_above) = self.classify(a, b, spent, budget)?;
            if mid_above {
                above = farther(above, 0.5 * (a + b));
            }
            match class {
                Class::Below => {}
                Class::Above | Class::Unsettled { .. } => {
                    if class == Class::Above {
                        above = farther(above, b);
                    }
                    return Ok(((b < self.range_m).then_some(b), above));
                }
                Class::Split => {
                    let m = 0.5 * (a + b);
                    stack.push((a, m));
                    stack.push((m, b));
                }
            }
        }
        // Below along the whole ray, origin included.
        Ok((Some(0.0), None))
    }

    /// The interval's class, and whether its midpoint was sampled at or
    /// above the threshold (inside a conductor included).
    fn classify(&self, a: f64, b: f64, spent: &mut u64, budget: u64) -> Result<(Class, bool), Stopped> {
        let (class, sample) = self.settle(a, b, spent, budget)?;
        Ok((class, !sample.below))
    }

    fn settle(&self, a: f64, b: f64, spent: &mut u64, budget: u64) -> Result<(Class, Sample), Stopped> {
        let (pa, pb) = (self.point(a), self.point(b));
        let mid = self.point(0.5 * (a + b));
        let sample = self.meter.sample(&mid, spent, budget)?;
        let near = self.meter.nearness(&pa, &pb);
        if near.wholly_inside {
            return Ok((Class::Above, sample));
        }
        let half = 0.5 * (b - a);
        if let Some(lines) = &sample.per_line_ut {
            let (upper, lower) = self.meter.bounds(lines, &near, half);
            if !near.touches && upper < self.meter.threshold() {
                return Ok((Class::Below, sample));
            }
            if near.finite && lower >= self.meter.threshold() {
                return Ok((Class::Above, sample));
            }
        }
        if b - a <= RESOLUTION_M {
            let mid_below = sample.below;
            return Ok((Class::Unsettled { mid_below }, sample));
        }
        Ok((Class::Split, sample))
    }
}

/// The farther of a known point (if any) and `s`, m.
fn farther(known: Option<f64>, s: f64) -> Option<f64> {
    Some(known.map_or(s, |k| k.max(s)))
}

/// How near an interval of the ray comes to each segment.
pub(super) struct Nearness {
    /// Per segment, a lower bound of its distance to the interval, m.
    pub distance_m: Vec<f64>,
    /// The interval comes within some conductor's radius.
    pub touches: bool,
    /// The interval lies wholly inside one conductor.
    pub wholly_inside: bool,
    /// No distance is zero (the slope bound is finite).
    pub finite: bool,
}

/// One straight segment of a conductor, for the bounds.
#[derive(Debug, Clone)]
pub(super) struct Segment {
    pub a: Point3<f64>,
    pub b: Point3<f64>,
    pub conductor: usize,
    pub radius_m: f64,
}

/// Distances from an interval `pa`–`pb` to every segment.
pub(super) fn nearness(segments: &[Segment], pa: &Point3<f64>, pb: &Point3<f64>) -> Nearness {
    use crate::field::bound::point_segment_distance_m as pd;
    let mut n =
        Nearness { distance_m: Vec::with_capacity(segments.len()), touches: false, wholly_inside: false, finite: true };
    for s in segments {
        let d = segment_segment_distance_lower_bound_m(pa, pb, &s.a, &s.b);
        n.touches |= d < s.radius_m;
        n.finite &= d > 0.0;
        // A capsule is convex: both ends inside means all of it is.
        n.wholly_inside |= pd(pa, &s.a, &s.b) < s.radius_m && pd(pb, &s.a, &s.b) < s.radius_m;
        n.distance_m.push(d);
    }
    n
}

/// Per spectral line, upper and lower bounds of the resultant (µT) over an
/// interval of half-width `half_m` whose midpoint has `mid_ut`.
pub(super) fn line_bounds(
    segments: &[Segment],
    currents_a: &[Vec<f64>],
    mid_ut: &[f64],
    near: &Nearness,
    half_m: f64,
) -> (Vec<f64>, Vec<f64>) {
    let mut upper = Vec::with_capacity(mid_ut.len());
    let mut lower = Vec::with_capacity(mid_ut.len());
    for (f, &m) in mid_ut.iter().enumerate() {
        let (mut field, mut slope) = (0.0, 0.0);
        for (s, &d) in segments.iter().zip(&near.distance_m) {
            let i = currents_a[f][s.conductor];
            if i != 0.0 {
                field += segment_field_bound_ut(i, d);
                slope += segment_slope_bound_ut_per_m(i, d);
            }
        }
        let swing = slope * half_m;
        upper.push(field.min(m + swing));
        lower.push((m - swing).max(0.0));
    }
    (upper, lower)
}
