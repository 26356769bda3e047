//! Which relabellings of all chosen circuits at once leave every RMS field
//! unchanged, and so how many arrangements are distinct.
//!
//! An arrangement gives each chosen circuit `i` a permutation `σ_i` of its
//! phases: the conductors drawn as phase `s` carry phase `σ_i(s)`. Feeding
//! every circuit through one more relabelling `τ` of the source's phases
//! gives the arrangement `(τ∘σ_1, …, τ∘σ_N)`. Write `J_i[q]` for the
//! phasor of phase `q` of circuit `i` at one spectral line. If, at every
//! spectral line, either
//!
//! - `J_i[τ(q)] = c · J_i[q]` for every circuit and phase, with one complex
//!   `c` (a cyclic relabelling of balanced circuits: `c = e^{∓j120°}`), or
//! - `J_i[τ(q)] = c · conj(J_i[q])` (reversing the order of balanced
//!   circuits of equal angle: the set becomes its own mirror image),
//!
//! and the currents that no arrangement changes (other circuits, neutrals,
//! explicit currents) satisfy the same relation, then every conductor
//! current of `τ∘σ` is `c` times (the conjugate of) that of `σ`. The
//! influence coefficients are real, so the field phasor is `c` times (the
//! conjugate of) the old one, and every RMS magnitude, hence every
//! resultant and exposure ratio, is the same. Such `τ` form a group `H` of
//! S₃; it acts on arrangements by `σ ↦ τ∘σ` (on all circuits at once), and
//! freely (`τ∘σ_1 = σ_1` forces `τ = id`), so each orbit has `|H|`
//! members and there are `6^N / |H|` distinct arrangements:
//!
//! - every circuit balanced, same angle (same source), no other currents or
//!   only ones that keep the relation: `H = S₃`, `6^(N−1)`;
//! - balanced with arbitrary angle offsets between circuits: conjugation
//!   fails (it turns an offset `δ` into `−δ`), the cyclic ones hold:
//!   `|H| = 3`, `2·6^(N−1)` (N ≥ 2; one circuit alone keeps `H = S₃`);
//! - unbalanced or with per-phase overrides: in general only the identity,
//!   all `6^N`.
//!
//! The group is found by testing the relation on the actual phasors (all
//! six `τ`, every spectral line), so mixed sequences, harmonics and other
//! currents are handled without special cases; the test's tolerance is
//! relative (1e-9 of the largest phasor). A geometry that happens to be
//! symmetric can make further arrangements give equal fields: those are
//! not merged, only ranked equal. `tests/core/mitigate/phases.rs` checks
//! the counts by brute force over all 6^N arrangements.

use num_complex::Complex64;

/// The permutations of three phases: `PERMUTATIONS[k][s]` is the phase
/// (0 = A, 1 = B, 2 = C) fed to conductors drawn as phase `s`. Index 0 is
/// the identity (as built).
pub const PERMUTATIONS: [[u8; 3]; 6] = [[0, 1, 2], [0, 2, 1], [1, 0, 2], [1, 2, 0], [2, 0, 1], [2, 1, 0]];

/// Index of `τ∘σ` in [`PERMUTATIONS`].
pub(crate) fn compose(tau: usize, sigma: usize) -> usize {
    let (t, s) = (PERMUTATIONS[tau], PERMUTATIONS[sigma]);
    let c = [t[s[0] as usize], t[s[1] as usize], t[s[2] as usize]];
    PERMUTATIONS.iter().position(|p| *p == c).unwrap_or(0)
}

/// Phasors of one spectral line: per chosen circuit its phases A, B, C,
/// and the currents no arrangement changes.
pub(crate) struct LineCurrents {
    pub circuits: Vec<[Complex64; 3]>,
    pub fixed: Vec<Complex64>,
}

/// Relative tolerance of the relation test.
const RELATIVE_TOLERANCE: f64 = 1e-9;

/// The relabellings (indices into [`PERMUTATIONS`]) that leave every RMS
/// field unchanged, always including the identity (index 0).
pub(crate) fn invariant_relabellings(lines: &[LineCurrents]) -> Vec<usize> {
    (0..6).filter(|&tau| lines.iter().all(|line| holds_direct(line, tau) || holds_conjugate(line, tau))).collect()
}

fn holds_direct(line: &LineCurrents, tau: usize) -> bool {
    holds(line, tau, |z| z)
}

fn holds_conjugate(line: &LineCurrents, tau: usize) -> bool {
    holds(line, tau, |z| z.conj())
}

/// Whether one complex `c` maps every `map(J_i[q])` to `J_i[τ(q)]` and
/// every `map(fixed)` to itself.
fn holds(line: &LineCurrents, tau: usize, map: impl Fn(Complex64) -> Complex64) -> bool {
    let t = PERMUTATIONS[tau];
    // Pairs (before, after): after must be c · map(before).
    let pairs: Vec<(Complex64, Complex64)> = line
        .circuits
        .iter()
        .flat_map(|j| (0..3).map(move |q| (j[q], j[t[q] as usize])))
        .chain(line.fixed.iter().map(|f| (*f, *f)))
        .collect();
    let scale = pairs.iter().map(|(b, a)| b.norm().max(a.norm())).fold(0.0, f64::max);
    if scale == 0.0 {
        return true;
    }
    let tol = RELATIVE_TOLERANCE * scale;
    // c from the largest `before`; the relation must then hold for all.
    let Some(&(b0, a0)) = pairs.iter().max_by(|x, y| x.0.norm().total_cmp(&y.0.norm())) else {
        return true;
    };
    if b0.norm() <= tol {
        return pairs.iter().all(|(_, a)| a.norm() <= tol);
    }
    let c = a0 / map(b0);
    pairs.iter().all(|(b, a)| (c * map(*b) - a).norm() <= tol * (1.0 + c.norm()))
}

/// Coset representatives for the first circuit: the permutations that are
/// the smallest index of their orbit `{τ∘σ : τ ∈ H}`.
pub(crate) fn first_circuit_choices(group: &[usize]) -> Vec<usize> {
    (0..6).filter(|&s| group.iter().all(|&tau| compose(tau, s) >= s)).collect()
}

/// Plain words for the counting, for the result.
pub(crate) fn symmetry_words(group_size: usize, circuits: usize) -> String {
    match group_size {
        6 => "the chosen circuits carry balanced sets from one source: relabelling all phases at once \
              (6 ways) leaves every RMS field unchanged, so one arrangement in 6 is distinct"
            .to_string(),
        3 if circuits >= 2 => "the chosen circuits differ in angle or sequence: a cyclic relabelling of all phases at \
                               once (3 ways) leaves every RMS field unchanged, reversing the order does not, so one \
                               arrangement in 3 is distinct"
            .to_string(),
        1 => "no relabelling of all phases at once leaves the fields unchanged (unbalanced or overridden phases, \
              or other currents that fix the phase reference): every arrangement is distinct"
            .to_string(),
        n => format!(
            "{n} relabellings of all phases at once leave every RMS field unchanged, so one arrangement in {n} is distinct"
        ),
    }
}
