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
use crate::field::{Excitation, SpectralLine};
use num_complex::Complex64;
use serde::Serialize;

/// The load a circuit is evaluated at.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum CircuitLoad {
    /// Every phase current (including overrides) times this factor.
    Scale(f64),
    /// Phase A's nominal RMS current becomes this, A; other phases and
    /// overrides keep their proportion to the present `current_a` (a circuit
    /// with no present current gets a balanced set at this current).
    CurrentA(f64),
    /// Measured RMS currents of phases A, B, C, A (angles as in the model;
    /// a single-phase circuit uses the first).
    PhasesA([f64; 3]),
}

impl CircuitLoad {
    pub const PRESENT: CircuitLoad = CircuitLoad::Scale(1.0);
}

impl Circuit {
    /// Nominal RMS phase current at `load`, A.
    pub fn nominal_current_a(&self, load: CircuitLoad) -> f64 {
        match load {
            CircuitLoad::Scale(s) => self.current_a * s,
            CircuitLoad::CurrentA(t) => t,
            CircuitLoad::PhasesA(p) => p[0],
        }
    }

    /// Fundamental RMS magnitude (A) and angle (degrees) of a line phase
    /// (0 = A, 1 = B, 2 = C) at `load`.
    fn fundamental_a(&self, phase_index: usize, load: CircuitLoad) -> (f64, f64) {
        let offset_deg = match (self.sequence, phase_index) {
            (_, 0) => 0.0,
            (Sequence::Positive, 1) | (Sequence::Negative, 2) => -120.0,
            _ => 120.0,
        };
        let o = self.overrides[phase_index];
        let base = o.current_a.unwrap_or(self.current_a);
        let rms = match load {
            CircuitLoad::Scale(s) => base * s,
            CircuitLoad::CurrentA(t) if self.current_a > 0.0 => base * t / self.current_a,
            CircuitLoad::CurrentA(t) => t,
            CircuitLoad::PhasesA(p) => p[phase_index],
        };
        let angle = o.angle_deg.unwrap_or(self.angle_deg + offset_deg);
        (rms, angle)
    }

    /// Fundamental RMS magnitude (A) and angle (degrees) of line phase A, B
    /// or C at `load`, as the model sets them (no phasor round trip), for
    /// reports; `None` for the neutral or a phase the circuit lacks.
    pub fn line_fundamental_a(&self, phase: Phase, load: CircuitLoad) -> Option<(f64, f64)> {
        let index = match (phase, self.kind) {
            (Phase::A, _) => 0,
            (Phase::B, CircuitKind::ThreePhase) => 1,
            (Phase::C, CircuitKind::ThreePhase) => 2,
            _ => return None,
        };
        Some(self.fundamental_a(index, load))
    }

    fn line_phase_a(&self, phase_index: usize, order: u32, load: CircuitLoad) -> Complex64 {
        let (rms, angle_deg) = self.fundamental_a(phase_index, load);
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
        self.phase_current_at(phase, order, CircuitLoad::Scale(scale))
    }

    /// RMS phasor of `phase` at harmonic `order` at the given load, A.
    pub fn phase_current_at(&self, phase: Phase, order: u32, load: CircuitLoad) -> Complex64 {
        let lines = match self.kind {
            CircuitKind::ThreePhase => 3,
            CircuitKind::SinglePhase => 1,
        };
        match phase {
            Phase::A => self.line_phase_a(0, order, load),
            Phase::B => self.line_phase_a(1, order, load),
            Phase::C => self.line_phase_a(2, order, load),
            Phase::N => -(0..lines).map(|p| self.line_phase_a(p, order, load)).sum::<Complex64>(),
        }
    }
}

impl Site {
    /// Harmonic orders present in the site, ascending, always starting with 1.
    pub fn orders(&self) -> Vec<u32> {
        orders_of(self.circuits())
    }

    /// Harmonic orders (2 and up) of which some circuit carries current but
    /// did not state `angle_deg`: their phase is unknown, so the weighted
    /// peak index cannot be formed with them. Ascending.
    pub fn orders_without_angle(&self) -> Vec<u32> {
        let mut orders: Vec<u32> = self
            .circuits()
            .iter()
            .flat_map(|c| c.harmonics.iter().filter(|h| !h.angle_given && h.percent > 0.0).map(|h| h.order))
            .collect();
        orders.sort_unstable();
        orders.dedup();
        orders
    }

    /// Conductor currents at the present load with each circuit's current
    /// multiplied by `scales[c]` (missing entries mean 1). Explicit conductor
    /// currents are fundamental-only and are never scaled.
    pub fn excitation_scaled(&self, scales: &[f64]) -> Excitation {
        let loads: Vec<CircuitLoad> = scales.iter().map(|s| CircuitLoad::Scale(*s)).collect();
        self.excitation_at(&loads)
    }

    /// Conductor currents with circuit `c` at `loads[c]` (missing entries
    /// mean the present load).
    pub fn excitation_at(&self, loads: &[CircuitLoad]) -> Excitation {
        excitation_of(self.frequency_hz(), self.circuits(), &self.conductors_drives(), loads)
    }

    /// Conductor currents at the present load.
    pub fn excitation(&self) -> Excitation {
        self.excitation_scaled(&[])
    }

    fn conductors_drives(&self) -> Vec<Drive> {
        self.conductors().iter().map(|c| c.drive).collect()
    }
}

/// Excitation of conductors driven as `drives`, shared by sites and the
/// stateless evaluation document.
pub(crate) fn excitation_of(
    frequency_hz: f64,
    circuits: &[Circuit],
    drives: &[Drive],
    loads: &[CircuitLoad],
) -> Excitation {
    let lines = orders_of(circuits)
        .into_iter()
        .map(|order| SpectralLine {
            order,
            frequency_hz: frequency_hz * f64::from(order),
            currents_a: drives
                .iter()
                .map(|d| match *d {
                    Drive::Phase { circuit, phase, share } => {
                        let load = loads.get(circuit).copied().unwrap_or(CircuitLoad::PRESENT);
                        circuits[circuit].phase_current_at(phase, order, load) * share
                    }
                    Drive::Explicit { current_a } if order == 1 => current_a,
                    Drive::Explicit { .. } => Complex64::new(0.0, 0.0),
                })
                .collect(),
        })
        .collect();
    Excitation { lines }
}

/// Harmonic orders present: the fundamental and every circuit's harmonics,
/// ascending, each once (the order of [`excitation_of`]'s lines).
pub(crate) fn orders_of(circuits: &[Circuit]) -> Vec<u32> {
    let mut orders: Vec<u32> =
        std::iter::once(1).chain(circuits.iter().flat_map(|c| c.harmonics.iter().map(|h| h.order))).collect();
    orders.sort_unstable();
    orders.dedup();
    orders
}
