//! An organisation's custom reference-level tables and their versions. A
//! version can be replaced until an assessment uses it; then it is frozen.

use super::{Result, Store, col, now};
use crate::ids::{OrgId, TableRecordId, Timestamp};
use sqlx::any::AnyRow;

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TableRow {
    pub id: TableRecordId,
    /// The table's own id (its `id` field), unique per organisation.
    pub key: String,
    pub latest_version: i64,
    pub created_at: Timestamp,
}

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TableVersionRow {
    pub table_id: TableRecordId,
    pub version: i64,
    /// The table document (JSON).
    pub body: String,
    pub used: bool,
    pub created_at: Timestamp,
    pub updated_at: Timestamp,
}

#[derive(Debug, Clone, PartialEq, Eq)]
pub enum VersionReplace {
    Replaced(TableVersionRow),
    /// An assessment used this version: it can no longer change.
    Frozen,
    NotFound,
}

fn table_row(r: &AnyRow) -> Result<TableRow> {
    Ok(TableRow {
        id: col(r, "id")?,
        key: col(r, "table_key")?,
        latest_version: col(r, "latest_version")?,
        created_at: col(r, "created_at")?,
    })
}

fn version_row(r: &AnyRow) -> Result<TableVersionRow> {
    Ok(TableVersionRow {
        table_id: col(r, "table_id")?,
        version: col(r, "version")?,
        body: col(r, "body")?,
        used: col::<i64>(r, "used")? != 0,
        created_at: col(r, "created_at")?,
        updated_at: col(r, "updated_at")?,
    })
}

const VERSION_COLUMNS: &str = "v.table_id, v.version, v.body, v.used, v.created_at, v.updated_at";

impl Store {
    /// Creates a custom table with version 1 (unique per organisation).
    pub async fn table_create(&self, org_id: &OrgId, key: &str, body: &str) -> Result<(TableRow, TableVersionRow)> {
        let (id, at) = (TableRecordId::generate(), now());
        let mut tx = self.begin_write().await?;
        sqlx::query(
            "INSERT INTO ref_tables (id, org_id, table_key, latest_version, created_at) VALUES ($1, $2, $3, 1, $4)",
        )
        .bind(&id)
        .bind(org_id)
        .bind(key)
        .bind(at)
        .execute(tx.conn())
        .await?;
        sqlx::query(
            "INSERT INTO ref_table_versions (table_id, version, body, used, created_at, updated_at) VALUES ($1, 1, $2, 0, $3, $3)",
        )
        .bind(&id)
        .bind(body)
        .bind(at)
        .execute(tx.conn())
        .await?;
        tx.commit().await?;
        let t = TableRow { id: id.clone(), key: key.to_string(), latest_version: 1, created_at: at };
        let v = TableVersionRow {
            table_id: id,
            version: 1,
            body: body.to_string(),
            used: false,
            created_at: at,
            updated_at: at,
        };
        Ok((t, v))
    }

    pub async fn table_get(&self, org_id: &OrgId, key: &str) -> Result<Option<TableRow>> {
        sqlx::query(
            "SELECT id, table_key, latest_version, created_at FROM ref_tables WHERE org_id = $1 AND table_key = $2",
        )
        .bind(org_id)
        .bind(key)
        .fetch_optional(self.pool())
        .await?
        .as_ref()
        .map(table_row)
        .transpose()
    }

    pub async fn tables_list(&self, org_id: &OrgId) -> Result<Vec<TableRow>> {
        sqlx::query(
            "SELECT id, table_key, latest_version, created_at FROM ref_tables WHERE org_id = $1 ORDER BY table_key",
        )
        .bind(org_id)
        .fetch_all(self.pool())
        .await?
        .iter()
        .map(table_row)
        .collect()
    }

    pub async fn table_versions(&self, org_id: &OrgId, key: &str) -> Result<Vec<TableVersionRow>> {
        let sql = format!(
            "SELECT {VERSION_COLUMNS} FROM ref_table_versions v JOIN ref_tables t ON t.id = v.table_id \
             WHERE t.org_id = $1 AND t.table_key = $2 ORDER BY v.version"
        );
        sqlx::query(sqlx::AssertSqlSafe(sql))
            .bind(org_id)
            .bind(key)
            .fetch_all(self.pool())
            .await?
            .iter()
            .map(version_row)
            .collect()
    }

    /// One version; `None` for the latest.
    pub async fn table_version(
        &self,
        org_id: &OrgId,
        key: &str,
        version: Option<i64>,
    ) -> Result<Option<TableVersionRow>> {
        let sql = format!(
            "SELECT {VERSION_COLUMNS} FROM ref_table_versions v JOIN ref_tables t ON t.id = v.table_id \
             WHERE t.org_id = $1 AND t.table_key = $2 AND v.version = COALESCE($3, t.latest_version)"
        );
        sqlx::query(sqlx::AssertSqlSafe(sql))
            .bind(org_id)
            .bind(key)
            .bind(version)
            .fetch_optional(self.pool())
            .await?
            .as_ref()
            .map(version_row)
            .transpose()
    }

    /// Adds the next version of a table; `None` if there is no such table.
    pub async fn table_version_add(&self, org_id: &OrgId, key: &str, body: &str) -> Result<Option<TableVersionRow>> {
        let at = now();
        let mut tx = self.begin_write().await?;
        let done = sqlx::query(
            "UPDATE ref_tables SET latest_version = latest_version + 1 WHERE org_id = $1 AND table_key = $2",
        )
        .bind(org_id)
        .bind(key)
        .execute(tx.conn())
        .await?;
        if done.rows_affected() == 0 {
            tx.rollback().await?;
            return Ok(None);
        }
        let r = sqlx::query("SELECT id, latest_version FROM ref_tables WHERE org_id = $1 AND table_key = $2")
            .bind(org_id)
            .bind(key)
            .fetch_one(tx.conn())
            .await?;
        let (table_id, version): (TableRecordId, i64) = (col(&r, "id")?, col(&r, "latest_version")?);
        sqlx::query(
            "INSERT INTO ref_table_versions (table_id, version, body, used, created_at, updated_at) VALUES ($1, $2, $3, 0, $4, $4)",
        )
        .bind(&table_id)
        .bind(version)
        .bind(body)
        .bind(at)
        .execute(tx.conn())
        .await?;
        tx.commit().await?;
        Ok(Some(TableVersionRow {
            table_id,
            version,
            body: body.to_string(),
            used: false,
            created_at: at,
            updated_at: at,
        }))
    }

    /// Replaces a version's content unless an assessment has used it.
    pub async fn table_version_replace(
        &self,
        org_id: &OrgId,
        key: &str,
        version: i64,
        body: &str,
    ) -> Result<VersionReplace> {
        let _writer = self.writer().await;
        let Some(current) = self.table_version(org_id, key, Some(version)).await? else {
            return Ok(VersionReplace::NotFound);
        };
        let at = now();
        let done = sqlx::query(
            "UPDATE ref_table_versions SET body = $1, updated_at = $2 WHERE table_id = $3 AND version = $4 AND used = 0",
        )
        .bind(body)
        .bind(at)
        .bind(&current.table_id)
        .bind(version)
        .execute(self.pool())
        .await?;
        if done.rows_affected() == 0 {
            return Ok(VersionReplace::Frozen);
        }
        Ok(VersionReplace::Replaced(TableVersionRow { body: body.to_string(), updated_at: at, ..current }))
    }
}
