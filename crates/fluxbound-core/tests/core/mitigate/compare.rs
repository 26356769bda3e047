//! Two assessments side by side, each made by the real assessment
//! (`usecase::assess_site`) of an invented site: one long go-and-return
//! pair, 1000 A at 50 Hz.
//!
//! Sources: Biot–Savart is linear in the current (Griffiths, *Introduction
//! to Electrodynamics*, 4th ed., eq. 5.42: B is an integral of I dl × r̂ /
//! r²), so doubling every current doubles every B and every ratio: the
//! change must be +100 % whatever the geometry. The values themselves come
//! from the long-wire law B[µT] = 0.2 · I[A] / r[m] (OpenStax University
//! Physics Vol. 2, §12.2), worked by hand beside each check.

use fluxbound_core::assess::{Assessment, LoadCase, ReviewFraction, Verdict};
use fluxbound_core::limits::{ReferenceTable, parse_table};
use fluxbound_core::mitigate::compare::{Change, Trend, compare, comparison_text};
use fluxbound_core::site::parse_site;
use fluxbound_core::usecase::{self, Budget};
use serde_json::{Value, json};
use std::collections::BTreeMap;

/// Half-length of the wires, m: at r ≤ 3 m the finite length changes B by
/// (r/L)²/2 ≤ 1.8e-7 relative against the infinite-wire law.
const L: f64 = 5000.0;

/// An invented table: 400 µT flat from 40 to 100 Hz, so the ratios are easy by hand.
fn flat_400() -> ReferenceTable {
    parse_table(
        &json!({
            "id": "test-flat-400",
            "title": "Flat 400 µT (invented for tests)",
            "source": "invented for tests",
            "applies_to": {"population": "workers", "body_region": "whole_body"},
            "kind": "reference_level",
            "bands": [{"from_hz": 40, "to_hz": 100, "coefficient": 400, "exponent": 0}]
        })
        .to_string(),
    )
    .unwrap()
}

/// The go conductor at x = 0 and its return (N, carrying −I) at x = 1 m,
/// both along y at z = 0; positions as 3-D points in that plane; one area
/// beside the pair.
fn pair_site(positions: Value) -> Value {
    json!({
        "name": "invented pair",
        "frequency_hz": 50,
        "circuits": [{"id": "c", "kind": "single_phase", "current_a": 1000}],
        "conductors": [
            {"id": "go", "circuit": "c", "phase": "A", "radius_m": 0.01, "path": [[0.0, -L, 0.0], [0.0, L, 0.0]]},
            {"id": "back", "circuit": "c", "phase": "N", "radius_m": 0.01, "path": [[1.0, -L, 0.0], [1.0, L, 0.0]]}
        ],
        "positions": positions,
        "areas": [{"id": "bay", "polygon": [[2, -1], [4, -1], [4, 1], [2, 1]], "height_m": 1.0, "spacing_m": 0.5}]
    })
}

fn two_points() -> Value {
    json!([{"id": "near", "at": [1.5, 0.0, 0.0]}, {"id": "far", "at": [3.0, 0.0, 0.0]}])
}

fn assess(doc: &Value, load: LoadCase) -> Assessment {
    let site = parse_site(&doc.to_string()).unwrap_or_else(|p| panic!("site: {p}"));
    usecase::assess_site(&site, &load, &[flat_400()], ReviewFraction::DEFAULT, &Budget::default()).unwrap()
}

fn doubled() -> LoadCase {
    LoadCase::Scale { factors: BTreeMap::from([("c".to_string(), 2.0)]) }
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

#[test]
fn doubling_the_current_is_a_change_of_exactly_plus_one_hundred_percent_everywhere() {
    let doc = pair_site(two_points());
    let c = compare(&assess(&doc, LoadCase::Present), &assess(&doc, doubled()));
    assert_eq!(c.positions.len(), 2);
    assert_eq!(c.areas.len(), 1);
    // Linearity holds to rounding: the same sums with every term doubled
    // differ from twice the sum by a few ulps (tolerance 1e-9 %).
    for item in c.positions.iter().chain(&c.areas) {
        let p = item.b_change.percent.unwrap();
        assert!((p - 100.0).abs() < 1e-9, "{}: {p} %", item.id);
        let (b0, b1) = (item.b_before_ut.unwrap(), item.b_after_ut.unwrap());
        assert!(rel(item.b_change.delta.unwrap(), b0) < 1e-12 && rel(b1, 2.0 * b0) < 1e-12, "{item:?}");
        let t = &item.tables[0];
        assert!((t.ratio_change.percent.unwrap() - 100.0).abs() < 1e-9, "{t:?}");
    }
    // The numbers themselves, by hand (long-wire law, opposite currents in
    // the plane): near (x = 1.5) 0.2·1000·(1/0.5 − 1/1.5) = 266.67 µT;
    // far (x = 3) 0.2·1000·(1/2 − 1/3) = 33.333 µT. Tolerance 1e-6
    // relative covers the finite length (≤ 1.8e-7).
    let near = &c.positions[0];
    assert_eq!(near.id, "near");
    assert!(rel(near.b_before_ut.unwrap(), 800.0 / 3.0) < 1e-6, "{near:?}");
    assert!(rel(c.positions[1].b_before_ut.unwrap(), 100.0 / 3.0) < 1e-6, "{:?}", c.positions[1]);
    assert!(c.notes.iter().any(|n| n == "different loads: present before, scale after"), "{:?}", c.notes);
    assert!(c.notes.iter().any(|n| n.contains("c 1000 A → 2000 A")), "{:?}", c.notes);
}

#[test]
fn a_verdict_change_worked_by_hand_is_counted_and_said_in_words() {
    // Against 400 µT with the review fraction 0.5: near is 266.67/400 =
    // 0.667 at 1000 A (approaching) and 1.333 at 2000 A (exceeds); far is
    // 33.333/400 = 0.0833 and 0.1667 (within both). The area's largest
    // ratio, at its edge x = 2 m, 1 m above the pair, is at most
    // 0.2·1000·(1/√2 + 1/√5)/400 = 0.58 at 1000 A, so "within" or
    // "approaching", never "exceeds"; its own verdict is not checked here.
    let doc = pair_site(two_points());
    let (present, rated) = (assess(&doc, LoadCase::Present), assess(&doc, doubled()));
    // The what-if against the as-built: from 2000 A down to 1000 A.
    let c = compare(&rated, &present);
    let near = &c.positions[0];
    assert_eq!((near.verdict.before, near.verdict.after), (Verdict::Exceeds, Verdict::Approaching));
    assert_eq!(near.verdict.trend, Trend::Improved);
    assert_eq!(near.verdict.words, "exceeds → approaching");
    let t = &near.tables[0];
    assert_eq!(t.table_id, "test-flat-400");
    assert!(rel(t.ratio_before.unwrap(), 4.0 / 3.0) < 1e-6 && rel(t.ratio_after.unwrap(), 2.0 / 3.0) < 1e-6, "{t:?}");
    // Halving: −50 % (1e-9 % as above), ratio −2/3.
    assert!((near.b_change.percent.unwrap() + 50.0).abs() < 1e-9, "{near:?}");
    assert!((t.ratio_change.delta.unwrap() + 2.0 / 3.0).abs() < 1e-6, "{t:?}");
    let far = &c.positions[1];
    assert_eq!(far.verdict.trend, Trend::Unchanged);
    assert_eq!(far.verdict.words, "within, unchanged");
    // near improved, far unchanged; the area went down by half as well,
    // so it is improved or unchanged.
    assert_eq!(c.summary.improved + c.summary.unchanged, 3, "{:?}", c.summary);
    assert!(c.summary.improved >= 1 && c.summary.worse == 0, "{:?}", c.summary);
    let worst = c.summary.worst_before.as_ref().unwrap();
    assert_eq!((worst.kind.as_str(), worst.id.as_str(), worst.verdict), ("position", "near", Verdict::Exceeds));
    assert_eq!(c.summary.worst_after.as_ref().unwrap().id, "near");
    let text = comparison_text(&c);
    assert!(text.contains("exceeds → approaching"), "{text}");
    assert!(text.contains("-50.0 %"), "{text}");
}

#[test]
fn positions_on_one_side_only_are_listed_apart_and_not_compared() {
    let before = assess(&pair_site(two_points()), LoadCase::Present);
    let moved = json!([{"id": "near", "at": [1.5, 0.0, 0.0]}, {"id": "further", "at": [6.0, 0.0, 0.0]}]);
    let after = assess(&pair_site(moved), LoadCase::Present);
    let c = compare(&before, &after);
    assert_eq!(c.positions.iter().map(|p| p.id.as_str()).collect::<Vec<_>>(), ["near"]);
    assert_eq!(c.only_before.positions, ["far"]);
    assert_eq!(c.only_after.positions, ["further"]);
    assert!(c.only_before.areas.is_empty() && c.only_after.areas.is_empty());
    // The same geometry and current at near: no change, 0 %.
    assert_eq!(c.positions[0].b_change.delta, Some(0.0));
    assert_eq!(c.positions[0].b_change.percent, Some(0.0));
    let text = comparison_text(&c);
    assert!(text.contains("Only before: positions far"), "{text}");
    assert!(text.contains("Only after: positions further"), "{text}");
    assert_eq!(c.cautions, fluxbound_core::cautions::cautions());
}

#[test]
fn a_percent_change_from_zero_is_null_with_words_never_nan() {
    // (1 − 0)/0 has no value; 0 → 0 is no change of nothing.
    let from_zero = Change::of(Some(0.0), Some(1.0));
    assert_eq!((from_zero.delta, from_zero.percent), (Some(1.0), None));
    assert!(from_zero.note.unwrap().contains("no base"));
    let both_zero = Change::of(Some(0.0), Some(0.0));
    assert_eq!((both_zero.delta, both_zero.percent), (Some(0.0), None));
    let missing = Change::of(None, Some(3.0));
    assert_eq!((missing.delta, missing.percent), (None, None));
    assert_eq!(missing.note.as_deref(), Some("not computed before"));
    // 4 → 5 is +1, +25 %.
    let up = Change::of(Some(4.0), Some(5.0));
    assert_eq!((up.delta, up.percent, up.note), (Some(1.0), Some(25.0), None));
}

#[test]
fn tables_of_one_side_only_and_different_versions_are_noted() {
    let doc = pair_site(two_points());
    let a = assess(&doc, LoadCase::Present);
    let mut b = a.clone();
    b.tables[0].version = 2;
    b.tables
        .push(fluxbound_core::assess::TableRef::of(fluxbound_core::limits::builtin_table("eu-2013-35-low").unwrap()));
    let c = compare(&a, &b);
    assert!(
        c.notes.iter().any(|n| n.contains("table test-flat-400: version 1 before, version 2 after")),
        "{:?}",
        c.notes
    );
    assert!(c.notes.iter().any(|n| n == "tables only after, not compared: eu-2013-35-low"), "{:?}", c.notes);
    assert_eq!(c.shared_tables.len(), 1);
}
