//! The OpenAPI document: committed, served, and in step with the code and
//! the shipped examples.

use crate::contract::Contract;
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

/// The shipped examples and built-in tables validate against their schemas
/// in full (types, ranges, required keys, no undeclared keys), so the
/// documented shapes cannot drift from the documents the project ships.
#[test]
fn the_shipped_examples_validate_against_their_schemas() {
    let contract = Contract::committed();
    let mut problems = Vec::new();
    for (file, schema) in [
        ("site-switch-room.json", "SiteDoc"),
        ("site-furnace-feeder.json", "SiteDoc"),
        ("evaluate-busbar-walkway.json", "EvaluateRequest"),
        ("survey-switch-room.json", "SurveyDoc"),
    ] {
        problems.extend(contract.validate_named(schema, &example(file), file));
    }
    for table in fluxbound_core::limits::builtin_tables() {
        let doc = serde_json::to_value(table.doc()).unwrap();
        problems.extend(contract.validate_named("TableDoc", &doc, table.id()));
    }
    let response =
        fluxbound_core::evaluate::evaluate_json(&example("evaluate-busbar-walkway.json").to_string()).unwrap();
    let response = serde_json::to_value(response).unwrap();
    problems.extend(contract.validate_named("EvaluateResponse", &response, "evaluate response"));
    assert!(problems.is_empty(), "{problems:#?}");
}

/// Every operation documents a problem+json answer for 401 when it needs a
/// key, and every error response of the document uses the one problem schema.
#[test]
fn every_error_response_is_the_one_problem_document() {
    let doc: Value = serde_json::from_str(&fluxbound::http::openapi::openapi_json()).unwrap();
    let mut seen = 0;
    for (path, item) in doc["paths"].as_object().unwrap() {
        for (method, op) in item.as_object().unwrap() {
            let secured = op.get("security").and_then(Value::as_array).is_some_and(|s| !s.is_empty());
            assert!(!secured || op["responses"].get("401").is_some(), "{method} {path} lacks 401");
            for (status, r) in op["responses"].as_object().unwrap() {
                assert!(r["description"].is_string(), "{method} {path} {status} has no description");
                if status.as_str() >= "400" {
                    seen += 1;
                    let schema = &r["content"]["application/problem+json"]["schema"]["$ref"];
                    assert_eq!(schema, "#/components/schemas/ProblemDoc", "{method} {path} {status}");
                }
            }
        }
    }
    assert!(seen > 100, "only {seen} error responses");
}
