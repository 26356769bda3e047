//! Model warnings appear beside every result and never block it.

use crate::helpers::*;
use fluxbound::service::Role;
use serde_json::{Value, json};

/// `(code, pointer)` of each warning in a `warnings` array.
fn codes(warnings: &Value) -> Vec<(String, String)> {
    warnings
        .as_array()
        .expect("warnings is an array")
        .iter()
        .map(|w| (w["code"].as_str().unwrap().to_string(), w["pointer"].as_str().unwrap().to_string()))
        .collect()
}

fn has(warnings: &Value, code: &str, pointer: &str) -> bool {
    codes(warnings).contains(&(code.to_string(), pointer.to_string()))
}

#[tokio::test]
async fn the_furnace_examples_open_go_and_return_ends_warn_in_the_site_and_its_assessment() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let res = app.post("/v1/sites", &key, &example("site-furnace-feeder.json")).await;
    assert_eq!(res.status(), 201, "warnings never block storing a site");
    let site: Value = res.json().await.unwrap();
    // feed-go and feed-return (conductors 0 and 1) end in free space at x ≈ 10 m.
    assert!(has(&site["warnings"], "open_end", "/conductors/0/path/2"), "{}", site["warnings"]);
    assert!(has(&site["warnings"], "open_end", "/conductors/1/path/2"), "{}", site["warnings"]);
    let id = site["id"].as_str().unwrap();
    let shown: Value = app.get(&format!("/v1/sites/{id}"), &key).await.json().await.unwrap();
    assert_eq!(shown["warnings"], site["warnings"]);

    let res = app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({})).await;
    assert_eq!(res.status(), 201, "warnings never block an assessment");
    let created: Value = res.json().await.unwrap();
    assert_eq!(created["result"]["warnings"], site["warnings"]);
    let location = format!("/v1/assessments/{}", created["id"].as_str().unwrap());
    let read: Value = app.get(&location, &key).await.json().await.unwrap();
    assert_eq!(read["result"]["warnings"], site["warnings"], "stored and read back with the result");
}

#[tokio::test]
async fn a_site_whose_open_ends_are_marked_as_continuing_has_no_warnings() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let mut doc = small_site("single wire");
    // The wire's return runs 0.5 m away, joined at x = +1000 m; both
    // x = −1000 m ends go on to the supply beyond the model.
    doc["circuits"][0]["kind"] = json!("single_phase");
    doc["conductors"][0]["path"] = json!([[-1000, 0, 0], [1000, 0, 0], [1000, -0.5, 0]]);
    doc["conductors"][0]["continues"] = json!({"start": true});
    doc["conductors"].as_array_mut().unwrap().push(json!({
        "id": "ret", "circuit": "c", "phase": "N", "radius_m": 0.01,
        "path": [[1000, -0.5, 0], [-1000, -0.5, 0]], "continues": {"end": true}
    }));
    let res = app.post("/v1/sites", &key, &doc).await;
    assert_eq!(res.status(), 201);
    let site: Value = res.json().await.unwrap();
    assert_eq!(site["warnings"], json!([]));
}

#[tokio::test]
async fn an_evaluation_warns_about_a_point_inside_a_conductor_and_the_missing_return() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Viewer).await;
    let doc = json!({
        "frequency_hz": 50,
        "conductors": [{"id": "w", "path": [[0, 0, 1], [10, 0, 1]], "radius_m": 0.01,
                         "current": {"rms_a": 100, "phase_deg": 0}, "continues": {"start": true, "end": true}}],
        "points": [[5, 2, 1], [5, 0, 1]]
    });
    let res = app.post("/v1/evaluate", &key, &doc).await;
    assert_eq!(res.status(), 200, "warnings never block an evaluation");
    let body: Value = res.json().await.unwrap();
    assert_eq!(
        codes(&body["warnings"]),
        vec![
            ("no_return_path".to_string(), "/conductors/0/current".to_string()),
            ("inside_conductor".to_string(), "/points/1".to_string()),
        ]
    );
}

#[tokio::test]
async fn a_survey_analysis_and_its_parts_carry_the_sites_warnings() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    // The example's conductors all continue beyond the room; take the
    // mark off LV-L1 so that its start (conductor 0, vertex 0) is open.
    let mut doc = example("site-switch-room.json");
    doc["conductors"][0].as_object_mut().unwrap().remove("continues");
    let site = app.site(&key, &doc).await;
    let res = app.post(&format!("/v1/sites/{site}/surveys"), &key, &example("survey-switch-room.json")).await;
    assert_eq!(res.status(), 201);
    let created: Value = res.json().await.unwrap();
    let warnings = &created["analysis"]["warnings"];
    assert!(has(warnings, "open_end", "/conductors/0/path/0"), "{warnings}");
    let id = created["id"].as_str().unwrap();
    let rec: Value = app.get(&format!("/v1/surveys/{id}/reconciliation"), &key).await.json().await.unwrap();
    assert_eq!(&rec["warnings"], warnings);
    let ext: Value = app.get(&format!("/v1/surveys/{id}/extrapolation"), &key).await.json().await.unwrap();
    assert_eq!(&ext["warnings"], warnings);
}
