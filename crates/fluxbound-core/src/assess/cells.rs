//! The cells of one area as flat arrays: which grid nodes lie inside the
//! polygon, each one's resultant per spectral line and whether it lies
//! inside a conductor. No cell owns an allocation, so a 1,000,000-cell
//! area holds about 9 bytes per cell plus 8 per line (`benches/area.rs`).
//!
//! The field is evaluated [`CHUNK_CELLS`] cells at a time and reduced at
//! once to what the assessment reads, so the phasors (48 bytes per cell and
//! line) are never held for the whole area; the weighted peak index of each
//! table is taken over the chunk while its phasors are at hand.

use super::grid::{GridSpec, nodes_inside};
use super::peak::Engine;
use super::verdict::exposure_ratio;
use super::weighted_peak::{NotComputed, Weighting};
use crate::cancel::Cancelled;
use crate::field;
use crate::site::Area;
use nalgebra::Point3;

/// Cells per field evaluation: the phasors of one chunk (3 MiB per
/// spectral line) and its points (1.5 MiB) are all that is held beside the
/// flat arrays; large enough that each evaluation spreads over the pool.
const CHUNK_CELLS: usize = 1 << 16;

/// A computed index this much above the summation ratio cannot happen: the
/// index is never above the summation (triangle inequality), and both are
/// computed within about 1e-14 relative (tens of roundings). A cell whose
/// summation times this factor is below the highest index so far cannot
/// raise it, so its index is not computed (the highest is unchanged).
const INDEX_ROUNDING_MARGIN: f64 = 1.0 + 1e-9;

/// The cells of an area whose centre lies inside its polygon, in grid
/// order (row by row).
pub(super) struct AreaCells {
    grid: GridSpec,
    height_m: f64,
    line_count: usize,
    /// Grid node `j · nx + i` of each cell, ascending.
    node: Vec<usize>,
    /// Resultant RMS per spectral line, µT: `lines_ut[c · line_count + k]`.
    lines_ut: Vec<f64>,
    /// Whether each cell lies outside every conductor (has a field).
    computed: Vec<bool>,
}

impl AreaCells {
    pub fn len(&self) -> usize {
        self.node.len()
    }
    /// Centre of cell `c`, m.
    pub fn at(&self, c: usize) -> Point3<f64> {
        let n = self.node[c];
        let (x, y) = self.grid.node(n % self.grid.nx, n / self.grid.nx);
        Point3::new(x, y, self.height_m)
    }
    /// Line resultants of cell `c`, µT; `None` inside a conductor.
    pub fn lines(&self, c: usize) -> Option<&[f64]> {
        self.computed[c].then(|| &self.lines_ut[c * self.line_count..(c + 1) * self.line_count])
    }
    /// End of the block of cells from `start` (before `end`) that lie in
    /// `start`'s grid row within `nodes` nodes of it: cells are in grid
    /// order, so a block is a run of them.
    pub fn row_block_end(&self, start: usize, end: usize, nodes: usize) -> usize {
        let first = self.node[start];
        let row_end = (first / self.grid.nx + 1) * self.grid.nx;
        let limit = row_end.min(first + nodes);
        // Nodes ascend, so the block has at most `nodes` cells.
        let end = end.min(start + nodes);
        start + self.node[start..end].partition_point(|n| *n < limit)
    }
    /// Grid nodes of the cells (`j · nx + i`), ascending.
    pub fn nodes(&self) -> &[usize] {
        &self.node
    }
    /// Line resultants of every cell outside the conductors, in order.
    pub fn computed_lines(&self) -> impl Iterator<Item = &[f64]> + '_ {
        (0..self.len()).filter_map(|c| self.lines(c))
    }
    pub fn computed_count(&self) -> usize {
        self.computed.iter().filter(|c| **c).count()
    }
}

/// Resultant over all lines from the line resultants, µT: the same sum as
/// [`field::total_resultant_ut`] (`sqrt(Σ_f B_f²)`), term for term.
pub(super) fn total_ut(lines_ut: &[f64]) -> f64 {
    lines_ut.iter().map(|b| b.powi(2)).sum::<f64>().sqrt()
}

/// One table's weighted peak index over an area's cells, as the cells are
/// sampled: the highest over the computed cells, or the first reason (in
/// cell order) a cell has none.
pub(super) struct CellIndex<'w> {
    pub weighting: &'w Weighting,
    /// The table's level per spectral line, µT (`None`: not covered).
    pub levels: Vec<Option<f64>>,
    pub highest: Result<f64, NotComputed>,
}

impl CellIndex<'_> {
    /// Takes in one chunk of cells: `lines(c)` and `phasors(c)` for its
    /// cells in order, `None` for a cell inside a conductor.
    fn take_chunk<'a>(
        &mut self,
        count: usize,
        lines: impl Fn(usize) -> Option<&'a [f64]>,
        phasors: impl Fn(usize) -> &'a [field::FieldPhasor],
    ) {
        let Ok(mut best) = self.highest else { return };
        // Each cell's summation ratio (`None` inside a conductor), read
        // once; every present line is covered once the check passed.
        let mut summation = Vec::with_capacity(count);
        for c in 0..count {
            let Some(l) = lines(c) else {
                summation.push(None);
                continue;
            };
            if let Err(why) = self.weighting.check_lines(l) {
                self.highest = Err(why);
                return;
            }
            summation.push(exposure_ratio(l.iter().copied(), &self.levels).ok());
        }
        // The cell of the highest summation first: its index is near the
        // chunk's highest, so most other cells are passed over unread.
        let top = (0..count).filter_map(|c| summation[c].map(|s| (c, s))).max_by(|a, b| a.1.total_cmp(&b.1));
        let top = top.map(|(c, _)| c);
        for c in top.into_iter().chain((0..count).filter(|c| Some(*c) != top)) {
            match summation[c] {
                Some(s) if s * INDEX_ROUNDING_MARGIN >= best => match self.weighting.index(phasors(c)) {
                    Ok(i) => best = best.max(i),
                    Err(why) => {
                        self.highest = Err(why);
                        return;
                    }
                },
                _ => {}
            }
        }
        self.highest = Ok(best);
    }
}

/// Samples every cell of `area` (centres inside the polygon, on the grid
/// of [`GridSpec::bounding`]) and takes each table's index over them. The
/// engine's flag is looked at before each chunk and by the kernel.
pub(super) fn sample_area(
    engine: &Engine<'_>,
    area: &Area,
    indices: &mut [CellIndex<'_>],
) -> Result<AreaCells, Cancelled> {
    let line_count = engine.excitation.lines.len();
    let grid = GridSpec::bounding(&area.polygon, area.spacing_m).unwrap_or(GridSpec {
        x0_m: 0.0,
        y0_m: 0.0,
        spacing_m: area.spacing_m,
        nx: 0,
        ny: 0,
    });
    let node = nodes_inside(&area.polygon, &grid);
    let mut cells = AreaCells {
        grid,
        height_m: area.height_m,
        line_count,
        lines_ut: Vec::with_capacity(node.len() * line_count),
        computed: Vec::with_capacity(node.len()),
        node,
    };
    let mut points = Vec::with_capacity(CHUNK_CELLS.min(cells.len()));
    for start in (0..cells.len()).step_by(CHUNK_CELLS) {
        engine.cancel.check()?;
        let end = (start + CHUNK_CELLS).min(cells.len());
        points.clear();
        points.extend((start..end).map(|c| cells.at(c)));
        let set = field::try_evaluate(engine.filaments, &points, engine.excitation, engine.cancel)?;
        cells.lines_ut.extend((0..points.len()).flat_map(|i| set.at(i).iter().map(field::resultant_ut)));
        cells.computed.resize(end, true);
        for h in &set.inside {
            cells.computed[start + h.point] = false;
        }
        let cells = &cells;
        for index in indices.iter_mut() {
            index.take_chunk(end - start, |i| cells.lines(start + i), |i| set.at(i));
        }
    }
    Ok(cells)
}
