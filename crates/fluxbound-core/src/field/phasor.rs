//! Summary quantities of a complex RMS field phasor.
//!
//! Terminology follows IEC 61786 as summarised in docs/REFERENCES.md: the
//! **resultant** is the root-sum-square of three orthogonal RMS components
//! (what a three-axis meter reads); the **maximum** is the RMS value along the
//! major axis of the polarisation ellipse.

use nalgebra::{Matrix3, Vector3};
use num_complex::Complex64;

/// Complex RMS phasor of the flux density, components in µT.
pub type FieldPhasor = Vector3<Complex64>;

/// Resultant RMS flux density `sqrt(Σ|B_i|²)` of one phasor, µT.
pub fn resultant_ut(b: &FieldPhasor) -> f64 {
    b.iter().map(|c| c.norm_sqr()).sum::<f64>().sqrt()
}

/// Major semi-axis (RMS) of the polarisation ellipse of one phasor, µT:
/// `sqrt((|B|² + |B·B|) / 2)` with `B·B` the non-conjugated product.
///
/// Writing `B = Br + j·Bi`, `B·B = |Br|² − |Bi|² + 2j·Br·Bi`; `hypot` keeps
/// its magnitude free of overflow. The result satisfies
/// `resultant / √2 ≤ maximum ≤ resultant`.
pub fn maximum_ut(b: &FieldPhasor) -> f64 {
    let br = b.map(|c| c.re);
    let bi = b.map(|c| c.im);
    let (r2, i2) = (br.norm_squared(), bi.norm_squared());
    let bb = (r2 - i2).hypot(2.0 * br.dot(&bi));
    (0.5 * (r2 + i2 + bb)).max(0.0).sqrt().min(resultant_ut(b))
}

/// Resultant over several frequencies: quadrature sum, µT.
pub fn total_resultant_ut(per_frequency: &[FieldPhasor]) -> f64 {
    per_frequency.iter().map(|b| resultant_ut(b).powi(2)).sum::<f64>().sqrt()
}

/// Maximum over several frequencies, µT: the RMS value along the direction
/// that maximises it, `sqrt(λ_max(Σ_f Re(B_f B_fᴴ)))`.
///
/// For one frequency this is exactly [`maximum_ut`] (the matrix has rank 2 and
/// its larger eigenvalue is `(|B|² + |B·B|)/2`), so the single-frequency case
/// uses that closed form. With several frequencies the matrix can have rank
/// 3, so `resultant / √3 ≤ maximum ≤ resultant`. Derived here from the
/// definition of the RMS along a direction n: `Σ_f |n·B_f|²`.
pub fn total_maximum_ut(per_frequency: &[FieldPhasor]) -> f64 {
    match per_frequency {
        [] => 0.0,
        [one] => maximum_ut(one),
        many => {
            let mut m = Matrix3::<f64>::zeros();
            for b in many {
                let br = b.map(|c| c.re);
                let bi = b.map(|c| c.im);
                m += br * br.transpose() + bi * bi.transpose();
            }
            let eig = m.symmetric_eigenvalues();
            let top = eig.iter().cloned().fold(0.0_f64, f64::max);
            top.max(0.0).sqrt().min(total_resultant_ut(many))
        }
    }
}
