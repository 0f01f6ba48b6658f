//! Bethe logarithms from the photon-energy integral with the Sturmian Coulomb
//! Green's function.
//!
//! ## Method
//! S = sum_m |p_nm|^2 D_m ln|D_m| is written as (PHYSICS.md conventions)
//!
//! ```text
//! S = sum_lower c D ln|D| + Dsum_up ln(w0) - int_0^inf [f_up(w) - Dsum_up/(w + w0)] dw
//! ```
//!
//! where the lower bound states (E_m < E_n, poles on the path for n > 1) are
//! taken out of f(w) = <p^2> - w <p (H - E_n + w)^-1 p> with their exact
//! matrix elements, so the remaining integrand has no poles. The resolvent of
//! each intermediate partial wave is the Sturmian sum, summed in closed form
//! through Meixner polynomials ([`meixner`]). The integral runs over
//! nu in (0, n] ([`integrand`]): a first panel [0, nu1] with a logarithmic
//! product rule (the integrand is analytic plus analytic times ln nu there),
//! then Gauss–Legendre panels graded toward the pole of the first upper state
//! at nu = n + 1.
//!
//! ## Error estimate
//! Two evaluations: level A (nodes N, bits p) and level B (about 1.5 N nodes,
//! p + 32 bits). B is returned; |A - B| is the error estimate (it estimates
//! the error of the cruder A, so it is conservative for B as long as the
//! quadrature converges). Working bits p = goal bits + guard, where the guard
//! is the cancellation measured at every node of a pilot pass (see
//! [`meter`]); if the measured loss exceeds the guard, the pass is repeated
//! with more bits. If |A - B| misses the goal the node count grows, up to a
//! fixed number of tries, and then [`BetheError::NoConvergence`] is returned.

pub mod channel;
pub mod integrand;
pub mod meixner;
pub mod meter;
pub mod quad;
pub mod stieltjes;

#[cfg(test)]
mod tests;

use crate::settings::validate_state;
use crate::{BetheError, BetheValue, Method, Settings};
use channel::{channels, ChannelData, ChannelFloat};
use integrand::{PoleFloat, Problem};
use meter::Meter;
use rayon::prelude::*;
use rug::{Float, Rational};
use std::time::Instant;

/// Exact, precision-independent data of one state.
struct StateData {
    n: u32,
    chans: Vec<ChannelData>,
    /// Dsum = 2/n^3 for l = 0, else 0.
    dsum: Rational,
    /// Dsum_up = Dsum - sum_lower c D.
    dsum_up: Rational,
}

impl StateData {
    fn new(n: u32, l: u32) -> Result<Self, BetheError> {
        let chans = channels(n, l)?;
        let dsum = if l == 0 {
            Rational::from((2u64, u64::from(n).pow(3)))
        } else {
            Rational::new()
        };
        let mut dsum_up = dsum.clone();
        for ch in &chans {
            for p in &ch.poles {
                dsum_up -= Rational::from(&p.c * &p.d);
            }
        }
        Ok(StateData {
            n,
            chans,
            dsum,
            dsum_up,
        })
    }

    fn problem(&self, prec: u32) -> Problem {
        let mut poles = Vec::new();
        for ch in &self.chans {
            for p in &ch.poles {
                poles.push(PoleFloat {
                    nprime: Float::with_val(prec, p.nprime),
                    cd: Float::with_val(prec, Rational::from(&p.c * &p.d)),
                });
            }
        }
        Problem {
            n: self.n,
            channels: self
                .chans
                .iter()
                .map(|c| ChannelFloat::new(c, prec))
                .collect(),
            poles,
            two_dsum: Float::with_val(prec, Rational::from(&self.dsum * 2u32)),
        }
    }

    /// Sum over lower states of c D ln|D| and of their image terms
    /// -c D ln((n + n')/n'), plus Dsum_up ln w0 and Dsum ln 2.
    fn exact_part(&self, prec: u32) -> Float {
        let mut s = Float::with_val(prec, 0);
        for ch in &self.chans {
            for p in &ch.poles {
                let cd = Float::with_val(prec, Rational::from(&p.c * &p.d));
                let ln_abs_d = Float::with_val(prec, -p.d.clone()).ln();
                let ln_ratio =
                    Float::with_val(prec, Rational::from((self.n + p.nprime, p.nprime))).ln();
                s += cd * (ln_abs_d - ln_ratio);
            }
        }
        let nn = u64::from(self.n) * u64::from(self.n);
        let ln_w0 = Float::with_val(prec, Rational::from((1u64, 2 * nn))).ln();
        s += Float::with_val(prec, &self.dsum_up) * ln_w0;
        let ln2 = Float::with_val(prec, rug::float::Constant::Log2);
        s += Float::with_val(prec, &self.dsum) * ln2;
        s
    }
}

/// The first panel [0, nu1] and the panels on [nu1, n]: each panel [b, e]
/// satisfies e <= 2b (the branch point nu = 0 is at least one width away) and
/// n + 1 - e >= e - b (so is the pole at nu = n + 1).
fn panels(n: u32, first_pole: Option<u32>) -> (f64, Vec<(f64, f64)>) {
    let nf = f64::from(n);
    // The first panel (logarithmic product rule) is kept short: its
    // integrand pieces I_an, I_log have singularities at distances of order
    // one (lower-state structure, large L), and it stops short of the first
    // lower-state pole; the odd factor keeps nodes and boundaries off the
    // integers (poles of single terms).
    let mut nu1 = (0.3 * nf).min(0.5) * 1.013_7;
    if let Some(p) = first_pole {
        nu1 = nu1.min((f64::from(p) - 0.5) * 0.987_3);
    }
    let mut out = Vec::new();
    let mut b = nu1;
    while b < nf {
        let mut e = (2.0 * b).min((nf + 1.0 + b) / 2.0);
        if e > nf - 1e-9 || nf - e < 0.05 * (e - b) {
            e = nf;
        }
        out.push((b, e));
        b = e;
    }
    (nu1, out)
}

/// Node counts for a goal of `bits` at refinement `level` (0, 1, ...):
/// (first panel, other panels).
fn node_counts(bits: u32, level: u32) -> (usize, usize) {
    let f = 1.5f64.powi(level as i32);
    // about 6 bits per node on the worst panels (convergence factor near
    // 5.8 per node pair with margin); the A/B comparison catches a shortfall
    let n0 = ((f64::from(bits) / 6.0 + 6.0) * f).ceil() as usize;
    let n1 = ((f64::from(bits) / 6.0 + 6.0) * f).ceil() as usize;
    // even counts: no node at a panel midpoint
    (n0 + n0 % 2, n1 + n1 % 2)
}

/// One evaluation of ln k0 at fixed nodes and bits. Returns (value, loss bits, nodes).
fn evaluate(sd: &StateData, bits: u32, level: u32, prec: u32) -> (Float, i32, usize) {
    // precisions are quantized so that cached quadrature rules are shared
    let prec = quantize(prec);
    let prob = sd.problem(prec);
    let (n0, n1) = node_counts(bits, level);
    let first_pole = sd
        .chans
        .iter()
        .flat_map(|c| c.poles.iter().map(|p| p.nprime))
        .min();
    let (nu1, pans) = panels(sd.n, first_pole);
    let r0 = quad::rule(n0, prec);
    let r1 = quad::rule(n1, prec);
    let nu1f = Float::with_val(prec, nu1);
    let ln_nu1 = Float::with_val(prec, nu1f.ln_ref());
    // first panel: int_0^nu1 I = nu1 [sum w_i I_an + sum (W_i + w_i ln nu1) I_log]
    let first: Vec<(Float, i32)> = r0
        .x
        .par_iter()
        .zip(r0.w.par_iter().zip(r0.wlog.par_iter()))
        .map(|(x, (w, wl))| {
            let nu = Float::with_val(prec, x * &nu1f);
            let mut m = Meter::new();
            let s = prob.sample(&nu, &mut m);
            let ln_nu = Float::with_val(prec, nu.ln_ref());
            let an = Float::with_val(prec, &s.value - Float::with_val(prec, &s.log_coef * &ln_nu));
            let wlt = Float::with_val(prec, wl + Float::with_val(prec, w * &ln_nu1));
            let c = Float::with_val(prec, &an * w) + Float::with_val(prec, &s.log_coef * &wlt);
            (c, m.loss_bits)
        })
        .collect();
    let mut integral = Float::with_val(prec, 0);
    let mut loss = 0;
    for (c, l) in &first {
        integral += Float::with_val(prec, c * &nu1f);
        loss = loss.max(*l);
    }
    let mut nodes = first.len();
    for &(b, e) in &pans {
        let bf = Float::with_val(prec, b);
        // width in MPFR: the f64 difference would leave gaps between panels
        let h = Float::with_val(prec, Float::with_val(prec, e) - &bf);
        let part: Vec<(Float, i32)> =
            r1.x.par_iter()
                .zip(r1.w.par_iter())
                .map(|(x, w)| {
                    let nu = Float::with_val(prec, &bf + Float::with_val(prec, x * &h));
                    let mut m = Meter::new();
                    let s = prob.sample(&nu, &mut m);
                    (Float::with_val(prec, &s.value * w), m.loss_bits)
                })
                .collect();
        for (c, l) in &part {
            integral += Float::with_val(prec, c * &h);
            loss = loss.max(*l);
        }
        nodes += part.len();
    }
    let s = sd.exact_part(prec) - integral;
    let n3 = u64::from(sd.n).pow(3);
    (s * n3 / 2u32, loss, nodes)
}

/// Rounds a precision up to a multiple of 32 bits.
fn quantize(prec: u32) -> u32 {
    prec.div_ceil(32) * 32
}

/// Measures the bits the integrand loses to cancellation: evaluates it at a
/// spread of nodes at two precisions and compares. Returns a guard (bits to
/// add to the goal bits) covering the worst loss seen plus a margin.
fn pilot_guard(sd: &StateData, bits: u32) -> u32 {
    let p_lo = quantize(bits + 64);
    let p_hi = p_lo + 128;
    let lo = sd.problem(p_lo);
    let hi = sd.problem(p_hi);
    let nf = f64::from(sd.n);
    // log-spaced over (0, n): the losses vary smoothly with nu
    let points: Vec<f64> = (0..16)
        .map(|i| nf * 10f64.powf(-4.0 + 4.0 * (f64::from(i) + 0.5) / 16.0) * 0.998_7)
        .collect();
    let losses: Vec<i32> = points
        .par_iter()
        .map(|&x| {
            let mut m = Meter::new();
            let a = lo.sample(&Float::with_val(p_lo, x), &mut m).value;
            let mut m2 = Meter::new();
            let b = hi.sample(&Float::with_val(p_hi, x), &mut m2).value;
            if !a.is_finite() || !b.is_finite() || b.is_zero() {
                return p_lo as i32;
            }
            let d = Float::with_val(p_hi, Float::with_val(p_hi, &a) - &b).abs();
            if d.is_zero() {
                return m.loss_bits;
            }
            let rel_exp = d.get_exp().unwrap_or(0) - b.get_exp().unwrap_or(0);
            (p_lo as i32 + rel_exp).max(m.loss_bits)
        })
        .collect();
    let worst = losses.into_iter().max().unwrap_or(0).max(0) as u32;
    worst + 40
}

/// Relative cost of [`ln_k0`] for (n, l) at `digits` (arbitrary units, for
/// load balancing only).
pub fn cost_estimate(n: u32, l: u32, digits: u32) -> f64 {
    let nf = f64::from(n);
    let lf = f64::from(l);
    let bits = f64::from(digits) * 3.32 + 3.0 * nf.log2() + 40.0;
    let per_node = (nf - lf + 4.0 * lf + 20.0) * (bits / 64.0).powf(1.6);
    let nodes = (bits / 4.5 + 6.0) * (2.0 + (nf + 1.0).log2());
    per_node * nodes
}

/// ln k0(n, l) by the Green's-function method.
///
/// # Preconditions
/// 1 <= n <= 200, 0 <= l < n, `settings.digits` in 5..=200.
///
/// # Accuracy
/// The returned `abs_err` estimates |value - exact| by the difference of two
/// evaluations with different nodes and bits (see the module docs); it is
/// below 10^-digits, or the call fails with [`BetheError::NoConvergence`].
///
/// # Errors
/// [`BetheError::InvalidState`], [`BetheError::OutOfRange`],
/// [`BetheError::DigitsOutOfRange`], [`BetheError::NoConvergence`].
pub fn ln_k0(n: i64, l: i64, settings: &Settings) -> Result<BetheValue, BetheError> {
    settings.validate()?;
    let (n, l) = validate_state(n, l, "green")?;
    let t0 = Instant::now();
    let sd = StateData::new(n, l)?;
    let digits = settings.digits;
    let goal = 10f64.powi(-(digits as i32));
    // goal bits on ln k0, plus one decimal of margin
    let bits = ((f64::from(digits) + 2.0) * std::f64::consts::LOG2_10).ceil() as u32 + 8;
    let mut guard = pilot_guard(&sd, bits);
    let mut best = f64::INFINITY;
    for level in 0..4u32 {
        // pass A, repeated with more bits while the measured loss eats the guard
        let (va, loss_a, _) = loop {
            let (v, loss, nodes) = evaluate(&sd, bits, level, bits + guard);
            if loss.max(0) as u32 + 16 > guard {
                guard = loss.max(0) as u32 + 40;
                continue;
            }
            break (v, loss, nodes);
        };
        let prec_b = quantize(bits + guard + 32);
        let (vb, loss_b, nodes_b) = evaluate(&sd, bits, level + 1, prec_b);
        if !va.is_finite() || !vb.is_finite() {
            guard += 64;
            continue;
        }
        let diff = Float::with_val(prec_b, &va - &vb).abs().to_f64();
        // floor: rounding level of the working precision after the measured loss
        let floor = 2f64.powi(-(prec_b as i32 - loss_a.max(loss_b).max(0)));
        let err = diff.max(floor) * 2.0;
        best = best.min(err);
        if err < goal {
            let terms = sd.chans.iter().map(|c| c.coef.len()).sum();
            return Ok(BetheValue {
                n,
                l,
                value: vb,
                abs_err: err,
                digits,
                method: Method::Green,
                bits: prec_b,
                nodes: nodes_b,
                terms,
                seconds: t0.elapsed().as_secs_f64(),
            });
        }
    }
    Err(BetheError::NoConvergence {
        method: "green",
        n,
        l,
        achieved: best,
        goal,
    })
}
