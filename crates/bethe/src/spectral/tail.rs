//! The Rydberg tail sum_{n' >= a} n'^-3 G(1/n'^2) for a function G analytic
//! on [0, 1/a^2] (and beyond, up to its singularity at 1/n^2).
//!
//! G is interpolated at K Chebyshev points of u = a^2 w in [0, 1]; the
//! interpolant is converted to powers of u (at raised precision, the
//! conversion magnifies rounding by at most about 6^K) and summed exactly
//! term by term: sum_{n' >= a} n'^-3 (a^2/n'^2)^m = a^(2m) zeta(3+2m, a),
//! with the Hurwitz zeta function from zeta(3+2m) minus a finite sum at a
//! precision raised by the (3+2m) log2(a) bits that subtraction cancels.

use rug::float::Constant;
use rug::{Float, Integer};

/// Chebyshev points u_i = (1 + cos(pi (i + 1/2)/K))/2 in (0, 1).
pub(crate) fn nodes(k: usize, prec: u32) -> Vec<Float> {
    let pi = Float::with_val(prec, Constant::Pi);
    (0..k)
        .map(|i| {
            let th = Float::with_val(prec, &pi * (2 * i + 1) as u32) / (2 * k) as u32;
            (th.cos() + 1u32) / 2u32
        })
        .collect()
}

/// Chebyshev coefficients c_j (j < K) of the interpolant through `values`
/// at [`nodes`], in the convention p(u) = sum_j c_j T_j(2u - 1) with c_0
/// already halved.
pub(crate) fn coefficients(values: &[Float], prec: u32) -> Vec<Float> {
    let k = values.len();
    let pi = Float::with_val(prec, Constant::Pi);
    let mut c = Vec::with_capacity(k);
    for j in 0..k {
        let mut s = Float::with_val(prec, 0);
        for (i, v) in values.iter().enumerate() {
            let th = Float::with_val(prec, &pi * ((2 * i + 1) * j) as u32) / (2 * k) as u32;
            s += th.cos() * v;
        }
        s *= 2u32;
        s /= k as u32;
        if j == 0 {
            s /= 2u32;
        }
        c.push(s);
    }
    c
}

/// sum_{n' >= a} n'^-3 p(a^2/n'^2) for the interpolant p with Chebyshev
/// coefficients `cheb` (see [`coefficients`]), at `prec` bits.
pub(crate) fn sum(cheb: &[Float], a: u32, prec: u32) -> Float {
    let k = cheb.len();
    let guard = 3 * k as u32 + 32;
    let hp = prec + guard;
    // integer coefficients of T_j(2u - 1) in powers of u
    let mut monos = vec![Float::with_val(hp, 0); k];
    let mut tm1: Vec<Integer> = vec![Integer::from(1)];
    let mut t: Vec<Integer> = vec![Integer::from(-1), Integer::from(2)];
    for (j, cj) in cheb.iter().enumerate() {
        let row: &Vec<Integer> = if j == 0 { &tm1 } else { &t };
        let cj = Float::with_val(hp, cj);
        for (m, coef) in row.iter().enumerate() {
            monos[m] += Float::with_val(hp, &cj * coef);
        }
        if j >= 1 {
            // T_{j+1} = 2 (2u - 1) T_j - T_{j-1}
            let mut next = vec![Integer::new(); t.len() + 1];
            for (m, c) in t.iter().enumerate() {
                next[m + 1] += Integer::from(c * 4u32);
                next[m] -= Integer::from(c * 2u32);
            }
            for (m, c) in tm1.iter().enumerate() {
                next[m] -= c;
            }
            tm1 = std::mem::replace(&mut t, next);
        }
    }
    let mut total = Float::with_val(hp, 0);
    let log2a = f64::from(a).log2();
    for (m, pm) in monos.iter().enumerate() {
        let s = 3 + 2 * m as u32;
        let zp = hp + (f64::from(s) * log2a).ceil() as u32 + 16;
        let mut z = Float::with_val(zp, Float::zeta_u(s));
        for i in 1..a {
            z -= Float::with_val(zp, Float::with_val(zp, i).pow(s)).recip();
        }
        // times a^(2m)
        z *= Float::with_val(zp, Float::with_val(zp, a).pow(2 * m as u32));
        total += Float::with_val(hp, pm * &z);
    }
    Float::with_val(prec, total)
}

use rug::ops::Pow;

#[cfg(test)]
mod tests {
    use super::*;

    /// sum_{n >= a} n^-3 / (1 - 1/n^2) = sum 1/((n-1) n (n+1)) telescopes to
    /// 1/(2 a (a-1)) (common practice): the interpolated, zeta-summed tail must
    /// reproduce it to the interpolation accuracy.
    #[test]
    fn telescoping_tail() {
        let prec = 256;
        for a in [2u32, 5, 40] {
            let k = 60;
            let a2 = Float::with_val(prec, a * a);
            let vals: Vec<Float> = nodes(k, prec)
                .iter()
                .map(|u| {
                    let w = Float::with_val(prec, u / &a2);
                    (Float::with_val(prec, 1) - w).recip()
                })
                .collect();
            let c = coefficients(&vals, prec);
            let got = sum(&c, a, prec);
            let want = Float::with_val(prec, 1) / (2 * a * (a - 1));
            let rel = Float::with_val(prec, &got - &want).abs() / &want;
            assert!(rel < 1e-30, "a = {a}: {got} vs {want}");
        }
    }
}
