//! `/v1/sites/import`, `/v1/sites/{id}/import` and `/v1/sites/{id}/export.*`:
//! sites from GeoJSON, DXF and CSV files, and sites as GeoJSON and DXF.
//!
//! An import is one JSON document: the file's text in `file_text`, its
//! `format`, and the optional `mapping` (layers to circuits and phases,
//! circuits, units, origin, rotation, defaults). JSON rather than a
//! multipart form so that the mapping is checked with pointers like every
//! other document, and the body limit applies to the whole. DXF is read
//! as ASCII text through this route (the command line also reads binary
//! DXF).

use super::json_response;
use crate::http::AppState;
use crate::http::extract::{ApiJson, Auth, etag, if_match, parse_id};
use crate::http::problem::ApiError;
use crate::http::resources::SiteResource;
use crate::ids::SiteId;
use crate::service::{ExportFormat, ImportFile, ImportedView};
use axum::extract::{Path, State};
use axum::http::{HeaderMap, HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};
use fluxbound_core::site::exchange::{Format, MappingDoc, Skipped};
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

type ApiResult = Result<Response, ApiError>;

/// A file to import as a site.
#[derive(Debug, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct SiteImportRequest {
    /// The file's format: `geojson` (RFC 7946), `dxf` (ASCII) or `csv`
    /// (route vertices: conductor_id, seq, x_m, y_m, z_m and optionally
    /// circuit, phase, radius_m, share).
    pub format: Format,
    /// How the file becomes a site (required for DXF layers; optional
    /// otherwise).
    #[serde(default)]
    pub mapping: Option<MappingDoc>,
    /// The file's text.
    pub file_text: String,
}

/// The site made from a file, and what the file held that it does not.
#[derive(Debug, Serialize, ToSchema)]
pub struct SiteImportResource {
    pub site: SiteResource,
    /// Every feature, entity or row left out, with where and why.
    pub skipped: Vec<Skipped>,
    /// Every assumption made (a default taken from the mapping).
    pub notes: Vec<String>,
}

fn into_file(r: SiteImportRequest) -> ImportFile {
    ImportFile { format: r.format, mapping: r.mapping.unwrap_or_default(), content: r.file_text }
}

fn imported_response(status: StatusCode, v: ImportedView, location: bool) -> Response {
    let (id, rev) = (v.view.row.site.id.clone(), v.view.row.revision);
    let body = SiteImportResource { site: SiteResource::from(v.view), skipped: v.skipped, notes: v.notes };
    json_response(status, &body, location.then(|| format!("/v1/sites/{id}")), Some(etag(rev)))
}

/// Create a site (revision 1) from a GeoJSON, DXF or CSV file.
#[utoipa::path(post, path = "/v1/sites/import", tag = "sites", request_body = SiteImportRequest,
    responses(
        (status = 201, description = "Created; `ETag` names the revision; `skipped` lists what was left out", body = SiteImportResource),
        (status = 403, description = "Needs the assessor role"),
        (status = 422, description = "The file (`/file_text`, with the place inside it in the detail), the mapping (`/mapping/…`) or the site made from them has problems"),
    ),
    security(("bearer" = [])))]
pub async fn sites_import(
    State(s): State<AppState>,
    Auth(caller): Auth,
    ApiJson(req): ApiJson<SiteImportRequest>,
) -> ApiResult {
    let v = s.service.sites_import(&caller, into_file(req)).await?;
    Ok(imported_response(StatusCode::CREATED, v, true))
}

/// Replace a site's document with one made from a file (a new revision).
#[utoipa::path(post, path = "/v1/sites/{site_id}/import", tag = "sites", request_body = SiteImportRequest,
    params(("site_id" = String, Path, description = "Site id"),
           ("If-Match" = String, Header, description = "ETag of the revision being changed, e.g. \"3\"")),
    responses(
        (status = 200, description = "The new revision; `skipped` lists what was left out", body = SiteImportResource),
        (status = 403, description = "Needs the assessor role"),
        (status = 404, description = "No such site"),
        (status = 412, description = "If-Match names an older revision"),
        (status = 422, description = "The file, the mapping or the site made from them has problems"),
        (status = 428, description = "If-Match missing"),
    ),
    security(("bearer" = [])))]
pub async fn sites_import_revision(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
    headers: HeaderMap,
    ApiJson(req): ApiJson<SiteImportRequest>,
) -> ApiResult {
    let id: SiteId = parse_id(&id, "site")?;
    let v = s.service.sites_import_revision(&caller, &id, if_match(&headers), into_file(req)).await?;
    Ok(imported_response(StatusCode::OK, v, false))
}

fn file_response(rev: i64, body: Vec<u8>, content_type: &'static str) -> Response {
    let mut res = (StatusCode::OK, body).into_response();
    res.headers_mut().insert(header::CONTENT_TYPE, HeaderValue::from_static(content_type));
    if let Ok(e) = HeaderValue::from_str(&etag(rev)) {
        res.headers_mut().insert(header::ETAG, e);
    }
    res
}

/// The latest revision's conductors, positions and areas as GeoJSON (the
/// site itself, not an assessment: see `/v1/assessments/{id}/features.geojson`
/// for results). Longitude/latitude with a georeference, else local metres;
/// `POST /v1/sites/import` reads it back.
#[utoipa::path(get, path = "/v1/sites/{site_id}/export.geojson", tag = "sites",
    params(("site_id" = String, Path, description = "Site id")),
    responses(
        (status = 200, description = "GeoJSON FeatureCollection; `ETag` names the revision", body = Object, content_type = "application/geo+json"),
        (status = 404, description = "No such site"),
    ),
    security(("bearer" = [])))]
pub async fn sites_export_geojson(State(s): State<AppState>, Auth(caller): Auth, Path(id): Path<String>) -> ApiResult {
    let id: SiteId = parse_id(&id, "site")?;
    let (rev, body) = s.service.sites_export(&caller, &id, ExportFormat::Geojson).await?;
    Ok(file_response(rev, body, "application/geo+json"))
}

/// The latest revision's conductors (3-D polylines), positions (points) and
/// areas (closed polylines) as an ASCII DXF drawing in metres, one layer per
/// item (`c-`, `p-`, `a-` and its id).
#[utoipa::path(get, path = "/v1/sites/{site_id}/export.dxf", tag = "sites",
    params(("site_id" = String, Path, description = "Site id")),
    responses(
        (status = 200, description = "DXF drawing (R2013, ASCII); `ETag` names the revision", body = String, content_type = "image/vnd.dxf"),
        (status = 404, description = "No such site"),
    ),
    security(("bearer" = [])))]
pub async fn sites_export_dxf(State(s): State<AppState>, Auth(caller): Auth, Path(id): Path<String>) -> ApiResult {
    let id: SiteId = parse_id(&id, "site")?;
    let (rev, body) = s.service.sites_export(&caller, &id, ExportFormat::Dxf).await?;
    Ok(file_response(rev, body, "image/vnd.dxf"))
}
