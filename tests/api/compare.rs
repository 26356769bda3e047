//! Two stored assessments side by side over HTTP, and the refusals.
//!
//! Sources of the figures: the long-wire law B[µT] = 0.2 · I[A] / r[m]
//! (OpenStax University Physics Vol. 2, §12.2) for `small_site` (500 A
//! present, 1000 A rated, the position 0.5 m from a 2 km wire: the finite
//! length changes B by (0.5/1000)²/2 = 1.25e-7 relative), the ICNIRP 2010
//! occupational reference level of 1000 µT at 50 Hz (docs/REFERENCES.md),
//! and Biot–Savart linearity: twice the current is twice every B, +100 %.

use crate::helpers::*;
use fluxbound::service::Role;
use serde_json::{Value, json};

/// Assesses site `id` at `load` with the review fraction 0.3; returns the assessment id.
async fn assessed(app: &TestApp, key: &str, site: &str, load: &str) -> String {
    let body = json!({"load": {"kind": load}, "options": {"review_fraction": 0.3}});
    let res = app.post(&format!("/v1/sites/{site}/assessments"), key, &body).await;
    assert_eq!(res.status(), 201, "{}", res.text().await.unwrap_or_default());
    res.json::<Value>().await.unwrap()["id"].as_str().unwrap().to_string()
}

#[tokio::test]
async fn comparing_present_with_rated_load_gives_twice_the_field_and_the_verdict_change() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let site = app.site(&key, &small_site("compare")).await;
    let present = assessed(&app, &key, &site, "present").await;
    let rated = assessed(&app, &key, &site, "rated").await;
    let res = app.get(&format!("/v1/assessments/{present}/comparison?with={rated}"), &key).await;
    assert_eq!(res.status(), 200);
    let c: Value = res.json().await.unwrap();
    assert_eq!(c["before"]["assessment_id"], present);
    assert_eq!(c["after"]["assessment_id"], rated);
    assert_eq!(c["before"]["site_id"], site);
    assert_eq!((&c["before"]["load_case"], &c["after"]["load_case"]), (&json!("present"), &json!("rated")));
    assert_eq!(c["before"]["site_revision"], 1);
    let p = &c["positions"][0];
    assert_eq!(p["id"], "p");
    // 0.2·500/0.5 = 200 µT; tolerance 1e-6 relative (finite length 1.25e-7).
    let b0 = p["b_before_ut"].as_f64().unwrap();
    assert!((b0 - 200.0).abs() / 200.0 < 1e-6, "{p}");
    // Linearity to rounding: tolerance 1e-9 %.
    assert!((p["b_change"]["percent"].as_f64().unwrap() - 100.0).abs() < 1e-9, "{p}");
    // Against 1000 µT: 0.2 (within, below 0.3) → 0.4 (approaching).
    let icnirp = p["tables"].as_array().unwrap().iter().find(|t| t["table_id"] == "icnirp-2010-occupational").unwrap();
    assert!((icnirp["ratio_before"].as_f64().unwrap() - 0.2).abs() < 1e-6, "{icnirp}");
    assert!((icnirp["ratio_after"].as_f64().unwrap() - 0.4).abs() < 1e-6, "{icnirp}");
    assert_eq!(icnirp["verdict"]["words"], "within → approaching");
    assert_eq!(p["verdict"]["trend"], "worse");
    assert_eq!(c["summary"]["worse"], 1);
    let notes: Vec<&str> = c["notes"].as_array().unwrap().iter().map(|n| n.as_str().unwrap()).collect();
    assert!(notes.contains(&"different loads: present before, rated after"), "{notes:?}");
    assert!(!notes.iter().any(|n| n.starts_with("different sites")), "{notes:?}");
    assert_eq!(c["cautions"].as_array().unwrap().len(), fluxbound_core::cautions::CAUTIONS.len());
}

#[tokio::test]
async fn comparing_assessments_of_two_sites_says_so_and_lists_positions_of_one_side_apart() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let first = app.site(&key, &small_site("first")).await;
    let mut doc = small_site("second");
    doc["positions"][0]["id"] = json!("q");
    let second = app.site(&key, &doc).await;
    let a = assessed(&app, &key, &first, "present").await;
    let b = assessed(&app, &key, &second, "present").await;
    let viewer = app.key("org-a", Role::Viewer).await;
    let c: Value = app.get(&format!("/v1/assessments/{a}/comparison?with={b}"), &viewer).await.json().await.unwrap();
    assert_eq!(c["only_before"]["positions"], json!(["p"]));
    assert_eq!(c["only_after"]["positions"], json!(["q"]));
    assert_eq!(c["positions"], json!([]));
    let notes: Vec<&str> = c["notes"].as_array().unwrap().iter().map(|n| n.as_str().unwrap()).collect();
    assert!(notes.iter().any(|n| n.starts_with("different sites")), "{notes:?}");
    assert!(notes.iter().any(|n| n.starts_with("different site names: 'first' before, 'second' after")), "{notes:?}");
}

#[tokio::test]
async fn a_comparison_needs_two_assessments_of_your_organisation_and_a_well_formed_with() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let site = app.site(&key, &small_site("compare")).await;
    let a = assessed(&app, &key, &site, "present").await;
    let path = format!("/v1/assessments/{a}/comparison");
    let res = app.get(&path, &key).await;
    let body = assert_problem(res, 422, "validation", Some("/with")).await;
    assert!(body["errors"][0]["detail"].as_str().unwrap().contains("?with="), "{body}");
    let res = app.get(&format!("{path}?with=nope"), &key).await;
    let body = assert_problem(res, 422, "validation", Some("/with")).await;
    assert!(body["errors"][0]["detail"].as_str().unwrap().contains("'nope' is not an assessment id"), "{body}");
    let res = app.get(&format!("{path}?with={a}&colour=red"), &key).await;
    assert_eq!(res.status(), 400);
    let res = app.get(&format!("/v1/assessments/not-an-id/comparison?with={a}"), &key).await;
    assert_eq!(res.status(), 400);
    let unknown = "0123456789abcdef0123456789abcdef";
    assert_problem(app.get(&format!("{path}?with={unknown}"), &key).await, 404, "not-found", None).await;
    assert_problem(
        app.get(&format!("/v1/assessments/{unknown}/comparison?with={a}"), &key).await,
        404,
        "not-found",
        None,
    )
    .await;
    // Another organisation's assessment is not found on either side.
    let other = app.key("org-b", Role::Assessor).await;
    let theirs_site = app.site(&other, &small_site("theirs")).await;
    let theirs = assessed(&app, &other, &theirs_site, "present").await;
    assert_eq!(app.get(&format!("{path}?with={theirs}"), &key).await.status(), 404);
    assert_eq!(app.get(&format!("/v1/assessments/{theirs}/comparison?with={a}"), &key).await.status(), 404);
    // Compared with itself: nothing changes.
    let c: Value = app.get(&format!("{path}?with={a}"), &key).await.json().await.unwrap();
    assert_eq!(c["positions"][0]["b_change"]["percent"], 0.0);
    assert_eq!(c["summary"]["unchanged"], 1);
}
