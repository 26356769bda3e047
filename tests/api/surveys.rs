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
