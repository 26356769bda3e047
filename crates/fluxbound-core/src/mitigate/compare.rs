//! Two assessments side by side: two revisions, two load cases, or a
//! what-if result against the as-built one. Per position and per area,
//! matched by id: each side's highest resultant RMS flux density, its
//! exposure ratio against every table both sides used, its verdict, and the
//! change from the first (`before`) to the second (`after`).
//!
//! Pure: nothing is recomputed. The comparison reads the two results as
//! they were stored, so it holds for their currents, tables and review
//! fractions; the notes say where those differ.

use crate::assess::{AreaResult, Assessment, PositionResult, TableRef, Verdict};
use crate::cautions::cautions;
use serde::{Deserialize, Serialize};
use std::collections::{HashMap, HashSet};

mod text;

pub use text::comparison_text;

/// One side of a comparison: where its result came from.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct ComparedSide {
    /// Site name, if it has one.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub site_name: Option<String>,
    /// The load case assessed: present, rated, currents or scale.
    pub load_case: String,
    /// Stored site id (service); `null` for a result read from a file.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub site_id: Option<String>,
    /// Stored assessment id (service); `null` for a result read from a file.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub assessment_id: Option<String>,
    /// Site revision assessed (service); `null` from a file or without provenance.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub site_revision: Option<i64>,
    /// Site file assessed (CLI); `null` for a stored revision.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub site_file: Option<String>,
    /// SHA-256 of the canonical site document; `null` without provenance.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub site_sha256: Option<String>,
    /// When the result was computed (UTC, RFC 3339); `null` without provenance.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub computed_at: Option<String>,
    /// Tables the side was assessed against, pinned by version.
    pub tables: Vec<TableRef>,
    /// Ratio from which that result is `approaching`.
    pub review_fraction: f64,
    /// Worst verdict of the whole result.
    pub worst_verdict: Verdict,
}

/// Which way a verdict moved.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum Trend {
    /// A lower verdict after (exceeds → approaching → within).
    Improved,
    /// A higher verdict after.
    Worse,
    /// The same verdict on both sides.
    Unchanged,
    /// One side could not be judged (not covered or not computed) and the
    /// verdicts differ: no direction can be told.
    NotComparable,
}

impl Trend {
    fn of(before: Verdict, after: Verdict) -> Trend {
        let judged = |v: Verdict| matches!(v, Verdict::Within | Verdict::Approaching | Verdict::Exceeds);
        if before == after {
            Trend::Unchanged
        } else if !judged(before) || !judged(after) {
            Trend::NotComparable
        } else if after.severity() < before.severity() {
            Trend::Improved
        } else {
            Trend::Worse
        }
    }
}

/// A change of a number from `before` to `after`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct Change {
    /// `after − before` (`null` when either side has no value).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub delta: Option<f64>,
    /// `(after − before) / before · 100`, % (`null` when either side has
    /// no value or `before` is zero; `note` says which).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub percent: Option<f64>,
    /// Why a number is missing, in words (`null` when both are given).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub note: Option<String>,
}

impl Change {
    /// The change between two values; never NaN or infinite: a missing side
    /// or a zero base gives `null` with words instead.
    pub fn of(before: Option<f64>, after: Option<f64>) -> Change {
        let (before, after) = (before.filter(|v| v.is_finite()), after.filter(|v| v.is_finite()));
        let (b, a) = match (before, after) {
            (Some(b), Some(a)) => (b, a),
            (None, None) => return Change::missing("not computed on either side"),
            (None, _) => return Change::missing("not computed before"),
            _ => return Change::missing("not computed after"),
        };
        let delta = a - b;
        if b == 0.0 {
            let why = if a == 0.0 { "zero on both sides" } else { "zero before: a percent change has no base" };
            return Change { delta: Some(delta), percent: None, note: Some(why.to_string()) };
        }
        Change { delta: Some(delta), percent: Some(delta / b * 100.0), note: None }
    }

    fn missing(why: &str) -> Change {
        Change { delta: None, percent: None, note: Some(why.to_string()) }
    }
}

/// A verdict on each side and how it moved.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct VerdictChange {
    pub before: Verdict,
    pub after: Verdict,
    pub trend: Trend,
    /// In words: `exceeds → within`, or `within, unchanged`.
    pub words: String,
}

impl VerdictChange {
    pub fn of(before: Verdict, after: Verdict) -> VerdictChange {
        let words = if before == after {
            format!("{}, unchanged", before.word())
        } else {
            format!("{} → {}", before.word(), after.word())
        };
        VerdictChange { before, after, trend: Trend::of(before, after), words }
    }
}

/// One table both sides used, at one position or area.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct TableChange {
    /// Table id.
    pub table_id: String,
    /// Exposure ratio before (a position's worst height; an area's maximum).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub ratio_before: Option<f64>,
    /// Exposure ratio after.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub ratio_after: Option<f64>,
    /// The change of the ratio.
    pub ratio_change: Change,
    /// The verdict against this table on each side.
    pub verdict: VerdictChange,
}

/// A position or an area present on both sides.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct ItemChange {
    /// Position or area id.
    pub id: String,
    /// Highest resultant RMS flux density before, µT (`null` when not computed).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub b_before_ut: Option<f64>,
    /// Highest resultant RMS flux density after, µT.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub b_after_ut: Option<f64>,
    /// The change of the highest resultant: `delta` in µT and `percent`.
    pub b_change: Change,
    /// Worst verdict over its tables, each side.
    pub verdict: VerdictChange,
    /// One per table both sides judged it against, in the before side's order.
    pub tables: Vec<TableChange>,
}

/// Ids found on one side only: listed, not compared.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct OneSideOnly {
    /// Position ids.
    pub positions: Vec<String>,
    /// Area ids.
    pub areas: Vec<String>,
}

/// The worst position or area of one side.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct WorstItem {
    /// `position` or `area`.
    pub kind: String,
    pub id: String,
    pub verdict: Verdict,
    /// Its highest exposure ratio over its tables (`null` when none was computed).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub ratio: Option<f64>,
    /// The table of that ratio.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub table_id: Option<String>,
}

/// How the verdicts of the items on both sides moved, and the worst of each side.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct ComparisonSummary {
    /// Positions and areas whose verdict went down.
    pub improved: usize,
    /// Positions and areas whose verdict went up.
    pub worse: usize,
    /// Positions and areas with the same verdict.
    pub unchanged: usize,
    /// Positions and areas with a verdict not judged on one side.
    pub not_comparable: usize,
    /// The worst position or area before (`null` with none).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub worst_before: Option<WorstItem>,
    /// The worst position or area after.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub worst_after: Option<WorstItem>,
}

/// A table both sides used, and its version on each.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct SharedTable {
    pub id: String,
    pub version_before: u32,
    pub version_after: u32,
}

/// Two assessments side by side.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct Comparison {
    /// The first assessment.
    pub before: ComparedSide,
    /// The second assessment; every change is `after − before`.
    pub after: ComparedSide,
    /// Tables both sides used (matched by id); ratios are compared against these only.
    pub shared_tables: Vec<SharedTable>,
    /// Positions on both sides, in the before side's order.
    pub positions: Vec<ItemChange>,
    /// Areas on both sides, in the before side's order.
    pub areas: Vec<ItemChange>,
    /// Positions and areas only in the before side.
    pub only_before: OneSideOnly,
    /// Positions and areas only in the after side.
    pub only_after: OneSideOnly,
    pub summary: ComparisonSummary,
    /// What differs between the two results beyond the numbers (site,
    /// tables, load, review fraction), in words.
    pub notes: Vec<String>,
    /// Cautions that apply to every result.
    pub cautions: Vec<String>,
}

/// What both sides of one position or area give to the comparison.
struct Item<'a> {
    id: &'a str,
    b_ut: Option<f64>,
    verdict: Verdict,
    /// `(table id, ratio, verdict)` per table.
    tables: Vec<(&'a str, Option<f64>, Verdict)>,
}

impl<'a> Item<'a> {
    fn position(p: &'a PositionResult) -> Item<'a> {
        Item {
            id: &p.id,
            b_ut: p.max_resultant_ut,
            verdict: p.verdict,
            tables: p.comparisons.iter().map(|c| (c.table_id.as_str(), c.ratio, c.verdict)).collect(),
        }
    }

    fn area(a: &'a AreaResult) -> Item<'a> {
        Item {
            id: &a.id,
            b_ut: a.max_resultant_ut,
            verdict: a.verdict,
            tables: a.comparisons.iter().map(|c| (c.table_id.as_str(), c.max_ratio, c.verdict)).collect(),
        }
    }

    /// Its highest ratio over its tables and that table.
    fn highest_ratio(&self) -> Option<(f64, &'a str)> {
        self.tables.iter().filter_map(|(t, r, _)| r.map(|r| (r, *t))).max_by(|x, y| x.0.total_cmp(&y.0))
    }
}

/// Compares `before` with `after`: every change is `after − before`.
pub fn compare(before: &Assessment, after: &Assessment) -> Comparison {
    let shared = shared_tables(&before.tables, &after.tables);
    let shared_ids: Vec<&str> = shared.iter().map(|t| t.id.as_str()).collect();
    let (pb, pa) = (positions_of(before), positions_of(after));
    let (ab, aa) = (areas_of(before), areas_of(after));
    let (positions, pos_only_before, pos_only_after) = match_items(&pb, &pa, &shared_ids);
    let (areas, area_only_before, area_only_after) = match_items(&ab, &aa, &shared_ids);
    let summary = summarise(&positions, &areas, (&pb, &ab), (&pa, &aa));
    Comparison {
        before: side(before),
        after: side(after),
        notes: differences(before, after, &shared),
        shared_tables: shared,
        positions,
        areas,
        only_before: OneSideOnly { positions: pos_only_before, areas: area_only_before },
        only_after: OneSideOnly { positions: pos_only_after, areas: area_only_after },
        summary,
        cautions: cautions(),
    }
}

fn positions_of(a: &Assessment) -> Vec<Item<'_>> {
    a.positions.iter().map(Item::position).collect()
}

fn areas_of(a: &Assessment) -> Vec<Item<'_>> {
    a.areas.iter().map(Item::area).collect()
}

impl Comparison {
    /// Names the stored results compared (the service knows their ids; the
    /// core does not), and says so when they are of different sites.
    pub fn with_ids(mut self, before: (String, String), after: (String, String)) -> Comparison {
        if before.0 != after.0 {
            self.notes.insert(
                0,
                format!(
                    "different sites: site {} before, site {} after; positions and areas are matched by id only",
                    before.0, after.0
                ),
            );
        }
        (self.before.site_id, self.before.assessment_id) = (Some(before.0), Some(before.1));
        (self.after.site_id, self.after.assessment_id) = (Some(after.0), Some(after.1));
        self
    }
}

fn side(a: &Assessment) -> ComparedSide {
    let p = a.provenance.as_ref();
    ComparedSide {
        site_name: a.site_name.clone(),
        load_case: a.load_case.kind.clone(),
        site_id: None,
        assessment_id: None,
        site_revision: p.and_then(|p| p.site_revision),
        site_file: p.and_then(|p| p.site_file.clone()),
        site_sha256: p.map(|p| p.site_sha256.clone()),
        computed_at: p.map(|p| p.computed_at.clone()),
        tables: a.tables.clone(),
        review_fraction: a.review_fraction,
        worst_verdict: a.summary.worst_verdict,
    }
}

fn shared_tables(before: &[TableRef], after: &[TableRef]) -> Vec<SharedTable> {
    before
        .iter()
        .filter_map(|b| {
            let a = after.iter().find(|a| a.id == b.id)?;
            Some(SharedTable { id: b.id.clone(), version_before: b.version, version_after: a.version })
        })
        .collect()
}

/// Items on both sides (in the before side's order) and the ids of those
/// on one side only; matched through a map, so linear in the items.
fn match_items(
    before: &[Item<'_>],
    after: &[Item<'_>],
    shared: &[&str],
) -> (Vec<ItemChange>, Vec<String>, Vec<String>) {
    let after_by_id: HashMap<&str, &Item<'_>> = after.iter().map(|a| (a.id, a)).collect();
    let before_ids: HashSet<&str> = before.iter().map(|b| b.id).collect();
    let mut both = Vec::new();
    let mut only_before = Vec::new();
    for b in before {
        match after_by_id.get(b.id) {
            Some(a) => both.push(item_change(b, a, shared)),
            None => only_before.push(b.id.to_string()),
        }
    }
    let only_after = after.iter().filter(|a| !before_ids.contains(a.id)).map(|a| a.id.to_string()).collect();
    (both, only_before, only_after)
}

fn item_change(before: &Item<'_>, after: &Item<'_>, shared: &[&str]) -> ItemChange {
    let tables = before
        .tables
        .iter()
        .filter(|(t, _, _)| shared.contains(t))
        .filter_map(|(t, rb, vb)| {
            let (_, ra, va) = after.tables.iter().find(|(ta, _, _)| ta == t)?;
            Some(TableChange {
                table_id: t.to_string(),
                ratio_before: *rb,
                ratio_after: *ra,
                ratio_change: Change::of(*rb, *ra),
                verdict: VerdictChange::of(*vb, *va),
            })
        })
        .collect();
    ItemChange {
        id: before.id.to_string(),
        b_before_ut: before.b_ut,
        b_after_ut: after.b_ut,
        b_change: Change::of(before.b_ut, after.b_ut),
        verdict: VerdictChange::of(before.verdict, after.verdict),
        tables,
    }
}

fn summarise(
    positions: &[ItemChange],
    areas: &[ItemChange],
    before: (&[Item<'_>], &[Item<'_>]),
    after: (&[Item<'_>], &[Item<'_>]),
) -> ComparisonSummary {
    let count = |t: Trend| positions.iter().chain(areas).filter(|c| c.verdict.trend == t).count();
    ComparisonSummary {
        improved: count(Trend::Improved),
        worse: count(Trend::Worse),
        unchanged: count(Trend::Unchanged),
        not_comparable: count(Trend::NotComparable),
        worst_before: worst(before.0, before.1),
        worst_after: worst(after.0, after.1),
    }
}

/// The item with the most severe verdict, then the highest ratio; the
/// first such in position-then-area order.
fn worst(positions: &[Item<'_>], areas: &[Item<'_>]) -> Option<WorstItem> {
    let all = positions.iter().map(|i| ("position", i)).chain(areas.iter().map(|i| ("area", i)));
    let key = |i: &Item<'_>| (i.verdict.severity(), i.highest_ratio().map_or(f64::NEG_INFINITY, |r| r.0));
    let mut best: Option<(&str, &Item<'_>)> = None;
    for (kind, item) in all {
        let better = best.is_none_or(|(_, b)| {
            let (k, kb) = (key(item), key(b));
            k.0 > kb.0 || (k.0 == kb.0 && k.1 > kb.1)
        });
        if better {
            best = Some((kind, item));
        }
    }
    best.map(|(kind, i)| {
        let hr = i.highest_ratio();
        WorstItem {
            kind: kind.to_string(),
            id: i.id.to_string(),
            verdict: i.verdict,
            ratio: hr.map(|r| r.0),
            table_id: hr.map(|r| r.1.to_string()),
        }
    })
}

/// What differs between the two results beyond their numbers.
fn differences(before: &Assessment, after: &Assessment, shared: &[SharedTable]) -> Vec<String> {
    let mut notes = Vec::new();
    site_notes(before, after, &mut notes);
    load_notes(before, after, &mut notes);
    table_notes(before, after, shared, &mut notes);
    if before.review_fraction != after.review_fraction {
        notes.push(format!(
            "different review fractions ({} before, {} after): an `approaching` verdict means different things",
            before.review_fraction, after.review_fraction
        ));
    }
    if before.frequency_hz != after.frequency_hz {
        notes.push(format!(
            "different fundamental frequencies: {} Hz before, {} Hz after",
            before.frequency_hz, after.frequency_hz
        ));
    }
    notes.push(
        "B is each position's or area's highest resultant RMS flux density; ratios are the worst height of a position and the maximum of an area; changes are after − before."
            .to_string(),
    );
    notes
}

fn site_notes(before: &Assessment, after: &Assessment, notes: &mut Vec<String>) {
    if before.site_name != after.site_name {
        let name = |n: &Option<String>| n.as_deref().map_or("(no name)".to_string(), |n| format!("'{n}'"));
        notes.push(format!(
            "different site names: {} before, {} after",
            name(&before.site_name),
            name(&after.site_name)
        ));
    }
    match (&before.provenance, &after.provenance) {
        (Some(b), Some(a)) if b.site_sha256 == a.site_sha256 => {
            notes.push("the same site document on both sides (equal SHA-256): only the load, tables or options can differ".to_string())
        }
        (Some(b), Some(a)) => notes.push(format!(
            "different site documents ({}, SHA-256 {}… before; {}, SHA-256 {}… after): the change includes changes to the model",
            b.site_source(),
            short(&b.site_sha256),
            a.site_source(),
            short(&a.site_sha256)
        )),
        _ => notes.push("a side carries no provenance: whether the site documents are the same is not known".to_string()),
    }
}

fn short(sha: &str) -> &str {
    sha.get(..12).unwrap_or(sha)
}

fn load_notes(before: &Assessment, after: &Assessment, notes: &mut Vec<String>) {
    let (lb, la) = (&before.load_case, &after.load_case);
    if lb.kind != la.kind {
        notes.push(format!("different loads: {} before, {} after", lb.kind, la.kind));
    }
    let changed: Vec<String> = lb
        .circuits
        .iter()
        .filter_map(|cb| {
            let ca = la.circuits.iter().find(|ca| ca.id == cb.id)?;
            (ca.assessed_a != cb.assessed_a).then(|| format!("{} {} A → {} A", cb.id, cb.assessed_a, ca.assessed_a))
        })
        .collect();
    if !changed.is_empty() {
        notes.push(format!("assessed currents differ: {}", changed.join(", ")));
    }
    let circuits_only = |x: &crate::assess::LoadCaseReport, y: &crate::assess::LoadCaseReport| -> Vec<String> {
        x.circuits.iter().filter(|c| !y.circuits.iter().any(|d| d.id == c.id)).map(|c| c.id.clone()).collect()
    };
    for (ids, side) in [(circuits_only(lb, la), "before"), (circuits_only(la, lb), "after")] {
        if !ids.is_empty() {
            notes.push(format!("circuits only {side}: {}", ids.join(", ")));
        }
    }
}

fn table_notes(before: &Assessment, after: &Assessment, shared: &[SharedTable], notes: &mut Vec<String>) {
    for t in shared.iter().filter(|t| t.version_before != t.version_after) {
        notes.push(format!(
            "table {}: version {} before, version {} after: the ratios are against different levels",
            t.id, t.version_before, t.version_after
        ));
    }
    let only = |x: &[TableRef], y: &[TableRef]| -> Vec<String> {
        x.iter().filter(|t| !y.iter().any(|u| u.id == t.id)).map(|t| t.id.clone()).collect()
    };
    for (ids, side) in [(only(&before.tables, &after.tables), "before"), (only(&after.tables, &before.tables), "after")]
    {
        if !ids.is_empty() {
            notes.push(format!("tables only {side}, not compared: {}", ids.join(", ")));
        }
    }
    if shared.is_empty() {
        notes.push("no table in common: only B and the overall verdicts are compared".to_string());
    }
}
