//! Phasor Biot–Savart field engine for thin straight filaments.
//!
//! Geometry and current are separated by linearity: the field of conductor k
//! at a point is `G_k(p) · I_k`, with `G_k` a real 3-vector (µT per A RMS) and
//! `I_k` a complex RMS phasor. [`influence_matrix`] computes and keeps every
//! `G_k(p)` so load cases, phase arrangements and survey fits reuse the
//! geometry; [`evaluate`] streams the same kernel straight into phasors
//! without storing `G`, which is what a large map needs.
//!
//! Each has a `try_` twin that takes a [`Cancel`] and checks it before each
//! conductor of each chunk of points: 64 points times one
//! conductor's segments, a few milliseconds at most for the largest site
//! the service accepts (DEVELOPERS.md, "Why cooperative cancellation").

pub mod bound;
mod geometry;
mod kernel;
mod phasor;

pub use geometry::{Filament, Filaments};
pub use kernel::{MU0_OVER_4PI_UT_M_PER_A, Variant};
pub use phasor::{FieldPhasor, maximum_ut, resultant_ut, total_maximum_ut, total_resultant_ut};

use crate::cancel::{Cancel, Cancelled, uncancelled};
use kernel::{CHUNK, ChunkPoints, UnitField};
use nalgebra::{Point3, Vector3};
use num_complex::Complex64;
use rayon::prelude::*;

/// One spectral line of the excitation: the RMS current phasor of every
/// conductor at one frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct SpectralLine {
    /// Harmonic order (1 = fundamental).
    pub order: u32,
    pub frequency_hz: f64,
    /// RMS phasor per conductor, in the order of the [`Filaments`], A.
    pub currents_a: Vec<Complex64>,
}

/// Currents of all conductors at every frequency present.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Excitation {
    pub lines: Vec<SpectralLine>,
}

/// A point that lies inside a conductor's radius.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub struct InsideHit {
    pub point: usize,
    pub conductor: usize,
}

/// Field phasors at many points, one per spectral line.
#[derive(Debug, Clone, PartialEq)]
pub struct FieldSet {
    line_count: usize,
    /// Point-major: `b_ut[i * line_count + f]`.
    b_ut: Vec<FieldPhasor>,
    /// Sorted by point, then conductor.
    pub inside: Vec<InsideHit>,
}

impl FieldSet {
    pub fn point_count(&self) -> usize {
        self.b_ut.len().checked_div(self.line_count).unwrap_or(0)
    }
    /// Phasors of point `i`, one per spectral line in excitation order.
    pub fn at(&self, i: usize) -> &[FieldPhasor] {
        &self.b_ut[i * self.line_count..(i + 1) * self.line_count]
    }
    /// Indices of conductors that point `i` lies inside.
    pub fn inside_of(&self, i: usize) -> impl Iterator<Item = usize> + '_ {
        let start = self.inside.partition_point(|h| h.point < i);
        self.inside[start..].iter().take_while(move |h| h.point == i).map(|h| h.conductor)
    }
}

/// Streams the field of every conductor at every point into phasors.
///
/// Preconditions: every excitation line has one current per conductor.
/// Points are processed in chunks across the rayon pool; the inner loop does
/// not allocate.
pub fn evaluate(filaments: &Filaments, points: &[Point3<f64>], excitation: &Excitation) -> FieldSet {
    evaluate_using(Variant::detect(), filaments, points, excitation)
}

/// [`evaluate`] that stops with [`Cancelled`] soon after `cancel` is set.
pub fn try_evaluate(
    filaments: &Filaments,
    points: &[Point3<f64>],
    excitation: &Excitation,
    cancel: &Cancel,
) -> Result<FieldSet, Cancelled> {
    evaluate_with(Variant::detect(), filaments, points, excitation, cancel)
}

/// [`evaluate`] with a chosen kernel variant (benchmarks and the test that
/// all variants agree bit for bit). An unsupported variant runs the baseline.
pub fn evaluate_using(
    variant: Variant,
    filaments: &Filaments,
    points: &[Point3<f64>],
    excitation: &Excitation,
) -> FieldSet {
    uncancelled(evaluate_with(variant, filaments, points, excitation, &Cancel::never()))
}

fn evaluate_with(
    variant: Variant,
    filaments: &Filaments,
    points: &[Point3<f64>],
    excitation: &Excitation,
    cancel: &Cancel,
) -> Result<FieldSet, Cancelled> {
    let lines = &excitation.lines;
    let nf = lines.len();
    let kcount = filaments.conductor_count();
    debug_assert!(lines.iter().all(|l| l.currents_a.len() == kcount));
    let mut b_ut = vec![FieldPhasor::zeros(); points.len() * nf];
    if nf == 0 {
        return Ok(FieldSet { line_count: 0, b_ut, inside: Vec::new() });
    }
    let inside = drive(variant, filaments, points, &mut b_ut, nf, cancel, |k, g, n, out| {
        for (f, line) in lines.iter().enumerate() {
            let cur = line.currents_a[k];
            if cur == Complex64::new(0.0, 0.0) {
                continue;
            }
            // Iterators rather than `out[i * nf + f]`: no bounds checks or
            // index arithmetic per point; the same operations in the same order.
            let unit = g.gx[..n].iter().zip(&g.gy[..n]).zip(&g.gz[..n]);
            let add = |(b, ((x, y), z)): (&mut FieldPhasor, ((&f64, &f64), &f64))| {
                b.x += cur * x;
                b.y += cur * y;
                b.z += cur * z;
            };
            if nf == 1 {
                out.iter_mut().zip(unit).for_each(add);
            } else {
                out[f..].iter_mut().step_by(nf).zip(unit).for_each(add);
            }
        }
    })?;
    Ok(FieldSet { line_count: nf, b_ut, inside })
}

/// Work (segment–point pairs) below which `drive` stays on the calling
/// thread: handing a job to the rayon pool and waiting for it costs tens of
/// microseconds of wake-ups, more than ~200,000 pairs take on one core
/// (≈ 0.4 ms at the kernel's 5 × 10⁸ pairs per core-second; tuning number,
/// measured with `bash bench/load/run.sh`, where the evaluate request has
/// 10,000 segment–point pairs).
const SEQUENTIAL_PAIRS: u64 = 200_000;

/// Runs the kernel for every conductor over chunks of points across the
/// rayon pool. `out` holds `width` values per point; `sink(k, unit, n, out)`
/// folds conductor k's unit-current field into the chunk's slice of `out`.
/// The values of points inside a conductor are reset to the default (zero)
/// afterwards: the thin-wire field is meaningless there. Returns the inside
/// hits sorted by point, then conductor, or [`Cancelled`] (with `out` half
/// written) once `cancel` is seen: before each conductor of each chunk, so
/// the work between two looks is `CHUNK` points times one conductor's
/// segments. Collecting into a `Result` stops rayon handing out chunks.
fn drive<T, S>(
    variant: Variant,
    filaments: &Filaments,
    points: &[Point3<f64>],
    out: &mut [T],
    width: usize,
    cancel: &Cancel,
    sink: S,
) -> Result<Vec<InsideHit>, Cancelled>
where
    T: Send + Default,
    S: Fn(usize, &UnitField, usize, &mut [T]) + Sync,
{
    let kernel = variant.kernel();
    let kcount = filaments.conductor_count();
    let one_chunk = |(c, (pts, out)): (usize, (&[Point3<f64>], &mut [T]))| {
        let chunk = ChunkPoints::load(pts);
        let mut g = UnitField::default();
        let mut hits = Vec::new();
        for k in 0..kcount {
            cancel.check()?;
            // SAFETY: `Variant::kernel` only returns variants this CPU supports.
            unsafe { kernel(filaments, k, &chunk, &mut g) };
            sink(k, &g, pts.len(), out);
            collect_hits(&g, c, pts.len(), k, &mut hits);
        }
        hits.sort_unstable();
        Ok(hits)
    };
    let pairs = (filaments.segment_count() as u64).saturating_mul(points.len() as u64);
    let hits: Vec<Vec<InsideHit>> = if pairs <= SEQUENTIAL_PAIRS {
        points
            .chunks(CHUNK)
            .zip(out.chunks_mut(CHUNK * width))
            .enumerate()
            .map(one_chunk)
            .collect::<Result<_, Cancelled>>()?
    } else {
        points
            .par_chunks(CHUNK)
            .zip(out.par_chunks_mut(CHUNK * width))
            .enumerate()
            .map(one_chunk)
            .collect::<Result<_, Cancelled>>()?
    };
    let inside: Vec<InsideHit> = hits.into_iter().flatten().collect();
    for h in &inside {
        for v in &mut out[h.point * width..(h.point + 1) * width] {
            *v = T::default();
        }
    }
    Ok(inside)
}

fn collect_hits(g: &UnitField, chunk: usize, n: usize, k: usize, hits: &mut Vec<InsideHit>) {
    // Usually no flag is set: one OR over the flags (vectorised) says so.
    if g.inside.iter().fold(0, |acc, &f| acc | f) == 0 {
        return;
    }
    for i in 0..n {
        if g.inside[i] != 0 {
            hits.push(InsideHit { point: chunk * CHUNK + i, conductor: k });
        }
    }
}

/// Real influence coefficients: `G_k(p)` in µT per A RMS for every point and
/// conductor, so that `B(p) = Σ_k G_k(p) · I_k` for any set of phasors.
#[derive(Debug, Clone, PartialEq)]
pub struct InfluenceMatrix {
    conductor_count: usize,
    /// Point-major: `g[i * conductor_count + k]`.
    g: Vec<Vector3<f64>>,
    pub inside: Vec<InsideHit>,
}

impl InfluenceMatrix {
    pub fn conductor_count(&self) -> usize {
        self.conductor_count
    }
    pub fn point_count(&self) -> usize {
        self.g.len().checked_div(self.conductor_count).unwrap_or(0)
    }
    /// `G_k(p_i)` in µT per A.
    pub fn coefficient(&self, point: usize, conductor: usize) -> Vector3<f64> {
        self.g[point * self.conductor_count + conductor]
    }
    /// Field phasor at point `i` for the given conductor currents (A RMS).
    pub fn apply(&self, point: usize, currents_a: &[Complex64]) -> FieldPhasor {
        let row = &self.g[point * self.conductor_count..(point + 1) * self.conductor_count];
        row.iter().zip(currents_a).fold(FieldPhasor::zeros(), |acc, (g, i)| acc + g.map(|x| *i * x))
    }
    /// True if point `i` lies inside any conductor.
    pub fn is_inside(&self, point: usize) -> bool {
        let s = self.inside.partition_point(|h| h.point < point);
        self.inside.get(s).is_some_and(|h| h.point == point)
    }
}

/// Computes the influence matrix (3 reals per point per conductor).
pub fn influence_matrix(filaments: &Filaments, points: &[Point3<f64>]) -> InfluenceMatrix {
    uncancelled(try_influence_matrix(filaments, points, &Cancel::never()))
}

/// [`influence_matrix`] that stops with [`Cancelled`] soon after `cancel`
/// is set.
pub fn try_influence_matrix(
    filaments: &Filaments,
    points: &[Point3<f64>],
    cancel: &Cancel,
) -> Result<InfluenceMatrix, Cancelled> {
    let kcount = filaments.conductor_count();
    let mut g = vec![Vector3::zeros(); points.len() * kcount];
    if kcount == 0 {
        return Ok(InfluenceMatrix { conductor_count: 0, g, inside: Vec::new() });
    }
    let inside = drive(Variant::detect(), filaments, points, &mut g, kcount, cancel, |k, u, n, out| {
        for i in 0..n {
            out[i * kcount + k] = Vector3::new(u.gx[i], u.gy[i], u.gz[i]);
        }
    })?;
    Ok(InfluenceMatrix { conductor_count: kcount, g, inside })
}

/// Field of one straight segment at one point for a unit current (µT per A),
/// scalar reference form of the kernel: `None` if the point lies on the
/// filament itself (inside any conductor), never NaN for finite input.
pub fn segment_unit_field(p1: &Point3<f64>, p2: &Point3<f64>, p: &Point3<f64>) -> Option<Vector3<f64>> {
    let f = Filaments::new(&[Filament { path: vec![*p1, *p2], radius_m: 0.0 }]);
    let chunk = ChunkPoints::load(std::slice::from_ref(p));
    let mut u = UnitField::default();
    // SAFETY: the baseline variant runs on every CPU.
    unsafe { kernel::unit_field_baseline(&f, 0, &chunk, &mut u) };
    let v = Vector3::new(u.gx[0], u.gy[0], u.gz[0]);
    let on_filament = (p - p1).cross(&(p - p2)).norm_squared() == 0.0 && (p - p1).dot(&(p - p2)) <= 0.0;
    (!on_filament).then_some(v)
}
