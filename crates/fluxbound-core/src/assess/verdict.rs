//! Exposure ratios against a table and the verdict words.

use crate::limits::ReferenceTable;
use serde::{Deserialize, Serialize};

/// Plain verdict words (DESIGN.md). `exceeds` means at or above the level.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// Below the review fraction of the level.
    Within,
    /// At or above the review fraction, below the level.
    Approaching,
    /// At or above the level.
    Exceeds,
    /// The table has no level at one of the frequencies present.
    NotCovered,
    /// The point lies inside a conductor: no thin-wire field there.
    NotComputed,
}

impl Verdict {
    /// From an exposure ratio and the review fraction (0 < fraction < 1).
    pub fn of_ratio(ratio: f64, review_fraction: f64) -> Verdict {
        if ratio >= 1.0 {
            Verdict::Exceeds
        } else if ratio >= review_fraction {
            Verdict::Approaching
        } else {
            Verdict::Within
        }
    }

    pub fn word(self) -> &'static str {
        match self {
            Verdict::Within => "within",
            Verdict::Approaching => "approaching",
            Verdict::Exceeds => "exceeds",
            Verdict::NotCovered => "not_covered",
            Verdict::NotComputed => "not_computed",
        }
    }

    /// Severity for "worst of": a result that could not be judged ranks
    /// above `approaching`, so it is never hidden behind a `within`.
    pub fn severity(self) -> u8 {
        match self {
            Verdict::Within => 0,
            Verdict::Approaching => 1,
            Verdict::NotComputed => 2,
            Verdict::NotCovered => 3,
            Verdict::Exceeds => 4,
        }
    }
}

/// One frequency's share of an exposure ratio.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct FrequencyRatio {
    /// Frequency, Hz.
    pub frequency_hz: f64,
    /// Resultant RMS at this frequency, µT.
    pub b_ut: f64,
    /// The table's level at this frequency, µT RMS.
    pub level_ut: f64,
    /// b_ut / level_ut.
    pub ratio: f64,
}

/// An exposure ratio against one table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Ratio {
    /// `Σ_f B_f / B_RL(f)`; with one frequency, `B / B_RL(f)`.
    pub ratio: Option<f64>,
    pub per_frequency: Vec<FrequencyRatio>,
    /// Frequencies present that the table does not cover.
    pub uncovered_hz: Vec<f64>,
}

/// Exposure ratio of a spectrum `(frequency_hz, resultant_ut)` against a
/// table. Several frequencies are summed as `Σ_f B_f / B_RL(f)` — the ICNIRP
/// 2010 multi-frequency rule for 1 Hz–10 MHz (from memory, REFERENCES.md).
/// Lines with no field (0 µT) are skipped so a table's coverage only matters
/// for frequencies actually present.
pub fn ratio_of(spectrum: &[(f64, f64)], table: &ReferenceTable) -> Ratio {
    let mut per_frequency = Vec::new();
    let mut uncovered_hz = Vec::new();
    for &(f, b) in spectrum {
        if b <= 0.0 {
            continue;
        }
        match table.level_ut(f) {
            Ok(level) => {
                per_frequency.push(FrequencyRatio { frequency_hz: f, b_ut: b, level_ut: level, ratio: b / level })
            }
            Err(_) => uncovered_hz.push(f),
        }
    }
    let ratio = uncovered_hz.is_empty().then(|| per_frequency.iter().map(|r| r.ratio).sum());
    Ratio { ratio, per_frequency, uncovered_hz }
}

impl Ratio {
    pub fn verdict(&self, review_fraction: f64) -> Verdict {
        match self.ratio {
            Some(r) => Verdict::of_ratio(r, review_fraction),
            None => Verdict::NotCovered,
        }
    }
}
