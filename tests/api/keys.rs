//! The last admin key of an organisation cannot be revoked (409), also
//! when two admins revoke each other at the same moment.

use crate::helpers::*;
use crate::isolation::{body, key_id};
use fluxbound::service::Role;
use serde_json::json;

/// The organisation's active admin keys, as the API lists them.
async fn active_admins(app: &TestApp, admin: &str) -> usize {
    let list = body(app.get("/v1/keys", admin).await, 200).await;
    list["items"].as_array().unwrap().iter().filter(|k| k["role"] == "admin" && k["revoked_at"].is_null()).count()
}

#[tokio::test]
async fn the_last_admin_key_cannot_revoke_itself_and_answers_409_in_plain_words() {
    let app = spawn_app().await;
    let admin = app.key("acme", Role::Admin).await;
    let res = app.delete(&format!("/v1/keys/{}", key_id(&admin)), &admin).await;
    let problem = assert_problem(res, 409, "conflict", None).await;
    assert!(problem["detail"].as_str().unwrap().contains("last admin key"), "{problem}");
    assert_eq!(app.get("/v1/keys", &admin).await.status(), 200, "the key still works");
}

#[tokio::test]
async fn an_admin_key_can_be_revoked_while_another_admin_key_remains() {
    let app = spawn_app().await;
    let admin = app.key("acme", Role::Admin).await;
    let created = body(app.post("/v1/keys", &admin, &json!({"role": "admin"})).await, 201).await;
    let second = created["secret"].as_str().unwrap().to_string();
    // Revoking itself is fine while the other admin key remains.
    assert_eq!(app.delete(&format!("/v1/keys/{}", key_id(&admin)), &admin).await.status(), 204);
    let res = app.delete(&format!("/v1/keys/{}", key_id(&second)), &second).await;
    assert_problem(res, 409, "conflict", None).await;
    assert_eq!(active_admins(&app, &second).await, 1);
}

#[tokio::test]
async fn revoked_and_non_admin_keys_do_not_count_as_admins() {
    let app = spawn_app().await;
    let admin = app.key("acme", Role::Admin).await;
    let assessor = app.key("acme", Role::Assessor).await;
    // Another organisation's admin is no help either.
    app.key("other", Role::Admin).await;
    assert_eq!(app.delete(&format!("/v1/keys/{}", key_id(&assessor)), &admin).await.status(), 204);
    let res = app.delete(&format!("/v1/keys/{}", key_id(&admin)), &admin).await;
    assert_problem(res, 409, "conflict", None).await;
}

#[tokio::test]
async fn the_command_line_keeps_the_last_admin_key_too() {
    let app = spawn_app().await;
    let admin = app.key("acme", Role::Admin).await;
    let id = fluxbound::ids::KeyId::parse(&key_id(&admin)).unwrap();
    let err = app.service.keys_revoke_for_org("acme", &id).await.unwrap_err();
    assert!(err.to_string().contains("last admin key"), "{err}");
}

#[tokio::test]
async fn two_admins_revoking_each_other_at_once_leave_one_admin() {
    // Each round races two revocations; without the serialising check both
    // could see the other admin still active and both succeed.
    const ROUNDS: usize = 12;
    // A loser's 401s must not add up to the failed-authentication limit.
    let app = spawn_app_configured(TestDb::fresh().await, |c| c.clients.auth_failures = 0).await;
    for round in 0..ROUNDS {
        let org = format!("org{round}");
        let (a, b) = (app.key(&org, Role::Admin).await, app.key(&org, Role::Admin).await);
        let (path_a, path_b) = (format!("/v1/keys/{}", key_id(&a)), format!("/v1/keys/{}", key_id(&b)));
        let (ra, rb) = tokio::join!(app.delete(&path_b, &a), app.delete(&path_a, &b));
        let statuses = [ra.status().as_u16(), rb.status().as_u16()];
        // One wins (204); the other is refused as the last admin (409) or,
        // if its key was revoked before it authenticated, unknown (401).
        assert!(statuses.contains(&204), "round {round}: {statuses:?}");
        assert!(statuses.contains(&409) || statuses.contains(&401), "round {round}: {statuses:?}");
        let survivor = if ra.status() == 204 { &a } else { &b };
        assert_eq!(active_admins(&app, survivor).await, 1, "round {round}");
    }
}
