//! The site model as submitted (JSON). Units are in the field names.
//!
//! These types only describe shape; [`super::validate`] turns them into the
//! checked model. Unknown fields are rejected everywhere so that a misspelt
//! key (`"hieghts_m"`) is an error, never a silently used default.

use serde::{Deserialize, Serialize};

/// A site: conductors carrying currents, and where people work.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SiteDoc {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// Fundamental frequency, Hz (1–3000).
    pub frequency_hz: f64,
    #[serde(default)]
    pub circuits: Vec<CircuitDoc>,
    pub conductors: Vec<ConductorDoc>,
    #[serde(default)]
    pub positions: Vec<PositionDoc>,
    #[serde(default)]
    pub areas: Vec<AreaDoc>,
    /// Reference-level tables this site is assessed against by default (ids).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub tables: Vec<String>,
    /// Where the local frame sits on the Earth, for GeoJSON in longitude and
    /// latitude; without it exports stay in the local frame.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub georeference: Option<GeoreferenceDoc>,
}

/// The local frame's origin on WGS 84 and the bearing of its y axis.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GeoreferenceDoc {
    /// Longitude of the local origin, degrees east.
    pub origin_lon_deg: f64,
    /// Latitude of the local origin, degrees north.
    pub origin_lat_deg: f64,
    /// Bearing of the local +y axis, degrees clockwise from true north
    /// (0 when y points north, as the frame convention says).
    #[serde(default)]
    pub y_axis_bearing_deg: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CircuitKind {
    ThreePhase,
    SinglePhase,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Sequence {
    #[default]
    Positive,
    Negative,
}

/// A circuit: balanced phase currents by default, with optional per-phase
/// overrides for unbalance and harmonic content.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CircuitDoc {
    pub id: String,
    pub kind: CircuitKind,
    /// Present RMS current per phase, A.
    pub current_a: f64,
    /// Rated (full-load) RMS current per phase, A.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rated_current_a: Option<f64>,
    #[serde(default)]
    pub sequence: Sequence,
    /// Angle of phase A's current phasor, degrees.
    #[serde(default)]
    pub angle_deg: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub phases: Option<PhaseOverridesDoc>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub harmonics: Vec<HarmonicDoc>,
}

/// Per-phase deviations from the balanced set.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PhaseOverridesDoc {
    #[serde(rename = "A", default, skip_serializing_if = "Option::is_none")]
    pub a: Option<PhaseOverrideDoc>,
    #[serde(rename = "B", default, skip_serializing_if = "Option::is_none")]
    pub b: Option<PhaseOverrideDoc>,
    #[serde(rename = "C", default, skip_serializing_if = "Option::is_none")]
    pub c: Option<PhaseOverrideDoc>,
}

#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PhaseOverrideDoc {
    /// RMS current of this phase, A (replaces the circuit's `current_a`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub current_a: Option<f64>,
    /// Absolute angle of this phase's phasor, degrees.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub angle_deg: Option<f64>,
}

/// A harmonic current as a percentage of each phase's fundamental RMS.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct HarmonicDoc {
    /// Harmonic order, 2–50.
    pub order: u32,
    /// RMS of this harmonic as percent of the phase's fundamental RMS.
    pub percent: f64,
    /// Angle of phase A's harmonic, degrees, measured on the harmonic's own
    /// time scale; phase p's angle is `angle_deg + order · φ_p`.
    #[serde(default)]
    pub angle_deg: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Phase {
    A,
    B,
    C,
    N,
}

/// An explicit RMS current phasor.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CurrentDoc {
    pub rms_a: f64,
    #[serde(default)]
    pub phase_deg: f64,
}

/// A conductor: a polyline carrying either a circuit's phase current (or a
/// `share` of it, for parallel sets) or an explicit phasor.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ConductorDoc {
    pub id: String,
    /// Vertices `[x, y, z]` in metres; current flows from first to last.
    pub path: Vec<[f64; 3]>,
    pub radius_m: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub circuit: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub phase: Option<Phase>,
    /// Fraction of the phase current carried by this conductor (0–1].
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub share: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub current: Option<CurrentDoc>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum BodyRegion {
    #[default]
    WholeBody,
    Limb,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Group {
    #[default]
    General,
    ImplantWearer,
}

/// A worker position: a standing point `[x, y]` evaluated at body heights, or
/// a 3-D point `[x, y, z]` used as given.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PositionDoc {
    pub id: String,
    pub at: Vec<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub heights_m: Option<Vec<f64>>,
    #[serde(default)]
    pub body_region: BodyRegion,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub occupancy_h: Option<f64>,
    #[serde(default)]
    pub group: Group,
}

/// A work area: a polygon `[[x, y], ...]` in the horizontal plane at
/// `height_m`, sampled on a square grid of `spacing_m`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AreaDoc {
    pub id: String,
    pub polygon: Vec<[f64; 2]>,
    pub height_m: f64,
    pub spacing_m: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub occupancy_h: Option<f64>,
}
