//! What-if over HTTP: the phase search on a stored site, its draft
//! revision saved as the next revision and assessed, and its refusals with
//! pointers (the same on SQLite and PostgreSQL).

use crate::helpers::*;
use fluxbound::service::Role;
use serde_json::{Value, json};

#[tokio::test]
async fn the_best_arrangement_saved_as_a_revision_assesses_within() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &example("site-control-room-tray.json")).await;
    let res = app.post(&format!("/v1/sites/{id}/whatif/phases"), &key, &json!({"circuits": ["TX1-a", "TX1-b"]})).await;
    assert_eq!(res.status(), 200);
    let r: Value = res.json().await.unwrap();
    assert_eq!(r["counting"]["all"], 36);
    assert_eq!(r["counting"]["distinct"], 6);
    assert_eq!(r["table"]["id"], "icnirp-2010-public");
    assert!(r["as_built"]["objective"].as_f64().unwrap() >= 1.0);
    assert!(r["ranked"][0]["objective"].as_f64().unwrap() < 0.5);
    // The draft is accepted as is by PUT, and the new revision assesses within.
    let put = app.put(&format!("/v1/sites/{id}"), &key, &r["revision"], Some("\"1\"")).await;
    assert_eq!(put.status(), 200);
    let assessed: Value =
        app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({})).await.json().await.unwrap();
    assert_eq!(assessed["site_revision"], 2);
    assert_eq!(assessed["result"]["summary"]["worst_verdict"], "within");
    // Revision 1 can still be searched by query.
    let old = app
        .post(&format!("/v1/sites/{id}/whatif/phases?revision=1"), &key, &json!({"circuits": ["TX1-b"], "top": 1}))
        .await;
    assert_eq!(old.status(), 200);
}

#[tokio::test]
async fn problems_of_a_phase_search_point_into_the_request() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &example("site-control-room-tray.json")).await;
    let path = format!("/v1/sites/{id}/whatif/phases");
    let res = app.post(&path, &key, &json!({"circuits": ["TX1-a", "TX1-a"]})).await;
    assert_problem(res, 422, "validation", Some("/circuits/1")).await;
    let res = app.post(&path, &key, &json!({"circuits": ["TX1-a"], "table": "nope"})).await;
    assert_problem(res, 422, "validation", Some("/table")).await;
    let res = app.post(&path, &key, &json!({"circuits": ["TX1-a"], "areas": ["nowhere"]})).await;
    assert_problem(res, 422, "validation", Some("/areas/0")).await;
    let res =
        app.post(&path, &key, &json!({"circuits": ["TX1-a"], "load": {"kind": "scale", "factors": {"X": 2}}})).await;
    assert_problem(res, 422, "validation", Some("/load/factors/X")).await;
    let res = app.post(&path, &key, &json!({"circuits": ["TX1-a"], "colour": "red"})).await;
    assert_eq!(res.status(), 422);
    let res = app.post(&format!("{path}?colour=red"), &key, &json!({"circuits": ["TX1-a"]})).await;
    assert_eq!(res.status(), 400);
    let res = app.post(&format!("{path}?revision=9"), &key, &json!({"circuits": ["TX1-a"]})).await;
    assert_eq!(res.status(), 404);
    let viewer = app.key("org-a", Role::Viewer).await;
    assert_eq!(app.post(&path, &viewer, &json!({"circuits": ["TX1-a"]})).await.status(), 403);
    let other = app.key("org-b", Role::Assessor).await;
    assert_eq!(app.post(&path, &other, &json!({"circuits": ["TX1-a"]})).await.status(), 404);
}
