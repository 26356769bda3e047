//! Reading a result against regimes: the highest tier exceeded and the first
//! tier met, in the plain words the regime carries, from the verdicts already
//! computed for the regime's tables (no new field computation).

use super::Verdict;
use crate::limits::{Regime, Sentence, Tier};
use serde::{Deserialize, Serialize};

/// Where the regime's words come from when the program itself speaks.
const OWN: &str = "fluxbound (how the regime was read)";

/// One regime read against one result (a position's worst height or an area).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct RegimeResult {
    /// Regime id.
    pub regime: String,
    /// Whether the regime could be read here: every one of its tables was
    /// assessed and at least one applies to this body region.
    pub evaluated: bool,
    /// Name of the highest tier exceeded (`null` when none is).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub highest_exceeded: Option<String>,
    /// Name of the first (lowest) tier met (`null` when none is).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub first_met: Option<String>,
    /// What that means, in plain words, each sentence with its source or
    /// "from memory".
    pub words: Vec<Sentence>,
}

/// How one tier stands for one result.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum TierState {
    /// None of the tier's tables was compared here (another body region).
    NotApplicable,
    /// A compared table could not judge (frequency not covered, point inside a conductor).
    Unknown,
    Exceeded,
    Met,
}

/// Every regime with at least one assessed table, read against the
/// `compared` (table id, verdict) pairs of one result. `assessed` are the
/// ids of all tables of the assessment.
pub fn read_regimes(regimes: &[Regime], assessed: &[&str], compared: &[(&str, Verdict)]) -> Vec<RegimeResult> {
    regimes
        .iter()
        .filter(|r| r.table_ids().iter().any(|id| assessed.contains(id)))
        .map(|r| read_regime(r, assessed, compared))
        .collect()
}

fn read_regime(regime: &Regime, assessed: &[&str], compared: &[(&str, Verdict)]) -> RegimeResult {
    let missing: Vec<&str> = regime.table_ids().into_iter().filter(|id| !assessed.contains(id)).collect();
    if !missing.is_empty() {
        let text = format!(
            "Not read against this regime: its table(s) {} were not assessed; assess with all its tables to read it.",
            missing.join(", ")
        );
        return not_read(regime, text);
    }
    let states: Vec<TierState> = regime.tiers().iter().map(|t| tier_state(t, compared)).collect();
    if states.iter().all(|s| *s == TierState::NotApplicable) {
        return not_read(regime, "No table of this regime applies to this body region.".to_string());
    }
    let highest = states.iter().rposition(|s| *s == TierState::Exceeded);
    let first_met = states.iter().position(|s| *s == TierState::Met);
    let mut words = Vec::new();
    words.extend(highest.map(|i| regime.tiers()[i].exceeded.clone()));
    words.extend(first_met.map(|i| regime.tiers()[i].met.clone()));
    for (tier, _) in regime.tiers().iter().zip(&states).filter(|(_, s)| **s == TierState::Unknown) {
        words.push(Sentence {
            text: format!(
                "The tier '{}' could not be judged here (a frequency outside its table, or a point inside a \
                 conductor): it may be exceeded.",
                tier.name
            ),
            source: OWN.to_string(),
        });
    }
    RegimeResult {
        regime: regime.id().to_string(),
        evaluated: true,
        highest_exceeded: highest.map(|i| regime.tiers()[i].name.clone()),
        first_met: first_met.map(|i| regime.tiers()[i].name.clone()),
        words,
    }
}

fn not_read(regime: &Regime, text: String) -> RegimeResult {
    RegimeResult {
        regime: regime.id().to_string(),
        evaluated: false,
        highest_exceeded: None,
        first_met: None,
        words: vec![Sentence { text, source: OWN.to_string() }],
    }
}

/// Exceeded when any compared table of the tier exceeds; unknown when one
/// could not judge (never read as met); met when all compared ones are below.
fn tier_state(tier: &Tier, compared: &[(&str, Verdict)]) -> TierState {
    let verdicts: Vec<Verdict> =
        compared.iter().filter(|(id, _)| tier.tables.iter().any(|t| t == id)).map(|(_, v)| *v).collect();
    if verdicts.is_empty() {
        TierState::NotApplicable
    } else if verdicts.contains(&Verdict::Exceeds) {
        TierState::Exceeded
    } else if verdicts.iter().any(|v| matches!(v, Verdict::NotCovered | Verdict::NotComputed)) {
        TierState::Unknown
    } else {
        TierState::Met
    }
}
