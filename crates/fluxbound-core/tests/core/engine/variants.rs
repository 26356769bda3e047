//! Runtime dispatch must not change results: every kernel variant the CPU
//! runs gives bit-identical phasors (no fused multiply–add anywhere; IEEE
//! division and square root are correctly rounded).

use super::*;
use fluxbound_core::field::{Variant, evaluate_using};

#[test]
fn every_kernel_variant_gives_bit_identical_results() {
    let paths: Vec<Vec<Point3<f64>>> = (0..5)
        .map(|k| {
            (0..40).map(|j| Point3::new(j as f64 * 0.3, (k as f64 * 0.7 + j as f64).sin(), 0.1 * k as f64)).collect()
        })
        .collect();
    let fil = Filaments::new(&paths.iter().map(|p| Filament { path: p.clone(), radius_m: 0.01 }).collect::<Vec<_>>());
    let currents_a = (0..5).map(|k| Complex64::from_polar(100.0 + k as f64, k as f64)).collect();
    let exc = Excitation { lines: vec![SpectralLine { order: 1, frequency_hz: 60.0, currents_a }] };
    let pts: Vec<Point3<f64>> =
        (0..1000).map(|i| Point3::new((i % 37) as f64 * 0.4 - 2.0, (i / 37) as f64 * 0.3 - 4.0, 1.3)).collect();
    let reference = evaluate_using(Variant::Baseline, &fil, &pts, &exc);
    let available = Variant::available();
    eprintln!("variants on this CPU: {:?}", available);
    for v in available {
        assert_eq!(evaluate_using(v, &fil, &pts, &exc), reference, "{}", v.name());
    }
}
