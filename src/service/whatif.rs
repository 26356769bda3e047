//! What-if searches on a stored site revision: answered, not stored.

use super::{Caller, Result, Role, Service};
use crate::ids::SiteId;
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
        let table_id = request.table.as_deref().or(site.tables().first().map(String::as_str));
        let tables: Vec<_> = match table_id {
            Some(id) => self.latest_custom_table(caller, id).await?.into_iter().collect(),
            None => Vec::new(),
        };
        let pairs = usecase::segment_count(site.conductors());
        let result =
            self.compute(move |budget| usecase::search_phases(&site, &doc, &request, &tables, budget)).await??;
        self.count_pairs(pairs * result.points);
        Ok(result)
    }
}
