//! Distance along a ray at which the resultant field falls below a level,
//! on the exact (closed-form) field: march outward with growing steps until
//! the field is below the level, then bisect the bracket.
//!
//! The result is the *first* crossing along the ray: the field may rise
//! again farther out (another conductor), which the marching steps would
//! find only if it lies beyond the first crossing. Points inside a conductor
//! count as above any level.

use crate::field::{self, Excitation, Filaments};
use crate::site::{CircuitLoad, Site};
use nalgebra::{Point3, Unit, Vector3};
use serde::{Deserialize, Serialize};

/// Bisection stops when the bracket is this narrow, m (or 1e-6 of the
/// distance, whichever is larger).
pub const DISTANCE_TOLERANCE_M: f64 = 1.0e-4;
/// Farthest distance searched, m.
pub const MAX_RANGE_M: f64 = 10_000.0;
/// Angular step of the search for the shortest horizontal distance.
const SHORTEST_STEP_DEG: f64 = 5.0;

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Direction {
    /// Along this direction (normalised).
    Along(Unit<Vector3<f64>>),
    /// The shortest over horizontal directions in 5° steps and straight up
    /// (not down, into the ground); the true minimum may be up to
    /// 1 − cos 2.5° ≈ 0.1 % shorter.
    Shortest,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct DistanceResult {
    /// The level, µT RMS (resultant).
    pub level_ut: f64,
    /// Origin of the search `[x, y, z]`, m.
    pub from: [f64; 3],
    /// Resultant at the origin, µT (`null` inside a conductor).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub b_at_origin_ut: Option<f64>,
    /// Unit direction searched (for `shortest`, the one that won).
    pub direction: [f64; 3],
    /// Distance at which the field first falls below the level, m; 0 if it
    /// already is below at the origin; `null` if not within `searched_to_m`.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub distance_m: Option<f64>,
    /// The point at that distance.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub at: Option<[f64; 3]>,
    /// Bisection tolerance, m.
    pub tolerance_m: f64,
    /// Farthest distance searched, m.
    pub searched_to_m: f64,
}

struct Probe<'a> {
    filaments: Filaments,
    excitation: &'a Excitation,
}

impl Probe<'_> {
    /// Resultant at `p`, µT; +∞ inside a conductor.
    fn b_ut(&self, p: Point3<f64>) -> f64 {
        let set = field::evaluate(&self.filaments, std::slice::from_ref(&p), self.excitation);
        if set.inside_of(0).next().is_some() { f64::INFINITY } else { field::total_resultant_ut(set.at(0)) }
    }

    /// First crossing along `dir`; `b_from` is the field at `from`
    /// (computed once for all directions).
    fn along(&self, from: Point3<f64>, b_from: f64, dir: Unit<Vector3<f64>>, level: f64) -> Option<f64> {
        if b_from < level {
            return Some(0.0);
        }
        let (mut lo, mut s) = (0.0, 0.005);
        while s <= MAX_RANGE_M {
            if self.b_ut(from + dir.into_inner() * s) < level {
                let mut hi = s;
                while hi - lo > DISTANCE_TOLERANCE_M.max(1e-6 * hi) {
                    let mid = 0.5 * (lo + hi);
                    if self.b_ut(from + dir.into_inner() * mid) < level { hi = mid } else { lo = mid }
                }
                return Some(hi);
            }
            lo = s;
            s = (s * 1.02).max(s + 0.005);
        }
        None
    }
}

/// Distance from `from` to where the resultant field of `site` at `loads`
/// falls below `level_ut`.
pub fn distance_to_level(
    site: &Site,
    loads: &[CircuitLoad],
    from: Point3<f64>,
    direction: Direction,
    level_ut: f64,
) -> DistanceResult {
    let excitation = site.excitation_at(loads);
    let probe = Probe { filaments: crate::site::filaments(site.conductors()), excitation: &excitation };
    let b0 = probe.b_ut(from);
    let candidates: Vec<Unit<Vector3<f64>>> = match direction {
        Direction::Along(d) => vec![d],
        Direction::Shortest => {
            let n = (360.0 / SHORTEST_STEP_DEG) as usize;
            (0..n)
                .map(|k| {
                    let a = (k as f64 * SHORTEST_STEP_DEG).to_radians();
                    Unit::new_normalize(Vector3::new(a.cos(), a.sin(), 0.0))
                })
                // Straight up too; not down, which would leave the ground.
                .chain([Vector3::z_axis()])
                .collect()
        }
    };
    let best = candidates
        .iter()
        .map(|d| (*d, probe.along(from, b0, *d, level_ut)))
        .min_by(|a, b| a.1.unwrap_or(f64::INFINITY).total_cmp(&b.1.unwrap_or(f64::INFINITY)))
        .expect("at least one direction");
    let (dir, distance) = best;
    DistanceResult {
        level_ut,
        from: [from.x, from.y, from.z],
        b_at_origin_ut: b0.is_finite().then_some(b0),
        direction: [dir.x, dir.y, dir.z],
        distance_m: distance,
        at: distance.map(|s| {
            let p = from + dir.into_inner() * s;
            [p.x, p.y, p.z]
        }),
        tolerance_m: DISTANCE_TOLERANCE_M,
        searched_to_m: MAX_RANGE_M,
    }
}

/// Where a distance is measured from.
#[derive(Debug, Clone, PartialEq)]
pub enum Origin {
    /// A position: its point, or for a standing point the height with the
    /// highest field.
    Position(String),
    /// A conductor: the middle of its longest segment (on its axis).
    Conductor(String),
    Point(Point3<f64>),
}

impl Origin {
    /// Parses `position:ID`, `conductor:ID` or `point:x,y,z`.
    pub fn parse(s: &str) -> Result<Origin, String> {
        let (kind, rest) = s.split_once(':').ok_or("use position:ID, conductor:ID or point:x,y,z")?;
        match kind {
            "position" => Ok(Origin::Position(rest.to_string())),
            "conductor" => Ok(Origin::Conductor(rest.to_string())),
            "point" => {
                let v: Vec<f64> = rest
                    .split(',')
                    .map(|x| x.trim().parse::<f64>())
                    .collect::<Result<_, _>>()
                    .map_err(|_| "point needs three numbers x,y,z")?;
                match v.as_slice() {
                    [x, y, z] if v.iter().all(|c| c.is_finite() && c.abs() <= crate::site::COORDINATE_LIMIT_M) => {
                        Ok(Origin::Point(Point3::new(*x, *y, *z)))
                    }
                    _ => Err("point needs three finite numbers x,y,z within ±100 km".into()),
                }
            }
            _ => Err("use position:ID, conductor:ID or point:x,y,z".into()),
        }
    }

    /// The 3-D point this origin stands for in `site` at `loads`.
    pub fn locate(&self, site: &Site, loads: &[CircuitLoad]) -> Result<Point3<f64>, String> {
        match self {
            Origin::Point(p) => Ok(*p),
            Origin::Conductor(id) => {
                let c = site
                    .conductors()
                    .iter()
                    .find(|c| &c.id == id)
                    .ok_or_else(|| format!("unknown conductor '{id}'"))?;
                let seg = c
                    .path
                    .windows(2)
                    .max_by(|a, b| (a[1] - a[0]).norm().total_cmp(&(b[1] - b[0]).norm()))
                    .ok_or("conductor has no segment")?;
                Ok(nalgebra::center(&seg[0], &seg[1]))
            }
            Origin::Position(id) => {
                let q =
                    site.positions().iter().find(|q| &q.id == id).ok_or_else(|| format!("unknown position '{id}'"))?;
                match &q.placement {
                    crate::site::Placement::Point(p) => Ok(*p),
                    crate::site::Placement::Standing { x_m, y_m, heights_m } => {
                        let excitation = site.excitation_at(loads);
                        let fil = crate::site::filaments(site.conductors());
                        let pts: Vec<Point3<f64>> = heights_m.iter().map(|h| Point3::new(*x_m, *y_m, *h)).collect();
                        let set = field::evaluate(&fil, &pts, &excitation);
                        let best = (0..pts.len())
                            .max_by(|a, b| {
                                field::total_resultant_ut(set.at(*a)).total_cmp(&field::total_resultant_ut(set.at(*b)))
                            })
                            .ok_or("position has no heights")?;
                        Ok(pts[best])
                    }
                }
            }
        }
    }
}

/// Parses a direction: `shortest` or `x,y,z` (normalised; not zero).
pub fn parse_direction(s: &str) -> Result<Direction, String> {
    if s == "shortest" {
        return Ok(Direction::Shortest);
    }
    let v: Vec<f64> = s
        .split(',')
        .map(|x| x.trim().parse::<f64>())
        .collect::<Result<_, _>>()
        .map_err(|_| "direction is shortest or x,y,z")?;
    match v.as_slice() {
        [x, y, z] if v.iter().all(|c| c.is_finite()) && (x * x + y * y + z * z) > 1e-12 => {
            Ok(Direction::Along(Unit::new_normalize(Vector3::new(*x, *y, *z))))
        }
        _ => Err("direction is shortest or three finite numbers x,y,z, not all zero".into()),
    }
}
