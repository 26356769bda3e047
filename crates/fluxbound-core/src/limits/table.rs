//! Reference-level tables as data: frequency bands of `coefficient · f^exponent`.

use crate::site::{Pointer, Problems};
use serde::{Deserialize, Serialize};

/// Who a table protects.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum Population {
    Workers,
    Public,
    ImplantWearers,
}

/// Which part of the body a table's level applies to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum TableBodyRegion {
    WholeBody,
    Limbs,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct AppliesTo {
    /// Population protected.
    pub population: Population,
    /// Body region the level applies to.
    pub body_region: TableBodyRegion,
}

/// What the numbers are in the source document.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum TableKind {
    ReferenceLevel,
    ActionLevel,
    Screening,
}

/// The quantity a table limits. Only the RMS flux density for now.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    #[default]
    BRms,
}

/// Which rule decides a table's verdict for a point. Both numbers are
/// always reported; this names the one the verdict is read from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum DecisionRule {
    /// `Σ_f B_f / B_RL(f)` (ICNIRP 2010 eq. 4/5): every line assumed to
    /// peak at the same instant; never below the weighted peak index.
    #[default]
    Summation,
    /// The weighted peak index (ICNIRP 2010 eq. 7 and Appendix), where it
    /// can be computed; the summation decides where it cannot (a harmonic
    /// without a stated angle).
    WeightedPeak,
}

impl DecisionRule {
    pub fn word(self) -> &'static str {
        match self {
            DecisionRule::Summation => "summation",
            DecisionRule::WeightedPeak => "weighted_peak",
        }
    }
}

/// Accepted band coefficients, µT·Hz^-exponent: with frequencies of 0.1 Hz
/// to 10 MHz and exponents within ±4 every level then lies between 1e-34
/// and 1e40 µT, so no ratio overflows or divides by zero.
pub const COEFFICIENT_RANGE: (f64, f64) = (1e-6, 1e12);

/// One band: `B_RL(f) = coefficient · f^exponent` µT RMS for
/// `from_hz ≤ f < to_hz` (the last band of a run also includes `to_hz`).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct Band {
    /// Lower edge, Hz (0.1 Hz to 10 MHz).
    #[cfg_attr(feature = "schema", schema(minimum = 0.1, maximum = 1e7))]
    pub from_hz: f64,
    /// Upper edge, Hz (greater than from_hz, at most 10 MHz).
    #[cfg_attr(feature = "schema", schema(minimum = 0.1, maximum = 1e7))]
    pub to_hz: f64,
    /// µT RMS · Hz^-exponent (1e-6 to 1e12: a level inside the table's
    /// frequency range then stays a finite, non-zero number).
    #[cfg_attr(feature = "schema", schema(minimum = 1e-6, maximum = 1e12))]
    pub coefficient: f64,
    /// Power of f (−4 to 4).
    #[cfg_attr(feature = "schema", schema(minimum = -4, maximum = 4))]
    pub exponent: f64,
}

/// A frequency range a table deliberately does not cover.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct Gap {
    /// Lower edge, Hz.
    pub from_hz: f64,
    /// Upper edge, Hz (greater than from_hz).
    pub to_hz: f64,
    /// Why the range is not covered.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reason: Option<String>,
}

/// A reference-level table as submitted or shipped (JSON).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(deny_unknown_fields)]
pub struct TableDoc {
    /// Table id: 1–64 letters, digits, `.`, `-` or `_`.
    #[cfg_attr(feature = "schema", schema(min_length = 1, max_length = 64, pattern = "^[A-Za-z0-9._-]{1,64}$"))]
    pub id: String,
    /// Title (not blank).
    #[cfg_attr(feature = "schema", schema(min_length = 1))]
    pub title: String,
    /// Full citation of the document the numbers come from.
    #[cfg_attr(feature = "schema", schema(min_length = 1))]
    pub source: String,
    pub applies_to: AppliesTo,
    /// What the numbers are in the source document.
    pub kind: TableKind,
    /// Limited quantity (default b_rms, RMS flux density).
    #[serde(default)]
    pub quantity: Quantity,
    /// Bands, non-overlapping and contiguous except at declared gaps (1–64).
    #[cfg_attr(feature = "schema", schema(min_items = 1, max_items = 64))]
    pub bands: Vec<Band>,
    /// Frequency ranges deliberately not covered.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub gaps: Vec<Gap>,
    /// Verification status and caveats (for example, which bands are from
    /// memory).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub notes: Vec<String>,
    /// The version the table had where it was shown (`fluxbound tables show
    /// ID --format json` prints it), read so that output can be given back
    /// as a custom table. It is information only: a stored custom table
    /// gets its version from the store, a table file is version 1. Never
    /// written (the shown table's own `version` is written instead).
    #[serde(default, skip_serializing)]
    #[cfg_attr(feature = "schema", schema(minimum = 1))]
    pub version: Option<u32>,
    /// Which rule decides this table's verdicts (default `summation`);
    /// both the summation ratio and the weighted peak index are reported.
    #[serde(default, skip_serializing_if = "is_summation")]
    pub decision_rule: DecisionRule,
}

fn is_summation(r: &DecisionRule) -> bool {
    *r == DecisionRule::Summation
}

/// A checked table: bands sorted, non-overlapping, contiguous except at
/// declared gaps. Only [`validate_table`] makes one.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReferenceTable {
    #[serde(flatten)]
    doc: TableDoc,
    /// Version of this table's content (built-ins: 1; custom tables count
    /// up from 1 in the store).
    version: u32,
}

/// Why a table gives no level at a frequency.
#[derive(Debug, Clone, Copy, PartialEq, thiserror::Error)]
pub enum LevelError {
    #[error("{frequency_hz} Hz is outside every band of the table")]
    NotCovered { frequency_hz: f64 },
}

impl ReferenceTable {
    pub fn doc(&self) -> &TableDoc {
        &self.doc
    }
    pub fn version(&self) -> u32 {
        self.version
    }
    /// The same table marked as version `version`.
    pub fn with_version(mut self, version: u32) -> Self {
        self.version = version;
        self
    }
    pub fn id(&self) -> &str {
        &self.doc.id
    }
    pub fn applies_to(&self) -> AppliesTo {
        self.doc.applies_to
    }
    pub fn bands(&self) -> &[Band] {
        &self.doc.bands
    }
    pub fn decision_rule(&self) -> DecisionRule {
        self.doc.decision_rule
    }

    /// The level in µT RMS at `frequency_hz`. A frequency on the edge shared
    /// by two bands takes the band that starts there; the top edge of the
    /// last band before a gap or the end is included. Outside every band:
    /// an error, never an extrapolation.
    pub fn level_ut(&self, frequency_hz: f64) -> Result<f64, LevelError> {
        let bands = &self.doc.bands;
        let not_covered = LevelError::NotCovered { frequency_hz };
        if !frequency_hz.is_finite() {
            return Err(not_covered);
        }
        let idx = bands.iter().position(|b| frequency_hz >= b.from_hz && frequency_hz < b.to_hz).or_else(|| {
            // Closed top edge of a band not followed by a contiguous band.
            bands
                .iter()
                .enumerate()
                .position(|(i, b)| frequency_hz == b.to_hz && bands.get(i + 1).is_none_or(|n| n.from_hz != b.to_hz))
        });
        let b = bands[idx.ok_or(not_covered)?];
        Ok(b.coefficient * frequency_hz.powf(b.exponent))
    }
}

/// Frequencies tables may cover: 0.1 Hz to 10 MHz.
pub const TABLE_FREQUENCY_RANGE_HZ: (f64, f64) = (0.1, 1.0e7);
pub const MAX_BANDS: usize = 64;

/// Checks a table document, reporting every problem with its pointer.
pub fn validate_table(doc: TableDoc) -> Result<ReferenceTable, Problems> {
    validate_table_at(doc, &Pointer::root())
}

/// [`validate_table`] with pointers under `at` (for tables inside a larger
/// document).
pub fn validate_table_at(mut doc: TableDoc, at: &Pointer) -> Result<ReferenceTable, Problems> {
    let mut p = Problems::default();
    check_header(&doc, at, &mut p);
    let bp = at.key("bands");
    // Coverage is only checked on numbers that are themselves sound.
    let bands_ok = check_bands(&doc.bands, &bp, &mut p);
    let gaps_ok = check_gaps(&doc.gaps, &at.key("gaps"), &mut p);
    if bands_ok && gaps_ok && !doc.bands.is_empty() {
        check_coverage(&doc, &bp, &mut p);
    }
    p.into_result(())?;
    // The shown version was information; the checked table's own counts.
    doc.version = None;
    let mut order: Vec<usize> = (0..doc.bands.len()).collect();
    order.sort_by(|a, b| doc.bands[*a].from_hz.total_cmp(&doc.bands[*b].from_hz));
    doc.bands = order.into_iter().map(|i| doc.bands[i]).collect();
    Ok(ReferenceTable { doc, version: 1 })
}

/// The id, title, citation and the texts of notes and gaps.
fn check_header(doc: &TableDoc, at: &Pointer, p: &mut Problems) {
    if !is_data_id(&doc.id) {
        p.push(&at.key("id"), "table id must be 1–64 characters of letters, digits, '.', '-' or '_'");
    }
    if doc.title.trim().is_empty() {
        p.push(&at.key("title"), "title must not be empty");
    } else if let Some(why) = crate::text::single_line_problem(&doc.title) {
        p.push(&at.key("title"), why);
    }
    if doc.source.trim().is_empty() {
        p.push(&at.key("source"), "give the full citation of the source");
    } else if let Some(why) = crate::text::single_line_problem(&doc.source) {
        p.push(&at.key("source"), why);
    }
    // Each note is one line: a list of notes is how to give several.
    let notes = doc.notes.iter().enumerate().map(|(i, n)| (at.key("notes").index(i), n.as_str()));
    let reasons = doc
        .gaps
        .iter()
        .enumerate()
        .filter_map(|(i, g)| Some((at.key("gaps").index(i).key("reason"), g.reason.as_deref()?)));
    for (pointer, text) in notes.chain(reasons) {
        if let Some(why) = crate::text::single_line_problem(text) {
            p.push(&pointer, why);
        }
    }
    if doc.version == Some(0) {
        p.push(&at.key("version"), "versions count from 1");
    }
}

/// Each band on its own; `false` when a band's edges are unusable for the
/// coverage check.
fn check_bands(bands: &[Band], bp: &Pointer, p: &mut Problems) -> bool {
    if bands.is_empty() {
        p.push(bp, "a table needs at least one band");
    } else if bands.len() > MAX_BANDS {
        p.push(bp, format!("at most {MAX_BANDS} bands"));
    }
    let (lo, hi) = TABLE_FREQUENCY_RANGE_HZ;
    let mut ok = true;
    for (i, b) in bands.iter().enumerate() {
        let at_b = bp.index(i);
        for (key, v) in
            [("from_hz", b.from_hz), ("to_hz", b.to_hz), ("coefficient", b.coefficient), ("exponent", b.exponent)]
        {
            if !v.is_finite() {
                p.push(&at_b.key(key), "must be a finite number");
                ok = false;
            }
        }
        if b.coefficient.is_finite() && !(COEFFICIENT_RANGE.0..=COEFFICIENT_RANGE.1).contains(&b.coefficient) {
            p.push(
                &at_b.key("coefficient"),
                format!(
                    "coefficient must be between {:e} and {:e} µT·Hz^-exponent (positive, and small or large enough that every level stays a finite number)",
                    COEFFICIENT_RANGE.0, COEFFICIENT_RANGE.1
                ),
            );
        }
        if b.exponent.is_finite() && b.exponent.abs() > 4.0 {
            p.push(&at_b.key("exponent"), "exponent must be between -4 and 4");
        }
        if b.from_hz.is_finite() && b.to_hz.is_finite() {
            if b.from_hz >= b.to_hz {
                p.push(&at_b.key("to_hz"), "to_hz must be greater than from_hz");
                ok = false;
            }
            if b.from_hz < lo || b.to_hz > hi {
                p.push(&at_b, format!("bands must lie between {lo} Hz and {hi:e} Hz"));
            }
        }
    }
    ok
}

/// Each declared gap on its own; `false` when one is unusable.
fn check_gaps(gaps: &[Gap], gp: &Pointer, p: &mut Problems) -> bool {
    let mut ok = true;
    for (i, g) in gaps.iter().enumerate() {
        if !(g.from_hz.is_finite() && g.to_hz.is_finite() && g.from_hz < g.to_hz) {
            p.push(&gp.index(i), "a gap needs finite from_hz < to_hz");
            ok = false;
        }
    }
    ok
}

/// The id rule of tables and regimes: 1–64 characters of ASCII letters,
/// digits, `.`, `-` or `_`.
pub(crate) fn is_data_id(id: &str) -> bool {
    !id.is_empty()
        && id.chars().count() <= 64
        && id.chars().all(|c| c.is_ascii_alphanumeric() || matches!(c, '.' | '-' | '_'))
}

/// Bands and declared gaps, sorted, must tile their span without overlap;
/// a hole between bands must be declared as a gap. Edges must match exactly
/// (JSON `3e3` and `3000` are the same number), so every frequency the
/// validator accepts as covered has a level.
fn check_coverage(doc: &TableDoc, bp: &Pointer, p: &mut Problems) {
    let gp = bp.clone().parent_key("gaps");
    // (from, to, pointer, is_band)
    let mut pieces: Vec<(f64, f64, Pointer, bool)> =
        doc.bands.iter().enumerate().map(|(i, b)| (b.from_hz, b.to_hz, bp.index(i), true)).collect();
    pieces.extend(doc.gaps.iter().enumerate().map(|(i, g)| (g.from_hz, g.to_hz, gp.index(i), false)));
    pieces.sort_by(|a, b| a.0.total_cmp(&b.0));
    for w in pieces.windows(2) {
        let ((_, end, earlier, earlier_band), (start, _, later, later_band)) = (&w[0], &w[1]);
        // Point at a band where one is involved (the later first).
        let at = if *later_band || !*earlier_band { later } else { earlier };
        if start < end {
            let what = if *earlier_band || *later_band { "band overlaps another" } else { "gaps overlap" };
            p.push(at, format!("{what} between {start} and {end} Hz"));
        } else if start > end {
            p.push(at, format!("no band covers {end}–{start} Hz: close the hole or declare it in gaps"));
        }
    }
}
