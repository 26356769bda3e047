//! The hot loop: unit-current field of one conductor at a chunk of points.
//!
//! Formula (vertex form of the thin straight filament, DESIGN.md "Field
//! engine"; equivalent to Griffiths, *Introduction to Electrodynamics*,
//! Example 5.5, written without angles): for a segment from vertex `p1` to
//! `p2` and a point `p`, with `a = p1 − p`, `b = p2 − p`,
//!
//! ```text
//! B = (µ0 I / 4π) · (a × b) · (|a| + |b|) / (|a||b| · (|a||b| + a·b))
//! ```
//!
//! Where `a·b < 0` (the point sees the segment under an obtuse angle, i.e. it
//! is close beside it) the factor `|a||b| + a·b` cancels, and is replaced by the
//! identical `|a × b|² / (|a||b| − a·b)`. Both cases are folded into one
//! numerator/denominator pair so each segment–point pair costs one division,
//! and each vertex–point pair one square root: the vertex offset and its norm
//! serve the segment before and the segment after it.
//!
//! The loop runs over a fixed-size chunk of points held in structure-of-arrays
//! form, so it compiles to straight-line vector code. It is compiled three
//! times (baseline x86-64, AVX2, AVX-512) and the widest one the running CPU
//! supports is chosen once per evaluation. No fused multiply–add is used, so
//! all three give bit-identical results: IEEE division and square root are
//! correctly rounded on every path.

use super::geometry::Filaments;

/// Points per chunk. 64 keeps the whole working set (≈ 7 KiB) in L1.
pub(crate) const CHUNK: usize = 64;

/// µ0 / 4π in µT·m/A (exactly 1e-7 T·m/A with the pre-2019 definition of µ0;
/// the 2019 SI value differs by 5.5e-10 relative, far below model accuracy).
pub const MU0_OVER_4PI_UT_M_PER_A: f64 = 0.1;

/// Coordinates of one chunk of points; unused tail slots hold a far point.
#[derive(Clone)]
pub(crate) struct ChunkPoints {
    pub px: [f64; CHUNK],
    pub py: [f64; CHUNK],
    pub pz: [f64; CHUNK],
}

/// Far away filler for unused tail slots: finite, and never inside anything.
const FILL_M: f64 = 1.0e9;

impl ChunkPoints {
    pub fn load(points: &[nalgebra::Point3<f64>]) -> Self {
        debug_assert!(points.len() <= CHUNK);
        let mut c = ChunkPoints { px: [FILL_M; CHUNK], py: [FILL_M; CHUNK], pz: [FILL_M; CHUNK] };
        for (i, p) in points.iter().enumerate() {
            c.px[i] = p.x;
            c.py[i] = p.y;
            c.pz[i] = p.z;
        }
        c
    }
}

/// Field of one conductor at unit current (µT per A RMS) over a chunk, and
/// whether each point lies inside the conductor's radius.
#[derive(Clone)]
pub(crate) struct UnitField {
    pub gx: [f64; CHUNK],
    pub gy: [f64; CHUNK],
    pub gz: [f64; CHUNK],
    pub inside: [u8; CHUNK],
    // Offsets and norms carried from one vertex to the next.
    ax: [f64; CHUNK],
    ay: [f64; CHUNK],
    az: [f64; CHUNK],
    na: [f64; CHUNK],
    a2: [f64; CHUNK],
}

impl Default for UnitField {
    fn default() -> Self {
        let z = [0.0; CHUNK];
        UnitField { gx: z, gy: z, gz: z, inside: [0; CHUNK], ax: z, ay: z, az: z, na: z, a2: z }
    }
}

/// Signature shared by the compiled variants.
pub(crate) type KernelFn = unsafe fn(&Filaments, usize, &ChunkPoints, &mut UnitField);

/// A compiled variant of the kernel. All variants give bit-identical
/// results; they differ only in vector width.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Variant {
    /// Baseline x86-64 (SSE2) or the target's default.
    Baseline,
    /// 256-bit AVX2.
    Avx2,
    /// 512-bit AVX-512F.
    Avx512,
}

impl Variant {
    /// The widest variant the running CPU supports.
    pub fn detect() -> Variant {
        #[cfg(target_arch = "x86_64")]
        {
            if std::arch::is_x86_feature_detected!("avx512f") {
                return Variant::Avx512;
            }
            if std::arch::is_x86_feature_detected!("avx2") {
                return Variant::Avx2;
            }
        }
        Variant::Baseline
    }

    /// Every variant the running CPU can execute, narrowest first.
    pub fn available() -> Vec<Variant> {
        [Variant::Baseline, Variant::Avx2, Variant::Avx512].into_iter().filter(|v| v.is_supported()).collect()
    }

    pub fn is_supported(self) -> bool {
        match self {
            Variant::Baseline => true,
            #[cfg(target_arch = "x86_64")]
            Variant::Avx2 => std::arch::is_x86_feature_detected!("avx2"),
            #[cfg(target_arch = "x86_64")]
            Variant::Avx512 => std::arch::is_x86_feature_detected!("avx512f"),
            #[cfg(not(target_arch = "x86_64"))]
            _ => false,
        }
    }

    pub fn name(self) -> &'static str {
        match self {
            Variant::Baseline => "baseline",
            Variant::Avx2 => "avx2",
            Variant::Avx512 => "avx512",
        }
    }

    /// The function for this variant, falling back to the baseline when the
    /// CPU lacks the features (so an unsupported choice is never executed).
    pub(crate) fn kernel(self) -> KernelFn {
        if !self.is_supported() {
            return unit_field_baseline;
        }
        match self {
            #[cfg(target_arch = "x86_64")]
            Variant::Avx512 => unit_field_avx512,
            #[cfg(target_arch = "x86_64")]
            Variant::Avx2 => unit_field_avx2,
            _ => unit_field_baseline,
        }
    }
}

/// Baseline variant; safe on every CPU of the target.
///
/// # Safety
/// Always safe to call; `unsafe` only to share [`KernelFn`].
pub(crate) unsafe fn unit_field_baseline(f: &Filaments, k: usize, p: &ChunkPoints, out: &mut UnitField) {
    unit_field(f, k, p, out)
}

/// # Safety
/// The CPU must support AVX2 ([`Variant::kernel`] checks this).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
pub(crate) unsafe fn unit_field_avx2(f: &Filaments, k: usize, p: &ChunkPoints, out: &mut UnitField) {
    unit_field(f, k, p, out)
}

/// # Safety
/// The CPU must support AVX-512F ([`Variant::kernel`] checks this).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f")]
pub(crate) unsafe fn unit_field_avx512(f: &Filaments, k: usize, p: &ChunkPoints, out: &mut UnitField) {
    unit_field(f, k, p, out)
}

/// Unit-current field of conductor `k` at the chunk, written to `out`.
///
/// Longer than our usual ~60 lines on purpose: it is the hot loop, inlined
/// into each compiled CPU variant, and splitting it into calls would put
/// the vertex reuse and the point loop behind function boundaries the
/// vectoriser must then see through.
#[inline(always)]
fn unit_field(f: &Filaments, k: usize, p: &ChunkPoints, out: &mut UnitField) {
    let range = f.vertex_range(k);
    let r2 = f.radius2[k];
    out.gx = [0.0; CHUNK];
    out.gy = [0.0; CHUNK];
    out.gz = [0.0; CHUNK];
    out.inside = [0; CHUNK];
    let Some(first) = range.clone().next() else { return };
    let (x0, y0, z0) = (f.vx[first], f.vy[first], f.vz[first]);
    for i in 0..CHUNK {
        let ax = x0 - p.px[i];
        let ay = y0 - p.py[i];
        let az = z0 - p.pz[i];
        let a2 = ax * ax + ay * ay + az * az;
        out.ax[i] = ax;
        out.ay[i] = ay;
        out.az[i] = az;
        out.a2[i] = a2;
        out.na[i] = a2.sqrt();
    }
    for j in range.skip(1) {
        let (x1, y1, z1, l2) = (f.vx[j], f.vy[j], f.vz[j], f.seg_len2[j]);
        let r2l2 = r2 * l2;
        for i in 0..CHUNK {
            let bx = x1 - p.px[i];
            let by = y1 - p.py[i];
            let bz = z1 - p.pz[i];
            let b2 = bx * bx + by * by + bz * bz;
            let nb = b2.sqrt();
            let (ax, ay, az, na, a2) = (out.ax[i], out.ay[i], out.az[i], out.na[i], out.a2[i]);
            let cx = ay * bz - az * by;
            let cy = az * bx - ax * bz;
            let cz = ax * by - ay * bx;
            let c2 = cx * cx + cy * cy + cz * cz;
            let dot = ax * bx + ay * by + az * bz;
            let nab = na * nb;
            let sum = na + nb;
            let acute = dot >= 0.0;
            let num = if acute { sum } else { sum * (nab - dot) };
            let den = if acute { nab * (nab + dot) } else { nab * c2 };
            let q = num / den;
            // den == 0 only on the filament itself (inside the conductor):
            // contribute nothing there rather than inf·0 = NaN.
            let s = if den > 0.0 { q } else { 0.0 };
            out.gx[i] += cx * s;
            out.gy[i] += cy * s;
            out.gz[i] += cz * s;
            // Inside test without square roots: distance to the segment's
            // line below r while the foot lies on the segment (0 ≤ −a·L ≤ |L|²,
            // −a·L = |a|² − a·b), or either end vertex closer than r.
            let t = a2 - dot;
            let beside = (c2 < r2l2) & (t >= 0.0) & (t <= l2);
            let near_end = (a2 < r2) | (b2 < r2);
            out.inside[i] |= (beside | near_end) as u8;
            out.ax[i] = bx;
            out.ay[i] = by;
            out.az[i] = bz;
            out.na[i] = nb;
            out.a2[i] = b2;
        }
    }
    for i in 0..CHUNK {
        out.gx[i] *= MU0_OVER_4PI_UT_M_PER_A;
        out.gy[i] *= MU0_OVER_4PI_UT_M_PER_A;
        out.gz[i] *= MU0_OVER_4PI_UT_M_PER_A;
    }
}
