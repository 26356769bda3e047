//! Phase-arrangement search, checked against brute force through the
//! field engine's ordinary path (each arrangement written into the site
//! document, validated and evaluated: nothing of the search's blocks), and
//! against the far-field laws of a double circuit.
//!
//! Sources: the counts 6^(N−1) and 2·6^(N−1) are derived in
//! `mitigate/phases/symmetry.rs` and checked here by brute force (the
//! number of distinct RMS field patterns over all 6^N arrangements at
//! points of an irregular geometry). The far-field exponents of a double
//! circuit (same order: 1/r², reversed order: 1/r³) are the multipole
//! argument of docs/REFERENCES.md "Phase arrangement" (public information
//! of a grid operator; the exponents follow from the net current being zero
//! and, for the reversed order, the net dipole moment too).

use fluxbound_core::field::{self, total_resultant_ut};
use fluxbound_core::mitigate::phases::{
    Measure, Method, Over, PhaseSearch, PhaseSearchDoc, SearchBudget, search_phases,
};
use fluxbound_core::site::wire::SiteDoc;
use fluxbound_core::site::{Site, validate_site};
use nalgebra::Point3;
use serde_json::{Value, json};

const PHASES: [&str; 3] = ["A", "B", "C"];
const PERMS: [[usize; 3]; 6] = [[0, 1, 2], [0, 2, 1], [1, 0, 2], [1, 2, 0], [2, 0, 1], [2, 1, 0]];

fn doc_of(v: &Value) -> SiteDoc {
    serde_json::from_value(v.clone()).unwrap()
}

fn site_of(v: &Value) -> Site {
    validate_site(&doc_of(v)).unwrap()
}

/// `v` with the conductors of `circuit` drawn as phase s re-phased to
/// `perm[s]` (written here, not by the search).
fn rephase(v: &Value, circuit: &str, perm: [usize; 3]) -> Value {
    let mut out = v.clone();
    for c in out["conductors"].as_array_mut().unwrap() {
        if c["circuit"] == circuit
            && let Some(s) = PHASES.iter().position(|p| c["phase"] == *p)
        {
            c["phase"] = json!(PHASES[perm[s]]);
        }
    }
    out
}

/// Resultant RMS over all frequencies at `points`, through the engine.
fn rms(v: &Value, points: &[Point3<f64>]) -> Vec<f64> {
    let site = site_of(v);
    let set = field::evaluate(&fluxbound_core::site::filaments(site.conductors()), points, &site.excitation());
    (0..points.len()).map(|i| total_resultant_ut(set.at(i))).collect()
}

/// Every arrangement of `circuits` (each of the 6^N), as re-phased docs
/// with their permutation indices.
fn all_arrangements(v: &Value, circuits: &[&str]) -> Vec<(Vec<usize>, Value)> {
    let mut out = vec![(Vec::new(), v.clone())];
    for c in circuits {
        out = out
            .into_iter()
            .flat_map(|(perms, doc)| {
                (0..6).map(move |k| {
                    let mut p = perms.clone();
                    p.push(k);
                    (p, rephase(&doc, c, PERMS[k]))
                })
            })
            .collect();
    }
    out
}

/// Distinct field patterns among `fields` (relative tolerance 1e-9).
fn distinct(mut fields: Vec<Vec<f64>>) -> usize {
    fields.sort_by(|a, b| {
        a.iter().zip(b).map(|(x, y)| x.total_cmp(y)).find(|o| o.is_ne()).unwrap_or(std::cmp::Ordering::Equal)
    });
    let same = |a: &[f64], b: &[f64]| a.iter().zip(b).all(|(x, y)| (x - y).abs() <= 1e-9 * x.abs().max(y.abs()));
    1 + fields.windows(2).filter(|w| !same(&w[0], &w[1])).count()
}

/// Per-phase overrides of circuit 0.
#[derive(Clone, Copy)]
enum Unbalance {
    None,
    /// Phase B at 300 A and −100°: no relabelling keeps the fields.
    General,
    /// Only phase A's magnitude differs: B and C stay mirror images, so
    /// swapping B and C everywhere (with conjugation) still keeps them.
    PhaseAOnly,
}

/// A small deterministic generator for irregular geometry.
struct Lcg(u64);
impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// `n` three-phase circuits of three straight conductors each at irregular
/// places (no symmetry of the geometry), `angles[i]` degrees, optional
/// per-phase overrides of circuit 0 as `unbalanced` says; positions
/// around them.
fn irregular(n: usize, angles: &[f64], unbalanced: Unbalance) -> Value {
    let mut r = Lcg(7 + n as u64);
    let mut circuits = Vec::new();
    let mut conductors = Vec::new();
    for (i, angle) in angles.iter().enumerate().take(n) {
        let mut c = json!({"id": format!("c{i}"), "kind": "three_phase", "current_a": 400.0 + 50.0 * i as f64, "angle_deg": angle});
        match (unbalanced, i) {
            (Unbalance::General, 0) => c["phases"] = json!({"B": {"current_a": 300.0, "angle_deg": -100.0}}),
            (Unbalance::PhaseAOnly, 0) => c["phases"] = json!({"A": {"current_a": 300.0}}),
            _ => {}
        }
        circuits.push(c);
        for phase in PHASES {
            let (x, y, z) = (4.0 * r.next() - 2.0, 4.0 * r.next() - 2.0, 2.0 + 2.0 * r.next());
            let (dx, dy) = (1.0 + r.next(), 2.0 * r.next() - 1.0);
            conductors.push(json!({
                "id": format!("c{i}{phase}"), "circuit": format!("c{i}"), "phase": phase, "radius_m": 0.01,
                "path": [[x, y, z], [x + 3.0 * dx, y + 3.0 * dy, z + 0.3 * r.next()]],
                "continues": {"start": true, "end": true}
            }));
        }
    }
    let positions: Vec<Value> = (0..5)
        .map(|k| json!({"id": format!("p{k}"), "at": [6.0 * r.next() - 3.0, 6.0 * r.next() - 3.0, 0.5 + r.next()]}))
        .collect();
    json!({"frequency_hz": 50, "circuits": circuits, "conductors": conductors, "positions": positions})
}

fn position_points(v: &Value) -> Vec<Point3<f64>> {
    v["positions"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| {
            let a = p["at"].as_array().unwrap();
            Point3::new(a[0].as_f64().unwrap(), a[1].as_f64().unwrap(), a[2].as_f64().unwrap())
        })
        .collect()
}

fn ids(n: usize) -> Vec<String> {
    (0..n).map(|i| format!("c{i}")).collect()
}

fn search(v: &Value, req: &PhaseSearchDoc, budget: &SearchBudget) -> PhaseSearch {
    search_phases(&site_of(v), &doc_of(v), req, None, budget).unwrap()
}

fn b_request(circuits: Vec<String>) -> PhaseSearchDoc {
    PhaseSearchDoc { measure: Measure::BUt, ..PhaseSearchDoc::for_circuits(circuits) }
}

/// Distinct arrangements as counted by the search and by brute force.
fn counts(n: usize, angles: &[f64], unbalanced: Unbalance) -> (u64, usize) {
    let v = irregular(n, angles, unbalanced);
    let names = ids(n);
    let refs: Vec<&str> = names.iter().map(String::as_str).collect();
    let points = position_points(&v);
    let brute = distinct(all_arrangements(&v, &refs).iter().map(|(_, d)| rms(d, &points)).collect());
    let found = search(&v, &b_request(names), &SearchBudget::unlimited());
    (found.counting.distinct, brute)
}

#[test]
fn same_source_circuits_have_6_to_the_n_minus_1_distinct_arrangements() {
    // Derivation: mitigate/phases/symmetry.rs; brute force here.
    assert_eq!(counts(1, &[0.0], Unbalance::None), (1, 1));
    assert_eq!(counts(2, &[0.0, 0.0], Unbalance::None), (6, 6));
    assert_eq!(counts(3, &[0.0; 3], Unbalance::None), (36, 36));
}

#[test]
fn angle_offsets_give_2_times_6_to_the_n_minus_1() {
    assert_eq!(counts(1, &[25.0], Unbalance::None), (1, 1));
    assert_eq!(counts(2, &[0.0, 30.0], Unbalance::None), (12, 12));
    assert_eq!(counts(3, &[0.0, 30.0, -75.0], Unbalance::None), (72, 72));
}

#[test]
fn unbalanced_circuits_have_all_6_to_the_n() {
    assert_eq!(counts(1, &[0.0], Unbalance::General), (6, 6));
    assert_eq!(counts(2, &[0.0, 0.0], Unbalance::General), (36, 36));
}

/// The symmetry is found from the phasors, not assumed from the words
/// "balanced" or "unbalanced": an unbalance in phase A alone keeps the
/// B–C swap, and brute force agrees.
#[test]
fn a_symmetry_left_by_the_unbalance_is_found() {
    assert_eq!(counts(1, &[0.0], Unbalance::PhaseAOnly), (3, 3));
    assert_eq!(counts(2, &[0.0, 0.0], Unbalance::PhaseAOnly), (18, 18));
}

/// The search's best and every ranked objective against brute force with
/// full recomputation (relative 1e-12), at the max and the mean.
#[test]
fn search_equals_brute_force_recomputation() {
    for (angles, over) in [(&[0.0, 0.0, 0.0][..], Over::Max), (&[0.0, 40.0, 0.0][..], Over::Mean)] {
        let v = irregular(3, angles, Unbalance::None);
        let points = position_points(&v);
        let objective = |f: &[f64]| match over {
            Over::Max => f.iter().copied().fold(0.0, f64::max),
            Over::Mean => f.iter().sum::<f64>() / f.len() as f64,
        };
        let brute: Vec<f64> =
            all_arrangements(&v, &["c0", "c1", "c2"]).iter().map(|(_, d)| objective(&rms(d, &points))).collect();
        let best = brute.iter().copied().fold(f64::INFINITY, f64::min);
        let req = PhaseSearchDoc { over, top: 100, ..b_request(ids(3)) };
        let found = search(&v, &req, &SearchBudget::unlimited());
        assert_eq!(found.method, Method::Exhaustive);
        assert!((found.ranked[0].objective - best).abs() <= 1e-12 * best, "{} vs {best}", found.ranked[0].objective);
        for a in &found.ranked {
            let mut d = v.clone();
            for (c, phases) in &a.phases {
                let perm = phases.map(|p| PHASES.iter().position(|x| format!("{p:?}") == *x).unwrap());
                d = rephase(&d, c, perm);
            }
            let full = objective(&rms(&d, &points));
            assert!((a.objective - full).abs() <= 1e-12 * full, "{} vs {full}", a.objective);
        }
        // The revision is the best arrangement, ready to validate.
        let rev = serde_json::to_value(&found.revision).unwrap();
        let rev_objective = objective(&rms(&rev, &points));
        assert!((rev_objective - best).abs() <= 1e-12 * best);
        let as_built = objective(&rms(&v, &points));
        assert!((found.as_built.objective - as_built).abs() <= 1e-12 * as_built);
    }
}

#[test]
fn branch_and_bound_ranks_as_exhaustive_and_reports_its_gap() {
    let v = irregular(4, &[0.0, 10.0, 0.0, -20.0], Unbalance::None);
    let req = PhaseSearchDoc { top: 15, ..b_request(ids(4)) };
    let all = search(&v, &req, &SearchBudget::unlimited());
    assert_eq!(all.counting.distinct, 2 * 216);
    let forced = SearchBudget { exhaustive_limit: 0, ..SearchBudget::unlimited() };
    let bb = search(&v, &req, &forced);
    assert_eq!(bb.method, Method::BranchAndBound);
    assert!(bb.complete);
    assert_eq!(bb.ranked.len(), 15);
    for (x, y) in all.ranked.iter().zip(&bb.ranked) {
        assert_eq!(x.phases, y.phases);
        assert!((x.objective - y.objective).abs() <= 1e-12 * x.objective);
    }
    // Stopped early: the gap covers the distance to the true best.
    let points = all.points;
    let stopped =
        search(&v, &req, &SearchBudget { exhaustive_limit: 0, max_work: 20 * points, ..SearchBudget::unlimited() });
    assert!(!stopped.complete);
    let gap = stopped.optimality_gap.unwrap();
    assert!(stopped.ranked[0].objective - gap <= all.ranked[0].objective * (1.0 + 1e-12));
}

/// A vertical double circuit: x = ±5 m, conductors at 12, 20 and 28 m,
/// 1 kA, ±20 km long along y; the right side in the same order or
/// reversed (A at 28 m).
fn double_circuit(reversed: bool) -> Value {
    let mut conductors = Vec::new();
    for (side, x) in [("L", -5.0), ("R", 5.0)] {
        for (s, z) in [12.0, 20.0, 28.0].iter().enumerate() {
            let phase = if reversed && side == "R" { 2 - s } else { s };
            conductors.push(json!({
                "id": format!("{side}{z}"), "circuit": side, "phase": PHASES[phase], "radius_m": 0.015,
                "path": [[x, -20000.0, z], [x, 20000.0, z]], "continues": {"start": true, "end": true}
            }));
        }
    }
    json!({
        "frequency_hz": 50,
        "circuits": [{"id": "L", "kind": "three_phase", "current_a": 1000.0}, {"id": "R", "kind": "three_phase", "current_a": 1000.0}],
        "conductors": conductors,
        "positions": [{"id": "far", "at": [400.0, 0.0, 1.0]}]
    })
}

/// Local exponent −d ln B / d ln x at 1 m height, by a central difference.
fn exponent(v: &Value, x: f64) -> f64 {
    let h = 0.01;
    let b = rms(v, &[Point3::new(x * (1.0 - h), 0.0, 1.0), Point3::new(x * (1.0 + h), 0.0, 1.0)]);
    -(b[1].ln() - b[0].ln()) / ((1.0 + h).ln() - (1.0 - h).ln())
}

#[test]
fn double_circuit_falls_as_1_over_r2_same_order_and_1_over_r3_reversed() {
    let (same, reversed) = (double_circuit(false), double_circuit(true));
    for x in [200.0, 300.0, 400.0, 600.0, 800.0] {
        let (e2, e3) = (exponent(&same, x), exponent(&reversed, x));
        assert!((e2 - 2.0).abs() < 0.05, "same order at {x} m: exponent {e2}");
        assert!((e3 - 3.0).abs() < 0.05, "reversed order at {x} m: exponent {e3}");
    }
}

#[test]
fn search_picks_the_reversed_order_for_a_far_position() {
    let same = double_circuit(false);
    let found = search(&same, &b_request(vec!["L".into(), "R".into()]), &SearchBudget::unlimited());
    assert_eq!(found.counting.distinct, 6);
    // In the revision, the right conductor at 12 m carries what the left
    // one at 28 m does, and so on: the reversed order.
    let rev = serde_json::to_value(&found.revision).unwrap();
    let phase_of =
        |id: &str| rev["conductors"].as_array().unwrap().iter().find(|c| c["id"] == id).unwrap()["phase"].clone();
    for (l, r) in [("L28", "R12"), ("L20", "R20"), ("L12", "R28")] {
        assert_eq!(phase_of(l), phase_of(r), "{l} and {r}");
    }
    let reversed_b = rms(&double_circuit(true), &[Point3::new(400.0, 0.0, 1.0)])[0];
    assert!((found.ranked[0].objective - reversed_b).abs() <= 1e-9 * reversed_b);
}

/// A flat tray: two circuits of touching cables in one row, 0.10 m pitch
/// (x = 0 … 0.5 m), 50 m long, both drawn A, B, C from left to right.
fn flat_tray() -> Value {
    let conductors: Vec<Value> = (0..6)
        .map(|k| {
            let (circuit, s) = (if k < 3 { "T1" } else { "T2" }, k % 3);
            json!({"id": format!("{circuit}{}", PHASES[s]), "circuit": circuit, "phase": PHASES[s], "radius_m": 0.02,
                   "path": [[0.1 * k as f64, -25.0, 0.0], [0.1 * k as f64, 25.0, 0.0]], "continues": {"start": true, "end": true}})
        })
        .collect();
    json!({
        "frequency_hz": 50,
        "circuits": [{"id": "T1", "kind": "three_phase", "current_a": 1000.0}, {"id": "T2", "kind": "three_phase", "current_a": 1000.0}],
        "conductors": conductors,
        "positions": [{"id": "above", "at": [0.25, 0.0, 1.0]}]
    })
}

#[test]
fn flat_tray_mirrored_order_wins_one_metre_above_as_brute_force_says() {
    let v = flat_tray();
    let at = [Point3::new(0.25, 0.0, 1.0)];
    // Brute force over the six orders of the second circuit.
    let brute: Vec<(usize, f64)> = (0..6).map(|k| (k, rms(&rephase(&v, "T2", PERMS[k]), &at)[0])).collect();
    let (best_k, best_b) = brute.iter().copied().min_by(|a, b| a.1.total_cmp(&b.1)).unwrap();
    assert_eq!(PERMS[best_k], [2, 1, 0], "for this geometry the mirrored order (C, B, A) is the brute-force best");
    let found = search(&v, &b_request(vec!["T1".into(), "T2".into()]), &SearchBudget::unlimited());
    assert!((found.ranked[0].objective - best_b).abs() <= 1e-12 * best_b);
    let as_built = rms(&v, &at)[0];
    assert!(as_built > 3.0 * best_b, "as built {as_built} µT, mirrored {best_b} µT");
    let rev = serde_json::to_value(&found.revision).unwrap();
    assert!((rms(&rev, &at)[0] - best_b).abs() <= 1e-12 * best_b);
}

#[test]
fn requests_that_do_not_fit_the_site_are_refused_with_pointers() {
    let v = flat_tray();
    let site = site_of(&v);
    let doc = doc_of(&v);
    let req = PhaseSearchDoc {
        positions: Some(vec!["nowhere".into()]),
        top: 0,
        ..PhaseSearchDoc::for_circuits(vec!["T1".into(), "T1".into(), "X".into()])
    };
    let err = search_phases(&site, &doc, &req, None, &SearchBudget::unlimited()).unwrap_err();
    let text = format!("{err:?}");
    for needle in ["/circuits/1", "named twice", "/circuits/2", "no circuit 'X'", "/top", "/positions/0"] {
        assert!(text.contains(needle), "{needle} missing in {text}");
    }
    // The ratio needs a table; the site names none.
    let err =
        search_phases(&site, &doc, &PhaseSearchDoc::for_circuits(vec!["T1".into()]), None, &SearchBudget::unlimited())
            .unwrap_err();
    assert!(format!("{err:?}").contains("/table"));
}

/// The ratio objective against brute force through the engine: the best
/// of the six orders of the second circuit, its B over the table's level
/// at 50 Hz (the table's own band, read through `level_ut`).
#[test]
fn ratio_against_a_table_is_the_brute_force_b_over_its_level() {
    let v = flat_tray();
    let at = [Point3::new(0.25, 0.0, 1.0)];
    let table = fluxbound_core::limits::builtin_table("icnirp-2010-occupational").unwrap();
    let level = table.level_ut(50.0).unwrap();
    let best_b = (0..6).map(|k| rms(&rephase(&v, "T2", PERMS[k]), &at)[0]).fold(f64::INFINITY, f64::min);
    let req = PhaseSearchDoc::for_circuits(vec!["T1".into(), "T2".into()]);
    let found = search_phases(&site_of(&v), &doc_of(&v), &req, Some(table), &SearchBudget::unlimited()).unwrap();
    let expected = best_b / level;
    assert!(
        (found.ranked[0].objective - expected).abs() <= 1e-12 * expected,
        "{} vs {expected}",
        found.ranked[0].objective
    );
    assert_eq!(found.table.unwrap().id, "icnirp-2010-occupational");
}

/// Branch and bound ranks the as-built arrangement only where the
/// ranking reaches it; beyond its top it says nothing rather than a wrong
/// rank.
#[test]
fn the_as_built_rank_is_given_only_where_it_is_known() {
    let v = irregular(4, &[0.0, 10.0, 0.0, -20.0], Unbalance::None);
    let all = search(&v, &PhaseSearchDoc { top: 100, ..b_request(ids(4)) }, &SearchBudget::unlimited());
    let true_rank = all.as_built.rank.unwrap();
    // Exhaustive: the rank counts the strictly better of all 432.
    let points = position_points(&v);
    let better = all_arrangements(&v, &["c0", "c1", "c2", "c3"])
        .iter()
        .map(|(_, d)| rms(d, &points).into_iter().fold(0.0, f64::max))
        .filter(|o| *o < all.as_built.objective * (1.0 - 1e-12))
        .count();
    // 6^4 raw arrangements, 3 of each distinct field (cyclic relabellings).
    assert_eq!(true_rank as usize, better / 3 + 1);
    let forced = SearchBudget { exhaustive_limit: 0, ..SearchBudget::unlimited() };
    let short = search(&v, &PhaseSearchDoc { top: 1, ..b_request(ids(4)) }, &forced);
    assert_eq!(short.as_built.rank, if true_rank == 1 { Some(1) } else { None });
    let long = search(&v, &PhaseSearchDoc { top: 100, ..b_request(ids(4)) }, &forced);
    assert_eq!(long.as_built.rank, (true_rank <= 100).then_some(true_rank));
}

#[test]
fn areas_over_the_grid_budget_are_refused_and_empty_areas_are_left_out_in_words() {
    let mut v = flat_tray();
    v["areas"] = json!([{"id": "hall", "polygon": [[-50.0, -50.0], [50.0, -50.0], [50.0, 50.0], [-50.0, 50.0]], "height_m": 1.0, "spacing_m": 0.01}]);
    let budget = SearchBudget { max_grid_cells: 1_000_000, ..SearchBudget::unlimited() };
    let err = search_phases(&site_of(&v), &doc_of(&v), &b_request(vec!["T1".into()]), None, &budget).unwrap_err();
    let text = format!("{err:?}");
    assert!(text.contains("/areas") && text.contains("grid cells"), "{text}");
    // A sliver thinner than its spacing holds no node: left out, said why.
    v["areas"] = json!([{"id": "sliver", "polygon": [[3.0, 0.0], [3.5, 0.0], [3.5, 0.001], [3.0, 0.001]], "height_m": 1.0, "spacing_m": 1.0}]);
    let found = search(&v, &b_request(vec!["T1".into(), "T2".into()]), &SearchBudget::unlimited());
    assert!(
        found.left_out.iter().any(|l| l.id == "sliver" && l.reason.contains("no grid node")),
        "{:?}",
        found.left_out
    );
    assert!(found.ranked[0].objective.is_finite());
}
