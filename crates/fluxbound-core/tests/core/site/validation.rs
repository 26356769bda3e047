//! One test per validation rule: each checks the exact RFC 6901 pointer and a
//! distinctive part of the message. Documents start from a valid base site
//! and change one thing.

use fluxbound_core::site::wire::{ConductorDoc, CurrentDoc, PositionDoc, SiteDoc};
use fluxbound_core::site::{Placement, Pointer, Problem, parse_site, validate_site};
use serde_json::{Value, json};

/// A valid site that uses every kind of object: a three-phase feeder with
/// harmonics and its neutral, a single-phase circuit, an explicitly driven
/// conductor, a standing point, a 3-D point and a work area.
fn base() -> Value {
    let line = |y: f64| json!([[0.0, y, 3.0], [50.0, y, 3.0], [100.0, y, 3.0]]);
    json!({
        "name": "Substation 7",
        "frequency_hz": 50,
        "circuits": [
            {
                "id": "feeder",
                "kind": "three_phase",
                "current_a": 100,
                "rated_current_a": 400,
                "angle_deg": 0,
                "harmonics": [{ "order": 3, "percent": 10 }, { "order": 5, "percent": 5 }]
            },
            { "id": "lighting", "kind": "single_phase", "current_a": 20 }
        ],
        "conductors": [
            { "id": "a", "path": line(0.0), "radius_m": 0.01, "circuit": "feeder", "phase": "A" },
            { "id": "b", "path": line(0.3), "radius_m": 0.01, "circuit": "feeder", "phase": "B" },
            { "id": "c", "path": line(0.6), "radius_m": 0.01, "circuit": "feeder", "phase": "C" },
            { "id": "n", "path": line(0.9), "radius_m": 0.01, "circuit": "feeder", "phase": "N" },
            { "id": "l1", "path": line(2.0), "radius_m": 0.002, "circuit": "lighting", "phase": "A", "share": 0.5 },
            { "id": "earth", "path": line(-1.0), "radius_m": 0.005, "current": { "rms_a": 5, "phase_deg": 30 } }
        ],
        "positions": [
            { "id": "desk", "at": [10, 2] },
            { "id": "ladder", "at": [10, 2, 2.5], "occupancy_h": 0.5 }
        ],
        "areas": [
            {
                "id": "floor",
                "polygon": [[0, -5], [20, -5], [20, 5], [0, 5]],
                "height_m": 1.0,
                "spacing_m": 1.0,
                "occupancy_h": 8
            }
        ]
    })
}

/// Sets (or adds) the value at `pointer`, whose parent must exist.
fn set(doc: &mut Value, pointer: &str, value: Value) {
    let (parent, key) = pointer.rsplit_once('/').expect("pointer below the root");
    match doc.pointer_mut(parent) {
        Some(Value::Object(map)) => {
            map.insert(key.to_owned(), value);
        }
        Some(Value::Array(items)) => {
            let i: usize = key.parse().expect("array index");
            if i == items.len() {
                items.push(value);
            } else {
                items[i] = value;
            }
        }
        _ => panic!("no object or array at {parent:?}"),
    }
}

/// Removes the value at `pointer`, which must exist.
fn remove(doc: &mut Value, pointer: &str) {
    let (parent, key) = pointer.rsplit_once('/').expect("pointer below the root");
    let removed = match doc.pointer_mut(parent) {
        Some(Value::Object(map)) => map.remove(key),
        Some(Value::Array(items)) => Some(items.remove(key.parse().expect("array index"))),
        _ => None,
    };
    assert!(removed.is_some(), "nothing to remove at {pointer:?}");
}

/// The base site with one value set.
fn base_with(pointer: &str, value: Value) -> Value {
    let mut doc = base();
    set(&mut doc, pointer, value);
    doc
}

/// The problems `parse_site` reports for `doc`; panics if it is accepted.
fn problems(doc: Value) -> Vec<Problem> {
    problems_of_text(&doc.to_string())
}

fn problems_of_text(text: &str) -> Vec<Problem> {
    match parse_site(text) {
        Ok(_) => panic!("document was accepted: {text}"),
        Err(problems) => problems.0,
    }
}

/// Asserts that one of `problems` is at `pointer` and mentions `fragment`.
#[track_caller]
fn assert_problem(problems: &[Problem], pointer: &str, fragment: &str) {
    assert!(
        problems.iter().any(|p| p.pointer == pointer && p.detail.contains(fragment)),
        "expected a problem at {pointer:?} mentioning {fragment:?}, got {problems:#?}"
    );
}

/// Asserts that `doc` has exactly one problem, at `pointer`, mentioning
/// `fragment`.
#[track_caller]
fn assert_only_problem(doc: Value, pointer: &str, fragment: &str) {
    let problems = problems(doc);
    assert_eq!(problems.len(), 1, "expected one problem, got {problems:#?}");
    assert_problem(&problems, pointer, fragment);
}

#[test]
fn the_base_document_is_valid() {
    let site = parse_site(&base().to_string()).expect("base site is valid");
    assert_eq!(site.circuits().len(), 2);
    assert_eq!(site.conductors().len(), 6);
    assert_eq!(site.positions().len(), 2);
    assert_eq!(site.areas().len(), 1);
}

#[test]
fn a_standing_point_without_heights_gets_the_default_body_heights() {
    let site = parse_site(&base().to_string()).expect("base site is valid");
    let Placement::Standing { x_m, y_m, heights_m } = &site.positions()[0].placement else {
        panic!("[x, y] should be a standing point: {:?}", site.positions()[0].placement);
    };
    // The inputs are small integers and the heights are copied from a
    // constant, so anything beyond f64 rounding of a literal is a bug.
    let tol = 1e-12;
    assert!((x_m - 10.0).abs() < tol && (y_m - 2.0).abs() < tol);
    let expected = [0.5, 1.0, 1.5];
    assert_eq!(heights_m.len(), expected.len());
    for (h, e) in heights_m.iter().zip(expected) {
        assert!((h - e).abs() < tol, "heights {heights_m:?}, expected {expected:?}");
    }
    assert!(matches!(site.positions()[1].placement, Placement::Point(_)));
}

// --- Shape errors: reported by serde via serde_path_to_error, first only ---

#[test]
fn an_unknown_field_at_the_root_is_reported_at_a_pointer_to_that_field() {
    let problems = problems(base_with("/colour", json!("red")));
    assert_eq!(problems.len(), 1);
    assert_problem(&problems, "/colour", "unknown key 'colour'");
}

#[test]
fn an_unknown_field_in_a_nested_object_is_reported_at_a_pointer_to_that_field() {
    let problems = problems(base_with("/conductors/5/current/rms_ka", json!(0.005)));
    assert_eq!(problems.len(), 1);
    assert_problem(&problems, "/conductors/5/current/rms_ka", "unknown key 'rms_ka'");
}

#[test]
fn a_misspelt_optional_field_is_an_error_not_a_silent_default() {
    let problems = problems(base_with("/positions/0/hieghts_m", json!([1.0])));
    assert_problem(&problems, "/positions/0/hieghts_m", "unknown key 'hieghts_m'");
}

#[test]
fn an_unknown_field_whose_name_contains_a_slash_or_tilde_is_escaped_in_the_pointer() {
    let problems = problems(base_with("/circuits/0/x", json!(1)));
    assert_problem(&problems, "/circuits/0/x", "unknown key");
    let mut doc = base();
    doc["circuits"][0].as_object_mut().unwrap().insert("a/b~c".into(), json!(1));
    assert_problem(&problems_of_text(&doc.to_string()), "/circuits/0/a~1b~0c", "unknown key 'a/b~c'");
}

#[test]
fn a_value_of_the_wrong_json_type_is_reported_at_its_pointer() {
    let problems = problems(base_with("/circuits/0/current_a", json!("100 A")));
    assert_eq!(problems.len(), 1);
    assert_problem(&problems, "/circuits/0/current_a", "the text \"100 A\" is given where a number is needed");
}

#[test]
fn a_missing_required_field_is_reported_at_the_enclosing_object() {
    let mut doc = base();
    remove(&mut doc, "/areas/0/spacing_m");
    assert_problem(&problems(doc), "/areas/0", "the required key 'spacing_m' is missing");
}

#[test]
fn a_number_too_large_for_an_f64_is_reported_as_out_of_range() {
    // serde_json cannot put 1e999 into an f64 (it would be infinite), so it
    // is a shape error raised while parsing, not a validation rule.
    let text = base().to_string().replacen("\"frequency_hz\":50", "\"frequency_hz\":1e999", 1);
    assert!(text.contains("1e999"), "substitution failed: {text}");
    let problems = problems_of_text(&text);
    assert_eq!(problems.len(), 1);
    assert_problem(&problems, "/frequency_hz", "number out of range (not a finite 64-bit value)");
}

#[test]
fn malformed_json_is_reported_with_its_line_and_column() {
    let text = "{\n  \"frequency_hz\": 50,\n  \"conductors\": [\n    {\"id\": \"a\",, }\n  ]\n}";
    let problems = problems_of_text(text);
    assert_eq!(problems.len(), 1);
    // serde_path_to_error reports how far the path got: the conductor object.
    assert_problem(&problems, "/conductors/0", "an object key must be text in double quotes (line 4, column 16)");
}

#[test]
fn trailing_content_after_the_document_is_rejected_at_the_root() {
    let text = format!("{} {{}}", base());
    let problems = problems_of_text(&text);
    assert_eq!(problems.len(), 1);
    assert_problem(&problems, "", "there is more text after the end of the document");
    assert!(problems[0].detail.contains("(line 1, column"), "{problems:?}");
}

// --- Frequency and geometry ---

#[test]
fn a_frequency_below_1_hz_is_rejected() {
    assert_only_problem(
        base_with("/frequency_hz", json!(0.5)),
        "/frequency_hz",
        "frequency must be between 1 and 3000 Hz",
    );
}

#[test]
fn a_frequency_above_3000_hz_is_rejected() {
    assert_only_problem(
        base_with("/frequency_hz", json!(3000.5)),
        "/frequency_hz",
        "frequency must be between 1 and 3000 Hz",
    );
}

#[test]
fn the_frequency_limits_themselves_are_accepted() {
    for f in [1.0, 3000.0] {
        parse_site(&base_with("/frequency_hz", json!(f)).to_string()).expect("limit is inclusive");
    }
}

#[test]
fn a_coordinate_beyond_100_km_of_the_origin_is_rejected() {
    assert_only_problem(
        base_with("/conductors/1/path/2/0", json!(100_000.5)),
        "/conductors/1/path/2/0",
        "coordinate is beyond ±100000 m of the site origin",
    );
    assert_only_problem(
        base_with("/positions/0/at/1", json!(-100_001)),
        "/positions/0/at/1",
        "coordinate is beyond ±100000 m",
    );
}

#[test]
fn a_path_with_fewer_than_2_vertices_is_rejected() {
    assert_only_problem(
        base_with("/conductors/0/path", json!([[0, 0, 3]])),
        "/conductors/0/path",
        "a path needs at least 2 vertices",
    );
}

#[test]
fn a_zero_length_segment_points_at_the_repeated_vertex() {
    assert_only_problem(
        base_with("/conductors/0/path", json!([[0, 0, 3], [50, 0, 3], [50, 0, 3], [100, 0, 3]])),
        "/conductors/0/path/2",
        "segment 1 → 2 has zero length",
    );
}

#[test]
fn a_radius_of_zero_or_less_is_rejected() {
    for r in [0.0, -0.01] {
        assert_only_problem(
            base_with("/conductors/0/radius_m", json!(r)),
            "/conductors/0/radius_m",
            "radius must be positive",
        );
    }
}

#[test]
fn a_radius_outside_0_1_mm_to_2_m_is_rejected() {
    for r in [5.0e-5, 2.5] {
        assert_only_problem(
            base_with("/conductors/0/radius_m", json!(r)),
            "/conductors/0/radius_m",
            "must be between 0.0001 and 2 m",
        );
    }
}

// --- How a conductor is driven ---

#[test]
fn a_reference_to_an_unknown_circuit_is_rejected() {
    assert_only_problem(
        base_with("/conductors/0/circuit", json!("fedeer")),
        "/conductors/0/circuit",
        "unknown circuit 'fedeer'",
    );
}

#[test]
fn a_conductor_on_a_circuit_needs_a_phase() {
    let mut doc = base();
    remove(&mut doc, "/conductors/0/phase");
    assert_only_problem(doc, "/conductors/0/phase", "phase is required with circuit");
}

#[test]
fn phase_b_or_c_on_a_single_phase_circuit_is_rejected() {
    for phase in ["B", "C"] {
        assert_only_problem(
            base_with("/conductors/4/phase", json!(phase)),
            "/conductors/4/phase",
            "circuit 'lighting' is single-phase: use phase A or N",
        );
    }
}

#[test]
fn a_conductor_with_both_a_circuit_and_a_current_is_rejected() {
    assert_only_problem(base_with("/conductors/0/current", json!({ "rms_a": 1 })), "/conductors/0", "not both");
}

#[test]
fn a_conductor_with_neither_a_circuit_nor_a_current_is_rejected() {
    let mut doc = base();
    remove(&mut doc, "/conductors/5/current");
    assert_only_problem(doc, "/conductors/5", "a conductor needs either circuit and phase, or an explicit current");
}

#[test]
fn a_share_outside_0_exclusive_to_1_inclusive_is_rejected() {
    for share in [0.0, -0.5, 1.01] {
        assert_only_problem(
            base_with("/conductors/4/share", json!(share)),
            "/conductors/4/share",
            "share must be greater than 0 and at most 1",
        );
    }
    parse_site(&base_with("/conductors/4/share", json!(1.0)).to_string()).expect("share 1 is allowed");
}

#[test]
fn a_share_with_an_explicit_current_is_rejected() {
    assert_only_problem(
        base_with("/conductors/5/share", json!(0.5)),
        "/conductors/5/share",
        "share applies only with circuit",
    );
}

#[test]
fn a_phase_with_an_explicit_current_is_rejected() {
    assert_only_problem(
        base_with("/conductors/5/phase", json!("A")),
        "/conductors/5/phase",
        "phase applies only with circuit",
    );
}

// --- Ids ---

/// The base site with a copy of `/list/0` appended to `list`.
fn with_duplicate_of_first(list: &str) -> (Value, usize) {
    let mut doc = base();
    let items = doc[list].as_array_mut().unwrap();
    items.push(items[0].clone());
    let i = items.len() - 1;
    (doc, i)
}

#[test]
fn duplicate_circuit_ids_are_rejected_and_point_at_the_second() {
    let (doc, i) = with_duplicate_of_first("circuits");
    assert_only_problem(doc, &format!("/circuits/{i}/id"), "duplicate circuit id 'feeder' (first used at /circuits/0)");
}

#[test]
fn duplicate_conductor_ids_are_rejected_and_point_at_the_second() {
    let (doc, i) = with_duplicate_of_first("conductors");
    assert_only_problem(
        doc,
        &format!("/conductors/{i}/id"),
        "duplicate conductor id 'a' (first used at /conductors/0)",
    );
}

#[test]
fn duplicate_position_ids_are_rejected_and_point_at_the_second() {
    let (doc, i) = with_duplicate_of_first("positions");
    assert_only_problem(
        doc,
        &format!("/positions/{i}/id"),
        "duplicate position id 'desk' (first used at /positions/0)",
    );
}

#[test]
fn duplicate_area_ids_are_rejected_and_point_at_the_second() {
    let (doc, i) = with_duplicate_of_first("areas");
    assert_only_problem(doc, &format!("/areas/{i}/id"), "duplicate area id 'floor' (first used at /areas/0)");
}

#[test]
fn the_same_id_in_different_lists_is_allowed() {
    let doc = base_with("/areas/0/id", json!("desk"));
    parse_site(&doc.to_string()).expect("ids are unique per list only");
}

#[test]
fn a_duplicated_circuit_id_adds_no_follow_on_problems_to_the_conductors_that_use_it() {
    // The second "feeder" is single-phase; conductors b and c (phases B and C
    // of feeder) should not be reported as using a single-phase circuit.
    let mut doc = base();
    doc["circuits"].as_array_mut().unwrap().push(json!({ "id": "feeder", "kind": "single_phase", "current_a": 1 }));
    let problems = problems(doc);
    assert_eq!(problems.len(), 1, "expected only the duplicate id, got {problems:#?}");
    assert_problem(&problems, "/circuits/2/id", "duplicate circuit id 'feeder'");
}

#[test]
fn an_empty_or_blank_id_is_rejected() {
    for id in ["", "   "] {
        assert_only_problem(base_with("/conductors/2/id", json!(id)), "/conductors/2/id", "id must not be empty");
    }
}

#[test]
fn an_id_longer_than_64_characters_is_rejected() {
    parse_site(&base_with("/positions/1/id", json!("é".repeat(64))).to_string()).expect("64 characters are allowed");
    assert_only_problem(
        base_with("/positions/1/id", json!("é".repeat(65))),
        "/positions/1/id",
        "id is longer than 64 characters",
    );
}

#[test]
fn an_id_with_a_control_character_is_rejected() {
    assert_only_problem(
        base_with("/areas/0/id", json!("floor\n2")),
        "/areas/0/id",
        "text must not contain control characters (found U+000A, a line feed, at character 6)",
    );
}

#[test]
fn a_site_name_longer_than_200_characters_is_rejected() {
    assert_only_problem(base_with("/name", json!("x".repeat(201))), "/name", "name is longer than 200 characters");
}

// --- Circuit currents, angles and harmonics ---

#[test]
fn a_current_above_1_ma_is_rejected_as_a_likely_unit_slip() {
    assert_only_problem(
        base_with("/circuits/0/current_a", json!(1.5e6)),
        "/circuits/0/current_a",
        "current above 1e6 A is not plausible; check the units",
    );
    assert_only_problem(
        base_with("/conductors/5/current/rms_a", json!(2.0e6)),
        "/conductors/5/current/rms_a",
        "current above 1e6 A is not plausible",
    );
}

#[test]
fn a_negative_current_is_rejected() {
    assert_only_problem(
        base_with("/circuits/1/current_a", json!(-20)),
        "/circuits/1/current_a",
        "current must not be negative (use the angle to reverse a phasor)",
    );
}

#[test]
fn a_rated_current_of_zero_or_less_is_rejected() {
    for r in [0.0, -400.0] {
        assert_only_problem(
            base_with("/circuits/0/rated_current_a", json!(r)),
            "/circuits/0/rated_current_a",
            "rated current must be positive",
        );
    }
}

#[test]
fn an_angle_beyond_360_degrees_either_way_is_rejected() {
    assert_only_problem(
        base_with("/circuits/0/angle_deg", json!(360.5)),
        "/circuits/0/angle_deg",
        "must be between -360 and 360 degrees",
    );
    assert_only_problem(
        base_with("/conductors/5/current/phase_deg", json!(-361)),
        "/conductors/5/current/phase_deg",
        "must be between -360 and 360 degrees",
    );
}

#[test]
fn a_phase_b_override_on_a_single_phase_circuit_is_rejected() {
    assert_only_problem(
        base_with("/circuits/1/phases", json!({ "B": { "current_a": 10 } })),
        "/circuits/1/phases/B",
        "a single-phase circuit has no phase B",
    );
}

#[test]
fn a_per_phase_override_is_range_checked_at_its_own_pointer() {
    assert_only_problem(
        base_with("/circuits/0/phases", json!({ "C": { "current_a": -1, "angle_deg": 120 } })),
        "/circuits/0/phases/C/current_a",
        "current must not be negative",
    );
}

#[test]
fn a_harmonic_order_below_2_or_above_50_is_rejected() {
    for order in [0, 1, 51] {
        assert_only_problem(
            base_with("/circuits/0/harmonics/0/order", json!(order)),
            "/circuits/0/harmonics/0/order",
            "harmonic order must be between 2 and 50",
        );
    }
}

#[test]
fn a_harmonic_order_listed_twice_is_rejected_at_the_second() {
    assert_only_problem(
        base_with("/circuits/0/harmonics/1/order", json!(3)),
        "/circuits/0/harmonics/1/order",
        "harmonic order 3 is listed twice",
    );
}

#[test]
fn a_harmonic_above_100_percent_is_rejected() {
    assert_only_problem(
        base_with("/circuits/0/harmonics/1/percent", json!(100.5)),
        "/circuits/0/harmonics/1/percent",
        "must be between 0 and 100 percent of the fundamental",
    );
}

// --- Positions ---

#[test]
fn a_position_with_1_or_4_numbers_is_rejected() {
    for at in [json!([10]), json!([10, 2, 1, 0])] {
        assert_only_problem(
            base_with("/positions/0/at", at),
            "/positions/0/at",
            "give a standing point [x, y] or a 3-D point [x, y, z]",
        );
    }
}

#[test]
fn heights_given_with_a_3d_point_are_rejected() {
    assert_only_problem(
        base_with("/positions/1/heights_m", json!([1.0])),
        "/positions/1/heights_m",
        "heights apply to a standing point [x, y]",
    );
}

#[test]
fn a_body_height_outside_0_to_10_m_is_rejected_at_its_index() {
    assert_only_problem(
        base_with("/positions/0/heights_m", json!([1.0, 10.5])),
        "/positions/0/heights_m/1",
        "must be between 0 and 10 m above the standing point",
    );
    assert_only_problem(
        base_with("/positions/0/heights_m", json!([-0.1])),
        "/positions/0/heights_m/0",
        "must be between 0 and 10 m",
    );
}

#[test]
fn an_empty_list_of_heights_is_rejected() {
    assert_only_problem(
        base_with("/positions/0/heights_m", json!([])),
        "/positions/0/heights_m",
        "give at least one height",
    );
}

#[test]
fn more_than_16_heights_are_rejected() {
    let heights: Vec<f64> = (0..17).map(|i| f64::from(i) * 0.5).collect();
    assert_only_problem(
        base_with("/positions/0/heights_m", json!(heights)),
        "/positions/0/heights_m",
        "at most 16 heights",
    );
}

#[test]
fn an_occupancy_above_24_hours_is_rejected() {
    assert_only_problem(
        base_with("/positions/1/occupancy_h", json!(24.5)),
        "/positions/1/occupancy_h",
        "must be between 0 and 24 hours per day",
    );
    assert_only_problem(
        base_with("/areas/0/occupancy_h", json!(25)),
        "/areas/0/occupancy_h",
        "must be between 0 and 24 hours per day",
    );
}

// --- Areas ---

#[test]
fn a_polygon_with_fewer_than_3_vertices_is_rejected() {
    assert_only_problem(
        base_with("/areas/0/polygon", json!([[0, 0], [10, 0]])),
        "/areas/0/polygon",
        "a polygon needs at least 3 vertices",
    );
}

#[test]
fn a_polygon_with_collinear_vertices_is_rejected_as_enclosing_no_area() {
    assert_only_problem(
        base_with("/areas/0/polygon", json!([[0, 0], [5, 5], [10, 10]])),
        "/areas/0/polygon",
        "polygon encloses no area",
    );
}

#[test]
fn a_self_intersecting_bow_tie_polygon_is_rejected() {
    // Edge 0 (0,0)→(10,10) crosses edge 2 (10,0)→(0,20) at (20/3, 20/3).
    // The lobes differ in size, so the signed area is not zero:
    // 2A = (0·10 − 10·0) + (10·0 − 10·10) + (10·20 − 0·0) + (0·0 − 0·20) = 100.
    assert_only_problem(
        base_with("/areas/0/polygon", json!([[0, 0], [10, 10], [10, 0], [0, 20]])),
        "/areas/0/polygon",
        "polygon edges 0 and 2 cross: give a simple polygon",
    );
}

#[test]
fn a_symmetric_bow_tie_polygon_is_reported_as_crossing() {
    // Derived: 2A = 0 + (10·0 − 10·10) + (10·10 − 0·0) + 0 = 0, yet no three
    // vertices are collinear; the real fault is that edges 0 and 2 cross.
    assert_only_problem(
        base_with("/areas/0/polygon", json!([[0, 0], [10, 10], [10, 0], [0, 10]])),
        "/areas/0/polygon",
        "polygon edges 0 and 2 cross",
    );
}

#[test]
fn a_grid_spacing_outside_1_cm_to_100_m_is_rejected() {
    for spacing in [0.005, 150.0] {
        assert_only_problem(
            base_with("/areas/0/spacing_m", json!(spacing)),
            "/areas/0/spacing_m",
            "must be between 0.01 and 100 m",
        );
    }
}

// --- Numbers JSON cannot carry ---

/// A small valid document built in code, bypassing JSON.
fn wire_site() -> SiteDoc {
    SiteDoc {
        name: None,
        tables: vec![],
        georeference: None,
        formations: vec![],
        overhead_lines: vec![],
        frequency_hz: 50.0,
        circuits: vec![],
        conductors: vec![ConductorDoc {
            id: "bus".into(),
            path: vec![[0.0, 0.0, 1.0], [10.0, 0.0, 1.0]],
            radius_m: 0.02,
            circuit: None,
            phase: None,
            share: None,
            current: Some(CurrentDoc { rms_a: 100.0, phase_deg: 0.0 }),
            continues: None,
            cross_section: None,
        }],
        positions: vec![PositionDoc {
            id: "desk".into(),
            at: vec![1.0, 2.0],
            heights_m: None,
            body_region: Default::default(),
            occupancy_h: None,
            group: Default::default(),
        }],
        areas: vec![],
    }
}

#[test]
fn non_finite_numbers_built_in_code_are_rejected_at_their_pointers() {
    validate_site(&wire_site()).expect("the wire site is valid");
    let mut doc = wire_site();
    doc.frequency_hz = f64::NAN;
    doc.conductors[0].path[1][2] = f64::NAN;
    doc.conductors[0].radius_m = f64::INFINITY;
    doc.conductors[0].current.as_mut().unwrap().rms_a = f64::NAN;
    doc.positions[0].at[0] = f64::NEG_INFINITY;
    let problems = validate_site(&doc).expect_err("NaN and infinity are invalid").0;
    let pointers: Vec<&str> = problems.iter().map(|p| p.pointer.as_str()).collect();
    assert_eq!(
        pointers,
        [
            "/frequency_hz",
            "/conductors/0/path/1/2",
            "/conductors/0/radius_m",
            "/conductors/0/current/rms_a",
            "/positions/0/at/0",
        ],
        "{problems:#?}"
    );
    assert!(problems.iter().all(|p| p.detail == "must be a finite number"), "{problems:#?}");
}

// --- Reporting ---

#[test]
fn several_independent_problems_are_all_reported_at_once_in_document_order() {
    let mut doc = base();
    set(&mut doc, "/frequency_hz", json!(0));
    set(&mut doc, "/conductors/3/radius_m", json!(-1));
    set(&mut doc, "/positions/1/occupancy_h", json!(30));
    set(&mut doc, "/areas/0/spacing_m", json!(0));
    let problems = problems(doc);
    let pointers: Vec<&str> = problems.iter().map(|p| p.pointer.as_str()).collect();
    assert_eq!(
        pointers,
        ["/frequency_hz", "/conductors/3/radius_m", "/positions/1/occupancy_h", "/areas/0/spacing_m"],
        "{problems:#?}"
    );
}

#[test]
fn a_pointer_key_with_a_slash_or_tilde_is_escaped_per_rfc_6901() {
    // Source: RFC 6901 §3: '~' is written "~0" and '/' is written "~1".
    assert_eq!(Pointer::root().key("a/b~c").to_string(), "/a~1b~0c");
    // '~' is escaped first, so the literal key "~1" is not mistaken for '/'.
    assert_eq!(Pointer::root().key("~1").to_string(), "/~01");
    assert_eq!(Pointer::root().key("areas").index(0).key("id").to_string(), "/areas/0/id");
    assert_eq!(Pointer::root().to_string(), "");
}

#[test]
fn a_conductor_written_as_an_array_instead_of_an_object_is_rejected_with_its_pointer() {
    let mut doc = base();
    doc["conductors"][0] = json!(["a", [[0, 0, 0], [1, 0, 0]], 0.01]);
    let problems = problems(doc);
    assert_problem(&problems, "/conductors/0", "a list [ ] is given where an object { } is needed");
}

#[test]
fn a_table_listed_twice_by_the_site_is_rejected_with_its_pointer() {
    let mut doc = base();
    doc["tables"] = json!(["eu-2013-35-low", "eu-2013-35-low"]);
    let problems = problems(doc);
    assert_problem(&problems, "/tables/1", "listed twice");
}
