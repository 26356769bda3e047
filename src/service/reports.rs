//! Pictures and exports of a stored assessment: recomputed from its pinned
//! site revision, load case and table versions, so they always match it.

use super::{Caller, Result, Role, Service, ServiceError, one_problem, stored, tables::stored_table};
use fluxbound_core::assess::{AreaMap, Assessment, area_map};
use fluxbound_core::limits::{ReferenceTable, builtin_table};
use fluxbound_core::mitigate::{DistanceResult, Origin, distance_to_level, parse_direction};
use fluxbound_core::report::{csv, geojson, svg};
use fluxbound_core::site::wire::SiteDoc;
use fluxbound_core::site::{Pointer, Site, validate_site};

/// Most grid nodes of one area map (the map is coarsened to fit).
pub const MAP_MAX_CELLS: usize = 40_000;

struct Context {
    site: Site,
    result: Assessment,
    request: super::AssessmentRequest,
    tables: Vec<ReferenceTable>,
}

impl Service {
    async fn report_context(&self, caller: &Caller, id: &str) -> Result<Context> {
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

    fn maps(ctx: &Context) -> Result<Vec<AreaMap>> {
        (0..ctx.site.areas.len())
            .map(|i| {
                area_map(&ctx.site, &ctx.request.load, &ctx.tables, i, MAP_MAX_CELLS).map_err(ServiceError::Validation)
            })
            .collect()
    }

    #[tracing::instrument(name = "reports_map", skip_all, fields(org = %caller.org_id, assessment = %id, area = %area_id))]
    pub async fn reports_map_svg(&self, caller: &Caller, id: &str, area_id: &str) -> Result<String> {
        let ctx = self.report_context(caller, id).await?;
        let index = ctx.site.areas.iter().position(|a| a.id == area_id).ok_or(ServiceError::NotFound("area"))?;
        self.compute(move || {
            let map = area_map(&ctx.site, &ctx.request.load, &ctx.tables, index, MAP_MAX_CELLS)
                .map_err(ServiceError::Validation)?;
            Ok(svg::area_map_svg(&ctx.site, &ctx.result, &map))
        })
        .await?
    }

    #[tracing::instrument(name = "reports_csv", skip_all, fields(org = %caller.org_id, assessment = %id))]
    pub async fn reports_csv(&self, caller: &Caller, id: &str) -> Result<String> {
        let ctx = self.report_context(caller, id).await?;
        Ok(csv::positions_csv(&ctx.result))
    }

    #[tracing::instrument(name = "reports_geojson", skip_all, fields(org = %caller.org_id, assessment = %id))]
    pub async fn reports_geojson(&self, caller: &Caller, id: &str) -> Result<serde_json::Value> {
        let ctx = self.report_context(caller, id).await?;
        self.compute(move || {
            let maps = Self::maps(&ctx)?;
            Ok(geojson::assessment_geojson(&ctx.site, &ctx.result, &maps))
        })
        .await?
    }

    /// Distance from `from` along `direction` to where the field falls below
    /// `level_ut`, at the assessment's load case.
    #[tracing::instrument(name = "reports_distance", skip_all, fields(org = %caller.org_id, assessment = %id))]
    pub async fn reports_distance(
        &self,
        caller: &Caller,
        id: &str,
        from: &str,
        direction: &str,
        level_ut: f64,
    ) -> Result<DistanceResult> {
        if !(level_ut.is_finite() && level_ut > 0.0 && level_ut <= 1.0e9) {
            return Err(ServiceError::Validation(one_problem("/level_ut", "level_ut must be a positive number of µT")));
        }
        let origin = Origin::parse(from).map_err(|e| ServiceError::Validation(one_problem("/from", e)))?;
        let direction =
            parse_direction(direction).map_err(|e| ServiceError::Validation(one_problem("/direction", e)))?;
        let ctx = self.report_context(caller, id).await?;
        let loads =
            ctx.request.load.resolve(&ctx.site, &Pointer::root().key("load")).map_err(ServiceError::Validation)?;
        let at = origin.locate(&ctx.site, &loads).map_err(|e| ServiceError::Validation(one_problem("/from", e)))?;
        self.compute(move || distance_to_level(&ctx.site, &loads, at, direction, level_ut)).await
    }
}
