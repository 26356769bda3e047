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
//! is close beside it) the factor `|a||b| + a·b` cancels. One formula with
//! only non-negative sums serves both cases (see [`segment`]), so each
//! segment–point pair costs one division and no branch or select, and each
//! vertex–point pair one square root: the vertex offset and its norm serve
//! the segment before and the segment after it. Segments are taken two per
//! pass over the chunk, so each point's state is loaded and stored once per
//! two segments.
//!
//! The inside-conductor test runs only for segments that a bounding-box
//! bound cannot prove farther than the radius from every point of the chunk
//! ([`ChunkPoints::far_from_segment`], conservative by construction). The
//! conductor's whole box is tried first ([`ChunkPoints::far_from_box`]):
//! when it is far, no segment needs its own test, which spares the scalar
//! work between two passes. Away from the conductors, the usual case of a
//! map, the loop is the field alone.
//!
//! The loop runs over a fixed-size chunk of points held in structure-of-arrays
//! form, so it compiles to straight-line vector code; the arrays are 64-byte
//! aligned, so no 512-bit load or store straddles two cache lines. It is compiled three
//! times (baseline x86-64; AVX2 + FMA; AVX-512F + FMA) and the widest one the
//! running CPU supports is chosen once per evaluation. The FMA variants
//! fuse multiply–adds (fewer instructions, as gcc does for the C reference
//! of `bench/kernel/`), so they agree with the baseline to rounding, not
//! bit for bit; `tests/core/engine/variants.rs` states and checks the bound.
//! Speed against a C reference and the CPU's sqrt + division ceiling: README
//! "Performance".

use super::geometry::Filaments;

/// Points per chunk. 64 keeps the whole working set (≈ 7 KiB) in L1.
pub(crate) const CHUNK: usize = 64;

/// µ0 / 4π in µT·m/A (exactly 1e-7 T·m/A with the pre-2019 definition of µ0;
/// the 2019 SI value differs by 5.5e-10 relative, far below model accuracy).
pub const MU0_OVER_4PI_UT_M_PER_A: f64 = 0.1;

/// Coordinates of one chunk of points; unused tail slots hold a far point.
///
/// `lo`/`hi` bound the real points only (x, y, z), so the filler does not
/// widen the box that proves a conductor's segment far from the chunk.
#[derive(Clone)]
#[repr(C, align(64))]
pub(crate) struct ChunkPoints {
    pub px: [f64; CHUNK],
    pub py: [f64; CHUNK],
    pub pz: [f64; CHUNK],
    lo: [f64; 3],
    hi: [f64; 3],
}

/// Far away filler for unused tail slots: finite, and never inside anything.
const FILL_M: f64 = 1.0e9;

impl ChunkPoints {
    pub fn load(points: &[nalgebra::Point3<f64>]) -> Self {
        debug_assert!(points.len() <= CHUNK);
        let mut c = ChunkPoints {
            px: [FILL_M; CHUNK],
            py: [FILL_M; CHUNK],
            pz: [FILL_M; CHUNK],
            lo: [f64::INFINITY; 3],
            hi: [f64::NEG_INFINITY; 3],
        };
        for (i, p) in points.iter().enumerate() {
            c.px[i] = p.x;
            c.py[i] = p.y;
            c.pz[i] = p.z;
            // `min`/`max` pass over a NaN coordinate: such a point is never
            // flagged by the inside test either (its comparisons are false).
            for (d, v) in [p.x, p.y, p.z].into_iter().enumerate() {
                c.lo[d] = c.lo[d].min(v);
                c.hi[d] = c.hi[d].max(v);
            }
        }
        c
    }

    /// True if no point of the chunk can lie within `r` of the segment from
    /// `(x0, y0, z0)` to `(x1, y1, z1)`: on some axis the gap between the
    /// chunk's box and the segment's box exceeds `r`.
    ///
    /// Conservative: a point p within distance d < r of the segment's
    /// nearest point q has |p − q| < r on every axis, q lies in the segment's
    /// box and p in the chunk's, so every axis gap is below r; subtraction is
    /// correctly rounded and monotone, so the computed gap is then ≤ r too
    /// (r is itself a double) and `>` never holds. A NaN vertex or radius
    /// proves nothing (the comparisons are false).
    #[inline(always)]
    fn far_from_segment(&self, v0: [f64; 3], v1: [f64; 3], r: f64) -> bool {
        let mut lo = [0.0; 3];
        let mut hi = [0.0; 3];
        for d in 0..3 {
            (lo[d], hi[d]) = if v0[d] <= v1[d] { (v0[d], v1[d]) } else { (v1[d], v0[d]) };
        }
        self.far_from_box([lo, hi], r)
    }

    /// True if no point of the chunk can lie within `r` of the box
    /// `[lo, hi]`, so none within `r` of any segment inside it: that
    /// segment's box lies in this one, its gaps to the chunk's box are at
    /// least these (before rounding, and subtraction rounds monotonically),
    /// so [`ChunkPoints::far_from_segment`] would hold for each. A NaN
    /// bound proves nothing.
    #[inline(always)]
    fn far_from_box(&self, [lo, hi]: [[f64; 3]; 2], r: f64) -> bool {
        (0..3).any(|d| (lo[d] - self.hi[d] > r) | (self.lo[d] - hi[d] > r))
    }
}

/// Field of one conductor at unit current (µT per A RMS) over a chunk, and
/// whether each point lies inside the conductor's radius.
#[derive(Clone)]
#[repr(C, align(64))]
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
}

impl Default for UnitField {
    fn default() -> Self {
        let z = [0.0; CHUNK];
        UnitField { gx: z, gy: z, gz: z, inside: [0; CHUNK], ax: z, ay: z, az: z, na: z }
    }
}

/// Signature shared by the compiled variants.
pub(crate) type KernelFn = unsafe fn(&Filaments, usize, &ChunkPoints, &mut UnitField);

/// A compiled variant of the kernel. They differ in vector width and in
/// fused multiply–add (used by AVX2 and AVX-512, not by the baseline), so
/// their results agree to rounding, not bit for bit.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Variant {
    /// Baseline x86-64 (SSE2) or the target's default.
    Baseline,
    /// 256-bit AVX2 with FMA.
    Avx2,
    /// 512-bit AVX-512F with FMA.
    Avx512,
}

impl Variant {
    /// The widest variant the running CPU supports.
    pub fn detect() -> Variant {
        #[cfg(target_arch = "x86_64")]
        {
            if Variant::Avx512.is_supported() {
                return Variant::Avx512;
            }
            if Variant::Avx2.is_supported() {
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
            Variant::Avx2 => std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma"),
            #[cfg(target_arch = "x86_64")]
            Variant::Avx512 => {
                std::arch::is_x86_feature_detected!("avx512f") && std::arch::is_x86_feature_detected!("fma")
            }
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
    unit_field::<false>(f, k, p, out)
}

/// # Safety
/// The CPU must support AVX2 and FMA ([`Variant::kernel`] checks this).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
pub(crate) unsafe fn unit_field_avx2(f: &Filaments, k: usize, p: &ChunkPoints, out: &mut UnitField) {
    unit_field::<true>(f, k, p, out)
}

/// # Safety
/// The CPU must support AVX-512F and FMA ([`Variant::kernel`] checks this).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,fma")]
pub(crate) unsafe fn unit_field_avx512(f: &Filaments, k: usize, p: &ChunkPoints, out: &mut UnitField) {
    unit_field::<true>(f, k, p, out)
}

/// Unit-current field of conductor `k` at the chunk, written to `out`.
///
/// Each segment runs one of two passes over the chunk: with the inside
/// test, or without it where [`ChunkPoints::far_from_segment`] proves every
/// point of the chunk farther than the radius from that segment (then no
/// flag could be set, and none is). `FMA` fuses multiply–adds (only in
/// variants compiled with the `fma` target feature).
#[inline(always)]
fn unit_field<const FMA: bool>(f: &Filaments, k: usize, p: &ChunkPoints, out: &mut UnitField) {
    let range = f.vertex_range(k);
    let (r, r2) = (f.radius[k], f.radius2[k]);
    out.gx = [0.0; CHUNK];
    out.gy = [0.0; CHUNK];
    out.gz = [0.0; CHUNK];
    out.inside = [0; CHUNK];
    let Some(first) = range.clone().next() else { return };
    // A conductor whose box is far from the chunk needs no segment's test.
    let all_far = p.far_from_box(f.bbox[k], r);
    let mut v0 = [f.vx[first], f.vy[first], f.vz[first]];
    for i in 0..CHUNK {
        let ax = v0[0] - p.px[i];
        let ay = v0[1] - p.py[i];
        let az = v0[2] - p.pz[i];
        out.ax[i] = ax;
        out.ay[i] = ay;
        out.az[i] = az;
        out.na[i] = norm2::<FMA>([ax, ay, az]).sqrt();
    }
    // Segments go two at a time: each point's offsets and field are
    // loaded and stored once per two segments, not once per segment.
    let mut j = first + 1;
    while j < range.end {
        let v1 = [f.vx[j], f.vy[j], f.vz[j]];
        if j + 1 < range.end {
            let v2 = [f.vx[j + 1], f.vy[j + 1], f.vz[j + 1]];
            let (l1, l2) = (f.seg_len2[j], f.seg_len2[j + 1]);
            if all_far || (p.far_from_segment(v0, v1, r) && p.far_from_segment(v1, v2, r)) {
                two_segments::<false, FMA>(v1, v2, [0.0; 2], 0.0, p, out);
            } else {
                two_segments::<true, FMA>(v1, v2, [l1, l2], r2, p, out);
            }
            v0 = v2;
            j += 2;
        } else {
            if all_far || p.far_from_segment(v0, v1, r) {
                one_segment::<false, FMA>(v1, 0.0, 0.0, p, out);
            } else {
                one_segment::<true, FMA>(v1, f.seg_len2[j], r2, p, out);
            }
            v0 = v1;
            j += 1;
        }
    }
    for i in 0..CHUNK {
        out.gx[i] *= MU0_OVER_4PI_UT_M_PER_A;
        out.gy[i] *= MU0_OVER_4PI_UT_M_PER_A;
        out.gz[i] *= MU0_OVER_4PI_UT_M_PER_A;
    }
}

/// `x·y + z`, fused (one rounding) if `FMA`.
#[inline(always)]
fn mul_add<const FMA: bool>(x: f64, y: f64, z: f64) -> f64 {
    if FMA { x.mul_add(y, z) } else { x * y + z }
}

/// `|v|²`; without FMA in the order `(x² + y²) + z²`.
#[inline(always)]
fn norm2<const FMA: bool>(v: [f64; 3]) -> f64 {
    if FMA {
        mul_add::<true>(v[0], v[0], mul_add::<true>(v[1], v[1], v[2] * v[2]))
    } else {
        v[0] * v[0] + v[1] * v[1] + v[2] * v[2]
    }
}

/// `x·y − z·w`; with FMA the first product is not rounded.
#[inline(always)]
fn mul_sub_mul<const FMA: bool>(x: f64, y: f64, z: f64, w: f64) -> f64 {
    if FMA { x.mul_add(y, -(z * w)) } else { x * y - z * w }
}

/// Offsets of vertex `v` from point `i` of the chunk, and their squared norm.
#[inline(always)]
fn offsets<const FMA: bool>(v: [f64; 3], p: &ChunkPoints, i: usize) -> ([f64; 3], f64) {
    let b = [v[0] - p.px[i], v[1] - p.py[i], v[2] - p.pz[i]];
    (b, norm2::<FMA>(b))
}

/// Unit-current field (without µ0/4π) of the segment seen from a point at
/// offsets `a`, `b` (norms `na`, `nb`) to its ends, as `a×b` and the factor
/// `s` it is scaled by, with `|a×b|²` and `a·b` for the inside test.
///
/// `|a||b| + a·b` cancels where the point sees the segment under an obtuse
/// angle (`a·b < 0`, close beside it). With `m = |a||b| + |a·b|` (no
/// cancellation) and `|a×b|² = |a|²|b|² − (a·b)²`,
/// `(|a||b| + a·b)·m = |a×b|² + (a·b + |a·b|)·m`: that is `m²` where
/// `a·b ≥ 0` and `|a×b|²` where `a·b < 0`, a sum of non-negative terms either
/// way. So `s = (|a| + |b|)·m / (|a||b| · (|a×b|² + (a·b + |a·b|)·m))` is
/// accurate on both sides without a branch or a select; for `a·b < 0` it is
/// the former obtuse form `(|a|+|b|)(|a||b| − a·b) / (|a||b| |a×b|²)` (bit
/// for bit without FMA).
#[inline(always)]
fn segment<const FMA: bool>(a: [f64; 3], na: f64, b: [f64; 3], nb: f64) -> ([f64; 3], f64, f64, f64) {
    let c = [
        mul_sub_mul::<FMA>(a[1], b[2], a[2], b[1]),
        mul_sub_mul::<FMA>(a[2], b[0], a[0], b[2]),
        mul_sub_mul::<FMA>(a[0], b[1], a[1], b[0]),
    ];
    let c2 = norm2::<FMA>(c);
    let dot = if FMA {
        mul_add::<true>(a[0], b[0], mul_add::<true>(a[1], b[1], a[2] * b[2]))
    } else {
        a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
    };
    let nab = na * nb;
    let m = nab + dot.abs();
    let num = (na + nb) * m;
    let den = nab * mul_add::<FMA>(dot + dot.abs(), m, c2);
    let q = num / den;
    // den == 0 only on the filament itself (inside the conductor):
    // contribute nothing there rather than inf·0 = NaN.
    let s = if den > 0.0 { q } else { 0.0 };
    (c, s, c2, dot)
}

/// Inside test without square roots: distance to the segment's line below r
/// while the foot lies on the segment (0 ≤ −a·L ≤ |L|², −a·L = |a|² − a·b),
/// or either end vertex closer than r. `l2` is |L|², `r2` is r².
#[inline(always)]
fn inside(a2: f64, b2: f64, c2: f64, dot: f64, l2: f64, r2: f64) -> bool {
    let t = a2 - dot;
    let beside = (c2 < r2 * l2) & (t >= 0.0) & (t <= l2);
    let near_end = (a2 < r2) | (b2 < r2);
    beside | near_end
}

/// One segment, from the carried vertex offsets to vertex `v1`, over the
/// chunk: adds its field and, if `INSIDE`, sets the inside flags (`l2` the
/// squared segment length, `r2` the squared radius).
#[inline(always)]
fn one_segment<const INSIDE: bool, const FMA: bool>(
    v1: [f64; 3],
    l2: f64,
    r2: f64,
    p: &ChunkPoints,
    out: &mut UnitField,
) {
    for i in 0..CHUNK {
        let (b, b2) = offsets::<FMA>(v1, p, i);
        let nb = b2.sqrt();
        let (a, na) = ([out.ax[i], out.ay[i], out.az[i]], out.na[i]);
        let (c, s, c2, dot) = segment::<FMA>(a, na, b, nb);
        out.gx[i] = mul_add::<FMA>(c[0], s, out.gx[i]);
        out.gy[i] = mul_add::<FMA>(c[1], s, out.gy[i]);
        out.gz[i] = mul_add::<FMA>(c[2], s, out.gz[i]);
        if INSIDE {
            let a2 = norm2::<FMA>(a);
            out.inside[i] |= inside(a2, b2, c2, dot, l2, r2) as u8;
        }
        [out.ax[i], out.ay[i], out.az[i], out.na[i]] = [b[0], b[1], b[2], nb];
    }
}

/// Two consecutive segments (carried offsets → `v1` → `v2`) in one pass over
/// the chunk; as [`one_segment`] with `l2` holding both squared lengths.
/// The field is summed in the same order as two single passes, so the
/// result is bit for bit theirs.
#[inline(always)]
fn two_segments<const INSIDE: bool, const FMA: bool>(
    v1: [f64; 3],
    v2: [f64; 3],
    l2: [f64; 2],
    r2: f64,
    p: &ChunkPoints,
    out: &mut UnitField,
) {
    for i in 0..CHUNK {
        // In the order of the C reference (gcc's schedule): the first
        // segment's square root and division are issued before the second
        // segment's square root, so the divide/sqrt unit never waits.
        let (b, b2) = offsets::<FMA>(v1, p, i);
        let nb = b2.sqrt();
        let (a, na) = ([out.ax[i], out.ay[i], out.az[i]], out.na[i]);
        let (ab, s1, ab2, abdot) = segment::<FMA>(a, na, b, nb);
        let (c, c2v) = offsets::<FMA>(v2, p, i);
        let nc = c2v.sqrt();
        let (bc, s2, bc2, bcdot) = segment::<FMA>(b, nb, c, nc);
        out.gx[i] = mul_add::<FMA>(bc[0], s2, mul_add::<FMA>(ab[0], s1, out.gx[i]));
        out.gy[i] = mul_add::<FMA>(bc[1], s2, mul_add::<FMA>(ab[1], s1, out.gy[i]));
        out.gz[i] = mul_add::<FMA>(bc[2], s2, mul_add::<FMA>(ab[2], s1, out.gz[i]));
        if INSIDE {
            let a2 = norm2::<FMA>(a);
            let hit = inside(a2, b2, ab2, abdot, l2[0], r2) | inside(b2, c2v, bc2, bcdot, l2[1], r2);
            out.inside[i] |= hit as u8;
        }
        [out.ax[i], out.ay[i], out.az[i], out.na[i]] = [c[0], c[1], c[2], nc];
    }
}
