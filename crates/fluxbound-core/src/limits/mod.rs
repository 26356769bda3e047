//! Reference-level tables: data, not code. A table is a list of frequency
//! bands, each `B_RL(f) = coefficient · f^exponent` µT RMS, with the
//! population and body region it protects and its full citation. Built-in
//! tables ship as JSON (`builtin.json`) and go through the same validation as
//! a user's custom table.

mod builtin;
mod coverage;
mod regime;
mod table;

pub use builtin::{DEFAULT_TABLE_IDS, IMPLANT_TABLE_ID, builtin_table, builtin_tables};
pub use coverage::{COVERAGE_SPAN_HZ, CoverageHole, coverage_holes};
pub use regime::{
    MAX_TIER_TABLES, MAX_TIERS, Regime, RegimeDoc, Sentence, Tier, add_custom_regime, builtin_regimes, parse_regime,
    validate_custom_regimes, validate_regime_at,
};
pub use table::*;

use crate::site::{Problems, parse_json};

/// Parses and checks a custom table document.
pub fn parse_table(text: &str) -> Result<ReferenceTable, Problems> {
    validate_table(parse_json(text)?)
}

/// Whose list of table ids applies.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TableSource {
    /// The caller's own list (request body `tables`, CLI `--tables`).
    Request,
    /// The survey document's `tables`.
    Survey,
    /// The site document's `tables`.
    Site,
    /// None was given: [`DEFAULT_TABLE_IDS`].
    Default,
}

/// The table ids that apply and where they came from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TableChoice {
    pub ids: Vec<String>,
    /// Whose list it is in.
    pub list: TableSource,
}

/// Which tables apply — one rule for the CLI and the service: the caller's
/// list, else the survey's (when there is a survey), else the site's own
/// `tables`, else the defaults (icnirp-2010-occupational, eu-2013-35-low,
/// eu-2013-35-limbs). An empty list counts as none given.
pub fn choose_tables(request: &[String], survey: &[String], site: &[String]) -> TableChoice {
    [(request, TableSource::Request), (survey, TableSource::Survey), (site, TableSource::Site)]
        .into_iter()
        .find(|(ids, _)| !ids.is_empty())
        .map(|(ids, source)| TableChoice { ids: ids.to_vec(), list: source })
        .unwrap_or_else(|| TableChoice {
            ids: DEFAULT_TABLE_IDS.iter().map(|s| s.to_string()).collect(),
            list: TableSource::Default,
        })
}

/// A table id that names no table, with its place in the chosen list.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("unknown reference-level table '{id}'")]
pub struct UnknownTable {
    /// Whose list it is in.
    pub list: TableSource,
    pub index: usize,
    pub id: String,
}

/// Looks up the chosen tables among `custom` and the built-ins (custom
/// first, so an organisation's table can never be shadowed by a built-in of
/// the same id — ids must differ anyway). Every unknown id is reported.
pub fn resolve_tables(
    choice: &TableChoice,
    custom: &[ReferenceTable],
) -> Result<Vec<ReferenceTable>, Vec<UnknownTable>> {
    let mut unknown = Vec::new();
    let mut out = Vec::new();
    for (index, id) in choice.ids.iter().enumerate() {
        match custom.iter().find(|t| t.id() == id).or_else(|| builtin_table(id)) {
            Some(t) => out.push(t.clone()),
            None => unknown.push(UnknownTable { list: choice.list, index, id: id.clone() }),
        }
    }
    if unknown.is_empty() { Ok(out) } else { Err(unknown) }
}
