//! The driver of the Green's-function method: the pilot, the panels in
//! order with their shares of the goal, the exact part, and the result.

use super::exact_part::ExactState;
use super::panels::{panel_integral, panel_layout};
use super::pilot::pilot_profile;
use super::refine::{integrate_panels, ByPrecision};
use super::scale::ln_k0_scale;
use crate::settings::{meet_significant, validate_state, Goal};
use crate::{BetheError, BetheValue, Method, Settings};
use rug::Float;
use std::time::Instant;

/// Estimated single-core CPU time (seconds) of [`ln_k0`] for (n, l) at
/// `digits`, on the reference machine of benches/README.md; used to balance
/// shards and to estimate the cost of a run before it starts.
///
/// # Accuracy
/// A fit to measured single-thread CPU times of 42 states (n = 10..1000,
/// l over the whole range, 20 to 100 digits; benches/README.md, "Whole
/// tables after the twelfth and thirteenth rounds"): within a factor of 1.9
/// of every one of them, rms 39 % (the states of a few milliseconds are
/// timed only to about 1 ms). The model: the working bits
/// b = 3.32 (digits + 2) + 40 + 6 log2 n set the cost of each operation
/// (b^2.4); per node, a fixed part (the Lerch function, the pilot, the
/// panels' overhead) plus the Meixner recurrences and sums over n - l
/// coefficients per channel and a part growing with l (m(a) and the
/// backward runs of large L); the node count grows like 1 + 0.12 log2 n;
/// and the exact data of the lower states (Gordon's formula in big
/// integers) add about 0.28 ns times (n - l)^2 n per channel, which
/// dominates single states of low l near n = 1000.
pub fn cost_estimate(n: u32, l: u32, digits: u32) -> f64 {
    let nf = f64::from(n.max(1));
    let channels = if l == 0 { 1.0 } else { 2.0 };
    let bits = (f64::from(digits) + 2.0) * 3.32 + 40.0 + 6.0 * nf.log2();
    let per_node =
        200.0 + channels * f64::from(n.saturating_sub(l)).powf(1.15) + 0.25 * f64::from(l);
    let integral = 8.17e-6 * (bits / 100.0).powf(2.4) * per_node * (1.0 + 0.12 * nf.log2());
    let lower = f64::from(n.saturating_sub(l + 1));
    let exact = 0.280e-9 * channels * lower * lower * nf;
    integral + exact
}

/// ln k0(n, l) by the Green's-function method.
///
/// # Preconditions
/// 1 <= n <= 1000, 0 <= l < n, `settings.digits` in 5..=200.
///
/// # Accuracy
/// The returned `abs_err` estimates |value - exact| by the difference of two
/// evaluations with different nodes and bits (see the module docs); it is
/// below 10^-digits, or the call fails with [`BetheError::NoConvergence`].
///
/// # Errors
/// [`BetheError::InvalidState`], [`BetheError::OutOfRange`],
/// [`BetheError::DigitsOutOfRange`], [`BetheError::NoConvergence`].
pub fn ln_k0(n: i64, l: i64, settings: &Settings) -> Result<BetheValue, BetheError> {
    settings.validate()?;
    let (n, l) = validate_state(n, l, "green")?;
    if settings.goal == Goal::Significant {
        return meet_significant(n, l, settings, |s| ln_k0(n.into(), l.into(), s));
    }
    let t0 = Instant::now();
    let state = ExactState::new(n, l)?;
    let digits = settings.digits;
    let goal = 10f64.powi(-(digits as i32));
    // goal bits on ln k0, plus one decimal of margin
    let bits = ((f64::from(digits) + 2.0) * std::f64::consts::LOG2_10).ceil() as u32 + 8;
    let panels = panel_layout(state.n, state.first_lower_state());
    let profile = pilot_profile(&state, &panels, bits);
    // each panel gets an equal share of the error budget
    let tol = goal / panels.len() as f64;
    let mut integrands = ByPrecision::new(|prec| state.integrand(prec));
    let done = integrate_panels(
        &panels,
        &profile,
        bits,
        tol,
        &[ln_k0_scale(state.n)],
        &mut |panel, prec, nodes| {
            let (v, loss) = panel_integral(integrands.at(prec), panel, nodes);
            (vec![v], loss)
        },
    )
    .map_err(|panel_best| BetheError::NoConvergence {
        method: "green",
        n,
        l,
        achieved: panel_best * panels.len() as f64,
        goal,
    })?;
    let (err, nodes, prec) = (done.errs[0], done.nodes, done.prec);
    // panels may differ in precision: sum at the highest
    let mut numerator = state.exact_part(prec);
    for v in &done.values {
        numerator -= &v[0];
    }
    // ln k0 = S / D0 with D0 = 2/n^3 (Z = 1)
    let n3 = u64::from(state.n).pow(3);
    let value = Float::with_val(prec, numerator * n3 / 2u32);
    if err < goal {
        let terms = state.channels.iter().map(|c| c.coef.len()).sum();
        return Ok(BetheValue {
            n,
            l,
            value,
            abs_err: err,
            digits,
            goal: Goal::Absolute,
            method: Method::Green,
            bits: prec,
            nodes,
            terms,
            seconds: t0.elapsed().as_secs_f64(),
        });
    }
    Err(BetheError::NoConvergence {
        method: "green",
        n,
        l,
        achieved: err,
        goal,
    })
}
