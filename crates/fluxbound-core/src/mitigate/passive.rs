//! Passive loops: a closed conductor laid around a region, in which the
//! source conductors induce a current whose own field opposes theirs.
//!
//! # Formulas and sources
//!
//! - **Mutual inductance**, Neumann's formula (docs/REFERENCES.md,
//!   "Inductance (passive loops)"): `M = (µ0/4π) Σ_i Σ_j ∫∫ dl_i·dl_j /
//!   |r_i − r_j|` over the straight segments of the two paths. For an open
//!   source path against a closed loop this is the flux through the loop per
//!   ampere in the source: the flux is the circulation of the vector
//!   potential `A = (µ0/4π) ∫ I dl / r` round the loop (Stokes), whatever the
//!   source's return path, which adds its own term when it is modelled.
//! - **Inner integral in closed form**: over a straight segment of length
//!   `L` with end distances `ra`, `rb` from the point,
//!   `∫ dt / r = ln((ra + rb + L)/(ra + rb − L))` (the vector potential of a
//!   straight filament, derived from `∫ dt/√(t² + ρ²) = asinh(t/ρ)`). The
//!   denominator cancels next to the segment, so it is written as
//!   `ra + rb − L = 2 (ra rb + a·b)/(ra + rb + L)` with `a`, `b` the offsets
//!   from the ends, and where `a·b < 0` the bracket as
//!   `|a×b|²/(ra rb − a·b)`: the same rearrangement as the field kernel's
//!   (DESIGN.md, "Field engine"). `ln_1p` keeps far segments accurate.
//! - **Outer integral** by Gauss–Legendre on pieces of each segment, bisected
//!   until a piece is no longer than its distance from the other segment;
//!   the order (3 to 12 points) follows the ratio of length to distance, so
//!   the nearest singularity of the analytic integrand lies outside a
//!   Bernstein ellipse with ρ ≥ 4.2 and the rule's error is below
//!   ρ^(−2n) ≈ 1e-15 of the piece's integral (Davis & Rabinowitz, *Methods
//!   of Numerical Integration*, §4.6, error of Gauss rules for functions
//!   analytic in an ellipse: from memory).
//! - **Self-inductance** of round wire of radius `a`, uniform current (low
//!   frequency): the same double integral over the centre line with the
//!   distance replaced by `√(d² + g²)`, `g = a·e^(−1/4)` the geometric mean
//!   distance of a circular cross-section from itself (Maxwell; Grover,
//!   *Inductance Calculations*, ch. 2: from memory). For a circle of radius
//!   `R` this is exactly Maxwell's mutual inductance of two coaxial circles
//!   `g` apart, `≈ µ0 R (ln(8R/g) − 2) = µ0 R (ln(8R/a) − 7/4)` for `R ≫ a`
//!   (docs/REFERENCES.md). A segment with itself is integrated in closed
//!   form: `2 (L asinh(L/g) − √(L² + g²) + g)`.
//! - **Induced current** per spectral line: `I = −jω Σ_k M_k I_k / (R +
//!   jωL)`, ω = 2πf of that line, with the source currents held fixed (the
//!   loop's back-EMF on the sources is neglected: they are current-driven).
//!
//! # Accuracy
//!
//! Measured against closed forms (tests/core/mitigate/passive.rs): a loop
//! 2 cm from a 1 cm wire, and coaxial polygons extrapolated to circles,
//! agree to 1e-9 relative or better; the quadrature is not the limit, the
//! polygonal approximation of a curved conductor is (`O(1/n²)` for `n`
//! sides). The resistance is the DC one (skin effect neglected): fair while
//! the wire's radius is below the skin depth, ≈ 9 mm for copper at 50 Hz
//! and ≈ 5 mm at 150 Hz (`δ = √(2/(ωµ0σ))`, standard).

use crate::field::bound::{point_segment_distance_m, segment_segment_distance_m};
use crate::field::{Excitation, Filament};
use nalgebra::{Point3, Vector3};
use num_complex::Complex64;

/// Permeability of free space, H/m (4π×10⁻⁷, the pre-2019 defined value;
/// the engine's kernel uses the same).
pub const MU0_H_PER_M: f64 = 4.0 * std::f64::consts::PI * 1e-7;

/// µ0/4π, H/m.
const MU0_OVER_4PI_H_PER_M: f64 = 1e-7;

/// A loop's wire radius must be at most this fraction of its shortest
/// segment: the thin-wire model with a geometric mean distance assumes
/// straight runs long against the radius (common practice, no source).
pub const MAX_RADIUS_PER_SEGMENT: f64 = 0.1;

/// A piece of the outer integral is bisected while its length exceeds its
/// distance from the other segment (regularised by `g`) times this: ρ ≥ 4.2
/// for the Bernstein ellipse (module doc).
const MAX_PIECE_PER_DISTANCE: f64 = 1.0;

/// Pieces one segment pair may be cut into: touching segments (a corner of
/// a loop, with `g` small) need about two per halving down to `g`; only
/// degenerate input (overlapping segments) reaches this, and is then
/// integrated coarsely rather than forever.
const MAX_PIECES: usize = 4000;

/// Gauss–Legendre orders by the largest ratio of piece length to distance
/// they serve: `(ratio, points)`. ρ^(−2n) at the ratio's ellipse is below
/// 3e-15 for each.
const ORDERS: [(f64, usize); 4] = [(0.015, 3), (0.06, 4), (0.25, 6), (MAX_PIECE_PER_DISTANCE, 12)];

/// Why a passive loop cannot be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PassiveLoopError {
    #[error("a loop needs at least 3 distinct vertices, found {distinct}")]
    TooFewVertices { distinct: usize },
    #[error("loop segment {segment} has zero length")]
    ZeroLengthSegment { segment: usize },
    #[error("{what} is not a finite number")]
    NotFinite { what: &'static str },
    #[error("the loop's wire radius must be positive")]
    WireRadius,
    #[error("the loop's wire radius {radius_m} m is not small against its shortest segment ({shortest_m} m)")]
    WireTooThick { radius_m: f64, shortest_m: f64 },
    #[error("the loop's resistance must be positive")]
    Resistance,
    #[error("the loop comes within {distance_m} m of conductor {conductor}, closer than the two radii")]
    TooClose { conductor: usize, distance_m: f64 },
    #[error("spectral line {line} has {found} currents for {expected} conductors")]
    CurrentCount { line: usize, expected: usize, found: usize },
    #[error("spectral line {line} has a negative or non-finite frequency")]
    Frequency { line: usize },
}

/// How the loop's resistance is given.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LoopResistance {
    /// The whole loop's resistance, Ω (e.g. measured, joints included).
    Ohm(f64),
    /// Uniform wire: `R = length / (σ·A)`, DC (skin effect neglected, see
    /// the module doc). Copper ≈ 5.8e7 S/m, aluminium ≈ 3.5e7 S/m.
    Wire { cross_section_mm2: f64, conductivity_s_per_m: f64 },
}

/// A closed loop of round wire (polygon in metres; the last vertex joins
/// the first, with or without a repeated first vertex). Its current is
/// positive in the order of its vertices.
#[derive(Debug, Clone, PartialEq)]
pub struct PassiveLoop {
    pub path: Vec<Point3<f64>>,
    pub wire_radius_m: f64,
    pub resistance: LoopResistance,
}

/// What the sources and the loop share: one mutual inductance per source
/// conductor, the loop's self-inductance and resistance.
#[derive(Debug, Clone, PartialEq)]
pub struct LoopCoupling {
    /// `M_k`, H: flux linkage of the loop per ampere in conductor k.
    pub mutual_h: Vec<f64>,
    pub self_h: f64,
    pub resistance_ohm: f64,
}

impl LoopCoupling {
    /// The loop's RMS current phasor, A, for the sources' RMS phasors at
    /// `frequency_hz`: `−jω Σ_k M_k I_k / (R + jωL)`.
    pub fn current_a(&self, frequency_hz: f64, currents_a: &[Complex64]) -> Complex64 {
        let omega = 2.0 * std::f64::consts::PI * frequency_hz;
        let linkage: Complex64 = self.mutual_h.iter().zip(currents_a).map(|(m, i)| i * *m).sum();
        let emf = Complex64::new(0.0, -omega) * linkage;
        emf / Complex64::new(self.resistance_ohm, omega * self.self_h)
    }
}

impl PassiveLoop {
    /// The loop's vertices without a repeated closing vertex, checked: at
    /// least 3 vertices, finite, no zero-length segment (closing one too).
    pub fn vertices(&self) -> Result<&[Point3<f64>], PassiveLoopError> {
        if self.path.iter().any(|p| !p.iter().all(|c| c.is_finite())) {
            return Err(PassiveLoopError::NotFinite { what: "a loop vertex" });
        }
        let v = open_vertices(&self.path);
        let mut distinct: Vec<&Point3<f64>> = Vec::new();
        // Three distinct vertices are all that is asked: stop there.
        for p in v {
            if !distinct.contains(&p) {
                distinct.push(p);
                if distinct.len() == 3 {
                    break;
                }
            }
        }
        if distinct.len() < 3 {
            return Err(PassiveLoopError::TooFewVertices { distinct: distinct.len() });
        }
        match (0..v.len()).find(|&i| v[i] == v[(i + 1) % v.len()]) {
            Some(segment) => Err(PassiveLoopError::ZeroLengthSegment { segment }),
            None => Ok(v),
        }
    }

    /// Total length of the loop, m.
    pub fn length_m(&self) -> Result<f64, PassiveLoopError> {
        Ok(closed_segments(self.vertices()?).iter().map(|s| s.len).sum())
    }

    /// The loop's resistance, Ω (DC).
    pub fn resistance_ohm(&self) -> Result<f64, PassiveLoopError> {
        let r = match self.resistance {
            LoopResistance::Ohm(r) => r,
            LoopResistance::Wire { cross_section_mm2, conductivity_s_per_m } => {
                let (a, s) = (cross_section_mm2, conductivity_s_per_m);
                if !a.is_finite() || !s.is_finite() {
                    return Err(PassiveLoopError::NotFinite { what: "the wire's section or conductivity" });
                }
                if a <= 0.0 || s <= 0.0 {
                    return Err(PassiveLoopError::Resistance);
                }
                self.length_m()? / (s * a * 1e-6)
            }
        };
        if !r.is_finite() {
            return Err(PassiveLoopError::NotFinite { what: "the resistance" });
        }
        if r <= 0.0 { Err(PassiveLoopError::Resistance) } else { Ok(r) }
    }

    /// Checks the wire radius against the shortest segment.
    fn checked_radius_m(&self) -> Result<f64, PassiveLoopError> {
        let a = self.wire_radius_m;
        if !a.is_finite() {
            return Err(PassiveLoopError::NotFinite { what: "the wire radius" });
        }
        if a <= 0.0 {
            return Err(PassiveLoopError::WireRadius);
        }
        let shortest_m = closed_segments(self.vertices()?).iter().map(|s| s.len).fold(f64::INFINITY, f64::min);
        if a > MAX_RADIUS_PER_SEGMENT * shortest_m {
            return Err(PassiveLoopError::WireTooThick { radius_m: a, shortest_m });
        }
        Ok(a)
    }
}

/// Mutual inductance, H, between a polyline `source` (taken as given: open,
/// or closed by repeating its first vertex) and the closed polygon
/// `loop_path` (closed whether or not its first vertex is repeated), by
/// Neumann's formula. Positive directions: the source's vertex order and
/// the loop's. For an open source this is the flux linkage of the loop per
/// ampere in the source (Stokes; module doc).
///
/// Precondition: the paths do not touch (M grows without bound as they
/// approach). Zero-length segments are skipped. Finite input gives a finite
/// result.
pub fn mutual_inductance_h(source: &[Point3<f64>], loop_path: &[Point3<f64>]) -> f64 {
    let src = open_segments(source);
    let lp = closed_segments(open_vertices(loop_path));
    let rules = Rules::new();
    let mut sum = Sum::default();
    for i in &lp {
        for j in &src {
            sum.add(pair_integral(i, j, 0.0, &rules));
        }
    }
    MU0_OVER_4PI_H_PER_M * sum.value()
}

/// Self-inductance, H, of the closed polygon `loop_path` of round wire of
/// radius `wire_radius_m` with uniform current (low frequency): Neumann's
/// double integral over the centre line with the distance regularised by
/// the geometric mean distance, `√(d² + g²)`, `g = a·e^(−1/4)` (Maxwell;
/// Grover, ch. 2: from memory); for a circle `≈ µ0 R (ln(8R/a) − 7/4)`
/// (module doc). Precondition: `wire_radius_m > 0` and small against the
/// segments ([`PassiveLoop`] checks both).
pub fn self_inductance_h(loop_path: &[Point3<f64>], wire_radius_m: f64) -> f64 {
    let g = wire_radius_m * (-0.25f64).exp();
    let segs = closed_segments(open_vertices(loop_path));
    let rules = Rules::new();
    let mut sum = Sum::default();
    for (n, i) in segs.iter().enumerate() {
        sum.add(self_segment_integral(i.len, g));
        for j in &segs[n + 1..] {
            sum.add(2.0 * pair_integral(i, j, g, &rules));
        }
    }
    MU0_OVER_4PI_H_PER_M * sum.value()
}

/// The loop's coupling to every source conductor, its self-inductance and
/// resistance, after checking the loop and its clearance from the sources.
pub fn loop_coupling(passive: &PassiveLoop, sources: &[Filament]) -> Result<LoopCoupling, PassiveLoopError> {
    let a = passive.checked_radius_m()?;
    let resistance_ohm = passive.resistance_ohm()?;
    let v = passive.vertices()?;
    for (k, f) in sources.iter().enumerate() {
        if f.path.iter().any(|p| !p.iter().all(|c| c.is_finite())) || !f.radius_m.is_finite() {
            return Err(PassiveLoopError::NotFinite { what: "a source conductor" });
        }
        let d = clearance_m(v, &f.path);
        if d <= a + f.radius_m.abs() {
            return Err(PassiveLoopError::TooClose { conductor: k, distance_m: d });
        }
    }
    let mutual_h = sources.iter().map(|f| mutual_inductance_h(&f.path, v)).collect();
    Ok(LoopCoupling { mutual_h, self_h: self_inductance_h(v, a), resistance_ohm })
}

/// The loop's RMS current phasor, A, on every spectral line of the
/// excitation (same order), for the sources given as the engine's
/// filaments: `I = −jω Σ_k M_k I_k / (R + jωL)` per line, so harmonics
/// differ through ω.
pub fn loop_currents(
    passive: &PassiveLoop,
    sources: &[Filament],
    excitation: &Excitation,
) -> Result<Vec<Complex64>, PassiveLoopError> {
    check_excitation(sources.len(), excitation)?;
    let c = loop_coupling(passive, sources)?;
    Ok(excitation.lines.iter().map(|l| c.current_a(l.frequency_hz, &l.currents_a)).collect())
}

/// The sources with the loop appended as one more filament (closed by a
/// repeated first vertex, radius the wire's), and the excitation with the
/// loop's current appended to every line: the engine's field functions
/// then give the field with the loop in place.
pub fn with_loop(
    passive: &PassiveLoop,
    sources: &[Filament],
    excitation: &Excitation,
) -> Result<(Vec<Filament>, Excitation), PassiveLoopError> {
    let currents = loop_currents(passive, sources, excitation)?;
    let v = passive.vertices()?;
    let mut path = v.to_vec();
    path.push(v[0]);
    let mut filaments = sources.to_vec();
    filaments.push(Filament { path, radius_m: passive.wire_radius_m });
    let mut excitation = excitation.clone();
    for (line, i) in excitation.lines.iter_mut().zip(currents) {
        line.currents_a.push(i);
    }
    Ok((filaments, excitation))
}

fn check_excitation(conductors: usize, excitation: &Excitation) -> Result<(), PassiveLoopError> {
    for (n, l) in excitation.lines.iter().enumerate() {
        if l.currents_a.len() != conductors {
            return Err(PassiveLoopError::CurrentCount { line: n, expected: conductors, found: l.currents_a.len() });
        }
        if !(l.frequency_hz.is_finite() && l.frequency_hz >= 0.0) {
            return Err(PassiveLoopError::Frequency { line: n });
        }
        if l.currents_a.iter().any(|i| !i.re.is_finite() || !i.im.is_finite()) {
            return Err(PassiveLoopError::NotFinite { what: "a source current" });
        }
    }
    Ok(())
}

/// Smallest distance between the closed loop and a polyline, m (a
/// one-vertex polyline is its point).
fn clearance_m(loop_vertices: &[Point3<f64>], path: &[Point3<f64>]) -> f64 {
    let lp = closed_segments(loop_vertices);
    let mut d = f64::INFINITY;
    for s in &lp {
        if let [p] = path {
            d = d.min(point_segment_distance_m(p, &s.a, &s.b));
        }
        for w in path.windows(2) {
            d = d.min(segment_segment_distance_m(&s.a, &s.b, &w[0], &w[1]));
        }
    }
    d
}

/// A straight segment with its length and unit direction.
#[derive(Debug, Clone, Copy)]
struct Segment {
    a: Point3<f64>,
    b: Point3<f64>,
    len: f64,
    dir: Vector3<f64>,
}

impl Segment {
    /// `None` for a zero-length segment.
    fn new(a: Point3<f64>, b: Point3<f64>) -> Option<Segment> {
        let d = b - a;
        let len = d.norm();
        (len > 0.0).then(|| Segment { a, b, len, dir: d / len })
    }
    fn at(&self, s: f64) -> Point3<f64> {
        self.a + self.dir * s
    }
}

/// The path without a repeated closing vertex.
fn open_vertices(path: &[Point3<f64>]) -> &[Point3<f64>] {
    match path {
        [first, .., last] if path.len() > 1 && first == last => &path[..path.len() - 1],
        _ => path,
    }
}

fn open_segments(path: &[Point3<f64>]) -> Vec<Segment> {
    path.windows(2).filter_map(|w| Segment::new(w[0], w[1])).collect()
}

fn closed_segments(vertices: &[Point3<f64>]) -> Vec<Segment> {
    let n = vertices.len();
    if n < 2 {
        return Vec::new();
    }
    (0..n).filter_map(|i| Segment::new(vertices[i], vertices[(i + 1) % n])).collect()
}

/// `∫ dt / √(|p − r(t)|² + g²)` over the segment, closed form
/// `ln((ra + rb + L)/(ra + rb − L))` with regularised end distances, written
/// without cancellation (module doc). `ra rb + a'·b'` is
/// `(|a×b|² + g²L²)/(ra rb − a'·b')` when `a'·b' = a·b + g² < 0`.
fn line_potential(p: &Point3<f64>, s: &Segment, g2: f64) -> f64 {
    let (a, b) = (p - s.a, p - s.b);
    let (ra, rb) = ((a.norm_squared() + g2).sqrt(), (b.norm_squared() + g2).sqrt());
    let dot = a.dot(&b) + g2;
    let rr = ra * rb;
    let bracket = if dot >= 0.0 { rr + dot } else { (a.cross(&b).norm_squared() + g2 * s.len * s.len) / (rr - dot) };
    // ra + rb − L, kept above zero so a point on the filament gives a large
    // finite value rather than ∞ (and never ∞ − ∞ = NaN in the sums).
    let gap = (2.0 * bracket / (ra + rb + s.len)).max(s.len * 1e-250);
    (2.0 * s.len / gap).ln_1p()
}

/// `∫∫ ds dt / √((s − t)² + g²)` of a segment of length `len` with itself:
/// `2 (L asinh(L/g) − (√(L² + g²) − g))`, the bracket written as
/// `L²/(√(L² + g²) + g)`.
fn self_segment_integral(len: f64, g: f64) -> f64 {
    let root = (len * len + g * g).sqrt();
    2.0 * (len * (len / g).asinh() - len * len / (root + g))
}

/// `(u_i·u_j) ∫_i ds ∫_j dt / √(|r_i(s) − r_j(t)|² + g²)`: the outer
/// integral over `i` by Gauss–Legendre on pieces bisected until each is no
/// longer than its (regularised) distance from `j`.
fn pair_integral(i: &Segment, j: &Segment, g: f64, rules: &Rules) -> f64 {
    let cos = i.dir.dot(&j.dir);
    if cos == 0.0 {
        return 0.0;
    }
    let g2 = g * g;
    let mut sum = Sum::default();
    let mut stack = vec![(0.0, i.len)];
    let mut pieces = 0;
    while let Some((s0, s1)) = stack.pop() {
        let (p0, p1) = (i.at(s0), i.at(s1));
        let d = segment_segment_distance_m(&p0, &p1, &j.a, &j.b);
        let ratio = (s1 - s0) / (d * d + g2).sqrt();
        if ratio > MAX_PIECE_PER_DISTANCE && pieces + stack.len() < MAX_PIECES {
            let mid = 0.5 * (s0 + s1);
            stack.push((s0, mid));
            stack.push((mid, s1));
            continue;
        }
        pieces += 1;
        let rule = rules.for_ratio(ratio);
        let (c, h) = (0.5 * (s0 + s1), 0.5 * (s1 - s0));
        let piece: f64 = rule.iter().map(|(x, w)| w * line_potential(&i.at(c + h * x), j, g2)).sum();
        sum.add(piece * h);
    }
    cos * sum.value()
}

/// Gauss–Legendre rules on [−1, 1] for the orders of [`ORDERS`].
struct Rules(Vec<Vec<(f64, f64)>>);

impl Rules {
    fn new() -> Rules {
        Rules(ORDERS.iter().map(|&(_, n)| gauss_legendre(n)).collect())
    }
    fn for_ratio(&self, ratio: f64) -> &[(f64, f64)] {
        let k = ORDERS.iter().position(|&(r, _)| ratio <= r).unwrap_or(ORDERS.len() - 1);
        &self.0[k]
    }
}

/// Nodes and weights of the `n`-point Gauss–Legendre rule: Newton's method
/// on `P_n` from the start `cos(π (i + 3/4)/(n + 1/2))`, with the
/// three-term recurrence `k P_k = (2k − 1) x P_{k−1} − (k − 1) P_{k−2}` and
/// `w = 2/((1 − x²) P_n'(x)²)` (Abramowitz & Stegun 25.4.29; Press et al.,
/// *Numerical Recipes*, §4.6 "gauleg": from memory).
fn gauss_legendre(n: usize) -> Vec<(f64, f64)> {
    let nf = n as f64;
    (0..n)
        .map(|i| {
            let mut x = (std::f64::consts::PI * (i as f64 + 0.75) / (nf + 0.5)).cos();
            let mut dp = 1.0;
            for _ in 0..100 {
                let (mut p0, mut p1) = (1.0, x);
                for k in 2..=n {
                    let kf = k as f64;
                    (p0, p1) = (p1, ((2.0 * kf - 1.0) * x * p1 - (kf - 1.0) * p0) / kf);
                }
                dp = nf * (x * p1 - p0) / (x * x - 1.0);
                let step = p1 / dp;
                x -= step;
                if step.abs() <= 1e-16 {
                    break;
                }
            }
            (x, 2.0 / ((1.0 - x * x) * dp * dp))
        })
        .collect()
}

/// Neumaier's compensated sum: the terms of a loop's double sum cancel to a
/// small fraction of their magnitudes when the paths are far apart.
#[derive(Debug, Default, Clone, Copy)]
struct Sum {
    sum: f64,
    carry: f64,
}

impl Sum {
    fn add(&mut self, x: f64) {
        let t = self.sum + x;
        if self.sum.abs() >= x.abs() {
            self.carry += (self.sum - t) + x;
        } else {
            self.carry += (x - t) + self.sum;
        }
        self.sum = t;
    }
    fn value(&self) -> f64 {
        self.sum + self.carry
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gauss_legendre_rules_integrate_their_polynomials_exactly() {
        // An n-point rule is exact to degree 2n − 1: ∫ x^k dx over [−1, 1]
        // is 2/(k + 1) for even k and 0 for odd k (textbook); 1e-14 for
        // rounding over 12 terms.
        for &(_, n) in &ORDERS {
            let rule = gauss_legendre(n);
            for k in 0..2 * n {
                let got: f64 = rule.iter().map(|(x, w)| w * x.powi(k as i32)).sum();
                let want = if k % 2 == 0 { 2.0 / (k as f64 + 1.0) } else { 0.0 };
                assert!((got - want).abs() < 1e-14, "n {n} k {k}: {got} vs {want}");
            }
        }
    }

    #[test]
    fn the_line_potential_matches_the_asinh_form_beside_and_beyond_the_segment() {
        // ∫ dt/√((t − t0)² + c²) over [0, L] = asinh((L − t0)/c) + asinh(t0/c)
        // (standard integral), c² = ρ² + g².
        let s = Segment::new(Point3::origin(), Point3::new(2.0, 0.0, 0.0)).unwrap();
        for &(t0, rho, g) in
            &[(0.7f64, 1e-3f64, 0.0f64), (-3.0, 0.5, 0.0), (5.0, 1e-6, 0.0), (1.0, 0.0, 1e-4), (0.3, 1e3, 0.0)]
        {
            let c = (rho * rho + g * g).sqrt();
            let want = ((2.0 - t0) / c).asinh() + (t0 / c).asinh();
            let got = line_potential(&Point3::new(t0, rho, 0.0), &s, g * g);
            assert!((got - want).abs() <= 1e-13 * want.abs(), "{t0} {rho} {g}: {got} vs {want}");
        }
    }

    #[test]
    fn neumaier_keeps_what_a_plain_sum_loses() {
        let mut s = Sum::default();
        for x in [1.0, 1e100, 1.0, -1e100] {
            s.add(x);
        }
        assert_eq!(s.value(), 2.0);
    }
}
