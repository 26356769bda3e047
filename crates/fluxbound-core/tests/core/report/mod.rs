//! Pictures and exports, checked against closed forms (Source: OpenStax
//! University Physics Vol. 2 §12.2, B = 0.2 · I / R µT; docs/REFERENCES.md "D" for
//! the antiparallel pair), an outside geodesy library, and general-purpose
//! parsers and renderers.

use fluxbound_core::assess::{self, AreaMap, Assessment, GridSpec, LoadCase, Options};
use fluxbound_core::limits::builtin_table;
use fluxbound_core::mitigate::{Direction, DistanceResult, Meter, Origin, Target, distance};
use fluxbound_core::report::{contour, csv as csv_export, geo, geojson, palette, svg};
use fluxbound_core::site::wire::GeoreferenceDoc;
use fluxbound_core::site::{CircuitLoad, Site, parse_site};
use nalgebra::{Point3, Unit, Vector3};
use serde_json::{Value, json};

const L: f64 = 10_000.0;

/// A vertical long wire through the origin carrying `current_a`, and a
/// square area of half-side `half_m` around it at z = 0.
fn vertical_wire_site(current_a: f64, half_m: f64, spacing_m: f64) -> Site {
    parse_site(
        &json!({
            "name": "vertical wire",
            "frequency_hz": 50,
            "circuits": [{"id": "v", "kind": "single_phase", "current_a": current_a}],
            "conductors": [{"id": "v-A", "circuit": "v", "phase": "A", "radius_m": 0.02, "path": [[0.0, 0.0, -L], [0.0, 0.0, L]]}],
            "positions": [{"id": "near", "at": [0.3, 0.0, 0.0]}, {"id": "far", "at": [-1.9, -1.9, 0.0]}],
            "areas": [{"id": "floor", "polygon": [[-half_m, -half_m], [half_m, -half_m], [half_m, half_m], [-half_m, half_m]], "height_m": 0.0, "spacing_m": spacing_m}]
        })
        .to_string(),
    )
    .unwrap()
}

fn tables(ids: &[&str]) -> Vec<fluxbound_core::limits::ReferenceTable> {
    ids.iter().map(|id| builtin_table(id).unwrap().clone()).collect()
}

fn map_and_result(site: &Site, ids: &[&str]) -> (AreaMap, Assessment) {
    let t = tables(ids);
    let loads = LoadCase::Present.resolve(site).unwrap();
    let map = assess::area_map(site, &loads, &t, &site.areas()[0], 40_000);
    let result = assess::assess(site, &LoadCase::Present, &t, &Options::default()).unwrap();
    (map, result)
}

#[test]
fn the_contour_at_a_level_around_a_long_wire_is_a_circle_of_radius_point_two_i_over_b() {
    // 5000 A: B = 1000 µT at r = 0.2 · 5000 / 1000 = 1.0 m.
    let site = vertical_wire_site(5000.0, 2.0, 0.02);
    let (map, _) = map_and_result(&site, &["icnirp-2010-occupational"]);
    let lines = contour::isolines(&map.grid, &map.b_ut, &map.inside_conductor, 1000.0);
    let circle = lines.iter().max_by_key(|l| l.points.len()).unwrap();
    assert!(circle.closed, "the circle lies inside the grid, so it closes");
    for p in &circle.points {
        let r = p[0].hypot(p[1]);
        assert!((r - 1.0).abs() < map.grid.spacing_m, "r = {r}");
    }
    // Linear interpolation of 1/r between nodes 0.02 m apart errs far less
    // than a spacing; check the mean radius tightly (1e-3 m).
    let mean: f64 = circle.points.iter().map(|p| p[0].hypot(p[1])).sum::<f64>() / circle.points.len() as f64;
    assert!((mean - 1.0).abs() < 1e-3, "mean r = {mean}");
    // The zone ring is the same circle; the ratio contour of the table too.
    let ratio: Vec<f64> = map.tables[0].ratio.iter().map(|r| r.unwrap()).collect();
    let by_ratio = contour::isolines(&map.grid, &ratio, &map.inside_conductor, 1.0);
    assert_eq!(by_ratio.iter().map(|l| l.points.len()).max(), Some(circle.points.len()));
}

fn tiny_grid(nx: usize, ny: usize) -> GridSpec {
    GridSpec { x0_m: 0.0, y0_m: 0.0, spacing_m: 1.0, nx, ny }
}

#[test]
fn a_saddle_cell_is_split_by_its_centre_value_and_its_two_lines_never_cross() {
    // Corners (0,0)=1, (1,0)=0, (1,1)=1, (0,1)=0: a saddle with mean 0.5.
    let g = tiny_grid(2, 2);
    let values = [1.0, 0.0, 0.0, 1.0]; // row-major: (0,0), (1,0), (0,1), (1,1)
    let inside = [false; 4];
    // Level 0.4: the centre is above, so the high corners connect and the
    // two lines cut off the low corners (1,0) and (0,1).
    let lines = contour::isolines(&g, &values, &inside, 0.4);
    assert_eq!(lines.len(), 2);
    let near = |l: &contour::Polyline, c: [f64; 2]| l.points.iter().all(|p| (p[0] - c[0]).hypot(p[1] - c[1]) < 0.71);
    let (low_a, low_b) = ([1.5, 0.5], [0.5, 1.5]);
    assert!(lines.iter().any(|l| near(l, low_a)) && lines.iter().any(|l| near(l, low_b)), "{lines:?}");
    // Level 0.6: the centre is below, so the lines cut off the high corners.
    let lines = contour::isolines(&g, &values, &inside, 0.6);
    let (high_a, high_b) = ([0.5, 0.5], [1.5, 1.5]);
    assert!(lines.iter().any(|l| near(l, high_a)) && lines.iter().any(|l| near(l, high_b)), "{lines:?}");
}

#[test]
fn a_node_inside_a_conductor_counts_as_above_every_level_so_its_zone_closes_around_it() {
    let g = tiny_grid(3, 3);
    let values = [0.0; 9];
    let mut inside = [false; 9];
    inside[4] = true; // the centre node
    let lines = contour::isolines(&g, &values, &inside, 1.0);
    assert_eq!(lines.len(), 1);
    assert!(lines[0].closed);
    for p in &lines[0].points {
        let d = (p[0] - 1.5).hypot(p[1] - 1.5);
        assert!(d > 0.0 && d <= 1.0, "{p:?}");
    }
}

#[test]
fn zone_rings_close_along_the_edge_of_the_grid() {
    // A field high on the whole left column: the zone reaches the edge.
    let g = tiny_grid(3, 2);
    let values = [5.0, 0.0, 0.0, 5.0, 0.0, 0.0];
    let rings = contour::zone_rings(&g, &values, &[false; 6], 1.0);
    assert_eq!(rings.len(), 1);
    assert!(rings[0].closed);
    let open = contour::isolines(&g, &values, &[false; 6], 1.0);
    assert!(!open[0].closed, "the plain contour stays open at the edge");
}

/// The distance search to `level_ut` without a budget cap.
fn distance_to_level(
    site: &Site,
    loads: &[CircuitLoad],
    from: Point3<f64>,
    direction: Direction,
    level_ut: f64,
) -> DistanceResult {
    distance(site, loads, from, direction, &Target::LevelUt(level_ut), u64::MAX).unwrap()
}

#[test]
fn the_distance_to_a_level_from_a_single_wire_is_point_two_i_over_b() {
    // 2000 A, level 100 µT → 0.2 · 2000 / 100 = 4.0 m from the axis.
    let site = vertical_wire_site(2000.0, 2.0, 0.5);
    let loads = vec![CircuitLoad::PRESENT];
    let target = Target::LevelUt(100.0);
    let meter = Meter::new(&site, &loads, &target).unwrap();
    let from = Origin::Conductor("v-A".into()).locate(&site, &meter).unwrap();
    let east = Direction::Along(Unit::new_normalize(Vector3::new(1.0, 0.0, 0.0)));
    let r = distance_to_level(&site, &loads, from, east, 100.0);
    // Tolerance: the bisection's 1e-4 m plus the finite length, (R/L)² ≈ 2e-7.
    assert!((r.distance_m.unwrap() - 4.0).abs() < 2e-4, "{r:?}");
    assert_eq!(r.b_at_origin_ut, None, "the origin is on the conductor's axis");
    let shortest = distance_to_level(&site, &loads, from, Direction::Shortest, 100.0);
    assert!((shortest.distance_m.unwrap() - 4.0).abs() < 2e-4);
    // From a point already below the level the distance is zero.
    let far = distance_to_level(&site, &loads, Point3::new(10.0, 0.0, 0.0), east, 100.0);
    assert_eq!(far.distance_m, Some(0.0));
}

#[test]
fn the_distance_to_a_level_from_a_go_and_return_pair_follows_the_exact_two_wire_form() {
    // Derived (docs/REFERENCES.md, D): |B| = µ0 I d / (2π r1 r2); from the
    // midpoint along y, r1 = r2 = sqrt(d²/4 + y²), so B = 0.2 I d / (d²/4 + y²)
    // and the distance to B is y = sqrt(0.2 I d / B − d²/4).
    let (i, d, level) = (1500.0, 0.4, 20.0);
    let site = parse_site(
        &json!({
            "frequency_hz": 50,
            "circuits": [{"id": "pair", "kind": "single_phase", "current_a": i}],
            "conductors": [
                {"id": "go", "circuit": "pair", "phase": "A", "radius_m": 0.01, "path": [[-d / 2.0, 0.0, -L], [-d / 2.0, 0.0, L]]},
                {"id": "return", "circuit": "pair", "phase": "N", "radius_m": 0.01, "path": [[d / 2.0, 0.0, -L], [d / 2.0, 0.0, L]]}
            ]
        })
        .to_string(),
    )
    .unwrap();
    let loads = vec![CircuitLoad::PRESENT];
    let along_y = Direction::Along(Unit::new_normalize(Vector3::new(0.0, 1.0, 0.0)));
    let r = distance_to_level(&site, &loads, Point3::origin(), along_y, level);
    let expected = (0.2 * i * d / level - d * d / 4.0).sqrt();
    assert!((r.distance_m.unwrap() - expected).abs() < 2e-4, "{} vs {expected}", r.distance_m.unwrap());
}

/// The map rendered by resvg, and a reader of the pixel at a plan point.
fn rendered(text: &str) -> resvg::tiny_skia::Pixmap {
    let tree = resvg::usvg::Tree::from_str(text, &resvg::usvg::Options::default()).expect("the SVG parses");
    let size = tree.size().to_int_size();
    let mut pixmap = resvg::tiny_skia::Pixmap::new(size.width(), size.height()).unwrap();
    resvg::render(&tree, resvg::tiny_skia::Transform::default(), &mut pixmap.as_mut());
    pixmap
}

fn pixel_at(pixmap: &resvg::tiny_skia::Pixmap, map: &AreaMap, x: f64, y: f64) -> [u8; 3] {
    let (px, py) = svg::plan_to_px(map, x, y);
    let c = pixmap.pixel(px.round() as u32, py.round() as u32).unwrap();
    [c.red(), c.green(), c.blue()]
}

fn close(a: [u8; 3], b: [u8; 3]) -> bool {
    a.iter().zip(b).all(|(x, y)| (i16::from(*x) - i16::from(y)).abs() <= 3)
}

#[test]
fn the_svg_map_renders_the_band_of_each_cell_dark_near_the_wire_and_light_far_away() {
    // 5000 A: B = 0.2 · 5000 / r = 1000 / r µT (long straight wire,
    // OpenStax University Physics II §12.2); ICNIRP 2010 occupational
    // level 1000 µT at 50 Hz, so the ratio is 1 / r.
    let site = vertical_wire_site(5000.0, 2.0, 0.05);
    let (map, result) = map_and_result(&site, &["icnirp-2010-occupational"]);
    let text = svg::area_map_svg(&site, &result, &map);
    assert!(text.contains("Exposure ratio to T1") && text.contains("fixed bands"), "legend title");
    assert!(text.contains("licensed or otherwise qualified assessors"), "cautions");
    assert!(text.contains("near: exceeds"), "position verdicts");
    // Each band's range in ratio and in µT at 50 Hz (edges × 1000 µT).
    for label in ["&lt; 0.1  (&lt; 100 µT)", "0.5 – 1  (500 – 1000 µT)", "≥ 2  (≥ 2000 µT)"] {
        assert!(text.contains(label), "legend label {label}");
    }
    let pixmap = rendered(&text);
    // Far corner: r = 2.69 m, ratio 0.37 → band 0.25–0.5 (the third).
    assert!(close(pixel_at(&pixmap, &map, 1.95, -1.95), palette::band_colour(2)));
    // 0.39 m off the axis: ratio 2.6 → the top band (≥ 2).
    assert!(close(pixel_at(&pixmap, &map, 0.25, -0.3), palette::band_colour(5)));
    // 0.71 m: ratio 1.41 → 1–2.
    assert!(close(pixel_at(&pixmap, &map, -0.5, -0.5), palette::band_colour(4)));
    // Independently of the palette's own functions: the far corner renders
    // light and the top band dark (relative luminance, IEC 61966-2-1).
    assert!(palette::luminance(pixel_at(&pixmap, &map, 1.95, -1.95)) > 0.3);
    assert!(palette::luminance(pixel_at(&pixmap, &map, 0.25, -0.3)) < 0.06);
}

#[test]
fn a_cell_at_ratio_0_6_has_the_same_colour_on_maps_of_very_different_currents() {
    // Two invented sites, 5000 A and 500 A on the same wire: at r = 0.2·I /
    // (0.6 · 1000 µT) the ratio is 0.6 (long-wire law, OpenStax §12.2), at
    // 1.667 m and 0.167 m. Before fixed bands each map rescaled its own
    // colours, so the two cells differed.
    let mut seen = Vec::new();
    for (current, half) in [(5000.0, 2.0), (500.0, 0.4)] {
        let site = vertical_wire_site(current, half, half / 40.0);
        let (map, result) = map_and_result(&site, &["icnirp-2010-occupational"]);
        let r = 0.2 * current / 600.0;
        let (x, y) = (r * 0.6, r * 0.8);
        let pixmap = rendered(&svg::area_map_svg(&site, &result, &map));
        seen.push(pixel_at(&pixmap, &map, x, y));
    }
    assert!(close(seen[0], seen[1]), "{seen:?}");
    assert!(close(seen[0], palette::band_colour(3)), "band 0.5–1: {seen:?}");
}

#[test]
fn without_a_table_the_map_is_banded_in_decades_of_micro_tesla() {
    let site = vertical_wire_site(5000.0, 2.0, 0.05);
    let (mut map, result) = map_and_result(&site, &["icnirp-2010-occupational"]);
    map.tables.clear();
    let banding = svg::banding(&map);
    assert_eq!(banding.table, None);
    let text = svg::area_map_svg(&site, &result, &map);
    assert!(text.contains("µT RMS, fixed decades"));
    assert!(text.contains("100 – 1000 µT") && text.contains("≥ 1000 µT"), "decade labels");
    // 1000 / 2.69 = 372 µT in the far corner: the 100–1000 µT decade.
    assert!(close(pixel_at(&rendered(&text), &map, 1.95, -1.95), palette::band_colour(4)));
}

#[test]
fn a_map_can_be_banded_by_any_of_its_tables_and_says_why_not_by_another() {
    // ICNIRP 2010 occupational 1000 µT, 2013/35/EU high action level
    // 6000 µT at 50 Hz: at r = 0.3 m (B = 3333 µT) the ratios are 3.33 and
    // 0.56, so the two bandings put the node in the top band and in 0.5–1.
    let site = vertical_wire_site(5000.0, 2.0, 0.1);
    let (map, result) = map_and_result(&site, &["icnirp-2010-occupational", "eu-2013-35-high"]);
    let by_high = svg::banding_by(&map, "eu-2013-35-high").unwrap();
    assert_eq!(by_high.table, Some(1));
    assert_eq!(svg::banding(&map).band(3.33), 5);
    assert_eq!(by_high.band(3333.0 / 6000.0), 3);
    let text = svg::area_map_svg_banded(&site, &result, &map, &by_high);
    assert!(text.contains("Exposure ratio to T2") && text.contains("(3000 – 6000 µT)"), "legend in T2's µT");
    let err = svg::banding_by(&map, "ieee-c95-1-2019-public").unwrap_err();
    assert!(err.contains("icnirp-2010-occupational, eu-2013-35-high"), "{err}");
}

#[test]
fn labels_of_a_bundle_of_twelve_and_of_close_positions_never_overlap_and_stay_in_the_frame() {
    // An invented cable bundle: twelve parallel conductors 2 cm apart (four
    // three-phase sets), and five positions within 0.3 m of each other
    // beside it, one near the frame's edge.
    // Explicit in-phase currents keep the assessment quick: the area's
    // maximum is proved by bounds that a balanced bundle's cancellation
    // would loosen (found while writing this test; see the closing note).
    let conductors: Vec<Value> = (0..12)
        .map(|k| {
            let y = 0.02 * f64::from(k);
            json!({"id": format!("tray-cable-{:02}", k + 1), "current": {"rms_a": 50, "phase_deg": 0},
                   "radius_m": 0.008, "path": [[-3.0, y, 1.2], [3.0, y, 1.2]]})
        })
        .collect();
    let positions: Vec<Value> = [(0.5, 0.3), (0.62, 0.32), (0.7, 0.45), (0.55, 0.5), (1.95, -1.95)]
        .iter()
        .enumerate()
        .map(|(i, (x, y))| json!({"id": format!("desk-{}", i + 1), "at": [x, y, 1.0]}))
        .collect();
    let site = parse_site(
        &json!({"name": "tray", "frequency_hz": 50, "conductors": conductors, "positions": positions,
                "areas": [{"id": "floor", "polygon": [[-2, -2], [2, -2], [2, 2], [-2, 2]], "height_m": 1.0, "spacing_m": 0.1}]})
        .to_string(),
    )
    .unwrap();
    let (map, result) = map_and_result(&site, &["icnirp-2010-public"]);
    let placed = svg::labels_of(&site, &result, &map);
    let f = svg::frame_px(&map);
    let frame = (f.x, f.y, f.x + f.w, f.y + f.h);
    // The frame holds the area: its corners map inside it.
    for (x, y) in [(-2.0, 2.0), (2.0, -2.0)] {
        let (px, py) = svg::plan_to_px(&map, x, y);
        assert!(px > frame.0 && px < frame.2 && py > frame.1 && py < frame.3);
    }
    let boxes: Vec<_> = placed.iter().map(|p| p.rect.expect("every label finds room")).collect();
    for (i, a) in boxes.iter().enumerate() {
        // Inside the plan's frame, to within rounding.
        assert!(a.x >= frame.0 - 0.01 && a.y >= frame.1 - 0.01, "{a:?} vs {frame:?}");
        assert!(a.x + a.w <= frame.2 + 0.01 && a.y + a.h <= frame.3 + 0.01, "{a:?} vs {frame:?}");
        for b in &boxes[i + 1..] {
            let apart = a.x + a.w <= b.x || b.x + b.w <= a.x || a.y + a.h <= b.y || b.y + b.h <= a.y;
            assert!(apart, "labels overlap: {a:?} and {b:?}");
        }
    }
    let text: Vec<String> = placed.iter().map(|p| p.request.lines.join(" ")).collect();
    for k in 1..=12 {
        assert!(text.iter().any(|t| t.contains(&format!("tray-cable-{k:02}"))), "cable {k} named: {text:?}");
    }
    for k in 1..=5 {
        assert!(text.iter().any(|t| t.starts_with(&format!("desk-{k}: "))), "desk {k}: {text:?}");
    }
    // The bundle is one label listing its members, not twelve.
    assert_eq!(text.iter().filter(|t| t.contains("tray-cable")).count(), 1, "{text:?}");
}

#[test]
fn a_value_on_a_band_edge_or_not_a_number_goes_to_the_higher_band() {
    let site = vertical_wire_site(5000.0, 2.0, 0.25);
    let (map, _) = map_and_result(&site, &["icnirp-2010-occupational"]);
    let b = svg::banding(&map);
    assert_eq!(b.band(0.099), 0);
    assert_eq!(b.band(0.1), 1);
    assert_eq!(b.band(0.999), 3);
    assert_eq!(b.band(1.0), 4);
    assert_eq!(b.band(2.0), 5);
    assert_eq!(b.band(1e9), 5);
    assert_eq!(b.band(f64::NAN), 5);
}

/// Simulated colour-vision deficiencies: the matrices of Machado, Oliveira
/// & Fernandes, "A physiologically-based model for simulation of color
/// vision deficiency", IEEE TVCG 15(6), 2009, severity 1.0, applied to
/// linear sRGB (values from memory).
const PROTAN: [[f64; 3]; 3] =
    [[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216], [-0.003882, -0.048116, 1.051998]];
const DEUTAN: [[f64; 3]; 3] =
    [[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413], [-0.011820, 0.042940, 0.968881]];
const TRITAN: [[f64; 3]; 3] =
    [[1.255528, -0.076749, -0.178779], [-0.078411, 0.930809, 0.147602], [0.004733, 0.691367, 0.303900]];

/// CIE L*a*b* (D65) of linear sRGB (IEC 61966-2-1 matrix, CIE 15 formulas).
fn lab(lin: [f64; 3]) -> [f64; 3] {
    let [r, g, b] = lin.map(|v| v.clamp(0.0, 1.0));
    let x = (0.4124 * r + 0.3576 * g + 0.1805 * b) / 0.95047;
    let y = 0.2126 * r + 0.7152 * g + 0.0722 * b;
    let z = (0.0193 * r + 0.1192 * g + 0.9505 * b) / 1.08883;
    let f = |t: f64| if t > 216.0 / 24389.0 { t.cbrt() } else { (24389.0 / 27.0 * t + 16.0) / 116.0 };
    [116.0 * f(y) - 16.0, 500.0 * (f(x) - f(y)), 200.0 * (f(y) - f(z))]
}

fn linear([r, g, b]: [u8; 3]) -> [f64; 3] {
    [r, g, b].map(|v| {
        let c = f64::from(v) / 255.0;
        if c <= 0.04045 { c / 12.92 } else { ((c + 0.055) / 1.055).powf(2.4) }
    })
}

#[test]
fn the_bands_stay_apart_in_grey_and_under_simulated_colour_vision_deficiencies() {
    let identity = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]];
    for (name, m) in [("normal", identity), ("protan", PROTAN), ("deutan", DEUTAN), ("tritan", TRITAN)] {
        let labs: Vec<[f64; 3]> = (0..palette::BANDS)
            .map(|k| {
                let c = linear(palette::band_colour(k));
                lab(m.map(|row| row[0] * c[0] + row[1] * c[1] + row[2] * c[2]))
            })
            .collect();
        for w in labs.windows(2) {
            // Lightness alone orders the bands (so a grey print reads), by
            // at least 12.5 L* units between neighbours (a step anyone sees;
            // threshold our choice, common practice, no source).
            assert!(w[0][0] - w[1][0] >= 12.5, "{name}: L* {:.1} then {:.1}", w[0][0], w[1][0]);
        }
    }
}

#[test]
fn the_csv_parses_and_carries_the_numbers_of_the_json_result() {
    let site = vertical_wire_site(1000.0, 2.0, 0.25);
    let (_, result) = map_and_result(&site, &["icnirp-2010-occupational", "eu-2013-35-high"]);
    let text = csv_export::positions_csv(&result);
    let mut reader = csv::Reader::from_reader(text.as_bytes());
    let headers: Vec<String> = reader.headers().unwrap().iter().map(String::from).collect();
    assert_eq!(headers, csv_export::CSV_HEADER);
    let rows: Vec<csv::StringRecord> = reader.records().map(|r| r.unwrap()).collect();
    assert_eq!(rows.len(), 2 * 2, "2 positions × 1 point × 2 tables");
    let json = serde_json::to_value(&result).unwrap();
    let near = &json["positions"][0]["heights"][0];
    let row = &rows[0];
    assert_eq!(&row[2], "near");
    assert_eq!(row[9].parse::<f64>().unwrap(), near["resultant_ut"].as_f64().unwrap());
    assert_eq!(row[14].parse::<f64>().unwrap(), near["comparisons"][0]["ratio"].as_f64().unwrap());
    assert_eq!(&row[15], near["comparisons"][0]["verdict"].as_str().unwrap());
    // 0.2 · 1000 / 0.3 = 666.67 µT (OpenStax §12.2).
    assert!((row[9].parse::<f64>().unwrap() - 200.0 / 0.3).abs() < 1e-4);
}

#[test]
fn csv_text_cells_that_a_spreadsheet_would_run_as_a_formula_are_defused_and_quoted() {
    // Rule: OWASP "CSV Injection" (from memory): cells starting with =, +,
    // -, @, tab or carriage return get a leading ' and are quoted.
    for (raw, want) in [
        ("=HYPERLINK(\"x\")", "\"'=HYPERLINK(\"\"x\"\")\""),
        ("+1+1", "\"'+1+1\""),
        ("-2+3", "\"'-2+3\""),
        ("@SUM(A1)", "\"'@SUM(A1)\""),
        ("\t=1", "\"'\t=1\""),
        ("\r=1", "\"'\r=1\""),
        ("desk 1", "desk 1"),
        ("a,b", "\"a,b\""),
        ("a=b", "a=b"),
    ] {
        assert_eq!(csv_export::text_cell(raw), want, "{raw:?}");
    }
}

#[test]
fn a_csv_export_defuses_formula_ids_and_leaves_negative_numbers_as_numbers() {
    // A position with a formula-like id, placed at negative coordinates.
    let mut doc: Value = serde_json::from_str(
        &std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/../../examples/site-switch-room.json")).unwrap(),
    )
    .unwrap();
    doc["name"] = json!("=cmd|' /C calc'!A0");
    doc["positions"] = json!([{"id": "-1+2", "at": [-1.5, -0.25, 1.0]}]);
    doc.as_object_mut().unwrap().remove("areas");
    let site = parse_site(&doc.to_string()).unwrap();
    let result =
        assess::assess(&site, &LoadCase::Present, &tables(&["icnirp-2010-occupational"]), &Options::default()).unwrap();
    let text = csv_export::positions_csv(&result);
    let mut reader = csv::Reader::from_reader(text.as_bytes());
    let row = reader.records().next().unwrap().unwrap();
    assert_eq!(&row[0], "'=cmd|' /C calc'!A0");
    assert_eq!(&row[2], "'-1+2");
    // Coordinates are numbers: written bare, minus sign first, no prefix.
    // Exact: the CSV writes f64 by Display, which round-trips.
    assert_eq!(&row[6], "-1.5");
    assert_eq!(row[7].parse::<f64>().unwrap(), -0.25);
    assert!(text.contains(",-1.5,-0.25,1,"), "{text}");
}

#[test]
fn the_geojson_is_a_feature_collection_with_the_same_numbers_in_the_local_frame() {
    let site = vertical_wire_site(5000.0, 2.0, 0.05);
    let (map, result) = map_and_result(&site, &["icnirp-2010-occupational"]);
    let doc: Value = serde_json::from_str(&geojson::assessment_geojson(&site, &result, &[map]).to_string()).unwrap();
    assert_eq!(doc["type"], "FeatureCollection");
    assert_eq!(doc["coordinate_frame"], "site-local-metres");
    assert!(doc.get("coordinate_conversion").is_none(), "no conversion in the local frame");
    let features = doc["features"].as_array().unwrap();
    fn kind<'a>(features: &'a [Value], k: &'a str) -> impl Iterator<Item = &'a Value> + 'a {
        features.iter().filter(move |f| f["properties"]["kind"] == k)
    }
    let near = kind(features, "position").find(|f| f["properties"]["id"] == "near").unwrap();
    assert_eq!(near["geometry"]["coordinates"], json!([0.3, 0.0, 0.0]));
    assert_eq!(near["properties"]["max_resultant_ut"], json!(result.positions[0].max_resultant_ut));
    let zone = kind(features, "zone").find(|f| f["properties"]["threshold"] == "level").unwrap();
    let ring = &zone["geometry"]["coordinates"][0][0];
    let pts: Vec<[f64; 2]> =
        ring.as_array().unwrap().iter().map(|p| [p[0].as_f64().unwrap(), p[1].as_f64().unwrap()]).collect();
    // RFC 7946 §3.1.6: exterior rings counter-clockwise; the zone is the
    // 1 m disc (0.2 · 5000 / 1000 µT), area π within one grid spacing band.
    assert!(contour::signed_area2(&pts) > 0.0);
    let area = contour::signed_area2(&pts) / 2.0;
    assert!((area - std::f64::consts::PI).abs() < 2.0 * std::f64::consts::PI * 0.05, "{area}");
    assert_eq!(kind(features, "conductor").count(), 1);
}

/// Position difference in metres between two WGS 84 points a few metres
/// apart at most: latitude and longitude differences times the meridional
/// and prime-vertical radii of curvature at `lat_deg` (M and N, WGS 84
/// a = 6 378 137 m, f = 1/298.257223563; docs/REFERENCES.md, M). The
/// longitude difference is wrapped into [−180°, 180°] so that a case across
/// the antimeridian compares like any other.
fn geodetic_difference_m(lon: f64, lat: f64, ref_lon: f64, ref_lat: f64) -> f64 {
    let (a, f) = (6_378_137.0, 1.0 / 298.257_223_563);
    let e2 = f * (2.0 - f);
    let phi = ref_lat.to_radians();
    let w = (1.0 - e2 * phi.sin().powi(2)).sqrt();
    let (m, n) = (a * (1.0 - e2) / (w * w * w), a / w);
    let dlon = (lon - ref_lon + 540.0).rem_euclid(360.0) - 180.0;
    let north = (lat - ref_lat).to_radians() * m;
    let east = dlon.to_radians() * n * phi.cos();
    north.hypot(east)
}

/// The worst position difference (m) of `geo::to_lon_lat` over a fixture of
/// GeographicLib direct solutions, and the number of cases.
fn worst_against_geographiclib(fixture: &str) -> (f64, usize) {
    let fixture: Value = serde_json::from_str(fixture).unwrap();
    let cases = fixture["cases"].as_array().unwrap();
    let mut worst = 0.0f64;
    for c in cases {
        let f = |k: &str| c[k].as_f64().unwrap();
        let g = GeoreferenceDoc {
            origin_lon_deg: f("origin_lon_deg"),
            origin_lat_deg: f("origin_lat_deg"),
            y_axis_bearing_deg: f("y_axis_bearing_deg"),
        };
        let [lon, lat] = geo::to_lon_lat(&g, f("x_m"), f("y_m"));
        let err = geodetic_difference_m(lon, lat, f("lon_deg"), f("lat_deg"));
        assert!(err.is_finite(), "{c}");
        worst = worst.max(err);
    }
    (worst, cases.len())
}

#[test]
fn the_georeference_agrees_with_geographiclib_within_a_centimetre_up_to_10_km_and_70_degrees() {
    // Source: tests/conformance/geographiclib/direct-10km.json, made by
    // GeographicLib 2.1 (Python, Geodesic.WGS84.Direct; Karney, J. Geodesy
    // 87, 2013): 480 local points up to 10 km from origins at latitudes
    // 0–70° north and south and one across the antimeridian, four bearings
    // of the y axis. Requirement (issue 10): within 1 cm. Both sides solve
    // the same geodesic problem, so this checks the crate and our frame
    // conversion (axis order, bearing sign, azimuth); they agree to
    // rounding (about 1e-9 m), far inside the requirement.
    let (worst, n) = worst_against_geographiclib(include_str!("../../conformance/geographiclib/direct-10km.json"));
    assert_eq!(n, 480, "the fixture holds every case the generator writes");
    assert!(worst < 0.01, "worst difference {worst} m");
    eprintln!("georeference vs GeographicLib, {n} cases to 10 km: worst {worst:.2e} m");
}

#[test]
fn the_georeference_agrees_with_geographiclib_on_the_first_fixture_within_a_centimetre() {
    // Source: tests/conformance/geographiclib/fixture.json (GeographicLib
    // 2.1, 144 cases to 2.8 km, latitudes −34° to 59°). The local tangent
    // plane used before was allowed 1 m here (issue 10 measured 1.38 m at
    // 3 km, 60°); the geodesic solution must be within the same 1 cm.
    let (worst, n) = worst_against_geographiclib(include_str!("../../conformance/geographiclib/fixture.json"));
    assert_eq!(n, 144);
    assert!(worst < 0.01, "worst difference {worst} m");
}

#[test]
fn the_georeference_origin_maps_to_itself_and_the_y_axis_bearing_turns_the_frame_clockwise() {
    // Hand check independent of any library: the origin maps to itself
    // exactly (no distance travelled); with the y axis at bearing 90° a point
    // on +y lies due east, so its latitude stays within the geodesic's
    // curvature term (10 m east at 45°: Δφ ≈ d² tanφ / (2 N M) ≈ 7e-11°,
    // compared with 1e-9°) and its longitude grows.
    let g = GeoreferenceDoc { origin_lon_deg: 9.19, origin_lat_deg: 45.46, y_axis_bearing_deg: 90.0 };
    assert_eq!(geo::to_lon_lat(&g, 0.0, 0.0), [9.19, 45.46]);
    let [lon, lat] = geo::to_lon_lat(&g, 0.0, 10.0);
    assert!((lat - 45.46).abs() < 1e-9 && lon > 9.19, "{lon} {lat}");
    let [lon_w, _] = geo::to_lon_lat(&g, -10.0, 0.0);
    assert!((lon_w - 9.19).abs() < 1e-9, "−x points north when +y points east: {lon_w}");
}

#[test]
fn a_georeferenced_site_exports_longitude_and_latitude() {
    let mut doc: Value = serde_json::from_str(
        &std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/../../examples/site-switch-room.json")).unwrap(),
    )
    .unwrap();
    doc["georeference"] = json!({"origin_lon_deg": 9.19, "origin_lat_deg": 45.46, "y_axis_bearing_deg": 0});
    let site = parse_site(&doc.to_string()).unwrap();
    let t = tables(&["icnirp-2010-occupational"]);
    let result = assess::assess(&site, &LoadCase::Present, &t, &Options::default()).unwrap();
    let out = geojson::assessment_geojson(&site, &result, &[]);
    assert_eq!(out["coordinate_frame"], "wgs84-lon-lat");
    assert!(out["coordinate_conversion"].as_str().unwrap().contains("geodesic direct"));
    let p = out["features"].as_array().unwrap().iter().find(|f| f["properties"]["id"] == "desk-1").unwrap();
    let lon = p["geometry"]["coordinates"][0].as_f64().unwrap();
    let lat = p["geometry"]["coordinates"][1].as_f64().unwrap();
    assert!((lon - 9.19).abs() < 0.001 && (lat - 45.46).abs() < 0.001, "{lon} {lat}");
}

/// Area of the disc of radius `r` around `c` inside the axis-aligned
/// rectangle `[x0, x1] × [y0, y1]`, by the midpoint rule in x over the
/// exact chord length: 200 000 strips, error below 1e-6 m² here.
fn disc_in_rectangle(c: [f64; 2], r: f64, [x0, x1, y0, y1]: [f64; 4]) -> f64 {
    let n = 200_000;
    let (a, b) = (x0.max(c[0] - r), x1.min(c[0] + r));
    if a >= b {
        return 0.0;
    }
    let h = (b - a) / n as f64;
    (0..n)
        .map(|k| {
            let x = a + (k as f64 + 0.5) * h;
            let half = (r * r - (x - c[0]).powi(2)).max(0.0).sqrt();
            ((c[1] + half).min(y1) - (c[1] - half).max(y0)).max(0.0) * h
        })
        .sum()
}

#[test]
fn a_zone_in_an_l_shaped_area_is_clipped_to_the_polygon_and_has_the_discs_area_inside_it() {
    // An L of two rectangles, [0, 6] × [0, 2] and [0, 2] × [2, 6]; its notch
    // [2, 6] × [2, 6] is outside the area. A long vertical wire at (3, 3)
    // in the notch, 1000 A: B ≥ 100 µT within r = 0.2 · 1000 / 100 = 2 m
    // (infinite-wire law, OpenStax Vol. 2 §12.2). The zone at 100 µT is the
    // disc's part inside the L, computed here by exact chord lengths over
    // the two rectangles (they meet only along y = 2).
    let site = parse_site(
        &json!({
            "frequency_hz": 50,
            "circuits": [{"id": "v", "kind": "single_phase", "current_a": 1000}],
            "conductors": [{"id": "v-A", "circuit": "v", "phase": "A", "radius_m": 0.02, "path": [[3.0, 3.0, -L], [3.0, 3.0, L]]}],
            "areas": [{"id": "ell", "polygon": [[0, 0], [6, 0], [6, 2], [2, 2], [2, 6], [0, 6]], "height_m": 0.0, "spacing_m": 0.05}]
        })
        .to_string(),
    )
    .unwrap();
    let (map, _) = map_and_result(&site, &["icnirp-2010-occupational"]);
    let s = map.grid.spacing_m;
    assert!((s - 0.05).abs() < 1e-12, "the map kept the area's spacing");
    let zones = contour::clipped_zones(&map.grid, &map.b_ut, &map.inside_conductor, 100.0, &map.polygon);
    let area: f64 = zones.iter().map(contour::zone_area).sum();
    let exact = disc_in_rectangle([3.0, 3.0], 2.0, [0.0, 6.0, 0.0, 2.0])
        + disc_in_rectangle([3.0, 3.0], 2.0, [0.0, 2.0, 2.0, 6.0]);
    // One grid band: the zone's edge inside the L is two quarter-ish arcs,
    // shorter than the full circle 2π·2 m; a band of one spacing along it.
    let band = std::f64::consts::TAU * 2.0 * s;
    assert!((area - exact).abs() <= band, "zone {area} m², exact {exact} m², band {band} m²");
    // Every vertex lies in the closed L (1e-9 m: the clipper's rounding),
    // none in the notch, and the rings are closed.
    for ring in zones.iter().flatten() {
        assert_eq!(ring.first(), ring.last());
        for p in ring {
            let in_l = (-1e-9..=6.0 + 1e-9).contains(&p[0])
                && (-1e-9..=6.0 + 1e-9).contains(&p[1])
                && !(p[0] > 2.0 + 1e-9 && p[1] > 2.0 + 1e-9);
            assert!(in_l, "zone vertex {p:?} outside the L");
        }
    }
    // The zone closes along the polygon: it has vertices on the inner edges
    // x = 2 and y = 2 (where the disc crosses them), not half a cell in.
    let on = |f: &dyn Fn(&[f64; 2]) -> bool| zones.iter().flatten().flatten().any(f);
    assert!(on(&|p| (p[0] - 2.0).abs() < 1e-9 && p[1] > 2.5));
    assert!(on(&|p| (p[1] - 2.0).abs() < 1e-9 && p[0] > 2.5));
}
