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

#[tokio::test]
async fn a_table_resource_lists_its_coverage_holes_in_plain_words() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    // IEEE C95.1-2019 limbs: no source value below 10.7 Hz (docs/REFERENCES.md), and the ELF table ends at 3 kHz.
    let limbs: Value = app.get("/v1/tables/ieee-c95.1-2019-limbs", &key).await.json().await.unwrap();
    let holes = limbs["coverage_holes"].as_array().unwrap();
    assert_eq!(holes.len(), 2, "{limbs}");
    assert_eq!((holes[0]["from_hz"].as_f64(), holes[0]["to_hz"].as_f64()), (Some(1.0), Some(10.7)));
    assert!(holes[0]["words"].as_str().unwrap().starts_with("below 10.7 Hz"), "{}", holes[0]);
    let full: Value = app.get("/v1/tables/icnirp-2010-occupational", &key).await.json().await.unwrap();
    assert_eq!(full["coverage_holes"], json!([]), "ICNIRP 2010 covers 1 Hz–10 MHz");
}
