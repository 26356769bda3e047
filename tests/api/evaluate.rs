//! `POST /v1/evaluate` is the same document as `fluxbound evaluate`.

use crate::helpers::*;
use fluxbound::service::Role;
use serde_json::Value;

#[tokio::test]
async fn the_evaluate_endpoint_agrees_with_the_cli_on_the_same_document() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Viewer).await;
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/evaluate-busbar-walkway.json");
    let doc: Value = serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    let res = app.post("/v1/evaluate", &key, &doc).await;
    assert_eq!(res.status(), 200);
    let http: Value = res.json().await.unwrap();
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_fluxbound"))
        .args(["evaluate", "--compact", "--input"])
        .arg(&path)
        .output()
        .expect("run the CLI");
    assert!(out.status.success());
    let cli: Value = serde_json::from_slice(&out.stdout).unwrap();
    // Same engine, same input: identical numbers, not merely close.
    assert_eq!(http, cli);
    let metrics = app.get("/metrics", "").await.text().await.unwrap();
    let pairs = http["segment_point_pairs"].as_u64().unwrap();
    assert!(metrics.contains(&format!("fluxbound_segment_point_pairs_total {pairs}")), "{metrics}");
    assert!(metrics.contains("route=\"/v1/evaluate\",status=\"200\""));
}

#[tokio::test]
async fn evaluate_with_output_columns_returns_the_cli_columns() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Viewer).await;
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/evaluate-busbar-walkway.json");
    let mut doc: Value = serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    doc["output"] = serde_json::json!({"columns": ["resultant_ut", "maximum_ut@5", "inside_conductors"]});
    let res = app.post("/v1/evaluate", &key, &doc).await;
    assert_eq!(res.status(), 200);
    let http: Value = res.json().await.unwrap();
    assert_eq!(http["columns"]["resultant_ut"].as_array().unwrap().len(), doc["points"].as_array().unwrap().len());
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_fluxbound"))
        .args(["evaluate", "--compact", "--columns", "resultant_ut,maximum_ut@5,inside_conductors", "--input"])
        .arg(&path)
        .output()
        .expect("run the CLI");
    assert!(out.status.success());
    let cli: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(http, cli);
}

#[tokio::test]
async fn evaluate_with_an_unknown_column_returns_422_with_its_pointer() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Viewer).await;
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/evaluate-busbar-walkway.json");
    let mut doc: Value = serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    doc["output"] = serde_json::json!({"columns": ["resultant_ut", "peak_ut"]});
    let res = app.post("/v1/evaluate", &key, &doc).await;
    assert_eq!(res.status(), 422);
    let problem: Value = res.json().await.unwrap();
    let pointers: Vec<&str> =
        problem["errors"].as_array().unwrap().iter().map(|e| e["pointer"].as_str().unwrap()).collect();
    assert_eq!(pointers, ["/output/columns/1"], "{problem}");
}
