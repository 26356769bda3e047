//! Regimes: ordered tiers of tables read together (for example the low and
//! the high action levels of Directive 2013/35/EU). Data, not code: the
//! built-in regimes ship as `regimes.json` and go through the same
//! validation as a user's regime, and every plain-words sentence carries its
//! source or "from memory".

use crate::site::{Pointer, Problems, parse_json};
use serde::{Deserialize, Serialize};
use std::sync::OnceLock;

/// One plain-words sentence with where it comes from (a citation, or "from
/// memory" when unverified).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct Sentence {
    /// The sentence (not blank).
    #[cfg_attr(feature = "schema", schema(min_length = 1))]
    pub text: String,
    /// Its source, or "from memory" (not blank).
    #[cfg_attr(feature = "schema", schema(min_length = 1))]
    pub source: String,
}

/// One tier of a regime: the tables that decide it (one per body region
/// at most is usual) and what meeting or exceeding it means.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct Tier {
    /// Tier name (not blank), for example "low action level".
    #[cfg_attr(feature = "schema", schema(min_length = 1))]
    pub name: String,
    /// Table ids of this tier (1–8). A result is judged against those of
    /// them it was compared with (whole-body tables for whole-body
    /// positions, limb tables for limb positions).
    #[cfg_attr(feature = "schema", schema(min_items = 1, max_items = 8))]
    pub tables: Vec<String>,
    /// What it means when every compared table of the tier is met.
    pub met: Sentence,
    /// What it means when a compared table of the tier is exceeded.
    pub exceeded: Sentence,
}

/// A regime as submitted or shipped (JSON): tiers ordered from the lowest
/// (strictest) level to the highest.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct RegimeDoc {
    /// Regime id: 1–64 letters, digits, `.`, `-` or `_`.
    #[cfg_attr(feature = "schema", schema(min_length = 1, max_length = 64, pattern = "^[A-Za-z0-9._-]{1,64}$"))]
    pub id: String,
    /// Title (not blank).
    #[cfg_attr(feature = "schema", schema(min_length = 1))]
    pub title: String,
    /// Full citation of the document that orders the tiers.
    #[cfg_attr(feature = "schema", schema(min_length = 1))]
    pub source: String,
    /// Tiers from the lowest level to the highest (1–16).
    #[cfg_attr(feature = "schema", schema(min_items = 1, max_items = 16))]
    pub tiers: Vec<Tier>,
}

/// A checked regime. Only [`validate_regime_at`] makes one.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Regime {
    #[serde(flatten)]
    doc: RegimeDoc,
}

impl Regime {
    pub fn doc(&self) -> &RegimeDoc {
        &self.doc
    }
    pub fn id(&self) -> &str {
        &self.doc.id
    }
    pub fn tiers(&self) -> &[Tier] {
        &self.doc.tiers
    }
    /// Every table id of the regime, once each, in tier order.
    pub fn table_ids(&self) -> Vec<&str> {
        let mut ids: Vec<&str> = Vec::new();
        for id in self.doc.tiers.iter().flat_map(|t| t.tables.iter()) {
            if !ids.contains(&id.as_str()) {
                ids.push(id);
            }
        }
        ids
    }
}

pub const MAX_TIERS: usize = 16;
pub const MAX_TIER_TABLES: usize = 8;

/// Parses and checks a regime document.
pub fn parse_regime(text: &str) -> Result<Regime, Problems> {
    validate_regime_at(parse_json(text)?, &Pointer::root())
}

/// Adds `regime` to `custom` unless its id is already used by a built-in
/// regime or an earlier custom one; the one rule for custom regimes, used
/// by the command line (`--regime-file`) and the HTTP request (`regimes`).
pub fn add_custom_regime(custom: &mut Vec<Regime>, regime: Regime) -> Result<(), String> {
    let taken = builtin_regimes().iter().chain(custom.iter()).any(|other| other.id() == regime.id());
    if taken {
        return Err(format!("regime id '{}' is already used", regime.id()));
    }
    custom.push(regime);
    Ok(())
}

/// Custom regimes given inline (JSON pointers `/…/i` under `at`), checked:
/// every problem of every regime, and no reused id.
pub fn validate_custom_regimes(docs: &[RegimeDoc], at: &Pointer) -> Result<Vec<Regime>, Problems> {
    let mut problems = Problems::default();
    let mut custom = Vec::new();
    for (i, doc) in docs.iter().enumerate() {
        match validate_regime_at(doc.clone(), &at.index(i)) {
            Ok(r) => {
                if let Err(detail) = add_custom_regime(&mut custom, r) {
                    problems.push(&at.index(i).key("id"), detail);
                }
            }
            Err(p) => problems.0.extend(p.0),
        }
    }
    if problems.is_empty() { Ok(custom) } else { Err(problems) }
}

/// Checks a regime, reporting every problem with its pointer under `at`.
pub fn validate_regime_at(doc: RegimeDoc, at: &Pointer) -> Result<Regime, Problems> {
    let mut p = Problems::default();
    if !super::table::is_data_id(&doc.id) {
        p.push(&at.key("id"), "regime id must be 1–64 characters of letters, digits, '.', '-' or '_'");
    }
    check_text(&doc.title, &at.key("title"), "title must not be empty", &mut p);
    check_text(&doc.source, &at.key("source"), "give the full citation of the source", &mut p);
    let tp = at.key("tiers");
    if doc.tiers.is_empty() || doc.tiers.len() > MAX_TIERS {
        p.push(&tp, format!("a regime needs 1–{MAX_TIERS} tiers"));
    }
    for (i, tier) in doc.tiers.iter().enumerate() {
        check_tier(tier, &tp.index(i), &mut p);
    }
    for (i, tier) in doc.tiers.iter().enumerate() {
        if doc.tiers[..i].iter().any(|t| t.name == tier.name) {
            p.push(&tp.index(i).key("name"), format!("tier name '{}' is used twice", tier.name));
        }
    }
    p.into_result(Regime { doc })
}

/// One tier: its name, its table ids and both sentences.
fn check_tier(tier: &Tier, at: &Pointer, p: &mut Problems) {
    check_text(&tier.name, &at.key("name"), "tier name must not be empty", p);
    let tables = at.key("tables");
    if tier.tables.is_empty() || tier.tables.len() > MAX_TIER_TABLES {
        p.push(&tables, format!("a tier needs 1–{MAX_TIER_TABLES} table ids"));
    }
    for (i, id) in tier.tables.iter().enumerate() {
        if !super::table::is_data_id(id) {
            p.push(&tables.index(i), "table id must be 1–64 characters of letters, digits, '.', '-' or '_'");
        } else if tier.tables[..i].contains(id) {
            p.push(&tables.index(i), format!("table '{id}' is listed twice in this tier"));
        }
    }
    for (key, s) in [("met", &tier.met), ("exceeded", &tier.exceeded)] {
        check_text(&s.text, &at.key(key).key("text"), "the sentence must not be empty", p);
        check_text(&s.source, &at.key(key).key("source"), "give the sentence's source, or \"from memory\"", p);
    }
}

fn check_text(text: &str, at: &Pointer, blank: &str, p: &mut Problems) {
    if text.trim().is_empty() {
        p.push(at, blank);
    } else if let Some(why) = crate::text::single_line_problem(text) {
        p.push(at, why);
    }
}

static BUILTIN: OnceLock<Vec<Regime>> = OnceLock::new();

/// All built-in regimes, in a stable order.
pub fn builtin_regimes() -> &'static [Regime] {
    BUILTIN.get_or_init(|| {
        let docs: Vec<RegimeDoc> =
            parse_json(include_str!("regimes.json")).unwrap_or_else(|p| panic!("regimes.json does not parse: {p}"));
        docs.into_iter()
            .enumerate()
            .map(|(i, d)| {
                validate_regime_at(d, &Pointer::root().index(i))
                    .unwrap_or_else(|p| panic!("built-in regime {i} is invalid: {p}"))
            })
            .collect()
    })
}
