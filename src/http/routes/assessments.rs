//! Assessments of a site revision.

use super::json_text_response;
use crate::http::AppState;
use crate::http::extract::{ApiJson, Auth, PageQuery, parse_id, query_params};
use crate::http::problem::ApiError;
use crate::http::resources::{AssessmentPage, AssessmentResource, assessment_json, assessment_page_json};
use crate::ids::{AssessmentId, SiteId};
use crate::service::AssessmentRequest;
use axum::extract::{Path, State};
use axum::http::{StatusCode, Uri};
use axum::response::Response;
use fluxbound_core::mitigate::compare::Comparison;
use fluxbound_core::site::Problems;
use serde::Deserialize;

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

/// Which assessment to compare with.
#[derive(Debug, Deserialize, utoipa::IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct ComparisonQuery {
    /// Id of the assessment to compare with: the `after` side, so every
    /// change is it minus the assessment in the path.
    #[param(required = true, pattern = "^[0-9a-f]{32}$")]
    pub with: Option<String>,
}

impl ComparisonQuery {
    /// The id in `with`, or a 422 pointing at `/with` in plain words.
    fn with_id(&self) -> Result<AssessmentId, ApiError> {
        let problem = |detail: String| ApiError::validation(Problems::one("/with", detail));
        let with = self.with.as_deref().ok_or_else(|| {
            problem("give the id of the assessment to compare with: ?with=<assessment id>".to_string())
        })?;
        crate::ids::ResourceId::parse(with)
            .ok_or_else(|| problem(format!("'{with}' is not an assessment id: ids are 32 lowercase hex digits")))
    }
}

/// Two stored assessments side by side (two revisions, two load cases, or
/// a what-if result against the as-built): per position and area, matched
/// by id, each side's highest B, its ratio per table both used, its
/// verdict, and the change (`with` minus this one); positions and areas of
/// one side only are listed apart, and the notes say what else differs.
/// Read from the stored results, not recomputed.
#[utoipa::path(get, path = "/v1/assessments/{assessment_id}/comparison", tag = "what-if",
    params(("assessment_id" = String, Path, description = "Assessment id (the `before` side)"), ComparisonQuery),
    responses(
        (status = 200, description = "The comparison", body = Comparison),
        (status = 400, description = "A malformed assessment id in the path or an unknown query parameter"),
        (status = 404, description = "Either assessment is not in your organisation"),
        (status = 422, description = "`with` is missing or not an assessment id (pointer `/with`)"),
    ),
    security(("bearer" = [])))]
pub async fn assessments_compare(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
    uri: Uri,
) -> Result<Response, ApiError> {
    let id: AssessmentId = parse_id(&id, "assessment")?;
    let q: ComparisonQuery = query_params(&uri)?;
    let with = q.with_id()?;
    let c = s.service.assessments_compare(&caller, &id, &with).await?;
    Ok(super::json_response(StatusCode::OK, &c, None, None))
}
