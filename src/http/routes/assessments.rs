//! Assessments of a site revision.

use super::json_text_response;
use crate::http::AppState;
use crate::http::extract::{ApiJson, Auth, PageQuery, parse_id};
use crate::http::problem::ApiError;
use crate::http::resources::{AssessmentPage, AssessmentResource, assessment_json, assessment_page_json};
use crate::ids::{AssessmentId, SiteId};
use crate::service::AssessmentRequest;
use axum::extract::{Path, State};
use axum::http::{StatusCode, Uri};
use axum::response::Response;

/// Assess a site (latest or a given revision) and store the result.
#[utoipa::path(post, path = "/v1/sites/{site_id}/assessments", tag = "assessments", request_body = AssessmentRequest,
    params(("site_id" = String, Path, description = "Site id")),
    responses(
        (status = 201, description = "Assessed and stored, pinned to the site revision and table versions", body = AssessmentResource),
        (status = 403, description = "Needs the assessor role"),
        (status = 404, description = "No such site or revision"),
        (status = 409, description = "A custom table changed while assessing; retry"),
        (status = 422, description = "Problems (unknown tables, load case, options) or compute budget exceeded"),
    ),
    extensions(("x-computes" = json!(true))),
    security(("bearer" = [])))]
pub async fn assessments_create(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(site_id): Path<String>,
    ApiJson(req): ApiJson<AssessmentRequest>,
) -> Result<Response, ApiError> {
    let site_id: SiteId = parse_id(&site_id, "site")?;
    let v = s.service.assessments_create(&caller, &site_id, req).await?;
    let location = format!("/v1/assessments/{}", v.row.id);
    Ok(json_text_response(StatusCode::CREATED, assessment_json(&v), Some(location), None))
}

/// List a site's assessments, oldest first.
#[utoipa::path(get, path = "/v1/sites/{site_id}/assessments", tag = "assessments",
    params(("site_id" = String, Path, description = "Site id"), PageQuery),
    responses(
        (status = 200, description = "A page of assessments", body = AssessmentPage),
        (status = 404, description = "No such site"),
    ),
    security(("bearer" = [])))]
pub async fn assessments_list(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(site_id): Path<String>,
    uri: Uri,
) -> Result<Response, ApiError> {
    let site_id: SiteId = parse_id(&site_id, "site")?;
    let q = PageQuery::from_uri(&uri)?;
    let (items, next) = s.service.assessments_list(&caller, &site_id, q.cursor()?, q.limit()?).await?;
    Ok(json_text_response(StatusCode::OK, assessment_page_json(&items, next.as_deref()), None, None))
}

/// Read a stored assessment.
#[utoipa::path(get, path = "/v1/assessments/{assessment_id}", tag = "assessments",
    params(("assessment_id" = String, Path, description = "Assessment id")),
    responses(
        (status = 200, description = "The assessment", body = AssessmentResource),
        (status = 404, description = "No such assessment in your organisation"),
    ),
    security(("bearer" = [])))]
pub async fn assessments_show(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
) -> Result<Response, ApiError> {
    let id: AssessmentId = parse_id(&id, "assessment")?;
    let v = s.service.assessments_show(&caller, &id).await?;
    Ok(json_text_response(StatusCode::OK, assessment_json(&v), None, None))
}
