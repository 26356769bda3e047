//! Surveys over HTTP: store, analyse, read back, CSV import.

use crate::helpers::*;
use fluxbound::service::Role;
use serde_json::{Value, json};

#[tokio::test]
async fn a_survey_is_stored_with_its_analysis_and_read_back() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let site = app.site(&key, &example("site-switch-room.json")).await;
    let res = app.post(&format!("/v1/sites/{site}/surveys"), &key, &example("survey-switch-room.json")).await;
    assert_eq!(res.status(), 201);
    let created: Value = res.json().await.unwrap();
    let id = created["id"].as_str().unwrap().to_string();
    assert_eq!(created["site_revision"], 1);
    assert_eq!(created["analysis"]["reconciliation"]["summary"]["worst"][0], "S8-riser");
    let read: Value = app.get(&format!("/v1/surveys/{id}"), &key).await.json().await.unwrap();
    assert_eq!(read, created);
    let rec: Value = app.get(&format!("/v1/surveys/{id}/reconciliation"), &key).await.json().await.unwrap();
    assert_eq!(rec["load_fit"], created["analysis"]["load_fit"]);
    let ext: Value = app.get(&format!("/v1/surveys/{id}/extrapolation"), &key).await.json().await.unwrap();
    assert_eq!(ext["extrapolation"]["points"].as_array().unwrap().len(), 10);
    let list: Value = app.get(&format!("/v1/sites/{site}/surveys"), &key).await.json().await.unwrap();
    assert_eq!(list["items"][0]["id"], id.as_str());
    // Isolation and roles.
    let other = app.key("org-b", Role::Admin).await;
    assert_problem(app.get(&format!("/v1/surveys/{id}"), &other).await, 404, "not-found", None).await;
    let viewer = app.key("org-a", Role::Viewer).await;
    assert_problem(
        app.post(&format!("/v1/sites/{site}/surveys"), &viewer, &example("survey-switch-room.json")).await,
        403,
        "forbidden",
        None,
    )
    .await;
}

#[tokio::test]
async fn a_csv_import_with_a_bad_row_is_rejected_with_line_and_column_and_nothing_is_stored() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let site = app.site(&key, &small_site("wire")).await;
    let doc = json!({
        "measured_at": "2026-11-20T09:40:00Z",
        "meter": {"expanded_uncertainty_percent": 10},
        "points_csv": "id,x_m,y_m,z_m,resultant_ut\nm1,0,0.5,0,195\nm2,0,1.0,0,n/a\n"
    });
    let body = assert_problem(
        app.post(&format!("/v1/sites/{site}/surveys"), &key, &doc).await,
        422,
        "validation",
        Some("/points_csv"),
    )
    .await;
    assert!(body["errors"][0]["detail"].as_str().unwrap().starts_with("line 3, column resultant_ut"), "{body}");
    let list: Value = app.get(&format!("/v1/sites/{site}/surveys"), &key).await.json().await.unwrap();
    assert!(list["items"].as_array().unwrap().is_empty());
    // The same survey with a good row is accepted; 0.2 · 500 / 0.5 = 200 µT (OpenStax §12.2).
    let mut good = doc.clone();
    good["points_csv"] = json!("id,x_m,y_m,z_m,resultant_ut\nm1,0,0.5,0,195\n");
    let ok: Value = app.post(&format!("/v1/sites/{site}/surveys"), &key, &good).await.json().await.unwrap();
    let model = ok["analysis"]["reconciliation"]["points"][0]["model_ut"].as_f64().unwrap();
    assert!((model - 200.0).abs() < 1e-4, "{model}");
}

/// `(ratio, verdict)` of every extrapolated comparison of a survey body.
fn extrapolated(ext: &Value) -> Vec<(f64, String)> {
    ext["points"]
        .as_array()
        .expect("an extrapolation")
        .iter()
        .flat_map(|p| p["comparisons"].as_array().unwrap().iter())
        .map(|c| (c["ratio"].as_f64().expect("a ratio"), c["verdict"].as_str().unwrap().to_string()))
        .collect()
}

/// DESIGN.md: exceeds at or above the level, approaching from the review fraction.
fn verdict_at(ratio: f64, fraction: f64) -> &'static str {
    if ratio >= 1.0 {
        "exceeds"
    } else if ratio >= fraction {
        "approaching"
    } else {
        "within"
    }
}

#[tokio::test]
async fn a_survey_extrapolation_is_judged_at_the_review_fraction_the_caller_gives() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let site = app.site(&key, &example("site-switch-room.json")).await;
    let path = format!("/v1/sites/{site}/surveys?review_fraction=0.1");
    let res = app.post(&path, &key, &example("survey-switch-room.json")).await;
    assert_eq!(res.status(), 201);
    let created: Value = res.json().await.unwrap();
    let stored = extrapolated(&created["analysis"]["extrapolation"]);
    for (r, v) in &stored {
        assert_eq!(v, verdict_at(*r, 0.1), "ratio {r} at 0.1");
    }
    // The example's panel front lies between 0.1 and 0.5 of the level.
    assert!(stored.iter().any(|(_, v)| v == "approaching"), "{stored:?}");
    // Read back at another fraction: the same stored ratios (agreement to
    // 1e-12 relative allows for nothing but the JSON round trip), verdicts
    // judged again.
    let id = created["id"].as_str().unwrap();
    let again: Value =
        app.get(&format!("/v1/surveys/{id}/extrapolation?review_fraction=0.5"), &key).await.json().await.unwrap();
    let rejudged = extrapolated(&again["extrapolation"]);
    assert_eq!(rejudged.len(), stored.len());
    for ((r0, _), (r1, v)) in stored.iter().zip(&rejudged) {
        assert!((r0 - r1).abs() <= 1e-12 * r0.abs(), "{r0} vs {r1}");
        assert_eq!(v, verdict_at(*r1, 0.5), "ratio {r1} at 0.5");
    }
    // Without the parameter, the stored verdicts come back.
    let plain: Value = app.get(&format!("/v1/surveys/{id}/extrapolation"), &key).await.json().await.unwrap();
    let plain: Vec<String> = extrapolated(&plain["extrapolation"]).into_iter().map(|(_, v)| v).collect();
    assert_eq!(plain, stored.iter().map(|(_, v)| v.clone()).collect::<Vec<_>>());
}

#[tokio::test]
async fn a_review_fraction_outside_zero_to_one_on_a_survey_returns_422_at_review_fraction() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let site = app.site(&key, &example("site-switch-room.json")).await;
    for bad in ["0", "1", "1.5", "-0.1", "half"] {
        let path = format!("/v1/sites/{site}/surveys?review_fraction={bad}");
        let res = app.post(&path, &key, &example("survey-switch-room.json")).await;
        let body = assert_problem(res, 422, "validation", Some("/review_fraction")).await;
        assert!(body["errors"][0]["detail"].as_str().unwrap().contains("greater than 0 and less than 1"), "{body}");
    }
    let list: Value = app.get(&format!("/v1/sites/{site}/surveys"), &key).await.json().await.unwrap();
    assert!(list["items"].as_array().unwrap().is_empty(), "a rejected survey is not stored");
    let created: Value = app
        .post(&format!("/v1/sites/{site}/surveys"), &key, &example("survey-switch-room.json"))
        .await
        .json()
        .await
        .unwrap();
    let id = created["id"].as_str().unwrap();
    let res = app.get(&format!("/v1/surveys/{id}/extrapolation?review_fraction=2"), &key).await;
    assert_problem(res, 422, "validation", Some("/review_fraction")).await;
}
