//! Reference tables over HTTP.

use crate::helpers::*;
use fluxbound::service::Role;
use serde_json::{Value, json};

#[tokio::test]
async fn built_in_tables_are_listed_and_read_only() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let list: Value = app.get("/v1/tables", &key).await.json().await.unwrap();
    let items = list["items"].as_array().unwrap();
    assert_eq!(items.iter().filter(|t| t["builtin"] == true).count(), 15);
    let one: Value = app.get("/v1/tables/eu-2013-35-low", &key).await.json().await.unwrap();
    assert!(one["table"]["source"].as_str().unwrap().contains("2013/35/EU"));
    let doc = one["table"].clone();
    assert_problem(app.post("/v1/tables/eu-2013-35-low/versions", &key, &doc).await, 409, "conflict", None).await;
    assert_problem(app.get("/v1/tables/eu-2013-35-low/versions/2", &key).await, 404, "not-found", None).await;
}

#[tokio::test]
async fn a_custom_table_with_a_hole_is_rejected_with_its_pointer_and_not_stored() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let bad = json!({
        "id": "holey", "title": "Holey", "source": "Invented",
        "applies_to": {"population": "workers", "body_region": "whole_body"}, "kind": "screening",
        "bands": [{"from_hz": 1, "to_hz": 100, "coefficient": 40, "exponent": 0}, {"from_hz": 200, "to_hz": 300, "coefficient": 40, "exponent": 0}]
    });
    assert_problem(app.post("/v1/tables", &key, &bad).await, 422, "validation", Some("/bands/1")).await;
    assert_problem(app.get("/v1/tables/holey", &key).await, 404, "not-found", None).await;
}
