//! The guaranteed maximum of an area: sampled over the cells and along the
//! polygon's boundary, then refined where the bounds of
//! [`crate::field::bound`] say the field between samples could be higher,
//! until the reported maximum is provably within [`CERTAINTY`] of the true
//! one (or a region can no longer be refined: a conductor within reach).
//!
//! The polygon is covered by regions, each with a sample point and a radius
//! `ρ` that reaches every point of it: the grid's squares that meet the
//! polygon (`ρ` = half the diagonal) and the pieces of its boundary (`ρ` =
//! half the piece). A region is settled when its bound is within
//! `max / CERTAINTY`; otherwise it is split (squares in four, pieces in two)
//! and the children are sampled. Samples count towards the maximum only at
//! points of the closed polygon outside every conductor.

use super::cells::AreaCells;
use super::grid::{GridSpec, contains};
use crate::cancel::{Cancel, Cancelled};
use crate::field::{self, Excitation, Filaments, bound::SegmentBounds};
use nalgebra::{Point2, Point3};

/// The reported maximum is at least this fraction of the proven bound (the
/// issue's "within 1 % below the true maximum").
pub const CERTAINTY: f64 = 0.99;

/// Regions are not split below this fraction of the grid spacing (half-side
/// of a square, half-length of a boundary piece): 2⁻¹⁴, so a 0.25 m grid
/// stops at 15 µm. The slope term `ρ·Σ 0.4·|I|/d²` ignores the cancellation
/// between phases, so beside a balanced three-phase busbar (field falling
/// as 1/d²) it needs ρ well under a millimetre to come within 1 % (the
/// switch-room example does not settle at 2⁻¹⁰ of its spacing); only the few regions
/// near the maximum go that deep.
const FLOOR_FRACTION: f64 = 1.0 / 16384.0;

/// What is maximised, from the resultants per spectral line (both grow
/// with every line, so a bound per line bounds them).
#[derive(Debug, Clone)]
pub enum Measure {
    /// Root-sum-square over the lines, µT.
    Resultant,
    /// `Σ_f B_f / B_RL(f)`: one weight `1 / B_RL(f)` per line.
    Ratio(Vec<f64>),
}

impl Measure {
    pub fn of(&self, lines_ut: &[f64]) -> f64 {
        match self {
            Measure::Resultant => lines_ut.iter().map(|b| b * b).sum::<f64>().sqrt(),
            Measure::Ratio(w) => lines_ut.iter().zip(w).map(|(b, w)| b * w).sum(),
        }
    }
}

/// The field engine's view of a site at one load: what sampling needs,
/// and the flag that stops it.
pub struct Engine<'a> {
    pub filaments: &'a Filaments,
    pub excitation: &'a Excitation,
    pub bounds: &'a SegmentBounds,
    pub cancel: &'a Cancel,
}

impl Engine<'_> {
    /// Line resultants at each point, µT (`None` inside a conductor).
    fn sample(&self, points: &[Point3<f64>]) -> Result<Vec<Option<Vec<f64>>>, Cancelled> {
        let set = field::try_evaluate(self.filaments, points, self.excitation, self.cancel)?;
        Ok((0..points.len())
            .map(|i| set.inside_of(i).next().is_none().then(|| set.at(i).iter().map(field::resultant_ut).collect()))
            .collect())
    }
    fn pairs(&self, points: usize) -> u64 {
        (points as u64).saturating_mul(self.filaments.segment_count() as u64)
    }
}

/// The highest sample of one measure and where it is.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Peak {
    pub value: f64,
    pub at: Option<Point3<f64>>,
}

/// An area's maximum per measure, with its proven bound.
#[derive(Debug, Clone, PartialEq)]
pub struct AreaPeak {
    /// Highest sample per measure (cells, boundary, refinement).
    pub max: Vec<Peak>,
    /// Proven upper bound of the true maximum per measure (may be infinite
    /// for a zero-radius conductor within reach).
    pub bound: Vec<f64>,
    /// Every region settled within [`CERTAINTY`].
    pub settled: bool,
    /// Boundary samples taken (vertices, piece ends and midpoints).
    pub boundary_samples: usize,
    /// Samples added by refinement.
    pub refinement_samples: usize,
    /// Segment–point pairs spent here.
    pub pairs: u64,
}

/// The refinement would spend more than its budget of pairs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct OverBudget {
    pub needed_pairs: u64,
}

/// Why a refinement stopped without a maximum.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Unfinished {
    OverBudget(OverBudget),
    Cancelled,
}

impl From<OverBudget> for Unfinished {
    fn from(e: OverBudget) -> Self {
        Unfinished::OverBudget(e)
    }
}

impl From<Cancelled> for Unfinished {
    fn from(_: Cancelled) -> Self {
        Unfinished::Cancelled
    }
}

#[derive(Debug, Clone)]
struct Region {
    centre: Point2<f64>,
    /// Half-side of a square, half-length of a boundary piece, m.
    half_m: f64,
    /// `None` for a square; the piece's unit direction otherwise.
    along: Option<nalgebra::Vector2<f64>>,
    lines: Option<Vec<f64>>,
}

impl Region {
    fn rho_m(&self) -> f64 {
        if self.along.is_some() { self.half_m } else { self.half_m * std::f64::consts::SQRT_2 }
    }
    fn children(&self, polygon: &[Point2<f64>]) -> Vec<Region> {
        let h = self.half_m / 2.0;
        let offsets: Vec<nalgebra::Vector2<f64>> = match self.along {
            Some(u) => vec![u * h, -u * h],
            None => vec![[h, h].into(), [-h, h].into(), [h, -h].into(), [-h, -h].into()],
        };
        offsets
            .into_iter()
            .map(|o| Region { centre: self.centre + o, half_m: h, along: self.along, lines: None })
            .filter(|r| r.along.is_some() || square_meets_polygon(r.centre, h, polygon))
            .collect()
    }
}

/// The polygon, its height and its spacing.
pub struct AreaShape<'a> {
    pub polygon: &'a [Point2<f64>],
    pub height_m: f64,
    pub spacing_m: f64,
}

impl<'a> AreaShape<'a> {
    pub fn of(a: &'a crate::site::Area) -> Self {
        AreaShape { polygon: &a.polygon, height_m: a.height_m, spacing_m: a.spacing_m }
    }
}

/// Samples the boundary and refines. `cells` are the grid's cell centres
/// inside the polygon with their line resultants (`None` inside a
/// conductor); `budget_pairs` the pairs this area may still spend. The
/// engine's flag is looked at before each batch of samples and each
/// region's bound. The cells are regions of the first round without being
/// copied into one: only those that do not settle are split.
pub fn area_peak(
    engine: &Engine<'_>,
    area: &AreaShape<'_>,
    measures: &[Measure],
    cells: &AreaCells,
    budget_pairs: u64,
) -> Result<AreaPeak, Unfinished> {
    area_peak_with(engine, area, measures, cells, budget_pairs, CellBlocks::Pruned)
}

/// Whether the first round skips blocks of cells whose bound is below the
/// maximum ([`State::block_below_max`]); `Unpruned` bounds every cell on its
/// own, so tests can compare both.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CellBlocks {
    Pruned,
    Unpruned,
}

/// [`area_peak`] with the first round's pruning chosen.
pub fn area_peak_with(
    engine: &Engine<'_>,
    area: &AreaShape<'_>,
    measures: &[Measure],
    cells: &AreaCells,
    budget_pairs: u64,
    blocks: CellBlocks,
) -> Result<AreaPeak, Unfinished> {
    let mut state = State::new(measures, budget_pairs);
    for c in 0..cells.len() {
        state.record(cells.at(c), cells.lines(c));
    }
    let mut fresh = edge_cells(area, cells);
    let (ends, pieces) = boundary_pieces(area);
    state.boundary_samples = ends.len() + pieces.len();
    let end_lines = state.sample(engine, area, &ends)?;
    for (p, l) in ends.iter().zip(&end_lines) {
        state.record(Point3::new(p.x, p.y, area.height_m), l.as_deref());
    }
    fresh.extend(pieces);
    state.sample_regions(engine, area, &mut fresh)?;
    let floor_m = area.spacing_m * FLOOR_FRACTION;
    let mut next = state.settle_cells(engine, area, cells, floor_m, blocks)?;
    let mut scratch = BoundScratch::default();
    // The first round is the cells (above) and the fresh regions.
    let mut round_has_regions = cells.len() > 0 || !fresh.is_empty();
    let mut regions = fresh;
    while round_has_regions {
        for r in &regions {
            engine.cancel.check()?;
            if !state.settle(engine, area, r, r.lines.as_deref(), floor_m, &mut scratch) {
                next.extend(r.children(area.polygon));
            }
        }
        state.refinement_samples += next.len();
        state.sample_regions(engine, area, &mut next)?;
        regions = std::mem::take(&mut next);
        round_has_regions = !regions.is_empty();
    }
    Ok(state.finish())
}

/// Cells settled between two looks at the cancel flag.
const CELLS_PER_CANCEL_CHECK: usize = 4096;

/// Grid nodes of one row spanned by a block of cells bounded at once in
/// the first round: 32 cells reach 16 spacings either side of the block's
/// centre, a few per cent of the distance at which a conductor's slope
/// bound lets a cell settle, so far from the maximum most blocks settle
/// whole and near it few cells are bounded twice (measured on
/// `benches/area.rs`: 16 and 64 were no faster).
const BLOCK_NODES: usize = 32;

/// Buffers of one region's bound, reused from region to region.
#[derive(Default)]
struct BoundScratch {
    lines: Vec<f64>,
    measures: Vec<f64>,
    value: Vec<f64>,
    slope: Vec<f64>,
}

/// Running maximum and bound of one area's refinement.
struct State<'m> {
    measures: &'m [Measure],
    max: Vec<Peak>,
    bound: Vec<f64>,
    settled: bool,
    boundary_samples: usize,
    refinement_samples: usize,
    pairs: u64,
    budget_pairs: u64,
}

impl<'m> State<'m> {
    fn new(measures: &'m [Measure], budget_pairs: u64) -> Self {
        State {
            measures,
            max: vec![Peak { value: 0.0, at: None }; measures.len()],
            bound: vec![0.0; measures.len()],
            settled: true,
            boundary_samples: 0,
            refinement_samples: 0,
            pairs: 0,
            budget_pairs,
        }
    }

    /// A sample of the closed polygon raises the maximum.
    fn record(&mut self, at: Point3<f64>, lines: Option<&[f64]>) {
        let Some(lines) = lines else { return };
        for (q, m) in self.measures.iter().zip(self.max.iter_mut()) {
            let v = q.of(lines);
            if v > m.value || m.at.is_none() {
                *m = Peak { value: v, at: Some(at) };
            }
        }
    }

    fn sample(
        &mut self,
        engine: &Engine<'_>,
        area: &AreaShape<'_>,
        at: &[Point2<f64>],
    ) -> Result<Vec<Option<Vec<f64>>>, Unfinished> {
        self.pairs = self.pairs.saturating_add(engine.pairs(at.len()));
        if self.pairs > self.budget_pairs {
            return Err(OverBudget { needed_pairs: self.pairs }.into());
        }
        let points: Vec<Point3<f64>> = at.iter().map(|p| Point3::new(p.x, p.y, area.height_m)).collect();
        Ok(engine.sample(&points)?)
    }

    /// Samples every region's centre; centres on the closed polygon count
    /// towards the maximum (a piece's centre lies on the boundary).
    fn sample_regions(
        &mut self,
        engine: &Engine<'_>,
        area: &AreaShape<'_>,
        regions: &mut [Region],
    ) -> Result<(), Unfinished> {
        let centres: Vec<Point2<f64>> = regions.iter().map(|r| r.centre).collect();
        let lines = self.sample(engine, area, &centres)?;
        for (r, l) in regions.iter_mut().zip(lines) {
            if r.along.is_some() || contains(area.polygon, r.centre) {
                self.record(Point3::new(r.centre.x, r.centre.y, area.height_m), l.as_deref());
            }
            r.lines = l;
        }
        Ok(())
    }

    /// Settles every cell as a region of the first round, spread over the
    /// pool in runs of [`CELLS_PER_CANCEL_CHECK`]; the children of those
    /// that do not settle, in cell order. The maxima are not changed by
    /// settling, and bounds combine by `max`, so the result is the one of
    /// settling the cells one by one. With `CellBlocks::Pruned` a block of
    /// cells whose bound is below the maximum ([`State::block_below_max`])
    /// is passed over: each of its cells would settle, and its bound could
    /// not raise [`AreaPeak::bound`], which is never below the maximum.
    fn settle_cells(
        &mut self,
        engine: &Engine<'_>,
        area: &AreaShape<'_>,
        cells: &AreaCells,
        floor_m: f64,
        blocks: CellBlocks,
    ) -> Result<Vec<Region>, Cancelled> {
        use rayon::prelude::*;
        let runs = cells.len().div_ceil(CELLS_PER_CANCEL_CHECK);
        let this = &*self;
        let parts: Vec<Result<(State<'m>, Vec<Region>), Cancelled>> = (0..runs)
            .into_par_iter()
            .map(|k| {
                engine.cancel.check()?;
                let mut run = State { max: this.max.clone(), ..State::new(this.measures, this.budget_pairs) };
                let (mut children, mut scratch) = (Vec::new(), BoundScratch::default());
                let end = ((k + 1) * CELLS_PER_CANCEL_CHECK).min(cells.len());
                let mut start = k * CELLS_PER_CANCEL_CHECK;
                while start < end {
                    let block = start..cells.row_block_end(start, end, BLOCK_NODES);
                    start = block.end;
                    if blocks == CellBlocks::Pruned
                        && run.block_below_max(engine, area, cells, block.clone(), &mut scratch)
                    {
                        continue;
                    }
                    for c in block {
                        let r =
                            Region { centre: cells.at(c).xy(), half_m: area.spacing_m / 2.0, along: None, lines: None };
                        if !run.settle(engine, area, &r, cells.lines(c), floor_m, &mut scratch) {
                            children.extend(r.children(area.polygon));
                        }
                    }
                }
                Ok((run, children))
            })
            .collect();
        let mut next = Vec::new();
        for part in parts {
            let (run, children) = part?;
            for (b, r) in self.bound.iter_mut().zip(&run.bound) {
                *b = b.max(*r);
            }
            self.settled &= run.settled;
            next.extend(children);
        }
        Ok(next)
    }

    /// Whether every cell of `block` (cells of one grid row) has, for every
    /// measure, a bound ([`State::settle`]) at most the maximum so far: such a
    /// cell settles and leaves the final bound as it is. Checked on one
    /// bound that is at least each cell's, line by line: the ball around
    /// the block's middle that holds every cell's ball gives value and slope
    /// sums at least each cell's ([`SegmentBounds::ball_bounds_into`]), the
    /// block's highest sample per line is at least each cell's, and a cell
    /// inside a conductor has the value bound alone. Both measures grow with
    /// every line, and rounding keeps larger inputs larger.
    fn block_below_max(
        &self,
        engine: &Engine<'_>,
        area: &AreaShape<'_>,
        cells: &AreaCells,
        block: std::ops::Range<usize>,
        scratch: &mut BoundScratch,
    ) -> bool {
        let (first, last) = (cells.at(block.start), cells.at(block.end - 1));
        // The same radius as a cell's region (`Region::rho_m` of a square).
        let rho_m = area.spacing_m / 2.0 * std::f64::consts::SQRT_2;
        let centre = Point3::new((first.x + last.x) / 2.0, first.y, first.z);
        let reach_m = (last.x - first.x) / 2.0 + rho_m;
        if !engine.bounds.ball_bounds_into(&centre, reach_m, &mut scratch.value, &mut scratch.slope) {
            return false;
        }
        let highest = &mut scratch.lines;
        highest.clear();
        highest.resize(scratch.value.len(), 0.0);
        let mut any_inside = false;
        for c in block {
            match cells.lines(c) {
                Some(l) => highest.iter_mut().zip(l).for_each(|(h, b)| *h = h.max(*b)),
                None => any_inside = true,
            }
        }
        for ((h, v), s) in highest.iter_mut().zip(&scratch.value).zip(&scratch.slope) {
            *h = if any_inside { *v } else { v.min(*h + rho_m * s) };
        }
        self.measures.iter().zip(&self.max).all(|(q, m)| q.of(highest) <= m.value)
    }

    /// Whether `r` is settled (its bound is recorded); a region at the
    /// floor is recorded as it stands and leaves the maximum unsettled.
    /// `lines` are the line resultants sampled at its centre (`None`:
    /// inside a conductor).
    fn settle(
        &mut self,
        engine: &Engine<'_>,
        area: &AreaShape<'_>,
        r: &Region,
        lines: Option<&[f64]>,
        floor_m: f64,
        scratch: &mut BoundScratch,
    ) -> bool {
        let centre = Point3::new(r.centre.x, r.centre.y, area.height_m);
        engine.bounds.line_bounds_into(&centre, r.rho_m(), lines, &mut scratch.lines);
        let u = &mut scratch.measures;
        u.clear();
        u.extend(self.measures.iter().map(|q| q.of(&scratch.lines)));
        let within = u.iter().zip(&self.max).all(|(u, m)| *u <= m.value / CERTAINTY);
        let at_floor = r.half_m <= floor_m;
        if within || at_floor {
            for (b, u) in self.bound.iter_mut().zip(u.iter()) {
                *b = b.max(*u);
            }
            self.settled &= within;
            return true;
        }
        false
    }

    fn finish(self) -> AreaPeak {
        let bound = self.bound.iter().zip(&self.max).map(|(b, m)| b.max(m.value)).collect();
        AreaPeak {
            max: self.max,
            bound,
            settled: self.settled,
            boundary_samples: self.boundary_samples,
            refinement_samples: self.refinement_samples,
            pairs: self.pairs,
        }
    }
}

/// Squares of the bounding grid whose centre lies outside the polygon but
/// which still meet it: together with the inside cells they cover it. The
/// cells are the nodes inside (the same grid), so only the others are
/// tested.
fn edge_cells(area: &AreaShape<'_>, cells: &AreaCells) -> Vec<Region> {
    let Some(g) = GridSpec::bounding(area.polygon, area.spacing_m) else { return Vec::new() };
    let h = area.spacing_m / 2.0;
    let mut inside = cells.nodes().iter().copied().peekable();
    (0..g.len())
        .filter(|n| inside.next_if_eq(n).is_none())
        .map(|n| g.node(n % g.nx, n / g.nx))
        .map(|(x, y)| Point2::new(x, y))
        .filter(|c| square_meets_polygon(*c, h, area.polygon))
        .map(|c| Region { centre: c, half_m: h, along: None, lines: None })
        .collect()
}

/// The boundary cut into pieces of at most half the spacing: the piece
/// ends (vertices included) as samples, the pieces as regions.
fn boundary_pieces(area: &AreaShape<'_>) -> (Vec<Point2<f64>>, Vec<Region>) {
    let n = area.polygon.len();
    let (mut ends, mut pieces) = (Vec::new(), Vec::new());
    for k in 0..n {
        let (a, b) = (area.polygon[k], area.polygon[(k + 1) % n]);
        let len = (b - a).norm();
        if len == 0.0 {
            continue;
        }
        let count = (len / (area.spacing_m / 2.0)).ceil().max(1.0) as usize;
        let u = (b - a) / len;
        let half_m = len / count as f64 / 2.0;
        for i in 0..count {
            let start = a + (b - a) * (i as f64 / count as f64);
            ends.push(start);
            pieces.push(Region { centre: start + u * half_m, half_m, along: Some(u), lines: None });
        }
    }
    (ends, pieces)
}

/// Whether the square of half-side `h` around `c` meets the polygon.
fn square_meets_polygon(c: Point2<f64>, h: f64, polygon: &[Point2<f64>]) -> bool {
    if contains(polygon, c) {
        return true;
    }
    let n = polygon.len();
    (0..n).any(|k| segment_meets_square(polygon[k], polygon[(k + 1) % n], c, h))
}

/// Liang–Barsky: whether the segment `a`–`b` meets the closed square.
fn segment_meets_square(a: Point2<f64>, b: Point2<f64>, c: Point2<f64>, h: f64) -> bool {
    let d = b - a;
    let (mut t0, mut t1) = (0.0_f64, 1.0_f64);
    for (p, q) in [(-d.x, a.x - (c.x - h)), (d.x, (c.x + h) - a.x), (-d.y, a.y - (c.y - h)), (d.y, (c.y + h) - a.y)] {
        if p == 0.0 {
            if q < 0.0 {
                return false;
            }
        } else {
            let t = q / p;
            if p < 0.0 {
                t0 = t0.max(t);
            } else {
                t1 = t1.min(t);
            }
        }
    }
    t0 <= t1
}
