//! Phase arrangements: which assignment of the phases to each chosen
//! circuit's conductor positions brings the exposure down most.
//!
//! The influence matrix of every conductor at the targets' points is
//! computed once ([`crate::field::try_influence_matrix`]); each
//! arrangement is then a sum of per-circuit blocks ([`search`]). Only
//! arrangements with distinct RMS fields are searched ([`symmetry`]: 6^(N−1)
//! for N circuits of one source, 2·6^(N−1) with angle offsets, 6^N
//! unbalanced). Up to [`EXHAUSTIVE_LIMIT`] arrangements every one is
//! evaluated; beyond, an exact branch and bound keeps the `top` best, with
//! the optimality gap reported if the work budget stops it.
//!
//! Targets are positions (every height; a position counts with its worst
//! height, as in an assessment) and areas sampled at the nodes of their
//! grid (`spacing_m`). Between nodes an area's field can be higher: the
//! ranking is a screening that an assessment of the chosen revision must
//! confirm (the assessment bounds the area maximum); the result says so.

mod search;
mod symmetry;
mod text;

pub use symmetry::PERMUTATIONS;
pub use text::phases_text;

use super::judge::{Chosen, Judged, TargetPoints, lines_present, ratio_weights};
pub use super::judge::{LeftOut, Measure, Worst};
use crate::assess::{LoadCase, TableRef};
use crate::cancel::Cancel;
use crate::field::InfluenceMatrix;
use crate::limits::ReferenceTable;
use crate::site::wire::{CircuitKind, Phase, SiteDoc};
use crate::site::{CircuitLoad, Drive, Pointer, Problems, Site};
use num_complex::Complex64;
use search::{Blocks, Found, Leaf};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use symmetry::LineCurrents;

/// Most distinct arrangements evaluated one by one (7 circuits of one
/// source); beyond, branch and bound.
pub const EXHAUSTIVE_LIMIT: u64 = 46_656;

/// Most circuits in one search.
pub const MAX_CIRCUITS: usize = 12;

/// Below this improvement, percent, the search says that re-phasing is not
/// worth it (common practice, no source: a change smaller than the model's
/// and the measurement's uncertainty).
pub const MATERIAL_PERCENT: f64 = 5.0;

/// Most ranked arrangements returned.
pub const MAX_TOP: usize = 100;

/// Most `arrangements × targets` kept in memory by the exhaustive mode.
const EXHAUSTIVE_CELLS: u64 = 20_000_000;

/// How the targets' values combine into one objective.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum Over {
    /// The highest value over all targets (the worst-off person).
    #[default]
    Max,
    /// The mean over targets of each target's highest value.
    Mean,
}

fn default_top() -> usize {
    10
}

/// A phase-arrangement search request.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct PhaseSearchDoc {
    /// Ids of the three-phase circuits whose phase order may change (1–12).
    #[cfg_attr(feature = "schema", schema(min_items = 1, max_items = 12))]
    pub circuits: Vec<String>,
    /// The load the arrangements are compared at (default present).
    #[serde(default)]
    pub load: LoadCase,
    /// What is minimised (default `ratio`).
    #[serde(default)]
    pub measure: Measure,
    /// How targets combine (default `max`).
    #[serde(default)]
    pub over: Over,
    /// Table of the ratio (default: the site's first table).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub table: Option<String>,
    /// Position ids judged (default: all; `[]` for none).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub positions: Option<Vec<String>>,
    /// Area ids judged on their grid nodes (default: all; `[]` for none).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub areas: Option<Vec<String>>,
    /// How many of the best arrangements to list (1–100, default 10).
    #[serde(default = "default_top")]
    #[cfg_attr(feature = "schema", schema(minimum = 1, maximum = 100))]
    pub top: usize,
}

impl PhaseSearchDoc {
    /// A request for `circuits` with every default.
    pub fn for_circuits(circuits: Vec<String>) -> PhaseSearchDoc {
        PhaseSearchDoc {
            circuits,
            load: LoadCase::Present,
            measure: Measure::Ratio,
            over: Over::Max,
            table: None,
            positions: None,
            areas: None,
            top: default_top(),
        }
    }
}

/// How the arrangements were counted.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct Counting {
    /// 6^N: every assignment of phases to every chosen circuit.
    pub all: u64,
    /// Relabellings of all phases at once that leave every RMS field
    /// unchanged (1, 2, 3 or 6).
    pub invariant_relabellings: u32,
    /// Arrangements with distinct fields: `all / invariant_relabellings`.
    pub distinct: u64,
    /// Why, in words.
    pub reason: String,
}

/// How the search ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum Method {
    /// Every distinct arrangement evaluated.
    Exhaustive,
    /// Branch and bound: subtrees that cannot enter the ranking skipped.
    BranchAndBound,
}

/// One conductor whose phase changes.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct PhaseChange {
    pub conductor: String,
    pub from: Phase,
    pub to: Phase,
}

/// One arrangement.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct Arrangement {
    /// 1 = best; the as-built one has its own rank among all.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub rank: Option<u64>,
    /// Per circuit id: the phases fed to the conductors drawn as A, B and
    /// C (`["A","B","C"]` is as built). Of the arrangements with the same
    /// field, the one changing fewest conductors.
    pub phases: BTreeMap<String, [Phase; 3]>,
    /// Conductors whose phase changes against the as-built site.
    pub changes: Vec<PhaseChange>,
    /// The objective (ratio, or µT for `b_ut`).
    pub objective: f64,
    /// How much lower than as built, percent (negative: higher).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub improvement_percent: Option<f64>,
    pub worst: Worst,
}

/// The answer of a phase-arrangement search.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct PhaseSearch {
    pub circuits: Vec<String>,
    pub load: LoadCase,
    pub measure: Measure,
    pub over: Over,
    /// The table of the ratio (`null` for `b_ut`).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub table: Option<TableRef>,
    pub counting: Counting,
    pub method: Method,
    /// Arrangements evaluated to the end.
    pub evaluated: u64,
    /// Whether the ranking is proven (false: the work budget stopped it).
    pub complete: bool,
    /// When not complete: how much lower than the best listed an
    /// unexplored arrangement could still be (`null` when complete).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub optimality_gap: Option<f64>,
    /// Points (position heights and area nodes) the objective covers.
    pub points: u64,
    pub as_built: Arrangement,
    /// Best first.
    pub ranked: Vec<Arrangement>,
    /// The site document with the best arrangement applied: a draft
    /// revision to review, then save and assess.
    pub revision: SiteDoc,
    /// Model warnings about the site as judged (open ends, no return path,
    /// points inside conductors or below ground), each with its pointer
    /// into the site document. They never block the answer.
    pub warnings: Vec<crate::site::Warning>,
    pub left_out: Vec<LeftOut>,
    /// What the numbers mean and what to do next.
    pub notes: Vec<String>,
    pub cautions: Vec<String>,
}

/// Why a search could not run.
pub type SearchError = super::judge::WhatIfError;

/// Work limits of one search.
#[derive(Debug, Clone)]
pub struct SearchBudget {
    /// Segment–point pairs of the influence matrix.
    pub max_pairs: u64,
    /// Grid cells over the chosen areas.
    pub max_grid_cells: u64,
    /// Arrangement × point evaluations of the search.
    pub max_work: u64,
    /// Most distinct arrangements evaluated one by one
    /// ([`EXHAUSTIVE_LIMIT`]; lower it to force branch and bound).
    pub exhaustive_limit: u64,
    pub cancel: Cancel,
}

/// Arrangement × point evaluations one search may spend by default
/// (a few seconds on two cores).
pub const DEFAULT_MAX_WORK: u64 = 4_000_000_000;

impl SearchBudget {
    /// No cap on pairs or cells, the default work and exhaustive limit.
    pub fn unlimited() -> SearchBudget {
        SearchBudget {
            max_pairs: u64::MAX,
            max_grid_cells: u64::MAX,
            max_work: DEFAULT_MAX_WORK,
            exhaustive_limit: EXHAUSTIVE_LIMIT,
            cancel: Cancel::never(),
        }
    }
}

/// Checks the request against the site: the chosen circuits (indices into
/// the site's circuits, in request order) and the targets.
fn check_request(site: &Site, req: &PhaseSearchDoc) -> Result<Vec<usize>, Problems> {
    let mut p = Problems::default();
    let at = Pointer::root().key("circuits");
    if req.circuits.is_empty() || req.circuits.len() > MAX_CIRCUITS {
        p.push(&at, format!("name between 1 and {MAX_CIRCUITS} three-phase circuits whose phase order may change"));
    }
    let mut chosen = Vec::new();
    for (i, id) in req.circuits.iter().enumerate() {
        let here = at.index(i);
        match site.circuits().iter().position(|c| &c.id == id) {
            None => p.push(&here, format!("the site has no circuit '{id}'")),
            Some(_) if req.circuits[..i].contains(id) => p.push(&here, format!("circuit '{id}' is named twice")),
            Some(c) if site.circuits()[c].kind != CircuitKind::ThreePhase => p.push(
                &here,
                format!("circuit '{id}' is single-phase: only three-phase circuits have a phase order to change"),
            ),
            Some(c) if !site.conductors().iter().any(|k| line_slot(&k.drive, c).is_some()) => {
                p.push(&here, format!("no conductor carries a line phase of circuit '{id}'"))
            }
            Some(c) => chosen.push(c),
        }
    }
    if !(1..=MAX_TOP).contains(&req.top) {
        p.push(&Pointer::root().key("top"), format!("top must be between 1 and {MAX_TOP}"));
    }
    Chosen { positions: &req.positions, areas: &req.areas }.check_ids(site, &mut p);
    p.into_result(chosen)
}

/// The line phase (0, 1, 2) a conductor carries of circuit `c`, if any.
fn line_slot(drive: &Drive, c: usize) -> Option<usize> {
    match *drive {
        Drive::Phase { circuit, phase, .. } if circuit == c => match phase {
            Phase::A => Some(0),
            Phase::B => Some(1),
            Phase::C => Some(2),
            Phase::N => None,
        },
        _ => None,
    }
}

/// Searches the phase arrangements of `req.circuits` in `site` (checked
/// from `doc`), with the ratio against `table` (resolved by the caller).
pub fn search_phases(
    site: &Site,
    doc: &SiteDoc,
    req: &PhaseSearchDoc,
    table: Option<&ReferenceTable>,
    budget: &SearchBudget,
) -> Result<PhaseSearch, SearchError> {
    let chosen = check_request(site, req).map_err(SearchError::Request)?;
    let loads = req.load.resolve(site).map_err(SearchError::Load)?;
    // Bounds first, from counts alone: nothing is sampled before they pass.
    let choice = Chosen { positions: &req.positions, areas: &req.areas };
    choice.check_budget(site, 1, budget.max_grid_cells, budget.max_pairs).map_err(SearchError::OverBudget)?;
    let excitation = site.excitation_at(&loads);
    let line_hz: Vec<f64> = excitation.lines.iter().map(|l| l.frequency_hz).collect();
    let present = lines_present(&excitation);
    let weights = ratio_weights(req.measure, table, &line_hz, &present).map_err(SearchError::Request)?;
    // Influence matrix at every target point, once.
    let Judged { targets: all_targets, g, kept, left_out } =
        Judged::sample(site, &[], choice.targets(site), "the arrangements", &budget.cancel)?;
    let lines = line_currents(site, &chosen, &loads, &excitation);
    let group = symmetry::invariant_relabellings(&lines);
    let first = symmetry::first_circuit_choices(&group);
    let n = chosen.len();
    let all = 6u64.saturating_pow(n as u32);
    let counting = Counting {
        all,
        invariant_relabellings: group.len() as u32,
        distinct: search::leaf_count(first.len(), n),
        reason: symmetry::symmetry_words(group.len(), n),
    };
    let blocks = build_blocks(site, &chosen, &excitation, &lines, &g, &kept, &all_targets, weights, req);
    let work = counting.distinct.saturating_mul(blocks.points as u64);
    let exhaustive = counting.distinct <= budget.exhaustive_limit
        && work <= budget.max_work
        && counting.distinct.saturating_mul(blocks.targets as u64) <= EXHAUSTIVE_CELLS;
    let found = if exhaustive {
        search::exhaustive(&blocks, &first, &budget.cancel)
    } else {
        search::branch_and_bound(&blocks, &first, req.top, budget.max_work, &budget.cancel)
    }
    .map_err(|_| SearchError::Cancelled)?;
    let as_built_leaf = blocks.evaluate(&vec![0; n]);
    let shape = Shape { site, chosen: &chosen, group: &group, targets: &all_targets };
    // The as-built rank is known when every arrangement better than it is
    // in `found.ranked`: all of them were ranked (exhaustive), or a proven
    // ranking reaches past it.
    let better = found.ranked.iter().filter(|l| l.objective < as_built_leaf.objective).count();
    let as_built_rank = (exhaustive || (found.complete && better < found.ranked.len())).then_some(better as u64 + 1);
    let as_built = shape.arrangement(&as_built_leaf, &vec![0; n], as_built_rank, as_built_leaf.objective);
    let ranked: Vec<Arrangement> = found
        .ranked
        .iter()
        .take(req.top)
        .enumerate()
        .map(|(r, leaf)| {
            let perms = search::decode(leaf.index, &first, n);
            shape.arrangement(leaf, &perms, Some(r as u64 + 1), as_built_leaf.objective)
        })
        .collect();
    let best = found.ranked.first().map(|l| search::decode(l.index, &first, n)).unwrap_or_else(|| vec![0; n]);
    let revision = apply(doc, site, &chosen, &shape.fewest_changes(&best)).map_err(|id| {
        SearchError::Request(Problems::one(
            "/circuits",
            format!(
                "conductor '{id}' is not in the site document and its phase cannot be written back: re-phase it by hand"
            ),
        ))
    })?;
    let method = if exhaustive { Method::Exhaustive } else { Method::BranchAndBound };
    let optimality_gap = found.open_bound.map(|lb| (found.ranked.first().map_or(lb, |l| l.objective) - lb).max(0.0));
    let all_notes = {
        let mut n = notes(&found, req, method, shares_load(site, &chosen));
        if ranked.first().and_then(|a| a.improvement_percent).is_some_and(|p| p < MATERIAL_PERCENT) {
            n.push(format!(
                "No arrangement lowers the objective by {MATERIAL_PERCENT} % or more against as built: keeping \
                 the present phase order is as good, and re-phasing is work and risk for no real gain."
            ));
        }
        n.extend(table_note(site, table, &all_targets, req.measure));
        n
    };
    Ok(PhaseSearch {
        circuits: req.circuits.clone(),
        load: req.load.clone(),
        measure: req.measure,
        over: req.over,
        table: match req.measure {
            Measure::Ratio => table.map(TableRef::of),
            Measure::BUt => None,
        },
        counting,
        method,
        evaluated: found.evaluated,
        complete: found.complete,
        optimality_gap,
        points: blocks.points as u64,
        as_built,
        ranked,
        revision,
        left_out,
        warnings: crate::site::site_warnings(site),
        notes: all_notes,
        cautions: crate::cautions::cautions(),
    })
}

/// What the one table of the ranking leaves out, in words: other tables
/// the site names, the implant table of implant wearers, targets the table
/// does not apply to. An assessment of the revision judges them all.
fn table_note(
    site: &Site,
    table: Option<&ReferenceTable>,
    targets: &[TargetPoints],
    measure: Measure,
) -> Option<String> {
    let t = table.filter(|_| measure == Measure::Ratio)?;
    let mut others: Vec<String> = site.tables().iter().filter(|id| id.as_str() != t.id()).cloned().collect();
    if targets.iter().any(|x| x.group == crate::site::wire::Group::ImplantWearer) {
        others.push(crate::limits::IMPLANT_TABLE_ID.to_string());
    }
    let outside: Vec<String> = targets
        .iter()
        .filter(|x| !crate::assess::table_applies(t, x.region, x.group))
        .map(|x| format!("{} '{}'", x.kind, x.id))
        .collect();
    if others.is_empty() && outside.is_empty() {
        return None;
    }
    let mut words = format!("The arrangements are ranked against table '{}' alone.", t.id());
    if !outside.is_empty() {
        words.push_str(&format!(" It does not apply to {} (body region or group).", outside.join(", ")));
    }
    if !others.is_empty() {
        words.push_str(&format!(" Also applicable and not used here: {}.", others.join(", ")));
    }
    words.push_str(" Assess the chosen revision: the assessment judges every target against every table that applies.");
    Some(words)
}

/// Whether two of the chosen circuits share a load group.
fn shares_load(site: &Site, chosen: &[usize]) -> bool {
    let groups: Vec<&String> = chosen.iter().filter_map(|&c| site.circuits()[c].load_group.as_ref()).collect();
    groups.iter().enumerate().any(|(i, g)| groups[..i].contains(g))
}

fn notes(found: &Found, req: &PhaseSearchDoc, method: Method, shared_load: bool) -> Vec<String> {
    let mut n = vec![
        "Areas are judged at the nodes of their grid; between nodes the field can be higher. Save the revision and \
         assess it: the assessment bounds each area's maximum and gives the verdicts."
            .to_string(),
        "Re-phasing changes which phase each conductor carries, not the currents: check it with the circuits' \
         protection, metering and the connected equipment's phase rotation before work is planned."
            .to_string(),
    ];
    if shared_load {
        n.push(
            "Some of these circuits share one load: with one out of service the others carry its current and no \
             phase order cancels it. Run the N-1 scenarios (whatif scenarios) on the chosen revision."
                .to_string(),
        );
    }
    if req.over == Over::Mean {
        n.push("The objective is the mean over targets: a listed arrangement can raise one target while lowering the mean; see each arrangement's worst target.".to_string());
    }
    if method == Method::BranchAndBound && found.complete {
        n.push("Branch and bound: arrangements that provably could not enter the ranking were skipped; the ranking is exact.".to_string());
    }
    if !found.complete {
        n.push("The work budget stopped the search before it was proven: an unexplored arrangement could be better by up to the optimality gap.".to_string());
    }
    n
}

/// Per spectral line: the chosen circuits' phase phasors and every other
/// conductor current (which no arrangement changes).
fn line_currents(
    site: &Site,
    chosen: &[usize],
    loads: &[CircuitLoad],
    excitation: &crate::field::Excitation,
) -> Vec<LineCurrents> {
    excitation
        .lines
        .iter()
        .map(|line| LineCurrents {
            circuits: chosen
                .iter()
                .map(|&c| {
                    let load = loads.get(c).copied().unwrap_or(CircuitLoad::PRESENT);
                    let circuit = &site.circuits()[c];
                    [Phase::A, Phase::B, Phase::C].map(|p| circuit.phase_current_at(p, line.order, load))
                })
                .collect(),
            fixed: site
                .conductors()
                .iter()
                .zip(&line.currents_a)
                .filter(|(k, _)| !chosen.iter().any(|&c| line_slot(&k.drive, c).is_some()))
                .map(|(_, i)| *i)
                .collect(),
        })
        .collect()
}

#[allow(clippy::too_many_arguments)]
fn build_blocks(
    site: &Site,
    chosen: &[usize],
    excitation: &crate::field::Excitation,
    lines: &[LineCurrents],
    g: &InfluenceMatrix,
    kept: &[usize],
    targets: &[TargetPoints],
    weights: Vec<f64>,
    req: &PhaseSearchDoc,
) -> Blocks {
    let np = kept.len();
    let nl = excitation.lines.len();
    let stride = nl * 6 * np;
    let mut fixed = vec![0.0; stride];
    // F[i][s]: influence of circuit i's conductors drawn as phase s, times share.
    let mut f = vec![[vec![[0.0f64; 3]; np], vec![[0.0f64; 3]; np], vec![[0.0f64; 3]; np]]; chosen.len()];
    for (k, conductor) in site.conductors().iter().enumerate() {
        let slot = chosen.iter().enumerate().find_map(|(i, &c)| line_slot(&conductor.drive, c).map(|s| (i, s)));
        match slot {
            Some((i, s)) => {
                let share = match conductor.drive {
                    Drive::Phase { share, .. } => share,
                    Drive::Explicit { .. } => 1.0,
                };
                for (q, &pt) in kept.iter().enumerate() {
                    let c = g.coefficient(pt, k);
                    for d in 0..3 {
                        f[i][s][q][d] += share * c[d];
                    }
                }
            }
            None => {
                for (h, line) in excitation.lines.iter().enumerate() {
                    let cur = line.currents_a[k];
                    if cur.norm() == 0.0 {
                        continue;
                    }
                    for (q, &pt) in kept.iter().enumerate() {
                        let c = g.coefficient(pt, k);
                        for d in 0..3 {
                            fixed[(h * 6 + d) * np + q] += c[d] * cur.re;
                            fixed[(h * 6 + 3 + d) * np + q] += c[d] * cur.im;
                        }
                    }
                }
            }
        }
    }
    let circuit = (0..chosen.len())
        .map(|i| {
            std::array::from_fn(|perm| {
                let sigma = PERMUTATIONS[perm];
                let mut b = vec![0.0; stride];
                for (h, line) in lines.iter().enumerate() {
                    for s in 0..3 {
                        let cur: Complex64 = line.circuits[i][sigma[s] as usize];
                        for q in 0..np {
                            for d in 0..3 {
                                b[(h * 6 + d) * np + q] += f[i][s][q][d] * cur.re;
                                b[(h * 6 + 3 + d) * np + q] += f[i][s][q][d] * cur.im;
                            }
                        }
                    }
                }
                b
            })
        })
        .collect();
    let target_of =
        targets.iter().enumerate().flat_map(|(t, tp)| std::iter::repeat_n(t as u32, tp.points.len())).collect();
    Blocks {
        points: np,
        lines: nl,
        fixed,
        circuit,
        weights,
        measure: req.measure,
        over: req.over,
        target_of,
        targets: targets.len(),
    }
}

/// What turns leaves into arrangements.
struct Shape<'a> {
    site: &'a Site,
    chosen: &'a [usize],
    group: &'a [usize],
    targets: &'a [TargetPoints],
}

impl Shape<'_> {
    /// Changes of the arrangement `perms` against the as-built site.
    fn changes(&self, perms: &[usize]) -> Vec<PhaseChange> {
        let phase = [Phase::A, Phase::B, Phase::C];
        self.site
            .conductors()
            .iter()
            .filter_map(|k| {
                self.chosen.iter().zip(perms).find_map(|(&c, &p)| {
                    line_slot(&k.drive, c).and_then(|s| {
                        let to = PERMUTATIONS[p][s] as usize;
                        (to != s).then(|| PhaseChange { conductor: k.id.clone(), from: phase[s], to: phase[to] })
                    })
                })
            })
            .collect::<Vec<_>>()
            // A bar's filaments share its id and its phase: one change.
            .into_iter()
            .fold(Vec::new(), |mut out: Vec<PhaseChange>, c| {
                if out.last().is_none_or(|l| l.conductor != c.conductor) {
                    out.push(c);
                }
                out
            })
    }

    /// Of the arrangements with the same field as `perms`, the one that
    /// changes fewest conductors (ties: the first relabelling).
    fn fewest_changes(&self, perms: &[usize]) -> Vec<usize> {
        self.group
            .iter()
            .map(|&tau| perms.iter().map(|&s| symmetry::compose(tau, s)).collect::<Vec<usize>>())
            .min_by_key(|p| self.changes(p).len())
            .unwrap_or_else(|| perms.to_vec())
    }

    fn arrangement(&self, leaf: &Leaf, perms: &[usize], rank: Option<u64>, as_built: f64) -> Arrangement {
        let perms = self.fewest_changes(perms);
        let phase = [Phase::A, Phase::B, Phase::C];
        let phases = self
            .chosen
            .iter()
            .zip(&perms)
            .map(|(&c, &p)| (self.site.circuits()[c].id.clone(), PERMUTATIONS[p].map(|x| phase[x as usize])))
            .collect();
        let target = &self.targets[leaf.worst_target as usize];
        Arrangement {
            rank,
            phases,
            changes: self.changes(&perms),
            objective: leaf.objective,
            improvement_percent: (as_built > 0.0).then(|| (as_built - leaf.objective) / as_built * 100.0),
            worst: Worst { kind: target.kind.to_string(), id: target.id.clone(), value: leaf.worst_value },
        }
    }
}

/// `doc` with the chosen circuits' conductors re-phased as `perms`: a
/// conductor of the document by its id, one generated from another section
/// of the document (an overhead line, a cable formation) in that section
/// ([`crate::site::rephase_generated`]). `Err` names a conductor whose
/// phase could not be written back.
fn apply(doc: &SiteDoc, site: &Site, chosen: &[usize], perms: &[usize]) -> Result<SiteDoc, String> {
    let mut out = doc.clone();
    for conductor in site.conductors() {
        for (&c, &p) in chosen.iter().zip(perms) {
            if let Some(s) = line_slot(&conductor.drive, c) {
                let phase = [Phase::A, Phase::B, Phase::C][PERMUTATIONS[p][s] as usize];
                if let Some(k) = out.conductors.iter_mut().find(|k| k.id == conductor.id) {
                    k.phase = Some(phase);
                } else if !crate::site::rephase_generated(&mut out, &conductor.id, phase) {
                    return Err(conductor.id.clone());
                }
            }
        }
    }
    Ok(out)
}
