//! Assessments: run against a pinned site revision and pinned table
//! versions, stored, read back.

use super::{Caller, Result, Role, Service, ServiceError, stored, tables::stored_table, to_json};
use crate::store::{AssessmentRow, NewAssessment, PinnedVersion};
use fluxbound_core::assess::{self, Assessment, LoadCase, Options};
use fluxbound_core::limits::{ReferenceTable, builtin_table, choose_table_ids};
use fluxbound_core::site::{Pointer, Problems};
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
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
#[serde(deny_unknown_fields)]
pub struct AssessmentOptions {
    /// Ratio from which a result is `approaching` (0 < fraction < 1).
    #[serde(default = "half")]
    #[schema(exclusive_minimum = 0, exclusive_maximum = 1)]
    pub review_fraction: f64,
}

fn half() -> f64 {
    0.5
}

#[derive(Debug, Clone, PartialEq)]
pub struct AssessmentView {
    pub row: AssessmentRow,
    pub request: AssessmentRequest,
    pub result: Assessment,
}

fn view(row: AssessmentRow) -> Result<AssessmentView> {
    Ok(AssessmentView { request: stored(&row.request)?, result: stored(&row.result)?, row })
}

impl Service {
    /// Tables by id: built-ins, else the organisation's latest version
    /// (pinned so the store can freeze exactly what was used).
    pub(super) async fn resolve_tables(
        &self,
        caller: &Caller,
        ids: &[String],
        at: &Pointer,
    ) -> Result<(Vec<ReferenceTable>, Vec<PinnedVersion>)> {
        let mut tables = Vec::new();
        let mut pinned = Vec::new();
        let mut problems = Problems::default();
        for (i, id) in ids.iter().enumerate() {
            if let Some(t) = builtin_table(id) {
                tables.push(t.clone());
            } else if let Some(v) = self.store().table_version(&caller.org_id, id, None).await? {
                tables.push(stored_table(&v)?);
                pinned.push(PinnedVersion { table_id: v.table_id, version: v.version, updated_at: v.updated_at });
            } else {
                problems.push(&at.index(i), format!("unknown reference-level table '{id}'"));
            }
        }
        problems.into_result((tables, pinned)).map_err(ServiceError::Validation)
    }

    #[tracing::instrument(name = "assessments_create", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn assessments_create(
        &self,
        caller: &Caller,
        site_id: &str,
        request: AssessmentRequest,
    ) -> Result<AssessmentView> {
        caller.require(Role::Assessor)?;
        let (rev, site) = self.site_at_revision(caller, site_id, request.revision).await?;
        let budget = self.limits().check_assessment_budget(&site);
        if !budget.is_empty() {
            return Err(ServiceError::TooBig(budget));
        }
        let root = Pointer::root();
        let (ids, at) = choose_table_ids(
            vec![
                (request.tables.clone().unwrap_or_default(), root.key("tables")),
                (site.tables.clone(), root.key("site").key("tables")),
            ],
            root.key("tables"),
        );
        let (tables, pinned) = self.resolve_tables(caller, &ids, &at).await?;
        let options = Options {
            review_fraction: request.options.as_ref().map_or(0.5, |o| o.review_fraction),
            max_grid_cells: self.limits().max_grid_cells,
        };
        let load = request.load.clone();
        let pairs = super::bounds::segment_count(&site) as u64;
        let result = self
            .compute(move || assess::assess(&site, &load, &tables, &options))
            .await?
            .map_err(ServiceError::Validation)?;
        let points: u64 = result.positions.iter().map(|p| p.heights.len() as u64).sum::<u64>()
            + result.areas.iter().map(|a| a.cells as u64).sum::<u64>();
        self.count_pairs(pairs * points);
        let worst = result.summary.worst_verdict.word().to_string();
        let row = self
            .store()
            .assessment_insert(NewAssessment {
                org_id: &caller.org_id,
                site_id: &rev.site.id,
                site_revision: rev.revision,
                request: &to_json(&request),
                result: &to_json(&result),
                worst_verdict: &worst,
                pinned: &pinned,
            })
            .await?
            .ok_or_else(|| {
                ServiceError::Conflict("a custom table changed while the assessment ran: try again".into())
            })?;
        tracing::info!(assessment = %row.id, revision = rev.revision, worst = %worst, "assessment stored");
        Ok(AssessmentView { row, request, result })
    }

    #[tracing::instrument(name = "assessments_show", skip_all, fields(org = %caller.org_id, assessment = %id))]
    pub async fn assessments_show(&self, caller: &Caller, id: &str) -> Result<AssessmentView> {
        caller.require(Role::Viewer)?;
        view(self.store().assessment_get(&caller.org_id, id).await?.ok_or(ServiceError::NotFound("assessment"))?)
    }

    #[tracing::instrument(name = "assessments_list", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn assessments_list(
        &self,
        caller: &Caller,
        site_id: &str,
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
            |r| r.id.clone(),
        )
        .await
    }
}
