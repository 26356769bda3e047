//! The search over arrangements, from per-circuit field blocks.
//!
//! With the influence matrix computed once, the field of an arrangement is
//! a sum of one block per circuit: `B(p) = B_fixed(p) + Σ_i C_{i,σ_i}(p)`,
//! where `C_{i,σ}(p) = Σ_s F_{i,s}(p) · J_i[σ(s)]` and `F_{i,s}` is the
//! summed influence (times share) of circuit `i`'s conductors drawn as
//! phase `s`. A depth-first walk over the circuits keeps the partial sums
//! of every level, so each arrangement costs one block addition and one
//! magnitude per point.
//!
//! Two modes share the walk:
//! - **exhaustive**: the points are cut into tiles that fit the caches, the
//!   whole tree is walked per tile and each arrangement's maximum per target
//!   is kept; tiles run in parallel and merge by `max`, which is exact, so
//!   the result does not depend on the order;
//! - **branch and bound** (more arrangements than the exhaustive limit):
//!   one walk over all points; at a partial arrangement of the first `l`
//!   circuits the RMS magnitude of each spectral line at each point is at
//!   least `‖partial‖ − Σ_{j ≥ l} max_σ ‖C_{j,σ}‖` (triangle inequality of
//!   the Hermitian norm), every measure grows with those magnitudes, so the
//!   objective of every completion is at least the objective of these lower
//!   bounds; a subtree whose bound exceeds the current `top`-th best is
//!   skipped. A work budget can stop the walk: the smallest bound of what
//!   was left unexplored then gives the optimality gap.

use super::{Measure, Over};
use crate::cancel::{Cancel, Cancelled};
use rayon::prelude::*;

/// Points per tile of the exhaustive mode: the blocks of six circuits at
/// one line for 128 points are 37 KiB per circuit.
const TILE: usize = 128;

/// The field blocks of one search, points in target order.
pub(crate) struct Blocks {
    pub points: usize,
    pub lines: usize,
    /// `(line · 6 + component) · points + point`, components re x, y, z,
    /// im x, y, z: the currents no arrangement changes.
    pub fixed: Vec<f64>,
    /// Per circuit, per permutation, the same layout.
    pub circuit: Vec<[Vec<f64>; 6]>,
    /// Per line: `1 / level` for the ratio, unused for B.
    pub weights: Vec<f64>,
    pub measure: Measure,
    pub over: Over,
    /// Target of each point; points of a target are contiguous.
    pub target_of: Vec<u32>,
    pub targets: usize,
}

/// One evaluated arrangement: its leaf index, objective and worst target.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Leaf {
    pub index: u64,
    pub objective: f64,
    pub worst_target: u32,
    pub worst_value: f64,
}

/// What a search found.
pub(crate) struct Found {
    /// Best first, ties by leaf index.
    pub ranked: Vec<Leaf>,
    pub evaluated: u64,
    pub complete: bool,
    /// Lower bound of everything unexplored (`None` when complete).
    pub open_bound: Option<f64>,
}

impl Blocks {
    /// The highest value of each target among values at every point.
    fn target_maxima(&self, vals: &[f64]) -> Vec<f64> {
        let mut maxima = vec![f64::NEG_INFINITY; self.targets];
        for (p, v) in vals.iter().enumerate() {
            let t = self.target_of[p] as usize;
            maxima[t] = maxima[t].max(*v);
        }
        maxima
    }

    /// Objective and worst target from per-target maxima.
    fn objective(&self, maxima: &[f64]) -> (f64, u32, f64) {
        let (mut worst, mut worst_value) = (0u32, f64::NEG_INFINITY);
        for (t, v) in maxima.iter().enumerate() {
            if *v > worst_value {
                (worst, worst_value) = (t as u32, *v);
            }
        }
        let objective = match self.over {
            Over::Max => worst_value,
            Over::Mean => maxima.iter().sum::<f64>() / maxima.len().max(1) as f64,
        };
        (objective, worst, worst_value)
    }

    /// The arrangement `perms` (one permutation index per circuit) over all
    /// points, summed directly: the as-built case and checks.
    pub fn evaluate(&self, perms: &[usize]) -> Leaf {
        let n = self.points;
        let mut acc = self.fixed.clone();
        for (i, &s) in perms.iter().enumerate() {
            for (a, c) in acc.iter_mut().zip(&self.circuit[i][s]) {
                *a += c;
            }
        }
        let (mut vals, mut m2) = (vec![0.0; n], vec![0.0; n]);
        point_values(self, &acc, n, &mut vals, &mut m2, None);
        let (objective, worst_target, worst_value) = self.objective(&self.target_maxima(&vals));
        Leaf { index: 0, objective, worst_target, worst_value }
    }
}

/// Values of the measure at `len` points from a block-layout sum `acc`
/// (stride `len`); with `less`, from `max(0, ‖acc_line‖ − less)` instead.
/// `m2` is scratch of at least `len` (kept by the caller: this runs once
/// per arrangement and tile).
fn point_values(b: &Blocks, acc: &[f64], len: usize, vals: &mut [f64], m2: &mut [f64], less: Option<&[f64]>) {
    let vals = &mut vals[..len];
    vals.fill(0.0);
    let m2 = &mut m2[..len];
    for h in 0..b.lines {
        m2.fill(0.0);
        for c in 0..6 {
            let a = &acc[(h * 6 + c) * len..(h * 6 + c + 1) * len];
            for (m, x) in m2.iter_mut().zip(a) {
                *m += x * x;
            }
        }
        if let Some(less) = less {
            let r = &less[h * len..(h + 1) * len];
            for (m, r) in m2.iter_mut().zip(r) {
                let lb = (m.sqrt() - r).max(0.0);
                *m = lb * lb;
            }
        }
        match b.measure {
            Measure::Ratio => {
                let w = b.weights[h];
                for (v, m) in vals.iter_mut().zip(m2.iter()) {
                    *v += m.sqrt() * w;
                }
            }
            Measure::BUt => {
                for (v, m) in vals.iter_mut().zip(m2.iter()) {
                    *v += m;
                }
            }
        }
    }
    if b.measure == Measure::BUt {
        for v in vals.iter_mut() {
            *v = v.sqrt();
        }
    }
}

/// Runs of one target inside `[p0, p0 + len)`: `(target, start, end)`
/// relative to `p0`.
fn runs(target_of: &[u32], p0: usize, len: usize) -> Vec<(usize, usize, usize)> {
    let mut out: Vec<(usize, usize, usize)> = Vec::new();
    for (i, t) in target_of[p0..p0 + len].iter().enumerate() {
        match out.last_mut() {
            Some(last) if last.0 == *t as usize => last.2 = i + 1,
            _ => out.push((*t as usize, i, i + 1)),
        }
    }
    out
}

/// Copies the tile `[p0, p0 + len)` of a block into tile layout.
fn tile_of(block: &[f64], rows: usize, points: usize, p0: usize, len: usize) -> Vec<f64> {
    let mut out = Vec::with_capacity(rows * len);
    for r in 0..rows {
        out.extend_from_slice(&block[r * points + p0..r * points + p0 + len]);
    }
    out
}

/// Leaves of the tree: the first circuit's choices times 6 per further one.
pub(crate) fn leaf_count(first: usize, circuits: usize) -> u64 {
    (first as u64).saturating_mul(6u64.saturating_pow(circuits.saturating_sub(1) as u32))
}

/// Permutation indices of leaf `index`.
pub(crate) fn decode(index: u64, first: &[usize], circuits: usize) -> Vec<usize> {
    let mut perms = vec![0; circuits];
    let mut rest = index;
    for i in (1..circuits).rev() {
        perms[i] = (rest % 6) as usize;
        rest /= 6;
    }
    perms[0] = first[rest as usize];
    perms
}

/// Every arrangement over every point: per leaf, the maximum per target.
pub(crate) fn exhaustive(b: &Blocks, first: &[usize], cancel: &Cancel) -> Result<Found, Cancelled> {
    let n = b.circuit.len();
    let leaves = leaf_count(first.len(), n) as usize;
    let tiles: Vec<usize> = (0..b.points).step_by(TILE).collect();
    let rows = b.lines * 6;
    let maxima = tiles
        .par_iter()
        .try_fold(
            || vec![f64::NEG_INFINITY; leaves * b.targets],
            |mut maxima, &p0| {
                cancel.check()?;
                let len = TILE.min(b.points - p0);
                let blocks: Vec<[Vec<f64>; 6]> = b
                    .circuit
                    .iter()
                    .map(|c| std::array::from_fn(|s| tile_of(&c[s], rows, b.points, p0, len)))
                    .collect();
                let mut walk = Walk::new(b, first, tile_of(&b.fixed, rows, b.points, p0, len), len);
                let runs = runs(&b.target_of, p0, len);
                walk.descend(0, 0, &blocks, &mut |index, vals| {
                    let row = &mut maxima[index as usize * b.targets..(index as usize + 1) * b.targets];
                    for &(t, s, e) in &runs {
                        let m = vals[s..e].iter().copied().fold(f64::NEG_INFINITY, f64::max);
                        row[t] = row[t].max(m);
                    }
                    true
                });
                Ok(maxima)
            },
        )
        .try_reduce(
            || vec![f64::NEG_INFINITY; leaves * b.targets],
            |mut a, c| {
                for (x, y) in a.iter_mut().zip(&c) {
                    *x = x.max(*y);
                }
                Ok(a)
            },
        )?;
    let mut ranked: Vec<Leaf> = maxima
        .chunks(b.targets.max(1))
        .enumerate()
        .map(|(index, row)| {
            let (objective, worst_target, worst_value) = b.objective(row);
            Leaf { index: index as u64, objective, worst_target, worst_value }
        })
        .collect();
    ranked.sort_by(|x, y| x.objective.total_cmp(&y.objective).then(x.index.cmp(&y.index)));
    Ok(Found { ranked, evaluated: leaves as u64, complete: true, open_bound: None })
}

/// Depth-first state over a point range: the partial sums of each level.
struct Walk<'a> {
    b: &'a Blocks,
    first: &'a [usize],
    len: usize,
    /// `acc[l]`: fixed plus circuits `0..l`.
    acc: Vec<Vec<f64>>,
    vals: Vec<f64>,
    m2: Vec<f64>,
    scratch: Vec<f64>,
}

impl<'a> Walk<'a> {
    fn new(b: &'a Blocks, first: &'a [usize], fixed: Vec<f64>, len: usize) -> Walk<'a> {
        let n = b.circuit.len();
        let mut acc = vec![fixed];
        acc.extend((1..n).map(|_| vec![0.0; b.lines * 6 * len]));
        Walk { b, first, len, acc, vals: vec![0.0; len], m2: vec![0.0; len], scratch: vec![0.0; b.lines * 6 * len] }
    }

    fn choices(&self, level: usize) -> Vec<usize> {
        if level == 0 { self.first.to_vec() } else { (0..6).collect() }
    }

    /// Walks every completion below `level`; `leaf(index, values)` returns
    /// false to stop the walk.
    fn descend(
        &mut self,
        level: usize,
        index: u64,
        blocks: &[[Vec<f64>; 6]],
        leaf: &mut dyn FnMut(u64, &[f64]) -> bool,
    ) -> bool {
        let n = blocks.len();
        for (pos, s) in self.choices(level).into_iter().enumerate() {
            let child = if level == 0 { pos as u64 } else { index * 6 + s as u64 };
            let (lo, hi) = self.acc.split_at_mut(level + 1);
            let src = &lo[level];
            if level + 1 == n {
                for ((d, a), c) in self.scratch.iter_mut().zip(src).zip(&blocks[level][s]) {
                    *d = a + c;
                }
                point_values(self.b, &self.scratch, self.len, &mut self.vals, &mut self.m2, None);
                if !leaf(child, &self.vals) {
                    return false;
                }
            } else {
                for ((d, a), c) in hi[0].iter_mut().zip(src).zip(&blocks[level][s]) {
                    *d = a + c;
                }
                if !self.descend(level + 1, child, blocks, leaf) {
                    return false;
                }
            }
        }
        true
    }
}

/// Branch and bound over all points, keeping the `top` best; stops when
/// `max_work` point evaluations are spent.
pub(crate) fn branch_and_bound(
    b: &Blocks,
    first: &[usize],
    top: usize,
    max_work: u64,
    cancel: &Cancel,
) -> Result<Found, Cancelled> {
    let n = b.circuit.len();
    let p = b.points;
    // bound[l]: per line and point, Σ_{j ≥ l} max_σ ‖C_{j,σ}‖.
    let mut bound = vec![vec![0.0; b.lines * p]; n + 1];
    for j in (0..n).rev() {
        let mut here = bound[j + 1].clone();
        for h in 0..b.lines {
            for q in 0..p {
                let best = (0..6)
                    .map(|s| (0..6).map(|c| b.circuit[j][s][(h * 6 + c) * p + q].powi(2)).sum::<f64>().sqrt())
                    .fold(0.0, f64::max);
                here[h * p + q] += best;
            }
        }
        bound[j] = here;
    }
    let mut state = Bb {
        b,
        first,
        top,
        max_work,
        work: 0,
        acc: vec![b.fixed.clone()],
        bound,
        vals: vec![0.0; p],
        m2: vec![0.0; p],
        scratch: vec![0.0; b.lines * 6 * p],
        kept: Vec::new(),
        evaluated: 0,
        stopped: false,
        open_bound: f64::INFINITY,
        cancel,
    };
    state.acc.extend((1..n).map(|_| vec![0.0; b.lines * 6 * p]));
    let root = state.lower_bound(0);
    state.node(0, 0, root)?;
    let complete = !state.stopped;
    Ok(Found {
        ranked: state.kept,
        evaluated: state.evaluated,
        complete,
        open_bound: (!complete).then_some(state.open_bound),
    })
}

struct Bb<'a> {
    b: &'a Blocks,
    first: &'a [usize],
    top: usize,
    max_work: u64,
    work: u64,
    acc: Vec<Vec<f64>>,
    bound: Vec<Vec<f64>>,
    vals: Vec<f64>,
    m2: Vec<f64>,
    scratch: Vec<f64>,
    kept: Vec<Leaf>,
    evaluated: u64,
    stopped: bool,
    open_bound: f64,
    cancel: &'a Cancel,
}

/// Bounds are reduced by this relative margin before a subtree is
/// skipped, so that rounding in the bound never skips a rightful member.
const PRUNE_MARGIN: f64 = 1e-9;

impl Bb<'_> {
    /// The `top`-th best objective so far (infinite until `top` are kept).
    fn threshold(&self) -> f64 {
        if self.kept.len() < self.top { f64::INFINITY } else { self.kept[self.top - 1].objective }
    }

    /// Objective of the lower bounds of every completion of `acc[level]`.
    fn lower_bound(&mut self, level: usize) -> f64 {
        let p = self.b.points;
        point_values(self.b, &self.acc[level], p, &mut self.vals, &mut self.m2, Some(&self.bound[level]));
        self.b.objective(&self.b.target_maxima(&self.vals)).0
    }

    fn keep(&mut self, leaf: Leaf) {
        let at = self
            .kept
            .partition_point(|k| k.objective.total_cmp(&leaf.objective).then(k.index.cmp(&leaf.index)).is_lt());
        if at < self.top {
            self.kept.insert(at, leaf);
            self.kept.truncate(self.top);
        }
    }

    fn node(&mut self, level: usize, index: u64, node_bound: f64) -> Result<(), Cancelled> {
        self.cancel.check()?;
        let n = self.b.circuit.len();
        let p = self.b.points;
        let choices: Vec<usize> = if level == 0 { self.first.to_vec() } else { (0..6).collect() };
        for (pos, s) in choices.into_iter().enumerate() {
            if self.stopped || self.work >= self.max_work {
                self.stopped = true;
                self.open_bound = self.open_bound.min(node_bound);
                return Ok(());
            }
            self.work += p as u64;
            let child = if level == 0 { pos as u64 } else { index * 6 + s as u64 };
            let (lo, hi) = self.acc.split_at_mut(level + 1);
            let src = &lo[level];
            if level + 1 == n {
                for ((d, a), c) in self.scratch.iter_mut().zip(src).zip(&self.b.circuit[level][s]) {
                    *d = a + c;
                }
                point_values(self.b, &self.scratch, p, &mut self.vals, &mut self.m2, None);
                let (objective, worst_target, worst_value) = self.b.objective(&self.b.target_maxima(&self.vals));
                self.evaluated += 1;
                self.keep(Leaf { index: child, objective, worst_target, worst_value });
            } else {
                for ((d, a), c) in hi[0].iter_mut().zip(src).zip(&self.b.circuit[level][s]) {
                    *d = a + c;
                }
                let lb = self.lower_bound(level + 1);
                if lb * (1.0 - PRUNE_MARGIN) > self.threshold() {
                    continue;
                }
                self.node(level + 1, child, lb)?;
            }
        }
        Ok(())
    }
}
