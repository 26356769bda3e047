//! Agreement with the outside library magpylib on invented configurations.
//! Source: tests/conformance/magpylib/ (README there names the version, the
//! tolerance and the known differences). Tolerance: relative 1e-9 on the
//! resultant and maximum, and on each component relative to the resultant;
//! magpylib's µ0 (scipy's CODATA value) differs from 4π×10⁻⁷ by 1.3e-10.

use super::*;
use fluxbound_core::field::{maximum_ut, resultant_ut};
use serde::Deserialize;

#[derive(Deserialize)]
struct Fixture {
    source: String,
    cases: Vec<Case>,
}

#[derive(Deserialize)]
struct Case {
    name: String,
    conductors: Vec<Conductor>,
    points: Vec<[f64; 3]>,
    expected: Vec<Expected>,
}

#[derive(Deserialize)]
struct Conductor {
    path: Vec<[f64; 3]>,
    current: Current,
}

#[derive(Deserialize)]
struct Current {
    rms_a: f64,
    phase_deg: f64,
}

#[derive(Deserialize)]
struct Expected {
    re_ut: [f64; 3],
    im_ut: [f64; 3],
    resultant_ut: f64,
    maximum_ut: f64,
}

const TOLERANCE: f64 = 1e-9;

#[test]
fn the_engine_agrees_with_magpylib_to_one_part_in_a_billion_on_every_fixture_point() {
    let text = include_str!("../../conformance/magpylib/fixture.json");
    let fixture: Fixture = serde_json::from_str(text).expect("fixture parses");
    assert!(fixture.cases.len() >= 20, "at least 20 configurations");
    let (mut worst, mut worst_at, mut count) = (0.0_f64, String::new(), 0usize);
    for case in &fixture.cases {
        let wires: Vec<Wire> =
            case.conductors.iter().map(|c| wire(&c.path, c.current.rms_a, c.current.phase_deg)).collect();
        let points: Vec<Point3<f64>> = case.points.iter().map(|p| Point3::new(p[0], p[1], p[2])).collect();
        let got = field_at(&wires, &points);
        assert_eq!(got.len(), case.expected.len(), "{}", case.name);
        for (j, (b, e)) in got.iter().zip(&case.expected).enumerate() {
            let mut errs = vec![rel(resultant_ut(b), e.resultant_ut), rel(maximum_ut(b), e.maximum_ut)];
            for d in 0..3 {
                errs.push((b[d].re - e.re_ut[d]).abs() / e.resultant_ut);
                errs.push((b[d].im - e.im_ut[d]).abs() / e.resultant_ut);
            }
            let err = errs.into_iter().fold(0.0, f64::max);
            assert!(err < TOLERANCE, "{} point {j}: relative error {err:e}", case.name);
            if err > worst {
                worst = err;
                worst_at = format!("{} point {j}", case.name);
            }
            count += 1;
        }
    }
    eprintln!(
        "magpylib conformance ({}): {count} points, worst relative error {worst:.2e} at {worst_at}",
        fixture.source
    );
}
