//! The power and logarithmic sums by the explicit sum over the spectrum.
//!
//! Every requested sum is sum_m c_m d_m^j F(d_m) (velocity-form weights
//! c_m = w_L |<m|p|n l>|^2, d_m in hartree, F = 1 or ln(2|d_m|)): a vector
//! of weights for the one spectral run of [`crate::spectral`], which
//! computes the bound-bound elements, the tail densities and the continuum
//! densities once per node and multiplies them by each weight. This module
//! only sizes the run: the sums of negative powers are dominated by the
//! neighbours n +- 1 and reach n^(3(1-k)), so they set the working bits,
//! while their Rydberg tails are far smaller and set the interpolation
//! orders by their own size.

use crate::error::BetheError;
use crate::spectral::vector::{vector_sum, Component, Plan, VectorSum};
use crate::spectral::{exact_terms, pow_rat, split_point};
use crate::value::Gauge;
use kzero_basis::continuum::DipoleForm;
use kzero_basis::BoundState;
use rug::Float;

/// log2(max_c |sum_t coef_t F_c(d_t)| / goal_c) over exact terms `terms`
/// times `factor` (1 for the terms themselves).
fn bits_over_goals(comps: &[Component], terms: &[crate::spectral::ExactTerm], factor: f64) -> f64 {
    comps
        .iter()
        .map(|c| {
            let size = terms
                .iter()
                .map(|t| {
                    let mut w = Float::with_val(64, &pow_rat(&t.d, c.j)) * &t.coef;
                    if c.log {
                        let ad = Float::with_val(64, &(rug::Rational::from(t.d.abs_ref()) * 2u32));
                        w *= ad.ln();
                    }
                    w.to_f64().abs()
                })
                .fold(0.0f64, f64::max);
            (size * factor).log2() - c.goal.log2()
        })
        .fold(f64::NEG_INFINITY, f64::max)
}

/// The vector of sums `comps` for (n, l) (validated by the caller) in the
/// dipole form `gauge`, each to its own absolute goal.
///
/// # Errors
/// [`BetheError::NoConvergence`] when some component misses its goal after
/// three attempts; basis errors.
pub(crate) fn vector_sums(
    n: u32,
    l: u32,
    gauge: Gauge,
    comps: &[Component],
) -> Result<VectorSum, BetheError> {
    let state = BoundState::hydrogen(i64::from(n), i64::from(l))?;
    // the neighbours n +- 1 (exact, length form) dominate the sums of
    // negative powers: their size over each goal sets the bits
    let near = exact_terms(
        &state,
        DipoleForm::Length,
        n.saturating_sub(1).max(1),
        n + 1,
    )?;
    // (and a sum of order one, when they are smaller: the continuum
    // dominates the positive powers)
    let unit = comps.iter().map(|c| -c.goal.log2()).fold(0.0f64, f64::max);
    let bits = bits_over_goals(comps, &near, 1.0).max(unit);
    // the tail beyond the split point N1: about N1/2 times its first term
    let n1 = split_point(n);
    let first = exact_terms(&state, DipoleForm::Length, n1, n1)?;
    // (the continuum beyond it is smaller still for the negative powers, and
    // of order one at most for the others: at least the bits of a sum of
    // order one)
    let tail_bits = bits_over_goals(comps, &first, f64::from(n1) / 2.0).clamp(unit, bits);
    vector_sum(n, l, gauge, comps, Plan { bits, tail_bits })
}
