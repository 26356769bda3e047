//! What-if results stored when asked, with their request, pinned to the
//! site revision they were computed on.

use super::{Result, Store, col, now};
use crate::ids::{OrgId, SiteId, Timestamp, WhatIfId};
use sqlx::any::AnyRow;

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct WhatIfRow {
    pub id: WhatIfId,
    pub site_id: SiteId,
    pub site_revision: i64,
    /// `phases`, `scenarios`, `move` or `loop`.
    pub kind: String,
    /// The request (JSON).
    pub request: String,
    /// The result (JSON).
    pub result: String,
    pub created_at: Timestamp,
}

/// A what-if result to store.
#[derive(Debug, Clone)]
pub struct NewWhatIf<'a> {
    pub org_id: &'a OrgId,
    pub site_id: &'a SiteId,
    pub site_revision: i64,
    pub kind: &'a str,
    pub request: &'a str,
    pub result: &'a str,
}

fn whatif_row(r: &AnyRow) -> Result<WhatIfRow> {
    Ok(WhatIfRow {
        id: col(r, "id")?,
        site_id: col(r, "site_id")?,
        site_revision: col(r, "site_revision")?,
        kind: col(r, "kind")?,
        request: col(r, "request")?,
        result: col(r, "result")?,
        created_at: col(r, "created_at")?,
    })
}

const COLUMNS: &str = "id, site_id, site_revision, kind, request, result, created_at";

impl Store {
    /// Stores one what-if result (one statement: written whole or not at all).
    pub async fn whatif_insert(&self, w: NewWhatIf<'_>) -> Result<WhatIfRow> {
        let (id, at) = (WhatIfId::generate(), now());
        let _writer = self.writer().await;
        sqlx::query(
            "INSERT INTO whatif_results (id, org_id, site_id, site_revision, kind, request, result, created_at) \
             VALUES ($1, $2, $3, $4, $5, $6, $7, $8)",
        )
        .bind(&id)
        .bind(w.org_id)
        .bind(w.site_id)
        .bind(w.site_revision)
        .bind(w.kind)
        .bind(w.request)
        .bind(w.result)
        .bind(at)
        .execute(self.pool())
        .await?;
        Ok(WhatIfRow {
            id,
            site_id: w.site_id.clone(),
            site_revision: w.site_revision,
            kind: w.kind.to_string(),
            request: w.request.to_string(),
            result: w.result.to_string(),
            created_at: at,
        })
    }

    pub async fn whatif_get(&self, org_id: &OrgId, id: &WhatIfId) -> Result<Option<WhatIfRow>> {
        let sql = format!("SELECT {COLUMNS} FROM whatif_results WHERE id = $1 AND org_id = $2");
        sqlx::query(sqlx::AssertSqlSafe(sql))
            .bind(id)
            .bind(org_id)
            .fetch_optional(self.pool())
            .await?
            .as_ref()
            .map(whatif_row)
            .transpose()
    }
}
