//! Cable formations (`site/formation.rs`): where the cables lie, the field
//! of a trefoil against the far-field law of three line currents, the
//! validator's pointers, and the phase search writing a new phase order
//! back into the formation.

use fluxbound_core::field::{self, total_resultant_ut};
use fluxbound_core::mitigate::phases::{Measure, PhaseSearchDoc, SearchBudget, search_phases};
use fluxbound_core::site::wire::{Phase, SiteDoc};
use fluxbound_core::site::{Drive, WarningCode, filaments, parse_site, site_warnings, validate_site};
use nalgebra::Point3;
use serde_json::{Value, json};

fn field_ut(v: &Value, points: &[Point3<f64>]) -> Vec<f64> {
    let site = parse_site(&v.to_string()).unwrap();
    let set = field::evaluate(&filaments(site.conductors()), points, &site.excitation());
    (0..points.len()).map(|i| total_resultant_ut(set.at(i))).collect()
}

fn trefoil(d: f64, half_length_m: f64) -> Value {
    json!({
        "frequency_hz": 50,
        "circuits": [{"id": "T1", "kind": "three_phase", "current_a": 1000.0}],
        "conductors": [],
        "formations": [{"id": "F", "circuit": "T1", "layout": "trefoil", "cable_diameter_m": d,
                        "route": [[-half_length_m, 0.0, 0.0], [half_length_m, 0.0, 0.0]],
                        "sets": [{"phases": ["A", "B", "C"]}], "continues": {"start": true, "end": true}}]
    })
}

#[test]
fn a_trefoil_follows_the_far_field_law_of_three_line_currents() {
    // Three line currents I_k at w_k (complex plane across the route),
    // balanced (Σ I_k = 0): F = B_y + i B_x = µ0/(2π) Σ_k I_k/(w − w_k)
    // = µ0/(2π) Σ_{n≥1} M_n / w^{n+1}, M_n = Σ_k I_k w_k^n (the multipole
    // expansion of the 2-D field, e.g. Binns & Lawrenson, *Analysis and
    // Computation of Electric and Magnetic Field Problems*, ch. 2). A
    // spatial rotation keeps the RMS resultant, so term n contributes
    // exactly ‖M_n‖ / r^{n+1}. Corners at distance ρ = d/√3 from the
    // centroid, 120° apart, currents I·e^{−j2πk/3}: ‖M_1‖ = I·ρ·3/√2 =
    // I·d·√(3/2) (derived: Σ a_k cos θ_k = (3/2)e^{jθ₀}, Σ a_k sin θ_k =
    // (3/(2j))e^{jθ₀}). Hence
    //   B_far = µ0 I d √(3/2) / (2π r²),
    // and the rest is at most Σ_{n≥2} 3Iρⁿ/r^{n+1}, relative
    //   ≤ (d/r) / (√(3/2) (1 − d/(√3 r))).
    // The ±5 km route adds a finite-length term ≲ (r/L)² = 10⁻⁴ at 50 m.
    let d = 0.1;
    let v = trefoil(d, 5000.0);
    for r in [5.0, 10.0, 20.0, 50.0] {
        let far = 200.0 * d * 1.5f64.sqrt() / (r * r); // 2e-7 T·m/A · 1000 A in µT·m
        let bound = (d / r) / (1.5f64.sqrt() * (1.0 - d / (3f64.sqrt() * r))) + 1e-4;
        for deg in [0.0, 30.0, 90.0, 135.0, 270.0] {
            let a = f64::to_radians(deg);
            let b = field_ut(&v, &[Point3::new(0.0, r * a.cos(), r * a.sin())])[0];
            assert!((b / far - 1.0).abs() <= bound, "r = {r} m, {deg}°: {b} µT against {far} µT (bound {bound})");
        }
    }
}

#[test]
fn the_far_field_law_can_tell_a_trefoil_from_a_flat_row() {
    // A flat touching row of the same cables, at x = −d, 0, d: M_1 =
    // I·d·(e^{−j4π/3} − 1) along x, ‖M_1‖ = √3·I·d, so its far field is
    // √3 / √(3/2) = √2 times the trefoil's (its next term is at most
    // d/(√3 r) relative, 0.3 % at 20 m): the trefoil law fails for it.
    let mut v = trefoil(0.1, 5000.0);
    v["formations"][0]["layout"] = json!("flat_touching");
    let r = 20.0;
    let b = field_ut(&v, &[Point3::new(0.0, 0.0, r)])[0];
    let trefoil_far = 200.0 * 0.1 * 1.5f64.sqrt() / (r * r);
    assert!((b / trefoil_far - 2f64.sqrt()).abs() < 0.01, "flat row {b} µT, trefoil law {trefoil_far} µT");
}

#[test]
fn cables_lie_where_the_orientation_rule_puts_them() {
    // Route east along x at z = 1: right = x̂ × ẑ = −ŷ, up = ẑ.
    // Trefoil, d = 0.1: bottom left (right −d/2 → y = +0.05, z = 1 − √3·0.1/6
    // = 0.971132), apex (y = 0, z = 1 + √3·0.1/3 = 1.057735), bottom right
    // (y = −0.05, z = 0.971132).
    let v = json!({"frequency_hz": 50, "circuits": [{"id": "T1", "kind": "three_phase", "current_a": 100.0}],
        "conductors": [],
        "formations": [{"id": "F", "circuit": "T1", "layout": "trefoil", "cable_diameter_m": 0.1,
                        "route": [[0.0, 0.0, 1.0], [10.0, 0.0, 1.0]], "sets": [{"phases": ["A", "B", "C"]}]}]});
    let site = parse_site(&v.to_string()).unwrap();
    let expected = [("F-1-1", 0.05, 0.971_132_5), ("F-1-2", 0.0, 1.057_735_0), ("F-1-3", -0.05, 0.971_132_5)];
    assert_eq!(site.conductors().len(), 3);
    for (c, (id, y, z)) in site.conductors().iter().zip(expected) {
        assert_eq!(c.id, id);
        assert!((c.path[0].y - y).abs() < 1e-7 && (c.path[0].z - z).abs() < 1e-7, "{id}: {}", c.path[0]);
        assert!((c.radius_m - 0.05).abs() < 1e-15);
    }
    // Open ends point at the formation's route.
    let w = site_warnings(&site);
    assert!(w.iter().any(|w| w.code == WarningCode::OpenEnd && w.pointer == "/formations/0/route/0"), "{w:#?}");
    assert!(!w.iter().any(|w| w.code == WarningCode::ConductorsOverlap), "touching cables do not overlap: {w:#?}");
}

#[test]
fn parallel_flat_spaced_sets_lie_side_by_side_and_share_the_current() {
    // Two sets 1 m apart (centres at right = ∓0.5 → y = ±0.5), cables 0.3 m
    // apart: y = 0.8, 0.5, 0.2 then −0.2, −0.5, −0.8; each half the phase.
    let v = json!({"frequency_hz": 50, "circuits": [{"id": "T1", "kind": "three_phase", "current_a": 100.0}],
        "conductors": [],
        "formations": [{"id": "F", "circuit": "T1", "layout": "flat_spaced", "cable_diameter_m": 0.05, "spacing_m": 0.3,
                        "set_spacing_m": 1.0, "route": [[0.0, 0.0, -0.8], [10.0, 0.0, -0.8]],
                        "sets": [{"phases": ["A", "B", "C"]}, {"phases": ["C", "B", "A"]}]}]});
    let site = parse_site(&v.to_string()).unwrap();
    let ys: Vec<f64> = site.conductors().iter().map(|c| c.path[0].y).collect();
    for (got, want) in ys.iter().zip([0.8, 0.5, 0.2, -0.2, -0.5, -0.8]) {
        assert!((got - want).abs() < 1e-12, "{ys:?}");
    }
    let phases: Vec<(Phase, f64)> = site
        .conductors()
        .iter()
        .map(|c| match c.drive {
            Drive::Phase { phase, share, .. } => (phase, share),
            Drive::Explicit { .. } => panic!("explicit"),
        })
        .collect();
    assert_eq!(
        phases.iter().map(|p| p.0).collect::<Vec<_>>(),
        [Phase::A, Phase::B, Phase::C, Phase::C, Phase::B, Phase::A]
    );
    assert!(phases.iter().all(|p| (p.1 - 0.5).abs() < 1e-15));
    assert!(site.conductors().iter().all(|c| (c.path[0].z + 0.8).abs() < 1e-12));
}

#[test]
fn cables_turn_where_their_offset_lines_meet() {
    // East 10 m, then north: the left cable of a flat touching row
    // (right = −0.1) is at y = +0.1 on the first leg (right = −ŷ) and at
    // x = 10 − 0.1 on the second (right = ŷ × ẑ = x̂): corner (9.9, 0.1).
    let v = json!({"frequency_hz": 50, "circuits": [{"id": "T1", "kind": "three_phase", "current_a": 100.0}],
        "conductors": [],
        "formations": [{"id": "F", "circuit": "T1", "layout": "flat_touching", "cable_diameter_m": 0.1,
                        "route": [[0.0, 0.0, 0.0], [10.0, 0.0, 0.0], [10.0, 10.0, 0.0]], "sets": [{"phases": ["A", "B", "C"]}]}]});
    let site = parse_site(&v.to_string()).unwrap();
    let left = &site.conductors()[0];
    assert!((left.path[1] - Point3::new(9.9, 0.1, 0.0)).norm() < 1e-12, "{}", left.path[1]);
    assert!((left.path[2] - Point3::new(9.9, 10.0, 0.0)).norm() < 1e-12, "{}", left.path[2]);
}

#[test]
fn bad_formations_are_refused_with_pointers() {
    let v = json!({"frequency_hz": 50, "circuits": [{"id": "T1", "kind": "three_phase", "current_a": 100.0},
                                                {"id": "S", "kind": "single_phase", "current_a": 10.0}],
    "conductors": [{"id": "G-1-1", "path": [[0, 5, 0], [1, 5, 0]], "radius_m": 0.01, "circuit": "S", "phase": "A"}],
    "formations": [
        {"id": "F", "circuit": "nope", "layout": "trefoil", "cable_diameter_m": 0.1,
         "route": [[0, 0, 0], [0, 0, 5]], "sets": [{"phases": ["A", "B"]}]},
        {"id": "G", "circuit": "T1", "layout": "flat_spaced", "cable_diameter_m": 0.1,
         "route": [[0, 0, 0], [5, 0, 0]], "sets": [{"phases": ["A", "A", "C"]}, {"phases": ["A", "B", "C"]}]},
        {"id": "H", "circuit": "S", "layout": "flat_touching", "cable_diameter_m": 0.1, "spacing_m": 0.2,
         "route": [[0, 0, 0], [5, 0, 0]], "sets": [{"phases": ["A", "B"]}]}
    ]});
    let p = validate_site(&serde_json::from_value::<SiteDoc>(v).unwrap()).unwrap_err();
    let at: Vec<&str> = p.iter().map(|p| p.pointer.as_str()).collect();
    for want in [
        "/formations/0/route/1",         // vertical route
        "/formations/0/circuit",         // unknown circuit
        "/formations/0/sets/0/phases",   // a trefoil of two
        "/formations/1/spacing_m",       // flat_spaced without spacing
        "/formations/1/sets/0/phases/1", // A twice
        "/formations/1/set_spacing_m",   // two sets, no spacing
        "/formations/1/id",              // G-1-1 is a listed conductor
        "/formations/2/spacing_m",       // spacing on a touching row
        "/formations/2/sets/0/phases/1", // B on a single-phase circuit
    ] {
        assert!(at.contains(&want), "{want} missing from {at:?}");
    }
}

/// Two trefoils of circuits T1 and T2, 0.5 m apart, and a position above.
fn two_trefoils() -> Value {
    let formation = |id: &str, circuit: &str, y: f64| {
        json!({"id": id, "circuit": circuit, "layout": "trefoil", "cable_diameter_m": 0.1,
               "route": [[-25.0, y, 0.0], [25.0, y, 0.0]], "sets": [{"phases": ["A", "B", "C"]}],
               "continues": {"start": true, "end": true}})
    };
    json!({
        "frequency_hz": 50,
        "circuits": [{"id": "T1", "kind": "three_phase", "current_a": 1000.0},
                     {"id": "T2", "kind": "three_phase", "current_a": 1000.0}],
        "conductors": [],
        "formations": [formation("F1", "T1", 0.0), formation("F2", "T2", 0.5)],
        "positions": [{"id": "above", "at": [0.0, 0.25, 1.0]}]
    })
}

#[test]
fn the_phase_search_writes_a_formations_new_phase_order_back() {
    let v = two_trefoils();
    let doc: SiteDoc = serde_json::from_value(v.clone()).unwrap();
    let site = validate_site(&doc).unwrap();
    let req = PhaseSearchDoc { measure: Measure::BUt, ..PhaseSearchDoc::for_circuits(vec!["T2".into()]) };
    let found = search_phases(&site, &doc, &req, None, &SearchBudget::unlimited()).unwrap();
    let best = &found.ranked[0];
    let at = [Point3::new(0.0, 0.25, 1.0)];
    let as_built = field_ut(&v, &at)[0];
    assert!(best.objective < as_built, "the search finds a better order: {} against {as_built} µT", best.objective);
    // The revision validates, gives the field the search reports, and its
    // formation carries the order: the cable drawn A gets phases[0], …
    let rev = serde_json::to_value(&found.revision).unwrap();
    let b = field_ut(&rev, &at)[0];
    assert!((b - best.objective).abs() <= 1e-9 * b, "revision {b} µT, search {} µT", best.objective);
    let order = best.phases["T2"];
    let written: Vec<Phase> = serde_json::from_value(rev["formations"][1]["sets"][0]["phases"].clone()).unwrap();
    assert_eq!(written, order.to_vec());
    assert_eq!(rev["formations"][0], v["formations"][0], "the other formation is untouched");
    // Brute force over the six orders agrees on the best field.
    let orders = [["A", "B", "C"], ["A", "C", "B"], ["B", "A", "C"], ["B", "C", "A"], ["C", "A", "B"], ["C", "B", "A"]];
    let brute = orders
        .iter()
        .map(|o| {
            let mut w = v.clone();
            w["formations"][1]["sets"][0]["phases"] = json!(o);
            field_ut(&w, &at)[0]
        })
        .fold(f64::INFINITY, f64::min);
    assert!((brute - best.objective).abs() <= 1e-9 * brute);
}

#[test]
fn a_move_shifts_a_formations_route_by_circuit_or_by_a_named_cable() {
    use fluxbound_core::mitigate::moves::{Moving, moved};
    let doc: SiteDoc = serde_json::from_value(two_trefoils()).unwrap();
    let by_cable = Moving { conductors: vec!["F2-1-3".into()], ..Moving::default() };
    let out = moved(&doc, &by_cable, [0.0, 1.0, 0.0]);
    assert_eq!(out.formations[1].route, [[-25.0, 1.5, 0.0], [25.0, 1.5, 0.0]]);
    assert_eq!(out.formations[0].route, doc.formations[0].route, "F1 stays");
    let by_circuit = Moving { circuits: vec!["T1".into()], ..Moving::default() };
    let out = moved(&doc, &by_circuit, [0.0, 0.0, -0.5]);
    assert_eq!(out.formations[0].route, [[-25.0, 0.0, -0.5], [25.0, 0.0, -0.5]]);
    assert_eq!(out.formations[1].route, doc.formations[1].route, "F2 stays");
}
