//! Canonical JSON (RFC 8785) and the site fingerprint.
//!
//! Expected strings come from RFC 8785 (JSON Canonicalization Scheme) and
//! ECMA-262's Number::toString, both cited from memory (the RFC's §3.2.2
//! example, §3.2.3 sorting example and Appendix B number table); the SHA-256
//! digest was computed outside the project with GNU coreutils `sha256sum`.

use fluxbound_core::assess::{self, LoadCase, Options};
use fluxbound_core::limits::builtin_table;
use fluxbound_core::provenance::{CANONICAL_FORM, Provenance, canonical_json, es_number, fingerprint};
use fluxbound_core::report::{csv as csv_export, geojson, svg, text};
use fluxbound_core::site::{parse_json, validate_site, wire::SiteDoc};
use serde_json::{Value, json};

#[test]
fn the_rfc_8785_example_object_is_canonicalised_as_the_rfc_prints_it() {
    // RFC 8785 §3.2.2 input and output (from memory).
    let input = r#"{
        "numbers": [333333333.33333329, 1E30, 4.50, 2e-3, 0.000000000000000000000000001],
        "string": "\u20ac$\u000F\u000aA'\u0042\u0022\u005c\\\"\/",
        "literals": [null, true, false]
    }"#;
    let v: Value = serde_json::from_str(input).unwrap();
    let expected = r#"{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],"string":"€$\u000f\nA'B\"\\\\\"/"}"#;
    assert_eq!(canonical_json(&v), expected);
}

#[test]
fn object_keys_are_sorted_by_utf_16_code_units_not_by_code_points() {
    // RFC 8785 §3.2.3 sorting example (from memory): U+1F600 is the
    // surrogate pair D83D DE00, which sorts before U+FB33 although its code
    // point is higher.
    let v: Value = serde_json::from_str(
        r#"{"\u20ac":"Euro Sign","\r":"Carriage Return","\ufb33":"Hebrew Letter Dalet With Dagesh","1":"One","\ud83d\ude00":"Emoji: Grinning Face","\u0080":"Control","\u00f6":"Latin Small Letter O With Diaeresis"}"#,
    )
    .unwrap();
    let keys: Vec<String> = {
        let text = canonical_json(&v);
        let back: serde_json::Map<String, Value> = serde_json::from_str(&text).unwrap();
        // serde_json's map is sorted by code point; read the order from the text instead.
        let mut found: Vec<(usize, String)> = back
            .keys()
            .map(|k| (text.find(&format!("{}:", serde_json::to_string(k).unwrap())).unwrap(), k.clone()))
            .collect();
        found.sort();
        found.into_iter().map(|(_, k)| k).collect()
    };
    let expected = ["\r", "1", "\u{80}", "\u{f6}", "\u{20ac}", "\u{1f600}", "\u{fb33}"];
    assert_eq!(keys, expected);
}

#[test]
fn numbers_are_written_as_ecmascript_writes_a_double() {
    // RFC 8785 Appendix B rows, IEEE 754 bits → text (from memory; the same
    // rows appear in a public JCS implementation's test table seen through
    // the search tool), and ECMA-262 Number::toString's switch points:
    // exponent form from 1e21 up and below 1e-6, minus zero as 0.
    let rows: [(u64, &str); 9] = [
        (0x0000000000000000, "0"),
        (0x8000000000000000, "0"),
        (0x0000000000000001, "5e-324"),
        (0x8000000000000001, "-5e-324"),
        (0x7fefffffffffffff, "1.7976931348623157e+308"),
        (0xffefffffffffffff, "-1.7976931348623157e+308"),
        (0x4340000000000000, "9007199254740992"),
        (0xc340000000000000, "-9007199254740992"),
        (0x4430000000000000, "295147905179352830000"),
    ];
    for (bits, expected) in rows {
        assert_eq!(es_number(f64::from_bits(bits)), expected, "{bits:#018x}");
    }
    let switch_points: [(f64, &str); 6] = [
        (999999999999999700000.0, "999999999999999700000"),
        (1e21, "1e+21"),
        (1e23, "1e+23"),
        (0.000001, "0.000001"),
        (0.0000001, "1e-7"),
        (1400.0, "1400"),
    ];
    for (v, expected) in switch_points {
        assert_eq!(es_number(v), expected, "{v:e}");
    }
}

#[test]
fn the_fingerprint_is_the_sha_256_of_the_canonical_text() {
    // printf '%s' '{"a":"x","b":1}' | sha256sum  (GNU coreutils)
    assert_eq!(
        fingerprint(&json!({"b": 1.0, "a": "x"})),
        "cdab067e9f3beb32d1252cfd63e492592fecbf591b0d08cadb24bb17f3864246"
    );
}

const SITE_A: &str = r#"{"name": "Bay 4", "frequency_hz": 50,
  "circuits": [{"id": "LV-main", "kind": "three_phase", "current_a": 1400, "phases": {"C": {"current_a": 1250}}}],
  "conductors": [
    {"id": "a", "circuit": "LV-main", "phase": "A", "radius_m": 0.02, "path": [[-5, 0, 1], [5, 0, 1]]},
    {"id": "b", "circuit": "LV-main", "phase": "B", "radius_m": 0.02, "path": [[-5, 0.2, 1], [5, 0.2, 1]]},
    {"id": "c", "circuit": "LV-main", "phase": "C", "radius_m": 0.02, "path": [[-5, 0.4, 1], [5, 0.4, 1]]}],
  "positions": [{"id": "desk", "at": [0, 1.5]}],
  "areas": [{"id": "floor", "polygon": [[-2, -2], [2, -2], [2, 2], [-2, 2]], "height_m": 0, "spacing_m": 0.5}]}"#;

/// The same site: keys in another order, numbers spelt differently, other
/// white space.
const SITE_B: &str = r#"{"positions":[{"at":[0.0,1.5e0],"id":"desk"}],"frequency_hz":5.0e1,
  "conductors":[
    {"path":[[-5.0,0,1],[5,0,1.0]],"radius_m":2e-2,"phase":"A","circuit":"LV-main","id":"a"},
    {"path":[[-5,0.2,1],[5,0.20,1]],"radius_m":0.020,"phase":"B","circuit":"LV-main","id":"b"},
    {"path":[[-5,0.4,1],[5,4e-1,1]],"radius_m":0.02,"phase":"C","circuit":"LV-main","id":"c"}],
  "circuits":[{"phases":{"C":{"current_a":1.25e3}},"current_a":1400.0,"kind":"three_phase","id":"LV-main"}],
  "name":"Bay 4",
  "areas":[{"spacing_m":5e-1,"height_m":0.0,"polygon":[[-2,-2],[2,-2],[2,2],[-2,2]],"id":"floor"}]}"#;

fn doc(text: &str) -> SiteDoc {
    parse_json(text).unwrap()
}

#[test]
fn the_same_site_gives_the_same_fingerprint_whatever_its_key_order_and_number_spelling() {
    assert_eq!(fingerprint(&doc(SITE_A)), fingerprint(&doc(SITE_B)));
}

#[test]
fn a_changed_current_changes_the_fingerprint() {
    let changed = SITE_A.replace("\"current_a\": 1250", "\"current_a\": 1251");
    assert_ne!(fingerprint(&doc(SITE_A)), fingerprint(&doc(&changed)));
}

fn traced_assessment() -> assess::Assessment {
    let d = doc(SITE_A);
    let site = validate_site(&d).unwrap();
    let tables = vec![builtin_table("icnirp-2010-occupational").unwrap().clone()];
    let provenance = Provenance {
        computed_at: "2026-12-02T15:04:05.000000Z".into(),
        tool_version: "9.9.9".into(),
        build_commit: "0123456789ab".into(),
        site_sha256: fingerprint(&d),
        canonical_form: CANONICAL_FORM.into(),
        site_revision: None,
        site_file: Some("bay4.json".into()),
    };
    assess::assess(&site, &LoadCase::Present, &tables, &Options::default()).unwrap().with_provenance(provenance)
}

#[test]
fn an_assessment_reports_every_phase_current_of_a_circuit() {
    let a = traced_assessment();
    let phases = &a.load_case.circuits[0].phases;
    let currents: Vec<f64> = phases.iter().map(|p| p.current_a).collect();
    // The site's own numbers: 1400 A on A and B, the 1250 A override on C;
    // copied, not computed, so 1e-12 A only allows for nothing but the copy.
    for (got, want) in currents.iter().zip([1400.0, 1400.0, 1250.0]) {
        assert!((got - want).abs() < 1e-12, "{currents:?}");
    }
    assert_eq!(a.load_case.phase_lines(), ["LV-main: A 1400 A, B 1400 A, C 1250 A"]);
}

#[test]
fn the_text_report_names_time_build_fingerprint_file_phases_and_citations() {
    let a = traced_assessment();
    let t = text::assessment_text(&a);
    let p = a.provenance.as_ref().unwrap();
    for needle in [
        "2026-12-02T15:04:05.000000Z",
        "fluxbound 9.9.9 (build 0123456789ab)",
        "file bay4.json",
        p.site_sha256.as_str(),
        "LV-main: A 1400 A, B 1400 A, C 1250 A",
        a.tables[0].source.as_str(),
    ] {
        assert!(t.contains(needle), "missing {needle:?} in\n{t}");
    }
}

#[test]
fn every_csv_row_carries_the_provenance_and_the_phase_currents() {
    let a = traced_assessment();
    let text = csv_export::positions_csv(&a);
    let mut reader = csv::Reader::from_reader(text.as_bytes());
    let headers: Vec<String> = reader.headers().unwrap().iter().map(str::to_string).collect();
    let col = |name: &str| headers.iter().position(|h| h == name).unwrap();
    let rows: Vec<csv::StringRecord> = reader.records().map(Result::unwrap).collect();
    assert!(!rows.is_empty());
    for r in &rows {
        assert_eq!(&r[col("site_sha256")], a.provenance.as_ref().unwrap().site_sha256);
        assert_eq!(&r[col("site_source")], "file bay4.json");
        assert_eq!(&r[col("build_commit")], "0123456789ab");
        assert_eq!(&r[col("phase_currents_a")], "LV-main: A 1400 A, B 1400 A, C 1250 A");
        assert_eq!(&r[col("ratio_kind")], "single_frequency");
        assert_eq!(&r[col("table_source")], a.tables[0].source);
    }
}

#[test]
fn geojson_and_svg_carry_the_provenance() {
    let a = traced_assessment();
    let site = validate_site(&doc(SITE_A)).unwrap();
    let g = geojson::assessment_geojson(&site, &a, &[]);
    assert_eq!(g["provenance"]["site_sha256"], json!(a.provenance.as_ref().unwrap().site_sha256));
    assert_eq!(g["load_case_currents"]["circuits"][0]["phases"][2]["current_a"], json!(1250.0));
    let loads = LoadCase::Present.resolve(&site).unwrap();
    let tables = vec![builtin_table("icnirp-2010-occupational").unwrap().clone()];
    let map = assess::area_map(&site, &loads, &tables, &site.areas()[0], 10_000);
    let picture = svg::area_map_svg(&site, &a, &map);
    assert!(picture.contains("<metadata>"));
    assert!(picture.contains(&a.provenance.as_ref().unwrap().site_sha256));
    assert!(picture.contains("from site file bay4.json"));
    assert!(picture.contains("LV-main: A 1400 A, B 1400 A, C 1250 A"));
}

/// A single-phase go-and-return pair 0.3 m apart, 1000 m long, with a 5th
/// (30 %) and a 50th (1 %) harmonic; a desk 1 m from the go conductor.
const HARMONIC_SITE: &str = r#"{"name": "harmonic bay", "frequency_hz": 50,
 "circuits": [{"id": "VFD", "kind": "single_phase", "current_a": 1000,
   "harmonics": [{"order": 5, "percent": 30, "angle_deg": 0}, {"order": 50, "percent": 1, "angle_deg": 0}]}],
 "conductors": [{"id": "go", "circuit": "VFD", "phase": "A", "radius_m": 0.02, "path": [[-500, 0, 0], [500, 0, 0]]},
                {"id": "back", "circuit": "VFD", "phase": "N", "radius_m": 0.02, "path": [[-500, 0.3, 0], [500, 0.3, 0]]}],
 "positions": [{"id": "desk", "at": [0, 1, 0]}]}"#;

/// A flat 1000 µT table that stops at 1 kHz, so 2500 Hz is not covered.
const SHORT_TABLE: &str = r#"{"id": "acme-1k", "title": "Acme flat to 1 kHz (invented)", "source": "Invented for tests",
 "applies_to": {"population": "workers", "body_region": "whole_body"}, "kind": "screening",
 "bands": [{"from_hz": 1, "to_hz": 1000, "coefficient": 1000, "exponent": 0}]}"#;

#[test]
fn a_ratio_of_several_frequencies_is_marked_and_shows_each_term() {
    let site = fluxbound_core::site::parse_site(HARMONIC_SITE).unwrap();
    let tables = vec![builtin_table("icnirp-2010-occupational").unwrap().clone()];
    let a = assess::assess(&site, &LoadCase::Present, &tables, &Options::default()).unwrap();
    // Two long antiparallel wires at 1 m and 0.7 m: B = 0.2 · I · (1/0.7 − 1/1)
    // µT (OpenStax University Physics Vol. 2 §12.2, B = μ0·I/(2πr) = 0.2·I/r
    // µT with I in A and r in m), at I = 1000, 300 and 10 A: 85.714, 25.714
    // and 0.857 µT. The 1000 m length changes B by 2e-6 relative (cos of
    // 1/500 rad), so 1e-4 relative is a safe tolerance.
    let per = &a.positions[0].comparisons[0].per_frequency;
    let want = [(50.0, 1000.0), (250.0, 300.0), (2500.0, 10.0)];
    assert_eq!(per.len(), 3);
    for (term, (f_hz, i_a)) in per.iter().zip(want) {
        let b = 0.2 * i_a * (1.0 / 0.7 - 1.0);
        assert!((term.frequency_hz - f_hz).abs() < 1e-9);
        assert!((term.b_ut - b).abs() / b < 1e-4, "{} vs {b}", term.b_ut);
    }
    // ICNIRP 2010 Table 3, occupational, 25 Hz–3 kHz: 0.3/f T (from memory),
    // 120 µT at 2500 Hz.
    assert!((per[2].level_ut - 120.0).abs() < 1e-9);
    let text = text::assessment_text(&a);
    assert!(text.contains("T1 ratio 0.119 is a sum over 3 frequencies"), "{text}");
    assert!(text.contains("2500 Hz  B_f      0.857 µT  B_RL(f)    120.000 µT"), "{text}");
    let csv = csv_export::positions_csv(&a);
    let mut reader = csv::Reader::from_reader(csv.as_bytes());
    let headers: Vec<String> = reader.headers().unwrap().iter().map(str::to_string).collect();
    let row = reader.records().next().unwrap().unwrap();
    let col = |name: &str| headers.iter().position(|h| h == name).unwrap();
    assert_eq!(&row[col("ratio_kind")], "sum_over_frequencies");
    assert_eq!(row[col("ratio_terms")].split("; ").count(), 3, "{}", &row[col("ratio_terms")]);
}

#[test]
fn a_table_that_does_not_cover_a_frequency_lists_it() {
    let site = fluxbound_core::site::parse_site(HARMONIC_SITE).unwrap();
    let tables = vec![fluxbound_core::limits::parse_table(SHORT_TABLE).unwrap()];
    let a = assess::assess(&site, &LoadCase::Present, &tables, &Options::default()).unwrap();
    // 50 · 50 Hz, a product of exact small integers (1e-9 Hz is slack).
    let uncovered = &a.positions[0].comparisons[0].uncovered_hz;
    assert!(uncovered.len() == 1 && (uncovered[0] - 2500.0).abs() < 1e-9, "{uncovered:?}");
    let text = text::assessment_text(&a);
    assert!(text.contains("T1 not covered: the table has no level at 2500 Hz"), "{text}");
    let csv = csv_export::positions_csv(&a);
    assert!(csv.contains(",2500,"), "{csv}");
}
