//! Reference-level tables: built-ins and the organisation's custom tables.

use super::json_response;
use crate::http::AppState;
use crate::http::extract::{ApiJson, Auth, parse_positive};
use crate::http::problem::ApiError;
use crate::http::resources::{TableList, TableResource};
use axum::extract::{Path, State};
use axum::http::StatusCode;
use axum::response::Response;
use fluxbound_core::limits::TableDoc;

type ApiResult = Result<Response, ApiError>;

fn table_response(status: StatusCode, v: crate::service::TableView, location: bool) -> Response {
    let body = TableResource::from(v);
    let loc = location.then(|| format!("/v1/tables/{}", body.id));
    json_response(status, &body, loc, None)
}

/// List built-in tables and the organisation's custom tables (latest versions).
#[utoipa::path(get, path = "/v1/tables", tag = "tables",
    responses((status = 200, description = "All tables", body = TableList)), security(("bearer" = [])))]
pub async fn tables_list(State(s): State<AppState>, Auth(caller): Auth) -> ApiResult {
    let items = s.service.tables_list(&caller).await?.into_iter().map(TableResource::from).collect();
    Ok(json_response(StatusCode::OK, &TableList { items }, None, None))
}

/// Create a custom table (version 1).
#[utoipa::path(post, path = "/v1/tables", tag = "tables", request_body = TableDoc,
    responses(
        (status = 201, description = "Created", body = TableResource),
        (status = 403, description = "Needs the assessor role"),
        (status = 409, description = "The id is taken (built-in or existing)"),
        (status = 422, description = "Validation problems"),
    ),
    security(("bearer" = [])))]
pub async fn tables_create(
    State(s): State<AppState>,
    Auth(caller): Auth,
    ApiJson(doc): ApiJson<TableDoc>,
) -> ApiResult {
    Ok(table_response(StatusCode::CREATED, s.service.tables_create(&caller, doc).await?, true))
}

/// Read a table (latest version) with the list of its versions.
#[utoipa::path(get, path = "/v1/tables/{table_id}", tag = "tables", params(("table_id" = String, Path, description = "Table id")),
    responses(
        (status = 200, description = "The table", body = TableResource),
        (status = 404, description = "No such table"),
    ),
    security(("bearer" = [])))]
pub async fn tables_show(State(s): State<AppState>, Auth(caller): Auth, Path(id): Path<String>) -> ApiResult {
    Ok(table_response(StatusCode::OK, s.service.tables_show(&caller, &id, None).await?, false))
}

/// Add a new version of a custom table.
#[utoipa::path(post, path = "/v1/tables/{table_id}/versions", tag = "tables", request_body = TableDoc,
    params(("table_id" = String, Path, description = "Table id")),
    responses(
        (status = 201, description = "The new latest version", body = TableResource),
        (status = 403, description = "Needs the assessor role"),
        (status = 404, description = "No such table"),
        (status = 409, description = "Built-in tables are read-only"),
        (status = 422, description = "Validation problems"),
    ),
    security(("bearer" = [])))]
pub async fn tables_version_add(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
    ApiJson(doc): ApiJson<TableDoc>,
) -> ApiResult {
    Ok(table_response(StatusCode::CREATED, s.service.tables_version_add(&caller, &id, doc).await?, false))
}

/// Read one version of a table.
#[utoipa::path(get, path = "/v1/tables/{table_id}/versions/{version}", tag = "tables",
    params(("table_id" = String, Path, description = "Table id"), ("version" = i64, Path, description = "Version")),
    responses(
        (status = 200, description = "That version", body = TableResource),
        (status = 404, description = "No such table or version"),
    ),
    security(("bearer" = [])))]
pub async fn tables_version_show(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path((id, v)): Path<(String, String)>,
) -> ApiResult {
    let v = parse_positive(&v, "version")?;
    Ok(table_response(StatusCode::OK, s.service.tables_show(&caller, &id, Some(v)).await?, false))
}

/// Replace a version that no assessment has used yet.
#[utoipa::path(put, path = "/v1/tables/{table_id}/versions/{version}", tag = "tables", request_body = TableDoc,
    params(("table_id" = String, Path, description = "Table id"), ("version" = i64, Path, description = "Version")),
    responses(
        (status = 200, description = "Replaced", body = TableResource),
        (status = 403, description = "Needs the assessor role"),
        (status = 404, description = "No such table or version"),
        (status = 409, description = "Used by an assessment (immutable) or built-in"),
        (status = 422, description = "Validation problems"),
    ),
    security(("bearer" = [])))]
pub async fn tables_version_replace(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path((id, v)): Path<(String, String)>,
    ApiJson(doc): ApiJson<TableDoc>,
) -> ApiResult {
    let v = parse_positive(&v, "version")?;
    Ok(table_response(StatusCode::OK, s.service.tables_version_replace(&caller, &id, v, doc).await?, false))
}
