//! Surveys: synthetic measurements made from the model (an independent path:
//! the streamed field engine, checked against closed forms and magpylib in
//! tests/core/engine), hand arithmetic for the extrapolation, and CSV import.

mod csv_import;
mod status;

use fluxbound_core::field::{self, Filament, Filaments};
use fluxbound_core::limits::builtin_table;
use fluxbound_core::site::{CircuitLoad, Site, parse_site};
use fluxbound_core::survey::lm;
use fluxbound_core::survey::{FitStatus, analyse, validate_survey, wire::SurveyDoc};
use nalgebra::Point3;
use rand::{RngExt, SeedableRng};
use serde_json::{Value, json};

const L: f64 = 10_000.0;

/// Two single-phase long wires 20 m apart (circuits "west" and "east"),
/// and optionally a third, tightly bundled go-and-return pair 5 km away.
fn two_wire_site(with_far_pair: bool) -> Site {
    let mut circuits = vec![
        json!({"id": "west", "kind": "single_phase", "current_a": 800, "rated_current_a": 1200}),
        json!({"id": "east", "kind": "single_phase", "current_a": 500, "rated_current_a": 900}),
    ];
    let mut conductors = vec![
        json!({"id": "w", "circuit": "west", "phase": "A", "radius_m": 0.01, "path": [[-10.0, -L, 2.0], [-10.0, L, 2.0]]}),
        json!({"id": "e", "circuit": "east", "phase": "A", "radius_m": 0.01, "path": [[10.0, -L, 2.0], [10.0, L, 2.0]]}),
    ];
    if with_far_pair {
        circuits.push(json!({"id": "far", "kind": "single_phase", "current_a": 100, "rated_current_a": 100}));
        conductors.push(json!({"id": "far-go", "circuit": "far", "phase": "A", "radius_m": 0.005, "path": [[5000.0, 0.0, 0.0], [5001.0, 0.0, 0.0]]}));
        conductors.push(json!({"id": "far-ret", "circuit": "far", "phase": "N", "radius_m": 0.005, "path": [[5001.0, 0.01, 0.0], [5000.0, 0.01, 0.0]]}));
    }
    parse_site(
        &json!({"name": "two wires", "frequency_hz": 50, "circuits": circuits, "conductors": conductors}).to_string(),
    )
    .unwrap()
}

fn points() -> Vec<[f64; 3]> {
    let mut p = Vec::new();
    for k in 0..12 {
        let x = -16.0 + 32.0 * k as f64 / 11.0;
        p.push([x, 0.0, 1.0]);
        p.push([x, 3.0, 0.5]);
    }
    p
}

/// Measurements from the model with the circuits at `true_scale` × their
/// stated currents, each multiplied by (1 + noise).
fn synthetic(site: &Site, stated_a: &[f64], true_scale: &[f64], noise: &[f64]) -> Vec<Value> {
    let fil = Filaments::new(
        &site.conductors().iter().map(|c| Filament { path: c.path.clone(), radius_m: c.radius_m }).collect::<Vec<_>>(),
    );
    let loads: Vec<CircuitLoad> = stated_a.iter().zip(true_scale).map(|(a, s)| CircuitLoad::CurrentA(a * s)).collect();
    let exc = site.excitation_at(&loads);
    let pts: Vec<Point3<f64>> = points().iter().map(|p| Point3::new(p[0], p[1], p[2])).collect();
    let set = field::evaluate(&fil, &pts, &exc);
    (0..pts.len())
        .map(|i| json!({"id": format!("m{i}"), "at": points()[i], "resultant_ut": field::total_resultant_ut(set.at(i)) * (1.0 + noise[i])}))
        .collect()
}

fn survey_doc(stated: &[(&str, f64)], measurements: Vec<Value>, meter_percent: f64) -> SurveyDoc {
    let loads: Vec<Value> = stated.iter().map(|(c, a)| json!({"circuit": c, "current_a": a})).collect();
    serde_json::from_value(json!({
        "measured_at": "2026-11-20T09:40:00Z",
        "meter": {"expanded_uncertainty_percent": meter_percent},
        "loads": loads,
        "points": measurements
    }))
    .unwrap()
}

fn tables() -> Vec<fluxbound_core::limits::ReferenceTable> {
    vec![builtin_table("icnirp-2010-occupational").unwrap().clone()]
}

#[test]
fn with_no_noise_the_load_fit_recovers_the_true_scale_factors_to_one_part_in_a_billion() {
    let site = two_wire_site(false);
    let stated = [("west", 700.0), ("east", 450.0)];
    let m = synthetic(&site, &[700.0, 450.0], &[0.8, 1.3], &[0.0; 24]);
    let survey = validate_survey(&survey_doc(&stated, m, 6.0), &site).unwrap();
    let a = analyse(&survey, &tables(), fluxbound_core::assess::ReviewFraction::DEFAULT).unwrap();
    let f = &a.load_fit;
    assert!(f.converged, "{f:?}");
    for (c, truth) in f.circuits.iter().zip([0.8, 1.3]) {
        assert_eq!(c.status, FitStatus::Fitted);
        assert!((c.scale.unwrap() - truth).abs() < 1e-9, "{}: {:?}", c.circuit, c.scale);
    }
    assert!(f.residual_rms_relative < 1e-10);
}

#[test]
fn with_seeded_noise_the_fit_recovers_the_factors_within_four_standard_errors() {
    let site = two_wire_site(false);
    let stated = [("west", 700.0), ("east", 450.0)];
    // Gaussian-ish noise of 3 % standard deviation (sum of 12 uniforms, seeded),
    // matching a meter of ±6 % expanded (k = 2).
    let mut rng = rand::rngs::StdRng::seed_from_u64(20261120);
    let noise: Vec<f64> = (0..24).map(|_| 0.03 * ((0..12).map(|_| rng.random::<f64>()).sum::<f64>() - 6.0)).collect();
    let m = synthetic(&site, &[700.0, 450.0], &[0.8, 1.3], &noise);
    let survey = validate_survey(&survey_doc(&stated, m, 6.0), &site).unwrap();
    let f = analyse(&survey, &tables(), fluxbound_core::assess::ReviewFraction::DEFAULT).unwrap().load_fit;
    for (c, truth) in f.circuits.iter().zip([0.8, 1.3]) {
        let se = c.scale_std_error.unwrap();
        assert!(se > 0.0 && se < 0.1, "{se}");
        assert!((c.scale.unwrap() - truth).abs() < 4.0 * se, "{}: {:?} ± {se}", c.circuit, c.scale);
    }
    let chi2 = f.reduced_chi2.unwrap();
    assert!(chi2 > 0.3 && chi2 < 3.0, "the scatter matches the stated meter: χ²/dof = {chi2}");
}

#[test]
fn a_circuit_with_no_sensitivity_at_any_point_is_reported_as_unidentifiable_not_guessed() {
    let site = two_wire_site(true);
    let stated = [("west", 700.0), ("east", 450.0), ("far", 100.0)];
    let m = synthetic(&site, &[700.0, 450.0, 100.0], &[1.0, 1.0, 1.0], &[0.0; 24]);
    let survey = validate_survey(&survey_doc(&stated, m, 6.0), &site).unwrap();
    let f = analyse(&survey, &tables(), fluxbound_core::assess::ReviewFraction::DEFAULT).unwrap().load_fit;
    let far = f.circuits.iter().find(|c| c.circuit == "far").unwrap();
    assert_eq!(far.status, FitStatus::Unidentifiable);
    assert_eq!(far.scale, None);
    assert!(f.notes.iter().any(|n| n.contains("'far'") && n.contains("not estimated")));
    assert!(f.circuits.iter().filter(|c| c.circuit != "far").all(|c| (c.scale.unwrap() - 1.0).abs() < 1e-9));
}

#[test]
fn extrapolating_a_single_circuit_site_multiplies_each_measurement_by_rated_over_present() {
    // One circuit: every point's factor is rated / survey current exactly
    // (to rounding, 1e-12): 1200 / 600 = 2.
    let site = parse_site(
        &json!({
            "frequency_hz": 50,
            "circuits": [{"id": "w", "kind": "three_phase", "current_a": 800, "rated_current_a": 1200}],
            "conductors": [
                {"id": "a", "circuit": "w", "phase": "A", "radius_m": 0.01, "path": [[-L, -0.2, 3.0], [L, -0.2, 3.0]]},
                {"id": "b", "circuit": "w", "phase": "B", "radius_m": 0.01, "path": [[-L, 0.0, 3.0], [L, 0.0, 3.0]]},
                {"id": "c", "circuit": "w", "phase": "C", "radius_m": 0.01, "path": [[-L, 0.2, 3.0], [L, 0.2, 3.0]]}
            ]
        })
        .to_string(),
    )
    .unwrap();
    let m = vec![
        json!({"id": "p1", "at": [0.0, 1.0], "resultant_ut": 37.5}),
        json!({"id": "p2", "at": [0.0, -4.0, 0.3], "resultant_ut": 2.25}),
    ];
    let survey = validate_survey(&survey_doc(&[("w", 600.0)], m, 10.0), &site).unwrap();
    let e =
        analyse(&survey, &tables(), fluxbound_core::assess::ReviewFraction::DEFAULT).unwrap().extrapolation.unwrap();
    for (p, measured) in e.points.iter().zip([37.5, 2.25]) {
        assert!((p.factor.unwrap() - 2.0).abs() < 1e-12, "{:?}", p.factor);
        assert!((p.extrapolated_ut.unwrap() - measured * 1200.0 / 600.0).abs() < 1e-12 * measured);
    }
    // Compared with the table like any assessment: 75 µT / 1000 µT (ICNIRP 2010, Table 3).
    assert!((e.points[0].comparisons[0].ratio.unwrap() - 0.075).abs() < 1e-12);
    assert!(!e.assumptions.is_empty());
}

#[test]
fn a_point_outside_the_combined_uncertainty_is_flagged_and_one_inside_is_not() {
    // Model: one long wire, 1000 A at 1 m → 200 µT (OpenStax §12.2).
    // Meter ±10 %, model ±20 % (k = 2): allowed |Δ| = sqrt((0.1 m)² + (0.2 · 200)²).
    let site = parse_site(
        &json!({"frequency_hz": 50, "circuits": [{"id": "w", "kind": "single_phase", "current_a": 1000}],
                "conductors": [{"id": "a", "circuit": "w", "phase": "A", "radius_m": 0.01, "path": [[-L, 0.0, 0.0], [L, 0.0, 0.0]]}]})
        .to_string(),
    )
    .unwrap();
    let m = vec![
        json!({"id": "ok", "at": [0.0, 1.0, 0.0], "resultant_ut": 230.0}),
        json!({"id": "bad", "at": [0.0, -1.0, 0.0], "resultant_ut": 300.0}),
    ];
    let survey = validate_survey(&survey_doc(&[("w", 1000.0)], m, 10.0), &site).unwrap();
    let r = analyse(&survey, &tables(), fluxbound_core::assess::ReviewFraction::DEFAULT).unwrap().reconciliation;
    let allowed_ok = (23.0f64.powi(2) + 40.0f64.powi(2)).sqrt(); // 46.14 > 30
    let allowed_bad = (30.0f64.powi(2) + 40.0f64.powi(2)).sqrt(); // 50 < 100
    assert!((r.points[0].allowed_difference_ut.unwrap() - allowed_ok).abs() < 1e-6);
    assert!(!r.points[0].flagged);
    assert!((r.points[1].allowed_difference_ut.unwrap() - allowed_bad).abs() < 1e-6);
    assert!(r.points[1].flagged);
    assert!((r.summary.median_ratio.unwrap() - (1.15 + 1.5) / 2.0).abs() < 1e-6);
    assert_eq!(r.summary.worst[0], "bad");
}

#[test]
fn a_bad_csv_row_is_rejected_with_its_line_number_and_column() {
    let site = two_wire_site(false);
    let mut doc = survey_doc(&[("west", 700.0)], vec![], 6.0);
    doc.points_csv = Some("id,x_m,y_m,z_m,resultant_ut\nm1,0,0,1,12.5\nm2,1,0,1,lots\nm3,2,0\n".into());
    let p = validate_survey(&doc, &site).unwrap_err();
    let details: Vec<&str> = p.iter().map(|x| x.detail.as_str()).collect();
    assert!(p.iter().all(|x| x.pointer == "/points_csv"));
    assert!(
        details.iter().any(|d| d.starts_with("line 3, column resultant_ut") && d.contains("'lots'")),
        "{details:?}"
    );
    assert!(details.iter().any(|d| d.starts_with("line 4") && d.contains("3 fields")), "{details:?}");
    // An unknown column is named on line 1.
    doc.points_csv = Some("id,x_m,y_m,z_m,resultant_ut,colour\nm1,0,0,1,12.5,red\n".into());
    let p = validate_survey(&doc, &site).unwrap_err();
    assert!(p.iter().any(|x| x.detail.starts_with("line 1, column colour")));
    // A good CSV parses into the same measurements as JSON points.
    doc.points_csv = Some("id,x_m,y_m,z_m,resultant_ut,bx_ut,by_ut,bz_ut\n\"m 1\",0,0,1,5,3,4,0\n".into());
    let s = validate_survey(&doc, &site).unwrap();
    assert_eq!(s.points()[0].id(), "m 1");
    assert_eq!(s.points()[0].axes_ut(), Some([3.0, 4.0, 0.0]));
}

#[test]
fn survey_validation_names_every_problem_with_its_pointer() {
    let site = two_wire_site(false);
    let doc: SurveyDoc = serde_json::from_value(json!({
        "measured_at": "",
        "meter": {"expanded_uncertainty_percent": 0},
        "loads": [{"circuit": "nope", "current_a": 1}, {"circuit": "west"}],
        "points": [{"id": "a", "at": [0, 0, 1], "resultant_ut": -1}, {"id": "a", "at": [1, 2, 3, 4], "resultant_ut": 1, "axes_ut": [1, 1, 1]}]
    }))
    .unwrap();
    let p = validate_survey(&doc, &site).unwrap_err();
    let pointers: Vec<&str> = p.iter().map(|x| x.pointer.as_str()).collect();
    for want in [
        "/measured_at",
        "/meter/expanded_uncertainty_percent",
        "/loads/0/circuit",
        "/loads/1",
        "/points/0/resultant_ut",
        "/points/1/id",
        "/points/1/at",
        "/points/1/axes_ut",
    ] {
        assert!(pointers.contains(&want), "{want} missing from {pointers:?}");
    }
}

#[test]
fn the_example_survey_reconciles_and_its_odd_point_is_flagged() {
    let root = concat!(env!("CARGO_MANIFEST_DIR"), "/../..");
    let site = parse_site(&std::fs::read_to_string(format!("{root}/examples/site-switch-room.json")).unwrap()).unwrap();
    let doc: SurveyDoc =
        serde_json::from_str(&std::fs::read_to_string(format!("{root}/examples/survey-switch-room.json")).unwrap())
            .unwrap();
    let survey = validate_survey(&doc, &site).unwrap();
    let a = analyse(&survey, &tables(), fluxbound_core::assess::ReviewFraction::DEFAULT).unwrap();
    assert_eq!(a.reconciliation.summary.worst[0], "S8-riser");
    assert!(a.reconciliation.points.iter().find(|p| p.id == "S8-riser").unwrap().flagged);
    assert!(a.load_fit.converged);
    assert!(a.cautions.iter().any(|c| c.contains("qualified assessors")));
}

#[test]
fn a_checked_survey_is_analysed_against_the_site_it_was_checked_against_and_no_other() {
    // Before, `analyse(site, survey, …)` took the site separately: a survey
    // checked against a three-circuit site and analysed with a two-circuit
    // one indexed its loads out of bounds. Now the checked survey carries its
    // site and `analyse` takes no site (the compile_fail examples on
    // `Survey` show that neither a second site nor a hand-built survey
    // compiles); what is left to test is that each check binds its own site.
    let two = two_wire_site(false);
    let three = two_wire_site(true);
    let stated = [("west", 700.0), ("east", 450.0)];
    let m = synthetic(&two, &[700.0, 450.0], &[1.0, 1.0], &[0.0; 24]);
    let doc = survey_doc(&stated, m, 6.0);
    for site in [&two, &three] {
        let survey = validate_survey(&doc, site).unwrap();
        assert_eq!(survey.site(), site);
        assert_eq!(survey.loads().len(), site.circuits().len());
        let fit = analyse(&survey, &tables(), fluxbound_core::assess::ReviewFraction::DEFAULT).unwrap().load_fit;
        let fitted: Vec<&str> = fit.circuits.iter().map(|c| c.circuit.as_str()).collect();
        let expected: Vec<&str> = site.circuits().iter().map(|c| c.id.as_str()).collect();
        assert_eq!(fitted, expected);
    }
    // A survey naming a circuit of the three-circuit site only is refused by
    // the two-circuit one, with a pointer to the load that names it.
    let doc =
        survey_doc(&[("west", 700.0), ("far", 100.0)], vec![json!({"id": "m", "at": [0, 0], "resultant_ut": 1})], 6.0);
    assert!(validate_survey(&doc, &three).is_ok());
    let p = validate_survey(&doc, &two).unwrap_err();
    assert!(p.iter().any(|x| x.pointer == "/loads/1/circuit" && x.detail.contains("unknown circuit 'far'")), "{p:?}");
}

/// A linear problem with a known minimiser: r(s) = A s − b.
struct Linear {
    a: nalgebra::DMatrix<f64>,
    b: nalgebra::DVector<f64>,
}

impl lm::Problem for Linear {
    fn residuals(&self, s: &[f64]) -> Vec<f64> {
        (&self.a * nalgebra::DVector::from_column_slice(s) - &self.b).iter().copied().collect()
    }
    fn jacobian(&self, _: &[f64]) -> nalgebra::DMatrix<f64> {
        self.a.clone()
    }
}

#[test]
fn the_solver_finds_the_least_squares_solution_of_an_overdetermined_linear_problem() {
    // Rows (1, 0), (0, 1), (1, 1) against b = (1, 2, 4): the normal equations
    // [[2, 1], [1, 2]] s = (5, 6) give s = (4/3, 7/3) by hand. Tolerance 1e-9:
    // the solver stops on relative steps of 1e-11 and cost decreases of 1e-13.
    let p = Linear {
        a: nalgebra::DMatrix::from_row_slice(3, 2, &[1.0, 0.0, 0.0, 1.0, 1.0, 1.0]),
        b: nalgebra::DVector::from_column_slice(&[1.0, 2.0, 4.0]),
    };
    let sol = lm::minimise(&p, vec![1.0, 1.0], &[0, 1]);
    assert!(sol.converged);
    assert!((sol.s[0] - 4.0 / 3.0).abs() < 1e-9 && (sol.s[1] - 7.0 / 3.0).abs() < 1e-9, "{:?}", sol.s);
    // Residuals (1/3, 1/3, −1/3): cost 1/3.
    assert!((sol.cost - 1.0 / 3.0).abs() < 1e-9, "{}", sol.cost);
}

#[test]
fn the_solver_holds_a_parameter_at_zero_when_the_data_want_it_negative_and_leaves_fixed_ones_alone() {
    // r = (s0 + 1, s1 − 2, s2 − 5) with s2 not free: the unconstrained
    // minimum s0 = −1 is outside s0 ≥ 0, so s0 = 0; s1 = 2; s2 stays 7.
    let p = Linear { a: nalgebra::DMatrix::identity(3, 3), b: nalgebra::DVector::from_column_slice(&[-1.0, 2.0, 5.0]) };
    struct FreeColumns(Linear);
    impl lm::Problem for FreeColumns {
        fn residuals(&self, s: &[f64]) -> Vec<f64> {
            self.0.residuals(s)
        }
        fn jacobian(&self, s: &[f64]) -> nalgebra::DMatrix<f64> {
            self.0.jacobian(s).columns(0, 2).into_owned()
        }
    }
    let sol = lm::minimise(&FreeColumns(p), vec![1.0, 1.0, 7.0], &[0, 1]);
    assert!(sol.converged);
    // Exact on purpose: the projection is max(s, 0), which yields 0.0 itself,
    // and a fit is reported at its bound by `s == 0`.
    assert_eq!(sol.s[0], 0.0, "clipped exactly at the bound");
    assert!((sol.s[1] - 2.0).abs() < 1e-9, "{:?}", sol.s);
    // Exact on purpose: a parameter that is not free is copied, never computed.
    assert_eq!(sol.s[2], 7.0, "a parameter that is not free is never touched");
}
