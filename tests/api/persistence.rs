//! Durability: stop the server, start it again on the same data.

use crate::helpers::*;
use fluxbound::service::{Limits, Role};
use serde_json::{Value, json};

#[tokio::test]
async fn everything_stored_is_there_after_a_restart() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &small_site("durable")).await;
    assert_eq!(app.put(&format!("/v1/sites/{id}"), &key, &small_site("durable v2"), Some("\"1\"")).await.status(), 200);
    let a: Value = app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({})).await.json().await.unwrap();
    let db = app.stop().await;

    let again = spawn_app_with(db, Limits { rate_per_key: 0, ..Limits::default() }).await;
    let site: Value = again.get(&format!("/v1/sites/{id}"), &key).await.json().await.unwrap();
    assert_eq!(site["name"], "durable v2");
    assert_eq!(site["latest_revision"], 2);
    let r1: Value = again.get(&format!("/v1/sites/{id}/revisions/1"), &key).await.json().await.unwrap();
    assert_eq!(r1["name"], "durable");
    let read: Value =
        again.get(&format!("/v1/assessments/{}", a["id"].as_str().unwrap()), &key).await.json().await.unwrap();
    assert_eq!(read, a);
}

#[tokio::test]
async fn health_and_readiness_answer() {
    let app = spawn_app().await;
    assert_eq!(app.get("/healthz", "").await.status(), 200);
    let ready = app.get("/readyz", "").await;
    assert_eq!(ready.status(), 200);
    let docs = app.get("/docs/", "").await;
    assert_eq!(docs.status(), 200);
    let html = docs.text().await.unwrap();
    assert!(!html.contains("https://"), "the docs page loads nothing from the network");
}
