//! Exposure assessment of worker positions and work areas against
//! reference-level tables, at a chosen load case.
//!
//! Conventions (documented in README.md): the compared quantity is the
//! resultant RMS flux density (what a three-axis meter reads, and never below
//! the maximum, so it is the conservative choice); a position's verdict is
//! that of its worst height; exposure ratios over several frequencies are
//! summed as `Σ_f B_f / B_RL(f)`; time-weighted averages are information only.

mod cells;
mod grid;
mod load;
mod map;
mod peak;
mod regime;
mod review;
mod verdict;
mod weighted_peak;

pub use grid::{DEFAULT_MAX_GRID_CELLS, GridSpec, area_grid, bounding_cells, check_grid_budget, contains};
pub(crate) use load::report as load_report;
pub use load::{CircuitLoadReport, LoadCase, LoadCaseReport, LoadError, PhaseLoadReport};
pub use map::{AreaMap, MAP_MAX_CELLS, TableRatios, area_map, try_area_map};
pub use peak::CERTAINTY;
pub use regime::{RegimeResult, read_regimes};
pub use review::{ReviewFraction, ReviewFractionError};
pub use verdict::{FrequencyRatio, Ratio, Verdict, exposure_ratio, line_levels, ratio_of};
pub use weighted_peak::{LineInfo, NotComputed, Term, Weighting, filter_phase_deg, peak_magnitude};

use crate::cancel::{Cancel, Cancelled, uncancelled};
use crate::cautions::cautions;
use crate::field;
use crate::limits::{
    AppliesTo, DecisionRule, IMPLANT_TABLE_ID, Population, ReferenceTable, Regime, TableBodyRegion, TableKind,
    builtin_table,
};
use crate::site::wire::{BodyRegion, Group};
use crate::site::{Placement, Problems, Site};
use nalgebra::Point3;
use serde::{Deserialize, Serialize};

/// Assessment options.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Options {
    /// Ratio from which a result is `approaching` (0 < fraction < 1).
    #[serde(default)]
    pub review_fraction: ReviewFraction,
    /// Most grid cells over all areas of one assessment.
    #[serde(default = "default_max_grid_cells")]
    pub max_grid_cells: u64,
    /// Most segment–point pairs the boundary samples and the refinement of
    /// the area maxima may spend, over all areas (no cap by default).
    #[serde(default = "default_max_refine_pairs")]
    pub max_refine_pairs: u64,
}

fn default_max_refine_pairs() -> u64 {
    u64::MAX
}

fn default_max_grid_cells() -> u64 {
    DEFAULT_MAX_GRID_CELLS
}

impl Default for Options {
    fn default() -> Self {
        Options {
            review_fraction: ReviewFraction::DEFAULT,
            max_grid_cells: DEFAULT_MAX_GRID_CELLS,
            max_refine_pairs: default_max_refine_pairs(),
        }
    }
}

/// Why an assessment could not run, every problem at once, kept apart by
/// whose input it belongs to so each edge can address it: the HTTP service
/// as pointers into its request body, the CLI as flags.
#[derive(Debug, Clone, PartialEq, Default, thiserror::Error)]
#[error("the assessment has problems")]
pub struct AssessError {
    /// No reference-level table was chosen.
    pub no_tables: bool,
    /// Problems of the load case, pointers relative to it (`/currents_a/T9`).
    pub in_load: Problems,
    /// Problems of the site for this assessment (a rated load without a
    /// rated current, area grids over the cell budget), pointers into it.
    pub in_site: Problems,
    /// Work over the compute budget (the refinement of an area maximum),
    /// pointers into the site.
    pub over_budget: Problems,
}

impl AssessError {
    pub fn is_empty(&self) -> bool {
        !self.no_tables && self.in_load.is_empty() && self.in_site.is_empty() && self.over_budget.is_empty()
    }
    /// Every problem as pointers: the table list at `tables_at`, the load
    /// case under `load_at`, the site's own pointers unchanged.
    pub fn into_problems(self, tables_at: &str, load_at: &str) -> Problems {
        let mut all = Problems::default();
        if self.no_tables {
            all.0.extend(Problems::one(tables_at, NO_TABLES).0);
        }
        all.0.extend(crate::usecase::under(load_at, self.in_load).0);
        all.0.extend(self.in_site.0);
        all.0.extend(self.over_budget.0);
        all
    }
}

/// The detail of an empty table list.
pub const NO_TABLES: &str = "choose at least one reference-level table";

/// A table as used by an assessment (pinned by id and version).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct TableRef {
    /// Table id.
    pub id: String,
    /// Table version used (pinned).
    pub version: u32,
    pub title: String,
    pub kind: TableKind,
    pub applies_to: AppliesTo,
    /// Full citation of the source document.
    pub source: String,
}

impl TableRef {
    /// How `t` is cited in a result.
    pub fn of(t: &ReferenceTable) -> TableRef {
        table_ref(t)
    }
}

/// Verdict of one point against one table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct PointComparison {
    /// Table id.
    pub table_id: String,
    /// Exposure ratio Σ_f B_f / B_RL(f) (`null` when not computed or not covered).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub ratio: Option<f64>,
    /// Verdict at this point against this table.
    pub verdict: Verdict,
    /// The weighted peak index at this point and the rule that decided
    /// (flattened: the three fields sit beside `ratio` in the JSON).
    #[serde(flatten)]
    pub weighted_peak: WeightedPeak,
}

/// One evaluated point of a position.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct HeightResult {
    /// Height above the standing point, m (absent for a 3-D point).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub height_m: Option<f64>,
    /// The evaluated point `[x, y, z]`, m.
    pub at: [f64; 3],
    /// Resultant RMS flux density over all frequencies, µT (`null` inside a conductor).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub resultant_ut: Option<f64>,
    /// RMS along the direction of largest field, µT (`null` inside a conductor).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub maximum_ut: Option<f64>,
    /// Resultant per frequency, µT.
    pub frequencies: Vec<SpectralValue>,
    /// Conductors the point lies inside.
    pub inside_conductors: Vec<String>,
    /// One per table.
    pub comparisons: Vec<PointComparison>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct SpectralValue {
    /// Frequency, Hz.
    pub frequency_hz: f64,
    /// Resultant RMS at this frequency, µT.
    pub resultant_ut: f64,
}

/// A position's result against one table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct PositionComparison {
    /// Table id.
    pub table_id: String,
    /// Worst exposure ratio over the heights.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub ratio: Option<f64>,
    /// Verdict of the worst height against this table.
    pub verdict: Verdict,
    /// Height of the worst ratio, m (`null` for a 3-D point).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub worst_height_m: Option<f64>,
    /// Ratio of the mean over heights (IEC 62110 practice for public
    /// exposure, from memory); information beside the worst-height verdict.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub ratio_of_height_mean: Option<f64>,
    /// The table's level at the fundamental, µT.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub level_ut: Option<f64>,
    /// Each frequency's share of the worst ratio.
    pub per_frequency: Vec<FrequencyRatio>,
    /// Frequencies present that the table does not cover, Hz.
    pub uncovered_hz: Vec<f64>,
    /// The weighted peak index beside the summation, and the rule the
    /// verdict was read from (flattened: the three fields sit beside
    /// `ratio` in the JSON).
    #[serde(flatten)]
    pub weighted_peak: WeightedPeak,
}

/// The weighted peak index of one comparison and the rule that decided
/// its verdict; the same three fields for a point, a position and an area.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct WeightedPeak {
    /// Weighted peak index (ICNIRP 2010 eq. 7 and Appendix): the peak of
    /// the filter-weighted waveform, never above the summation ratio; for a
    /// position the highest over its heights, for an area the highest over
    /// its computed cells and the point of the summation's maximum. `null`
    /// when not computed; `weighted_peak_note` says why.
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub weighted_peak_index: Option<f64>,
    /// Why the weighted peak index is not given (`null` when it is).
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub weighted_peak_note: Option<String>,
    /// The rule the verdict was read from: the table's `decision_rule`
    /// where it can be applied, else `summation`.
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub decided_by: DecisionRule,
}

impl WeightedPeak {
    /// No field at the point (inside a conductor): nothing to weigh, and
    /// the summation (which is not computed either) is named.
    fn no_field() -> WeightedPeak {
        WeightedPeak {
            weighted_peak_index: None,
            weighted_peak_note: Some(NotComputed::NoField.note()),
            decided_by: DecisionRule::Summation,
        }
    }
}

impl From<weighted_peak::Decision> for WeightedPeak {
    fn from(d: weighted_peak::Decision) -> WeightedPeak {
        WeightedPeak { weighted_peak_index: d.index, weighted_peak_note: d.note, decided_by: d.decided_by }
    }
}

/// Time-weighted average over an 8-hour day (information only): the
/// highest value for the hours of occupancy (at most 8 counted), no field
/// for the rest of the day.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct TimeWeighted {
    /// Hours per day spent here.
    pub occupancy_h: f64,
    /// `B_max · min(occupancy_h, 8 h) / 8 h`, µT; never above B_max.
    pub twa_8h_ut: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct PositionResult {
    /// Position id.
    pub id: String,
    /// Body region of the position.
    pub body_region: BodyRegion,
    /// Worker group of the position.
    pub group: Group,
    /// One result per evaluated height (or the one 3-D point).
    pub heights: Vec<HeightResult>,
    /// Highest resultant over the heights, µT, and where.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub max_resultant_ut: Option<f64>,
    /// Height of the highest resultant, m.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub max_height_m: Option<f64>,
    /// Mean resultant over the heights, µT (the three-height mean with the
    /// default 0.5/1.0/1.5 m).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub mean_resultant_ut: Option<f64>,
    /// One per applicable table.
    pub comparisons: Vec<PositionComparison>,
    /// Worst verdict over the tables.
    pub verdict: Verdict,
    /// Information-only time-weighted average (`null` without occupancy_h).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub time_weighted: Option<TimeWeighted>,
    /// Notes on this position.
    pub notes: Vec<String>,
    /// Each regime with an assessed table, read against this result: the
    /// highest tier exceeded and the first tier met, in plain words carried
    /// by the regime. Empty in results stored before regimes existed.
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub regimes: Vec<RegimeResult>,
}

/// An area's result against one table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct AreaComparison {
    /// Table id.
    pub table_id: String,
    /// Highest exposure ratio over the area: cells, boundary and
    /// refinement samples.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub max_ratio: Option<f64>,
    /// Verdict of the area's maximum against this table: of
    /// `max_ratio_bound` when the maximum is bounded (the conservative
    /// side, at most 1 % above), of `max_ratio` otherwise.
    pub verdict: Verdict,
    /// The table's level at the fundamental, µT.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub level_ut: Option<f64>,
    /// Share of computed cells at or above the level (0–1), by area: each
    /// cell centre inside the polygon stands for one cell (see the area's
    /// `share_basis`).
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 1))]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub share_at_or_above_level: Option<f64>,
    /// Share of computed cells at or above the review fraction of the level.
    #[cfg_attr(feature = "schema", schema(minimum = 0, maximum = 1))]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub share_at_or_above_review: Option<f64>,
    /// Frequencies present that the table does not cover, Hz.
    pub uncovered_hz: Vec<f64>,
    /// Proven upper bound of the true highest ratio over the area (cells
    /// and boundary, between samples included), bounded per spectral line;
    /// `null` when the table does not cover the frequencies present.
    /// `max_ratio` is at least 99 % of it when the area's `max_bounded` is
    /// true.
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub max_ratio_bound: Option<f64>,
    /// The weighted peak index beside the summation, and the rule the
    /// verdict was read from (flattened: the three fields sit beside
    /// `ratio` in the JSON).
    #[serde(flatten)]
    pub weighted_peak: WeightedPeak,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct AreaResult {
    /// Area id.
    pub id: String,
    /// Height of the evaluation plane, m.
    pub height_m: f64,
    /// Grid spacing, m.
    pub spacing_m: f64,
    /// Cells whose centre lies in the polygon.
    pub cells: usize,
    /// Cells inside a conductor: marked, never counted as exposure.
    pub cells_inside_conductors: usize,
    /// Highest resultant over the area, µT: over the computed cells, the
    /// polygon's boundary (sampled at no more than half the spacing,
    /// vertices included) and the refinement samples (see `max_bound_ut`).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub max_resultant_ut: Option<f64>,
    /// Where the highest resultant is, `[x, y, z]`, m.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub max_at: Option<[f64; 3]>,
    /// Mean resultant over the computed cells, µT.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub mean_resultant_ut: Option<f64>,
    /// One per applicable table.
    pub comparisons: Vec<AreaComparison>,
    /// Worst verdict over the tables.
    pub verdict: Verdict,
    /// Information-only time-weighted average (`null` without occupancy_h).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub time_weighted: Option<TimeWeighted>,
    /// Proven upper bound of the true highest resultant over the area, µT
    /// (cells, boundary and everywhere between samples; the bounds of the
    /// field of straight segments, `field::bound`). `null` when it cannot
    /// be bounded within 1 %: see `max_certainty`.
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub max_bound_ut: Option<f64>,
    /// Whether the reported maximum is proven within 1 % below the true one.
    #[serde(default)]
    pub max_bounded: bool,
    /// How sure the maximum is, in words.
    #[serde(default)]
    pub max_certainty: String,
    /// Samples taken on the polygon's boundary (vertices, piece ends and
    /// midpoints, no more than half the spacing apart).
    #[serde(default)]
    pub boundary_samples: usize,
    /// Samples added to prove the maximum (between samples, where a bound
    /// said the field could be higher).
    #[serde(default)]
    pub refinement_samples: usize,
    /// What the shares are taken over, in words.
    #[serde(default)]
    pub share_basis: String,
    /// Each regime with an assessed table, read against this result: the
    /// highest tier exceeded and the first tier met, in plain words carried
    /// by the regime. Empty in results stored before regimes existed.
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub regimes: Vec<RegimeResult>,
}

/// The basis of the area shares, as every area result states it.
pub const SHARE_BASIS: &str = "shares are area-weighted over grid cells: each cell centre inside the polygon and outside every conductor stands for one spacing_m x spacing_m cell; boundary and refinement samples count towards the maximum only";

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct Summary {
    /// Worst verdict over every position and area.
    pub worst_verdict: Verdict,
    /// Ids of positions that exceed a level.
    pub positions_exceeding: Vec<String>,
    /// Ids of positions at or above the review fraction.
    pub positions_approaching: Vec<String>,
    /// Ids of positions not covered or not computed.
    pub positions_not_judged: Vec<String>,
    /// Ids of areas that exceed a level.
    pub areas_exceeding: Vec<String>,
    /// Ids of areas at or above the review fraction.
    pub areas_approaching: Vec<String>,
}

/// A complete assessment result.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct Assessment {
    /// Site name, if it has one.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub site_name: Option<String>,
    /// Fundamental frequency, Hz.
    pub frequency_hz: f64,
    /// The currents assessed, per circuit.
    pub load_case: LoadCaseReport,
    /// Ratio from which a result is `approaching` (0 < fraction < 1).
    #[cfg_attr(feature = "schema", schema(exclusive_minimum = 0, exclusive_maximum = 1))]
    pub review_fraction: f64,
    /// Tables used, pinned by version.
    pub tables: Vec<TableRef>,
    /// One result per position.
    pub positions: Vec<PositionResult>,
    /// One result per area.
    pub areas: Vec<AreaResult>,
    /// Worst verdict and the ids that need attention.
    pub summary: Summary,
    /// How the numbers were formed.
    pub notes: Vec<String>,
    /// Cautions that apply to every result.
    pub cautions: Vec<String>,
    /// When, by which build, from which site document (fingerprint) and
    /// revision or file this result was computed; `null` only in results
    /// stored before provenance was recorded.
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub provenance: Option<crate::provenance::Provenance>,
    /// Model warnings about the site (open ends, no return path, overlapping
    /// conductors, points inside conductors or below ground), each with its
    /// pointer into the site document. They never block the result. Empty
    /// in assessments stored before warnings existed.
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub warnings: Vec<crate::site::Warning>,
}

impl Assessment {
    /// This result with its provenance, filled by the caller (the core
    /// reads no clock).
    pub fn with_provenance(mut self, provenance: crate::provenance::Provenance) -> Assessment {
        self.provenance = Some(provenance);
        self
    }
}

/// Notes every assessment carries beside the cautions.
pub const NOTES: [&str; 4] = [
    "Compared quantity: resultant RMS flux density (root-sum-square of three RMS components).",
    "Several frequencies are combined as the sum of B_f / B_RL(f) over frequencies (ICNIRP 2010 multi-frequency rule, cited from memory).",
    "Beside the summation every comparison gives the weighted peak index (ICNIRP 2010 eq. 7 and Appendix: each frequency weighted by 1 / B_RL(f), shifted by the filter phase -90 degrees times the band exponent, peak of the instantaneous vector over one period); it is not computed for a harmonic without a stated angle_deg. decided_by names the rule the verdict was read from: the table's decision_rule where it can be applied, else the summation.",
    "Time-weighted averages are information only (the highest value for the hours of occupancy, at most 8, in an 8-hour day): power-frequency reference levels are ceilings and are not time-averaged.",
];

/// The field at one evaluation point.
struct Sample {
    resultant_ut: f64,
    maximum_ut: f64,
    /// `(frequency_hz, resultant_ut)` per spectral line.
    spectrum: Vec<(f64, f64)>,
    /// RMS field phasor per spectral line, µT (for the weighted peak index).
    phasors: Vec<field::FieldPhasor>,
    /// Conductors the point lies inside (no thin-wire field there).
    inside: Vec<String>,
}

impl Sample {
    fn computed(&self) -> bool {
        self.inside.is_empty()
    }
}

/// One evaluated height of a position.
struct HeightSample {
    /// Height above the standing point, m (`None` for a 3-D point).
    height_m: Option<f64>,
    at: Point3<f64>,
    field: Sample,
}

/// Every point of every position, in one list so the field is evaluated
/// in one pass; the spans say whose points are where. (Areas are sampled
/// cell chunk by cell chunk: [`cells::sample_area`].)
struct PointPlan {
    points: Vec<Point3<f64>>,
    positions: Vec<std::ops::Range<usize>>,
}

impl PointPlan {
    fn of(site: &Site) -> PointPlan {
        let mut points: Vec<Point3<f64>> = Vec::new();
        let mut positions = Vec::with_capacity(site.positions().len());
        for q in site.positions() {
            let start = points.len();
            points.extend(q.placement.points());
            positions.push(start..points.len());
        }
        PointPlan { points, positions }
    }
}

/// The evaluated field of a [`PointPlan`], read one point at a time.
struct Sampler<'a> {
    site: &'a Site,
    set: field::FieldSet,
    line_hz: Vec<f64>,
    /// Order, frequency and whether the phase is stated, per line.
    lines: Vec<LineInfo>,
}

impl Sampler<'_> {
    fn sample(&self, i: usize) -> Sample {
        let phasors = self.set.at(i);
        Sample {
            resultant_ut: field::total_resultant_ut(phasors),
            maximum_ut: field::total_maximum_ut(phasors),
            spectrum: self.line_hz.iter().zip(phasors).map(|(f, b)| (*f, field::resultant_ut(b))).collect(),
            phasors: phasors.to_vec(),
            inside: {
                // A bar's filaments share its id: name the bar once.
                let mut ids: Vec<String> =
                    self.set.inside_of(i).map(|k| self.site.conductors()[k].id.clone()).collect();
                ids.dedup();
                ids
            },
        }
    }
}

/// Assesses every position and area of `site` at `load` against `tables`.
/// Implant wearers are also screened against the implant table.
pub fn assess(
    site: &Site,
    load: &LoadCase,
    tables: &[ReferenceTable],
    options: &Options,
) -> Result<Assessment, AssessError> {
    uncancelled(try_assess(site, load, tables, options, &Cancel::never()))
}

/// [`assess`] that stops with the outer [`Cancelled`] soon after `cancel`
/// is set; the inner result is the assessment or its problems.
pub fn try_assess(
    site: &Site,
    load: &LoadCase,
    tables: &[ReferenceTable],
    options: &Options,
    cancel: &Cancel,
) -> Result<Result<Assessment, AssessError>, Cancelled> {
    let loads = match check_inputs(site, load, tables, options) {
        Ok(loads) => loads,
        Err(e) => return Ok(Err(e)),
    };
    let tables = with_implant_table(site, dedup_tables(tables));
    let plan = PointPlan::of(site);
    let excitation = site.excitation_at(&loads);
    let filaments = crate::site::filaments(site.conductors());
    let sampler = Sampler {
        site,
        set: field::try_evaluate(&filaments, &plan.points, &excitation, cancel)?,
        line_hz: excitation.lines.iter().map(|l| l.frequency_hz).collect(),
        lines: line_infos(site, &excitation),
    };
    let bounds = field::bound::SegmentBounds::new(&filaments, &excitation);
    let engine = peak::Engine { filaments: &filaments, excitation: &excitation, bounds: &bounds, cancel };
    let rf = options.review_fraction;
    let mut positions = assess_positions(site, &plan, &sampler, &tables, rf);
    let mut areas = match assess_areas(site, &sampler, &engine, &tables, rf, options.max_refine_pairs)? {
        Ok(areas) => areas,
        Err(e) => return Ok(Err(e)),
    };
    read_builtin_regimes(&tables, &mut positions, &mut areas);
    let summary = summarise(&positions, &areas);
    Ok(Ok(Assessment {
        site_name: site.name().map(str::to_string),
        frequency_hz: site.frequency_hz(),
        load_case: load::report(load, site, &loads),
        review_fraction: rf.get(),
        tables: tables.iter().map(table_ref).collect(),
        positions,
        areas,
        summary,
        // The validator's notes on the input (pointer: what it changed) follow the method notes.
        notes: NOTES.iter().map(|s| s.to_string()).chain(site.input_notes().iter().map(|n| n.to_string())).collect(),
        cautions: cautions(),
        provenance: None,
        warnings: crate::site::site_warnings(site),
    }))
}

/// Fills each position's and area's `regimes` from its verdicts, against
/// the built-in regimes.
fn read_builtin_regimes(tables: &[ReferenceTable], positions: &mut [PositionResult], areas: &mut [AreaResult]) {
    let assessed: Vec<&str> = tables.iter().map(|t| t.id()).collect();
    fill_regimes(crate::limits::builtin_regimes(), &assessed, positions, areas);
}

/// Sets every result's `regimes` to `regimes` read against its verdicts.
fn fill_regimes(regimes: &[Regime], assessed: &[&str], positions: &mut [PositionResult], areas: &mut [AreaResult]) {
    for p in positions.iter_mut() {
        let compared: Vec<(&str, Verdict)> = p.comparisons.iter().map(|c| (c.table_id.as_str(), c.verdict)).collect();
        p.regimes = read_regimes(regimes, assessed, &compared);
    }
    for a in areas.iter_mut() {
        let compared: Vec<(&str, Verdict)> = a.comparisons.iter().map(|c| (c.table_id.as_str(), c.verdict)).collect();
        a.regimes = read_regimes(regimes, assessed, &compared);
    }
}

impl Assessment {
    /// This result read against the built-in regimes followed by `custom`
    /// ones (for example a `--regime-file`), from the verdicts it holds.
    pub fn with_regimes(mut self, custom: &[Regime]) -> Assessment {
        let regimes: Vec<Regime> = crate::limits::builtin_regimes().iter().chain(custom).cloned().collect();
        let assessed: Vec<String> = self.tables.iter().map(|t| t.id.clone()).collect();
        let assessed: Vec<&str> = assessed.iter().map(String::as_str).collect();
        fill_regimes(&regimes, &assessed, &mut self.positions, &mut self.areas);
        self
    }
}

/// What the weighted peak index needs to know of each spectral line: a
/// harmonic some circuit carries without a stated `angle_deg` has no known
/// phase.
fn line_infos(site: &Site, excitation: &field::Excitation) -> Vec<LineInfo> {
    let unknown = site.orders_without_angle();
    excitation
        .lines
        .iter()
        .map(|l| LineInfo { order: l.order, frequency_hz: l.frequency_hz, phase_known: !unknown.contains(&l.order) })
        .collect()
}

/// Every reason the assessment cannot run, or the resolved circuit loads.
fn check_inputs(
    site: &Site,
    load: &LoadCase,
    tables: &[ReferenceTable],
    options: &Options,
) -> Result<Vec<crate::site::CircuitLoad>, AssessError> {
    let mut err = AssessError { no_tables: tables.is_empty(), ..AssessError::default() };
    let loads = load.resolve(site).unwrap_or_else(|e| {
        err.in_load = e.in_load;
        err.in_site = e.in_site;
        Vec::new()
    });
    err.in_site.0.extend(check_grid_budget(site, options.max_grid_cells).0);
    if err.is_empty() { Ok(loads) } else { Err(err) }
}

/// Adds the implant screening table when the site has implant wearers and
/// no table chosen covers them.
pub(crate) fn with_implant_table(site: &Site, mut tables: Vec<ReferenceTable>) -> Vec<ReferenceTable> {
    if site.positions().iter().any(|q| q.group == Group::ImplantWearer)
        && !tables.iter().any(|t| t.applies_to().population == Population::ImplantWearers)
        && let Some(t) = builtin_table(IMPLANT_TABLE_ID)
    {
        tables.push(t.clone());
    }
    tables
}

fn table_ref(t: &ReferenceTable) -> TableRef {
    TableRef {
        id: t.id().to_string(),
        version: t.version(),
        title: t.doc().title.clone(),
        kind: t.doc().kind,
        applies_to: t.applies_to(),
        source: t.doc().source.clone(),
    }
}

fn assess_positions(
    site: &Site,
    plan: &PointPlan,
    sampler: &Sampler<'_>,
    tables: &[ReferenceTable],
    rf: ReviewFraction,
) -> Vec<PositionResult> {
    site.positions()
        .iter()
        .zip(&plan.positions)
        .map(|(q, span)| {
            let samples: Vec<HeightSample> = span
                .clone()
                .map(|i| HeightSample {
                    height_m: match q.placement {
                        Placement::Standing { .. } => Some(plan.points[i].z),
                        Placement::Point(_) => None,
                    },
                    at: plan.points[i],
                    field: sampler.sample(i),
                })
                .collect();
            let applicable: Vec<&ReferenceTable> =
                tables.iter().filter(|t| table_applies(t, q.body_region, q.group)).collect();
            assess_position(q, &samples, &applicable, rf, site.frequency_hz(), &sampler.lines)
        })
        .collect()
}

fn assess_areas(
    site: &Site,
    sampler: &Sampler<'_>,
    engine: &peak::Engine<'_>,
    tables: &[ReferenceTable],
    rf: ReviewFraction,
    max_refine_pairs: u64,
) -> Result<Result<Vec<AreaResult>, AssessError>, Cancelled> {
    let area_tables: Vec<&ReferenceTable> =
        tables.iter().filter(|t| table_applies(t, BodyRegion::WholeBody, Group::General)).collect();
    let measures = AreaMeasures::of(&area_tables, &sampler.line_hz);
    let weightings: Vec<Weighting> = area_tables.iter().map(|t| Weighting::of(t, &sampler.lines)).collect();
    let mut left = max_refine_pairs;
    let mut out = Vec::with_capacity(site.areas().len());
    for (k, a) in site.areas().iter().enumerate() {
        let mut indices: Vec<cells::CellIndex<'_>> = area_tables
            .iter()
            .zip(&weightings)
            .map(|(t, weighting)| cells::CellIndex {
                weighting,
                levels: line_levels(t, &sampler.line_hz),
                highest: Ok(0.0),
            })
            .collect();
        let cells = cells::sample_area(engine, a, &mut indices)?;
        let peak = match area_peak(engine, a, &cells, &measures.list, left) {
            Ok(peak) => peak,
            Err(peak::Unfinished::OverBudget(e)) => return Ok(Err(refine_over_budget(k, e))),
            Err(peak::Unfinished::Cancelled) => return Err(Cancelled),
        };
        left = left.saturating_sub(peak.pairs);
        let worst_phasors = worst_point_phasors(engine, &peak, &measures);
        let cell_index: Vec<Result<f64, NotComputed>> = indices.into_iter().map(|i| i.highest).collect();
        out.push(assess_area(
            a,
            &cells,
            &area_tables,
            (rf, site.frequency_hz()),
            &sampler.line_hz,
            &AreaPeakView { peak: &peak, measures: &measures },
            (&weightings, &cell_index),
            &worst_phasors,
        ));
    }
    Ok(Ok(out))
}

/// What an area's maximum is taken of: the resultant first, then the ratio
/// of each table that covers every spectral line present.
struct AreaMeasures {
    list: Vec<peak::Measure>,
    /// Index into `list` per area table (`None`: not covered).
    of_table: Vec<Option<usize>>,
}

impl AreaMeasures {
    fn of(tables: &[&ReferenceTable], line_hz: &[f64]) -> AreaMeasures {
        let mut list = vec![peak::Measure::Resultant];
        let mut of_table = Vec::with_capacity(tables.len());
        for t in tables {
            let levels: Option<Vec<f64>> = line_levels(t, line_hz).into_iter().collect();
            of_table.push(levels.map(|l| {
                list.push(peak::Measure::Ratio(l.iter().map(|b| 1.0 / b).collect()));
                list.len() - 1
            }));
        }
        AreaMeasures { list, of_table }
    }
}

/// Per area table, the field phasors at the point of the summation's
/// maximum over the area (cells, boundary or refinement; `None` when the
/// table does not cover the lines or the point lies inside a conductor),
/// so the area's weighted peak index also counts that point.
fn worst_point_phasors(
    engine: &peak::Engine<'_>,
    peak: &peak::AreaPeak,
    measures: &AreaMeasures,
) -> Vec<Option<Vec<field::FieldPhasor>>> {
    measures
        .of_table
        .iter()
        .map(|m| {
            let at = peak.max[(*m)?].at?;
            let set = field::evaluate(engine.filaments, &[at], engine.excitation);
            set.inside.is_empty().then(|| set.at(0).to_vec())
        })
        .collect()
}

/// An area's refined maximum with the measures it was taken of.
struct AreaPeakView<'a> {
    peak: &'a peak::AreaPeak,
    measures: &'a AreaMeasures,
}

fn area_peak(
    engine: &peak::Engine<'_>,
    a: &crate::site::Area,
    cells: &cells::AreaCells,
    measures: &[peak::Measure],
    budget_pairs: u64,
) -> Result<peak::AreaPeak, peak::Unfinished> {
    peak::area_peak(engine, &peak::AreaShape::of(a), measures, cells, budget_pairs)
}

/// An area's refined maximum as [`area_maxima_with_and_without_pruning`]
/// gives it: per measure (the resultant, then each covered table's ratio)
/// the highest sample, where it is and the proven bound.
#[doc(hidden)]
#[derive(Debug, Clone, PartialEq)]
pub struct RefinedMaximum {
    pub max: Vec<f64>,
    pub at: Vec<Option<[f64; 3]>>,
    pub bound: Vec<f64>,
    pub settled: bool,
    pub refinement_samples: usize,
    pub pairs: u64,
}

/// For the tests of the first refinement round's pruning, not for use:
/// every area's refined maximum `[pruned, unpruned]` at `load`, with no
/// budget (`None`: the load does not resolve).
#[doc(hidden)]
pub fn area_maxima_with_and_without_pruning(
    site: &Site,
    load: &LoadCase,
    tables: &[ReferenceTable],
) -> Option<Vec<[RefinedMaximum; 2]>> {
    let loads = load.resolve(site).ok()?;
    let excitation = site.excitation_at(&loads);
    let filaments = crate::site::filaments(site.conductors());
    let bounds = field::bound::SegmentBounds::new(&filaments, &excitation);
    let cancel = Cancel::never();
    let engine = peak::Engine { filaments: &filaments, excitation: &excitation, bounds: &bounds, cancel: &cancel };
    let line_hz: Vec<f64> = excitation.lines.iter().map(|l| l.frequency_hz).collect();
    let area_tables: Vec<&ReferenceTable> =
        tables.iter().filter(|t| table_applies(t, BodyRegion::WholeBody, Group::General)).collect();
    let measures = AreaMeasures::of(&area_tables, &line_hz);
    let refined = |a: &crate::site::Area, cells: &cells::AreaCells, blocks| {
        let shape = peak::AreaShape::of(a);
        let p = uncancelled_peak(peak::area_peak_with(&engine, &shape, &measures.list, cells, u64::MAX, blocks));
        RefinedMaximum {
            max: p.max.iter().map(|m| m.value).collect(),
            at: p.max.iter().map(|m| m.at.map(|q| [q.x, q.y, q.z])).collect(),
            bound: p.bound,
            settled: p.settled,
            refinement_samples: p.refinement_samples,
            pairs: p.pairs,
        }
    };
    let out = site
        .areas()
        .iter()
        .map(|a| {
            let cells = uncancelled(cells::sample_area(&engine, a, &mut []));
            [refined(a, &cells, peak::CellBlocks::Pruned), refined(a, &cells, peak::CellBlocks::Unpruned)]
        })
        .collect();
    Some(out)
}

/// A refinement that cannot stop: no budget and a flag never set.
fn uncancelled_peak(r: Result<peak::AreaPeak, peak::Unfinished>) -> peak::AreaPeak {
    match r {
        Ok(p) => p,
        Err(e) => unreachable!("an unlimited, uncancelled refinement stopped: {e:?}"),
    }
}

fn refine_over_budget(area_index: usize, e: peak::OverBudget) -> AssessError {
    let at = crate::site::Pointer::root().key("areas").index(area_index).key("spacing_m");
    let mut p = Problems::default();
    p.push(
        &at,
        format!(
            "proving this area's maximum needs more than {} segment-point pairs, over the compute budget: make the area smaller, keep it further from the conductors, or coarsen spacing_m",
            e.needed_pairs
        ),
    );
    AssessError { over_budget: p, ..AssessError::default() }
}

fn dedup_tables(tables: &[ReferenceTable]) -> Vec<ReferenceTable> {
    let mut out: Vec<ReferenceTable> = Vec::new();
    for t in tables {
        if !out.iter().any(|o| o.id() == t.id()) {
            out.push(t.clone());
        }
    }
    out
}

/// Whether `table` applies to a point of `region` for `group`: whole-body
/// tables to whole-body positions and areas, limb tables to limb positions,
/// implant-wearer tables to implant wearers only.
pub(crate) fn table_applies(table: &ReferenceTable, region: BodyRegion, group: Group) -> bool {
    let a = table.applies_to();
    let region_ok = match region {
        BodyRegion::WholeBody => a.body_region == TableBodyRegion::WholeBody,
        BodyRegion::Limb => a.body_region == TableBodyRegion::Limbs,
    };
    let group_ok = a.population != Population::ImplantWearers || group == Group::ImplantWearer;
    // Implant screening is a whole-body figure, and applies to a device
    // wearer's limb positions as well.
    let implant_any_region = a.population == Population::ImplantWearers && group == Group::ImplantWearer;
    (region_ok && group_ok) || implant_any_region
}

fn level_at_fundamental(t: &ReferenceTable, f0_hz: f64) -> Option<f64> {
    t.level_ut(f0_hz).ok()
}

/// The worst verdict of a list (a result that could not be judged ranks
/// above `approaching`; see [`Verdict::severity`]).
fn worst_of(verdicts: impl Iterator<Item = Verdict>) -> Option<Verdict> {
    verdicts.max_by_key(|v| v.severity())
}

fn assess_position(
    q: &crate::site::Position,
    samples: &[HeightSample],
    tables: &[&ReferenceTable],
    rf: ReviewFraction,
    f0_hz: f64,
    lines: &[LineInfo],
) -> PositionResult {
    let computed: Vec<&HeightSample> = samples.iter().filter(|s| s.field.computed()).collect();
    let max = computed.iter().max_by(|a, b| a.field.resultant_ut.total_cmp(&b.field.resultant_ut));
    let mean = mean_of(computed.iter().map(|s| s.field.resultant_ut));
    let mean_spectrum = mean_spectrum(&computed);
    let comparisons: Vec<PositionComparison> = tables
        .iter()
        .map(|t| compare_position(t, &computed, &mean_spectrum, rf, f0_hz, &Weighting::of(t, lines)))
        .collect();
    let verdict = if tables.is_empty() {
        Verdict::NotCovered
    } else {
        worst_of(comparisons.iter().map(|c| c.verdict)).unwrap_or(Verdict::NotComputed)
    };
    let max_resultant_ut = max.map(|s| s.field.resultant_ut);
    PositionResult {
        id: q.id.clone(),
        body_region: q.body_region,
        group: q.group,
        heights: samples.iter().map(|s| height_result(s, tables, rf, lines)).collect(),
        max_resultant_ut,
        max_height_m: max.and_then(|s| s.height_m),
        mean_resultant_ut: mean,
        comparisons,
        verdict,
        time_weighted: time_weighted(q.occupancy_h, max_resultant_ut),
        notes: position_notes(q, tables.is_empty(), computed.len() < samples.len()),
        regimes: Vec::new(),
    }
}

fn mean_of(values: impl ExactSizeIterator<Item = f64>) -> Option<f64> {
    let n = values.len();
    (n > 0).then(|| values.sum::<f64>() / n as f64)
}

/// Mean resultant per spectral line over the computed heights, µT.
fn mean_spectrum(computed: &[&HeightSample]) -> Vec<(f64, f64)> {
    let Some(first) = computed.first() else { return Vec::new() };
    (0..first.field.spectrum.len())
        .map(|k| {
            let f = first.field.spectrum[k].0;
            (f, computed.iter().map(|s| s.field.spectrum[k].1).sum::<f64>() / computed.len() as f64)
        })
        .collect()
}

/// One height's field and its verdict against each table.
fn height_result(s: &HeightSample, tables: &[&ReferenceTable], rf: ReviewFraction, lines: &[LineInfo]) -> HeightResult {
    let ok = s.field.computed();
    HeightResult {
        height_m: s.height_m,
        at: [s.at.x, s.at.y, s.at.z],
        resultant_ut: ok.then_some(s.field.resultant_ut),
        maximum_ut: ok.then_some(s.field.maximum_ut),
        frequencies: if ok {
            s.field.spectrum.iter().map(|(f, b)| SpectralValue { frequency_hz: *f, resultant_ut: *b }).collect()
        } else {
            Vec::new()
        },
        inside_conductors: s.field.inside.clone(),
        comparisons: tables.iter().map(|t| compare_point(t, &s.field, rf, &Weighting::of(t, lines))).collect(),
    }
}

/// One point against one table: both numbers, the verdict of the one the
/// table's rule picks.
fn compare_point(t: &ReferenceTable, field: &Sample, rf: ReviewFraction, weighting: &Weighting) -> PointComparison {
    if !field.computed() {
        return PointComparison {
            table_id: t.id().into(),
            ratio: None,
            verdict: Verdict::NotComputed,
            weighted_peak: WeightedPeak::no_field(),
        };
    }
    let r = ratio_of(&field.spectrum, t);
    let d = weighted_peak::decide(t.decision_rule(), r.ratio, weighting.index(&field.phasors));
    PointComparison {
        table_id: t.id().into(),
        ratio: r.ratio,
        verdict: verdict_of(d.deciding, rf),
        weighted_peak: d.into(),
    }
}

/// The verdict of a deciding number (`None`: not covered).
fn verdict_of(deciding: Option<f64>, rf: ReviewFraction) -> Verdict {
    match deciding {
        Some(r) => Verdict::of_ratio(r, rf),
        None => Verdict::NotCovered,
    }
}

/// The highest index over several points, or the first reason one is
/// missing (a position's index needs every height).
fn highest_index(indices: impl Iterator<Item = Result<f64, NotComputed>>) -> Result<f64, NotComputed> {
    let mut best = 0.0f64;
    for i in indices {
        best = best.max(i?);
    }
    Ok(best)
}

/// A position against one table: the verdict of its worst computed height.
fn compare_position(
    t: &ReferenceTable,
    computed: &[&HeightSample],
    mean_spectrum: &[(f64, f64)],
    rf: ReviewFraction,
    f0_hz: f64,
    weighting: &Weighting,
) -> PositionComparison {
    let level_ut = level_at_fundamental(t, f0_hz);
    let ratios: Vec<(Option<f64>, Ratio)> =
        computed.iter().map(|s| (s.height_m, ratio_of(&s.field.spectrum, t))).collect();
    // An uncovered ratio (None) ranks as the worst.
    let worst =
        ratios.iter().max_by(|a, b| a.1.ratio.unwrap_or(f64::INFINITY).total_cmp(&b.1.ratio.unwrap_or(f64::INFINITY)));
    let Some((worst_height_m, worst)) = worst else {
        return PositionComparison {
            table_id: t.id().into(),
            ratio: None,
            verdict: Verdict::NotComputed,
            worst_height_m: None,
            ratio_of_height_mean: None,
            level_ut,
            per_frequency: Vec::new(),
            uncovered_hz: Vec::new(),
            weighted_peak: WeightedPeak::no_field(),
        };
    };
    // The worst height under the weighted peak rule may be another height:
    // the index is the highest over all heights.
    let index = highest_index(computed.iter().map(|s| weighting.index(&s.field.phasors)));
    let d = weighted_peak::decide(t.decision_rule(), worst.ratio, index);
    PositionComparison {
        table_id: t.id().into(),
        ratio: worst.ratio,
        verdict: verdict_of(d.deciding, rf),
        worst_height_m: *worst_height_m,
        ratio_of_height_mean: ratio_of(mean_spectrum, t).ratio,
        level_ut,
        per_frequency: worst.per_frequency.clone(),
        uncovered_hz: worst.uncovered_hz.clone(),
        weighted_peak: d.into(),
    }
}

fn position_notes(q: &crate::site::Position, no_table: bool, some_inside: bool) -> Vec<String> {
    let mut notes = Vec::new();
    if no_table {
        notes.push(
            match q.body_region {
                BodyRegion::Limb => {
                    "no selected table applies to limb positions: add a limb table (for example eu-2013-35-limbs)"
                }
                BodyRegion::WholeBody => "no selected table applies to whole-body positions",
            }
            .to_string(),
        );
    }
    if q.group == Group::ImplantWearer {
        notes.push(
            "implant wearer: passing the screening level does not clear a device wearer; the device's data and a specialist assessment decide"
                .to_string(),
        );
    }
    if some_inside {
        notes.push("some evaluation points lie inside a conductor and are not computed: move the position".to_string());
    }
    notes
}

fn time_weighted(occupancy_h: Option<f64>, b_ut: Option<f64>) -> Option<TimeWeighted> {
    let (h, b) = (occupancy_h?, b_ut?);
    Some(TimeWeighted { occupancy_h: h, twa_8h_ut: b * h.min(8.0) / 8.0 })
}

fn assess_area(
    a: &crate::site::Area,
    cells: &cells::AreaCells,
    tables: &[&ReferenceTable],
    (rf, f0_hz): (ReviewFraction, f64),
    line_hz: &[f64],
    pv: &AreaPeakView<'_>,
    (weightings, cell_index): (&[Weighting], &[Result<f64, NotComputed>]),
    worst_phasors: &[Option<Vec<field::FieldPhasor>>],
) -> AreaResult {
    let computed = cells.computed_count();
    let comparisons: Vec<AreaComparison> = tables
        .iter()
        .zip(&pv.measures.of_table)
        .zip(weightings.iter().zip(cell_index))
        .zip(worst_phasors)
        .map(|(((t, m), (weighting, cell_index)), worst)| {
            let peak = m.map(|m| (pv.peak, m));
            let index = (weighting, cell_index.clone(), worst.as_deref());
            compare_area(t, cells, (rf, f0_hz), line_hz, peak, index)
        })
        .collect();
    let resultant = pv.peak.max[0];
    let max_resultant_ut = resultant.at.map(|_| resultant.value);
    let bounded = pv.peak.settled && resultant.at.is_some();
    let max_bound_ut = bounded.then_some(pv.peak.bound[0]);
    let resultants = cells.computed_lines().map(cells::total_ut);
    AreaResult {
        id: a.id.clone(),
        height_m: a.height_m,
        spacing_m: a.spacing_m,
        cells: cells.len(),
        cells_inside_conductors: cells.len() - computed,
        max_resultant_ut,
        max_at: resultant.at.map(|p| [p.x, p.y, p.z]),
        mean_resultant_ut: (computed > 0).then(|| resultants.sum::<f64>() / computed as f64),
        verdict: worst_of(comparisons.iter().map(|c| c.verdict)).unwrap_or(Verdict::NotCovered),
        comparisons,
        time_weighted: time_weighted(a.occupancy_h, max_resultant_ut),
        max_bound_ut,
        max_bounded: bounded,
        max_certainty: certainty_words(max_resultant_ut, max_bound_ut, pv.peak.bound[0]),
        boundary_samples: pv.peak.boundary_samples,
        refinement_samples: pv.peak.refinement_samples,
        share_basis: SHARE_BASIS.to_string(),
        regimes: Vec::new(),
    }
}

/// The area maximum's certainty in words.
fn certainty_words(max_ut: Option<f64>, bound_ut: Option<f64>, raw_bound_ut: f64) -> String {
    match (max_ut, bound_ut) {
        (None, _) => "no point of the area could be computed".to_string(),
        (Some(m), Some(b)) => {
            let below = if b > 0.0 { (1.0 - m / b).max(0.0) * 100.0 } else { 0.0 };
            format!(
                "proven within {below:.2} % below the true maximum, which is at most {b:.2} µT (target: within 1 %)"
            )
        }
        (Some(_), None) if raw_bound_ut.is_finite() => format!(
            "not bounded within 1 %: a conductor passes through or just beside the area; near its surface the field may reach {raw_bound_ut:.0} µT, above the reported maximum"
        ),
        (Some(_), None) => {
            "not bounded: a conductor passes through or just beside the area; the true maximum may be higher than reported"
                .to_string()
        }
    }
}

/// What the computed cells say against one table: the highest ratio, the
/// cells at or above each threshold, and the frequencies the table does
/// not cover (each once, in the order the cells meet them).
struct CellRatios {
    max: f64,
    at_or_above: [usize; 2],
    uncovered: Vec<f64>,
}

/// The computed cells' exposure ratios against `t`, reduced as they are
/// formed (no list of ratios), counting those at or above `thresholds`.
fn cell_ratios(t: &ReferenceTable, cells: &cells::AreaCells, line_hz: &[f64], thresholds: [f64; 2]) -> CellRatios {
    let levels = line_levels(t, line_hz);
    let mut out = CellRatios { max: 0.0, at_or_above: [0, 0], uncovered: Vec::new() };
    for lines in cells.computed_lines() {
        match exposure_ratio(lines.iter().copied(), &levels) {
            Ok(r) => {
                out.max = out.max.max(r);
                for (count, threshold) in out.at_or_above.iter_mut().zip(thresholds) {
                    *count += usize::from(r >= threshold);
                }
            }
            Err(lines) => {
                for f in lines.iter().map(|k| line_hz[*k]) {
                    if !out.uncovered.contains(&f) {
                        out.uncovered.push(f);
                    }
                }
            }
        }
    }
    out
}

/// An area `t` cannot judge: no computed cell (`n == 0`), or frequencies
/// the table does not cover.
fn unjudged_area(t: &ReferenceTable, n: usize, level_ut: Option<f64>, uncovered: Vec<f64>) -> AreaComparison {
    let why = if n == 0 { NotComputed::NoField } else { NotComputed::NotCovered };
    AreaComparison {
        table_id: t.id().into(),
        max_ratio: None,
        verdict: if n == 0 { Verdict::NotComputed } else { Verdict::NotCovered },
        level_ut,
        share_at_or_above_level: None,
        share_at_or_above_review: None,
        uncovered_hz: uncovered,
        max_ratio_bound: None,
        weighted_peak: WeightedPeak { weighted_peak_note: Some(why.note()), ..WeightedPeak::no_field() },
    }
}

/// An area against one table: the highest ratio over the area (cells,
/// boundary and refinement; `peak` with the table's measure index) and the
/// shares of cells at or above the level and the review fraction.
fn compare_area(
    t: &ReferenceTable,
    cells: &cells::AreaCells,
    (rf, f0_hz): (ReviewFraction, f64),
    line_hz: &[f64],
    peak: Option<(&peak::AreaPeak, usize)>,
    (weighting, cell_index, worst_phasors): (&Weighting, Result<f64, NotComputed>, Option<&[field::FieldPhasor]>),
) -> AreaComparison {
    let n = cells.computed_count();
    let r = cell_ratios(t, cells, line_hz, [1.0, rf.get()]);
    let level_ut = level_at_fundamental(t, f0_hz);
    if !r.uncovered.is_empty() || n == 0 {
        return unjudged_area(t, n, level_ut, r.uncovered);
    }
    let cell_max = r.max;
    let (max_ratio, max_ratio_bound, verdict_ratio) = match peak {
        Some((p, m)) => {
            let max = cell_max.max(p.max[m].value);
            let bound = p.settled.then_some(p.bound[m].max(max));
            (max, bound, bound.unwrap_or(max))
        }
        None => (cell_max, None, cell_max),
    };
    let share = |count: usize| count as f64 / n as f64;
    // Over the cells (taken as they were sampled) and at the summation's
    // worst point.
    let index = cell_index.and_then(|best| match worst_phasors.map(|b| weighting.index(b)) {
        Some(Ok(i)) => Ok(best.max(i)),
        Some(Err(why)) => Err(why),
        None => Ok(best),
    });
    let d = weighted_peak::decide(t.decision_rule(), Some(verdict_ratio), index);
    let deciding = match d.decided_by {
        DecisionRule::WeightedPeak => d.deciding.map(|i| area_index_for_verdict(i, cell_max, verdict_ratio)),
        DecisionRule::Summation => Some(verdict_ratio),
    };
    AreaComparison {
        table_id: t.id().into(),
        max_ratio: Some(max_ratio),
        verdict: verdict_of(deciding, rf),
        level_ut,
        share_at_or_above_level: Some(share(r.at_or_above[0])),
        share_at_or_above_review: Some(share(r.at_or_above[1])),
        uncovered_hz: Vec::new(),
        max_ratio_bound,
        weighted_peak: d.into(),
    }
}

/// The number an area's verdict is read from under the weighted peak rule.
/// The index is taken over the grid cells and the summation's worst point
/// only; between them it may be higher. To stay on the safe side it is raised by the factor by which the
/// summation's maximum over the area (proven bound, boundary and
/// refinement) exceeds the summation's maximum over the cells, and never
/// put above the summation's own verdict number (the summation is never
/// below the index). This margin is a judgement, not a proof.
fn area_index_for_verdict(cells_index: f64, cells_summation: f64, summation_verdict: f64) -> f64 {
    if cells_summation <= 0.0 {
        return summation_verdict;
    }
    (cells_index * (summation_verdict / cells_summation).max(1.0)).min(summation_verdict)
}

fn summarise(positions: &[PositionResult], areas: &[AreaResult]) -> Summary {
    let ids = |pred: &dyn Fn(Verdict) -> bool| -> Vec<String> {
        positions.iter().filter(|p| pred(p.verdict)).map(|p| p.id.clone()).collect()
    };
    let area_ids =
        |v: Verdict| -> Vec<String> { areas.iter().filter(|a| a.verdict == v).map(|a| a.id.clone()).collect() };
    let worst =
        worst_of(positions.iter().map(|p| p.verdict).chain(areas.iter().map(|a| a.verdict))).unwrap_or(Verdict::Within);
    Summary {
        worst_verdict: worst,
        positions_exceeding: ids(&|v| v == Verdict::Exceeds),
        positions_approaching: ids(&|v| v == Verdict::Approaching),
        positions_not_judged: ids(&|v| matches!(v, Verdict::NotCovered | Verdict::NotComputed)),
        areas_exceeding: area_ids(Verdict::Exceeds),
        areas_approaching: area_ids(Verdict::Approaching),
    }
}
