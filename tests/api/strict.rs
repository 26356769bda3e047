//! Strict input and traceable results over HTTP: a key given twice in any
//! JSON body, NUL and control characters in names, closed polygon rings,
//! a shown table posted back, plain words in every message, and the
//! provenance of an assessment.

use crate::helpers::*;
use crate::isolation::body;
use fluxbound::service::Role;
use reqwest::{Method, Response};
use serde_json::{Value, json};

/// POSTs `text` as it is (a `Value` cannot hold a repeated key).
async fn post_text(app: &TestApp, path: &str, key: &str, text: String) -> Response {
    app.req(Method::POST, path, key).header("content-type", "application/json").body(text).send().await.unwrap()
}

/// `doc` as compact JSON with `"key":value` written a second time right
/// after its first occurrence, with `again` as the second value.
fn with_repeat(doc: &Value, first: &str, again: &str) -> String {
    let text = doc.to_string();
    assert!(text.contains(first), "{first} not in {text}");
    text.replacen(first, &format!("{first},{again}"), 1)
}

#[tokio::test]
async fn a_key_given_twice_in_any_json_body_is_a_422_with_its_pointer() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Admin).await;
    let site = small_site("bay");
    // 100 A must not silently become 100000 A (last wins in serde_json).
    let text = with_repeat(&site, r#""current_a":500"#, r#""current_a":500000"#);
    assert_problem(post_text(&app, "/v1/sites", &key, text).await, 422, "validation", Some("/circuits/0/current_a"))
        .await;

    let site_id = app.site(&key, &site).await;
    let load = r#"{"load": {"kind": "currents", "currents_a": {"c": 100, "c": 100000}}}"#.to_string();
    let at = format!("/v1/sites/{site_id}/assessments");
    assert_problem(post_text(&app, &at, &key, load).await, 422, "validation", Some("/load/currents_a/c")).await;

    let survey = example("survey-switch-room.json");
    let first = format!(r#""measured_at":{}"#, survey["measured_at"]);
    let text = with_repeat(&survey, &first, r#""measured_at":"2026-01-01T00:00:00Z""#);
    let res = post_text(&app, &format!("/v1/sites/{site_id}/surveys"), &key, text).await;
    assert_problem(res, 422, "validation", Some("/measured_at")).await;

    let table = crate::isolation::custom_table("acme-dup", "Dup");
    let text = with_repeat(&table, r#""title":"Dup""#, r#""title":"Dup again""#);
    assert_problem(post_text(&app, "/v1/tables", &key, text).await, 422, "validation", Some("/title")).await;

    let eval = example("evaluate-busbar-walkway.json");
    let text = with_repeat(&eval, r#""frequency_hz":50"#, r#""frequency_hz":60"#);
    assert_problem(post_text(&app, "/v1/evaluate", &key, text).await, 422, "validation", Some("/frequency_hz")).await;
}

#[tokio::test]
async fn nul_and_escape_in_a_site_name_are_a_422_with_a_pointer_and_nothing_is_stored() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    for (name, code, at) in [("Bay\u{0}4", "U+0000", 4), ("Bay 4\u{1b}[2J", "U+001B", 6), ("Bay\u{85}4", "U+0085", 4)] {
        let problem =
            assert_problem(app.post("/v1/sites", &key, &small_site(name)).await, 422, "validation", Some("/name"))
                .await;
        let detail = problem["errors"][0]["detail"].as_str().unwrap();
        assert!(detail.contains(code) && detail.contains(&format!("at character {at}")), "{detail}");
    }
    let page = body(app.get("/v1/sites", &key).await, 200).await;
    assert_eq!(page["items"], json!([]), "nothing stored");
    // An update is refused the same way and adds no revision.
    let site = app.site(&key, &small_site("Bay 4")).await;
    let res = app.put(&format!("/v1/sites/{site}"), &key, &small_site("Bay\u{0}4"), Some("\"1\"")).await;
    assert_problem(res, 422, "validation", Some("/name")).await;
    assert_eq!(body(app.get(&format!("/v1/sites/{site}"), &key).await, 200).await["latest_revision"], 1);
}

#[tokio::test]
async fn a_control_character_in_the_name_filter_is_a_400_at_name() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Viewer).await;
    for query in ["name=Bay%004", "name=Bay%1B4", "name=%7F", "name=%C2%85"] {
        let res = app.get(&format!("/v1/sites?{query}"), &key).await;
        let problem = assert_problem(res, 400, "bad-request", Some("/name")).await;
        assert!(problem["errors"][0]["detail"].as_str().unwrap().contains("control characters"), "{problem}");
    }
}

#[tokio::test]
async fn a_control_character_in_any_path_or_query_value_is_a_400_naming_the_parameter() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Admin).await;
    let site = app.site(&key, &small_site("Bay 4")).await;
    for (path, pointer) in [
        ("/v1/tables/acme%00".to_string(), "/table_id"),
        ("/v1/tables/acme%1B/versions/1".to_string(), "/table_id"),
        (format!("/v1/sites/{site}/assessments?cursor=%00"), "/cursor"),
        (format!("/v1/sites/{site}/surveys?limit=1%0A"), "/limit"),
        ("/v1/sites?na%00me=x".to_string(), "/na\u{0}me"),
    ] {
        assert_problem(app.get(&path, &key).await, 400, "bad-request", Some(pointer)).await;
    }
    // The rule runs before the handler, so it holds for writes too.
    let res = app.put("/v1/tables/acme%00/versions/1", &key, &json!({}), None).await;
    assert_problem(res, 400, "bad-request", Some("/table_id")).await;
}

#[tokio::test]
async fn nul_and_control_characters_in_names_and_labels_are_a_422_with_a_pointer() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Admin).await;
    for name in ["bay\u{0}4", "bay\t4", "bay\n4", "bay\u{1b}[2J"] {
        let res = app.post("/v1/sites", &key, &small_site(name)).await;
        assert_problem(res, 422, "validation", Some("/name")).await;
    }
    let mut site = small_site("bay");
    site["positions"][0]["id"] = json!("desk\u{0}");
    assert_problem(app.post("/v1/sites", &key, &site).await, 422, "validation", Some("/positions/0/id")).await;
    let res = app.post("/v1/keys", &key, &json!({"role": "viewer", "label": "ops\u{0}"})).await;
    assert_problem(res, 422, "validation", Some("/label")).await;
    let res = app.get("/v1/sites?name=bay%004", &key).await;
    assert_problem(res, 400, "bad-request", Some("/name")).await;
    // Nothing half-written: the organisation has no site.
    let page = body(app.get("/v1/sites", &key).await, 200).await;
    assert_eq!(page["items"], json!([]));
}

#[tokio::test]
async fn a_closed_polygon_ring_is_stored_and_its_assessment_notes_the_dropped_vertex() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let mut site = small_site("ring");
    site["areas"] =
        json!([{"id": "floor", "polygon": [[0, 1], [2, 1], [2, 3], [0, 3], [0, 1]], "height_m": 1, "spacing_m": 0.5}]);
    let id = app.site(&key, &site).await;
    let a = body(app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({})).await, 201).await;
    let notes = a["result"]["notes"].as_array().unwrap();
    assert!(notes.iter().any(|n| n.as_str().unwrap().starts_with("/areas/0/polygon/4: ")), "{notes:?}");
}

#[tokio::test]
async fn a_table_read_over_http_is_accepted_back_as_a_custom_table() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let shown = body(app.get("/v1/tables/icnirp-2010-occupational", &key).await, 200).await;
    let mut doc = shown["table"].clone();
    doc["id"] = json!("acme-copy");
    let created = body(app.post("/v1/tables", &key, &doc).await, 201).await;
    assert_eq!(created["table"]["bands"], shown["table"]["bands"]);
    // And a custom table read back goes in again as its next version.
    let again = body(app.get("/v1/tables/acme-copy", &key).await, 200).await;
    let next = body(app.post("/v1/tables/acme-copy/versions", &key, &again["table"]).await, 201).await;
    assert_eq!(next["version"], 2);
}

#[tokio::test]
async fn shape_errors_over_http_are_in_plain_words() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let mut site = small_site("bay");
    site["frequency_hz"] = json!("50");
    let p = assert_problem(app.post("/v1/sites", &key, &site).await, 422, "validation", Some("/frequency_hz")).await;
    assert!(p.to_string().contains("the text \\\"50\\\" is given where a number is needed"), "{p}");
    let id = app.site(&key, &small_site("bay")).await;
    let res = app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({"load": 5})).await;
    let p = assert_problem(res, 422, "validation", None).await;
    for jargon in ["enum", "tagged", "LoadCase", "f64", "struct"] {
        assert!(!p.to_string().contains(jargon), "{jargon} in {p}");
    }
}

#[tokio::test]
async fn an_assessment_records_when_by_which_build_and_from_which_revision_and_document() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = small_site("bay");
    let id = app.site(&key, &site).await;
    let a = body(app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({})).await, 201).await;
    let p = &a["result"]["provenance"];
    assert_eq!(p["site_revision"], 1);
    assert_eq!(p["site_file"], Value::Null);
    assert_eq!(p["tool_version"], env!("CARGO_PKG_VERSION"));
    let sha = p["site_sha256"].as_str().unwrap();
    // The service hashes as the core does (the CLI calls the same function).
    let doc: fluxbound_core::site::wire::SiteDoc = fluxbound_core::site::parse_json(&site.to_string()).unwrap();
    assert_eq!(sha, fluxbound_core::provenance::fingerprint(&doc));
    assert!(sha.len() == 64 && sha.bytes().all(|b| b.is_ascii_hexdigit() && !b.is_ascii_uppercase()), "{sha}");
    assert!(p["computed_at"].as_str().unwrap().ends_with('Z'), "{p}");
    let commit = p["build_commit"].as_str().unwrap();
    assert!(commit == "unknown" || commit.len() == 12, "{commit}");
    assert_eq!(a["result"]["load_case"]["circuits"][0]["phases"][0]["current_a"], 500.0);

    // The same site written with its keys in another order and 500 as
    // 5e2 has the same fingerprint.
    let reordered = r#"{"positions":[{"at":[0.0,0.5,0.0],"id":"p"}],
        "conductors":[{"path":[[-1000,0,0],[1000,0,0]],"radius_m":0.01,"phase":"A","circuit":"c","id":"w"}],
        "circuits":[{"rated_current_a":1000,"current_a":5e2,"kind":"single_phase","id":"c"}],
        "frequency_hz":50.0,"name":"bay"}"#;
    let res = post_text(&app, "/v1/sites", &key, reordered.to_string()).await;
    let other = body(res, 201).await["id"].as_str().unwrap().to_string();
    let b = body(app.post(&format!("/v1/sites/{other}/assessments"), &key, &json!({})).await, 201).await;
    assert_eq!(b["result"]["provenance"]["site_sha256"], p["site_sha256"]);

    let aid = a["id"].as_str().unwrap();
    let csv = app.get(&format!("/v1/assessments/{aid}/positions.csv"), &key).await.text().await.unwrap();
    assert!(csv.contains(sha) && csv.contains("revision 1"), "{csv}");
    let geo = body(app.get(&format!("/v1/assessments/{aid}/features.geojson"), &key).await, 200).await;
    assert_eq!(geo["provenance"]["site_sha256"], sha);
}
