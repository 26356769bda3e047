//! Probes and metrics (no authentication: they carry no site data).

use crate::http::AppState;
use crate::http::problem::ApiError;
use crate::http::resources::Health;
use axum::extract::State;
use axum::http::{HeaderValue, header};
use axum::response::{IntoResponse, Response};

/// The process is up.
#[utoipa::path(get, path = "/healthz", tag = "operations", responses((status = 200, description = "Up", body = Health)))]
pub async fn healthz() -> Response {
    axum::Json(Health { status: "ok".into() }).into_response()
}

/// The database answers and the server is not shutting down.
#[utoipa::path(get, path = "/readyz", tag = "operations",
    responses((status = 200, description = "Ready", body = Health),
              (status = 503, description = "Database unreachable, or the server is shutting down")))]
pub async fn readyz(State(s): State<AppState>) -> Response {
    if s.edge.draining.is_draining() {
        return ApiError::shutting_down().into_response();
    }
    match s.service.store().ping().await {
        Ok(()) => axum::Json(Health { status: "ok".into() }).into_response(),
        Err(e) => {
            tracing::warn!(error = %e, "readiness check failed");
            ApiError::unavailable().into_response()
        }
    }
}

/// Prometheus metrics: requests by route and status, latencies, pairs
/// computed, computations, client connections (open, shed, refused, timed out).
#[utoipa::path(get, path = "/metrics", tag = "operations",
    responses((status = 200, description = "Prometheus text format", body = String, content_type = "text/plain")))]
pub async fn metrics(State(s): State<AppState>) -> Response {
    let mut text = s.metrics.render(s.service.pairs_computed(), s.service.compute_counts());
    text.push_str(&s.edge.stats.render());
    let mut res = text.into_response();
    res.headers_mut().insert(header::CONTENT_TYPE, HeaderValue::from_static("text/plain; version=0.0.4"));
    res
}
