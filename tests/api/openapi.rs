//! The OpenAPI document: committed, served, and in step with the code and
//! the shipped examples.

use crate::helpers::*;
use serde_json::Value;
use std::path::PathBuf;

fn committed_path() -> PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("openapi/openapi.json")
}

/// Set `FLUXBOUND_UPDATE_OPENAPI=1` to rewrite the committed file.
#[test]
fn the_committed_openapi_document_matches_the_code() {
    let generated = fluxbound::http::openapi::openapi_json();
    if std::env::var("FLUXBOUND_UPDATE_OPENAPI").is_ok() {
        std::fs::write(committed_path(), &generated).unwrap();
    }
    let committed = std::fs::read_to_string(committed_path()).expect("openapi/openapi.json is committed");
    assert!(
        committed == generated,
        "openapi/openapi.json is stale: run FLUXBOUND_UPDATE_OPENAPI=1 cargo test --test api openapi"
    );
}

#[tokio::test]
async fn the_served_document_is_the_committed_one() {
    let app = spawn_app().await;
    let served: Value = app.get("/openapi.json", "").await.json().await.unwrap();
    let committed: Value = serde_json::from_str(&std::fs::read_to_string(committed_path()).unwrap()).unwrap();
    assert_eq!(served, committed);
    assert_eq!(served["openapi"].as_str().unwrap().get(..3), Some("3.1"));
    assert!(served["info"]["description"].as_str().unwrap().contains("licensed or otherwise qualified assessors"));
}

/// Every key of `value` must be a declared property of `schema` (following
/// `$ref`s), recursively: the hand-written schemas of the domain documents
/// cannot drift from what the code accepts.
fn check(doc: &Value, schema: &Value, value: &Value, at: &str, out: &mut Vec<String>) {
    let schema = match schema.get("$ref").and_then(Value::as_str) {
        Some(r) => &doc["components"]["schemas"][r.rsplit('/').next().unwrap()],
        None => schema,
    };
    match value {
        Value::Object(map) => {
            if let Some(props) = schema.get("properties").and_then(Value::as_object) {
                for (k, v) in map {
                    match props.get(k) {
                        Some(s) => check(doc, s, v, &format!("{at}/{k}"), out),
                        None => out.push(format!("{at}/{k} is not in the schema")),
                    }
                }
            }
        }
        Value::Array(items) => {
            if let Some(s) = schema.get("items") {
                for (i, v) in items.iter().enumerate() {
                    check(doc, s, v, &format!("{at}/{i}"), out);
                }
            }
        }
        _ => {}
    }
}

#[test]
fn every_key_of_the_shipped_examples_is_declared_in_the_schemas() {
    let doc: Value = serde_json::from_str(&fluxbound::http::openapi::openapi_json()).unwrap();
    let mut problems = Vec::new();
    for (file, schema) in [
        ("site-switch-room.json", "SiteDoc"),
        ("site-furnace-feeder.json", "SiteDoc"),
        ("evaluate-busbar-walkway.json", "EvaluateRequest"),
        ("survey-switch-room.json", "SurveyDoc"),
    ] {
        let schema = doc["components"]["schemas"][schema].clone();
        check(&doc, &schema, &example(file), file, &mut problems);
    }
    let table: Value = serde_json::to_value(fluxbound_core::limits::builtin_tables()[0].doc()).unwrap();
    check(&doc, &doc["components"]["schemas"]["TableDoc"].clone(), &table, "builtin table", &mut problems);
    let response =
        fluxbound_core::evaluate::evaluate_json(&example("evaluate-busbar-walkway.json").to_string()).unwrap();
    let response = serde_json::to_value(response).unwrap();
    check(
        &doc,
        &doc["components"]["schemas"]["EvaluateResponse"].clone(),
        &response,
        "evaluate response",
        &mut problems,
    );
    assert!(problems.is_empty(), "{problems:#?}");
}
