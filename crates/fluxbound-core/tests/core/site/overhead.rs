//! Overhead lines: the catenary against its closed form, the sag solved
//! back to the catenary parameter, the field of chords converging from
//! below, bundles in the far field, validation with pointers, and the
//! phase search writing its arrangement back into the line.
//!
//! Sources: the catenary `z = C·(cosh(x/C) − 1)` with `C = H/w` and the
//! parabolic sag `wL²/(8H)` (any statics textbook; the numbers 3.125 m,
//! 3.125163 m and C = 939.49 m are those of issue 15, checked by hand in
//! the comments); the field figures (convergence from below, the 44 %
//! under-estimate of the "lowest point + sag/3" straight line) are the
//! issue's; the field itself comes from the engine's ordinary path (plain
//! conductors in a site document, validated and evaluated), with the
//! chord geometry computed here from `cosh` directly where the test says so.

use fluxbound_core::field::{self, total_resultant_ut};
use fluxbound_core::mitigate::phases::{Measure, PhaseSearchDoc, SearchBudget, search_phases};
use fluxbound_core::site::overhead::{CHORD_ERROR_BOUND, Catenary, MIN_CHORDS_PER_SPAN, chords_for};
use fluxbound_core::site::wire::SiteDoc;
use fluxbound_core::site::{Drive, Problem, Site, validate_site};
use nalgebra::Point3;
use serde_json::{Value, json};

fn doc_of(v: &Value) -> SiteDoc {
    serde_json::from_value(v.clone()).unwrap()
}

fn site_of(v: &Value) -> Site {
    validate_site(&doc_of(v)).unwrap_or_else(|p| panic!("{p:?}"))
}

fn problems_of(v: &Value) -> Vec<Problem> {
    validate_site(&doc_of(v)).expect_err("the document should be refused").0
}

/// Resultant RMS at `at`, µT, through the engine.
fn b_ut(site: &Site, at: Point3<f64>) -> f64 {
    let set = field::evaluate(&fluxbound_core::site::filaments(site.conductors()), &[at], &site.excitation());
    total_resultant_ut(set.at(0))
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

// --- The curve ---------------------------------------------------------

/// 500 m level span, w = 1 kg/m, H = 10,000 kg, so C = H/w = 10,000 m.
/// Parabola: wL²/(8H) = 250,000/80,000 = 3.125 m. Catenary:
/// C·(cosh(L/2C) − 1) with L/2C = 0.025: cosh − 1 = 0.025²/2 + 0.025⁴/24
/// + … = 3.125e-4 + 1.6276e-8, times 10,000 = 3.1251628 m (issue 15).
#[test]
fn a_500_m_span_under_10000_kg_sags_3_125163_m_against_the_parabolas_3_125_m() {
    let cat = Catenary::through(500.0, 30.0, 30.0, 10_000.0).unwrap();
    let parabola_m = 1.0 * 500.0_f64.powi(2) / (8.0 * 10_000.0);
    assert!((parabola_m - 3.125).abs() < 1e-12);
    // 1e-6 m: the issue gives six decimals; the parabola is 1.6e-4 m off.
    assert!((cat.sag_m() - 3.125163).abs() < 1e-6, "{}", cat.sag_m());
    assert!((cat.sag_m() - parabola_m) > 1.5e-4);
    // And back: the sag gives C again (dC = C/sag · dsag ≈ 3200 · 1e-7).
    let back = Catenary::with_sag(500.0, 30.0, 30.0, 3.1251628).unwrap();
    assert!((back.c_m - 10_000.0).abs() < 0.01, "{}", back.c_m);
}

/// 300 m span, 12 m sag: C·(cosh(150/C) − 1) = 12 at C = 939.49 (issue
/// 15; by hand u = 150/939.49 = 0.159661, u²/2 + u⁴/24 = 0.0127458 +
/// 0.0000271 = 0.0127729, × 939.49 = 12.0000).
#[test]
fn a_300_m_span_with_12_m_sag_has_a_catenary_parameter_of_939_49_m() {
    let cat = Catenary::with_sag(300.0, 20.0, 20.0, 12.0).unwrap();
    // 0.005 m: the issue rounds to two decimals.
    assert!((cat.c_m - 939.49).abs() < 0.005, "{}", cat.c_m);
}

/// Unequal heights: the curve passes through both attachments, and its
/// largest vertical distance below the chord, found here by sampling the
/// curve every millimetre (the sampled maximum is within Δ²/(8C) ≈ 1e-10 m
/// of the true one), is the sag asked for.
#[test]
fn with_unequal_attachments_the_catenary_meets_both_and_hangs_the_given_sag_below_the_chord() {
    let (span, za, zb, sag) = (300.0, 20.0, 35.0, 9.0);
    let cat = Catenary::with_sag(span, za, zb, sag).unwrap();
    assert!((cat.height_m(0.0) - za).abs() < 1e-9);
    assert!((cat.height_m(span) - zb).abs() < 1e-9);
    // The curve is a catenary of that C: z − z_low = C(cosh((x − x₀)/C) − 1).
    for x in [0.0, 75.0, 150.0, 222.0, 300.0] {
        let closed = cat.z_low_m + cat.c_m * (((x - cat.x_low_m) / cat.c_m).cosh() - 1.0);
        assert!((cat.height_m(x) - closed).abs() < 1e-9);
    }
    let n = 300_000;
    let below = (0..=n)
        .map(|i| {
            let x = span * i as f64 / n as f64;
            za + (zb - za) * x / span - cat.height_m(x)
        })
        .fold(f64::MIN, f64::max);
    assert!((below - sag).abs() < 1e-6, "{below}");
}

/// A slack span gets more chords from the error bound than from the ¼
/// rule. Level 100 m span, C = 60 m, ground clearance 10 m, by hand:
/// cosh(50/60) = 1.367787; ¼ rule: 100 · 1.367787 / 2.5 = 54.7 → 55;
/// bound: Δx ≤ √(8 · 60 · 0.001 · 5 / 1.367787) = 1.32463 m, so
/// 100 / 1.32463 = 75.49 → 76 chords, and with 76 the bound is
/// (100/76)² · 1.367787 / (8 · 60) / 5 = 0.0987 %, below 0.1 %.
#[test]
fn a_slack_span_is_cut_finer_so_that_the_chord_bound_stays_below_0_1_percent() {
    let cat = Catenary::through(100.0, 30.0, 30.0, 60.0).unwrap();
    let choice = chords_for(&[cat], 10.0).unwrap();
    assert_eq!(choice.count, 76);
    assert!((choice.error_bound - 9.866885e-4).abs() < 1e-9, "{}", choice.error_bound);
    assert!(choice.error_bound < CHORD_ERROR_BOUND);
    // A taut span keeps the minimum of 32 (¼ rule: 100 · 1.000 / 5 = 20).
    let taut = Catenary::through(100.0, 30.0, 30.0, 5000.0).unwrap();
    assert_eq!(chords_for(&[taut], 20.0).unwrap().count, MIN_CHORDS_PER_SPAN);
}

// --- The flat three-phase line of the issue ----------------------------

const SPANS: usize = 7;
const SPAN_M: f64 = 300.0;

/// Phases at −8, 0 and +8 m, attachments 20 m, sag 12 m, 1 kA, seven
/// 300 m spans along x, as an overhead line.
fn flat_line(bundle: Option<Value>) -> Value {
    let structures: Vec<Value> = (0..=SPANS)
        .map(|j| json!({"at": [j as f64 * SPAN_M, 0.0], "heights_m": [20, 20, 20], "offsets_m": [-8, 0, 8]}))
        .collect();
    let mut line = json!({
        "id": "L",
        "phases": [{"circuit": "c", "phase": "A"}, {"circuit": "c", "phase": "B"}, {"circuit": "c", "phase": "C"}],
        "structures": structures,
        "radius_m": 0.015,
        "sag_m": 12,
        "sag_temperature_c": 80,
        "continues": {"start": true, "end": true}
    });
    if let Some(b) = bundle {
        line["bundle"] = b;
    }
    json!({
        "frequency_hz": 50,
        "circuits": [{"id": "c", "kind": "three_phase", "current_a": 1000}],
        "conductors": [],
        "overhead_lines": [line]
    })
}

/// The same line as plain conductors, each span cut into `chords` chords
/// by heights computed here from cosh (C from the solved sag).
fn flat_line_with_chords(chords: usize) -> Value {
    let c = Catenary::with_sag(SPAN_M, 20.0, 20.0, 12.0).unwrap().c_m;
    let z = |x: f64| 8.0 + c * (((x - SPAN_M / 2.0) / c).cosh() - 1.0);
    let conductors: Vec<Value> = [(-8.0, "A"), (0.0, "B"), (8.0, "C")]
        .iter()
        .map(|(y, phase)| {
            let path: Vec<[f64; 3]> = (0..=SPANS * chords)
                .map(|i| {
                    let x = i as f64 * SPAN_M / chords as f64;
                    [x, *y, z(x % SPAN_M)]
                })
                .collect();
            json!({"id": phase, "circuit": "c", "phase": phase, "radius_m": 0.015, "path": path})
        })
        .collect();
    json!({
        "frequency_hz": 50,
        "circuits": [{"id": "c", "kind": "three_phase", "current_a": 1000}],
        "conductors": conductors
    })
}

/// 1 m above ground under the middle of the middle span.
fn under_mid_span() -> Point3<f64> {
    Point3::new(3.5 * SPAN_M, 0.0, 1.0)
}

/// Chords lie above the convex catenary, so adding chords brings the
/// conductor nearer the point below and the field rises towards the
/// curve's; the default cut (at least 32 chords, each ≤ ¼ of the ground
/// clearance) lies within 0.2 % of 256 chords (issue 15).
#[test]
fn the_field_under_mid_span_rises_monotonically_with_chords_and_the_default_is_within_0_2_percent() {
    let at = under_mid_span();
    let b: Vec<f64> =
        [8, 16, 32, 64, 128, 256].iter().map(|&n| b_ut(&site_of(&flat_line_with_chords(n)), at)).collect();
    for w in b.windows(2) {
        assert!(w[1] > w[0], "not rising: {b:?}");
    }
    let fine = b[5];
    // The figures for 8 and 32 chords per span: 1.2 % and 0.13 %
    // below (against 256 chords, itself within 0.005 % of the curve).
    assert!((rel(b[0], fine) - 0.012).abs() < 0.001, "8 chords: {}", rel(b[0], fine));
    assert!((rel(b[2], fine) - 0.0013).abs() < 0.0002, "32 chords: {}", rel(b[2], fine));
    let site = site_of(&flat_line(None));
    let default = b_ut(&site, at);
    assert!(default <= fine * (1.0 + 1e-9), "{default} above {fine}");
    assert!(rel(default, fine) < 2e-3, "{default} vs {fine}");
    // Each span got at least 32 chords, none longer than ¼ of the ground
    // clearance (8 m at mid-span: 20 − 12).
    for c in site.conductors() {
        assert!(c.path.len() > MIN_CHORDS_PER_SPAN);
        for w in c.path.windows(2) {
            assert!((w[1] - w[0]).norm() <= 8.0 / 4.0 + 1e-9);
        }
    }
    // The record names the chord count, the bound and the sag temperature.
    let note = site.input_notes().iter().next().unwrap();
    assert_eq!(note.pointer, "/overhead_lines/0");
    // By hand: ground clearance h = 8 − 0.015 (radius) = 7.985 m, chords
    // ≤ h/4 = 1.99625 m; steepest secant cosh(150/939.49) = 1.012773, so
    // n ≥ 300 · 1.012773 / 1.99625 = 152.2 → 153 chords. Bound δ/D with
    // Δx = 300/153 = 1.96078 m: δ = Δx² · 1.012773 / (8 · 939.49) =
    // 5.181e-4 m, D = h/2 = 3.9925 m, δ/D = 1.298e-4 = 0.013 %.
    for words in ["153 chords", "at most 0.013 %", "12 m at a conductor temperature of 80 °C"] {
        assert!(note.detail.contains(words), "{words}: {}", note.detail);
    }
}

/// Modelling the sagged line as straight at its lowest point plus a third
/// of the sag (8 + 4 = 12 m) under-estimates the field under mid-span by
/// about 44 % (issue 15); asserted here as more than 30 %.
#[test]
fn a_straight_line_at_the_lowest_point_plus_a_third_of_the_sag_under_estimates_by_more_than_30_percent() {
    let at = under_mid_span();
    let sagged = b_ut(&site_of(&flat_line(None)), at);
    let end = SPANS as f64 * SPAN_M;
    let conductors: Vec<Value> = [(-8.0, "A"), (0.0, "B"), (8.0, "C")]
        .iter()
        .map(|(y, p)| {
            json!({"id": p, "circuit": "c", "phase": p, "radius_m": 0.015, "path": [[0.0, y, 12.0], [end, y, 12.0]]})
        })
        .collect();
    let straight = json!({
        "frequency_hz": 50,
        "circuits": [{"id": "c", "kind": "three_phase", "current_a": 1000}],
        "conductors": conductors
    });
    let flat = b_ut(&site_of(&straight), at);
    let under = (sagged - flat) / sagged;
    assert!(under > 0.30, "under-estimate {under}");
    // And the figure, to its two digits.
    assert!((under - 0.44).abs() < 0.01, "under-estimate {under}");
}

/// Four sub-conductors on a 0.4 m square share the phase current; far
/// from the line the bundle's field is the single conductor's: four equal
/// currents at the corners of a square have no dipole, quadrupole or
/// octupole about its centre, so the difference falls as (s/r)⁴ ≈ 4e-9 at
/// 60 m, far inside the 0.1 % asked for.
#[test]
fn a_four_conductor_bundle_shares_the_current_and_far_away_equals_the_single_conductor() {
    let bundled = site_of(&flat_line(Some(json!({"count": 4, "spacing_m": 0.4}))));
    let single = site_of(&flat_line(None));
    assert_eq!(bundled.conductors().len(), 4 * single.conductors().len());
    for k in 0..3 {
        for j in 0..SPANS {
            let subs: Vec<_> =
                bundled.conductors().iter().filter(|c| c.id.starts_with(&format!("L-p{k}-s{j}-b"))).collect();
            assert_eq!(subs.len(), 4);
            let shares: f64 = subs
                .iter()
                .map(|c| match c.drive {
                    Drive::Phase { share, .. } => share,
                    Drive::Explicit { .. } => panic!("a line conductor is driven by its phase"),
                })
                .sum();
            assert!((shares - 1.0).abs() < 1e-12);
            // Neighbouring sub-conductors 0.4 m apart at the attachment.
            let a = subs[0].path[0];
            let near = subs[1..].iter().map(|c| (c.path[0] - a).norm()).fold(f64::MAX, f64::min);
            assert!((near - 0.4).abs() < 1e-9, "{near}");
        }
    }
    for y in [60.0, 120.0] {
        let at = Point3::new(3.5 * SPAN_M, y, 1.0);
        let (b4, b1) = (b_ut(&bundled, at), b_ut(&single, at));
        assert!(rel(b4, b1) < 1e-3, "at {y} m: {b4} vs {b1}");
    }
}

// --- Validation ----------------------------------------------------------

fn line_doc() -> Value {
    json!({
        "frequency_hz": 50,
        "circuits": [{"id": "c", "kind": "three_phase", "current_a": 400}],
        "conductors": [],
        "overhead_lines": [{
            "id": "L",
            "phases": [{"circuit": "c", "phase": "A"}, {"circuit": "c", "phase": "B"}],
            "structures": [
                {"at": [0, 0], "heights_m": [15, 15], "offsets_m": [-3, 3]},
                {"at": [200, 0], "heights_m": [18, 18], "offsets_m": [-3, 3]}
            ],
            "radius_m": 0.01,
            "sag_m": 5,
            "sag_temperature_c": 70
        }]
    })
}

fn has(problems: &[Problem], pointer: &str, words: &str) -> bool {
    problems.iter().any(|p| p.pointer == pointer && p.detail.contains(words))
}

#[test]
fn a_line_document_is_valid_and_expands_one_conductor_per_span_and_position() {
    let site = site_of(&line_doc());
    let ids: Vec<&str> = site.conductors().iter().map(|c| c.id.as_str()).collect();
    assert_eq!(ids, ["L-p0-s0", "L-p1-s0"]);
    // Through the attachments: (0, −3, 15) → (200, −3, 18); left of +x is +y.
    let p = &site.conductors()[0].path;
    assert!((p[0] - Point3::new(0.0, -3.0, 15.0)).norm() < 1e-9);
    assert!((p[p.len() - 1] - Point3::new(200.0, -3.0, 18.0)).norm() < 1e-9);
}

#[test]
fn a_line_with_fewer_than_two_structures_is_refused_at_its_structures() {
    let mut v = line_doc();
    v["overhead_lines"][0]["structures"].as_array_mut().unwrap().pop();
    assert!(has(&problems_of(&v), "/overhead_lines/0/structures", "2 to"));
}

#[test]
fn a_sag_that_is_not_positive_is_refused_at_sag_m() {
    for bad in [0.0, -2.0] {
        let mut v = line_doc();
        v["overhead_lines"][0]["sag_m"] = json!(bad);
        assert!(has(&problems_of(&v), "/overhead_lines/0/sag_m", "positive"), "{bad}");
    }
}

#[test]
fn a_line_with_both_sag_and_catenary_parameter_is_refused_at_the_line() {
    let mut v = line_doc();
    v["overhead_lines"][0]["catenary_m"] = json!(1000);
    assert!(has(&problems_of(&v), "/overhead_lines/0", "not both"));
}

#[test]
fn a_line_phase_on_an_unknown_circuit_is_refused_at_its_circuit() {
    let mut v = line_doc();
    v["overhead_lines"][0]["phases"][1]["circuit"] = json!("nowhere");
    assert!(has(&problems_of(&v), "/overhead_lines/0/phases/1/circuit", "unknown circuit 'nowhere'"));
}

#[test]
fn a_sag_without_its_conductor_temperature_is_refused() {
    let mut v = line_doc();
    v["overhead_lines"][0].as_object_mut().unwrap().remove("sag_temperature_c");
    assert!(has(&problems_of(&v), "/overhead_lines/0/sag_temperature_c", "maximum operating temperature"));
}

#[test]
fn a_sag_that_brings_the_conductor_to_the_ground_is_refused() {
    let mut v = line_doc();
    // The chord from 15 to 18 m passes 16.5 m at mid-span: 17 m below it is underground.
    v["overhead_lines"][0]["sag_m"] = json!(17.0);
    assert!(has(&problems_of(&v), "/overhead_lines/0/sag_m", "reach the ground"));
}

#[test]
fn a_structure_with_the_wrong_number_of_heights_is_refused_there() {
    let mut v = line_doc();
    v["overhead_lines"][0]["structures"][1]["heights_m"] = json!([18]);
    assert!(has(&problems_of(&v), "/overhead_lines/0/structures/1/heights_m", "one attachment height per"));
}

// --- Phase search ----------------------------------------------------------

/// A double circuit on one line: L on the left, R on the right, both
/// A, B, C from the top (28, 20, 12 m), three 150 m spans along x.
fn double_circuit_line() -> Value {
    let structures: Vec<Value> = (0..=3)
        .map(|j| json!({"at": [j as f64 * 150.0, 0.0], "heights_m": [28, 20, 12, 28, 20, 12], "offsets_m": [6, 6, 6, -6, -6, -6]}))
        .collect();
    let ph = |c: &str, p: &str| json!({"circuit": c, "phase": p});
    json!({
        "frequency_hz": 50,
        "circuits": [
            {"id": "L", "kind": "three_phase", "current_a": 500},
            {"id": "R", "kind": "three_phase", "current_a": 500}
        ],
        "conductors": [],
        "overhead_lines": [{
            "id": "dc",
            "phases": [ph("L", "A"), ph("L", "B"), ph("L", "C"), ph("R", "A"), ph("R", "B"), ph("R", "C")],
            "structures": structures,
            "radius_m": 0.015,
            "catenary_m": 1500,
            "continues": {"start": true, "end": true}
        }],
        "positions": [{"id": "far", "at": [225.0, 400.0, 1.0]}]
    })
}

/// Far from a double circuit the reversed phase order (R drawn C, B, A
/// from the top) lowers the field most: the net dipole moment cancels and
/// the field falls as 1/r³ instead of 1/r² (docs/REFERENCES.md "Phase
/// arrangement", as in `mitigate/phases.rs`). The search's revision must
/// carry that order in the line itself, and re-validated it must give the
/// objective the search reported, through the engine's ordinary path.
#[test]
fn a_phase_search_over_a_lines_circuit_writes_the_order_back_into_the_line() {
    let v = double_circuit_line();
    let site = site_of(&v);
    let req = PhaseSearchDoc { measure: Measure::BUt, ..PhaseSearchDoc::for_circuits(vec!["R".into()]) };
    let found = search_phases(&site, &doc_of(&v), &req, None, &SearchBudget::unlimited()).unwrap();
    assert!(!found.ranked[0].changes.is_empty());
    let rev = serde_json::to_value(&found.revision).unwrap();
    let phases = &rev["overhead_lines"][0]["phases"];
    // R's top position carries what L's bottom one does, and so on.
    for (l, r) in [(0, 5), (1, 4), (2, 3)] {
        assert_eq!(phases[l]["phase"], phases[r]["phase"], "positions {l} and {r}");
    }
    assert!(rev["conductors"].as_array().unwrap().is_empty());
    let revised = site_of(&rev);
    let ids = |s: &Site| s.conductors().iter().map(|c| c.id.clone()).collect::<Vec<_>>();
    assert_eq!(ids(&revised), ids(&site));
    let b = b_ut(&revised, Point3::new(225.0, 400.0, 1.0));
    let objective = found.ranked[0].objective;
    assert!(rel(b, objective) < 1e-9, "{b} vs {objective}");
}

const PHASE_NAMES: [&str; 3] = ["A", "B", "C"];

/// 499 spans of 300 m, 12 positions of 4 sub-conductors, 8 m of ground
/// clearance: 153 chords a span (as in the flat line above) make
/// 499 · 12 · 4 · 153 = 3.66 million segments, over the cap of one million;
/// refused at the line before the memory is spent.
#[test]
fn a_line_that_would_expand_past_a_million_segments_is_refused_at_the_line() {
    let circuits: Vec<Value> =
        (0..4).map(|c| json!({"id": format!("c{c}"), "kind": "three_phase", "current_a": 100})).collect();
    let phases: Vec<Value> =
        (0..12).map(|k| json!({"circuit": format!("c{}", k / 3), "phase": PHASE_NAMES[k % 3]})).collect();
    let offsets: Vec<f64> = (0..12).map(|k| -22.0 + 4.0 * k as f64).collect();
    let heights = vec![20.0; 12];
    let structures: Vec<Value> = (0..500)
        .map(|j| json!({"at": [j as f64 * 300.0 - 75_000.0, 0.0], "heights_m": heights, "offsets_m": offsets}))
        .collect();
    let v = json!({
        "frequency_hz": 50,
        "circuits": circuits,
        "conductors": [],
        "overhead_lines": [{
            "id": "long", "phases": phases, "structures": structures, "radius_m": 0.015,
            "bundle": {"count": 4, "spacing_m": 0.4}, "sag_m": 12, "sag_temperature_c": 80
        }]
    });
    assert!(has(&problems_of(&v), "/overhead_lines/0", "more than 1000000 segments"));
}

#[test]
fn a_section_id_too_long_for_the_ids_it_generates_is_refused_at_its_id() {
    // Generated ids appear in every result and keep to the 64-character
    // limit of any id: a 60-character line id would make
    // `{line}-p0-s0` longer, and a 62-character formation id `{id}-1-1`.
    let read = |name: &str| -> serde_json::Value {
        serde_json::from_str(
            &std::fs::read_to_string(format!("{}/../../examples/{name}", env!("CARGO_MANIFEST_DIR"))).unwrap(),
        )
        .unwrap()
    };
    let mut line = read("site-depot-overhead-line.json");
    line["overhead_lines"][0]["id"] = serde_json::json!("L".repeat(60));
    let doc: fluxbound_core::site::wire::SiteDoc = serde_json::from_value(line).unwrap();
    let p = fluxbound_core::site::validate_site(&doc).unwrap_err();
    assert!(p.iter().any(|q| q.pointer == "/overhead_lines/0/id" && q.detail.contains("too long")), "{p:?}");
    let mut room = read("site-busbar-room.json");
    room["formations"][0]["id"] = serde_json::json!("F".repeat(62));
    let doc: fluxbound_core::site::wire::SiteDoc = serde_json::from_value(room).unwrap();
    let p = fluxbound_core::site::validate_site(&doc).unwrap_err();
    assert!(p.iter().any(|q| q.pointer == "/formations/0/id" && q.detail.contains("too long")), "{p:?}");
}
