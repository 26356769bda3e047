//! Which band applies on an edge, and frequencies no band covers. Edges are
//! chosen where the two neighbouring formulas differ, so the test tells the
//! bands apart; expected values are hand arithmetic on the table's formulas.

use super::{assert_level, level, table};
use fluxbound_core::limits::LevelError;

#[test]
fn icnirp_1998_occupational_at_exactly_820_hz_takes_the_flat_band_that_starts_there() {
    // 25–820 Hz: 2.5e4/f would give 30.49 µT; 820–65 kHz: 30.7 µT applies.
    assert_level(level("icnirp-1998-occupational", 820.0), 30.7, "820 Hz");
    assert!((2.5e4 / 820.0 - 30.7_f64).abs() > 0.1, "the edge must separate the two bands");
}

#[test]
fn icnirp_1998_occupational_at_8_and_25_hz_follows_the_band_formulas() {
    // 8–25 Hz: 2.5e4/8 = 3125 µT.
    assert_level(level("icnirp-1998-occupational", 8.0), 3125.0, "8 Hz");
    // 25–820 Hz: 2.5e4/25 = 1000 µT.
    assert_level(level("icnirp-1998-occupational", 25.0), 1000.0, "25 Hz");
    // 1–8 Hz: 2e5/4² = 12500 µT.
    assert_level(level("icnirp-1998-occupational", 4.0), 12500.0, "4 Hz");
}

#[test]
fn the_top_edge_of_the_last_band_is_included() {
    // icnirp-2010-occupational, 3 k–10 MHz: 100 µT at exactly 10 MHz.
    assert_level(level("icnirp-2010-occupational", 1.0e7), 100.0, "icnirp-2010-occupational at 10 MHz");
    // icnirp-1998-occupational, 820–65 kHz: 30.7 µT at exactly 65 kHz.
    assert_level(level("icnirp-1998-occupational", 65_000.0), 30.7, "icnirp-1998-occupational at 65 kHz");
    // ieee-c95.1-2019-restricted, 759–3000 Hz: 2.06e6/3000 = 686.67 µT.
    assert_level(level("ieee-c95.1-2019-restricted", 3000.0), 2.06e6 / 3000.0, "ieee restricted at 3 kHz");
    // ieee-c95.1-2019-limbs, 10.7–3000 Hz: 3.79e6/3000 = 1263.33 µT.
    assert_level(level("ieee-c95.1-2019-limbs", 3000.0), 3.79e6 / 3000.0, "ieee limbs at 3 kHz");
    // acgih-sub-rf-whole-body, 1–300 Hz: 6e4/300 = 200 µT.
    assert_level(level("acgih-sub-rf-whole-body", 300.0), 200.0, "acgih whole body at 300 Hz");
    // implant-screening-100, 1–3000 Hz: 100 µT.
    assert_level(level("implant-screening-100", 3000.0), 100.0, "implant screening at 3 kHz");
}

#[test]
fn the_bottom_edge_of_the_first_band_is_included() {
    // icnirp-2010-occupational, 1–8 Hz: 2e5/1² = 2e5 µT.
    assert_level(level("icnirp-2010-occupational", 1.0), 2.0e5, "icnirp-2010-occupational at 1 Hz");
    // ieee-c95.1-2019-restricted, 0.153–20 Hz: 5.43e4/0.153 = 354902 µT.
    assert_level(level("ieee-c95.1-2019-restricted", 0.153), 5.43e4 / 0.153, "ieee restricted at 0.153 Hz");
    // ieee-c95.1-2019-limbs, 10.7–3000 Hz: 3.79e6/10.7 = 354206 µT.
    assert_level(level("ieee-c95.1-2019-limbs", 10.7), 3.79e6 / 10.7, "ieee limbs at 10.7 Hz");
}

#[test]
fn ieee_c95_1_at_20_and_759_hz_takes_the_band_that_starts_there() {
    // 20 Hz: 5.43e4/20 = 2715 below, flat 2710 from 20 Hz.
    assert_level(level("ieee-c95.1-2019-restricted", 20.0), 2710.0, "restricted at 20 Hz");
    // 759 Hz: flat 2710 below, 2.06e6/759 = 2714.10 µT from 759 Hz.
    assert_level(level("ieee-c95.1-2019-restricted", 759.0), 2.06e6 / 759.0, "restricted at 759 Hz");
    // 20 Hz: 1.81e4/20 = 905 below, flat 904 from 20 Hz.
    assert_level(level("ieee-c95.1-2019-unrestricted", 20.0), 904.0, "unrestricted at 20 Hz");
    // 759 Hz: flat 904 below, 6.87e5/759 = 905.14 µT from 759 Hz.
    assert_level(level("ieee-c95.1-2019-unrestricted", 759.0), 6.87e5 / 759.0, "unrestricted at 759 Hz");
}

#[test]
fn icnirp_2010_public_at_3_khz_takes_the_flat_27_ut_band() {
    // 400–3000 Hz: 8e4/3000 = 26.67 µT below; 3 k–10 MHz: 27 µT applies.
    assert_level(level("icnirp-2010-public", 3000.0), 27.0, "3 kHz");
    // 400 Hz: 8e4/400 = 200 µT, equal to the flat band below.
    assert_level(level("icnirp-2010-public", 400.0), 200.0, "400 Hz");
    // 1000 Hz: 8e4/1000 = 80 µT.
    assert_level(level("icnirp-2010-public", 1000.0), 80.0, "1 kHz");
}

#[test]
fn levels_between_edges_follow_the_band_formula() {
    // icnirp-2010-occupational, 300–3000 Hz: 3e5/1000 = 300 µT.
    assert_level(level("icnirp-2010-occupational", 1000.0), 300.0, "icnirp-2010-occupational at 1 kHz");
    // icnirp-2010-occupational, 1–8 Hz: 2e5/2² = 5e4 µT.
    assert_level(level("icnirp-2010-occupational", 2.0), 5.0e4, "icnirp-2010-occupational at 2 Hz");
    // eu-2013-35-high, 1–3000 Hz: 3e5/150 = 2000 µT.
    assert_level(level("eu-2013-35-high", 150.0), 2000.0, "eu-2013-35-high at 150 Hz");
    // eu-2013-35-limbs, 3 k–10 MHz: 300 µT.
    assert_level(level("eu-2013-35-limbs", 5000.0), 300.0, "eu-2013-35-limbs at 5 kHz");
    // icnirp-1998-public, 800–150 kHz: 6.25 µT at 150 kHz (top edge).
    assert_level(level("icnirp-1998-public", 150_000.0), 6.25, "icnirp-1998-public at 150 kHz");
}

/// Asserts `id` has no level at `frequency_hz` and the error echoes it.
fn assert_not_covered(id: &str, frequency_hz: f64) {
    match table(id).level_ut(frequency_hz) {
        Err(LevelError::NotCovered { frequency_hz: f }) => {
            assert!(f == frequency_hz || (f.is_nan() && frequency_hz.is_nan()), "{id}: error names {f} Hz");
        }
        Ok(v) => panic!("{id} at {frequency_hz} Hz should not be covered, gave {v} µT"),
    }
}

#[test]
fn a_frequency_below_the_first_band_is_not_covered() {
    assert_not_covered("icnirp-2010-occupational", 0.5);
    assert_not_covered("icnirp-2010-public", 0.5);
    assert_not_covered("ieee-c95.1-2019-limbs", 5.0);
    assert_not_covered("ieee-c95.1-2019-limbs", 10.69);
    assert_not_covered("ieee-c95.1-2019-restricted", 0.15);
}

#[test]
fn a_frequency_above_the_last_band_is_not_covered() {
    // The ACGIH ceilings end at 30 kHz (the section covers 30 kHz and below).
    assert_not_covered("acgih-sub-rf-whole-body", 40_000.0);
    assert_not_covered("acgih-sub-rf-whole-body", 30_000.001);
    assert_not_covered("acgih-sub-rf-hands-feet", 40_000.0);
    assert_not_covered("implant-screening-100", 3000.5);
    assert_not_covered("icnirp-2010-occupational", 1.0000001e7);
    assert_not_covered("ieee-c95.1-2019-restricted", 3001.0);
}

#[test]
fn a_non_finite_zero_or_negative_frequency_is_not_covered() {
    for f in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY, 0.0, -50.0] {
        assert_not_covered("icnirp-2010-occupational", f);
    }
}

#[test]
fn the_not_covered_error_message_names_the_frequency() {
    let e = table("acgih-sub-rf-whole-body").level_ut(40_000.0).unwrap_err();
    assert_eq!(e.to_string(), "40000 Hz is outside every band of the table");
}
