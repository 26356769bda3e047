//! Reconciliation, load fit and extrapolation of a survey.
//!
//! All three work from one influence matrix over the measurement points:
//! the field of each circuit (and of the explicitly driven conductors) at
//! the survey's loads, per frequency, so that scaling a circuit is a
//! multiplication, not a new field computation.

use super::wire::MeterQuantity;
use super::{Survey, lm};
use crate::assess::{Verdict, ratio_of};
use crate::cancel::{Cancel, Cancelled, uncancelled};
use crate::cautions::cautions;
use crate::field::{self, FieldPhasor, try_influence_matrix};
use crate::limits::ReferenceTable;
use crate::site::{CircuitLoad, Drive, Problems, Site, excitation_of};
use nalgebra::DMatrix;
use serde::{Deserialize, Serialize};

/// Per point and frequency, the phasor of each group: circuits in site order,
/// then the explicitly driven conductors.
struct GroupFields {
    /// `[point][group][line]`.
    b: Vec<Vec<Vec<FieldPhasor>>>,
    line_hz: Vec<f64>,
    inside: Vec<bool>,
    /// The quantity the model is evaluated in: the meter's.
    quantity: MeterQuantity,
}

fn group_fields(
    site: &Site,
    points: &[nalgebra::Point3<f64>],
    loads: &[CircuitLoad],
    quantity: MeterQuantity,
    cancel: &Cancel,
) -> Result<GroupFields, Cancelled> {
    let filaments = crate::site::filaments(site.conductors());
    let g = try_influence_matrix(&filaments, points, cancel)?;
    let drives: Vec<Drive> = site.conductors().iter().map(|c| c.drive).collect();
    let exc = excitation_of(site.frequency_hz(), site.circuits(), &drives, loads);
    let groups = site.circuits().len() + 1;
    let group_of = |k: usize| match drives[k] {
        Drive::Phase { circuit, .. } => circuit,
        Drive::Explicit { .. } => groups - 1,
    };
    let b = (0..points.len())
        .map(|i| {
            let mut per = vec![vec![FieldPhasor::zeros(); exc.lines.len()]; groups];
            for k in 0..drives.len() {
                let gk = g.coefficient(i, k);
                for (f, line) in exc.lines.iter().enumerate() {
                    per[group_of(k)][f] += gk.map(|x| line.currents_a[k] * x);
                }
            }
            per
        })
        .collect();
    Ok(GroupFields {
        b,
        line_hz: exc.lines.iter().map(|l| l.frequency_hz).collect(),
        inside: (0..points.len()).map(|i| g.is_inside(i)).collect(),
        quantity,
    })
}

/// Per-frequency phasors of point `i` with group scales `s` (the last
/// group fixed at 1).
fn scaled_phasors(gf: &GroupFields, i: usize, s: &[f64]) -> Vec<FieldPhasor> {
    let groups = gf.b[i].len();
    (0..gf.line_hz.len())
        .map(|f| (0..groups).map(|g| gf.b[i][g][f] * nalgebra::Complex::new(*s.get(g).unwrap_or(&1.0), 0.0)).sum())
        .collect()
}

/// The model (µT) of point `i` with group scales `s`, in the meter's
/// quantity: the resultant or the maximum over all frequencies.
fn model_scaled(gf: &GroupFields, i: usize, s: &[f64]) -> f64 {
    let phasors = scaled_phasors(gf, i, s);
    match gf.quantity {
        MeterQuantity::Resultant => field::total_resultant_ut(&phasors),
        MeterQuantity::Maximum => field::total_maximum_ut(&phasors),
    }
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct PointCheck {
    /// Measurement id.
    pub id: String,
    /// The measured point `[x, y, z]`, m.
    pub at: [f64; 3],
    /// Measured resultant RMS flux density, µT.
    pub measured_ut: f64,
    /// Model at the survey's loads, µT (`null` inside a conductor).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub model_ut: Option<f64>,
    /// measured / model.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub ratio: Option<f64>,
    /// measured − model, µT.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub difference_ut: Option<f64>,
    /// Combined expanded uncertainty of the difference, µT:
    /// sqrt((U_meter · measured)² + (U_model · model)²).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub allowed_difference_ut: Option<f64>,
    /// The difference is outside the combined uncertainty.
    pub flagged: bool,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct ReconciliationSummary {
    /// Measurements compared.
    pub points: usize,
    /// Measurements outside the combined uncertainty.
    pub flagged: usize,
    /// Median of measured / model.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub median_ratio: Option<f64>,
    /// Smallest measured / model.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub min_ratio: Option<f64>,
    /// Largest measured / model.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub max_ratio: Option<f64>,
    /// exp(standard deviation of ln(ratio)): 1.1 means a typical ±10 % scatter.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub geometric_spread: Option<f64>,
    /// Up to three ids with the largest |ln(ratio)|.
    pub worst: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct Reconciliation {
    /// The meter's expanded (k = 2) uncertainty, percent.
    pub meter_expanded_uncertainty_percent: f64,
    /// What the meter reads; `model_ut` is the same quantity.
    pub meter_quantity: MeterQuantity,
    /// The model's expanded (k = 2) uncertainty, percent.
    pub model_expanded_uncertainty_percent: f64,
    /// One check per measurement.
    pub points: Vec<PointCheck>,
    /// Summary over the measurements.
    pub summary: ReconciliationSummary,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum FitStatus {
    Fitted,
    /// Fitted at the lower bound (0): the data want less than no current.
    AtBound,
    /// No measurement is sensitive to this circuit: not estimated.
    Unidentifiable,
    /// The circuits' effects cannot be told apart at these points.
    IllConditioned,
    /// Estimated, but its standard uncertainty exceeds the threshold in
    /// `load_fit.thresholds`: the value is shown with its ± and must not be
    /// relied on.
    PoorlyDetermined,
    /// The fit as a whole did not converge: no value is given.
    NotConverged,
}

/// How the fit as a whole ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
#[serde(rename_all = "snake_case")]
pub enum FitState {
    /// The solver met a stopping test and the problem is well conditioned.
    Converged,
    /// The solver reached its iteration cap: no fitted currents are given.
    NotConverged,
    /// The circuits' effects cannot be told apart at these points (the
    /// condition number exceeds the threshold): no fitted currents are given.
    IllConditioned,
}

/// The thresholds behind the status words, stated with every fit. Our own
/// choices (no source), named beside their constants in `survey/analysis.rs`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct FitThresholds {
    /// A circuit whose sensitivity is below this is `unidentifiable`
    /// (dimensionless: standard uncertainties of the readings, root sum of
    /// squares over the points, per unit of its scale).
    pub unidentifiable_below_sensitivity: f64,
    /// A circuit whose scale's standard uncertainty exceeds this is
    /// `poorly_determined` (dimensionless; 0.5 = ±50 % of the stated load).
    pub poorly_determined_above_scale_std_error: f64,
    /// The fit is `ill_conditioned` when the condition number of its
    /// Jacobian exceeds this.
    pub ill_conditioned_above_condition_number: f64,
    /// Most solver iterations; a fit that reaches it is `not_converged`.
    pub max_iterations: usize,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct CircuitFit {
    /// Circuit id (or the explicitly driven conductors).
    pub circuit: String,
    /// Nominal RMS phase current stated for the survey, A.
    pub stated_a: f64,
    /// Factor on the stated currents that best explains the measurements.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub scale: Option<f64>,
    /// scale · stated_a, A RMS.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub fitted_a: Option<f64>,
    /// One standard uncertainty of `scale` (from the fit's covariance,
    /// scaled up by the reduced χ² when the scatter exceeds the meter's).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub scale_std_error: Option<f64>,
    /// How the fit of this circuit went.
    pub status: FitStatus,
    /// How strongly the readings respond to this circuit: root sum of
    /// squares over the points of its own field in standard uncertainties
    /// of each reading (dimensionless; compare
    /// `thresholds.unidentifiable_below_sensitivity`).
    pub sensitivity: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct LoadFit {
    /// One fit per circuit.
    pub circuits: Vec<CircuitFit>,
    /// RMS of (model − measured) / measured over the fitted points, after the fit.
    pub residual_rms_relative: f64,
    /// Reduced χ² with the meter's standard uncertainty (U/2).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub reduced_chi2: Option<f64>,
    /// Solver iterations used.
    pub iterations: usize,
    /// The solver met a stopping test (kept; see `status` for the verdict).
    pub converged: bool,
    /// Condition number of the fit's normal matrix.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub condition_number: Option<f64>,
    /// The fit as a whole: `converged`, `not_converged` or
    /// `ill_conditioned`; only a converged fit gives fitted currents.
    pub status: FitState,
    pub thresholds: FitThresholds,
    /// Notes on the fit.
    pub notes: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct ExtrapolatedComparison {
    /// Table id.
    pub table_id: String,
    /// Exposure ratio of the extrapolated value.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub ratio: Option<f64>,
    /// Verdict of the extrapolated value.
    pub verdict: Verdict,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct ExtrapolatedPoint {
    /// Measurement id.
    pub id: String,
    /// Measured resultant, µT RMS.
    pub measured_ut: f64,
    /// The reconciliation flagged this point (measured and model disagree
    /// beyond their uncertainties): its extrapolated value carries that
    /// disagreement.
    pub flagged: bool,
    /// Model at rated load / model at the survey's loads, at this point.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub factor: Option<f64>,
    /// measured_ut · factor, µT RMS.
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub extrapolated_ut: Option<f64>,
    /// One per table.
    pub comparisons: Vec<ExtrapolatedComparison>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct Extrapolation {
    /// One per measurement.
    pub points: Vec<ExtrapolatedPoint>,
    /// What the extrapolation assumes.
    pub assumptions: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "schema", derive(utoipa::ToSchema))]
pub struct SurveyAnalysis {
    /// When measured (as submitted).
    pub measured_at: String,
    /// Measured against modelled.
    pub reconciliation: Reconciliation,
    /// Bounded least-squares fit of circuit scales.
    pub load_fit: LoadFit,
    /// `null` when a circuit has no rated current (named in the notes).
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub extrapolation: Option<Extrapolation>,
    /// Notes.
    pub notes: Vec<String>,
    /// Cautions that apply to every result.
    pub cautions: Vec<String>,
    /// Model warnings about the surveyed site, with pointers into the site
    /// document. Empty in analyses stored before warnings existed.
    #[serde(default)]
    #[cfg_attr(feature = "schema", schema(required = true))]
    pub warnings: Vec<crate::site::Warning>,
}

fn median(mut v: Vec<f64>) -> Option<f64> {
    if v.is_empty() {
        return None;
    }
    v.sort_by(f64::total_cmp);
    let n = v.len();
    Some(if n % 2 == 1 { v[n / 2] } else { 0.5 * (v[n / 2 - 1] + v[n / 2]) })
}

fn reconcile(survey: &Survey, gf: &GroupFields) -> Reconciliation {
    let ones = vec![1.0; gf.b.first().map_or(0, |p| p.len())];
    let points: Vec<PointCheck> = survey
        .points
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let model = (!gf.inside[i]).then(|| model_scaled(gf, i, &ones));
            let allowed =
                model.map(|c| ((survey.meter_u * m.measured_ut).powi(2) + (survey.model_u * c).powi(2)).sqrt());
            let difference = model.map(|c| m.measured_ut - c);
            PointCheck {
                id: m.id.clone(),
                at: [m.at.x, m.at.y, m.at.z],
                measured_ut: m.measured_ut,
                model_ut: model,
                ratio: model.filter(|c| *c > 0.0).map(|c| m.measured_ut / c),
                difference_ut: difference,
                allowed_difference_ut: allowed,
                flagged: match (difference, allowed) {
                    (Some(d), Some(a)) => d.abs() > a,
                    _ => true,
                },
            }
        })
        .collect();
    let ratios: Vec<f64> = points.iter().filter_map(|p| p.ratio).filter(|r| *r > 0.0).collect();
    let logs: Vec<f64> = ratios.iter().map(|r| r.ln()).collect();
    let spread = (logs.len() > 1).then(|| {
        let mean = logs.iter().sum::<f64>() / logs.len() as f64;
        (logs.iter().map(|l| (l - mean).powi(2)).sum::<f64>() / (logs.len() - 1) as f64).sqrt().exp()
    });
    let mut by_badness: Vec<(f64, String)> =
        points.iter().filter_map(|p| p.ratio.filter(|r| *r > 0.0).map(|r| (r.ln().abs(), p.id.clone()))).collect();
    by_badness.sort_by(|a, b| b.0.total_cmp(&a.0));
    Reconciliation {
        meter_expanded_uncertainty_percent: survey.meter_u * 100.0,
        meter_quantity: gf.quantity,
        model_expanded_uncertainty_percent: survey.model_u * 100.0,
        summary: ReconciliationSummary {
            points: points.len(),
            flagged: points.iter().filter(|p| p.flagged).count(),
            median_ratio: median(ratios.clone()),
            min_ratio: ratios.iter().cloned().reduce(f64::min),
            max_ratio: ratios.iter().cloned().reduce(f64::max),
            geometric_spread: spread,
            worst: by_badness.into_iter().take(3).map(|(_, id)| id).collect(),
        },
        points,
    }
}

/// Sensitivity below which a circuit is not estimated: doubling its current
/// would move the normalised residuals by less than this many standard
/// uncertainties in total.
const MIN_SENSITIVITY: f64 = 1.0e-3;
/// Condition number of the Jacobian beyond which the fit is ill-conditioned.
const MAX_CONDITION: f64 = 1.0e8;
/// Floor on a reading's standard uncertainty, as a fraction of the standard
/// uncertainty of the median reading: a zero or tiny reading would otherwise
/// get σ → 0 and an unbounded weight. Our own choice, like the three
/// thresholds around it (no source).
const SIGMA_FLOOR_OF_MEDIAN: f64 = 1e-3;
/// A fitted scale whose standard uncertainty exceeds this (dimensionless,
/// ±50 % of the stated load) is reported as poorly determined.
const POORLY_DETERMINED_SCALE_ERROR: f64 = 0.5;

/// The readings the fit uses (points outside every conductor) with their
/// standard uncertainties.
struct Observations {
    /// Index of each used point in the survey.
    used: Vec<usize>,
    /// Measured resultant, µT RMS.
    measured_ut: Vec<f64>,
    /// Standard (k = 1) uncertainty of each reading, µT: half the meter's
    /// expanded (k = 2) uncertainty.
    sigma_ut: Vec<f64>,
}

fn observations(survey: &Survey, gf: &GroupFields) -> Observations {
    let used: Vec<usize> = (0..survey.points.len()).filter(|&i| !gf.inside[i]).collect();
    let meds = median(used.iter().map(|&i| survey.points[i].measured_ut).collect()).unwrap_or(1.0).max(1e-12);
    let sigma_ut = used
        .iter()
        .map(|&i| {
            (0.5 * survey.meter_u * survey.points[i].measured_ut)
                .max(SIGMA_FLOOR_OF_MEDIAN * meds * 0.5 * survey.meter_u)
                .max(1e-12)
        })
        .collect();
    let measured_ut = used.iter().map(|&i| survey.points[i].measured_ut).collect();
    Observations { used, measured_ut, sigma_ut }
}

/// Sensitivity of each circuit: |∂B/∂s_c| over the used points, in σ units
/// (root sum of squares).
fn sensitivities(gf: &GroupFields, obs: &Observations, circuits: usize) -> Vec<f64> {
    (0..circuits)
        .map(|c| {
            obs.used
                .iter()
                .zip(&obs.sigma_ut)
                .map(|(&i, s)| {
                    let own: f64 = gf.b[i][c].iter().map(|b| field::resultant_ut(b).powi(2)).sum::<f64>().sqrt();
                    (own / s).powi(2)
                })
                .sum::<f64>()
                .sqrt()
        })
        .collect()
}

/// The load fit as a least-squares problem: `r_i(s) = (|B_i(s)| − m_i) / σ_i`
/// over the used points, with one column per free circuit.
struct LoadProblem<'a> {
    gf: &'a GroupFields,
    obs: &'a Observations,
    free: &'a [usize],
}

impl lm::Problem for LoadProblem<'_> {
    fn residuals(&self, s: &[f64]) -> Vec<f64> {
        let o = self.obs;
        o.used
            .iter()
            .zip(&o.measured_ut)
            .zip(&o.sigma_ut)
            .map(|((&i, m), sg)| (model_scaled(self.gf, i, s) - m) / sg)
            .collect()
    }

    /// Analytic for the resultant, by central differences for the maximum
    /// (see [`resultant_row`] and [`maximum_row`]).
    fn jacobian(&self, s: &[f64]) -> DMatrix<f64> {
        let mut j = DMatrix::zeros(self.obs.used.len(), self.free.len());
        for (row, (&i, sg)) in self.obs.used.iter().zip(&self.obs.sigma_ut).enumerate() {
            let d = match self.gf.quantity {
                MeterQuantity::Resultant => resultant_row(self.gf, i, s, self.free),
                MeterQuantity::Maximum => maximum_row(self.gf, i, s, self.free),
            };
            for (col, v) in d.into_iter().enumerate() {
                j[(row, col)] = v / sg;
            }
        }
        j
    }
}

/// ∂|B|/∂s_c = Re Σ_f conj(B_f)·B_fc / |B| for the resultant |B| of point
/// `i`, one entry per free circuit, µT per unit scale.
fn resultant_row(gf: &GroupFields, i: usize, s: &[f64], free: &[usize]) -> Vec<f64> {
    let total = scaled_phasors(gf, i, s);
    let mag = field::total_resultant_ut(&total).max(1e-300);
    free.iter().map(|&c| (0..gf.line_hz.len()).map(|f| total[f].dotc(&gf.b[i][c][f]).re).sum::<f64>() / mag).collect()
}

/// Relative step of the central differences on the maximum: about the cube
/// root of the f64 epsilon, which balances truncation (∝ h²) and rounding
/// (∝ ε/h) errors (Nocedal & Wright 2006, §8.1).
const MAXIMUM_DIFF_STEP: f64 = 6e-6;

/// ∂B_max/∂s_c by central differences, one entry per free circuit, µT per
/// unit scale. The maximum (`field::total_maximum_ut`) has no closed-form
/// derivative here and a kink where the polarisation is circular (two equal
/// eigenvalues); there the central difference averages the two one-sided
/// slopes.
fn maximum_row(gf: &GroupFields, i: usize, s: &[f64], free: &[usize]) -> Vec<f64> {
    free.iter()
        .map(|&c| {
            let h = MAXIMUM_DIFF_STEP * s[c].abs().max(1.0);
            let (mut up, mut down) = (s.to_vec(), s.to_vec());
            up[c] += h;
            down[c] -= h;
            (model_scaled(gf, i, &up) - model_scaled(gf, i, &down)) / (2.0 * h)
        })
        .collect()
}

/// Condition number of the Jacobian (`None` with no free circuit; infinite
/// when a singular value is 0).
fn condition_number(j: &DMatrix<f64>, free: &[usize]) -> Option<f64> {
    let svd = j.clone().svd(false, false);
    let (smax, smin) = (svd.singular_values.max(), svd.singular_values.min());
    (!free.is_empty()).then(|| if smin > 0.0 { smax / smin } else { f64::INFINITY })
}

/// What the fit found, for turning into per-circuit results.
struct FitOutcome<'a> {
    free: &'a [usize],
    s: &'a [f64],
    /// Covariance of the free scales, (JᵀJ)⁻¹, if invertible.
    cov: Option<DMatrix<f64>>,
    /// Factor on the covariance: the reduced χ² when above 1.
    inflate: f64,
    ill: bool,
    /// The solver met a stopping test.
    converged: bool,
    /// Sensitivity of every circuit (site order).
    sensitivity: &'a [f64],
}

fn circuit_fits(survey: &Survey, out: &FitOutcome) -> Vec<CircuitFit> {
    survey
        .site()
        .circuits()
        .iter()
        .enumerate()
        .map(|(c, circ)| {
            let stated = circ.nominal_current_a(survey.loads[c]);
            match out.free.iter().position(|&f| f == c) {
                None => CircuitFit {
                    circuit: circ.id.clone(),
                    stated_a: stated,
                    scale: None,
                    fitted_a: None,
                    scale_std_error: None,
                    status: FitStatus::Unidentifiable,
                    sensitivity: out.sensitivity[c],
                },
                Some(k) => fitted_circuit(circ.id.clone(), stated, c, k, out),
            }
        })
        .collect()
}

/// Result of site circuit `c`, free column `k`. Only a converged,
/// well-conditioned fit gives a scale; one whose standard uncertainty
/// exceeds [`POORLY_DETERMINED_SCALE_ERROR`] (or cannot be computed) is
/// `poorly_determined` even at the bound.
fn fitted_circuit(circuit: String, stated: f64, c: usize, k: usize, out: &FitOutcome) -> CircuitFit {
    let scale = out.s[c];
    let se = out.cov.as_ref().map(|cv| (cv[(k, k)].max(0.0) * out.inflate).sqrt()).filter(|v| v.is_finite());
    let status = if out.ill {
        FitStatus::IllConditioned
    } else if !out.converged {
        FitStatus::NotConverged
    } else if se.is_none_or(|e| e > POORLY_DETERMINED_SCALE_ERROR) {
        FitStatus::PoorlyDetermined
    } else if scale == 0.0 {
        FitStatus::AtBound
    } else {
        FitStatus::Fitted
    };
    let shown = !out.ill && out.converged;
    let scale = shown.then_some(scale);
    CircuitFit {
        circuit,
        stated_a: stated,
        scale,
        fitted_a: scale.map(|x| x * stated),
        scale_std_error: if shown { se } else { None },
        status,
        sensitivity: out.sensitivity[c],
    }
}

fn fit_notes(circuits: &[CircuitFit], state: FitState, iterations: usize) -> Vec<String> {
    let mut notes = Vec::new();
    match state {
        FitState::IllConditioned => notes.push(
            "the circuits' effects cannot be told apart at these measurement points: no fitted currents are given; add points where one circuit dominates".into(),
        ),
        FitState::NotConverged => notes.push(format!(
            "the fit did not converge within {iterations} iterations: no fitted currents are given (the reconciliation and the extrapolation use the stated loads and stand)"
        )),
        FitState::Converged => {}
    }
    for c in circuits.iter().filter(|c| c.status == FitStatus::PoorlyDetermined) {
        notes.push(format!(
            "circuit '{}' is poorly determined by these points ({} on its scale, threshold ± {POORLY_DETERMINED_SCALE_ERROR}): do not rely on its fitted current; measure nearer to it",
            c.circuit,
            c.scale_std_error.map_or("no finite uncertainty".into(), |e| format!("± {e:.2}")),
        ));
    }
    for c in circuits.iter().filter(|c| c.status == FitStatus::Unidentifiable) {
        notes.push(format!(
            "circuit '{}' has no measurable effect at any measurement point (sensitivity {:.1e} below {MIN_SENSITIVITY:.0e}): its load is not estimated",
            c.circuit, c.sensitivity
        ));
    }
    notes
}

/// The thresholds of this fit, stated in its output.
fn thresholds(max_iterations: usize) -> FitThresholds {
    FitThresholds {
        unidentifiable_below_sensitivity: MIN_SENSITIVITY,
        poorly_determined_above_scale_std_error: POORLY_DETERMINED_SCALE_ERROR,
        ill_conditioned_above_condition_number: MAX_CONDITION,
        max_iterations,
    }
}

/// RMS of (model − measured) / measured over the used points at scales `s`.
fn residual_rms_relative(gf: &GroupFields, obs: &Observations, s: &[f64]) -> f64 {
    let rel: Vec<f64> =
        obs.used.iter().zip(&obs.measured_ut).map(|(&i, m)| (model_scaled(gf, i, s) - m) / m.max(1e-300)).collect();
    if rel.is_empty() { 0.0 } else { (rel.iter().map(|x| x * x).sum::<f64>() / rel.len() as f64).sqrt() }
}

/// Fits a scale on each identifiable circuit's stated load (bounded below by
/// 0) to the readings by Levenberg–Marquardt (see [`lm`]) on
/// `r_i(s) = (|B_i(s)| − m_i) / σ_i`; σ_i is the meter's standard
/// uncertainty (U/2) of each reading.
fn fit(survey: &Survey, gf: &GroupFields, settings: &FitSettings) -> LoadFit {
    let nc = survey.site().circuits().len();
    let obs = observations(survey, gf);
    let sens = sensitivities(gf, &obs, nc);
    let free: Vec<usize> = (0..nc).filter(|&c| sens[c] >= MIN_SENSITIVITY).collect();
    let problem = LoadProblem { gf, obs: &obs, free: &free };
    let solution = lm::minimise_capped(&problem, vec![1.0; nc], &free, settings.max_iterations);
    let s = &solution.s;
    let dof = obs.used.len() as f64 - free.len() as f64;
    let chi2 = (dof > 0.0).then(|| solution.cost / dof);
    let j = lm::Problem::jacobian(&problem, s);
    let condition = condition_number(&j, &free);
    let ill = condition.is_some_and(|c| c.is_nan() || c > MAX_CONDITION);
    let outcome = FitOutcome {
        free: &free,
        s,
        cov: (j.transpose() * &j).try_inverse(),
        inflate: chi2.map_or(1.0, |c| c.max(1.0)),
        ill,
        converged: solution.converged,
        sensitivity: &sens,
    };
    let state = if ill {
        FitState::IllConditioned
    } else if !solution.converged {
        FitState::NotConverged
    } else {
        FitState::Converged
    };
    let circuits = circuit_fits(survey, &outcome);
    let notes = fit_notes(&circuits, state, solution.iterations);
    LoadFit {
        residual_rms_relative: residual_rms_relative(gf, &obs, s),
        circuits,
        reduced_chi2: chi2,
        iterations: solution.iterations,
        converged: solution.converged,
        condition_number: condition.filter(|c| c.is_finite()),
        status: state,
        thresholds: thresholds(settings.max_iterations),
        notes,
    }
}

/// Assumptions of the extrapolation, stated with every result.
pub const EXTRAPOLATION_ASSUMPTIONS: [&str; 4] = [
    "Each measured value is scaled by the model's ratio of the field at rated load to the field at the survey's loads at that point, so each circuit's share at that point counts (no single global factor).",
    "Geometry, phase angles and harmonic content are as modelled; only the currents change.",
    "The measured value carries the model's error at the survey's loads proportionally to rated load.",
    "Circuits without a stated survey load are taken at their present current_a.",
];

/// Extrapolates every measurement to rated load; `None` when a circuit has
/// no rated current.
fn extrapolate(
    survey: &Survey,
    gf: &GroupFields,
    flagged: &[bool],
    tables: &[ReferenceTable],
    review_fraction: crate::assess::ReviewFraction,
    cancel: &Cancel,
) -> Result<Option<Extrapolation>, Cancelled> {
    let site = survey.site();
    let rated: Option<Vec<CircuitLoad>> =
        site.circuits().iter().map(|c| c.rated_current_a.map(CircuitLoad::CurrentA)).collect();
    let Some(rated) = rated else { return Ok(None) };
    let points: Vec<nalgebra::Point3<f64>> = survey.points.iter().map(|m| m.at).collect();
    let at = RatedFields {
        survey: gf,
        rated: group_fields(site, &points, &rated, gf.quantity, cancel)?,
        ones: vec![1.0; site.circuits().len() + 1],
        whole_body: whole_body_tables(tables),
        review_fraction,
    };
    let out = survey.points.iter().enumerate().map(|(i, m)| extrapolated_point(&at, i, m, flagged[i])).collect();
    Ok(Some(Extrapolation {
        points: out,
        assumptions: EXTRAPOLATION_ASSUMPTIONS.iter().map(|s| s.to_string()).collect(),
    }))
}

/// The tables the extrapolation compares with: whole-body tables, not those
/// for implant wearers.
fn whole_body_tables(tables: &[ReferenceTable]) -> Vec<&ReferenceTable> {
    tables
        .iter()
        .filter(|t| t.applies_to().body_region == crate::limits::TableBodyRegion::WholeBody)
        .filter(|t| t.applies_to().population != crate::limits::Population::ImplantWearers)
        .collect()
}

/// Fields at the survey's loads and at rated load over the same points.
struct RatedFields<'a> {
    survey: &'a GroupFields,
    rated: GroupFields,
    /// Scale 1 on every group.
    ones: Vec<f64>,
    whole_body: Vec<&'a ReferenceTable>,
    review_fraction: crate::assess::ReviewFraction,
}

/// Measurement `i` scaled by the model's rated / survey ratio at its point,
/// and compared with each whole-body table.
fn extrapolated_point(at: &RatedFields, i: usize, m: &super::Measurement, flagged: bool) -> ExtrapolatedPoint {
    let now = (!at.survey.inside[i]).then(|| model_scaled(at.survey, i, &at.ones)).filter(|b| *b > 0.0);
    let full = model_scaled(&at.rated, i, &at.ones);
    let factor = now.map(|b| full / b);
    let extrapolated = factor.map(|f| m.measured_ut * f);
    // Spectrum at rated load, scaled to the measurement.
    let spectrum: Vec<(f64, f64)> = match now {
        Some(b_now) => at
            .rated
            .line_hz
            .iter()
            .enumerate()
            .map(|(f, hz)| {
                let b: FieldPhasor = at.rated.b[i].iter().map(|g| g[f]).sum();
                (*hz, field::resultant_ut(&b) * m.measured_ut / b_now)
            })
            .collect(),
        None => Vec::new(),
    };
    let comparisons = at
        .whole_body
        .iter()
        .map(|t| {
            if extrapolated.is_none() {
                return ExtrapolatedComparison { table_id: t.id().into(), ratio: None, verdict: Verdict::NotComputed };
            }
            let r = ratio_of(&spectrum, t);
            ExtrapolatedComparison { table_id: t.id().into(), ratio: r.ratio, verdict: r.verdict(at.review_fraction) }
        })
        .collect();
    ExtrapolatedPoint {
        id: m.id.clone(),
        measured_ut: m.measured_ut,
        flagged,
        factor,
        extrapolated_ut: extrapolated,
        comparisons,
    }
}

/// Settings of the load fit. The default is what [`analyse`] uses; a
/// smaller iteration cap lets tests (and anyone tuning) see how a fit that
/// does not converge is reported.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FitSettings {
    /// Most solver iterations (default [`lm::MAX_ITERATIONS`]).
    pub max_iterations: usize,
}

impl Default for FitSettings {
    fn default() -> Self {
        FitSettings { max_iterations: lm::MAX_ITERATIONS }
    }
}

/// Reconciles, fits and extrapolates a checked survey against the site it
/// was checked against (which it carries: see [`Survey`]).
pub fn analyse(
    survey: &Survey,
    tables: &[ReferenceTable],
    review_fraction: crate::assess::ReviewFraction,
) -> Result<SurveyAnalysis, Problems> {
    analyse_with(survey, tables, review_fraction, &FitSettings::default())
}

/// [`analyse`] with explicit fit settings.
pub fn analyse_with(
    survey: &Survey,
    tables: &[ReferenceTable],
    review_fraction: crate::assess::ReviewFraction,
    settings: &FitSettings,
) -> Result<SurveyAnalysis, Problems> {
    Ok(uncancelled(analysis(survey, tables, review_fraction, settings, &Cancel::never())))
}

/// [`analyse`] that stops with [`Cancelled`] soon after `cancel` is set.
pub fn try_analyse(
    survey: &Survey,
    tables: &[ReferenceTable],
    review_fraction: crate::assess::ReviewFraction,
    cancel: &Cancel,
) -> Result<SurveyAnalysis, Cancelled> {
    analysis(survey, tables, review_fraction, &FitSettings::default(), cancel)
}

fn analysis(
    survey: &Survey,
    tables: &[ReferenceTable],
    review_fraction: crate::assess::ReviewFraction,
    settings: &FitSettings,
    cancel: &Cancel,
) -> Result<SurveyAnalysis, Cancelled> {
    let site = survey.site();
    let points: Vec<nalgebra::Point3<f64>> = survey.points.iter().map(|m| m.at).collect();
    let gf = group_fields(site, &points, &survey.loads, survey.quantity, cancel)?;
    let reconciliation = reconcile(survey, &gf);
    let load_fit = fit(survey, &gf, settings);
    let flagged: Vec<bool> = reconciliation.points.iter().map(|p| p.flagged).collect();
    let extrapolation = extrapolate(survey, &gf, &flagged, tables, review_fraction, cancel)?;
    let mut notes = Vec::new();
    if extrapolation.is_none() {
        let missing: Vec<&str> =
            site.circuits().iter().filter(|c| c.rated_current_a.is_none()).map(|c| c.id.as_str()).collect();
        notes.push(format!("no extrapolation: circuits without rated_current_a: {}", missing.join(", ")));
    }
    let unstated: Vec<&str> =
        site.circuits().iter().zip(&survey.load_stated).filter(|(_, s)| !**s).map(|(c, _)| c.id.as_str()).collect();
    if !unstated.is_empty() {
        notes.push(format!("survey loads not stated for {}: taken at their present current_a", unstated.join(", ")));
    }
    if extrapolation.is_some() && flagged.iter().any(|f| *f) {
        notes.push(
            "points flagged in the reconciliation stay flagged in the extrapolation: their extrapolated values carry the disagreement with the model".into(),
        );
    }
    if gf.inside.iter().any(|x| *x) {
        notes.push(
            "some measurement points lie inside a conductor in the model: they are flagged and left out of the fit"
                .into(),
        );
    }
    Ok(SurveyAnalysis {
        measured_at: survey.measured_at.clone(),
        reconciliation,
        load_fit,
        extrapolation,
        notes,
        cautions: cautions(),
        warnings: crate::site::site_warnings(survey.site()),
    })
}
