//! The use-case layer: budgets, typed errors and the one exposure-ratio rule.

use super::{L, point, tables, wire_site};
use fluxbound_core::assess::{GridSpec, LoadCase, ReviewFraction, exposure_ratio, line_levels};
use fluxbound_core::limits::builtin_table;
use fluxbound_core::site::parse_site;
use fluxbound_core::usecase::{self, Budget, UseCaseError};
use nalgebra::Point2;
use serde_json::json;

fn site_with_area(spacing_m: f64) -> fluxbound_core::site::Site {
    let area = json!([{"id": "floor", "polygon": [[0, 1], [10, 1], [10, 11], [0, 11]], "height_m": 1.0, "spacing_m": spacing_m}]);
    let doc = wire_site(100.0, 100.0, json!([]), json!([point("p", [0.0, 1.0, 0.0])]), area);
    parse_site(&doc.to_string()).unwrap()
}

#[test]
fn the_exposure_ratio_sums_each_lines_field_over_its_level_and_skips_lines_without_field() {
    // Hand sums: 10/100 + 2/20 = 0.2; a 0 µT line at an uncovered frequency
    // does not matter; field at an uncovered line makes the ratio undefined.
    // Tolerance 1e-15: two divisions and one addition of exact-ish decimals.
    let r = exposure_ratio([10.0, 2.0, 0.0], &[Some(100.0), Some(20.0), None]).unwrap();
    assert!((r - 0.2).abs() < 1e-15, "{r}");
    assert_eq!(exposure_ratio([10.0, 2.0, 0.5], &[Some(100.0), Some(20.0), None]), Err(vec![2]));
    // The EU 2013/35 low action level at 50 Hz is 1000 µT (docs/REFERENCES.md):
    // 250 µT is a quarter of it.
    let eu = builtin_table("eu-2013-35-low").unwrap();
    let r = exposure_ratio([250.0], &line_levels(eu, &[50.0])).unwrap();
    assert!((r - 0.25).abs() < 1e-12, "{r}");
}

#[test]
fn an_assessment_over_the_pairs_budget_is_refused_before_any_field_is_computed() {
    // 1 segment × (1 position point + 10 × 10 cells of 1 m) = 101 pairs.
    let site = site_with_area(1.0);
    assert_eq!(usecase::assessment_pairs(&site), 101);
    let budget = Budget { max_pairs: 100, ..Budget::default() };
    let t = tables(&["eu-2013-35-low"]);
    let err = usecase::assess_site(&site, &LoadCase::Present, &t, ReviewFraction::DEFAULT, &budget).unwrap_err();
    let UseCaseError::OverBudget(p) = err else { panic!("{err:?}") };
    assert_eq!(p.0[0].pointer, "/areas");
    assert!(p.0[0].detail.contains("101 segment-point pairs"), "{}", p.0[0].detail);
    // 101 pairs cover the grid but not the boundary samples and refinement
    // of the area's maximum (issue 10): refused, pointing at the spacing.
    let budget = Budget { max_pairs: 101, ..Budget::default() };
    let err = usecase::assess_site(&site, &LoadCase::Present, &t, ReviewFraction::DEFAULT, &budget).unwrap_err();
    let UseCaseError::OverBudget(p) = err else { panic!("{err:?}") };
    assert_eq!(p.0[0].pointer, "/areas/0/spacing_m");
    assert!(p.0[0].detail.contains("proving this area's maximum"), "{}", p.0[0].detail);
    assert!(usecase::assess_site(&site, &LoadCase::Present, &t, ReviewFraction::DEFAULT, &Budget::default()).is_ok());
}

#[test]
fn an_assessment_over_the_grid_budget_points_at_the_spacing_of_the_area_that_crosses_it() {
    // 0.1 m over 10 m × 10 m = 100 × 100 = 10 000 cells.
    let site = site_with_area(0.1);
    let budget = Budget { max_grid_cells: 9_999, ..Budget::offline() };
    let t = tables(&["eu-2013-35-low"]);
    let err = usecase::assess_site(&site, &LoadCase::Present, &t, ReviewFraction::DEFAULT, &budget).unwrap_err();
    let UseCaseError::OverBudget(p) = err else { panic!("{err:?}") };
    assert_eq!(p.0[0].pointer, "/areas/0/spacing_m");
}

#[test]
fn a_map_of_an_area_the_site_does_not_have_is_a_typed_error_naming_it() {
    let site = site_with_area(1.0);
    let t = tables(&["eu-2013-35-low"]);
    let a = usecase::assess_site(&site, &LoadCase::Present, &t, ReviewFraction::DEFAULT, &Budget::offline()).unwrap();
    let err = usecase::area_map_svg(&site, &a, &LoadCase::Present, &t, "roof", None, &Budget::offline()).unwrap_err();
    assert_eq!(err, UseCaseError::UnknownArea("roof".into()));
    let svg = usecase::area_map_svg(&site, &a, &LoadCase::Present, &t, "floor", None, &Budget::offline()).unwrap();
    assert!(svg.starts_with("<svg"));
}

#[test]
fn a_distance_query_names_the_argument_that_is_wrong() {
    use usecase::{DistanceArg, DistanceQuery};
    let arg = |e: UseCaseError| match e {
        UseCaseError::Distance { arg, .. } => arg,
        other => panic!("{other:?}"),
    };
    assert_eq!(arg(DistanceQuery::parse("position:p", Some("shortest"), -1.0).unwrap_err()), DistanceArg::LevelUt);
    assert_eq!(arg(DistanceQuery::parse("nowhere", Some("shortest"), 100.0).unwrap_err()), DistanceArg::From);
    assert_eq!(arg(DistanceQuery::parse("position:p", Some("sideways"), 100.0).unwrap_err()), DistanceArg::Direction);
    // A position that is not in the site is found out against the site.
    let site = site_with_area(1.0);
    let q = DistanceQuery::parse("position:ghost", Some("shortest"), 100.0).unwrap();
    assert_eq!(arg(usecase::distance_to_level(&site, &LoadCase::Present, &q).unwrap_err()), DistanceArg::From);
    // 0.2 · 100 A / 1 m = 20 µT at p (OpenStax §12.2); 10 µT at 2 m, so
    // the shortest way to 10 µT is 1 m farther from the wire. Tolerance:
    // the 5° search step and the 0.1 mm bisection, 1 mm is ample; the
    // finite length L = 10 km adds (R/L)² ≈ 4e-8.
    let q = DistanceQuery::parse("position:p", Some("0,1,0"), 10.0).unwrap();
    let d = usecase::distance_to_level(&site, &LoadCase::Present, &q).unwrap();
    assert!((d.distance_m.unwrap() - 1.0).abs() < 1e-3, "{d:?} (L = {L} m)");
}

#[test]
fn the_assessment_grid_and_the_map_grid_have_the_same_shape_at_the_same_spacing() {
    // 1.2 m at 0.1 m is 12 cells, not 13 (1.2 / 0.1 = 12.000000000000002).
    let polygon = [Point2::new(0.0, 0.0), Point2::new(1.2, 0.0), Point2::new(1.2, 0.3), Point2::new(0.0, 0.3)];
    let exact = GridSpec::bounding(&polygon, 0.1).unwrap();
    assert_eq!((exact.nx, exact.ny), (12, 3));
    let map = GridSpec::covering(&polygon, 0.1, 1_000_000);
    assert_eq!((map.nx, map.ny), (exact.nx, exact.ny));
    // Not coarsened: the spacing asked for, to the last bit of 1e-15.
    assert!((map.spacing_m - exact.spacing_m).abs() < 1e-15);
    // Coarsened to fit 9 nodes: s = sqrt(1.2 · 0.3 / 9) = 0.2 m → 6 × 2.
    let coarse = GridSpec::covering(&polygon, 0.1, 9);
    assert!((coarse.spacing_m - 0.2).abs() < 1e-12);
    assert_eq!((coarse.nx, coarse.ny), (6, 2));
}
