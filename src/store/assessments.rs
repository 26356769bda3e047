//! Stored assessments, pinned to the site revision and table versions used.

use super::{Result, Store, col, now};
use crate::ids::{AssessmentId, OrgId, SiteId, TableRecordId, Timestamp};
use sqlx::any::AnyRow;

/// The form stored results are written in (the `result_form` column).
/// Results are served as the text stored, so a change to the JSON shape of
/// an assessment's result bumps this number, and [`Store::open`] rewrites
/// older rows at start (`tests/api/stored_results.rs` fails until it is
/// bumped).
pub const RESULT_FORM: i64 = 1;

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct AssessmentRow {
    pub id: AssessmentId,
    pub site_id: SiteId,
    pub site_revision: i64,
    /// The request as given (JSON).
    pub request: String,
    /// The result (JSON).
    pub result: String,
    pub worst_verdict: String,
    pub created_at: Timestamp,
}

/// A custom table version an assessment used, as it was read (its
/// `updated_at` proves it did not change before it was frozen).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PinnedVersion {
    pub table_id: TableRecordId,
    pub version: i64,
    pub updated_at: Timestamp,
}

#[derive(Debug, Clone)]
pub struct NewAssessment<'a> {
    pub org_id: &'a OrgId,
    pub site_id: &'a SiteId,
    pub site_revision: i64,
    pub request: &'a str,
    pub result: &'a str,
    pub worst_verdict: &'a str,
    pub pinned: &'a [PinnedVersion],
}

fn assessment_row(r: &AnyRow) -> Result<AssessmentRow> {
    Ok(AssessmentRow {
        id: col(r, "id")?,
        site_id: col(r, "site_id")?,
        site_revision: col(r, "site_revision")?,
        request: col(r, "request")?,
        result: col(r, "result")?,
        worst_verdict: col(r, "worst_verdict")?,
        created_at: col(r, "created_at")?,
    })
}

const COLUMNS: &str = "id, site_id, site_revision, request, result, worst_verdict, created_at";

impl Store {
    /// Rewrites every stored result of an older form in the current one
    /// ([`rewrite_result`]), in one write transaction; idempotent, so
    /// replicas starting together may both run it. Returns how many rows it
    /// rewrote.
    pub(crate) async fn refresh_stored_results(&self) -> Result<usize> {
        let mut tx = self.begin_write().await?;
        let rows: Vec<(String, String)> = sqlx::query_as("SELECT id, result FROM assessments WHERE result_form < $1")
            .bind(RESULT_FORM)
            .fetch_all(tx.conn())
            .await?;
        for (id, result) in &rows {
            let text =
                rewrite_result(result).map_err(|why| super::StoreError::Corrupt(format!("assessment {id}: {why}")))?;
            sqlx::query("UPDATE assessments SET result = $1, result_form = $2 WHERE id = $3")
                .bind(text)
                .bind(RESULT_FORM)
                .bind(id)
                .execute(tx.conn())
                .await?;
        }
        tx.commit().await?;
        Ok(rows.len())
    }

    /// Stores an assessment and freezes the table versions it used, in one
    /// transaction. `Ok(None)` if a pinned version changed meanwhile.
    pub async fn assessment_insert(&self, a: NewAssessment<'_>) -> Result<Option<AssessmentRow>> {
        let (id, at) = (AssessmentId::generate(), now());
        let mut tx = self.begin_write().await?;
        for p in a.pinned {
            let done = sqlx::query(
                "UPDATE ref_table_versions SET used = 1 WHERE table_id = $1 AND version = $2 AND updated_at = $3",
            )
            .bind(&p.table_id)
            .bind(p.version)
            .bind(p.updated_at)
            .execute(tx.conn())
            .await?;
            if done.rows_affected() == 0 {
                tx.rollback().await?;
                return Ok(None);
            }
        }
        sqlx::query(
            "INSERT INTO assessments (id, org_id, site_id, site_revision, request, result, worst_verdict, created_at, \
             result_form) VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9)",
        )
        .bind(&id)
        .bind(a.org_id)
        .bind(a.site_id)
        .bind(a.site_revision)
        .bind(a.request)
        .bind(a.result)
        .bind(a.worst_verdict)
        .bind(at)
        .bind(RESULT_FORM)
        .execute(tx.conn())
        .await?;
        tx.commit().await?;
        Ok(Some(AssessmentRow {
            id,
            site_id: a.site_id.clone(),
            site_revision: a.site_revision,
            request: a.request.to_string(),
            result: a.result.to_string(),
            worst_verdict: a.worst_verdict.to_string(),
            created_at: at,
        }))
    }

    pub async fn assessment_get(&self, org_id: &OrgId, id: &AssessmentId) -> Result<Option<AssessmentRow>> {
        let sql = format!("SELECT {COLUMNS} FROM assessments WHERE id = $1 AND org_id = $2");
        sqlx::query(sqlx::AssertSqlSafe(sql))
            .bind(id)
            .bind(org_id)
            .fetch_optional(self.pool())
            .await?
            .as_ref()
            .map(assessment_row)
            .transpose()
    }

    /// Assessments of one site in creation order after `cursor`.
    pub async fn assessments_list(
        &self,
        org_id: &OrgId,
        site_id: &SiteId,
        cursor: Option<&str>,
        limit: i64,
    ) -> Result<Vec<AssessmentRow>> {
        let sql = format!(
            "SELECT {COLUMNS} FROM assessments WHERE org_id = $1 AND site_id = $2 AND id > $3 ORDER BY id LIMIT $4"
        );
        sqlx::query(sqlx::AssertSqlSafe(sql))
            .bind(org_id)
            .bind(site_id)
            .bind(cursor.unwrap_or(""))
            .bind(limit)
            .fetch_all(self.pool())
            .await?
            .iter()
            .map(assessment_row)
            .collect()
    }
}

/// A stored result read with the current type (fields added since it was
/// written take their defaults) and written again in the current form.
fn rewrite_result(text: &str) -> std::result::Result<String, String> {
    let result: fluxbound_core::assess::Assessment = serde_json::from_str(text).map_err(|e| e.to_string())?;
    serde_json::to_string(&result).map_err(|e| e.to_string())
}
