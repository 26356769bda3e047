//! Local frame → WGS 84 longitude and latitude by a local tangent plane.
//!
//! The local (x, y) offset is rotated by the bearing of the frame's y axis
//! into east and north, then divided by the WGS 84 radii of curvature at the
//! origin: meridional M = a(1 − e²)/(1 − e² sin²φ)^{3/2} and prime vertical
//! N = a/(1 − e² sin²φ)^{1/2} (standard geodesy; e.g. NGA TR8350.2).
//! Accuracy: the neglected curvature terms grow as d²·tan φ / R; against a
//! geodesic reference the position error stays below 0.25 m within 1 km of
//! the origin and below 1 m within 3 km, for latitudes up to 60°
//! (tests/core/report checks this against GeographicLib). Use a proper
//! projection beyond a few kilometres.

use crate::site::wire::GeoreferenceDoc;

const A_M: f64 = 6_378_137.0;
const F: f64 = 1.0 / 298.257_223_563;

/// `[longitude, latitude]` in degrees of local point (x, y) metres.
pub fn to_lon_lat(g: &GeoreferenceDoc, x_m: f64, y_m: f64) -> [f64; 2] {
    let e2 = F * (2.0 - F);
    let phi = g.origin_lat_deg.to_radians();
    let w = (1.0 - e2 * phi.sin().powi(2)).sqrt();
    let (m, n) = (A_M * (1.0 - e2) / (w * w * w), A_M / w);
    let th = g.y_axis_bearing_deg.to_radians();
    let east = x_m * th.cos() + y_m * th.sin();
    let north = -x_m * th.sin() + y_m * th.cos();
    let lat = g.origin_lat_deg + (north / m).to_degrees();
    let lon = g.origin_lon_deg + (east / (n * phi.cos())).to_degrees();
    [lon, lat]
}
