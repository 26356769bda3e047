//! Stored results are served as the text stored, so that text must be in
//! the current form: rows of an older form are rewritten at start, and a
//! change to the shape of a result must bump `RESULT_FORM`.

use crate::helpers::*;
use fluxbound::service::{Limits, Role};
use fluxbound::store::RESULT_FORM;
use serde_json::Value;
use sha2::{Digest, Sha256};
use sqlx::Connection;

async fn connect(db: &TestDb) -> sqlx::AnyConnection {
    sqlx::any::install_default_drivers();
    let config = fluxbound::config::Config {
        data_dir: db.data_dir.clone(),
        database_url: db.database_url.clone(),
        ..fluxbound::config::Config::new()
    };
    sqlx::AnyConnection::connect(&config.database_url()).await.expect("connect")
}

#[tokio::test]
async fn a_result_of_an_older_form_is_rewritten_at_start_and_served_as_before() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = app.site(&key, &small_site("Feeder room")).await;
    let res = app.post(&format!("/v1/sites/{site}/assessments"), &key, &serde_json::json!({})).await;
    assert_eq!(res.status(), 201);
    let created: Value = res.json().await.unwrap();
    let id = created["id"].as_str().unwrap().to_string();
    let served = app.get(&format!("/v1/assessments/{id}"), &key).await.text().await.unwrap();
    assert_eq!(serde_json::from_str::<Value>(&served).unwrap(), created, "read back as created");
    let db = app.stop().await;

    // As an older version would have left it: another layout of the same
    // result (keys sorted, indented) and form 0.
    let older = serde_json::to_string_pretty(&created["result"]).unwrap();
    let mut conn = connect(&db).await;
    let done = sqlx::query("UPDATE assessments SET result = $1, result_form = 0 WHERE id = $2")
        .bind(&older)
        .bind(&id)
        .execute(&mut conn)
        .await
        .expect("update");
    assert_eq!(done.rows_affected(), 1);

    let app = spawn_app_with(db.clone(), Limits { rate_per_key: 0, ..Default::default() }).await;
    let again = app.get(&format!("/v1/assessments/{id}"), &key).await.text().await.unwrap();
    assert_eq!(again, served, "rewritten in the current form, byte for byte");
    let form: i64 = sqlx::query_scalar("SELECT result_form FROM assessments WHERE id = $1")
        .bind(&id)
        .fetch_one(&mut conn)
        .await
        .unwrap();
    assert_eq!(form, RESULT_FORM);
    conn.close().await.ok();
}

/// Every schema the result of an assessment is made of, by name, as the
/// OpenAPI document gives them.
fn result_schemas() -> std::collections::BTreeMap<String, Value> {
    let doc: Value = serde_json::from_str(&fluxbound::http::openapi::openapi_json()).unwrap();
    let all = &doc["components"]["schemas"];
    let mut found = std::collections::BTreeMap::new();
    let mut todo = vec!["Assessment".to_string()];
    while let Some(name) = todo.pop() {
        if found.contains_key(&name) {
            continue;
        }
        let schema = all[&name].clone();
        assert!(!schema.is_null(), "no schema {name}");
        let text = schema.to_string();
        for part in text.split("\"#/components/schemas/").skip(1) {
            todo.push(part.split('"').next().unwrap().to_string());
        }
        found.insert(name, schema);
    }
    found
}

#[test]
fn the_shape_of_a_stored_result_is_the_one_its_form_number_names() {
    // A change detector: when the JSON shape of `Assessment` changes, stored
    // results of the old shape must be rewritten at start, which happens
    // only if RESULT_FORM (src/store/assessments.rs) is bumped. Then record
    // the new fingerprint here, beside the new number.
    let text = serde_json::to_string(&result_schemas()).unwrap();
    let fingerprint: String = Sha256::digest(text.as_bytes()).iter().map(|b| format!("{b:02x}")).collect();
    assert_eq!(
        (RESULT_FORM, fingerprint.as_str()),
        (1, "9cc0751842f9d02aa39239df64a30769a9276ab920e6ce2af405ac6eecb395e5"),
        "the shape of a stored result changed: bump RESULT_FORM and record the fingerprint"
    );
}
