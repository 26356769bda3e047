//! Sites and their immutable revisions.

use super::fold::{contains_pattern, search_key};
use super::{Result, Store, col, now};
use crate::ids::{OrgId, SiteId, Timestamp};
use sqlx::any::AnyRow;

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SiteRow {
    pub id: SiteId,
    pub name: String,
    pub latest_revision: i64,
    pub created_at: Timestamp,
    pub updated_at: Timestamp,
}

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RevisionRow {
    pub site: SiteRow,
    pub revision: i64,
    /// The site document of this revision (JSON).
    pub body: String,
    pub created_at: Timestamp,
}

/// Result of an optimistic update.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum UpdateOutcome {
    Updated(RevisionRow),
    /// The site's latest revision is not the one the caller saw.
    Stale {
        current: i64,
    },
    NotFound,
}

fn site_row(r: &AnyRow) -> Result<SiteRow> {
    Ok(SiteRow {
        id: col(r, "id")?,
        name: col(r, "name")?,
        latest_revision: col(r, "latest_revision")?,
        created_at: col(r, "created_at")?,
        updated_at: col(r, "updated_at")?,
    })
}

fn revision_row(r: &AnyRow) -> Result<RevisionRow> {
    Ok(RevisionRow {
        site: site_row(r)?,
        revision: col(r, "revision")?,
        body: col(r, "body")?,
        created_at: col(r, "revision_created_at")?,
    })
}

const REVISION_SELECT: &str = "SELECT s.id, s.name, s.latest_revision, s.created_at, s.updated_at, \
     r.revision, r.body, r.created_at AS revision_created_at \
     FROM sites s JOIN site_revisions r ON r.site_id = s.id";

impl Store {
    /// Creates a site with revision 1, in one transaction.
    pub async fn site_create(&self, org_id: &OrgId, name: &str, body: &str) -> Result<RevisionRow> {
        let (id, at) = (SiteId::generate(), now());
        let mut tx = self.begin_write().await?;
        sqlx::query(
            "INSERT INTO sites (id, org_id, name, name_folded, latest_revision, created_at, updated_at) \
             VALUES ($1, $2, $3, $4, 1, $5, $5)",
        )
        .bind(&id)
        .bind(org_id)
        .bind(name)
        .bind(search_key(name))
        .bind(at)
        .execute(tx.conn())
        .await?;
        sqlx::query("INSERT INTO site_revisions (site_id, revision, body, created_at) VALUES ($1, 1, $2, $3)")
            .bind(&id)
            .bind(body)
            .bind(at)
            .execute(tx.conn())
            .await?;
        tx.commit().await?;
        let site = SiteRow { id, name: name.to_string(), latest_revision: 1, created_at: at, updated_at: at };
        Ok(RevisionRow { site, revision: 1, body: body.to_string(), created_at: at })
    }

    /// The latest revision of a live site of the organisation.
    pub async fn site_latest(&self, org_id: &OrgId, id: &SiteId) -> Result<Option<RevisionRow>> {
        let sql = format!(
            "{REVISION_SELECT} WHERE s.id = $1 AND s.org_id = $2 AND s.deleted_at IS NULL AND r.revision = s.latest_revision"
        );
        sqlx::query(sqlx::AssertSqlSafe(sql))
            .bind(id)
            .bind(org_id)
            .fetch_optional(self.pool())
            .await?
            .as_ref()
            .map(revision_row)
            .transpose()
    }

    /// A given revision of a live site of the organisation.
    pub async fn site_revision(&self, org_id: &OrgId, id: &SiteId, revision: i64) -> Result<Option<RevisionRow>> {
        self.revision_row(org_id, id, revision, false).await
    }

    /// A revision of a site of the organisation, deleted or not (an
    /// assessment's pinned revision stays readable after a delete).
    pub async fn site_revision_pinned(
        &self,
        org_id: &OrgId,
        id: &SiteId,
        revision: i64,
    ) -> Result<Option<RevisionRow>> {
        self.revision_row(org_id, id, revision, true).await
    }

    async fn revision_row(
        &self,
        org_id: &OrgId,
        id: &SiteId,
        revision: i64,
        include_deleted: bool,
    ) -> Result<Option<RevisionRow>> {
        let live = if include_deleted { "" } else { " AND s.deleted_at IS NULL" };
        let sql = format!("{REVISION_SELECT} WHERE s.id = $1 AND s.org_id = $2 AND r.revision = $3{live}");
        sqlx::query(sqlx::AssertSqlSafe(sql))
            .bind(id)
            .bind(org_id)
            .bind(revision)
            .fetch_optional(self.pool())
            .await?
            .as_ref()
            .map(revision_row)
            .transpose()
    }

    /// Adds a revision if the latest is still `expected`, in one transaction.
    pub async fn site_update(
        &self,
        org_id: &OrgId,
        id: &SiteId,
        expected: i64,
        name: &str,
        body: &str,
    ) -> Result<UpdateOutcome> {
        let at = now();
        let mut tx = self.begin_write().await?;
        let done = sqlx::query(
            "UPDATE sites SET latest_revision = latest_revision + 1, name = $1, name_folded = $2, updated_at = $3 \
             WHERE id = $4 AND org_id = $5 AND deleted_at IS NULL AND latest_revision = $6",
        )
        .bind(name)
        .bind(search_key(name))
        .bind(at)
        .bind(id)
        .bind(org_id)
        .bind(expected)
        .execute(tx.conn())
        .await?;
        if done.rows_affected() == 0 {
            let current: Option<i64> = sqlx::query_scalar(
                "SELECT latest_revision FROM sites WHERE id = $1 AND org_id = $2 AND deleted_at IS NULL",
            )
            .bind(id)
            .bind(org_id)
            .fetch_optional(tx.conn())
            .await?;
            tx.rollback().await?;
            return Ok(match current {
                Some(current) => UpdateOutcome::Stale { current },
                None => UpdateOutcome::NotFound,
            });
        }
        let revision = expected + 1;
        sqlx::query("INSERT INTO site_revisions (site_id, revision, body, created_at) VALUES ($1, $2, $3, $4)")
            .bind(id)
            .bind(revision)
            .bind(body)
            .bind(at)
            .execute(tx.conn())
            .await?;
        let created: Timestamp =
            sqlx::query_scalar("SELECT created_at FROM sites WHERE id = $1").bind(id).fetch_one(tx.conn()).await?;
        tx.commit().await?;
        let site = SiteRow {
            id: id.clone(),
            name: name.to_string(),
            latest_revision: revision,
            created_at: created,
            updated_at: at,
        };
        Ok(UpdateOutcome::Updated(RevisionRow { site, revision, body: body.to_string(), created_at: at }))
    }

    /// Live sites of the organisation in id (= creation) order after
    /// `cursor`, optionally those whose name contains `name` in any case and
    /// any Unicode normal form: a plain substring match of search keys
    /// ([`search_key`]), the same on both databases.
    pub async fn sites_list(
        &self,
        org_id: &OrgId,
        cursor: Option<&str>,
        limit: i64,
        name: Option<&str>,
    ) -> Result<Vec<SiteRow>> {
        let pattern = name.map(contains_pattern);
        let rows = sqlx::query(
            "SELECT id, name, latest_revision, created_at, updated_at FROM sites \
             WHERE org_id = $1 AND deleted_at IS NULL AND id > $2 \
             AND ($3 = '' OR name_folded LIKE $4 ESCAPE '\\') ORDER BY id LIMIT $5",
        )
        .bind(org_id)
        .bind(cursor.unwrap_or(""))
        .bind(if pattern.is_some() { "x" } else { "" })
        .bind(pattern.unwrap_or_default())
        .bind(limit)
        .fetch_all(self.pool())
        .await?;
        rows.iter().map(site_row).collect()
    }

    /// Writes the search key of every site that has none (rows from before
    /// migration 3: SQL cannot compute the key), in one write transaction.
    /// Idempotent, so replicas that start together may both run it.
    /// Returns how many rows it filled in.
    pub(crate) async fn backfill_name_folded(&self) -> Result<usize> {
        let mut tx = self.begin_write().await?;
        let rows: Vec<(String, String)> =
            sqlx::query_as("SELECT id, name FROM sites WHERE name_folded IS NULL").fetch_all(tx.conn()).await?;
        for (id, name) in &rows {
            sqlx::query("UPDATE sites SET name_folded = $1 WHERE id = $2")
                .bind(search_key(name))
                .bind(id)
                .execute(tx.conn())
                .await?;
        }
        tx.commit().await?;
        Ok(rows.len())
    }

    /// Soft-deletes a live site; its revisions stay for the assessments
    /// that reference them. False if there is no such live site.
    pub async fn site_delete(&self, org_id: &OrgId, id: &SiteId) -> Result<bool> {
        let _writer = self.writer().await;
        let done = sqlx::query("UPDATE sites SET deleted_at = $1 WHERE id = $2 AND org_id = $3 AND deleted_at IS NULL")
            .bind(now())
            .bind(id)
            .bind(org_id)
            .execute(self.pool())
            .await?;
        Ok(done.rows_affected() > 0)
    }
}
