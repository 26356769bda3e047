//! What-if answers on a site revision, stored when asked.

use super::json_response;
use crate::http::AppState;
use crate::http::extract::{ApiJson, Auth, parse_id, query_params};
use crate::http::problem::ApiError;
use crate::http::resources::WhatIfResource;
use crate::ids::{SiteId, WhatIfId};
use crate::service::{WhatIfAnswer, WhatIfOn};
use axum::extract::{Path, State};
use axum::http::{StatusCode, Uri};
use axum::response::Response;
use fluxbound_core::mitigate::loops::{LoopDoc, LoopResult};
use fluxbound_core::mitigate::moves::{MoveDoc, MoveResult};
use fluxbound_core::mitigate::phases::{PhaseSearch, PhaseSearchDoc};
use fluxbound_core::mitigate::scenarios::{ScenarioResults, ScenariosDoc};
use serde::{Deserialize, Serialize};

/// Which revision a what-if runs on, and whether its result is stored.
#[derive(Debug, Deserialize, utoipa::IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct WhatIfQuery {
    /// Site revision (default: the latest).
    #[param(minimum = 1)]
    pub revision: Option<i64>,
    /// Store the result with its request (default false): the answer is
    /// then `201` with `Location: /v1/whatif-results/{id}`.
    pub store: Option<bool>,
}

/// The answer: `200` with the result, or `201` with its location when stored.
fn answer<T: Serialize>(a: &WhatIfAnswer<T>) -> Response {
    match &a.stored {
        Some(row) => {
            json_response(StatusCode::CREATED, &a.result, Some(format!("/v1/whatif-results/{}", row.id)), None)
        }
        None => json_response(StatusCode::OK, &a.result, None, None),
    }
}

fn on(site_id: &str, uri: &Uri) -> Result<(SiteId, WhatIfOn), ApiError> {
    let site_id: SiteId = parse_id(site_id, "site")?;
    let q: WhatIfQuery = query_params(uri)?;
    Ok((site_id, WhatIfOn { revision: q.revision, store: q.store.unwrap_or(false) }))
}

/// Rank the phase arrangements of chosen three-phase circuits by the
/// exposure they give at the site's positions and area grid nodes, with
/// the best one as a draft site revision (the body of a `PUT` of the site).
/// Only arrangements with distinct RMS fields are counted (6^(N−1) for N
/// circuits of one source); up to 46,656 every one is evaluated, beyond an
/// exact branch and bound that reports its optimality gap if the work
/// budget stops it. Areas are judged at grid nodes only: assess the saved
/// revision to confirm.
#[utoipa::path(post, path = "/v1/sites/{site_id}/whatif/phases", tag = "what-if", request_body = PhaseSearchDoc,
    params(("site_id" = String, Path, description = "Site id"), WhatIfQuery),
    responses(
        (status = 200, description = "Ranked arrangements, the as-built one, and the best as a draft revision", body = PhaseSearch),
        (status = 201, description = "The same, stored (see Location)", body = PhaseSearch),
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
    let (site_id, on) = on(&site_id, &uri)?;
    Ok(answer(&s.service.whatif_phases(&caller, &site_id, on, req).await?))
}

/// Judge a batch of named load cases in one geometry pass, with generated
/// N-1 cases for circuits that share one load (`load_group`): per scenario
/// the worst position and area, and the worst scenario overall. Areas are
/// judged at grid nodes only: assess the worst scenario's load to confirm.
#[utoipa::path(post, path = "/v1/sites/{site_id}/whatif/scenarios", tag = "what-if", request_body = ScenariosDoc,
    params(("site_id" = String, Path, description = "Site id"), WhatIfQuery),
    responses(
        (status = 200, description = "Every scenario's targets and worst, and the worst scenario", body = ScenarioResults),
        (status = 201, description = "The same, stored (see Location)", body = ScenarioResults),
        (status = 403, description = "Needs the assessor role"),
        (status = 404, description = "No such site or revision"),
        (status = 422, description = "Problems of the request (scenario names and loads, N-1 without load groups, targets, table) or compute budget exceeded"),
    ),
    extensions(("x-computes" = json!(true))),
    security(("bearer" = [])))]
pub async fn whatif_scenarios(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(site_id): Path<String>,
    uri: Uri,
    ApiJson(req): ApiJson<ScenariosDoc>,
) -> Result<Response, ApiError> {
    let (site_id, on) = on(&site_id, &uri)?;
    Ok(answer(&s.service.whatif_scenarios(&caller, &site_id, on, req).await?))
}

/// Move conductors (by id or whole circuits) or positions by `by_m`, in
/// `steps` from no move to the full one: the worst value at every step and
/// the smallest computed move that brings every target under the level,
/// with the site so moved as a draft revision.
#[utoipa::path(post, path = "/v1/sites/{site_id}/whatif/move", tag = "what-if", request_body = MoveDoc,
    params(("site_id" = String, Path, description = "Site id"), WhatIfQuery),
    responses(
        (status = 200, description = "Every step, the smallest move under the level and its draft revision", body = MoveResult),
        (status = 201, description = "The same, stored (see Location)", body = MoveResult),
        (status = 403, description = "Needs the assessor role"),
        (status = 404, description = "No such site or revision"),
        (status = 422, description = "Problems of the request (what moves, the move, steps, level, targets, table) or compute budget exceeded"),
    ),
    extensions(("x-computes" = json!(true))),
    security(("bearer" = [])))]
pub async fn whatif_move(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(site_id): Path<String>,
    uri: Uri,
    ApiJson(req): ApiJson<MoveDoc>,
) -> Result<Response, ApiError> {
    let (site_id, on) = on(&site_id, &uri)?;
    Ok(answer(&s.service.whatif_move(&caller, &site_id, on, req).await?))
}

/// Add a closed passive loop of round wire: its induced current on every
/// spectral line from the mutual inductances to the site's conductors and
/// its self-inductance, and each target's field without and with it.
#[utoipa::path(post, path = "/v1/sites/{site_id}/whatif/loop", tag = "what-if", request_body = LoopDoc,
    params(("site_id" = String, Path, description = "Site id"), WhatIfQuery),
    responses(
        (status = 200, description = "The loop current per line and the field without and with the loop", body = LoopResult),
        (status = 201, description = "The same, stored (see Location)", body = LoopResult),
        (status = 403, description = "Needs the assessor role"),
        (status = 404, description = "No such site or revision"),
        (status = 422, description = "Problems of the loop (path, wire, resistance, too close to a conductor), targets or table, or compute budget exceeded"),
    ),
    extensions(("x-computes" = json!(true))),
    security(("bearer" = [])))]
pub async fn whatif_loop(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(site_id): Path<String>,
    uri: Uri,
    ApiJson(req): ApiJson<LoopDoc>,
) -> Result<Response, ApiError> {
    let (site_id, on) = on(&site_id, &uri)?;
    Ok(answer(&s.service.whatif_loop(&caller, &site_id, on, req).await?))
}

/// Read a stored what-if result with its request.
#[utoipa::path(get, path = "/v1/whatif-results/{whatif_id}", tag = "what-if",
    params(("whatif_id" = String, Path, description = "What-if result id")),
    responses((status = 200, description = "The stored result", body = WhatIfResource),
              (status = 404, description = "No such result")),
    security(("bearer" = [])))]
pub async fn whatif_show(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
) -> Result<Response, ApiError> {
    let id: WhatIfId = parse_id(&id, "what-if result")?;
    let row = s.service.whatif_show(&caller, &id).await?;
    Ok(json_response(StatusCode::OK, &WhatIfResource::try_from(row)?, None, None))
}
