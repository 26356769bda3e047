//! Surveys of a site: spot measurements reconciled with the model.

use super::json_response;
use crate::http::AppState;
use crate::http::extract::{ApiJson, Auth, PageQuery, parse_id};
use crate::http::problem::ApiError;
use crate::http::resources::{SurveyExtrapolation, SurveyPage, SurveyReconciliation, SurveyResource};
use crate::ids::{SiteId, SurveyId};
use axum::extract::{Path, State};
use axum::http::{StatusCode, Uri};
use axum::response::{IntoResponse, Response};
use fluxbound_core::assess::ReviewFraction;
use fluxbound_core::site::Problems;
use fluxbound_core::survey::wire::SurveyDoc;

/// Query parameters of the survey routes that judge extrapolated values.
#[derive(Debug, Default, serde::Deserialize, utoipa::IntoParams)]
#[into_params(parameter_in = Query)]
pub struct ReviewQuery {
    /// Ratio of a level from which an extrapolated value is `approaching`
    /// (a number, 0 < fraction < 1; default 0.5).
    #[param(value_type = Option<f64>, exclusive_minimum = 0, exclusive_maximum = 1)]
    pub review_fraction: Option<String>,
}

impl ReviewQuery {
    /// Reads the review fraction from the query string, if given; a bad
    /// value is 422 at `/review_fraction`.
    fn review_fraction(uri: &Uri) -> Result<Option<ReviewFraction>, ApiError> {
        let q = axum::extract::Query::<ReviewQuery>::try_from_uri(uri)
            .map_err(|e| ApiError::bad_request(e.body_text(), Problems::default()))?
            .0;
        match q.review_fraction {
            None => Ok(None),
            Some(text) => text.parse().map(Some).map_err(|e: fluxbound_core::assess::ReviewFractionError| {
                ApiError::validation(Problems::one("/review_fraction", e.to_string()))
            }),
        }
    }
}

/// Store a survey (latest or a given revision) and analyse it: reconciliation, load fit, extrapolation.
/// Measurements come as `points`, or as CSV text in `points_csv` with the header
/// `id,x_m,y_m,z_m,resultant_ut` and optionally `bx_ut,by_ut,bz_ut` (metres and µT RMS);
/// a bad row is reported at `/points_csv` with its line number and column.
#[utoipa::path(post, path = "/v1/sites/{site_id}/surveys", tag = "surveys", request_body = SurveyDoc,
    params(("site_id" = String, Path, description = "Site id"), ReviewQuery),
    responses(
        (status = 201, description = "Stored with its analysis", body = SurveyResource),
        (status = 403, description = "Needs the assessor role"),
        (status = 404, description = "No such site or revision"),
        (status = 422, description = "Validation problems (including CSV rows) or compute budget"),
    ),
    extensions(("x-computes" = json!(true))),
    security(("bearer" = [])))]
pub async fn surveys_create(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(site_id): Path<String>,
    uri: Uri,
    ApiJson(doc): ApiJson<SurveyDoc>,
) -> Result<Response, ApiError> {
    let site_id: SiteId = parse_id(&site_id, "site")?;
    let review_fraction = ReviewQuery::review_fraction(&uri)?.unwrap_or_default();
    let v = s.service.surveys_create(&caller, &site_id, doc, review_fraction).await?;
    let location = format!("/v1/surveys/{}", v.row.id);
    Ok(json_response(StatusCode::CREATED, &SurveyResource::from(v), Some(location), None))
}

/// List a site's surveys.
#[utoipa::path(get, path = "/v1/sites/{site_id}/surveys", tag = "surveys", params(("site_id" = String, Path, description = "Site id"), PageQuery),
    responses((status = 200, description = "A page of surveys", body = SurveyPage),
              (status = 404, description = "No such site")),
    security(("bearer" = [])))]
pub async fn surveys_list(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(site_id): Path<String>,
    uri: Uri,
) -> Result<Response, ApiError> {
    let site_id: SiteId = parse_id(&site_id, "site")?;
    let q = PageQuery::from_uri(&uri)?;
    let (items, next) = s.service.surveys_list(&caller, &site_id, q.cursor()?, q.limit()?).await?;
    Ok(json_response(
        StatusCode::OK,
        &SurveyPage { items: items.into_iter().map(SurveyResource::from).collect(), next_cursor: next },
        None,
        None,
    ))
}

/// Read a survey with its analysis.
#[utoipa::path(get, path = "/v1/surveys/{survey_id}", tag = "surveys", params(("survey_id" = String, Path, description = "Survey id")),
    responses((status = 200, description = "The survey", body = SurveyResource),
              (status = 404, description = "No such survey")),
    security(("bearer" = [])))]
pub async fn surveys_show(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
) -> Result<Response, ApiError> {
    let id: SurveyId = parse_id(&id, "survey")?;
    Ok(json_response(StatusCode::OK, &SurveyResource::from(s.service.surveys_show(&caller, &id).await?), None, None))
}

/// The reconciliation and load fit of a survey.
#[utoipa::path(get, path = "/v1/surveys/{survey_id}/reconciliation", tag = "surveys", params(("survey_id" = String, Path, description = "Survey id")),
    responses((status = 200, description = "The reconciliation and load fit, with the cautions", body = SurveyReconciliation),
              (status = 404, description = "No such survey")),
    security(("bearer" = [])))]
pub async fn surveys_reconciliation(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
) -> Result<Response, ApiError> {
    survey_part(&s, &caller, &id, |a| SurveyReconciliation {
        reconciliation: a.reconciliation,
        load_fit: a.load_fit,
        cautions: a.cautions,
        warnings: a.warnings,
    })
    .await
}

/// One part of a stored survey's analysis.
async fn survey_part<T: serde::Serialize>(
    s: &AppState,
    caller: &crate::service::Caller,
    id: &str,
    part: impl FnOnce(fluxbound_core::survey::SurveyAnalysis) -> T,
) -> Result<Response, ApiError> {
    let id: SurveyId = parse_id(id, "survey")?;
    let v = s.service.surveys_show(caller, &id).await?;
    Ok(axum::Json(part(v.analysis)).into_response())
}

/// Each measurement extrapolated to rated load and compared with the tables.
///
/// Verdicts are those of the stored analysis, or judged again at
/// `review_fraction` when given (the ratios do not change).
#[utoipa::path(get, path = "/v1/surveys/{survey_id}/extrapolation", tag = "surveys", params(("survey_id" = String, Path, description = "Survey id"), ReviewQuery),
    responses((status = 200, description = "The extrapolation (null when a circuit has no rated current), notes and cautions", body = SurveyExtrapolation),
              (status = 404, description = "No such survey"),
              (status = 422, description = "The review fraction is not a number between 0 and 1")),
    security(("bearer" = [])))]
pub async fn surveys_extrapolation(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
    uri: Uri,
) -> Result<Response, ApiError> {
    let review_fraction = ReviewQuery::review_fraction(&uri)?;
    survey_part(&s, &caller, &id, |mut a| {
        if let Some(f) = review_fraction {
            fluxbound_core::usecase::rejudge_extrapolation(&mut a, f);
        }
        SurveyExtrapolation {
            extrapolation: a.extrapolation,
            notes: a.notes,
            cautions: a.cautions,
            warnings: a.warnings,
        }
    })
    .await
}
