//! The OpenAPI 3.1 document. Routes and HTTP-layer types are derived with
//! utoipa; the domain's documents (which must not depend on utoipa) get
//! their schemas here, written out once, with units in the descriptions.
//! `tests/api` checks every key of the shipped examples against them.

use crate::http::routes;
use crate::service as s;
use fluxbound_core::assess as a;
use fluxbound_core::cautions::CAUTIONS;
use fluxbound_core::domain_schema;
use fluxbound_core::evaluate as e;
use fluxbound_core::limits as l;
use fluxbound_core::mitigate as m;
use fluxbound_core::schema::{arr, num, obj, r};
use fluxbound_core::site::wire as w;
use fluxbound_core::survey;
use fluxbound_core::survey::wire as sv;
use serde_json::json;
use std::borrow::Cow;
use utoipa::openapi::security::{HttpAuthScheme, HttpBuilder, SecurityScheme};
use utoipa::openapi::{RefOr, schema::Schema};
use utoipa::{Modify, OpenApi, PartialSchema, ToSchema};

domain_schema!(
    s::AssessmentRequest,
    "AssessmentRequest",
    obj(
        "What to assess; every field optional",
        &[],
        json!({
            "revision": { "type": "integer", "description": "Site revision (default: latest)" },
            "load": r("LoadCase"),
            "tables": arr(json!({"type": "string"}), "Table ids (default: the site's own, else icnirp-2010-occupational, eu-2013-35-low, eu-2013-35-limbs)"),
            "options": obj("Options", &[], json!({ "review_fraction": num("0 < fraction < 1, default 0.5") })),
        })
    )
);

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

#[derive(OpenApi)]
#[openapi(
    info(title = "Fluxbound API", license(name = "MIT OR Apache-2.0", identifier = "MIT OR Apache-2.0")),
    paths(
        routes::sites::sites_create, routes::sites::sites_list, routes::sites::sites_show, routes::sites::sites_update,
        routes::sites::sites_revision, routes::sites::sites_delete,
        routes::assessments::assessments_create, routes::assessments::assessments_list, routes::assessments::assessments_show,
        routes::tables::tables_list, routes::tables::tables_create, routes::tables::tables_show,
        routes::tables::tables_version_add, routes::tables::tables_version_show, routes::tables::tables_version_replace,
        routes::reports::reports_map, routes::reports::reports_csv, routes::reports::reports_geojson,
        routes::reports::reports_distance,
        routes::surveys::surveys_create, routes::surveys::surveys_list, routes::surveys::surveys_show,
        routes::surveys::surveys_reconciliation, routes::surveys::surveys_extrapolation,
        routes::evaluate::evaluate,
        routes::keys::keys_list, routes::keys::keys_create, routes::keys::keys_revoke,
        routes::ops::healthz, routes::ops::readyz, routes::ops::metrics,
    ),
    components(schemas(
        w::SiteDoc, w::CircuitDoc, w::PhaseOverridesDoc, w::PhaseOverrideDoc, w::HarmonicDoc, w::CurrentDoc, w::ConductorDoc,
        w::PositionDoc, w::AreaDoc, l::TableDoc, l::AppliesTo, l::Band, l::Gap,
        e::EvaluateRequest, e::EvaluateResponse, e::PointResult, e::FrequencyResult, e::ComponentsUt, e::ComplexUt,
        a::LoadCase, a::Assessment, s::AssessmentRequest, w::GeoreferenceDoc, m::DistanceResult,
        sv::SurveyDoc, sv::MeterDoc, sv::LoadDoc, sv::PhaseCurrentsDoc, sv::MeasurementDoc, survey::SurveyAnalysis,
    )),
    modifiers(&Security),
    tags(
        (name = "sites", description = "Site models with immutable revisions (ETag / If-Match)"),
        (name = "assessments", description = "Assessments pinned to a site revision and table versions"),
        (name = "tables", description = "Reference-level tables: built-in (read-only) and custom (versioned)"),
        (name = "reports", description = "Field maps (SVG), CSV and GeoJSON exports, distance to a level"),
        (name = "surveys", description = "Spot measurements: reconciliation, load fit, extrapolation to rated load"),
        (name = "evaluate", description = "Stateless field computation"),
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
