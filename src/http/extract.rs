//! Request extractors that answer problem+json on every failure.

use super::AppState;
use super::client::PeerAddr;
use super::problem::ApiError;
use super::rate::ClientKey;
use crate::service::{Caller, IfMatch, ServiceError};
use axum::body::Bytes;
use axum::extract::rejection::RawPathParamsRejection;
use axum::extract::{FromRequest, FromRequestParts, RawPathParams, Request};
use axum::http::{StatusCode, header, request::Parts};
use axum::middleware::Next;
use axum::response::{IntoResponse, Response};
use fluxbound_core::site::{Pointer, Problems, Unreadable, read_json};
use fluxbound_core::text::single_line_problem;
use serde::de::DeserializeOwned;
use std::borrow::Cow;

/// A JSON body parsed strictly: 415 without a JSON content type, 413 over
/// the size bound, 400 for malformed JSON, 422 with a pointer for a shape
/// error (wrong type, unknown or missing field), a key given twice in one
/// object or a NUL character in a text. Every message is in plain words
/// (the core's `parse_json`), never serde's Rust type names.
pub struct ApiJson<T>(pub T);

impl<T: DeserializeOwned> FromRequest<AppState> for ApiJson<T> {
    type Rejection = ApiError;

    async fn from_request(req: Request, state: &AppState) -> Result<Self, ApiError> {
        let json_type = req
            .headers()
            .get(header::CONTENT_TYPE)
            .and_then(|v| v.to_str().ok())
            .map(|v| v.split(';').next().unwrap_or("").trim().to_ascii_lowercase())
            .is_some_and(|m| m == "application/json" || (m.starts_with("application/") && m.ends_with("+json")));
        if !json_type {
            return Err(ApiError::unsupported_media_type());
        }
        let bytes = Bytes::from_request(req, state).await.map_err(|r| {
            if r.status() == StatusCode::PAYLOAD_TOO_LARGE {
                ApiError::too_large(state.service.limits().body_bytes)
            } else {
                ApiError::malformed_json("the body could not be read")
            }
        })?;
        let text = std::str::from_utf8(&bytes).map_err(|_| ApiError::malformed_json("the body is not UTF-8"))?;
        read_json(text).map(ApiJson).map_err(|e| match e {
            Unreadable::Malformed(why) => ApiError::malformed_json(why),
            Unreadable::Invalid(problems) => ApiError::validation(problems),
        })
    }
}

/// The authenticated caller. Before the key is looked at, the client's
/// address must not be at its limit of failed authentications (429); a key
/// that is given and refused counts as one more failure (a request with no
/// `Authorization` header is not a guess, so it does not count). A caller
/// is then also rate-limited per key.
pub struct Auth(pub Caller);

impl FromRequestParts<AppState> for Auth {
    type Rejection = ApiError;

    async fn from_request_parts(parts: &mut Parts, state: &AppState) -> Result<Self, ApiError> {
        let client = client_key(parts, state);
        if let Err(wait_s) = state.auth_failures.check(client) {
            let (failures, window_s) = state.auth_failures.limit();
            return Err(ApiError::auth_rate_limited(wait_s, failures, window_s));
        }
        let header = parts.headers.get(header::AUTHORIZATION).ok_or_else(ApiError::unauthorized)?;
        let token = header.to_str().ok().and_then(|v| {
            // The scheme name is case-insensitive (RFC 9110 §11.1).
            let (scheme, token) = v.trim().split_once(' ')?;
            scheme.eq_ignore_ascii_case("bearer").then_some(token.trim())
        });
        let authenticated = match token {
            Some(token) => state.service.authenticate(token).await,
            None => Err(ServiceError::Unauthorized),
        };
        let caller = authenticated.map_err(|e| {
            if matches!(e, ServiceError::Unauthorized) {
                state.auth_failures.record_failure(client);
            }
            ApiError::from(e)
        })?;
        if let Err(wait_s) = state.rate.check(caller.key_id.as_str()) {
            return Err(ApiError::rate_limited(wait_s));
        }
        Ok(Auth(caller))
    }
}

/// Whose failed authentications a request counts with: its client address
/// ([`crate::http::client`]), or the shared unknown bucket without a peer.
fn client_key(parts: &Parts, state: &AppState) -> ClientKey {
    let peer = parts.extensions.get::<PeerAddr>().map(|p| p.0.ip());
    ClientKey::of(state.trusted_proxies.client_ip(peer, &parts.headers))
}

/// The `If-Match` precondition (RFC 9110 §13.1.1): absent, `*`, or a list
/// of entity tags such as `"3", "4"`. `If-Match` uses the strong comparison
/// (§8.8.3.2): a weak tag (`W/"3"`) never matches, and an opaque tag
/// matches only if it is character for character the one this API gives
/// out ([`etag`]), so `"03"` or an unquoted `3` do not name revision 3.
pub fn if_match(headers: &axum::http::HeaderMap) -> IfMatch {
    let values: Vec<&str> = headers.get_all(header::IF_MATCH).iter().filter_map(|v| v.to_str().ok()).collect();
    if values.is_empty() {
        return IfMatch::Missing;
    }
    let tags: Vec<&str> = values.iter().flat_map(|v| v.split(',')).map(str::trim).filter(|t| !t.is_empty()).collect();
    if tags.contains(&"*") {
        return IfMatch::Any;
    }
    IfMatch::OneOf(tags.into_iter().filter_map(strong_revision).collect())
}

/// The revision a strong entity tag names, if it is one of ours; `None`
/// for a weak tag or any other text.
fn strong_revision(tag: &str) -> Option<i64> {
    let opaque = tag.strip_prefix('"')?.strip_suffix('"')?;
    let revision = opaque.parse::<i64>().ok()?;
    (etag(revision) == tag).then_some(revision)
}

/// The ETag of a revision.
pub fn etag(revision: i64) -> String {
    format!("\"{revision}\"")
}

/// Ids the API gives out (sites, assessments, surveys, keys): 32 lowercase
/// hex digits, as [`parse_id`] checks (the OpenAPI path parameters say so).
pub const ID_PATTERN: &str = "^[0-9a-f]{32}$";
/// Table ids, as the core's table validation accepts them.
pub const TABLE_ID_PATTERN: &str = "^[A-Za-z0-9._-]{1,64}$";

/// Checks an id from the path: 32 lowercase hex digits (400 otherwise).
pub fn parse_id<T: crate::ids::ResourceId>(id: &str, what: &str) -> Result<T, ApiError> {
    T::parse(id).ok_or_else(|| {
        ApiError::bad_request(
            format!("'{id}' is not a {what} id"),
            Problems::one(format!("/{what}_id"), "ids are 32 lowercase hex digits"),
        )
    })
}

/// Parses a positive integer path or query parameter (400 otherwise).
pub fn parse_positive(value: &str, name: &str) -> Result<i64, ApiError> {
    value.parse::<i64>().ok().filter(|v| *v >= 1).ok_or_else(|| {
        ApiError::bad_request(
            format!("{name} must be a positive integer"),
            Problems::one(format!("/{name}"), format!("'{value}' is not a positive integer")),
        )
    })
}

/// Query parameters of list routes.
#[derive(Debug, Default, serde::Deserialize, utoipa::IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct PageQuery {
    /// Opaque cursor from the previous page's `next_cursor`.
    #[param(pattern = "^[0-9a-f]{32}$")]
    pub cursor: Option<String>,
    /// Page size, 1–200 (default 50).
    #[param(value_type = Option<i64>, minimum = 1, maximum = 200)]
    pub limit: Option<String>,
    /// Only sites whose name contains this text, in any letter case and
    /// Unicode normal form (NFC and full case folding); sites only.
    pub name: Option<String>,
}

/// Reads a route's query parameters (unknown or malformed ones are a 400
/// in plain words). Control characters were refused before the handler
/// ran ([`plain_params`]).
pub fn query_params<T: serde::de::DeserializeOwned>(uri: &axum::http::Uri) -> Result<T, ApiError> {
    axum::extract::Query::<T>::try_from_uri(uri)
        .map(|q| q.0)
        .map_err(|e| ApiError::bad_request(e.body_text(), Problems::default()))
}

impl PageQuery {
    /// Reads the query string (unknown parameters are a 400).
    pub fn from_uri(uri: &axum::http::Uri) -> Result<PageQuery, ApiError> {
        query_params(uri)
    }
    /// The page size as given (a positive integer, 400 otherwise); its
    /// range is the service's rule ([`crate::service::page_limit`]).
    pub fn limit(&self) -> Result<Option<i64>, ApiError> {
        self.limit.as_deref().map(|l| parse_positive(l, "limit")).transpose()
    }

    /// The cursor, which is an id from a previous page (400 otherwise).
    pub fn cursor(&self) -> Result<Option<&str>, ApiError> {
        match self.cursor.as_deref() {
            Some(c) if crate::ids::looks_like_id(c) => Ok(Some(c)),
            Some(_) => Err(ApiError::bad_request(
                "the cursor is not one this API gave out",
                Problems::one("/cursor", "pass next_cursor from the previous page"),
            )),
            None => Ok(None),
        }
    }
}

/// Refuses a control character in any path parameter or query string value
/// (or name), after percent-decoding, with a 400 whose pointer names the
/// parameter (`/name` for `?name=`). It runs on every route before the
/// handler, so no handler and no query can see such a value: the rule of
/// [`fluxbound_core::text`], in one place for the whole API. (A value that
/// is not UTF-8 is left to the handler's own parsing.)
pub async fn plain_params(path: Result<RawPathParams, RawPathParamsRejection>, req: Request, next: Next) -> Response {
    match control_in_params(path.ok().as_ref(), req.uri().query()) {
        Some(problem) => problem.into_response(),
        None => next.run(req).await,
    }
}

/// The first path or query parameter holding a control character, as the
/// answer to give.
fn control_in_params(path: Option<&RawPathParams>, query: Option<&str>) -> Option<ApiError> {
    let path = path.into_iter().flatten().map(|(k, v)| ("path", Cow::Borrowed(k), Cow::Borrowed(v)));
    let query = query.into_iter().flat_map(|q| form_urlencoded::parse(q.as_bytes())).map(|(k, v)| ("query", k, v));
    path.chain(query).find_map(|(place, name, value)| {
        let why = single_line_problem(&name).or_else(|| single_line_problem(&value))?;
        Some(ApiError::bad_request(
            format!("a {place} parameter holds a control character"),
            Problems::one(Pointer::root().key(&name).to_string(), why),
        ))
    })
}
