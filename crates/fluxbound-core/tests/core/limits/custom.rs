//! Custom tables through `parse_table`: one test per validation rule, each
//! with the exact RFC 6901 pointer and message of crates/fluxbound-core/src/limits/table.rs.
//! Documents start from a valid base table and change one thing.

use super::assert_level;
use fluxbound_core::limits::{
    LevelError, ReferenceTable, TableChoice, TableSource, UnknownTable, builtin_table, choose_tables, parse_table,
    resolve_tables,
};
use serde_json::{Value, json};

/// A valid organisation table: three contiguous bands, given in order.
fn base() -> Value {
    json!({
        "id": "acme-hs17.rev3",
        "title": "Acme internal limit for magnetic flux density",
        "source": "Acme Corp. EMF policy HS-17, revision 3 (invented for tests)",
        "applies_to": {"population": "workers", "body_region": "whole_body"},
        "kind": "reference_level",
        "bands": [
            {"from_hz": 1, "to_hz": 25, "coefficient": 2.5e4, "exponent": -1},
            {"from_hz": 25, "to_hz": 400, "coefficient": 500, "exponent": 0},
            {"from_hz": 400, "to_hz": 3000, "coefficient": 2.0e5, "exponent": -1}
        ],
        "notes": ["Status: invented."]
    })
}

fn with(pointer: &str, value: Value) -> Value {
    let mut doc = base();
    *doc.pointer_mut(pointer).unwrap_or_else(|| panic!("{pointer} is not in the base table")) = value;
    doc
}

fn parse(doc: &Value) -> Result<ReferenceTable, Vec<(String, String)>> {
    parse_table(&doc.to_string()).map_err(|p| p.iter().map(|p| (p.pointer.clone(), p.detail.clone())).collect())
}

fn parsed(doc: &Value) -> ReferenceTable {
    parse(doc).unwrap_or_else(|p| panic!("the table should be valid, problems: {p:?}"))
}

/// The problems of a table that must be rejected.
fn problems(doc: &Value) -> Vec<(String, String)> {
    match parse(doc) {
        Ok(_) => panic!("the table should be rejected: {doc}"),
        Err(p) => p,
    }
}

fn one(pointer: &str, detail: &str) -> Vec<(String, String)> {
    vec![(pointer.to_string(), detail.to_string())]
}

#[test]
fn a_valid_custom_table_parses_and_gives_its_levels() {
    let t = parsed(&base());
    assert_eq!(t.id(), "acme-hs17.rev3");
    assert_eq!(t.version(), 1);
    assert_eq!(t.bands().len(), 3);
    // 1–25 Hz: 2.5e4/10 = 2500 µT; 25–400 Hz: 500 µT; 400–3000 Hz: 2e5/1000 = 200 µT.
    assert_level(t.level_ut(10.0).unwrap(), 2500.0, "10 Hz");
    assert_level(t.level_ut(50.0).unwrap(), 500.0, "50 Hz");
    assert_level(t.level_ut(1000.0).unwrap(), 200.0, "1 kHz");
    // Top edge of the last band: 2e5/3000 = 66.67 µT.
    assert_level(t.level_ut(3000.0).unwrap(), 2.0e5 / 3000.0, "3 kHz");
    assert!(t.level_ut(3000.1).is_err());
}

#[test]
fn bands_given_out_of_order_are_sorted_by_frequency() {
    let mut doc = base();
    doc["bands"].as_array_mut().unwrap().reverse();
    let t = parsed(&doc);
    let starts: Vec<f64> = t.bands().iter().map(|b| b.from_hz).collect();
    assert_eq!(starts, vec![1.0, 25.0, 400.0]);
    assert_level(t.level_ut(25.0).unwrap(), 500.0, "25 Hz, the band that starts there");
}

#[test]
fn an_exponent_of_exactly_four_and_an_optional_quantity_are_accepted() {
    let mut doc = with("/bands/0/exponent", json!(-4));
    doc["quantity"] = json!("b_rms");
    let t = parsed(&doc);
    // 2.5e4 · 5^-4 = 2.5e4 / 625 = 40 µT.
    assert_level(t.level_ut(5.0).unwrap(), 40.0, "5 Hz");
}

fn gapped() -> Value {
    let mut doc = base();
    doc["bands"][1]["to_hz"] = json!(100);
    doc["bands"][2]["from_hz"] = json!(150);
    doc["gaps"] = json!([{"from_hz": 100, "to_hz": 150, "reason": "not assessed by the policy"}]);
    doc
}

#[test]
fn a_declared_gap_is_accepted_and_a_frequency_inside_it_is_not_covered() {
    let t = parsed(&gapped());
    assert_eq!(t.doc().gaps.len(), 1);
    assert_eq!(t.level_ut(120.0), Err(LevelError::NotCovered { frequency_hz: 120.0 }));
    // The band before the gap includes its top edge; the band after starts at its own.
    assert_level(t.level_ut(100.0).unwrap(), 500.0, "100 Hz, top of the band before the gap");
    assert_level(t.level_ut(150.0).unwrap(), 2.0e5 / 150.0, "150 Hz, start of the band after the gap");
    assert!(t.level_ut(100.001).is_err());
    assert!(t.level_ut(149.999).is_err());
}

#[test]
fn a_gap_without_a_reason_is_accepted() {
    let mut doc = gapped();
    doc["gaps"] = json!([{"from_hz": 100, "to_hz": 150}]);
    assert!(parsed(&doc).level_ut(125.0).is_err());
}

#[test]
fn a_gap_that_is_not_an_interval_points_at_the_gap() {
    let mut doc = gapped();
    doc["gaps"] = json!([{"from_hz": 150, "to_hz": 100}]);
    assert_eq!(problems(&doc), one("/gaps/0", "a gap needs finite from_hz < to_hz"));
}

#[test]
fn a_table_with_no_bands_is_rejected_at_bands() {
    let doc = with("/bands", json!([]));
    assert_eq!(problems(&doc), one("/bands", "a table needs at least one band"));
}

#[test]
fn a_table_with_more_than_64_bands_is_rejected_at_bands() {
    let bands: Vec<Value> =
        (0..65).map(|i| json!({"from_hz": 1 + i, "to_hz": 2 + i, "coefficient": 100, "exponent": 0})).collect();
    let doc = with("/bands", Value::Array(bands));
    assert_eq!(problems(&doc), one("/bands", "at most 64 bands"));
}

#[test]
fn overlapping_bands_are_rejected_at_the_later_band() {
    let doc = with("/bands/1/from_hz", json!(20));
    assert_eq!(problems(&doc), one("/bands/1", "band overlaps another between 20 and 25 Hz"));
}

#[test]
fn overlapping_bands_given_out_of_order_point_at_the_band_as_written() {
    let mut doc = with("/bands/1/from_hz", json!(20));
    doc["bands"].as_array_mut().unwrap().swap(0, 2);
    // The 20–400 Hz band is still /bands/1; 1–25 Hz is now /bands/2.
    assert_eq!(problems(&doc), one("/bands/1", "band overlaps another between 20 and 25 Hz"));
}

#[test]
fn a_hole_between_bands_that_is_not_declared_as_a_gap_is_rejected() {
    let doc = with("/bands/1/from_hz", json!(30));
    assert_eq!(problems(&doc), one("/bands/1", "no band covers 25–30 Hz: close the hole or declare it in gaps"));
}

#[test]
fn a_gap_that_overlaps_a_band_is_rejected() {
    let mut doc = gapped();
    doc["gaps"][0]["from_hz"] = json!(90);
    assert_eq!(problems(&doc), one("/bands/1", "band overlaps another between 90 and 100 Hz"));
}

#[test]
fn a_gap_that_leaves_a_hole_is_rejected() {
    let mut doc = gapped();
    doc["gaps"][0]["to_hz"] = json!(140);
    assert_eq!(problems(&doc), one("/bands/2", "no band covers 140–150 Hz: close the hole or declare it in gaps"));
}

#[test]
fn overlapping_gaps_are_rejected_at_the_later_gap() {
    let mut doc = gapped();
    doc["gaps"] = json!([{"from_hz": 100, "to_hz": 130}, {"from_hz": 120, "to_hz": 150}]);
    let p = problems(&doc);
    assert_eq!(p.len(), 1, "{p:?}");
    assert_eq!(p[0].0, "/gaps/1", "{p:?}");
    assert!(!p[0].1.starts_with("band"), "the message should speak of gaps: {p:?}");
}

#[test]
fn every_frequency_between_bands_the_validator_accepts_as_touching_has_a_level() {
    // 300 and 300.0000001 differ by 3.3e-10 relative, inside the validator's 1e-9.
    let mut doc = base();
    doc["bands"][1]["to_hz"] = json!(300);
    doc["bands"][2]["from_hz"] = json!(300.0000001);
    doc["bands"][2]["to_hz"] = json!(3000);
    let Ok(t) = parse(&doc) else {
        return; // Rejecting the hole would be just as consistent.
    };
    assert!(t.level_ut(300.00000005).is_ok(), "{:?}", t.level_ut(300.00000005));
}

#[test]
fn a_band_whose_start_is_not_below_its_end_is_rejected_at_its_to_hz() {
    let equal = with("/bands/2/to_hz", json!(400));
    assert_eq!(problems(&equal), one("/bands/2/to_hz", "to_hz must be greater than from_hz"));
    let reversed = with("/bands/2/to_hz", json!(300));
    assert_eq!(problems(&reversed), one("/bands/2/to_hz", "to_hz must be greater than from_hz"));
}

#[test]
fn a_zero_negative_or_out_of_range_coefficient_is_rejected() {
    for c in [0.0, -500.0, 5e-324, 1e-7, 1e13] {
        let doc = with("/bands/1/coefficient", json!(c));
        assert_eq!(
            problems(&doc),
            one(
                "/bands/1/coefficient",
                "coefficient must be between 1e-6 and 1e12 µT·Hz^-exponent (positive, and small or large enough that every level stays a finite number)"
            ),
            "coefficient {c}"
        );
    }
}

#[test]
fn an_exponent_beyond_plus_or_minus_four_is_rejected() {
    for e in [4.5, -5.0] {
        let doc = with("/bands/0/exponent", json!(e));
        assert_eq!(problems(&doc), one("/bands/0/exponent", "exponent must be between -4 and 4"), "exponent {e}");
    }
}

#[test]
fn a_band_below_0_1_hz_or_above_10_mhz_is_rejected_at_the_band() {
    let low = with("/bands/0/from_hz", json!(0.05));
    assert_eq!(problems(&low), one("/bands/0", "bands must lie between 0.1 Hz and 1e7 Hz"));
    let high = with("/bands/2/to_hz", json!(2.0e7));
    assert_eq!(problems(&high), one("/bands/2", "bands must lie between 0.1 Hz and 1e7 Hz"));
}

#[test]
fn a_band_from_exactly_0_1_hz_to_exactly_10_mhz_is_accepted() {
    let mut doc = with("/bands/0/from_hz", json!(0.1));
    doc["bands"][2]["to_hz"] = json!(1.0e7);
    let t = parsed(&doc);
    assert_level(t.level_ut(0.1).unwrap(), 2.5e4 / 0.1, "0.1 Hz");
    assert_level(t.level_ut(1.0e7).unwrap(), 2.0e5 / 1.0e7, "10 MHz");
}

#[test]
fn an_id_with_characters_other_than_letters_digits_dots_dashes_and_underscores_is_rejected() {
    let msg = "table id must be 1–64 characters of letters, digits, '.', '-' or '_'";
    for id in ["acme limit", "acme/limit", "", "   ", "ü-table", &"x".repeat(65)] {
        let doc = with("/id", json!(id));
        assert_eq!(problems(&doc), one("/id", msg), "id {id:?}");
    }
    let ok = with("/id", json!("A_b-9.c".to_string() + &"x".repeat(57)));
    assert_eq!(parsed(&ok).id().chars().count(), 64);
}

#[test]
fn an_empty_title_is_rejected() {
    let doc = with("/title", json!("  "));
    assert_eq!(problems(&doc), one("/title", "title must not be empty"));
}

#[test]
fn an_empty_source_is_rejected_with_a_request_for_the_citation() {
    let doc = with("/source", json!(""));
    assert_eq!(problems(&doc), one("/source", "give the full citation of the source"));
}

#[test]
fn an_unknown_field_is_rejected_with_its_pointer() {
    let mut doc = base();
    doc["bands"][1]["slope"] = json!(1);
    let p = problems(&doc);
    assert_eq!(p.len(), 1, "{p:?}");
    assert_eq!(p[0].0, "/bands/1/slope");
    assert!(p[0].1.contains("unknown key 'slope'"), "{p:?}");
}

#[test]
fn every_built_in_table_as_shown_in_json_reads_back_as_the_same_table() {
    // `fluxbound tables show ID --format json` prints the serialised table,
    // `version` included; `--table-file` must take that output back.
    for t in fluxbound_core::limits::builtin_tables() {
        let shown = serde_json::to_string_pretty(t).unwrap();
        assert!(shown.contains("\"version\": 1"), "{shown}");
        let back = parse_table(&shown).unwrap_or_else(|p| panic!("{}: {p}", t.id()));
        assert_eq!(back.doc(), t.doc(), "{}", t.id());
        assert_eq!(back.version(), 1);
    }
}

#[test]
fn a_shown_version_is_read_as_information_and_a_version_of_zero_is_rejected() {
    let mut doc = base();
    doc["version"] = json!(7);
    let table = parse_table(&doc.to_string()).unwrap();
    assert_eq!(table.version(), 1, "a table file is version 1 whatever it was shown as");
    doc["version"] = json!(0);
    assert_eq!(problems(&doc), one("/version", "versions count from 1"));
}

#[test]
fn an_unknown_population_is_rejected_with_its_pointer() {
    let doc = with("/applies_to/population", json!("visitors"));
    let p = problems(&doc);
    assert_eq!(p.len(), 1, "{p:?}");
    assert_eq!(p[0].0, "/applies_to/population");
    assert!(p[0].1.contains("'visitors' is not one of the accepted words"), "{p:?}");
}

#[test]
fn several_problems_are_all_reported_in_document_order() {
    let mut doc = base();
    doc["id"] = json!("bad id");
    doc["title"] = json!("");
    doc["source"] = json!(" ");
    doc["bands"][0]["coefficient"] = json!(-1);
    doc["bands"][0]["exponent"] = json!(6);
    doc["bands"][2]["to_hz"] = json!(2.0e7);
    assert_eq!(
        problems(&doc),
        vec![
            ("/id".to_string(), "table id must be 1–64 characters of letters, digits, '.', '-' or '_'".to_string()),
            ("/title".to_string(), "title must not be empty".to_string()),
            ("/source".to_string(), "give the full citation of the source".to_string()),
            ("/bands/0/coefficient".to_string(), "coefficient must be between 1e-6 and 1e12 µT·Hz^-exponent (positive, and small or large enough that every level stays a finite number)".to_string()),
            ("/bands/0/exponent".to_string(), "exponent must be between -4 and 4".to_string()),
            ("/bands/2".to_string(), "bands must lie between 0.1 Hz and 1e7 Hz".to_string()),
        ]
    );
}

#[test]
fn malformed_json_is_one_problem_at_the_place_parsing_stopped() {
    let truncated = parse_table(r#"{"id": "acme","#).unwrap_err();
    let got: Vec<(&str, &str)> = truncated.iter().map(|p| (p.pointer.as_str(), p.detail.as_str())).collect();
    assert_eq!(got.len(), 1, "{got:?}");
    assert_eq!(got[0].0, "", "a truncated document is blamed as a whole: {got:?}");
    assert!(got[0].1.contains("the document ends too early"), "{got:?}");

    let text = base().to_string().replace(r#""coefficient":500"#, r#""coefficient":"500""#);
    let p = parse_table(&text).unwrap_err();
    assert_eq!(p.len(), 1);
    assert_eq!(p.iter().next().unwrap().pointer, "/bands/1/coefficient");
}

// ---------------------------------------------------------------- resolve

fn ids(list: &[&str]) -> Vec<String> {
    list.iter().map(|s| s.to_string()).collect()
}

fn asked(list: &[&str]) -> TableChoice {
    TableChoice { ids: ids(list), list: TableSource::Request }
}

#[test]
fn resolving_known_ids_returns_their_tables_in_the_order_asked() {
    let got = resolve_tables(&asked(&["eu-2013-35-limbs", "icnirp-2010-public"]), &[]).expect("both ids are built in");
    let got: Vec<&str> = got.iter().map(|t| t.id()).collect();
    assert_eq!(got, vec!["eu-2013-35-limbs", "icnirp-2010-public"]);
}

#[test]
fn resolving_unknown_ids_names_each_with_its_index_and_list_and_no_invented_pointer() {
    let choice = asked(&["icnirp-2010-public", "no-such-table", "eu-2013-35-low", "also-missing"]);
    let unknown = resolve_tables(&choice, &[]).unwrap_err();
    assert_eq!(
        unknown,
        vec![
            UnknownTable { list: TableSource::Request, index: 1, id: "no-such-table".into() },
            UnknownTable { list: TableSource::Request, index: 3, id: "also-missing".into() },
        ]
    );
    assert_eq!(unknown[0].to_string(), "unknown reference-level table 'no-such-table'");
}

#[test]
fn the_tables_that_apply_are_the_callers_else_the_surveys_else_the_sites_else_the_defaults() {
    let (mine, survey, site) = (ids(&["a"]), ids(&["b"]), ids(&["c"]));
    assert_eq!(choose_tables(&mine, &survey, &site), TableChoice { ids: mine.clone(), list: TableSource::Request });
    assert_eq!(choose_tables(&[], &survey, &site), TableChoice { ids: survey.clone(), list: TableSource::Survey });
    assert_eq!(choose_tables(&[], &[], &site), TableChoice { ids: site.clone(), list: TableSource::Site });
    // DESIGN.md: the default set when nobody chose.
    let default = choose_tables(&[], &[], &[]);
    assert_eq!(default.list, TableSource::Default);
    assert_eq!(default.ids, ids(&["icnirp-2010-occupational", "eu-2013-35-low", "eu-2013-35-limbs"]));
}

#[test]
fn resolving_finds_a_custom_table_and_prefers_it_to_a_built_in_of_the_same_id() {
    let custom = parsed(&base());
    let got =
        resolve_tables(&asked(&["acme-hs17.rev3"]), std::slice::from_ref(&custom)).expect("the custom table is found");
    assert_eq!(got, vec![custom]);

    let shadow = parsed(&with("/id", json!("icnirp-2010-public")));
    let got = resolve_tables(&asked(&["icnirp-2010-public"]), std::slice::from_ref(&shadow)).unwrap();
    assert_eq!(got[0], shadow);
    assert_ne!(&got[0], builtin_table("icnirp-2010-public").unwrap());
}
