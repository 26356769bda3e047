//! Every error class of the API: its status, its problem `type`
//! (`urn:fluxbound:problem:<kind>`) and, where there is one, the JSON pointer
//! of what is wrong; and that a rejected write leaves nothing half-written.

use crate::helpers::{TestApp, TestDb, assert_problem, example, small_site, spawn_app, spawn_app_with};
use crate::isolation::{body, custom_table, send};
use fluxbound::service::{Limits, Role};
use reqwest::Method;
use serde_json::{Value, json};

/// Ids of the organisation's live sites, in list order.
async fn site_ids(app: &TestApp, key: &str) -> Vec<String> {
    let page = body(app.get("/v1/sites", key).await, 200).await;
    page["items"].as_array().unwrap().iter().map(|s| s["id"].as_str().unwrap().to_string()).collect()
}

/// The site's latest revision, and that no later one exists.
async fn latest_revision(app: &TestApp, key: &str, site: &str) -> i64 {
    let doc = body(app.get(&format!("/v1/sites/{site}"), key).await, 200).await;
    let latest = doc["latest_revision"].as_i64().unwrap();
    let res = app.get(&format!("/v1/sites/{site}/revisions/{}", latest + 1), key).await;
    assert_problem(res, 404, "not-found", None).await;
    latest
}

async fn assessment_count(app: &TestApp, key: &str, site: &str) -> usize {
    let page = body(app.get(&format!("/v1/sites/{site}/assessments"), key).await, 200).await;
    page["items"].as_array().unwrap().len()
}

fn pointers(problem: &Value) -> Vec<String> {
    problem["errors"].as_array().unwrap().iter().map(|e| e["pointer"].as_str().unwrap().to_string()).collect()
}

/// A limited app and an assessor key in it.
async fn app_with(limits: Limits) -> (TestApp, String) {
    let app = spawn_app_with(TestDb::fresh().await, limits).await;
    let key = app.key("acme", Role::Assessor).await;
    (app, key)
}

/// Every route that reads a JSON body, for an admin (who may call them all).
fn json_routes(site: &str) -> Vec<(Method, String)> {
    vec![
        (Method::POST, "/v1/sites".into()),
        (Method::PUT, format!("/v1/sites/{site}")),
        (Method::POST, format!("/v1/sites/{site}/assessments")),
        (Method::POST, "/v1/tables".into()),
        (Method::POST, "/v1/tables/acme-hs17/versions".into()),
        (Method::PUT, "/v1/tables/acme-hs17/versions/1".into()),
        (Method::POST, "/v1/evaluate".into()),
        (Method::POST, "/v1/keys".into()),
    ]
}

#[tokio::test]
async fn malformed_json_on_every_json_route_returns_400_malformed_json() {
    let app = spawn_app().await;
    let admin = app.key("acme", Role::Admin).await;
    let site = app.site(&admin, &small_site("kept")).await;
    for (method, path) in json_routes(&site) {
        for text in ["{\"frequency_hz\": 50,", "", "{} {}", "{'name': 'x'}", "[1, 2"] {
            let res = app
                .req(method.clone(), &path, &admin)
                .header("Content-Type", "application/json")
                .header("If-Match", "\"1\"")
                .body(text)
                .send()
                .await
                .unwrap();
            assert_problem(res, 400, "malformed-json", None).await;
        }
    }
    assert_eq!(site_ids(&app, &admin).await, std::slice::from_ref(&site));
    assert_eq!(latest_revision(&app, &admin, &site).await, 1);
}

#[tokio::test]
async fn a_body_that_is_not_sent_as_json_returns_415_unsupported_media_type() {
    let app = spawn_app().await;
    let admin = app.key("acme", Role::Admin).await;
    let site = app.site(&admin, &small_site("kept")).await;
    let text = small_site("as text").to_string();
    for (method, path) in json_routes(&site) {
        for content_type in [Some("text/plain"), Some("application/x-www-form-urlencoded"), None] {
            let mut b = app.req(method.clone(), &path, &admin).header("If-Match", "\"1\"").body(text.clone());
            if let Some(ct) = content_type {
                b = b.header("Content-Type", ct);
            }
            let res = b.send().await.unwrap();
            assert_problem(res, 415, "unsupported-media-type", None).await;
        }
    }
    // A JSON media type with parameters, or a +json suffix, is JSON.
    for ct in ["application/json; charset=utf-8", "application/vnd.fluxbound+json"] {
        let res = app.req(Method::POST, "/v1/sites", &admin).header("Content-Type", ct).body(text.clone()).send();
        assert_eq!(res.await.unwrap().status(), 201, "{ct}");
    }
    assert_eq!(site_ids(&app, &admin).await.len(), 3);
    assert_eq!(latest_revision(&app, &admin, &site).await, 1);
}

#[tokio::test]
async fn an_unknown_field_in_a_site_returns_422_with_its_pointer() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let mut doc = small_site("misspelt");
    doc["conductors"][0]["radius_mm"] = json!(10);
    let res = app.post("/v1/sites", &key, &doc).await;
    assert_problem(res, 422, "validation", Some("/conductors/0/radius_mm")).await;
    let mut doc = small_site("misspelt");
    doc["positions"][0]["hieghts_m"] = json!([1.0]);
    let res = app.post("/v1/sites", &key, &doc).await;
    assert_problem(res, 422, "validation", Some("/positions/0/hieghts_m")).await;
    let mut doc = small_site("misspelt");
    doc["colour"] = json!("red");
    assert_problem(app.post("/v1/sites", &key, &doc).await, 422, "validation", Some("/colour")).await;
    assert!(site_ids(&app, &key).await.is_empty(), "a rejected POST adds no site");
}

#[tokio::test]
async fn a_site_with_several_value_problems_returns_422_listing_every_pointer() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let mut doc = small_site("three problems");
    doc["frequency_hz"] = json!(0);
    doc["circuits"][0]["current_a"] = json!(-5);
    doc["conductors"][0]["radius_m"] = json!(-1);
    let problem = assert_problem(app.post("/v1/sites", &key, &doc).await, 422, "validation", None).await;
    let found = pointers(&problem);
    for p in ["/frequency_hz", "/circuits/0/current_a", "/conductors/0/radius_m"] {
        assert!(found.iter().any(|f| f == p), "no error at {p}: {problem}");
    }
    assert!(problem["errors"].as_array().unwrap().iter().all(|e| e["detail"].is_string()), "{problem}");
    assert!(problem["detail"].as_str().unwrap().contains(&found.len().to_string()), "{problem}");
    assert!(site_ids(&app, &key).await.is_empty(), "a rejected POST adds no site");
}

#[tokio::test]
async fn a_struct_given_as_an_array_returns_422_with_its_pointer() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let mut doc = small_site("arrays");
    doc["conductors"][0] = json!(["w", [[-1000, 0, 0], [1000, 0, 0]], 0.01, "c", "A"]);
    assert_problem(app.post("/v1/sites", &key, &doc).await, 422, "validation", Some("/conductors/0")).await;
    let whole = json!([50, [], [], [], [], []]);
    assert_problem(app.post("/v1/sites", &key, &whole).await, 422, "validation", None).await;
    let res = app.post("/v1/evaluate", &key, &json!([50, [], [], [[0, 0, 0]]])).await;
    assert_problem(res, 422, "validation", None).await;
    assert!(site_ids(&app, &key).await.is_empty(), "a rejected POST adds no site");
}

#[tokio::test]
async fn a_bad_id_in_the_path_returns_400_bad_request_with_a_pointer() {
    let app = spawn_app().await;
    let admin = app.key("acme", Role::Admin).await;
    let upper = "0123456789ABCDEF0123456789ABCDEF";
    for (method, path, pointer) in [
        (Method::GET, "/v1/sites/not-an-id".to_string(), "/site_id"),
        (Method::GET, format!("/v1/sites/{upper}"), "/site_id"),
        (Method::DELETE, "/v1/sites/not-an-id".into(), "/site_id"),
        (Method::GET, "/v1/sites/not-an-id/revisions/1".into(), "/site_id"),
        (Method::GET, "/v1/sites/not-an-id/assessments".into(), "/site_id"),
        (Method::GET, "/v1/assessments/not-an-id".into(), "/assessment_id"),
        (Method::DELETE, "/v1/keys/not-an-id".into(), "/key_id"),
    ] {
        let res = send(&app, method, &path, &admin, None, None).await;
        assert_problem(res, 400, "bad-request", Some(pointer)).await;
    }
    let res = app.put("/v1/sites/not-an-id", &admin, &small_site("x"), Some("\"1\"")).await;
    assert_problem(res, 400, "bad-request", Some("/site_id")).await;
    let res = app.post("/v1/sites/not-an-id/assessments", &admin, &json!({})).await;
    assert_problem(res, 400, "bad-request", Some("/site_id")).await;
    // A well-formed id that names nothing is a 404.
    let res = app.get(&format!("/v1/sites/{}", "0".repeat(32)), &admin).await;
    assert_problem(res, 404, "not-found", None).await;
}

#[tokio::test]
async fn a_revision_or_version_that_is_not_a_positive_integer_returns_400() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = app.site(&key, &small_site("revisions")).await;
    for rev in ["latest", "1.5", "0", "-1", "99999999999999999999"] {
        let res = app.get(&format!("/v1/sites/{site}/revisions/{rev}"), &key).await;
        assert_problem(res, 400, "bad-request", Some("/revision")).await;
        let res = app.get(&format!("/v1/tables/icnirp-2010-occupational/versions/{rev}"), &key).await;
        assert_problem(res, 400, "bad-request", Some("/version")).await;
    }
    let res = app.get(&format!("/v1/sites/{site}/revisions/2"), &key).await;
    assert_problem(res, 404, "not-found", None).await;
}

#[tokio::test]
async fn an_unknown_query_parameter_returns_400_bad_request() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = app.site(&key, &small_site("query")).await;
    for path in ["/v1/sites?colour=red".to_string(), format!("/v1/sites/{site}/assessments?page=2")] {
        assert_problem(app.get(&path, &key).await, 400, "bad-request", None).await;
    }
}

#[tokio::test]
async fn a_page_limit_outside_1_to_200_is_rejected_with_a_pointer_at_limit() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = app.site(&key, &small_site("limits")).await;
    // One rule for every list: 400 (a malformed query parameter), at /limit.
    for list in ["/v1/sites".to_string(), format!("/v1/sites/{site}/assessments"), format!("/v1/sites/{site}/surveys")]
    {
        for (limit, status, kind) in [
            ("0", 400, "bad-request"),
            ("-3", 400, "bad-request"),
            ("ten", 400, "bad-request"),
            ("201", 400, "bad-request"),
            ("1000", 400, "bad-request"),
        ] {
            let res = app.get(&format!("{list}?limit={limit}"), &key).await;
            assert_problem(res, status, kind, Some("/limit")).await;
        }
        for limit in ["1", "200"] {
            assert_eq!(app.get(&format!("{list}?limit={limit}"), &key).await.status(), 200, "{list} limit={limit}");
        }
    }
}

#[tokio::test]
async fn an_unknown_route_returns_404_not_found() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    for path in ["/v1/nothing-here", "/v2/sites", "/v1/sites/0123/extra/segments", "/"] {
        assert_problem(app.get(path, &key).await, 404, "not-found", None).await;
        assert_problem(app.get(path, "").await, 404, "not-found", None).await;
    }
}

#[tokio::test]
async fn a_wrong_method_returns_405_method_not_allowed() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = app.site(&key, &small_site("methods")).await;
    for (method, path) in [
        (Method::PATCH, "/v1/sites".to_string()),
        (Method::DELETE, "/v1/sites".into()),
        (Method::POST, format!("/v1/sites/{site}")),
        (Method::DELETE, "/v1/tables".into()),
        (Method::GET, "/v1/evaluate".into()),
        (Method::PUT, "/v1/keys".into()),
        (Method::GET, format!("/v1/keys/{}", "0".repeat(32))),
    ] {
        let res = send(&app, method.clone(), &path, &key, None, None).await;
        assert!(res.headers().contains_key("allow"), "{method} {path}: 405 names the allowed methods");
        assert_problem(res, 405, "method-not-allowed", None).await;
    }
    assert_eq!(site_ids(&app, &key).await, [site]);
}

#[tokio::test]
async fn a_body_over_the_limit_returns_413_payload_too_large_and_stores_nothing() {
    let (app, key) = app_with(Limits { body_bytes: 1024, rate_per_key: 0, ..Limits::default() }).await;
    let site = app.site(&key, &small_site("small enough")).await;
    let mut big = small_site("too big");
    big["positions"] =
        (0..60).map(|i| json!({"id": format!("p{i}"), "at": [0.0, 0.5 + f64::from(i) * 0.01, 0.0]})).collect();
    assert!(big.to_string().len() > 1024);
    let problem = assert_problem(app.post("/v1/sites", &key, &big).await, 413, "payload-too-large", None).await;
    assert!(problem["detail"].as_str().unwrap().contains("1024"), "{problem}");
    let res = app.put(&format!("/v1/sites/{site}"), &key, &big, Some("\"1\"")).await;
    assert_problem(res, 413, "payload-too-large", None).await;
    let points: Vec<[f64; 3]> = (0..200).map(|i| [f64::from(i), 1.0, 1.0]).collect();
    let mut ev = example("evaluate-busbar-walkway.json");
    ev["points"] = json!(points);
    assert_problem(app.post("/v1/evaluate", &key, &ev).await, 413, "payload-too-large", None).await;
    assert_eq!(site_ids(&app, &key).await, std::slice::from_ref(&site));
    assert_eq!(latest_revision(&app, &key, &site).await, 1);
}

#[tokio::test]
async fn a_site_over_the_size_bounds_returns_422_budget_exceeded_at_conductors() {
    let (app, key) = app_with(Limits { max_conductors: 1, rate_per_key: 0, ..Limits::default() }).await;
    let site = app.site(&key, &small_site("one conductor")).await;
    let mut two = small_site("two conductors");
    let mut second = two["conductors"][0].clone();
    second["id"] = json!("w2");
    second["path"] = json!([[-1000, 1, 0], [1000, 1, 0]]);
    two["conductors"].as_array_mut().unwrap().push(second);
    assert_problem(app.post("/v1/sites", &key, &two).await, 422, "budget-exceeded", Some("/conductors")).await;
    let res = app.put(&format!("/v1/sites/{site}"), &key, &two, Some("\"1\"")).await;
    assert_problem(res, 422, "budget-exceeded", Some("/conductors")).await;
    assert_eq!(site_ids(&app, &key).await, std::slice::from_ref(&site));
    assert_eq!(latest_revision(&app, &key, &site).await, 1, "a failed PUT leaves latest_revision as it was");
}

#[tokio::test]
async fn a_site_with_too_many_segments_or_positions_returns_422_budget_exceeded() {
    let limits = Limits { max_segments: 2, max_positions: 1, rate_per_key: 0, ..Limits::default() };
    let (app, key) = app_with(limits).await;
    let mut doc = small_site("bent");
    doc["conductors"][0]["path"] = json!([[-1000, 0, 0], [0, 0, 0], [0, 1000, 0], [1000, 1000, 0]]);
    assert_problem(app.post("/v1/sites", &key, &doc).await, 422, "budget-exceeded", Some("/conductors")).await;
    let mut doc = small_site("crowded");
    doc["positions"] = json!([{"id": "p", "at": [0.0, 0.5, 0.0]}, {"id": "q", "at": [0.0, 1.5, 0.0]}]);
    assert_problem(app.post("/v1/sites", &key, &doc).await, 422, "budget-exceeded", Some("/positions")).await;
    assert!(site_ids(&app, &key).await.is_empty());
}

#[tokio::test]
async fn evaluating_over_the_compute_budget_returns_422_budget_exceeded_at_points() {
    let (app, key) = app_with(Limits { max_pairs: 10, rate_per_key: 0, ..Limits::default() }).await;
    // 7 segments × 6 points = 42 pairs.
    let res = app.post("/v1/evaluate", &key, &example("evaluate-busbar-walkway.json")).await;
    let problem = assert_problem(res, 422, "budget-exceeded", Some("/points")).await;
    assert!(problem["errors"][0]["detail"].as_str().unwrap().contains("42"), "{problem}");
    let mut one = example("evaluate-busbar-walkway.json");
    one["points"] = json!([[6, -1.0, 1.0]]);
    assert_eq!(app.post("/v1/evaluate", &key, &one).await.status(), 200, "7 pairs fit");

    let (app, key) = app_with(Limits { max_points: 5, rate_per_key: 0, ..Limits::default() }).await;
    let res = app.post("/v1/evaluate", &key, &example("evaluate-busbar-walkway.json")).await;
    assert_problem(res, 422, "budget-exceeded", Some("/points")).await;
}

#[tokio::test]
async fn an_area_grid_over_max_grid_cells_returns_422_at_its_spacing() {
    let (app, key) = app_with(Limits { max_grid_cells: 100, rate_per_key: 0, ..Limits::default() }).await;
    let mut doc = small_site("fine grid");
    doc["areas"] =
        json!([{"id": "floor", "polygon": [[0, 1], [10, 1], [10, 11], [0, 11]], "height_m": 1.0, "spacing_m": 0.1}]);
    let res = app.post("/v1/sites", &key, &doc).await;
    assert_problem(res, 422, "budget-exceeded", Some("/areas/0/spacing_m")).await;
    assert!(site_ids(&app, &key).await.is_empty(), "a rejected POST adds no site");
    doc["areas"][0]["spacing_m"] = json!(2.0);
    app.site(&key, &doc).await;
}

#[tokio::test]
async fn assessing_over_the_compute_budget_returns_422_budget_exceeded_and_stores_nothing() {
    let (app, key) = app_with(Limits { max_pairs: 50, rate_per_key: 0, ..Limits::default() }).await;
    let mut doc = small_site("grid");
    doc["areas"] =
        json!([{"id": "floor", "polygon": [[0, 1], [10, 1], [10, 11], [0, 11]], "height_m": 1.0, "spacing_m": 1.0}]);
    let site = app.site(&key, &doc).await;
    let res = app.post(&format!("/v1/sites/{site}/assessments"), &key, &json!({})).await;
    assert_problem(res, 422, "budget-exceeded", Some("/areas")).await;
    assert_eq!(assessment_count(&app, &key, &site).await, 0);
}

#[tokio::test]
async fn proving_an_area_maximum_over_the_compute_budget_returns_422_at_the_areas_spacing() {
    // 1 segment × (1 position + 10 × 10 cells) = 101 pairs fit in 150; the
    // boundary samples (40 m of edge in pieces of 0.5 m: 160 points) and
    // the refinement of the area's maximum do not.
    let (app, key) = app_with(Limits { max_pairs: 150, rate_per_key: 0, ..Limits::default() }).await;
    let mut doc = small_site("grid");
    doc["areas"] =
        json!([{"id": "floor", "polygon": [[0, 1], [10, 1], [10, 11], [0, 11]], "height_m": 1.0, "spacing_m": 1.0}]);
    let site = app.site(&key, &doc).await;
    let res = app.post(&format!("/v1/sites/{site}/assessments"), &key, &json!({})).await;
    let problem = assert_problem(res, 422, "budget-exceeded", Some("/areas/0/spacing_m")).await;
    assert!(problem.to_string().contains("proving this area's maximum"), "{problem}");
    assert_eq!(assessment_count(&app, &key, &site).await, 0);
}

#[tokio::test]
async fn more_requests_than_the_rate_limit_allows_return_429_rate_limited() {
    let (app, key) = app_with(Limits { rate_per_key: 1, ..Limits::default() }).await;
    let other = app.key("acme", Role::Viewer).await;
    let mut statuses = Vec::new();
    let mut limited = None;
    for _ in 0..5 {
        let res = app.get("/v1/sites", &key).await;
        statuses.push(res.status().as_u16());
        if res.status() == 429 && limited.is_none() {
            limited = Some(res);
        }
    }
    assert_eq!(statuses[0], 200, "{statuses:?}");
    let limited = limited.expect("some request is limited");
    let retry: u64 = limited.headers()["retry-after"].to_str().unwrap().parse().unwrap();
    assert!(retry >= 1, "Retry-After in whole seconds");
    let problem = assert_problem(limited, 429, "rate-limited", None).await;
    assert!(problem["detail"].as_str().unwrap().contains("retry after"), "{problem}");
    assert_eq!(app.get("/v1/sites", &other).await.status(), 200, "the limit is per key");
}

#[tokio::test]
async fn a_put_without_if_match_returns_428_and_leaves_the_site_unchanged() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = app.site(&key, &small_site("kept")).await;
    let res = app.put(&format!("/v1/sites/{site}"), &key, &small_site("changed"), None).await;
    assert_problem(res, 428, "precondition-required", None).await;
    assert_eq!(latest_revision(&app, &key, &site).await, 1);
    assert_eq!(body(app.get(&format!("/v1/sites/{site}"), &key).await, 200).await["name"], "kept");
}

#[tokio::test]
async fn a_stale_or_unreadable_if_match_returns_412_and_leaves_the_site_unchanged() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = app.site(&key, &small_site("v1")).await;
    let res = app.put(&format!("/v1/sites/{site}"), &key, &small_site("v2"), Some("\"1\"")).await;
    assert_eq!(body(res, 200).await["latest_revision"], 2);
    for stale in ["\"1\"", "W/\"1\"", "\"3\"", "\"two\""] {
        let res = app.put(&format!("/v1/sites/{site}"), &key, &small_site("v3"), Some(stale)).await;
        let problem = assert_problem(res, 412, "precondition-failed", None).await;
        assert!(problem["detail"].as_str().unwrap().contains('2'), "{stale}: {problem}");
    }
    assert_eq!(latest_revision(&app, &key, &site).await, 2);
    assert_eq!(body(app.get(&format!("/v1/sites/{site}"), &key).await, 200).await["name"], "v2");
}

#[tokio::test]
async fn if_match_compares_strongly_so_a_weak_or_reworded_tag_of_the_latest_revision_returns_412() {
    // RFC 9110 §13.1.1: If-Match uses the strong comparison (§8.8.3.2).
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = app.site(&key, &small_site("v1")).await;
    for not_ours in ["W/\"1\"", "w/\"1\"", "\"01\"", "\"+1\"", "1", "\"1", "W/\"1\", \"7\""] {
        let res = app.put(&format!("/v1/sites/{site}"), &key, &small_site("v2"), Some(not_ours)).await;
        assert_problem(res, 412, "precondition-failed", None).await;
    }
    assert_eq!(latest_revision(&app, &key, &site).await, 1);
    // A strong tag among weak ones still matches.
    let res = app.put(&format!("/v1/sites/{site}"), &key, &small_site("v2"), Some("W/\"1\", \"1\"")).await;
    assert_eq!(body(res, 200).await["latest_revision"], 2);
    let res = app.put(&format!("/v1/sites/{site}"), &key, &small_site("v3"), Some("*")).await;
    assert_eq!(body(res, 200).await["latest_revision"], 3);
}

#[tokio::test]
async fn a_put_with_an_invalid_site_returns_422_and_adds_no_revision() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = app.site(&key, &small_site("kept")).await;
    let mut bad = small_site("changed");
    bad["conductors"][0]["radius_m"] = json!(-1);
    let res = app.put(&format!("/v1/sites/{site}"), &key, &bad, Some("\"1\"")).await;
    assert_problem(res, 422, "validation", Some("/conductors/0/radius_m")).await;
    bad["conductors"][0]["radius_mm"] = json!(1);
    let res = app.put(&format!("/v1/sites/{site}"), &key, &bad, Some("\"1\"")).await;
    assert_problem(res, 422, "validation", Some("/conductors/0/radius_mm")).await;
    assert_eq!(latest_revision(&app, &key, &site).await, 1, "a failed PUT leaves latest_revision as it was");
    let res = app.put(&format!("/v1/sites/{site}"), &key, &small_site("changed"), Some("\"1\"")).await;
    assert_eq!(body(res, 200).await["latest_revision"], 2, "the revision number was not used up");
}

#[tokio::test]
async fn creating_a_custom_table_with_a_built_in_or_taken_id_returns_409_conflict() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let res = app.post("/v1/tables", &key, &custom_table("icnirp-2010-occupational", "Mine")).await;
    assert_problem(res, 409, "conflict", None).await;
    let builtin = body(app.get("/v1/tables/icnirp-2010-occupational", &key).await, 200).await;
    assert_eq!(builtin["builtin"], true);
    assert_ne!(builtin["table"]["title"], "Mine");

    body(app.post("/v1/tables", &key, &custom_table("acme-hs17", "First")).await, 201).await;
    let res = app.post("/v1/tables", &key, &custom_table("acme-hs17", "Second")).await;
    assert_problem(res, 409, "conflict", None).await;
    let table = body(app.get("/v1/tables/acme-hs17", &key).await, 200).await;
    assert_eq!((table["latest_version"].clone(), table["table"]["title"].clone()), (json!(1), json!("First")));
    // The organisation can still write afterwards (nothing left locked).
    body(app.post("/v1/tables", &key, &custom_table("acme-other", "Other")).await, 201).await;
    let list = body(app.get("/v1/tables", &key).await, 200).await;
    let custom = list["items"].as_array().unwrap().iter().filter(|t| t["builtin"] == false).count();
    assert_eq!(custom, 2, "{list}");
}

#[tokio::test]
async fn changing_a_built_in_table_returns_409_conflict() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let id = "icnirp-2010-occupational";
    let res = app.post(&format!("/v1/tables/{id}/versions"), &key, &custom_table(id, "Mine")).await;
    assert_problem(res, 409, "conflict", None).await;
    let res = app.put(&format!("/v1/tables/{id}/versions/1"), &key, &custom_table(id, "Mine"), None).await;
    assert_problem(res, 409, "conflict", None).await;
}

#[tokio::test]
async fn replacing_a_table_version_that_an_assessment_used_returns_409_and_keeps_it() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    body(app.post("/v1/tables", &key, &custom_table("acme-hs17", "As used")).await, 201).await;
    let site = app.site(&key, &small_site("assessed")).await;
    let res = app.post(&format!("/v1/sites/{site}/assessments"), &key, &json!({"tables": ["acme-hs17"]})).await;
    body(res, 201).await;
    let res = app.put("/v1/tables/acme-hs17/versions/1", &key, &custom_table("acme-hs17", "Rewritten"), None).await;
    assert_problem(res, 409, "conflict", None).await;
    let table = body(app.get("/v1/tables/acme-hs17/versions/1", &key).await, 200).await;
    assert_eq!(table["table"]["title"], "As used");
    assert_eq!(table["versions"][0]["used"], true, "{table}");
    let res = app.post("/v1/tables/acme-hs17/versions", &key, &custom_table("acme-hs17", "Rewritten")).await;
    assert_eq!(body(res, 201).await["latest_version"], 2, "a new version is the way to change it");
}

#[tokio::test]
async fn an_unknown_table_id_in_an_assessment_request_returns_422_at_its_index() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = app.site(&key, &small_site("assessed")).await;
    let path = format!("/v1/sites/{site}/assessments");
    assert_problem(app.post(&path, &key, &json!({"tables": ["nope"]})).await, 422, "validation", Some("/tables/0"))
        .await;
    let req = json!({"tables": ["icnirp-2010-occupational", "nope", "also-nope"]});
    let problem = assert_problem(app.post(&path, &key, &req).await, 422, "validation", None).await;
    assert_eq!(pointers(&problem), ["/tables/1", "/tables/2"], "{problem}");
    assert_eq!(assessment_count(&app, &key, &site).await, 0, "a rejected assessment is not stored");
}

#[tokio::test]
async fn a_rated_load_case_without_rated_current_returns_422_at_the_circuit() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let mut doc = small_site("no rating");
    doc["circuits"][0].as_object_mut().unwrap().remove("rated_current_a");
    let site = app.site(&key, &doc).await;
    let path = format!("/v1/sites/{site}/assessments");
    let res = app.post(&path, &key, &json!({"load": {"kind": "rated"}})).await;
    assert_problem(res, 422, "validation", Some("/circuits/0/rated_current_a")).await;
    assert_eq!(assessment_count(&app, &key, &site).await, 0, "a rejected assessment is not stored");
    assert_eq!(body(app.post(&path, &key, &json!({"load": {"kind": "present"}})).await, 201).await["site_revision"], 1);
}

#[tokio::test]
async fn an_assessment_request_with_an_unknown_field_or_missing_revision_is_rejected() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = app.site(&key, &small_site("assessed")).await;
    let path = format!("/v1/sites/{site}/assessments");
    assert_problem(app.post(&path, &key, &json!({"talbes": []})).await, 422, "validation", Some("/talbes")).await;
    let res = app.post(&path, &key, &json!({"load": {"kind": "peak"}})).await;
    assert_problem(res, 422, "validation", None).await;
    assert_problem(app.post(&path, &key, &json!({"revision": 7})).await, 404, "not-found", None).await;
    assert_eq!(assessment_count(&app, &key, &site).await, 0);
}

#[tokio::test]
async fn creating_a_key_with_an_unknown_role_returns_422_at_role() {
    let app = spawn_app().await;
    let admin = app.key("acme", Role::Admin).await;
    let res = app.post("/v1/keys", &admin, &json!({"role": "owner"})).await;
    assert_problem(res, 422, "validation", Some("/role")).await;
    let res = app.post("/v1/keys", &admin, &json!({"role": "viewer", "scope": "all"})).await;
    assert_problem(res, 422, "validation", Some("/scope")).await;
    let res = app.post("/v1/keys", &admin, &json!({"role": "viewer", "label": "x".repeat(101)})).await;
    assert_problem(res, 422, "validation", Some("/label")).await;
    assert_eq!(body(app.get("/v1/keys", &admin).await, 200).await["items"].as_array().unwrap().len(), 1);
}

#[tokio::test]
async fn a_chunked_body_over_the_limit_without_a_content_length_also_returns_413() {
    let (app, key) = app_with(Limits { body_bytes: 1024, rate_per_key: 0, ..Limits::default() }).await;
    let addr = app.base.trim_start_matches("http://").to_string();
    // reqwest here has no streaming bodies: write the chunked request by hand.
    let answer = tokio::task::spawn_blocking(move || {
        use std::io::{Read, Write};
        let chunk = format!("{{\"name\": \"{}\"}}", "x".repeat(3000));
        let request = format!(
            "POST /v1/sites HTTP/1.1\r\nHost: test\r\nAuthorization: Bearer {key}\r\n\
             Content-Type: application/json\r\nTransfer-Encoding: chunked\r\nConnection: close\r\n\r\n\
             {:x}\r\n{chunk}\r\n0\r\n\r\n",
            chunk.len()
        );
        let mut stream = std::net::TcpStream::connect(addr).expect("connect");
        stream.write_all(request.as_bytes()).expect("write");
        let mut answer = String::new();
        stream.read_to_string(&mut answer).expect("read");
        answer
    })
    .await
    .unwrap();
    assert!(answer.starts_with("HTTP/1.1 413"), "{answer}");
    assert!(answer.contains("urn:fluxbound:problem:payload-too-large"), "{answer}");
    let key = app.key("acme", Role::Viewer).await;
    assert!(site_ids(&app, &key).await.is_empty());
}
