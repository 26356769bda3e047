//! The HTTP edge: axum routes, authentication, problem+json, OpenAPI.
//! `router(state)` is pure: it builds the service graph and touches nothing.

pub mod access;
pub mod body;
pub mod client;
pub mod connections;
pub mod extract;
pub mod metrics;
pub mod openapi;
pub mod problem;
pub mod rate;
pub mod resources;
pub mod routes;
pub mod server;

use crate::config::ClientPolicy;
use crate::config::ConnectionLimits;
use crate::service::Service;
use axum::Router;
use axum::extract::{DefaultBodyLimit, Request, State};
use axum::http::{HeaderName, header};
use axum::middleware::{self, Next};
use axum::response::{IntoResponse, Response};
use axum::routing::{get, post};
use problem::ApiError;
use routes::{assessments, evaluate, exchange, keys, ops, reports, sites, surveys, tables, whatif};
use std::sync::Arc;
use std::time::Duration;
use tower_http::catch_panic::CatchPanicLayer;
use tower_http::request_id::{MakeRequestUuid, PropagateRequestIdLayer, SetRequestIdLayer};
use tower_http::sensitive_headers::SetSensitiveRequestHeadersLayer;
use tower_http::trace::TraceLayer;
use utoipa::OpenApi;
use utoipa_swagger_ui::{Config, SwaggerUi};

/// What every handler can reach. Cloned per request (all fields are shared
/// handles).
#[derive(Clone)]
pub struct AppState {
    pub service: Service,
    pub metrics: metrics::Metrics,
    pub rate: Arc<rate::RateLimiter>,
    /// Connection limits, counters and the draining flag, shared with the
    /// accept loop (`server.rs`).
    pub edge: server::EdgeState,
    /// Failed authentications per client address.
    pub auth_failures: Arc<rate::FailedAuthLimiter>,
    /// Whose `X-Forwarded-For` names the client.
    pub trusted_proxies: Arc<client::TrustedProxies>,
}

impl AppState {
    /// With the default connection limits (see [`AppState::with_connections`]).
    pub fn new(service: Service, clients: &ClientPolicy) -> Self {
        let rate = Arc::new(rate::RateLimiter::new(service.limits().rate_per_key));
        let window = Duration::from_secs(clients.auth_failure_window_s.max(1));
        AppState {
            service,
            metrics: metrics::Metrics::default(),
            rate,
            edge: server::EdgeState::new(ConnectionLimits::default()),
            auth_failures: Arc::new(rate::FailedAuthLimiter::new(clients.auth_failures, window)),
            trusted_proxies: Arc::new(client::TrustedProxies::new(clients.trusted_proxies.clone())),
        }
    }

    pub fn with_connections(mut self, limits: ConnectionLimits) -> Self {
        self.edge = server::EdgeState::new(limits);
        self
    }
}

pub(crate) const REQUEST_ID: HeaderName = HeaderName::from_static("x-request-id");

/// The whole API. One function on purpose (a little over our usual ~60
/// lines): the route table reads best as one list.
pub fn router(state: AppState) -> Router {
    let body_limit = state.service.limits().body_bytes;
    let body_read_timeout = state.edge.limits.body_read_timeout;
    let timeout = Duration::from_secs(state.service.limits().request_timeout_s.max(1));
    let api = Router::new()
        .route("/v1/sites", post(sites::sites_create).get(sites::sites_list))
        .route("/v1/sites/{site_id}", get(sites::sites_show).put(sites::sites_update).delete(sites::sites_delete))
        .route("/v1/sites/{site_id}/revisions/{revision}", get(sites::sites_revision))
        .route("/v1/sites/import", post(exchange::sites_import))
        .route("/v1/sites/{site_id}/import", post(exchange::sites_import_revision))
        .route("/v1/sites/{site_id}/export.geojson", get(exchange::sites_export_geojson))
        .route("/v1/sites/{site_id}/export.dxf", get(exchange::sites_export_dxf))
        .route(
            "/v1/sites/{site_id}/assessments",
            post(assessments::assessments_create).get(assessments::assessments_list),
        )
        .route("/v1/sites/{site_id}/whatif/phases", post(whatif::whatif_phases))
        .route("/v1/sites/{site_id}/whatif/scenarios", post(whatif::whatif_scenarios))
        .route("/v1/sites/{site_id}/whatif/move", post(whatif::whatif_move))
        .route("/v1/sites/{site_id}/whatif/loop", post(whatif::whatif_loop))
        .route("/v1/whatif-results/{whatif_id}", get(whatif::whatif_show))
        .route("/v1/sites/{site_id}/surveys", post(surveys::surveys_create).get(surveys::surveys_list))
        .route("/v1/surveys/{survey_id}", get(surveys::surveys_show))
        .route("/v1/surveys/{survey_id}/reconciliation", get(surveys::surveys_reconciliation))
        .route("/v1/surveys/{survey_id}/extrapolation", get(surveys::surveys_extrapolation))
        .route("/v1/assessments/{assessment_id}", get(assessments::assessments_show))
        .route("/v1/assessments/{assessment_id}/areas/{area_id}/map.svg", get(reports::reports_map))
        .route("/v1/assessments/{assessment_id}/positions.csv", get(reports::reports_csv))
        .route("/v1/assessments/{assessment_id}/features.geojson", get(reports::reports_geojson))
        .route("/v1/assessments/{assessment_id}/distance", get(reports::reports_distance))
        .route("/v1/assessments/{assessment_id}/comparison", get(assessments::assessments_compare))
        .route("/v1/tables", get(tables::tables_list).post(tables::tables_create))
        .route("/v1/tables/{table_id}", get(tables::tables_show))
        .route("/v1/tables/{table_id}/versions", post(tables::tables_version_add))
        .route(
            "/v1/tables/{table_id}/versions/{version}",
            get(tables::tables_version_show).put(tables::tables_version_replace),
        )
        .route("/v1/evaluate", post(evaluate::evaluate))
        .route("/v1/keys", get(keys::keys_list).post(keys::keys_create))
        .route("/v1/keys/{key_id}", axum::routing::delete(keys::keys_revoke))
        .route("/healthz", get(ops::healthz))
        .route("/readyz", get(ops::readyz))
        .route("/metrics", get(ops::metrics))
        .route_layer(middleware::from_fn(extract::plain_params))
        .fallback(|| async { ApiError::not_found("route") })
        .method_not_allowed_fallback(|| async {
            ApiError::new(
                axum::http::StatusCode::METHOD_NOT_ALLOWED,
                "method-not-allowed",
                "Method not allowed",
                "this route does not take that method",
            )
        })
        .layer(middleware::from_fn_with_state(timeout, timeout_problem))
        .layer(DefaultBodyLimit::max(body_limit))
        .with_state(state.clone());
    let docs = SwaggerUi::new("/docs")
        .url("/openapi.json", openapi::ApiDoc::openapi())
        .config(Config::new(["/openapi.json"]).validator_url("none").try_it_out_enabled(true));
    Router::new()
        .merge(api)
        .merge(docs)
        .layer(middleware::from_fn_with_state(body_read_timeout, body::body_deadline))
        .layer(middleware::from_fn_with_state(body_limit, body::refuse_large))
        .layer(middleware::from_fn(access::access_log))
        .layer(middleware::from_fn_with_state(state.metrics.clone(), metrics::track))
        .layer(CatchPanicLayer::custom(|_| ApiError::internal().into_response()))
        .layer(middleware::from_fn(client::peer_from_connect_info))
        .layer(TraceLayer::new_for_http().make_span_with(|req: &Request| {
            let id = req.headers().get(&REQUEST_ID).and_then(|v| v.to_str().ok()).unwrap_or("-");
            // Path only: no query strings, bodies or credentials in logs.
            tracing::info_span!("request", method = %req.method(), path = %req.uri().path(), request_id = %id)
        }))
        .layer(PropagateRequestIdLayer::new(REQUEST_ID))
        .layer(SetRequestIdLayer::new(REQUEST_ID, MakeRequestUuid))
        .layer(SetSensitiveRequestHeadersLayer::new([header::AUTHORIZATION]))
}

/// Answers 503 problem+json when a request runs past the timeout. Dropping
/// the request's future sets its computation's cancellation flag, so field
/// work on the blocking pool stops at its next chunk (`service::compute`).
async fn timeout_problem(State(timeout): State<Duration>, req: Request, next: Next) -> Response {
    match tokio::time::timeout(timeout, next.run(req)).await {
        Ok(res) => res,
        Err(_) => ApiError::timeout(timeout.as_secs()).into_response(),
    }
}
