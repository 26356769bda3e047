//! The weighted peak index (WPI) of a non-sinusoidal field against a table.
//!
//! ICNIRP 2010 eq. (7) and its Appendix "Determination of the weighted peak
//! exposure" (docs/REFERENCES.md, "Weighted peak method"):
//!
//! `WPI = max_t | Σ_i (B_i / B_RL(f_i)) · Re( b̂_i · e^{j(2π f_i t + φ_i)} ) |`
//!
//! with `B_i b̂_i` the complex RMS field vector of spectral line i (µT),
//! `B_RL(f_i)` the table's RMS level there, `φ_i` the phase of the weighting
//! filter at `f_i` and `|·|` the instantaneous vector magnitude over the
//! three axes (the three-axis combination is from memory: the 2013/35/EU
//! non-binding guide). Field and level are both RMS, so the RMS-to-peak
//! factor √2 cancels: a single sinusoid gives `WPI = B / B_RL`, the same as
//! the summation. The summation `Σ B_i / B_RL(f_i)` assumes every line peaks
//! together and is never below the WPI (triangle inequality).
//!
//! Filter phase: the filter's gain is `∝ 1 / B_RL(f)`; where a band is
//! `c · f^n` the gain goes as `f^{−n}`, which is the phase of `−n`
//! differentiations, so `φ = −90° · n`: 180° for f⁻², 90° for f⁻¹, 0° where
//! flat and −90° where the level rises as f¹ (ICNIRP 2010 Appendix, V in
//! REFERENCES.md; other exponents of custom tables extend the same rule).
//!
//! Time: every line of a site is a harmonic `h · f0` of the fundamental, so
//! the waveform repeats every `1/f0`; the maximum is sought over one period
//! in the angle `θ = 2π f0 t` (line i turns as `h_i θ`). Non-harmonic lines
//! do not occur in the model (orders are whole numbers 1–50).

use crate::field::FieldPhasor;
use crate::limits::{DecisionRule, ReferenceTable};
use num_complex::Complex64;
use std::f64::consts::TAU;

/// Grid samples per period of the highest harmonic present before the
/// refinement. At 32 the sampled maximum is at most `½ (π/32)² ≈ 0.5 %` of
/// the summation below the true one (the curvature of `v(θ)` is at most
/// `h_max² · Σ|w_i|`), so every local maximum within [`REFINE_MARGIN`] of
/// the summation below the best sample is refined.
const SAMPLES_PER_HIGHEST_PERIOD: usize = 32;
/// Local maxima this share of the summation below the best sample are
/// still refined (four times the worst sampling loss above).
const REFINE_MARGIN: f64 = 0.02;
/// Golden-section steps: the bracket `2 · 2π / N` shrinks by 0.618 per step,
/// below 1e-12 rad after 60 steps, far under the 1e-6 relative target
/// (the value error near a maximum is quadratic in the angle error).
const GOLDEN_STEPS: usize = 60;
/// Most combinations of band-edge phases tried for one point (each line on
/// a shared band edge doubles them).
const MAX_EDGE_COMBINATIONS: usize = 1024;

/// What is known of one spectral line, for every point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LineInfo {
    /// Harmonic order (1 = fundamental).
    pub order: u32,
    pub frequency_hz: f64,
    /// Whether every current of this line has a stated phase (a harmonic
    /// without `angle_deg` has not).
    pub phase_known: bool,
}

/// Why no weighted peak index was computed for a point.
#[derive(Debug, Clone, PartialEq)]
pub enum NotComputed {
    /// Field is present at harmonics whose phase the site does not state.
    UnknownPhase { frequencies_hz: Vec<f64> },
    /// The table has no level at a frequency present.
    NotCovered,
    /// More harmonics sit on band edges than combinations are tried.
    TooManyEdges,
    /// The point lies inside a conductor.
    NoField,
}

impl NotComputed {
    /// The reason in words, as every output carries it.
    pub fn note(&self) -> String {
        match self {
            NotComputed::UnknownPhase { frequencies_hz } => {
                let list: Vec<String> = frequencies_hz.iter().map(|f| format!("{f} Hz")).collect();
                format!(
                    "weighted peak index not computed: the phase of the harmonic at {} is not stated (give the harmonic's angle_deg); the summation decides",
                    list.join(", ")
                )
            }
            NotComputed::NotCovered => {
                "weighted peak index not computed: the table has no level at a frequency present".to_string()
            }
            NotComputed::TooManyEdges => format!(
                "weighted peak index not computed: more than {MAX_EDGE_COMBINATIONS} combinations of band-edge filter phases; the summation decides"
            ),
            NotComputed::NoField => "weighted peak index not computed: the point lies inside a conductor".to_string(),
        }
    }
}

/// One line as weighted by one table.
#[derive(Debug, Clone)]
struct Weight {
    order: u32,
    frequency_hz: f64,
    phase_known: bool,
    /// `1 / B_RL(f)`, 1/µT (`None`: not covered).
    inverse_level: Option<f64>,
    /// Filter phases, rad: one, or two on an edge shared by bands of
    /// different slope.
    phases_rad: Vec<f64>,
}

/// A table's weighting of the spectral lines of a site: levels and filter
/// phases computed once, then applied to every point.
#[derive(Debug, Clone)]
pub struct Weighting {
    weights: Vec<Weight>,
}

/// Filter phase for a band exponent `n`, degrees: `−90° · n` (module docs).
pub fn filter_phase_deg(exponent: f64) -> f64 {
    -90.0 * exponent
}

/// The filter phases at `frequency_hz`, rad: every band whose closed range
/// holds it, so a frequency on an edge shared by two bands gets both.
fn filter_phases_rad(table: &ReferenceTable, frequency_hz: f64) -> Vec<f64> {
    let mut out: Vec<f64> = Vec::new();
    for b in table.bands().iter().filter(|b| frequency_hz >= b.from_hz && frequency_hz <= b.to_hz) {
        let phase = filter_phase_deg(b.exponent).to_radians();
        if !out.iter().any(|p| (p - phase).abs() < 1e-12) {
            out.push(phase);
        }
    }
    out
}

impl Weighting {
    pub fn of(table: &ReferenceTable, lines: &[LineInfo]) -> Weighting {
        let weights = lines
            .iter()
            .map(|l| Weight {
                order: l.order,
                frequency_hz: l.frequency_hz,
                phase_known: l.phase_known,
                inverse_level: table.level_ut(l.frequency_hz).ok().map(|b| 1.0 / b),
                phases_rad: filter_phases_rad(table, l.frequency_hz),
            })
            .collect();
        Weighting { weights }
    }

    /// Whether [`Weighting::index`] refuses a point whose line resultants
    /// are `lines_ut` (µT), without computing the index: a line is present
    /// when its resultant is above zero, exactly when one of its phasor's
    /// components is. Allocates nothing unless it refuses.
    pub fn check_lines(&self, lines_ut: &[f64]) -> Result<(), NotComputed> {
        let present = self.weights.iter().zip(lines_ut).filter(|(_, b)| **b > 0.0).map(|(w, _)| w);
        refusal(present).map_or(Ok(()), Err)
    }

    /// The weighted peak index at a point with these RMS field phasors (one
    /// per line, µT). Lines with no field are left out, as in the
    /// summation. On a band edge the larger index of both phases is taken.
    pub fn index(&self, phasors: &[FieldPhasor]) -> Result<f64, NotComputed> {
        let present: Vec<(&Weight, &FieldPhasor)> =
            self.weights.iter().zip(phasors).filter(|(_, b)| b.iter().any(|c| c.norm_sqr() > 0.0)).collect();
        if let Some(why) = refusal(present.iter().map(|(w, _)| *w)) {
            return Err(why);
        }
        let combinations: usize = present.iter().map(|(w, _)| w.phases_rad.len()).product();
        let mut best = 0.0f64;
        for k in 0..combinations {
            let terms = weighted_terms(&present, k);
            best = best.max(peak_magnitude(&terms));
        }
        Ok(best)
    }
}

/// Why no index can be computed with these lines present, if so: a line
/// the table does not cover, a harmonic without a stated phase, or too
/// many band-edge combinations (checked in this order).
fn refusal<'w>(present: impl Iterator<Item = &'w Weight> + Clone) -> Option<NotComputed> {
    if present.clone().any(|w| w.inverse_level.is_none() || w.phases_rad.is_empty()) {
        return Some(NotComputed::NotCovered);
    }
    let unknown: Vec<f64> = present.clone().filter(|w| !w.phase_known).map(|w| w.frequency_hz).collect();
    if !unknown.is_empty() {
        return Some(NotComputed::UnknownPhase { frequencies_hz: unknown });
    }
    let combinations: usize = present.map(|w| w.phases_rad.len()).product();
    (combinations > MAX_EDGE_COMBINATIONS).then_some(NotComputed::TooManyEdges)
}

/// The weighted terms `(h_i, w_i)` with `w_i = b_i / B_RL(f_i) · e^{jφ_i}`
/// for combination `k` of the band-edge phases (mixed radix over lines).
fn weighted_terms(present: &[(&Weight, &FieldPhasor)], mut k: usize) -> Vec<Term> {
    present
        .iter()
        .map(|(w, b)| {
            let n = w.phases_rad.len();
            let phase = w.phases_rad[k % n];
            k /= n;
            let scale = Complex64::from_polar(w.inverse_level.unwrap_or(0.0), phase);
            Term { order: f64::from(w.order), w: b.map(|c| c * scale) }
        })
        .collect()
}

/// One weighted line: harmonic order and complex weighted vector (per unit).
#[derive(Debug, Clone, Copy)]
pub struct Term {
    pub order: f64,
    pub w: FieldPhasor,
}

/// `|v(θ)|` with `v(θ) = Σ_i Re(w_i e^{j h_i θ})`, the instantaneous
/// weighted vector magnitude at angle θ of the fundamental.
fn magnitude_at(terms: &[Term], theta: f64) -> f64 {
    let mut v = [0.0f64; 3];
    for t in terms {
        let rot = Complex64::from_polar(1.0, t.order * theta);
        for (axis, c) in v.iter_mut().zip(t.w.iter()) {
            *axis += (c * rot).re;
        }
    }
    (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()
}

/// `max_θ |v(θ)|` over one period of the fundamental: a grid of
/// [`SAMPLES_PER_HIGHEST_PERIOD`] per period of the highest harmonic, then
/// a golden-section refinement of every local maximum near the best sample.
pub fn peak_magnitude(terms: &[Term]) -> f64 {
    if terms.is_empty() {
        return 0.0;
    }
    let h_max = terms.iter().map(|t| t.order).fold(1.0, f64::max);
    let n = (SAMPLES_PER_HIGHEST_PERIOD * h_max.ceil() as usize).max(64);
    let step = TAU / n as f64;
    let samples: Vec<f64> = (0..n).map(|k| magnitude_at(terms, k as f64 * step)).collect();
    let best_sample = samples.iter().cloned().fold(0.0, f64::max);
    let summation: f64 = terms.iter().map(|t| crate::field::resultant_ut(&t.w)).sum();
    let floor = best_sample - REFINE_MARGIN * summation;
    let mut best = best_sample;
    for k in 0..n {
        let (prev, next) = (samples[(k + n - 1) % n], samples[(k + 1) % n]);
        if samples[k] >= prev && samples[k] >= next && samples[k] >= floor {
            let theta = k as f64 * step;
            best = best.max(golden_max(terms, theta - step, theta + step));
        }
    }
    best
}

/// Golden-section search for the maximum of `|v|` in `[lo, hi]`.
fn golden_max(terms: &[Term], mut lo: f64, mut hi: f64) -> f64 {
    let r = (5f64.sqrt() - 1.0) / 2.0;
    let mut x1 = hi - r * (hi - lo);
    let mut x2 = lo + r * (hi - lo);
    let (mut f1, mut f2) = (magnitude_at(terms, x1), magnitude_at(terms, x2));
    for _ in 0..GOLDEN_STEPS {
        if f1 < f2 {
            lo = x1;
            x1 = x2;
            f1 = f2;
            x2 = lo + r * (hi - lo);
            f2 = magnitude_at(terms, x2);
        } else {
            hi = x2;
            x2 = x1;
            f2 = f1;
            x1 = hi - r * (hi - lo);
            f1 = magnitude_at(terms, x1);
        }
    }
    f1.max(f2).max(magnitude_at(terms, 0.5 * (lo + hi)))
}

/// Both numbers of one comparison and the rule that decided its verdict.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Decision {
    /// The weighted peak index (`None`: not computed, see `note`).
    pub index: Option<f64>,
    /// Why the index is missing.
    pub note: Option<String>,
    /// The rule the verdict was read from.
    pub decided_by: DecisionRule,
    /// The number the verdict is read from (`None`: not covered).
    pub deciding: Option<f64>,
}

/// The table's rule where it can be applied: the weighted peak index
/// decides only for a `weighted_peak` table, at a point the summation
/// covers, with the index computed; otherwise the summation decides (the
/// conservative side, never below the index).
pub(crate) fn decide(rule: DecisionRule, summation: Option<f64>, index: Result<f64, NotComputed>) -> Decision {
    let (index, note) = match (summation, index) {
        (None, _) => (None, Some(NotComputed::NotCovered.note())),
        (Some(_), Ok(i)) => (Some(i), None),
        (Some(_), Err(e)) => (None, Some(e.note())),
    };
    match (rule, index) {
        (DecisionRule::WeightedPeak, Some(i)) => {
            Decision { index: Some(i), note, decided_by: DecisionRule::WeightedPeak, deciding: Some(i) }
        }
        _ => Decision { index, note, decided_by: DecisionRule::Summation, deciding: summation },
    }
}
