//! Moves: translate a group of conductors (a tray raised by Δz, a cable
//! shifted by Δx/Δy) or positions (a desk moved away), as one move or a
//! sweep from no move to the full one, with the worst value at every step
//! and the smallest move that brings every chosen target under a level.
//!
//! Each step is the moved site checked like any site document and judged
//! exactly (a new influence matrix: the geometry changed). The smallest
//! move is found between the last sampled step over the level and the
//! first under it by bisection to [`MOVE_RESOLUTION_M`], then rounded up to
//! whole millimetres and judged again, so the move reported is one that
//! was computed, never interpolated. The worst value need not fall
//! steadily with the move: a later step over the level again is reported.

use super::judge::{
    Chosen, JudgeError, Judged, LeftOut, Measure, RatioTables, WhatIfBudget, WhatIfError, Worst, closing_text,
    value_text,
};
use crate::assess::{LoadCase, TableRef};
use crate::cancel::Cancel;
use crate::limits::ReferenceTable;
use crate::site::wire::SiteDoc;
use crate::site::{Pointer, Problems, Site, validate_site};
use serde::{Deserialize, Serialize};

/// The smallest move is bisected to this distance, m, then rounded up to it.
pub const MOVE_RESOLUTION_M: f64 = 0.001;

/// Most steps of a sweep.
pub const MAX_STEPS: u32 = 200;

/// Longest move, m.
pub const MAX_MOVE_M: f64 = 1000.0;

/// Bisection passes at most (2^-40 of any move is far below a millimetre).
const BISECTIONS: u32 = 40;

/// What moves (at least one id).
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct Moving {
    /// Conductor ids (a formation's cable moves its whole formation).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub conductors: Vec<String>,
    /// Circuit ids: every conductor of the circuit (its neutral too).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub circuits: Vec<String>,
    /// Position ids.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub positions: Vec<String>,
}

fn one() -> u32 {
    1
}

/// A move request.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct MoveDoc {
    pub moving: Moving,
    /// The full move `[dx, dy, dz]`, m (at most 1000 m long).
    pub by_m: [f64; 3],
    /// Steps from no move to the full move (1–200, default 1: as built and
    /// moved); step k moves by `k/steps · by_m`.
    #[serde(default = "one")]
    #[cfg_attr(feature = "schema", schema(minimum = 1, maximum = 200))]
    pub steps: u32,
    /// Every target must be under this value (a ratio, default 1; µT for
    /// `b_ut`, then required).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[cfg_attr(feature = "schema", schema(exclusive_minimum = 0))]
    pub level: Option<f64>,
    /// What is judged (default `ratio`).
    #[serde(default)]
    pub measure: Measure,
    /// The load judged at (default present).
    #[serde(default)]
    pub load: LoadCase,
    /// The one table of the ratio (default: every table of the site that
    /// applies to each target, and the implant table for implant wearers,
    /// as an assessment).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub table: Option<String>,
    /// Position ids judged (default: all; `[]` for none).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub positions: Option<Vec<String>>,
    /// Area ids judged on their grid nodes (default: all; `[]` for none).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub areas: Option<Vec<String>>,
}

/// One step of the sweep.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct MoveStep {
    /// The move, m.
    pub offset_m: [f64; 3],
    /// Its length, m.
    pub distance_m: f64,
    /// The highest value over the targets (`null`: the moved site is not
    /// valid, see `problem`).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub worst: Option<Worst>,
    /// Whether every target is under the level (`null` with `worst`).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub under_level: Option<bool>,
    /// Why this step could not be judged.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub problem: Option<String>,
}

/// The answer of a move.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct MoveResult {
    pub moving: Moving,
    pub by_m: [f64; 3],
    pub measure: Measure,
    #[cfg_attr(feature = "schema", schema(required = true))]
    /// The tables of the ratios (empty for `b_ut`).
    pub tables: Vec<TableRef>,
    pub level: f64,
    pub load: LoadCase,
    /// Step 0 (as built) to the full move.
    pub steps: Vec<MoveStep>,
    /// The smallest computed move along `by_m` with every target under the
    /// level (`null`: none within the sweep).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub smallest: Option<MoveStep>,
    /// The answer in words.
    pub answer: String,
    /// The site moved by `smallest`: a draft revision to review, then save
    /// and assess (`null` without one).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub revision: Option<SiteDoc>,
    /// Model warnings of the site moved by `smallest` (`[]` without one):
    /// a move can put conductors below ground or against others.
    pub revision_warnings: Vec<crate::site::Warning>,
    pub left_out: Vec<LeftOut>,
    /// Model warnings about the site as judged (open ends, no return path,
    /// points inside conductors or below ground), each with its pointer
    /// into the site document. They never block the answer.
    pub warnings: Vec<crate::site::Warning>,
    pub notes: Vec<String>,
    pub cautions: Vec<String>,
}

fn check_request(site: &Site, doc: &SiteDoc, req: &MoveDoc) -> Result<f64, Problems> {
    let mut p = Problems::default();
    let m = &req.moving;
    if m.conductors.is_empty() && m.circuits.is_empty() && m.positions.is_empty() {
        p.push(&Pointer::root().key("moving"), "name the conductors, circuits or positions that move");
    }
    for (key, ids, known) in [
        ("conductors", &m.conductors, site.conductors().iter().map(|c| c.id.as_str()).collect::<Vec<_>>()),
        ("circuits", &m.circuits, site.circuits().iter().map(|c| c.id.as_str()).collect::<Vec<_>>()),
        ("positions", &m.positions, site.positions().iter().map(|c| c.id.as_str()).collect::<Vec<_>>()),
    ] {
        for (i, id) in ids.iter().enumerate() {
            if !known.contains(&id.as_str()) {
                p.push(
                    &Pointer::root().key("moving").key(key).index(i),
                    format!("the site has no {} '{id}'", &key[..key.len() - 1]),
                );
            }
        }
    }
    for l in doc.overhead_lines.iter().filter(|l| line_moves(l, &req.moving).is_none()).map(|l| &l.id) {
        p.push(
            &Pointer::root().key("moving").key("circuits"),
            format!("overhead line '{l}' carries circuits that move and circuits that do not: its circuits hang on the same structures; name them all, or one of its conductors to move the whole line"),
        );
    }
    let by = Pointer::root().key("by_m");
    if req.by_m.iter().any(|v| !v.is_finite()) {
        p.push(&by, "the move must be three finite numbers [dx, dy, dz] in metres");
    } else {
        let len = norm(req.by_m);
        if len == 0.0 {
            p.push(&by, "the move is zero: give [dx, dy, dz] in metres");
        } else if len > MAX_MOVE_M {
            p.push(&by, format!("the move is {len} m long, more than {MAX_MOVE_M} m"));
        }
    }
    if req.by_m[2] != 0.0 {
        for id in &m.positions {
            if let Some(q) = site.positions().iter().find(|q| &q.id == id)
                && matches!(q.placement, crate::site::Placement::Standing { .. })
            {
                p.push(
                    &by.index(2),
                    format!("position '{id}' stands on the ground: it moves in plan only (dz = 0), or give it as a 3-D point"),
                );
            }
        }
    }
    if !(1..=MAX_STEPS).contains(&req.steps) {
        p.push(&Pointer::root().key("steps"), format!("steps must be between 1 and {MAX_STEPS}"));
    }
    let level = match (req.level, req.measure) {
        (Some(l), _) => l,
        (None, Measure::Ratio) => 1.0,
        (None, Measure::BUt) => {
            p.push(
                &Pointer::root().key("level"),
                "with measure b_ut, give the level in µT that every target must be under",
            );
            1.0
        }
    };
    if !(level.is_finite() && level > 0.0) {
        p.push(&Pointer::root().key("level"), "the level must be a positive number");
    }
    Chosen { positions: &req.positions, areas: &req.areas }.check_ids(site, &mut p);
    p.into_result(level)
}

fn norm(v: [f64; 3]) -> f64 {
    (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()
}

/// `doc` with the moving conductors and positions translated by `offset`.
pub fn moved(doc: &SiteDoc, moving: &Moving, offset: [f64; 3]) -> SiteDoc {
    let mut out = doc.clone();
    for k in &mut out.conductors {
        let by_circuit = k.circuit.as_ref().is_some_and(|c| moving.circuits.contains(c));
        if by_circuit || moving.conductors.contains(&k.id) {
            for v in &mut k.path {
                for d in 0..3 {
                    v[d] += offset[d];
                }
            }
        }
    }
    // A formation's cables move together, by their route: with their
    // circuit, or when one of them is named.
    for f in &mut out.formations {
        let named = f.sets.iter().enumerate().any(|(j, set)| {
            (0..set.phases.len()).any(|k| moving.conductors.contains(&crate::site::formation::cable_id(&f.id, j, k)))
        });
        if named || moving.circuits.contains(&f.circuit) {
            for v in &mut f.route {
                for d in 0..3 {
                    v[d] += offset[d];
                }
            }
        }
    }
    // An overhead line moves whole (structures in plan, attachment heights
    // by dz, the sag kept) when one of its conductors is named or every
    // circuit it carries moves ([`line_moves`]).
    for l in &mut out.overhead_lines {
        if line_moves(l, moving) == Some(true) {
            for s in &mut l.structures {
                s.at[0] += offset[0];
                s.at[1] += offset[1];
                for h in &mut s.heights_m {
                    *h += offset[2];
                }
            }
        }
    }
    for q in &mut out.positions {
        if moving.positions.contains(&q.id) {
            for (d, c) in q.at.iter_mut().enumerate() {
                *c += offset[d];
            }
        }
    }
    out
}

/// Whether overhead line `l` moves: `Some(true)` when one of its
/// conductors is named or every circuit it carries moves, `Some(false)`
/// when none does, `None` when only some of its circuits move (a line's
/// circuits hang on the same structures and cannot move apart).
fn line_moves(l: &crate::site::overhead::OverheadLineDoc, moving: &Moving) -> Option<bool> {
    let prefix = format!("{}-p", l.id);
    if moving.conductors.iter().any(|c| c.starts_with(&prefix)) {
        return Some(true);
    }
    let on: Vec<&String> = l.phases.iter().map(|p| &p.circuit).collect();
    let moved = on.iter().filter(|c| moving.circuits.contains(c)).count();
    match moved {
        0 => Some(false),
        n if n == on.len() => Some(true),
        _ => None,
    }
}

/// What one step needs besides the offset.
struct Judge<'a> {
    doc: &'a SiteDoc,
    req: &'a MoveDoc,
    tables: RatioTables,
    level: f64,
    cancel: &'a Cancel,
}

impl Judge<'_> {
    /// The step at `fraction` of the move; `Err` only when cancelled.
    fn step(&self, fraction: f64) -> Result<(MoveStep, Vec<LeftOut>), WhatIfError> {
        let offset = self.req.by_m.map(|v| v * fraction);
        let mut step =
            MoveStep { offset_m: offset, distance_m: norm(offset), worst: None, under_level: None, problem: None };
        let doc = moved(self.doc, &self.req.moving, offset);
        let site = match validate_site(&doc) {
            Ok(s) => s,
            Err(p) => {
                step.problem = Some(format!(
                    "the moved site is not valid: {}",
                    p.iter().next().map_or(String::new(), ToString::to_string)
                ));
                return Ok((step, Vec::new()));
            }
        };
        let loads = self.req.load.resolve(&site).map_err(WhatIfError::Load)?;
        let excitation = site.excitation_at(&loads);
        let choice = Chosen { positions: &self.req.positions, areas: &self.req.areas };
        let judged = match Judged::sample(&site, &[], choice.targets(&site), "the move", self.cancel) {
            Ok(j) => j,
            Err(JudgeError::Cancelled) => return Err(WhatIfError::Cancelled),
            Err(JudgeError::Nothing(p)) => {
                step.problem = Some(p.iter().next().map_or(String::new(), |q| q.detail.clone()));
                return Ok((step, Vec::new()));
            }
        };
        let values = judged.values(&excitation, &self.tables);
        let worst = judged
            .targets
            .iter()
            .zip(&values)
            .filter_map(|(t, v)| {
                let value = match self.req.measure {
                    Measure::Ratio => v.ratio?,
                    Measure::BUt => v.b_ut,
                };
                Some(Worst { kind: t.kind.to_string(), id: t.id.clone(), value })
            })
            .max_by(|a, b| a.value.total_cmp(&b.value));
        step.under_level = worst.as_ref().map(|w| w.value < self.level);
        step.worst = worst;
        Ok((step, judged.left_out))
    }
}

fn under(s: &MoveStep) -> bool {
    s.under_level == Some(true)
}

/// Judges the move of `req` in `site` (checked from `doc`), the ratios
/// against `tables` (resolved by the caller).
pub fn run_move(
    site: &Site,
    doc: &SiteDoc,
    req: &MoveDoc,
    tables: &[ReferenceTable],
    budget: &WhatIfBudget,
) -> Result<MoveResult, WhatIfError> {
    let level = check_request(site, doc, req).map_err(WhatIfError::Request)?;
    let loads = req.load.resolve(site).map_err(WhatIfError::Load)?;
    let passes = u64::from(req.steps) + 1 + u64::from(BISECTIONS) + 1;
    Chosen { positions: &req.positions, areas: &req.areas }
        .check_budget(site, passes, budget.max_grid_cells, budget.max_pairs)
        .map_err(WhatIfError::OverBudget)?;
    let excitation = site.excitation_at(&loads);
    let tables = match req.measure {
        Measure::Ratio if tables.is_empty() => {
            return Err(WhatIfError::Request(Problems::one(
                "/table",
                "name a reference-level table for the ratio (the site names none), or set measure to b_ut with a level",
            )));
        }
        Measure::Ratio => RatioTables::new(tables, &excitation).map_err(WhatIfError::Request)?,
        Measure::BUt => RatioTables::default(),
    };
    let judge = Judge { doc, req, tables, level, cancel: &budget.cancel };
    let mut steps = Vec::with_capacity(req.steps as usize + 1);
    let mut left_out = Vec::new();
    for k in 0..=req.steps {
        let (step, left) = judge.step(f64::from(k) / f64::from(req.steps))?;
        if k == 0 {
            if step.worst.is_none() {
                return Err(WhatIfError::Request(match step.problem {
                    Some(why) => Problems::one("/positions", why),
                    None => Problems::one(
                        "/table",
                        "no table applies to any chosen target (their body region or group): name a table that \
                         does, or set measure to b_ut with a level",
                    ),
                }));
            }
            left_out = left;
        }
        steps.push(step);
    }
    let unjudged: Vec<String> = if judge.tables.tables.is_empty() {
        Vec::new()
    } else {
        Chosen { positions: &req.positions, areas: &req.areas }
            .targets(site)
            .iter()
            .filter(|t| judge.tables.applicable(t.region, t.group).is_empty())
            .map(|t| format!("{} '{}'", t.kind, t.id))
            .collect()
    };
    let first = steps.iter().position(under);
    let smallest = match first {
        None => None,
        Some(0) => Some(steps[0].clone()),
        Some(k) => Some(refine(&judge, req, k)?),
    };
    let again = first.and_then(|k| steps[k..].iter().find(|s| !under(s)).cloned());
    let revision = smallest.as_ref().map(|s| moved(doc, &req.moving, s.offset_m));
    let revision_warnings = revision
        .as_ref()
        .and_then(|d| validate_site(d).ok())
        .map_or(Vec::new(), |moved_site| crate::site::site_warnings(&moved_site));
    let (unit, what) = match req.measure {
        Measure::Ratio => ("", "ratio "),
        Measure::BUt => (" µT", ""),
    };
    let answer = match (&smallest, first) {
        (None, _) => format!(
            "No step of the move up to {:.3} m brings every target under {what}{level}{unit}: the worst at the full move is {}.",
            norm(req.by_m),
            steps
                .last()
                .and_then(|s| s.worst.as_ref())
                .map_or("not known".to_string(), |w| format!("{} '{}' at {:.3}{unit}", w.kind, w.id, w.value))
        ),
        (Some(_), Some(0)) => format!("Every target is already under {what}{level}{unit} as built."),
        (Some(s), _) => format!(
            "Moving by {:.3} m ([{:.3}, {:.3}, {:.3}]) brings every target under {what}{level}{unit}: the worst is then {} '{}' at {what}{:.5}{unit}.",
            s.distance_m,
            s.offset_m[0],
            s.offset_m[1],
            s.offset_m[2],
            s.worst.as_ref().map_or("", |w| w.kind.as_str()),
            s.worst.as_ref().map_or("", |w| w.id.as_str()),
            s.worst.as_ref().map_or(0.0, |w| w.value)
        ),
    };
    Ok(MoveResult {
        moving: req.moving.clone(),
        by_m: req.by_m,
        measure: req.measure,
        tables: judge.tables.refs(),
        level,
        load: req.load.clone(),
        notes: notes(again.as_ref(), &steps, &unjudged),
        steps,
        smallest,
        answer,
        revision,
        revision_warnings,
        left_out,
        warnings: crate::site::site_warnings(site),
        cautions: crate::cautions::cautions(),
    })
}

/// The smallest computed move under the level between step `k − 1` (not
/// under) and step `k` (under): bisection, then rounded up to whole
/// millimetres along the move and judged again.
fn refine(judge: &Judge, req: &MoveDoc, k: usize) -> Result<MoveStep, WhatIfError> {
    let n = f64::from(req.steps);
    let len = norm(req.by_m);
    let (mut lo, mut hi) = ((k - 1) as f64 / n, k as f64 / n);
    let (mut best, _) = judge.step(hi)?;
    for _ in 0..BISECTIONS {
        if (hi - lo) * len <= MOVE_RESOLUTION_M {
            break;
        }
        let mid = 0.5 * (lo + hi);
        let (s, _) = judge.step(mid)?;
        if under(&s) {
            hi = mid;
            best = s;
        } else {
            lo = mid;
        }
    }
    let rounded = ((hi * len / MOVE_RESOLUTION_M).ceil() * MOVE_RESOLUTION_M / len).min(k as f64 / n);
    if rounded != hi {
        let (s, _) = judge.step(rounded)?;
        if under(&s) {
            best = s;
        }
    }
    Ok(best)
}

fn notes(again: Option<&MoveStep>, steps: &[MoveStep], unjudged: &[String]) -> Vec<String> {
    let mut n = vec![
        "Positions are judged at their points exactly; areas at the nodes of their grid, between which the field can \
         be higher. Save the revision and assess it: the assessment bounds each area's maximum and gives the verdicts."
            .to_string(),
        "The smallest move is searched between the sampled steps by bisection to 1 mm and rounded up to whole \
         millimetres; the move given was computed itself. Allow for the tolerance of the installation."
            .to_string(),
    ];
    if let Some(s) = again {
        n.push(format!(
            "The worst value does not fall steadily: at a move of {:.3} m a target is over the level again, so a larger move is not necessarily better.",
            s.distance_m
        ));
    }
    if !unjudged.is_empty() {
        n.push(format!(
            "No table applies to {}: they have no ratio and do not take part in the worst or the level.",
            unjudged.join(", ")
        ));
    }
    if steps.iter().any(|s| s.problem.is_some()) {
        n.push("Some steps give a site that is not valid (see each step's problem); they are not judged.".to_string());
    }
    n
}

/// The move as a short report for the command line.
pub fn move_text(r: &MoveResult) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let mut what: Vec<String> = Vec::new();
    for (kind, ids) in
        [("conductors", &r.moving.conductors), ("circuits", &r.moving.circuits), ("positions", &r.moving.positions)]
    {
        if !ids.is_empty() {
            what.push(format!("{kind} {}", ids.join(", ")));
        }
    }
    let by = match r.measure {
        Measure::Ratio => format!(
            "exposure ratio against {}",
            r.tables.iter().map(|t| format!("{} (v{})", t.id, t.version)).collect::<Vec<_>>().join(", ")
        ),
        Measure::BUt => "resultant RMS flux density".to_string(),
    };
    let _ = writeln!(
        s,
        "Move of {} by up to [{}, {}, {}] m at {} load, judged by {by}, level {}{}",
        what.join("; "),
        r.by_m[0],
        r.by_m[1],
        r.by_m[2],
        r.load.name(),
        r.level,
        if r.measure == Measure::BUt { " µT" } else { "" }
    );
    let _ = writeln!(s);
    let _ = writeln!(s, "{:>10}  {:<28}  under the level", "move (m)", "worst");
    for st in &r.steps {
        let (worst, under) = match (&st.worst, &st.problem) {
            (Some(w), _) => (
                format!("{} {}", w.id, value_text(r.measure, w.value)),
                if st.under_level == Some(true) { "yes" } else { "no" }.to_string(),
            ),
            (None, Some(p)) => ("not judged".to_string(), p.clone()),
            (None, None) => ("not judged".to_string(), String::new()),
        };
        let _ = writeln!(s, "{:>10.3}  {:<28}  {}", st.distance_m, worst, under);
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "{}", r.answer);
    if !r.revision_warnings.is_empty() {
        let _ = writeln!(s);
        let _ = writeln!(s, "Moved site (the revision):");
        s.push_str(&crate::report::text::warnings_text(&r.revision_warnings));
    }
    closing_text(&mut s, &r.left_out, &r.warnings, &r.notes, &r.cautions);
    s
}
