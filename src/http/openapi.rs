//! The OpenAPI 3.1 document, generated from the types: routes and HTTP
//! types derive it here, the core's documents through its `schema` feature
//! (utoipa derives behind a cargo feature, so the core's normal graph stays
//! framework-free). Nothing is written out by hand.
//!
//! Two modifiers finish the document in one place each:
//! - [`ErrorResponses`] gives every operation every error status it can
//!   answer, each as `application/problem+json` with the one [`ProblemDoc`]
//!   schema. Which statuses apply follows from what the operation has (a
//!   body, path ids, query parameters, authentication), mirroring the
//!   extractors in [`crate::http::extract`] and the layers in
//!   [`crate::http::router`]. Statuses that only some routes have (403, 409,
//!   412, 428) are named on those routes, with a description only. A route
//!   that runs the field engine says so with the extension
//!   [`COMPUTES`]` = true`: it can also answer 422 over the compute budget
//!   and 503 `busy` with `Retry-After` (`service::compute`).
//! - [`PathIds`] puts the id patterns that the handlers check on the path
//!   parameters.
//!
//! `tests/api/openapi.rs` keeps `openapi/openapi.json` equal to this
//! document; `tests/api/contract.rs` validates every request and response
//! of the API suite against it.

use crate::http::extract::{ID_PATTERN, TABLE_ID_PATTERN};
use crate::http::problem::{PROBLEM_JSON, ProblemDoc};
use crate::http::routes;
use fluxbound_core::cautions::CAUTIONS;
use utoipa::openapi::header::HeaderBuilder;
use utoipa::openapi::path::{Operation, ParameterIn};
use utoipa::openapi::schema::{ObjectBuilder, Schema, Type};
use utoipa::openapi::security::{HttpAuthScheme, HttpBuilder, SecurityScheme};
use utoipa::openapi::{ContentBuilder, Ref, RefOr, ResponseBuilder};
use utoipa::{Modify, OpenApi, ToSchema};

struct Security;

impl Modify for Security {
    fn modify(&self, openapi: &mut utoipa::openapi::OpenApi) {
        let components = openapi.components.get_or_insert_with(Default::default);
        components.add_security_scheme(
            "bearer",
            SecurityScheme::Http(HttpBuilder::new().scheme(HttpAuthScheme::Bearer).build()),
        );
        openapi.info.description = Some(description());
    }
}

fn description() -> String {
    let mut d = String::from(
        "Pre-screening of occupational exposure to power-frequency magnetic fields: sites with revisions, \
         reference-level tables, stored assessments and a stateless field evaluation. Errors are RFC 9457 \
         problem+json with JSON pointers. Authenticate with `Authorization: Bearer <API key>`.\n\n**Cautions.**",
    );
    for c in CAUTIONS {
        d.push_str("\n- ");
        d.push_str(c);
    }
    d
}

/// The operation extension that marks a route running the field engine.
pub const COMPUTES: &str = "x-computes";

/// What an operation has, as far as its possible errors go.
struct Shape {
    body: bool,
    authenticated: bool,
    path_params: bool,
    /// A path parameter or query string the handler parses (400 if bad).
    parsed_params: bool,
    /// Runs the field engine (extension [`COMPUTES`]).
    computes: bool,
}

impl Shape {
    fn of(op: &Operation) -> Shape {
        let params = || {
            op.parameters.iter().flatten().filter_map(|p| match p {
                RefOr::T(p) => Some(p),
                RefOr::Ref(_) => None,
            })
        };
        Shape {
            body: op.request_body.is_some(),
            authenticated: op.security.as_ref().is_some_and(|s| !s.is_empty()),
            path_params: params().any(|p| p.parameter_in == ParameterIn::Path),
            // Every path and query value is checked for control characters
            // (`extract::plain_params`); ids are parsed by `parse_id`,
            // numbers by `parse_positive`.
            parsed_params: params().any(|p| matches!(p.parameter_in, ParameterIn::Query | ParameterIn::Path)),
            computes: op.extensions.as_ref().is_some_and(|e| e.get(COMPUTES) == Some(&serde_json::Value::Bool(true))),
        }
    }

    /// Every error status the operation can answer, with a default description.
    fn statuses(&self) -> Vec<(u16, &'static str)> {
        let mut s = Vec::new();
        if self.body || self.parsed_params {
            s.push((
                400,
                "Malformed JSON, a malformed id, a bad query parameter, or a control character in a path or query value (see `errors`)",
            ));
        }
        if self.authenticated {
            s.push((401, "Missing, unknown or revoked API key"));
        }
        if self.path_params {
            s.push((404, "Not found in your organisation"));
        }
        if self.body {
            s.push((408, "The body did not arrive in full within the body-read timeout"));
        }
        // Judged from `Content-Length` before any route runs (`body.rs`),
        // so any operation answers it to a request that announces a body
        // over the bound.
        s.push((413, "The body is larger than the configured bound (judged from Content-Length when sent)"));
        if self.body {
            s.push((415, "The body is not sent as JSON"));
            s.push((422, "Validation problems or size and compute bounds, each with a JSON pointer"));
        } else if self.computes {
            s.push((422, "The compute budget (segment-point pairs) is exceeded; a JSON pointer names what to change"));
        }
        if self.authenticated {
            s.push((
                429,
                "Rate limit of this API key, or too many failed authentications from this client address; see `Retry-After`",
            ));
        }
        s.push((500, "Internal error (logged with the request id; no detail leaks)"));
        s.push(if self.computes {
            (503, "Every computation slot is busy (`busy`, with `Retry-After`), the request ran past the timeout, or the database is unreachable")
        } else {
            (503, "The database is unreachable, or the request ran past the timeout")
        });
        s
    }
}

/// One shared set of error responses: fills in every status an operation
/// can answer and gives every error response the one problem+json body.
struct ErrorResponses;

impl ErrorResponses {
    fn complete(op: &mut Operation) {
        let problem = ContentBuilder::new().schema(Some(Ref::from_schema_name(ProblemDoc::name()))).build();
        let shape = Shape::of(op);
        for (status, description) in shape.statuses() {
            op.responses.responses.entry(status.to_string()).or_insert_with(|| {
                Self::headers(status, shape.computes, ResponseBuilder::new().description(description)).build().into()
            });
        }
        for (status, response) in op.responses.responses.iter_mut() {
            if let (true, RefOr::T(r)) = (status.parse::<u16>().is_ok_and(|s| s >= 400), response) {
                r.content.clear();
                r.content.insert(PROBLEM_JSON.to_string(), problem.clone().into());
            }
        }
    }
}

impl ErrorResponses {
    /// The headers `ApiError` sets beside its body (see `problem.rs`).
    fn headers(status: u16, computes: bool, r: ResponseBuilder) -> ResponseBuilder {
        let header = |t: Type, d: &str| {
            HeaderBuilder::new().schema(Some(ObjectBuilder::new().schema_type(t))).description(Some(d)).build()
        };
        match status {
            401 => r.header("WWW-Authenticate", header(Type::String, "`Bearer`")),
            429 => r.header("Retry-After", header(Type::Integer, "Seconds to wait before retrying")),
            503 if computes => {
                r.header("Retry-After", header(Type::Integer, "Seconds to wait before retrying (sent with `busy`)"))
            }
            _ => r,
        }
    }
}

impl Modify for ErrorResponses {
    fn modify(&self, openapi: &mut utoipa::openapi::OpenApi) {
        for item in openapi.paths.paths.values_mut() {
            for op in [&mut item.get, &mut item.put, &mut item.post, &mut item.delete].into_iter().flatten() {
                Self::complete(op);
            }
        }
    }
}

/// Patterns of the path parameters, from the handlers' own checks.
struct PathIds;

impl PathIds {
    fn schema_of(name: &str) -> Option<Schema> {
        let pattern = match name {
            "site_id" | "assessment_id" | "survey_id" | "key_id" => ID_PATTERN,
            "table_id" => TABLE_ID_PATTERN,
            "revision" | "version" => {
                return Some(ObjectBuilder::new().schema_type(Type::Integer).minimum(Some(1)).build().into());
            }
            _ => return None,
        };
        Some(ObjectBuilder::new().schema_type(Type::String).pattern(Some(pattern)).build().into())
    }
}

impl Modify for PathIds {
    fn modify(&self, openapi: &mut utoipa::openapi::OpenApi) {
        for item in openapi.paths.paths.values_mut() {
            for op in [&mut item.get, &mut item.put, &mut item.post, &mut item.delete].into_iter().flatten() {
                for p in op.parameters.iter_mut().flatten() {
                    if let RefOr::T(p) = p
                        && p.parameter_in == ParameterIn::Path
                        && let Some(s) = Self::schema_of(&p.name)
                    {
                        p.schema = Some(RefOr::T(s));
                    }
                }
            }
        }
    }
}

#[derive(OpenApi)]
#[openapi(
    info(title = "Fluxbound API", license(name = "MIT OR Apache-2.0", identifier = "MIT OR Apache-2.0")),
    paths(
        routes::sites::sites_create, routes::sites::sites_list, routes::sites::sites_show, routes::sites::sites_update,
        routes::sites::sites_revision, routes::sites::sites_delete,
        routes::exchange::sites_import, routes::exchange::sites_import_revision,
        routes::exchange::sites_export_geojson, routes::exchange::sites_export_dxf,
        routes::assessments::assessments_create, routes::assessments::assessments_list, routes::assessments::assessments_show,
        routes::tables::tables_list, routes::tables::tables_create, routes::tables::tables_show,
        routes::tables::tables_version_add, routes::tables::tables_version_show, routes::tables::tables_version_replace,
        routes::reports::reports_map, routes::reports::reports_csv, routes::reports::reports_geojson,
        routes::reports::reports_distance,
        routes::surveys::surveys_create, routes::surveys::surveys_list, routes::surveys::surveys_show,
        routes::surveys::surveys_reconciliation, routes::surveys::surveys_extrapolation,
        routes::evaluate::evaluate,
        routes::whatif::whatif_phases, routes::whatif::whatif_scenarios, routes::whatif::whatif_move,
        routes::whatif::whatif_loop, routes::whatif::whatif_show, routes::assessments::assessments_compare,
        routes::keys::keys_list, routes::keys::keys_create, routes::keys::keys_revoke,
        routes::ops::healthz, routes::ops::readyz, routes::ops::metrics,
    ),
    components(schemas(ProblemDoc)),
    modifiers(&Security, &PathIds, &ErrorResponses),
    tags(
        (name = "sites", description = "Site models with immutable revisions (ETag / If-Match)"),
        (name = "assessments", description = "Assessments pinned to a site revision and table versions"),
        (name = "tables", description = "Reference-level tables: built-in (read-only) and custom (versioned)"),
        (name = "reports", description = "Field maps (SVG), CSV and GeoJSON exports, distance to a level"),
        (name = "surveys", description = "Spot measurements: reconciliation, load fit, extrapolation to rated load"),
        (name = "evaluate", description = "Stateless field computation"),
        (name = "what-if", description = "What to change: phase arrangements ranked by exposure"),
        (name = "keys", description = "API keys (admin)"),
        (name = "operations", description = "Health, readiness, metrics"),
    )
)]
pub struct ApiDoc;

/// The document as pretty JSON with a trailing newline (the committed form).
pub fn openapi_json() -> String {
    let mut s = ApiDoc::openapi().to_pretty_json().expect("OpenAPI serialises");
    s.push('\n');
    s
}
