//! Field-engine throughput in segment–point pairs per second.
//!
//! Run: `cargo bench --bench field`. divan reports `itemps` = pairs/s.
//! The large case is the target: 1,000 segments × 100,000 points,
//! resultant at one frequency, all cores. `bench/kernel/run.sh` runs the same
//! case beside a C reference and the CPU's sqrt + division ceiling.

use divan::counter::ItemsCount;
use divan::{Bencher, black_box};
use fluxbound_core::field::{self, Excitation, Filament, Filaments, SpectralLine, Variant};
use nalgebra::Point3;
use num_complex::Complex64;

fn main() {
    eprintln!("kernel variant: {}, threads: {}", Variant::detect().name(), rayon::current_num_threads());
    divan::main();
}

/// `conductors` polylines of `segments_each` segments: wavy horizontal runs
/// 0.2 m apart at 2.5 m height (an invented cable-tray layout).
fn layout(conductors: usize, segments_each: usize) -> (Filaments, Excitation) {
    let fil: Vec<Filament> = (0..conductors)
        .map(|k| Filament {
            path: (0..=segments_each)
                .map(|j| {
                    let s = j as f64 / segments_each as f64;
                    Point3::new(40.0 * s, 0.2 * k as f64 + 0.05 * (7.0 * s).sin(), 2.5 + 0.1 * (3.0 * s).cos())
                })
                .collect(),
            radius_m: 0.01,
        })
        .collect();
    let currents_a = (0..conductors).map(|k| Complex64::from_polar(400.0, (-120.0 * k as f64).to_radians())).collect();
    let exc = Excitation { lines: vec![SpectralLine { order: 1, frequency_hz: 50.0, currents_a }] };
    (Filaments::new(&fil), exc)
}

/// A square grid of `n` points at 1 m height under the run.
fn grid(n: usize) -> Vec<Point3<f64>> {
    grid_at(n, 1.0)
}

/// A square grid of `n` points at height `z_m`.
fn grid_at(n: usize, z_m: f64) -> Vec<Point3<f64>> {
    let side = (n as f64).sqrt().ceil() as usize;
    (0..n)
        .map(|i| {
            Point3::new(
                -5.0 + 50.0 * (i % side) as f64 / side as f64,
                -10.0 + 20.0 * (i / side) as f64 / side as f64,
                z_m,
            )
        })
        .collect()
}

fn run(bencher: Bencher, conductors: usize, segments_each: usize, points: usize) {
    run_variant(bencher, Variant::detect(), conductors, segments_each, points)
}

fn run_variant(bencher: Bencher, variant: Variant, conductors: usize, segments_each: usize, points: usize) {
    run_points(bencher, variant, conductors, segments_each, grid(points))
}

fn run_points(bencher: Bencher, variant: Variant, conductors: usize, segments_each: usize, pts: Vec<Point3<f64>>) {
    let (fil, exc) = layout(conductors, segments_each);
    let pairs = (fil.segment_count() * pts.len()) as u64;
    bencher.counter(ItemsCount::new(pairs)).bench(|| {
        let set = field::evaluate_using(variant, black_box(&fil), black_box(&pts), black_box(&exc));
        black_box(field::resultant_ut(&set.at(0)[0]))
    });
}

/// The target case: 1,000 segments (10 conductors × 100) × 100,000 points.
#[divan::bench(sample_count = 10, sample_size = 1)]
fn large_1000_segments_100k_points(bencher: Bencher) {
    run(bencher, 10, 100, 100_000);
}

/// The target case with the grid in the conductors' own plane (2.5 m, the
/// tray's middle height): the chunks that straddle the tray cannot skip the
/// inside test, as near a real installation.
#[divan::bench(sample_count = 10, sample_size = 1)]
fn large_grid_through_the_conductors(bencher: Bencher) {
    run_points(bencher, Variant::detect(), 10, 100, grid_at(100_000, 2.5));
}

/// A small interactive case: one three-phase run of 3 × 4 segments × 1,000 points.
#[divan::bench(sample_count = 100)]
fn small_12_segments_1k_points(bencher: Bencher) {
    run(bencher, 3, 4, 1_000);
}

/// Influence matrix of the large layout on 10,000 points (stores G).
#[divan::bench(sample_count = 10, sample_size = 1)]
fn influence_1000_segments_10k_points(bencher: Bencher) {
    let (fil, _) = layout(10, 100);
    let pts = grid(10_000);
    let pairs = (fil.segment_count() * pts.len()) as u64;
    bencher.counter(ItemsCount::new(pairs)).bench(|| black_box(field::influence_matrix(&fil, &pts)));
}

/// The target case with each narrower variant forced, to show what runtime
/// dispatch buys (an unsupported variant falls back to the baseline).
#[divan::bench(sample_count = 5, sample_size = 1, args = ["baseline", "avx2"])]
fn large_forced_variant(bencher: Bencher, name: &str) {
    let v = if name == "avx2" { Variant::Avx2 } else { Variant::Baseline };
    run_variant(bencher, v, 10, 100, 100_000);
}
