//! A small Levenberg–Marquardt solver for non-negative least squares.
//!
//! Minimises `F(s) = Σ r_i(s)²` over the entries `free` of `s`, subject to
//! `s_k ≥ 0`; the other entries of `s` stay as given. Each iteration solves
//! the damped normal equations
//!
//! ```text
//! (JᵀJ + λ·diag(JᵀJ)) δ = −Jᵀr
//! ```
//!
//! over the entries not held at their bound, clips the trial point at 0 and
//! accepts it when the cost does not rise. The scaling `diag(JᵀJ)` is `D²`
//! with Moré's `D = diag(‖J_k‖)` (the column norms of J), so the step does
//! not depend on the units of each parameter; λ falls after an accepted step
//! and rises after a rejected one.
//!
//! Sources (listed in docs/REFERENCES.md):
//! - J. J. Moré, "The Levenberg–Marquardt algorithm: implementation and
//!   theory", in G. A. Watson (ed.), *Numerical Analysis*, Springer LNM
//!   vol. 630, 1978, pp. 105–116 (the damped step and the
//!   column scaling; Moré accepts steps by a trust-region ratio test, this
//!   solver by a simple decrease of the cost).
//! - J. Nocedal and S. J. Wright, *Numerical Optimization*, 2nd ed.,
//!   Springer, 2006, ch. 10.3 (Levenberg–Marquardt as a trust-region method
//!   for nonlinear least squares) and §16.7 (gradient projection: a variable
//!   at its bound whose gradient points outward is held for the step).
//! - D. W. Marquardt, "An algorithm for least-squares estimation of
//!   nonlinear parameters", J. SIAM 11(2):431–441, 1963 (λ multiplied or
//!   divided by a fixed factor).
//!
//! The numeric tuning below (the factors on λ, the tolerances) is our own
//! choice, not taken from those sources: they give the algorithm, not these
//! numbers. The simpler λ rule here (multiply or divide by a fixed factor, as
//! in Marquardt's original scheme) replaces Moré's trust-region update;
//! problems here have a handful of parameters, so robustness matters more
//! than the last iteration.

use nalgebra::{DMatrix, DVector};

/// Damping λ of the first iteration, relative to `diag(JᵀJ)` (dimensionless):
/// small, so a well-posed problem starts close to a Gauss–Newton step.
pub const INITIAL_DAMPING: f64 = 1e-3;
/// Lowest λ (dimensionless): keeps the damped matrix from losing its
/// diagonal term entirely after many accepted steps.
pub const MIN_DAMPING: f64 = 1e-12;
/// λ is divided by this after an accepted step (towards Gauss–Newton).
pub const DAMPING_DECREASE: f64 = 3.0;
/// λ is multiplied by this after a rejected step (towards steepest descent,
/// shorter steps).
pub const DAMPING_INCREASE: f64 = 4.0;
/// Outer iterations before giving up (reported as not converged).
pub const MAX_ITERATIONS: usize = 500;
/// Trial steps with rising λ within one iteration; when all raise the cost,
/// no downhill step exists at this resolution and the solver stops.
pub const MAX_TRIALS: usize = 30;
/// Floor on a diagonal entry of `JᵀJ` in the damping term, in the squared
/// units of the Jacobian: a parameter with a vanishing column still gets a
/// positive damping, so the damped matrix stays invertible.
pub const DIAGONAL_FLOOR: f64 = 1e-12;
/// Converged when no free parameter moved by more than this in one accepted
/// step (in the parameters' own units; here dimensionless load scales).
pub const STEP_TOLERANCE: f64 = 1e-11;
/// Converged when an accepted step lowered the cost by less than this
/// fraction of it.
pub const RELATIVE_DECREASE_TOLERANCE: f64 = 1e-13;
/// Converged when the cost (sum of squared residuals, dimensionless when the
/// residuals are normalised by their uncertainties) falls below this: the
/// model reproduces the data to rounding.
pub const COST_FLOOR: f64 = 1e-26;
/// Guard against a division by an exactly zero cost.
const TINY: f64 = 1e-300;

/// What the solver found.
#[derive(Debug, Clone, PartialEq)]
pub struct Solution {
    /// The parameters (all entries; only `free` ones were moved).
    pub s: Vec<f64>,
    /// Residuals at `s`.
    pub residuals: Vec<f64>,
    /// Sum of squared residuals at `s`.
    pub cost: f64,
    pub iterations: usize,
    pub converged: bool,
}

/// A least-squares problem: residuals and their Jacobian with respect to the
/// `free` parameters (one column per free parameter, in that order).
pub trait Problem {
    fn residuals(&self, s: &[f64]) -> Vec<f64>;
    fn jacobian(&self, s: &[f64]) -> DMatrix<f64>;
}

fn cost(r: &[f64]) -> f64 {
    r.iter().map(|x| x * x).sum::<f64>()
}

/// Minimises the problem's cost from `s` over the entries `free`, keeping
/// each at or above 0. With no free entry there is nothing to fit and the
/// start is returned as converged.
pub fn minimise(problem: &impl Problem, s: Vec<f64>, free: &[usize]) -> Solution {
    minimise_capped(problem, s, free, MAX_ITERATIONS)
}

/// [`minimise`] with at most `max_iterations` outer iterations instead of
/// [`MAX_ITERATIONS`]; a solution that reaches the cap without meeting a
/// stopping test is reported as not converged.
pub fn minimise_capped(problem: &impl Problem, s: Vec<f64>, free: &[usize], max_iterations: usize) -> Solution {
    let residuals = problem.residuals(&s);
    let mut at = Solution { cost: cost(&residuals), residuals, s, iterations: 0, converged: free.is_empty() };
    let mut lambda = INITIAL_DAMPING;
    while !free.is_empty() && at.iterations < max_iterations {
        at.iterations += 1;
        match iterate(problem, &mut at, free, &mut lambda) {
            Iteration::Continue => {}
            Iteration::Done => {
                at.converged = true;
                break;
            }
        }
    }
    at
}

enum Iteration {
    Continue,
    Done,
}

/// One outer iteration: the Jacobian at the current point, then trial steps
/// with rising damping until one does not raise the cost.
fn iterate(problem: &impl Problem, at: &mut Solution, free: &[usize], lambda: &mut f64) -> Iteration {
    let j = problem.jacobian(&at.s);
    let jtj = j.transpose() * &j;
    let g = j.transpose() * DVector::from_column_slice(&at.residuals);
    let active = active_set(&at.s, free, &g);
    if active.is_empty() {
        return Iteration::Done;
    }
    for _ in 0..MAX_TRIALS {
        let Some(step) = damped_step(&jtj, &g, &active, *lambda) else { break };
        let trial = projected(&at.s, free, &active, &step);
        let residuals = problem.residuals(&trial);
        let trial_cost = cost(&residuals);
        if trial_cost <= at.cost {
            let change = free.iter().map(|&c| (trial[c] - at.s[c]).abs()).fold(0.0, f64::max);
            let decrease = (at.cost - trial_cost) / at.cost.max(TINY);
            *at = Solution { s: trial, residuals, cost: trial_cost, ..*at };
            *lambda = (*lambda / DAMPING_DECREASE).max(MIN_DAMPING);
            let small = change < STEP_TOLERANCE || decrease < RELATIVE_DECREASE_TOLERANCE || at.cost < COST_FLOOR;
            return if small { Iteration::Done } else { Iteration::Continue };
        }
        *lambda *= DAMPING_INCREASE;
    }
    // No trial lowered the cost: a (projected) stationary point.
    Iteration::Done
}

/// Columns of the free parameters that may move in this step: one held at
/// its bound 0 whose gradient `g` pushes it further down stays out
/// (gradient projection).
fn active_set(s: &[f64], free: &[usize], g: &DVector<f64>) -> Vec<usize> {
    (0..free.len()).filter(|&k| !(s[free[k]] == 0.0 && g[k] > 0.0)).collect()
}

/// Solves `(JᵀJ + λ·diag(JᵀJ)) δ = −g` over the `active` columns; `None`
/// when the damped matrix is singular.
fn damped_step(jtj: &DMatrix<f64>, g: &DVector<f64>, active: &[usize], lambda: f64) -> Option<DVector<f64>> {
    let n = active.len();
    let mut a = DMatrix::zeros(n, n);
    let mut rhs = DVector::zeros(n);
    for (x, &kx) in active.iter().enumerate() {
        rhs[x] = -g[kx];
        for (y, &ky) in active.iter().enumerate() {
            a[(x, y)] = jtj[(kx, ky)];
        }
        a[(x, x)] += lambda * jtj[(kx, kx)].max(DIAGONAL_FLOOR);
    }
    a.lu().solve(&rhs)
}

/// The trial point: `s` moved by `step` on the active columns, clipped at 0.
fn projected(s: &[f64], free: &[usize], active: &[usize], step: &DVector<f64>) -> Vec<f64> {
    let mut trial = s.to_vec();
    for (x, &k) in active.iter().enumerate() {
        let c = free[k];
        trial[c] = (s[c] + step[x]).max(0.0);
    }
    trial
}
