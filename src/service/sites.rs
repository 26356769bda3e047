//! Sites: create, list, show, update (new immutable revision), revisions,
//! delete (soft).

use super::{Caller, Result, Role, Service, ServiceError, page_limit, stored, to_json};
use crate::ids::SiteId;

/// An `If-Match` precondition on a site update.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum IfMatch {
    Missing,
    /// `*`: any current revision.
    Any,
    /// The revisions the caller accepts as current.
    OneOf(Vec<i64>),
}
use crate::store::{RevisionRow, SiteRow, UpdateOutcome};
use fluxbound_core::site::wire::SiteDoc;
use fluxbound_core::site::{Warning, validate_site};
use fluxbound_core::usecase;

/// A site revision with its document.
#[derive(Debug, Clone, PartialEq)]
pub struct SiteView {
    pub row: RevisionRow,
    pub doc: SiteDoc,
    /// The document's model warnings (they never block storing it).
    pub warnings: Vec<Warning>,
}

fn view(row: RevisionRow) -> Result<SiteView> {
    let doc = stored(&row.body)?;
    // A stored document passed validation when stored; should a later, stricter
    // rule reject it, it is shown without warnings rather than not at all.
    let warnings = validate_site(&doc).map(|s| usecase::site_warnings(&s)).unwrap_or_default();
    Ok(SiteView { row, doc, warnings })
}

fn display_name(doc: &SiteDoc) -> String {
    doc.name.clone().filter(|n| !n.trim().is_empty()).unwrap_or_else(|| "unnamed site".to_string())
}

impl Service {
    /// Validates a site document fully (rules and size bounds) and returns
    /// its model warnings.
    fn check_site_doc(&self, doc: &SiteDoc) -> Result<Vec<Warning>> {
        let site = validate_site(doc).map_err(ServiceError::Validation)?;
        let bounds = self.limits().check_site(&site);
        if bounds.is_empty() { Ok(usecase::site_warnings(&site)) } else { Err(ServiceError::TooBig(bounds)) }
    }

    #[tracing::instrument(name = "sites_create", skip_all, fields(org = %caller.org_id))]
    pub async fn sites_create(&self, caller: &Caller, doc: SiteDoc) -> Result<SiteView> {
        caller.require(Role::Assessor)?;
        let warnings = self.check_site_doc(&doc)?;
        let row = self.store().site_create(&caller.org_id, &display_name(&doc), &to_json(&doc)).await?;
        tracing::info!(site = %row.site.id, warnings = warnings.len(), "site created");
        Ok(SiteView { row, doc, warnings })
    }

    #[tracing::instrument(name = "sites_list", skip_all, fields(org = %caller.org_id))]
    pub async fn sites_list(
        &self,
        caller: &Caller,
        cursor: Option<&str>,
        limit: Option<i64>,
        name: Option<&str>,
    ) -> Result<(Vec<SiteRow>, Option<String>)> {
        caller.require(Role::Viewer)?;
        let limit = page_limit(limit)?;
        let rows = self.store().sites_list(&caller.org_id, cursor, limit + 1, name).await?;
        Ok(super::paginate(rows, limit, |r| r.id.to_string()))
    }

    #[tracing::instrument(name = "sites_show", skip_all, fields(org = %caller.org_id, site = %id))]
    pub async fn sites_show(&self, caller: &Caller, id: &SiteId) -> Result<SiteView> {
        caller.require(Role::Viewer)?;
        view(self.store().site_latest(&caller.org_id, id).await?.ok_or(ServiceError::NotFound("site"))?)
    }

    #[tracing::instrument(name = "sites_revision", skip_all, fields(org = %caller.org_id, site = %id, revision))]
    pub async fn sites_revision(&self, caller: &Caller, id: &SiteId, revision: i64) -> Result<SiteView> {
        caller.require(Role::Viewer)?;
        view(
            self.store()
                .site_revision(&caller.org_id, id, revision)
                .await?
                .ok_or(ServiceError::NotFound("site revision"))?,
        )
    }

    /// New revision, only if `if_match` names the latest one.
    #[tracing::instrument(name = "sites_update", skip_all, fields(org = %caller.org_id, site = %id))]
    pub async fn sites_update(
        &self,
        caller: &Caller,
        id: &SiteId,
        if_match: IfMatch,
        doc: SiteDoc,
    ) -> Result<SiteView> {
        caller.require(Role::Assessor)?;
        // Existence first, so another organisation's id is 404 whatever else.
        let current = self.store().site_latest(&caller.org_id, id).await?.ok_or(ServiceError::NotFound("site"))?;
        let latest = current.site.latest_revision;
        let expected = match if_match {
            IfMatch::Missing => return Err(ServiceError::PreconditionRequired),
            IfMatch::Any => latest,
            IfMatch::OneOf(tags) if tags.contains(&latest) => latest,
            IfMatch::OneOf(_) => return Err(ServiceError::PreconditionFailed { current: latest }),
        };
        let warnings = self.check_site_doc(&doc)?;
        match self.store().site_update(&caller.org_id, id, expected, &display_name(&doc), &to_json(&doc)).await? {
            UpdateOutcome::Updated(row) => {
                tracing::info!(revision = row.revision, warnings = warnings.len(), "site revised");
                Ok(SiteView { row, doc, warnings })
            }
            UpdateOutcome::Stale { current } => Err(ServiceError::PreconditionFailed { current }),
            UpdateOutcome::NotFound => Err(ServiceError::NotFound("site")),
        }
    }

    /// A site revision (the latest if `revision` is `None`) and its checked
    /// model, for the use cases that compute on a pinned revision.
    pub(super) async fn site_at_revision(
        &self,
        caller: &Caller,
        site_id: &SiteId,
        revision: Option<i64>,
    ) -> Result<(crate::store::RevisionRow, fluxbound_core::site::Site)> {
        let (rev, _, site) = self.site_doc_at_revision(caller, site_id, revision).await?;
        Ok((rev, site))
    }

    /// The stored revision, its document and the checked site.
    pub(super) async fn site_doc_at_revision(
        &self,
        caller: &Caller,
        site_id: &SiteId,
        revision: Option<i64>,
    ) -> Result<(crate::store::RevisionRow, SiteDoc, fluxbound_core::site::Site)> {
        let rev = match revision {
            Some(r) => self
                .store()
                .site_revision(&caller.org_id, site_id, r)
                .await?
                .ok_or(ServiceError::NotFound("site revision"))?,
            None => self.store().site_latest(&caller.org_id, site_id).await?.ok_or(ServiceError::NotFound("site"))?,
        };
        let doc: SiteDoc = stored(&rev.body)?;
        let site = validate_site(&doc).map_err(ServiceError::Validation)?;
        Ok((rev, doc, site))
    }

    #[tracing::instrument(name = "sites_delete", skip_all, fields(org = %caller.org_id, site = %id))]
    pub async fn sites_delete(&self, caller: &Caller, id: &SiteId) -> Result<()> {
        caller.require(Role::Assessor)?;
        if self.store().site_delete(&caller.org_id, id).await? { Ok(()) } else { Err(ServiceError::NotFound("site")) }
    }
}
