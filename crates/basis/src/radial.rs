//! Hydrogenic radial functions R_nl(r) and exact radial integrals.
//!
//! Convention: R_nl(r) = N (2Zr/n)^l exp(-Zr/n) L_{n-l-1}^{(2l+1)}(2Zr/n) with
//! N^2 = (2Z/n)^3 (n-l-1)! / (2n (n+l)!), normalized so that
//! int_0^inf R_nl^2 r^2 dr = 1, and positive near the origin. The reduced
//! radial function is u_nl = r R_nl.

use crate::error::BasisError;
use crate::exact::{binomial, factorial, PolyExp, Surd};
use crate::state::BoundState;
use rug::ops::Pow;
use rug::Rational;

/// The exact radial function R_nl(r) of `state` (r in bohr).
pub fn radial_function(state: &BoundState) -> PolyExp {
    let n = state.n();
    let l = state.l();
    let nr = n - l - 1;
    let two_kappa = state.kappa() * 2u32;
    // N^2 = (2Z/n)^3 (n-l-1)! / (2n (n+l)!)
    let norm2 =
        two_kappa.clone().pow(3u32) * Rational::from((factorial(nr), factorial(n + l) * 2u32 * n));
    // Laguerre L_nr^{(2l+1)}(x) = sum_i (-1)^i C(n+l, nr-i) x^i / i!, x = 2 kappa r
    let mut coeffs = vec![Rational::new(); (n) as usize];
    for i in 0..=nr {
        let mut c = Rational::from((binomial(n + l, nr - i), factorial(i)));
        if i % 2 == 1 {
            c = -c;
        }
        c *= two_kappa.clone().pow(l + i);
        coeffs[(l + i) as usize] = c;
    }
    PolyExp::from_rational(state.kappa(), norm2, &coeffs)
}

/// The exact reduced radial function u_nl(r) = r R_nl(r).
pub fn reduced_radial_function(state: &BoundState) -> PolyExp {
    radial_function(state).times_r_pow(1)
}

/// The exact radial integral <a| r^k |b> = int_0^inf R_a R_b r^(2+k) dr
/// for integer k (bohr^k).
///
/// Both states must have the same nuclear charge for the result to be a
/// matrix element of one Hamiltonian; this is not required by the algebra.
///
/// # Errors
/// [`BasisError::Divergent`] when l_a + l_b + 2 + k < 0 (the integral diverges at
/// the origin); also when k < -(l_a + l_b + 2) for any other reason.
pub fn radial_integral(a: &BoundState, b: &BoundState, k: i32) -> Result<Surd, BasisError> {
    let fa = radial_function(a);
    let fb = radial_function(b);
    fa.integral_with(&fb, k + 2)
        .map_err(|_| BasisError::Divergent {
            n: a.n(),
            l: a.l(),
            n2: b.n(),
            l2: b.l(),
            power: k,
        })
}

/// The exact diagonal expectation value <n l| r^k |n l> (bohr^k).
///
/// # Errors
/// [`BasisError::Divergent`] when 2l + 2 + k < 0... i.e. k <= -(2l+3).
pub fn expectation(state: &BoundState, k: i32) -> Result<Rational, BasisError> {
    let s = radial_integral(state, state, k)?;
    // R_a R_a: radicand is N^4, a perfect square, so coef is the value.
    if s.radicand == 1 {
        Ok(s.coef)
    } else {
        Err(BasisError::InvalidArgument(
            "diagonal integral did not reduce to a rational".into(),
        ))
    }
}
