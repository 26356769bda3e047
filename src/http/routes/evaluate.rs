//! `POST /v1/evaluate`: the stateless document of `fluxbound evaluate`.

use super::json_text_response;
use crate::http::AppState;
use crate::http::extract::{ApiJson, Auth};
use crate::http::problem::ApiError;
use axum::extract::State;
use axum::http::StatusCode;
use axum::response::Response;
use fluxbound_core::evaluate::{EvaluateAnswer, EvaluateRequest, write_compact};

/// Field of conductors at points (same JSON as the CLI's `evaluate`).
///
/// One object per point by default; with `output.columns`, one array per
/// column. The answer is written once, straight from the computed phasors
/// into the response's bytes (no intermediate value per point).
#[utoipa::path(post, path = "/v1/evaluate", tag = "evaluate", request_body = EvaluateRequest,
    responses(
        (status = 200, description = "Field at every point, in input order, with the cautions: one object per point (`EvaluateResponse`), or one array per column when `output.columns` is given (`EvaluateColumnsResponse`)", body = EvaluateAnswer),
        (status = 422, description = "Validation problems (an unknown column at `/output/columns/<i>`), or the compute budget (segment-point pairs) is exceeded"),
    ),
    extensions(("x-computes" = json!(true))),
    security(("bearer" = [])))]
pub async fn evaluate(
    State(s): State<AppState>,
    Auth(caller): Auth,
    ApiJson(req): ApiJson<EvaluateRequest>,
) -> Result<Response, ApiError> {
    // About 400 bytes per point in the per-point form (one frequency), 24
    // per value in a column, plus the cautions and warnings: sized so that
    // a usual answer is written without regrowing; never more than 8 MiB
    // up front.
    let per_point = match req.output.as_ref().and_then(|o| o.columns.as_ref()) {
        Some(columns) => 24 * columns.len(),
        None => 512,
    };
    let capacity = (16 * 1024 + per_point * req.points.len()).min(8 << 20);
    let out = s.service.evaluate(&caller, req).await?;
    let mut body = Vec::with_capacity(capacity);
    write_compact(&mut body, &out)
        .map_err(|e| ApiError::from(crate::service::ServiceError::Internal(e.to_string())))?;
    Ok(json_text_response(StatusCode::OK, body, None, None))
}
