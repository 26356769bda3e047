//! Distances along rays at which the field falls below a µT level or a
//! table's exposure ratio falls below 1, proven by bounds (see
//! [`super::ray`] and [`crate::field::bound`]) rather than sampled.
//!
//! Along each ray two distances are reported: the *first crossing* (the
//! first point below the threshold) and the *clearance* (beyond it the
//! quantity stays below up to the searched range). They differ where the
//! ray passes a null (between conductors) and the field rises again.
//! Points inside a conductor count as above every threshold.

use super::ray::{self, Nearness, Ray, RayOutcome, Segment, Stopped};
use crate::assess::{exposure_ratio, line_levels};
use crate::cancel::Cancel;
use crate::field::{self, Excitation, FieldPhasor, Filaments};
use crate::limits::ReferenceTable;
use crate::site::{CircuitLoad, Site};
use nalgebra::{Point3, Unit, Vector3};
use serde::{Deserialize, Serialize};

/// Reporting tolerance of both distances, m: each is found to within the
/// search's resolution ([`ray::RESOLUTION_M`]), well inside this.
pub const DISTANCE_TOLERANCE_M: f64 = 1.0e-4;
/// Farthest distance searched, m.
pub const MAX_RANGE_M: f64 = 10_000.0;
/// Angular step of the search for the shortest clearance, degrees.
pub const SHORTEST_STEP_DEG: f64 = 5.0;
/// Directions closer than this to the axis of a conductor segment whose
/// axis the origin lies on are not searched for `shortest`, degrees.
pub const AXIS_EXCLUSION_DEG: f64 = 10.0;
/// Fewest probes a ray's search can take (two depth-first descents of
/// about log2(range / resolution) = 30 halvings): the budget check before
/// any work.
const MIN_PROBES_PER_RAY: u64 = 60;
/// Segment–point pairs one probe costs: the field and the bounds each visit
/// every segment once.
const PAIRS_PER_PROBE_PER_SEGMENT: u64 = 2;

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Direction {
    /// Along this direction (normalised).
    Along(Unit<Vector3<f64>>),
    /// The smallest clearance over horizontal directions in 5° steps and
    /// straight up (not down, into the ground).
    Shortest,
}

/// What the distance is to.
#[derive(Debug, Clone, PartialEq)]
pub enum Target {
    /// A level of the resultant over all frequencies (quadrature sum), µT RMS.
    LevelUt(f64),
    /// A table: its exposure ratio Σ_f B_f / B_RL(f) reaching 1.
    Table(ReferenceTable),
}

/// The quantity compared along the rays.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum DistanceQuantity {
    /// The resultant over all frequencies, µT RMS, against `level_ut`.
    ResultantUt,
    /// A table's exposure ratio Σ_f B_f / B_RL(f), against 1.
    ExposureRatio,
}

/// The table a distance was measured to.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct DistanceTable {
    pub id: String,
    pub version: u32,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct DistanceResult {
    /// The level, µT RMS (resultant over all frequencies); `null` when the
    /// distance is to a table (see `table`).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub level_ut: Option<f64>,
    /// Origin of the search `[x, y, z]`, m.
    pub from: [f64; 3],
    /// Resultant at the origin, µT (`null` inside a conductor).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub b_at_origin_ut: Option<f64>,
    /// Unit direction of `distance_m` (for `shortest`, the direction with
    /// the smallest first crossing).
    pub direction: [f64; 3],
    /// First crossing: distance at which the quantity first falls below the
    /// threshold along `direction`, m; 0 if it already is below at the
    /// origin; `null` if not within `searched_to_m`. It may rise again
    /// farther out: see `clearance_m`.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub distance_m: Option<f64>,
    /// The point at that distance.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub at: Option<[f64; 3]>,
    /// Where the bounds settle the field, both distances are within this of
    /// the true ones, on the long side, m. Where the field stays within the
    /// bounds' margin of the threshold they can be longer: the clearance's
    /// proven range is from `clearance_sampled_above_m` to `clearance_m`.
    pub tolerance_m: f64,
    /// Farthest distance searched, m.
    pub searched_to_m: f64,
    /// What was compared: the resultant against `level_ut`, or a table's
    /// exposure ratio against 1.
    pub quantity: DistanceQuantity,
    /// The table, when the distance is to a table's exposure ratio 1.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub table: Option<DistanceTable>,
    /// The table's exposure ratio at the origin (`null` for a level, or
    /// inside a conductor).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub ratio_at_origin: Option<f64>,
    /// Clearance: the distance along `clearance_direction` beyond which the
    /// quantity stays below the threshold up to `searched_to_m`, m; 0 if it
    /// is below along the whole ray; `null` if it is not (proven) below at
    /// the end of the searched range. For `shortest`, the smallest over the
    /// directions searched.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub clearance_m: Option<f64>,
    /// The point at the clearance.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub clearance_at: Option<[f64; 3]>,
    /// Unit direction of the clearance.
    pub clearance_direction: [f64; 3],
    /// First crossing along `clearance_direction`, m (`null` if none).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub clearance_direction_first_crossing_m: Option<f64>,
    /// The farthest point along `clearance_direction` found at or above the
    /// threshold, m: the true clearance lies between this and `clearance_m`
    /// (`null` when none was found, e.g. below along the whole ray).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub clearance_sampled_above_m: Option<f64>,
    /// Directions searched (1 unless `shortest`).
    pub directions_searched: usize,
    /// Segment–point pairs the search used (its compute budget's unit).
    pub pairs_used: u64,
    /// The answer in words: what was proven, what could not be found, how
    /// `shortest` samples directions and what it is not.
    pub notes: Vec<String>,
}

/// Why a distance could not be given.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum DistanceError {
    /// The budget of segment–point pairs is too small for the search.
    #[error("the search needs more than {budget} segment-point pairs")]
    OverBudget { budget: u64, started: bool },
    /// The site has current at frequencies the table does not cover.
    #[error("the table does not cover {0:?} Hz")]
    NotCovered(Vec<f64>),
    /// The meter's cancellation flag was set: no result.
    #[error("the search was cancelled")]
    Cancelled,
}

/// The field of a site at a load, and the quantity searched: samples it at
/// points and bounds it over stretches of a ray.
pub struct Meter<'a> {
    filaments: Filaments,
    excitation: Excitation,
    segments: Vec<Segment>,
    /// `|I|` per spectral line, per conductor, A RMS.
    currents_a: Vec<Vec<f64>>,
    target: &'a Target,
    /// The table's level per spectral line (tables only).
    levels_ut: Vec<Option<f64>>,
    /// Looked at before every probe ([`Meter::stopped_by`]).
    cancel: Cancel,
}

/// The field at one point.
pub(super) struct Sample {
    /// Resultant per spectral line, µT; `None` inside a conductor.
    pub per_line_ut: Option<Vec<f64>>,
    pub below: bool,
}

impl<'a> Meter<'a> {
    /// The meter of `site` at `loads`; a table must cover every frequency
    /// that carries current.
    pub fn new(site: &Site, loads: &[CircuitLoad], target: &'a Target) -> Result<Meter<'a>, DistanceError> {
        let excitation = site.excitation_at(loads);
        let currents_a: Vec<Vec<f64>> =
            excitation.lines.iter().map(|l| l.currents_a.iter().map(|c| c.norm()).collect()).collect();
        let levels_ut = match target {
            Target::LevelUt(_) => Vec::new(),
            Target::Table(t) => {
                let hz: Vec<f64> = excitation.lines.iter().map(|l| l.frequency_hz).collect();
                let levels = line_levels(t, &hz);
                let uncovered: Vec<f64> = levels
                    .iter()
                    .zip(&excitation.lines)
                    .zip(&currents_a)
                    .filter(|((lv, _), i)| lv.is_none() && i.iter().any(|x| *x > 0.0))
                    .map(|((_, l), _)| l.frequency_hz)
                    .collect();
                if !uncovered.is_empty() {
                    return Err(DistanceError::NotCovered(uncovered));
                }
                levels
            }
        };
        let segments = site
            .conductors()
            .iter()
            .enumerate()
            .flat_map(|(k, c)| {
                c.path.windows(2).map(move |w| Segment { a: w[0], b: w[1], conductor: k, radius_m: c.radius_m })
            })
            .collect();
        let filaments = crate::site::filaments(site.conductors());
        Ok(Meter { filaments, excitation, segments, currents_a, target, levels_ut, cancel: Cancel::never() })
    }

    /// This meter, stopping every search with [`DistanceError::Cancelled`]
    /// at its next probe once `cancel` is set.
    pub fn stopped_by(self, cancel: &Cancel) -> Meter<'a> {
        Meter { cancel: cancel.clone(), ..self }
    }

    /// The threshold the quantity is compared with: the level in µT, or 1.
    pub fn threshold(&self) -> f64 {
        match self.target {
            Target::LevelUt(l) => *l,
            Target::Table(_) => 1.0,
        }
    }

    /// The quantity from per-line resultants (µT): the quadrature sum, or
    /// the exposure ratio (the one rule, [`exposure_ratio`]). Monotone in
    /// every line, so bounds of the lines bound it.
    pub fn quantity(&self, per_line_ut: &[f64]) -> f64 {
        match self.target {
            Target::LevelUt(_) => per_line_ut.iter().map(|b| b * b).sum::<f64>().sqrt(),
            // Uncovered lines carry no current (checked in `new`): no field.
            Target::Table(_) => exposure_ratio(per_line_ut.iter().copied(), &self.levels_ut).unwrap_or(f64::INFINITY),
        }
    }

    /// Per-line resultants at `p`, µT; `None` inside a conductor.
    pub fn per_line_ut(&self, p: &Point3<f64>) -> Option<Vec<f64>> {
        let set = field::evaluate(&self.filaments, std::slice::from_ref(p), &self.excitation);
        if set.inside_of(0).next().is_some() {
            return None;
        }
        Some(set.at(0).iter().map(field::resultant_ut).collect())
    }

    /// Phasors at `p` (for the resultant at the origin).
    fn phasors(&self, p: &Point3<f64>) -> Option<Vec<FieldPhasor>> {
        let set = field::evaluate(&self.filaments, std::slice::from_ref(p), &self.excitation);
        set.inside_of(0).next().is_none().then(|| set.at(0).to_vec())
    }

    /// Counts one probe against the budget; looks at the flag first.
    fn charge(&self, spent: &mut u64, budget: u64) -> Result<(), Stopped> {
        if self.cancel.is_cancelled() {
            return Err(Stopped::Cancelled);
        }
        *spent = spent.saturating_add(PAIRS_PER_PROBE_PER_SEGMENT * self.segments.len() as u64);
        if *spent > budget { Err(Stopped::OutOfBudget) } else { Ok(()) }
    }

    pub(super) fn sample(&self, p: &Point3<f64>, spent: &mut u64, budget: u64) -> Result<Sample, Stopped> {
        self.charge(spent, budget)?;
        let per_line_ut = self.per_line_ut(p);
        let below = per_line_ut.as_ref().is_some_and(|l| self.quantity(l) < self.threshold());
        Ok(Sample { per_line_ut, below })
    }

    pub(super) fn below_at(&self, p: &Point3<f64>, spent: &mut u64, budget: u64) -> Result<bool, Stopped> {
        Ok(self.sample(p, spent, budget)?.below)
    }

    pub(super) fn nearness(&self, pa: &Point3<f64>, pb: &Point3<f64>) -> Nearness {
        ray::nearness(&self.segments, pa, pb)
    }

    /// Upper and lower bounds of the quantity over an interval.
    pub(super) fn bounds(&self, mid_ut: &[f64], near: &Nearness, half_m: f64) -> (f64, f64) {
        let (upper, lower) = ray::line_bounds(&self.segments, &self.currents_a, mid_ut, near, half_m);
        (self.quantity(&upper), self.quantity(&lower))
    }

    fn segment_count(&self) -> u64 {
        self.segments.len() as u64
    }
}

/// Directions of a search, and the notes on those left out.
fn directions(
    meter: &Meter,
    site: &Site,
    from: &Point3<f64>,
    direction: Direction,
) -> (Vec<Unit<Vector3<f64>>>, Vec<String>) {
    match direction {
        Direction::Along(d) => {
            // The caller's own choice is searched; say when it is an axis.
            let notes = axes_through(meter, site, from)
                .iter()
                .find(|(_, t)| d.dot(t).abs() > AXIS_EXCLUSION_DEG.to_radians().cos())
                .map(|(id, _)| {
                    format!(
                        "This direction runs within {AXIS_EXCLUSION_DEG}° of the axis of conductor '{id}', which the \
                         origin lies on: past an open end the thin-wire model gives zero field along a conductor's own \
                         axis, an artefact of a conductor that ends in free space; `shortest` leaves such directions out."
                    )
                })
                .into_iter()
                .collect();
            (vec![d], notes)
        }
        Direction::Shortest => {
            let n = (360.0 / SHORTEST_STEP_DEG).round() as usize;
            let all = (0..n)
                .map(|k| {
                    let a = (k as f64 * SHORTEST_STEP_DEG).to_radians();
                    Unit::new_normalize(Vector3::new(a.cos(), a.sin(), 0.0))
                })
                // Straight up too; not down, which would leave the ground.
                .chain([Vector3::z_axis()]);
            let axes = axes_through(meter, site, from);
            let mut kept = Vec::new();
            let mut excluded = std::collections::BTreeSet::new();
            for d in all {
                match axes.iter().find(|(_, t)| d.dot(t).abs() > AXIS_EXCLUSION_DEG.to_radians().cos()) {
                    Some((id, _)) => {
                        excluded.insert(id.clone());
                    }
                    None => kept.push(d),
                }
            }
            let notes = excluded
                .into_iter()
                .map(|id| {
                    format!(
                        "Directions within {AXIS_EXCLUSION_DEG}° of the axis of conductor '{id}' were not searched: the \
                         origin lies on that axis, and along a conductor's own axis past an open end the thin-wire \
                         model gives zero field, an artefact of a conductor that ends in free space."
                    )
                })
                .collect();
            (kept, notes)
        }
    }
}

/// Conductor ids and unit axes of the segments whose axis line passes
/// within the conductor's radius of `from`.
fn axes_through(meter: &Meter, site: &Site, from: &Point3<f64>) -> Vec<(String, Vector3<f64>)> {
    meter
        .segments
        .iter()
        .filter_map(|s| {
            let t = (s.b - s.a).try_normalize(0.0)?;
            let off_axis = (from - s.a).cross(&t).norm();
            (off_axis < s.radius_m).then(|| (site.conductors()[s.conductor].id.clone(), t))
        })
        .collect()
}

/// One direction's outcome.
struct Searched {
    dir: Unit<Vector3<f64>>,
    outcome: RayOutcome,
}

/// Distances from `from` to where the quantity of `target` falls below its
/// threshold, within `budget_pairs` segment–point pairs.
pub fn distance(
    site: &Site,
    loads: &[CircuitLoad],
    from: Point3<f64>,
    direction: Direction,
    target: &Target,
    budget_pairs: u64,
) -> Result<DistanceResult, DistanceError> {
    let meter = Meter::new(site, loads, target)?;
    distance_with(&meter, site, from, direction, budget_pairs)
}

/// [`distance`] with a meter already built.
pub fn distance_with(
    meter: &Meter,
    site: &Site,
    from: Point3<f64>,
    direction: Direction,
    budget_pairs: u64,
) -> Result<DistanceResult, DistanceError> {
    let (dirs, mut notes) = directions(meter, site, &from, direction);
    let least = (dirs.len() as u64)
        .saturating_mul(meter.segment_count())
        .saturating_mul(MIN_PROBES_PER_RAY * PAIRS_PER_PROBE_PER_SEGMENT);
    if least > budget_pairs {
        return Err(DistanceError::OverBudget { budget: budget_pairs, started: false });
    }
    let mut spent = 0u64;
    let mut searched = Vec::with_capacity(dirs.len());
    for dir in dirs {
        let ray = Ray { meter, from, dir, range_m: MAX_RANGE_M };
        let outcome = ray.search(&mut spent, budget_pairs).map_err(|e| match e {
            Stopped::OutOfBudget => DistanceError::OverBudget { budget: budget_pairs, started: true },
            Stopped::Cancelled => DistanceError::Cancelled,
        })?;
        searched.push(Searched { dir, outcome });
    }
    let shortest = matches!(direction, Direction::Shortest);
    Ok(assemble(meter, from, &searched, spent, shortest, &mut notes))
}

fn point_at(from: Point3<f64>, dir: &Unit<Vector3<f64>>, s: Option<f64>) -> Option<[f64; 3]> {
    s.map(|s| {
        let p = from + dir.into_inner() * s;
        [p.x, p.y, p.z]
    })
}

fn least_by(searched: &[Searched], key: impl Fn(&RayOutcome) -> Option<f64>) -> &Searched {
    searched
        .iter()
        .min_by(|a, b| key(&a.outcome).unwrap_or(f64::INFINITY).total_cmp(&key(&b.outcome).unwrap_or(f64::INFINITY)))
        .expect("at least one direction is searched")
}

fn assemble(
    meter: &Meter,
    from: Point3<f64>,
    searched: &[Searched],
    pairs_used: u64,
    shortest: bool,
    notes: &mut Vec<String>,
) -> DistanceResult {
    let first = least_by(searched, |o| o.first_below_m);
    let clear = least_by(searched, |o| o.clearance_m);
    let origin = meter.phasors(&from);
    let b0 = origin.as_ref().map(|p| field::total_resultant_ut(p));
    let (level_ut, table, quantity) = match meter.target {
        Target::LevelUt(l) => (Some(*l), None, DistanceQuantity::ResultantUt),
        Target::Table(t) => (
            None,
            Some(DistanceTable { id: t.id().to_string(), version: t.version() }),
            DistanceQuantity::ExposureRatio,
        ),
    };
    let ratio_at_origin = match meter.target {
        Target::LevelUt(_) => None,
        Target::Table(_) => origin.map(|p| meter.quantity(&p.iter().map(field::resultant_ut).collect::<Vec<_>>())),
    };
    let mut words = describe(meter, first, clear, shortest, searched.len());
    words.append(notes);
    DistanceResult {
        level_ut,
        from: [from.x, from.y, from.z],
        b_at_origin_ut: b0,
        direction: [first.dir.x, first.dir.y, first.dir.z],
        distance_m: first.outcome.first_below_m,
        at: point_at(from, &first.dir, first.outcome.first_below_m),
        tolerance_m: DISTANCE_TOLERANCE_M,
        searched_to_m: MAX_RANGE_M,
        quantity,
        table,
        ratio_at_origin,
        clearance_m: clear.outcome.clearance_m,
        clearance_at: point_at(from, &clear.dir, clear.outcome.clearance_m),
        clearance_direction: [clear.dir.x, clear.dir.y, clear.dir.z],
        clearance_direction_first_crossing_m: clear.outcome.first_below_m,
        clearance_sampled_above_m: clear.outcome.above_m,
        directions_searched: searched.len(),
        pairs_used,
        notes: words,
    }
}

/// The answer in words.
fn describe(meter: &Meter, first: &Searched, clear: &Searched, shortest: bool, count: usize) -> Vec<String> {
    let (subject, thr) = match meter.target {
        Target::LevelUt(l) => ("the field".to_string(), format!("{l} µT")),
        Target::Table(t) => (format!("the exposure ratio of table {}", t.id()), "1".to_string()),
    };
    let mut w = Vec::new();
    w.push(match clear.outcome.clearance_m {
        Some(c) => format!(
            "Clearance: beyond {c:.5} m along this ray {subject} stays below {thr} up to the end of the searched range ({MAX_RANGE_M} m)."
        ),
        None => format!(
            "Clearance: not found within {MAX_RANGE_M} m: {subject} is not proven below {thr} at the end of the searched range."
        ),
    });
    if let (Some(c), Some(a)) = (clear.outcome.clearance_m, clear.outcome.above_m)
        && c - a > DISTANCE_TOLERANCE_M
    {
        w.push(format!(
            "The clearance lies between {a:.5} m and {c:.5} m: in between {subject} stays so close to {thr} that the bounds cannot settle it, and the longer value is reported."
        ));
    }
    if !shortest || first.dir == clear.dir {
        match (first.outcome.first_below_m, first.outcome.clearance_m) {
            (None, _) => w.push(format!(
                "First crossing: not found within {MAX_RANGE_M} m: {subject} does not fall below {thr} along this ray."
            )),
            // A point at or above the threshold beyond the first crossing.
            (Some(f), _) if first.outcome.above_m.is_some_and(|a| f + DISTANCE_TOLERANCE_M < a) => w.push(format!(
                "First crossing at {f:.5} m, but farther out {subject} rises to {thr} again: it stays below only beyond the clearance."
            )),
            _ => {}
        }
    }
    w.push(format!(
        "Both distances are proven, not sampled: over every stretch of the ray the field of each conductor segment is bounded by 0.2·|I|/d µT and its rate of change by 0.4·|I|/d² µT/m (d the distance to the segment), per frequency, so no dip or re-rise is stepped over. Stretches narrower than {} m that the bounds cannot settle count as at or above the threshold, which can only lengthen a distance (tolerance {DISTANCE_TOLERANCE_M} m).",
        ray::RESOLUTION_M
    ));
    if shortest {
        w.push(format!(
            "Shortest: the smallest clearance over {count} sampled directions from the origin (horizontal every {SHORTEST_STEP_DEG}°, and straight up; not down into the ground). It is a distance along rays from the origin, not an exclusion zone: in other directions the field stays above the threshold farther out (the area maps' zones show where). Between sampled directions the smallest clearance could be smaller than reported."
        ));
    }
    w
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

    /// The 3-D point this origin stands for in `site`, with the field of
    /// `meter`: for a standing position, the height where the searched
    /// quantity (resultant or exposure ratio) is highest.
    pub fn locate(&self, site: &Site, meter: &Meter) -> Result<Point3<f64>, String> {
        match self {
            Origin::Point(p) => Ok(*p),
            Origin::Conductor(id) => {
                // A bar is all its filaments (they share its id): the mean
                // of their longest segments' centres is on the bar's axis.
                let mut centres = Vec::new();
                for c in site.conductors().iter().filter(|c| &c.id == id) {
                    let seg = c
                        .path
                        .windows(2)
                        .max_by(|a, b| (a[1] - a[0]).norm().total_cmp(&(b[1] - b[0]).norm()))
                        .ok_or("conductor has no segment")?;
                    centres.push(nalgebra::center(&seg[0], &seg[1]).coords);
                }
                if centres.is_empty() {
                    return Err(format!("unknown conductor '{id}'"));
                }
                Ok(Point3::from(centres.iter().sum::<Vector3<f64>>() / centres.len() as f64))
            }
            Origin::Position(id) => {
                let q =
                    site.positions().iter().find(|q| &q.id == id).ok_or_else(|| format!("unknown position '{id}'"))?;
                match &q.placement {
                    crate::site::Placement::Point(p) => Ok(*p),
                    crate::site::Placement::Standing { x_m, y_m, heights_m } => {
                        let score = |h: &f64| {
                            meter
                                .per_line_ut(&Point3::new(*x_m, *y_m, *h))
                                .map_or(f64::INFINITY, |l| meter.quantity(&l))
                        };
                        let best = heights_m
                            .iter()
                            .max_by(|a, b| score(a).total_cmp(&score(b)))
                            .ok_or("position has no heights")?;
                        Ok(Point3::new(*x_m, *y_m, *best))
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
