//! RFC 9457 problem details: the one place that picks HTTP statuses.

use crate::service::ServiceError;
use axum::http::{HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};
use fluxbound_core::site::{Problem, Problems};
use serde::Serialize;
use utoipa::ToSchema;

/// Media type of every error body.
pub const PROBLEM_JSON: &str = "application/problem+json";

/// One problem in a request document.
#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct ProblemItem {
    /// RFC 6901 JSON pointer into the request body (or `/limit`, `/cursor`
    /// and the like for query parameters).
    pub pointer: String,
    pub detail: String,
}

/// An RFC 9457 problem document.
#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct ProblemDoc {
    /// Stable identifier of the problem kind, e.g. `urn:fluxbound:problem:validation`.
    #[serde(rename = "type")]
    pub kind: String,
    pub title: String,
    pub status: u16,
    pub detail: String,
    /// Every problem found, each with its pointer (validation errors).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub errors: Vec<ProblemItem>,
}

/// An error answer: status, stable kind, words, and any pointers.
#[derive(Debug, Clone)]
pub struct ApiError {
    /// Seconds for a `Retry-After` header (429, 503 busy).
    pub retry_after_s: Option<u64>,
    pub status: StatusCode,
    pub kind: &'static str,
    pub title: &'static str,
    pub detail: String,
    pub errors: Vec<Problem>,
}

impl ApiError {
    pub fn new(status: StatusCode, kind: &'static str, title: &'static str, detail: impl Into<String>) -> Self {
        ApiError { retry_after_s: None, status, kind, title, detail: detail.into(), errors: Vec::new() }
    }
    pub fn with_problems(mut self, p: Problems) -> Self {
        self.errors = p.0;
        self
    }
    pub fn malformed_json(detail: impl Into<String>) -> Self {
        Self::new(StatusCode::BAD_REQUEST, "malformed-json", "The body is not valid JSON", detail)
    }
    pub fn bad_request(detail: impl Into<String>, problems: Problems) -> Self {
        Self::new(StatusCode::BAD_REQUEST, "bad-request", "The request is not understood", detail)
            .with_problems(problems)
    }
    pub fn validation(problems: Problems) -> Self {
        let n = problems.len();
        Self::new(
            StatusCode::UNPROCESSABLE_ENTITY,
            "validation",
            "The request has problems",
            format!("{n} problem(s): see errors"),
        )
        .with_problems(problems)
    }
    pub fn unsupported_media_type() -> Self {
        Self::new(
            StatusCode::UNSUPPORTED_MEDIA_TYPE,
            "unsupported-media-type",
            "Send JSON",
            "the body must be sent with Content-Type: application/json",
        )
    }
    pub fn too_large(limit: usize) -> Self {
        Self::new(
            StatusCode::PAYLOAD_TOO_LARGE,
            "payload-too-large",
            "The body is too large",
            format!("the body may be at most {limit} bytes"),
        )
    }
    pub fn not_found(what: &str) -> Self {
        Self::new(StatusCode::NOT_FOUND, "not-found", "Not found", format!("{what} not found"))
    }
    pub fn unauthorized() -> Self {
        Self::new(
            StatusCode::UNAUTHORIZED,
            "unauthorized",
            "Authentication required",
            "send Authorization: Bearer <API key>",
        )
    }
    pub fn rate_limited(retry_after_s: u64) -> Self {
        let detail = format!("retry after {retry_after_s} s");
        ApiError {
            retry_after_s: Some(retry_after_s),
            ..Self::new(StatusCode::TOO_MANY_REQUESTS, "rate-limited", "Too many requests", detail)
        }
    }
    /// Too many failed authentications from the client's address.
    pub fn auth_rate_limited(retry_after_s: u64, failures: usize, window_s: u64) -> Self {
        let detail = format!(
            "{failures} failed authentications from your address within {window_s} s: retry after {retry_after_s} s with a valid key"
        );
        ApiError {
            retry_after_s: Some(retry_after_s),
            ..Self::new(StatusCode::TOO_MANY_REQUESTS, "auth-rate-limited", "Too many failed authentications", detail)
        }
    }
    pub fn timeout(seconds: u64) -> Self {
        Self::new(
            StatusCode::SERVICE_UNAVAILABLE,
            "timeout",
            "The request took too long",
            format!("no answer within {seconds} s"),
        )
    }
    /// The body did not arrive in full within the body-read timeout.
    pub fn body_timeout(timeout: std::time::Duration) -> Self {
        Self::new(
            StatusCode::REQUEST_TIMEOUT,
            "body-timeout",
            "The body arrived too slowly",
            format!("the body must arrive in full within {} s of the request head", timeout.as_secs_f64()),
        )
    }
    /// `/readyz` once shutdown has begun.
    pub fn shutting_down() -> Self {
        Self::new(
            StatusCode::SERVICE_UNAVAILABLE,
            "shutting-down",
            "The server is shutting down",
            "this instance is finishing its requests and takes no new work; use another",
        )
    }
    /// Every computation slot stayed taken for the queue wait.
    pub fn busy(retry_after_s: u64) -> Self {
        ApiError {
            retry_after_s: Some(retry_after_s),
            ..Self::new(
                StatusCode::SERVICE_UNAVAILABLE,
                "busy",
                "The server is busy computing",
                format!("every computation slot is taken: retry after {retry_after_s} s"),
            )
        }
    }
    pub fn internal() -> Self {
        Self::new(
            StatusCode::INTERNAL_SERVER_ERROR,
            "internal",
            "Internal error",
            "the server could not complete the request; it has been logged with its request id",
        )
    }
    pub fn unavailable() -> Self {
        Self::new(
            StatusCode::SERVICE_UNAVAILABLE,
            "unavailable",
            "Service unavailable",
            "the database is not reachable; try again",
        )
    }

    fn doc(&self) -> ProblemDoc {
        ProblemDoc {
            kind: format!("urn:fluxbound:problem:{}", self.kind),
            title: self.title.to_string(),
            status: self.status.as_u16(),
            detail: self.detail.clone(),
            errors: self
                .errors
                .iter()
                .map(|p| ProblemItem { pointer: p.pointer.clone(), detail: p.detail.clone() })
                .collect(),
        }
    }
}

impl IntoResponse for ApiError {
    fn into_response(self) -> Response {
        let body = serde_json::to_vec(&self.doc()).unwrap_or_default();
        let mut res = (self.status, body).into_response();
        res.headers_mut().insert(header::CONTENT_TYPE, HeaderValue::from_static(PROBLEM_JSON));
        if let Some(s) = self.retry_after_s {
            res.headers_mut().insert(header::RETRY_AFTER, HeaderValue::from(s));
        }
        if self.status == StatusCode::UNAUTHORIZED {
            res.headers_mut().insert(header::WWW_AUTHENTICATE, HeaderValue::from_static("Bearer"));
        }
        res
    }
}

impl From<ServiceError> for ApiError {
    fn from(e: ServiceError) -> Self {
        use ServiceError as E;
        match e {
            E::Validation(p) => ApiError::validation(p),
            E::BadRequest(p) => {
                let detail = p.iter().next().map_or_else(String::new, |x| x.detail.clone());
                ApiError::bad_request(detail, p)
            }
            E::TooBig(p) => Self::new(
                StatusCode::UNPROCESSABLE_ENTITY,
                "budget-exceeded",
                "The request exceeds a size or compute bound",
                "reduce the fields named in errors",
            )
            .with_problems(p),
            E::NotFound(what) => ApiError::not_found(what),
            E::Conflict(detail) => Self::new(StatusCode::CONFLICT, "conflict", "Conflict", detail),
            E::PreconditionFailed { current } => Self::new(
                StatusCode::PRECONDITION_FAILED,
                "precondition-failed",
                "The resource has changed",
                format!("the latest revision is {current}: read it, then send If-Match: \"{current}\""),
            ),
            E::PreconditionRequired => Self::new(
                StatusCode::PRECONDITION_REQUIRED,
                "precondition-required",
                "If-Match required",
                "send If-Match with the ETag of the revision you are changing",
            ),
            E::Forbidden(role) => Self::new(
                StatusCode::FORBIDDEN,
                "forbidden",
                "Not allowed",
                format!("this needs a key with the {role} role"),
            ),
            E::Unauthorized => ApiError::unauthorized(),
            E::Store(s) if s.is_unavailable() => {
                tracing::error!(error = %s, "database unavailable");
                ApiError::unavailable()
            }
            E::Store(s) => {
                tracing::error!(error = %s, "storage error");
                ApiError::internal()
            }
            E::Busy { retry_after_s } => ApiError::busy(retry_after_s),
            E::Internal(msg) => {
                tracing::error!(error = %msg, "internal error");
                ApiError::internal()
            }
        }
    }
}
