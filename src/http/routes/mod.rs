//! Route handlers: parse, authorise, call one service function, map.

pub mod assessments;
pub mod evaluate;
pub mod keys;
pub mod ops;
pub mod reports;
pub mod sites;
pub mod surveys;
pub mod tables;

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
    let mut res = (status, axum::Json(body)).into_response();
    let h = res.headers_mut();
    if let Some(l) = location.and_then(|l| HeaderValue::from_str(&l).ok()) {
        h.insert(header::LOCATION, l);
    }
    if let Some(e) = etag.and_then(|e| HeaderValue::from_str(&e).ok()) {
        h.insert(header::ETAG, e);
    }
    res
}
