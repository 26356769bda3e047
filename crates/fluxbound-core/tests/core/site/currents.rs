//! The phase-current conventions stated in `crates/fluxbound-core/src/site/currents.rs`,
//! checked against hand arithmetic.
//!
//! Tolerance: 1e-9 A absolute on currents of at most a few hundred amperes.
//! The only error source is f64 rounding in degree→radian conversion and
//! sin/cos (relative ~1e-15), far below it.

use fluxbound_core::site::wire::Phase;
use fluxbound_core::site::{Site, parse_site};
use num_complex::Complex64;
use serde_json::{Value, json};

const TOL_A: f64 = 1e-9;

/// √3/2, for the components of phasors at multiples of 30°.
fn half_sqrt3() -> f64 {
    3f64.sqrt() / 2.0
}

/// A 50 Hz site with the given circuits and conductors.
fn site(circuits: Value, conductors: Value) -> Site {
    let doc = json!({ "frequency_hz": 50, "circuits": circuits, "conductors": conductors });
    parse_site(&doc.to_string()).unwrap_or_else(|p| panic!("test site is invalid: {p:#?}"))
}

/// A 10 m straight conductor on `circuit`'s `phase`; `y` keeps them apart.
fn on_phase(id: &str, circuit: &str, phase: &str, y: f64) -> Value {
    json!({ "id": id, "path": [[0, y, 1], [10, y, 1]], "radius_m": 0.01, "circuit": circuit, "phase": phase })
}

/// One three-phase circuit `circuit` (fields merged into a default 100 A
/// positive-sequence circuit) with a conductor on each of A, B, C and N.
fn three_phase(circuit: Value) -> Site {
    let mut c = json!({ "id": "feeder", "kind": "three_phase", "current_a": 100 });
    c.as_object_mut().unwrap().extend(circuit.as_object().unwrap().clone());
    let conductors: Vec<Value> = ["A", "B", "C", "N"]
        .iter()
        .enumerate()
        .map(|(i, p)| on_phase(&p.to_lowercase(), "feeder", p, 0.3 * i as f64))
        .collect();
    site(json!([c]), json!(conductors))
}

fn phase(site: &Site, phase: Phase, order: u32) -> Complex64 {
    site.circuits()[0].phase_current_a(phase, order, 1.0)
}

#[track_caller]
fn assert_close(actual: Complex64, expected: Complex64) {
    assert!((actual - expected).norm() < TOL_A, "got {actual}, expected {expected} (tolerance {TOL_A} A)");
}

#[test]
fn positive_sequence_puts_b_120_degrees_behind_a_and_c_120_degrees_ahead() {
    let s = three_phase(json!({ "angle_deg": 30 }));
    let k = 100.0 * half_sqrt3();
    // Derived: A = 100∠30° = (100·cos 30°, 100·sin 30°) = (50√3, 50);
    // B = 100∠(30° − 120°) = 100∠−90° = (0, −100);
    // C = 100∠(30° + 120°) = 100∠150° = (−50√3, 50).
    assert_close(phase(&s, Phase::A, 1), Complex64::new(k, 50.0));
    assert_close(phase(&s, Phase::B, 1), Complex64::new(0.0, -100.0));
    assert_close(phase(&s, Phase::C, 1), Complex64::new(-k, 50.0));
}

#[test]
fn negative_sequence_swaps_phases_b_and_c() {
    let s = three_phase(json!({ "angle_deg": 30, "sequence": "negative" }));
    let k = 100.0 * half_sqrt3();
    // Derived: A = 100∠30° = (50√3, 50); B = 100∠150° = (−50√3, 50);
    // C = 100∠−90° = (0, −100).
    assert_close(phase(&s, Phase::A, 1), Complex64::new(k, 50.0));
    assert_close(phase(&s, Phase::B, 1), Complex64::new(-k, 50.0));
    assert_close(phase(&s, Phase::C, 1), Complex64::new(0.0, -100.0));
}

#[test]
fn a_balanced_set_leaves_no_current_in_the_neutral() {
    for sequence in ["positive", "negative"] {
        let s = three_phase(json!({ "angle_deg": 17, "sequence": sequence }));
        let i_n = phase(&s, Phase::N, 1);
        // Derived: 1 + e^(−j120°) + e^(j120°) = 1 − 1/2 − 1/2 + j(−√3/2 + √3/2) = 0.
        assert!(i_n.norm() < 1e-9 * 100.0, "|I_N| = {} A for a balanced {sequence} set", i_n.norm());
    }
}

#[test]
fn overriding_one_phase_current_returns_the_imbalance_through_the_neutral() {
    let s = three_phase(json!({ "phases": { "C": { "current_a": 50 } } }));
    let (a, b, c) = (phase(&s, Phase::A, 1), phase(&s, Phase::B, 1), phase(&s, Phase::C, 1));
    let i_n = phase(&s, Phase::N, 1);
    assert_close(i_n, -(a + b + c));
    // Derived: the balanced 100 A set sums to 0, so I_A + I_B + I_C
    // = −50∠120° and I_N = 50∠120° = (−25, 25√3); |I_N| = 50 A.
    assert_close(i_n, Complex64::new(-25.0, 50.0 * half_sqrt3()));
    assert!((i_n.norm() - 50.0).abs() < TOL_A, "|I_N| = {} A", i_n.norm());
}

#[test]
fn a_phase_angle_override_is_absolute_not_relative_to_the_circuit_angle() {
    let s = three_phase(json!({ "angle_deg": 30, "phases": { "B": { "angle_deg": 180 } } }));
    // Derived: B = 100∠180° = (−100, 0), not 100∠(30° + 180°).
    assert_close(phase(&s, Phase::B, 1), Complex64::new(-100.0, 0.0));
    assert_close(phase(&s, Phase::C, 1), Complex64::new(-100.0 * half_sqrt3(), 50.0));
}

#[test]
fn third_harmonics_of_a_balanced_set_add_up_in_the_neutral() {
    let s = three_phase(json!({ "harmonics": [{ "order": 3, "percent": 10 }] }));
    // Derived: each phase carries 10 % · 100 A = 10 A at angle 3·φ_p, with
    // φ = 0°, −120°, 120° → 0°, −360°, 360°: all in phase. I_N = −30 A, an
    // RMS of 3 × 10 % of I.
    for p in [Phase::A, Phase::B, Phase::C] {
        assert_close(phase(&s, p, 3), Complex64::new(10.0, 0.0));
    }
    let i_n = phase(&s, Phase::N, 3);
    assert_close(i_n, Complex64::new(-30.0, 0.0));
    assert!((i_n.norm() - 3.0 * 0.10 * 100.0).abs() < TOL_A, "|I_N,3| = {} A", i_n.norm());
}

#[test]
fn fifth_harmonics_of_a_balanced_set_cancel_in_the_neutral() {
    let s = three_phase(json!({ "harmonics": [{ "order": 5, "percent": 5 }] }));
    // Derived: 5 A at 5·φ_p = 0°, −600° ≡ 120°, 600° ≡ −120°: a balanced
    // negative-sequence set, which sums to zero.
    assert_close(phase(&s, Phase::B, 5), Complex64::new(-2.5, 5.0 * half_sqrt3()));
    let i_n = phase(&s, Phase::N, 5);
    assert!(i_n.norm() < 1e-9 * 100.0, "|I_N,5| = {} A", i_n.norm());
}

#[test]
fn a_harmonic_angle_is_its_own_angle_plus_the_order_times_the_fundamental_angle() {
    let s = three_phase(json!({ "angle_deg": 30, "harmonics": [{ "order": 3, "percent": 10, "angle_deg": 90 }] }));
    // Derived: A₃ = 10 A ∠(90° + 3·30°) = 10∠180° = (−10, 0).
    assert_close(phase(&s, Phase::A, 3), Complex64::new(-10.0, 0.0));
}

#[test]
fn an_order_absent_from_the_circuit_carries_no_current() {
    let s = three_phase(json!({ "harmonics": [{ "order": 3, "percent": 10 }] }));
    assert!(phase(&s, Phase::A, 7).norm() < TOL_A);
}

#[test]
fn the_neutral_of_a_single_phase_circuit_returns_the_phase_current() {
    let s = site(
        json!([{ "id": "lamp", "kind": "single_phase", "current_a": 20, "angle_deg": 30 }]),
        json!([on_phase("l", "lamp", "A", 0.0), on_phase("n", "lamp", "N", 0.1)]),
    );
    let (a, n) = (phase(&s, Phase::A, 1), phase(&s, Phase::N, 1));
    assert_close(n, -a);
    // Derived: −(20∠30°) = 20∠210° = (−20·√3/2, −20·1/2) = (−10√3, −10).
    assert_close(n, Complex64::new(-20.0 * half_sqrt3(), -10.0));
}

#[test]
fn share_scales_the_conductor_current() {
    let mut half = on_phase("a1", "feeder", "A", 0.0);
    half["share"] = json!(0.5);
    let s = site(
        json!([{ "id": "feeder", "kind": "three_phase", "current_a": 100 }]),
        json!([half, on_phase("a2", "feeder", "A", 0.1)]),
    );
    let currents = &s.excitation().lines[0].currents_a;
    // Derived: 0.5 · 100∠0° = 50 A; the second conductor has the default share 1.
    assert_close(currents[0], Complex64::new(50.0, 0.0));
    assert_close(currents[1], Complex64::new(100.0, 0.0));
}

/// Two circuits with harmonics listed out of order and overlapping, and an
/// explicitly driven conductor.
fn mixed_site() -> Site {
    site(
        json!([
            { "id": "feeder", "kind": "three_phase", "current_a": 100,
              "harmonics": [{ "order": 5, "percent": 5 }, { "order": 3, "percent": 10 }] },
            { "id": "drive", "kind": "three_phase", "current_a": 40,
              "harmonics": [{ "order": 11, "percent": 4 }, { "order": 3, "percent": 2 }] }
        ]),
        json!([
            on_phase("fa", "feeder", "A", 0.0),
            on_phase("fn", "feeder", "N", 0.1),
            on_phase("da", "drive", "A", 0.2),
            { "id": "earth", "path": [[0, -1, 0], [10, -1, 0]], "radius_m": 0.005,
              "current": { "rms_a": 5, "phase_deg": 30 } }
        ]),
    )
}

#[test]
fn the_excitation_lists_orders_ascending_from_the_fundamental_with_one_current_per_conductor() {
    let s = mixed_site();
    let excitation = s.excitation();
    let orders: Vec<u32> = excitation.lines.iter().map(|l| l.order).collect();
    assert_eq!(orders, [1, 3, 5, 11]);
    assert_eq!(s.orders(), orders);
    for line in &excitation.lines {
        assert_eq!(line.currents_a.len(), s.conductors().len(), "order {}", line.order);
        // Derived: 50 Hz · order; products of small integers are exact in
        // f64, the tolerance only guards against a changed formula.
        assert!((line.frequency_hz - 50.0 * f64::from(line.order)).abs() < 1e-9);
    }
}

#[test]
fn the_fundamental_is_order_1_even_without_harmonics() {
    let s = three_phase(json!({}));
    let orders: Vec<u32> = s.excitation().lines.iter().map(|l| l.order).collect();
    assert_eq!(orders, [1]);
}

#[test]
fn explicit_conductor_currents_appear_only_at_the_fundamental() {
    let s = mixed_site();
    let excitation = s.excitation();
    let earth = 3;
    // Derived: 5∠30° = (5·√3/2, 5·1/2) = (2.5√3, 2.5).
    assert_close(excitation.lines[0].currents_a[earth], Complex64::new(5.0 * half_sqrt3(), 2.5));
    for line in &excitation.lines[1..] {
        assert!(line.currents_a[earth].norm() < TOL_A, "order {}: {}", line.order, line.currents_a[earth]);
    }
}

#[test]
fn scaling_a_circuit_scales_its_conductors_but_never_an_explicit_current() {
    let s = mixed_site();
    let scaled = s.excitation_scaled(&[2.0]);
    let fundamental = &scaled.lines[0].currents_a;
    // Derived: feeder ×2 → 200∠0°; drive has no scale entry → ×1 → 40∠0°;
    // the explicit 5∠30° is unchanged.
    assert_close(fundamental[0], Complex64::new(200.0, 0.0));
    assert_close(fundamental[2], Complex64::new(40.0, 0.0));
    assert_close(fundamental[3], Complex64::new(5.0 * half_sqrt3(), 2.5));
    // Derived: feeder's 3rd-harmonic neutral is −3 × (10 % × 200 A)∠0° = (−60, 0).
    let third = scaled.lines.iter().find(|l| l.order == 3).unwrap();
    assert_close(third.currents_a[1], Complex64::new(-60.0, 0.0));
}
