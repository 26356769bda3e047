//! The access log: one line per answered request at `info`, target
//! `fluxbound::access` (silence it with `RUST_LOG=info,fluxbound::access=warn`).
//!
//! It names the route by its template (`/v1/sites/{site_id}`), so lines
//! group by operation and carry no ids from the path; it never carries the
//! query string, a header (so never a key) or a body. The request id ties
//! the line to the request's span and to the `x-request-id` the client got.

use super::REQUEST_ID;
use axum::extract::{MatchedPath, Request};
use axum::middleware::Next;
use axum::response::Response;
use std::time::Instant;

/// Middleware: logs the request once its answer's head is ready.
pub async fn access_log(req: Request, next: Next) -> Response {
    let start = Instant::now();
    let method = req.method().clone();
    let route = req.extensions().get::<MatchedPath>().map(|m| m.as_str().to_owned());
    let request_id = req.headers().get(&REQUEST_ID).and_then(|v| v.to_str().ok()).unwrap_or("-").to_owned();
    let res = next.run(req).await;
    // Tenths of a millisecond: finer is noise in a log line.
    let latency_ms = (start.elapsed().as_secs_f64() * 10_000.0).round() / 10.0;
    tracing::info!(
        target: "fluxbound::access",
        method = %method,
        route = %route.as_deref().unwrap_or("unmatched"),
        status = res.status().as_u16(),
        latency_ms,
        request_id = %request_id,
        "request"
    );
    res
}
