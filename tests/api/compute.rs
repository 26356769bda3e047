//! Compute that ends with its request: a timed-out or abandoned request
//! stops its computation (seen in `/metrics`), a full set of computation
//! slots answers 503 `busy` with `Retry-After`, and every computing route is
//! held to the same pair budget.

use crate::helpers::*;
use fluxbound::service::{Limits, Role};
use serde_json::{Value, json};
use std::time::{Duration, Instant};
use tokio::io::AsyncWriteExt;

/// How long a stopped computation may take to leave `/metrics`: generous
/// for a loaded test machine, and far below the tens of seconds the
/// computation of [`heavy_evaluation`] would run if nothing stopped it.
const STOP_DEADLINE: Duration = Duration::from_secs(10);

/// 100 000 segments (four straight conductors of 25 000 one-metre
/// segments) at 200 000 points: 2e10 segment–point pairs, tens of seconds
/// of the engine in a test build on two cores. About 3.5 MB of JSON.
fn heavy_evaluation() -> Value {
    let conductor = |k: i64| {
        let path: Vec<[i64; 3]> = (0..=25_000).map(|i| [i - 12_500, 2 * k, 3]).collect();
        json!({"id": format!("c{k}"), "current": {"rms_a": 100, "phase_deg": 0}, "radius_m": 0.01, "path": path})
    };
    let points: Vec<[i64; 3]> = (0..200_000).map(|i| [i % 1000 - 500, 20 + i / 1000, 1]).collect();
    json!({"frequency_hz": 50, "circuits": [], "conductors": (0..4).map(conductor).collect::<Vec<_>>(), "points": points})
}

/// Limits under which [`heavy_evaluation`] is within every budget.
fn generous(request_timeout_s: u64) -> Limits {
    Limits {
        max_pairs: u64::MAX,
        body_bytes: 16 * 1024 * 1024,
        request_timeout_s,
        rate_per_key: 0,
        ..Limits::default()
    }
}

/// One sample of `/metrics` by name (a counter or gauge without labels).
async fn metric(app: &TestApp, name: &str) -> u64 {
    let text = app.get("/metrics", "").await.text().await.unwrap();
    let line = text.lines().find(|l| l.split_whitespace().next() == Some(name));
    line.and_then(|l| l.split_whitespace().nth(1)).and_then(|v| v.parse().ok()).unwrap_or_else(|| panic!("{name}"))
}

/// Waits until `fluxbound_computations_running` is `n`; false at the deadline.
async fn running_becomes(app: &TestApp, n: u64, deadline: Duration) -> bool {
    let start = Instant::now();
    while start.elapsed() < deadline {
        if metric(app, "fluxbound_computations_running").await == n {
            return true;
        }
        tokio::time::sleep(Duration::from_millis(20)).await;
    }
    false
}

#[tokio::test]
async fn a_request_past_the_timeout_is_answered_503_and_its_computation_stops() {
    let app = spawn_app_with(TestDb::fresh().await, generous(1)).await;
    let key = app.key("acme", Role::Viewer).await;
    let res = app.post("/v1/evaluate", &key, &heavy_evaluation()).await;
    assert_problem(res, 503, "timeout", None).await;
    assert!(running_becomes(&app, 0, STOP_DEADLINE).await, "the computation ran on after its request timed out");
    assert_eq!(metric(&app, "fluxbound_computations_cancelled_total").await, 1);
    // A cancelled computation has no result, so no pairs are counted.
    assert_eq!(metric(&app, "fluxbound_segment_point_pairs_total").await, 0);
}

#[tokio::test]
async fn a_client_that_disconnects_stops_its_computation_without_waiting_for_the_timeout() {
    // Straight to the server (not through the contract proxy), on HTTP/1.1:
    // hyper drops the handler's future when it reads the end of the
    // connection, and the dropped future sets the computation's flag.
    let app = spawn_app_with(TestDb::fresh().await, generous(600)).await;
    let key = app.key("acme", Role::Viewer).await;
    let body = heavy_evaluation().to_string();
    let mut stream = tokio::net::TcpStream::connect(app.direct).await.unwrap();
    let head = format!(
        "POST /v1/evaluate HTTP/1.1\r\nHost: {}\r\nAuthorization: Bearer {key}\r\nContent-Type: application/json\r\nContent-Length: {}\r\n\r\n",
        app.direct,
        body.len()
    );
    stream.write_all(head.as_bytes()).await.unwrap();
    stream.write_all(body.as_bytes()).await.unwrap();
    assert!(running_becomes(&app, 1, STOP_DEADLINE).await, "the computation did not start");
    drop(stream);
    assert!(running_becomes(&app, 0, STOP_DEADLINE).await, "the computation ran on after its client left");
    assert_eq!(metric(&app, "fluxbound_computations_cancelled_total").await, 1);
}

#[tokio::test]
async fn when_every_computation_slot_stays_taken_a_request_is_answered_503_busy_with_retry_after() {
    let limits = Limits { max_computations: 1, compute_queue_ms: 200, ..generous(3) };
    let app = spawn_app_with(TestDb::fresh().await, limits).await;
    let key = app.key("acme", Role::Viewer).await;
    let heavy = {
        let (client, url, key) = (app.client.clone(), format!("{}/v1/evaluate", app.base), key.clone());
        tokio::spawn(async move { client.post(url).bearer_auth(key).json(&heavy_evaluation()).send().await })
    };
    assert!(running_becomes(&app, 1, STOP_DEADLINE).await, "the heavy computation did not start");
    let small = example("evaluate-busbar-walkway.json");
    let res = app.post("/v1/evaluate", &key, &small).await;
    assert_eq!(res.headers()["retry-after"], "1", "the queue wait of 200 ms rounded up to whole seconds");
    let problem = assert_problem(res, 503, "busy", None).await;
    assert!(problem["detail"].as_str().unwrap().contains("retry after 1 s"), "{problem}");
    assert_eq!(metric(&app, "fluxbound_computations_refused_total").await, 1);
    // The heavy request times out, its computation stops and frees the slot.
    assert_eq!(heavy.await.unwrap().unwrap().status(), 503);
    assert!(running_becomes(&app, 0, STOP_DEADLINE).await, "the heavy computation ran on");
    assert_eq!(app.post("/v1/evaluate", &key, &small).await.status(), 200);
}

/// A furnace assessment and a switch-room survey stored under the default
/// limits, then the server restarted with `max_pairs` pairs per request:
/// the app, an assessor key, the assessment id and the survey id.
async fn stored_then_limited(max_pairs: u64) -> (TestApp, String, String, String) {
    let app = spawn_app().await;
    let key = app.key("acme", Role::Assessor).await;
    let site = app.site(&key, &example("site-furnace-feeder.json")).await;
    let res = app.post(&format!("/v1/sites/{site}/assessments"), &key, &json!({"load": {"kind": "rated"}})).await;
    let assessment = body_of(res, 201).await["id"].as_str().unwrap().to_string();
    let room = app.site(&key, &example("site-switch-room.json")).await;
    let res = app.post(&format!("/v1/sites/{room}/surveys"), &key, &example("survey-switch-room.json")).await;
    let survey = body_of(res, 201).await["id"].as_str().unwrap().to_string();
    let db = app.stop().await;
    let app = spawn_app_with(db, Limits { max_pairs, rate_per_key: 0, ..Limits::default() }).await;
    (app, key, assessment, survey)
}

async fn body_of(res: reqwest::Response, status: u16) -> Value {
    assert_eq!(res.status(), status);
    res.json().await.unwrap()
}

#[tokio::test]
async fn an_area_map_over_the_pairs_budget_returns_422_at_the_areas_spacing() {
    let (app, key, id, _) = stored_then_limited(1_000).await;
    let res = app.get(&format!("/v1/assessments/{id}/areas/maintenance-walkway/map.svg"), &key).await;
    let problem = assert_problem(res, 422, "budget-exceeded", Some("/areas/0/spacing_m")).await;
    assert!(problem["errors"][0]["detail"].as_str().unwrap().contains("over the budget of 1000"), "{problem}");
}

#[tokio::test]
async fn a_geojson_export_over_the_pairs_budget_returns_422_at_the_areas() {
    let (app, key, id, _) = stored_then_limited(1_000).await;
    let res = app.get(&format!("/v1/assessments/{id}/features.geojson"), &key).await;
    let problem = assert_problem(res, 422, "budget-exceeded", None).await;
    assert!(problem["errors"][0]["pointer"].as_str().unwrap().starts_with("/areas"), "{problem}");
}

#[tokio::test]
async fn a_distance_over_the_pairs_budget_returns_422_at_the_direction_even_within_its_own_budget() {
    let (app, key, id, _) = stored_then_limited(1_000).await;
    let path = format!("/v1/assessments/{id}/distance?level_ut=100&from=position:walkway-near-feeder");
    let problem = assert_problem(app.get(&path, &key).await, 422, "budget-exceeded", Some("/direction")).await;
    assert!(problem["errors"][0]["detail"].as_str().unwrap().contains("budget of 1000"), "{problem}");
}

#[tokio::test]
async fn a_survey_over_the_pairs_budget_returns_422_at_its_points_and_stores_nothing() {
    let (app, key, _, _) = stored_then_limited(100).await;
    let site = app.site(&key, &example("site-switch-room.json")).await;
    let res = app.post(&format!("/v1/sites/{site}/surveys"), &key, &example("survey-switch-room.json")).await;
    assert_problem(res, 422, "budget-exceeded", Some("/points")).await;
    let list = body_of(app.get(&format!("/v1/sites/{site}/surveys"), &key).await, 200).await;
    assert_eq!(list["items"], json!([]));
}

#[tokio::test]
async fn stored_results_read_back_under_any_budget_because_they_compute_nothing() {
    // CSV, the reconciliation and the extrapolation (also judged again at
    // another review fraction) read the stored analysis: no field is
    // computed, so a budget of one pair does not refuse them.
    let (app, key, id, survey) = stored_then_limited(1).await;
    assert_eq!(app.get(&format!("/v1/assessments/{id}/positions.csv"), &key).await.status(), 200);
    assert_eq!(app.get(&format!("/v1/surveys/{survey}/reconciliation"), &key).await.status(), 200);
    let path = format!("/v1/surveys/{survey}/extrapolation?review_fraction=0.3");
    assert_eq!(app.get(&path, &key).await.status(), 200);
    assert_eq!(metric(&app, "fluxbound_segment_point_pairs_total").await, 0);
}
