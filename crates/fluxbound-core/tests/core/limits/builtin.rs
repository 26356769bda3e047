//! Every built-in table at 50 Hz and 60 Hz against docs/REFERENCES.md. Status
//! letters as there: V verified in the named source, M from memory, D
//! derived here (arithmetic shown).

use super::{assert_level, level, table};
use fluxbound_core::limits::{
    DEFAULT_TABLE_IDS, IMPLANT_TABLE_ID, Population, TableBodyRegion, builtin_table, builtin_tables, parse_table,
};

#[test]
fn icnirp_2010_occupational_is_1000_ut_at_50_and_60_hz() {
    // Source: ICNIRP 2010, Health Physics 99(6):818–836, Table 3, band 25–300 Hz: 1000 µT (V)
    assert_level(level("icnirp-2010-occupational", 50.0), 1000.0, "50 Hz");
    // Source: ICNIRP 2010, Table 3, band 25–300 Hz: 1000 µT (V)
    assert_level(level("icnirp-2010-occupational", 60.0), 1000.0, "60 Hz");
}

#[test]
fn icnirp_2010_public_is_200_ut_at_50_and_60_hz() {
    // Source: ICNIRP 2010, Health Physics 99(6):818–836, Table 4, band 25–400 Hz: 200 µT (V)
    assert_level(level("icnirp-2010-public", 50.0), 200.0, "50 Hz");
    // Source: ICNIRP 2010, Table 4, band 25–400 Hz: 200 µT (V)
    assert_level(level("icnirp-2010-public", 60.0), 200.0, "60 Hz");
}

#[test]
fn icnirp_1998_occupational_is_500_ut_at_50_hz_and_416_67_ut_at_60_hz() {
    // Source: ICNIRP 1998, Health Physics 74(4):494–522, Table 6: 500 µT at 50 Hz (V)
    assert_level(level("icnirp-1998-occupational", 50.0), 500.0, "50 Hz");
    // Derived: 2.5e4/60 = 416.67 µT from the ICNIRP 1998 formula 2.5e4/f for 25–820 Hz (formula from memory)
    assert_level(level("icnirp-1998-occupational", 60.0), 2.5e4 / 60.0, "60 Hz");
}

#[test]
fn icnirp_1998_public_is_100_ut_at_50_hz_and_83_33_ut_at_60_hz() {
    // Source: ICNIRP 1998, Health Physics 74(4):494–522: 100 µT at 50 Hz (V)
    assert_level(level("icnirp-1998-public", 50.0), 100.0, "50 Hz");
    // Derived: 5000/60 = 83.33 µT from the ICNIRP 1998 formula 5000/f for 25–800 Hz (formula from memory)
    assert_level(level("icnirp-1998-public", 60.0), 5000.0 / 60.0, "60 Hz");
}

#[test]
fn eu_1999_519_public_is_100_ut_at_50_hz_and_83_33_ut_at_60_hz() {
    // Source: Council Recommendation 1999/519/EC, Annex III (= ICNIRP 1998 public): 100 µT at 50 Hz (V)
    assert_level(level("eu-1999-519-public", 50.0), 100.0, "50 Hz");
    // Derived: 5000/60 = 83.33 µT from the formula 5000/f for 25–800 Hz (formula from memory)
    assert_level(level("eu-1999-519-public", 60.0), 5000.0 / 60.0, "60 Hz");
}

#[test]
fn eu_2013_35_low_action_level_is_1000_ut_at_50_and_60_hz() {
    // Source: Directive 2013/35/EU, Annex II, Table B2, low AL, band 25–300 Hz: 1000 µT (V, transposition tables)
    assert_level(level("eu-2013-35-low", 50.0), 1000.0, "50 Hz");
    // Source: Directive 2013/35/EU, Annex II, Table B2, low AL, band 25–300 Hz: 1000 µT (V, transposition tables)
    assert_level(level("eu-2013-35-low", 60.0), 1000.0, "60 Hz");
}

#[test]
fn eu_2013_35_high_action_level_is_6000_ut_at_50_hz_and_5000_ut_at_60_hz() {
    // Source: Directive 2013/35/EU, Annex II, Table B2, high AL: 6000 µT at 50 Hz (V)
    assert_level(level("eu-2013-35-high", 50.0), 6000.0, "50 Hz");
    // Derived: 3.0e5/60 = 5000 µT from the high-AL formula 3.0e5/f (formula from memory)
    assert_level(level("eu-2013-35-high", 60.0), 5000.0, "60 Hz");
}

#[test]
fn eu_2013_35_limbs_action_level_is_18000_ut_at_50_hz_and_15000_ut_at_60_hz() {
    // Source: Directive 2013/35/EU, Annex II, Table B2, AL for limbs: 18000 µT at 50 Hz (V)
    assert_level(level("eu-2013-35-limbs", 50.0), 18000.0, "50 Hz");
    // Derived: 9.0e5/60 = 15000 µT from the limb-AL formula 9.0e5/f (formula verified for 1–300 Hz)
    assert_level(level("eu-2013-35-limbs", 60.0), 15000.0, "60 Hz");
}

#[test]
fn ieee_c95_1_2019_restricted_is_2710_ut_at_50_and_60_hz() {
    // Source: IEEE C95.1-2019 (ELF values from C95.6-2002), head and torso, restricted: 2710 µT at 50 Hz (V)
    assert_level(level("ieee-c95.1-2019-restricted", 50.0), 2710.0, "50 Hz");
    // From memory: the flat 20–759 Hz band of 2710 µT (bands M), so 2710 µT at 60 Hz
    assert_level(level("ieee-c95.1-2019-restricted", 60.0), 2710.0, "60 Hz");
}

#[test]
fn ieee_c95_1_2019_unrestricted_is_904_ut_at_50_and_60_hz_from_memory() {
    // From memory: IEEE C95.1-2019, head and torso, unrestricted, flat 20–759 Hz band: 904 µT (M)
    assert_level(level("ieee-c95.1-2019-unrestricted", 50.0), 904.0, "50 Hz");
    // From memory: same band, 904 µT at 60 Hz (M)
    assert_level(level("ieee-c95.1-2019-unrestricted", 60.0), 904.0, "60 Hz");
}

#[test]
fn ieee_c95_1_2019_limbs_is_75800_ut_at_50_hz_and_63166_7_ut_at_60_hz() {
    // Source: IEEE C95.1-2019, arms and legs: 75800 µT at 50 Hz (V)
    assert_level(level("ieee-c95.1-2019-limbs", 50.0), 75800.0, "50 Hz");
    // Derived: 3.79e6/60 = 63166.7 µT from the formula 3.79e6/f for 10.7–3000 Hz (formula from memory)
    assert_level(level("ieee-c95.1-2019-limbs", 60.0), 3.79e6 / 60.0, "60 Hz");
}

#[test]
fn acgih_whole_body_ceiling_is_1200_ut_at_50_hz_and_1000_ut_at_60_hz() {
    // Source: ACGIH TLV, sub-RF magnetic fields, whole-body ceiling: 1200 µT at 50 Hz (V, published summaries)
    assert_level(level("acgih-sub-rf-whole-body", 50.0), 1200.0, "50 Hz");
    // Source: ACGIH TLV, sub-RF magnetic fields, whole-body ceiling: 1000 µT at 60 Hz (V, published summaries)
    assert_level(level("acgih-sub-rf-whole-body", 60.0), 1000.0, "60 Hz");
}

#[test]
fn acgih_arms_and_legs_ceiling_is_6000_ut_at_50_hz_and_5000_ut_at_60_hz() {
    // Source: ACGIH TLV, sub-RF magnetic fields, arms and legs: 6000 µT at 50 Hz (V, published summaries)
    assert_level(level("acgih-sub-rf-arms-legs", 50.0), 6000.0, "50 Hz");
    // Source: ACGIH TLV, sub-RF magnetic fields, arms and legs: 5000 µT at 60 Hz (V, published summaries)
    assert_level(level("acgih-sub-rf-arms-legs", 60.0), 5000.0, "60 Hz");
}

#[test]
fn acgih_hands_and_feet_ceiling_is_12000_ut_at_50_hz_and_10000_ut_at_60_hz() {
    // Source: ACGIH TLV, sub-RF magnetic fields, hands and feet: 12000 µT at 50 Hz (V, published summaries)
    assert_level(level("acgih-sub-rf-hands-feet", 50.0), 12000.0, "50 Hz");
    // Source: ACGIH TLV, sub-RF magnetic fields, hands and feet: 10000 µT at 60 Hz (V, published summaries)
    assert_level(level("acgih-sub-rf-hands-feet", 60.0), 10000.0, "60 Hz");
}

#[test]
fn implant_screening_is_100_ut_at_50_and_60_hz_from_memory() {
    // From memory: common occupational guidance figure for active implant wearers, 100 µT at power frequency (M)
    assert_level(level("implant-screening-100", 50.0), 100.0, "50 Hz");
    // From memory: same figure at 60 Hz (M)
    assert_level(level("implant-screening-100", 60.0), 100.0, "60 Hz");
}

/// The built-in ids, in their documented stable order.
const BUILTIN_IDS: [&str; 15] = [
    "icnirp-2010-occupational",
    "icnirp-2010-public",
    "icnirp-1998-occupational",
    "icnirp-1998-public",
    "eu-1999-519-public",
    "eu-2013-35-low",
    "eu-2013-35-high",
    "eu-2013-35-limbs",
    "ieee-c95.1-2019-restricted",
    "ieee-c95.1-2019-unrestricted",
    "ieee-c95.1-2019-limbs",
    "acgih-sub-rf-whole-body",
    "acgih-sub-rf-arms-legs",
    "acgih-sub-rf-hands-feet",
    "implant-screening-100",
];

#[test]
fn the_built_in_list_has_exactly_the_fifteen_documented_ids_in_a_stable_order() {
    let ids: Vec<&str> = builtin_tables().iter().map(|t| t.id()).collect();
    assert_eq!(ids, BUILTIN_IDS);
}

#[test]
fn every_built_in_table_cites_its_source_and_states_its_verification_status() {
    for t in builtin_tables() {
        let d = t.doc();
        assert!(!d.title.trim().is_empty(), "{}: empty title", t.id());
        assert!(!d.source.trim().is_empty(), "{}: empty source", t.id());
        let status: Vec<&String> = d.notes.iter().filter(|n| n.starts_with("Status:")).collect();
        assert_eq!(status.len(), 1, "{}: one note should start with 'Status:', notes: {:?}", t.id(), d.notes);
        assert!(
            status[0].contains("verified") || status[0].contains("from memory"),
            "{}: the status note says neither 'verified' nor 'from memory': {}",
            t.id(),
            status[0]
        );
        assert_eq!(t.version(), 1, "{}: built-ins are version 1", t.id());
    }
}

#[test]
fn every_built_in_table_passes_the_custom_table_validator_unchanged() {
    for t in builtin_tables() {
        let json = serde_json::to_string(t.doc()).unwrap();
        let again = parse_table(&json).unwrap_or_else(|p| panic!("{}: {p:?}", t.id()));
        assert_eq!(&again, t, "{} does not round-trip through parse_table", t.id());
    }
}

#[test]
fn the_default_and_implant_table_ids_name_built_in_tables() {
    for id in DEFAULT_TABLE_IDS {
        assert!(builtin_table(id).is_some(), "default table {id} is not built in");
    }
    let implant = table(IMPLANT_TABLE_ID);
    assert_eq!(implant.applies_to().population, Population::ImplantWearers);
    assert!(builtin_table("no-such-table").is_none());
}

#[test]
fn limb_tables_apply_to_limbs_and_the_others_to_the_whole_body() {
    let limbs = ["eu-2013-35-limbs", "ieee-c95.1-2019-limbs", "acgih-sub-rf-arms-legs", "acgih-sub-rf-hands-feet"];
    for t in builtin_tables() {
        let want = if limbs.contains(&t.id()) { TableBodyRegion::Limbs } else { TableBodyRegion::WholeBody };
        assert_eq!(t.applies_to().body_region, want, "{}", t.id());
    }
}
