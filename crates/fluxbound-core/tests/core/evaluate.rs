//! The evaluation document's answer: the per-point form, the column form
//! and their streaming serialisation.
//!
//! Expected values here are properties (the two forms and the in-memory
//! value must carry the same numbers bit for bit; a point inside a
//! conductor has no number), not values computed by the code under test.

use fluxbound_core::evaluate::{self, EvaluateRequest, Evaluated, Output};
use fluxbound_core::usecase::{self, Budget};
use serde_json::{Value, json};

/// Two conductors of one single-phase go-and-return pair (fundamental
/// only), three free points and one on the go conductor's axis.
fn single_line() -> Value {
    json!({
        "frequency_hz": 50,
        "conductors": [
            {"id": "go", "current": {"rms_a": 100, "phase_deg": 0}, "radius_m": 0.01, "path": [[0, 0, 2], [10, 0, 2]]},
            {"id": "back", "current": {"rms_a": 100, "phase_deg": 180}, "radius_m": 0.01, "path": [[10, 0.5, 2], [0, 0.5, 2]]}
        ],
        "points": [[5, 1, 1], [5, -2, 1.5], [2, 3, 0.5], [5, 0, 2]]
    })
}

fn with_harmonic(mut doc: Value) -> Value {
    doc["circuits"] = json!([{"id": "F", "kind": "single_phase", "current_a": 200,
        "harmonics": [{"order": 3, "percent": 20}]}]);
    doc["conductors"] = json!([
        {"id": "go", "circuit": "F", "phase": "A", "radius_m": 0.01, "path": [[0, 0, 2], [10, 0, 2]]},
        {"id": "back", "circuit": "F", "phase": "N", "radius_m": 0.01, "path": [[10, 0.5, 2], [0, 0.5, 2]]}
    ]);
    doc
}

fn computed(doc: &Value) -> Evaluated {
    let req: EvaluateRequest = serde_json::from_value(doc.clone()).unwrap();
    usecase::evaluate_output(&req, &Budget::offline()).unwrap()
}

fn streamed(e: &Evaluated, compact: bool) -> Value {
    let mut out = Vec::new();
    evaluate::write_evaluated(&mut out, e, compact).unwrap();
    serde_json::from_slice(&out).unwrap()
}

#[test]
fn the_streamed_per_point_form_is_the_in_memory_answer_bit_for_bit() {
    for doc in [single_line(), with_harmonic(single_line())] {
        let e = computed(&doc);
        let typed = serde_json::to_value(e.to_response()).unwrap();
        assert_eq!(streamed(&e, true), typed);
        assert_eq!(streamed(&e, false), typed);
    }
}

#[test]
fn the_hand_written_compact_text_is_serde_json_s_byte_for_byte() {
    // The HTTP answer is written by `write_compact`, with literal keys; it
    // must be the text serde_json writes for the typed answer, to the byte
    // (numbers in their shortest round-trip form, nulls inside a conductor,
    // the per-frequency summaries only with harmonics).
    let columns = {
        let mut d = single_line();
        d["output"] = json!({"columns": ["resultant_ut", "inside_conductors"]});
        d
    };
    for (doc, per_point) in [(single_line(), true), (with_harmonic(single_line()), true), (columns, false)] {
        let e = computed(&doc);
        let mut ours = Vec::new();
        evaluate::write_compact(&mut ours, &e).unwrap();
        assert_eq!(String::from_utf8(ours.clone()).unwrap(), serde_json::to_string(&e).unwrap());
        if per_point {
            assert_eq!(String::from_utf8(ours).unwrap(), serde_json::to_string(&e.to_response()).unwrap());
        }
    }
}

#[test]
fn a_single_line_document_does_not_repeat_the_resultant_and_maximum_per_frequency() {
    let v = streamed(&computed(&single_line()), true);
    let p = &v["points"][0];
    assert!(p["resultant_ut"].as_f64().unwrap() > 0.0);
    let f = p["frequencies"].as_array().unwrap();
    assert_eq!(f.len(), 1);
    assert_eq!(f[0]["order"], 1);
    assert!(f[0].get("resultant_ut").is_none() && f[0].get("maximum_ut").is_none(), "{f:?}");
    assert!(f[0]["components_ut"]["x"]["re"].is_number());
}

#[test]
fn a_document_with_harmonics_keeps_the_resultant_and_maximum_of_each_frequency() {
    let v = streamed(&computed(&with_harmonic(single_line())), true);
    let f = v["points"][0]["frequencies"].as_array().unwrap();
    assert_eq!(f.iter().map(|x| x["order"].as_u64().unwrap()).collect::<Vec<_>>(), vec![1, 3]);
    assert!(f.iter().all(|x| x["resultant_ut"].is_number() && x["maximum_ut"].is_number()));
}

#[test]
fn the_column_form_carries_the_per_point_numbers_in_point_order_and_null_inside_a_conductor() {
    let mut doc = with_harmonic(single_line());
    let names = ["x_m", "z_m", "resultant_ut", "maximum_ut", "resultant_ut@3", "maximum_ut@1", "inside_conductors"];
    doc["output"] = json!({"columns": names});
    let e = computed(&doc);
    let mut text = Vec::new();
    evaluate::write_evaluated(&mut text, &e, false).unwrap();
    let text = String::from_utf8(text).unwrap();
    // Written in the order asked for (a `Value` would sort the keys).
    let at: Vec<usize> = names.iter().map(|n| text.find(&format!("\"{n}\":")).unwrap()).collect();
    assert!(at.windows(2).all(|w| w[0] < w[1]), "{text}");
    let cols: Value = serde_json::from_str(&text).unwrap();
    let points = serde_json::to_value(e.to_response()).unwrap();
    let cols = &cols["columns"];
    for (i, p) in points["points"].as_array().unwrap().iter().enumerate() {
        assert_eq!(cols["x_m"][i], p["at"][0]);
        assert_eq!(cols["z_m"][i], p["at"][2]);
        assert_eq!(cols["resultant_ut"][i], p["resultant_ut"]);
        assert_eq!(cols["maximum_ut"][i], p["maximum_ut"]);
        assert_eq!(cols["inside_conductors"][i], p["inside_conductors"]);
        let inside = !p["inside_conductors"].as_array().unwrap().is_empty();
        if inside {
            assert!(cols["resultant_ut@3"][i].is_null() && cols["maximum_ut@1"][i].is_null());
        } else {
            assert_eq!(cols["resultant_ut@3"][i], p["frequencies"][1]["resultant_ut"]);
            assert_eq!(cols["maximum_ut@1"][i], p["frequencies"][0]["maximum_ut"]);
        }
    }
    // The fourth point lies on the go conductor's axis.
    assert!(cols["resultant_ut"][3].is_null() && cols["maximum_ut"][3].is_null());
    assert_eq!(cols["inside_conductors"][3], json!(["go"]));
    assert_eq!(cols["inside_conductors"][0], json!([]));
}

#[test]
fn unknown_repeated_or_missing_columns_are_problems_at_their_pointers() {
    let mut doc = single_line();
    doc["output"] = json!({"columns": ["resultant_ut", "peak", "resultant_ut", "maximum_ut@5", "maximum_ut@x"]});
    let req: EvaluateRequest = serde_json::from_value(doc.clone()).unwrap();
    let problems = evaluate::validate_request(&req).unwrap_err();
    let at: Vec<&str> = problems.iter().map(|p| p.pointer.as_str()).collect();
    assert_eq!(at, ["/output/columns/1", "/output/columns/2", "/output/columns/3", "/output/columns/4"]);
    assert!(problems.0[0].detail.contains("unknown column 'peak'"), "{problems:?}");
    assert!(problems.0[2].detail.contains("no spectral line of order 5"), "{problems:?}");

    doc["output"] = json!({"columns": []});
    let req: EvaluateRequest = serde_json::from_value(doc).unwrap();
    let problems = evaluate::validate_request(&req).unwrap_err();
    assert_eq!(problems.0[0].pointer, "/output/columns");
}

#[test]
fn an_output_without_columns_keeps_the_per_point_form() {
    let mut doc = single_line();
    doc["output"] = json!({});
    let req: EvaluateRequest = serde_json::from_value(doc).unwrap();
    let mut ev = evaluate::validate_request(&req).unwrap();
    assert!(streamed(&usecase::evaluate_checked(ev.clone(), &Budget::offline()).unwrap(), true)["points"].is_array());
    ev.set_output(Output::Columns(vec![evaluate::Column::Resultant]));
    let v = streamed(&usecase::evaluate_checked(ev, &Budget::offline()).unwrap(), true);
    assert!(v.get("points").is_none());
    assert_eq!(v["columns"]["resultant_ut"].as_array().unwrap().len(), 4);
}
