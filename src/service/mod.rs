//! The service around the core's use cases (`fluxbound_core::usecase`):
//! one method per thing an API caller can do. Owns authorisation,
//! transactions (through the store), size bounds and the configured compute
//! budgets, runs CPU-heavy field work off the async threads, and addresses
//! the use cases' typed errors as pointers into the HTTP request (one place:
//! `From<UseCaseError> for ServiceError`). The rules themselves live in the
//! core, so the CLI and the service cannot drift apart.

mod assessments;
mod auth;
mod bounds;
mod compare;
mod compute;
mod evaluate;
mod exchange;
mod reports;
mod sites;
mod surveys;
mod tables;
mod whatif;

pub use assessments::{AssessmentRequest, AssessmentView};
pub use auth::{Caller, Role, hash_secret};
pub use bounds::{DEFAULT_COMPUTE_QUEUE_MS, DEFAULT_KEY_CACHE_S, Limits, default_max_computations};
pub use compute::ComputeCounts;
pub use exchange::{ExportFormat, ImportFile, ImportedView};
pub use sites::{IfMatch, SiteView};
pub use surveys::SurveyView;
pub use tables::{TableVersionInfo, TableView};
pub use whatif::{WhatIfAnswer, WhatIfOn};

use crate::ids::SiteId;
use crate::store::{Store, StoreError};
use fluxbound_core::limits::{TableSource, UnknownTable};
use fluxbound_core::site::{Pointer, Problems};
use fluxbound_core::usecase::UseCaseError;
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};

/// Failures of a use case. The HTTP layer maps each to a status once.
#[derive(Debug, thiserror::Error)]
pub enum ServiceError {
    #[error("the request has problems")]
    Validation(Problems),
    /// A malformed query or path parameter (the HTTP layer answers 400).
    #[error("bad request: {0}")]
    BadRequest(Problems),
    #[error("the request exceeds a size or compute bound")]
    TooBig(Problems),
    #[error("{0} not found")]
    NotFound(&'static str),
    #[error("conflict: {0}")]
    Conflict(String),
    #[error("the resource changed: latest revision is {current}")]
    PreconditionFailed { current: i64 },
    #[error("If-Match with the revision's ETag is required")]
    PreconditionRequired,
    #[error("this needs the {0} role")]
    Forbidden(Role),
    #[error("missing or invalid API key")]
    Unauthorized,
    #[error("storage: {0}")]
    Store(#[from] StoreError),
    /// Every computation slot stayed taken for the queue wait.
    #[error("every computation slot is busy: retry after {retry_after_s} s")]
    Busy { retry_after_s: u64 },
    #[error("internal: {0}")]
    Internal(String),
}

impl ServiceError {
    pub fn is_client_error(&self) -> bool {
        !matches!(self, ServiceError::Store(_) | ServiceError::Internal(_) | ServiceError::Busy { .. })
    }
}

pub type Result<T> = std::result::Result<T, ServiceError>;

/// Shared state of the use cases. Cheap to clone; the counters and the
/// computation slots are shared by all clones.
#[derive(Clone, Debug)]
pub struct Service {
    store: Store,
    limits: Limits,
    pairs: Arc<AtomicU64>,
    compute: compute::Slots,
    keys: Arc<auth::KeyCache>,
}

impl Service {
    pub fn new(store: Store, limits: Limits) -> Self {
        let compute = compute::Slots::new(limits.max_computations);
        let keys = Arc::new(auth::KeyCache::new(limits.key_cache_s));
        Service { store, limits, pairs: Arc::new(AtomicU64::new(0)), compute, keys }
    }
    pub fn store(&self) -> &Store {
        &self.store
    }
    pub fn limits(&self) -> &Limits {
        &self.limits
    }
    /// Segment–point pairs computed since start (for /metrics).
    pub fn pairs_computed(&self) -> u64 {
        self.pairs.load(Ordering::Relaxed)
    }
    fn count_pairs(&self, n: u64) {
        self.pairs.fetch_add(n, Ordering::Relaxed);
    }
}

/// Page size when the caller gives none, and the largest allowed.
pub const PAGE_DEFAULT: i64 = 50;
pub const PAGE_MAX: i64 = 200;

/// The page size rule, in one place for every list: absent means
/// [`PAGE_DEFAULT`]; anything outside 1–[`PAGE_MAX`] is a bad request (400,
/// like every other malformed query parameter) at `/limit`.
pub fn page_limit(limit: Option<i64>) -> Result<i64> {
    match limit {
        None => Ok(PAGE_DEFAULT),
        Some(l) if (1..=PAGE_MAX).contains(&l) => Ok(l),
        Some(_) => {
            Err(ServiceError::BadRequest(one_problem("/limit", format!("limit must be between 1 and {PAGE_MAX}"))))
        }
    }
}

/// Where an unknown table sits in an HTTP request: the caller's list (or
/// the survey's, or the defaults) at `/tables/i`, the site's own list at
/// `/site/tables/i`.
fn unknown_table_problems(unknown: &[UnknownTable]) -> Problems {
    let mut p = Problems::default();
    for u in unknown {
        let list = match u.list {
            TableSource::Site => Pointer::root().key("site").key("tables"),
            TableSource::Request | TableSource::Survey | TableSource::Default => Pointer::root().key("tables"),
        };
        p.push(&list.index(u.index), u.to_string());
    }
    p
}

impl From<UseCaseError> for ServiceError {
    /// Addresses a use case's error in the HTTP request: tables as above,
    /// the load case under `/load`, distance arguments by their query
    /// parameter name, the site's and survey's own pointers unchanged.
    fn from(e: UseCaseError) -> Self {
        use UseCaseError as U;
        match e {
            U::UnknownTables(unknown) => ServiceError::Validation(unknown_table_problems(&unknown)),
            U::Assess(a) => ServiceError::Validation(a.into_problems("/tables", "/load")),
            U::Load(l) => ServiceError::Validation(l.into_problems("/load")),
            U::Survey(p) | U::Evaluate(p) | U::WhatIf(p) => ServiceError::Validation(p),
            U::UnknownArea(_) => ServiceError::NotFound("area"),
            U::MapTable(detail) => ServiceError::Validation(one_problem("/table".to_string(), detail)),
            U::Distance { arg, detail } => ServiceError::Validation(one_problem(format!("/{}", arg.name()), detail)),
            U::OverBudget(p) => ServiceError::TooBig(p),
            U::DistanceOverBudget { arg, detail } => {
                ServiceError::TooBig(one_problem(format!("/{}", arg.name()), detail))
            }
            // Only a dropped request sets the flag, and nobody awaits its
            // answer: seen here, it is a bug.
            U::Cancelled => ServiceError::Internal("a computation was cancelled while its request waited".into()),
        }
    }
}

/// The build commit recorded by `build.rs` (12 hex digits or `unknown`).
pub const BUILD_COMMIT: &str = env!("FLUXBOUND_BUILD_COMMIT");

/// Provenance of a result computed now by this build from `site` (the
/// parsed site document), read from a stored revision or from a file. The
/// clock is read here, at the edge; the fingerprint rule lives in the core.
pub fn provenance_now(
    site: &fluxbound_core::site::wire::SiteDoc,
    revision: Option<i64>,
    file: Option<String>,
) -> fluxbound_core::provenance::Provenance {
    use fluxbound_core::provenance::{CANONICAL_FORM, Provenance, fingerprint};
    Provenance {
        computed_at: crate::ids::Timestamp::now().format(),
        tool_version: env!("CARGO_PKG_VERSION").to_string(),
        build_commit: BUILD_COMMIT.to_string(),
        site_sha256: fingerprint(site),
        canonical_form: CANONICAL_FORM.to_string(),
        site_revision: revision,
        site_file: file,
    }
}

fn one_problem(pointer: impl Into<String>, detail: impl Into<String>) -> Problems {
    Problems::one(pointer, detail)
}

/// Decodes a stored JSON document; a failure means the store is damaged.
fn stored<T: serde::de::DeserializeOwned>(text: &str) -> Result<T> {
    serde_json::from_str(text).map_err(|e| ServiceError::Store(StoreError::Corrupt(e.to_string())))
}

fn to_json<T: serde::Serialize>(v: &T) -> String {
    serde_json::to_string(v).expect("serialising plain data cannot fail")
}

/// Splits `limit + 1` fetched rows into a page and the next cursor.
fn paginate<T>(mut rows: Vec<T>, limit: i64, cursor_of: impl Fn(&T) -> String) -> (Vec<T>, Option<String>) {
    let more = rows.len() as i64 > limit;
    rows.truncate(limit.max(0) as usize);
    let next = if more { rows.last().map(&cursor_of) } else { None };
    (rows, next)
}

impl Service {
    /// One page of a site's child resources (assessments, surveys): the site
    /// must exist in the caller's organisation; `fetch` reads `limit + 1` rows.
    async fn page_for_site<R, V, F, Fut>(
        &self,
        caller: &Caller,
        site_id: &SiteId,
        limit: Option<i64>,
        fetch: F,
        view: impl Fn(R) -> Result<V>,
        id_of: impl Fn(&R) -> String,
    ) -> Result<(Vec<V>, Option<String>)>
    where
        F: FnOnce(i64) -> Fut,
        Fut: std::future::Future<Output = std::result::Result<Vec<R>, StoreError>>,
    {
        caller.require(Role::Viewer)?;
        let limit = page_limit(limit)?;
        self.store().site_latest(&caller.org_id, site_id).await?.ok_or(ServiceError::NotFound("site"))?;
        let rows = fetch(limit + 1).await?;
        let (rows, next) = paginate(rows, limit, id_of);
        Ok((rows.into_iter().map(view).collect::<Result<Vec<_>>>()?, next))
    }
}
