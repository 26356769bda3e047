//! Exposure ratios against a table and the verdict words.

use super::ReviewFraction;
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
    /// From an exposure ratio and the review fraction.
    pub fn of_ratio(ratio: f64, review_fraction: ReviewFraction) -> Verdict {
        if ratio >= 1.0 {
            Verdict::Exceeds
        } else if ratio >= review_fraction.get() {
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

/// The table's level at each line frequency, µT (`None` where the table has
/// no level): computed once per table, then reused for every point.
pub fn line_levels(table: &ReferenceTable, line_hz: &[f64]) -> Vec<Option<f64>> {
    line_hz.iter().map(|f| table.level_ut(*f).ok()).collect()
}

/// One spectral line's share of an exposure ratio.
enum LineShare {
    /// No field at this line (0 µT): the table's coverage does not matter.
    NoField,
    /// `B_f / B_RL(f)`.
    Share(f64),
    /// Field present at a frequency the table does not cover.
    Uncovered,
}

fn line_share(b_ut: f64, level_ut: Option<f64>) -> LineShare {
    match level_ut {
        _ if b_ut <= 0.0 => LineShare::NoField,
        Some(l) => LineShare::Share(b_ut / l),
        None => LineShare::Uncovered,
    }
}

/// The exposure ratio `Σ_f B_f / B_RL(f)` — the ICNIRP 2010 multi-frequency
/// rule for 1 Hz–10 MHz (from memory, docs/REFERENCES.md), with one frequency
/// simply `B / B_RL(f)`. `b_ut` is the resultant RMS flux density of each
/// spectral line and `levels` the table's level at that line, µT. Lines with
/// no field (0 µT) are skipped, so a table's coverage only matters for
/// frequencies actually present; `Err` lists the indices of lines present
/// that the table does not cover. The one home of this rule: positions,
/// areas, maps and survey extrapolation all come here.
pub fn exposure_ratio(b_ut: impl IntoIterator<Item = f64>, levels: &[Option<f64>]) -> Result<f64, Vec<usize>> {
    let mut sum = 0.0;
    let mut uncovered = Vec::new();
    for (k, (b, level)) in b_ut.into_iter().zip(levels).enumerate() {
        match line_share(b, *level) {
            LineShare::NoField => {}
            LineShare::Share(r) => sum += r,
            LineShare::Uncovered => uncovered.push(k),
        }
    }
    if uncovered.is_empty() { Ok(sum) } else { Err(uncovered) }
}

/// Exposure ratio of a spectrum `(frequency_hz, resultant_ut)` against a
/// table ([`exposure_ratio`]), with each frequency's share.
pub fn ratio_of(spectrum: &[(f64, f64)], table: &ReferenceTable) -> Ratio {
    let line_hz: Vec<f64> = spectrum.iter().map(|(f, _)| *f).collect();
    let levels = line_levels(table, &line_hz);
    let per_frequency = spectrum
        .iter()
        .zip(&levels)
        .filter_map(|(&(f, b), level)| match (line_share(b, *level), level) {
            (LineShare::Share(ratio), Some(l)) => {
                Some(FrequencyRatio { frequency_hz: f, b_ut: b, level_ut: *l, ratio })
            }
            _ => None,
        })
        .collect();
    match exposure_ratio(spectrum.iter().map(|(_, b)| *b), &levels) {
        Ok(ratio) => Ratio { ratio: Some(ratio), per_frequency, uncovered_hz: Vec::new() },
        Err(lines) => Ratio { ratio: None, per_frequency, uncovered_hz: lines.iter().map(|k| line_hz[*k]).collect() },
    }
}

impl Ratio {
    pub fn verdict(&self, review_fraction: ReviewFraction) -> Verdict {
        match self.ratio {
            Some(r) => Verdict::of_ratio(r, review_fraction),
            None => Verdict::NotCovered,
        }
    }
}
