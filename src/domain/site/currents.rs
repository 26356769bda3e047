//! Phase currents of circuits and the excitation they give the conductors.
//!
//! Conventions (stated here because a safety officer must be able to check
//! them): phasors are RMS. A positive-sequence three-phase circuit has phase
//! angles A = θ, B = θ − 120°, C = θ + 120°; negative sequence swaps B and C.
//! A per-phase override replaces that phase's RMS current and/or its absolute
//! angle. Harmonic `h` of phase p has RMS `percent/100 · |I_p|` and angle
//! `angle_deg + h · φ_p` (φ_p the phase's fundamental angle), so triplen
//! harmonics of a balanced set are in phase and add up in the neutral. A
//! neutral conductor carries the return current `−(I_A + I_B + I_C)` at every
//! order (single-phase: `−I_A`).

use super::model::{Circuit, Drive, Site};
use super::wire::{CircuitKind, Phase, Sequence};
use crate::domain::field::{Excitation, SpectralLine};
use num_complex::Complex64;

impl Circuit {
    /// Fundamental RMS phasor of a line phase (A, B or C), A, for a present
    /// load scaled by `scale`.
    fn fundamental_a(&self, phase_index: usize, scale: f64) -> (f64, f64) {
        let offset_deg = match (self.sequence, phase_index) {
            (_, 0) => 0.0,
            (Sequence::Positive, 1) | (Sequence::Negative, 2) => -120.0,
            _ => 120.0,
        };
        let o = self.overrides[phase_index];
        let rms = o.current_a.unwrap_or(self.current_a) * scale;
        let angle = o.angle_deg.unwrap_or(self.angle_deg + offset_deg);
        (rms, angle)
    }

    fn line_phase_a(&self, phase_index: usize, order: u32, scale: f64) -> Complex64 {
        let (rms, angle_deg) = self.fundamental_a(phase_index, scale);
        if order == 1 {
            return Complex64::from_polar(rms, angle_deg.to_radians());
        }
        match self.harmonics.iter().find(|h| h.order == order) {
            Some(h) => Complex64::from_polar(
                rms * h.percent / 100.0,
                (h.angle_deg + f64::from(order) * angle_deg).to_radians(),
            ),
            None => Complex64::new(0.0, 0.0),
        }
    }

    /// RMS phasor of `phase` at harmonic `order` (1 = fundamental), A, with
    /// the present current multiplied by `scale`.
    pub fn phase_current_a(&self, phase: Phase, order: u32, scale: f64) -> Complex64 {
        let lines = match self.kind {
            CircuitKind::ThreePhase => 3,
            CircuitKind::SinglePhase => 1,
        };
        match phase {
            Phase::A => self.line_phase_a(0, order, scale),
            Phase::B => self.line_phase_a(1, order, scale),
            Phase::C => self.line_phase_a(2, order, scale),
            Phase::N => -(0..lines).map(|p| self.line_phase_a(p, order, scale)).sum::<Complex64>(),
        }
    }
}

impl Site {
    /// Harmonic orders present in the site, ascending, always starting with 1.
    pub fn orders(&self) -> Vec<u32> {
        orders_of(&self.circuits)
    }

    /// Conductor currents at the present load with each circuit's current
    /// multiplied by `scales[c]` (missing entries mean 1). Explicit conductor
    /// currents are fundamental-only and are never scaled.
    pub fn excitation_scaled(&self, scales: &[f64]) -> Excitation {
        excitation_of(self.frequency_hz, &self.circuits, &self.conductors_drives(), scales)
    }

    /// Conductor currents at the present load.
    pub fn excitation(&self) -> Excitation {
        self.excitation_scaled(&[])
    }

    fn conductors_drives(&self) -> Vec<Drive> {
        self.conductors.iter().map(|c| c.drive).collect()
    }
}

/// Excitation of conductors driven as `drives`, shared by sites and the
/// stateless evaluation document.
pub(crate) fn excitation_of(frequency_hz: f64, circuits: &[Circuit], drives: &[Drive], scales: &[f64]) -> Excitation {
    let lines = orders_of(circuits)
        .into_iter()
        .map(|order| SpectralLine {
            order,
            frequency_hz: frequency_hz * f64::from(order),
            currents_a: drives
                .iter()
                .map(|d| match *d {
                    Drive::Phase { circuit, phase, share } => {
                        let scale = scales.get(circuit).copied().unwrap_or(1.0);
                        circuits[circuit].phase_current_a(phase, order, scale) * share
                    }
                    Drive::Explicit { current_a } if order == 1 => current_a,
                    Drive::Explicit { .. } => Complex64::new(0.0, 0.0),
                })
                .collect(),
        })
        .collect();
    Excitation { lines }
}

fn orders_of(circuits: &[Circuit]) -> Vec<u32> {
    let mut orders: Vec<u32> =
        std::iter::once(1).chain(circuits.iter().flat_map(|c| c.harmonics.iter().map(|h| h.order))).collect();
    orders.sort_unstable();
    orders.dedup();
    orders
}
