//! The bands filled in issue 11 (ACGIH sub-radiofrequency ceilings from
//! 300 Hz to 30 kHz) and the holes every table still has within 1 Hz–10 MHz.

use super::{assert_level, level, table};
use fluxbound_core::limits::{builtin_tables, coverage_holes, parse_table};

#[test]
fn acgih_ceilings_from_300_hz_to_30_khz_are_the_flat_figures_from_memory() {
    // From memory (M, unverified): ACGIH TLV sub-RF ceilings, 300 Hz–30 kHz:
    // whole body 200 µT, arms and legs 1000 µT, hands and feet 2000 µT.
    for (id, flat) in
        [("acgih-sub-rf-whole-body", 200.0), ("acgih-sub-rf-arms-legs", 1000.0), ("acgih-sub-rf-hands-feet", 2000.0)]
    {
        for f in [350.0, 1000.0, 30_000.0] {
            assert_level(level(id, f), flat, &format!("{id} at {f} Hz"));
        }
    }
}

#[test]
fn acgih_ceilings_are_continuous_at_300_hz() {
    // Derived (D): the from-memory formulas below 300 Hz meet the flat values:
    // 6e4/300 = 200 µT, 3e5/300 = 1000 µT, 6e5/300 = 2000 µT.
    for (id, coefficient) in
        [("acgih-sub-rf-whole-body", 6.0e4), ("acgih-sub-rf-arms-legs", 3.0e5), ("acgih-sub-rf-hands-feet", 6.0e5)]
    {
        let below = level(id, 299.999);
        let at = level(id, 300.0);
        assert_level(at, coefficient / 300.0, &format!("{id} at 300 Hz"));
        // Just below the edge the formula gives coefficient/299.999, 3.3e-6 relative above the flat value.
        let rel = (below - at) / at;
        assert!(rel > 0.0 && rel < 1e-5, "{id}: jump of {rel:e} relative at 300 Hz");
    }
}

#[test]
fn the_acgih_tables_say_their_new_bands_are_from_memory() {
    for id in ["acgih-sub-rf-whole-body", "acgih-sub-rf-arms-legs", "acgih-sub-rf-hands-feet"] {
        let notes = &table(id).doc().notes;
        assert!(
            notes.iter().any(|n| n.contains("300 Hz-30 kHz") && n.contains("from memory")),
            "{id}: no note marks 300 Hz-30 kHz as from memory: {notes:?}"
        );
    }
}

/// The holes of built-in `id` as (from, to) pairs.
fn holes(id: &str) -> Vec<(f64, f64)> {
    coverage_holes(table(id)).iter().map(|h| (h.from_hz, h.to_hz)).collect()
}

#[test]
fn the_ieee_limb_level_below_10_7_hz_stays_a_hole_as_no_source_value_is_available() {
    // REFERENCES.md gives the limb level only from 10.7 Hz; nothing is invented below it.
    assert_eq!(holes("ieee-c95.1-2019-limbs"), [(1.0, 10.7), (3000.0, 1.0e7)]);
    let words = &coverage_holes(table("ieee-c95.1-2019-limbs"))[0].words;
    assert!(words.starts_with("below 10.7 Hz (down to 1 Hz) this table gives no level (no source value"), "{words}");
}

#[test]
fn holes_are_listed_below_above_and_between_bands_in_plain_words() {
    assert!(holes("icnirp-2010-occupational").is_empty(), "ICNIRP 2010 covers 1 Hz–10 MHz");
    assert_eq!(holes("acgih-sub-rf-whole-body"), [(30_000.0, 1.0e7)]);
    assert_eq!(holes("icnirp-1998-public"), [(150_000.0, 1.0e7)]);
    // A bottom edge below 1 Hz leaves no hole at the bottom of the span.
    assert_eq!(holes("ieee-c95.1-2019-restricted"), [(3000.0, 1.0e7)]);
    let t = parse_table(
        r#"{"id": "gapped", "title": "Gapped", "source": "invented for this test",
            "applies_to": {"population": "workers", "body_region": "whole_body"}, "kind": "screening",
            "bands": [{"from_hz": 10, "to_hz": 100, "coefficient": 5, "exponent": 0},
                      {"from_hz": 200, "to_hz": 300, "coefficient": 5, "exponent": 0}],
            "gaps": [{"from_hz": 100, "to_hz": 200, "reason": "not measured"}]}"#,
    )
    .unwrap();
    let h = coverage_holes(&t);
    let pairs: Vec<(f64, f64)> = h.iter().map(|h| (h.from_hz, h.to_hz)).collect();
    assert_eq!(pairs, [(1.0, 10.0), (100.0, 200.0), (300.0, 1.0e7)]);
    assert!(
        h[1].words.starts_with("between 100 Hz and 200 Hz this table gives no level (not measured)"),
        "{}",
        h[1].words
    );
    assert!(h[2].words.starts_with("above 300 Hz"), "{}", h[2].words);
}

#[test]
fn every_built_in_hole_lies_inside_1_hz_to_10_mhz() {
    for t in builtin_tables() {
        for h in coverage_holes(t) {
            assert!(1.0 <= h.from_hz && h.from_hz < h.to_hz && h.to_hz <= 1.0e7, "{}: {h:?}", t.id());
        }
    }
}
