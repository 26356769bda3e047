//! Assessments: run against a pinned site revision and pinned table
//! versions, stored, read back.

use super::{Caller, Result, Role, Service, ServiceError, stored, tables::stored_table, to_json};
use crate::ids::{AssessmentId, SiteId};
use crate::store::{AssessmentRow, NewAssessment, PinnedVersion};
use fluxbound_core::assess::{Assessment, LoadCase, ReviewFraction};
use fluxbound_core::limits::{ReferenceTable, TableChoice, builtin_table, choose_tables, resolve_tables};
use fluxbound_core::usecase::{self, UseCaseError};
use serde::{Deserialize, Serialize};

/// What to assess: which revision (latest if absent), at which load, against
/// which tables (else the site's own, else the default set).
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize, utoipa::ToSchema)]
#[serde(deny_unknown_fields)]
pub struct AssessmentRequest {
    /// Site revision to assess (default: the latest).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[schema(minimum = 1)]
    pub revision: Option<i64>,
    /// The currents to assess at (default: present).
    #[serde(default)]
    pub load: LoadCase,
    /// Table ids (default: the site's own, else the default set).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tables: Option<Vec<String>>,
    /// Assessment options.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub options: Option<AssessmentOptions>,
    /// Custom regimes (ordered tiers of tables with their sentences) to
    /// read the result against, beside the built-in ones.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub regimes: Vec<fluxbound_core::limits::RegimeDoc>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
#[serde(deny_unknown_fields)]
pub struct AssessmentOptions {
    /// Ratio from which a result is `approaching` (0 < fraction < 1, default 0.5).
    #[serde(default)]
    pub review_fraction: ReviewFraction,
}

/// A stored assessment. Its result stays the JSON text it was stored as
/// (`row.result`, in the current form: `Store::open` rewrites older ones),
/// served without being parsed and written again.
#[derive(Debug, Clone, PartialEq)]
pub struct AssessmentView {
    pub row: AssessmentRow,
    pub request: AssessmentRequest,
}

fn view(row: AssessmentRow) -> Result<AssessmentView> {
    Ok(AssessmentView { request: stored(&row.request)?, row })
}

impl Service {
    /// The chosen tables: built-ins, else the organisation's latest version
    /// (pinned so the store can freeze exactly what was used).
    pub(super) async fn resolve_tables(
        &self,
        caller: &Caller,
        choice: &TableChoice,
    ) -> Result<(Vec<ReferenceTable>, Vec<PinnedVersion>)> {
        let mut custom = Vec::new();
        let mut pinned = Vec::new();
        for id in choice.ids.iter().filter(|id| builtin_table(id).is_none()) {
            if let Some(v) = self.store().table_version(&caller.org_id, id, None).await? {
                custom.push(stored_table(&v)?);
                pinned.push(PinnedVersion { table_id: v.table_id, version: v.version, updated_at: v.updated_at });
            }
        }
        let tables = resolve_tables(choice, &custom).map_err(UseCaseError::UnknownTables)?;
        Ok((tables, pinned))
    }

    #[tracing::instrument(name = "assessments_create", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn assessments_create(
        &self,
        caller: &Caller,
        site_id: &SiteId,
        request: AssessmentRequest,
    ) -> Result<AssessmentView> {
        caller.require(Role::Assessor)?;
        let regimes = fluxbound_core::limits::validate_custom_regimes(
            &request.regimes,
            &fluxbound_core::site::Pointer::root().key("regimes"),
        )
        .map_err(ServiceError::Validation)?;
        let (rev, doc, site) = self.site_doc_at_revision(caller, site_id, request.revision).await?;
        usecase::check_assessment_budget(&site, &self.limits().budget())?;
        let choice = choose_tables(request.tables.as_deref().unwrap_or_default(), &[], site.tables());
        let (tables, pinned) = self.resolve_tables(caller, &choice).await?;
        let review_fraction = request.options.as_ref().map(|o| o.review_fraction).unwrap_or_default();
        let load = request.load.clone();
        let pairs = usecase::segment_count(site.conductors());
        let result =
            self.compute(move |budget| usecase::assess_site(&site, &load, &tables, review_fraction, budget)).await??;
        let result = result.with_provenance(super::provenance_now(&doc, Some(rev.revision), None));
        let result = if regimes.is_empty() { result } else { result.with_regimes(&regimes) };
        let points: u64 = result.positions.iter().map(|p| p.heights.len() as u64).sum::<u64>()
            + result.areas.iter().map(|a| a.cells as u64).sum::<u64>();
        self.count_pairs(pairs * points);
        let row = self.store_assessment(caller, &rev, &request, &result, &pinned).await?;
        Ok(AssessmentView { row, request })
    }

    async fn store_assessment(
        &self,
        caller: &Caller,
        rev: &crate::store::RevisionRow,
        request: &AssessmentRequest,
        result: &Assessment,
        pinned: &[PinnedVersion],
    ) -> Result<AssessmentRow> {
        let worst = result.summary.worst_verdict.word();
        let row = self
            .store()
            .assessment_insert(NewAssessment {
                org_id: &caller.org_id,
                site_id: &rev.site.id,
                site_revision: rev.revision,
                request: &to_json(request),
                result: &to_json(result),
                worst_verdict: worst,
                pinned,
            })
            .await?
            .ok_or_else(|| {
                ServiceError::Conflict("a custom table changed while the assessment ran: try again".into())
            })?;
        tracing::info!(assessment = %row.id, revision = rev.revision, worst = %worst, "assessment stored");
        Ok(row)
    }

    #[tracing::instrument(name = "assessments_show", skip_all, fields(org = %caller.org_id, assessment = %id))]
    pub async fn assessments_show(&self, caller: &Caller, id: &AssessmentId) -> Result<AssessmentView> {
        caller.require(Role::Viewer)?;
        view(self.store().assessment_get(&caller.org_id, id).await?.ok_or(ServiceError::NotFound("assessment"))?)
    }

    #[tracing::instrument(name = "assessments_list", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn assessments_list(
        &self,
        caller: &Caller,
        site_id: &SiteId,
        cursor: Option<&str>,
        limit: Option<i64>,
    ) -> Result<(Vec<AssessmentView>, Option<String>)> {
        let (store, org) = (self.store(), caller.org_id.clone());
        self.page_for_site(
            caller,
            site_id,
            limit,
            |n| async move { store.assessments_list(&org, site_id, cursor, n).await },
            view,
            |r| r.id.to_string(),
        )
        .await
    }
}
