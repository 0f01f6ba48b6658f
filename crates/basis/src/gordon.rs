//! Gordon's closed formula for the bound-bound radial dipole integral.
//!
//! For hydrogen (Z = 1), l >= 1 and any n > l, n' >= l,
//!
//! ```text
//! <n l| r |n' l-1> = int_0^inf R_nl R_n'(l-1) r^3 dr
//!   = s / (4 (2l-1)!) * sqrt[ (n+l)! (n'+l-1)! / ((n-l-1)! (n'-l)!) ]
//!     * (4 n n')^(l+1) (n-n')^(n+n'-2l-2) / (n+n')^(n+n')
//!     * [ F(-n+l+1, -n'+l; 2l; u) - ((n-n')/(n+n'))^2 F(-n+l-1, -n'+l; 2l; u) ]
//! ```
//!
//! with u = -4 n n' / (n-n')^2, F the terminating Gauss hypergeometric
//! polynomial 2F1 and s = (-1)^(n'-l) a sign that depends on the phase of the
//! radial functions. Each F(-a, -b; c; u) (n-n')^(n+n'-2l-2) is expanded as
//! sum_k (-a)_k (-b)_k / ((c)_k k!) (-4 n n')^k (n-n')^(n+n'-2l-2-2k), a
//! polynomial in n - n' (for n' = n +- 1 the top exponent can be -1, with
//! |n - n'| = 1). The expression is for n != n'; for equal n the integral is
//! the elementary <n l| r |n l-1> = -(3/2) n sqrt(n^2 - l^2) (Bethe & Salpeter,
//! Quantum Mechanics of One- and Two-Electron Atoms (1957)). For nuclear
//! charge Z every length scales as 1/Z.
//!
//! The sign is fixed to agree with the phase convention of
//! [`crate::radial::radial_function`] (R_nl positive near the origin).
//!
//! # Accuracy
//! Exact: the terms of the hypergeometric polynomials alternate and cancel
//! massively at large n, so the sums are formed in exact rationals and the
//! result is returned as an exact [`Surd`]. Cost grows like min(n, n') big-
//! rational operations on numbers of O(n log n) bits.

use crate::error::BasisError;
use crate::exact::{factorial, simplify_surd, Surd};
use crate::state::BoundState;
use rug::ops::Pow;
use rug::{Integer, Rational};

/// `sum_k (-a)_k (-b)_k / ((c)_k k!) x^k d^(e - 2k)` for non-negative
/// integers a, b, c >= 1, formed exactly.
///
/// `0^0` is taken as 1, so d = 0 keeps only the term with 2k = e. In the
/// uses below e - 2k >= 0 except for |d| = 1 (n' = n +- 1), where the top
/// exponent can be -1; d is never 0 then.
fn hyper_poly(a: u32, b: u32, c: u32, x: &Integer, d: &Integer, e: i64) -> Rational {
    let kmax = a.min(b);
    let d2 = Integer::from(d * d);
    // Horner in d^2: sum_k t_k d^(2(kmax-k)), then times d^(e - 2 kmax).
    // With t_k = p_k / q_k, p_k = prod_{j<k} (j - a)(j - b) x and
    // q_k = prod_{j<k} (c + j)(j + 1), the partial sums are kept as
    // acc_k = num_k / q_k in integers: one reduction at the end instead of
    // a gcd at every step (the cost is then linear in the size of the
    // numbers per step).
    let mut num = Integer::from(1); // num_0 = p_0 = 1 (q_0 = 1)
    let mut p = Integer::from(1);
    // the small factors of one step are multiplied together first (in
    // machine integers when they fit), so that each big number is
    // multiplied once per step (i128 holds every product for n, n' below
    // MAX_N)
    let x_small = x.to_i64().map(i128::from);
    let d2_small = d2.to_i64().map(i128::from);
    for k in 1..=kmax {
        // p_k = p_{k-1} (k-1-a)(k-1-b) x;  q_k = q_{k-1} (c+k-1) k
        let j = i128::from(k) - 1;
        let pab = (j - i128::from(a)) * (j - i128::from(b));
        match x_small {
            Some(xs) => p *= Integer::from(pab * xs),
            None => {
                p *= Integer::from(pab);
                p *= x;
            }
        }
        let step = (i128::from(c) + i128::from(k) - 1) * i128::from(k);
        // num_k = num_{k-1} d^2 (c+k-1) k + p_k
        match d2_small {
            Some(ds) => num *= Integer::from(ds * step),
            None => {
                num *= &d2;
                num *= Integer::from(step);
            }
        }
        num += &p;
    }
    // q_kmax = (c)_kmax kmax! = (c + kmax - 1)! / (c - 1)! kmax!
    let q = factorial(c + kmax - 1) / factorial(c - 1) * factorial(kmax);
    let acc = Rational::from((num, q));
    let top = e - 2 * i64::from(kmax);
    if top >= 0 {
        acc * Rational::from(d.clone().pow(top as u32))
    } else {
        // only reached with |d| = 1 (see above)
        acc / Rational::from(d.clone().pow((-top) as u32))
    }
}

/// Largest principal quantum number accepted by [`gordon_hydrogen`] (keeps
/// every intermediate count inside `u32`; exact evaluation is in any case
/// only practical far below this).
pub const MAX_N: u32 = 1 << 28;

/// Gordon's formula for hydrogen: <n l| r |n2 l-1> in bohr, exact, with the
/// sign convention of [`crate::radial::radial_function`].
///
/// Preconditions are checked: l >= 1, n > l, n2 >= l.
///
/// # Errors
/// [`BasisError::InvalidState`] if (n, l) or (n2, l - 1) is not a bound state;
/// [`BasisError::InvalidArgument`] if n or n2 exceeds [`MAX_N`].
///
/// # Accuracy
/// Exact.
pub fn gordon_hydrogen(n: u32, l: u32, n2: u32) -> Result<Surd, BasisError> {
    if l == 0 || n <= l {
        return Err(BasisError::InvalidState {
            n: i64::from(n),
            l: i64::from(l),
        });
    }
    if n2 < l {
        return Err(BasisError::InvalidState {
            n: i64::from(n2),
            l: i64::from(l) - 1,
        });
    }
    if n.max(n2) > MAX_N {
        return Err(BasisError::InvalidArgument(format!(
            "Gordon's formula is evaluated exactly; n = {} exceeds the supported {MAX_N}",
            n.max(n2)
        )));
    }
    if n == n2 {
        // The general expression does not cover n = n2 (its derivation
        // divides by n - n2); there the integral is elementary:
        // <n l| r |n l-1> = -(3/2) n sqrt(n^2 - l^2) in our phase convention.
        let nn = Integer::from(n);
        let rad = Integer::from(&nn * &nn) - Integer::from(l) * l;
        return Ok(simplify_surd(
            Rational::from((-Integer::from(3u32) * nn, 2u32)),
            Rational::from(rad),
        ));
    }
    let ni = Integer::from(n);
    let n2i = Integer::from(n2);
    let d = Integer::from(&ni - &n2i);
    let s = Integer::from(&ni + &n2i);
    let x = -Integer::from(&ni * &n2i) * 4u32;
    // may be -1 (n = l + 1, n2 = l): signed
    let e = i64::from(n) + i64::from(n2) - 2 * i64::from(l) - 2;
    // Bracket: d^e F1 - d^(e+2) / s^2 F2, with
    // F1 = F(-(n-l-1), -(n2-l); 2l), F2 = F(-(n-l+1), -(n2-l); 2l).
    let f1 = hyper_poly(n - l - 1, n2 - l, 2 * l, &x, &d, e);
    let f2 = hyper_poly(n - l + 1, n2 - l, 2 * l, &x, &d, e + 2);
    let bracket = f1 - f2 / Rational::from(Integer::from(&s * &s));
    // Prefactor: (4 n n2)^(l+1) / (4 (2l-1)! (n+n2)^(n+n2)).
    let pre_num = (Integer::from(&ni * &n2i) * 4u32).pow(l + 1);
    let pre_den = factorial(2 * l - 1) * 4u32 * s.pow(n + n2);
    let mut coef = bracket * Rational::from((pre_num, pre_den));
    // Phase s = (-1)^(n2 - l): with it the result agrees in sign with direct
    // integration of radial functions that are positive near the origin
    // (checked for all pairs up to n = 12 in the tests).
    if (n2 - l) % 2 == 1 {
        coef = -coef;
    }
    let radicand = Rational::from((
        factorial(n + l) * factorial(n2 + l - 1),
        factorial(n - l - 1) * factorial(n2 - l),
    ));
    Ok(simplify_surd(coef, radicand))
}

/// The radial dipole integral <a| r |b> = int_0^inf R_a R_b r^3 dr (bohr)
/// between two bound states of the same nuclear charge with |l_a - l_b| = 1,
/// by Gordon's formula (the l_b = l_a + 1 case by symmetry of the integral).
///
/// # Errors
/// [`BasisError::NotDipoleAllowed`] unless |l_a - l_b| = 1;
/// [`BasisError::InvalidArgument`] if the two charges differ.
///
/// # Accuracy
/// Exact (an exact [`Surd`]; compare squares as rationals).
pub fn radial_dipole(a: &BoundState, b: &BoundState) -> Result<Surd, BasisError> {
    if a.z() != b.z() {
        return Err(BasisError::InvalidArgument(format!(
            "dipole integral between different nuclear charges ({} and {})",
            a.z(),
            b.z()
        )));
    }
    let hyd = if a.l() == b.l() + 1 {
        gordon_hydrogen(a.n(), a.l(), b.n())?
    } else if b.l() == a.l() + 1 {
        gordon_hydrogen(b.n(), b.l(), a.n())?
    } else {
        return Err(BasisError::NotDipoleAllowed {
            n: a.n(),
            l: a.l(),
            n2: b.n(),
            l2: b.l(),
        });
    };
    Ok(Surd {
        coef: hyd.coef / a.z(),
        radicand: hyd.radicand,
    })
}
