//! Local frame → WGS 84 longitude and latitude by the geodesic direct
//! problem.
//!
//! The site frame is read as an azimuthal equidistant frame centred at the
//! georeference origin: a local point (x east-ish, y north-ish, metres) lies
//! at the distance √(x² + y²) from the origin along the geodesic that leaves
//! it at the azimuth `y_axis_bearing + atan2(x, y)` (clockwise from true
//! north). The destination is the geodesic direct solution on WGS 84
//! (C. F. F. Karney, "Algorithms for geodesics", J. Geodesy 87:43–55, 2013)
//! computed by the `geographiclib-rs` crate, a Rust port of GeographicLib.
//!
//! Why this and not a transverse Mercator projection at the site: a site
//! plan is drawn from the origin with tape and bearings, so keeping the
//! distance and the bearing from the origin exact is the natural reading;
//! the maintained crate solves exactly this problem (to about 15 nm,
//! Karney 2013), so no projection series of our own is needed; and both
//! readings differ by millimetres at site scale anyway: between two points
//! other than the origin the azimuthal equidistant frame stretches
//! distances across the radius by at most ρ²/(6R²) (4 × 10⁻⁷, 4 mm over 10
//! km, at ρ = 10 km from the origin; R ≈ 6371 km).
//!
//! Accuracy against GeographicLib (Python 2.1, `Geodesic.WGS84.Direct`):
//! the fixtures in tests/conformance/geographiclib/ agree within 1 µm up to
//! 10 km from the origin at latitudes 0–70° in both hemispheres. Since the
//! algorithm is the same, that test checks the crate and our frame
//! conversion (axis order, bearing sign, azimuth), not the method itself.

use crate::site::wire::GeoreferenceDoc;
use geographiclib_rs::{DirectGeodesic, Geodesic};

/// How the export converts coordinates, stated in a georeferenced GeoJSON
/// (`coordinate_conversion`).
pub const CONVERSION: &str = "site (x, y) m to WGS 84 by the geodesic direct solution from the georeference origin: distance sqrt(x² + y²), azimuth y_axis_bearing_deg + atan2(x, y); within 1 cm of GeographicLib up to 10 km from the origin at latitudes 0–70°";

/// Azimuth of local point (x, y) seen from the origin, degrees clockwise
/// from true north: the bearing of the frame's +y axis plus the point's
/// angle from +y towards +x.
fn azimuth_deg(g: &GeoreferenceDoc, x_m: f64, y_m: f64) -> f64 {
    g.y_axis_bearing_deg + x_m.atan2(y_m).to_degrees()
}

/// `[longitude, latitude]` in degrees (WGS 84) of local point (x, y) metres.
/// Longitude is in [−180°, 180°]; the origin maps to itself.
pub fn to_lon_lat(g: &GeoreferenceDoc, x_m: f64, y_m: f64) -> [f64; 2] {
    let distance_m = x_m.hypot(y_m);
    if distance_m == 0.0 {
        return [g.origin_lon_deg, g.origin_lat_deg];
    }
    let (lat, lon): (f64, f64) =
        Geodesic::wgs84().direct(g.origin_lat_deg, g.origin_lon_deg, azimuth_deg(g, x_m, y_m), distance_m);
    [lon, lat]
}

/// Local point `(x, y)` metres of a WGS 84 `longitude, latitude` (degrees):
/// the inverse of [`to_lon_lat`], by the geodesic inverse problem from the
/// georeference origin (Karney 2013, same crate). The distance s and the
/// azimuth α at the origin give x = s·sin(α − bearing), y = s·cos(α −
/// bearing). Round trips through [`to_lon_lat`] agree to nanometres at site
/// scale (both solutions are accurate to about 15 nm, Karney 2013 §9).
pub fn from_lon_lat(g: &GeoreferenceDoc, lon_deg: f64, lat_deg: f64) -> [f64; 2] {
    use geographiclib_rs::InverseGeodesic;
    let (distance_m, azi1_deg, _azi2, _a12): (f64, f64, f64, f64) =
        Geodesic::wgs84().inverse(g.origin_lat_deg, g.origin_lon_deg, lat_deg, lon_deg);
    let angle = (azi1_deg - g.y_axis_bearing_deg).to_radians();
    [distance_m * angle.sin(), distance_m * angle.cos()]
}
