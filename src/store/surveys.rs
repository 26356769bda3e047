//! Stored surveys of a site revision, with their analysis.

use super::{Result, Store, col, now};
use crate::ids::{OrgId, SiteId, SurveyId, Timestamp};
use sqlx::any::AnyRow;

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SurveyRow {
    pub id: SurveyId,
    pub site_id: SiteId,
    pub site_revision: i64,
    /// The survey document (JSON).
    pub body: String,
    /// The analysis (JSON).
    pub result: String,
    pub created_at: Timestamp,
}

fn survey_row(r: &AnyRow) -> Result<SurveyRow> {
    Ok(SurveyRow {
        id: col(r, "id")?,
        site_id: col(r, "site_id")?,
        site_revision: col(r, "site_revision")?,
        body: col(r, "body")?,
        result: col(r, "result")?,
        created_at: col(r, "created_at")?,
    })
}

const COLUMNS: &str = "id, site_id, site_revision, body, result, created_at";

impl Store {
    pub async fn survey_insert(
        &self,
        org_id: &OrgId,
        site_id: &SiteId,
        revision: i64,
        body: &str,
        result: &str,
    ) -> Result<SurveyRow> {
        let (id, at) = (SurveyId::generate(), now());
        let _writer = self.writer().await;
        sqlx::query(
            "INSERT INTO surveys (id, org_id, site_id, site_revision, body, result, created_at) VALUES ($1, $2, $3, $4, $5, $6, $7)",
        )
        .bind(&id)
        .bind(org_id)
        .bind(site_id)
        .bind(revision)
        .bind(body)
        .bind(result)
        .bind(at)
        .execute(self.pool())
        .await?;
        Ok(SurveyRow {
            id,
            site_id: site_id.clone(),
            site_revision: revision,
            body: body.into(),
            result: result.into(),
            created_at: at,
        })
    }

    pub async fn survey_get(&self, org_id: &OrgId, id: &SurveyId) -> Result<Option<SurveyRow>> {
        let sql = format!("SELECT {COLUMNS} FROM surveys WHERE id = $1 AND org_id = $2");
        sqlx::query(sqlx::AssertSqlSafe(sql))
            .bind(id)
            .bind(org_id)
            .fetch_optional(self.pool())
            .await?
            .as_ref()
            .map(survey_row)
            .transpose()
    }

    pub async fn surveys_list(
        &self,
        org_id: &OrgId,
        site_id: &SiteId,
        cursor: Option<&str>,
        limit: i64,
    ) -> Result<Vec<SurveyRow>> {
        let sql = format!(
            "SELECT {COLUMNS} FROM surveys WHERE org_id = $1 AND site_id = $2 AND id > $3 ORDER BY id LIMIT $4"
        );
        sqlx::query(sqlx::AssertSqlSafe(sql))
            .bind(org_id)
            .bind(site_id)
            .bind(cursor.unwrap_or(""))
            .bind(limit)
            .fetch_all(self.pool())
            .await?
            .iter()
            .map(survey_row)
            .collect()
    }
}
