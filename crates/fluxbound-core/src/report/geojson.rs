//! GeoJSON (RFC 7946) of conductors, positions, contour lines and zone
//! polygons (clipped exactly to each area's polygon and closed along it).
//! With a georeference the coordinates are WGS 84 longitude and
//! latitude (see `geo.rs` for the conversion and its accuracy, stated in
//! the `coordinate_conversion` member); without
//! one they stay in the site's local frame in metres, which the
//! FeatureCollection says in its `coordinate_frame` member (RFC 7946 §4
//! allows another frame only by prior arrangement between the parties).

use super::contour;
use super::geo::to_lon_lat;
use crate::assess::{AreaMap, Assessment};
use crate::cautions::cautions;
use crate::site::Site;
use serde_json::{Value, json};

struct Frame<'a>(&'a Site);

impl Frame<'_> {
    fn xy(&self, x: f64, y: f64) -> Vec<f64> {
        match &self.0.georeference() {
            Some(g) => to_lon_lat(g, x, y).to_vec(),
            None => vec![x, y],
        }
    }
    fn xyz(&self, x: f64, y: f64, z: f64) -> Vec<f64> {
        let mut v = self.xy(x, y);
        v.push(z);
        v
    }
}

/// The GeoJSON document of an assessment and the maps of its areas.
pub fn assessment_geojson(site: &Site, a: &Assessment, maps: &[AreaMap]) -> Value {
    let f = Frame(site);
    let mut features = Vec::new();
    // A bar once, along its axis.
    for c in crate::site::bar::drawn(site.conductors()) {
        features.push(json!({
            "type": "Feature",
            "geometry": {"type": "LineString", "coordinates": c.path.iter().map(|p| f.xyz(p.x, p.y, p.z)).collect::<Vec<_>>()},
            "properties": {"kind": "conductor", "id": c.id, "radius_m": c.radius_m}
        }));
    }
    for (q, r) in site.positions().iter().zip(&a.positions) {
        let (x, y, z) = match &q.placement {
            crate::site::Placement::Standing { x_m, y_m, .. } => (*x_m, *y_m, r.max_height_m.unwrap_or(0.0)),
            crate::site::Placement::Point(p) => (p.x, p.y, p.z),
        };
        features.push(json!({
            "type": "Feature",
            "geometry": {"type": "Point", "coordinates": f.xyz(x, y, z)},
            "properties": {"kind": "position", "id": q.id, "verdict": r.verdict, "max_resultant_ut": r.max_resultant_ut}
        }));
    }
    for m in maps {
        for t in &m.tables {
            let Some(ratio) = t.ratio.iter().copied().collect::<Option<Vec<f64>>>() else { continue };
            for (what, level) in [("level", 1.0), ("review", a.review_fraction)] {
                let lines = contour::clipped_isolines(&m.grid, &ratio, &m.inside_conductor, level, &m.polygon);
                let coords: Vec<Vec<Vec<f64>>> =
                    lines.iter().map(|l| l.points.iter().map(|p| f.xy(p[0], p[1])).collect()).collect();
                let b_ut = t.level_ut.map(|l| l * level);
                features.push(json!({
                    "type": "Feature",
                    "geometry": {"type": "MultiLineString", "coordinates": coords},
                    "properties": {"kind": "contour", "area": m.area_id, "height_m": m.height_m, "table_id": t.table_id,
                                   "threshold": what, "ratio": level, "b_ut": b_ut}
                }));
                let zones = contour::clipped_zones(&m.grid, &ratio, &m.inside_conductor, level, &m.polygon);
                let zcoords: Vec<Vec<Vec<Vec<f64>>>> = zones
                    .iter()
                    .map(|poly| poly.iter().map(|ring| ring.iter().map(|p| f.xy(p[0], p[1])).collect()).collect())
                    .collect();
                features.push(json!({
                    "type": "Feature",
                    "geometry": {"type": "MultiPolygon", "coordinates": zcoords},
                    "properties": {"kind": "zone", "area": m.area_id, "height_m": m.height_m, "table_id": t.table_id,
                                   "threshold": what, "ratio": level, "b_ut": b_ut}
                }));
            }
        }
    }
    let mut doc = json!({
        "type": "FeatureCollection",
        "coordinate_frame": if site.georeference().is_some() { "wgs84-lon-lat" } else { "site-local-metres" },
        "load_case": a.load_case.kind,
        "cautions": cautions(),
        "provenance": a.provenance,
        "load_case_currents": a.load_case,
        "tables": a.tables,
        "features": features,
    });
    if site.georeference().is_some() {
        // Says how longitude and latitude were made (see `geo.rs`).
        doc["coordinate_conversion"] = json!(super::geo::CONVERSION);
    }
    doc
}
