//! The family of logarithmic dipole sums S(k), L(k) and ln I(k).
//!
//! For the state (n, l), every dipole-connected state m (bound or continuum,
//! L = l +- 1) has the transition energy D_m = (E_m - E_n)/(Z^2 Ry) and the
//! absorption oscillator strength f_m (negative for lower states). The
//! same-n states (D_m = 0, f_m = 0) are left out of every sum. For an
//! integer k
//!
//! ```text
//! S(k) = sum_m f_m D_m^k,   L(k) = sum_m f_m D_m^k ln|D_m|,   ln I(k) = L(k) / S(k)
//! ```
//!
//! (sums over bound states, integrals over the continuum). The values do not
//! depend on Z; the computations run at Z = 1. In velocity-form language,
//! with c_m = w_L |<m|p|n l>|^2 and d_m = E_m - E_n in hartree (D = 2d,
//! f = (2/3) c / d),
//!
//! ```text
//! S(k) = (2^(k+1)/3) sum_m c_m d_m^(k-1),   L(k) = (2^(k+1)/3) sum_m c_m d_m^(k-1) ln(2|d_m|).
//! ```
//!
//! Exact members: S(0) = 1 (Thomas-Reiche-Kuhn), S(1) = 4/(3n^2),
//! S(2) = 16/(3n^3) for l = 0 and 0 for l >= 1, S(-1) = (<r^2> - same-n
//! part)/3, S(-2) = alpha/4 (alpha the static dipole polarizability in
//! bohr^3, same-n states left out), and L(2) = 16 ln k0(n, l)/(3 n^3).
//!
//! ```
//! use kzero_bethe::{sums, Settings};
//! let r = sums::green_sums(1, 0, &[-2, 0], &Settings::with_digits(20)).unwrap();
//! // static polarizability of 1s: 4 S(-2) = 9/2 bohr^3 (exact here)
//! assert!((r.row(-2).unwrap().s.to_f64() * 4.0 - 4.5).abs() < 1e-15);
//! // mean excitation energy: I(0) = exp(ln I(0)) Ry, about 1.1018 Ry
//! let (ln_i, err) = r.row(0).unwrap().ln_i().unwrap();
//! assert!(err < 1e-20 && (ln_i.to_f64().exp() - 1.1018).abs() < 1e-4);
//! ```
//!
//! ## Method
//! Two independent methods, as for ln k0:
//!
//! * [`spectral_sums`]: the explicit sum over the spectrum of
//!   [`crate::spectral`] (bound states with exact matrix elements, the
//!   Rydberg tail, the continuum) in any of the three dipole forms, with all
//!   requested k sharing the matrix elements and densities of each node.
//! * [`green_sums`]: the photon-energy integral with the Sturmian Green's
//!   function. The exact functions phi_a = (H - E_n)^-a p|n l> (same-n
//!   states left out; polynomial times exp(-r/n), built exactly) give every
//!   power sum M_j = sum c d^j for -7 <= j <= 1 as an exact rational number,
//!   so S(k) comes out exact. For the logarithmic sums,
//!   ln d = int_0^inf [1/(w + w0) - 1/(w + d)] dw + ln w0 turns
//!   sum c d^(e - 2a) ln d (e = 0, 1) into an integral of the resolvent
//!   <phi_a|(H - E_n + w)^-1|phi_a>, which the Sturmian sum of
//!   [`crate::green`] gives in closed form, minus its large-w behaviour
//!   (the exact moments). Lower bound states are poles on the path; their
//!   terms are subtracted with exact matrix elements and added back exactly.
//!   All sources phi_a of a channel share the Meixner recurrences and the
//!   Lerch function of each node, and all k share the nodes.
//!
//! ## Accuracy
//! [`Settings::digits`] = D is an absolute goal: |error| < 10^-D on every
//! S(k) and every L(k) returned. The error estimates come from refinement
//! (two evaluations with more nodes, terms and bits; see the methods), they
//! are estimates, not bounds, and a sum whose estimate misses the goal makes
//! the call fail with [`BetheError::NoConvergence`]. ln I(k) carries the
//! first-order propagated error (|dL| + |ln I| |dS|)/|S|, and is not given
//! when S(k) is zero within its error (S(2) for l >= 1).
//!
//! ## Range
//! 1 <= n <= [`crate::settings::MAX_N`], 0 <= l < n, k from [`K_MIN`] to [`K_MAX`] (the sums
//! converge at high energy for k < l + 5/2, so every state has k <= 2).
//! Other k are refused with [`BetheError::PowerOutOfRange`]. The sums grow
//! like n^(3(1-k)) for k < 1 (for example S(-4) is about 10^27 at n = 200),
//! so at large n and negative k the absolute goal asks for many significant
//! digits, and the working precision grows accordingly.

pub(crate) mod chain;
mod green;
pub(crate) mod spectral;

use crate::error::BetheError;
use crate::settings::{validate_state, Goal, Settings};
use crate::value::{printed, Gauge, Method, Printed};
use rug::{Float, Rational};
use std::time::Instant;

pub use green::cost_estimate as green_cost_estimate;

/// Estimated single-core CPU seconds of [`spectral_sums`] for (n, l) at
/// `digits` with `count` powers, on the reference machine of
/// benches/README.md (as [`crate::spectral::cost_estimate`], used for shard
/// plans and estimates).
///
/// # Accuracy
/// The powers share the matrix elements and densities of every node; what
/// they add is the bits and quadrature levels of the largest sums, which
/// weigh most at small n (the continuum closed forms dominate the cost at
/// large n). The factor over one ln k0, 1 + (count/7)/(1 + (n/30)^1.5), is
/// within 20 % of measured instruction counts of the whole set k = -4..2 at
/// 20 digits (ratios 1.9 to 1.2 for n = 2 to 200).
pub fn spectral_cost_estimate(n: u32, l: u32, digits: u32, count: usize) -> f64 {
    let share = count.min(7) as f64 / 7.0;
    let factor = 1.0 + share / (1.0 + (f64::from(n) / 30.0).powf(1.5));
    crate::spectral::cost_estimate(n, l, digits) * factor
}

/// Smallest supported power k.
pub const K_MIN: i32 = -4;
/// Largest supported power k (the sums converge for k < l + 5/2).
pub const K_MAX: i32 = 2;

/// Checks that every k is in [`K_MIN`]..=[`K_MAX`] and returns them sorted,
/// without repetitions.
///
/// # Errors
/// [`BetheError::PowerOutOfRange`] for the first k outside the range, and
/// [`BetheError::NoPowers`] for an empty list.
pub fn validate_powers(ks: &[i64]) -> Result<Vec<i32>, BetheError> {
    if ks.is_empty() {
        return Err(BetheError::NoPowers);
    }
    let mut out = Vec::with_capacity(ks.len());
    for &k in ks {
        if k < i64::from(K_MIN) || k > i64::from(K_MAX) {
            return Err(BetheError::PowerOutOfRange {
                k,
                min: K_MIN,
                max: K_MAX,
            });
        }
        out.push(k as i32);
    }
    out.sort_unstable();
    out.dedup();
    Ok(out)
}

/// Every supported power, [`K_MIN`]..=[`K_MAX`].
pub fn all_powers() -> Vec<i32> {
    (K_MIN..=K_MAX).collect()
}

/// The digits range, and the absolute goal (the only one the sums take:
/// S(2) vanishes for l >= 1, and the sums of one state span many orders of
/// magnitude).
fn check_settings(settings: &Settings) -> Result<(), BetheError> {
    settings.validate()?;
    if settings.goal != Goal::Absolute {
        return Err(BetheError::GoalUnsupported {
            goal: settings.goal.name(),
            what: "the dipole sums",
        });
    }
    Ok(())
}

/// The factor 2^(k+1)/3 from velocity-form sums in hartree to S(k), L(k).
fn factor(k: i32) -> Rational {
    let mut f = Rational::from((1, 3));
    if k + 1 >= 0 {
        f *= rug::Integer::from(1) << (k + 1) as u32;
    } else {
        f /= rug::Integer::from(1) << (-(k + 1)) as u32;
    }
    f
}

/// One power k: S(k) and L(k) with their error estimates.
#[derive(Debug, Clone)]
pub struct SumRow {
    /// The power k.
    pub k: i32,
    /// S(k) = sum f D^k (D in Z^2 Ry).
    pub s: Float,
    /// Estimated absolute error of `s` (for the Green's-function method,
    /// where S(k) is exact, the bound on its rounding to the working
    /// precision).
    pub s_err: f64,
    /// L(k) = sum f D^k ln|D|.
    pub log_sum: Float,
    /// Estimated absolute error of `log_sum`.
    pub log_err: f64,
}

impl SumRow {
    /// ln I(k) = L(k)/S(k) with its propagated error estimate
    /// (|dL| + |ln I| |dS|)/|S|, or `None` when |S(k)| does not exceed twice
    /// its error (S(k) zero within its error, as S(2) for l >= 1).
    pub fn ln_i(&self) -> Option<(Float, f64)> {
        let s = self.s.to_f64().abs();
        if self.s.is_zero() || s <= 2.0 * self.s_err {
            return None;
        }
        let prec = self.s.prec().max(self.log_sum.prec());
        let v = Float::with_val(prec, &self.log_sum / &self.s);
        let rel = self.s_err / s;
        // first order, with the second-order term of 1/S
        let err = (self.log_err + v.to_f64().abs() * self.s_err) / s * (1.0 + 2.0 * rel);
        Some((v, err))
    }
}

/// The sums of one state for a set of powers, with diagnostics.
#[derive(Debug, Clone)]
pub struct DipoleSums {
    /// Principal quantum number.
    pub n: u32,
    /// Orbital angular momentum.
    pub l: u32,
    /// Requested digits D (goal: every error below 10^-D).
    pub digits: u32,
    /// Method that produced the values.
    pub method: Method,
    /// Dipole form of the spectral method (`None` for the Green's function).
    pub gauge: Option<Gauge>,
    /// One row per requested k, in increasing k.
    pub rows: Vec<SumRow>,
    /// Highest working precision used (bits).
    pub bits: u32,
    /// Quadrature nodes of the final evaluation.
    pub nodes: usize,
    /// Series or spectral terms of the final evaluation.
    pub terms: usize,
    /// Wall time in seconds.
    pub seconds: f64,
}

impl DipoleSums {
    /// The row of power k, if it was requested.
    pub fn row(&self, k: i32) -> Option<&SumRow> {
        self.rows.iter().find(|r| r.k == k)
    }

    /// A value with its error estimate as printed: D + 2 digits after the
    /// point, and the error rounded up with the rounding of the decimal
    /// folded in (the printed-value rule of [`crate::value::printed`]).
    pub fn printed(&self, x: &Float, err: f64) -> Printed {
        printed(x, err, self.digits as usize + 2)
    }
}

/// The exact power sum S(k) of (n, l) as a rational number, for
/// [`K_MIN`] <= k <= [`K_MAX`] (and down to k = -6).
///
/// # Accuracy
/// Exact: built from the exact functions (H - E_n)^-a p|n l>.
///
/// # Errors
/// [`BetheError::InvalidState`], [`BetheError::OutOfRange`],
/// [`BetheError::PowerOutOfRange`] for k outside -6..=2.
pub fn exact_power_sum(n: i64, l: i64, k: i64) -> Result<Rational, BetheError> {
    let (n, l) = validate_state(n, l, "exact")?;
    if !(-6..=i64::from(K_MAX)).contains(&k) {
        return Err(BetheError::PowerOutOfRange {
            k,
            min: -6,
            max: K_MAX,
        });
    }
    let k = k as i32;
    let depth = depth_for(k);
    let sc = chain::StateChains::new(n, l, depth)?;
    let m = sc
        .moment(k - 1)
        .expect("moment within the chain depth")
        .clone();
    Ok(m * factor(k))
}

/// Depth of the chain phi_0..phi_a needed for the power sums and logarithmic
/// sums of power k: a with k = e - 2a + 1, e in {0, 1}.
fn depth_for(k: i32) -> u32 {
    if k >= 1 {
        0
    } else {
        ((1 - k + 1) / 2) as u32
    }
}

/// S(k), L(k) for the powers `ks` by the explicit sum over the spectrum in
/// the dipole form `gauge`.
///
/// # Accuracy
/// Every S(k) and L(k) carries an error estimate by refinement (see
/// [`crate::spectral`]) below 10^-digits, or the call fails.
///
/// # Errors
/// [`BetheError::InvalidState`], [`BetheError::OutOfRange`] (n > MAX_N),
/// [`BetheError::DigitsOutOfRange`], [`BetheError::GoalUnsupported`]
/// (a significant-digit goal), [`BetheError::PowerOutOfRange`],
/// [`BetheError::NoPowers`], [`BetheError::NoConvergence`].
pub fn spectral_sums(
    n: i64,
    l: i64,
    ks: &[i64],
    gauge: Gauge,
    settings: &Settings,
) -> Result<DipoleSums, BetheError> {
    let t0 = Instant::now();
    check_settings(settings)?;
    let (n, l) = validate_state(n, l, "spectral")?;
    let ks = validate_powers(ks)?;
    let goal = 10f64.powi(-(settings.digits as i32));
    let mut comps = Vec::new();
    for &k in &ks {
        let f = factor(k).to_f64();
        for log in [false, true] {
            comps.push(crate::spectral::vector::Component {
                j: k - 1,
                log,
                goal: goal * 0.5 / f,
                scale: f,
            });
        }
    }
    let v = spectral::vector_sums(n, l, gauge, &comps)?;
    let rows = ks
        .iter()
        .enumerate()
        .map(|(i, &k)| {
            let f = factor(k);
            let ff = f.to_f64();
            let prec = v.values[2 * i].prec();
            SumRow {
                k,
                s: Float::with_val(prec, &v.values[2 * i] * &f),
                s_err: v.errs[2 * i] * ff,
                log_sum: Float::with_val(prec, &v.values[2 * i + 1] * &f),
                log_err: v.errs[2 * i + 1] * ff,
            }
        })
        .collect();
    Ok(DipoleSums {
        n,
        l,
        digits: settings.digits,
        method: Method::Spectral,
        gauge: Some(gauge),
        rows,
        bits: v.bits,
        nodes: v.nodes,
        terms: v.terms,
        seconds: t0.elapsed().as_secs_f64(),
    })
}

/// S(k), L(k) for the powers `ks` by the photon-energy integral with the
/// Sturmian Green's function; S(k) is exact (see the module docs).
///
/// # Accuracy
/// L(k) carries an error estimate by refinement (pairs of Gauss rules at
/// two precisions, as for ln k0) below 10^-digits, or the call fails;
/// S(k) is exact, rounded once to the working precision (`s_err` is the
/// bound of that rounding, far below the goal).
///
/// # Errors
/// [`BetheError::InvalidState`], [`BetheError::OutOfRange`] (n > MAX_N),
/// [`BetheError::DigitsOutOfRange`], [`BetheError::GoalUnsupported`]
/// (a significant-digit goal), [`BetheError::PowerOutOfRange`],
/// [`BetheError::NoPowers`], [`BetheError::NoConvergence`].
pub fn green_sums(
    n: i64,
    l: i64,
    ks: &[i64],
    settings: &Settings,
) -> Result<DipoleSums, BetheError> {
    let t0 = Instant::now();
    check_settings(settings)?;
    let (n, l) = validate_state(n, l, "green")?;
    let ks = validate_powers(ks)?;
    let depth = ks.iter().map(|&k| depth_for(k)).max().unwrap_or(0);
    let sc = chain::StateChains::new(n, l, depth)?;
    let out = green::log_sums(&sc, &ks, settings.digits)?;
    let rows = ks
        .iter()
        .zip(out.values)
        .map(|(&k, (lv, lerr))| {
            let f = factor(k);
            let m = sc.moment(k - 1).expect("moment within the chain depth");
            let s_exact = Rational::from(m * &f);
            let prec = lv.prec();
            let s = Float::with_val(prec, &s_exact);
            // exact, rounded once to `prec` bits
            let s_err = s.to_f64().abs() * 2f64.powi(1 - prec as i32);
            SumRow {
                k,
                s,
                s_err,
                log_sum: Float::with_val(prec, &lv * &f),
                log_err: lerr * f.to_f64(),
            }
        })
        .collect();
    Ok(DipoleSums {
        n,
        l,
        digits: settings.digits,
        method: Method::Green,
        gauge: None,
        rows,
        bits: out.bits,
        nodes: out.nodes,
        terms: out.terms,
        seconds: t0.elapsed().as_secs_f64(),
    })
}
