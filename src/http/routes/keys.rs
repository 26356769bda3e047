//! API keys of the caller's organisation (admin role).

use super::json_response;
use crate::http::AppState;
use crate::http::extract::{ApiJson, Auth, parse_id};
use crate::http::problem::ApiError;
use crate::http::resources::{KeyCreate, KeyCreated, KeyList, KeyResource};
use crate::ids::KeyId;
use crate::service::Role;
use axum::extract::{Path, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Response};
use fluxbound_core::site::Problems;

/// List keys (never secrets).
#[utoipa::path(get, path = "/v1/keys", tag = "keys",
    responses((status = 200, description = "Keys", body = KeyList),
              (status = 403, description = "Needs the admin role")),
    security(("bearer" = [])))]
pub async fn keys_list(State(s): State<AppState>, Auth(caller): Auth) -> Result<Response, ApiError> {
    let items = s.service.keys_list(&caller).await?.into_iter().map(KeyResource::from).collect();
    Ok(json_response(StatusCode::OK, &KeyList { items }, None, None))
}

/// Create a key; its secret is in this answer only.
#[utoipa::path(post, path = "/v1/keys", tag = "keys", request_body = KeyCreate,
    responses((status = 201, description = "Created", body = KeyCreated),
              (status = 403, description = "Needs the admin role"),
              (status = 422, description = "Unknown role")),
    security(("bearer" = [])))]
pub async fn keys_create(
    State(s): State<AppState>,
    Auth(caller): Auth,
    ApiJson(req): ApiJson<KeyCreate>,
) -> Result<Response, ApiError> {
    let role = Role::parse(&req.role)
        .ok_or_else(|| ApiError::validation(Problems::one("/role", "role must be viewer, assessor or admin")))?;
    let (row, secret) = s.service.keys_create(&caller, role, req.label.as_deref()).await?;
    let body = KeyCreated { key: KeyResource::from(row), secret };
    Ok(json_response(StatusCode::CREATED, &body, None, None))
}

/// Revoke a key. The organisation's last active admin key is kept, so that
/// someone can still manage keys.
#[utoipa::path(delete, path = "/v1/keys/{key_id}", tag = "keys", params(("key_id" = String, Path, description = "Key id")),
    responses((status = 204, description = "Revoked (or it already was)"),
              (status = 403, description = "Needs the admin role"),
              (status = 404, description = "No such key"),
              (status = 409, description = "The organisation's last active admin key cannot be revoked: create another admin key first")),
    security(("bearer" = [])))]
pub async fn keys_revoke(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
) -> Result<Response, ApiError> {
    let id: KeyId = parse_id(&id, "key")?;
    s.service.keys_revoke(&caller, &id).await?;
    Ok(StatusCode::NO_CONTENT.into_response())
}
