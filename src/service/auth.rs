//! API keys and roles. A key reads `fxb_<key id>_<secret>`: the id finds the
//! row, the SHA-256 of the secret is compared in constant time. Secrets are
//! 256 random bits, so a plain hash is enough (no password stretching).

use super::{Result, Service, ServiceError};
use crate::ids::{KeyId, OrgId};
use crate::store::{KeyRow, Revoke};
use fluxbound_core::text::single_line_problem;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

/// Roles, each including the ones below it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Role {
    /// Reads.
    Viewer,
    /// Also writes sites, tables and assessments.
    Assessor,
    /// Also manages keys.
    Admin,
}

impl Role {
    pub fn as_str(self) -> &'static str {
        match self {
            Role::Viewer => "viewer",
            Role::Assessor => "assessor",
            Role::Admin => "admin",
        }
    }
    pub fn parse(s: &str) -> Option<Role> {
        match s {
            "viewer" => Some(Role::Viewer),
            "assessor" => Some(Role::Assessor),
            "admin" => Some(Role::Admin),
            _ => None,
        }
    }
}

impl std::fmt::Display for Role {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// Who is calling: the organisation every query is scoped to, and the role.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Caller {
    pub org_id: OrgId,
    pub key_id: KeyId,
    pub role: Role,
}

impl Caller {
    /// Ok if the caller's role includes `needed`.
    pub fn require(&self, needed: Role) -> Result<()> {
        if self.role >= needed { Ok(()) } else { Err(ServiceError::Forbidden(needed)) }
    }
}

/// Hex SHA-256 of a key's secret part.
pub fn hash_secret(secret: &str) -> String {
    hex(&Sha256::digest(secret.as_bytes()))
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// Equality that takes the same time wherever the inputs differ.
fn constant_time_eq(a: &[u8], b: &[u8]) -> bool {
    a.len() == b.len() && a.iter().zip(b).fold(0u8, |acc, (x, y)| acc | (x ^ y)) == 0
}

const PREFIX: &str = "fxb_";

fn split_token(token: &str) -> Option<(&str, &str)> {
    let rest = token.strip_prefix(PREFIX)?;
    let (id, secret) = rest.split_once('_')?;
    (id.len() == 32 && secret.len() == 64 && id.chars().chain(secret.chars()).all(|c| c.is_ascii_hexdigit()))
        .then_some((id, secret))
}

/// A new random secret: 32 bytes from the OS-seeded thread RNG, as hex.
fn new_secret() -> String {
    use rand::Rng;
    let mut bytes = [0u8; 32];
    rand::rng().fill_bytes(&mut bytes);
    hex(&bytes)
}

impl Service {
    /// Resolves a bearer token to its caller.
    pub async fn authenticate(&self, token: &str) -> Result<Caller> {
        let (id, secret) = split_token(token).ok_or(ServiceError::Unauthorized)?;
        let id = KeyId::parse(id).ok_or(ServiceError::Unauthorized)?;
        let hash = hash_secret(secret);
        if let Some((stored, caller)) = self.keys.get(&id) {
            // A key's secret never changes, so a remembered hash decides
            // as the row would.
            return constant_time_eq(hash.as_bytes(), stored.as_bytes())
                .then_some(caller)
                .ok_or(ServiceError::Unauthorized);
        }
        let row = self.store().key_find(&id).await?.ok_or(ServiceError::Unauthorized)?;
        let ok = constant_time_eq(hash.as_bytes(), row.secret_sha256.as_bytes());
        if !ok || row.revoked_at.is_some() {
            return Err(ServiceError::Unauthorized);
        }
        let role =
            Role::parse(&row.role).ok_or_else(|| ServiceError::Internal("stored key has an unknown role".into()))?;
        let caller = Caller { org_id: row.org_id, key_id: row.id, role };
        self.keys.remember(row.secret_sha256, caller.clone());
        Ok(caller)
    }

    /// Creates a key in organisation `org_name` (created if needed); returns
    /// the row and the full token, which is shown once and never stored.
    pub async fn keys_create_for_org(
        &self,
        org_name: &str,
        role: Role,
        label: Option<&str>,
    ) -> Result<(KeyRow, String)> {
        let name = org_name.trim();
        if name.is_empty() || name.chars().count() > 100 {
            return Err(ServiceError::Validation(super::one_problem(
                "/org",
                "organisation name must be 1–100 characters",
            )));
        }
        if let Some(why) = single_line_problem(name) {
            return Err(ServiceError::Validation(super::one_problem("/org", why)));
        }
        let org = self.store().org_ensure(name).await?;
        self.key_new(&org.id, role, label).await
    }

    async fn key_new(&self, org_id: &OrgId, role: Role, label: Option<&str>) -> Result<(KeyRow, String)> {
        if label.is_some_and(|l| l.chars().count() > 100) {
            return Err(ServiceError::Validation(super::one_problem("/label", "label must be at most 100 characters")));
        }
        if let Some(why) = label.and_then(single_line_problem) {
            return Err(ServiceError::Validation(super::one_problem("/label", why)));
        }
        let secret = new_secret();
        let row = self.store().key_insert(org_id, role.as_str(), &hash_secret(&secret), label).await?;
        let token = format!("{PREFIX}{}_{secret}", row.id);
        Ok((row, token))
    }

    /// Creates a key in the caller's organisation (admin only).
    pub async fn keys_create(&self, caller: &Caller, role: Role, label: Option<&str>) -> Result<(KeyRow, String)> {
        caller.require(Role::Admin)?;
        self.key_new(&caller.org_id, role, label).await
    }

    pub async fn keys_list(&self, caller: &Caller) -> Result<Vec<KeyRow>> {
        caller.require(Role::Admin)?;
        Ok(self.store().keys_list(&caller.org_id).await?)
    }

    /// Revokes a key of the caller's organisation (admin only); the last
    /// active admin key of an organisation is kept (409).
    pub async fn keys_revoke(&self, caller: &Caller, key_id: &KeyId) -> Result<()> {
        caller.require(Role::Admin)?;
        let outcome = revoked(self.store().key_revoke(&caller.org_id, key_id).await?);
        self.keys.forget(key_id);
        outcome
    }

    /// The organisation named `name` (CLI). No stored name holds a control
    /// character, so such a name is not looked up (PostgreSQL refuses NUL).
    async fn org_named(&self, name: &str) -> Result<crate::store::OrgRow> {
        let found = match single_line_problem(name) {
            Some(_) => None,
            None => self.store().org_by_name(name).await?,
        };
        found.ok_or(ServiceError::NotFound("organisation"))
    }

    /// Lists keys of an organisation by name (CLI; no caller).
    pub async fn keys_list_for_org(&self, org_name: &str) -> Result<Vec<KeyRow>> {
        let org = self.org_named(org_name).await?;
        Ok(self.store().keys_list(&org.id).await?)
    }

    /// Revokes a key by id in an organisation given by name (CLI).
    pub async fn keys_revoke_for_org(&self, org_name: &str, key_id: &KeyId) -> Result<()> {
        let org = self.org_named(org_name).await?;
        let outcome = revoked(self.store().key_revoke(&org.id, key_id).await?);
        self.keys.forget(key_id);
        outcome
    }
}

/// Keys this process has recently found valid, so that a burst of
/// requests does not look up the same row for each one.
///
/// An entry lives `ttl` (`--key-cache-s`, default 2 s; 0 turns the cache
/// off). A key revoked through this process is forgotten at once; one
/// revoked through another replica or the CLI stops working here within
/// `ttl`. At most [`KeyCache::MAX_ENTRIES`] keys are kept; past them the
/// cache starts afresh (every key is then looked up once more).
#[derive(Debug)]
pub(crate) struct KeyCache {
    ttl: std::time::Duration,
    entries: std::sync::Mutex<std::collections::HashMap<KeyId, (String, Caller, std::time::Instant)>>,
}

impl KeyCache {
    pub const MAX_ENTRIES: usize = 10_000;

    pub fn new(ttl_s: u64) -> Self {
        KeyCache { ttl: std::time::Duration::from_secs(ttl_s), entries: Default::default() }
    }

    /// The stored secret hash and caller of a key found valid within `ttl`.
    fn get(&self, id: &KeyId) -> Option<(String, Caller)> {
        let entries = self.entries.lock().unwrap_or_else(|e| e.into_inner());
        let (hash, caller, at) = entries.get(id)?;
        (at.elapsed() < self.ttl).then(|| (hash.clone(), caller.clone()))
    }

    fn remember(&self, hash: String, caller: Caller) {
        if self.ttl.is_zero() {
            return;
        }
        let mut entries = self.entries.lock().unwrap_or_else(|e| e.into_inner());
        if entries.len() >= Self::MAX_ENTRIES {
            entries.clear();
        }
        entries.insert(caller.key_id.clone(), (hash, caller, std::time::Instant::now()));
    }

    fn forget(&self, id: &KeyId) {
        self.entries.lock().unwrap_or_else(|e| e.into_inner()).remove(id);
    }
}

/// The answer to a revocation, in one place for the API and the CLI.
fn revoked(outcome: Revoke) -> Result<()> {
    match outcome {
        Revoke::Revoked => Ok(()),
        Revoke::NotFound => Err(ServiceError::NotFound("key")),
        Revoke::LastAdmin => Err(ServiceError::Conflict(
            "this is the organisation's last admin key, and without one nobody could manage keys: \
             create another admin key first, then revoke this one"
                .into(),
        )),
    }
}
