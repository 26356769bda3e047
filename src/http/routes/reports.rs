//! Pictures and exports of a stored assessment.

use crate::http::AppState;
use crate::http::extract::{Auth, parse_id};
use crate::http::problem::ApiError;
use crate::ids::AssessmentId;
use axum::extract::{Path, State};
use axum::http::{HeaderValue, StatusCode, Uri, header};
use axum::response::{IntoResponse, Response};
use fluxbound_core::mitigate::DistanceResult;
use fluxbound_core::usecase::DistanceTo;

fn typed(body: String, content_type: &'static str) -> Response {
    let mut res = (StatusCode::OK, body).into_response();
    res.headers_mut().insert(header::CONTENT_TYPE, HeaderValue::from_static(content_type));
    res
}

/// Which table bands a map.
#[derive(Debug, serde::Deserialize, utoipa::IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct MapQuery {
    /// Band the cells by the exposure ratio to this table: one of the
    /// assessment's whole-body tables. Default: the first of them that
    /// covers every frequency of the site, else decades of µT.
    pub table: Option<String>,
}

/// Field map of one area as SVG (cells in fixed bands of the exposure
/// ratio to a table, or decades of µT without one; contours at each
/// table's level and review fraction, conductors, positions, cautions).
#[utoipa::path(get, path = "/v1/assessments/{assessment_id}/areas/{area_id}/map.svg", tag = "reports",
    params(("assessment_id" = String, Path, description = "Assessment id"), ("area_id" = String, Path, description = "Area id in the site"), MapQuery),
    responses(
        (status = 200, description = "SVG image", body = String, content_type = "image/svg+xml"),
        (status = 400, description = "An unknown query parameter"),
        (status = 404, description = "No such assessment or area"),
        (status = 422, description = "The map exceeds the compute budget (`budget-exceeded` at the area's `spacing_m` in the assessed site), or `table` cannot band it (pointer `/table`)"),
    ),
    extensions(("x-computes" = json!(true))),
    security(("bearer" = [])))]
pub async fn reports_map(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path((id, area)): Path<(String, String)>,
    uri: Uri,
) -> Result<Response, ApiError> {
    let id: AssessmentId = parse_id(&id, "assessment")?;
    let q: MapQuery = crate::http::extract::query_params(&uri)?;
    Ok(typed(s.service.reports_map_svg(&caller, &id, &area, q.table).await?, "image/svg+xml"))
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
        (status = 422, description = "The maps of the areas exceed the compute budget (`budget-exceeded`, pointing at the areas of the assessed site)"),
    ),
    extensions(("x-computes" = json!(true))),
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
    /// Level, µT RMS (resultant over all frequencies). Give this or `table`.
    #[param(value_type = Option<f64>)]
    pub level_ut: Option<String>,
    /// Table id: the distance to where its exposure ratio Σ_f B_f / B_RL(f)
    /// falls below 1 (the assessment's pinned version, else a built-in table,
    /// else the organisation's latest version). Give this or `level_ut`.
    pub table: Option<String>,
    /// `position:ID` (its highest-field height), `conductor:ID` (middle of its
    /// longest segment) or `point:x,y,z` (m).
    pub from: String,
    /// `shortest` (default: the smallest clearance over horizontal directions in
    /// 5° steps and straight up) or `x,y,z`.
    pub direction: Option<String>,
}

/// Along a ray from `from`: the first crossing (`distance_m`, the first point
/// where the field falls below the level or the table's exposure ratio below 1)
/// and the clearance (`clearance_m`, beyond which it stays below up to
/// `searched_to_m`). Both are proven, not sampled: over any stretch of the ray,
/// per frequency, a segment's field is at most 0.2·|I|/d µT and its rate of
/// change at most 0.4·|I|/d² µT/m (d the distance to the segment), so a narrow
/// null or a re-rise cannot be stepped over. `shortest` is the smallest
/// clearance over sampled directions: a distance along rays, not an exclusion
/// zone. Costs segment–point pairs against a budget (422 `budget-exceeded`).
#[utoipa::path(get, path = "/v1/assessments/{assessment_id}/distance", tag = "reports",
    params(("assessment_id" = String, Path, description = "Assessment id"), DistanceQuery),
    responses(
        (status = 200, description = "The distance and where", body = DistanceResult),
        (status = 404, description = "No such assessment"),
        (status = 400, description = "Neither level_ut nor table given, or a malformed query"),
        (status = 422, description = "Unknown position, conductor or table, bad level or direction, a table that does not cover the site's frequencies, or over the distance budget (`budget-exceeded`)"),
    ),
    extensions(("x-computes" = json!(true))),
    security(("bearer" = [])))]
pub async fn reports_distance(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
    uri: Uri,
) -> Result<Response, ApiError> {
    let id: AssessmentId = parse_id(&id, "assessment")?;
    let q: DistanceQuery = crate::http::extract::query_params(&uri)?;
    let to = match (q.level_ut, q.table) {
        (Some(level), None) => DistanceTo::LevelUt(level.parse().map_err(|_| {
            ApiError::validation(fluxbound_core::site::Problems::one("/level_ut", "level_ut must be a number (µT)"))
        })?),
        (None, Some(table)) => DistanceTo::Table(table),
        (Some(_), Some(_)) => {
            return Err(ApiError::validation(fluxbound_core::site::Problems::one(
                "/table",
                "give level_ut or table, not both",
            )));
        }
        (None, None) => {
            return Err(ApiError::bad_request("give level_ut (µT) or table (a table id)", Default::default()));
        }
    };
    let r = s.service.reports_distance(&caller, &id, &q.from, q.direction.as_deref(), to).await?;
    Ok(axum::Json(r).into_response())
}
