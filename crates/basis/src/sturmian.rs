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
use crate::exact::{factorial, PolyExp};
use rug::ops::Pow;
use rug::{Float, Integer, Rational};

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
        let r = Rational::from((factorial(i as u32), factorial(i as u32 + alpha))) * &self.radicand;
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
        let v = cp / two_kappa.clone().pow(p) * Rational::from(factorial(alpha + q));
        d.push(v);
    }
    // coef_i = (-1)^i sum_{q >= i} D'_q C(q, i): the sums over q are the
    // coefficients of sum_q D'_q (x + 1)^q, formed by repeated synthetic
    // division (Taylor shift by 1: additions only) on the integers D'_q den,
    // den a common denominator, so that no step needs a gcd
    let den = d.iter().fold(Integer::from(1), |acc, v| acc.lcm(v.denom()));
    let mut a: Vec<Integer> = d
        .iter()
        .map(|v| v.numer() * Integer::from(&den / v.denom()))
        .collect();
    let top = a.len() - 1;
    for i in 0..top {
        for j in (i..top).rev() {
            let (lo, hi) = a.split_at_mut(j + 1);
            lo[j] += &hi[0];
        }
    }
    let coef = a
        .into_iter()
        .enumerate()
        .map(|(i, v)| {
            let s = Rational::from((v, den.clone()));
            if i % 2 == 1 {
                -s
            } else {
                s
            }
        })
        .collect();
    // dr / r = dx / x; the integral over x carries no extra scale.
    Ok(MatchedExpansion {
        big_l,
        coef,
        radicand: f.radicand.clone(),
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

/// Largest `bits` accepted by [`sturmian_overlaps`]; the guard bits added
/// internally are capped by the same number.
pub const MAX_OVERLAP_BITS: u32 = 1 << 20;

/// Overlaps gamma_k = int_0^inf S_k(r) f(r) dr, k = 0..=kmax, of the reduced
/// function `f` with the Sturmians of angular momentum `big_l` at an
/// arbitrary scale `nu` (bohr), at `bits` bits.
///
/// With these overlaps f(r) = (1/r) sum_k gamma_k S_k(r) (the Sturmians are
/// complete and orthonormal with weight 1/r at every scale), so
/// sum_k gamma_k^2 = int_0^inf f^2 r dr. At the matched scale nu = 1/kappa
/// the expansion terminates and agrees with [`matched_expansion`].
///
/// Method: with x = 2r/nu, the Laguerre generating function gives
///
/// ```text
/// int_0^inf x^s e^(-beta x) L_k^(2L+1)(x) dx
///     = s! / beta^(s+1) [t^k] (1-t)^(s-2L-1) (1 + rho t)^-(s+1),
/// beta = (1 + kappa nu)/2,  rho = (1 - kappa nu)/(1 + kappa nu),
/// ```
///
/// so that, summed over the powers of f, gamma_k / N_k is the k-th Taylor
/// coefficient of P(t) / (1 + rho t)^D with a polynomial P of degree
/// M = deg f - L and D = M + 2L + 2. The overlaps fall off like
/// k^(D-1) |rho|^k; for |rho| near 1 (nu far from 1/kappa) many terms matter.
///
/// # Errors
/// [`BasisError::PrecisionTooLow`] for `bits` < 53;
/// [`BasisError::InvalidArgument`] for `bits` > [`MAX_OVERLAP_BITS`], if the
/// cancellation would need more guard bits than that, if `nu` is not a
/// positive finite number,
/// if f has a power of r below L (r f is then not expandable with
/// polynomial coefficients of this form), or if `kmax` exceeds 10^7.
///
/// # Accuracy
/// Working precision is raised above `bits` until the estimated loss from
/// cancellation (ratio of the sum of absolute values of all contributions
/// to the result, measured in the computation) is covered with 24 guard
/// bits. Each gamma_k then has a relative error of about 2^-bits, or an
/// absolute error of about 2^-bits times ||f|| = (int f^2 r dr)^(1/2) when
/// that is larger (overlaps below that floor are returned with absolute,
/// not relative, accuracy). This is an estimate, not a rigorous bound; the
/// tests compare two precisions, the exact matched expansion and
/// completeness.
pub fn sturmian_overlaps(
    f: &PolyExp,
    big_l: u32,
    nu: &Float,
    kmax: u32,
    bits: u32,
) -> Result<Vec<Float>, BasisError> {
    crate::error::check_prec(bits)?;
    if bits > MAX_OVERLAP_BITS {
        return Err(BasisError::InvalidArgument(format!(
            "working precision of {bits} bits exceeds the supported {MAX_OVERLAP_BITS}"
        )));
    }
    if !nu.is_finite() || *nu <= 0 {
        return Err(BasisError::InvalidArgument(format!(
            "Sturmian scale nu must be positive and finite, got {nu}"
        )));
    }
    if kmax > 10_000_000 {
        return Err(BasisError::InvalidArgument(format!(
            "kmax = {kmax} overlaps requested; at most 10^7 are supported"
        )));
    }
    let p0 = match f.lowest_power() {
        Some(p) => p as u32,
        None => {
            return Ok((0..=kmax).map(|_| Float::with_val(bits, 0)).collect());
        }
    };
    if p0 < big_l {
        return Err(BasisError::InvalidArgument(format!(
            "function behaves like r^{p0} at the origin; Sturmians of L = {big_l} need r^{big_l} or higher"
        )));
    }
    if f.kappa <= 0 {
        return Err(BasisError::InvalidArgument(
            "function must decay: kappa > 0".into(),
        ));
    }
    // ||f||^2 = int f^2 r dr, exact; its square root sets the absolute floor.
    let norm2 = f.integral_with(f, 1)?.to_float(64);
    let mut guard: u32 = 32;
    for _ in 0..12 {
        let wp = bits + guard;
        let (vals, loss) = overlaps_at(f, big_l, nu, kmax, wp, bits, &norm2);
        if loss + 24.0 <= f64::from(guard) {
            return Ok(vals.into_iter().map(|v| Float::with_val(bits, v)).collect());
        }
        let need = (loss + 48.0).ceil().max(f64::from(guard) * 2.0);
        if need > f64::from(MAX_OVERLAP_BITS) {
            break;
        }
        guard = need as u32;
    }
    Err(BasisError::InvalidArgument(format!(
        "Sturmian overlaps did not reach {bits} bits (cancellation too strong at nu = {nu})"
    )))
}

/// One overlap gamma_k of [`sturmian_overlaps`].
///
/// # Errors
/// As [`sturmian_overlaps`].
///
/// # Accuracy
/// As [`sturmian_overlaps`].
pub fn sturmian_overlap(
    f: &PolyExp,
    big_l: u32,
    k: u32,
    nu: &Float,
    bits: u32,
) -> Result<Float, BasisError> {
    let mut v = sturmian_overlaps(f, big_l, nu, k, bits)?;
    Ok(v.pop().unwrap_or_else(|| Float::with_val(bits, 0)))
}

/// The overlaps at working precision `wp`, and the estimated loss in bits
/// (maximum over k of log2(majorant / max(|gamma_k|, floor))).
fn overlaps_at(
    f: &PolyExp,
    big_l: u32,
    nu: &Float,
    kmax: u32,
    wp: u32,
    bits: u32,
    norm2: &Float,
) -> (Vec<Float>, f64) {
    let alpha = 2 * big_l + 1;
    let coeffs = f.rational_coeffs();
    let deg = coeffs.len() as u32 - 1; // highest power of r in f
    let m = deg - big_l; // degree of P
    let d = m + 2 * big_l + 2;
    let nu = Float::with_val(wp, nu);
    let knu = Float::with_val(wp, &nu * &f.kappa);
    let onep = Float::with_val(wp, 1 + &knu);
    let beta = Float::with_val(wp, &onep / 2u32);
    let rho = Float::with_val(wp, 1 - &knu) / &onep;
    let half_nu = Float::with_val(wp, &nu / 2u32);
    // w_q = c_{q+L} (nu/2)^(q+L+1) (q+2L+1)! / beta^(q+2L+2), q = 0..=m
    let mut w = Vec::with_capacity(m as usize + 1);
    for q in 0..=m {
        let c = &coeffs[(q + big_l) as usize];
        if *c == 0 {
            w.push(Float::with_val(wp, 0));
            continue;
        }
        let mut t = Float::with_val(wp, c);
        t *= Float::with_val(wp, half_nu.clone().pow(q + big_l + 1));
        t *= Float::with_val(wp, &factorial(q + alpha));
        t /= Float::with_val(wp, beta.clone().pow(q + alpha + 1));
        w.push(t);
    }
    // P(t) = sum_q w_q (1-t)^q (1+rho t)^(m-q), via U_q = (1+rho t) U_{q-1} + w_q (1-t)^q;
    // the same recursion on absolute values gives the majorant A.
    let zero = Float::with_val(wp, 0);
    let arho = Float::with_val(wp, rho.abs_ref());
    let mut u: Vec<Float> = vec![zero.clone(); m as usize + 1];
    let mut ua: Vec<Float> = vec![zero.clone(); m as usize + 1];
    let mut apow: Vec<Float> = vec![zero.clone(); m as usize + 1]; // (1-t)^q
    let mut apow_abs: Vec<Float> = vec![zero.clone(); m as usize + 1]; // (1+t)^q
    apow[0] = Float::with_val(wp, 1);
    apow_abs[0] = Float::with_val(wp, 1);
    for (q, wq) in w.iter().enumerate() {
        if q > 0 {
            // U <- (1 + rho t) U   (degree q-1 -> q)
            for j in (1..=q).rev() {
                let t = Float::with_val(wp, &u[j - 1] * &rho);
                u[j] += t;
                let ta = Float::with_val(wp, &ua[j - 1] * &arho);
                ua[j] += ta;
            }
            // (1-t)^q from (1-t)^(q-1)
            for j in (1..=q).rev() {
                let t = apow[j - 1].clone();
                apow[j] -= t;
                let ta = apow_abs[j - 1].clone();
                apow_abs[j] += ta;
            }
        }
        if *wq != 0 {
            let wa = Float::with_val(wp, wq.abs_ref());
            for j in 0..=q {
                let t = Float::with_val(wp, wq * &apow[j]);
                u[j] += t;
                let ta = Float::with_val(wp, &wa * &apow_abs[j]);
                ua[j] += ta;
            }
        }
    }
    // e_i = C(D+i-1, i) (-rho)^i; gamma_k = N_k S sum_j P_j e_{k-j}
    let kmax_us = kmax as usize;
    let mut e: Vec<Float> = Vec::with_capacity(kmax_us + 1);
    let mut ea: Vec<Float> = Vec::with_capacity(kmax_us + 1);
    e.push(Float::with_val(wp, 1));
    ea.push(Float::with_val(wp, 1));
    let mrho = Float::with_val(wp, -&rho);
    for i in 0..kmax_us {
        let fac = Float::with_val(wp, (d as u64 + i as u64) as f64) / (i as u64 + 1) as f64;
        let next = Float::with_val(wp, &e[i] * &mrho) * &fac;
        let next_a = Float::with_val(wp, &ea[i] * &arho) * &fac;
        e.push(next);
        ea.push(next_a);
    }
    // overall factor sqrt(radicand) (the coefficients already carry `scale`),
    // and N_k = sqrt(k!/(k+alpha)!)
    let pref = Float::with_val(wp, &f.radicand).sqrt();
    let pref_abs = Float::with_val(wp, pref.abs_ref());
    let floor = Float::with_val(wp, norm2).sqrt() >> (bits as i32);
    // N_k by recurrence N_{k+1}^2 = N_k^2 (k+1)/(k+1+alpha)
    let mut nk2 = Float::with_val(wp, &Rational::from((1, factorial(alpha))));
    let mut out = Vec::with_capacity(kmax_us + 1);
    let mut loss: f64 = 0.0;
    for k in 0..=kmax_us {
        let jmax = k.min(m as usize);
        let mut s = Float::with_val(wp, 0);
        let mut sa = Float::with_val(wp, 0);
        for j in 0..=jmax {
            s += Float::with_val(wp, &u[j] * &e[k - j]);
            sa += Float::with_val(wp, &ua[j] * &ea[k - j]);
        }
        let nk = Float::with_val(wp, nk2.sqrt_ref());
        let g = s * &nk * &pref;
        let ga = sa * &nk * &pref_abs;
        let denom = if Float::with_val(wp, g.abs_ref()) > floor {
            Float::with_val(wp, g.abs_ref())
        } else {
            floor.clone()
        };
        if ga > 0 {
            let ratio = Float::with_val(53, &ga / &denom);
            let lb = ratio.log2().to_f64();
            if lb > loss {
                loss = lb;
            }
        }
        out.push(g);
        nk2 *= (k + 1) as u64 as f64;
        nk2 /= (k + 1 + alpha as usize) as f64;
    }
    (out, loss)
}
