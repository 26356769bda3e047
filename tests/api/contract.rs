//! The OpenAPI contract, checked from the outside on every exchange of the
//! API suite.
//!
//! `spawn_app` puts a small recording proxy in front of the server: every
//! test talks to the proxy (`app.base`), which forwards the request, reads
//! the answer and checks both against the document the server itself
//! serves at `/openapi.json`:
//! - every response must be documented for its operation (method + path
//!   template) and status, with its media type, and a JSON body must
//!   validate against that schema (a status with no documented response is
//!   a failure: that is how undocumented statuses are found);
//! - every JSON request body that the server accepted (2xx) must validate
//!   against the operation's request schema, and its path parameters
//!   against theirs. Requests the server refused are deliberately bad ones
//!   from the error tests, so they are not checked.
//!
//! Violations are collected and fail the test when its `TestApp` is dropped.
//! Schemas are JSON Schema 2020-12 (OpenAPI 3.1); `$ref`s resolve locally
//! because the document's `components` are embedded beside each schema.

use axum::body::{Body, Bytes};
use axum::extract::{Request, State};
use axum::http::{HeaderMap, Method, StatusCode, header};
use axum::response::{IntoResponse, Response};
use serde_json::{Value, json};
use std::collections::HashMap;
use std::sync::{Arc, Mutex};
use tokio::sync::{OnceCell, oneshot};

/// The served document and the validators compiled from it so far.
pub struct Contract {
    doc: Value,
    validators: Mutex<HashMap<String, Arc<jsonschema::Validator>>>,
}

static CONTRACT: OnceCell<Arc<Contract>> = OnceCell::const_new();

/// The document served by the first app of this test binary (every app
/// serves the same one; `openapi.rs` checks it equals the committed file).
async fn contract(upstream: &str) -> Arc<Contract> {
    CONTRACT
        .get_or_init(|| async {
            let doc: Value = reqwest::get(format!("{upstream}/openapi.json"))
                .await
                .expect("the server serves /openapi.json")
                .json()
                .await
                .expect("the served document is JSON");
            Arc::new(Contract { doc, validators: Mutex::new(HashMap::new()) })
        })
        .await
        .clone()
}

/// RFC 6901 escaping of one reference token.
fn escape(token: &str) -> String {
    token.replace('~', "~0").replace('/', "~1")
}

/// The media type without parameters, lowercase.
fn media_type(headers: &HeaderMap) -> Option<String> {
    let v = headers.get(header::CONTENT_TYPE)?.to_str().ok()?;
    Some(v.split(';').next().unwrap_or("").trim().to_ascii_lowercase())
}

fn is_json(media: &str) -> bool {
    media == "application/json" || (media.starts_with("application/") && media.ends_with("+json"))
}

impl Contract {
    /// The committed document (for checks that need no server).
    pub fn committed() -> Contract {
        let doc = serde_json::from_str(&fluxbound::http::openapi::openapi_json()).expect("document");
        Contract { doc, validators: Mutex::new(HashMap::new()) }
    }

    /// Errors of `instance` against the component schema `name`.
    pub fn validate_named(&self, name: &str, instance: &Value, what: &str) -> Vec<String> {
        self.validate(&format!("/components/schemas/{}", escape(name)), instance, what)
    }

    /// The path template of the document matching `path`: same number of
    /// segments, literals equal, `{name}` matching any one segment; the most
    /// literal template wins.
    fn template(&self, path: &str) -> Option<String> {
        let segments: Vec<&str> = path.split('/').collect();
        self.doc["paths"]
            .as_object()?
            .keys()
            .filter_map(|t| {
                let ts: Vec<&str> = t.split('/').collect();
                let fits =
                    ts.len() == segments.len() && ts.iter().zip(&segments).all(|(t, s)| t.starts_with('{') || t == s);
                fits.then(|| (ts.iter().filter(|t| !t.starts_with('{')).count(), t.clone()))
            })
            .max()
            .map(|(_, t)| t)
    }

    /// The validator of the schema at `pointer` in the document, compiled
    /// once, with the components embedded so `#/components/...` resolves.
    fn validator(&self, pointer: &str) -> Result<Arc<jsonschema::Validator>, String> {
        let mut cache = self.validators.lock().unwrap_or_else(|p| p.into_inner());
        if let Some(v) = cache.get(pointer) {
            return Ok(v.clone());
        }
        let schema = self.doc.pointer(pointer).ok_or_else(|| format!("no schema at {pointer}"))?;
        let mut root = match schema {
            Value::Object(m) => m.clone(),
            other => return Err(format!("schema at {pointer} is not an object: {other}")),
        };
        root.insert("components".into(), self.doc["components"].clone());
        let v = Arc::new(
            jsonschema::draft202012::new(&Value::Object(root)).map_err(|e| format!("schema at {pointer}: {e}"))?,
        );
        cache.insert(pointer.to_string(), v.clone());
        Ok(v)
    }

    /// Errors of `instance` against the schema at `pointer`, as text.
    fn validate(&self, pointer: &str, instance: &Value, what: &str) -> Vec<String> {
        match self.validator(pointer) {
            Ok(v) => v
                .iter_errors(instance)
                .map(|e| format!("{what}: at '{}': {e} (schema {pointer})", e.instance_path()))
                .collect(),
            Err(e) => vec![format!("{what}: {e}")],
        }
    }

    /// A documented response, following a `$ref` into `components/responses`.
    fn response_pointer(&self, op: &str, status: u16) -> Option<String> {
        let p = format!("{op}/responses/{status}");
        match self.doc.pointer(&p)?.get("$ref").and_then(Value::as_str) {
            Some(r) => Some(r.trim_start_matches('#').to_string()),
            None => Some(p),
        }
    }

    /// Every way one exchange departs from the document.
    fn check(&self, ex: &Exchange) -> Vec<String> {
        let what = format!("{} {} → {}", ex.method, ex.path, ex.status.as_u16());
        let Some(template) = self.template(&ex.path) else {
            // Not an operation of the API (the document itself, the UI):
            // an error there still has the one problem shape.
            return self.problem_only(ex, &what);
        };
        let op = format!("/paths/{}/{}", escape(&template), ex.method.as_str().to_ascii_lowercase());
        if self.doc.pointer(&op).is_none() {
            // 405 for a method the route does not have.
            return self.problem_only(ex, &what);
        }
        let mut out = self.check_response(&op, ex, &what);
        if ex.status.is_success() {
            out.extend(self.check_request(&op, &template, ex, &what));
        }
        out
    }

    fn problem_only(&self, ex: &Exchange, what: &str) -> Vec<String> {
        if ex.status.as_u16() < 400 || media_type(&ex.response_headers).as_deref() != Some("application/problem+json") {
            return Vec::new();
        }
        match serde_json::from_slice::<Value>(&ex.response_body) {
            Ok(body) => self.validate("/components/schemas/ProblemDoc", &body, what),
            Err(e) => vec![format!("{what}: problem body is not JSON: {e}")],
        }
    }

    fn check_response(&self, op: &str, ex: &Exchange, what: &str) -> Vec<String> {
        let status = ex.status.as_u16();
        let Some(resp) = self.response_pointer(op, status) else {
            return vec![format!("{what}: status {status} is not documented for {op}")];
        };
        if ex.response_body.is_empty() {
            return Vec::new();
        }
        let Some(media) = media_type(&ex.response_headers) else {
            return vec![format!("{what}: a body without a Content-Type")];
        };
        let content = format!("{resp}/content/{}", escape(&media));
        if self.doc.pointer(&content).is_none() {
            return vec![format!("{what}: media type {media} is not documented at {resp}")];
        }
        if !is_json(&media) {
            return Vec::new();
        }
        match serde_json::from_slice::<Value>(&ex.response_body) {
            Ok(body) => self.validate(&format!("{content}/schema"), &body, &format!("{what} response")),
            Err(e) => vec![format!("{what}: {media} body is not JSON: {e}")],
        }
    }

    fn check_request(&self, op: &str, template: &str, ex: &Exchange, what: &str) -> Vec<String> {
        let mut out = self.check_path_params(op, template, &ex.path, what);
        out.extend(self.check_query(op, ex.query.as_deref().unwrap_or(""), what));
        let json_body = media_type(&ex.request_headers).is_some_and(|m| is_json(&m));
        if !json_body || ex.request_body.is_empty() {
            return out;
        }
        let schema = format!("{op}/requestBody/content/application~1json/schema");
        if self.doc.pointer(&schema).is_none() {
            out.push(format!("{what}: a JSON body was accepted but {op} documents none"));
            return out;
        }
        match serde_json::from_slice::<Value>(&ex.request_body) {
            Ok(body) => out.extend(self.validate(&schema, &body, &format!("{what} request"))),
            Err(e) => out.push(format!("{what}: accepted a request body that is not JSON: {e}")),
        }
        out
    }

    /// Path parameters of an accepted request against their schemas.
    fn check_path_params(&self, op: &str, template: &str, path: &str, what: &str) -> Vec<String> {
        let params = self.doc.pointer(&format!("{op}/parameters")).and_then(Value::as_array).cloned();
        let mut out = Vec::new();
        for (t, s) in template.split('/').zip(path.split('/')) {
            let Some(name) = t.strip_prefix('{').and_then(|t| t.strip_suffix('}')) else { continue };
            let Some(i) = params.iter().flatten().position(|p| p["name"] == name && p["in"] == "path") else {
                out.push(format!("{what}: path parameter {name} is not documented"));
                continue;
            };
            let value = s.parse::<i64>().map(Value::from).unwrap_or_else(|_| json!(s));
            out.extend(self.validate(&format!("{op}/parameters/{i}/schema"), &value, &format!("{what} {name}")));
        }
        out
    }
}

impl Contract {
    /// Query parameters of an accepted request: each documented, each value
    /// within its schema (numbers compared as numbers, `true`/`false` as
    /// booleans).
    fn check_query(&self, op: &str, query: &str, what: &str) -> Vec<String> {
        let params = self.doc.pointer(&format!("{op}/parameters")).and_then(Value::as_array).cloned();
        let mut out = Vec::new();
        for pair in query.split('&').filter(|p| !p.is_empty()) {
            let (name, raw) = pair.split_once('=').unwrap_or((pair, ""));
            let Some(i) = params.iter().flatten().position(|p| p["name"] == name && p["in"] == "query") else {
                out.push(format!("{what}: query parameter {name} is not documented"));
                continue;
            };
            let schema = format!("{op}/parameters/{i}/schema");
            // The schema's type, or any of its listed types (`["boolean", "null"]`).
            let has_type = |want: &[&str]| {
                self.doc.pointer(&format!("{schema}/type")).is_some_and(|t| match t {
                    Value::Array(list) => list.iter().any(|x| want.iter().any(|w| x == w)),
                    t => want.iter().any(|w| t == w),
                })
            };
            let value = match (raw.parse::<f64>(), raw.parse::<bool>()) {
                (Ok(n), _) if has_type(&["integer", "number"]) => json!(n),
                (_, Ok(b)) if has_type(&["boolean"]) => json!(b),
                _ => json!(raw),
            };
            out.extend(self.validate(&schema, &value, &format!("{what} ?{name}")));
        }
        out
    }
}

/// One request and its answer, as seen by the proxy.
struct Exchange {
    method: Method,
    path: String,
    query: Option<String>,
    request_headers: HeaderMap,
    request_body: Bytes,
    status: StatusCode,
    response_headers: HeaderMap,
    response_body: Bytes,
}

#[derive(Clone)]
struct ProxyState {
    upstream: String,
    client: reqwest::Client,
    contract: Arc<Contract>,
    violations: Arc<Mutex<Vec<String>>>,
}

/// Headers that belong to one connection, not to the message.
fn hop_by_hop(name: &header::HeaderName) -> bool {
    [header::HOST, header::CONTENT_LENGTH, header::TRANSFER_ENCODING, header::CONNECTION].contains(name)
}

/// Forwards one request upstream, checks the exchange, answers as the server did.
async fn forward(State(st): State<ProxyState>, req: Request) -> Response {
    let (parts, body) = req.into_parts();
    let request_body = axum::body::to_bytes(body, usize::MAX).await.unwrap_or_default();
    let target = parts.uri.path_and_query().map_or("/", |p| p.as_str());
    let mut b = st.client.request(parts.method.clone(), format!("{}{target}", st.upstream));
    for (k, v) in parts.headers.iter().filter(|(k, _)| !hop_by_hop(k)) {
        b = b.header(k, v);
    }
    if !request_body.is_empty() {
        b = b.body(request_body.clone());
    }
    let res = match b.send().await {
        Ok(r) => r,
        Err(e) => return (StatusCode::BAD_GATEWAY, format!("contract proxy: {e}")).into_response(),
    };
    let (status, response_headers) = (res.status(), res.headers().clone());
    let response_body = res.bytes().await.unwrap_or_default();
    let ex = Exchange {
        method: parts.method,
        path: parts.uri.path().to_string(),
        query: parts.uri.query().map(str::to_string),
        request_headers: parts.headers,
        request_body,
        status,
        response_headers,
        response_body,
    };
    let found = st.contract.check(&ex);
    if !found.is_empty() {
        st.violations.lock().unwrap_or_else(|p| p.into_inner()).extend(found);
    }
    let mut out = Response::builder().status(ex.status);
    for (k, v) in ex.response_headers.iter().filter(|(k, _)| !hop_by_hop(k)) {
        out = out.header(k, v);
    }
    out.body(Body::from(ex.response_body)).expect("a response rebuilt from a valid one")
}

/// A running proxy: its base URL, what it found, and how to stop it.
pub struct Proxy {
    pub base: String,
    pub violations: Arc<Mutex<Vec<String>>>,
    pub shutdown: oneshot::Sender<()>,
}

/// Starts the checking proxy in front of `upstream` on a random port.
pub async fn start_proxy(upstream: String) -> Proxy {
    let contract = contract(&upstream).await;
    let client = reqwest::Client::builder().redirect(reqwest::redirect::Policy::none()).build().expect("client");
    let violations = Arc::new(Mutex::new(Vec::new()));
    let st = ProxyState { upstream, client, contract, violations: violations.clone() };
    let router = axum::Router::new().fallback(forward).with_state(st);
    let listener = tokio::net::TcpListener::bind("127.0.0.1:0").await.expect("bind the proxy");
    let base = format!("http://{}", listener.local_addr().expect("proxy address"));
    let (tx, rx) = oneshot::channel::<()>();
    tokio::spawn(async move {
        let _ = axum::serve(listener, router)
            .with_graceful_shutdown(async move {
                let _ = rx.await;
            })
            .await;
    });
    Proxy { base, violations, shutdown: tx }
}

#[cfg(test)]
mod checks {
    //! The checker itself must be able to fail: each test feeds it one
    //! exchange that departs from the committed document in one way.

    use super::*;
    use crate::helpers::*;
    use fluxbound::service::Role;

    const SITE: &str = "/v1/sites/0123456789abcdef0123456789abcdef";

    fn exchange(method: Method, path: &str, status: u16, request: Option<Value>, response: Value) -> Exchange {
        let mut json = HeaderMap::new();
        json.insert(header::CONTENT_TYPE, "application/json".parse().unwrap());
        let (request_headers, request_body) = match request {
            Some(v) => (json.clone(), Bytes::from(v.to_string())),
            None => (HeaderMap::new(), Bytes::new()),
        };
        let media = if status >= 400 { "application/problem+json" } else { "application/json" };
        let mut response_headers = HeaderMap::new();
        response_headers.insert(header::CONTENT_TYPE, media.parse().unwrap());
        Exchange {
            method,
            path: path.into(),
            query: None,
            request_headers,
            request_body,
            status: StatusCode::from_u16(status).unwrap(),
            response_headers,
            response_body: Bytes::from(response.to_string()),
        }
    }

    fn problem(status: u16) -> Value {
        json!({"type": "urn:fluxbound:problem:x", "title": "x", "status": status, "detail": "x"})
    }

    #[test]
    fn a_documented_problem_answer_passes_the_checker() {
        let found = Contract::committed().check(&exchange(Method::GET, SITE, 404, None, problem(404)));
        assert!(found.is_empty(), "{found:#?}");
    }

    #[test]
    fn a_status_the_operation_does_not_document_is_reported() {
        // A read of a site never answers 409, so the document has no 409 there.
        let found = Contract::committed().check(&exchange(Method::GET, SITE, 409, None, problem(409)));
        assert!(found.iter().any(|f| f.contains("409 is not documented")), "{found:#?}");
    }

    #[test]
    fn a_response_body_outside_its_schema_is_reported() {
        let body = json!({"id": "x", "name": "n", "revision": 1, "latest_revision": 1,
            "created_at": "t", "updated_at": "t", "site": {"frequency_hz": 50, "conductors": [], "extra": 1}});
        let found = Contract::committed().check(&exchange(Method::GET, SITE, 200, None, body));
        assert!(found.iter().any(|f| f.contains("extra")), "{found:#?}");
    }

    #[test]
    fn an_accepted_request_body_outside_the_request_schema_is_reported() {
        let mut site = small_site("too fast");
        site["frequency_hz"] = json!(5000);
        let found = Contract::committed().check(&exchange(Method::POST, "/v1/sites", 201, Some(site), json!({})));
        assert!(found.iter().any(|f| f.contains("request") && f.contains("frequency_hz")), "{found:#?}");
    }

    #[test]
    fn an_accepted_malformed_path_id_is_reported() {
        let found =
            Contract::committed().check(&exchange(Method::DELETE, "/v1/sites/NOT-AN-ID", 204, None, json!(null)));
        assert!(found.iter().any(|f| f.contains("site_id")), "{found:#?}");
    }

    #[test]
    fn an_accepted_query_outside_the_parameter_schemas_is_reported() {
        let mut ex = exchange(Method::GET, "/v1/sites", 200, None, json!({"items": [], "next_cursor": null}));
        ex.query = Some("limit=500&colour=red".into());
        let found = Contract::committed().check(&ex);
        assert!(found.iter().any(|f| f.contains("?limit")), "{found:#?}");
        assert!(found.iter().any(|f| f.contains("colour is not documented")), "{found:#?}");
    }

    #[tokio::test]
    async fn a_site_with_a_georeference_fits_the_document_both_ways() {
        let app = spawn_app().await;
        let key = app.key("acme", Role::Assessor).await;
        let mut site = small_site("placed");
        site["georeference"] = json!({"origin_lon_deg": 7.45, "origin_lat_deg": 46.95, "y_axis_bearing_deg": 12.5});
        let res = app.post("/v1/sites", &key, &site).await;
        assert_eq!(res.status(), 201);
        let body: Value = res.json().await.unwrap();
        assert_eq!(body["site"]["georeference"]["origin_lat_deg"], 46.95);
    }
}
