//! The work the area assessment leaves out cannot change its answers:
//! the first refinement round passes over blocks of cells whose bound is
//! below the maximum, and the cells inside a polygon are found row by row.
//! Both are compared on random sites with doing the work in full.

use super::tables;
use fluxbound_core::assess::{self, LoadCase, Options, area_grid};
use fluxbound_core::site::parse_site;
use nalgebra::Point2;
use proptest::prelude::*;
use serde_json::json;

/// A conductor: two or three vertices over a 18 m square around the area,
/// 2–4 m up (at least 0.5 m above it, so that refinement ends well before
/// its floor and the test stays quick), a current of 1–3000 A, and a
/// radius of 1 mm–5 cm.
fn conductor() -> impl Strategy<Value = (Vec<[f64; 3]>, f64, f64)> {
    let vertex = [-6.0..12.0f64, -6.0..12.0f64, 2.0..4.0f64];
    (prop::collection::vec(vertex, 2..4), 1.0..3000.0f64, 0.001..0.05f64)
}

/// A simple quadrilateral in the 0–6 m square: one vertex per quadrant
/// around (3, 3), in order, so it may be non-convex but never crosses itself.
fn quadrilateral() -> impl Strategy<Value = Vec<[f64; 2]>> {
    (0.2..2.8f64, 0.2..2.8f64, 3.2..5.8f64, 0.2..2.8f64, 3.2..5.8f64, 3.2..5.8f64, 0.2..2.8f64, 3.2..5.8f64)
        .prop_map(|(ax, ay, bx, by, cx, cy, dx, dy)| vec![[ax, ay], [bx, by], [cx, cy], [dx, dy]])
}

fn site(
    conductors: &[(Vec<[f64; 3]>, f64, f64)],
    polygon: &[[f64; 2]],
    spacing_m: f64,
    height_m: f64,
) -> serde_json::Value {
    let conductors: Vec<serde_json::Value> = conductors
        .iter()
        .enumerate()
        .map(|(k, (path, current, radius))| {
            json!({"id": format!("c{k}"), "current": {"rms_a": current}, "radius_m": radius, "path": path})
        })
        .collect();
    json!({
        "frequency_hz": 50,
        "conductors": conductors,
        "areas": [{"id": "a", "polygon": polygon, "height_m": height_m, "spacing_m": spacing_m}]
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    /// Every measure's maximum, where it is, its proven bound, whether it
    /// is settled and the refinement's samples and pairs are the same with
    /// and without passing over blocks. No tolerance: a block is passed
    /// over only when each of its cells would settle with a bound at most
    /// the maximum, so every other cell goes through the same arithmetic.
    /// (Were the pruning wrong, a bound would come out lower.)
    #[test]
    fn passing_over_blocks_below_the_maximum_changes_no_area_maximum_or_bound(
        conductors in prop::collection::vec(conductor(), 1..4),
        polygon in quadrilateral(),
        spacing_m in 0.1..0.4f64,
        height_m in 0.0..1.5f64,
    ) {
        let doc = site(&conductors, &polygon, spacing_m, height_m);
        let Ok(site) = parse_site(&doc.to_string()) else { return Err(TestCaseError::reject("invalid site")) };
        let tables = tables(&["icnirp-2010-occupational", "icnirp-2010-public"]);
        let both = assess::area_maxima_with_and_without_pruning(&site, &LoadCase::Present, &tables).expect("loads");
        for [pruned, full] in both {
            for (p, f) in pruned.bound.iter().zip(&full.bound) {
                prop_assert!(p >= f, "pruned bound {p} below the full one {f}");
            }
            prop_assert_eq!(pruned, full);
        }
    }

    /// An area has exactly the cells whose centres `contains` puts inside
    /// the polygon (`area_grid` tests each node on its own).
    #[test]
    fn an_areas_cells_are_the_grid_nodes_inside_its_polygon(
        polygon in quadrilateral(),
        spacing_m in 0.05..0.5f64,
    ) {
        let doc = site(&[(vec![[20.0, 0.0, 0.0], [21.0, 0.0, 0.0]], 10.0, 0.01)], &polygon, spacing_m, 0.0);
        let Ok(site) = parse_site(&doc.to_string()) else { return Err(TestCaseError::reject("invalid site")) };
        let a = assess::assess(&site, &LoadCase::Present, &tables(&["icnirp-2010-occupational"]), &Options::default())
            .expect("assessment");
        let ring: Vec<Point2<f64>> = polygon.iter().map(|p| Point2::new(p[0], p[1])).collect();
        prop_assert_eq!(a.areas[0].cells, area_grid(&ring, 0.0, spacing_m).len());
    }
}
