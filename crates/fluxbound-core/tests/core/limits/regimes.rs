//! Regimes as data: the built-in file and the validation of a custom regime
//! with its RFC 6901 pointers.

use fluxbound_core::limits::{builtin_regimes, builtin_table, parse_regime};
use serde_json::{Value, json};

#[test]
fn the_built_in_regimes_are_the_eu_ieee_and_icnirp_ones_with_ordered_tiers() {
    let got: Vec<(&str, Vec<&str>)> =
        builtin_regimes().iter().map(|r| (r.id(), r.tiers().iter().map(|t| t.name.as_str()).collect())).collect();
    assert_eq!(
        got,
        vec![
            ("eu-2013-35", vec!["low action level", "high action level"]),
            ("ieee-c95.1-2019", vec!["unrestricted environment", "restricted environment"]),
            ("icnirp-2010", vec!["general public", "occupational"]),
        ]
    );
}

#[test]
fn every_built_in_tier_names_built_in_tables_and_marks_each_sentence_with_its_source() {
    for r in builtin_regimes() {
        for t in r.tiers() {
            for id in &t.tables {
                assert!(builtin_table(id).is_some(), "{}: tier {} names unknown table {id}", r.id(), t.name);
            }
            for s in [&t.met, &t.exceeded] {
                // Every built-in sentence is unverified wording: it must say so.
                assert!(s.source.contains("from memory"), "{}: {} — {}", r.id(), s.text, s.source);
            }
        }
    }
}

fn custom() -> Value {
    json!({
        "id": "site-rule", "title": "Site rule", "source": "Invented for this test",
        "tiers": [
            {"name": "green", "tables": ["icnirp-2010-public"],
             "met": {"text": "Fine.", "source": "site rule 1"}, "exceeded": {"text": "Above green.", "source": "site rule 1"}},
            {"name": "amber", "tables": ["icnirp-2010-occupational"],
             "met": {"text": "Within amber.", "source": "site rule 2"}, "exceeded": {"text": "Stop.", "source": "site rule 2"}}
        ]
    })
}

fn pointers(doc: &Value) -> Vec<String> {
    match parse_regime(&doc.to_string()) {
        Ok(_) => panic!("should be rejected: {doc}"),
        Err(p) => p.iter().map(|p| p.pointer.clone()).collect(),
    }
}

#[test]
fn a_custom_regime_parses_with_its_tiers_in_order() {
    let r = parse_regime(&custom().to_string()).unwrap();
    assert_eq!(r.table_ids(), vec!["icnirp-2010-public", "icnirp-2010-occupational"]);
}

#[test]
fn a_custom_regime_with_blank_sentences_bad_ids_and_repeated_names_is_rejected_with_every_pointer() {
    let mut doc = custom();
    doc["id"] = json!("bad id");
    doc["tiers"][0]["met"]["source"] = json!(" ");
    doc["tiers"][1]["tables"] = json!(["ok", "ok"]);
    doc["tiers"][1]["name"] = json!("green");
    assert_eq!(pointers(&doc), vec!["/id", "/tiers/0/met/source", "/tiers/1/tables/1", "/tiers/1/name"]);
    let mut empty = custom();
    empty["tiers"] = json!([]);
    assert_eq!(pointers(&empty), vec!["/tiers"]);
    let mut unknown = custom();
    unknown["tiers"][0]["colour"] = json!("green");
    assert_eq!(pointers(&unknown), vec!["/tiers/0/colour"]);
}
