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

#[tokio::test]
async fn scenarios_are_stored_when_asked_and_read_back_with_their_request() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &example("site-control-room-tray.json")).await;
    let path = format!("/v1/sites/{id}/whatif/scenarios");
    // Not stored by default: 200 and no location.
    let res = app.post(&path, &key, &json!({})).await;
    assert_eq!(res.status(), 200);
    assert!(res.headers().get("location").is_none());
    let r: Value = res.json().await.unwrap();
    let names: Vec<&str> = r["scenarios"].as_array().unwrap().iter().map(|s| s["name"].as_str().unwrap()).collect();
    assert_eq!(names, ["present", "rated"]);
    // Fields scale with current (Biot–Savart is linear): rated 2300 A
    // against present 2200 A gives 2300/2200 of the ratio.
    let ratio = |k: usize| r["scenarios"][k]["targets"][0]["ratio"].as_f64().unwrap();
    assert!((ratio(1) / ratio(0) - 2300.0 / 2200.0).abs() < 1e-12, "{r}");
    assert_eq!(r["worst"]["scenario"], "rated");
    // Stored: 201, Location, and the same result read back with the request.
    let body = json!({"scenarios": [{"name": "half", "load": {"kind": "scale", "factors": {"TX1-a": 0.5}}}]});
    let res = app.post(&format!("{path}?store=true"), &key, &body).await;
    assert_eq!(res.status(), 201);
    let location = res.headers().get("location").unwrap().to_str().unwrap().to_string();
    assert!(location.starts_with("/v1/whatif-results/"), "{location}");
    let answered: Value = res.json().await.unwrap();
    let viewer = app.key("org-a", Role::Viewer).await;
    let stored: Value = app.get(&location, &viewer).await.json().await.unwrap();
    assert_eq!(stored["kind"], "scenarios");
    assert_eq!(stored["site_revision"], 1);
    assert_eq!(stored["result"], answered);
    assert_eq!(stored["request"]["scenarios"][0]["name"], "half");
    // Another organisation does not see it; a bad flag is refused.
    let other = app.key("org-b", Role::Viewer).await;
    assert_eq!(app.get(&location, &other).await.status(), 404);
    assert_eq!(app.post(&format!("{path}?store=maybe"), &key, &body).await.status(), 400);
    // N-1 of the example's load group: one feeder out, the other at 4400 A.
    let res = app.post(&path, &key, &json!({"scenarios": [], "n_minus_1": {}})).await;
    let n1: Value = res.json().await.unwrap();
    assert_eq!(n1["scenarios"].as_array().unwrap().len(), 3, "{n1}");
    assert_eq!(n1["scenarios"][1]["load"]["currents_a"]["TX1-b"], 4400.0);
    // Without load groups N-1 says what to mark, at its pointer.
    let mut plain = example("site-control-room-tray.json");
    for c in plain["circuits"].as_array_mut().unwrap() {
        c.as_object_mut().unwrap().remove("load_group");
    }
    let plain_id = app.site(&key, &plain).await;
    let res = app.post(&format!("/v1/sites/{plain_id}/whatif/scenarios"), &key, &json!({"n_minus_1": {}})).await;
    assert_problem(res, 422, "validation", Some("/n_minus_1")).await;
}

#[tokio::test]
async fn the_smallest_move_saved_as_a_revision_no_longer_exceeds() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &example("site-control-room-tray.json")).await;
    let path = format!("/v1/sites/{id}/whatif/move");
    let body = json!({"moving": {"circuits": ["TX1-a", "TX1-b"]}, "by_m": [3.0, 0.0, 0.0], "steps": 6});
    let res = app.post(&path, &key, &body).await;
    assert_eq!(res.status(), 200);
    let r: Value = res.json().await.unwrap();
    assert!(r["steps"][0]["under_level"] == false, "{r}");
    let d = r["smallest"]["distance_m"].as_f64().unwrap();
    assert!(d > 0.0 && d <= 0.5, "{d}");
    let put = app.put(&format!("/v1/sites/{id}"), &key, &r["revision"], Some("\"1\"")).await;
    assert_eq!(put.status(), 200);
    let assessed: Value =
        app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({})).await.json().await.unwrap();
    assert_ne!(assessed["result"]["summary"]["worst_verdict"], "exceeds");
    // Refusals with pointers.
    let res = app.post(&path, &key, &json!({"moving": {}, "by_m": [0.0, 0.0, 0.0]})).await;
    let p = assert_problem(res, 422, "validation", Some("/moving")).await;
    assert!(p.to_string().contains("/by_m"), "{p}");
    let res = app.post(&path, &key, &json!({"moving": {"conductors": ["nope"]}, "by_m": [1.0, 0.0, 0.0]})).await;
    assert_problem(res, 422, "validation", Some("/moving/conductors/0")).await;
    let res =
        app.post(&path, &key, &json!({"moving": {"positions": ["operator-desk"]}, "by_m": [0.0, 0.0, 1.0]})).await;
    assert_problem(res, 422, "validation", Some("/by_m/2")).await;
}

#[tokio::test]
async fn a_passive_loop_over_the_tray_reports_its_current_and_lowers_the_desk() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &example("site-control-room-tray.json")).await;
    let path = format!("/v1/sites/{id}/whatif/loop");
    let body = json!({
        "path": [[-0.1, -8.0, 0.3], [0.6, -8.0, 0.3], [0.6, 8.0, 0.3], [-0.1, 8.0, 0.3]],
        "wire_radius_m": 0.005,
        "resistance": {"kind": "wire", "cross_section_mm2": 95, "conductivity_s_per_m": 5.8e7}
    });
    let res = app.post(&format!("{path}?store=true"), &key, &body).await;
    assert_eq!(res.status(), 201);
    let r: Value = res.json().await.unwrap();
    // R = length / (σ·A) = 33.4 m / (5.8e7 · 95e-6) (the loop is 2·0.7 + 2·16 m).
    let want_r = 33.4 / (5.8e7 * 95e-6);
    assert!((r["resistance_ohm"].as_f64().unwrap() - want_r).abs() < 1e-12, "{r}");
    assert_eq!(r["lines"][0]["order"], 1);
    assert!(r["lines"][0]["current_a"].as_f64().unwrap() > 0.0);
    let t = &r["targets"][0];
    assert!(t["b_with_ut"].as_f64().unwrap() < t["b_without_ut"].as_f64().unwrap(), "{t}");
    let res = app
        .post(
            &path,
            &key,
            &json!({"path": [[0, 0, 1], [1, 0, 1]], "wire_radius_m": 0.0, "resistance": {"kind": "given", "ohm": 1}}),
        )
        .await;
    assert_problem(res, 422, "validation", Some("/path")).await;
    let mut thick = body.clone();
    thick["wire_radius_m"] = json!(0.0);
    let res = app.post(&path, &key, &thick).await;
    assert_problem(res, 422, "validation", Some("/wire_radius_m")).await;
}

#[tokio::test]
async fn sites_with_overhead_lines_bars_and_formations_are_stored_assessed_and_exported() {
    // The new site sections go through HTTP like any site: stored as
    // written, expanded on assessment, and carried by the GeoJSON export.
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    for (name, section) in
        [("site-depot-overhead-line.json", "overhead_lines"), ("site-busbar-room.json", "formations")]
    {
        let doc = example(name);
        let id = app.site(&key, &doc).await;
        let res = app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({})).await;
        assert_eq!(res.status(), 201, "{name}");
        let a: Value = res.json().await.unwrap();
        assert_eq!(
            a["result"]["positions"].as_array().unwrap().len(),
            doc["positions"].as_array().unwrap().len(),
            "{name}"
        );
        let exported: Value = app.get(&format!("/v1/sites/{id}/export.geojson"), &key).await.json().await.unwrap();
        // Compared as numbers (80 and 80.0 are the same temperature).
        assert!(same(&exported["site"][section], &doc[section]), "{name}: {exported}");
    }
}

/// JSON equality with numbers compared as numbers.
fn same(a: &Value, b: &Value) -> bool {
    match (a, b) {
        (Value::Number(x), Value::Number(y)) => x.as_f64() == y.as_f64(),
        (Value::Array(x), Value::Array(y)) => x.len() == y.len() && x.iter().zip(y).all(|(p, q)| same(p, q)),
        (Value::Object(x), Value::Object(y)) => {
            x.len() == y.len() && x.iter().all(|(k, v)| y.get(k).is_some_and(|w| same(v, w)))
        }
        _ => a == b,
    }
}
