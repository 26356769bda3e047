//! Busbars with a rectangular cross-section, expanded into parallel thin
//! filaments that the exact segment kernel computes as it does any wire.
//!
//! # The subdivision rule (fixed, not adaptive)
//!
//! The bar's cross-section is cut along its longer side into `m` panels,
//! `m = ⌈long / short⌉` (square panels) but at most [`MAX_PANELS`], and each
//! panel carries a 3 × 3 Gauss–Legendre product rule (Abramowitz & Stegun,
//! *Handbook of Mathematical Functions*, 25.4.29, table 25.4): one filament
//! at each node, carrying the node's weight as its share of the bar's
//! current (the weights of each panel sum to its area, so the shares sum
//! to 1). For an evaluation point outside the bar this integrates the
//! smooth 2-D line-current kernel over the cross-section, and its error
//! falls geometrically with the distance from the nearest panel.
//!
//! Relative error of the 2-D field against the closed form for a
//! rectangular conductor (the log/atan form derived in
//! `tests/core/site/bars.rs`), worst over points all around the bar, as
//! printed by `tests/core/site/bar_rule_errors.py` (pure Python):
//! - at twice the longer side from the bar's axis and beyond: ≤ 1 × 10⁻⁵
//!   (5.3 × 10⁻⁶ for a square bar, far less for flat ones; the goal was
//!   0.1 %);
//! - at one shorter side from the surface and beyond: ≤ 1 × 10⁻⁴ for
//!   aspect ratios up to 20 (5.3 × 10⁻⁵ for the square bar); past 16
//!   panels stop being square and this grows (2.5 × 10⁻³ at 40).
//!
//! An adaptive rule (finer only for points near the bar) would need the
//! engine to pick filaments per point; the fixed rule keeps a bar a set of
//! ordinary conductors at 9 filaments per panel (90 for a 100 × 10 mm bar).
//!
//! # Points inside the bar
//!
//! Each filament's radius covers its Gauss–Legendre cell (the cells of the
//! cumulative weights, which contain their nodes: the Chebyshev–Markov–
//! Stieltjes separation theorem), so every point of the rectangle lies
//! within some filament's radius and is flagged as inside, as a round
//! conductor's interior is. The flagged zone reaches at most about one
//! cell (a sixth of the shorter side) beyond the surface.
//!
//! # Orientation
//!
//! `orientation` is a direction `[x, y, z]` (any length) the bar's width
//! lies along. On each segment of the path its component across the
//! segment is used (normalised), the height lies along the segment's
//! direction × width axis; the orientation must not be within
//! [`MIN_ACROSS`] (as a sine, ≈ 5.7°) of any segment's direction.

use super::model::{Conductor, Drive};
use super::problem::{Pointer, Problems};
use super::wire::CrossSectionDoc;
use nalgebra::{Point3, Vector3};

/// Largest number of panels along the longer side: beyond an aspect ratio
/// of 16 panels stop being square (the far-field bound still holds; near
/// the surface the error grows). 16 × 9 = 144 filaments per bar at most.
pub const MAX_PANELS: usize = 16;
/// Bounds of a bar's width and height, m: 1 mm to 2 m (the radius bounds'
/// largest enclosure).
pub const BAR_SIDE_RANGE_M: (f64, f64) = (1.0e-3, 2.0);
/// The width axis must stand at least this much (a sine, ≈ 5.7°) across
/// every segment: nearer the segment's own direction it says nothing.
pub const MIN_ACROSS: f64 = 0.1;

/// 3-point Gauss–Legendre nodes and weights on [−1, 1] (A&S table 25.4).
const GL3_NODES: [f64; 3] = [-0.774_596_669_241_483_4, 0.0, 0.774_596_669_241_483_4];
const GL3_WEIGHTS: [f64; 3] = [5.0 / 9.0, 8.0 / 9.0, 5.0 / 9.0];

/// One filament of the cross-section: its offsets along the width and
/// height axes from the bar's axis, its share of the current and the radius
/// that covers its cell, all in metres except the share.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cell {
    pub along_width_m: f64,
    pub along_height_m: f64,
    pub share: f64,
    pub radius_m: f64,
}

/// 1-D composite rule over a side of length `side_m` cut into `panels`:
/// (offset from the centre, weight summing to 1, half-extent of the cell
/// around the node: the larger distance from the node to its cell's ends).
fn side_rule(side_m: f64, panels: usize) -> Vec<(f64, f64, f64)> {
    let panel_m = side_m / panels as f64;
    let mut out = Vec::with_capacity(3 * panels);
    for j in 0..panels {
        let centre = -0.5 * side_m + (j as f64 + 0.5) * panel_m;
        let mut lower = -1.0; // cell bounds on the panel's [−1, 1]
        for (x, w) in GL3_NODES.iter().zip(GL3_WEIGHTS) {
            let upper = lower + w;
            let reach = (x - lower).max(upper - x) * 0.5 * panel_m;
            out.push((centre + x * 0.5 * panel_m, w / 2.0 / panels as f64, reach));
            lower = upper;
        }
    }
    out
}

/// The filaments of a `width_m` × `height_m` bar under the rule above.
pub fn cells(width_m: f64, height_m: f64) -> Vec<Cell> {
    let (long, short) = if width_m >= height_m { (width_m, height_m) } else { (height_m, width_m) };
    let panels = ((long / short).ceil() as usize).clamp(1, MAX_PANELS);
    let (w_panels, h_panels) = if width_m >= height_m { (panels, 1) } else { (1, panels) };
    let across_w = side_rule(width_m, w_panels);
    let across_h = side_rule(height_m, h_panels);
    let mut out = Vec::with_capacity(across_w.len() * across_h.len());
    for &(u, wu, ru) in &across_w {
        for &(v, wv, rv) in &across_h {
            out.push(Cell { along_width_m: u, along_height_m: v, share: wu * wv, radius_m: ru.hypot(rv) });
        }
    }
    out
}

/// Checks a conductor's cross-section against its path (problems under
/// `at`), and gives the bar's filaments; `None` after a problem.
pub(super) fn expand(
    bar: Conductor,
    section: &CrossSectionDoc,
    at: &Pointer,
    p: &mut Problems,
) -> Option<Vec<Conductor>> {
    let before = p.len();
    for (key, v) in [("width_m", section.width_m), ("height_m", section.height_m)] {
        let (lo, hi) = BAR_SIDE_RANGE_M;
        if !(v.is_finite() && (lo..=hi).contains(&v)) {
            p.push(&at.key(key), format!("must be between {lo} and {hi} m"));
        }
    }
    let axis = Vector3::from(section.orientation);
    if !axis.iter().all(|x| x.is_finite()) || axis.norm() == 0.0 {
        p.push(&at.key("orientation"), "give the width axis as a non-zero direction [x, y, z]");
    } else {
        for (j, w) in bar.path.windows(2).enumerate() {
            let Some(t) = (w[1] - w[0]).try_normalize(0.0) else { continue };
            if axis.normalize().cross(&t).norm() < MIN_ACROSS {
                p.push(
                    &at.key("orientation"),
                    format!(
                        "the width axis runs along segment {j} → {} of the path (within {:.1}°): give a direction across the bar",
                        j + 1,
                        MIN_ACROSS.asin().to_degrees()
                    ),
                );
                break;
            }
        }
    }
    if p.len() > before || bar.path.iter().any(|v| !v.iter().all(|x| x.is_finite())) {
        return None;
    }
    let frames: Vec<(Vector3<f64>, Vector3<f64>)> = bar
        .path
        .windows(2)
        .map(|w| {
            let t = (w[1] - w[0]).normalize();
            let e_w = (axis - axis.dot(&t) * t).normalize();
            (e_w, t.cross(&e_w))
        })
        .collect();
    let pieces = cells(section.width_m, section.height_m)
        .into_iter()
        .enumerate()
        .map(|(n, cell)| {
            let path = offset_path(&bar.path, &frames, cell.along_width_m, cell.along_height_m);
            let drive = match bar.drive {
                Drive::Phase { circuit, phase, share } => Drive::Phase { circuit, phase, share: share * cell.share },
                Drive::Explicit { current_a } => Drive::Explicit { current_a: current_a * cell.share },
            };
            let mut piece = bar.clone();
            piece.path = path;
            piece.radius_m = cell.radius_m;
            piece.drive = drive;
            piece.cell = Some(n);
            piece
        })
        .collect();
    Some(pieces)
}

/// A path parallel to `path` at offset `a · e₁ + b · e₂` of each segment's
/// frame `(e₁, e₂)`: at a bend, the vertex where the two offset lines meet
/// (the mid-point of their closest approach when they are skew), or the
/// mean of the two offsets where that point is not well defined (a
/// straight continuation, or a hairpin turn whose meeting point would lie
/// far away). Shared by bars and cable formations.
pub(super) fn offset_path(
    path: &[Point3<f64>],
    frames: &[(Vector3<f64>, Vector3<f64>)],
    a: f64,
    b: f64,
) -> Vec<Point3<f64>> {
    let off = |s: usize| a * frames[s].0 + b * frames[s].1;
    let n = path.len();
    (0..n)
        .map(|j| {
            if j == 0 {
                return path[0] + off(0);
            }
            if j == n - 1 {
                return path[j] + off(j - 1);
            }
            let (o1, o2) = (off(j - 1), off(j));
            let t1 = (path[j] - path[j - 1]).normalize();
            let t2 = (path[j + 1] - path[j]).normalize();
            let mean = path[j] + 0.5 * (o1 + o2);
            // Lines p1 + s·t1 and p2 + u·t2 through the offset vertex.
            let (p1, p2) = (path[j] + o1, path[j] + o2);
            let c = t1.dot(&t2);
            let denom = 1.0 - c * c;
            if denom < 1.0e-9 {
                return mean;
            }
            let r = p1 - p2;
            let (d1, d2) = (t1.dot(&r), t2.dot(&r));
            let s = (c * d2 - d1) / denom;
            let u = (d2 - c * d1) / denom;
            let meet = nalgebra::center(&(p1 + s * t1), &(p2 + u * t2));
            // A meeting point farther than ten offsets away is a hairpin.
            if (meet - path[j]).norm() > 10.0 * a.hypot(b).max(1.0e-9) { mean } else { meet }
        })
        .collect()
}

/// The conductors as drawn and exported: a bar once, along its axis (the
/// mean of its filaments' vertices, since the nodes lie symmetrically about
/// the axis) with the radius of the smallest tube around its filaments'
/// cells; every other conductor as it is.
pub fn drawn(conductors: &[Conductor]) -> Vec<std::borrow::Cow<'_, Conductor>> {
    use std::borrow::Cow;
    let mut out: Vec<Cow<'_, Conductor>> = Vec::new();
    let mut k = 0;
    while k < conductors.len() {
        let first = &conductors[k];
        let n = conductors[k..].iter().take_while(|c| c.same_bar(first)).count().max(1);
        if first.cell.is_none() || n == 1 {
            out.push(Cow::Borrowed(first));
            k += 1;
            continue;
        }
        let bar = &conductors[k..k + n];
        let axis: Vec<Point3<f64>> = (0..first.path.len())
            .map(|j| Point3::from(bar.iter().map(|c| c.path[j].coords).sum::<Vector3<f64>>() / n as f64))
            .collect();
        let radius_m = bar.iter().map(|c| (c.path[0] - axis[0]).norm() + c.radius_m).fold(0.0, f64::max);
        let mut whole = first.clone();
        whole.path = axis;
        whole.radius_m = radius_m;
        whole.cell = None;
        out.push(Cow::Owned(whole));
        k += n;
    }
    out
}
