//! Use cases: one function per thing a caller can do, called alike by the
//! CLI (on files, offline) and by the HTTP service (on stored documents).
//!
//! Each takes checked domain types and returns its result or a
//! [`UseCaseError`] that says *which input* is wrong without choosing how to
//! address it: the service turns it into JSON pointers into its request
//! body, the CLI into flag names (`--tables: unknown table 'nope'`). The
//! compute budgets of every use case live here too, so the two callers
//! cannot drift apart.

use crate::assess::{
    self, AreaMap, AssessError, Assessment, DEFAULT_MAX_GRID_CELLS, LoadCase, LoadError, MAP_MAX_CELLS, Options,
    ReviewFraction,
};
use crate::cancel::{Cancel, Cancelled};
use crate::evaluate::{self, EvaluateRequest, EvaluateResponse};
use crate::limits::{ReferenceTable, UnknownTable};
use crate::mitigate::{self, DistanceResult, Origin};
use crate::report::{csv, geojson, svg};
use crate::site::{Area, Conductor, Pointer, Problem, Problems, Site};
use crate::survey::{self, Survey, SurveyAnalysis, wire::SurveyDoc};

/// Compute budgets of one request: how much work it may ask for, and how
/// long it may run (until `cancel` is set). The service reads the numbers
/// from its configuration and gives each request its own flag; the CLI
/// uses [`Budget::offline`], whose flag nobody sets.
#[derive(Debug, Clone)]
pub struct Budget {
    /// Segment–point pairs per computation (≈ 1 s of the engine on two AVX2
    /// cores at the default).
    pub max_pairs: u64,
    /// Grid cells over all areas of one assessment.
    pub max_grid_cells: u64,
    /// Nodes of one area map (the map is coarsened to fit).
    pub map_max_cells: usize,
    /// Segment–point pairs of one distance query (its probes of the field
    /// and of the bounds each count every segment once), within
    /// `max_pairs` as well.
    pub max_distance_pairs: u64,
    /// Arrangement × point evaluations of one phase-arrangement search;
    /// a branch and bound stopped by it reports its optimality gap.
    pub max_search_work: u64,
    /// Set when the answer is no longer wanted: every use case looks at it
    /// between chunks of work and stops with [`UseCaseError::Cancelled`].
    pub cancel: Cancel,
}

/// Default segment–point pairs per computation.
pub const DEFAULT_MAX_PAIRS: u64 = 1_000_000_000;

/// Default segment–point pairs per distance query. Its probes go one point
/// at a time (a 64-lane kernel chunk per segment plus the bounds), so a
/// pair costs tens of times more than in a batch: estimated at about 1 s
/// on two cores (not measured in a release build). `shortest` on the
/// furnace example uses about 1.6 million.
pub const DEFAULT_MAX_DISTANCE_PAIRS: u64 = 20_000_000;

/// How many times the service's distance budget the command line allows.
pub const OFFLINE_DISTANCE_FACTOR: u64 = 20;

impl Default for Budget {
    fn default() -> Self {
        Budget {
            max_pairs: DEFAULT_MAX_PAIRS,
            max_grid_cells: DEFAULT_MAX_GRID_CELLS,
            map_max_cells: MAP_MAX_CELLS,
            max_distance_pairs: DEFAULT_MAX_DISTANCE_PAIRS,
            max_search_work: mitigate::phases::DEFAULT_MAX_WORK,
            cancel: Cancel::never(),
        }
    }
}

impl Budget {
    /// The command line's budget: the same grids and maps as the service,
    /// no cap on pairs (the user's own machine and patience decide), and
    /// [`OFFLINE_DISTANCE_FACTOR`] times the service's distance budget (a
    /// distance search needs some cap to end at all where the field hugs
    /// the threshold).
    pub fn offline() -> Budget {
        Budget {
            max_pairs: u64::MAX,
            max_distance_pairs: DEFAULT_MAX_DISTANCE_PAIRS * OFFLINE_DISTANCE_FACTOR,
            max_search_work: mitigate::phases::DEFAULT_MAX_WORK * OFFLINE_DISTANCE_FACTOR,
            ..Budget::default()
        }
    }
}

/// Which argument of a distance query is wrong.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DistanceArg {
    LevelUt,
    From,
    Direction,
    Table,
}

impl DistanceArg {
    /// The argument's name, as the query parameter and the CLI flag spell it.
    pub fn name(self) -> &'static str {
        match self {
            DistanceArg::LevelUt => "level_ut",
            DistanceArg::From => "from",
            DistanceArg::Direction => "direction",
            DistanceArg::Table => "table",
        }
    }
}

/// Why a use case could not give its result, by which input is wrong.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum UseCaseError {
    /// Table ids that name no table, each with its place in the chosen list.
    #[error("unknown reference-level table(s)")]
    UnknownTables(Vec<UnknownTable>),
    /// The assessment's inputs do not fit together (no tables, load case,
    /// site grids).
    #[error(transparent)]
    Assess(#[from] AssessError),
    /// The load case does not fit the site.
    #[error("the load case does not fit the site")]
    Load(LoadError),
    /// A survey document's problems, pointers into it.
    #[error("the survey has problems")]
    Survey(Problems),
    /// The site has no area of that id.
    #[error("the site has no area '{0}'")]
    UnknownArea(String),
    /// The table asked to band a map by cannot band it (why, in words).
    #[error("{0}")]
    MapTable(String),
    /// A stateless evaluation document's problems, pointers into it.
    #[error("the evaluation document has problems")]
    Evaluate(Problems),
    /// A distance query argument is wrong.
    #[error("{arg:?}: {detail}")]
    Distance { arg: DistanceArg, detail: String },
    /// A distance search exceeds its compute budget; `arg` is what to
    /// change to reduce it.
    #[error("{arg:?}: {detail}")]
    DistanceOverBudget { arg: DistanceArg, detail: String },
    /// The work exceeds a compute budget; pointers into the document whose
    /// size is to blame.
    #[error("the request exceeds a compute budget")]
    OverBudget(Problems),
    /// A what-if request's problems, pointers into it (`/circuits/1`).
    #[error("the what-if request has problems")]
    WhatIf(Problems),
    /// The budget's `cancel` flag was set before the work ended: there is
    /// no result, not even a partial one.
    #[error("the computation was cancelled")]
    Cancelled,
}

impl From<Cancelled> for UseCaseError {
    fn from(_: Cancelled) -> Self {
        UseCaseError::Cancelled
    }
}

/// `problems` with every pointer put under `prefix` (an RFC 6901 pointer,
/// `""` for none): a load case's `/currents_a/T9` becomes `/load/currents_a/T9`.
pub fn under(prefix: &str, problems: Problems) -> Problems {
    Problems(
        problems
            .0
            .into_iter()
            .map(|p| Problem { pointer: format!("{prefix}{}", p.pointer), detail: p.detail })
            .collect(),
    )
}

/// Segments of a list of conductors (each path of n points has n − 1).
pub fn segment_count(conductors: &[Conductor]) -> u64 {
    conductors.iter().map(|c| c.path.len().saturating_sub(1) as u64).sum()
}

/// Evaluation points of an assessment of `site`: every height of every
/// position and every bounding-grid cell of every area (an upper bound).
pub fn assessment_points(site: &Site) -> u64 {
    let positions: u64 = site.positions().iter().map(|q| q.placement.point_count() as u64).sum();
    positions + site.areas().iter().map(|a| assess::bounding_cells(&a.polygon, a.spacing_m)).sum::<u64>()
}

/// Segment–point pairs of an assessment of `site` (its compute cost).
pub fn assessment_pairs(site: &Site) -> u64 {
    assessment_points(site).saturating_mul(segment_count(site.conductors()))
}

/// Segment–point pairs of a survey analysis: the field at the survey's
/// loads, at rated load, and the fit's influence matrix.
pub fn survey_pairs(survey: &Survey) -> u64 {
    3u64.saturating_mul(segment_count(survey.site().conductors())).saturating_mul(survey.points().len() as u64)
}

fn over_budget(pointer: &str, detail: String) -> UseCaseError {
    UseCaseError::OverBudget(Problems::one(pointer, detail))
}

/// Checks the compute budget of an assessment of `site`: the grid cells,
/// then the segment–point pairs.
pub fn check_assessment_budget(site: &Site, budget: &Budget) -> Result<(), UseCaseError> {
    let grid = assess::check_grid_budget(site, budget.max_grid_cells);
    if !grid.is_empty() {
        return Err(UseCaseError::OverBudget(grid));
    }
    let pairs = assessment_pairs(site);
    if pairs > budget.max_pairs {
        let field = if site.areas().is_empty() { "/positions" } else { "/areas" };
        return Err(over_budget(
            field,
            format!(
                "this assessment needs {pairs} segment-point pairs, over the budget of {}: coarsen area spacing_m or split the site",
                budget.max_pairs
            ),
        ));
    }
    Ok(())
}

/// Assesses a checked site at `load` against resolved `tables`.
pub fn assess_site(
    site: &Site,
    load: &LoadCase,
    tables: &[ReferenceTable],
    review_fraction: ReviewFraction,
    budget: &Budget,
) -> Result<Assessment, UseCaseError> {
    check_assessment_budget(site, budget)?;
    // The boundary samples and the refinement of area maxima spend what
    // the grid and positions leave of the pair budget.
    let options = Options {
        review_fraction,
        max_grid_cells: budget.max_grid_cells,
        max_refine_pairs: budget.max_pairs.saturating_sub(assessment_pairs(site)),
    };
    assess::try_assess(site, load, tables, &options, &budget.cancel)?.map_err(|e| {
        if e.over_budget.is_empty() { UseCaseError::Assess(e) } else { UseCaseError::OverBudget(e.over_budget) }
    })
}

/// The model warnings of a checked site (open ends, no return path,
/// overlapping conductors, points inside conductors or below ground), with
/// pointers into the site document. Assessments, survey analyses and
/// evaluations carry theirs; `check` and the site resources show these.
pub fn site_warnings(site: &Site) -> Vec<crate::site::Warning> {
    crate::site::site_warnings(site)
}

/// Checks a survey document against the site it was measured on.
pub fn check_survey(site: &Site, doc: &SurveyDoc) -> Result<Survey, UseCaseError> {
    survey::validate_survey(doc, site).map_err(UseCaseError::Survey)
}

/// Checks the compute budget of analysing `survey` (pointer: its points).
pub fn check_survey_budget(survey: &Survey, budget: &Budget) -> Result<(), UseCaseError> {
    let pairs = survey_pairs(survey);
    if pairs > budget.max_pairs {
        return Err(over_budget(
            "/points",
            format!("{pairs} segment-point pairs exceed the budget of {}", budget.max_pairs),
        ));
    }
    Ok(())
}

/// Reconciles a checked survey with the model of the site it was checked
/// against, fits the circuit loads and extrapolates to rated load, judging
/// the extrapolated values against `tables` at `review_fraction`.
pub fn analyse_survey(
    survey: &Survey,
    tables: &[ReferenceTable],
    review_fraction: ReviewFraction,
    budget: &Budget,
) -> Result<SurveyAnalysis, UseCaseError> {
    check_survey_budget(survey, budget)?;
    Ok(survey::try_analyse(survey, tables, review_fraction, &budget.cancel)?)
}

/// The verdicts of a stored extrapolation judged again at another review
/// fraction: the exposure ratios do not depend on it, so nothing is
/// recomputed (a ratio that could not be judged keeps its verdict).
pub fn rejudge_extrapolation(analysis: &mut SurveyAnalysis, review_fraction: ReviewFraction) {
    for point in analysis.extrapolation.iter_mut().flat_map(|e| e.points.iter_mut()) {
        for c in &mut point.comparisons {
            if let Some(r) = c.ratio {
                c.verdict = assess::Verdict::of_ratio(r, review_fraction);
            }
        }
    }
}

fn resolve_load(site: &Site, load: &LoadCase) -> Result<Vec<crate::site::CircuitLoad>, UseCaseError> {
    load.resolve(site).map_err(UseCaseError::Load)
}

/// Segment–point pairs of the field map of `area` of `site`: the nodes of
/// its grid, coarsened to `budget.map_max_cells`, times the segments.
pub fn map_pairs(site: &Site, area: &Area, budget: &Budget) -> u64 {
    let nodes = assess::GridSpec::covering(&area.polygon, area.spacing_m, budget.map_max_cells).len() as u64;
    nodes.saturating_mul(segment_count(site.conductors()))
}

/// Checks the pair budget of the maps of the areas at `indices` of `site`
/// together (pointer into the site: the one area's spacing, else its areas).
pub fn check_map_budget(site: &Site, indices: &[usize], budget: &Budget) -> Result<(), UseCaseError> {
    let pairs = indices.iter().map(|&k| map_pairs(site, &site.areas()[k], budget)).fold(0, u64::saturating_add);
    if pairs <= budget.max_pairs {
        return Ok(());
    }
    let at = match indices {
        [k] => Pointer::root().key("areas").index(*k).key("spacing_m"),
        _ => Pointer::root().key("areas"),
    };
    Err(over_budget(
        &at.to_string(),
        format!(
            "the field map needs {pairs} segment-point pairs, over the budget of {}: assess a revision of the site with a coarser spacing_m or fewer conductor segments",
            budget.max_pairs
        ),
    ))
}

/// The field maps of every area of `site` at `load`, within the pair
/// budget for all of them together.
pub fn area_maps(
    site: &Site,
    load: &LoadCase,
    tables: &[ReferenceTable],
    budget: &Budget,
) -> Result<Vec<AreaMap>, UseCaseError> {
    let loads = resolve_load(site, load)?;
    check_map_budget(site, &(0..site.areas().len()).collect::<Vec<_>>(), budget)?;
    let map = |a| assess::try_area_map(site, &loads, tables, a, budget.map_max_cells, &budget.cancel);
    Ok(site.areas().iter().map(map).collect::<Result<_, Cancelled>>()?)
}

/// The field map of the area `area_id` of an assessed site as SVG, within
/// the pair budget, banded by the ratio to `band_table` (by default the
/// first whole-body table that covers the map, else decades of µT).
pub fn area_map_svg(
    site: &Site,
    assessment: &Assessment,
    load: &LoadCase,
    tables: &[ReferenceTable],
    area_id: &str,
    band_table: Option<&str>,
    budget: &Budget,
) -> Result<String, UseCaseError> {
    let k = site
        .areas()
        .iter()
        .position(|a| a.id == area_id)
        .ok_or_else(|| UseCaseError::UnknownArea(area_id.to_string()))?;
    let loads = resolve_load(site, load)?;
    check_map_budget(site, &[k], budget)?;
    let map = assess::try_area_map(site, &loads, tables, &site.areas()[k], budget.map_max_cells, &budget.cancel)?;
    let banding = match band_table {
        Some(id) => svg::banding_by(&map, id).map_err(UseCaseError::MapTable)?,
        None => svg::banding(&map),
    };
    Ok(svg::area_map_svg_banded(site, assessment, &map, &banding))
}

/// An assessment's position results as CSV (RFC 4180).
pub fn export_csv(assessment: &Assessment) -> String {
    csv::positions_csv(assessment)
}

/// Conductors, positions, contours and zones of an assessed site as GeoJSON.
pub fn export_geojson(
    site: &Site,
    assessment: &Assessment,
    load: &LoadCase,
    tables: &[ReferenceTable],
    budget: &Budget,
) -> Result<serde_json::Value, UseCaseError> {
    let maps = area_maps(site, load, tables, budget)?;
    Ok(geojson::assessment_geojson(site, assessment, &maps))
}

/// Largest level a distance can be asked for, µT (far above any table).
pub const MAX_DISTANCE_LEVEL_UT: f64 = 1.0e9;

/// The direction searched when the caller names none.
pub const DEFAULT_DIRECTION: &str = "shortest";

/// What a distance is to: a µT level or a table's exposure ratio 1.
#[derive(Debug, Clone, PartialEq)]
pub enum DistanceTo {
    /// µT RMS, the resultant over all frequencies.
    LevelUt(f64),
    /// A table id (exposure ratio Σ_f B_f / B_RL(f) = 1).
    Table(String),
}

/// A checked distance query: from where, along which direction, to which
/// level or table.
#[derive(Debug, Clone, PartialEq)]
pub struct DistanceQuery {
    origin: Origin,
    direction: mitigate::Direction,
    to: DistanceTo,
}

impl DistanceQuery {
    /// Checks `from` (`position:ID`, `conductor:ID` or `point:x,y,z`),
    /// `direction` (`shortest` or `x,y,z`; absent means `shortest`) and
    /// `level_ut` (µT RMS, positive).
    pub fn parse(from: &str, direction: Option<&str>, level_ut: f64) -> Result<DistanceQuery, UseCaseError> {
        DistanceQuery::new(from, direction, DistanceTo::LevelUt(level_ut))
    }

    /// [`DistanceQuery::parse`] to a level or to a table (checked against
    /// the available tables when the distance is computed).
    pub fn new(from: &str, direction: Option<&str>, to: DistanceTo) -> Result<DistanceQuery, UseCaseError> {
        match &to {
            DistanceTo::LevelUt(l) if !(l.is_finite() && *l > 0.0 && *l <= MAX_DISTANCE_LEVEL_UT) => {
                return Err(distance_error(DistanceArg::LevelUt)("level_ut must be a positive number of µT".into()));
            }
            DistanceTo::Table(id) if id.trim().is_empty() => {
                return Err(distance_error(DistanceArg::Table)("name a table id (see the tables list)".into()));
            }
            _ => {}
        }
        let origin = Origin::parse(from).map_err(distance_error(DistanceArg::From))?;
        let direction = mitigate::parse_direction(direction.unwrap_or(DEFAULT_DIRECTION))
            .map_err(distance_error(DistanceArg::Direction))?;
        Ok(DistanceQuery { origin, direction, to })
    }
}

fn distance_error(arg: DistanceArg) -> impl Fn(String) -> UseCaseError {
    move |detail| UseCaseError::Distance { arg, detail }
}

/// The table `id` among `available`, else a built-in table.
fn find_table(id: &str, available: &[ReferenceTable]) -> Option<ReferenceTable> {
    available.iter().find(|t| t.id() == id).or_else(|| crate::limits::builtin_table(id)).cloned()
}

/// [`find_table`] for a distance query.
fn distance_table(id: &str, available: &[ReferenceTable]) -> Result<ReferenceTable, UseCaseError> {
    find_table(id, available)
        .ok_or_else(|| distance_error(DistanceArg::Table)(format!("unknown table '{id}' (see the tables list)")))
}

/// Distance along the query's direction to where the resultant field of
/// `site` at `load` falls below the query's level, within the default
/// budget (see [`distance`]).
pub fn distance_to_level(site: &Site, load: &LoadCase, query: &DistanceQuery) -> Result<DistanceResult, UseCaseError> {
    distance(site, load, query, &[], &Budget::default())
}

/// The first crossing and the clearance from the query's origin along its
/// direction (or the shortest clearance), to its level or to its table
/// (looked up in `tables`, then among the built-in ones), within
/// `budget.max_distance_pairs` (and `budget.max_pairs`, the ceiling of
/// every computation).
pub fn distance(
    site: &Site,
    load: &LoadCase,
    query: &DistanceQuery,
    tables: &[ReferenceTable],
    budget: &Budget,
) -> Result<DistanceResult, UseCaseError> {
    let loads = resolve_load(site, load)?;
    let target = match &query.to {
        DistanceTo::LevelUt(l) => mitigate::Target::LevelUt(*l),
        DistanceTo::Table(id) => mitigate::Target::Table(distance_table(id, tables)?),
    };
    let meter = mitigate::Meter::new(site, &loads, &target)
        .map_err(|e| distance_failure(e, query, site))?
        .stopped_by(&budget.cancel);
    let at = query.origin.locate(site, &meter).map_err(distance_error(DistanceArg::From))?;
    let pairs = budget.max_distance_pairs.min(budget.max_pairs);
    mitigate::distance_with(&meter, site, at, query.direction, pairs).map_err(|e| distance_failure(e, query, site))
}

/// A distance search's failure, addressed to what the caller can change.
fn distance_failure(e: mitigate::DistanceError, query: &DistanceQuery, site: &Site) -> UseCaseError {
    match e {
        mitigate::DistanceError::Cancelled => UseCaseError::Cancelled,
        mitigate::DistanceError::NotCovered(hz) => {
            let list: Vec<String> = hz.iter().map(|f| format!("{f} Hz")).collect();
            distance_error(DistanceArg::Table)(format!(
                "the table does not cover {}, where the site carries current: choose a table that does",
                list.join(", ")
            ))
        }
        mitigate::DistanceError::OverBudget { budget, started } => {
            let segments = segment_count(site.conductors());
            let when = if started { "stopped after" } else { "would need more than" };
            let reduce = match query.direction {
                mitigate::Direction::Shortest => {
                    "give one direction instead of shortest (each sampled direction is a search of its own), or use a site with fewer conductor segments"
                }
                mitigate::Direction::Along(_) => {
                    "use a site with fewer conductor segments, or a level or table whose boundary the field does not hug along this ray"
                }
            };
            UseCaseError::DistanceOverBudget {
                arg: DistanceArg::Direction,
                detail: format!(
                    "the distance search {when} its budget of {budget} segment-point pairs ({segments} segments): {reduce}"
                ),
            }
        }
    }
}

/// Evaluates a stateless evaluation document within the pairs budget.
pub fn evaluate_points(req: &EvaluateRequest, budget: &Budget) -> Result<EvaluateResponse, UseCaseError> {
    Ok(evaluate_output(req, budget)?.to_response())
}

/// [`evaluate_points`] kept in the form the document's `output` asks for,
/// for writing without building the answer in memory.
pub fn evaluate_output(req: &EvaluateRequest, budget: &Budget) -> Result<evaluate::Evaluated, UseCaseError> {
    let ev = evaluate::validate_request(req).map_err(UseCaseError::Evaluate)?;
    evaluate_checked(ev, budget)
}

/// Computes a checked evaluation within the pairs budget.
pub fn evaluate_checked(ev: evaluate::Evaluation, budget: &Budget) -> Result<evaluate::Evaluated, UseCaseError> {
    let pairs = ev.pair_count();
    if pairs > budget.max_pairs {
        return Err(over_budget(
            &Pointer::root().key("points").to_string(),
            format!(
                "{pairs} segment-point pairs exceed the budget of {} per request: send fewer points or segments per request",
                budget.max_pairs
            ),
        ));
    }
    Ok(evaluate::try_compute(ev, &budget.cancel)?)
}

/// The table a what-if judges the ratio by: the requested one, else the
/// site's first; `None` when no ratio is wanted or (for `optional`) the
/// site names none.
fn whatif_table(
    site: &Site,
    requested: Option<&str>,
    wanted: bool,
    tables: &[ReferenceTable],
) -> Result<Option<ReferenceTable>, UseCaseError> {
    if !wanted {
        return Ok(None);
    }
    let Some(id) = requested.or(site.tables().first().map(String::as_str)) else {
        return Ok(None);
    };
    match find_table(id, tables) {
        Some(t) => Ok(Some(t)),
        None if requested.is_some() => {
            Err(UseCaseError::WhatIf(Problems::one("/table", format!("unknown table '{id}' (see the tables list)"))))
        }
        None => Err(UseCaseError::WhatIf(Problems::one(
            "/table",
            format!("the site's first table '{id}' is unknown; name a table for the ratio"),
        ))),
    }
}

/// Searches the phase arrangements of the request's circuits in `site`
/// (checked from `doc`), within `budget` ([`mitigate::phases`]).
pub fn search_phases(
    site: &Site,
    doc: &crate::site::wire::SiteDoc,
    req: &mitigate::phases::PhaseSearchDoc,
    tables: &[ReferenceTable],
    budget: &Budget,
) -> Result<mitigate::phases::PhaseSearch, UseCaseError> {
    use mitigate::phases::SearchBudget;
    let table = whatif_table(site, req.table.as_deref(), req.measure == mitigate::phases::Measure::Ratio, tables)?;
    let search_budget = SearchBudget {
        max_pairs: budget.max_pairs,
        max_grid_cells: budget.max_grid_cells,
        max_work: budget.max_search_work,
        exhaustive_limit: mitigate::phases::EXHAUSTIVE_LIMIT,
        cancel: budget.cancel.clone(),
    };
    Ok(mitigate::phases::search_phases(site, doc, req, table.as_ref(), &search_budget)?)
}

/// Judges a batch of load scenarios in `site` within `budget`
/// ([`mitigate::scenarios`]).
pub fn run_scenarios(
    site: &Site,
    req: &mitigate::scenarios::ScenariosDoc,
    tables: &[ReferenceTable],
    budget: &Budget,
) -> Result<mitigate::scenarios::ScenarioResults, UseCaseError> {
    let tables = whatif_tables(site, req.table.as_deref(), true, tables)?;
    Ok(mitigate::scenarios::run_scenarios(site, req, &tables, &whatif_budget(budget))?)
}

/// Judges a move of conductors or positions in `site` (checked from `doc`)
/// within `budget` ([`mitigate::moves`]).
pub fn run_move(
    site: &Site,
    doc: &crate::site::wire::SiteDoc,
    req: &mitigate::moves::MoveDoc,
    tables: &[ReferenceTable],
    budget: &Budget,
) -> Result<mitigate::moves::MoveResult, UseCaseError> {
    let tables = whatif_tables(site, req.table.as_deref(), req.measure == mitigate::Measure::Ratio, tables)?;
    Ok(mitigate::moves::run_move(site, doc, req, &tables, &whatif_budget(budget))?)
}

/// Judges a passive loop added to `site` within `budget`
/// ([`mitigate::loops`]).
pub fn run_loop(
    site: &Site,
    req: &mitigate::loops::LoopDoc,
    tables: &[ReferenceTable],
    budget: &Budget,
) -> Result<mitigate::loops::LoopResult, UseCaseError> {
    let tables = whatif_tables(site, req.table.as_deref(), true, tables)?;
    Ok(mitigate::loops::run_loop(site, req, &tables, &whatif_budget(budget))?)
}

/// The tables a what-if judges ratios against, as an assessment would:
/// the requested one alone, else every table the site names; with the
/// implant table added when the site has implant wearers and no table
/// covers them. Empty when no ratio is wanted or no table is named.
fn whatif_tables(
    site: &Site,
    requested: Option<&str>,
    wanted: bool,
    tables: &[ReferenceTable],
) -> Result<Vec<ReferenceTable>, UseCaseError> {
    if !wanted {
        return Ok(Vec::new());
    }
    let ids: Vec<&str> = match requested {
        Some(id) => vec![id],
        None => site.tables().iter().map(String::as_str).collect(),
    };
    let mut p = Problems::default();
    let mut out = Vec::new();
    for id in ids {
        match find_table(id, tables) {
            Some(t) if !out.iter().any(|o: &ReferenceTable| o.id() == t.id()) => out.push(t),
            Some(_) => {}
            None if requested.is_some() => p.push(
                &crate::site::Pointer::root().key("table"),
                format!("unknown table '{id}' (see the tables list)"),
            ),
            None => p.push(
                &crate::site::Pointer::root().key("table"),
                format!("the site names table '{id}', which is unknown; name a table for the ratio"),
            ),
        }
    }
    if !p.is_empty() {
        return Err(UseCaseError::WhatIf(p));
    }
    Ok(if out.is_empty() { out } else { crate::assess::with_implant_table(site, out) })
}

/// The what-if budget of a use-case budget.
fn whatif_budget(budget: &Budget) -> mitigate::WhatIfBudget {
    mitigate::WhatIfBudget {
        max_pairs: budget.max_pairs,
        max_grid_cells: budget.max_grid_cells,
        max_work: budget.max_search_work,
        cancel: budget.cancel.clone(),
    }
}

impl From<mitigate::WhatIfError> for UseCaseError {
    fn from(e: mitigate::WhatIfError) -> Self {
        use mitigate::WhatIfError as W;
        match e {
            W::Request(p) => UseCaseError::WhatIf(p),
            W::OverBudget(p) => UseCaseError::OverBudget(p),
            W::Load(l) => UseCaseError::Load(l),
            W::Cancelled => UseCaseError::Cancelled,
        }
    }
}
