//! Sites from files and as files: `POST /v1/sites/import`,
//! `POST /v1/sites/{id}/import`, `GET /v1/sites/{id}/export.geojson|.dxf`.

use crate::helpers::{assert_problem, spawn_app};
use fluxbound::service::Role;
use reqwest::Method;
use serde_json::{Value, json};

fn busbar_room_request() -> Value {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("examples");
    let content = std::fs::read_to_string(root.join("busbar-room.dxf")).unwrap();
    let mapping: Value =
        serde_json::from_str(&std::fs::read_to_string(root.join("busbar-room-mapping.json")).unwrap()).unwrap();
    json!({"format": "dxf", "mapping": mapping, "file_text": content})
}

#[tokio::test]
async fn importing_the_busbar_room_drawing_creates_a_site_and_lists_the_walls_and_labels_as_skipped() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let res = app.post("/v1/sites/import", &key, &busbar_room_request()).await;
    assert_eq!(res.status(), 201);
    assert_eq!(res.headers()["etag"], "\"1\"");
    let body: Value = res.json().await.unwrap();
    let ids: Vec<&str> =
        body["site"]["site"]["conductors"].as_array().unwrap().iter().map(|c| c["id"].as_str().unwrap()).collect();
    assert_eq!(ids, ["BB-L1", "BB-L2", "BB-L3", "BB-N"]);
    let layers: Vec<&str> = body["skipped"].as_array().unwrap().iter().map(|s| s["layer"].as_str().unwrap()).collect();
    assert_eq!(layers, ["WALLS", "LABELS"]);
    // Drawn in mm: the L1 bar's drop at x = 11000 mm is at 11 m.
    assert_eq!(body["site"]["site"]["conductors"][0]["path"][1], json!([11.0, 1.0, 2.8]));
}

#[tokio::test]
async fn a_site_exported_as_geojson_imports_back_as_a_new_revision_with_if_match() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let res = app.post("/v1/sites/import", &key, &busbar_room_request()).await;
    let created: Value = res.json().await.unwrap();
    let id = created["site"]["id"].as_str().unwrap().to_string();
    let geo = app.get(&format!("/v1/sites/{id}/export.geojson"), &key).await;
    assert_eq!(geo.status(), 200);
    assert_eq!(geo.headers()["content-type"], "application/geo+json");
    let text = geo.text().await.unwrap();
    let dxf = app.get(&format!("/v1/sites/{id}/export.dxf"), &key).await;
    assert_eq!(dxf.status(), 200);
    assert_eq!(dxf.headers()["content-type"], "image/vnd.dxf");
    assert!(dxf.text().await.unwrap().contains("AcDb3dPolyline"));
    let body = json!({"format": "geojson", "file_text": text});
    let path = format!("/v1/sites/{id}/import");
    let missing = app.post(&path, &key, &body).await;
    assert_problem(missing, 428, "precondition-required", None).await;
    let res = app.req(Method::POST, &path, &key).header("If-Match", "\"1\"").json(&body).send().await.unwrap();
    assert_eq!(res.status(), 200);
    let revised: Value = res.json().await.unwrap();
    assert_eq!(revised["site"]["revision"], 2);
    assert_eq!(revised["skipped"], json!([]));
    assert_eq!(revised["site"]["site"], created["site"]["site"], "the round trip keeps the document");
}

#[tokio::test]
async fn a_mapping_naming_an_undeclared_circuit_is_422_with_a_pointer_into_the_mapping() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let mut req = busbar_room_request();
    req["mapping"]["layers"]["BB-L1"]["circuit"] = json!("nope");
    let res = app.post("/v1/sites/import", &key, &req).await;
    assert_problem(res, 422, "validation", Some("/mapping/layers/BB-L1/circuit")).await;
}

#[tokio::test]
async fn content_that_is_not_geojson_is_422_at_content_in_plain_words() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let res = app.post("/v1/sites/import", &key, &json!({"format": "geojson", "file_text": "{\"type\": 3"})).await;
    let body = assert_problem(res, 422, "validation", Some("/file_text")).await;
    assert!(!body["errors"][0]["detail"].as_str().unwrap().is_empty());
    let res = app.post("/v1/sites/import", &key, &json!({"format": "shapefile", "file_text": ""})).await;
    assert_eq!(res.status(), 422);
}
