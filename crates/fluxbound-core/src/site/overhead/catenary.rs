//! A conductor hanging between two attachments, and how finely its chords
//! must follow it.
//!
//! # The curve
//!
//! A flexible conductor of weight `w` per metre under horizontal tension
//! `H` hangs as a catenary `z(x) = z₀ + C·(cosh((x − x₀)/C) − 1)`, with
//! `C = H/w` in metres (the catenary parameter) and `(x₀, z₀)` its lowest
//! point (any textbook of statics; the parabola `wx²/(2H)` is its first
//! term). The form `C·(cosh u − 1) = 2C·sinh²(u/2)` is used throughout: it
//! keeps its precision when `C` is large and the sag small.
//!
//! Through attachments `(0, z_a)` and `(L, z_b)` with a given `C`, the
//! lowest point follows from `cosh b − cosh a = 2 sinh((a+b)/2) sinh((b−a)/2)`:
//! `x₀ = L/2 − C·asinh((z_b − z_a) / (2C·sinh(L/2C)))`; it may lie outside
//! the span when one attachment is much higher.
//!
//! The **sag** is the largest vertical distance between the chord joining
//! the attachments and the conductor. With unequal heights it is found
//! where the conductor's slope equals the chord's, `x* = x₀ + C·asinh(Δz/L)`
//! (inside the span by the mean value theorem). The sag falls as `C` grows,
//! so `C` is found from a given sag by bisection on a bracket
//! ([`Catenary::with_sag`]).
//!
//! # Chords and their error
//!
//! The engine takes straight segments, so each span is cut into `n` chords
//! of equal horizontal step `Δx = L/n` with their ends on the curve. The
//! catenary is convex: every chord lies above the arc it replaces, by at
//! most the vertical gap `δ ≤ Δx²·max z''/8 = Δx²·cosh(u_max)/(8C)` (the
//! remainder of linear interpolation), where `u_max` is the larger of
//! `|x₀|/C` and `|L − x₀|/C`. Seen from a point below the conductor at a
//! distance of at least `D`, every chord is therefore at most `δ` farther
//! than the arc; the field of a line current falls as `1/r`, so the chords
//! **under-estimate** that conductor's contribution, by a relative amount
//! of at most `δ/D` to first order in `δ/D` (a chord's direction differs
//! from the arc's by at most `Δx·cosh(u_max)/(2C)` radians, which changes
//! the field only at second order).
//!
//! The chord count is the smallest `n` that satisfies all three of:
//! - at least [`MIN_CHORDS_PER_SPAN`] chords;
//! - each chord at most a quarter of the ground clearance `h` (the lowest
//!   conductor height above ground in the span, not the clearance distance
//!   of a what-if): `Δx·cosh(u_max) ≤ h/4`, the chord's length bounded by
//!   its step times the steepest slope's secant;
//! - the bound `δ/D ≤` [`CHORD_ERROR_BOUND`] for points at most half the
//!   ground clearance above the ground (`D = h/2`, which covers the body
//!   heights under any line with 4 m or more of ground clearance).
//!
//! With the ¼ rule alone `δ/D = h·cosh(u_max)/(64C)`, below 0.1 % whenever
//! `C ≥ 16·h·cosh(u_max)`, true of taut lines (a 300 m span with 12 m of
//! sag has C ≈ 939 m); a slacker line gets more chords from the third rule.
//! For a balanced three-phase set whose contributions largely cancel, the
//! relative error of the sum can exceed the per-conductor bound by the
//! cancellation ratio; the tests check the total under a flat line.

/// Fewest chords per span, whatever the other rules allow.
pub const MIN_CHORDS_PER_SPAN: usize = 32;

/// Most chords per span: beyond, the span is refused (a ground clearance
/// far too small for its length; the engine's cost grows with chords).
pub const MAX_CHORDS_PER_SPAN: usize = 4096;

/// Largest relative under-estimate of a conductor's field by its chords,
/// at points at most half the ground clearance above ground (0.1 %).
pub const CHORD_ERROR_BOUND: f64 = 1.0e-3;

/// Chord length as a fraction of the ground clearance (¼).
pub const CHORD_PER_GROUND_CLEARANCE: f64 = 0.25;

/// Largest `L/(2C)` accepted: beyond, cosh grows past any physical sag
/// (a level span would hang deeper than 10⁷ times its length).
const MAX_HALF_SPAN_OVER_C: f64 = 20.0;

/// Bisection steps: the bracket shrinks by 2⁻²⁰⁰, far below f64 resolution.
const BISECTION_STEPS: usize = 200;

/// `C·(cosh(u) − 1)` at `u = x/C`, written to keep precision for small `u`.
fn rise_m(c_m: f64, x_m: f64) -> f64 {
    let s = (x_m / (2.0 * c_m)).sinh();
    2.0 * c_m * s * s
}

/// One span's conductor in its vertical plane: `x` from the first
/// attachment (0) to the second (`span_m`), heights in metres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Catenary {
    /// Catenary parameter C = H/w, m.
    pub c_m: f64,
    /// Horizontal length of the span, m.
    pub span_m: f64,
    /// Horizontal position of the lowest point of the whole curve, m from
    /// the first attachment (outside `[0, span_m]` on a steep span).
    pub x_low_m: f64,
    /// Height of that lowest point, m.
    pub z_low_m: f64,
    /// Heights of the attachments, m.
    pub z_start_m: f64,
    pub z_end_m: f64,
}

impl Catenary {
    /// The catenary of parameter `c_m` through both attachments. `None`
    /// when the numbers give no finite curve (`c_m` not positive, or so
    /// small against the span that cosh overflows).
    pub fn through(span_m: f64, z_start_m: f64, z_end_m: f64, c_m: f64) -> Option<Catenary> {
        let half = span_m / (2.0 * c_m);
        if !(span_m > 0.0 && c_m > 0.0 && half <= MAX_HALF_SPAN_OVER_C) {
            return None;
        }
        let dz = z_end_m - z_start_m;
        let x_low_m = span_m / 2.0 - c_m * (dz / (2.0 * c_m * half.sinh())).asinh();
        let z_low_m = z_start_m - rise_m(c_m, x_low_m);
        let cat = Catenary { c_m, span_m, x_low_m, z_low_m, z_start_m, z_end_m };
        (x_low_m.is_finite() && z_low_m.is_finite()).then_some(cat)
    }

    /// The catenary through both attachments whose sag (largest vertical
    /// distance below the chord) is `sag_m`, its parameter found by
    /// bisection on a bracket. `None` if no catenary of accepted parameter
    /// has that sag (a sag far beyond the span's length).
    pub fn with_sag(span_m: f64, z_start_m: f64, z_end_m: f64, sag_m: f64) -> Option<Catenary> {
        if !(span_m > 0.0 && sag_m > 0.0 && sag_m.is_finite()) {
            return None;
        }
        let excess = |c: f64| Catenary::through(span_m, z_start_m, z_end_m, c).map(|k| k.sag_m() - sag_m);
        // Smallest accepted C: the deepest curve; its sag must reach sag_m.
        let mut lo = span_m / (2.0 * MAX_HALF_SPAN_OVER_C);
        if excess(lo)? < 0.0 {
            return None;
        }
        // The level parabola's C, doubled until the sag falls below sag_m.
        let mut hi = (span_m * span_m / (8.0 * sag_m)).max(lo);
        while excess(hi)? > 0.0 {
            hi *= 2.0;
            if !hi.is_finite() {
                return None;
            }
        }
        for _ in 0..BISECTION_STEPS {
            let mid = 0.5 * (lo + hi);
            if mid <= lo || mid >= hi {
                break;
            }
            if excess(mid)? > 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        Catenary::through(span_m, z_start_m, z_end_m, 0.5 * (lo + hi))
    }

    /// Height of the conductor at `x_m` from the first attachment, m.
    pub fn height_m(&self, x_m: f64) -> f64 {
        self.z_low_m + rise_m(self.c_m, x_m - self.x_low_m)
    }

    /// Largest vertical distance between the chord joining the
    /// attachments and the conductor, m.
    pub fn sag_m(&self) -> f64 {
        let slope = (self.z_end_m - self.z_start_m) / self.span_m;
        let x = (self.x_low_m + self.c_m * slope.asinh()).clamp(0.0, self.span_m);
        self.z_start_m + slope * x - self.height_m(x)
    }

    /// Lowest height of the conductor within the span, m.
    pub fn lowest_m(&self) -> f64 {
        self.height_m(self.x_low_m.clamp(0.0, self.span_m))
    }

    /// `cosh(u_max)`: the secant of the steepest slope in the span, and
    /// the span's largest curvature times C.
    fn steepest_secant(&self) -> f64 {
        let u = self.x_low_m.abs().max((self.span_m - self.x_low_m).abs()) / self.c_m;
        u.cosh()
    }

    /// Heights at `chords + 1` equally spaced horizontal positions, the
    /// first and last at the attachments.
    pub fn heights_m(&self, chords: usize) -> Vec<f64> {
        let n = chords.max(1);
        (0..=n)
            .map(|i| match i {
                0 => self.z_start_m,
                i if i == n => self.z_end_m,
                i => self.height_m(self.span_m * i as f64 / n as f64),
            })
            .collect()
    }

    /// The relative under-estimate bound `δ/D` with `chords` chords, for
    /// points at least `distance_m` from the conductor (module docs).
    pub fn chord_error_bound(&self, chords: usize, distance_m: f64) -> f64 {
        let step = self.span_m / chords.max(1) as f64;
        step * step * self.steepest_secant() / (8.0 * self.c_m) / distance_m
    }
}

/// How a span was cut.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChordChoice {
    pub count: usize,
    /// Longest chord, m.
    pub longest_m: f64,
    /// The under-estimate bound at points at most half the ground
    /// clearance above ground (a fraction, not percent).
    pub error_bound: f64,
}

/// The chord count of a span whose conductors are `curves`, with the
/// span's ground clearance `clearance_m` (> 0), by the three rules of the
/// module docs. `None` if more than [`MAX_CHORDS_PER_SPAN`] are needed.
pub fn chords_for(curves: &[Catenary], clearance_m: f64) -> Option<ChordChoice> {
    let longest_allowed_m = CHORD_PER_GROUND_CLEARANCE * clearance_m;
    let distance_m = 0.5 * clearance_m;
    let mut count = MIN_CHORDS_PER_SPAN;
    for k in curves {
        let secant = k.steepest_secant();
        let by_length = k.span_m * secant / longest_allowed_m;
        // δ/D ≤ bound ⇔ Δx ≤ √(8·C·bound·D / cosh(u_max)).
        let step_for_bound = (8.0 * k.c_m * CHORD_ERROR_BOUND * distance_m / secant).sqrt();
        let by_bound = k.span_m / step_for_bound;
        let need = by_length.max(by_bound).ceil();
        if need.is_nan() || need > MAX_CHORDS_PER_SPAN as f64 {
            return None;
        }
        count = count.max(need as usize);
    }
    let longest_m = curves.iter().map(|k| k.span_m / count as f64 * k.steepest_secant()).fold(0.0, f64::max);
    let error_bound = curves.iter().map(|k| k.chord_error_bound(count, distance_m)).fold(0.0, f64::max);
    Some(ChordChoice { count, longest_m, error_bound })
}
