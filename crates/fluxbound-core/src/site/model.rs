//! The checked site model. A [`Site`] can only be made by
//! [`super::validate_site`], so code holding one may rely on every rule there.

use super::wire::{BodyRegion, CircuitKind, Group, Phase, Sequence};
use nalgebra::{Point2, Point3};
use num_complex::Complex64;

/// A validated site. `non_exhaustive` keeps other crates from building one
/// by hand; inside this crate only `validate_site` does.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct Site {
    pub name: Option<String>,
    pub frequency_hz: f64,
    pub circuits: Vec<Circuit>,
    pub conductors: Vec<Conductor>,
    pub positions: Vec<Position>,
    pub areas: Vec<Area>,
    /// Table ids chosen by the site (unresolved: tables are looked up when
    /// assessing, since custom tables live outside the site).
    pub tables: Vec<String>,
    pub georeference: Option<super::wire::GeoreferenceDoc>,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Circuit {
    pub id: String,
    pub kind: CircuitKind,
    /// Present RMS current per phase, A.
    pub current_a: f64,
    pub rated_current_a: Option<f64>,
    pub sequence: Sequence,
    pub angle_deg: f64,
    /// Overrides for phases A, B, C (index 0, 1, 2).
    pub overrides: [PhaseOverride; 3],
    /// Sorted by order, orders unique.
    pub harmonics: Vec<Harmonic>,
}

#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct PhaseOverride {
    pub current_a: Option<f64>,
    pub angle_deg: Option<f64>,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Harmonic {
    pub order: u32,
    pub percent: f64,
    pub angle_deg: f64,
}

/// Where a conductor's current comes from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Drive {
    /// `share` of phase `phase` of circuit number `circuit` (index into
    /// [`Site::circuits`]).
    Phase { circuit: usize, phase: Phase, share: f64 },
    /// A fixed fundamental-frequency RMS phasor, A.
    Explicit { current_a: Complex64 },
}

#[derive(Debug, Clone, PartialEq)]
pub struct Conductor {
    pub id: String,
    pub path: Vec<Point3<f64>>,
    pub radius_m: f64,
    pub drive: Drive,
}

#[derive(Debug, Clone, PartialEq)]
pub enum Placement {
    /// A standing point on the ground (z = 0), evaluated at body heights.
    Standing { x_m: f64, y_m: f64, heights_m: Vec<f64> },
    /// A single point used as given.
    Point(Point3<f64>),
}

#[derive(Debug, Clone, PartialEq)]
pub struct Position {
    pub id: String,
    pub placement: Placement,
    pub body_region: BodyRegion,
    pub occupancy_h: Option<f64>,
    pub group: Group,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Area {
    pub id: String,
    /// Simple polygon (no self-intersection), in metres.
    pub polygon: Vec<Point2<f64>>,
    pub height_m: f64,
    pub spacing_m: f64,
    pub occupancy_h: Option<f64>,
}

/// The conductors as the field engine's filaments, in the same order.
pub fn filaments(conductors: &[Conductor]) -> crate::field::Filaments {
    let list: Vec<crate::field::Filament> =
        conductors.iter().map(|c| crate::field::Filament { path: c.path.clone(), radius_m: c.radius_m }).collect();
    crate::field::Filaments::new(&list)
}

/// Default body heights above a standing point, m: the 0.5 / 1.0 / 1.5 m set
/// of IEC 62110 practice (docs/REFERENCES.md, from memory).
pub const DEFAULT_HEIGHTS_M: [f64; 3] = [0.5, 1.0, 1.5];
