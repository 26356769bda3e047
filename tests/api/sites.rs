//! Sites: round trip, revisions, optimistic concurrency, pagination, delete.

use crate::helpers::*;
use fluxbound::service::Role;
use serde_json::{Value, json};

#[tokio::test]
async fn a_site_round_trips_through_create_read_update_and_revision_reads() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let doc = example("site-switch-room.json");
    let res = app.post("/v1/sites", &key, &doc).await;
    assert_eq!(res.status(), 201);
    assert_eq!(res.headers()["etag"], "\"1\"");
    let created: Value = res.json().await.unwrap();
    let id = created["id"].as_str().unwrap().to_string();
    assert_eq!(created["revision"], 1);
    assert_eq!(created["name"], doc["name"]);

    let read = app.get(&format!("/v1/sites/{id}"), &key).await;
    assert_eq!(read.headers()["etag"], "\"1\"");
    let read: Value = read.json().await.unwrap();
    // The stored document is the submitted one (units and all).
    assert_eq!(read["site"]["conductors"], doc["conductors"]);
    assert_eq!(read["site"]["positions"][0]["id"], "desk-1");

    let mut changed = doc.clone();
    changed["circuits"][0]["current_a"] = json!(1500);
    let res = app.put(&format!("/v1/sites/{id}"), &key, &changed, Some("\"1\"")).await;
    assert_eq!(res.status(), 200);
    assert_eq!(res.headers()["etag"], "\"2\"");
    let v2: Value = res.json().await.unwrap();
    assert_eq!(v2["revision"], 2);
    assert_eq!(v2["site"]["circuits"][0]["current_a"], 1500.0);

    // Revision 1 is immutable and still readable.
    let r1: Value = app.get(&format!("/v1/sites/{id}/revisions/1"), &key).await.json().await.unwrap();
    assert_eq!(r1["site"]["circuits"][0]["current_a"], 1400.0);
    assert_eq!(r1["revision"], 1);
    assert_eq!(r1["latest_revision"], 2);
    let missing = app.get(&format!("/v1/sites/{id}/revisions/3"), &key).await;
    assert_problem(missing, 404, "not-found", None).await;
}

#[tokio::test]
async fn an_update_with_a_stale_if_match_is_412_and_changes_nothing() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &small_site("one")).await;
    let path = format!("/v1/sites/{id}");
    assert_eq!(app.put(&path, &key, &small_site("two"), Some("\"1\"")).await.status(), 200);
    // A second writer who read revision 1 loses.
    let stale = app.put(&path, &key, &small_site("three"), Some("\"1\"")).await;
    let body = assert_problem(stale, 412, "precondition-failed", None).await;
    assert!(body["detail"].as_str().unwrap().contains("latest revision is 2"));
    let now: Value = app.get(&path, &key).await.json().await.unwrap();
    assert_eq!(now["name"], "two");
    assert_eq!(now["latest_revision"], 2);
    // Without If-Match: 428.
    assert_problem(app.put(&path, &key, &small_site("four"), None).await, 428, "precondition-required", None).await;
    // A list that includes the current tag matches, and so does `*` (RFC 9110 §13.1.1).
    assert_eq!(app.put(&path, &key, &small_site("five"), Some("\"1\", \"2\"")).await.status(), 200);
    assert_eq!(app.put(&path, &key, &small_site("six"), Some("*")).await.status(), 200);
    let now: Value = app.get(&path, &key).await.json().await.unwrap();
    assert_eq!(now["latest_revision"], 4);
    let garbage = app.get("/v1/sites?cursor=zzz", &key).await;
    assert_problem(garbage, 400, "bad-request", Some("/cursor")).await;
}

#[tokio::test]
async fn concurrent_updates_from_the_same_revision_let_exactly_one_win() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &small_site("base")).await;
    let path = format!("/v1/sites/{id}");
    let attempts = (0..6).map(|i| {
        let (app, key, path) = (&app, &key, &path);
        async move { app.put(path, key, &small_site(&format!("w{i}")), Some("\"1\"")).await.status().as_u16() }
    });
    let statuses = futures_join_all(attempts).await;
    assert_eq!(statuses.iter().filter(|s| **s == 200).count(), 1, "{statuses:?}");
    assert!(statuses.iter().all(|s| *s == 200 || *s == 412), "{statuses:?}");
    let now: Value = app.get(&path, &key).await.json().await.unwrap();
    assert_eq!(now["latest_revision"], 2);
}

/// Runs futures concurrently on the current task (no extra crate).
async fn futures_join_all<F: std::future::Future<Output = u16>>(fs: impl Iterator<Item = F>) -> Vec<u16> {
    let handles: Vec<_> = fs.collect();
    let mut out = Vec::new();
    let mut pinned: Vec<std::pin::Pin<Box<F>>> = handles.into_iter().map(Box::pin).collect();
    let mut done = vec![None; pinned.len()];
    std::future::poll_fn(|cx| {
        let mut pending = false;
        for (i, f) in pinned.iter_mut().enumerate() {
            if done[i].is_none() {
                match f.as_mut().poll(cx) {
                    std::task::Poll::Ready(v) => done[i] = Some(v),
                    std::task::Poll::Pending => pending = true,
                }
            }
        }
        if pending { std::task::Poll::Pending } else { std::task::Poll::Ready(()) }
    })
    .await;
    out.extend(done.into_iter().flatten());
    out
}

#[tokio::test]
async fn sites_list_in_pages_with_a_cursor_and_filter_by_name() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    for i in 0..5 {
        app.site(&key, &small_site(&format!("Bay {i}"))).await;
    }
    app.site(&key, &small_site("Substation yard")).await;
    let first: Value = app.get("/v1/sites?limit=4", &key).await.json().await.unwrap();
    assert_eq!(first["items"].as_array().unwrap().len(), 4);
    let cursor = first["next_cursor"].as_str().expect("more pages").to_string();
    let second: Value = app.get(&format!("/v1/sites?limit=4&cursor={cursor}"), &key).await.json().await.unwrap();
    assert_eq!(second["items"].as_array().unwrap().len(), 2);
    assert!(second["next_cursor"].is_null());
    let names: Vec<&str> = first["items"]
        .as_array()
        .unwrap()
        .iter()
        .chain(second["items"].as_array().unwrap())
        .map(|s| s["name"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["Bay 0", "Bay 1", "Bay 2", "Bay 3", "Bay 4", "Substation yard"]);
    let filtered: Value = app.get("/v1/sites?name=sUBSTATION", &key).await.json().await.unwrap();
    assert_eq!(filtered["items"].as_array().unwrap().len(), 1);
    let none: Value = app.get("/v1/sites?name=%25", &key).await.json().await.unwrap();
    assert_eq!(none["items"].as_array().unwrap().len(), 0, "a % in the filter is literal");
}

#[tokio::test]
async fn a_deleted_site_is_gone_but_its_assessments_stay_readable() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &small_site("to delete")).await;
    let res = app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({})).await;
    assert_eq!(res.status(), 201);
    let assessment: Value = res.json().await.unwrap();
    assert_eq!(app.delete(&format!("/v1/sites/{id}"), &key).await.status(), 204);
    assert_problem(app.get(&format!("/v1/sites/{id}"), &key).await, 404, "not-found", None).await;
    assert_problem(app.delete(&format!("/v1/sites/{id}"), &key).await, 404, "not-found", None).await;
    let list: Value = app.get("/v1/sites", &key).await.json().await.unwrap();
    assert!(list["items"].as_array().unwrap().is_empty());
    let kept = app.get(&format!("/v1/assessments/{}", assessment["id"].as_str().unwrap()), &key).await;
    assert_eq!(kept.status(), 200);
}
