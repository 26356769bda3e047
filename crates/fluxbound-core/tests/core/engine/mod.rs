//! The field engine, checked against things the project did not write:
//! textbook closed forms, an outside library's numbers, and invariants that
//! any correct Biot–Savart implementation satisfies.

mod bounds;
mod closed_forms;
mod conformance;
mod inside_flags;
mod invariants;
mod segment_bounds;
mod variants;

use fluxbound_core::field::{self, Excitation, FieldPhasor, Filament, Filaments, SpectralLine};
use nalgebra::Point3;
use num_complex::Complex64;

/// A conductor for tests: path and fundamental RMS phasor.
pub struct Wire {
    pub path: Vec<Point3<f64>>,
    pub current_a: Complex64,
}

pub fn wire(path: &[[f64; 3]], rms_a: f64, phase_deg: f64) -> Wire {
    Wire {
        path: path.iter().map(|v| Point3::new(v[0], v[1], v[2])).collect(),
        current_a: Complex64::from_polar(rms_a, phase_deg.to_radians()),
    }
}

/// Field phasors (µT) of `wires` at `points`, radius 1 mm.
pub fn field_at(wires: &[Wire], points: &[Point3<f64>]) -> Vec<FieldPhasor> {
    let fil =
        Filaments::new(&wires.iter().map(|w| Filament { path: w.path.clone(), radius_m: 1e-3 }).collect::<Vec<_>>());
    let exc = Excitation {
        lines: vec![SpectralLine {
            order: 1,
            frequency_hz: 50.0,
            currents_a: wires.iter().map(|w| w.current_a).collect(),
        }],
    };
    let set = field::evaluate(&fil, points, &exc);
    (0..points.len()).map(|i| set.at(i)[0]).collect()
}

/// Resultant (µT) of `wires` at one point.
pub fn resultant_at(wires: &[Wire], p: [f64; 3]) -> f64 {
    field::resultant_ut(&field_at(wires, &[Point3::new(p[0], p[1], p[2])])[0])
}

/// Relative difference |a − b| / |b|.
pub fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// Regular N-gon of radius r in the plane z = 0, counter-clockwise, closed.
pub fn polygon_loop(n: usize, r: f64) -> Vec<[f64; 3]> {
    (0..=n)
        .map(|j| {
            let t = std::f64::consts::TAU * (j % n) as f64 / n as f64;
            [r * t.cos(), r * t.sin(), 0.0]
        })
        .collect()
}

/// RMS along the major axis of the polarisation ellipse of one phasor,
/// found from the ellipse itself: the instantaneous field is
/// `b(t) = √2·Re(B e^{jωt})`, so the RMS along the major axis is
/// `max_θ |Re(B e^{jθ})| = max_θ |B_re cos θ − B_im sin θ|` over θ ∈ [0, π).
/// A coarse scan of 720 angles brackets the maximum (|b(θ)|² is a sinusoid
/// in 2θ, so it is unimodal within ±π/2 of it) and a golden-section search
/// refines it to an angle step of 1e-10 rad. Nothing is clamped.
pub fn ellipse_major_rms(b: &FieldPhasor) -> f64 {
    let (br, bi) = (b.map(|c| c.re), b.map(|c| c.im));
    let along = |th: f64| (br * th.cos() - bi * th.sin()).norm();
    let n = 720;
    let step = std::f64::consts::PI / n as f64;
    let k = (0..n).max_by(|&a, &c| along(a as f64 * step).total_cmp(&along(c as f64 * step))).unwrap_or(0);
    let (mut lo, mut hi) = ((k as f64 - 1.0) * step, (k as f64 + 1.0) * step);
    let g = (5.0_f64.sqrt() - 1.0) / 2.0;
    while hi - lo > 1e-10 {
        let (x1, x2) = (hi - g * (hi - lo), lo + g * (hi - lo));
        if along(x1) < along(x2) { lo = x1 } else { hi = x2 }
    }
    along(0.5 * (lo + hi)).max(along(k as f64 * step))
}
