//! Survey CSV import as spreadsheets write it: a byte-order mark, `;` as
//! delimiter with decimal commas, line breaks inside quoted fields (RFC 4180
//! §2 rule 6), and problems named by the physical line where a record
//! starts.

use fluxbound_core::survey::parse_measurements;
use fluxbound_core::survey::{validate_survey, wire::SurveyDoc};
use serde_json::json;

fn doc(csv: &str, delimiter: Option<&str>) -> SurveyDoc {
    let mut v = json!({
        "measured_at": "2026-11-20T09:40:00Z",
        "meter": {"expanded_uncertainty_percent": 6},
        "points_csv": csv
    });
    if let Some(d) = delimiter {
        v["csv_delimiter"] = json!(d);
    }
    serde_json::from_value(v).unwrap()
}

fn site() -> fluxbound_core::site::Site {
    fluxbound_core::site::parse_site(
        &json!({"frequency_hz": 50, "circuits": [{"id": "w", "kind": "single_phase", "current_a": 100}],
                "conductors": [{"id": "a", "circuit": "w", "phase": "A", "radius_m": 0.01, "path": [[-100.0, 0.0, 0.0], [100.0, 0.0, 0.0]]}]})
        .to_string(),
    )
    .unwrap()
}

#[test]
fn a_byte_order_mark_before_the_header_is_ignored() {
    // Spreadsheets save "CSV UTF-8" with EF BB BF first; before, the first
    // column then read "\u{feff}id" and was refused as unknown.
    let m = parse_measurements("\u{feff}id,x_m,y_m,z_m,resultant_ut\r\nm1,0,1,1,12.5\r\n").unwrap();
    assert_eq!(m.len(), 1);
    assert_eq!(m[0].id, "m1");
    // Exact: "12.5" is a decimal literal read by the standard parser.
    assert_eq!(m[0].resultant_ut, 12.5);
}

#[test]
fn a_semicolon_header_is_detected_and_its_decimal_commas_are_read() {
    let m = parse_measurements("id;x_m;y_m;z_m;resultant_ut\nm1;0,5;-2;1;12,5\nm2;1.25;0;1;3\n").unwrap();
    assert_eq!(m.len(), 2);
    // Exact: "0,5" becomes the literal "0.5", parsed by the standard parser.
    assert_eq!(m[0].at, vec![0.5, -2.0, 1.0]);
    assert_eq!(m[0].resultant_ut, 12.5);
    assert_eq!(m[1].at, vec![1.25, 0.0, 1.0]);
}

#[test]
fn an_explicit_delimiter_wins_over_detection_and_a_bad_one_is_named() {
    // A tab-separated text read as tab-separated; an id may then hold ";".
    let text = "id\tx_m\ty_m\tz_m\tresultant_ut\nm;1\t0\t0\t1\t2\n";
    let s = validate_survey(&doc(text, Some("\t")), &site()).unwrap();
    assert_eq!(s.points()[0].id(), "m;1");
    // Told ",", a ";" header is one unknown column: the survey's word wins.
    let p = validate_survey(&doc("id;x_m;y_m;z_m;resultant_ut\nm;0;0;1;2\n", Some(",")), &site()).unwrap_err();
    assert!(p.iter().any(|x| x.detail.starts_with("line 1, column id;x_m")), "{p:?}");
    let p = validate_survey(&doc("id,x_m,y_m,z_m,resultant_ut\nm,0,0,1,2\n", Some("|")), &site()).unwrap_err();
    assert!(p.iter().any(|x| x.pointer == "/csv_delimiter" && x.detail.contains("\";\"")), "{p:?}");
    // Without points_csv the delimiter has nothing to apply to.
    let mut d = doc("", Some(";"));
    d.points_csv = None;
    d.points = serde_json::from_value(json!([{"id": "m", "at": [0, 1], "resultant_ut": 1}])).unwrap();
    let p = validate_survey(&d, &site()).unwrap_err();
    assert!(p.iter().any(|x| x.pointer == "/csv_delimiter"), "{p:?}");
}

#[test]
fn a_quoted_line_break_stays_inside_its_field_and_later_lines_keep_their_physical_numbers() {
    // Record "m1" spans lines 2–3; the bad value of m2 is on line 4 and the
    // short record on line 5 (RFC 4180 §2 rule 6: fields with line breaks
    // are quoted).
    let text = "id,x_m,y_m,z_m,resultant_ut\n\"m1\nnorth wall\",0,1,1,5\nm2,0,2,1,lots\nm3,0\n";
    let p = parse_measurements(text).unwrap_err();
    assert!(p.iter().any(|e| e.starts_with("line 4, column resultant_ut") && e.contains("'lots'")), "{p:?}");
    assert!(p.iter().any(|e| e.starts_with("line 5: 2 fields, the header has 5")), "{p:?}");
    let ok = parse_measurements("id,x_m,y_m,z_m,resultant_ut\n\"m1\nnorth wall\",0,1,1,5\n").unwrap();
    assert_eq!(ok[0].id, "m1\nnorth wall");
    // A problem inside a multi-line record names the line where it starts.
    let p = parse_measurements("id,x_m,y_m,z_m,resultant_ut\n\n\"m1\nx\",0,1,1,bad\n").unwrap_err();
    assert!(p[0].starts_with("line 3, column resultant_ut"), "{p:?}");
}

#[test]
fn a_quote_that_is_never_closed_is_a_problem_on_the_line_where_it_opens() {
    // Read as RFC 4180 would, the rest of the text would become one field
    // silently; the import refuses it and names line 3.
    let p = parse_measurements("id,x_m,y_m,z_m,resultant_ut\nm1,0,1,1,5\n\"m2,0,2,1,6\nm3,0,3,1,7\n").unwrap_err();
    assert_eq!(p.len(), 1, "{p:?}");
    assert!(p[0].starts_with("line 3:") && p[0].contains("never closed"), "{p:?}");
    // A quote inside an unquoted field is an ordinary character (RFC 4180
    // leaves it undefined; the csv crate reads it literally) and no problem.
    let m = parse_measurements("id,x_m,y_m,z_m,resultant_ut\n5\"probe,0,1,1,5\n").unwrap();
    assert_eq!(m[0].id, "5\"probe");
}

#[test]
fn problems_through_the_survey_point_at_points_csv() {
    let p = validate_survey(&doc("\u{feff}id;x_m;y_m;z_m;resultant_ut\nm1;0;1;1;x\n", None), &site()).unwrap_err();
    assert!(p.iter().all(|x| x.pointer == "/points_csv"), "{p:?}");
    assert!(p.iter().any(|x| x.detail.starts_with("line 2, column resultant_ut")), "{p:?}");
}
