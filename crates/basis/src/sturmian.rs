//! Coulomb Sturmian functions.
//!
//! For angular momentum L and scale nu > 0 (bohr), with x = 2r/nu,
//!
//! ```text
//! S_k(r) = N_k x^(L+1) exp(-x/2) L_k^(2L+1)(x),   N_k^2 = k! / (k+2L+1)!
//! ```
//!
//! They satisfy (H_L - E) S_k = ((k+L+1)/nu - Z) S_k / r at E = -1/(2 nu^2)
//! and int_0^inf S_k S_k' dr / r = delta_kk'.

use crate::error::BasisError;
use crate::exact::{binomial, factorial, PolyExp};
use rug::ops::Pow;
use rug::{Float, Rational};

/// The expansion f(r) = (1/r) sum_i gamma_i S_i(r) of a reduced function
/// f = exp(-kappa r) * polynomial in Sturmians of angular momentum L and the
/// matched scale nu0 = 1/kappa (so that the expansion is finite).
///
/// gamma_i = int S_i f dr. Stored exactly as
/// gamma_i = coef_i * sqrt(radicand * i! / (i+2L+1)!).
#[derive(Debug, Clone, PartialEq)]
pub struct MatchedExpansion {
    /// Angular momentum L of the Sturmians.
    pub big_l: u32,
    /// Rational coefficients coef_i, i = 0..=M.
    pub coef: Vec<Rational>,
    /// Common radicand (the normalization of f).
    pub radicand: Rational,
}

impl MatchedExpansion {
    /// gamma_i at `prec` bits.
    pub fn gamma(&self, i: usize, prec: u32) -> Float {
        let alpha = 2 * self.big_l + 1;
        let r = Rational::from(&self.radicand * Rational::from((factorial(i as u32), factorial(i as u32 + alpha))));
        Float::with_val(prec, &r).sqrt() * &self.coef[i]
    }
}

/// Expands the reduced function `f` (for example the reduced radial function
/// of a bound state, or a gradient function g_L) in Sturmians of angular
/// momentum `big_l` at the matched scale 1/kappa.
///
/// Uses int_0^inf x^(a+q) e^(-x) L_i^(a)(x) dx = (-1)^i (a+q)! C(q, i), a = 2L+1.
///
/// # Errors
/// [`BasisError::InvalidArgument`] if f vanishes faster than allowed, i.e. if
/// f has a power of r below L (then r f is not in the Sturmian span).
pub fn matched_expansion(f: &PolyExp, big_l: u32) -> Result<MatchedExpansion, BasisError> {
    let alpha = 2 * big_l + 1;
    let p0 = match f.lowest_power() {
        Some(p) => p as u32,
        None => {
            return Ok(MatchedExpansion {
                big_l,
                coef: vec![],
                radicand: Rational::from(1),
            })
        }
    };
    if p0 < big_l {
        return Err(BasisError::InvalidArgument(format!(
            "function behaves like r^{p0} at the origin; Sturmians of L = {big_l} need r^{big_l} or higher"
        )));
    }
    let c = f.rational_coeffs();
    let two_kappa = Rational::from(&f.kappa * 2u32);
    // r f(r) = e^{-x/2} sum_p D_p x^p with D_p = c_{p-1} / (2 kappa)^p
    // q = p - L - 1 >= 0.
    let deg = c.len() as u32; // highest p of r f is deg
    let qmax = deg - big_l - 1;
    let mut d = Vec::with_capacity(qmax as usize + 1);
    for q in 0..=qmax {
        let p = q + big_l + 1;
        let cp = &c[(p - 1) as usize];
        let v = Rational::from(cp / Rational::from(two_kappa.clone().pow(p)))
            * Rational::from(factorial(alpha + q));
        d.push(v);
    }
    // coef_i = (-1)^i sum_{q >= i} D'_q C(q, i)
    let mut coef = Vec::with_capacity(qmax as usize + 1);
    for i in 0..=qmax {
        let mut s = Rational::new();
        for q in i..=qmax {
            if d[q as usize] != 0 {
                s += Rational::from(&d[q as usize] * binomial(q, i));
            }
        }
        if i % 2 == 1 {
            s = -s;
        }
        coef.push(s);
    }
    // dr / r = dx / x; the integral over x carries no extra scale.
    Ok(MatchedExpansion {
        big_l,
        coef,
        radicand: f.radicand.clone() * Rational::from(f.scale.clone().pow(2u32)),
    })
}

/// The Sturmian function S_k(r) of angular momentum `big_l` and scale `nu`
/// (bohr) at `r`, evaluated at `prec` bits.
///
/// # Accuracy
/// The Laguerre polynomial is evaluated by its three-term recurrence, which is
/// stable in the oscillatory region; relative error a few units of 2^-prec
/// times k.
pub fn sturmian(big_l: u32, k: u32, nu: &Float, r: &Float, prec: u32) -> Float {
    let alpha = 2 * big_l + 1;
    let x = Float::with_val(prec, r * Float::with_val(prec, 2)) / nu;
    // L_k^alpha(x) by recurrence
    let mut lm1 = Float::with_val(prec, 0);
    let mut l0 = Float::with_val(prec, 1);
    for j in 0..k {
        // (j+1) L_{j+1} = (2j+1+alpha-x) L_j - (j+alpha) L_{j-1}
        let a = Float::with_val(prec, 2 * j + 1 + alpha) - &x;
        let next = (a * &l0 - Float::with_val(prec, j + alpha) * &lm1) / (j + 1);
        lm1 = l0;
        l0 = next;
    }
    let n2 = Rational::from((factorial(k), factorial(k + alpha)));
    let norm = Float::with_val(prec, &n2).sqrt();
    let pw = Float::with_val(prec, x.clone().pow(big_l + 1));
    let e = Float::with_val(prec, -(x / 2u32)).exp();
    norm * pw * e * l0
}
