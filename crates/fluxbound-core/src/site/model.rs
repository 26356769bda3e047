//! The checked site model. A [`Site`] can only be made by
//! [`super::validate_site`], so code holding one may rely on every rule there.

use super::wire::{BodyRegion, CircuitKind, Group, Phase, Sequence};
use nalgebra::{Point2, Point3};
use num_complex::Complex64;

/// A validated site. Its fields are private: only [`super::validate_site`]
/// builds one (through [`Site::from_checked`]), and nothing changes it
/// afterwards, so code holding a `Site` may rely on every rule there.
#[derive(Debug, Clone, PartialEq)]
pub struct Site {
    name: Option<String>,
    frequency_hz: f64,
    circuits: Vec<Circuit>,
    conductors: Vec<Conductor>,
    positions: Vec<Position>,
    areas: Vec<Area>,
    /// Table ids chosen by the site (unresolved: tables are looked up when
    /// assessing, since custom tables live outside the site).
    tables: Vec<String>,
    georeference: Option<super::wire::GeoreferenceDoc>,
    /// What the validator changed while accepting the document (such as
    /// a closed polygon ring's repeated vertex dropped), with pointers.
    notes: super::problem::Problems,
}

/// The parts of a checked site, handed over by the validator.
pub(super) struct CheckedParts {
    pub name: Option<String>,
    pub frequency_hz: f64,
    pub circuits: Vec<Circuit>,
    pub conductors: Vec<Conductor>,
    pub positions: Vec<Position>,
    pub areas: Vec<Area>,
    pub tables: Vec<String>,
    pub georeference: Option<super::wire::GeoreferenceDoc>,
    pub notes: super::problem::Problems,
}

impl Site {
    /// Called by the validator only, after every rule has passed.
    pub(super) fn from_checked(p: CheckedParts) -> Site {
        Site {
            name: p.name,
            frequency_hz: p.frequency_hz,
            circuits: p.circuits,
            conductors: p.conductors,
            positions: p.positions,
            areas: p.areas,
            tables: p.tables,
            georeference: p.georeference,
            notes: p.notes,
        }
    }
    pub fn name(&self) -> Option<&str> {
        self.name.as_deref()
    }
    /// The fundamental frequency, Hz.
    pub fn frequency_hz(&self) -> f64 {
        self.frequency_hz
    }
    pub fn circuits(&self) -> &[Circuit] {
        &self.circuits
    }
    pub fn conductors(&self) -> &[Conductor] {
        &self.conductors
    }
    pub fn positions(&self) -> &[Position] {
        &self.positions
    }
    pub fn areas(&self) -> &[Area] {
        &self.areas
    }
    /// The table ids the site names for itself (resolved when assessing).
    pub fn tables(&self) -> &[String] {
        &self.tables
    }
    pub fn georeference(&self) -> Option<&super::wire::GeoreferenceDoc> {
        self.georeference.as_ref()
    }
    /// What the validator changed while accepting the document, each with
    /// its pointer (information, never a reason to refuse).
    pub fn input_notes(&self) -> &super::problem::Problems {
        &self.notes
    }
}

#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
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
    /// Circuits sharing one load (N-1 scenarios); each group has ≥ 2.
    pub load_group: Option<String>,
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
    /// Angle of phase A's harmonic, degrees (0 when not given).
    pub angle_deg: f64,
    /// Whether the site document stated `angle_deg`: without it the phase
    /// is unknown and the weighted peak index is not computed.
    pub angle_given: bool,
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
#[non_exhaustive]
pub struct Conductor {
    pub id: String,
    pub path: Vec<Point3<f64>>,
    pub radius_m: f64,
    pub drive: Drive,
    /// Whether the path continues beyond the model at its first and last
    /// vertex (`[start, end]`); such ends are not open ends.
    pub continues: [bool; 2],
    /// Where the document states this conductor: `/conductors/3`, or the
    /// section that generates it (`/formations/0`); `path`'s vertices
    /// follow the list under `vertices_key` there (`path`, `route`).
    pub source: super::problem::Pointer,
    pub vertices_key: &'static str,
    /// For one filament of a bar with a cross-section, its cell number: the
    /// filaments of a bar share its `id` and `source`, so the bar stays
    /// addressable by its id (see `site::bar`).
    pub cell: Option<usize>,
}

impl Conductor {
    /// Whether `self` and `other` are filaments of one bar.
    pub fn same_bar(&self, other: &Conductor) -> bool {
        self.cell.is_some() && other.cell.is_some() && self.source == other.source
    }
}

#[derive(Debug, Clone, PartialEq)]
pub enum Placement {
    /// A standing point on the ground (z = 0), evaluated at body heights.
    Standing { x_m: f64, y_m: f64, heights_m: Vec<f64> },
    /// A single point used as given.
    Point(Point3<f64>),
}

#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct Position {
    pub id: String,
    pub placement: Placement,
    pub body_region: BodyRegion,
    pub occupancy_h: Option<f64>,
    pub group: Group,
}

#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
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

impl Placement {
    /// The points evaluated for this placement: each body height above a
    /// standing point, or the point itself.
    pub fn points(&self) -> Vec<Point3<f64>> {
        match self {
            Placement::Standing { x_m, y_m, heights_m } => {
                heights_m.iter().map(|h| Point3::new(*x_m, *y_m, *h)).collect()
            }
            Placement::Point(p) => vec![*p],
        }
    }

    /// How many points [`Placement::points`] gives, without making them.
    pub fn point_count(&self) -> usize {
        match self {
            Placement::Standing { heights_m, .. } => heights_m.len(),
            Placement::Point(_) => 1,
        }
    }
}

/// Default body heights above a standing point, m: the 0.5 / 1.0 / 1.5 m set
/// of IEC 62110 practice (docs/REFERENCES.md, from memory).
pub const DEFAULT_HEIGHTS_M: [f64; 3] = [0.5, 1.0, 1.5];
