//! What-if searches on a site revision.

use super::json_response;
use crate::http::AppState;
use crate::http::extract::{ApiJson, Auth, parse_id, query_params};
use crate::http::problem::ApiError;
use crate::ids::SiteId;
use axum::extract::{Path, State};
use axum::http::{StatusCode, Uri};
use axum::response::Response;
use fluxbound_core::mitigate::phases::{PhaseSearch, PhaseSearchDoc};
use serde::Deserialize;

/// Which revision a what-if runs on.
#[derive(Debug, Deserialize, utoipa::IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct RevisionQuery {
    /// Site revision (default: the latest).
    #[param(minimum = 1)]
    pub revision: Option<i64>,
}

/// Rank the phase arrangements of chosen three-phase circuits by the
/// exposure they give at the site's positions and area grid nodes, with
/// the best one as a draft site revision (the body of a `PUT` of the site).
/// Only arrangements with distinct RMS fields are counted (6^(N−1) for N
/// circuits of one source); up to 46,656 every one is evaluated, beyond an
/// exact branch and bound that reports its optimality gap if the work
/// budget stops it. Areas are judged at grid nodes only: assess the saved
/// revision to confirm. Not stored.
#[utoipa::path(post, path = "/v1/sites/{site_id}/whatif/phases", tag = "what-if", request_body = PhaseSearchDoc,
    params(("site_id" = String, Path, description = "Site id"), RevisionQuery),
    responses(
        (status = 200, description = "Ranked arrangements, the as-built one, and the best as a draft revision", body = PhaseSearch),
        (status = 403, description = "Needs the assessor role"),
        (status = 404, description = "No such site or revision"),
        (status = 422, description = "Problems of the request (unknown or single-phase circuits, positions, areas, table, load case) or compute budget exceeded"),
    ),
    extensions(("x-computes" = json!(true))),
    security(("bearer" = [])))]
pub async fn whatif_phases(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(site_id): Path<String>,
    uri: Uri,
    ApiJson(req): ApiJson<PhaseSearchDoc>,
) -> Result<Response, ApiError> {
    let site_id: SiteId = parse_id(&site_id, "site")?;
    let q: RevisionQuery = query_params(&uri)?;
    let result = s.service.whatif_phases(&caller, &site_id, q.revision, req).await?;
    Ok(json_response(StatusCode::OK, &result, None, None))
}
