//! Load scenarios, moves and passive loops judged against closed forms
//! written here from their sources, not through the engine: the long
//! straight wire (OpenStax University Physics Vol. 2 §12.2, B = 0.2·I/r µT
//! for I in A and r in m, direction x̂ × ρ̂ for a current along +x), the
//! finite straight segment on its perpendicular bisector (Griffiths,
//! *Introduction to Electrodynamics*, 4th ed., Ex. 5.5: B = 0.1·I/s ·
//! L/√(s² + L²/4) µT), and the flux of a long wire through a coplanar
//! rectangle (the same OpenStax section integrated over the rectangle:
//! M = µ0·h/(2π)·ln(d2/d1)).

use fluxbound_core::assess::LoadCase;
use fluxbound_core::mitigate::loops::{LoopDoc, ResistanceDoc, run_loop};
use fluxbound_core::mitigate::moves::{MoveDoc, Moving, run_move};
use fluxbound_core::mitigate::scenarios::{NMinusOne, Origin, ScenariosDoc, run_scenarios};
use fluxbound_core::mitigate::{Measure, WhatIfBudget, WhatIfError};
use fluxbound_core::site::wire::SiteDoc;
use fluxbound_core::site::{Site, validate_site};
use serde_json::{Value, json};

/// Half-length of the long wires, m.
const HALF_M: f64 = 10_000.0;

fn doc_of(v: &Value) -> SiteDoc {
    serde_json::from_value(v.clone()).unwrap()
}

fn site_of(v: &Value) -> Site {
    validate_site(&doc_of(v)).unwrap()
}

/// A long wire along x at (y, z).
fn wire(id: &str, circuit: &str, y: f64, z: f64) -> Value {
    json!({"id": id, "circuit": circuit, "phase": "A", "radius_m": 0.01, "path": [[-HALF_M, y, z], [HALF_M, y, z]]})
}

/// Three feeders of one load (invented): single-phase wires along x at
/// z = 5 m, y = 0, 100 and 200 m, 300, 280 and 150 A present, 400 A rated,
/// all in phase; a 3-D position 1 m below each.
fn three_feeders() -> Value {
    json!({
        "frequency_hz": 50,
        "circuits": [
            {"id": "F1", "kind": "single_phase", "current_a": 300, "rated_current_a": 400, "load_group": "bus"},
            {"id": "F2", "kind": "single_phase", "current_a": 280, "rated_current_a": 400, "load_group": "bus"},
            {"id": "F3", "kind": "single_phase", "current_a": 150, "rated_current_a": 400, "load_group": "bus"}
        ],
        "conductors": [wire("w1", "F1", 0.0, 5.0), wire("w2", "F2", 100.0, 5.0), wire("w3", "F3", 200.0, 5.0)],
        "positions": [
            {"id": "P1", "at": [0.0, 0.0, 4.0]},
            {"id": "P2", "at": [0.0, 100.0, 4.0]},
            {"id": "P3", "at": [0.0, 200.0, 4.0]}
        ]
    })
}

/// |B| in µT at (y, z), x = 0, from in-phase 20 km wires along x centred
/// on x = 0, given as (y, z, current): on each wire's bisector (Griffiths
/// Ex. 5.5) the magnitude is 0.1·I/d · 2L/√(d² + L²) (L the half-length),
/// along x̂ × ρ̂ = (0, −Δz, Δy)/d.
fn long_wires_ut(at: (f64, f64), wires: &[(f64, f64, f64)]) -> f64 {
    let (mut by, mut bz) = (0.0, 0.0);
    for &(y, z, i) in wires {
        let (dy, dz) = (at.0 - y, at.1 - z);
        let d = (dy * dy + dz * dz).sqrt();
        let b = 0.1 * i / d * 2.0 * HALF_M / (d * d + HALF_M * HALF_M).sqrt();
        by += b * -dz / d;
        bz += b * dy / d;
    }
    (by * by + bz * bz).sqrt()
}

fn scenario_budget() -> WhatIfBudget {
    WhatIfBudget::unlimited()
}

#[test]
fn n_minus_one_cases_of_three_feeders_follow_the_shares_worked_by_hand() {
    // Worked by hand (base: present, total T = 300 + 280 + 150 = 730 A; the
    // others take the share in proportion to their own current):
    //   F1 out: F2 = 280·730/430 = 475.3488 A, F3 = 150·730/430 = 254.6512 A
    //   F2 out: F1 = 300·730/450 = 486.6667 A, F3 = 150·730/450 = 243.3333 A
    //   F3 out: F1 = 300·730/580 = 377.5862 A, F2 = 280·730/580 = 352.4138 A
    let v = three_feeders();
    let site = site_of(&v);
    let req = ScenariosDoc { n_minus_1: Some(NMinusOne { base: LoadCase::Present }), ..ScenariosDoc::default() };
    let r = run_scenarios(&site, &req, &[], &scenario_budget()).unwrap();
    let names: Vec<&str> = r.scenarios.iter().map(|s| s.name.as_str()).collect();
    assert_eq!(names, ["present", "rated", "bus: all in service", "bus: F1 out", "bus: F2 out", "bus: F3 out"]);
    assert_eq!(r.measure, Measure::BUt, "no table: by flux density");
    let hand: [(&str, [f64; 3]); 4] = [
        ("bus: all in service", [300.0, 280.0, 150.0]),
        ("bus: F1 out", [0.0, 475.348_837_2, 254.651_162_8]),
        ("bus: F2 out", [486.666_666_7, 0.0, 243.333_333_3]),
        ("bus: F3 out", [377.586_206_9, 352.413_793_1, 0.0]),
    ];
    for (name, currents) in hand {
        let s = r.scenarios.iter().find(|s| s.name == name).unwrap();
        assert_eq!(s.origin, Origin::NMinusOne);
        for (c, want) in s.circuits.iter().zip(currents) {
            assert!((c.assessed_a - want).abs() < 1e-6, "{name} {}: {} vs {want}", c.id, c.assessed_a);
        }
        // Every position against the sum of the finite wires' closed form
        // (rounding only: 1e-9 relative).
        let wires = [(0.0, 5.0, currents[0]), (100.0, 5.0, currents[1]), (200.0, 5.0, currents[2])];
        for t in &s.targets {
            let y = match t.id.as_str() {
                "P1" => 0.0,
                "P2" => 100.0,
                _ => 200.0,
            };
            let want = long_wires_ut((y, 4.0), &wires);
            assert!((t.b_ut - want).abs() <= 1e-9 * want, "{name} {}: {} vs {want}", t.id, t.b_ut);
        }
        // The N-1 case is written as explicit currents, ready to assess.
        match &s.load {
            LoadCase::Currents { currents_a } => assert_eq!(currents_a.len(), 3),
            other => panic!("{other:?}"),
        }
    }
    // Worst: F2 out puts 486.7 A one metre above P1 (≈ 97.3 µT); F1 out
    // gives P2 475.3 A (≈ 95.1 µT); rated gives 400 A (≈ 80 µT).
    assert_eq!(r.worst.scenario, "bus: F2 out");
    assert_eq!(r.worst.at.id, "P1");
    // Only F2 out loads a feeder beyond its 400 A rating: F1 (486.7 A); F1
    // out gives F2 475.3 A, also beyond.
    let above = |n: &str| r.scenarios.iter().find(|s| s.name == n).unwrap().above_rated.clone();
    assert_eq!(above("bus: F2 out"), ["F1"]);
    assert_eq!(above("bus: F1 out"), ["F2"]);
    assert!(above("bus: F3 out").is_empty());
    assert!(r.notes.iter().any(|n| n.contains("beyond their rated current")), "{:?}", r.notes);
}

#[test]
fn named_scenarios_and_their_problems_are_addressed_by_pointer() {
    let v = three_feeders();
    let site = site_of(&v);
    let req: ScenariosDoc = serde_json::from_value(json!({
        "scenarios": [
            {"name": "half", "load": {"kind": "scale", "factors": {"F1": 0.5}}},
            {"name": "half", "load": {"kind": "currents", "currents_a": {"F9": 10}}}
        ]
    }))
    .unwrap();
    let e = match run_scenarios(&site, &req, &[], &scenario_budget()) {
        Err(WhatIfError::Request(p)) => p,
        other => panic!("{other:?}"),
    };
    let pointers: Vec<&str> = e.iter().map(|p| p.pointer.as_str()).collect();
    assert!(pointers.contains(&"/scenarios/1/name"), "{e:?}");
    assert!(pointers.contains(&"/scenarios/1/load/currents_a/F9"), "{e:?}");
    // N-1 without any load group says what to mark.
    let mut plain = v.clone();
    for c in plain["circuits"].as_array_mut().unwrap() {
        c.as_object_mut().unwrap().remove("load_group");
    }
    let req = ScenariosDoc { n_minus_1: Some(NMinusOne::default()), ..ScenariosDoc::default() };
    match run_scenarios(&site_of(&plain), &req, &[], &scenario_budget()) {
        Err(WhatIfError::Request(p)) => {
            assert_eq!(p.iter().next().unwrap().pointer, "/n_minus_1", "{p:?}")
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn a_load_group_of_one_circuit_is_refused_where_it_is_named() {
    let mut v = three_feeders();
    v["circuits"][2]["load_group"] = json!("spare");
    let p = validate_site(&doc_of(&v)).unwrap_err();
    let first = p.iter().next().unwrap();
    assert_eq!(first.pointer, "/circuits/2/load_group");
    assert!(first.detail.contains("only one"), "{first:?}");
}

/// One 20 km wire along x at z = 5 m, 1000 A, and a 3-D point 4 m below.
fn one_wire() -> Value {
    json!({
        "frequency_hz": 50,
        "circuits": [{"id": "c", "kind": "single_phase", "current_a": 1000}],
        "conductors": [wire("w", "c", 0.0, 5.0)],
        "positions": [{"id": "desk", "at": [0.0, 0.0, 1.0]}, {"id": "floor", "at": [0.0, 3.0]}]
    })
}

fn move_budget() -> WhatIfBudget {
    WhatIfBudget::unlimited()
}

#[test]
fn raising_a_wire_finds_the_smallest_move_of_the_long_wire_law_rounded_up_to_a_millimetre() {
    // Long wire (OpenStax): 0.2·1000/(4 + Δ) = 30 µT at Δ* = 20/3 − 4 =
    // 2.6667 m. The 20 km wire is weaker than the infinite one by
    // (r/10 km)²/2 ≈ 2e-7, moving the root by ≈ 1.5e-6 m. The move reported
    // is rounded up to whole millimetres and computed itself: within
    // [Δ* − 2e-6, Δ* + 1 mm].
    let v = one_wire();
    let req = MoveDoc {
        moving: Moving { circuits: vec!["c".into()], ..Moving::default() },
        by_m: [0.0, 0.0, 10.0],
        steps: 10,
        level: Some(30.0),
        measure: Measure::BUt,
        load: LoadCase::Present,
        table: None,
        positions: Some(vec!["desk".into()]),
        areas: Some(vec![]),
    };
    let r = run_move(&site_of(&v), &doc_of(&v), &req, &[], &move_budget()).unwrap();
    for (k, s) in r.steps.iter().enumerate() {
        let want = 0.2 * 1000.0 / (4.0 + k as f64);
        let got = s.worst.as_ref().unwrap().value;
        assert!((got - want).abs() <= 1e-6 * want, "step {k}: {got} vs {want}");
        assert_eq!(s.under_level, Some(want < 30.0), "step {k}");
    }
    let exact = 20.0 / 3.0 - 4.0;
    let s = r.smallest.as_ref().unwrap();
    assert!(s.distance_m >= exact - 2e-6 && s.distance_m <= exact + 1e-3 + 1e-9, "{} vs {exact}", s.distance_m);
    assert!((s.distance_m * 1000.0 - (s.distance_m * 1000.0).round()).abs() < 1e-6, "whole mm: {}", s.distance_m);
    assert!(s.worst.as_ref().unwrap().value < 30.0);
    // The revision carries the move: the wire's height is 5 m + the move.
    let rev = r.revision.as_ref().unwrap();
    assert!((rev.conductors[0].path[0][2] - (5.0 + s.distance_m)).abs() < 1e-12);
    assert!(r.answer.contains("brings every target under 30"), "{}", r.answer);
}

#[test]
fn a_move_that_never_reaches_the_level_says_so_and_a_standing_position_cannot_rise() {
    let v = one_wire();
    let mut req = MoveDoc {
        moving: Moving { positions: vec!["desk".into()], ..Moving::default() },
        by_m: [0.0, 2.0, 0.0],
        steps: 4,
        level: Some(1.0),
        measure: Measure::BUt,
        load: LoadCase::Present,
        table: None,
        positions: Some(vec!["desk".into()]),
        areas: None,
    };
    // Sideways by 2 m: 0.2·1000/√(16 + 4) = 44.7 µT, far above 1 µT.
    let r = run_move(&site_of(&v), &doc_of(&v), &req, &[], &move_budget()).unwrap();
    assert!(r.smallest.is_none() && r.revision.is_none());
    let last = r.steps.last().unwrap().worst.as_ref().unwrap().value;
    assert!((last - 200.0 / 20f64.sqrt()).abs() < 1e-4, "{last}");
    assert!(r.answer.starts_with("No step of the move"), "{}", r.answer);
    req.moving.positions = vec!["floor".into()];
    req.by_m = [0.0, 0.0, 1.0];
    match run_move(&site_of(&v), &doc_of(&v), &req, &[], &move_budget()) {
        Err(WhatIfError::Request(p)) => {
            assert_eq!(p.iter().next().unwrap().pointer, "/by_m/2", "{p:?}")
        }
        other => panic!("{other:?}"),
    }
}

/// Griffiths Ex. 5.5 on the perpendicular bisector, µT per the current.
fn bisector_ut(i: f64, s: f64, len: f64) -> f64 {
    0.1 * i / s * len / (s * s + len * len / 4.0).sqrt()
}

#[test]
fn a_coplanar_loop_beside_a_long_wire_carries_the_current_of_its_mutual_inductance_and_lowers_the_field_inside() {
    // Wire along x at y = 0, z = 2 m, 1000 A at 50 Hz; a 10 m × 1 m loop in
    // the same plane from y = 1 to y = 2, vertices anticlockwise seen from
    // +z. Flux of the long wire (OpenStax integrated): M = µ0·10/(2π)·ln 2 =
    // 2e-6·ln 2 H (the loop's short sides are perpendicular to the wire and
    // add nothing to Neumann's integral; the 20 km wire's end effects are
    // (5 m/10 km)² ≈ 2.5e-7 relative). I_loop = −jωM·I/(R + jωL).
    let v = json!({
        "frequency_hz": 50,
        "circuits": [{"id": "c", "kind": "single_phase", "current_a": 1000}],
        "conductors": [wire("w", "c", 0.0, 2.0)],
        "positions": [{"id": "inside", "at": [0.0, 1.5, 2.0]}]
    });
    let req = LoopDoc {
        path: vec![[-5.0, 1.0, 2.0], [5.0, 1.0, 2.0], [5.0, 2.0, 2.0], [-5.0, 2.0, 2.0]],
        wire_radius_m: 0.005,
        resistance: ResistanceDoc::Given { ohm: 0.002 },
        load: LoadCase::Present,
        table: None,
        positions: None,
        areas: None,
    };
    let r = run_loop(&site_of(&v), &req, &[], &WhatIfBudget::unlimited()).unwrap();
    let m = 2e-6 * 2f64.ln();
    let omega = 2.0 * std::f64::consts::PI * 50.0;
    let z = num_complex::Complex64::new(0.002, omega * r.self_inductance_h);
    let i_loop = num_complex::Complex64::new(0.0, -omega * m * 1000.0) / z;
    let line = &r.lines[0];
    assert!((line.current_a - i_loop.norm()).abs() <= 1e-5 * i_loop.norm(), "{} vs {}", line.current_a, i_loop.norm());
    assert!(
        (line.angle_deg - i_loop.arg().to_degrees()).abs() < 1e-3,
        "{} vs {}",
        line.angle_deg,
        i_loop.arg().to_degrees()
    );
    assert!((r.length_m - 22.0).abs() < 1e-12);
    // At the loop's centre every field is along z: the wire's 0.2·1000/1.5
    // and the loop's four sides (Griffiths on each bisector: the long sides
    // at 0.5 m, 10 m long; the short ones at 5 m, 1 m long), all +z for a
    // positive (anticlockwise) loop current.
    let per_amp = 2.0 * bisector_ut(1.0, 0.5, 10.0) + 2.0 * bisector_ut(1.0, 5.0, 1.0);
    let with = (num_complex::Complex64::new(200.0 / 1.5, 0.0) + i_loop * per_amp).norm();
    let t = &r.targets[0];
    assert!((t.b_without_ut - 200.0 / 1.5).abs() < 1e-4, "{}", t.b_without_ut);
    assert!((t.b_with_ut - with).abs() <= 1e-5 * with, "{} vs {with}", t.b_with_ut);
    // The induced current opposes the wire's flux: lower inside the loop.
    assert!(t.b_with_ut < t.b_without_ut && t.reduction_percent.unwrap() > 0.0, "{t:?}");
}

#[test]
fn a_loop_through_a_conductor_is_refused_at_its_path() {
    let v = one_wire();
    let req: LoopDoc = serde_json::from_value(json!({
        "path": [[-1.0, -1.0, 5.0], [1.0, -1.0, 5.0], [1.0, 0.0, 5.0], [-1.0, 0.0, 5.0]],
        "wire_radius_m": 0.005,
        "resistance": {"kind": "given", "ohm": 0.01}
    }))
    .unwrap();
    match run_loop(&site_of(&v), &req, &[], &WhatIfBudget::unlimited()) {
        Err(WhatIfError::Request(p)) => {
            assert_eq!(p.iter().next().unwrap().pointer, "/path", "{p:?}")
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn a_loop_whose_neumann_integrals_exceed_the_budget_is_refused_before_computing() {
    // 4 loop segments × 1 conductor segment × 256 = 1024 pair evaluations.
    let v = one_wire();
    let req: LoopDoc = serde_json::from_value(json!({
        "path": [[-1.0, 1.0, 5.0], [1.0, 1.0, 5.0], [1.0, 2.0, 5.0], [-1.0, 2.0, 5.0]],
        "wire_radius_m": 0.005,
        "resistance": {"kind": "given", "ohm": 0.01}
    }))
    .unwrap();
    let tight = WhatIfBudget { max_pairs: 1000, ..WhatIfBudget::unlimited() };
    match run_loop(&site_of(&v), &req, &[], &tight) {
        Err(WhatIfError::OverBudget(p)) => assert_eq!(p.iter().next().unwrap().pointer, "/path", "{p:?}"),
        other => panic!("{other:?}"),
    }
    let enough = WhatIfBudget { max_pairs: 1_000_000, ..WhatIfBudget::unlimited() };
    assert!(run_loop(&site_of(&v), &req, &[], &enough).is_ok());
}

#[test]
fn each_target_is_judged_against_every_table_that_applies_to_it_the_implant_wearer_too() {
    // A 20 km wire of 1000 A; two positions 2 m beside it (B = 0.2·1000/2 =
    // 100 µT, OpenStax), one of them an implant wearer. The site names one
    // invented workers' table (flat 1000 µT): ratio 0.1 for both; the
    // implant wearer is also screened against the built-in implant table
    // (added as an assessment adds it), whose level is read from the table.
    let table = fluxbound_core::limits::parse_table(
        &json!({
            "id": "test-flat-1000", "title": "Flat 1000 µT (invented for tests)", "source": "invented for tests",
            "applies_to": {"population": "workers", "body_region": "whole_body"}, "kind": "reference_level",
            "bands": [{"from_hz": 1, "to_hz": 1000, "coefficient": 1000, "exponent": 0}]
        })
        .to_string(),
    )
    .unwrap();
    let v = json!({
        "frequency_hz": 50,
        "tables": ["test-flat-1000"],
        "circuits": [{"id": "c", "kind": "single_phase", "current_a": 1000}],
        "conductors": [wire("w", "c", 0.0, 5.0)],
        "positions": [
            {"id": "worker", "at": [0.0, 2.0, 5.0]},
            {"id": "wearer", "at": [0.0, -2.0, 5.0], "group": "implant_wearer"}
        ]
    });
    let site = site_of(&v);
    let r = fluxbound_core::usecase::run_scenarios(
        &site,
        &serde_json::from_value(json!({"scenarios": [{"name": "now", "load": {"kind": "present"}}]})).unwrap(),
        &[table],
        &fluxbound_core::usecase::Budget::default(),
    )
    .unwrap();
    let implant = fluxbound_core::limits::builtin_table("implant-screening-100").unwrap();
    let implant_level = implant.level_ut(50.0).unwrap();
    let b = 0.1 * 1000.0 / 2.0 * 2.0 * HALF_M / (4.0 + HALF_M * HALF_M).sqrt();
    let s = &r.scenarios[0];
    let worker = s.targets.iter().find(|t| t.id == "worker").unwrap();
    let wearer = s.targets.iter().find(|t| t.id == "wearer").unwrap();
    assert!((worker.ratio.unwrap() - b / 1000.0).abs() < 1e-9, "{worker:?}");
    assert_eq!(worker.table.as_deref(), Some("test-flat-1000"));
    assert!((wearer.ratio.unwrap() - b / implant_level).abs() < 1e-9, "{wearer:?}");
    assert_eq!(wearer.table.as_deref(), Some("implant-screening-100"));
    assert_eq!(r.worst.at.id, "wearer");
}

#[test]
fn a_loop_through_a_judged_point_or_enclosing_no_area_is_refused() {
    let v = one_wire();
    // The desk's point (0, 0, 1) lies on the loop's wire.
    let through: LoopDoc = serde_json::from_value(json!({
        "path": [[-1.0, 0.0, 1.0], [1.0, 0.0, 1.0], [1.0, 0.0, 2.0], [-1.0, 0.0, 2.0]],
        "wire_radius_m": 0.005,
        "resistance": {"kind": "given", "ohm": 0.01}
    }))
    .unwrap();
    match run_loop(&site_of(&v), &through, &[], &WhatIfBudget::unlimited()) {
        Err(WhatIfError::Request(p)) => {
            let first = p.iter().next().unwrap();
            assert_eq!(first.pointer, "/path");
            assert!(first.detail.contains("position 'desk'"), "{first:?}");
        }
        other => panic!("{other:?}"),
    }
    let flat: LoopDoc = serde_json::from_value(json!({
        "path": [[-1.0, 2.0, 1.0], [0.0, 2.0, 1.0], [1.0, 2.0, 1.0]],
        "wire_radius_m": 0.005,
        "resistance": {"kind": "given", "ohm": 0.01}
    }))
    .unwrap();
    match run_loop(&site_of(&v), &flat, &[], &WhatIfBudget::unlimited()) {
        Err(WhatIfError::Request(p)) => assert!(p.iter().next().unwrap().detail.contains("encloses no area"), "{p:?}"),
        other => panic!("{other:?}"),
    }
}

#[test]
fn raising_an_overhead_line_moves_its_structures_with_the_sag_kept() {
    // The depot example's line carries one circuit: moving the circuit by
    // dz raises every attachment by dz (the sag kept), so the revision's
    // heights are the example's plus 2 m exactly.
    let text =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/../../examples/site-depot-overhead-line.json"))
            .unwrap();
    let v: Value = serde_json::from_str(&text).unwrap();
    let req = MoveDoc {
        moving: Moving { circuits: vec!["yard-crossing-110kv".into()], ..Moving::default() },
        by_m: [0.0, 0.0, 2.0],
        steps: 1,
        level: Some(1e-6),
        measure: Measure::BUt,
        load: LoadCase::Present,
        table: None,
        positions: Some(vec!["yard-under-first-span".into()]),
        areas: Some(vec![]),
    };
    let r = run_move(&site_of(&v), &doc_of(&v), &req, &[], &move_budget()).unwrap();
    assert!(r.smallest.is_none(), "1e-6 µT is never reached");
    let moved = fluxbound_core::mitigate::moves::moved(&doc_of(&v), &req.moving, [0.0, 0.0, 2.0]);
    for (a, b) in doc_of(&v).overhead_lines[0].structures.iter().zip(&moved.overhead_lines[0].structures) {
        for (h0, h1) in a.heights_m.iter().zip(&b.heights_m) {
            assert_eq!(*h1, h0 + 2.0);
        }
        assert_eq!(a.at, b.at);
    }
    // Raised 2 m, the line is farther from the point under it: lower field.
    let b0 = r.steps[0].worst.as_ref().unwrap().value;
    let b1 = r.steps[1].worst.as_ref().unwrap().value;
    assert!(b1 < b0, "{b0} → {b1}");
}
