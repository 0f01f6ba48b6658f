//! The Bethe logarithm as an explicit sum over the hydrogenic spectrum.
//!
//! ```text
//! S = sum_m |<n l|p|m>|^2 D_m ln(2|D_m|/Z^2),   D_m = E_m - E_n,   ln k0 = S / (2 Z^4/n^3)
//! ```
//!
//! over the intermediate angular momenta L = l +- 1 (angular weights of
//! [`kzero_basis::gradient::Channel::weight`]), in three equal forms:
//! velocity |p|^2 D, length |r|^2 D^3, acceleration |grad V|^2 / D
//! (docs/physics.md, sections 1, 2 and 5; D in hartree at Z = 1, where
//! ln(|D| / (Z^2 Ry)) = ln(2|D|)).
//!
//! ## Pieces
//! * **Bound states n' <= N1** (N1 = max(n + 10, 1.3 n), plus the offset of
//!   the form, see Gauges): exact rational
//!   squared radial integrals (only the logarithm is rounded): the length
//!   form by Gordon's formula ([`kzero_basis::gordon::radial_dipole`]), the
//!   velocity and acceleration forms for n <= `EXACT_MAX_N` (60) by direct exact
//!   integration ([`kzero_basis::radial`], [`kzero_basis::exact`]). For larger
//!   n, whose direct exact integrals cost about n^4 big-integer operations
//!   each, these two forms use the MPFR closed form
//!   [`kzero_basis::continuum::BoundFreeKernel::bound_bound`] (Gordon's
//!   formula in the form shared with the tail and the continuum, checked
//!   against the exact integrals in the basis tests), evaluated at each run's
//!   working precision. The degenerate n' = n terms vanish exactly (D = 0, and
//!   p = 0 in the velocity and acceleration forms) and are skipped.
//! * **Rydberg tail n' > N1**: the summand is n'^-3 G(1/n'^2) with G analytic
//!   up to its singularity at 1/n'^2 = 1/n^2 (G is the threshold-continued
//!   density of [`kzero_basis::continuum::BoundFreeKernel::bound_continued`],
//!   times the weight in D). G is interpolated at Chebyshev points of
//!   [0, 1/(N1+1)^2] (no extrapolation) and the interpolant is summed
//!   exactly with Hurwitz zeta values (`tail`). Two interpolation orders
//!   give the tail's error estimate.
//! * **Continuum**: integral over the photo-electron energy with the
//!   closed-form energy-normalized bound-free integrals; the logarithm is
//!   part of the integrand. The map k = s tan(phi), phi in (0, pi/2), s a
//!   multiple of kappa that depends on the form,
//!   turns the E^(-3/2) ln E decay into a logarithmic endpoint
//!   singularity that tanh-sinh quadrature (`quadrature`) integrates with
//!   geometric-in-level convergence; successive levels give its error estimate.
//!
//! ## Gauges
//! The three forms agree term by term (|p_nm| = |D| |r_nm|, |grad V_nm| =
//! |D| |p_nm|), so all three converge for every state. They are computed
//! as independent paths, so that their agreement is evidence:
//! * their own exact bound matrix elements (Gordon's formula for r, exact
//!   integrals of the gradient functions for p, of r^-2 for grad V);
//! * their own bound-free closed forms (different bound-side polynomials,
//!   with the largest high-energy cancellation in the length form, measured
//!   and compensated) in the tail and the continuum;
//! * their own discretization: the continuum map k = s tan(phi) with
//!   s = kappa (velocity), 2 kappa (length), kappa / 2 (acceleration), and
//!   the split point N1 + 0, N1 + 2, N1 + 5, so that quadrature nodes, tail
//!   interpolation and truncation errors differ between the forms.
//!
//! [`ln_k0_all_forms`] computes all three and reports their spread. No form
//! is unsupported.
//!
//! ## Accuracy
//! `settings.digits` = D asks for |error| < 10^-D (for ln k0: on S, a goal
//! of 10^-D D0 / 2). One run evaluates, at working precision b:
//! * the bound part (exact, or closed form at b bits);
//! * the tail with two interpolation orders K < K' (their difference is the
//!   tail's estimate);
//! * the continuum by tanh-sinh levels h = 1, 1/2, 1/4, ... until two
//!   successive levels agree to a quarter of the goal (their difference is
//!   the quadrature estimate), on a range of tau extended in steps of 1/4
//!   until the weighted integrand falls below a truncation threshold eps on
//!   each side (2 eps is added to the estimate).
//!
//! The run is repeated with max(b + 32, bits needed by the measured
//! cancellation sum |terms| / goal) bits, larger tail orders, the split point
//! moved to N1 + 4 and a 1000 times smaller truncation threshold; the
//! reported `abs_err` is the larger of the two runs' difference and the
//! second run's own estimates plus a rounding bound (sum |terms| 2^(12-b)).
//! A vector of sums (one run for several weights, see `vector`) may run
//! the tail and the continuum at fewer bits than the bound part, when the
//! caller knows their sizes over the goals to be that much smaller (the
//! dipole-sum family); their roundings then count at that precision in the
//! bound above. ln k0 and the sum rules run everything at b bits.
//! If it does not meet the goal, both runs are repeated with more bits,
//! orders and levels (three attempts in all), then
//! [`BetheError::NoConvergence`] is returned. Working precision inside the
//! closed forms grows with what they measure (see
//! [`kzero_basis::continuum`]).
//!
//! ## Range
//! 1 <= n <= 1000 ([`crate::settings::MAX_N`]), 0 <= l < n, any Z (the
//! value does not depend on Z; the computation runs at Z = 1). Measured
//! times are in benches/README.md; the cost grows fast with n - l (about
//! 10 to 15 s for n = 200, l = 1 at 20 digits, minutes for n = 1000 and
//! small l), so above n = 200 it is meant as the cross-check of samples.

pub(crate) mod quadrature;
pub(crate) mod tail;
pub(crate) mod vector;

use crate::error::BetheError;
use crate::settings::{meet_significant, significant_loop, validate_state, Goal, Settings};
use crate::value::{BetheValue, Gauge, Method};
use kzero_basis::continuum::{BoundFreeKernel, DipoleForm, LossHint};
use kzero_basis::gordon::radial_dipole;
use kzero_basis::gradient::{gradient_function, Channel};
use kzero_basis::radial::{radial_integral, reduced_radial_function};
use kzero_basis::BoundState;
use rug::ops::Pow;
use rug::{Assign, Float, Rational};
use std::time::Instant;
use vector::{vector_sum, Component, Plan};

pub(crate) const METHOD: &str = "spectral";

/// Largest n whose bound terms use exact rational matrix elements in the
/// velocity and acceleration forms (direct exact integration); above, the
/// MPFR closed form (cost about n^2 per term instead of n^4). The length
/// form always uses the exact Gordon formula.
pub(crate) const EXACT_MAX_N: u32 = 60;

/// What is summed over the spectrum, in velocity-form language.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum SpectralWeight {
    /// sum_m |p_nm|^2 D_m^k (k = 0: <p^2>; k = 1: 2Z^4/n^3 for S states,
    /// else 0; k = -1: 3/2 times the oscillator-strength sum).
    Power(i32),
    /// sum_m |p_nm|^2 D_m ln(2|D_m|/Z^2), the numerator of ln k0.
    BetheLog,
}

/// A spectral sum with its error estimate and its three pieces.
#[derive(Debug, Clone)]
pub struct SpectralSum {
    /// The sum (atomic units, Z = 1).
    pub value: Float,
    /// Estimated absolute error of `value` (refinement, see the module docs).
    pub abs_err: f64,
    /// Bound part n' <= N1 (exact matrix elements).
    pub bound: Float,
    /// Rydberg tail n' > N1.
    pub tail: Float,
    /// Continuum part.
    pub continuum: Float,
    /// Working precision of the final run (bits).
    pub bits: u32,
    /// Continuum quadrature nodes of the final run.
    pub nodes: usize,
    /// Exact bound terms plus tail interpolation points of the final run.
    pub terms: usize,
}

pub(crate) fn form_of(g: Gauge) -> DipoleForm {
    match g {
        Gauge::Velocity => DipoleForm::Velocity,
        Gauge::Length => DipoleForm::Length,
        Gauge::Acceleration => DipoleForm::Acceleration,
    }
}

/// Exact bound-bound data: per term w_L I^2 D^(shift) (rational) and D.
pub(crate) struct ExactTerm {
    pub(crate) coef: Rational,
    pub(crate) d: Rational,
}

pub(crate) fn exact_terms(
    state: &BoundState,
    form: DipoleForm,
    n_from: u32,
    n_to: u32,
) -> Result<Vec<ExactTerm>, BetheError> {
    let n = state.n();
    let l = state.l();
    let en = state.energy();
    let shift = form.velocity_power_shift();
    let mut out = Vec::new();
    for ch in Channel::open(l) {
        let big_l = ch.big_l(l);
        let w = ch.weight(l);
        let g = if form == DipoleForm::Velocity {
            Some(gradient_function(state, ch)?)
        } else {
            None
        };
        for np in n_from.max(big_l + 1)..=n_to {
            let m = BoundState::new(i64::from(np), i64::from(big_l), state.z().clone())?;
            let i = match form {
                // Gordon's closed formula: exact, and about n/2 terms
                DipoleForm::Length => radial_dipole(&m, state)?,
                DipoleForm::Velocity => {
                    reduced_radial_function(&m).integral_with(g.as_ref().expect("velocity"), 0)?
                }
                DipoleForm::Acceleration => {
                    let mut s = radial_integral(&m, state, -2)?;
                    s.coef *= state.z();
                    s
                }
            };
            let i2 = i.square();
            let d = Rational::from(&m.energy() - &en);
            if np == n {
                // degenerate level: D = 0, and p and grad V vanish exactly
                // (r does not, but enters with D^3)
                if i2 != 0 && form != DipoleForm::Length {
                    return Err(BetheError::Basis(kzero_basis::BasisError::InvalidArgument(
                        format!("degenerate matrix element <{np} {big_l}|O|{n} {l}> is not zero"),
                    )));
                }
                continue;
            }
            let mut coef = i2 * &w;
            coef *= pow_rat(&d, shift);
            out.push(ExactTerm { coef, d });
        }
    }
    Ok(out)
}

pub(crate) fn pow_rat(d: &Rational, k: i32) -> Rational {
    let mut r = Rational::from(1);
    for _ in 0..k.unsigned_abs() {
        r *= d;
    }
    if k < 0 {
        r.recip_mut();
    }
    r
}

/// The discretization of one form: the exponent e of the continuum map
/// k = 2^e kappa tan(phi) and the offset of the split point N1. Each form
/// places its quadrature nodes, its exact bound terms and its tail
/// interpolation differently, so the three forms share no discretization
/// error and their agreement tests the error estimates, not only rounding.
pub(crate) fn form_discretization(form: DipoleForm) -> (i32, u32) {
    match form {
        DipoleForm::Velocity => (0, 0),
        DipoleForm::Length => (1, 2),
        DipoleForm::Acceleration => (-1, 5),
    }
}

/// The bound terms n' = L + 1 ..= `n1` (n' != n) of every channel from the
/// closed-form bound-bound integrals: calls `visit(v, D)` with
/// v = |I(n')|^2 w_L / n'^3 D^`shift` and D = E_n' - E_n (units of Z^2 Ry
/// at Z = 1), both at `bits`, and returns the number of terms. Shared by the
/// ln k0 sum and the dipole-sum family, which apply their own weights.
///
/// # Errors
/// A basis error of a kernel evaluation.
pub(crate) fn closed_form_bound_terms(
    kernels: &[(BoundFreeKernel, Rational)],
    hints: &mut [LossHint],
    state: &BoundState,
    shift: i32,
    n1: u32,
    bits: u32,
    mut visit: impl FnMut(Float, &Float),
) -> Result<usize, BetheError> {
    let n = state.n();
    let en = state.energy();
    let mut count = 0;
    for ((kern, wl), hint) in kernels.iter().zip(hints) {
        for np in kern.big_l() + 1..=n1 {
            if np == n {
                continue;
            }
            let i = kern.bound_bound_hinted(np, bits, hint)?;
            let m = BoundState::new(i64::from(np), i64::from(kern.big_l()), Rational::from(1))?;
            let d = Float::with_val(bits, &Rational::from(&m.energy() - &en));
            let mut v = Float::with_val(bits, i.value.square_ref()) * wl;
            v /= Float::with_val(bits, np).pow(3u32);
            v *= pow_float(&d, shift, bits);
            visit(v, &d);
            count += 1;
        }
    }
    Ok(count)
}

pub(crate) fn pow_float(d: &Float, k: i32, prec: u32) -> Float {
    let mut r = Float::with_val(prec, 1);
    for _ in 0..k.unsigned_abs() {
        r *= d;
    }
    if k < 0 {
        r.recip_mut();
    }
    r
}

pub(crate) fn cheb_order(n: u32, a: u32, bits: f64) -> usize {
    let x0 = 2.0 * (f64::from(a) / f64::from(n)).powi(2) - 1.0;
    let rho = x0 + (x0 * x0 - 1.0).sqrt();
    ((bits * std::f64::consts::LN_2 + 8.0) / rho.ln()).ceil() as usize + 4
}

pub(crate) fn split_point(n: u32) -> u32 {
    (n + 10).max((f64::from(n) * 1.3).ceil() as u32)
}

/// The spectral sum of `weight` for the state (n, l) in the form `gauge`,
/// with the goal of `settings` *on the sum itself* (atomic units, Z = 1):
/// absolute, or significant digits of the sum (a sum that vanishes, such as
/// sum |p|^2 D for l > 0, cannot meet a significant goal and gives
/// [`BetheError::GoalOutOfReach`]).
///
/// # Accuracy
/// As the module documentation: refinement in bits, nodes, tail order and
/// split point; `abs_err` is an estimate, and the goal is enforced.
///
/// # Errors
/// [`BetheError::InvalidState`], [`BetheError::OutOfRange`] (n > 1000),
/// [`BetheError::DigitsOutOfRange`], [`BetheError::NoConvergence`].
pub fn spectral_sum(
    n: i64,
    l: i64,
    gauge: Gauge,
    weight: SpectralWeight,
    settings: &Settings,
) -> Result<SpectralSum, BetheError> {
    settings.validate()?;
    if settings.goal == Goal::Significant {
        let (nu, lu) = validate_state(n, l, METHOD)?;
        return significant_loop(nu, lu, settings, |s| {
            let r = spectral_sum(n, l, gauge, weight, s)?;
            let (x, e) = (r.value.to_f64(), r.abs_err);
            Ok((r, x, e))
        });
    }
    let goal = 10f64.powi(-(settings.digits as i32));
    sum_with_goal(n, l, gauge, weight, goal)
}

fn sum_with_goal(
    n: i64,
    l: i64,
    gauge: Gauge,
    weight: SpectralWeight,
    goal: f64,
) -> Result<SpectralSum, BetheError> {
    let (n, l) = validate_state(n, l, METHOD)?;
    let (j, log) = match weight {
        SpectralWeight::Power(k) => (k, false),
        SpectralWeight::BetheLog => (1, true),
    };
    let comp = Component {
        j,
        log,
        goal,
        scale: 1.0,
    };
    // a sum of order one: the goal sets the bits
    let bits = -goal.log2();
    let plan = Plan {
        bits,
        tail_bits: bits,
    };
    let mut v = vector_sum(n, l, gauge, &[comp], plan)?;
    let one = |x: &mut Vec<Float>| x.pop().expect("one component");
    Ok(SpectralSum {
        value: one(&mut v.values),
        abs_err: v.errs[0],
        bound: one(&mut v.bound),
        tail: one(&mut v.tail),
        continuum: one(&mut v.continuum),
        bits: v.bits,
        nodes: v.nodes,
        terms: v.terms,
    })
}

/// ln k0(n, l) by the explicit sum over the spectrum in the form `gauge`
/// (energies in units of Z^2 Ry; independent of Z).
///
/// # Accuracy
/// `settings.digits` = D: the returned `abs_err` (an estimate by
/// refinement, see the module documentation) is below 10^-D, otherwise an
/// error is returned.
///
/// # Errors
/// [`BetheError::InvalidState`] unless n >= 1 and 0 <= l < n;
/// [`BetheError::OutOfRange`] for n > 1000; [`BetheError::DigitsOutOfRange`];
/// [`BetheError::NoConvergence`] when refinement does not reach the goal.
pub fn ln_k0(n: i64, l: i64, gauge: Gauge, settings: &Settings) -> Result<BetheValue, BetheError> {
    let start = Instant::now();
    settings.validate()?;
    let (nu, lu) = validate_state(n, l, METHOD)?;
    if settings.goal == Goal::Significant {
        return meet_significant(nu, lu, settings, |s| ln_k0(n, l, gauge, s));
    }
    // S / D0 with D0 = 2/n^3: goal on S is 10^-D * D0
    let d0 = Rational::from((2, nu * nu * nu));
    let d0f = d0.to_f64();
    let goal = 10f64.powi(-(settings.digits as i32));
    let s = sum_with_goal(n, l, gauge, SpectralWeight::BetheLog, goal * d0f * 0.5)?;
    let mut value = Float::with_val(s.bits, &s.value);
    value /= Float::with_val(s.bits, &d0);
    let abs_err = s.abs_err / d0f;
    if abs_err >= goal {
        return Err(BetheError::NoConvergence {
            method: METHOD,
            n: nu,
            l: lu,
            achieved: abs_err,
            goal,
        });
    }
    Ok(BetheValue {
        n: nu,
        l: lu,
        value,
        abs_err,
        digits: settings.digits,
        goal: Goal::Absolute,
        method: Method::Spectral,
        bits: s.bits,
        nodes: s.nodes,
        terms: s.terms,
        seconds: start.elapsed().as_secs_f64(),
    })
}

/// ln k0(n, l) in the three dipole forms, and how far apart they are.
#[derive(Debug, Clone)]
pub struct FormComparison {
    /// The values in the order of [`Gauge::ALL`] (velocity, length, acceleration).
    pub values: Vec<BetheValue>,
    /// max - min of the three values (at full working precision).
    pub spread: Float,
    /// Every pair agrees within the sum of its two error estimates.
    pub consistent: bool,
}

impl FormComparison {
    /// The comparison of values of one state in several forms (in the
    /// order given; [`ln_k0_all_forms`] gives them in the order of
    /// [`Gauge::ALL`]). An empty list has spread 0.
    pub fn from_values(values: Vec<BetheValue>) -> FormComparison {
        let prec = values.iter().map(|v| v.value.prec()).max().unwrap_or(64);
        let (mut lo, mut hi) = match values.first() {
            Some(v) => (
                Float::with_val(prec, &v.value),
                Float::with_val(prec, &v.value),
            ),
            None => (Float::with_val(prec, 0), Float::with_val(prec, 0)),
        };
        let mut consistent = true;
        for (i, a) in values.iter().enumerate() {
            if a.value < lo {
                lo.assign(&a.value);
            }
            if a.value > hi {
                hi.assign(&a.value);
            }
            for b in &values[i + 1..] {
                let d = Float::with_val(prec, &a.value - &b.value).abs();
                consistent &= d.to_f64() <= a.abs_err + b.abs_err;
            }
        }
        FormComparison {
            values,
            spread: hi - lo,
            consistent,
        }
    }

    /// The spread as a number (rounded up).
    pub fn spread_f64(&self) -> f64 {
        Float::with_val_round(53, &self.spread, rug::float::Round::Up)
            .0
            .to_f64()
    }
}

/// ln k0(n, l) by [`ln_k0`] in each of the three dipole forms. The forms
/// are independent computations: their own exact bound matrix elements,
/// their own bound-free closed forms in the tail and the continuum, and
/// their own discretization (continuum map and split point, see the module
/// documentation). Their spread is evidence about the error estimates.
///
/// # Errors
/// As [`ln_k0`].
pub fn ln_k0_all_forms(n: i64, l: i64, settings: &Settings) -> Result<FormComparison, BetheError> {
    let values = Gauge::ALL
        .iter()
        .map(|g| ln_k0(n, l, *g, settings))
        .collect::<Result<Vec<_>, _>>()?;
    Ok(FormComparison::from_values(values))
}

/// Relative cost of [`ln_k0`] for (n, l) at `digits` (for load balancing;
/// comparable with itself only). Fitted to measured run times: roughly
/// seconds on one core of the reference machine of benches/README.md, within
/// a factor of about 2 for n <= 200 and digits <= 200.
pub fn cost_estimate(n: u32, l: u32, digits: u32) -> f64 {
    let channels = if l == 0 { 1.0 } else { 2.0 };
    let d = f64::from(digits.max(1)).powf(1.4);
    // the bound-side polynomial has n - l terms: the closed forms cost ~ its square
    let m = f64::from(n.saturating_sub(l)) + 20.0;
    // plus the bound and tail terms, about 1.3 n of them
    let terms = 3.3 * f64::from(n.max(1));
    1.16e-5 * channels * d * (m.powf(1.7) + terms)
}
