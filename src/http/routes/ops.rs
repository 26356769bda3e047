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

/// The database answers.
#[utoipa::path(get, path = "/readyz", tag = "operations",
    responses((status = 200, description = "Ready", body = Health),
              (status = 503, description = "Database unreachable")))]
pub async fn readyz(State(s): State<AppState>) -> Response {
    match s.service.store().ping().await {
        Ok(()) => axum::Json(Health { status: "ok".into() }).into_response(),
        Err(e) => {
            tracing::warn!(error = %e, "readiness check failed");
            ApiError::unavailable().into_response()
        }
    }
}

/// Prometheus metrics: requests by route and status, latencies, pairs computed, computations.
#[utoipa::path(get, path = "/metrics", tag = "operations",
    responses((status = 200, description = "Prometheus text format", body = String, content_type = "text/plain")))]
pub async fn metrics(State(s): State<AppState>) -> Response {
    let mut res = s.metrics.render(s.service.pairs_computed(), s.service.compute_counts()).into_response();
    res.headers_mut().insert(header::CONTENT_TYPE, HeaderValue::from_static("text/plain; version=0.0.4"));
    res
}
