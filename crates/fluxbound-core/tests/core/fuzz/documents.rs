//! The JSON documents: site, table, regime and survey. Each from arbitrary
//! text, arbitrary JSON, value-level mutations of valid documents and
//! text-level edits of them.

use super::mutate::{any_json, edited, mutated, mutations, text_edits};
use super::{assert_located, config};
use fluxbound_core::limits::{parse_regime, parse_table};
use fluxbound_core::site::{Problems, Site, parse_json, parse_site, site_warnings};
use fluxbound_core::survey::{validate_survey, wire::SurveyDoc};
use proptest::prelude::*;
use serde_json::Value;
use std::sync::LazyLock;

/// Valid documents to mutate: the example sites of `examples/`, every
/// built-in table and regime, and the example survey.
static SITES: LazyLock<Vec<Value>> = LazyLock::new(|| {
    vec![
        serde_json::from_str(include_str!("../../../../../examples/site-switch-room.json")).unwrap(),
        serde_json::from_str(include_str!("../../../../../examples/site-furnace-feeder.json")).unwrap(),
    ]
});
static TABLES: LazyLock<Vec<Value>> = LazyLock::new(|| list(include_str!("../../../src/limits/builtin.json")));
static REGIMES: LazyLock<Vec<Value>> = LazyLock::new(|| list(include_str!("../../../src/limits/regimes.json")));
static SURVEY: LazyLock<Value> =
    LazyLock::new(|| serde_json::from_str(include_str!("../../../../../examples/survey-switch-room.json")).unwrap());
static SURVEY_SITE: LazyLock<Site> =
    LazyLock::new(|| parse_site(include_str!("../../../../../examples/site-switch-room.json")).unwrap());

fn list(text: &str) -> Vec<Value> {
    match serde_json::from_str(text).unwrap() {
        Value::Array(items) => items,
        other => panic!("expected a list, got {other}"),
    }
}

/// The four parsers, from text as a user sends it.
#[derive(Debug, Clone, Copy)]
enum Kind {
    Site,
    Table,
    Regime,
    Survey,
}

/// Parses `text` as `kind`; a problem list, or nothing when it is valid.
/// A valid site also gets its warnings (they read every part of it).
fn check(kind: Kind, text: &str) -> Option<Problems> {
    match kind {
        Kind::Site => match parse_site(text) {
            Ok(site) => {
                warnings_if_small(&site);
                None
            }
            Err(p) => Some(p),
        },
        Kind::Table => parse_table(text).err(),
        Kind::Regime => parse_regime(text).err(),
        Kind::Survey => parse_json::<SurveyDoc>(text).and_then(|doc| validate_survey(&doc, &SURVEY_SITE)).err(),
    }
}

/// Most conductors for which a mutated valid site also gets its warnings
/// (their overlap search grows with the square of the count).
const WARNINGS_UP_TO_CONDUCTORS: usize = 50;

fn warnings_if_small(site: &Site) {
    if site.conductors().len() <= WARNINGS_UP_TO_CONDUCTORS {
        let _ = site_warnings(site);
    }
}

fn originals(kind: Kind) -> Vec<Value> {
    match kind {
        Kind::Site => SITES.clone(),
        Kind::Table => TABLES.clone(),
        Kind::Regime => REGIMES.clone(),
        Kind::Survey => vec![SURVEY.clone()],
    }
}

fn kind() -> impl Strategy<Value = Kind> {
    prop_oneof![Just(Kind::Site), Just(Kind::Table), Just(Kind::Regime), Just(Kind::Survey)]
}

fn check_located(kind: Kind, text: &str) {
    if let Some(problems) = check(kind, text) {
        assert_located(text, &problems);
    }
}

#[test]
fn the_valid_documents_used_as_seeds_are_valid() {
    for kind in [Kind::Site, Kind::Table, Kind::Regime, Kind::Survey] {
        for doc in originals(kind) {
            assert!(check(kind, &doc.to_string()).is_none(), "{kind:?} seed is not valid: {doc}");
        }
    }
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn arbitrary_bytes_as_any_document_never_panic_and_every_problem_has_a_pointer(
        kind in kind(),
        bytes in prop::collection::vec(any::<u8>(), 0..256),
    ) {
        check_located(kind, &String::from_utf8_lossy(&bytes));
    }

    #[test]
    fn arbitrary_json_as_any_document_never_panics_and_every_pointer_resolves(kind in kind(), doc in any_json()) {
        check_located(kind, &doc.to_string());
    }

    #[test]
    fn mutated_valid_documents_never_panic_and_every_pointer_resolves(
        kind in kind(),
        seed in any::<prop::sample::Index>(),
        changes in mutations(),
    ) {
        let originals = originals(kind);
        let doc = mutated(&originals[seed.index(originals.len())], &changes);
        check_located(kind, &doc.to_string());
    }

    #[test]
    fn edited_texts_of_valid_documents_never_panic_and_every_pointer_resolves(
        kind in kind(),
        seed in any::<prop::sample::Index>(),
        pretty in any::<bool>(),
        edits in text_edits(),
    ) {
        let originals = originals(kind);
        let original = &originals[seed.index(originals.len())];
        let text = if pretty { serde_json::to_string_pretty(original).unwrap() } else { original.to_string() };
        check_located(kind, &edited(&text, &edits));
    }
}
