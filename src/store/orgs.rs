//! Organisations and API keys. Keys are stored as the SHA-256 of their
//! secret part only; the secret itself is never stored or logged.

use super::{Backend, Result, Store, WriteTx, col, now};
use crate::ids::{KeyId, OrgId, Timestamp};
use sqlx::any::AnyRow;

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct OrgRow {
    pub id: OrgId,
    pub name: String,
}

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct KeyRow {
    pub id: KeyId,
    pub org_id: OrgId,
    pub role: String,
    /// Hex SHA-256 of the secret.
    pub secret_sha256: String,
    pub label: Option<String>,
    pub created_at: Timestamp,
    pub revoked_at: Option<Timestamp>,
}

fn key_row(r: &AnyRow) -> Result<KeyRow> {
    Ok(KeyRow {
        id: col(r, "id")?,
        org_id: col(r, "org_id")?,
        role: col(r, "role")?,
        secret_sha256: col(r, "secret_sha256")?,
        label: col(r, "label")?,
        created_at: col(r, "created_at")?,
        revoked_at: col(r, "revoked_at")?,
    })
}

const KEY_COLUMNS: &str = "id, org_id, role, secret_sha256, label, created_at, revoked_at";

impl Store {
    /// The organisation named `name`, created if it does not exist.
    pub async fn org_ensure(&self, name: &str) -> Result<OrgRow> {
        let _writer = self.writer().await;
        sqlx::query(
            "INSERT INTO organisations (id, name, created_at) VALUES ($1, $2, $3) ON CONFLICT (name) DO NOTHING",
        )
        .bind(OrgId::generate())
        .bind(name)
        .bind(now())
        .execute(self.pool())
        .await?;
        let r =
            sqlx::query("SELECT id, name FROM organisations WHERE name = $1").bind(name).fetch_one(self.pool()).await?;
        Ok(OrgRow { id: col(&r, "id")?, name: col(&r, "name")? })
    }

    pub async fn org_by_name(&self, name: &str) -> Result<Option<OrgRow>> {
        let r = sqlx::query("SELECT id, name FROM organisations WHERE name = $1")
            .bind(name)
            .fetch_optional(self.pool())
            .await?;
        r.map(|r| Ok(OrgRow { id: col(&r, "id")?, name: col(&r, "name")? })).transpose()
    }

    pub async fn key_insert(
        &self,
        org_id: &OrgId,
        role: &str,
        secret_sha256: &str,
        label: Option<&str>,
    ) -> Result<KeyRow> {
        let _writer = self.writer().await;
        let row = KeyRow {
            id: KeyId::generate(),
            org_id: org_id.clone(),
            role: role.to_string(),
            secret_sha256: secret_sha256.to_string(),
            label: label.map(str::to_string),
            created_at: now(),
            revoked_at: None,
        };
        sqlx::query(
            "INSERT INTO api_keys (id, org_id, role, secret_sha256, label, created_at) VALUES ($1, $2, $3, $4, $5, $6)",
        )
        .bind(&row.id)
        .bind(&row.org_id)
        .bind(&row.role)
        .bind(&row.secret_sha256)
        .bind(&row.label)
        .bind(row.created_at)
        .execute(self.pool())
        .await?;
        Ok(row)
    }

    /// A key by id, revoked or not (the caller checks).
    pub async fn key_find(&self, key_id: &KeyId) -> Result<Option<KeyRow>> {
        let sql = format!("SELECT {KEY_COLUMNS} FROM api_keys WHERE id = $1");
        sqlx::query(sqlx::AssertSqlSafe(sql))
            .bind(key_id)
            .fetch_optional(self.pool())
            .await?
            .as_ref()
            .map(key_row)
            .transpose()
    }

    pub async fn keys_list(&self, org_id: &OrgId) -> Result<Vec<KeyRow>> {
        let sql = format!("SELECT {KEY_COLUMNS} FROM api_keys WHERE org_id = $1 ORDER BY id");
        sqlx::query(sqlx::AssertSqlSafe(sql)).bind(org_id).fetch_all(self.pool()).await?.iter().map(key_row).collect()
    }

    /// Revokes a key of the organisation, unless it is the organisation's
    /// last active admin key (someone must be able to manage keys).
    ///
    /// The check and the revocation are one write transaction that other
    /// revocations in the organisation wait for: on SQLite `BEGIN
    /// IMMEDIATE` (and the writer lock) serialises all writers; on
    /// PostgreSQL the organisation's row is locked `FOR UPDATE` first, so
    /// of two admins revoking each other at the same moment the second
    /// counts after the first has committed and is refused.
    pub async fn key_revoke(&self, org_id: &OrgId, key_id: &KeyId) -> Result<Revoke> {
        let mut tx = self.begin_write().await?;
        if self.backend() == Backend::Postgres {
            sqlx::query("SELECT id FROM organisations WHERE id = $1 FOR UPDATE")
                .bind(org_id)
                .fetch_optional(tx.conn())
                .await?;
        }
        let target: Option<(String, Option<String>)> =
            sqlx::query_as("SELECT role, revoked_at FROM api_keys WHERE id = $1 AND org_id = $2")
                .bind(key_id)
                .bind(org_id)
                .fetch_optional(tx.conn())
                .await?;
        let outcome = match target {
            None => Revoke::NotFound,
            // Revoking twice is not an error: the key is revoked.
            Some((_, Some(_))) => Revoke::Revoked,
            Some((role, None)) if role == ADMIN && self.active_admins(&mut tx, org_id).await? <= 1 => Revoke::LastAdmin,
            Some((_, None)) => {
                sqlx::query("UPDATE api_keys SET revoked_at = $1 WHERE id = $2 AND org_id = $3")
                    .bind(now())
                    .bind(key_id)
                    .bind(org_id)
                    .execute(tx.conn())
                    .await?;
                Revoke::Revoked
            }
        };
        tx.commit().await?;
        Ok(outcome)
    }

    async fn active_admins(&self, tx: &mut WriteTx, org_id: &OrgId) -> Result<i64> {
        Ok(sqlx::query_scalar("SELECT COUNT(*) FROM api_keys WHERE org_id = $1 AND role = $2 AND revoked_at IS NULL")
            .bind(org_id)
            .bind(ADMIN)
            .fetch_one(tx.conn())
            .await?)
    }
}

/// The stored name of the role that manages keys.
const ADMIN: &str = "admin";

/// What [`Store::key_revoke`] did.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Revoke {
    /// The key is revoked (now, or it already was).
    Revoked,
    /// No such key in the organisation.
    NotFound,
    /// The key is the organisation's last active admin key: kept.
    LastAdmin,
}
