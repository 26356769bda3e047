//! Roles and organisations: what each role may do on every route, that a
//! second organisation sees nothing of the first (404, never 403, never
//! data), and how missing, malformed, unknown and revoked keys are answered.

use crate::helpers::{TestApp, assert_problem, example, small_site, spawn_app};
use fluxbound::service::Role;
use reqwest::{Method, Response};
use serde_json::{Value, json};

/// A valid custom reference-level table (invented numbers).
pub fn custom_table(id: &str, title: &str) -> Value {
    json!({
        "id": id,
        "title": title,
        "source": "Acme Corp. EMF policy HS-17, revision 3 (invented for tests)",
        "applies_to": {"population": "workers", "body_region": "whole_body"},
        "kind": "reference_level",
        "bands": [
            {"from_hz": 1, "to_hz": 25, "coefficient": 2.5e4, "exponent": -1},
            {"from_hz": 25, "to_hz": 400, "coefficient": 500, "exponent": 0},
            {"from_hz": 400, "to_hz": 3000, "coefficient": 2.0e5, "exponent": -1}
        ]
    })
}

/// The key id inside a token `fxb_<id>_<secret>`.
pub fn key_id(token: &str) -> String {
    token.strip_prefix("fxb_").and_then(|rest| rest.split('_').next()).expect("token shape").to_string()
}

/// Sends `method path` with an optional JSON body and If-Match.
pub async fn send(
    app: &TestApp,
    method: Method,
    path: &str,
    key: &str,
    body: Option<&Value>,
    if_match: Option<&str>,
) -> Response {
    let mut b = app.req(method, path, key);
    if let Some(body) = body {
        b = b.json(body);
    }
    if let Some(m) = if_match {
        b = b.header("If-Match", m);
    }
    b.send().await.expect("request")
}

pub async fn body(res: Response, status: u16) -> Value {
    assert_eq!(res.status().as_u16(), status, "status");
    res.json().await.expect("JSON body")
}

const TABLE: &str = "acme-hs17";
const SITE_NAME: &str = "Alpha substation";

/// What one organisation's assessor made: a site at revision 2, an
/// assessment of it against a custom table, and that table (version 1, now
/// used by the assessment).
struct Fixture {
    site: String,
    assessment: String,
}

impl Fixture {
    async fn build(app: &TestApp, assessor: &str) -> Fixture {
        let site = app.site(assessor, &small_site(SITE_NAME)).await;
        let res = app.put(&format!("/v1/sites/{site}"), assessor, &small_site(SITE_NAME), Some("\"1\"")).await;
        assert_eq!(body(res, 200).await["latest_revision"], 2);
        let res = app.post("/v1/tables", assessor, &custom_table(TABLE, "Acme limit")).await;
        body(res, 201).await;
        let req = json!({"tables": [TABLE, "icnirp-2010-occupational"]});
        let res = app.post(&format!("/v1/sites/{site}/assessments"), assessor, &req).await;
        let assessment = body(res, 201).await["id"].as_str().unwrap().to_string();
        Fixture { site, assessment }
    }

    /// Every read route of the fixture.
    fn reads(&self) -> Vec<String> {
        let s = &self.site;
        vec![
            "/v1/sites".into(),
            format!("/v1/sites/{s}"),
            format!("/v1/sites/{s}/revisions/1"),
            format!("/v1/sites/{s}/revisions/2"),
            format!("/v1/sites/{s}/assessments"),
            format!("/v1/assessments/{}", self.assessment),
            "/v1/tables".into(),
            format!("/v1/tables/{TABLE}"),
            format!("/v1/tables/{TABLE}/versions/1"),
        ]
    }

    /// Every write route on sites, assessments and tables, with a valid body
    /// (and the right If-Match), so only the role can refuse it.
    fn writes(&self) -> Vec<(Method, String, Option<Value>)> {
        let s = &self.site;
        vec![
            (Method::POST, "/v1/sites".into(), Some(small_site("new"))),
            (Method::PUT, format!("/v1/sites/{s}"), Some(small_site("renamed"))),
            (Method::DELETE, format!("/v1/sites/{s}"), None),
            (Method::POST, format!("/v1/sites/{s}/assessments"), Some(json!({}))),
            (Method::POST, "/v1/tables".into(), Some(custom_table("other-table", "Other"))),
            (Method::POST, format!("/v1/tables/{TABLE}/versions"), Some(custom_table(TABLE, "Acme v2"))),
            (Method::PUT, format!("/v1/tables/{TABLE}/versions/1"), Some(custom_table(TABLE, "Acme changed"))),
        ]
    }

    /// The fixture as its organisation sees it, unchanged.
    async fn assert_unchanged(&self, app: &TestApp, key: &str) {
        let site = body(app.get(&format!("/v1/sites/{}", self.site), key).await, 200).await;
        assert_eq!(site["latest_revision"], 2, "{site}");
        assert_eq!(site["name"], SITE_NAME, "{site}");
        let res = app.get(&format!("/v1/sites/{}/revisions/3", self.site), key).await;
        assert_problem(res, 404, "not-found", None).await;
        let list = body(app.get(&format!("/v1/sites/{}/assessments", self.site), key).await, 200).await;
        assert_eq!(list["items"].as_array().unwrap().len(), 1, "{list}");
        let table = body(app.get(&format!("/v1/tables/{TABLE}"), key).await, 200).await;
        assert_eq!(table["latest_version"], 1, "{table}");
        assert_eq!(table["table"]["title"], "Acme limit", "{table}");
    }
}

fn key_routes(victim: &str) -> Vec<(Method, String, Option<Value>)> {
    vec![
        (Method::GET, "/v1/keys".into(), None),
        (Method::POST, "/v1/keys".into(), Some(json!({"role": "viewer"}))),
        (Method::DELETE, format!("/v1/keys/{victim}"), None),
    ]
}

#[tokio::test]
async fn a_viewer_can_read_every_resource_and_evaluate() {
    let app = spawn_app().await;
    let assessor = app.key("acme", Role::Assessor).await;
    let viewer = app.key("acme", Role::Viewer).await;
    let f = Fixture::build(&app, &assessor).await;
    for path in f.reads() {
        let res = app.get(&path, &viewer).await;
        assert_eq!(res.status(), 200, "GET {path}: {}", res.text().await.unwrap_or_default());
    }
    let res = app.post("/v1/evaluate", &viewer, &example("evaluate-busbar-walkway.json")).await;
    assert_eq!(body(res, 200).await["points"].as_array().unwrap().len(), 6);
}

#[tokio::test]
async fn a_viewer_gets_403_forbidden_on_every_write_and_nothing_changes() {
    let app = spawn_app().await;
    let assessor = app.key("acme", Role::Assessor).await;
    let viewer = app.key("acme", Role::Viewer).await;
    let f = Fixture::build(&app, &assessor).await;
    for (method, path, doc) in f.writes().into_iter().chain(key_routes(&key_id(&assessor))) {
        let res = send(&app, method.clone(), &path, &viewer, doc.as_ref(), Some("\"2\"")).await;
        let problem = assert_problem(res, 403, "forbidden", None).await;
        assert!(problem["detail"].as_str().unwrap().contains("role"), "{method} {path}: {problem}");
    }
    f.assert_unchanged(&app, &viewer).await;
    let sites = body(app.get("/v1/sites", &viewer).await, 200).await;
    assert_eq!(sites["items"].as_array().unwrap().len(), 1, "{sites}");
    // The assessor's key was not revoked by the refused DELETE.
    assert_eq!(app.get("/v1/sites", &assessor).await.status(), 200);
}

#[tokio::test]
async fn an_assessor_can_write_sites_tables_and_assessments() {
    let app = spawn_app().await;
    let assessor = app.key("acme", Role::Assessor).await;
    let f = Fixture::build(&app, &assessor).await;
    let s = &f.site;
    let res = app.put(&format!("/v1/sites/{s}"), &assessor, &small_site("renamed"), Some("\"2\"")).await;
    assert_eq!(body(res, 200).await["latest_revision"], 3);
    let res = app.post(&format!("/v1/sites/{s}/assessments"), &assessor, &json!({})).await;
    body(res, 201).await;
    let res = app.post("/v1/tables", &assessor, &custom_table("other-table", "Other")).await;
    body(res, 201).await;
    let res = app.post(&format!("/v1/tables/{TABLE}/versions"), &assessor, &custom_table(TABLE, "Acme v2")).await;
    assert_eq!(body(res, 201).await["latest_version"], 2);
    let doc = custom_table(TABLE, "Acme v2, corrected");
    let res = app.put(&format!("/v1/tables/{TABLE}/versions/2"), &assessor, &doc, None).await;
    assert_eq!(body(res, 200).await["table"]["title"], "Acme v2, corrected");
    let res = app.delete(&format!("/v1/sites/{s}"), &assessor).await;
    assert_eq!(res.status(), 204);
    assert_problem(app.get(&format!("/v1/sites/{s}"), &assessor).await, 404, "not-found", None).await;
    let created = app.site(&assessor, &small_site("new")).await;
    assert_eq!(app.get(&format!("/v1/sites/{created}"), &assessor).await.status(), 200);
}

#[tokio::test]
async fn an_assessor_gets_403_forbidden_on_every_keys_route() {
    let app = spawn_app().await;
    let assessor = app.key("acme", Role::Assessor).await;
    let viewer = app.key("acme", Role::Viewer).await;
    for (method, path, doc) in key_routes(&key_id(&viewer)) {
        let res = send(&app, method.clone(), &path, &assessor, doc.as_ref(), None).await;
        assert_problem(res, 403, "forbidden", None).await;
    }
    assert_eq!(app.get("/v1/sites", &viewer).await.status(), 200, "the viewer key still works");
    let keys = app.service.keys_list_for_org("acme").await.unwrap();
    assert_eq!(keys.len(), 2, "no key was created");
}

#[tokio::test]
async fn an_admin_creates_a_key_whose_secret_works_as_a_bearer_token() {
    let app = spawn_app().await;
    let admin = app.key("acme", Role::Admin).await;
    let created =
        body(app.post("/v1/keys", &admin, &json!({"role": "viewer", "label": "field laptop"})).await, 201).await;
    let secret = created["secret"].as_str().expect("secret").to_string();
    let id = created["key"]["id"].as_str().expect("key id").to_string();
    assert_eq!(created["key"]["role"], "viewer");
    assert_eq!(created["key"]["label"], "field laptop");
    assert!(created["key"]["revoked_at"].is_null(), "{created}");
    assert_eq!(key_id(&secret), id);

    assert_eq!(app.get("/v1/sites", &secret).await.status(), 200);
    let res = app.post("/v1/sites", &secret, &small_site("by the new viewer")).await;
    assert_problem(res, 403, "forbidden", None).await;

    let list = body(app.get("/v1/keys", &admin).await, 200).await;
    let items = list["items"].as_array().unwrap();
    assert_eq!(items.len(), 2, "{list}");
    assert!(items.iter().any(|k| k["id"] == id.as_str() && k["role"] == "viewer"), "{list}");
    assert!(!list.to_string().contains(secret.split('_').next_back().unwrap()), "the list shows no secret");
    assert!(items.iter().all(|k| k.get("secret").is_none() && k.get("secret_sha256").is_none()), "{list}");
}

#[tokio::test]
async fn an_admin_can_also_write_sites_and_create_assessor_and_admin_keys() {
    let app = spawn_app().await;
    let admin = app.key("acme", Role::Admin).await;
    let site = app.site(&admin, &small_site("by the admin")).await;
    let res = app.post(&format!("/v1/sites/{site}/assessments"), &admin, &json!({})).await;
    body(res, 201).await;
    let assessor = body(app.post("/v1/keys", &admin, &json!({"role": "assessor"})).await, 201).await;
    let assessor = assessor["secret"].as_str().unwrap().to_string();
    app.site(&assessor, &small_site("by the new assessor")).await;
    assert_problem(app.get("/v1/keys", &assessor).await, 403, "forbidden", None).await;
    let second = body(app.post("/v1/keys", &admin, &json!({"role": "admin"})).await, 201).await;
    let second = second["secret"].as_str().unwrap().to_string();
    assert_eq!(body(app.get("/v1/keys", &second).await, 200).await["items"].as_array().unwrap().len(), 3);
}

#[tokio::test]
async fn revoking_a_key_makes_it_answer_401_and_the_list_shows_when() {
    let app = spawn_app().await;
    let admin = app.key("acme", Role::Admin).await;
    let created = body(app.post("/v1/keys", &admin, &json!({"role": "assessor"})).await, 201).await;
    let (id, secret) = (created["key"]["id"].as_str().unwrap(), created["secret"].as_str().unwrap());
    assert_eq!(app.get("/v1/sites", secret).await.status(), 200);

    let res = app.delete(&format!("/v1/keys/{id}"), &admin).await;
    assert_eq!(res.status(), 204);
    let res = app.get("/v1/sites", secret).await;
    assert_eq!(res.headers().get("www-authenticate").and_then(|v| v.to_str().ok()), Some("Bearer"));
    assert_problem(res, 401, "unauthorized", None).await;
    let res = app.post("/v1/sites", secret, &small_site("after revocation")).await;
    assert_problem(res, 401, "unauthorized", None).await;

    let list = body(app.get("/v1/keys", &admin).await, 200).await;
    let row = list["items"].as_array().unwrap().iter().find(|k| k["id"] == id).cloned().expect("still listed");
    assert!(row["revoked_at"].is_string(), "{row}");
    assert_eq!(app.get("/v1/sites", &admin).await.status(), 200, "the admin's own key is untouched");
}

#[tokio::test]
async fn another_organisation_gets_404_for_the_site_its_revisions_and_its_assessments() {
    let app = spawn_app().await;
    let acme = app.key("acme", Role::Assessor).await;
    let f = Fixture::build(&app, &acme).await;
    let other = app.key("globex", Role::Admin).await;
    let s = &f.site;
    for path in [
        format!("/v1/sites/{s}"),
        format!("/v1/sites/{s}/revisions/1"),
        format!("/v1/sites/{s}/revisions/2"),
        format!("/v1/sites/{s}/assessments"),
        format!("/v1/assessments/{}", f.assessment),
    ] {
        for key in [&other, &app.key("globex", Role::Viewer).await] {
            let problem = assert_problem(app.get(&path, key).await, 404, "not-found", None).await;
            let text = problem.to_string();
            assert!(!text.contains(SITE_NAME) && !text.contains(s.as_str()), "GET {path} leaks data: {text}");
        }
    }
    let res = app.post(&format!("/v1/sites/{s}/assessments"), &other, &json!({})).await;
    assert_problem(res, 404, "not-found", None).await;
    let res = app.post(&format!("/v1/sites/{s}/assessments"), &other, &json!({"revision": 1})).await;
    assert_problem(res, 404, "not-found", None).await;
    f.assert_unchanged(&app, &acme).await;
}

#[tokio::test]
async fn another_organisation_gets_404_on_put_and_delete_of_the_site_even_with_a_correct_if_match() {
    let app = spawn_app().await;
    let acme = app.key("acme", Role::Assessor).await;
    let f = Fixture::build(&app, &acme).await;
    let other = app.key("globex", Role::Assessor).await;
    let path = format!("/v1/sites/{}", f.site);
    let res = app.put(&path, &other, &small_site("hijacked"), Some("\"2\"")).await;
    assert_problem(res, 404, "not-found", None).await;
    // Neither a missing nor a stale If-Match reveals that the site exists.
    let res = app.put(&path, &other, &small_site("hijacked"), None).await;
    assert_problem(res, 404, "not-found", None).await;
    let res = app.put(&path, &other, &small_site("hijacked"), Some("\"1\"")).await;
    assert_problem(res, 404, "not-found", None).await;
    let res = app.delete(&path, &other).await;
    assert_problem(res, 404, "not-found", None).await;
    f.assert_unchanged(&app, &acme).await;
}

#[tokio::test]
async fn another_organisations_site_list_does_not_include_the_first_organisations_sites() {
    let app = spawn_app().await;
    let acme = app.key("acme", Role::Assessor).await;
    let other = app.key("globex", Role::Assessor).await;
    let a1 = app.site(&acme, &small_site("Alpha substation")).await;
    let a2 = app.site(&acme, &small_site("Alpha feeder")).await;
    let g1 = app.site(&other, &small_site("Gamma plant")).await;

    let page = body(app.get("/v1/sites", &other).await, 200).await;
    let ids: Vec<&str> = page["items"].as_array().unwrap().iter().map(|s| s["id"].as_str().unwrap()).collect();
    assert_eq!(ids, [g1.as_str()], "{page}");
    let page = body(app.get("/v1/sites?name=alpha", &other).await, 200).await;
    assert!(page["items"].as_array().unwrap().is_empty(), "{page}");
    let page = body(app.get("/v1/sites?limit=1", &other).await, 200).await;
    assert!(page["next_cursor"].is_null(), "{page}");
    // A cursor taken from the other organisation's ids shows nothing of it.
    let page = body(app.get(&format!("/v1/sites?cursor={a1}"), &other).await, 200).await;
    assert!(!page.to_string().contains(&a2), "{page}");

    let page = body(app.get("/v1/sites", &acme).await, 200).await;
    let ids: Vec<&str> = page["items"].as_array().unwrap().iter().map(|s| s["id"].as_str().unwrap()).collect();
    assert_eq!(ids, [a1.as_str(), a2.as_str()], "{page}");
}

#[tokio::test]
async fn another_organisation_gets_404_for_a_custom_table_and_its_versions_and_does_not_list_it() {
    let app = spawn_app().await;
    let acme = app.key("acme", Role::Assessor).await;
    let f = Fixture::build(&app, &acme).await;
    let other = app.key("globex", Role::Assessor).await;

    for path in [format!("/v1/tables/{TABLE}"), format!("/v1/tables/{TABLE}/versions/1")] {
        let problem = assert_problem(app.get(&path, &other).await, 404, "not-found", None).await;
        assert!(!problem.to_string().contains("Acme limit"), "{problem}");
    }
    let res = app.post(&format!("/v1/tables/{TABLE}/versions"), &other, &custom_table(TABLE, "Globex v2")).await;
    assert_problem(res, 404, "not-found", None).await;
    let res = app.put(&format!("/v1/tables/{TABLE}/versions/1"), &other, &custom_table(TABLE, "Globex"), None).await;
    assert_problem(res, 404, "not-found", None).await;

    let list = body(app.get("/v1/tables", &other).await, 200).await;
    let items = list["items"].as_array().unwrap();
    assert!(!items.is_empty(), "the built-ins are listed");
    assert!(items.iter().all(|t| t["builtin"] == true), "no custom table of another organisation: {list}");
    assert!(!items.iter().any(|t| t["id"] == TABLE), "{list}");

    let mine = body(app.get("/v1/tables", &acme).await, 200).await;
    assert!(mine["items"].as_array().unwrap().iter().any(|t| t["id"] == TABLE && t["builtin"] == false), "{mine}");
    f.assert_unchanged(&app, &acme).await;
}

#[tokio::test]
async fn another_organisation_may_create_a_table_with_the_same_id_without_touching_the_first() {
    let app = spawn_app().await;
    let acme = app.key("acme", Role::Assessor).await;
    let f = Fixture::build(&app, &acme).await;
    let other = app.key("globex", Role::Assessor).await;
    let res = app.post("/v1/tables", &other, &custom_table(TABLE, "Globex limit")).await;
    let created = body(res, 201).await;
    assert_eq!(created["latest_version"], 1);
    let mine = body(app.get(&format!("/v1/tables/{TABLE}"), &other).await, 200).await;
    assert_eq!(mine["table"]["title"], "Globex limit");
    let doc = custom_table(TABLE, "Globex limit, corrected");
    let res = app.put(&format!("/v1/tables/{TABLE}/versions/1"), &other, &doc, None).await;
    assert_eq!(body(res, 200).await["table"]["title"], "Globex limit, corrected", "its own version 1 is not used");
    f.assert_unchanged(&app, &acme).await;
}

#[tokio::test]
async fn an_assessment_cannot_use_another_organisations_custom_table() {
    let app = spawn_app().await;
    let acme = app.key("acme", Role::Assessor).await;
    Fixture::build(&app, &acme).await;
    let other = app.key("globex", Role::Assessor).await;
    let site = app.site(&other, &small_site("Gamma plant")).await;
    let res = app.post(&format!("/v1/sites/{site}/assessments"), &other, &json!({"tables": [TABLE]})).await;
    assert_problem(res, 422, "validation", Some("/tables/0")).await;
    let list = body(app.get(&format!("/v1/sites/{site}/assessments"), &other).await, 200).await;
    assert!(list["items"].as_array().unwrap().is_empty(), "{list}");
}

#[tokio::test]
async fn revoking_another_organisations_key_is_404_and_the_key_keeps_working() {
    let app = spawn_app().await;
    let acme = app.key("acme", Role::Viewer).await;
    let other = app.key("globex", Role::Admin).await;
    let res = app.delete(&format!("/v1/keys/{}", key_id(&acme)), &other).await;
    assert_problem(res, 404, "not-found", None).await;
    assert_eq!(app.get("/v1/sites", &acme).await.status(), 200);
    let list = body(app.get("/v1/keys", &other).await, 200).await;
    let ids: Vec<&str> = list["items"].as_array().unwrap().iter().map(|k| k["id"].as_str().unwrap()).collect();
    assert_eq!(ids, [key_id(&other).as_str()], "only its own keys are listed: {list}");
}

#[tokio::test]
async fn every_route_without_authorization_answers_401_with_a_bearer_challenge() {
    let app = spawn_app().await;
    let acme = app.key("acme", Role::Assessor).await;
    let f = Fixture::build(&app, &acme).await;
    let s = &f.site;
    let mut routes: Vec<(Method, String, Option<Value>)> = f
        .reads()
        .into_iter()
        .map(|p| (Method::GET, p, None))
        .chain(f.writes())
        .chain(key_routes(&key_id(&acme)))
        .collect();
    routes.push((Method::POST, "/v1/evaluate".into(), Some(example("evaluate-busbar-walkway.json"))));
    routes.push((Method::GET, format!("/v1/sites/{s}/revisions/not-a-number"), None));
    routes.push((Method::GET, "/v1/sites/not-an-id".into(), None));
    for (method, path, doc) in routes {
        let res = send(&app, method.clone(), &path, "", doc.as_ref(), Some("\"2\"")).await;
        let challenge = res.headers().get("www-authenticate").and_then(|v| v.to_str().ok()).map(String::from);
        assert_eq!(challenge.as_deref(), Some("Bearer"), "{method} {path}");
        assert_problem(res, 401, "unauthorized", None).await;
    }
    f.assert_unchanged(&app, &acme).await;
}

#[tokio::test]
async fn malformed_and_unknown_tokens_answer_401() {
    // Eleven refused keys from one address: past the failed-authentication
    // limit (tests/api/clients.rs), which is not what this test is about.
    let app = crate::helpers::spawn_app_configured(crate::helpers::TestDb::fresh().await, |c| {
        c.clients.auth_failures = 0;
    })
    .await;
    let real = app.key("acme", Role::Admin).await;
    let id = key_id(&real);
    let unknown_id = format!("fxb_{}_{}", "0".repeat(32), "a".repeat(64));
    let wrong_secret = format!("fxb_{id}_{}", "b".repeat(64));
    let truncated = real[..real.len() - 1].to_string();
    for token in ["hello", "fxb_", "fxb_zz_zz", &format!("fxb_{id}"), &unknown_id, &wrong_secret, &truncated] {
        let res = app.get("/v1/sites", token).await;
        assert_eq!(res.headers().get("www-authenticate").and_then(|v| v.to_str().ok()), Some("Bearer"), "{token}");
        assert_problem(res, 401, "unauthorized", None).await;
    }
    // The right token under another scheme, and an empty bearer token.
    for header in [format!("Basic {real}"), format!("Token {real}"), real.clone(), "Bearer ".into()] {
        let res = app.client.get(format!("{}/v1/sites", app.base)).header("Authorization", header).send().await;
        assert_problem(res.expect("request"), 401, "unauthorized", None).await;
    }
    assert_eq!(app.get("/v1/sites", &real).await.status(), 200);
}

#[tokio::test]
async fn a_key_revoked_outside_the_api_answers_401_at_once() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    assert_eq!(app.get("/v1/sites", &key).await.status(), 200);
    app.service
        .keys_revoke_for_org("acme", &fluxbound::ids::KeyId::parse(&key_id(&key)).unwrap())
        .await
        .expect("revoke");
    assert_problem(app.get("/v1/sites", &key).await, 401, "unauthorized", None).await;
    let res = app.post("/v1/evaluate", &key, &example("evaluate-busbar-walkway.json")).await;
    assert_problem(res, 401, "unauthorized", None).await;
}

#[tokio::test]
async fn the_bearer_scheme_is_accepted_in_any_letter_case() {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Viewer).await;
    for scheme in ["BEARER", "BeArEr"] {
        let res = app.client.get(format!("{}/v1/sites", app.base)).header("Authorization", format!("{scheme} {key}"));
        assert_eq!(res.send().await.expect("request").status(), 200, "{scheme}");
    }
}

/// A key revoked by another replica (here: straight in the store, which
/// this process's key cache does not see) stops working within
/// `key_cache_s`; with the cache off, at once.
#[tokio::test]
async fn a_key_revoked_by_another_replica_stops_working_within_the_key_cache_time() {
    for ttl_s in [0, 1] {
        let limits = fluxbound::service::Limits { rate_per_key: 0, key_cache_s: ttl_s, ..Default::default() };
        let app = crate::helpers::spawn_app_with(crate::helpers::TestDb::fresh().await, limits).await;
        let key = app.key("acme", Role::Assessor).await;
        assert_eq!(app.get("/v1/sites", &key).await.status(), 200, "ttl {ttl_s}");
        let caller = app.service.authenticate(&key).await.expect("valid key");
        let id = fluxbound::ids::KeyId::parse(&key_id(&key)).unwrap();
        app.service.store().key_revoke(&caller.org_id, &id).await.expect("revoke in the store");
        if ttl_s > 0 {
            tokio::time::sleep(std::time::Duration::from_millis(1000 * ttl_s + 200)).await;
        }
        assert_problem(app.get("/v1/sites", &key).await, 401, "unauthorized", None).await;
    }
}
