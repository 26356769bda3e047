//! Sites from files (GeoJSON, DXF, CSV) and sites as files: the core's
//! `site::exchange` behind the same checks, roles and revisions as a site
//! sent as JSON.

use super::sites::{IfMatch, SiteView};
use super::{Caller, Result, Role, Service, ServiceError};
use crate::ids::SiteId;
use fluxbound_core::site::Problems;
use fluxbound_core::site::exchange::{self, Format, ImportError, MappingDoc, Skipped};

/// A file to import, as the HTTP layer received it.
#[derive(Debug)]
pub struct ImportFile {
    pub format: Format,
    pub mapping: MappingDoc,
    pub content: String,
}

/// A site made from a file, with what the file held that it does not.
#[derive(Debug)]
pub struct ImportedView {
    pub view: SiteView,
    pub skipped: Vec<Skipped>,
    pub notes: Vec<String>,
}

/// The formats a site is exported as.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ExportFormat {
    Geojson,
    Dxf,
}

/// Problems of the file point at `/file_text` (the pointer or line inside
/// the file goes into the detail: a JSON pointer cannot enter a string);
/// problems of the mapping at `/mapping…`.
fn import_problems(e: ImportError) -> ServiceError {
    let p = match e {
        ImportError::File(p) => Problems(
            p.0.into_iter()
                .map(|mut q| {
                    if !q.pointer.is_empty() {
                        q.detail = format!("at {} in the file: {}", q.pointer, q.detail);
                    }
                    q.pointer = "/file_text".into();
                    q
                })
                .collect(),
        ),
        ImportError::Mapping(p) => Problems(
            p.0.into_iter()
                .map(|mut q| {
                    q.pointer = format!("/mapping{}", q.pointer);
                    q
                })
                .collect(),
        ),
    };
    ServiceError::Validation(p)
}

fn read(file: ImportFile) -> Result<exchange::Imported> {
    exchange::import(file.format, file.content.as_bytes(), &file.mapping).map_err(import_problems)
}

impl Service {
    /// A new site from a file.
    #[tracing::instrument(name = "sites_import", skip_all, fields(org = %caller.org_id))]
    pub async fn sites_import(&self, caller: &Caller, file: ImportFile) -> Result<ImportedView> {
        caller.require(Role::Assessor)?;
        let imported = read(file)?;
        let view = self.sites_create(caller, imported.site).await?;
        Ok(ImportedView { view, skipped: imported.skipped, notes: imported.notes })
    }

    /// A new revision of a site from a file, under the same `If-Match`
    /// rule as a replacement document.
    #[tracing::instrument(name = "sites_import_revision", skip_all, fields(org = %caller.org_id, site = %id))]
    pub async fn sites_import_revision(
        &self,
        caller: &Caller,
        id: &SiteId,
        if_match: IfMatch,
        file: ImportFile,
    ) -> Result<ImportedView> {
        caller.require(Role::Assessor)?;
        let imported = read(file)?;
        let view = self.sites_update(caller, id, if_match, imported.site).await?;
        Ok(ImportedView { view, skipped: imported.skipped, notes: imported.notes })
    }

    /// The latest revision as a file, with its revision number.
    #[tracing::instrument(name = "sites_export", skip_all, fields(org = %caller.org_id, site = %id))]
    pub async fn sites_export(&self, caller: &Caller, id: &SiteId, format: ExportFormat) -> Result<(i64, Vec<u8>)> {
        let v = self.sites_show(caller, id).await?;
        let bytes = match format {
            ExportFormat::Geojson => exchange::export_geojson(&v.doc).to_string().into_bytes(),
            ExportFormat::Dxf => exchange::export_dxf(&exchange::flatten(&v.doc)),
        };
        Ok((v.row.revision, bytes))
    }
}
