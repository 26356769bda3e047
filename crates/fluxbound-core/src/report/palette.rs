//! The colour scale of field maps: our own sequential scale, defined in
//! CIE LCh(ab) with lightness falling steadily from 96 to 22 while the hue
//! turns from pale yellow through orange and red to violet. Monotonic
//! lightness keeps it readable in grey print and for the common forms of
//! colour-vision deficiency.

/// Number of fixed colour bands of a map.
pub const BANDS: usize = 6;

/// sRGB colour of band `k` (0 = lowest, lightest), our own: in CIE LCh(ab)
/// at t = k / (BANDS − 1), lightness 96 − 78·t (15.6 between neighbours),
/// chroma 40 + 30·sin(πt), hue 110° − 90·t (pale lemon through ochre and
/// orange to a dark red-brown). Chosen by a search over such ramps for the
/// largest lightness step that survives simulated protan, deutan and tritan
/// vision (at least 13 L* units between neighbours; the test in
/// `tests/core/report/mod.rs` checks 12.5) while keeping colour.
pub fn band_colour(k: usize) -> [u8; 3] {
    let t = k.min(BANDS - 1) as f64 / (BANDS - 1) as f64;
    let c = 40.0 + 30.0 * (std::f64::consts::PI * t).sin();
    let h = (110.0 - 90.0 * t).to_radians();
    lab_to_srgb(96.0 - 78.0 * t, c * h.cos(), c * h.sin())
}

/// Hex string `#rrggbb` of [`band_colour`].
pub fn band_hex(k: usize) -> String {
    let [r, g, b] = band_colour(k);
    format!("#{r:02x}{g:02x}{b:02x}")
}

/// sRGB colour of position `t` in [0, 1] (0 = low field, light).
pub fn colour(t: f64) -> [u8; 3] {
    let t = if t.is_finite() { t.clamp(0.0, 1.0) } else { 0.0 };
    let l = 96.0 - 74.0 * t;
    let c = 30.0 + 38.0 * (std::f64::consts::PI * t).sin();
    let h = (100.0 - 170.0 * t).to_radians();
    lab_to_srgb(l, c * h.cos(), c * h.sin())
}

/// Hex string `#rrggbb` of [`colour`].
pub fn hex(t: f64) -> String {
    let [r, g, b] = colour(t);
    format!("#{r:02x}{g:02x}{b:02x}")
}

/// CIE L*a*b* (D65) to gamma-encoded sRGB, clamped to the gamut.
/// Source: IEC 61966-2-1 (sRGB) and CIE 15 (L*a*b*) formulas.
fn lab_to_srgb(l: f64, a: f64, b: f64) -> [u8; 3] {
    let fy = (l + 16.0) / 116.0;
    let (fx, fz) = (fy + a / 500.0, fy - b / 200.0);
    let inv = |f: f64| if f > 6.0 / 29.0 { f * f * f } else { 3.0 * (6.0f64 / 29.0).powi(2) * (f - 4.0 / 29.0) };
    let (x, y, z) = (0.95047 * inv(fx), inv(fy), 1.08883 * inv(fz));
    let lin = [
        3.2404542 * x - 1.5371385 * y - 0.4985314 * z,
        -0.9692660 * x + 1.8760108 * y + 0.0415560 * z,
        0.0556434 * x - 0.2040259 * y + 1.0572252 * z,
    ];
    lin.map(|c| {
        let c = c.clamp(0.0, 1.0);
        let g = if c <= 0.0031308 { 12.92 * c } else { 1.055 * c.powf(1.0 / 2.4) - 0.055 };
        (g * 255.0).round() as u8
    })
}

/// Relative luminance (0–1) of an sRGB colour, for the grey-print check.
pub fn luminance([r, g, b]: [u8; 3]) -> f64 {
    let lin = |v: u8| {
        let c = f64::from(v) / 255.0;
        if c <= 0.04045 { c / 12.92 } else { ((c + 0.055) / 1.055).powf(2.4) }
    };
    0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b)
}
