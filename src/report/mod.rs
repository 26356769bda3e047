//! Renderers: pure functions from results to text, SVG, CSV and GeoJSON.
//! No I/O here; the CLI and the HTTP layer write what these return.

pub mod contour;
pub mod csv;
pub mod geo;
pub mod geojson;
pub mod palette;
pub mod svg;
pub mod text;
