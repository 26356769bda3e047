//! Reference-level tables: the built-ins (read-only) and an organisation's
//! custom tables with versions.

use super::{Caller, Result, Role, Service, ServiceError, one_problem, stored, to_json};
use crate::store::{TableVersionRow, VersionReplace};
use fluxbound_core::limits::{ReferenceTable, TableDoc, builtin_table, builtin_tables, validate_table};

#[derive(Debug, Clone, PartialEq)]
pub struct TableVersionInfo {
    pub version: i64,
    pub used: bool,
    pub created_at: Option<crate::ids::Timestamp>,
    pub updated_at: Option<crate::ids::Timestamp>,
}

/// A table at one version, and (for custom tables) all its versions.
#[derive(Debug, Clone, PartialEq)]
pub struct TableView {
    pub table: ReferenceTable,
    pub builtin: bool,
    pub latest_version: i64,
    pub versions: Vec<TableVersionInfo>,
}

fn info(v: &TableVersionRow) -> TableVersionInfo {
    TableVersionInfo {
        version: v.version,
        used: v.used,
        created_at: Some(v.created_at),
        updated_at: Some(v.updated_at),
    }
}

fn builtin_view(t: &ReferenceTable) -> TableView {
    TableView {
        table: t.clone(),
        builtin: true,
        latest_version: 1,
        versions: vec![TableVersionInfo { version: 1, used: true, created_at: None, updated_at: None }],
    }
}

/// A stored version as a checked table (it was validated when stored).
pub(super) fn stored_table(v: &TableVersionRow) -> Result<ReferenceTable> {
    let doc: TableDoc = stored(&v.body)?;
    let version = u32::try_from(v.version).map_err(|_| ServiceError::Internal("table version out of range".into()))?;
    Ok(validate_table(doc)
        .map_err(|_| ServiceError::Internal("stored table no longer validates".into()))?
        .with_version(version))
}

impl Service {
    /// The organisation's latest version of custom table `id`; `None` for
    /// a built-in id (those need no lookup) or an id the organisation does
    /// not have (the use case then says it is unknown).
    pub(super) async fn latest_custom_table(&self, caller: &Caller, id: &str) -> Result<Option<ReferenceTable>> {
        if builtin_table(id).is_some() {
            return Ok(None);
        }
        match self.store().table_version(&caller.org_id, id, None).await? {
            Some(v) => Ok(Some(stored_table(&v)?)),
            None => Ok(None),
        }
    }

    #[tracing::instrument(name = "tables_list", skip_all, fields(org = %caller.org_id))]
    pub async fn tables_list(&self, caller: &Caller) -> Result<Vec<TableView>> {
        caller.require(Role::Viewer)?;
        let mut out: Vec<TableView> = builtin_tables().iter().map(builtin_view).collect();
        for t in self.store().tables_list(&caller.org_id).await? {
            let versions = self.store().table_versions(&caller.org_id, &t.key).await?;
            let latest = versions.last().ok_or_else(|| ServiceError::Internal("table without versions".into()))?;
            out.push(TableView {
                table: stored_table(latest)?,
                builtin: false,
                latest_version: t.latest_version,
                versions: versions.iter().map(info).collect(),
            });
        }
        Ok(out)
    }

    /// One table at `version` (latest if `None`).
    #[tracing::instrument(name = "tables_show", skip_all, fields(org = %caller.org_id, table = %key))]
    pub async fn tables_show(&self, caller: &Caller, key: &str, version: Option<i64>) -> Result<TableView> {
        caller.require(Role::Viewer)?;
        if let Some(t) = builtin_table(key) {
            return match version {
                None | Some(1) => Ok(builtin_view(t)),
                Some(_) => Err(ServiceError::NotFound("table version")),
            };
        }
        let t = self.store().table_get(&caller.org_id, key).await?.ok_or(ServiceError::NotFound("table"))?;
        let versions = self.store().table_versions(&caller.org_id, key).await?;
        let chosen = match version {
            None => versions.last(),
            Some(v) => versions.iter().find(|r| r.version == v),
        }
        .ok_or(ServiceError::NotFound("table version"))?;
        Ok(TableView {
            table: stored_table(chosen)?,
            builtin: false,
            latest_version: t.latest_version,
            versions: versions.iter().map(info).collect(),
        })
    }

    fn check_table(doc: TableDoc) -> Result<ReferenceTable> {
        validate_table(doc).map_err(ServiceError::Validation)
    }

    #[tracing::instrument(name = "tables_create", skip_all, fields(org = %caller.org_id))]
    pub async fn tables_create(&self, caller: &Caller, doc: TableDoc) -> Result<TableView> {
        caller.require(Role::Assessor)?;
        let table = Self::check_table(doc)?;
        if builtin_table(table.id()).is_some() {
            return Err(ServiceError::Conflict(format!("'{}' is a built-in table id: choose another id", table.id())));
        }
        let (t, v) = match self.store().table_create(&caller.org_id, table.id(), &to_json(table.doc())).await {
            Err(e) if e.is_unique_violation() => {
                return Err(ServiceError::Conflict(format!("table '{}' exists: add a version instead", table.id())));
            }
            other => other?,
        };
        Ok(TableView { table, builtin: false, latest_version: t.latest_version, versions: vec![info(&v)] })
    }

    fn check_same_id(key: &str, doc: &TableDoc) -> Result<()> {
        if doc.id != key {
            return Err(ServiceError::Validation(one_problem(
                "/id",
                format!("a version of '{key}' must keep the id '{key}'"),
            )));
        }
        Ok(())
    }

    #[tracing::instrument(name = "tables_version_add", skip_all, fields(org = %caller.org_id, table = %key))]
    pub async fn tables_version_add(&self, caller: &Caller, key: &str, doc: TableDoc) -> Result<TableView> {
        caller.require(Role::Assessor)?;
        if builtin_table(key).is_some() {
            return Err(ServiceError::Conflict("built-in tables are read-only".into()));
        }
        Self::check_same_id(key, &doc)?;
        let table = Self::check_table(doc)?;
        self.store()
            .table_version_add(&caller.org_id, key, &to_json(table.doc()))
            .await?
            .ok_or(ServiceError::NotFound("table"))?;
        self.tables_show(caller, key, None).await
    }

    /// Replaces a version that no assessment has used yet.
    #[tracing::instrument(name = "tables_version_replace", skip_all, fields(org = %caller.org_id, table = %key, version))]
    pub async fn tables_version_replace(
        &self,
        caller: &Caller,
        key: &str,
        version: i64,
        doc: TableDoc,
    ) -> Result<TableView> {
        caller.require(Role::Assessor)?;
        if builtin_table(key).is_some() {
            return Err(ServiceError::Conflict("built-in tables are read-only".into()));
        }
        Self::check_same_id(key, &doc)?;
        let table = Self::check_table(doc)?;
        match self.store().table_version_replace(&caller.org_id, key, version, &to_json(table.doc())).await? {
            VersionReplace::Replaced(_) => self.tables_show(caller, key, Some(version)).await,
            VersionReplace::Frozen => Err(ServiceError::Conflict(format!(
                "version {version} of '{key}' was used by an assessment and cannot change: add a new version"
            ))),
            VersionReplace::NotFound => Err(ServiceError::NotFound("table version")),
        }
    }
}
