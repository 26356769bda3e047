//! The one rule for given text (`crates/fluxbound-core/src/text.rs`): no
//! control character (Unicode category Cc) in any key or text of any
//! document, except tabs and line breaks in the survey's CSV.

use fluxbound_core::limits::TableDoc;
use fluxbound_core::site::{Problems, parse_json, parse_site, wire::SiteDoc};
use fluxbound_core::survey::wire::SurveyDoc;
use fluxbound_core::text::{multi_line_problem, single_line_problem};
use serde_json::{Value, json};

fn site(name: &str) -> Value {
    json!({"frequency_hz": 50, "name": name, "conductors": [
        {"id": "a", "radius_m": 0.02, "current": {"rms_a": 1}, "path": [[0,0,0],[1,0,0]]}]})
}

/// The pointers, sorted (`json!` writes keys in sorted order, so the text
/// order is not the order the test wrote them in).
fn pointers(problems: &Problems) -> Vec<&str> {
    let mut v: Vec<&str> = problems.iter().map(|p| p.pointer.as_str()).collect();
    v.sort_unstable();
    v
}

#[test]
fn every_control_character_class_is_refused_and_named_with_its_position() {
    // C0 (NUL, escape), delete, and a C1 control (U+0085, next line).
    for (c, words) in [
        ('\u{0}', "U+0000, NUL,"),
        ('\u{1b}', "U+001B, escape,"),
        ('\u{7f}', "U+007F, delete,"),
        ('\u{85}', "U+0085"),
        ('\u{9f}', "U+009F"),
    ] {
        let detail = single_line_problem(&format!("Bay{c}4")).expect("refused");
        assert_eq!(detail, format!("text must not contain control characters (found {words} at character 4)"));
    }
}

#[test]
fn letters_of_any_script_marks_and_invisible_format_characters_are_allowed() {
    // A decomposed ü (u + U+0308), a zero-width joiner (category Cf, not
    // Cc), a soft hyphen, emoji and right-to-left text are all text.
    for ok in ["Übergabestation", "u\u{308}ber", "क्\u{200d}ष", "Stra\u{ad}ße", "⚡ Bay 4", "محطة"] {
        assert_eq!(single_line_problem(ok), None, "{ok}");
        assert!(parse_site(&site(ok).to_string()).is_ok(), "{ok}");
    }
}

#[test]
fn a_tab_or_line_break_is_allowed_only_in_multi_line_text() {
    assert_eq!(multi_line_problem("id,x_m\r\nm1\t0\n"), None);
    assert!(single_line_problem("bay\t4").is_some());
    assert!(single_line_problem("bay\n4").is_some());
    assert!(multi_line_problem("id\u{0},x_m").is_some(), "NUL is never layout");
}

#[test]
fn every_control_character_in_a_document_is_reported_with_its_pointer() {
    let mut doc = site("bay\u{1b}[2J");
    doc["conductors"][0]["id"] = json!("a\u{0}");
    doc["positions"] = json!([{"id": "desk\u{85}", "at": [0, 1]}]);
    let problems = parse_json::<SiteDoc>(&doc.to_string()).unwrap_err();
    assert_eq!(pointers(&problems), ["/conductors/0/id", "/name", "/positions/0/id"]);
}

#[test]
fn a_control_character_in_a_key_is_refused_at_that_key() {
    let text = r#"{"frequency_hz": 50, "na\u0007me": "x", "conductors": []}"#;
    let problems = parse_json::<SiteDoc>(text).unwrap_err();
    assert_eq!(pointers(&problems), ["/na\u{7}me"]);
    assert!(problems.iter().next().unwrap().detail.contains("U+0007"), "{problems:?}");
}

#[test]
fn the_survey_csv_may_hold_line_breaks_and_tabs_but_its_name_may_not() {
    let survey = |name: &str, csv: &str| {
        json!({"name": name, "measured_at": "2026-11-20T09:30:00Z", "meter": {"expanded_uncertainty_percent": 5},
               "points_csv": csv, "csv_delimiter": "\t"})
        .to_string()
    };
    let csv = "id\tx_m\ty_m\tz_m\tresultant_ut\r\nm1\t0\t1\t1\t12.5\r\n";
    parse_json::<SurveyDoc>(&survey("walk 1", csv)).expect("a tab-separated CSV with CRLF is accepted");
    let problems = parse_json::<SurveyDoc>(&survey("walk\n1", csv)).unwrap_err();
    assert_eq!(pointers(&problems), ["/name"]);
    let problems = parse_json::<SurveyDoc>(&survey("walk 1", "id\u{1b},x_m")).unwrap_err();
    assert_eq!(pointers(&problems), ["/points_csv"]);
}

#[test]
fn table_titles_sources_notes_and_gap_reasons_are_one_line_each() {
    let table = json!({"id": "site-rule", "title": "Site\trule", "source": "House rule\u{0}",
        "applies_to": {"body_region": "whole_body", "population": "occupational"}, "kind": "reference_level",
        "bands": [{"from_hz": 1, "to_hz": 100000, "coefficient": 1000, "exponent": 0}],
        "notes": ["first", "second\nline"]});
    let problems = parse_json::<TableDoc>(&table.to_string()).unwrap_err();
    assert_eq!(pointers(&problems), ["/notes/1", "/source", "/title"]);
}

#[test]
fn a_table_made_in_code_meets_the_same_rule_in_its_validator() {
    // Documents that never were JSON (built by a program) are checked too.
    let mut doc = fluxbound_core::limits::builtin_tables()[0].doc().clone();
    doc.id = "in-code".into();
    doc.notes = vec!["fine".into(), "bad\u{7f}".into()];
    let problems = fluxbound_core::limits::validate_table(doc).unwrap_err();
    assert_eq!(pointers(&problems), ["/notes/1"]);
}
