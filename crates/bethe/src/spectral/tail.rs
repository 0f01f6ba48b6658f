//! The Rydberg tail sum_{n' >= a} n'^-3 G(1/n'^2) for a function G analytic
//! on [0, 1/a^2] (and beyond, up to its singularity at 1/n^2).
//!
//! G is interpolated at K Chebyshev points u_i of u = a^2 w in [0, 1], and
//! the interpolant p is summed exactly. Since p depends linearly on the
//! values G(u_i), so does its sum:
//!
//! ```text
//! sum_{n' >= a} n'^-3 p(a^2/n'^2) = sum_i W_i G(u_i),
//! W_i = (2/K) sum_j' cos(pi (2i+1) j / (2K)) S_j,   S_j = sum_{n' >= a} n'^-3 T_j(2 a^2/n'^2 - 1)
//! ```
//!
//! (j < K, the j = 0 term halved). The weights W_i depend on K, a and the
//! precision only, so every function summed at the same points costs one
//! dot product. S_j is summed exactly term by term in powers of u:
//! sum_{n' >= a} n'^-3 (a^2/n'^2)^m = a^(2m) zeta(3+2m, a), with the Hurwitz
//! zeta function from zeta(3+2m) minus a finite sum at a precision raised by
//! the (3+2m) log2(a) bits that subtraction cancels; the integer coefficients
//! of T_j(2u - 1) in powers of u grow like 6^j, and S_j is formed with
//! 3K + 32 guard bits against that cancellation.

use rug::float::Constant;
use rug::ops::Pow;
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

/// The weights W_i (i < `k`) of the tail sum from n' = `a` on for values at
/// [`nodes`]`(k)`, at `prec` bits: sum_i W_i G(u_i) is the exact sum of the
/// degree k - 1 interpolant of G.
///
/// # Accuracy
/// Each W_i is rounded once to `prec` bits (the sums behind it run at
/// 3k + 32 bits more).
pub(crate) fn weights(k: usize, a: u32, prec: u32) -> Vec<Float> {
    let hp = prec + 3 * k as u32 + 32;
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
    // S_j from the integer coefficients of T_j(2u - 1) in powers of u:
    // T_0 = 1, T_1 = 2u - 1, T_(j+1) = 2 (2u - 1) T_j - T_(j-1)
    let mut s = Vec::with_capacity(k);
    let mut tm1: Vec<Integer> = vec![Integer::from(1)];
    let mut t: Vec<Integer> = vec![Integer::from(-1), Integer::from(2)];
    for j in 0..k {
        let row = if j == 0 { &tm1 } else { &t };
        let mut sj = Float::with_val(hp, 0);
        for (coef, z) in row.iter().zip(&zetas) {
            sj += Float::with_val(hp, z * coef);
        }
        s.push(sj);
        if j >= 1 {
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
    // cos(pi (2i+1) j / (2K)) depends on (2i+1) j mod 4K
    let pi = Float::with_val(hp, Constant::Pi);
    let table: Vec<Float> = (0..4 * k)
        .map(|r| (Float::with_val(hp, &pi * r as u32) / (2 * k) as u32).cos())
        .collect();
    (0..k)
        .map(|i| {
            let mut w = Float::with_val(hp, &s[0] / 2u32);
            for (j, sj) in s.iter().enumerate().skip(1) {
                w += Float::with_val(hp, &table[((2 * i + 1) * j) % (4 * k)] * sj);
            }
            w *= 2u32;
            w /= k as u32;
            Float::with_val(prec, w)
        })
        .collect()
}

/// sum_i W_i G(u_i) at `prec` bits: the tail sum of the interpolant through
/// `values` (at [`nodes`]), with the [`weights`] of the same K.
pub(crate) fn sum(weights: &[Float], values: &[Float], prec: u32) -> Float {
    let mut total = Float::with_val(prec, 0);
    for (w, v) in weights.iter().zip(values) {
        total += Float::with_val(prec, w * v);
    }
    total
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Two tails in closed form (common practice, by partial fractions):
    /// n^-3 / (1 - 1/n^2) = 1/((n-1) n (n+1)) telescopes to 1/(2 a (a-1)),
    /// and n^-3 / (1 - 1/n^2)^2 = n/(n^2 - 1)^2 = (1/(n-1)^2 - 1/(n+1)^2)/4
    /// to (1/(a-1)^2 + 1/a^2)/4. The weighted sums of the values at the
    /// Chebyshev points must reproduce them to the interpolation accuracy.
    #[test]
    fn telescoping_tails() {
        let prec = 256;
        for a in [2u32, 5, 40] {
            let k = 60;
            let w = weights(k, a, prec);
            let a2 = Float::with_val(prec, a * a);
            let us = nodes(k, prec);
            let g1: Vec<Float> = us
                .iter()
                .map(|u| (Float::with_val(prec, 1) - Float::with_val(prec, u / &a2)).recip())
                .collect();
            let g2: Vec<Float> = g1.iter().map(|g| Float::with_val(prec, g * g)).collect();
            let want1 = Float::with_val(prec, 1) / (2 * a * (a - 1));
            let am1 = Float::with_val(prec, a - 1);
            let want2 = (Float::with_val(prec, &am1 * &am1).recip()
                + Float::with_val(prec, &a2).recip())
                / 4u32;
            for (g, want) in [(g1, want1), (g2, want2)] {
                let got = sum(&w, &g, prec);
                let rel = Float::with_val(prec, &got - &want).abs() / &want;
                assert!(rel < 1e-30, "a = {a}: {got} vs {want}");
            }
        }
    }
}
