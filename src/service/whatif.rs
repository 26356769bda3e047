//! What-if searches on a stored site revision: answered, not stored.

use super::{Caller, Result, Role, Service, tables::stored_table};
use crate::ids::SiteId;
use fluxbound_core::limits::builtin_table;
use fluxbound_core::mitigate::phases::{PhaseSearch, PhaseSearchDoc};
use fluxbound_core::usecase;

impl Service {
    /// Ranks the phase arrangements of the request's circuits in a site
    /// revision (latest if `revision` is absent). The ratio's table is the
    /// request's, else the site's first: built-in, else the organisation's
    /// latest version.
    #[tracing::instrument(name = "whatif_phases", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn whatif_phases(
        &self,
        caller: &Caller,
        site_id: &SiteId,
        revision: Option<i64>,
        request: PhaseSearchDoc,
    ) -> Result<PhaseSearch> {
        caller.require(Role::Assessor)?;
        let (_rev, doc, site) = self.site_doc_at_revision(caller, site_id, revision).await?;
        let mut tables = Vec::new();
        let table_id = request.table.clone().or_else(|| site.tables().first().cloned());
        if let Some(id) = table_id
            && builtin_table(&id).is_none()
            && let Some(v) = self.store().table_version(&caller.org_id, &id, None).await?
        {
            tables.push(stored_table(&v)?);
        }
        let pairs = usecase::segment_count(site.conductors());
        let result =
            self.compute(move |budget| usecase::search_phases(&site, &doc, &request, &tables, budget)).await??;
        self.count_pairs(pairs * result.points);
        Ok(result)
    }
}
