//! Tanh-sinh (double-exponential) quadrature on (0, pi/2) in MPFR.
//!
//! phi = (pi/4)(1 + tanh((pi/2) sinh tau)), tau = i h. Nodes are produced
//! level by level (h = 2^-m), each level adding the odd multiples of h, so a
//! level's sum reuses all coarser nodes. Endpoint distances are computed
//! directly (never as pi/2 - phi), so integrands may depend on the distance
//! to either endpoint without cancellation.

use rug::float::Constant;
use rug::Float;

/// One quadrature node on (0, pi/2).
#[derive(Debug, Clone)]
pub(crate) struct Node {
    /// sin(phi).
    pub(crate) sin: Float,
    /// cos(phi).
    pub(crate) cos: Float,
    /// Weight dphi/dtau (to be multiplied by h).
    pub(crate) weight: Float,
}

/// The node at tau (any sign), at `prec` bits.
pub(crate) fn node(tau: &Float, prec: u32) -> Node {
    let pi = Float::with_val(prec, Constant::Pi);
    let v = Float::with_val(prec, tau.clone().abs().sinh()) * &pi / 2u32;
    // e = exp(-2|u|)
    let e = Float::with_val(prec, -(v * 2u32)).exp();
    let one_e = Float::with_val(prec, &e + 1u32);
    // distance to the nearer endpoint: (pi/2) e / (1 + e)
    let small = Float::with_val(prec, &pi * &e) / 2u32 / &one_e;
    // weight (pi^2/8) cosh(tau) 4 e / (1+e)^2
    let mut w = Float::with_val(prec, &pi * &pi) / 2u32;
    w *= Float::with_val(prec, tau.cosh_ref());
    w *= &e;
    w /= Float::with_val(prec, &one_e * &one_e);
    let (s_small, c_small) = small.sin_cos(Float::new(prec));
    if *tau >= 0 {
        // near pi/2: phi = pi/2 - small
        Node {
            sin: c_small,
            cos: s_small,
            weight: w,
        }
    } else {
        Node {
            sin: s_small,
            cos: c_small,
            weight: w,
        }
    }
}

/// The tau values of level `m` (h = 2^-m) that are new at that level
/// (all of them for m = 0), within lo <= tau <= hi.
pub(crate) fn level_taus(m: u32, lo: f64, hi: f64) -> Vec<(i64, i64)> {
    // returned as (numerator i, denominator 2^m): tau = i / 2^m
    let den = 1i64 << m;
    let imin = (lo * den as f64).ceil() as i64;
    let imax = (hi * den as f64).floor() as i64;
    let mut v = Vec::new();
    for i in imin..=imax {
        if m == 0 || i % 2 != 0 {
            v.push((i, den));
        }
    }
    v
}
