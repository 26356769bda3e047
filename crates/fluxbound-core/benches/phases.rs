//! Phase-arrangement search: the whole space of 6 same-source three-phase
//! circuits (7,776 distinct arrangements) over 10,000 points, from one
//! influence-matrix pass, and how the time grows with circuits and points.
//!
//! Run: `cargo bench --bench phases`. The site is invented: `n` circuits of
//! three cables each, 20 m long (10 segments), in two trays 0.3 m apart at
//! 2.4 m height, and one area of `points` grid nodes at 1 m height below
//! them. Every case includes the influence matrix and the block building,
//! i.e. the whole `search_phases` call.

use divan::{Bencher, black_box};
use fluxbound_core::mitigate::phases::{Measure, PhaseSearchDoc, SearchBudget, search_phases};
use fluxbound_core::site::validate_site;
use fluxbound_core::site::wire::SiteDoc;
use serde_json::json;

fn main() {
    divan::main();
}

/// `circuits` circuits over an area of about `points` grid nodes.
fn site(circuits: usize, points: usize) -> SiteDoc {
    let mut cs = Vec::new();
    let mut conductors = Vec::new();
    for i in 0..circuits {
        cs.push(json!({"id": format!("c{i}"), "kind": "three_phase", "current_a": 800.0}));
        for (s, phase) in ["A", "B", "C"].iter().enumerate() {
            let x = 0.1 * (3 * (i / 2) + s) as f64;
            let z = 2.4 + 0.3 * (i % 2) as f64;
            let path: Vec<[f64; 3]> = (0..=10).map(|j| [x, 2.0 * j as f64, z]).collect();
            conductors.push(json!({"id": format!("c{i}{phase}"), "circuit": format!("c{i}"), "phase": phase,
                "radius_m": 0.015, "path": path, "continues": {"start": true, "end": true}}));
        }
    }
    // A square of side s with spacing d holds about (s/d)^2 nodes.
    let side = (points as f64).sqrt();
    let spacing = 10.0 / side;
    let area = json!({"id": "floor", "polygon": [[-3.0, 5.0], [7.0, 5.0], [7.0, 15.0], [-3.0, 15.0]],
                      "height_m": 1.0, "spacing_m": spacing});
    serde_json::from_value(json!({"frequency_hz": 50, "circuits": cs, "conductors": conductors, "areas": [area]}))
        .unwrap()
}

fn run(bencher: Bencher, circuits: usize, points: usize) {
    let doc = site(circuits, points);
    let site = validate_site(&doc).unwrap();
    let req = PhaseSearchDoc {
        measure: Measure::BUt,
        ..PhaseSearchDoc::for_circuits((0..circuits).map(|i| format!("c{i}")).collect())
    };
    let budget = SearchBudget::unlimited();
    bencher.bench(|| search_phases(black_box(&site), &doc, &req, None, &budget).unwrap());
}

/// The target: 6 circuits, 7,776 arrangements, 10,000 points.
#[divan::bench(sample_count = 10)]
fn six_circuits_10k_points(bencher: Bencher) {
    run(bencher, 6, 10_000);
}

/// Growth with circuits at 10,000 points (36, 216, 1,296, 7,776, 46,656).
#[divan::bench(args = [3, 4, 5, 6, 7], sample_count = 5)]
fn circuits_at_10k_points(bencher: Bencher, circuits: usize) {
    run(bencher, circuits, 10_000);
}

/// Growth with points at 6 circuits.
#[divan::bench(args = [1_000, 10_000, 40_000], sample_count = 5)]
fn points_at_6_circuits(bencher: Bencher, points: usize) {
    run(bencher, 6, points);
}
