//! The weighted peak index on spectra worked by hand. Check values are
//! from issue 11, computed by hand from ICNIRP 2010 eq. (7) and its
//! Appendix (filter phase 180°, 90°, 0°, −90° for f⁻², f⁻¹, f⁰, f¹;
//! docs/REFERENCES.md "Weighted peak method") with the ICNIRP 2010
//! occupational table (V, REFERENCES.md: flat 1000 µT from 25 to 300 Hz,
//! 3·10⁵/f µT from 300 Hz to 3 kHz).

use fluxbound_core::assess::{LineInfo, NotComputed, Weighting, exposure_ratio, filter_phase_deg, line_levels};
use fluxbound_core::field::FieldPhasor;
use fluxbound_core::limits::{ReferenceTable, TableDoc, builtin_table, validate_table};
use num_complex::Complex64;
use proptest::prelude::*;
use serde_json::json;

/// The index is refined to well below 1e-9 relative (golden section to
/// 1e-12 rad); the issue asks for 1e-6 relative, so 1e-7 leaves room for
/// rounding in the hand values given to 6–7 digits.
const TOL: f64 = 1e-7;

fn icnirp_occupational() -> ReferenceTable {
    builtin_table("icnirp-2010-occupational").expect("built-in").clone()
}

fn along_x(b_ut: f64, angle_deg: f64) -> FieldPhasor {
    FieldPhasor::new(
        Complex64::from_polar(b_ut, angle_deg.to_radians()),
        Complex64::new(0.0, 0.0),
        Complex64::new(0.0, 0.0),
    )
}

fn lines(f0_hz: f64, orders: &[u32]) -> Vec<LineInfo> {
    orders.iter().map(|h| LineInfo { order: *h, frequency_hz: f0_hz * f64::from(*h), phase_known: true }).collect()
}

fn summation(table: &ReferenceTable, lines: &[LineInfo], phasors: &[FieldPhasor]) -> f64 {
    let hz: Vec<f64> = lines.iter().map(|l| l.frequency_hz).collect();
    exposure_ratio(phasors.iter().map(fluxbound_core::field::resultant_ut), &line_levels(table, &hz)).expect("covered")
}

fn wpi(table: &ReferenceTable, lines: &[LineInfo], phasors: &[FieldPhasor]) -> f64 {
    Weighting::of(table, lines).index(phasors).expect("computed")
}

#[test]
fn the_filter_phase_is_minus_ninety_degrees_times_the_band_exponent() {
    // ICNIRP 2010 Appendix: 180° for f⁻², 90° for f⁻¹, 0° flat, −90° for f¹.
    for (n, phase) in [(-2.0, 180.0), (-1.0, 90.0), (0.0, 0.0), (1.0, -90.0)] {
        assert!((filter_phase_deg(n) - phase).abs() < 1e-12, "exponent {n}");
    }
}

#[test]
fn a_fundamental_and_third_harmonic_peaking_together_give_the_summation() {
    // Issue 11: 600 µT at 50 Hz + 300 µT at 150 Hz at 0°: 0.6 + 0.3 = 0.9 both ways.
    let t = icnirp_occupational();
    let l = lines(50.0, &[1, 3]);
    let b = [along_x(600.0, 0.0), along_x(300.0, 0.0)];
    assert!((summation(&t, &l, &b) - 0.9).abs() < TOL);
    assert!((wpi(&t, &l, &b) - 0.9).abs() < TOL);
}

#[test]
fn a_third_harmonic_in_opposition_gives_the_root_of_five_twelfths() {
    // Issue 11: max over c of 0.6c − 0.3(4c³ − 3c) = 1.5c − 1.2c³, at
    // c² = 5/12, value √(5/12) = 0.645497 (derived by hand).
    let t = icnirp_occupational();
    let l = lines(50.0, &[1, 3]);
    let b = [along_x(600.0, 0.0), along_x(300.0, 180.0)];
    assert!((summation(&t, &l, &b) - 0.9).abs() < TOL);
    assert!((wpi(&t, &l, &b) - (5.0f64 / 12.0).sqrt()).abs() < TOL);
}

#[test]
fn a_circularly_polarised_field_peaks_at_its_component_not_its_resultant() {
    // Issue 11: two perpendicular 500 µT RMS components 90° apart: resultant
    // √2·500 = 707.1 µT → ratio 0.7071; the vector turns at constant length
    // 500 µT (RMS scale) → WPI 0.5.
    let t = icnirp_occupational();
    let l = lines(50.0, &[1]);
    let b = [FieldPhasor::new(Complex64::new(500.0, 0.0), Complex64::new(0.0, 500.0), Complex64::new(0.0, 0.0))];
    assert!((summation(&t, &l, &b) - 0.5 * 2f64.sqrt()).abs() < TOL);
    assert!((wpi(&t, &l, &b) - 0.5).abs() < TOL);
}

#[test]
fn the_seventh_harmonic_in_a_falling_band_is_shifted_by_plus_ninety_degrees() {
    // Issue 11: 600 µT at 50 Hz + 257.142857 µT at 350 Hz (level
    // 3e5/350 = 857.142857 µT, ratio 0.3) at 90°: filter phase +90° gives
    // 0.6cosθ − 0.3cos7θ, max 0.842807 (issue's hand value; 6 digits, so
    // 1e-6). The wrong sign would give 0.6cosθ + 0.3cos7θ → 0.9.
    let t = icnirp_occupational();
    let l = lines(50.0, &[1, 7]);
    let b = [along_x(600.0, 0.0), along_x(300.0e3 / 350.0 * 0.3, 90.0)];
    assert!((summation(&t, &l, &b) - 0.9).abs() < TOL);
    assert!((wpi(&t, &l, &b) - 0.842807).abs() < 1e-6);
}

fn rising_table() -> ReferenceTable {
    let doc: TableDoc = serde_json::from_value(json!({
        "id": "rising-test",
        "title": "Invented table with a rising band",
        "source": "invented for this test",
        "applies_to": {"population": "workers", "body_region": "whole_body"},
        "kind": "screening",
        "bands": [
            {"from_hz": 1, "to_hz": 100, "coefficient": 100, "exponent": 0},
            {"from_hz": 100, "to_hz": 1000, "coefficient": 1, "exponent": 1}
        ],
        "decision_rule": "weighted_peak"
    }))
    .expect("table json");
    validate_table(doc).expect("valid table")
}

#[test]
fn a_rising_band_delays_its_line_by_ninety_degrees() {
    // Invented table: flat 100 µT to 100 Hz, then 1·f µT (rising, φ = −90°).
    // 50 µT at 50 Hz (ratio 0.5, φ 0°) + 75 µT at 150 Hz (level 150 µT,
    // ratio 0.5) at harmonic angle +90°: the filter's −90° brings it back to
    // 0°, so both peak at t = 0: WPI = 0.5 + 0.5 = 1.0 (by hand).
    let t = rising_table();
    let l = lines(50.0, &[1, 3]);
    let b = [along_x(50.0, 0.0), along_x(75.0, 90.0)];
    assert!((wpi(&t, &l, &b) - 1.0).abs() < TOL);
    // At harmonic angle −90° (or with the wrong filter sign at +90°) the
    // lines are 180° apart: 0.5cosθ − 0.5cos3θ = 0.5(c − 4c³ + 3c) =
    // 2c(1 − c²), largest at c² = 1/3: 4 / (3√3) = 0.769800 (by hand).
    let b = [along_x(50.0, 0.0), along_x(75.0, -90.0)];
    assert!((wpi(&t, &l, &b) - 4.0 / (3.0 * 3f64.sqrt())).abs() < TOL);
}

#[test]
fn a_harmonic_on_a_band_edge_takes_the_larger_index_of_both_filter_phases() {
    // 300 Hz is the 5th harmonic of 60 Hz and the edge between the flat
    // (0°) and the f⁻¹ (90°) bands of ICNIRP 2010 occupational (level
    // 1000 µT on both sides). 600 µT at 60 Hz + 300 µT at 300 Hz: at
    // harmonic angle 0° the flat phase lines the peaks up (0.9); at −90° the
    // f⁻¹ phase does (−90° + 90° = 0°, 0.9). Either way 0.9 (by hand).
    let t = icnirp_occupational();
    let l = lines(60.0, &[1, 5]);
    for angle in [0.0, -90.0] {
        let b = [along_x(600.0, 0.0), along_x(300.0, angle)];
        assert!((wpi(&t, &l, &b) - 0.9).abs() < TOL, "angle {angle}");
    }
}

#[test]
fn a_harmonic_without_a_stated_phase_gives_no_index_and_says_why() {
    let t = icnirp_occupational();
    let mut l = lines(50.0, &[1, 3]);
    l[1].phase_known = false;
    let b = [along_x(600.0, 0.0), along_x(300.0, 0.0)];
    let err = Weighting::of(&t, &l).index(&b).expect_err("phase unknown");
    assert_eq!(err, NotComputed::UnknownPhase { frequencies_hz: vec![150.0] });
    assert!(err.note().contains("150 Hz") && err.note().contains("angle_deg"), "{}", err.note());
    // Without field at that harmonic the unknown phase does not matter.
    let b = [along_x(600.0, 0.0), along_x(0.0, 0.0)];
    assert!((Weighting::of(&t, &l).index(&b).expect("computed") - 0.6).abs() < TOL);
}

fn phasor_strategy() -> impl Strategy<Value = FieldPhasor> {
    prop::array::uniform6(-1000.0f64..1000.0).prop_map(|v| {
        FieldPhasor::new(Complex64::new(v[0], v[1]), Complex64::new(v[2], v[3]), Complex64::new(v[4], v[5]))
    })
}

proptest! {
    /// The summation assumes every line peaks together, so by the triangle
    /// inequality it is never below the index (ICNIRP 2010: the summation
    /// is conservative). Tolerance 1e-9 relative: both are sums of a few
    /// products, rounding is near 1e-15; the index is a sampled maximum,
    /// which can only be below the true one.
    #[test]
    fn the_summation_is_never_below_the_weighted_peak_index(
        orders in prop::sample::subsequence(vec![1u32, 2, 3, 5, 7, 11, 13, 25, 49], 1..6),
        phasors in prop::collection::vec(phasor_strategy(), 6),
    ) {
        let t = icnirp_occupational();
        let l = lines(50.0, &orders);
        let b = &phasors[..l.len()];
        let s = summation(&t, &l, b);
        let w = wpi(&t, &l, b);
        prop_assert!(w <= s * (1.0 + 1e-9), "wpi {w} > summation {s}");
        // Lower bound: a peak is never below the RMS over the period; lines
        // of different orders are orthogonal, so the mean of |v(θ)|² is
        // Σ r_i² / 2 with r_i = B_i / B_RL(f_i) (derived). Same tolerance.
        let hz: Vec<f64> = l.iter().map(|x| x.frequency_hz).collect();
        let levels = line_levels(&t, &hz);
        let mean_square: f64 = b
            .iter()
            .zip(&levels)
            .map(|(p, lv)| (fluxbound_core::field::resultant_ut(p) / lv.expect("covered")).powi(2) / 2.0)
            .sum();
        prop_assert!(w >= mean_square.sqrt() * (1.0 - 1e-9), "wpi {w} below the RMS {}", mean_square.sqrt());
    }
}

// ---- The same check values as site models through `assess` ----
//
// Field of a long straight wire: B[µT] = 0.2 · I[A] / R[m] (OpenStax
// University Physics Vol. 2, §12.2, V). At 1 m, 3000 A gives 600 µT; a
// harmonic of p % gives p % of that. Wires are 20 km long (`L`), so the
// finite-length error at 1 m is 5e-9 relative; tolerances 1e-6 cover it.

use super::{L, point, wire_site};
use fluxbound_core::assess::{self, Assessment, LoadCase, Options, Verdict};
use fluxbound_core::limits::DecisionRule;
use fluxbound_core::site::parse_site;
use serde_json::Value;

fn assess_with(doc: Value, tables: &[ReferenceTable]) -> Assessment {
    let site = parse_site(&doc.to_string()).unwrap_or_else(|p| panic!("site: {p}"));
    assess::assess(&site, &LoadCase::Present, tables, &Options::default()).unwrap_or_else(|p| panic!("assess: {p}"))
}

/// ICNIRP 2010 occupational with its verdict read from the weighted peak.
fn occupational_by_weighted_peak() -> ReferenceTable {
    let mut doc = icnirp_occupational().doc().clone();
    doc.id = "icnirp-2010-occupational-wpm".into();
    doc.decision_rule = DecisionRule::WeightedPeak;
    validate_table(doc).expect("valid")
}

fn wire_at_one_metre(harmonics: Value) -> Value {
    wire_site(3000.0, 3000.0, harmonics, json!([point("p", [0.0, 1.0, 0.0])]), json!([]))
}

#[test]
fn a_wire_with_a_third_harmonic_in_phase_reports_summation_and_index_of_point_nine() {
    // 600 µT at 50 Hz + 300 µT (50 %) at 150 Hz, angle 0°: 0.9 and 0.9 (issue 11).
    let a =
        assess_with(wire_at_one_metre(json!([{"order": 3, "percent": 50, "angle_deg": 0}])), &[icnirp_occupational()]);
    let c = &a.positions[0].comparisons[0];
    assert!((c.ratio.unwrap() - 0.9).abs() < 1e-6);
    assert!((c.weighted_peak.weighted_peak_index.unwrap() - 0.9).abs() < 1e-6);
    assert_eq!(c.weighted_peak.decided_by, DecisionRule::Summation);
    assert_eq!(c.weighted_peak.weighted_peak_note, None);
    let h = &a.positions[0].heights[0].comparisons[0];
    assert!((h.weighted_peak.weighted_peak_index.unwrap() - 0.9).abs() < 1e-6);
}

#[test]
fn a_wire_with_a_third_harmonic_in_opposition_is_decided_by_the_index_when_the_table_says_so() {
    // Same at 180°: summation 0.9, WPI √(5/12) = 0.645497 (issue 11, by hand).
    let doc = wire_at_one_metre(json!([{"order": 3, "percent": 50, "angle_deg": 180}]));
    let a = assess_with(doc.clone(), &[icnirp_occupational()]);
    let c = &a.positions[0].comparisons[0];
    assert!((c.ratio.unwrap() - 0.9).abs() < 1e-6);
    assert!((c.weighted_peak.weighted_peak_index.unwrap() - (5.0f64 / 12.0).sqrt()).abs() < 1e-6);
    assert_eq!((c.verdict, c.weighted_peak.decided_by), (Verdict::Approaching, DecisionRule::Summation));
    // At 4/3 of the current the summation is 1.2 (exceeds) but the index
    // 4/3 · 0.645497 = 0.860663 (approaching, review fraction 0.5).
    let doc = wire_site(
        4000.0,
        4000.0,
        json!([{"order": 3, "percent": 50, "angle_deg": 180}]),
        json!([point("p", [0.0, 1.0, 0.0])]),
        json!([]),
    );
    let a = assess_with(doc, &[icnirp_occupational(), occupational_by_weighted_peak()]);
    let (sum, wpm) = (&a.positions[0].comparisons[0], &a.positions[0].comparisons[1]);
    assert_eq!((sum.verdict, sum.weighted_peak.decided_by), (Verdict::Exceeds, DecisionRule::Summation));
    assert_eq!((wpm.verdict, wpm.weighted_peak.decided_by), (Verdict::Approaching, DecisionRule::WeightedPeak));
    assert!((wpm.ratio.unwrap() - 1.2).abs() < 1e-6, "ratio keeps meaning the summation");
    assert!((wpm.weighted_peak.weighted_peak_index.unwrap() - 4.0 / 3.0 * (5.0f64 / 12.0).sqrt()).abs() < 1e-6);
    assert_eq!(a.positions[0].heights[0].comparisons[1].weighted_peak.decided_by, DecisionRule::WeightedPeak);
}

#[test]
fn a_wire_with_a_seventh_harmonic_at_ninety_degrees_gives_the_falling_band_value() {
    // 257.142857 µT at 350 Hz = 42.857143 % of 600 µT, angle 90°: WPI
    // 0.842807 (issue 11, 6 digits → 1e-6).
    let a = assess_with(
        wire_at_one_metre(json!([{"order": 7, "percent": 300.0 / 7.0, "angle_deg": 90}])),
        &[icnirp_occupational()],
    );
    let c = &a.positions[0].comparisons[0];
    assert!((c.ratio.unwrap() - 0.9).abs() < 1e-6);
    assert!((c.weighted_peak.weighted_peak_index.unwrap() - 0.842807).abs() < 1e-6);
}

#[test]
fn a_harmonic_without_angle_gives_no_index_and_the_summation_decides() {
    let a = assess_with(wire_at_one_metre(json!([{"order": 3, "percent": 50}])), &[occupational_by_weighted_peak()]);
    let c = &a.positions[0].comparisons[0];
    assert_eq!(c.weighted_peak.weighted_peak_index, None);
    assert_eq!(c.weighted_peak.decided_by, DecisionRule::Summation);
    let note = c.weighted_peak.weighted_peak_note.as_deref().unwrap_or("");
    assert!(note.contains("150 Hz") && note.contains("angle_deg"), "{note}");
    assert!((c.ratio.unwrap() - 0.9).abs() < 1e-6);
}

#[test]
fn two_perpendicular_wires_ninety_degrees_apart_give_a_circular_field_with_index_one_half() {
    // Wire A along x at z = 0 and wire B along y at z = 2, point (0, 0, 1):
    // each 1 m away, A's field along y, B's along x, 0.2 · 2500 / 1 = 500 µT
    // each (OpenStax §12.2), currents 90° apart → circular field: resultant
    // 707.1 µT → ratio 0.7071, WPI 0.5 (issue 11).
    let doc = json!({
        "frequency_hz": 50,
        "circuits": [
            {"id": "a", "kind": "single_phase", "current_a": 2500, "angle_deg": 0},
            {"id": "b", "kind": "single_phase", "current_a": 2500, "angle_deg": 90}
        ],
        "conductors": [
            {"id": "a-A", "circuit": "a", "phase": "A", "radius_m": 0.01, "path": [[-L, 0.0, 0.0], [L, 0.0, 0.0]]},
            {"id": "b-A", "circuit": "b", "phase": "A", "radius_m": 0.01, "path": [[0.0, -L, 2.0], [0.0, L, 2.0]]}
        ],
        "positions": [point("p", [0.0, 0.0, 1.0])],
        "areas": []
    });
    let a = assess_with(doc, &[icnirp_occupational()]);
    let c = &a.positions[0].comparisons[0];
    assert!((c.ratio.unwrap() - 0.5 * 2f64.sqrt()).abs() < 1e-6);
    assert!((c.weighted_peak.weighted_peak_index.unwrap() - 0.5).abs() < 1e-6);
}

#[test]
fn an_area_reports_the_highest_index_over_its_cells_and_worst_point_never_above_its_summation() {
    // One wire: every cell sees the same waveform shape, so the index is
    // √(5/12) / 0.9 = 0.717219 of the summation at every point (derived);
    // the area's index is at most that share of its max_ratio.
    let doc = wire_site(
        3000.0,
        3000.0,
        json!([{"order": 3, "percent": 50, "angle_deg": 180}]),
        json!([]),
        json!([{"id": "z", "height_m": 0.0, "spacing_m": 0.5,
                "polygon": [[-1.0, 1.0], [1.0, 1.0], [1.0, 3.0], [-1.0, 3.0]]}]),
    );
    let a = assess_with(doc, &[occupational_by_weighted_peak()]);
    let c = &a.areas[0].comparisons[0];
    let share = (5.0f64 / 12.0).sqrt() / 0.9;
    let (index, max_ratio) = (c.weighted_peak.weighted_peak_index.unwrap(), c.max_ratio.unwrap());
    assert!(index <= max_ratio * share * (1.0 + 1e-9), "{index} vs {max_ratio}");
    // The summation's worst point is on the edge nearest the wire (y = 1 m):
    // 600 µT + 300 µT → summation 0.9, index √(5/12) = 0.645497 (issue 11);
    // the cells alone (centres from y = 1.25 m) would give only 0.72 · share.
    assert!((max_ratio - 0.9).abs() < 1e-6, "{max_ratio}");
    assert!((index - (5.0f64 / 12.0).sqrt()).abs() < 1e-6, "{index}");
    assert_eq!(c.weighted_peak.decided_by, DecisionRule::WeightedPeak);
}

#[test]
fn the_text_report_shows_the_index_beside_the_summation_and_the_deciding_rule() {
    // Summation 0.9 and index √(5/12) = 0.645 (issue 11) for T1; the
    // unstated-angle case names its reason.
    let a = assess_with(
        wire_at_one_metre(json!([{"order": 3, "percent": 50, "angle_deg": 180}])),
        &[icnirp_occupational(), occupational_by_weighted_peak()],
    );
    let text = fluxbound_core::report::text::assessment_text(&a);
    assert!(text.contains("T1 summation 0.900, weighted peak 0.645 → verdict by summation"), "{text}");
    assert!(text.contains("T2 summation 0.900, weighted peak 0.645 → verdict by weighted_peak"), "{text}");
    let a = assess_with(wire_at_one_metre(json!([{"order": 3, "percent": 50}])), &[icnirp_occupational()]);
    let text = fluxbound_core::report::text::assessment_text(&a);
    assert!(text.contains("weighted peak — (weighted peak index not computed"), "{text}");
}
