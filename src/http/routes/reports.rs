//! Pictures and exports of a stored assessment.

use crate::http::AppState;
use crate::http::extract::{Auth, parse_id};
use crate::http::problem::ApiError;
use crate::ids::AssessmentId;
use axum::extract::{Path, State};
use axum::http::{HeaderValue, StatusCode, Uri, header};
use axum::response::{IntoResponse, Response};
use fluxbound_core::mitigate::DistanceResult;

fn typed(body: String, content_type: &'static str) -> Response {
    let mut res = (StatusCode::OK, body).into_response();
    res.headers_mut().insert(header::CONTENT_TYPE, HeaderValue::from_static(content_type));
    res
}

/// Field map of one area as SVG (log colour scale, contours at each table's
/// level and review fraction, conductors, positions, cautions).
#[utoipa::path(get, path = "/v1/assessments/{assessment_id}/areas/{area_id}/map.svg", tag = "reports",
    params(("assessment_id" = String, Path, description = "Assessment id"), ("area_id" = String, Path, description = "Area id in the site")),
    responses(
        (status = 200, description = "SVG image", body = String, content_type = "image/svg+xml"),
        (status = 404, description = "No such assessment or area"),
    ),
    security(("bearer" = [])))]
pub async fn reports_map(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path((id, area)): Path<(String, String)>,
) -> Result<Response, ApiError> {
    let id: AssessmentId = parse_id(&id, "assessment")?;
    Ok(typed(s.service.reports_map_svg(&caller, &id, &area).await?, "image/svg+xml"))
}

/// Position results as CSV: one row per position, height and table; units in the headers
/// (site, load_case, position_id, body_region, group, height_m, x_m, y_m, z_m, resultant_ut,
/// maximum_ut, table_id, table_version, level_ut, ratio, verdict).
#[utoipa::path(get, path = "/v1/assessments/{assessment_id}/positions.csv", tag = "reports",
    params(("assessment_id" = String, Path, description = "Assessment id")),
    responses(
        (status = 200, description = "CSV (RFC 4180)", body = String, content_type = "text/csv"),
        (status = 404, description = "No such assessment"),
    ),
    security(("bearer" = [])))]
pub async fn reports_csv(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
) -> Result<Response, ApiError> {
    let id: AssessmentId = parse_id(&id, "assessment")?;
    Ok(typed(s.service.reports_csv(&caller, &id).await?, "text/csv; charset=utf-8"))
}

/// Conductors, positions, contour lines and zone polygons as GeoJSON (RFC 7946):
/// WGS 84 longitude/latitude when the site has a georeference, else the site's
/// local frame in metres (stated in `coordinate_frame`).
#[utoipa::path(get, path = "/v1/assessments/{assessment_id}/features.geojson", tag = "reports",
    params(("assessment_id" = String, Path, description = "Assessment id")),
    responses(
        (status = 200, description = "GeoJSON FeatureCollection", body = Object, content_type = "application/geo+json"),
        (status = 404, description = "No such assessment"),
    ),
    security(("bearer" = [])))]
pub async fn reports_geojson(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
) -> Result<Response, ApiError> {
    let id: AssessmentId = parse_id(&id, "assessment")?;
    let doc = s.service.reports_geojson(&caller, &id).await?;
    Ok(typed(serde_json::to_string(&doc).unwrap_or_default(), "application/geo+json"))
}

#[derive(Debug, serde::Deserialize, utoipa::IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct DistanceQuery {
    /// Level, µT RMS (resultant).
    #[param(value_type = f64)]
    pub level_ut: String,
    /// `position:ID`, `conductor:ID` (middle of its longest segment) or `point:x,y,z` (m).
    pub from: String,
    /// `shortest` (default: horizontal directions in 5° steps and vertical) or `x,y,z`.
    pub direction: Option<String>,
}

/// Distance at which the resultant field first falls below a level, by
/// bracketing and bisection on the exact field (tolerance 0.1 mm).
#[utoipa::path(get, path = "/v1/assessments/{assessment_id}/distance", tag = "reports",
    params(("assessment_id" = String, Path, description = "Assessment id"), DistanceQuery),
    responses(
        (status = 200, description = "The distance and where", body = DistanceResult),
        (status = 404, description = "No such assessment"),
        (status = 422, description = "Unknown position or conductor, bad level or direction"),
    ),
    security(("bearer" = [])))]
pub async fn reports_distance(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
    uri: Uri,
) -> Result<Response, ApiError> {
    let id: AssessmentId = parse_id(&id, "assessment")?;
    let q = axum::extract::Query::<DistanceQuery>::try_from_uri(&uri)
        .map_err(|e| ApiError::bad_request(e.body_text(), Default::default()))?
        .0;
    let level: f64 = q.level_ut.parse().map_err(|_| {
        ApiError::validation(fluxbound_core::site::Problems::one("/level_ut", "level_ut must be a number (µT)"))
    })?;
    let r = s.service.reports_distance(&caller, &id, &q.from, q.direction.as_deref(), level).await?;
    Ok(axum::Json(r).into_response())
}
