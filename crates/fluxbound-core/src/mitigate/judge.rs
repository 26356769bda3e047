//! What a what-if is judged by: chosen positions (every height) and areas
//! (their grid nodes), sampled once with the influence matrix of every
//! conductor at their points, so that any set of currents is judged by
//! sums alone. Shared by the phase search, the load scenarios, the moves
//! and the passive loops.
//!
//! Areas are judged at the nodes of their grid: between nodes the field can
//! be higher, so every answer built on this is a screening that an
//! assessment (which bounds each area's maximum) must confirm.

use crate::assess::line_levels;
use crate::cancel::Cancel;
use crate::field::{Excitation, Filament, Filaments, InfluenceMatrix, try_influence_matrix};
use crate::limits::ReferenceTable;
use crate::site::wire::{BodyRegion, Group};
use crate::site::{Pointer, Problems, Site};
use nalgebra::Point3;
use serde::{Deserialize, Serialize};

/// What is judged.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum Measure {
    /// Exposure ratio `Σ_f B_f / B_RL(f)` against one table.
    #[default]
    Ratio,
    /// Resultant RMS flux density over all frequencies, µT.
    BUt,
}

/// A target left out, and why.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct LeftOut {
    pub kind: String,
    pub id: String,
    pub reason: String,
}

/// Where a value is worst.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct Worst {
    /// `position` or `area`.
    pub kind: String,
    pub id: String,
    /// Its value (ratio, or µT for `b_ut`).
    pub value: f64,
}

/// Why a what-if could not answer.
#[derive(Debug, Clone, PartialEq)]
pub enum WhatIfError {
    /// Problems with pointers into the request.
    Request(Problems),
    /// Work over a budget; the pointer says what to reduce.
    OverBudget(Problems),
    /// The load case does not fit the site.
    Load(crate::assess::LoadError),
    Cancelled,
}

impl From<JudgeError> for WhatIfError {
    fn from(e: JudgeError) -> Self {
        match e {
            JudgeError::Nothing(p) => WhatIfError::Request(p),
            JudgeError::Cancelled => WhatIfError::Cancelled,
        }
    }
}

/// Work limits of one what-if (scenarios, moves, loops).
#[derive(Debug, Clone)]
pub struct WhatIfBudget {
    /// Segment–point pairs of every influence matrix together.
    pub max_pairs: u64,
    /// Grid cells over the chosen areas.
    pub max_grid_cells: u64,
    /// Scenario × point × conductor × line products of a scenario batch.
    pub max_work: u64,
    pub cancel: Cancel,
}

impl WhatIfBudget {
    /// No cap on anything, never cancelled (tests and tools).
    pub fn unlimited() -> WhatIfBudget {
        WhatIfBudget { max_pairs: u64::MAX, max_grid_cells: u64::MAX, max_work: u64::MAX, cancel: Cancel::never() }
    }
}

/// A target: its kind, id and points.
pub(crate) struct TargetPoints {
    pub kind: &'static str,
    pub id: String,
    pub points: Vec<Point3<f64>>,
    /// Which tables apply: a position's own, whole body and the general
    /// public for an area.
    pub region: BodyRegion,
    pub group: Group,
}

/// The chosen targets by id (absent: all; empty: none).
#[derive(Clone, Copy)]
pub(crate) struct Chosen<'a> {
    pub positions: &'a Option<Vec<String>>,
    pub areas: &'a Option<Vec<String>>,
}

/// Whether `id` is among the chosen `ids` (absent: all are).
pub(crate) fn wanted(ids: &Option<Vec<String>>, id: &str) -> bool {
    ids.as_ref().is_none_or(|l| l.iter().any(|x| x == id))
}

impl Chosen<'_> {
    /// Unknown position and area ids, at `/positions/i` and `/areas/i`.
    pub fn check_ids(&self, site: &Site, p: &mut Problems) {
        for (key, ids, known) in [
            ("positions", self.positions, site.positions().iter().map(|q| q.id.as_str()).collect::<Vec<_>>()),
            ("areas", self.areas, site.areas().iter().map(|a| a.id.as_str()).collect::<Vec<_>>()),
        ] {
            for (i, id) in ids.iter().flatten().enumerate() {
                if !known.contains(&id.as_str()) {
                    p.push(
                        &Pointer::root().key(key).index(i),
                        format!("the site has no {} '{id}'", &key[..key.len() - 1]),
                    );
                }
            }
        }
    }

    /// Grid cells and points of the chosen targets, from counts alone
    /// (nothing sampled).
    pub fn counts(&self, site: &Site) -> (u64, u64) {
        let cells: u64 = site
            .areas()
            .iter()
            .filter(|a| wanted(self.areas, &a.id))
            .map(|a| crate::assess::bounding_cells(&a.polygon, a.spacing_m))
            .sum();
        let positions: u64 = site
            .positions()
            .iter()
            .filter(|q| wanted(self.positions, &q.id))
            .map(|q| q.placement.point_count() as u64)
            .sum();
        (cells, positions + cells)
    }

    /// Checks the grid cells against `max_cells` and `passes` influence
    /// matrices of every segment at every point against `max_pairs`; the
    /// problem is at `/areas` and says what to reduce.
    pub fn check_budget(&self, site: &Site, passes: u64, max_cells: u64, max_pairs: u64) -> Result<(), Problems> {
        let (cells, points) = self.counts(site);
        let over = |what: String, limit: u64| {
            Problems::one(
                "/areas",
                format!(
                    "{what}, over the budget of {limit}: choose fewer positions or areas, or coarsen their spacing_m"
                ),
            )
        };
        if cells > max_cells {
            return Err(over(format!("the chosen areas need {cells} grid cells"), max_cells));
        }
        let pairs =
            points.saturating_mul(crate::usecase::segment_count(site.conductors())).saturating_mul(passes.max(1));
        if pairs > max_pairs {
            return Err(over(format!("this needs {pairs} segment-point pairs"), max_pairs));
        }
        Ok(())
    }

    /// The chosen targets with their points (positions first, site order).
    pub fn targets(&self, site: &Site) -> Vec<TargetPoints> {
        let positions = site.positions().iter().filter(|q| wanted(self.positions, &q.id)).map(|q| TargetPoints {
            kind: "position",
            id: q.id.clone(),
            points: q.placement.points(),
            region: q.body_region,
            group: q.group,
        });
        let areas = site.areas().iter().filter(|a| wanted(self.areas, &a.id)).map(|a| TargetPoints {
            kind: "area",
            id: a.id.clone(),
            points: crate::assess::area_grid(&a.polygon, a.height_m, a.spacing_m),
            region: BodyRegion::WholeBody,
            group: Group::General,
        });
        positions.chain(areas).collect()
    }
}

/// The table's weights `1/B_RL(f)` at each spectral line (1 for `b_ut`),
/// or the problem at `/table`: no table for a ratio, or a line that carries
/// current at a frequency the table does not cover.
pub(crate) fn ratio_weights(
    measure: Measure,
    table: Option<&ReferenceTable>,
    line_hz: &[f64],
    present: &[bool],
) -> Result<Vec<f64>, Problems> {
    let at = Pointer::root().key("table");
    match (measure, table) {
        (Measure::BUt, _) => Ok(vec![1.0; line_hz.len()]),
        (Measure::Ratio, None) => Err(Problems::one(
            at.to_string(),
            "name a reference-level table for the ratio (the site names none), or set measure to b_ut",
        )),
        (Measure::Ratio, Some(t)) => {
            let levels = line_levels(t, line_hz);
            let mut p = Problems::default();
            for ((f, level), here) in line_hz.iter().zip(&levels).zip(present) {
                if level.is_none() && *here {
                    p.push(&at, format!("table '{}' gives no level at {f} Hz, which the site's currents contain: the ratio cannot be judged; choose a table that covers it or set measure to b_ut", t.id()));
                }
            }
            p.into_result(levels.iter().map(|l| l.map_or(0.0, |l| 1.0 / l)).collect())
        }
    }
}

/// Whether each line of `excitation` carries any current.
pub(crate) fn lines_present(excitation: &Excitation) -> Vec<bool> {
    excitation.lines.iter().map(|l| l.currents_a.iter().any(|c| c.norm() > 0.0)).collect()
}

/// Targets sampled with their influence matrix.
pub(crate) struct Judged {
    /// Targets with at least one point outside every conductor.
    pub targets: Vec<TargetPoints>,
    pub g: InfluenceMatrix,
    /// Rows of `g` kept (points outside every conductor), target by target.
    pub kept: Vec<usize>,
    pub left_out: Vec<LeftOut>,
}

/// Why targets could not be judged.
pub(crate) enum JudgeError {
    /// Nothing to judge by (pointer `/positions`).
    Nothing(Problems),
    Cancelled,
}

/// The highest B and ratio of one target over its points.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct TargetValue {
    /// Highest resultant RMS flux density, µT.
    pub b_ut: f64,
    /// Highest exposure ratio over the tables that apply to the target
    /// (`None`: none applies).
    pub ratio: Option<f64>,
    /// The table (index into [`RatioTables::tables`]) of that ratio.
    pub table: Option<usize>,
}

/// The tables ratios are judged against, each with its weights `1/B_RL`
/// per spectral line. A target is judged against every table that applies
/// to it (as an assessment does: by body region and group, the implant
/// table for implant wearers), and its ratio is the highest.
#[derive(Debug, Clone, Default)]
pub(crate) struct RatioTables {
    pub tables: Vec<ReferenceTable>,
    pub weights: Vec<Vec<f64>>,
}

impl RatioTables {
    /// Weights of every table at the excitation's lines, or the problem at
    /// `/table` for a table that misses a line carrying current.
    pub fn new(tables: &[ReferenceTable], excitation: &Excitation) -> Result<RatioTables, Problems> {
        let line_hz: Vec<f64> = excitation.lines.iter().map(|l| l.frequency_hz).collect();
        let present = lines_present(excitation);
        let mut p = Problems::default();
        let mut weights = Vec::new();
        for t in tables {
            match ratio_weights(Measure::Ratio, Some(t), &line_hz, &present) {
                Ok(w) => weights.push(w),
                Err(e) => p.0.extend(e.0),
            }
        }
        p.into_result(RatioTables { tables: tables.to_vec(), weights })
    }

    /// Indices of the tables that apply to a target of `region` and `group`.
    pub fn applicable(&self, region: BodyRegion, group: Group) -> Vec<usize> {
        (0..self.tables.len()).filter(|&k| crate::assess::table_applies(&self.tables[k], region, group)).collect()
    }

    /// The table refs, for a result.
    pub fn refs(&self) -> Vec<crate::assess::TableRef> {
        self.tables.iter().map(crate::assess::TableRef::of).collect()
    }
}

impl Judged {
    /// Samples `targets` (already chosen) for the conductors of `site`
    /// followed by `extra` filaments (a passive loop, named so); points
    /// inside a conductor are removed and said so. `what` names what is
    /// judged, for the words when nothing is left.
    pub fn sample(
        site: &Site,
        extra: &[Filament],
        mut targets: Vec<TargetPoints>,
        what: &str,
        cancel: &Cancel,
    ) -> Result<Judged, JudgeError> {
        if targets.iter().all(|t| t.points.is_empty()) {
            return Err(JudgeError::Nothing(Problems::one(
                "/positions",
                format!("nothing to judge {what} by: the site (or the request) has no positions or area grid nodes"),
            )));
        }
        let flat: Vec<Point3<f64>> = targets.iter().flat_map(|t| t.points.iter().copied()).collect();
        let mut list: Vec<Filament> =
            site.conductors().iter().map(|c| Filament { path: c.path.clone(), radius_m: c.radius_m }).collect();
        list.extend_from_slice(extra);
        let g = try_influence_matrix(&Filaments::new(&list), &flat, cancel).map_err(|_| JudgeError::Cancelled)?;
        let (left_out, kept) = drop_inside(&mut targets, &g, site);
        if targets.is_empty() {
            return Err(JudgeError::Nothing(Problems::one(
                "/positions",
                format!("every chosen position and area node lies inside a conductor: nothing to judge {what} by"),
            )));
        }
        Ok(Judged { targets, g, kept, left_out })
    }

    /// Each target's highest B and ratio for the conductor currents of
    /// `excitation` (every conductor of the sampled site, same order), the
    /// ratio against each table of `tables` that applies to the target, the
    /// highest kept. The highest B and the highest ratio may come from
    /// different points of the target.
    pub fn values(&self, excitation: &Excitation, tables: &RatioTables) -> Vec<TargetValue> {
        let mut out = Vec::with_capacity(self.targets.len());
        let mut q = 0;
        let mut m = vec![0.0; excitation.lines.len()];
        for t in &self.targets {
            let applicable = tables.applicable(t.region, t.group);
            let mut worst = TargetValue { b_ut: 0.0, ratio: None, table: None };
            for &row in &self.kept[q..q + t.points.len()] {
                let mut b2 = 0.0;
                for (mh, line) in m.iter_mut().zip(&excitation.lines) {
                    let m2 = self.g.apply(row, &line.currents_a).iter().map(|c| c.norm_sqr()).sum::<f64>();
                    b2 += m2;
                    *mh = m2.sqrt();
                }
                worst.b_ut = worst.b_ut.max(b2.sqrt());
                for &k in &applicable {
                    // A line with no field adds nothing, whatever the table
                    // says there (as `assess::exposure_ratio`).
                    let ratio: f64 =
                        m.iter().zip(&tables.weights[k]).filter(|(mh, _)| **mh > 0.0).map(|(mh, w)| mh * w).sum();
                    if worst.ratio.is_none_or(|r| ratio > r) {
                        worst.ratio = Some(ratio);
                        worst.table = Some(k);
                    }
                }
            }
            q += t.points.len();
            out.push(worst);
        }
        out
    }
}

/// Points inside a conductor: removed from their target, which is left
/// out (with the reason) if none is left. Returns the targets left out and
/// the indices (into the flat point list) of the points kept, in order.
pub(crate) fn drop_inside(
    targets: &mut Vec<TargetPoints>,
    g: &InfluenceMatrix,
    site: &Site,
) -> (Vec<LeftOut>, Vec<usize>) {
    let mut left = Vec::new();
    let mut kept = Vec::new();
    let mut next = 0;
    for t in targets.iter_mut() {
        let start = next;
        next += t.points.len();
        if t.points.is_empty() {
            let reason = "no grid node falls inside the area at its spacing_m: make the spacing finer".to_string();
            left.push(LeftOut { kind: t.kind.to_string(), id: t.id.clone(), reason });
            continue;
        }
        let before = kept.len();
        kept.extend((start..next).filter(|&i| !g.is_inside(i)));
        let inside = t.points.len() - (kept.len() - before);
        if inside == 0 {
            continue;
        }
        let first = (start..next).find(|&i| g.is_inside(i));
        let conductor = g.inside.iter().find(|h| Some(h.point) == first).map_or(String::new(), |h| {
            site.conductors()
                .get(h.conductor)
                .map_or("the passive loop".to_string(), |c| format!("conductor '{}'", c.id))
        });
        let reason = if inside == t.points.len() {
            format!("every point lies inside {conductor}: the field there is not computed")
        } else {
            format!(
                "{inside} of its {} points lie inside {conductor} (or another conductor): those are not judged",
                t.points.len()
            )
        };
        left.push(LeftOut { kind: t.kind.to_string(), id: t.id.clone(), reason });
        let mut k = start;
        t.points.retain(|_| {
            k += 1;
            !g.is_inside(k - 1)
        });
    }
    targets.retain(|t| !t.points.is_empty());
    (left, kept)
}

/// The closing lines of a what-if's text: the site's model warnings,
/// targets left out, then the notes and cautions as a list.
pub(crate) fn closing_text(
    s: &mut String,
    left_out: &[LeftOut],
    warnings: &[crate::site::Warning],
    notes: &[String],
    cautions: &[String],
) {
    use std::fmt::Write;
    if !warnings.is_empty() {
        let _ = writeln!(s);
        s.push_str(&crate::report::text::warnings_text(warnings));
    }
    if !left_out.is_empty() {
        let _ = writeln!(s);
        for l in left_out {
            let _ = writeln!(s, "Left out: {} {}: {}", l.kind, l.id, l.reason);
        }
    }
    let _ = writeln!(s);
    for n in notes.iter().chain(cautions) {
        let _ = writeln!(s, "- {n}");
    }
}

/// A value in words: a ratio to three decimals, or µT to two.
pub(crate) fn value_text(measure: Measure, v: f64) -> String {
    match measure {
        Measure::Ratio => format!("ratio {v:.3}"),
        Measure::BUt => format!("{v:.2} µT"),
    }
}
