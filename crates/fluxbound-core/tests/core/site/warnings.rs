//! Model warnings on small invented sites: each test changes one thing in a
//! clean model and checks the warning's code and pointer. The segment
//! distance is checked against brute-force sampling.

use fluxbound_core::field::bound::segment_segment_distance_m;
use fluxbound_core::site::warnings::site_warnings;
use fluxbound_core::site::{Warning, WarningCode, parse_site};
use nalgebra::Point3;
use proptest::prelude::*;
use serde_json::{Value, json};

/// A clean single-phase loop: the go conductor runs out along y = 0 and
/// turns to y = 1, where the return (the circuit's neutral) picks it up and
/// runs back. Both x = 0 ends continue beyond the model (to the supply).
/// Radii 1 cm, height 1 m; one 3-D position and one area clear of both.
fn clean() -> Value {
    json!({
        "frequency_hz": 50,
        "circuits": [{ "id": "feed", "kind": "single_phase", "current_a": 100 }],
        "conductors": [
            { "id": "go", "path": [[0, 0, 1], [10, 0, 1], [10, 1, 1]], "radius_m": 0.01,
              "circuit": "feed", "phase": "A", "continues": { "start": true } },
            { "id": "return", "path": [[10, 1, 1], [0, 1, 1]], "radius_m": 0.01,
              "circuit": "feed", "phase": "N", "continues": { "end": true } }
        ],
        "positions": [{ "id": "desk", "at": [5, 3, 1] }],
        "areas": [{ "id": "floor", "polygon": [[0, 2], [5, 2], [5, 4], [0, 4]], "height_m": 1, "spacing_m": 1 }]
    })
}

fn warnings(doc: &Value) -> Vec<Warning> {
    let site = parse_site(&doc.to_string()).expect("the test site is valid");
    site_warnings(&site)
}

/// `(code, pointer)` of every warning, in order.
fn codes(doc: &Value) -> Vec<(WarningCode, String)> {
    warnings(doc).into_iter().map(|w| (w.code, w.pointer)).collect()
}

fn one(code: WarningCode, pointer: &str) -> Vec<(WarningCode, String)> {
    vec![(code, pointer.to_string())]
}

#[test]
fn a_closed_loop_whose_open_ends_continue_beyond_the_model_has_no_warnings() {
    assert_eq!(codes(&clean()), vec![]);
}

#[test]
fn ends_that_meet_no_conductor_and_do_not_continue_are_open_ends_with_their_vertex_pointers() {
    let mut doc = clean();
    doc["conductors"][0].as_object_mut().unwrap().remove("continues");
    doc["conductors"][1].as_object_mut().unwrap().remove("continues");
    assert_eq!(
        codes(&doc),
        vec![
            (WarningCode::OpenEnd, "/conductors/0/path/0".to_string()),
            (WarningCode::OpenEnd, "/conductors/1/path/1".to_string()),
        ]
    );
    let w = warnings(&doc);
    assert!(w[0].detail.contains("'go'") && w[0].detail.contains("continues.start"), "{}", w[0].detail);
}

#[test]
fn an_end_two_centimetres_short_of_the_return_is_an_open_end() {
    // The return's start 2 cm from the go's last vertex: beyond the sum of
    // the radii (2 cm) plus 1 mm, so the two do not meet.
    let mut doc = clean();
    doc["conductors"][1]["path"][0] = json!([10, 1.0211, 1]);
    assert_eq!(
        codes(&doc),
        vec![
            (WarningCode::OpenEnd, "/conductors/0/path/2".to_string()),
            (WarningCode::OpenEnd, "/conductors/1/path/0".to_string()),
        ]
    );
}

#[test]
fn an_end_that_stops_on_another_conductors_segment_meets_it() {
    // A tee: a third conductor (explicit currents summing to zero with a
    // twin, both continuing at their far ends) starts on the go's middle.
    let mut doc = clean();
    let tee = |id: &str, rms: f64, x: f64| {
        json!({ "id": id, "path": [[x, 0, 1], [x, -5, 1]], "radius_m": 0.01,
                "current": { "rms_a": rms, "phase_deg": 0 }, "continues": { "end": true } })
    };
    let list = doc["conductors"].as_array_mut().unwrap();
    list.push(tee("tee-out", 10.0, 4.0));
    list.push(tee("tee-back", 10.0, 6.0));
    list[3]["current"]["phase_deg"] = json!(180);
    assert_eq!(codes(&doc), vec![]);
}

#[test]
fn a_single_phase_circuit_without_its_return_conductor_has_no_return_path() {
    let mut doc = clean();
    doc["conductors"].as_array_mut().unwrap().pop();
    doc["conductors"][0]["path"] = json!([[0, 0, 1], [10, 0, 1]]);
    doc["conductors"][0]["continues"] = json!({ "start": true, "end": true });
    assert_eq!(codes(&doc), one(WarningCode::NoReturnPath, "/circuits/0"));
    assert!(warnings(&doc)[0].detail.contains("100 %"), "one conductor: the net current is all of it");
}

/// Three straight phase conductors 10 cm apart, continuing both ways.
fn three_phase(circuit: Value) -> Value {
    let line = |id: &str, y: f64, phase: &str| {
        json!({ "id": id, "path": [[0, y, 1], [10, y, 1]], "radius_m": 0.01, "circuit": "lv", "phase": phase,
                "continues": { "start": true, "end": true } })
    };
    json!({
        "frequency_hz": 50,
        "circuits": [circuit],
        "conductors": [line("L1", 0.0, "A"), line("L2", 0.1, "B"), line("L3", 0.2, "C")]
    })
}

#[test]
fn a_balanced_three_phase_set_without_neutral_returns_through_its_phases() {
    // I_A + I_B + I_C = 0 for a balanced set (site/currents.rs conventions).
    let doc = three_phase(json!({ "id": "lv", "kind": "three_phase", "current_a": 400 }));
    assert_eq!(codes(&doc), vec![]);
}

#[test]
fn an_unbalanced_three_phase_set_without_neutral_has_no_return_path() {
    // Phase C at 200 A instead of 400 A: |I_A + I_B + I_C| = 200 A, 50 % of
    // the largest (400 A), far above the 1 % tolerance.
    let doc = three_phase(json!({ "id": "lv", "kind": "three_phase", "current_a": 400,
                                  "phases": { "C": { "current_a": 200 } } }));
    assert_eq!(codes(&doc), one(WarningCode::NoReturnPath, "/circuits/0"));
    assert!(warnings(&doc)[0].detail.contains("50 %"), "{}", warnings(&doc)[0].detail);
}

#[test]
fn a_third_harmonic_without_neutral_has_no_return_path_at_150_hz() {
    // Triplen harmonics of a balanced set are in phase: the 3rd-harmonic sum
    // is 3 × 10 % × 400 A = 120 A, 300 % of one phase's 40 A.
    let doc = three_phase(json!({ "id": "lv", "kind": "three_phase", "current_a": 400,
                                  "harmonics": [{ "order": 3, "percent": 10 }] }));
    assert_eq!(codes(&doc), one(WarningCode::NoReturnPath, "/circuits/0"));
    let detail = &warnings(&doc)[0].detail;
    assert!(detail.contains("300 %") && detail.contains("150 Hz"), "{detail}");
}

/// Two straight conductors with opposite explicit currents (net zero),
/// continuing both ways, so that only their geometry can warn.
fn pair(a: Value, b: Value, radius_m: f64) -> Value {
    let c = |id: &str, path: Value, deg: f64| {
        json!({ "id": id, "path": path, "radius_m": radius_m, "current": { "rms_a": 100, "phase_deg": deg },
                "continues": { "start": true, "end": true } })
    };
    json!({ "frequency_hz": 50, "conductors": [c("x", a, 0.0), c("y", b, 180.0)] })
}

#[test]
fn crossing_conductors_overlap_with_a_pointer_to_the_first_ones_segment() {
    let doc = pair(json!([[0, 0, 1], [10, 0, 1]]), json!([[5, -5, 1], [5, 5, 1]]), 0.01);
    assert_eq!(codes(&doc), one(WarningCode::ConductorsOverlap, "/conductors/0/path/0"));
    assert!(warnings(&doc)[0].detail.contains("/conductors/1/path/0"));
}

#[test]
fn cables_laid_touching_do_not_warn() {
    // Radii 12.5 mm, axes 25 mm apart: distance equal to the sum of radii.
    let doc = pair(json!([[0, 0, 1], [10, 0, 1]]), json!([[0, 0.025, 1], [10, 0.025, 1]]), 0.0125);
    assert_eq!(codes(&doc), vec![]);
}

#[test]
fn cables_laid_touching_side_by_side_do_not_close_each_others_open_ends() {
    // Touching is not joining: each end still sends current into free space.
    let mut doc = pair(json!([[0, 0, 1], [10, 0, 1]]), json!([[0, 0.025, 1], [10, 0.025, 1]]), 0.0125);
    for c in doc["conductors"].as_array_mut().unwrap() {
        c.as_object_mut().unwrap().remove("continues");
    }
    let open: Vec<String> =
        warnings(&doc).into_iter().filter(|w| w.code == WarningCode::OpenEnd).map(|w| w.pointer).collect();
    assert_eq!(open, ["/conductors/0/path/0", "/conductors/0/path/1", "/conductors/1/path/0", "/conductors/1/path/1"]);
}

#[test]
fn cables_five_millimetres_into_each_other_overlap() {
    // Axes 20 mm apart, radii sum 25 mm: 5 mm over, above the 1 mm tolerance.
    let doc = pair(json!([[0, 0, 1], [10, 0, 1]]), json!([[0, 0.02, 1], [10, 0.02, 1]]), 0.0125);
    assert_eq!(codes(&doc), one(WarningCode::ConductorsOverlap, "/conductors/0/path/0"));
}

#[test]
fn a_conductor_folded_back_across_itself_overlaps_itself() {
    let mut doc = clean();
    doc["conductors"][0]["path"] = json!([[0, 0, 1], [10, 0, 1], [10, 0.5, 1], [5, -1, 1], [10, 1, 1]]);
    assert_eq!(codes(&doc), one(WarningCode::ConductorsOverlap, "/conductors/0/path/0"));
}

#[test]
fn a_position_on_a_conductor_axis_is_inside_it() {
    let mut doc = clean();
    doc["positions"] = json!([{ "id": "on-go", "at": [5, 0, 1] }, { "id": "standing", "at": [5, 1] }]);
    // The standing point's default heights include 1.0 m: on the return.
    assert_eq!(
        codes(&doc),
        vec![
            (WarningCode::InsideConductor, "/positions/0/at".to_string()),
            (WarningCode::InsideConductor, "/positions/1/at".to_string()),
        ]
    );
}

#[test]
fn a_position_touching_a_conductor_surface_warns_and_one_a_centimetre_off_does_not() {
    let mut doc = clean();
    // 1 cm radius: 1 cm from the axis touches; 2.1 cm is 1.1 cm clear (>1 mm).
    doc["positions"] = json!([{ "id": "touch", "at": [5, 0, 1.01] }, { "id": "clear", "at": [5, 0, 1.021] }]);
    assert_eq!(codes(&doc), one(WarningCode::InsideConductor, "/positions/0/at"));
}

#[test]
fn points_below_ground_warn_for_conductors_positions_and_areas() {
    let mut doc = clean();
    doc["conductors"][0]["path"][1] = json!([10, 0, -0.8]);
    doc["conductors"][0]["path"][2] = json!([10, 1, -0.8]);
    doc["conductors"][1]["path"][0] = json!([10, 1, -0.8]);
    doc["positions"][0]["at"] = json!([5, 3, -1]);
    doc["areas"][0]["height_m"] = json!(-0.5);
    assert_eq!(
        codes(&doc),
        vec![
            (WarningCode::BelowGround, "/conductors/0/path/1".to_string()),
            (WarningCode::BelowGround, "/conductors/1/path/0".to_string()),
            (WarningCode::BelowGround, "/positions/0/at".to_string()),
            (WarningCode::BelowGround, "/areas/0/height_m".to_string()),
        ]
    );
    assert!(warnings(&doc)[0].detail.contains("2 vertex(es)"));
}

#[test]
fn evaluation_points_are_warned_about_with_pointers_into_the_request() {
    let req = json!({
        "frequency_hz": 50,
        "conductors": [{ "id": "w", "path": [[0, 0, 1], [10, 0, 1]], "radius_m": 0.01,
                          "current": { "rms_a": 100, "phase_deg": 0 } }],
        "points": [[5, 3, 1], [5, 0, 1], [5, 3, -1]]
    });
    let response = fluxbound_core::evaluate::evaluate_json(&req.to_string()).expect("valid request");
    let got: Vec<(WarningCode, String)> = response.warnings.into_iter().map(|w| (w.code, w.pointer)).collect();
    let want = [
        (WarningCode::OpenEnd, "/conductors/0/path/0"),
        (WarningCode::OpenEnd, "/conductors/0/path/1"),
        (WarningCode::NoReturnPath, "/conductors/0/current"),
        (WarningCode::InsideConductor, "/points/1"),
        (WarningCode::BelowGround, "/points/2"),
    ];
    assert_eq!(got, want.map(|(c, p)| (c, p.to_string())).to_vec());
}

#[test]
fn warnings_serialise_with_snake_case_codes() {
    let w = Warning { code: WarningCode::NoReturnPath, pointer: "/circuits/0".into(), detail: "d".into() };
    assert_eq!(
        serde_json::to_value(&w).unwrap(),
        json!({ "code": "no_return_path", "pointer": "/circuits/0", "detail": "d" })
    );
}

// ---- segment–segment distance against brute force ----------------------

/// Smallest distance over an n × n grid of parameters: never below the true
/// minimum, and above it by at most (|d1| + |d2|)·h/2 with h = 1/(n − 1)
/// (the grid point nearest the optimum is h/2 away in each parameter).
fn brute_force(p1: &Point3<f64>, q1: &Point3<f64>, p2: &Point3<f64>, q2: &Point3<f64>, n: usize) -> f64 {
    let h = 1.0 / (n - 1) as f64;
    let mut best = f64::INFINITY;
    for i in 0..n {
        let a = p1 + (q1 - p1) * (i as f64 * h);
        for j in 0..n {
            let b = p2 + (q2 - p2) * (j as f64 * h);
            best = best.min((a - b).norm());
        }
    }
    best
}

fn pt() -> impl Strategy<Value = Point3<f64>> {
    (-3.0..3.0f64, -3.0..3.0f64, -3.0..3.0f64).prop_map(|(x, y, z)| Point3::new(x, y, z))
}

const GRID: usize = 301;

fn check_against_brute_force(p1: Point3<f64>, q1: Point3<f64>, p2: Point3<f64>, q2: Point3<f64>) {
    let d = segment_segment_distance_m(&p1, &q1, &p2, &q2);
    let brute = brute_force(&p1, &q1, &p2, &q2, GRID);
    let slack = ((q1 - p1).norm() + (q2 - p2).norm()) * 0.5 / (GRID - 1) as f64;
    // 1e-12 m: rounding of a few products of metre-sized numbers.
    assert!(d <= brute + 1e-12, "closed form {d} above a sampled pair {brute}");
    assert!(d >= brute - slack - 1e-12, "closed form {d} below the sampled minimum {brute} by more than {slack}");
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

    #[test]
    fn the_segment_distance_lies_within_the_brute_force_bracket(p1 in pt(), q1 in pt(), p2 in pt(), q2 in pt()) {
        check_against_brute_force(p1, q1, p2, q2);
    }

    // Parallel segments (the closed form's special case), offset along
    // their common direction so that overlap, touching ends and gaps occur.
    #[test]
    fn the_distance_of_parallel_segments_lies_within_the_bracket(p1 in pt(), dir in pt(), off in pt(), k in -2.0..2.0f64) {
        let q1 = p1 + dir.coords;
        let p2 = p1 + off.coords * 0.3 + dir.coords * k;
        check_against_brute_force(p1, q1, p2, p2 + dir.coords * 0.7);
    }
}

#[test]
fn perpendicular_skew_segments_are_as_far_apart_as_their_offset() {
    // Lines x-axis and (y-axis raised 0.7 m) cross in plan: distance 0.7 m.
    let d = segment_segment_distance_m(
        &Point3::new(-1.0, 0.0, 0.0),
        &Point3::new(1.0, 0.0, 0.0),
        &Point3::new(0.0, -1.0, 0.7),
        &Point3::new(0.0, 1.0, 0.7),
    );
    assert!((d - 0.7).abs() < 1e-15, "{d}");
}

#[test]
fn collinear_segments_with_a_gap_are_as_far_apart_as_the_gap() {
    // [0, 1] and [1.25, 3] on one line: gap 0.25 m (exact in binary).
    let d = segment_segment_distance_m(
        &Point3::new(0.0, 0.0, 0.0),
        &Point3::new(1.0, 0.0, 0.0),
        &Point3::new(1.25, 0.0, 0.0),
        &Point3::new(3.0, 0.0, 0.0),
    );
    assert!((d - 0.25).abs() < 1e-15, "{d}");
}

// ---- where warnings are shown -------------------------------------------

#[test]
fn an_assessment_carries_its_sites_warnings_and_the_text_report_lists_them() {
    let mut doc = clean();
    doc["conductors"][0].as_object_mut().unwrap().remove("continues");
    let site = parse_site(&doc.to_string()).expect("valid");
    let tables = vec![fluxbound_core::limits::builtin_table("icnirp-2010-occupational").unwrap().clone()];
    let options = fluxbound_core::assess::Options::default();
    let a = fluxbound_core::assess::assess(&site, &fluxbound_core::assess::LoadCase::Present, &tables, &options)
        .expect("assessable");
    assert_eq!(a.warnings, site_warnings(&site));
    let text = fluxbound_core::report::text::assessment_text(&a);
    assert!(text.contains("MODEL WARNINGS (1)"), "{text}");
    assert!(text.contains("  - open_end at /conductors/0/path/0: the start of conductor 'go'"), "{text}");
}

#[test]
fn the_text_report_has_no_warnings_block_for_a_clean_site() {
    let site = parse_site(&clean().to_string()).expect("valid");
    let tables = vec![fluxbound_core::limits::builtin_table("icnirp-2010-occupational").unwrap().clone()];
    let options = fluxbound_core::assess::Options::default();
    let a = fluxbound_core::assess::assess(&site, &fluxbound_core::assess::LoadCase::Present, &tables, &options)
        .expect("assessable");
    assert!(a.warnings.is_empty());
    assert!(!fluxbound_core::report::text::assessment_text(&a).contains("WARNINGS"));
}

#[test]
fn contacts_among_parallel_runs_are_found_when_the_sweep_goes_across_them() {
    // Six runs laid along x, 0.15 m apart in y: the sweep goes along y
    // (the boxes are thin there). A seventh conductor rises from the floor
    // to meet run 2 mid-span, so its top end is met and its foot is open;
    // every run has two open ends.
    let runs: Vec<Value> = (0..6)
        .map(|k| {
            json!({ "id": format!("r{k}"), "path": [[0, 0.15 * k as f64, 2], [10, 0.15 * k as f64, 2]],
                         "radius_m": 0.01, "current": { "rms_a": 10 } })
        })
        .chain([json!({ "id": "riser", "path": [[5, 0.3, 0], [5, 0.3, 2]], "radius_m": 0.01,
                        "current": { "rms_a": 10 } })])
        .collect();
    let doc = json!({ "frequency_hz": 50, "conductors": runs });
    let open: Vec<String> =
        codes(&doc).into_iter().filter(|(c, _)| *c == WarningCode::OpenEnd).map(|(_, p)| p).collect();
    let mut want: Vec<String> =
        (0..6).flat_map(|k| [format!("/conductors/{k}/path/0"), format!("/conductors/{k}/path/1")]).collect();
    want.push("/conductors/6/path/0".to_string());
    assert_eq!(open, want);
}
