//! The site model as submitted (JSON). Units are in the field names.
//!
//! These types only describe shape; [`super::validate`] turns them into the
//! checked model. Unknown fields are rejected everywhere so that a misspelt
//! key (`"hieghts_m"`) is an error, never a silently used default.

use serde::{Deserialize, Serialize};

pub use super::overhead::{BundleDoc, LinePhaseDoc, OverheadLineDoc, StructureDoc};

/// A site: conductors carrying currents, and where people work.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct SiteDoc {
    /// Site name (at most 200 characters).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(max_length = 200))]
    pub name: Option<String>,
    /// Fundamental frequency, Hz (1–3000).
    #[cfg_attr(feature = "schema", schema(minimum = 1, maximum = 3000))]
    pub frequency_hz: f64,
    /// Circuits whose phase currents drive conductors.
    #[serde(default)]
    pub circuits: Vec<CircuitDoc>,
    /// Conductors as polylines.
    pub conductors: Vec<ConductorDoc>,
    /// Worker positions.
    #[serde(default)]
    pub positions: Vec<PositionDoc>,
    /// Work areas sampled on a grid.
    #[serde(default)]
    pub areas: Vec<AreaDoc>,
    /// Reference-level tables this site is assessed against by default (ids).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    #[cfg_attr(feature = "schema", schema(schema_with = crate::site::wire::bounds::table_ids))]
    pub tables: Vec<String>,
    /// Where the local frame sits on the Earth, for GeoJSON in longitude and
    /// latitude; without it exports stay in the local frame.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub georeference: Option<GeoreferenceDoc>,
    /// Cable circuits laid in a formation along a route; each expands into
    /// one conductor per cable (see `site::formation`).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub formations: Vec<FormationDoc>,
    /// Overhead lines given as structures, phases and sag; each expands
    /// into one conductor per span, phase position and sub-conductor.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub overhead_lines: Vec<OverheadLineDoc>,
}

pub use super::formation::{CableSetDoc, FormationDoc, Layout};

/// The local frame's origin on WGS 84 and the bearing of its y axis.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct GeoreferenceDoc {
    /// Longitude of the local origin, degrees east.
    #[cfg_attr(feature = "schema", schema(minimum = -180, maximum = 180))]
    pub origin_lon_deg: f64,
    /// Latitude of the local origin, degrees north.
    #[cfg_attr(feature = "schema", schema(minimum = -80, maximum = 80))]
    pub origin_lat_deg: f64,
    /// Bearing of the local +y axis, degrees clockwise from true north
    /// (0 when y points north, as the frame convention says).
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(minimum = -360, maximum = 360))]
    pub y_axis_bearing_deg: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum CircuitKind {
    ThreePhase,
    SinglePhase,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum Sequence {
    #[default]
    Positive,
    Negative,
}

/// A circuit: balanced phase currents by default, with optional per-phase
/// overrides for unbalance and harmonic content.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct CircuitDoc {
    /// Circuit id, unique in the site (1–64 characters).
    #[cfg_attr(feature = "schema", schema(min_length = 1, max_length = 64))]
    pub id: String,
    pub kind: CircuitKind,
    /// Present RMS current per phase, A.
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 1e6))]
    pub current_a: f64,
    /// Rated (full-load) RMS current per phase, A.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(exclusive_minimum = 0, maximum = 1e6))]
    pub rated_current_a: Option<f64>,
    /// Phase sequence: positive A = θ, B = θ − 120°, C = θ + 120° (default), or negative.
    #[serde(default)]
    pub sequence: Sequence,
    /// Angle of phase A's current phasor, degrees.
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(minimum = -360, maximum = 360))]
    pub angle_deg: f64,
    /// Per-phase overrides (unbalance).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub phases: Option<PhaseOverridesDoc>,
    /// Harmonic currents, one per order.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub harmonics: Vec<HarmonicDoc>,
    /// Circuits with the same `load_group` feed one load in parallel: when
    /// one is out of service the others carry its share (the what-if's
    /// N-1 scenarios). At least two circuits per group (1–64 characters).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(min_length = 1, max_length = 64))]
    pub load_group: Option<String>,
}

/// Per-phase deviations from the balanced set.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
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
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct PhaseOverrideDoc {
    /// RMS current of this phase, A (replaces the circuit's `current_a`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 1e6))]
    pub current_a: Option<f64>,
    /// Absolute angle of this phase's phasor, degrees.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(minimum = -360, maximum = 360))]
    pub angle_deg: Option<f64>,
}

/// A harmonic current as a percentage of each phase's fundamental RMS.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct HarmonicDoc {
    /// Harmonic order, 2–50.
    #[cfg_attr(feature = "schema", schema(minimum = 2, maximum = 50))]
    pub order: u32,
    /// RMS of this harmonic as percent of the phase's fundamental RMS.
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 100))]
    pub percent: f64,
    /// Angle of phase A's harmonic, degrees, measured on the harmonic's own
    /// time scale; phase p's angle is `angle_deg + order · φ_p`. Absent:
    /// 0° for the field and its summation ratio, but the phase counts as
    /// unknown, so no weighted peak index is computed with this harmonic
    /// (ICNIRP 2010 asks for the real phases; none is assumed silently).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(minimum = -360, maximum = 360))]
    pub angle_deg: Option<f64>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub enum Phase {
    A,
    B,
    C,
    N,
}

/// An explicit RMS current phasor.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct CurrentDoc {
    /// RMS current, A.
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 1e6))]
    pub rms_a: f64,
    /// Phase angle of the phasor, degrees.
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(minimum = -360, maximum = 360))]
    pub phase_deg: f64,
}

/// A conductor: a polyline carrying either a circuit's phase current (or a
/// `share` of it, for parallel sets) or an explicit phasor.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct ConductorDoc {
    /// Conductor id, unique in the site (1–64 characters).
    #[cfg_attr(feature = "schema", schema(min_length = 1, max_length = 64))]
    pub id: String,
    /// Vertices `[x, y, z]` in metres; current flows from first to last.
    #[cfg_attr(feature = "schema", schema(schema_with = crate::site::wire::bounds::path_m))]
    pub path: Vec<[f64; 3]>,
    /// Conductor radius, m (0.1 mm to 2 m); points inside are flagged, not computed.
    #[cfg_attr(feature = "schema", schema(minimum = 0.0001, maximum = 2))]
    pub radius_m: f64,
    /// Circuit id (with `phase`), or give `current` instead.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub circuit: Option<String>,
    /// Phase of the circuit; N carries the return −(I_A + I_B + I_C).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub phase: Option<Phase>,
    /// Fraction of the phase current carried by this conductor (0–1].
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(exclusive_minimum = 0, maximum = 1))]
    pub share: Option<f64>,
    /// An explicit RMS phasor instead of circuit and phase.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub current: Option<CurrentDoc>,
    /// Which ends of the path continue beyond the model (the current flows
    /// on, out of the modelled region). An end that meets no other
    /// conductor and is not marked here draws an `open_end` warning.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub continues: Option<ContinuesDoc>,
    /// A rectangular cross-section (a busbar): the conductor is computed as
    /// parallel filaments over the rectangle, and `radius_m` is not used.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cross_section: Option<CrossSectionDoc>,
}

/// A bar's rectangular cross-section, centred on the conductor's path.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct CrossSectionDoc {
    /// Width of the bar, m (1 mm to 2 m), along `orientation`.
    #[cfg_attr(feature = "schema", schema(minimum = 0.001, maximum = 2))]
    pub width_m: f64,
    /// Height (thickness) of the bar, m (1 mm to 2 m), across both the
    /// path and the width.
    #[cfg_attr(feature = "schema", schema(minimum = 0.001, maximum = 2))]
    pub height_m: f64,
    /// Direction `[x, y, z]` the width lies along (any length); on each
    /// segment its component across the segment is used, so it must not
    /// run along any segment. `[0, 0, 1]`: a bar standing on edge.
    pub orientation: [f64; 3],
}

/// Ends of a conductor's path that continue beyond the model: the path is
/// cut where the model stops, not where the current stops.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct ContinuesDoc {
    /// The first vertex is where the model stops (default false).
    #[serde(default)]
    pub start: bool,
    /// The last vertex is where the model stops (default false).
    #[serde(default)]
    pub end: bool,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum BodyRegion {
    #[default]
    WholeBody,
    Limb,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum Group {
    #[default]
    General,
    ImplantWearer,
}

/// A worker position: a standing point `[x, y]` evaluated at body heights, or
/// a 3-D point `[x, y, z]` used as given.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct PositionDoc {
    /// Position id, unique in the site (1–64 characters).
    #[cfg_attr(feature = "schema", schema(min_length = 1, max_length = 64))]
    pub id: String,
    /// A standing point `[x, y]` or a 3-D point `[x, y, z]`, m.
    #[cfg_attr(feature = "schema", schema(schema_with = crate::site::wire::bounds::standing_or_point_m))]
    pub at: Vec<f64>,
    /// Body heights above a standing point, m (0–10; default 0.5, 1.0, 1.5); not with a 3-D point.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(schema_with = crate::site::wire::bounds::heights_m))]
    pub heights_m: Option<Vec<f64>>,
    /// Which tables apply (default whole_body).
    #[serde(default)]
    pub body_region: BodyRegion,
    /// Hours per day spent here (0–24), for the information-only time-weighted average.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 24))]
    pub occupancy_h: Option<f64>,
    /// `implant_wearer` is also screened against the implant table (default general).
    #[serde(default)]
    pub group: Group,
}

/// A work area: a polygon `[[x, y], ...]` in the horizontal plane at
/// `height_m`, sampled on a square grid of `spacing_m`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct AreaDoc {
    /// Area id, unique in the site (1–64 characters).
    #[cfg_attr(feature = "schema", schema(min_length = 1, max_length = 64))]
    pub id: String,
    /// Simple polygon `[[x, y], …]`, m (3–1000 vertices).
    #[cfg_attr(feature = "schema", schema(schema_with = crate::site::wire::bounds::polygon_m))]
    pub polygon: Vec<[f64; 2]>,
    /// Height of the evaluation plane, m.
    #[cfg_attr(feature = "schema", schema(minimum = -100000, maximum = 100000))]
    pub height_m: f64,
    /// Grid spacing, m (0.01–100).
    #[cfg_attr(feature = "schema", schema(minimum = 0.01, maximum = 100))]
    pub spacing_m: f64,
    /// Hours per day spent here (0–24).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 24))]
    pub occupancy_h: Option<f64>,
}

#[cfg(feature = "schema")]
pub(crate) mod bounds;
