//! The name filter of `GET /v1/sites`: case-insensitive for any Unicode
//! name, the same on SQLite and PostgreSQL (NFC and full case folding in
//! Rust, `src/store/fold.rs`; a plain substring match in SQL).

use crate::helpers::*;
use crate::isolation::body;
use fluxbound::service::Role;
use serde_json::Value;

/// The names of the sites whose name contains `term`, in creation order.
async fn found(app: &TestApp, key: &str, term: &str) -> Vec<String> {
    let mut url = reqwest::Url::parse(&format!("{}/v1/sites", app.base)).unwrap();
    url.query_pairs_mut().append_pair("name", term);
    let res = app.client.get(url).bearer_auth(key).send().await.unwrap();
    let page: Value = body(res, 200).await;
    page["items"].as_array().unwrap().iter().map(|s| s["name"].as_str().unwrap().to_string()).collect()
}

const NAMES: [&str; 7] = [
    "Übergabestation Nord",
    "U\u{308}bergabe Süd (decomposed)",
    "Hauptstraße 12",
    "STRASSE 7",
    "ΟΔΟΣ bay",
    "Bay 50% load",
    "Bay 5x load",
];

async fn seeded() -> (TestApp, String) {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    for name in NAMES {
        app.site(&key, &small_site(name)).await;
    }
    (app, key)
}

#[tokio::test]
async fn a_lowercase_umlaut_finds_names_written_composed_or_decomposed_and_in_capitals() {
    let (app, key) = seeded().await;
    let both = ["Übergabestation Nord", "U\u{308}bergabe Süd (decomposed)"];
    assert_eq!(found(&app, &key, "über").await, both);
    assert_eq!(found(&app, &key, "u\u{308}ber").await, both, "a decomposed term");
    assert_eq!(found(&app, &key, "ÜBERGABE").await, both);
    // Composition is kept: a plain u is another letter than ü.
    assert!(found(&app, &key, "uber").await.is_empty());
}

#[tokio::test]
async fn sharp_s_and_double_s_find_each_other_in_any_case() {
    let (app, key) = seeded().await;
    let both = ["Hauptstraße 12", "STRASSE 7"];
    assert_eq!(found(&app, &key, "STRASSE").await, both);
    assert_eq!(found(&app, &key, "straße").await, both);
    assert_eq!(found(&app, &key, "Strasse").await, both);
}

#[tokio::test]
async fn greek_capitals_and_final_sigma_fold_to_one_form() {
    let (app, key) = seeded().await;
    assert_eq!(found(&app, &key, "οδος").await, ["ΟΔΟΣ bay"]);
    assert_eq!(found(&app, &key, "οδοσ").await, ["ΟΔΟΣ bay"]);
}

#[tokio::test]
async fn percent_underscore_and_backslash_in_the_term_are_plain_characters() {
    let (app, key) = seeded().await;
    assert_eq!(found(&app, &key, "50%").await, ["Bay 50% load"]);
    assert_eq!(found(&app, &key, "5_ load").await, Vec::<String>::new());
    assert_eq!(found(&app, &key, "%").await, ["Bay 50% load"]);
    assert!(found(&app, &key, "\\").await.is_empty());
}

#[tokio::test]
async fn a_renamed_site_is_found_by_its_new_name_only() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let id = app.site(&key, &small_site("Alte Straße")).await;
    let res = app.put(&format!("/v1/sites/{id}"), &key, &small_site("Neue Übergabe"), Some("\"1\"")).await;
    body(res, 200).await;
    assert!(found(&app, &key, "STRASSE").await.is_empty());
    assert_eq!(found(&app, &key, "über").await, ["Neue Übergabe"]);
}

#[tokio::test]
async fn sites_stored_before_the_search_key_existed_are_found_after_a_restart() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    app.site(&key, &small_site("Übergabestation")).await;
    let db = app.stop().await;
    // As a database from before migration 3 would be after it: no key.
    forget_search_keys(&db).await;
    let app = spawn_app_with(db, fluxbound::service::Limits { rate_per_key: 0, ..Default::default() }).await;
    assert_eq!(found(&app, &key, "über").await, ["Übergabestation"]);
}

async fn forget_search_keys(db: &TestDb) {
    use sqlx::Connection;
    sqlx::any::install_default_drivers();
    let config = fluxbound::config::Config {
        data_dir: db.data_dir.clone(),
        database_url: db.database_url.clone(),
        ..fluxbound::config::Config::new()
    };
    let mut conn = sqlx::AnyConnection::connect(&config.database_url()).await.expect("connect");
    let done = sqlx::query("UPDATE sites SET name_folded = NULL").execute(&mut conn).await.expect("update");
    assert_eq!(done.rows_affected(), 1);
    conn.close().await.ok();
}
