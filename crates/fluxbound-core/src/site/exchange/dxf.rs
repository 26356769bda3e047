//! DXF drawings in and out, through the `dxf` crate.
//!
//! In: LINE, LWPOLYLINE and POLYLINE (2-D and 3-D) entities become
//! conductors or, closed, areas; POINT entities positions; each by what the
//! mapping says of its layer. Consecutive LINEs of one layer that meet end
//! to start (within 1 nm of the drawing's metre) are joined into one
//! conductor, as drawings often draw a route segment by segment. Units are
//! the header's `$INSUNITS` unless the mapping gives `units`; a drawing
//! without units and a mapping without them is refused, never guessed.
//!
//! Skipped, with the reason: entities on unmapped layers, in paper space,
//! of other types (CIRCLE, ARC, TEXT, INSERT, …), polylines with arc
//! segments (bulges), polyline meshes, polylines in a tilted plane
//! (extrusion not +z), open polylines on area layers, and any entity whose
//! type does not fit its layer's kind.
//!
//! A POINT at z = 0 is a standing position (evaluated at its body
//! heights); elsewhere a 3-D position.

use super::mapping::{ItemKind, LayerMapDoc, Placement};
use super::{Collector, ImportError, Imported, MAX_ITEMS, MappingDoc, layer_name};
use crate::site::problem::Problems;
use crate::site::wire::{AreaDoc, ConductorDoc, PositionDoc, SiteDoc};
use dxf::entities::{Entity, EntityType, LwPolyline, ModelPoint, Polyline, Vertex};
use dxf::enums::{AcadVersion, Units as DxfUnits};
use dxf::tables::Layer;
use dxf::{Drawing, Point};

/// Two drawn points closer than this (metres, after scaling) are one
/// point when LINEs are joined: far below any drawing's precision, far
/// above rounding of coordinates near 10⁵ m.
const JOIN_TOLERANCE_M: f64 = 1e-9;

/// Metres per drawing unit of `$INSUNITS` (AutoCAD DXF reference, header
/// variable INSUNITS); `None` for unitless and the astronomical ones.
fn insunits_metres(u: DxfUnits) -> Option<f64> {
    Some(match u {
        DxfUnits::Inches => 0.0254,
        DxfUnits::Feet => 0.3048,
        DxfUnits::Miles => 1609.344,
        DxfUnits::Millimeters => 1e-3,
        DxfUnits::Centimeters => 1e-2,
        DxfUnits::Meters => 1.0,
        DxfUnits::Kilometers => 1e3,
        DxfUnits::Microinches => 0.0254e-6,
        DxfUnits::Mils => 0.0254e-3,
        DxfUnits::Yards => 0.9144,
        DxfUnits::Angstroms => 1e-10,
        DxfUnits::Nanometers => 1e-9,
        DxfUnits::Microns => 1e-6,
        DxfUnits::Decimeters => 0.1,
        DxfUnits::Decameters => 10.0,
        DxfUnits::Hectometers => 100.0,
        DxfUnits::USSurveyFeet => 1200.0 / 3937.0,
        DxfUnits::USSurveyInch => 100.0 / 3937.0,
        DxfUnits::USSurveyYard => 3600.0 / 3937.0,
        DxfUnits::USSurveyMile => 6_336_000.0 / 3937.0,
        _ => return None,
    })
}

/// Reads a DXF drawing (ASCII or binary) into a site.
pub fn import_dxf(bytes: &[u8], mapping: &MappingDoc) -> Result<Imported, ImportError> {
    let drawing = load(bytes)?;
    let scale = match mapping.units {
        Some(u) => u.metres(),
        None => insunits_metres(drawing.header.default_drawing_units).ok_or_else(|| {
            ImportError::Mapping(Problems::one(
                "/units",
                format!(
                    "the drawing does not state usable units ($INSUNITS is {:?}): give units in the mapping",
                    drawing.header.default_drawing_units
                ),
            ))
        })?,
    };
    let placement = Placement::new(mapping, scale);
    let count = drawing.entities().count();
    if count > MAX_ITEMS {
        return Err(ImportError::file("", format!("the drawing has {count} entities, more than {MAX_ITEMS}")));
    }
    let mut c = Collector::new(mapping);
    let mut reader = EntityReader { placement, last_line: None, default_radius_m: mapping.defaults.radius_m };
    for e in drawing.entities() {
        reader.entity(&mut c, mapping, e);
    }
    Ok(c.finish(mapping, false))
}

/// Header variables the `dxf` crate converts to dates and durations with
/// `chrono`, which panics on values out of its range (found by
/// tests/core/fuzz/exchange.rs): a damaged date must not stop an import
/// that never uses it.
const DATE_VARIABLES: [&str; 4] = ["$TDCREATE", "$TDUCREATE", "$TDUPDATE", "$TDUUPDATE"];
/// Header variables read as durations in days (time spent editing).
const DURATION_VARIABLES: [&str; 2] = ["$TDINDWG", "$TDUSRTIMER"];
/// Durations the crate converts safely, days.
const SAFE_DURATION_DAYS: f64 = 1e6;

/// Julian days the crate's date conversion handles (years 1900 to about
/// 9000); others are replaced by 2451545.0 (2000-01-01) before reading.
const SAFE_JULIAN_DAYS: (f64, f64) = (2_415_021.0, 5_000_000.0);

/// Reads the drawing through the `dxf` crate. An ASCII drawing is first
/// cleaned of what the import never uses and the crate cannot always
/// read: out-of-range header dates, and the OBJECTS section (dictionaries,
/// time stamps, layouts). Should the crate still panic on some other
/// damaged input, the panic is answered as an unreadable drawing.
fn load(bytes: &[u8]) -> Result<Drawing, ImportError> {
    let cleaned = std::str::from_utf8(bytes).ok().map(clean_ascii);
    let input: &[u8] = cleaned.as_deref().map_or(bytes, str::as_bytes);
    let unreadable =
        |why: String| ImportError::file("", format!("not a readable DXF drawing: {}", crate::site::plain_words(&why)));
    if let Some(text) = &cleaned
        && !text.lines().any(|l| l.trim() == "SECTION")
    {
        return Err(unreadable("it has no SECTION (is it a DXF file?)".into()));
    }
    match std::panic::catch_unwind(|| Drawing::load(&mut std::io::Cursor::new(input))) {
        Ok(Ok(d)) => Ok(d),
        Ok(Err(e)) => Err(unreadable(e.to_string())),
        Err(_) => Err(unreadable("the DXF reader failed on a damaged value".into())),
    }
}

/// An ASCII drawing without its OBJECTS section and with every header
/// date in the range the reader converts.
fn clean_ascii(text: &str) -> String {
    let lines: Vec<&str> = text.lines().collect();
    let mut out = String::with_capacity(text.len());
    let (mut k, mut section) = (0, "");
    // The header variable being read: a date, a duration, or neither.
    let (mut date_var, mut duration_var) = (false, false);
    while k + 1 < lines.len() {
        let (code, value) = (lines[k].trim(), lines[k + 1]);
        k += 2;
        if code == "2" && k >= 4 && lines[k - 4].trim() == "0" && lines[k - 3].trim() == "SECTION" {
            section = if value.trim() == "OBJECTS" { "OBJECTS" } else { "" };
            if section == "OBJECTS" {
                // Drop the "0 SECTION" pair already written.
                let cut = out.trim_end_matches('\n').rfind("  0\nSECTION").unwrap_or(out.len());
                out.truncate(cut);
                continue;
            }
        }
        if section == "OBJECTS" {
            if code == "0" && value.trim() == "ENDSEC" {
                section = "";
            }
            continue;
        }
        let mut value = value.to_string();
        if code == "9" {
            date_var = DATE_VARIABLES.contains(&value.trim());
            duration_var = DURATION_VARIABLES.contains(&value.trim());
        } else if code == "40" && (date_var || duration_var) {
            let v = value.trim().parse::<f64>().unwrap_or(f64::NAN);
            if date_var && !(v == 0.0 || (SAFE_JULIAN_DAYS.0..=SAFE_JULIAN_DAYS.1).contains(&v)) {
                value = "2451545.0".into();
            }
            if duration_var && !(0.0..=SAFE_DURATION_DAYS).contains(&v) {
                value = "0.0".into();
            }
        }
        out.push_str("  ");
        out.push_str(code);
        out.push('\n');
        out.push_str(&value);
        out.push('\n');
    }
    out
}

/// Reading state: the conductor the last LINE went into, to join the next.
struct EntityReader {
    placement: Placement,
    /// (layer, index into the site's conductors) of the last LINE.
    last_line: Option<(String, usize)>,
    default_radius_m: Option<f64>,
}

/// A drawn entity's type as DXF names it.
fn type_name(e: &EntityType) -> String {
    match e {
        EntityType::Line(_) => "LINE".into(),
        EntityType::LwPolyline(_) => "LWPOLYLINE".into(),
        EntityType::Polyline(_) => "POLYLINE".into(),
        EntityType::ModelPoint(_) => "POINT".into(),
        other => {
            let debug = format!("{other:?}");
            debug.split(['(', ' ', '{']).next().unwrap_or("entity").to_uppercase()
        }
    }
}

/// A drawn figure: its points (site metres) and whether it is closed.
struct Figure {
    points: Vec<[f64; 3]>,
    closed: bool,
}

impl EntityReader {
    fn entity(&mut self, c: &mut Collector, mapping: &MappingDoc, e: &Entity) {
        let at = format!("handle {:X}", e.common.handle.0);
        let layer = e.common.layer.as_str();
        let what = type_name(&e.specific);
        let is_line = matches!(e.specific, EntityType::Line(_));
        if !is_line {
            self.last_line = None;
        }
        if e.common.is_in_paper_space {
            c.skip(at, what, Some(layer), "it is in paper space (a sheet layout), not in the model");
            return;
        }
        let Some(map) = mapping.layers.get(layer) else {
            c.skip(at, what, Some(layer), "the layer is not in the mapping");
            return;
        };
        match (&e.specific, map.kind) {
            (EntityType::ModelPoint(p), ItemKind::Position) => self.position(c, map, layer, p),
            (EntityType::ModelPoint(_), _) => {
                c.skip(at, what, Some(layer), format!("a POINT cannot be {}", kind_words(map.kind)));
            }
            (_, ItemKind::Position) => {
                c.skip(at, what, Some(layer), "a position layer takes POINT entities only");
            }
            (EntityType::Line(l), ItemKind::Conductor) => {
                let (a, b) = (self.placement.local(xyz(&l.p1)), self.placement.local(xyz(&l.p2)));
                self.line(c, map, layer, a, b);
            }
            (specific, kind) => match self.figure(specific, e.common.elevation) {
                Ok(f) if kind == ItemKind::Conductor => self.conductor(c, map, layer, f),
                Ok(f) if f.closed => self.area(c, mapping, map, layer, &at, f),
                Ok(_) => c.skip(at, what, Some(layer), "an area needs a closed polyline"),
                Err(reason) => c.skip(at, what, Some(layer), reason),
            },
        }
    }

    /// The points of a polyline-like entity, or why it cannot be read.
    fn figure(&self, e: &EntityType, elevation: f64) -> Result<Figure, String> {
        match e {
            EntityType::LwPolyline(p) => self.lw_polyline(p, elevation),
            EntityType::Polyline(p) => self.polyline(p),
            EntityType::Line(_) => Err("a LINE cannot be an area: draw a closed polyline".into()),
            other => Err(format!("{} is not supported (LINE, LWPOLYLINE, POLYLINE and POINT are)", type_name(other))),
        }
    }

    fn lw_polyline(&self, p: &LwPolyline, elevation: f64) -> Result<Figure, String> {
        if !is_plan(p.extrusion_direction.x, p.extrusion_direction.y, p.extrusion_direction.z) {
            return Err("the polyline lies in a tilted plane (extrusion not +z): not supported".into());
        }
        if p.vertices.iter().any(|v| v.bulge != 0.0) {
            return Err("it has arc segments (bulge): explode them into straight segments".into());
        }
        let points = p.vertices.iter().map(|v| self.placement.local([v.x, v.y, elevation])).collect();
        Ok(Figure { points, closed: p.is_closed() })
    }

    fn polyline(&self, p: &Polyline) -> Result<Figure, String> {
        if p.is_3d_polygon_mesh() || p.is_polyface_mesh() {
            return Err("a polyline mesh is not a route".into());
        }
        let three_d = p.is_3d_polyline();
        if !three_d && !is_plan(p.normal.x, p.normal.y, p.normal.z) {
            return Err("the polyline lies in a tilted plane (normal not +z): not supported".into());
        }
        if !three_d && p.vertices().any(|v| v.bulge != 0.0) {
            return Err("it has arc segments (bulge): explode them into straight segments".into());
        }
        let points = p
            .vertices()
            .map(|v| {
                let z = if three_d { v.location.z } else { p.location.z };
                self.placement.local([v.location.x, v.location.y, z])
            })
            .collect();
        Ok(Figure { points, closed: p.is_closed() })
    }

    fn line(&mut self, c: &mut Collector, map: &LayerMapDoc, layer: &str, a: [f64; 3], b: [f64; 3]) {
        if let Some((last_layer, k)) = &self.last_line
            && last_layer == layer
            && let Some(end) = c.site.conductors.get(*k).and_then(|d| d.path.last())
            && distance(*end, a) <= JOIN_TOLERANCE_M
        {
            c.site.conductors[*k].path.push(b);
            return;
        }
        self.conductor(c, map, layer, Figure { points: vec![a, b], closed: false });
        self.last_line = Some((layer.to_string(), c.site.conductors.len() - 1));
    }

    fn conductor(&mut self, c: &mut Collector, map: &LayerMapDoc, layer: &str, mut f: Figure) {
        if f.closed && f.points.len() > 1 && f.points.first() != f.points.last() {
            f.points.push(f.points[0]);
        }
        // One of the two is present: `MappingDoc::check` refuses a conductor
        // layer with neither.
        let radius_m = map.radius_m.or(self.default_radius_m).unwrap_or(0.0);
        if map.radius_m.is_none() {
            let note = format!("layer {layer}: radius_m {radius_m} m taken from the mapping's defaults");
            if !c.notes.contains(&note) {
                c.notes.push(note);
            }
        }
        let id = c.conductor_id(map.id.as_deref().unwrap_or(layer));
        c.site.conductors.push(ConductorDoc {
            id,
            path: f.points,
            radius_m,
            circuit: map.circuit.clone(),
            phase: map.phase,
            share: map.share,
            current: None,
            continues: map.continues,
            cross_section: map.cross_section,
        });
    }

    fn position(&mut self, c: &mut Collector, map: &LayerMapDoc, layer: &str, p: &ModelPoint) {
        let [x, y, z] = self.placement.local(xyz(&p.location));
        let standing = p.location.z == 0.0;
        let at = if standing { vec![x, y] } else { vec![x, y, z] };
        let id = c.position_id(map.id.as_deref().unwrap_or(layer));
        c.site.positions.push(PositionDoc {
            id,
            at,
            // Body heights belong to standing points; a 3-D point is used as given.
            heights_m: if standing { map.heights_m.clone() } else { None },
            body_region: map.body_region.unwrap_or_default(),
            occupancy_h: map.occupancy_h,
            group: map.group.unwrap_or_default(),
        });
    }

    fn area(
        &mut self,
        c: &mut Collector,
        mapping: &MappingDoc,
        map: &LayerMapDoc,
        layer: &str,
        at: &str,
        mut f: Figure,
    ) {
        if f.points.len() > 1 && f.points.first() == f.points.last() {
            f.points.pop();
        }
        let height = map.height_m.or(mapping.defaults.area_height_m);
        let spacing = map.spacing_m.or(mapping.defaults.area_spacing_m);
        let (Some(height_m), Some(spacing_m)) = (height, spacing) else {
            let reason = "missing height_m or spacing_m (give them in the layer or in defaults.area_height_m and defaults.area_spacing_m)";
            c.skip(at, "area", Some(layer), reason);
            return;
        };
        let id = c.area_id(map.id.as_deref().unwrap_or(layer));
        c.site.areas.push(AreaDoc {
            id,
            polygon: f.points.iter().map(|p| [p[0], p[1]]).collect(),
            height_m,
            spacing_m,
            occupancy_h: map.occupancy_h,
        });
    }
}

fn kind_words(k: ItemKind) -> &'static str {
    match k {
        ItemKind::Conductor => "a conductor",
        ItemKind::Position => "a position",
        ItemKind::Area => "an area",
    }
}

/// Whether a normal (extrusion) vector is the +z axis, so that the
/// entity's own coordinates are plan coordinates.
fn is_plan(x: f64, y: f64, z: f64) -> bool {
    x.abs() < 1e-12 && y.abs() < 1e-12 && z > 0.0
}

fn xyz(p: &Point) -> [f64; 3] {
    [p.x, p.y, p.z]
}

fn distance(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

/// The site's conductors (3-D POLYLINEs), positions (POINTs) and areas
/// (closed LWPOLYLINEs at the area's height) as an ASCII DXF drawing in
/// metres, one layer per item named `c-`, `p-` or `a-` and its id; the
/// mapping to import it back is [`super::export_mapping`].
pub fn export_dxf(site: &SiteDoc) -> Vec<u8> {
    let mut d = Drawing::load(&mut HEADER_TEMPLATE.as_bytes()).unwrap_or_else(|_| Drawing::new());
    d.header.version = AcadVersion::R2013;
    d.header.default_drawing_units = DxfUnits::Meters;
    for c in &site.conductors {
        let layer = add_layer(&mut d, layer_name("c", &c.id));
        let mut poly = Polyline::default();
        poly.set_is_3d_polyline(true);
        for p in &c.path {
            let mut v = Vertex::new(Point::new(p[0], p[1], p[2]));
            v.set_is_3d_polyline_vertex(true);
            poly.add_vertex(&mut d, v);
        }
        add(&mut d, layer, EntityType::Polyline(poly), 0.0);
    }
    for p in &site.positions {
        let layer = add_layer(&mut d, layer_name("p", &p.id));
        let z = p.at.get(2).copied().unwrap_or(0.0);
        let point =
            ModelPoint { location: Point::new(p.at[0], p.at.get(1).copied().unwrap_or(0.0), z), ..Default::default() };
        add(&mut d, layer, EntityType::ModelPoint(point), 0.0);
    }
    for a in &site.areas {
        let layer = add_layer(&mut d, layer_name("a", &a.id));
        let mut poly = LwPolyline::default();
        poly.set_is_closed(true);
        poly.vertices =
            a.polygon.iter().map(|p| dxf::LwPolylineVertex { x: p[0], y: p[1], ..Default::default() }).collect();
        add(&mut d, layer, EntityType::LwPolyline(poly), a.height_m);
    }
    let mut out = Vec::new();
    // Writing into memory cannot fail for I/O reasons; the writer's other
    // errors concern entities this function never makes.
    let _ = d.save(&mut out);
    out
}

/// The header the export starts from. The `dxf` crate's own default
/// header stamps the clock's date and random GUIDs; reading these fixed
/// values instead makes the export a function of the site alone (the
/// same bytes each time). Dates are 2000-01-01 12:00 (Julian day
/// 2451545.0); the GUIDs are all zero.
const HEADER_TEMPLATE: &str = "  0\nSECTION\n  2\nHEADER\n  9\n$ACADVER\n  1\nAC1027\n\
  9\n$TDCREATE\n 40\n2451545.0\n  9\n$TDUCREATE\n 40\n2451545.0\n\
  9\n$TDUPDATE\n 40\n2451545.0\n  9\n$TDUUPDATE\n 40\n2451545.0\n\
  9\n$FINGERPRINTGUID\n  2\n{00000000-0000-0000-0000-000000000000}\n\
  9\n$VERSIONGUID\n  2\n{00000000-0000-0000-0000-000000000000}\n\
  0\nENDSEC\n  0\nEOF\n";

fn add_layer(d: &mut Drawing, name: String) -> String {
    d.add_layer(Layer { name: name.clone(), ..Default::default() });
    name
}

fn add(d: &mut Drawing, layer: String, specific: EntityType, elevation: f64) {
    let mut e = Entity::new(specific);
    e.common.layer = layer;
    e.common.elevation = elevation;
    d.add_entity(e);
}
