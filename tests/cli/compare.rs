//! `fluxbound whatif compare BEFORE AFTER`: two results written by
//! `fluxbound assess --format json`, side by side, and its refusals by
//! argument.
//!
//! Source of the figures: Biot–Savart is linear in the current (Griffiths,
//! *Introduction to Electrodynamics*, 4th ed., eq. 5.42), so a rated
//! current twice the present one doubles every B: +100 %. The value at the
//! position is the long-wire law B[µT] = 0.2 · I[A] / r[m] (OpenStax
//! University Physics Vol. 2, §12.2), worked below.

use super::{TempPath, assert_rejected_with, fluxbound, stdout_of, temp_file};
use serde_json::{Value, json};

/// One long wire along x, 1000 A present and 2000 A rated, a point 2 m beside it.
fn wire_site() -> TempPath {
    let doc = json!({
        "name": "compare wire",
        "frequency_hz": 50,
        "circuits": [{"id": "w", "kind": "single_phase", "current_a": 1000, "rated_current_a": 2000}],
        "conductors": [{"id": "w-A", "circuit": "w", "phase": "A", "radius_m": 0.01, "path": [[-5000.0, 0.0, 0.0], [5000.0, 0.0, 0.0]]}],
        "positions": [{"id": "desk", "at": [0.0, 2.0, 0.0]}]
    });
    temp_file("compare-site", &doc.to_string())
}

/// `fluxbound assess SITE --load LOAD --format json`, written to a file.
fn assessed(site: &TempPath, load: &str) -> TempPath {
    let out = fluxbound(&["assess", site.to_str().unwrap(), "--load", load, "--format", "json"], None);
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    temp_file(&format!("compare-{load}"), &stdout_of(&out))
}

#[test]
fn comparing_present_with_rated_load_shows_twice_the_field_and_the_load_difference() {
    let site = wire_site();
    let (present, rated) = (assessed(&site, "present"), assessed(&site, "rated"));
    let out =
        fluxbound(&["whatif", "compare", present.to_str().unwrap(), rated.to_str().unwrap(), "--format", "json"], None);
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let c: Value = serde_json::from_str(&stdout_of(&out)).unwrap();
    let desk = &c["positions"][0];
    assert_eq!(desk["id"], "desk");
    // 0.2·1000/2 = 100 µT before, 200 µT after; the 10 km wire is short of
    // the infinite one by (2/5000)²/2 = 8e-8 relative: tolerance 1e-6.
    let b0 = desk["b_before_ut"].as_f64().unwrap();
    assert!((b0 - 100.0).abs() / 100.0 < 1e-6, "{desk}");
    // Linearity to rounding: tolerance 1e-9 %.
    assert!((desk["b_change"]["percent"].as_f64().unwrap() - 100.0).abs() < 1e-9, "{desk}");
    assert_eq!(c["before"]["load_case"], "present");
    assert_eq!(c["after"]["load_case"], "rated");
    assert!(c["before"]["site_file"].as_str().unwrap().ends_with("compare-site.json"), "{}", c["before"]);
    let notes: Vec<&str> = c["notes"].as_array().unwrap().iter().map(|n| n.as_str().unwrap()).collect();
    assert!(notes.contains(&"different loads: present before, rated after"), "{notes:?}");
    assert!(notes.iter().any(|n| n.starts_with("the same site document on both sides")), "{notes:?}");
    // The plain-words form, the default.
    let text = stdout_of(&fluxbound(&["whatif", "compare", present.to_str().unwrap(), rated.to_str().unwrap()], None));
    assert!(text.contains("desk"), "{text}");
    assert!(text.contains("(+100.0 %)"), "{text}");
    assert!(text.contains("qualified assessors"), "{text}");
}

#[test]
fn compare_problems_name_the_argument_and_say_what_is_wrong() {
    let site = wire_site();
    let present = assessed(&site, "present");
    let missing = TempPath::unique("no-such-result.json");
    let out = fluxbound(&["whatif", "compare", missing.to_str().unwrap(), site.to_str().unwrap()], None);
    assert_rejected_with(&out, &["BEFORE (", "cannot be read", "AFTER (", "not an assessment result"]);
    let broken = temp_file("compare-broken", "{\"positions\": [");
    let out = fluxbound(&["whatif", "compare", present.to_str().unwrap(), broken.to_str().unwrap()], None);
    assert_rejected_with(&out, &["AFTER (", "not valid JSON"]);
    let out = fluxbound(&["whatif", "compare", "-", "-"], None);
    assert_rejected_with(&out, &["AFTER: standard input is already BEFORE"]);
}
