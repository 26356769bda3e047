//! Load scenarios: a batch of named load cases judged in one geometry pass
//! (the influence matrix of every conductor at the targets, computed once;
//! each scenario is then a sum over conductors), with generated N-1 cases
//! for circuits that share one load.
//!
//! **N-1.** Circuits with the same `load_group` feed one load in parallel.
//! For each circuit of a group, a case takes it out of service (0 A) and
//! shares its current among the others in proportion to their own current
//! in the base case, so the group's total is kept: `I_j' = I_j · T / (T − I_k)`
//! with `T = Σ I`; equal feeders each take an equal part. If the others
//! carry nothing in the base case they share it equally. Every generated
//! case is written out as explicit currents, so it can be assessed as is.

use super::judge::{
    Chosen, Judged, LeftOut, Measure, RatioTables, WhatIfBudget, WhatIfError, Worst, closing_text, value_text,
};
use crate::assess::{CircuitLoadReport, LoadCase, TableRef};
use crate::limits::ReferenceTable;
use crate::site::{Pointer, Problems, Site};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Most scenarios in one request, given and generated together.
pub const MAX_SCENARIOS: usize = 64;

/// A named load case.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct Scenario {
    /// Name, unique in the request (1–64 characters).
    #[cfg_attr(feature = "schema", schema(min_length = 1, max_length = 64))]
    pub name: String,
    pub load: LoadCase,
}

/// N-1 cases for every load group of the site.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct NMinusOne {
    /// The load every circuit is at before one goes out (default present).
    #[serde(default)]
    pub base: LoadCase,
}

/// A load-scenario request.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct ScenariosDoc {
    /// Named load cases (default: `present`, and `rated` when every
    /// circuit has a rated current; `[]` for none).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub scenarios: Option<Vec<Scenario>>,
    /// Also generate N-1 cases for every load group (circuits marked with
    /// the same `load_group`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub n_minus_1: Option<NMinusOne>,
    /// The one table of the ratio (default: every table of the site that
    /// applies to each target, and the implant table for implant wearers,
    /// as an assessment; none: B only).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub table: Option<String>,
    /// Position ids judged (default: all; `[]` for none).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub positions: Option<Vec<String>>,
    /// Area ids judged on their grid nodes (default: all; `[]` for none).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub areas: Option<Vec<String>>,
}

/// Where a scenario came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum Origin {
    /// Named in the request (or the default present and rated).
    Given,
    /// Generated: one circuit of a load group out of service.
    NMinusOne,
}

/// One target in one scenario.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct TargetResult {
    /// `position` or `area`.
    pub kind: String,
    pub id: String,
    /// Highest resultant RMS flux density over its points (an area: its
    /// grid nodes), µT.
    pub b_ut: f64,
    /// Highest exposure ratio over its points and the tables that apply to
    /// it (`null`: no table applies).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub ratio: Option<f64>,
    /// The table of that ratio.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub table: Option<String>,
}

/// One scenario's answer.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct ScenarioResult {
    pub name: String,
    pub origin: Origin,
    /// The load case judged (a generated case as explicit currents, ready
    /// to assess).
    pub load: LoadCase,
    /// Per circuit, the present and judged currents.
    pub circuits: Vec<CircuitLoadReport>,
    /// Circuits carrying more than their rated current in this scenario.
    pub above_rated: Vec<String>,
    pub targets: Vec<TargetResult>,
    /// The position with the highest value (ratio, else µT).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub worst_position: Option<Worst>,
    /// The area with the highest value at its grid nodes.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub worst_area: Option<Worst>,
}

/// The worst scenario.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct WorstScenario {
    pub scenario: String,
    /// Where it is worst, with the value.
    pub at: Worst,
}

/// The answer of a load-scenario batch.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct ScenarioResults {
    /// What the worst is judged by: `ratio` with tables, else `b_ut`.
    pub measure: Measure,
    /// The tables of the ratios (empty: B only).
    pub tables: Vec<TableRef>,
    /// Points (position heights and area nodes) judged in every scenario.
    pub points: u64,
    pub scenarios: Vec<ScenarioResult>,
    pub worst: WorstScenario,
    pub left_out: Vec<LeftOut>,
    /// Model warnings about the site as judged (open ends, no return path,
    /// points inside conductors or below ground), each with its pointer
    /// into the site document. They never block the answer.
    pub warnings: Vec<crate::site::Warning>,
    pub notes: Vec<String>,
    pub cautions: Vec<String>,
}

/// The scenarios of the request, given then generated, or every problem.
pub fn expand(site: &Site, req: &ScenariosDoc) -> Result<Vec<(Scenario, Origin)>, Problems> {
    let mut p = Problems::default();
    let mut out: Vec<(Scenario, Origin)> = match &req.scenarios {
        Some(list) => list.iter().map(|s| (s.clone(), Origin::Given)).collect(),
        None => {
            let mut d = vec![(Scenario { name: "present".into(), load: LoadCase::Present }, Origin::Given)];
            if site.circuits().iter().all(|c| c.rated_current_a.is_some()) && !site.circuits().is_empty() {
                d.push((Scenario { name: "rated".into(), load: LoadCase::Rated }, Origin::Given));
            }
            d
        }
    };
    for (i, (s, _)) in out.iter().enumerate() {
        let at = Pointer::root().key("scenarios").index(i).key("name");
        if s.name.trim().is_empty() || s.name.chars().count() > 64 {
            p.push(&at, "a scenario name must be 1 to 64 characters");
        } else if out[..i].iter().any(|(o, _)| o.name == s.name) {
            p.push(&at, format!("scenario name '{}' is used twice", s.name));
        }
        if let Err(e) = s.load.resolve(site) {
            let load_at = Pointer::root().key("scenarios").index(i).key("load");
            let mut all = crate::usecase::under(&load_at.to_string(), e.in_load);
            all.0.extend(e.in_site.0.into_iter().map(|q| crate::site::Problem { pointer: load_at.to_string(), ..q }));
            p.0.extend(all.0);
        }
    }
    if let Some(n1) = &req.n_minus_1 {
        match n_minus_one(site, &n1.base) {
            Ok(cases) if cases.is_empty() => p.push(
                &Pointer::root().key("n_minus_1"),
                "no circuit of the site has a load_group: mark the circuits that share one load with the same load_group",
            ),
            Ok(cases) => out.extend(cases.into_iter().map(|s| (s, Origin::NMinusOne))),
            Err(e) => p.0.extend(e.0),
        }
    }
    if out.is_empty() && p.is_empty() {
        p.push(&Pointer::root().key("scenarios"), "no scenario to judge: name at least one, or ask for n_minus_1");
    }
    if out.len() > MAX_SCENARIOS {
        p.push(
            &Pointer::root().key("scenarios"),
            format!("{} scenarios (given and generated), more than {MAX_SCENARIOS}: split the batch", out.len()),
        );
    }
    p.into_result(out)
}

/// The N-1 cases of every load group at `base`: for each group, all in
/// service, then each circuit out in turn (module doc).
fn n_minus_one(site: &Site, base: &LoadCase) -> Result<Vec<Scenario>, Problems> {
    let at = Pointer::root().key("n_minus_1").key("base");
    let loads = base.resolve(site).map_err(|e| {
        let mut all = crate::usecase::under(&at.to_string(), e.in_load);
        all.0.extend(e.in_site.0.into_iter().map(|q| crate::site::Problem { pointer: at.to_string(), ..q }));
        all
    })?;
    let nominal: Vec<f64> = site.circuits().iter().zip(&loads).map(|(c, l)| c.nominal_current_a(*l)).collect();
    let mut groups: BTreeMap<&str, Vec<usize>> = BTreeMap::new();
    for (i, c) in site.circuits().iter().enumerate() {
        if let Some(g) = &c.load_group {
            groups.entry(g.as_str()).or_default().push(i);
        }
    }
    let explicit = |currents: &[f64]| LoadCase::Currents {
        currents_a: site.circuits().iter().zip(currents).map(|(c, a)| (c.id.clone(), *a)).collect(),
    };
    let mut out = Vec::new();
    for (group, members) in groups {
        out.push(Scenario { name: format!("{group}: all in service"), load: explicit(&nominal) });
        let total: f64 = members.iter().map(|&i| nominal[i]).sum();
        for &k in &members {
            let mut currents = nominal.clone();
            let rest = total - nominal[k];
            let others = members.len() as f64 - 1.0;
            for &j in members.iter().filter(|&&j| j != k) {
                currents[j] = if rest > 0.0 { nominal[j] * total / rest } else { total / others };
            }
            currents[k] = 0.0;
            out.push(Scenario { name: format!("{group}: {} out", site.circuits()[k].id), load: explicit(&currents) });
        }
    }
    Ok(out)
}

/// Judges every scenario of `req` in `site`, the ratios against `tables`
/// (resolved by the caller; `None`: B only).
pub fn run_scenarios(
    site: &Site,
    req: &ScenariosDoc,
    tables: &[ReferenceTable],
    budget: &WhatIfBudget,
) -> Result<ScenarioResults, WhatIfError> {
    let choice = Chosen { positions: &req.positions, areas: &req.areas };
    let mut p = Problems::default();
    choice.check_ids(site, &mut p);
    let scenarios = match expand(site, req) {
        Ok(s) => s,
        Err(e) => {
            p.0.extend(e.0);
            return Err(WhatIfError::Request(p));
        }
    };
    if !p.is_empty() {
        return Err(WhatIfError::Request(p));
    }
    choice.check_budget(site, 1, budget.max_grid_cells, budget.max_pairs).map_err(WhatIfError::OverBudget)?;
    let (_, points) = choice.counts(site);
    let work =
        (scenarios.len() as u64).saturating_mul(points).saturating_mul(site.conductors().len() as u64).saturating_mul(
            site.excitation_at(&vec![crate::site::CircuitLoad::PRESENT; site.circuits().len()]).lines.len() as u64,
        );
    if work > budget.max_work {
        return Err(WhatIfError::OverBudget(Problems::one(
            "/scenarios",
            format!(
                "{work} scenario-point-conductor products, over the budget of {}: fewer scenarios or targets",
                budget.max_work
            ),
        )));
    }
    let measure = if tables.is_empty() { Measure::BUt } else { Measure::Ratio };
    // Every scenario's lines and loads first: a table that misses a line
    // any scenario carries is a problem before anything is sampled.
    let mut cases = Vec::with_capacity(scenarios.len());
    for (s, origin) in scenarios {
        let loads = s.load.resolve(site).map_err(|e| WhatIfError::Request(e.into_problems("/scenarios")))?;
        let excitation = site.excitation_at(&loads);
        let ratio_tables = RatioTables::new(tables, &excitation).map_err(WhatIfError::Request)?;
        cases.push((s, origin, loads, excitation, ratio_tables));
    }
    let judged = Judged::sample(site, &[], choice.targets(site), "the scenarios", &budget.cancel)?;
    let mut results = Vec::with_capacity(cases.len());
    for (s, origin, loads, excitation, ratio_tables) in cases {
        if budget.cancel.is_cancelled() {
            return Err(WhatIfError::Cancelled);
        }
        let values = judged.values(&excitation, &ratio_tables);
        let targets: Vec<TargetResult> = judged
            .targets
            .iter()
            .zip(&values)
            .map(|(t, v)| TargetResult {
                kind: t.kind.to_string(),
                id: t.id.clone(),
                b_ut: v.b_ut,
                ratio: v.ratio,
                table: v.table.map(|k| tables[k].id().to_string()),
            })
            .collect();
        let worst_of = |kind: &str| {
            targets
                .iter()
                .filter(|t| t.kind == kind)
                .filter_map(|t| {
                    let value = match measure {
                        Measure::Ratio => t.ratio?,
                        Measure::BUt => t.b_ut,
                    };
                    Some(Worst { kind: t.kind.clone(), id: t.id.clone(), value })
                })
                .max_by(|a, b| a.value.total_cmp(&b.value))
        };
        let report = crate::assess::load_report(&s.load, site, &loads);
        let above_rated = site
            .circuits()
            .iter()
            .zip(&report.circuits)
            .filter(|(c, r)| c.rated_current_a.is_some_and(|rated| r.assessed_a > rated * (1.0 + 1e-9)))
            .map(|(c, _)| c.id.clone())
            .collect();
        results.push(ScenarioResult {
            name: s.name,
            origin,
            load: s.load,
            circuits: report.circuits,
            above_rated,
            worst_position: worst_of("position"),
            worst_area: worst_of("area"),
            targets,
        });
    }
    let worst = results
        .iter()
        .flat_map(|r| {
            [&r.worst_position, &r.worst_area]
                .into_iter()
                .flatten()
                .map(|w| WorstScenario { scenario: r.name.clone(), at: w.clone() })
        })
        .max_by(|a, b| a.at.value.total_cmp(&b.at.value))
        .ok_or_else(|| {
            WhatIfError::Request(Problems::one(
                "/table",
                "no table applies to any chosen target (their body region or group): name a table that does",
            ))
        })?;
    Ok(ScenarioResults {
        measure,
        tables: tables.iter().map(TableRef::of).collect(),
        points: judged.kept.len() as u64,
        notes: notes(
            &results,
            measure,
            &unjudged(&judged, tables),
            site.circuits().iter().any(|c| c.load_group.is_some()),
        ),
        scenarios: results,
        worst,
        left_out: judged.left_out,
        warnings: crate::site::site_warnings(site),
        cautions: crate::cautions::cautions(),
    })
}

/// Targets no table applies to, in words (`position 'hands' (limbs)`).
pub(crate) fn unjudged(judged: &Judged, tables: &[ReferenceTable]) -> Vec<String> {
    if tables.is_empty() {
        return Vec::new();
    }
    let rt = RatioTables { tables: tables.to_vec(), weights: Vec::new() };
    judged
        .targets
        .iter()
        .filter(|t| rt.applicable(t.region, t.group).is_empty())
        .map(|t| format!("{} '{}'", t.kind, t.id))
        .collect()
}

fn notes(results: &[ScenarioResult], measure: Measure, unjudged: &[String], has_groups: bool) -> Vec<String> {
    let mut n = vec![
        "Areas are judged at the nodes of their grid; between nodes the field can be higher. Assess the worst \
         scenario's load case: the assessment bounds each area's maximum and gives the verdicts."
            .to_string(),
    ];
    if measure == Measure::BUt {
        n.push("No table was named and the site names none: scenarios are compared by flux density only.".to_string());
    } else {
        n.push(
            "Each target is judged against every table that applies to it (by body region and group, the implant \
             table for implant wearers), as an assessment does; its ratio is the highest, with that table named."
                .to_string(),
        );
    }
    if !unjudged.is_empty() {
        n.push(format!(
            "No table applies to {}: they have no ratio and do not take part in the worst; see their flux density.",
            unjudged.join(", ")
        ));
    }
    if !results.iter().any(|r| r.origin == Origin::NMinusOne) && has_groups {
        n.push(
            "The site marks circuits that share one load (load_group) and no N-1 case was asked for: with one out \
             of service the others carry its current, which can be worse than any case here. Add n_minus_1 (CLI \
             --n-minus-1)."
                .to_string(),
        );
    }
    if results.iter().any(|r| r.origin == Origin::NMinusOne) {
        n.push(
            "N-1 cases: the circuit out of service carries nothing and the others of its load group share its \
             current in proportion to their own, keeping the group's total."
                .to_string(),
        );
    }
    if results.iter().any(|r| !r.above_rated.is_empty()) {
        n.push(
            "Some scenarios load circuits beyond their rated current: whether that is allowed, and for how long, \
             is for the circuits' protection settings and the network operator to say."
                .to_string(),
        );
    }
    n
}

/// The batch as a short report for the command line.
pub fn scenarios_text(r: &ScenarioResults) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let by = match r.tables.as_slice() {
        [] => "resultant RMS flux density (no table)".to_string(),
        tables => format!(
            "exposure ratio against {}",
            tables.iter().map(|t| format!("{} (v{})", t.id, t.version)).collect::<Vec<_>>().join(", ")
        ),
    };
    let _ = writeln!(s, "Load scenarios: {} judged at {} points, by {by}", r.scenarios.len(), r.points);
    let _ = writeln!(s);
    let width = r.scenarios.iter().map(|x| x.name.chars().count()).max().unwrap_or(8).max(8);
    let cell = |w: &Option<Worst>| {
        w.as_ref().map_or("—".to_string(), |w| format!("{} {}", w.id, value_text(r.measure, w.value)))
    };
    let pw = r.scenarios.iter().map(|x| cell(&x.worst_position).chars().count()).max().unwrap_or(0).max(14);
    let _ = writeln!(s, "{:<width$}  {:<pw$}  worst area", "scenario", "worst position");
    for x in &r.scenarios {
        let cell = |w: &Option<Worst>| {
            w.as_ref().map_or("—".to_string(), |w| format!("{} {}", w.id, value_text(r.measure, w.value)))
        };
        let _ = writeln!(s, "{:<width$}  {:<pw$}  {}", x.name, cell(&x.worst_position), cell(&x.worst_area));
        if !x.above_rated.is_empty() {
            let over: Vec<String> = x
                .circuits
                .iter()
                .filter(|c| x.above_rated.contains(&c.id))
                .map(|c| format!("{} at {:.0} A", c.id, c.assessed_a))
                .collect();
            let _ = writeln!(s, "{:<width$}  above its rated current: {}", "", over.join(", "));
        }
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "Worst: scenario '{}', {} '{}' at {}",
        r.worst.scenario,
        r.worst.at.kind,
        r.worst.at.id,
        value_text(r.measure, r.worst.at.value)
    );
    closing_text(&mut s, &r.left_out, &r.warnings, &r.notes, &r.cautions);
    s
}
