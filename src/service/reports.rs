//! Pictures and exports of a stored assessment: recomputed from its pinned
//! site revision, load case and table versions, so they always match it.

use super::{Caller, Result, Role, Service, ServiceError, stored, tables::stored_table};
use crate::ids::AssessmentId;
use fluxbound_core::assess::Assessment;
use fluxbound_core::limits::{ReferenceTable, builtin_table};
use fluxbound_core::mitigate::DistanceResult;
use fluxbound_core::site::wire::SiteDoc;
use fluxbound_core::site::{Site, validate_site};
use fluxbound_core::usecase::{self, DistanceQuery, DistanceTo};

struct Context {
    site: Site,
    result: Assessment,
    request: super::AssessmentRequest,
    tables: Vec<ReferenceTable>,
}

impl Service {
    async fn report_context(&self, caller: &Caller, id: &AssessmentId) -> Result<Context> {
        caller.require(Role::Viewer)?;
        let row = self.store().assessment_get(&caller.org_id, id).await?.ok_or(ServiceError::NotFound("assessment"))?;
        let rev = self
            .store()
            .site_revision_pinned(&caller.org_id, &row.site_id, row.site_revision)
            .await?
            .ok_or(ServiceError::NotFound("site revision"))?;
        let doc: SiteDoc = stored(&rev.body)?;
        let site = validate_site(&doc).map_err(ServiceError::Validation)?;
        let result: Assessment = stored(&row.result)?;
        let request: super::AssessmentRequest = stored(&row.request)?;
        let mut tables = Vec::new();
        for t in &result.tables {
            match builtin_table(&t.id) {
                Some(b) => tables.push(b.clone()),
                None => {
                    let v = self
                        .store()
                        .table_version(&caller.org_id, &t.id, Some(i64::from(t.version)))
                        .await?
                        .ok_or(ServiceError::NotFound("table version"))?;
                    tables.push(stored_table(&v)?);
                }
            }
        }
        Ok(Context { site, result, request, tables })
    }

    #[tracing::instrument(name = "reports_map", skip_all, fields(org = %caller.org_id, assessment = %id, area = %area_id))]
    pub async fn reports_map_svg(
        &self,
        caller: &Caller,
        id: &AssessmentId,
        area_id: &str,
        band_table: Option<String>,
    ) -> Result<String> {
        let ctx = self.report_context(caller, id).await?;
        if !ctx.site.areas().iter().any(|a| a.id == area_id) {
            return Err(ServiceError::NotFound("area"));
        }
        let area_id = area_id.to_string();
        let svg = self
            .compute(move |budget| {
                let band = band_table.as_deref();
                usecase::area_map_svg(&ctx.site, &ctx.result, &ctx.request.load, &ctx.tables, &area_id, band, budget)
            })
            .await??;
        Ok(svg)
    }

    #[tracing::instrument(name = "reports_csv", skip_all, fields(org = %caller.org_id, assessment = %id))]
    pub async fn reports_csv(&self, caller: &Caller, id: &AssessmentId) -> Result<String> {
        let ctx = self.report_context(caller, id).await?;
        Ok(usecase::export_csv(&ctx.result))
    }

    #[tracing::instrument(name = "reports_geojson", skip_all, fields(org = %caller.org_id, assessment = %id))]
    pub async fn reports_geojson(&self, caller: &Caller, id: &AssessmentId) -> Result<serde_json::Value> {
        let ctx = self.report_context(caller, id).await?;
        let doc = self
            .compute(move |budget| {
                usecase::export_geojson(&ctx.site, &ctx.result, &ctx.request.load, &ctx.tables, budget)
            })
            .await??;
        Ok(doc)
    }

    /// First crossing and clearance from `from` along `direction` (or the
    /// shortest clearance) to a level or a table, at the assessment's load
    /// case; a table is looked up among the assessment's pinned tables,
    /// then the built-in ones, then the organisation's latest versions.
    #[tracing::instrument(name = "reports_distance", skip_all, fields(org = %caller.org_id, assessment = %id))]
    pub async fn reports_distance(
        &self,
        caller: &Caller,
        id: &AssessmentId,
        from: &str,
        direction: Option<&str>,
        to: DistanceTo,
    ) -> Result<DistanceResult> {
        let query = DistanceQuery::new(from, direction, to.clone())?;
        let mut ctx = self.report_context(caller, id).await?;
        if let DistanceTo::Table(table_id) = &to
            && !ctx.tables.iter().any(|t| t.id() == table_id)
            && let Some(t) = self.latest_custom_table(caller, table_id).await?
        {
            ctx.tables.push(t);
        }
        let result = self
            .compute(move |budget| usecase::distance(&ctx.site, &ctx.request.load, &query, &ctx.tables, budget))
            .await??;
        self.count_pairs(result.pairs_used);
        Ok(result)
    }
}
