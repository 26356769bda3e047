//! Messages in plain words, and strict input: repeated keys, NUL, closed
//! polygon rings, control characters in names.

use fluxbound_core::assess::{self, LoadCase, Options};
use fluxbound_core::evaluate::EvaluateRequest;
use fluxbound_core::limits::{builtin_table, parse_table};
use fluxbound_core::site::{Problems, parse_json, parse_site, wire::SiteDoc};
use fluxbound_core::survey::wire::SurveyDoc;
use serde_json::json;

/// Words of Rust's type system that a safety officer should never read.
const JARGON: [&str; 8] = ["enum", "f64", "u32", "struct", "map", "sequence", "tagged", "variant"];

/// The jargon words in `detail`, outside quoted names (a key such as
/// 'sequence' is the user's own word, not jargon).
fn jargon_in(detail: &str) -> Vec<&'static str> {
    let mut unquoted = String::new();
    let mut quote: Option<char> = None;
    for c in detail.chars() {
        match quote {
            Some(q) if c == q => quote = None,
            Some(_) => {}
            None if c == '\'' || c == '"' => quote = Some(c),
            None => unquoted.push(c),
        }
    }
    let words: Vec<String> =
        unquoted.split(|c: char| !c.is_alphanumeric() && c != '_').map(str::to_lowercase).collect();
    JARGON.iter().copied().filter(|j| words.iter().any(|w| w == j)).collect()
}

fn assert_plain(what: &str, problems: &Problems) {
    for p in problems.iter() {
        let found = jargon_in(&p.detail);
        assert!(found.is_empty(), "{what}: {found:?} in {p}");
    }
}

const SITE_BAD: [&str; 22] = [
    r#"{"frequency_hz": "50", "conductors": []}"#,
    r#"{"frequency_hz": 50, "conductors": {}}"#,
    r#"{"frequency_hz": 50, "conductors": [[1,2]]}"#,
    r#"{"frequency_hz": 50, "conductors": [], "circuits": [{"id": "c", "kind": "four_phase", "current_a": 1}]}"#,
    r#"{"frequency_hz": 50, "conductors": [], "circuits": [{"id": 3, "kind": "three_phase", "current_a": 1}]}"#,
    r#"{"frequency_hz": 50, "conductors": [], "circuits": [{"id": "c", "kind": "three_phase", "current_a": 1, "harmonics": [{"order": -3, "percent": 1, "angle_deg": 0}]}]}"#,
    r#"{"frequency_hz": 50, "conductors": [], "circuits": [{"id": "c", "kind": "three_phase", "current_a": 1, "harmonics": [{"order": 3.5, "percent": 1, "angle_deg": 0}]}]}"#,
    r#"{"frequency_hz": 50, "conductors": [], "circuits": [{"id": "c", "kind": "three_phase", "current_a": 1, "sequence": "sideways"}]}"#,
    r#"{"frequency_hz": 50, "conductors": [], "circuits": [{"id": "c", "kind": "three_phase", "current_a": 1, "sequencce": "positive"}]}"#,
    r#"{"frequency_hz": 50, "conductors": [], "colour": 1}"#,
    r#"{"conductors": []}"#,
    r#"{"frequency_hz": 50, "conductors": [{"id": "a", "circuit": "c", "phase": "Q", "radius_m": 0.02, "path": [[0,0,0],[1,0,0]]}]}"#,
    r#"{"frequency_hz": 50, "conductors": [{"id": "a", "current": 5, "radius_m": 0.02, "path": [[0,0,0],[1,0,0]]}]}"#,
    r#"{"frequency_hz": 50, "conductors": [{"id": "a", "radius_m": 0.02, "path": [[0,0],[1,0,0]]}]}"#,
    r#"{"frequency_hz": 50, "conductors": [], "positions": [{"id": "p", "at": "here"}]}"#,
    r#"{"frequency_hz": 50, "conductors": [], "areas": [{"id": "p", "polygon": [1,2,3], "height_m": 0, "spacing_m": 1}]}"#,
    r#"{"frequency_hz": 50, "conductors": [], "tables": "icnirp"}"#,
    r#"{"frequency_hz": 1e999, "conductors": []}"#,
    r#"{"frequency_hz": 50, "conductors": [],}"#,
    r#"[1]"#,
    r#""#,
    r#"{"frequency_hz": null, "conductors": []}"#,
];

#[test]
fn no_site_shape_error_uses_a_word_of_rusts_type_system() {
    for text in SITE_BAD {
        let problems = parse_site(text).expect_err(text);
        assert_plain(text, &problems);
    }
}

#[test]
fn no_load_case_survey_table_or_evaluation_error_uses_a_word_of_rusts_type_system() {
    for text in [
        r#"{"kind": "nope"}"#,
        r#"{"kind": "currents", "currents_a": []}"#,
        r#"{"kind": "scale", "factors": {"a": "x"}}"#,
        "5",
        "[]",
    ] {
        assert_plain(text, &parse_json::<LoadCase>(text).expect_err(text));
    }
    for text in [
        r#"{"measured_at": 5}"#,
        r#"{"measured_at": "x", "meter": []}"#,
        r#"{"measured_at": "x", "meter": {"expanded_uncertainty_percent": 5}, "points": {}}"#,
    ] {
        assert_plain(text, &parse_json::<SurveyDoc>(text).expect_err(text));
    }
    for text in [
        r#"{"id": "t", "bands": 3}"#,
        r#"{"id": "t", "title": "t", "source": "s", "kind": "ceiling", "applies_to": {"population": "visitors"}}"#,
    ] {
        assert_plain(text, &parse_table(text).expect_err(text));
    }
    for text in [
        r#"{"frequency_hz": 50, "conductors": [], "points": [[0, 0]]}"#,
        r#"{"frequency_hz": 50, "conductors": [], "points": "origin"}"#,
    ] {
        assert_plain(text, &parse_json::<EvaluateRequest>(text).expect_err(text));
    }
}

#[test]
fn the_jargon_check_itself_sees_the_words_it_looks_for() {
    // Guards the test above: serde's own wording would be caught.
    assert_eq!(jargon_in("invalid type: map, expected a sequence"), ["map", "sequence"]);
    assert_eq!(jargon_in("expected internally tagged enum LoadCase"), ["enum", "tagged"]);
    assert!(jargon_in("unknown key 'sequencce'; the keys allowed here are id, kind").is_empty());
}

fn only(problems: &Problems) -> (&str, &str) {
    assert_eq!(problems.len(), 1, "{problems:?}");
    let p = problems.iter().next().unwrap();
    (p.pointer.as_str(), p.detail.as_str())
}

#[test]
fn a_key_given_twice_inside_a_load_case_map_is_rejected_at_its_pointer() {
    // Last-wins would silently turn 100 A into 100000 A.
    let text = r#"{"kind": "currents", "currents_a": {"LV-main": 100, "LV-main": 100000}}"#;
    let problems = parse_json::<LoadCase>(text).unwrap_err();
    let (pointer, detail) = only(&problems);
    assert_eq!(pointer, "/currents_a/LV-main");
    assert!(detail.contains("given twice"), "{detail}");
}

#[test]
fn a_key_given_twice_anywhere_in_a_site_is_rejected_at_its_pointer() {
    let text = r#"{"frequency_hz": 50, "conductors": [{"id": "a", "radius_m": 0.02, "radius_m": 0.2,
        "current": {"rms_a": 1}, "path": [[0,0,0],[1,0,0]]}]}"#;
    let problems = parse_site(text).unwrap_err();
    assert_eq!(only(&problems).0, "/conductors/0/radius_m");
}

#[test]
fn a_nul_character_in_any_text_is_rejected_at_its_pointer() {
    let doc = json!({"frequency_hz": 50, "name": "bay\u{0}4", "conductors": []});
    let problems = parse_site(&doc.to_string()).unwrap_err();
    assert_eq!(only(&problems).0, "/name");
}

#[test]
fn control_characters_in_a_site_name_or_an_id_are_rejected() {
    let doc = json!({"frequency_hz": 50, "name": "bay\t4", "conductors": [
        {"id": "a\u{1b}[31m", "radius_m": 0.02, "current": {"rms_a": 1}, "path": [[0,0,0],[1,0,0]]}]});
    let problems = parse_site(&doc.to_string()).unwrap_err();
    // In the order of the text (`json!` sorts keys).
    let pointers: Vec<&str> = problems.iter().map(|p| p.pointer.as_str()).collect();
    assert_eq!(pointers, ["/conductors/0/id", "/name"]);
}

fn ring_site(polygon: serde_json::Value) -> serde_json::Value {
    json!({"frequency_hz": 50,
        "conductors": [{"id": "a", "radius_m": 0.02, "current": {"rms_a": 100}, "path": [[-5, 3, 1], [5, 3, 1]]}],
        "areas": [{"id": "floor", "polygon": polygon, "height_m": 1, "spacing_m": 0.5}]})
}

#[test]
fn a_closed_polygon_ring_is_accepted_with_a_note_at_the_dropped_vertex() {
    let closed = ring_site(json!([[0, 0], [2, 0], [2, 2], [0, 2], [0, 0]]));
    let site = parse_site(&closed.to_string()).unwrap();
    assert_eq!(site.areas()[0].polygon.len(), 4);
    let (pointer, detail) = only(site.input_notes());
    assert_eq!(pointer, "/areas/0/polygon/4");
    assert!(detail.contains("closed ring"), "{detail}");
}

#[test]
fn a_closed_ring_assesses_exactly_as_the_open_ring_and_the_note_is_in_the_result() {
    let closed = parse_site(&ring_site(json!([[0, 0], [2, 0], [2, 2], [0, 2], [0, 0]])).to_string()).unwrap();
    let open = parse_site(&ring_site(json!([[0, 0], [2, 0], [2, 2], [0, 2]])).to_string()).unwrap();
    assert!(open.input_notes().is_empty());
    let tables = vec![builtin_table("icnirp-2010-occupational").unwrap().clone()];
    let a = assess::assess(&closed, &LoadCase::Present, &tables, &Options::default()).unwrap();
    let b = assess::assess(&open, &LoadCase::Present, &tables, &Options::default()).unwrap();
    // Same polygon after the drop, so the same cells: equal results (the
    // notes aside), compared whole rather than float by float.
    assert_eq!(a.areas, b.areas);
    assert!(
        a.notes.iter().any(|n| n.starts_with("/areas/0/polygon/4: ") && n.contains("closed ring")),
        "{:?}",
        a.notes
    );
}

#[test]
fn a_polygon_that_really_crosses_itself_is_still_rejected() {
    let bow_tie = ring_site(json!([[0, 0], [2, 2], [2, 0], [0, 2]]));
    let problems = parse_site(&bow_tie.to_string()).unwrap_err();
    assert!(problems.iter().any(|p| p.detail.contains("cross")), "{problems:?}");
}

#[test]
fn a_survey_document_with_a_repeated_key_is_rejected() {
    let text = r#"{"measured_at": "2026-11-20T09:30:00Z", "measured_at": "2026-11-21T09:30:00Z",
        "meter": {"expanded_uncertainty_percent": 5}}"#;
    assert_eq!(only(&parse_json::<SurveyDoc>(text).unwrap_err()).0, "/measured_at");
}

#[test]
fn a_site_document_parses_into_the_wire_type_unchanged_by_the_scan() {
    // The pre-pass only reads: a valid document still parses.
    let doc: SiteDoc = parse_json(&ring_site(json!([[0, 0], [2, 0], [2, 2]])).to_string()).unwrap();
    assert_eq!(doc.areas.len(), 1);
}

#[test]
fn a_control_character_in_a_load_case_map_key_is_rejected_at_that_key() {
    // A map accepts any key, so only the watch over keys sees this one: the
    // typed read alone would succeed.
    let text = r#"{"kind": "currents", "currents_a": {"LV\u0007main": 100}}"#;
    let problems = parse_json::<LoadCase>(text).unwrap_err();
    let (pointer, detail) = only(&problems);
    assert_eq!(pointer, "/currents_a/LV\u{7}main");
    assert!(detail.contains("U+0007"), "{detail}");
}

#[test]
fn keys_and_texts_written_with_escapes_read_as_their_plain_form() {
    // RFC 8259 §7: "\u0061" is the letter a; a key spelt with escapes is the
    // same key (so it is also caught when it repeats the plain one).
    let plain = r#"{"kind": "currents", "currents_a": {"LV-main": 100}}"#;
    let escaped = r#"{"k\u0069nd": "currents", "currents_\u0061": {"LV\u002dmain": 100}}"#;
    assert_eq!(
        format!("{:?}", parse_json::<LoadCase>(escaped).unwrap()),
        format!("{:?}", parse_json::<LoadCase>(plain).unwrap())
    );
    let twice = r#"{"kind": "currents", "currents_a": {"LV-main": 100, "LV\u002dmain": 100000}}"#;
    assert!(only(&parse_json::<LoadCase>(twice).unwrap_err()).1.contains("given twice"));
}
