//! GeoJSON (RFC 7946) in and out.
//!
//! In: LineString and MultiLineString features become conductors (one per
//! line), Point features positions, Polygon features areas. Properties
//! (all optional): `id` (else the feature's own id, else `kind-n`);
//! conductors `circuit`, `phase`, `share`, `radius_m`, `current`, `cross_section`
//! (`{rms_a, phase_deg}`), `continues` (`{start, end}`); positions
//! `heights_m`, `body_region`, `group`, `occupancy_h`; areas `height_m`,
//! `spacing_m`, `occupancy_h`. A Point with three coordinates is a 3-D
//! position, with two a standing point. Other properties are listed in the
//! notes as unused; other geometries are skipped with the reason.
//!
//! The collection may carry the site's own settings in a `site` member
//! (`name`, `frequency_hz`, `circuits`, `georeference`, `tables`) and its
//! frame in `coordinate_frame` (`wgs84-lon-lat` or `site-local-metres`),
//! as [`export_geojson`] writes them, so an exported site reads back whole.

use super::mapping::{CoordinateFrame, Placement, Units};
use super::{Collector, ImportError, Imported, MAX_ITEMS, MappingDoc, json_words};
use crate::report::geo::{from_lon_lat, to_lon_lat};
use crate::site::problem::Problems;
use crate::site::wire::{CircuitDoc, GeoreferenceDoc, SiteDoc};
use geojson::{Feature, GeoJson, GeometryValue, Position};
use serde::Deserialize;
use serde_json::{Map, Value, json};
use std::collections::BTreeSet;

/// Frame names as the assessment export writes them.
const LON_LAT: &str = "wgs84-lon-lat";
const LOCAL: &str = "site-local-metres";

/// The site settings a collection may carry.
#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
struct SiteMember {
    #[serde(default)]
    name: Option<String>,
    #[serde(default)]
    frequency_hz: Option<f64>,
    #[serde(default)]
    circuits: Vec<CircuitDoc>,
    #[serde(default)]
    georeference: Option<GeoreferenceDoc>,
    #[serde(default)]
    tables: Vec<String>,
    /// Overhead lines and formations, in site-local metres as in the site
    /// document (they expand into conductors on validation).
    #[serde(default)]
    overhead_lines: Vec<crate::site::overhead::OverheadLineDoc>,
    #[serde(default)]
    formations: Vec<crate::site::wire::FormationDoc>,
}

/// How coordinates of this file become site metres.
enum Reader {
    LonLat(GeoreferenceDoc),
    Local(Placement),
}

impl Reader {
    fn point(&self, p: &Position) -> Option<[f64; 3]> {
        let s = p.as_slice();
        if s.len() < 2 || s.iter().any(|v| !v.is_finite()) {
            return None;
        }
        let z = s.get(2).copied().unwrap_or(0.0);
        Some(match self {
            Reader::LonLat(g) => {
                let [x, y] = from_lon_lat(g, s[0], s[1]);
                [x, y, z]
            }
            Reader::Local(t) => t.local([s[0], s[1], z]),
        })
    }
}

/// Reads a GeoJSON text into a site.
pub fn import_geojson(text: &str, mapping: &MappingDoc) -> Result<Imported, ImportError> {
    let value: Value = serde_json::from_str(text).map_err(|_| {
        let why = crate::site::json_syntax_error(text).unwrap_or_else(|| "not a JSON document".into());
        ImportError::file("", why)
    })?;
    let member = site_member(&value)?;
    let frame_word = value.get("coordinate_frame").and_then(Value::as_str).map(str::to_string);
    let features = features_of(value)?;
    if features.len() > MAX_ITEMS {
        return Err(ImportError::file("/features", format!("more than {MAX_ITEMS} features")));
    }
    let mut c = Collector::new(mapping);
    for circuit in member.circuits {
        if !c.has_circuit(&circuit.id) {
            c.site.circuits.push(circuit);
        }
    }
    c.site.name = member.name;
    c.site.tables = member.tables;
    c.site.overhead_lines = member.overhead_lines;
    c.site.formations = member.formations;
    c.site.georeference = mapping.georeference.or(member.georeference);
    if let Some(f) = member.frequency_hz {
        c.site.frequency_hz = f;
    }
    let reader = reader_for(mapping, frame_word.as_deref(), c.site.georeference)?;
    let mut unused = BTreeSet::new();
    for (i, f) in features.iter().enumerate() {
        read_feature(&mut c, &reader, mapping, &format!("/features/{i}"), f, &mut unused);
    }
    if !unused.is_empty() {
        c.notes.push(format!("properties not used: {}", unused.into_iter().collect::<Vec<_>>().join(", ")));
    }
    Ok(c.finish(mapping, member.frequency_hz.is_some()))
}

fn site_member(value: &Value) -> Result<SiteMember, ImportError> {
    match value.get("site") {
        None => Ok(SiteMember::default()),
        Some(v) => crate::site::parse_json::<SiteMember>(&v.to_string()).map_err(|p| {
            ImportError::File(Problems(
                p.0.into_iter()
                    .map(|mut q| {
                        q.pointer = format!("/site{}", q.pointer);
                        q
                    })
                    .collect(),
            ))
        }),
    }
}

fn features_of(value: Value) -> Result<Vec<Feature>, ImportError> {
    let doc = serde_json::from_value::<GeoJson>(value).map_err(|e| {
        ImportError::file("", format!("not a GeoJSON document: {}", crate::site::plain_words(&e.to_string())))
    })?;
    Ok(match doc {
        GeoJson::FeatureCollection(fc) => fc.features,
        GeoJson::Feature(f) => vec![f],
        GeoJson::Geometry(g) => vec![Feature { geometry: Some(g), ..Feature::default() }],
    })
}

fn reader_for(
    mapping: &MappingDoc,
    word: Option<&str>,
    georef: Option<GeoreferenceDoc>,
) -> Result<Reader, ImportError> {
    let from_file = match word {
        Some(LON_LAT) => Some(CoordinateFrame::LonLat),
        Some(LOCAL) => Some(CoordinateFrame::Local),
        Some(other) => {
            return Err(ImportError::file(
                "/coordinate_frame",
                format!("unknown frame {other:?} (expected {LON_LAT:?} or {LOCAL:?})"),
            ));
        }
        None => None,
    };
    let frame = mapping.coordinates.or(from_file).unwrap_or(if georef.is_some() {
        CoordinateFrame::LonLat
    } else {
        CoordinateFrame::Local
    });
    match (frame, georef) {
        (CoordinateFrame::LonLat, Some(g)) => Ok(Reader::LonLat(g)),
        (CoordinateFrame::LonLat, None) => Err(ImportError::Mapping(Problems::one(
            "/georeference",
            "the coordinates are longitude and latitude: give the site's georeference in the mapping",
        ))),
        (CoordinateFrame::Local, _) => {
            Ok(Reader::Local(Placement::new(mapping, mapping.units.unwrap_or(Units::Metre).metres())))
        }
    }
}

/// Keys each kind reads from a feature's properties.
const CONDUCTOR_KEYS: [&str; 7] = ["circuit", "phase", "share", "radius_m", "current", "continues", "cross_section"];
const POSITION_KEYS: [&str; 4] = ["heights_m", "body_region", "group", "occupancy_h"];
const AREA_KEYS: [&str; 3] = ["height_m", "spacing_m", "occupancy_h"];

fn read_feature(
    c: &mut Collector,
    reader: &Reader,
    mapping: &MappingDoc,
    at: &str,
    f: &Feature,
    unused: &mut BTreeSet<String>,
) {
    let props = f.properties.clone().unwrap_or_default();
    let wanted_id = match props.get("id").or(None) {
        Some(Value::String(s)) => Some(s.clone()),
        Some(other) => {
            c.skip(at, "feature", None, format!("property id must be a string, not {}", json_words(other)));
            return;
        }
        None => f.id.as_ref().map(|id| match id {
            geojson::feature::Id::String(s) => s.clone(),
            geojson::feature::Id::Number(n) => n.to_string(),
        }),
    };
    let Some(geometry) = &f.geometry else {
        c.skip(at, "feature", None, "it has no geometry");
        return;
    };
    let keys: &[&str] = match &geometry.value {
        GeometryValue::LineString { .. } | GeometryValue::MultiLineString { .. } => &CONDUCTOR_KEYS,
        GeometryValue::Point { .. } => &POSITION_KEYS,
        GeometryValue::Polygon { .. } => &AREA_KEYS,
        _ => &[],
    };
    for k in props.keys() {
        if k != "id" && k != "kind" && !keys.contains(&k.as_str()) {
            unused.insert(k.clone());
        }
    }
    match &geometry.value {
        GeometryValue::LineString { coordinates } => {
            let id = wanted_id.unwrap_or_else(|| format!("conductor-{}", c.site.conductors.len() + 1));
            line(c, reader, mapping, at, "LineString", &id, coordinates, &props);
        }
        GeometryValue::MultiLineString { coordinates } => {
            let id = wanted_id.unwrap_or_else(|| format!("conductor-{}", c.site.conductors.len() + 1));
            for (k, part) in coordinates.iter().enumerate() {
                let part_id = if coordinates.len() == 1 { id.clone() } else { format!("{id}-{}", k + 1) };
                line(
                    c,
                    reader,
                    mapping,
                    &format!("{at}/geometry/coordinates/{k}"),
                    "MultiLineString part",
                    &part_id,
                    part,
                    &props,
                );
            }
        }
        GeometryValue::Point { coordinates } => {
            let id = wanted_id.unwrap_or_else(|| format!("position-{}", c.site.positions.len() + 1));
            point(c, reader, at, &id, coordinates, &props);
        }
        GeometryValue::Polygon { coordinates } => {
            let id = wanted_id.unwrap_or_else(|| format!("area-{}", c.site.areas.len() + 1));
            polygon(c, reader, mapping, at, &id, coordinates, &props);
        }
        GeometryValue::MultiPoint { .. } => {
            c.skip(at, "MultiPoint", None, "not supported: give one Point feature per position")
        }
        GeometryValue::MultiPolygon { .. } => {
            c.skip(at, "MultiPolygon", None, "not supported: give one Polygon feature per area")
        }
        GeometryValue::GeometryCollection { .. } => {
            c.skip(at, "GeometryCollection", None, "not supported: give one feature per conductor, position or area")
        }
    }
}

/// Copies the listed properties into a new object.
fn pick(props: &Map<String, Value>, keys: &[&str]) -> Map<String, Value> {
    keys.iter().filter_map(|k| props.get(*k).map(|v| (k.to_string(), v.clone()))).collect()
}

fn points(reader: &Reader, coordinates: &[Position]) -> Option<Vec<[f64; 3]>> {
    coordinates.iter().map(|p| reader.point(p)).collect()
}

fn line(
    c: &mut Collector,
    reader: &Reader,
    mapping: &MappingDoc,
    at: &str,
    what: &str,
    id: &str,
    coordinates: &[Position],
    props: &Map<String, Value>,
) {
    let Some(path) = points(reader, coordinates) else {
        c.skip(at, what, None, "a coordinate has fewer than two finite numbers");
        return;
    };
    let mut obj = pick(props, &CONDUCTOR_KEYS);
    if !obj.contains_key("radius_m") {
        match mapping.defaults.radius_m {
            Some(r) => {
                obj.insert("radius_m".into(), json!(r));
                c.notes.push(format!("{at}: radius_m {r} m taken from the mapping's defaults"));
            }
            None => {
                c.skip(at, what, None, "missing property radius_m (or give defaults.radius_m in the mapping)");
                return;
            }
        }
    }
    let has_circuit = obj.contains_key("circuit") && obj.contains_key("phase");
    if !has_circuit && !obj.contains_key("current") {
        c.skip(at, what, None, "missing properties circuit and phase (or current)");
        return;
    }
    if let Some(Value::String(circuit)) = obj.get("circuit")
        && !c.has_circuit(circuit)
    {
        let reason = format!("circuit {circuit:?} is not declared: add it to the mapping's circuits");
        c.skip(at, what, None, reason);
        return;
    }
    obj.insert("id".into(), json!(c.conductor_id(id)));
    obj.insert("path".into(), json!(path));
    match serde_json::from_value(Value::Object(obj)) {
        Ok(doc) => c.site.conductors.push(doc),
        Err(e) => {
            c.skip(at, what, None, format!("properties do not fit: {}", crate::site::plain_words(&e.to_string())))
        }
    }
}

fn point(c: &mut Collector, reader: &Reader, at: &str, id: &str, coordinates: &Position, props: &Map<String, Value>) {
    let Some(p) = reader.point(coordinates) else {
        c.skip(at, "Point", None, "the coordinate has fewer than two finite numbers");
        return;
    };
    let at_value = if coordinates.len() >= 3 { json!(p) } else { json!([p[0], p[1]]) };
    let mut obj = pick(props, &POSITION_KEYS);
    obj.insert("id".into(), json!(c.position_id(id)));
    obj.insert("at".into(), at_value);
    match serde_json::from_value(Value::Object(obj)) {
        Ok(doc) => c.site.positions.push(doc),
        Err(e) => {
            c.skip(at, "Point", None, format!("properties do not fit: {}", crate::site::plain_words(&e.to_string())))
        }
    }
}

fn polygon(
    c: &mut Collector,
    reader: &Reader,
    mapping: &MappingDoc,
    at: &str,
    id: &str,
    rings: &[Vec<Position>],
    props: &Map<String, Value>,
) {
    if rings.len() != 1 {
        c.skip(at, "Polygon", None, "a polygon with holes (or no ring) cannot be an area: areas are simple polygons");
        return;
    }
    let Some(mut ring) = points(reader, &rings[0]) else {
        c.skip(at, "Polygon", None, "a coordinate has fewer than two finite numbers");
        return;
    };
    if ring.len() > 1 && ring.first() == ring.last() {
        ring.pop();
    }
    let mut obj = pick(props, &AREA_KEYS);
    let defaults = [("height_m", mapping.defaults.area_height_m), ("spacing_m", mapping.defaults.area_spacing_m)];
    for (key, default) in defaults {
        if obj.contains_key(key) {
            continue;
        }
        match default {
            Some(v) => {
                obj.insert(key.into(), json!(v));
                c.notes.push(format!("{at}: {key} {v} m taken from the mapping's defaults"));
            }
            None => {
                c.skip(
                    at,
                    "Polygon",
                    None,
                    format!("missing property {key} (or give defaults.area_{key} in the mapping)"),
                );
                return;
            }
        }
    }
    obj.insert("id".into(), json!(c.area_id(id)));
    obj.insert("polygon".into(), json!(ring.iter().map(|p| [p[0], p[1]]).collect::<Vec<_>>()));
    match serde_json::from_value(Value::Object(obj)) {
        Ok(doc) => c.site.areas.push(doc),
        Err(e) => {
            c.skip(at, "Polygon", None, format!("properties do not fit: {}", crate::site::plain_words(&e.to_string())))
        }
    }
}

/// The site's conductors, positions and areas as a GeoJSON
/// FeatureCollection that [`import_geojson`] reads back into the same
/// site (vertices within 1 µm; through longitude and latitude when the
/// site has a georeference).
pub fn export_geojson(site: &SiteDoc) -> Value {
    let xy = |x: f64, y: f64| -> Vec<f64> {
        match &site.georeference {
            Some(g) => to_lon_lat(g, x, y).to_vec(),
            None => vec![x, y],
        }
    };
    let mut features = Vec::new();
    for c in &site.conductors {
        let mut props = to_object(c);
        props.remove("path");
        props.insert("kind".into(), json!("conductor"));
        let coords: Vec<Vec<f64>> = c.path.iter().map(|p| [xy(p[0], p[1]), vec![p[2]]].concat()).collect();
        features.push(
            json!({"type": "Feature", "properties": props, "geometry": {"type": "LineString", "coordinates": coords}}),
        );
    }
    for p in &site.positions {
        let mut props = to_object(p);
        props.remove("at");
        props.insert("kind".into(), json!("position"));
        let mut coords = xy(p.at.first().copied().unwrap_or(0.0), p.at.get(1).copied().unwrap_or(0.0));
        coords.extend(p.at.get(2));
        features.push(
            json!({"type": "Feature", "properties": props, "geometry": {"type": "Point", "coordinates": coords}}),
        );
    }
    for a in &site.areas {
        let mut props = to_object(a);
        props.remove("polygon");
        props.insert("kind".into(), json!("area"));
        let mut ring: Vec<Vec<f64>> = a.polygon.iter().map(|p| xy(p[0], p[1])).collect();
        if let Some(first) = ring.first().cloned() {
            ring.push(first);
        }
        features.push(
            json!({"type": "Feature", "properties": props, "geometry": {"type": "Polygon", "coordinates": [ring]}}),
        );
    }
    let mut member = json!({"frequency_hz": site.frequency_hz, "circuits": site.circuits});
    if let Some(n) = &site.name {
        member["name"] = json!(n);
    }
    if let Some(g) = &site.georeference {
        member["georeference"] = json!(g);
    }
    if !site.tables.is_empty() {
        member["tables"] = json!(site.tables);
    }
    // The generating sections travel whole (site-local metres), so that a
    // round trip keeps them as sections rather than their expansion.
    if !site.overhead_lines.is_empty() {
        member["overhead_lines"] = json!(site.overhead_lines);
    }
    if !site.formations.is_empty() {
        member["formations"] = json!(site.formations);
    }
    let mut doc = json!({
        "type": "FeatureCollection",
        "coordinate_frame": if site.georeference.is_some() { LON_LAT } else { LOCAL },
        "site": member,
        "features": features,
    });
    if site.georeference.is_some() {
        doc["coordinate_conversion"] = json!(crate::report::geo::CONVERSION);
    }
    doc
}

fn to_object<T: serde::Serialize>(v: &T) -> Map<String, Value> {
    match serde_json::to_value(v) {
        Ok(Value::Object(m)) => m,
        _ => Map::new(),
    }
}
