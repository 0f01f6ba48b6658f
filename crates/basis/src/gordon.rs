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
//! |n - n'| = 1); the two polynomials of the bracket are summed as one
//! (their terms differ by a factor quadratic in k). The expression is for
//! n != n'; for equal n the integral is
//! the elementary <n l| r |n l-1> = -(3/2) n sqrt(n^2 - l^2) (Bethe & Salpeter,
//! Quantum Mechanics of One- and Two-Electron Atoms (1957)). For nuclear
//! charge Z every length scales as 1/Z.
//!
//! The sign is fixed to agree with the phase convention of
//! [`crate::radial::radial_function`] (R_nl positive near the origin).
//!
//! # Accuracy
//! Exact: the terms of the hypergeometric polynomials alternate and cancel
//! massively at large n, so the sum is formed in exact integers over one
//! common denominator and the result is returned as an exact [`Surd`]
//! ([`gordon_hydrogen`]) or, squared, as an exact rational without the
//! square root ([`gordon_hydrogen_square`]). Cost grows like min(n, n')
//! products of big integers of O(n log n) bits by machine words, plus the
//! reduction of the fraction (for the square: in pieces, by the known
//! factors of its denominator, without a gcd of the two full-size numbers).

use crate::error::BasisError;
use crate::exact::{factorial, simplify_surd, Surd};
use crate::state::BoundState;
use rug::ops::Pow;
use rug::{Assign, Integer, Rational};

/// Gordon's formula as integers: <n l| r |n2 l-1> = num / den * sqrt(rad)
/// for n != n2, with num (signed) from [`gordon_parts`], den from
/// [`gordon_den`] (num / den is not reduced) and rad from [`gordon_rad`].
struct GordonParts {
    num: Integer,
    /// K = min(n - l + 1, n2 - l), the length of the sum.
    kmax: u32,
}

/// The integers of Gordon's formula for n != n2 (preconditions of
/// [`gordon_hydrogen`] checked by the caller).
///
/// With d = n - n2, s = n + n2, x = -4 n n2, e = n + n2 - 2l - 2, a = n - l
/// - 1, b = n2 - l and c = 2l, the bracket is
///
/// ```text
/// d^e F(-a, -b; c; x/d^2) - d^(e+2)/s^2 F(-a-2, -b; c; x/d^2)
///   = sum_k u_k x^k d^(e-2k) v_k / ((a+1)(a+2) s^2),
/// u_k = (-a-2)_k (-b)_k / ((c)_k k!),
/// v_k = (a+2-k)(a+1-k) s^2 - (a+1)(a+2) d^2,
/// ```
///
/// since (-a)_k = (-a-2)_k (a+2-k)(a+1-k) / ((a+1)(a+2)): one sum over
/// k <= K = min(a + 2, b) instead of two. It is formed by Horner's rule in
/// d^2 with integer partial sums over q_K = (c)_K K! (one reduction at the
/// end instead of a gcd per step), as d^(e-2K) num_K / q_K. Every term has
/// a non-negative power of d unless |d| = 1 (n2 = n +- 1), so for
/// e - 2K < 0 the division of num_K by d^(2K-e) is exact.
fn gordon_parts(n: u32, l: u32, n2: u32) -> GordonParts {
    let a = n - l - 1;
    let b = n2 - l;
    let c = 2 * l;
    let kmax = (a + 2).min(b);
    let ni = Integer::from(n);
    let n2i = Integer::from(n2);
    let d = Integer::from(&ni - &n2i);
    let s = Integer::from(&ni + &n2i);
    let s2 = Integer::from(&s * &s);
    let d2 = Integer::from(&d * &d);
    let nn2 = Integer::from(&ni * &n2i);
    let x = -Integer::from(&nn2 * 4u32);
    // the small factors of one step are formed in i128 and enter as one
    // machine word when they fit in i64 (always for n, n2 up to a few
    // thousand), otherwise as big integers
    let x_w = x.to_i64().map(i128::from);
    let s2_w = s2.to_i64().map(i128::from);
    let d2_w = d2.to_i64().map(i128::from);
    let ab = (i128::from(a) + 1) * (i128::from(a) + 2);
    // v_k in one machine word when it fits, else as a big integer
    let v_word = |k: u32| -> Option<i64> {
        let top = (i128::from(a) + 2 - i128::from(k)) * (i128::from(a) + 1 - i128::from(k));
        s2_w.zip(d2_w)
            .and_then(|(s2v, d2v)| i64::try_from(top * s2v - ab * d2v).ok())
    };
    let v_big = |k: u32| -> Integer {
        let top = (i128::from(a) + 2 - i128::from(k)) * (i128::from(a) + 1 - i128::from(k));
        Integer::from(top) * &s2 - Integer::from(ab) * &d2
    };
    // one step k of the recurrence on a pair (num, p):
    // p <- p f_k, f_k = (k-1-a-2)(k-1-b) x;
    // num <- num g_k + p v_k, g_k = d^2 (c+k-1) k
    let mul_f = |z: &mut Integer, k: u32| {
        let j = i128::from(k) - 1;
        let pab = (j - i128::from(a) - 2) * (j - i128::from(b));
        match x_w.and_then(|xs| i64::try_from(pab * xs).ok()) {
            Some(f) => *z *= f,
            None => {
                *z *= Integer::from(pab);
                *z *= &x;
            }
        }
    };
    let mul_g = |z: &mut Integer, k: u32| {
        let step = (i128::from(c) + i128::from(k) - 1) * i128::from(k);
        match d2_w.and_then(|ds| i64::try_from(ds * step).ok()) {
            Some(g) => *z *= g,
            None => {
                *z *= &d2;
                *z *= Integer::from(step);
            }
        }
    };
    let add_pv = |z: &mut Integer, p: &Integer, k: u32| match v_word(k) {
        Some(w) => *z += p * w,
        None => *z += Integer::from(p * &v_big(k)),
    };
    // The recurrence is linear in (num, p): a block of steps k0+1..k1
    // maps (num, p) to (num G + p C, p F), with G and F the products of
    // its g_k and f_k and C the num of the block started from (0, 1). These
    // are a few machine words long, so each big number is multiplied once
    // per block by a short factor instead of once per step by one word.
    // num_0 = v_0, p_0 = 1
    let mut num = v_word(0).map_or_else(|| v_big(0), Integer::from);
    let mut p = Integer::from(1);
    let (mut blk_c, mut blk_f, mut blk_g) = (Integer::new(), Integer::new(), Integer::new());
    let mut k0 = 0;
    while k0 < kmax {
        let k1 = (k0 + BLOCK).min(kmax);
        blk_c.assign(0);
        blk_f.assign(1);
        blk_g.assign(1);
        for k in k0 + 1..=k1 {
            mul_f(&mut blk_f, k);
            mul_g(&mut blk_c, k);
            add_pv(&mut blk_c, &blk_f, k);
            mul_g(&mut blk_g, k);
        }
        num *= &blk_g;
        num += &p * &blk_c;
        p *= &blk_f;
        k0 = k1;
    }
    let e = i64::from(n) + i64::from(n2) - 2 * i64::from(l) - 2;
    let t = e - 2 * i64::from(kmax);
    if t >= 0 {
        num *= d.clone().pow(t as u32);
    } else {
        num = num.div_exact(&d.clone().pow((-t) as u32));
    }
    // the prefactor (4 n n2)^(l+1) (its denominator is in gordon_den)
    let mut num = num * (nn2 * 4u32).pow(l + 1);
    // Phase (-1)^(n2 - l): with it the result agrees in sign with direct
    // integration of radial functions that are positive near the origin
    // (checked for all pairs up to n = 12 in the tests).
    if (n2 - l) % 2 == 1 {
        num = -num;
    }
    GordonParts { num, kmax }
}

/// The denominator of [`gordon_parts`]: q_K (a+1)(a+2) s^2 times the
/// prefactor's 4 (2l-1)! s^(n+n2), with q_K (2l-1)! = (2l+K-1)! K!:
/// (2l+K-1)! K! (a+1)(a+2) 4 s^(n+n2+2) (a = n - l - 1, s = n + n2).
fn gordon_den(n: u32, l: u32, n2: u32, kmax: u32) -> Integer {
    let a = n - l - 1;
    factorial(2 * l + kmax - 1)
        * factorial(kmax)
        * (u64::from(a + 1) * u64::from(a + 2))
        * 4u32
        * Integer::from(n + n2).pow(n + n2 + 2)
}

/// The radicand (n+l)! (n2+l-1)! / ((n-l-1)! (n2-l)!) of Gordon's formula
/// (an integer).
fn gordon_rad(n: u32, l: u32, n2: u32) -> Integer {
    factorial(n + l).div_exact(&factorial(n - l - 1))
        * factorial(n2 + l - 1).div_exact(&factorial(n2 - l))
}

/// The exponent of the prime p in m! (Legendre's formula).
fn factorial_val(mut m: u32, p: u32) -> u32 {
    let mut v = 0;
    while m >= p {
        m /= p;
        v += m;
    }
    v
}

/// The exponent of the prime p in m >= 1.
fn small_primes_val(mut m: u32, p: u32) -> u32 {
    let mut v = 0;
    while m % p == 0 {
        m /= p;
        v += 1;
    }
    v
}

/// The prime factors of m >= 1 (trial division).
fn small_primes_of(mut m: u32) -> Vec<u32> {
    let mut out = Vec::new();
    let mut p = 2;
    while p * p <= m {
        if m % p == 0 {
            out.push(p);
            while m % p == 0 {
                m /= p;
            }
        }
        p += 1;
    }
    if m > 1 {
        out.push(m);
    }
    out
}

/// Steps of the Horner recurrence of [`gordon_parts`] taken together.
const BLOCK: u32 = 16;

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
    check_gordon(n, l, n2)?;
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
    let parts = gordon_parts(n, l, n2);
    let den = gordon_den(n, l, n2, parts.kmax);
    Ok(simplify_surd(
        Rational::from((parts.num, den)),
        Rational::from(gordon_rad(n, l, n2)),
    ))
}

/// The preconditions of [`gordon_hydrogen`].
fn check_gordon(n: u32, l: u32, n2: u32) -> Result<(), BasisError> {
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
    Ok(())
}

/// The square <n l| r |n2 l-1>^2 (bohr^2) of [`gordon_hydrogen`], exact,
/// formed without the square root: the same rational as
/// `gordon_hydrogen(n, l, n2)?.square()` (no square factors are extracted
/// from the radicand; the fraction is reduced by the known factors of its
/// denominator instead of one gcd of the full-size numbers).
///
/// # Errors
/// As [`gordon_hydrogen`].
///
/// # Accuracy
/// Exact.
pub fn gordon_hydrogen_square(n: u32, l: u32, n2: u32) -> Result<Rational, BasisError> {
    check_gordon(n, l, n2)?;
    if n == n2 {
        // (9/4) n^2 (n^2 - l^2), see gordon_hydrogen
        let nn = u64::from(n) * u64::from(n);
        let rad = nn - u64::from(l) * u64::from(l);
        return Ok(Rational::from((Integer::from(nn) * rad * 9u32, 4u32)));
    }
    let parts = gordon_parts(n, l, n2);
    let mut num = parts.num;
    if num == 0 {
        return Ok(Rational::new());
    }
    // The fraction num^2 rad / den^2 is reduced in pieces, without a gcd
    // of the two full-size numbers: den = Q s^(s+2) (gordon_den, s = n +
    // n2, Q = (2l+K-1)! K! (a+1)(a+2) 4, about a third of den). First num
    // and Q lose g1 = gcd(num, Q); then, for each prime p of s, the
    // exponents of p in num and in den lose their minimum (remove_factor
    // on num and on what is left of Q). This leaves num coprime to den.
    // Last, rad and den^2 lose g2 = gcd(rad, den^2).
    let (a, s, kmax) = (n - l - 1, n + n2, parts.kmax);
    let mut q = factorial(2 * l + kmax - 1)
        * factorial(kmax)
        * (u64::from(a + 1) * u64::from(a + 2))
        * 4u32;
    let g1 = Integer::from(num.gcd_ref(&q));
    num.div_exact_mut(&g1);
    q.div_exact_mut(&g1);
    // den = q (no prime of s left in it) times p^(e - m) for the primes p
    // of s
    let mut s_left = Vec::new();
    for p in small_primes_of(s) {
        let pz = Integer::from(p);
        let vn = num.remove_factor_mut(&pz);
        let vq = q.remove_factor_mut(&pz);
        let vs = (s + 2) * small_primes_val(s, p);
        let e = vq + vs;
        let m = vn.min(e);
        if vn > m {
            num *= Integer::from(Integer::u_pow_u(p, vn - m));
        }
        s_left.push((p, e - m));
    }
    // rad against den^2: by a gcd with q^2 (what is left of Q, usually a
    // few words) and by exponents for the primes of s (Legendre's formula
    // for the factorials of rad)
    let q2 = q.square();
    let rad = gordon_rad(n, l, n2);
    let g2 = Integer::from(rad.gcd_ref(&q2));
    let mut rad = rad.div_exact(&g2);
    let mut denom = q2.div_exact(&g2);
    for (p, e) in s_left {
        let r = factorial_val(n + l, p) - factorial_val(n - l - 1, p)
            + factorial_val(n2 + l - 1, p)
            - factorial_val(n2 - l, p);
        let g = r.min(2 * e);
        if g > 0 {
            rad.div_exact_mut(&Integer::from(Integer::u_pow_u(p, g)));
        }
        if 2 * e > g {
            denom *= Integer::from(Integer::u_pow_u(p, 2 * e - g));
        }
    }
    let numer = num.square() * rad;
    // SAFETY (the canonical form of a Rational, no memory concern): denom
    // > 0 and gcd(numer, denom) = 1. num / g1 and Q / g1 are coprime; the
    // primes of s were balanced so that each is left in at most one of
    // num and den, and the other primes of den are those of q: so num is
    // coprime to den and num^2 to denom (a divisor of den^2). rad / g2 and
    // q^2 / g2 are coprime, q^2 has no prime of s, and each prime of s is
    // left in at most one of rad and denom.
    // Equality with the reduction by one gcd is checked in the tests.
    Ok(unsafe { Rational::from_canonical(numer, denom) })
}

/// The arguments (n, l, n2) of Gordon's formula for <a| r |b>: the state
/// of the higher l first (the integral is symmetric in a and b).
///
/// # Errors
/// [`BasisError::NotDipoleAllowed`] unless |l_a - l_b| = 1;
/// [`BasisError::InvalidArgument`] if the two charges differ.
fn gordon_args(a: &BoundState, b: &BoundState) -> Result<(u32, u32, u32), BasisError> {
    if a.z() != b.z() {
        return Err(BasisError::InvalidArgument(format!(
            "dipole integral between different nuclear charges ({} and {})",
            a.z(),
            b.z()
        )));
    }
    if a.l() == b.l() + 1 {
        Ok((a.n(), a.l(), b.n()))
    } else if b.l() == a.l() + 1 {
        Ok((b.n(), b.l(), a.n()))
    } else {
        Err(BasisError::NotDipoleAllowed {
            n: a.n(),
            l: a.l(),
            n2: b.n(),
            l2: b.l(),
        })
    }
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
    let (n, l, n2) = gordon_args(a, b)?;
    let hyd = gordon_hydrogen(n, l, n2)?;
    Ok(Surd {
        coef: hyd.coef / a.z(),
        radicand: hyd.radicand,
    })
}

/// The square of [`radial_dipole`], |<a| r |b>|^2 (bohr^2), exact: the same
/// rational as `radial_dipole(a, b)?.square()`, formed without the square
/// root ([`gordon_hydrogen_square`]).
///
/// # Errors
/// As [`radial_dipole`].
///
/// # Accuracy
/// Exact.
pub fn radial_dipole_square(a: &BoundState, b: &BoundState) -> Result<Rational, BasisError> {
    let (n, l, n2) = gordon_args(a, b)?;
    let hyd = gordon_hydrogen_square(n, l, n2)?;
    if *a.z() == 1 {
        Ok(hyd)
    } else {
        Ok(hyd / Rational::from(a.z() * a.z()))
    }
}
