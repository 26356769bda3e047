//! `/v1/sites`: sites with immutable revisions and optimistic concurrency.

use super::json_response;
use crate::http::AppState;
use crate::http::extract::{ApiJson, Auth, PageQuery, etag, if_match, parse_id, parse_positive};
use crate::http::problem::ApiError;
use crate::http::resources::{SitePage, SiteResource, SiteSummary};
use crate::ids::SiteId;
use axum::extract::{Path, State};
use axum::http::{HeaderMap, StatusCode, Uri};
use axum::response::Response;
use fluxbound_core::site::wire::SiteDoc;

type ApiResult = Result<Response, ApiError>;

fn site_response(status: StatusCode, v: crate::service::SiteView, location: bool) -> Response {
    let (id, rev) = (v.row.site.id.clone(), v.row.revision);
    let body = SiteResource::from(v);
    json_response(status, &body, location.then(|| format!("/v1/sites/{id}")), Some(etag(rev)))
}

/// Create a site (revision 1).
#[utoipa::path(post, path = "/v1/sites", tag = "sites", request_body = SiteDoc,
    responses(
        (status = 201, description = "Created; `ETag` names the revision", body = SiteResource),
        (status = 403, description = "Needs the assessor role"),
        (status = 422, description = "Validation problems or size bounds, each with a JSON pointer"),
    ),
    security(("bearer" = [])))]
pub async fn sites_create(State(s): State<AppState>, Auth(caller): Auth, ApiJson(doc): ApiJson<SiteDoc>) -> ApiResult {
    let v = s.service.sites_create(&caller, doc).await?;
    Ok(site_response(StatusCode::CREATED, v, true))
}

/// List sites, newest last, with cursor pagination and a name filter.
#[utoipa::path(get, path = "/v1/sites", tag = "sites", params(PageQuery),
    responses(
        (status = 200, description = "A page of sites", body = SitePage),
    ),
    security(("bearer" = [])))]
pub async fn sites_list(State(s): State<AppState>, Auth(caller): Auth, uri: Uri) -> ApiResult {
    let q = PageQuery::from_uri(&uri)?;
    let (rows, next) = s.service.sites_list(&caller, q.cursor()?, q.limit()?, q.name.as_deref()).await?;
    let page = SitePage { items: rows.into_iter().map(SiteSummary::from).collect(), next_cursor: next };
    Ok(json_response(StatusCode::OK, &page, None, None))
}

/// Read a site's latest revision.
#[utoipa::path(get, path = "/v1/sites/{site_id}", tag = "sites", params(("site_id" = String, Path, description = "Site id")),
    responses(
        (status = 200, description = "The latest revision; `ETag` names it", body = SiteResource),
        (status = 404, description = "No such site in your organisation"),
    ),
    security(("bearer" = [])))]
pub async fn sites_show(State(s): State<AppState>, Auth(caller): Auth, Path(id): Path<String>) -> ApiResult {
    let id: SiteId = parse_id(&id, "site")?;
    Ok(site_response(StatusCode::OK, s.service.sites_show(&caller, &id).await?, false))
}

/// Replace a site's document, making a new immutable revision.
#[utoipa::path(put, path = "/v1/sites/{site_id}", tag = "sites", request_body = SiteDoc,
    params(("site_id" = String, Path, description = "Site id"),
           ("If-Match" = String, Header, description = "ETag of the revision being changed, e.g. \"3\"")),
    responses(
        (status = 200, description = "The new revision", body = SiteResource),
        (status = 403, description = "Needs the assessor role"),
        (status = 404, description = "No such site"),
        (status = 412, description = "If-Match names an older revision"),
        (status = 422, description = "Validation problems"),
        (status = 428, description = "If-Match missing"),
    ),
    security(("bearer" = [])))]
pub async fn sites_update(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path(id): Path<String>,
    headers: HeaderMap,
    ApiJson(doc): ApiJson<SiteDoc>,
) -> ApiResult {
    let id: SiteId = parse_id(&id, "site")?;
    let v = s.service.sites_update(&caller, &id, if_match(&headers), doc).await?;
    Ok(site_response(StatusCode::OK, v, false))
}

/// Read one revision of a site.
#[utoipa::path(get, path = "/v1/sites/{site_id}/revisions/{revision}", tag = "sites",
    params(("site_id" = String, Path, description = "Site id"), ("revision" = i64, Path, description = "Revision number")),
    responses(
        (status = 200, description = "That revision", body = SiteResource),
        (status = 404, description = "No such site or revision"),
    ),
    security(("bearer" = [])))]
pub async fn sites_revision(
    State(s): State<AppState>,
    Auth(caller): Auth,
    Path((id, rev)): Path<(String, String)>,
) -> ApiResult {
    let id: SiteId = parse_id(&id, "site")?;
    let rev = parse_positive(&rev, "revision")?;
    Ok(site_response(StatusCode::OK, s.service.sites_revision(&caller, &id, rev).await?, false))
}

/// Delete a site (soft: revisions used by assessments are kept).
#[utoipa::path(delete, path = "/v1/sites/{site_id}", tag = "sites", params(("site_id" = String, Path, description = "Site id")),
    responses(
        (status = 204, description = "Deleted"),
        (status = 403, description = "Needs the assessor role"),
        (status = 404, description = "No such site"),
    ),
    security(("bearer" = [])))]
pub async fn sites_delete(State(s): State<AppState>, Auth(caller): Auth, Path(id): Path<String>) -> ApiResult {
    let id: SiteId = parse_id(&id, "site")?;
    s.service.sites_delete(&caller, &id).await?;
    Ok(axum::response::IntoResponse::into_response(StatusCode::NO_CONTENT))
}
