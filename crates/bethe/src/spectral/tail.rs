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

/// [`coefficients`] for several value sets at the same nodes: the cosines
/// are computed once.
pub(crate) fn coefficients_many(values: &[Vec<Float>], prec: u32) -> Vec<Vec<Float>> {
    let k = values.iter().map(Vec::len).max().unwrap_or(0);
    let pi = Float::with_val(prec, Constant::Pi);
    // cos(pi (2i+1) j / (2K)) depends on (2i+1) j mod 4K
    let table: Vec<Float> = (0..4 * k)
        .map(|r| (Float::with_val(prec, &pi * r as u32) / (2 * k) as u32).cos())
        .collect();
    values
        .iter()
        .map(|vals| {
            (0..k)
                .map(|j| {
                    let mut s = Float::with_val(prec, 0);
                    for (i, v) in vals.iter().enumerate() {
                        s += Float::with_val(prec, &table[((2 * i + 1) * j) % (4 * k)] * v);
                    }
                    s *= 2u32;
                    s /= k as u32;
                    if j == 0 {
                        s /= 2u32;
                    }
                    s
                })
                .collect()
        })
        .collect()
}

/// sum_{n' >= a} n'^-3 p(a^2/n'^2) for the interpolant p with Chebyshev
/// coefficients `cheb` (see [`coefficients`]), at `prec` bits.
pub(crate) fn sum(cheb: &[Float], a: u32, prec: u32) -> Float {
    sum_many(&[cheb], a, prec).pop().expect("one sum")
}

/// [`sum`] for several interpolants with the same number of coefficients:
/// the Hurwitz zeta values, the expensive part, are computed once.
pub(crate) fn sum_many(chebs: &[&[Float]], a: u32, prec: u32) -> Vec<Float> {
    let k = chebs.iter().map(|c| c.len()).max().unwrap_or(0);
    let guard = 3 * k as u32 + 32;
    let hp = prec + guard;
    // a^(2m) zeta(3 + 2m, a), m < k
    let log2a = f64::from(a).log2();
    let zetas: Vec<Float> = (0..k)
        .map(|m| {
            let s = 3 + 2 * m as u32;
            let zp = hp + (f64::from(s) * log2a).ceil() as u32 + 16;
            let mut z = Float::with_val(zp, Float::zeta_u(s));
            for i in 1..a {
                z -= Float::with_val(zp, Float::with_val(zp, i).pow(s)).recip();
            }
            z *= Float::with_val(zp, Float::with_val(zp, a).pow(2 * m as u32));
            z
        })
        .collect();
    chebs
        .iter()
        .map(|cheb| {
            let mut total = Float::with_val(hp, 0);
            for (pm, z) in monomials(cheb, hp).iter().zip(&zetas) {
                total += Float::with_val(hp, pm * z);
            }
            Float::with_val(prec, total)
        })
        .collect()
}

/// The interpolant in powers of u (at `hp` bits): the integer coefficients
/// of T_j(2u - 1) times the Chebyshev coefficients.
fn monomials(cheb: &[Float], hp: u32) -> Vec<Float> {
    let k = cheb.len();
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
    monos
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
            let many = coefficients_many(std::slice::from_ref(&vals), prec);
            for (x, y) in c.iter().zip(&many[0]) {
                assert!(Float::with_val(prec, x - y).abs() < 1e-60, "cosine table");
            }
            let got = sum(&c, a, prec);
            let want = Float::with_val(prec, 1) / (2 * a * (a - 1));
            let rel = Float::with_val(prec, &got - &want).abs() / &want;
            assert!(rel < 1e-30, "a = {a}: {got} vs {want}");
        }
    }
}
