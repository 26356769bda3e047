//! Maps, CSV, GeoJSON and distances of a stored assessment over HTTP.

use crate::helpers::*;
use fluxbound::service::Role;
use serde_json::{Value, json};

async fn furnace_assessment(app: &TestApp, key: &str) -> String {
    let site = app.site(key, &example("site-furnace-feeder.json")).await;
    let res = app.post(&format!("/v1/sites/{site}/assessments"), key, &json!({"load": {"kind": "rated"}})).await;
    assert_eq!(res.status(), 201);
    res.json::<Value>().await.unwrap()["id"].as_str().unwrap().to_string()
}

#[tokio::test]
async fn an_assessment_serves_its_area_map_csv_and_geojson_with_their_media_types() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Viewer).await;
    let writer = app.key("org-a", Role::Assessor).await;
    let id = furnace_assessment(&app, &writer).await;

    let map = app.get(&format!("/v1/assessments/{id}/areas/maintenance-walkway/map.svg"), &key).await;
    assert_eq!(map.status(), 200);
    assert_eq!(map.headers()["content-type"], "image/svg+xml");
    let svg = map.text().await.unwrap();
    assert!(
        svg.starts_with("<svg") && svg.contains("walkway-near-feeder: exceeds") && svg.contains("qualified assessors")
    );
    assert_problem(app.get(&format!("/v1/assessments/{id}/areas/nope/map.svg"), &key).await, 404, "not-found", None)
        .await;
    // Banded by the first table unless another of the assessment's is asked for.
    assert!(svg.contains("Exposure ratio to T1"));
    let by_high =
        app.get(&format!("/v1/assessments/{id}/areas/maintenance-walkway/map.svg?table=eu-2013-35-high"), &key).await;
    assert_eq!(by_high.status(), 200);
    assert!(by_high.text().await.unwrap().contains("Exposure ratio to T3"));
    assert_problem(
        app.get(&format!("/v1/assessments/{id}/areas/maintenance-walkway/map.svg?table=nope"), &key).await,
        422,
        "validation",
        Some("/table"),
    )
    .await;

    let csv = app.get(&format!("/v1/assessments/{id}/positions.csv"), &key).await;
    assert_eq!(csv.headers()["content-type"], "text/csv; charset=utf-8");
    let text = csv.text().await.unwrap();
    let mut reader = ::csv::Reader::from_reader(text.as_bytes());
    assert_eq!(&reader.headers().unwrap()[9], "resultant_ut");
    assert!(reader.records().count() > 10);

    let geo = app.get(&format!("/v1/assessments/{id}/features.geojson"), &key).await;
    assert_eq!(geo.headers()["content-type"], "application/geo+json");
    let doc: Value = geo.json().await.unwrap();
    assert_eq!(doc["type"], "FeatureCollection");
    assert!(doc["features"].as_array().unwrap().iter().any(|f| f["properties"]["kind"] == "zone"));
}

#[tokio::test]
async fn the_distance_query_answers_from_a_position_and_rejects_bad_input_with_pointers() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = furnace_assessment(&app, &key).await;
    let path = format!("/v1/assessments/{id}/distance");
    let res = app.get(&format!("{path}?level_ut=500&from=position:walkway-near-feeder&direction=0,-1,0"), &key).await;
    assert_eq!(res.status(), 200);
    let d: Value = res.json().await.unwrap();
    let dist = d["distance_m"].as_f64().unwrap();
    assert!(dist > 0.0 && dist < 5.0, "{d}");
    assert!(d["b_at_origin_ut"].as_f64().unwrap() > 500.0);
    assert_problem(
        app.get(&format!("{path}?level_ut=-1&from=position:walkway-near-feeder"), &key).await,
        422,
        "validation",
        Some("/level_ut"),
    )
    .await;
    assert_problem(
        app.get(&format!("{path}?level_ut=100&from=position:nobody"), &key).await,
        422,
        "validation",
        Some("/from"),
    )
    .await;
    assert_problem(
        app.get(&format!("{path}?level_ut=100&from=point:1,2"), &key).await,
        422,
        "validation",
        Some("/from"),
    )
    .await;
    assert_problem(
        app.get(&format!("{path}?level_ut=100&from=point:1,2,3&direction=0,0,0"), &key).await,
        422,
        "validation",
        Some("/direction"),
    )
    .await;
    assert_problem(app.get(&format!("{path}?from=point:1,2,3"), &key).await, 400, "bad-request", None).await;
    // Another organisation sees nothing.
    let other = app.key("org-b", Role::Admin).await;
    assert_problem(app.get(&format!("{path}?level_ut=100&from=point:1,2,3"), &other).await, 404, "not-found", None)
        .await;
    assert_problem(app.get(&format!("/v1/assessments/{id}/positions.csv"), &other).await, 404, "not-found", None).await;
}

#[tokio::test]
async fn the_distance_query_answers_to_a_table_with_a_first_crossing_and_a_clearance() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = furnace_assessment(&app, &key).await;
    let path = format!("/v1/assessments/{id}/distance");
    let res = app
        .get(&format!("{path}?table=icnirp-2010-occupational&from=position:walkway-near-feeder&direction=0,-1,0"), &key)
        .await;
    assert_eq!(res.status(), 200);
    let d: Value = res.json().await.unwrap();
    assert_eq!(d["quantity"], "exposure_ratio");
    assert_eq!(d["table"]["id"], "icnirp-2010-occupational");
    assert!(d["level_ut"].is_null(), "{d}");
    let (first, clear) = (d["distance_m"].as_f64().unwrap(), d["clearance_m"].as_f64().unwrap());
    assert!(first > 0.0 && first <= clear, "{d}");
    assert!(d["notes"].as_array().unwrap().iter().any(|n| n.as_str().unwrap().contains("proven")), "{d}");
    assert_problem(
        app.get(&format!("{path}?table=nope&from=position:walkway-near-feeder"), &key).await,
        422,
        "validation",
        Some("/table"),
    )
    .await;
    assert_problem(
        app.get(&format!("{path}?table=icnirp-2010-occupational&level_ut=100&from=point:1,2,3"), &key).await,
        422,
        "validation",
        Some("/table"),
    )
    .await;
}

#[tokio::test]
async fn a_distance_over_its_budget_returns_422_budget_exceeded_naming_the_direction() {
    let limits = fluxbound::service::Limits { max_distance_pairs: 1000, rate_per_key: 0, ..Default::default() };
    let app = spawn_app_with(TestDb::fresh().await, limits).await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = furnace_assessment(&app, &key).await;
    let res =
        app.get(&format!("/v1/assessments/{id}/distance?level_ut=100&from=position:walkway-near-feeder"), &key).await;
    let problem = assert_problem(res, 422, "budget-exceeded", Some("/direction")).await;
    assert!(problem["errors"][0]["detail"].as_str().unwrap().contains("instead of shortest"), "{problem}");
}
