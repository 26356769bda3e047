//! Routes in and out of other tools: GeoJSON, DXF drawings and CSV vertex
//! lists become a site document, and a site's conductors, positions and
//! areas go back out as GeoJSON and DXF.
//!
//! Import never drops geometry silently: every feature, entity or row that
//! does not become part of the site is listed in [`Imported::skipped`] with
//! the reason (unsupported entity, unmapped layer, missing property), and
//! every assumption made (a default taken from the mapping) in
//! [`Imported::notes`]. A file that cannot be read at all, or a mapping
//! that is wrong, is an [`ImportError`] with a pointer or a line.
//!
//! # Coordinates
//! A file's coordinates `p` (in its units) become site metres by
//! `local = scale · R(rotation) · (p − origin)`: the mapping's `origin` (in
//! the file's units; for drawings in national grid coordinates) is taken
//! off first, then the plan is turned by `rotation_deg` counter-clockwise
//! about it, then scaled to metres (`units`, or a drawing's `$INSUNITS`).
//! z is shifted by the origin's third value and scaled, never turned.
//! GeoJSON in longitude and latitude goes through the georeference by the
//! geodesic inverse problem instead ([`crate::report::geo::from_lon_lat`]).
//!
//! Layout: `mapping` (the mapping document), `geojson`, `dxf` (behind the
//! `dxf` feature), `csv`.

mod csv;
#[cfg(feature = "dxf")]
mod dxf;
mod geojson;
mod mapping;

pub use self::csv::{CSV_COLUMNS, import_csv};
#[cfg(feature = "dxf")]
pub use self::dxf::{export_dxf, import_dxf};
pub use self::geojson::{export_geojson, import_geojson};
pub use mapping::{CoordinateFrame, DefaultsDoc, ItemKind, LayerMapDoc, MappingDoc, Units, export_mapping};

use super::problem::Problems;
use super::wire::SiteDoc;
use serde::Serialize;

/// Most features, entities or rows one file may hold: far above any site
/// a person assesses (the validator's own limit is per conductor), low
/// enough that a hostile file cannot make the import allocate without end.
pub const MAX_ITEMS: usize = 20_000;

/// The frequency taken when neither the file nor the mapping states one,
/// reported in the notes.
pub const DEFAULT_FREQUENCY_HZ: f64 = 50.0;

/// The formats a route can be imported from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "lowercase")]
pub enum Format {
    Geojson,
    Dxf,
    Csv,
}

impl Format {
    /// The format a file name's extension names, if any.
    pub fn from_extension(name: &str) -> Option<Format> {
        let ext = name.rsplit_once('.')?.1.to_ascii_lowercase();
        match ext.as_str() {
            "geojson" | "json" => Some(Format::Geojson),
            "dxf" => Some(Format::Dxf),
            "csv" => Some(Format::Csv),
            _ => None,
        }
    }
    /// `geojson`, `dxf` or `csv`.
    pub fn parse(word: &str) -> Option<Format> {
        match word {
            "geojson" => Some(Format::Geojson),
            "dxf" => Some(Format::Dxf),
            "csv" => Some(Format::Csv),
            _ => None,
        }
    }
}

/// One item of the file that did not become part of the site.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct Skipped {
    /// Where in the file: a JSON pointer (GeoJSON), `handle 2F` (DXF) or
    /// `line 12` (CSV).
    pub at: String,
    /// What it is: `CIRCLE`, `MultiPoint`, a row.
    pub what: String,
    /// The drawing layer, for DXF.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub layer: Option<String>,
    /// Why, in plain words.
    pub reason: String,
}

impl std::fmt::Display for Skipped {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "skipped {} at {}", self.what, self.at)?;
        if let Some(l) = &self.layer {
            write!(f, " on layer {l}")?;
        }
        write!(f, ": {}", self.reason)
    }
}

/// A site document read from a file, with what was left out and what was
/// assumed.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Imported {
    pub site: SiteDoc,
    pub skipped: Vec<Skipped>,
    pub notes: Vec<String>,
}

/// Why a file cannot be imported at all.
#[derive(Debug, thiserror::Error)]
pub enum ImportError {
    /// The file itself: pointers into a GeoJSON document, or `line n` /
    /// `group code …` in the detail for CSV and DXF.
    #[error("the file cannot be imported: {0}")]
    File(Problems),
    /// The mapping document (pointers into it).
    #[error("the mapping cannot be used: {0}")]
    Mapping(Problems),
}

impl ImportError {
    pub fn is_file(&self) -> bool {
        matches!(self, ImportError::File(_))
    }
    pub fn problems(&self) -> &Problems {
        match self {
            ImportError::File(p) | ImportError::Mapping(p) => p,
        }
    }
    fn file(pointer: impl Into<String>, detail: impl Into<String>) -> ImportError {
        ImportError::File(Problems::one(pointer, detail))
    }
}

/// Imports a file of the given format with an optional mapping.
pub fn import(format: Format, bytes: &[u8], mapping: &MappingDoc) -> Result<Imported, ImportError> {
    mapping.check()?;
    match format {
        Format::Geojson => import_geojson(text_of(bytes)?, mapping),
        Format::Csv => import_csv(text_of(bytes)?, mapping),
        #[cfg(feature = "dxf")]
        Format::Dxf => import_dxf(bytes, mapping),
        #[cfg(not(feature = "dxf"))]
        Format::Dxf => Err(ImportError::file("", "this build reads no DXF drawings (feature dxf is off)")),
    }
}

fn text_of(bytes: &[u8]) -> Result<&str, ImportError> {
    let text = std::str::from_utf8(bytes)
        .map_err(|e| ImportError::file("", format!("the file is not UTF-8 text (byte {})", e.valid_up_to())))?;
    Ok(text.strip_prefix('\u{feff}').unwrap_or(text))
}

/// The parts of a site collected while reading a file, finished into a
/// [`SiteDoc`] with the mapping's circuits and settings.
struct Collector {
    site: SiteDoc,
    skipped: Vec<Skipped>,
    notes: Vec<String>,
}

impl Collector {
    /// An empty site with the mapping's circuits.
    fn new(mapping: &MappingDoc) -> Collector {
        let site = SiteDoc {
            name: None,
            frequency_hz: DEFAULT_FREQUENCY_HZ,
            circuits: mapping.circuits.clone(),
            conductors: Vec::new(),
            positions: Vec::new(),
            areas: Vec::new(),
            tables: Vec::new(),
            georeference: None,
            formations: Vec::new(),
            overhead_lines: Vec::new(),
        };
        Collector { site, skipped: Vec::new(), notes: Vec::new() }
    }

    fn skip(&mut self, at: impl Into<String>, what: impl Into<String>, layer: Option<&str>, reason: impl Into<String>) {
        self.skipped.push(Skipped {
            at: at.into(),
            what: what.into(),
            layer: layer.map(str::to_string),
            reason: reason.into(),
        });
    }

    /// A unique id from a wanted one: `wanted`, else `wanted-2`, `-3`, …
    fn unique_id(taken: &[&str], wanted: &str) -> String {
        if !taken.contains(&wanted) {
            return wanted.to_string();
        }
        (2..).map(|n| format!("{wanted}-{n}")).find(|c| !taken.contains(&c.as_str())).unwrap_or_default()
    }

    fn conductor_id(&self, wanted: &str) -> String {
        let taken: Vec<&str> = self.site.conductors.iter().map(|c| c.id.as_str()).collect();
        Self::unique_id(&taken, wanted)
    }
    fn position_id(&self, wanted: &str) -> String {
        let taken: Vec<&str> = self.site.positions.iter().map(|c| c.id.as_str()).collect();
        Self::unique_id(&taken, wanted)
    }
    fn area_id(&self, wanted: &str) -> String {
        let taken: Vec<&str> = self.site.areas.iter().map(|c| c.id.as_str()).collect();
        Self::unique_id(&taken, wanted)
    }

    /// Whether a circuit is known (from the mapping or the file).
    fn has_circuit(&self, id: &str) -> bool {
        self.site.circuits.iter().any(|c| c.id == id)
    }

    /// Finishes the site: the mapping's name, frequency and georeference
    /// win over the file's; a missing frequency is noted.
    fn finish(mut self, mapping: &MappingDoc, frequency_from_file: bool) -> Imported {
        if let Some(n) = &mapping.name {
            self.site.name = Some(n.clone());
        }
        if let Some(f) = mapping.frequency_hz {
            self.site.frequency_hz = f;
        } else if !frequency_from_file {
            self.notes
                .push(format!("frequency_hz not given by the file or the mapping: {DEFAULT_FREQUENCY_HZ} Hz taken"));
        }
        if let Some(g) = mapping.georeference {
            self.site.georeference = Some(g);
        }
        Imported { site: self.site, skipped: self.skipped, notes: self.notes }
    }
}

/// A DXF layer name for an exported item: `prefix-id`, with the characters
/// DXF forbids in names (`<>/\":;?*|=,` and the backquote) replaced by `_`.
pub(super) fn layer_name(prefix: &str, id: &str) -> String {
    let clean: String =
        id.chars().map(|c| if "<>/\\\":;?*|=,`".contains(c) || c.is_control() { '_' } else { c }).collect();
    format!("{prefix}-{clean}")
}

/// A plain description of a JSON value's type, for skip reasons.
fn json_words(v: &serde_json::Value) -> &'static str {
    match v {
        serde_json::Value::Null => "null",
        serde_json::Value::Bool(_) => "a boolean",
        serde_json::Value::Number(_) => "a number",
        serde_json::Value::String(_) => "a string",
        serde_json::Value::Array(_) => "an array",
        serde_json::Value::Object(_) => "an object",
    }
}

/// `doc` for a drawing: the conductors that overhead lines and cable
/// formations generate written out as ordinary conductors (their chords
/// and cables as drawn, with circuit, phase and share), and those sections
/// removed, so that a DXF carries every conductor's geometry. A document
/// that does not validate is returned unchanged (its own problems are
/// reported where it is used). Bars keep their `cross_section` in the
/// document; the drawing shows their axis.
pub fn flatten(doc: &SiteDoc) -> SiteDoc {
    let Ok(site) = crate::site::validate_site(doc) else { return doc.clone() };
    let mut out = doc.clone();
    let listed: std::collections::BTreeSet<&str> = doc.conductors.iter().map(|c| c.id.as_str()).collect();
    for k in site.conductors() {
        if listed.contains(k.id.as_str()) {
            continue;
        }
        let (circuit, phase, share) = match k.drive {
            crate::site::Drive::Phase { circuit, phase, share } => {
                (Some(site.circuits()[circuit].id.clone()), Some(phase), Some(share))
            }
            crate::site::Drive::Explicit { .. } => (None, None, None),
        };
        out.conductors.push(crate::site::wire::ConductorDoc {
            id: k.id.clone(),
            path: k.path.iter().map(|p| [p.x, p.y, p.z]).collect(),
            radius_m: k.radius_m,
            circuit,
            phase,
            share,
            current: None,
            continues: None,
            cross_section: None,
        });
    }
    out.overhead_lines.clear();
    out.formations.clear();
    out
}
