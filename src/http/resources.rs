//! Response bodies of the API (the wire shapes; units in the field names of
//! the domain documents they carry).

use crate::ids::{AssessmentId, KeyId, SiteId, SurveyId, Timestamp};
use crate::service::{AssessmentRequest, AssessmentView, SiteView, TableView};
use crate::store::{KeyRow, SiteRow};
use fluxbound_core::assess::Assessment;
use fluxbound_core::limits::{CoverageHole, TableDoc};
use fluxbound_core::site::Warning;
use fluxbound_core::site::wire::SiteDoc;
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

/// A site at one revision.
#[derive(Debug, Serialize, ToSchema)]
pub struct SiteResource {
    pub id: SiteId,
    pub name: String,
    /// This revision's number (1, 2, …); also the `ETag`.
    pub revision: i64,
    pub latest_revision: i64,
    pub created_at: Timestamp,
    pub updated_at: Timestamp,
    pub site: SiteDoc,
    /// Model warnings about this revision's document (open ends, no return
    /// path, overlapping conductors, points inside conductors or below
    /// ground), with pointers into `site`. They never block storing it.
    pub warnings: Vec<Warning>,
}

impl From<SiteView> for SiteResource {
    fn from(v: SiteView) -> Self {
        SiteResource {
            id: v.row.site.id,
            // The name as of this revision (the site row holds the latest).
            name: v.doc.name.clone().filter(|n| !n.trim().is_empty()).unwrap_or(v.row.site.name),
            revision: v.row.revision,
            latest_revision: v.row.site.latest_revision,
            created_at: v.row.site.created_at,
            updated_at: v.row.site.updated_at,
            site: v.doc,
            warnings: v.warnings,
        }
    }
}

/// A site in a list (no document).
#[derive(Debug, Serialize, ToSchema)]
pub struct SiteSummary {
    pub id: SiteId,
    pub name: String,
    pub latest_revision: i64,
    pub created_at: Timestamp,
    pub updated_at: Timestamp,
}

impl From<SiteRow> for SiteSummary {
    fn from(r: SiteRow) -> Self {
        SiteSummary {
            id: r.id,
            name: r.name,
            latest_revision: r.latest_revision,
            created_at: r.created_at,
            updated_at: r.updated_at,
        }
    }
}

#[derive(Debug, Serialize, ToSchema)]
pub struct SitePage {
    pub items: Vec<SiteSummary>,
    /// Pass as `cursor` to get the next page; absent on the last page.
    #[schema(required = true)]
    pub next_cursor: Option<String>,
}

#[derive(Debug, Serialize, ToSchema)]
pub struct TableVersionResource {
    pub version: i64,
    /// True once an assessment used this version: it can no longer change.
    pub used: bool,
    #[schema(required = true)]
    pub created_at: Option<Timestamp>,
    #[schema(required = true)]
    pub updated_at: Option<Timestamp>,
}

/// A reference-level table at one version, with the list of its versions.
#[derive(Debug, Serialize, ToSchema)]
pub struct TableResource {
    pub id: String,
    pub builtin: bool,
    pub version: u32,
    pub latest_version: i64,
    pub versions: Vec<TableVersionResource>,
    pub table: TableDoc,
    /// Frequency ranges within 1 Hz–10 MHz where this table gives no level
    /// (below, between or above its bands), in plain words; empty when it
    /// covers the whole span.
    pub coverage_holes: Vec<CoverageHole>,
}

impl From<TableView> for TableResource {
    fn from(v: TableView) -> Self {
        TableResource {
            id: v.table.id().to_string(),
            builtin: v.builtin,
            version: v.table.version(),
            latest_version: v.latest_version,
            versions: v
                .versions
                .into_iter()
                .map(|i| TableVersionResource {
                    version: i.version,
                    used: i.used,
                    created_at: i.created_at,
                    updated_at: i.updated_at,
                })
                .collect(),
            coverage_holes: fluxbound_core::limits::coverage_holes(&v.table),
            table: v.table.doc().clone(),
        }
    }
}

#[derive(Debug, Serialize, ToSchema)]
pub struct TableList {
    pub items: Vec<TableResource>,
}

// The schema of the text `assessment_json` writes; never built as a value
// (the result is put in as the text stored).
/// A stored assessment: the request, the pinned site revision and the result.
#[derive(Debug, Serialize, ToSchema)]
pub struct AssessmentResource {
    pub id: AssessmentId,
    pub site_id: SiteId,
    pub site_revision: i64,
    pub created_at: Timestamp,
    pub request: AssessmentRequest,
    pub result: Assessment,
}

/// The JSON text of an [`AssessmentResource`]: its fields written by serde,
/// the result put in as the text stored (no parse, no second writing).
pub fn assessment_json(v: &AssessmentView) -> String {
    #[derive(Serialize)]
    struct Head<'a> {
        id: &'a AssessmentId,
        site_id: &'a SiteId,
        site_revision: i64,
        created_at: &'a Timestamp,
        request: &'a AssessmentRequest,
    }
    let row = &v.row;
    let head = Head {
        id: &row.id,
        site_id: &row.site_id,
        site_revision: row.site_revision,
        created_at: &row.created_at,
        request: &v.request,
    };
    let mut out = serde_json::to_string(&head).expect("serialising plain data cannot fail");
    out.pop(); // the closing brace
    out.reserve(row.result.len() + 12);
    out.push_str(",\"result\":");
    out.push_str(&row.result);
    out.push('}');
    out
}

/// The JSON text of an [`AssessmentPage`], each item by [`assessment_json`].
pub fn assessment_page_json(items: &[AssessmentView], next_cursor: Option<&str>) -> String {
    let mut out = String::from("{\"items\":[");
    for (i, v) in items.iter().enumerate() {
        if i > 0 {
            out.push(',');
        }
        out.push_str(&assessment_json(v));
    }
    out.push_str("],\"next_cursor\":");
    out.push_str(&serde_json::to_string(&next_cursor).expect("serialising plain data cannot fail"));
    out.push('}');
    out
}

// The schema of the text `assessment_page_json` writes.
#[derive(Debug, Serialize, ToSchema)]
pub struct AssessmentPage {
    pub items: Vec<AssessmentResource>,
    #[schema(required = true)]
    pub next_cursor: Option<String>,
}

/// An API key (never its secret).
#[derive(Debug, Serialize, ToSchema)]
pub struct KeyResource {
    #[schema(pattern = "^[0-9a-f]{32}$")]
    pub id: KeyId,
    /// `viewer`, `assessor` or `admin`.
    pub role: String,
    #[schema(required = true)]
    pub label: Option<String>,
    pub created_at: Timestamp,
    #[schema(required = true)]
    pub revoked_at: Option<Timestamp>,
}

impl From<KeyRow> for KeyResource {
    fn from(r: KeyRow) -> Self {
        KeyResource { id: r.id, role: r.role, label: r.label, created_at: r.created_at, revoked_at: r.revoked_at }
    }
}

#[derive(Debug, Serialize, ToSchema)]
pub struct KeyList {
    pub items: Vec<KeyResource>,
}

/// A new key. `secret` is shown once and never again.
#[derive(Debug, Serialize, ToSchema)]
pub struct KeyCreated {
    pub key: KeyResource,
    /// The bearer token: `Authorization: Bearer <secret>`.
    pub secret: String,
}

#[derive(Debug, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct KeyCreate {
    /// `viewer`, `assessor` or `admin`.
    #[schema(pattern = "^(viewer|assessor|admin)$")]
    pub role: String,
    /// A label for people (at most 100 characters).
    #[schema(max_length = 100)]
    pub label: Option<String>,
}

#[derive(Debug, Serialize, ToSchema)]
pub struct Health {
    /// `ok`.
    pub status: String,
}

/// A stored survey with its analysis.
#[derive(Debug, Serialize, ToSchema)]
pub struct SurveyResource {
    pub id: SurveyId,
    pub site_id: SiteId,
    pub site_revision: i64,
    pub created_at: Timestamp,
    pub survey: fluxbound_core::survey::wire::SurveyDoc,
    pub analysis: fluxbound_core::survey::SurveyAnalysis,
}

impl From<crate::service::SurveyView> for SurveyResource {
    fn from(v: crate::service::SurveyView) -> Self {
        SurveyResource {
            id: v.row.id,
            site_id: v.row.site_id,
            site_revision: v.row.site_revision,
            created_at: v.row.created_at,
            survey: v.survey,
            analysis: v.analysis,
        }
    }
}

#[derive(Debug, Serialize, ToSchema)]
pub struct SurveyPage {
    pub items: Vec<SurveyResource>,
    #[schema(required = true)]
    pub next_cursor: Option<String>,
}

/// The reconciliation and load fit of a stored survey.
#[derive(Debug, Serialize, ToSchema)]
pub struct SurveyReconciliation {
    pub reconciliation: fluxbound_core::survey::Reconciliation,
    pub load_fit: fluxbound_core::survey::LoadFit,
    /// Cautions that apply to every result.
    pub cautions: Vec<String>,
    /// Model warnings about the surveyed site revision.
    pub warnings: Vec<Warning>,
}

/// The extrapolation of a stored survey to rated load.
#[derive(Debug, Serialize, ToSchema)]
pub struct SurveyExtrapolation {
    /// `null` when a circuit has no rated current (named in the notes).
    #[schema(required = true)]
    pub extrapolation: Option<fluxbound_core::survey::Extrapolation>,
    pub notes: Vec<String>,
    /// Cautions that apply to every result.
    pub cautions: Vec<String>,
    /// Model warnings about the surveyed site revision.
    pub warnings: Vec<Warning>,
}

/// A stored what-if result with its request.
#[derive(Debug, Serialize, ToSchema)]
pub struct WhatIfResource {
    pub id: crate::ids::WhatIfId,
    pub site_id: SiteId,
    pub site_revision: i64,
    pub created_at: Timestamp,
    /// `phases`, `scenarios`, `move` or `loop`.
    #[schema(pattern = "^(phases|scenarios|move|loop)$")]
    pub kind: String,
    /// The request as given (the body of the what-if route of `kind`).
    #[schema(value_type = Object)]
    pub request: serde_json::Value,
    /// The result: a `PhaseSearch`, `ScenarioResults`, `MoveResult` or
    /// `LoopResult` by `kind`.
    #[schema(value_type = Object)]
    pub result: serde_json::Value,
}

impl TryFrom<crate::store::WhatIfRow> for WhatIfResource {
    type Error = crate::service::ServiceError;
    fn try_from(row: crate::store::WhatIfRow) -> Result<Self, Self::Error> {
        let json = |text: &str| {
            serde_json::from_str(text).map_err(|e| {
                crate::service::ServiceError::Internal(format!("stored what-if {} is not JSON: {e}", row.id))
            })
        };
        Ok(WhatIfResource {
            request: json(&row.request)?,
            result: json(&row.result)?,
            id: row.id,
            site_id: row.site_id,
            site_revision: row.site_revision,
            created_at: row.created_at,
            kind: row.kind,
        })
    }
}
