//! The field engine, checked against things the project did not write:
//! textbook closed forms, an outside library's numbers, and invariants that
//! any correct Biot–Savart implementation satisfies.

mod closed_forms;
mod conformance;
mod invariants;
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
