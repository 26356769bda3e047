//! Renderers: pure functions from results to text, SVG, CSV and GeoJSON.
//! No I/O here; the CLI and the HTTP layer write what these return.

pub mod contour;
pub mod csv;
pub mod geo;
pub mod geojson;
pub mod labels;
pub mod palette;
pub mod svg;
pub mod text;

/// The snake_case JSON name of a unit enum (body region, group, kind…).
pub(crate) fn snake<T: serde::Serialize>(v: &T) -> String {
    serde_json::to_value(v).ok().and_then(|j| j.as_str().map(str::to_string)).unwrap_or_default()
}
