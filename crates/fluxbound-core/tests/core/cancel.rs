//! Cooperative cancellation: a set flag stops every use case with
//! `UseCaseError::Cancelled` (never a partial result), and an unset one
//! changes no bit of any result.

use fluxbound_core::assess::{LoadCase, ReviewFraction};
use fluxbound_core::cancel::{Cancel, Cancelled};
use fluxbound_core::evaluate::EvaluateRequest;
use fluxbound_core::field::{self, Excitation, Filament, Filaments, SpectralLine};
use fluxbound_core::limits::{ReferenceTable, builtin_table};
use fluxbound_core::site::{Site, parse_site};
use fluxbound_core::survey::{validate_survey, wire::SurveyDoc};
use fluxbound_core::usecase::{self, Budget, DistanceQuery, UseCaseError};
use nalgebra::Point3;
use num_complex::Complex64;

fn example(name: &str) -> String {
    let root = concat!(env!("CARGO_MANIFEST_DIR"), "/../..");
    std::fs::read_to_string(format!("{root}/examples/{name}")).unwrap_or_else(|e| panic!("{name}: {e}"))
}

fn switch_room() -> Site {
    parse_site(&example("site-switch-room.json")).unwrap()
}

fn tables() -> Vec<ReferenceTable> {
    vec![builtin_table("icnirp-2010-occupational").unwrap().clone()]
}

/// A budget whose flag is already set.
fn cancelled() -> Budget {
    let budget = Budget::offline();
    budget.cancel.cancel();
    budget
}

#[test]
fn every_use_case_whose_flag_is_set_before_it_starts_returns_cancelled() {
    let site = switch_room();
    let (t, load, rf) = (tables(), LoadCase::Present, ReviewFraction::DEFAULT);
    let a = usecase::assess_site(&site, &load, &t, rf, &Budget::offline()).unwrap();
    let area = site.areas()[0].id.clone();
    let doc: SurveyDoc = serde_json::from_str(&example("survey-switch-room.json")).unwrap();
    let survey = validate_survey(&doc, &site).unwrap();
    let req: EvaluateRequest = serde_json::from_str(&example("evaluate-busbar-walkway.json")).unwrap();
    let from = format!("position:{}", site.positions()[0].id);
    let query = DistanceQuery::parse(&from, None, 100.0).unwrap();

    let c = cancelled();
    assert_eq!(usecase::assess_site(&site, &load, &t, rf, &c).unwrap_err(), UseCaseError::Cancelled);
    assert_eq!(usecase::area_map_svg(&site, &a, &load, &t, &area, None, &c).unwrap_err(), UseCaseError::Cancelled);
    assert_eq!(usecase::export_geojson(&site, &a, &load, &t, &c).unwrap_err(), UseCaseError::Cancelled);
    assert_eq!(usecase::analyse_survey(&survey, &t, rf, &c).unwrap_err(), UseCaseError::Cancelled);
    assert_eq!(usecase::evaluate_points(&req, &c).unwrap_err(), UseCaseError::Cancelled);
    assert_eq!(usecase::distance(&site, &load, &query, &t, &c).unwrap_err(), UseCaseError::Cancelled);
}

#[test]
fn an_unset_flag_changes_no_bit_of_any_result() {
    // Same inputs, same code path apart from the flag reads: the results
    // must be identical, so they are compared exactly.
    let site = switch_room();
    let (t, load, rf) = (tables(), LoadCase::Present, ReviewFraction::DEFAULT);
    let fresh = || Budget { cancel: Cancel::new(), ..Budget::offline() };
    let a = usecase::assess_site(&site, &load, &t, rf, &Budget::offline()).unwrap();
    assert_eq!(usecase::assess_site(&site, &load, &t, rf, &fresh()).unwrap(), a);
    let doc: SurveyDoc = serde_json::from_str(&example("survey-switch-room.json")).unwrap();
    let survey = validate_survey(&doc, &site).unwrap();
    let plain = fluxbound_core::survey::analyse(&survey, &t, rf).unwrap();
    assert_eq!(usecase::analyse_survey(&survey, &t, rf, &fresh()).unwrap(), plain);
    let req: EvaluateRequest = serde_json::from_str(&example("evaluate-busbar-walkway.json")).unwrap();
    let ev = fluxbound_core::evaluate::validate_request(&req).unwrap();
    assert_eq!(usecase::evaluate_points(&req, &fresh()).unwrap(), fluxbound_core::evaluate::evaluate(&ev));
}

/// One straight wire of `segments` segments along x and `points` points
/// beside it: `segments × points` pairs of plain kernel work.
fn big_problem(segments: usize, points: usize) -> (Filaments, Vec<Point3<f64>>, Excitation) {
    let path = (0..=segments).map(|i| Point3::new(i as f64 * 0.01, 0.0, 0.0)).collect();
    let filaments = Filaments::new(&[Filament { path, radius_m: 0.001 }]);
    let points = (0..points).map(|i| Point3::new((i % 1000) as f64 * 0.01, 1.0, (i / 1000) as f64 * 0.01)).collect();
    let line = SpectralLine { order: 1, frequency_hz: 50.0, currents_a: vec![Complex64::new(100.0, 0.0)] };
    (filaments, points, Excitation { lines: vec![line] })
}

#[test]
fn a_flag_set_while_the_engine_runs_stops_it_with_cancelled() {
    // 4e10 pairs: many seconds of work at any speed this engine reaches
    // (its ceiling is ≈ 5e9 pairs/s on two cores), so only the flag can end
    // it within the test. The flag is set from another thread once the
    // work has started; no partial field set comes back.
    let (filaments, points, excitation) = big_problem(200_000, 200_000);
    let cancel = Cancel::new();
    let setter = {
        let cancel = cancel.clone();
        std::thread::spawn(move || {
            std::thread::sleep(std::time::Duration::from_millis(50));
            cancel.cancel();
        })
    };
    let result = field::try_evaluate(&filaments, &points, &excitation, &cancel);
    setter.join().unwrap();
    assert_eq!(result.map(|s| s.point_count()), Err(Cancelled));
}

#[test]
fn the_engine_with_an_unset_flag_gives_the_plain_evaluation_bit_for_bit() {
    let (filaments, points, excitation) = big_problem(50, 1_000);
    let plain = field::evaluate(&filaments, &points, &excitation);
    assert_eq!(field::try_evaluate(&filaments, &points, &excitation, &Cancel::new()), Ok(plain));
    let matrix = field::influence_matrix(&filaments, &points);
    assert_eq!(field::try_influence_matrix(&filaments, &points, &Cancel::new()), Ok(matrix));
    let set = Cancel::new();
    set.cancel();
    assert_eq!(field::try_influence_matrix(&filaments, &points, &set).map(|m| m.point_count()), Err(Cancelled));
}

#[test]
fn a_map_over_the_pairs_budget_is_refused_at_its_areas_spacing_before_any_field_is_computed() {
    let site = switch_room();
    let t = tables();
    let a = usecase::assess_site(&site, &LoadCase::Present, &t, ReviewFraction::DEFAULT, &Budget::offline()).unwrap();
    let area = &site.areas()[0];
    let needed = usecase::map_pairs(&site, area, &Budget::offline());
    let budget = Budget { max_pairs: needed - 1, ..cancelled() };
    let err = usecase::area_map_svg(&site, &a, &LoadCase::Present, &t, &area.id, None, &budget).unwrap_err();
    let UseCaseError::OverBudget(p) = err else { panic!("{err:?}") };
    assert_eq!(p.0[0].pointer, "/areas/0/spacing_m");
    assert!(p.0[0].detail.contains(&format!("{needed} segment-point pairs")), "{}", p.0[0].detail);
    let err = usecase::export_geojson(&site, &a, &LoadCase::Present, &t, &budget).unwrap_err();
    assert!(matches!(err, UseCaseError::OverBudget(_)), "{err:?}");
    // The budget check comes first: the flag (set) is never reached.
    let budget = Budget { max_pairs: needed, ..cancelled() };
    let err = usecase::area_map_svg(&site, &a, &LoadCase::Present, &t, &area.id, None, &budget).unwrap_err();
    assert_eq!(err, UseCaseError::Cancelled);
}

#[test]
fn a_distance_search_is_held_to_the_pairs_budget_as_well_as_its_own() {
    let site = switch_room();
    let from = format!("position:{}", site.positions()[0].id);
    let query = DistanceQuery::parse(&from, None, 100.0).unwrap();
    let budget = Budget { max_pairs: 1_000, ..Budget::default() };
    assert!(budget.max_distance_pairs > budget.max_pairs);
    let err = usecase::distance(&site, &LoadCase::Present, &query, &[], &budget).unwrap_err();
    let UseCaseError::DistanceOverBudget { detail, .. } = err else { panic!("{err:?}") };
    assert!(detail.contains("budget of 1000 segment-point pairs"), "{detail}");
}
