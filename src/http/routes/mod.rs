//! Route handlers: parse, authorise, call one service function, map.

pub mod assessments;
pub mod evaluate;
pub mod exchange;
pub mod keys;
pub mod ops;
pub mod reports;
pub mod sites;
pub mod surveys;
pub mod tables;
pub mod whatif;

use axum::http::{HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};
use serde::Serialize;

/// A JSON answer with an optional `Location` and `ETag`.
pub(crate) fn json_response<T: Serialize>(
    status: StatusCode,
    body: &T,
    location: Option<String>,
    etag: Option<String>,
) -> Response {
    json_response_sized(status, body, location, etag, 16 * 1024)
}

/// [`json_response`] written into a buffer of `capacity` bytes to start
/// with (a large answer that knows its size grows no more).
pub(crate) fn json_response_sized<T: Serialize>(
    status: StatusCode,
    body: &T,
    location: Option<String>,
    etag: Option<String>,
    capacity: usize,
) -> Response {
    let mut buf = Vec::with_capacity(capacity);
    match serde_json::to_writer(&mut buf, body) {
        Ok(()) => json_text_response(status, buf, location, etag),
        Err(e) => super::problem::ApiError::from(crate::service::ServiceError::Internal(e.to_string())).into_response(),
    }
}

/// A response of JSON text already written (such as a result served as
/// stored), with the same headers as [`json_response`].
pub(crate) fn json_text_response(
    status: StatusCode,
    body: impl Into<axum::body::Body>,
    location: Option<String>,
    etag: Option<String>,
) -> Response {
    let mut res =
        (status, [(header::CONTENT_TYPE, HeaderValue::from_static("application/json"))], body.into()).into_response();
    let h = res.headers_mut();
    if let Some(l) = location.and_then(|l| HeaderValue::from_str(&l).ok()) {
        h.insert(header::LOCATION, l);
    }
    if let Some(e) = etag.and_then(|e| HeaderValue::from_str(&e).ok()) {
        h.insert(header::ETAG, e);
    }
    res
}
