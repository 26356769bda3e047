//! Assessments: pinned to a revision and table versions, stored, read back.

use crate::helpers::*;
use fluxbound::service::Role;
use serde_json::{Value, json};

#[tokio::test]
async fn an_assessment_is_stored_with_its_pinned_revision_and_read_back_identically() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &example("site-furnace-feeder.json")).await;
    let res = app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({"load": {"kind": "rated"}})).await;
    assert_eq!(res.status(), 201);
    let location = res.headers()["location"].to_str().unwrap().to_string();
    let created: Value = res.json().await.unwrap();
    assert_eq!(created["site_revision"], 1);
    let result = &created["result"];
    assert_eq!(result["load_case"]["kind"], "rated");
    assert!(!result["summary"]["positions_exceeding"].as_array().unwrap().is_empty());
    assert!(result["cautions"].as_array().unwrap().iter().any(|c| c.as_str().unwrap().contains("qualified assessors")));
    let tables: Vec<&str> = result["tables"].as_array().unwrap().iter().map(|t| t["id"].as_str().unwrap()).collect();
    assert!(tables.contains(&"icnirp-2010-occupational") && tables.contains(&"implant-screening-100"));

    let read: Value = app.get(&location, &key).await.json().await.unwrap();
    assert_eq!(read, created);
    let list: Value = app.get(&format!("/v1/sites/{id}/assessments"), &key).await.json().await.unwrap();
    assert_eq!(list["items"][0]["id"], created["id"]);
}

#[tokio::test]
async fn an_assessment_of_an_older_revision_uses_that_revision() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &small_site("wire")).await;
    let mut doubled = small_site("wire");
    doubled["circuits"][0]["current_a"] = json!(1000);
    assert_eq!(app.put(&format!("/v1/sites/{id}"), &key, &doubled, Some("\"1\"")).await.status(), 200);
    let assess = |rev: i64| {
        let (app, key, id) = (&app, &key, &id);
        async move {
            let r: Value = app
                .post(
                    &format!("/v1/sites/{id}/assessments"),
                    key,
                    &json!({"revision": rev, "tables": ["icnirp-2010-occupational"]}),
                )
                .await
                .json()
                .await
                .unwrap();
            (r["site_revision"].as_i64().unwrap(), r["result"]["positions"][0]["max_resultant_ut"].as_f64().unwrap())
        }
    };
    // Source: OpenStax University Physics Vol. 2 §12.2, B = 0.2 · I / R µT:
    // 500 A at 0.5 m → 200 µT; 1000 A → 400 µT.
    let (r1, b1) = assess(1).await;
    let (r2, b2) = assess(2).await;
    assert_eq!((r1, r2), (1, 2));
    assert!((b1 - 200.0).abs() < 1e-4 && (b2 - 400.0).abs() < 1e-4, "{b1} {b2}");
}

#[tokio::test]
async fn a_custom_table_version_used_by_an_assessment_is_frozen_and_pinned() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let table = json!({
        "id": "site-rule-40", "title": "Site rule: 40 µT", "source": "Invented house rule for tests",
        "applies_to": {"population": "workers", "body_region": "whole_body"}, "kind": "screening",
        "bands": [{"from_hz": 1, "to_hz": 3000, "coefficient": 40, "exponent": 0}]
    });
    assert_eq!(app.post("/v1/tables", &key, &table).await.status(), 201);
    // Unused: version 1 may still be replaced.
    let mut v1b = table.clone();
    v1b["title"] = json!("Site rule: 40 µT (typo fixed)");
    assert_eq!(app.put("/v1/tables/site-rule-40/versions/1", &key, &v1b, None).await.status(), 200);
    let id = app.site(&key, &small_site("wire")).await;
    let res = app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({"tables": ["site-rule-40"]})).await;
    assert_eq!(res.status(), 201);
    let a: Value = res.json().await.unwrap();
    // 200 µT / 40 µT = 5 (invented level, hand arithmetic).
    assert!((a["result"]["positions"][0]["comparisons"][0]["ratio"].as_f64().unwrap() - 5.0).abs() < 1e-6);
    assert_eq!(a["result"]["tables"][0]["version"], 1);
    // Now frozen.
    assert_problem(app.put("/v1/tables/site-rule-40/versions/1", &key, &table, None).await, 409, "conflict", None)
        .await;
    // A new version is fine, and later assessments pin it.
    let mut v2 = table.clone();
    v2["bands"][0]["coefficient"] = json!(50);
    assert_eq!(app.post("/v1/tables/site-rule-40/versions", &key, &v2).await.status(), 201);
    let b: Value = app
        .post(&format!("/v1/sites/{id}/assessments"), &key, &json!({"tables": ["site-rule-40"]}))
        .await
        .json()
        .await
        .unwrap();
    assert_eq!(b["result"]["tables"][0]["version"], 2);
    let shown: Value = app.get("/v1/tables/site-rule-40", &key).await.json().await.unwrap();
    let used: Vec<bool> = shown["versions"].as_array().unwrap().iter().map(|v| v["used"].as_bool().unwrap()).collect();
    assert_eq!(used, [true, true]);
    // The first assessment still reads as it was.
    let again: Value =
        app.get(&format!("/v1/assessments/{}", a["id"].as_str().unwrap()), &key).await.json().await.unwrap();
    assert_eq!(again, a);
}

#[tokio::test]
async fn an_assessment_option_review_fraction_outside_zero_to_one_returns_422_at_its_pointer() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &example("site-switch-room.json")).await;
    for bad in [json!(0), json!(1), json!(1.5), json!(-0.2)] {
        let body = json!({"options": {"review_fraction": bad}});
        let res = app.post(&format!("/v1/sites/{id}/assessments"), &key, &body).await;
        let problem = assert_problem(res, 422, "validation", Some("/options/review_fraction")).await;
        let detail = problem["errors"][0]["detail"].as_str().unwrap();
        assert!(detail.contains("review fraction must be greater than 0 and less than 1"), "{bad}: {detail}");
    }
    // A good one is used and reported; absent means the default 0.5 (DESIGN.md).
    let body = json!({"options": {"review_fraction": 0.25}});
    let created: Value = app.post(&format!("/v1/sites/{id}/assessments"), &key, &body).await.json().await.unwrap();
    // The number is passed through, not computed: 1e-15 allows only for
    // the JSON round trip.
    let rf = created["result"]["review_fraction"].as_f64().unwrap();
    assert!((rf - 0.25).abs() < 1e-15, "{rf}");
    let created: Value = app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({})).await.json().await.unwrap();
    let rf = created["result"]["review_fraction"].as_f64().unwrap();
    assert!((rf - 0.5).abs() < 1e-15, "{rf}");
}

#[tokio::test]
async fn an_assessment_reads_each_position_against_the_regimes_of_its_tables() {
    // small_site at rated load: 1000 A in a long wire seen from 0.5 m →
    // 0.2 · 1000 / 0.5 = 400 µT at 50 Hz (OpenStax University Physics Vol. 2,
    // §12.2, V). ICNIRP 2010 general public 200 µT (Table 4, V) exceeded,
    // occupational 1000 µT (Table 3, V) met; ratios 2.0 and 0.4 are far from
    // any edge, so the 2 km wire's finite-length error (~6e-8) cannot move a tier.
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &small_site("regimes")).await;
    let body = json!({"tables": ["icnirp-2010-public", "icnirp-2010-occupational"], "load": {"kind": "rated"}});
    let res = app.post(&format!("/v1/sites/{id}/assessments"), &key, &body).await;
    assert_eq!(res.status(), 201);
    let created: Value = res.json().await.unwrap();
    let regimes = created["result"]["positions"][0]["regimes"].as_array().unwrap().clone();
    assert_eq!(regimes.len(), 1, "only the ICNIRP 2010 regime has assessed tables: {regimes:?}");
    let r = &regimes[0];
    assert_eq!((r["regime"].as_str(), r["evaluated"].as_bool()), (Some("icnirp-2010"), Some(true)));
    assert_eq!(
        (r["highest_exceeded"].as_str(), r["first_met"].as_str()),
        (Some("general public"), Some("occupational"))
    );
    assert!(r["words"][0]["text"].as_str().unwrap().starts_with("Above the general-public reference level"), "{r}");
}

/// One long wire (±10 km along x), 3000 A with a 3rd harmonic of 50 % at
/// 180°, a point 1 m away: 600 µT at 50 Hz and 300 µT at 150 Hz (OpenStax
/// University Physics Vol. 2 §12.2, B = 0.2 · I / R µT).
fn third_harmonic_in_opposition() -> Value {
    json!({
        "name": "wpi", "frequency_hz": 50,
        "circuits": [{"id": "w", "kind": "single_phase", "current_a": 3000,
                      "harmonics": [{"order": 3, "percent": 50, "angle_deg": 180}]}],
        "conductors": [{"id": "w-A", "circuit": "w", "phase": "A", "radius_m": 0.01,
                        "path": [[-10000.0, 0.0, 0.0], [10000.0, 0.0, 0.0]]}],
        "positions": [{"id": "p", "at": [0.0, 1.0, 0.0]}]
    })
}

#[tokio::test]
async fn an_assessment_reports_the_weighted_peak_index_and_a_table_can_let_it_decide() {
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    // Invented flat 1000 µT table (the ICNIRP 2010 occupational value at
    // 50–150 Hz) whose verdict is read from the weighted peak.
    let table = json!({
        "id": "flat-1000-wpm", "title": "Flat 1000 µT, weighted peak", "source": "Invented for tests",
        "applies_to": {"population": "workers", "body_region": "whole_body"}, "kind": "screening",
        "bands": [{"from_hz": 1, "to_hz": 3000, "coefficient": 1000, "exponent": 0}],
        "decision_rule": "weighted_peak"
    });
    assert_eq!(app.post("/v1/tables", &key, &table).await.status(), 201);
    let id = app.site(&key, &third_harmonic_in_opposition()).await;
    let res = app
        .post(
            &format!("/v1/sites/{id}/assessments"),
            &key,
            &json!({"tables": ["icnirp-2010-occupational", "flat-1000-wpm"]}),
        )
        .await;
    assert_eq!(res.status(), 201);
    let a: Value = res.json().await.unwrap();
    // Issue 11 check value (by hand): summation 0.9, index √(5/12) = 0.645497;
    // 1e-6 covers the 20 km wire's 5e-9 finite-length error.
    for (k, rule) in [(0, "summation"), (1, "weighted_peak")] {
        let c = &a["result"]["positions"][0]["comparisons"][k];
        assert!((c["ratio"].as_f64().unwrap() - 0.9).abs() < 1e-6, "{c}");
        assert!((c["weighted_peak_index"].as_f64().unwrap() - (5.0f64 / 12.0).sqrt()).abs() < 1e-6, "{c}");
        assert_eq!(c["decided_by"], rule);
    }
}

/// An invented two-tier regime over two built-in ICNIRP 2010 tables.
fn site_regime(id: &str) -> Value {
    json!({
        "id": id, "title": "Works rule (invented)", "source": "Invented for tests",
        "tiers": [
            {"name": "general", "tables": ["icnirp-2010-public"],
             "met": {"text": "Open to everyone.", "source": "invented"},
             "exceeded": {"text": "Keep visitors out.", "source": "invented"}},
            {"name": "trained staff", "tables": ["icnirp-2010-occupational"],
             "met": {"text": "Trained staff only.", "source": "invented"},
             "exceeded": {"text": "Nobody may stay here.", "source": "invented"}}
        ]
    })
}

#[tokio::test]
async fn an_assessment_request_may_carry_custom_regimes_and_a_bad_one_is_422_with_its_pointer() {
    // small_site at rated load: 0.2 · 1000 A / 0.5 m = 400 µT at 50 Hz
    // (OpenStax University Physics Vol. 2 §12.2): above ICNIRP 2010 public
    // (200 µT, Table 4) and within occupational (1000 µT, Table 3).
    let app = spawn_app().await;
    let key = app.key("org-a", Role::Assessor).await;
    let id = app.site(&key, &small_site("custom-regime")).await;
    let tables = json!(["icnirp-2010-public", "icnirp-2010-occupational"]);
    let body = json!({"tables": tables, "load": {"kind": "rated"}, "regimes": [site_regime("works-rule")]});
    let res = app.post(&format!("/v1/sites/{id}/assessments"), &key, &body).await;
    assert_eq!(res.status(), 201);
    let created: Value = res.json().await.unwrap();
    let regimes = created["result"]["positions"][0]["regimes"].as_array().unwrap().clone();
    let custom = regimes.iter().find(|r| r["regime"] == "works-rule").expect("the custom regime is read");
    assert_eq!(
        (custom["highest_exceeded"].as_str(), custom["first_met"].as_str()),
        (Some("general"), Some("trained staff"))
    );

    let reused = json!({"tables": tables, "regimes": [site_regime("icnirp-2010")]});
    let res = app.post(&format!("/v1/sites/{id}/assessments"), &key, &reused).await;
    assert_problem(res, 422, "validation", Some("/regimes/0/id")).await;
    let mut bad = site_regime("works-rule");
    bad["tiers"] = json!([]);
    let res = app.post(&format!("/v1/sites/{id}/assessments"), &key, &json!({"regimes": [bad]})).await;
    let body = assert_problem(res, 422, "validation", None).await;
    assert!(
        body["errors"].as_array().unwrap().iter().any(|e| e["pointer"].as_str().unwrap().starts_with("/regimes/0")),
        "{body}"
    );
}
