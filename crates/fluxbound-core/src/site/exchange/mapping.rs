//! The mapping document: how a file's layers, properties and coordinates
//! become a site. One document serves all formats; the parts that do not
//! apply to a format are ignored by it (layers are for DXF only).
//!
//! ```json
//! {
//!   "frequency_hz": 50,
//!   "circuits": [{"id": "T1", "kind": "three_phase", "current_a": 1600}],
//!   "units": "mm", "origin": [2600000, 1200000], "rotation_deg": 0,
//!   "layers": {
//!     "BUS-L1": {"kind": "conductor", "circuit": "T1", "phase": "A", "radius_m": 0.03},
//!     "WORK":   {"kind": "area", "height_m": 1.0, "spacing_m": 0.25},
//!     "DESK":   {"kind": "position", "id": "desk", "heights_m": [1.0]}
//!   },
//!   "defaults": {"radius_m": 0.01}
//! }
//! ```

use super::ImportError;
use crate::site::problem::{Pointer, Problems};
use crate::site::wire::{BodyRegion, CircuitDoc, ContinuesDoc, GeoreferenceDoc, Group, Phase, SiteDoc};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// How a file becomes a site. Every member is optional.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct MappingDoc {
    /// The site's name.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// Fundamental frequency, Hz (else the file's, else 50 Hz with a note).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub frequency_hz: Option<f64>,
    /// Circuits the imported conductors refer to (with those a GeoJSON
    /// file carries itself).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub circuits: Vec<CircuitDoc>,
    /// The site's georeference; GeoJSON in longitude and latitude needs
    /// one (here or in the file).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub georeference: Option<GeoreferenceDoc>,
    /// How GeoJSON coordinates are to be read (else the file's
    /// `coordinate_frame`, else longitude and latitude when a
    /// georeference is known and local metres when not).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub coordinates: Option<CoordinateFrame>,
    /// Length unit of the file's coordinates; overrides a drawing's
    /// `$INSUNITS` (default: metres for GeoJSON and CSV, the header for DXF).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Point of the file taken as the site's origin, in the file's units
    /// (`[x, y]` or `[x, y, z]`): for drawings in national grid coordinates.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub origin: Option<Vec<f64>>,
    /// Angle the plan is turned by about the origin, degrees
    /// counter-clockwise, to bring the file's axes onto the site's.
    #[serde(default, skip_serializing_if = "is_zero")]
    pub rotation_deg: f64,
    /// DXF layer name → what its entities are.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub layers: BTreeMap<String, LayerMapDoc>,
    /// Values used where a feature, row or layer gives none (each use is
    /// noted in the import's notes).
    #[serde(default)]
    pub defaults: DefaultsDoc,
}

fn is_zero(v: &f64) -> bool {
    *v == 0.0
}

/// How GeoJSON coordinates are read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum CoordinateFrame {
    /// WGS 84 longitude and latitude, degrees (RFC 7946), through the
    /// georeference.
    LonLat,
    /// The site's local frame (in `units`, default metres).
    Local,
}

/// Length units of a file's coordinates.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub enum Units {
    #[serde(rename = "m")]
    Metre,
    #[serde(rename = "mm")]
    Millimetre,
    #[serde(rename = "cm")]
    Centimetre,
    #[serde(rename = "dm")]
    Decimetre,
    #[serde(rename = "km")]
    Kilometre,
    #[serde(rename = "in")]
    Inch,
    #[serde(rename = "ft")]
    Foot,
    #[serde(rename = "yd")]
    Yard,
    #[serde(rename = "us_survey_ft")]
    UsSurveyFoot,
}

impl Units {
    /// Metres per unit (international inch = 25.4 mm exactly, foot = 12
    /// in, yard = 3 ft; US survey foot = 1200/3937 m, NIST SP 811 B.6).
    pub fn metres(self) -> f64 {
        match self {
            Units::Metre => 1.0,
            Units::Millimetre => 1e-3,
            Units::Centimetre => 1e-2,
            Units::Decimetre => 0.1,
            Units::Kilometre => 1e3,
            Units::Inch => 0.0254,
            Units::Foot => 0.3048,
            Units::Yard => 0.9144,
            Units::UsSurveyFoot => 1200.0 / 3937.0,
        }
    }
}

/// What the entities of one DXF layer are.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct LayerMapDoc {
    pub kind: ItemKind,
    /// Id of the layer's first item; later ones get `-2`, `-3`, …
    /// (default: the layer name).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub id: Option<String>,
    /// Conductors: the circuit (declared in `circuits`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub circuit: Option<String>,
    /// Conductors: the phase.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub phase: Option<Phase>,
    /// Conductors: fraction of the phase current (parallel sets).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub share: Option<f64>,
    /// Conductors: which ends continue beyond the model.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub continues: Option<ContinuesDoc>,
    /// Conductors: radius, m (else `defaults.radius_m`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub radius_m: Option<f64>,
    /// Conductors: a bar's rectangular cross-section (the drawing shows
    /// its axis).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cross_section: Option<crate::site::wire::CrossSectionDoc>,
    /// Positions: body heights above the standing point, m.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub heights_m: Option<Vec<f64>>,
    /// Positions: body region (default whole body).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub body_region: Option<BodyRegion>,
    /// Positions: group (default general).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub group: Option<Group>,
    /// Areas: height of the evaluation plane, m (else `defaults.area_height_m`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub height_m: Option<f64>,
    /// Areas: grid spacing, m (else `defaults.area_spacing_m`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub spacing_m: Option<f64>,
    /// Positions and areas: hours per day.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub occupancy_h: Option<f64>,
}

/// What an imported item becomes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum ItemKind {
    Conductor,
    Position,
    Area,
}

/// Values for what a file leaves out.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct DefaultsDoc {
    /// Conductor radius, m.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub radius_m: Option<f64>,
    /// Height of an area's evaluation plane, m.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub area_height_m: Option<f64>,
    /// Grid spacing of an area, m.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub area_spacing_m: Option<f64>,
}

/// The plan transform `local = scale · R(θ) · (p − origin)`.
#[derive(Debug, Clone, Copy)]
pub(super) struct Placement {
    origin: [f64; 3],
    cos: f64,
    sin: f64,
    scale: f64,
    /// Units per metre when that is a whole number (mm: 1000): dividing by
    /// it rounds decimal drawings exactly (2800 mm → 2.8 m, where
    /// 2800 × 0.001 gives 2.8000000000000003).
    per_metre: Option<f64>,
}

impl Placement {
    pub(super) fn new(mapping: &MappingDoc, metres_per_unit: f64) -> Placement {
        let o = mapping.origin.as_deref().unwrap_or(&[]);
        let origin =
            [o.first().copied().unwrap_or(0.0), o.get(1).copied().unwrap_or(0.0), o.get(2).copied().unwrap_or(0.0)];
        let theta = mapping.rotation_deg.to_radians();
        let inverse = 1.0 / metres_per_unit;
        let per_metre = (inverse > 1.0 && (inverse.round() - inverse).abs() <= 1e-9 * inverse).then(|| inverse.round());
        // Rotation by 0 keeps coordinates exact (cos 0 = 1, sin 0 = 0).
        Placement { origin, cos: theta.cos(), sin: theta.sin(), scale: metres_per_unit, per_metre }
    }
    /// Site metres of a file point.
    pub(super) fn local(&self, p: [f64; 3]) -> [f64; 3] {
        let (dx, dy, dz) = (p[0] - self.origin[0], p[1] - self.origin[1], p[2] - self.origin[2]);
        let turned = [self.cos * dx - self.sin * dy, self.sin * dx + self.cos * dy, dz];
        turned.map(|v| match self.per_metre {
            Some(n) => v / n,
            None => self.scale * v,
        })
    }
}

impl MappingDoc {
    /// The shape checks the types cannot make: finite numbers, an origin
    /// of two or three values, conductor layers that name a declared
    /// circuit, a phase and a radius.
    pub(super) fn check(&self) -> Result<(), ImportError> {
        let root = Pointer::root();
        let mut problems = Problems::default();
        if let Some(f) = self.frequency_hz
            && !(f.is_finite() && f > 0.0)
        {
            problems.push(&root.key("frequency_hz"), "must be a positive number of hertz");
        }
        if let Some(o) = &self.origin {
            if !(2..=3).contains(&o.len()) {
                problems.push(&root.key("origin"), "must be [x, y] or [x, y, z] in the file's units");
            }
            for (i, v) in o.iter().enumerate() {
                if !v.is_finite() {
                    problems.push(&root.key("origin").index(i), "must be a finite number");
                }
            }
        }
        if !self.rotation_deg.is_finite() || self.rotation_deg.abs() > 360.0 {
            problems.push(&root.key("rotation_deg"), "must be between -360 and 360 degrees");
        }
        for (name, layer) in &self.layers {
            let at = root.key("layers").key(name);
            if layer.kind == ItemKind::Conductor {
                match &layer.circuit {
                    None => problems
                        .push(&at.key("circuit"), "a conductor layer needs the circuit its conductors belong to"),
                    Some(c) if !self.circuits.iter().any(|d| &d.id == c) => problems.push(
                        &at.key("circuit"),
                        format!("circuit {c:?} is not among the mapping's circuits: declare it there"),
                    ),
                    Some(_) => {}
                }
                if layer.phase.is_none() {
                    problems.push(&at.key("phase"), "a conductor layer needs a phase (A, B, C or N)");
                }
                if layer.radius_m.is_none() && self.defaults.radius_m.is_none() {
                    problems.push(&at.key("radius_m"), "give the conductors' radius here or in defaults.radius_m");
                }
            }
        }
        problems.into_result(()).map_err(ImportError::Mapping)
    }
}

/// The mapping that imports [`super::export_dxf`]'s drawing back into
/// the same site: one layer per item, named after it, with its circuit,
/// phase, radius, heights or grid; the site's circuits, frequency and
/// georeference; units metres.
pub fn export_mapping(site: &SiteDoc) -> MappingDoc {
    let mut layers = BTreeMap::new();
    for c in &site.conductors {
        layers.insert(
            super::layer_name("c", &c.id),
            LayerMapDoc {
                id: Some(c.id.clone()),
                circuit: c.circuit.clone(),
                phase: c.phase,
                share: c.share,
                continues: c.continues,
                radius_m: Some(c.radius_m),
                cross_section: c.cross_section,
                ..LayerMapDoc::of(ItemKind::Conductor)
            },
        );
    }
    for p in &site.positions {
        layers.insert(
            super::layer_name("p", &p.id),
            LayerMapDoc {
                id: Some(p.id.clone()),
                heights_m: p.heights_m.clone(),
                body_region: Some(p.body_region),
                group: Some(p.group),
                occupancy_h: p.occupancy_h,
                ..LayerMapDoc::of(ItemKind::Position)
            },
        );
    }
    for a in &site.areas {
        layers.insert(
            super::layer_name("a", &a.id),
            LayerMapDoc {
                id: Some(a.id.clone()),
                height_m: Some(a.height_m),
                spacing_m: Some(a.spacing_m),
                occupancy_h: a.occupancy_h,
                ..LayerMapDoc::of(ItemKind::Area)
            },
        );
    }
    MappingDoc {
        name: site.name.clone(),
        frequency_hz: Some(site.frequency_hz),
        circuits: site.circuits.clone(),
        georeference: site.georeference,
        units: Some(Units::Metre),
        layers,
        ..MappingDoc::default()
    }
}

impl LayerMapDoc {
    /// A layer of `kind` with nothing else stated.
    pub fn of(kind: ItemKind) -> LayerMapDoc {
        LayerMapDoc {
            kind,
            id: None,
            circuit: None,
            phase: None,
            share: None,
            continues: None,
            radius_m: None,
            cross_section: None,
            heights_m: None,
            body_region: None,
            group: None,
            height_m: None,
            spacing_m: None,
            occupancy_h: None,
        }
    }
}
