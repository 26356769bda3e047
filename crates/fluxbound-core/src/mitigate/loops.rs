//! A passive loop added to a site: its induced current on every spectral
//! line and the field at the chosen targets without and with it, from one
//! influence matrix of the site's conductors and the loop ([`super::passive`]
//! for the inductances and the current).

use super::judge::{
    Chosen, Judged, LeftOut, Measure, RatioTables, WhatIfBudget, WhatIfError, Worst, closing_text, value_text,
};
use super::passive::{LoopResistance, PassiveLoop, PassiveLoopError, loop_coupling};
use crate::assess::{LoadCase, TableRef};
use crate::field::Filament;
use crate::limits::ReferenceTable;
use crate::site::{Pointer, Problems, Site};
use nalgebra::Point3;
use num_complex::Complex64;
use serde::{Deserialize, Serialize};

/// Most vertices of a loop.
pub const MAX_LOOP_VERTICES: usize = 1000;

/// Kernel pairs one loop-segment × source-segment Neumann integral is
/// counted as against the pair budget (Gauss–Legendre of up to 32 points on
/// a few pieces, each a closed-form inner integral: common practice, no
/// source; an estimate that errs on the large side).
pub const NEUMANN_PAIR_COST: u64 = 256;

/// How the loop's resistance is given.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum ResistanceDoc {
    /// The whole loop's resistance, Ω (measured, joints included).
    Given {
        #[cfg_attr(feature = "schema", schema(exclusive_minimum = 0))]
        ohm: f64,
    },
    /// Uniform wire, `R = length / (σ·A)` at DC (copper ≈ 5.8e7 S/m,
    /// aluminium ≈ 3.5e7 S/m).
    Wire {
        #[cfg_attr(feature = "schema", schema(exclusive_minimum = 0))]
        cross_section_mm2: f64,
        #[cfg_attr(feature = "schema", schema(exclusive_minimum = 0))]
        conductivity_s_per_m: f64,
    },
}

/// A passive-loop request.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct LoopDoc {
    /// Closed polygon `[[x, y, z], …]`, m (3–1000 vertices; the last joins
    /// the first). The loop current is positive in vertex order.
    #[cfg_attr(feature = "schema", schema(min_items = 3, max_items = 1000))]
    pub path: Vec<[f64; 3]>,
    /// Radius of the loop's round wire, m.
    #[cfg_attr(feature = "schema", schema(exclusive_minimum = 0))]
    pub wire_radius_m: f64,
    pub resistance: ResistanceDoc,
    /// The load judged at (default present).
    #[serde(default)]
    pub load: LoadCase,
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

/// The loop current on one spectral line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct LoopLine {
    /// Harmonic order (1 = fundamental).
    pub order: u32,
    pub frequency_hz: f64,
    /// RMS loop current, A.
    pub current_a: f64,
    /// Its phase angle, degrees (same reference as the circuits').
    pub angle_deg: f64,
    /// Loop reactance `ωL`, Ω.
    pub reactance_ohm: f64,
}

/// A target's values without and with the loop.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct LoopTarget {
    /// `position` or `area`.
    pub kind: String,
    pub id: String,
    /// Highest resultant RMS flux density without the loop, µT.
    pub b_without_ut: f64,
    /// With the loop, µT.
    pub b_with_ut: f64,
    /// `(without − with)/without`, percent (negative: the loop raises it;
    /// `null` when there is no field without it).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub reduction_percent: Option<f64>,
    /// Highest ratio without the loop (`null` without a table).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub ratio_without: Option<f64>,
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub ratio_with: Option<f64>,
}

/// The answer for a passive loop.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct LoopResult {
    pub length_m: f64,
    pub resistance_ohm: f64,
    /// Self-inductance, H (thin round wire, uniform current).
    pub self_inductance_h: f64,
    pub load: LoadCase,
    /// The loop current per spectral line.
    pub lines: Vec<LoopLine>,
    pub measure: Measure,
    #[cfg_attr(feature = "schema", schema(required = true))]
    /// The tables of the ratios (empty: B only).
    pub tables: Vec<TableRef>,
    pub targets: Vec<LoopTarget>,
    pub worst_without: Worst,
    pub worst_with: Worst,
    pub left_out: Vec<LeftOut>,
    /// Model warnings about the site as judged (open ends, no return path,
    /// points inside conductors or below ground), each with its pointer
    /// into the site document. They never block the answer.
    pub warnings: Vec<crate::site::Warning>,
    pub notes: Vec<String>,
    pub cautions: Vec<String>,
}

/// The loop of the request, or the problem at its field.
fn passive(req: &LoopDoc) -> Result<PassiveLoop, Problems> {
    let mut p = Problems::default();
    if !(3..=MAX_LOOP_VERTICES).contains(&req.path.len()) {
        p.push(&Pointer::root().key("path"), format!("a loop needs 3 to {MAX_LOOP_VERTICES} vertices"));
    }
    for (i, v) in req.path.iter().enumerate() {
        for (d, c) in v.iter().enumerate() {
            crate::site::check_coordinate(*c, &Pointer::root().key("path").index(i).index(d), &mut p);
        }
    }
    let resistance = match req.resistance {
        ResistanceDoc::Given { ohm } => LoopResistance::Ohm(ohm),
        ResistanceDoc::Wire { cross_section_mm2, conductivity_s_per_m } => {
            LoopResistance::Wire { cross_section_mm2, conductivity_s_per_m }
        }
    };
    let l = PassiveLoop {
        path: req.path.iter().map(|v| Point3::new(v[0], v[1], v[2])).collect(),
        wire_radius_m: req.wire_radius_m,
        resistance,
    };
    p.into_result(l)
}

/// The pointer a loop error belongs to.
fn loop_problem(e: &PassiveLoopError) -> Problems {
    let at = match e {
        PassiveLoopError::TooFewVertices { .. }
        | PassiveLoopError::ZeroLengthSegment { .. }
        | PassiveLoopError::NotFinite { what: "a loop vertex" } => "/path",
        PassiveLoopError::WireRadius | PassiveLoopError::WireTooThick { .. } => "/wire_radius_m",
        PassiveLoopError::Resistance | PassiveLoopError::NotFinite { .. } => "/resistance",
        PassiveLoopError::TooClose { .. } => "/path",
        PassiveLoopError::CurrentCount { .. } | PassiveLoopError::Frequency { .. } => "",
    };
    Problems::one(at, e.to_string())
}

/// Judges `req`'s loop in `site`, the ratios against `tables` (resolved by
/// the caller; `None`: B only).
pub fn run_loop(
    site: &Site,
    req: &LoopDoc,
    tables: &[ReferenceTable],
    budget: &WhatIfBudget,
) -> Result<LoopResult, WhatIfError> {
    let choice = Chosen { positions: &req.positions, areas: &req.areas };
    let mut p = Problems::default();
    choice.check_ids(site, &mut p);
    let pl = match passive(req) {
        Ok(l) if p.is_empty() => l,
        Ok(_) => return Err(WhatIfError::Request(p)),
        Err(e) => {
            p.0.extend(e.0);
            return Err(WhatIfError::Request(p));
        }
    };
    let loads = req.load.resolve(site).map_err(WhatIfError::Load)?;
    choice.check_budget(site, 1, budget.max_grid_cells, budget.max_pairs).map_err(WhatIfError::OverBudget)?;
    let sources: Vec<Filament> =
        site.conductors().iter().map(|c| Filament { path: c.path.clone(), radius_m: c.radius_m }).collect();
    // Neumann's integral runs once per loop segment and source segment, in
    // one piece, and cannot be stopped half-way: it is bounded here, each
    // segment pair counted as NEUMANN_PAIR_COST kernel pairs.
    let neumann = (req.path.len() as u64)
        .saturating_mul(crate::usecase::segment_count(site.conductors()))
        .saturating_mul(NEUMANN_PAIR_COST);
    if neumann > budget.max_pairs {
        return Err(WhatIfError::OverBudget(Problems::one(
            "/path",
            format!(
                "the loop's {} segments against the site's {} conductor segments need about {neumann} pair \
                 evaluations, over the budget of {}: use fewer loop vertices",
                req.path.len(),
                crate::usecase::segment_count(site.conductors()),
                budget.max_pairs
            ),
        )));
    }
    let coupling = loop_coupling(&pl, &sources).map_err(|e| match e {
        PassiveLoopError::TooClose { conductor, distance_m } => WhatIfError::Request(Problems::one(
            "/path",
            format!(
                "the loop comes within {distance_m:.4} m of conductor '{}', closer than the two radii: move it clear",
                site.conductors().get(conductor).map_or("?", |c| c.id.as_str())
            ),
        )),
        e => WhatIfError::Request(loop_problem(&e)),
    })?;
    if enclosed_area_m2(&pl.path) <= 1e-9 * pl.length_m().unwrap_or(0.0).powi(2) {
        return Err(WhatIfError::Request(Problems::one(
            "/path",
            "the loop encloses no area (its vertices lie on one line, or it folds back on itself): no current is induced",
        )));
    }
    if budget.cancel.is_cancelled() {
        return Err(WhatIfError::Cancelled);
    }
    let excitation = site.excitation_at(&loads);
    let measure = if tables.is_empty() { Measure::BUt } else { Measure::Ratio };
    let ratio_tables = RatioTables::new(tables, &excitation).map_err(WhatIfError::Request)?;
    let currents: Vec<Complex64> =
        excitation.lines.iter().map(|l| coupling.current_a(l.frequency_hz, &l.currents_a)).collect();
    let vertices = pl.vertices().map_err(|e| WhatIfError::Request(loop_problem(&e)))?;
    let mut closed = vertices.to_vec();
    closed.push(vertices[0]);
    let filament = Filament { path: closed, radius_m: pl.wire_radius_m };
    let targets = choice.targets(site);
    // Where each target's points start in the sampled list, before points
    // inside conductors are removed.
    let spans: Vec<(String, usize)> = targets
        .iter()
        .scan(0, |start, t| {
            *start += t.points.len();
            Some((format!("{} '{}'", t.kind, t.id), *start))
        })
        .collect();
    let judged = Judged::sample(site, std::slice::from_ref(&filament), targets, "the loop", &budget.cancel)?;
    // A point inside the loop's own wire would be left out of "without"
    // too and hide the worst: the loop may not pass through a target.
    let n = site.conductors().len();
    if let Some(hit) = judged.g.inside.iter().find(|h| h.conductor == n) {
        let what = spans.iter().find(|(_, end)| hit.point < *end).map_or("a chosen target", |(w, _)| w.as_str());
        return Err(WhatIfError::Request(Problems::one(
            "/path",
            format!("the loop's wire passes through {what}: move the loop clear of where people are judged"),
        )));
    }
    let mut with = excitation.clone();
    for (line, i) in with.lines.iter_mut().zip(&currents) {
        line.currents_a.push(*i);
    }
    let before = judged.values(&excitation, &ratio_tables);
    let after = judged.values(&with, &ratio_tables);
    let targets: Vec<LoopTarget> = judged
        .targets
        .iter()
        .zip(before.iter().zip(&after))
        .map(|(t, (b, a))| LoopTarget {
            kind: t.kind.to_string(),
            id: t.id.clone(),
            b_without_ut: b.b_ut,
            b_with_ut: a.b_ut,
            reduction_percent: (b.b_ut > 0.0).then(|| (b.b_ut - a.b_ut) / b.b_ut * 100.0),
            ratio_without: b.ratio,
            ratio_with: a.ratio,
        })
        .collect();
    // By ratio where a table applies, else (no table at all) by B; a target
    // no table applies to is named in the notes instead.
    let worst = |pick: &dyn Fn(&LoopTarget) -> Option<f64>| {
        targets
            .iter()
            .filter_map(|t| Some(Worst { kind: t.kind.clone(), id: t.id.clone(), value: pick(t)? }))
            .max_by(|a, b| a.value.total_cmp(&b.value))
            .ok_or_else(|| {
                WhatIfError::Request(Problems::one(
                    "/table",
                    "no table applies to any chosen target (their body region or group): name a table that does",
                ))
            })
    };
    let (worst_without, worst_with) = match measure {
        Measure::Ratio => (worst(&|t| t.ratio_without)?, worst(&|t| t.ratio_with)?),
        Measure::BUt => (worst(&|t| Some(t.b_without_ut))?, worst(&|t| Some(t.b_with_ut))?),
    };
    let lines = excitation
        .lines
        .iter()
        .zip(&currents)
        .map(|(l, i)| LoopLine {
            order: l.order,
            frequency_hz: l.frequency_hz,
            current_a: i.norm(),
            angle_deg: if i.norm() > 0.0 { i.arg().to_degrees() } else { 0.0 },
            reactance_ohm: 2.0 * std::f64::consts::PI * l.frequency_hz * coupling.self_h,
        })
        .collect();
    let mut notes = vec![
        "The loop's resistance is taken at DC (no skin effect) and its current is uniform in the wire: a loop of \
         wire thicker than the skin depth, or of steel, carries less current and reduces the field less than shown."
            .to_string(),
        "The loop is drawn from its centre line; connections, joints and earthing paths that close other loops are \
         not modelled. Measure after installation."
            .to_string(),
        "Areas are judged at the nodes of their grid; between nodes the field can be higher. The site model holds \
         no passive loops: confirm the reduction by measurement after installation."
            .to_string(),
    ];
    let unjudged = super::scenarios::unjudged(&judged, tables);
    if !unjudged.is_empty() {
        notes.push(format!("No table applies to {}: they are judged by flux density only.", unjudged.join(", ")));
    }
    if let ResistanceDoc::Wire { conductivity_s_per_m, .. } = req.resistance
        && let Some(f) = excitation.lines.iter().map(|l| l.frequency_hz).reduce(f64::max)
    {
        // Skin depth δ = √(2 / (ω µ0 σ)) (textbook, non-magnetic conductor).
        let omega = 2.0 * std::f64::consts::PI * f;
        let delta = (2.0 / (omega * super::passive::MU0_H_PER_M * conductivity_s_per_m)).sqrt();
        if req.wire_radius_m > delta {
            notes.push(format!(
                "The wire's radius ({:.1} mm) exceeds the skin depth at {f} Hz ({:.1} mm): its AC resistance is higher \
                 than the DC value used, so the loop current and the reduction shown are too high. Give the measured \
                 resistance instead.",
                req.wire_radius_m * 1e3,
                delta * 1e3
            ));
        }
    }
    Ok(LoopResult {
        length_m: pl.length_m().map_err(|e| WhatIfError::Request(loop_problem(&e)))?,
        resistance_ohm: coupling.resistance_ohm,
        self_inductance_h: coupling.self_h,
        load: req.load.clone(),
        lines,
        measure,
        tables: ratio_tables.refs(),
        targets,
        worst_without,
        worst_with,
        left_out: judged.left_out,
        warnings: crate::site::site_warnings(site),
        notes,
        cautions: crate::cautions::cautions(),
    })
}

/// The loop as a short report for the command line.
pub fn loop_text(r: &LoopResult) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "Passive loop: {:.2} m of wire, R = {:.4} mΩ, L = {:.3} µH, at {} load",
        r.length_m,
        r.resistance_ohm * 1e3,
        r.self_inductance_h * 1e6,
        r.load.name()
    );
    if !r.tables.is_empty() {
        let names: Vec<String> = r.tables.iter().map(|t| format!("{} (v{})", t.id, t.version)).collect();
        let _ = writeln!(s, "Ratios against the tables that apply to each target: {}", names.join(", "));
    }
    for l in &r.lines {
        let _ = writeln!(
            s,
            "  order {:>2} ({} Hz): loop current {:.2} A at {:.1}°, ωL = {:.4} mΩ",
            l.order,
            l.frequency_hz,
            l.current_a,
            l.angle_deg,
            l.reactance_ohm * 1e3
        );
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "{:<9} {:<20} {:>12} {:>12} {:>10}", "kind", "id", "without µT", "with µT", "change");
    for t in &r.targets {
        let change = t.reduction_percent.map_or("—".to_string(), |p| format!("{:+.1} %", -p));
        let _ = writeln!(s, "{:<9} {:<20} {:>12.3} {:>12.3} {:>10}", t.kind, t.id, t.b_without_ut, t.b_with_ut, change);
        if let (Some(a), Some(b)) = (t.ratio_without, t.ratio_with) {
            let _ = writeln!(s, "{:<9} {:<20} {:>12} {:>12}", "", "ratio", format!("{a:.3}"), format!("{b:.3}"));
        }
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "Worst without the loop: {} '{}' at {}; with it: {} '{}' at {}",
        r.worst_without.kind,
        r.worst_without.id,
        value_text(r.measure, r.worst_without.value),
        r.worst_with.kind,
        r.worst_with.id,
        value_text(r.measure, r.worst_with.value)
    );
    closing_text(&mut s, &r.left_out, &r.warnings, &r.notes, &r.cautions);
    s
}

/// The magnitude of the loop's vector area `½ |Σ v_i × v_(i+1)|`, m².
fn enclosed_area_m2(path: &[Point3<f64>]) -> f64 {
    let n = path.len();
    let sum = (0..n).fold(nalgebra::Vector3::zeros(), |acc, i| acc + path[i].coords.cross(&path[(i + 1) % n].coords));
    0.5 * sum.norm()
}
