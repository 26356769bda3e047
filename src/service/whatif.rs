//! What-if answers on a stored site revision: phase arrangements, load
//! scenarios, moves and passive loops. Answered, and stored with their
//! request only when asked.

use super::{Caller, Result, Role, Service, ServiceError};
use crate::ids::{SiteId, WhatIfId};
use crate::store::{NewWhatIf, WhatIfRow};
use fluxbound_core::limits::ReferenceTable;
use fluxbound_core::mitigate::loops::{LoopDoc, LoopResult};
use fluxbound_core::mitigate::moves::{MoveDoc, MoveResult};
use fluxbound_core::mitigate::phases::{PhaseSearch, PhaseSearchDoc};
use fluxbound_core::mitigate::scenarios::{ScenarioResults, ScenariosDoc};
use fluxbound_core::site::Site;
use fluxbound_core::site::wire::SiteDoc;
use fluxbound_core::usecase::{self, Budget, UseCaseError};
use serde::Serialize;

/// Which site revision a what-if runs on, and whether to store it.
#[derive(Debug, Clone, Copy, Default)]
pub struct WhatIfOn {
    /// The latest when absent.
    pub revision: Option<i64>,
    pub store: bool,
}

/// A what-if's answer and, when stored, its row.
#[derive(Debug)]
pub struct WhatIfAnswer<T> {
    pub result: T,
    pub stored: Option<WhatIfRow>,
}

impl Service {
    /// Ranks the phase arrangements of the request's circuits
    /// ([`fluxbound_core::mitigate::phases`]).
    #[tracing::instrument(name = "whatif_phases", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn whatif_phases(
        &self,
        caller: &Caller,
        site_id: &SiteId,
        on: WhatIfOn,
        request: PhaseSearchDoc,
    ) -> Result<WhatIfAnswer<PhaseSearch>> {
        let table = request.table.clone();
        self.whatif(caller, site_id, on, "phases", request, table, |site, doc, req, tables, budget| {
            usecase::search_phases(site, doc, req, tables, budget)
        })
        .await
    }

    /// Judges a batch of load scenarios ([`fluxbound_core::mitigate::scenarios`]).
    #[tracing::instrument(name = "whatif_scenarios", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn whatif_scenarios(
        &self,
        caller: &Caller,
        site_id: &SiteId,
        on: WhatIfOn,
        request: ScenariosDoc,
    ) -> Result<WhatIfAnswer<ScenarioResults>> {
        let table = request.table.clone();
        self.whatif(caller, site_id, on, "scenarios", request, table, |site, _, req, tables, budget| {
            usecase::run_scenarios(site, req, tables, budget)
        })
        .await
    }

    /// Judges a move of conductors or positions ([`fluxbound_core::mitigate::moves`]).
    #[tracing::instrument(name = "whatif_move", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn whatif_move(
        &self,
        caller: &Caller,
        site_id: &SiteId,
        on: WhatIfOn,
        request: MoveDoc,
    ) -> Result<WhatIfAnswer<MoveResult>> {
        let table = request.table.clone();
        self.whatif(caller, site_id, on, "move", request, table, |site, doc, req, tables, budget| {
            usecase::run_move(site, doc, req, tables, budget)
        })
        .await
    }

    /// Judges a passive loop added to the site ([`fluxbound_core::mitigate::loops`]).
    #[tracing::instrument(name = "whatif_loop", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn whatif_loop(
        &self,
        caller: &Caller,
        site_id: &SiteId,
        on: WhatIfOn,
        request: LoopDoc,
    ) -> Result<WhatIfAnswer<LoopResult>> {
        let table = request.table.clone();
        self.whatif(caller, site_id, on, "loop", request, table, |site, _, req, tables, budget| {
            usecase::run_loop(site, req, tables, budget)
        })
        .await
    }

    /// A stored what-if result.
    pub async fn whatif_show(&self, caller: &Caller, id: &WhatIfId) -> Result<WhatIfRow> {
        caller.require(Role::Viewer)?;
        self.store().whatif_get(&caller.org_id, id).await?.ok_or(ServiceError::NotFound("what-if result"))
    }

    /// Runs one what-if on a site revision: the assessor role, the ratio's
    /// tables as the request names one, else all the site names (built-in,
    /// else the organisation's latest version), the work in a compute slot, and
    /// the result stored with its request when asked.
    #[allow(clippy::too_many_arguments)]
    async fn whatif<Req, Res>(
        &self,
        caller: &Caller,
        site_id: &SiteId,
        on: WhatIfOn,
        kind: &'static str,
        request: Req,
        table: Option<String>,
        run: impl FnOnce(&Site, &SiteDoc, &Req, &[ReferenceTable], &Budget) -> std::result::Result<Res, UseCaseError>
        + Send
        + 'static,
    ) -> Result<WhatIfAnswer<Res>>
    where
        Req: Serialize + Send + 'static,
        Res: Serialize + Send + 'static,
    {
        caller.require(Role::Assessor)?;
        let (rev, doc, site) = self.site_doc_at_revision(caller, site_id, on.revision).await?;
        // The organisation's latest version of every custom table the
        // what-if may judge by: the request's, else all the site names.
        let ids: Vec<String> = match table {
            Some(id) => vec![id],
            None => site.tables().to_vec(),
        };
        let mut tables = Vec::new();
        for id in &ids {
            tables.extend(self.latest_custom_table(caller, id).await?);
        }
        let (result, request) = self
            .compute(move |budget| {
                let out = run(&site, &doc, &request, &tables, budget);
                (out, request)
            })
            .await?;
        let result = result?;
        let stored = if on.store {
            let request = serde_json::to_string(&request).map_err(|e| ServiceError::Internal(e.to_string()))?;
            let text = serde_json::to_string(&result).map_err(|e| ServiceError::Internal(e.to_string()))?;
            Some(
                self.store()
                    .whatif_insert(NewWhatIf {
                        org_id: &caller.org_id,
                        site_id,
                        site_revision: rev.revision,
                        kind,
                        request: &request,
                        result: &text,
                    })
                    .await?,
            )
        } else {
            None
        };
        Ok(WhatIfAnswer { result, stored })
    }
}
