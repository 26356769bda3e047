//! Regimes read against results: the highest tier exceeded and the first
//! tier met, from the verdicts of the regime's tables. Field values are
//! worked by hand from the long-wire law B[µT] = 0.2 · I[A] / r[m]
//! (OpenStax University Physics Vol. 2, §12.2, V); table values from
//! docs/REFERENCES.md. Tier names and sentences are data (regimes.json);
//! the sentences are marked from memory there.

use super::{Options, point, run, wire_site};
use fluxbound_core::assess::{LoadCase, RegimeResult};
use serde_json::json;

const ALL: [&str; 7] = [
    "eu-2013-35-low",
    "eu-2013-35-high",
    "eu-2013-35-limbs",
    "icnirp-2010-public",
    "icnirp-2010-occupational",
    "ieee-c95.1-2019-unrestricted",
    "ieee-c95.1-2019-restricted",
];

fn regime<'a>(rs: &'a [RegimeResult], id: &str) -> &'a RegimeResult {
    rs.iter().find(|r| r.regime == id).unwrap_or_else(|| panic!("no regime {id} in {rs:?}"))
}

fn tiers(r: &RegimeResult) -> (Option<&str>, Option<&str>) {
    (r.highest_exceeded.as_deref(), r.first_met.as_deref())
}

/// 2000 A in a long wire along x at z = 0, seen from 0.2 m: 0.2 · 2000 / 0.2
/// = 2000 µT at 50 Hz, on a whole-body point, a limb point and an area whose
/// highest cell lies 0.2 m above the wire.
fn two_thousand_microtesla(ids: &[&str]) -> fluxbound_core::assess::Assessment {
    let positions = json!([point("p", [0.0, 0.2, 0.0]), {"id": "hand", "at": [0.0, 0.2, 0.0], "body_region": "limb"}]);
    let areas =
        json!([{"id": "deck", "polygon": [[-1, -1], [1, -1], [1, 1], [-1, 1]], "height_m": 0.2, "spacing_m": 0.5}]);
    let mut all = ids.to_vec();
    all.push("ieee-c95.1-2019-limbs");
    run(wire_site(2000.0, 2000.0, json!([]), positions, areas), LoadCase::Present, &all, Options::default())
}

#[test]
fn a_field_between_the_eu_low_and_high_action_levels_exceeds_the_low_tier_and_meets_the_high_one() {
    // 2000 µT at 50 Hz: above the low AL 1000 µT (Table B2, V), below the
    // high AL 6000 µT (V). Ratios 2.0 and 0.333: far from either edge, so the
    // 1e-8 field accuracy of the 10 km wire cannot change a tier.
    let a = two_thousand_microtesla(&ALL);
    for rs in [&a.positions[0].regimes, &a.areas[0].regimes] {
        let eu = regime(rs, "eu-2013-35");
        assert!(eu.evaluated);
        assert_eq!(tiers(eu), (Some("low action level"), Some("high action level")));
        assert_eq!(eu.words.len(), 2, "{:?}", eu.words);
        assert!(eu.words[0].text.starts_with("Above the low action level"), "{}", eu.words[0].text);
        assert!(eu.words[1].text.starts_with("Within the high action level"), "{}", eu.words[1].text);
        assert!(eu.words.iter().all(|w| w.source.contains("from memory")), "{:?}", eu.words);
    }
}

#[test]
fn the_same_field_reads_against_the_icnirp_and_ieee_tiers() {
    // ICNIRP 2010 (V): public 200 µT and occupational 1000 µT, both below
    // 2000 µT → the highest tier exceeded is occupational, none is met.
    // IEEE C95.1-2019: unrestricted 904 µT (M) exceeded, restricted 2710 µT
    // (V at 50 Hz) met (ratio 0.738).
    let a = two_thousand_microtesla(&ALL);
    let p = &a.positions[0].regimes;
    let icnirp = regime(p, "icnirp-2010");
    assert_eq!(tiers(icnirp), (Some("occupational"), None));
    assert!(icnirp.words[0].text.starts_with("Above the occupational reference level"));
    let ieee = regime(p, "ieee-c95.1-2019");
    assert_eq!(tiers(ieee), (Some("unrestricted environment"), Some("restricted environment")));
    assert_eq!(a.positions[0].regimes.len(), 3);
}

#[test]
fn a_limb_position_is_read_against_the_limb_levels_beside_the_upper_tiers() {
    // Limb point, 2000 µT at 50 Hz: EU limb AL 18000 µT (V) met, the
    // whole-body low AL does not apply to limbs; IEEE arms and legs
    // 3.79e6/50 = 75800 µT (V) met; ICNIRP 2010 has no limb table here.
    let a = two_thousand_microtesla(&ALL);
    let hand = &a.positions[1].regimes;
    assert_eq!(tiers(regime(hand, "eu-2013-35")), (None, Some("high action level")));
    assert_eq!(tiers(regime(hand, "ieee-c95.1-2019")), (None, Some("restricted environment")));
    let icnirp = regime(hand, "icnirp-2010");
    assert!(!icnirp.evaluated);
    assert!(icnirp.words[0].text.contains("No table of this regime applies"), "{:?}", icnirp.words);
}

#[test]
fn a_regime_with_tables_left_out_is_not_read_and_says_which() {
    // Only the EU low AL assessed: the EU regime is named but not read; the
    // others, none of whose tables were assessed, are left out.
    let a = two_thousand_microtesla(&["eu-2013-35-low"]);
    let rs = &a.positions[0].regimes;
    let eu = regime(rs, "eu-2013-35");
    assert!(!eu.evaluated);
    assert_eq!(tiers(eu), (None, None));
    assert!(eu.words[0].text.contains("eu-2013-35-high, eu-2013-35-limbs"), "{:?}", eu.words);
    // ieee-c95.1-2019-limbs is always added by the helper, so the IEEE regime is named too, unread.
    assert!(!regime(rs, "ieee-c95.1-2019").evaluated);
    assert!(rs.iter().all(|r| r.regime != "icnirp-2010"));
}

#[test]
fn a_field_below_every_tier_meets_the_lowest_one() {
    // 20 A at 0.2 m: 0.2 · 20 / 0.2 = 20 µT, below ICNIRP 2010 public 200 µT (V).
    let positions = json!([point("p", [0.0, 0.2, 0.0])]);
    let a = run(wire_site(20.0, 20.0, json!([]), positions, json!([])), LoadCase::Present, &ALL, Options::default());
    let rs = &a.positions[0].regimes;
    assert_eq!(tiers(regime(rs, "icnirp-2010")), (None, Some("general public")));
    assert_eq!(tiers(regime(rs, "eu-2013-35")), (None, Some("low action level")));
    assert_eq!(regime(rs, "eu-2013-35").words.len(), 1);
}

#[test]
fn the_text_report_shows_each_regime_with_its_tiers_and_sourced_words() {
    let a = two_thousand_microtesla(&ALL);
    let text = fluxbound_core::report::text::assessment_text(&a);
    assert!(
        text.contains("regime eu-2013-35: highest tier exceeded low action level; first tier met high action level"),
        "{text}"
    );
    assert!(text.contains("[from memory (Directive 2013/35/EU, Article 3(3))]"), "{text}");
}

#[test]
fn the_text_report_gives_an_unread_regime_one_line_naming_the_missing_tables() {
    let a = two_thousand_microtesla(&["eu-2013-35-low"]);
    let text = fluxbound_core::report::text::assessment_text(&a);
    assert!(
        text.contains(
            "regime eu-2013-35: Not read against this regime: its table(s) eu-2013-35-high, eu-2013-35-limbs"
        ),
        "{text}"
    );
}
