//! Runtime dispatch must not change results beyond rounding. The baseline
//! kernel uses no fused multiply–add; the AVX2 and AVX-512 kernels fuse
//! (one rounding instead of two), so they agree with it to rounding, not bit
//! for bit.
//!
//! Tolerance, derived per point rather than picked: one segment's field is
//! some thirty correctly rounded operations (unit roundoff u = 1.1e-16) on
//! the vertex offsets a and b. Only `a×b` and `a·b` can cancel, and their
//! absolute rounding is a few u times |a||b|, so a variant's value of the
//! segment's field is within 32·u·κ·|G| of the exact one, with
//! κ = |a||b| / |a×b| ≥ 1 and |G| = 0.1·|a×b|(|a|+|b|) / (|a||b|(|a||b| + a·b))
//! µT/A; κ·|G| = 0.1·(|a|+|b|) / (|a||b| + a·b). Two variants differ by at
//! most twice that, 64·u·κ·|G|, and summing N segments and conductors adds
//! at most N·u·|G| each. Hence, per point and per component,
//! `|B_variant − B_baseline| ≤ (64 + N + 8)·u·Σ_k |I_k| Σ_segments κ·|G|`,
//! computed below with plain geometry (the 8 covers the complex products).

use super::*;
use fluxbound_core::field::{Variant, evaluate_using};
use nalgebra::Vector3;

/// `κ·|G|` of the segment `v1`–`v2` seen from `p`, µT per A: the scale of
/// its rounding error. `|a||b| + a·b` is taken as `|a×b|² / (|a||b| − a·b)`
/// where `a·b < 0`, which is the same number without cancellation.
fn error_scale(v1: &Point3<f64>, v2: &Point3<f64>, p: &Point3<f64>) -> f64 {
    let (a, b): (Vector3<f64>, Vector3<f64>) = (v1 - p, v2 - p);
    let (na, nb, dot) = (a.norm(), b.norm(), a.dot(&b));
    let cross2 = a.cross(&b).norm_squared();
    let sum_term = if dot >= 0.0 { na * nb + dot } else { cross2 / (na * nb - dot) };
    0.1 * (na + nb) / sum_term
}

#[test]
fn every_kernel_variant_agrees_with_the_baseline_to_rounding() {
    let paths: Vec<Vec<Point3<f64>>> = (0..5)
        .map(|k| {
            (0..40).map(|j| Point3::new(j as f64 * 0.3, (k as f64 * 0.7 + j as f64).sin(), 0.1 * k as f64)).collect()
        })
        .collect();
    let fil = Filaments::new(&paths.iter().map(|p| Filament { path: p.clone(), radius_m: 0.01 }).collect::<Vec<_>>());
    let currents_a: Vec<Complex64> = (0..5).map(|k| Complex64::from_polar(100.0 + k as f64, k as f64)).collect();
    let exc = Excitation { lines: vec![SpectralLine { order: 1, frequency_hz: 60.0, currents_a: currents_a.clone() }] };
    let pts: Vec<Point3<f64>> =
        (0..1000).map(|i| Point3::new((i % 37) as f64 * 0.4 - 2.0, (i / 37) as f64 * 0.3 - 4.0, 1.3)).collect();
    let u = f64::EPSILON / 2.0;
    let terms = (fil.segment_count() + paths.len()) as f64;
    let tolerance: Vec<f64> = pts
        .iter()
        .map(|p| {
            let scale: f64 = paths
                .iter()
                .zip(&currents_a)
                .map(|(path, i)| i.norm() * path.windows(2).map(|w| error_scale(&w[0], &w[1], p)).sum::<f64>())
                .sum();
            (64.0 + terms + 8.0) * u * scale
        })
        .collect();
    let reference = evaluate_using(Variant::Baseline, &fil, &pts, &exc);
    let available = Variant::available();
    eprintln!("variants on this CPU: {:?}", available);
    for v in available {
        let set = evaluate_using(v, &fil, &pts, &exc);
        assert_eq!(set.inside, reference.inside, "{}: inside flags", v.name());
        let mut worst: f64 = 0.0;
        for (i, tol) in tolerance.iter().enumerate() {
            let d = set.at(i)[0] - reference.at(i)[0];
            let err = d.iter().map(|c| c.norm()).fold(0.0, f64::max);
            assert!(err <= *tol, "{}: point {i} differs by {err:e} µT, tolerance {tol:e} µT", v.name());
            worst = worst.max(err / tol);
        }
        eprintln!("{}: largest difference {worst:.3} of the tolerance", v.name());
    }
}
