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
//! Panel by panel: a pair of Gauss rules (N nodes at p bits, and about
//! 1.25 N + 4 nodes at p + 32 bits) is compared; the finer value is kept and
//! |difference| estimates the error of the cruder one, so it is conservative
//! for the value kept as long as the rule converges. Each panel must meet an
//! equal share of the goal; the estimate returned is the sum over panels. N
//! starts from the panel's size (seen by a pilot) and the convergence rate
//! seen on the previous panel, and grows (at an assumed 4 bits per node)
//! while the difference misses the share.
//!
//! Working bits p = goal bits + guard, per panel. The guard is the loss to
//! cancellation measured by a pilot (the integrand at 20 photon energies at
//! two precisions), on the absolute scale of ln k0, plus a margin; the
//! meter of every node ([`meter`]) raises it when it sees more, and the
//! 32-bit offset within a pair exposes rounding errors both missed. A panel
//! that does not converge makes the call fail with
//! [`BetheError::NoConvergence`]; no number is returned then.

pub mod channel;
pub mod integrand;
pub mod meixner;
pub mod meter;
pub mod quad;
pub mod stieltjes;

#[cfg(test)]
mod tests;

use crate::settings::{meet_significant, validate_state, Goal};
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

/// One quadrature panel of the nu integral.
#[derive(Debug, Clone, Copy)]
struct Panel {
    /// Left end (0 for the first panel).
    b: f64,
    /// Right end.
    e: f64,
    /// The first panel [0, nu1], integrated with the logarithmic product rule.
    first: bool,
}

/// The first panel [0, nu1] and the panels on [nu1, n]: each panel [b, e]
/// satisfies e <= 2b (the branch point nu = 0 is at least one width away) and
/// n + 1 - e >= e - b (so is the pole at nu = n + 1).
fn panels(n: u32, first_pole: Option<u32>) -> Vec<Panel> {
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
    let mut out = vec![Panel {
        b: 0.0,
        e: nu1,
        first: true,
    }];
    let mut b = nu1;
    while b < nf {
        let mut e = (2.0 * b).min((nf + 1.0 + b) / 2.0);
        if e > nf - 1e-9 || nf - e < 0.05 * (e - b) {
            e = nf;
        }
        out.push(Panel { b, e, first: false });
        b = e;
    }
    out
}

/// Assumed convergence rate of Gauss–Legendre on a panel, in bits per node:
/// with the nearest singularity one panel width beyond an end (the panel
/// layout of [`panels`]) the error falls like (3 + sqrt 8)^(-2N), about 5.1
/// bits per node; 4 leaves room for the logarithmic first panel and for
/// constants.
const BITS_PER_NODE: f64 = 4.0;

/// Fewest and most nodes on one panel.
const MIN_NODES: usize = 4;
const MAX_NODES: usize = 600;

/// Most pairs of rules tried on one panel before giving up.
const MAX_TRIES: u32 = 8;

/// Rounds a node count up to an even number (no node at a panel midpoint)
/// within [MIN_NODES, MAX_NODES].
fn even_nodes(k: f64) -> usize {
    let k = (k.ceil().max(0.0) as usize).clamp(MIN_NODES, MAX_NODES);
    k + k % 2
}

/// The finer rule of a pair whose cruder rule has `nodes` nodes: enough
/// more nodes that its error is far below the cruder one's, so that their
/// difference estimates the cruder rule's error.
fn finer_nodes(nodes: usize) -> usize {
    even_nodes((nodes + (nodes / 4).max(4)) as f64)
}

/// Nodes expected to bring an integral of size about 2^mag_exp to an
/// absolute error below `tol`, at `rate` bits per node, with `margin` bits
/// to spare.
fn nodes_for(mag_exp: i32, tol: f64, rate: f64, margin: f64) -> usize {
    let bits = f64::from(mag_exp) - tol.log2() + margin;
    even_nodes(bits / rate)
}

/// Default rate (bits per node) for the first guess on a panel; later
/// panels use the rate seen on the previous one (geometrically alike panels
/// converge alike), within [`BITS_PER_NODE`] and [`MAX_RATE`].
const FIRST_GUESS_RATE: f64 = 5.0;
/// The first guess on the first panel (logarithmic product rule, slower).
const FIRST_PANEL_RATE: f64 = 3.5;
const MAX_RATE: f64 = 12.0;

/// Binary exponent of |x| (x = m 2^e, 1/2 <= |m| < 1), with zero and
/// non-finite values mapped to a very negative exponent.
fn exp2_of(x: &Float) -> i32 {
    x.get_exp().unwrap_or(-(1 << 20))
}

/// The factor n^3/2 that turns the integral into ln k0.
fn ln_k0_scale(n: u32) -> f64 {
    f64::from(n).powi(3) / 2.0
}

/// Binary exponent of [`ln_k0_scale`].
fn ln_k0_scale_exp(n: u32) -> i32 {
    ln_k0_scale(n).log2().ceil() as i32
}

/// The integral of the sampled integrand over one panel with `nodes` nodes at
/// `prob`'s precision. Returns (integral, loss bits).
///
/// The loss is on the absolute scale of ln k0: a node whose computation
/// lost `k` bits to cancellation and whose contribution to ln k0 is about
/// 2^e has a rounding error of about 2^(k + e - prec) on ln k0, and the loss
/// reported is the largest k + e over the nodes, so that 2^(loss - prec)
/// is the rounding level of the panel (up to the number of nodes).
fn panel_integral(prob: &Problem, panel: &Panel, nodes: usize) -> (Float, i32) {
    let prec = prob.two_dsum.prec();
    let scale_exp = ln_k0_scale_exp(prob.n);
    let r = quad::rule(nodes, prec);
    let bf = Float::with_val(prec, panel.b);
    // width in MPFR: the f64 difference would leave gaps between panels
    let h = Float::with_val(prec, Float::with_val(prec, panel.e) - &bf);
    let parts: Vec<(Float, i32)> = if panel.first {
        // int_0^nu1 I = nu1 [sum w_i I_an + sum (W_i + w_i ln nu1) I_log]
        let ln_h = Float::with_val(prec, h.ln_ref());
        r.x.par_iter()
            .zip(r.w.par_iter().zip(r.wlog.par_iter()))
            .map(|(x, (w, wl))| {
                let nu = Float::with_val(prec, x * &h);
                let mut m = Meter::new();
                let s = prob.sample(&nu, &mut m);
                let ln_nu = Float::with_val(prec, nu.ln_ref());
                let an =
                    Float::with_val(prec, &s.value - Float::with_val(prec, &s.log_coef * &ln_nu));
                let wlt = Float::with_val(prec, wl + Float::with_val(prec, w * &ln_h));
                let pa = Float::with_val(prec, &an * w);
                let pl = Float::with_val(prec, &s.log_coef * &wlt);
                let big = exp2_of(&pa).max(exp2_of(&pl)) + exp2_of(&h) + scale_exp;
                (pa + pl, m.loss_bits + big)
            })
            .collect()
    } else {
        r.x.par_iter()
            .zip(r.w.par_iter())
            .map(|(x, w)| {
                let nu = Float::with_val(prec, &bf + Float::with_val(prec, x * &h));
                let mut m = Meter::new();
                let s = prob.sample(&nu, &mut m);
                let c = Float::with_val(prec, &s.value * w);
                let big = exp2_of(&c) + exp2_of(&h) + scale_exp;
                (c, m.loss_bits + big)
            })
            .collect()
    };
    let mut sum = Float::with_val(prec, 0);
    let mut loss = i32::MIN;
    for (c, l) in &parts {
        sum += c;
        loss = loss.max(*l);
    }
    (sum * h, loss)
}

/// Rounds a precision up to a multiple of 32 bits.
fn quantize(prec: u32) -> u32 {
    prec.div_ceil(32) * 32
}

/// One point of the pilot: photon-energy variable, loss bits, and the binary
/// exponent of the node's contribution scale (n^3/2) nu |I(nu)|.
#[derive(Debug, Clone, Copy)]
struct PilotPoint {
    nu: f64,
    loss: i32,
    mag: i32,
}

/// Loss profile of the integrand: evaluates it at a spread of photon
/// energies at two precisions and compares. Returns the points with nu
/// increasing.
///
/// The loss is measured on the absolute scale of ln k0 (as in
/// [`panel_integral`]): the difference of the two evaluations at nu, times
/// (n^3/2) nu (the weight of a log-spaced sample), is the absolute error the
/// node would bring into ln k0 at the lower precision. A node whose value is
/// far below the others may lose all its relative digits without costing
/// any bits of ln k0.
fn pilot_profile(sd: &StateData, bits: u32) -> Vec<PilotPoint> {
    let p_lo = quantize(bits + 64);
    let p_hi = p_lo + 128;
    let lo = sd.problem(p_lo);
    let hi = sd.problem(p_hi);
    let nf = f64::from(sd.n);
    let scale = ln_k0_scale(sd.n);
    // log-spaced over [1e-5, 0.99 n] (down to the smallest nodes of the
    // first panel): the losses vary smoothly with nu; the odd factor keeps
    // the points off the integers
    let lo_nu = 1e-5;
    let hi_nu = 0.99 * nf;
    let count = 24;
    let points: Vec<f64> = (0..count)
        .map(|i| {
            let t = f64::from(i) / f64::from(count - 1);
            lo_nu * (hi_nu / lo_nu).powf(t) * 0.998_7
        })
        .collect();
    let found: Vec<(i32, i32)> = points
        .par_iter()
        .map(|&x| {
            let mut m = Meter::new();
            let a = lo.sample(&Float::with_val(p_lo, x), &mut m).value;
            let mut m2 = Meter::new();
            let hi_sample = hi.sample(&Float::with_val(p_hi, x), &mut m2);
            let b = hi_sample.value;
            if !a.is_finite() || !b.is_finite() {
                return (p_lo as i32 + 64, 0);
            }
            // contribution scale of the node: (n^3/2) nu |I| (log-spaced points)
            let weight = Float::with_val(p_hi, x) * scale;
            let mag = exp2_of(&Float::with_val(p_hi, &b * &weight));
            let d = Float::with_val(p_hi, Float::with_val(p_hi, &a) - &b).abs();
            // the first panel splits I into I_an + I_log ln nu: each part
            // carries its own rounding
            let log_part = Float::with_val(p_hi, &hi_sample.log_coef * x.ln()) * &weight;
            let metered = m.loss_bits + mag.max(exp2_of(&log_part));
            if d.is_zero() {
                return (metered, mag);
            }
            // absolute error on ln k0 at p_lo is |d| (n^3/2) nu = 2^(loss - p_lo)
            let seen = p_lo as i32 + exp2_of(&Float::with_val(p_hi, &d * &weight));
            (seen.max(metered), mag)
        })
        .collect();
    points
        .into_iter()
        .zip(found)
        .map(|(nu, (loss, mag))| PilotPoint { nu, loss, mag })
        .collect()
}

/// Pilot points that speak for a panel: those within a factor 2 of it (all
/// points below 2 nu1 for the first panel), else the nearest one.
fn panel_points(profile: &[PilotPoint], panel: &Panel) -> Vec<PilotPoint> {
    let (lo, hi) = (panel.b / 2.0, panel.e * 2.0);
    let inside: Vec<PilotPoint> = profile
        .iter()
        .filter(|p| (lo..=hi).contains(&p.nu) || (panel.first && p.nu <= hi))
        .copied()
        .collect();
    if !inside.is_empty() {
        return inside;
    }
    let mid = 0.5 * (panel.b + panel.e);
    profile
        .iter()
        .min_by(|a, b| {
            let da = (a.nu - mid).abs();
            let db = (b.nu - mid).abs();
            da.partial_cmp(&db).unwrap_or(std::cmp::Ordering::Equal)
        })
        .copied()
        .into_iter()
        .collect()
}

/// Safety margin (bits) on top of the worst pilot loss of a panel. The pair
/// of rules of [`converge_panel`] differs by 32 bits, so rounding errors the
/// pilot missed show up in their difference.
const GUARD_MARGIN: i32 = 24;

/// Starting plan of one panel: (guard bits, pilot magnitude exponent of
/// the panel's contribution to ln k0).
fn panel_plan(profile: &[PilotPoint], panel: &Panel) -> (u32, i32) {
    let pts = panel_points(profile, panel);
    let worst = pts.iter().map(|p| p.loss).max().unwrap_or(0);
    // the panel's contribution is about its largest node scale, times the
    // ratio of its width to the log-spacing of the points (at most 2 here)
    let mag = pts.iter().map(|p| p.mag).max().unwrap_or(0) + 1;
    let guard = (worst.max(0) + GUARD_MARGIN) as u32;
    (guard, mag)
}

/// Problems at several working precisions, built on first use.
struct Problems<'a> {
    sd: &'a StateData,
    built: Vec<Problem>,
}

impl<'a> Problems<'a> {
    fn new(sd: &'a StateData) -> Self {
        Problems {
            sd,
            built: Vec::new(),
        }
    }

    fn at(&mut self, prec: u32) -> &Problem {
        let i = match self.built.iter().position(|p| p.two_dsum.prec() == prec) {
            Some(i) => i,
            None => {
                self.built.push(self.sd.problem(prec));
                self.built.len() - 1
            }
        };
        &self.built[i]
    }
}

/// One converged panel: the integral of the finer rule, its error estimate
/// on the scale of ln k0, and the nodes and bits it took.
struct PanelResult {
    value: Float,
    err: f64,
    nodes: usize,
    prec: u32,
    /// Bits per node the cruder rule of the accepted pair reached relative
    /// to the panel's size (a lower bound of the convergence rate).
    rate: f64,
}

/// Integrates one panel to an error (on the scale of ln k0) below `tol`.
///
/// A pair of rules is compared: the cruder (N nodes, p bits) and the finer
/// ([`finer_nodes`], p + 32 bits); their difference estimates the error of
/// the cruder rule, and the finer value is returned. While the estimate
/// misses `tol`, the next pair reuses the finer rule as its cruder one when
/// its error is expected to meet the tolerance (at [`BITS_PER_NODE`]), and
/// otherwise starts from the node count that rate predicts.
///
/// # Errors
/// `Err(best)` with the smallest error estimate reached when the panel does
/// not converge within [`MAX_TRIES`] pairs.
fn converge_panel(
    probs: &mut Problems,
    panel: &Panel,
    bits: u32,
    mut guard: u32,
    mut nodes_a: usize,
    tol: f64,
) -> Result<PanelResult, f64> {
    let scale = ln_k0_scale(probs.sd.n);
    let mut best = f64::INFINITY;
    let mut last_err = f64::INFINITY;
    // the two rules of a pair are at base = bits + guard and base + 32 bits,
    // in either order; `a_high` says the cruder one is at base + 32
    let mut a_high = false;
    let mut coarse: Option<(Float, i32)> = None;
    // a loss that eats the guard (the meter saw more cancellation than the
    // pilot), or a non-finite value: the guard to start again with
    let short_of_bits = |loss: i32, v: &Float, guard: u32| {
        (loss + 16 > guard as i32 || !v.is_finite())
            .then(|| (loss.max(guard as i32) + GUARD_MARGIN) as u32)
    };
    for _ in 0..MAX_TRIES {
        let base = quantize(bits + guard);
        let (prec_a, prec_b) = if a_high {
            (base + 32, base)
        } else {
            (base, base + 32)
        };
        let (va, loss_a) = match coarse.take() {
            Some(c) => c,
            None => panel_integral(probs.at(prec_a), panel, nodes_a),
        };
        if let Some(g) = short_of_bits(loss_a, &va, guard) {
            guard = g;
            a_high = false;
            continue;
        }
        let nodes_b = finer_nodes(nodes_a);
        let (vb, loss_b) = panel_integral(probs.at(prec_b), panel, nodes_b);
        let loss = loss_a.max(loss_b);
        if let Some(g) = short_of_bits(loss, &vb, guard) {
            guard = g;
            a_high = false;
            continue;
        }
        let diff = Float::with_val(prec_a.max(prec_b), &va - &vb)
            .abs()
            .to_f64()
            * scale;
        // floor: rounding level of the pair after the measured loss
        let floor = 2f64.powi(loss - base as i32);
        let err = diff.max(floor) * 2.0;
        best = best.min(err);
        if err < tol {
            let size = Float::with_val(prec_b, vb.abs_ref()).to_f64() * scale;
            let rate = (size.max(err).log2() - err.log2()) / nodes_a as f64;
            return Ok(PanelResult {
                value: vb,
                err,
                nodes: nodes_b,
                prec: prec_a.max(prec_b),
                rate,
            });
        }
        if nodes_b >= MAX_NODES {
            break;
        }
        if err > last_err * 2f64.powi(-8) {
            // more nodes did not help: rounding, not the rule, sets the
            // difference; start again with more bits
            last_err = f64::INFINITY;
            guard += 32;
            a_high = false;
            continue;
        }
        last_err = err;
        // expected error of the finer rule at the assumed rate
        let gained = BITS_PER_NODE * (nodes_b - nodes_a) as f64;
        if err.log2() - gained < tol.log2() - 4.0 {
            coarse = Some((vb, loss_b));
            nodes_a = nodes_b;
            a_high = !a_high;
        } else {
            let more = (err.log2() - tol.log2() + 4.0) / BITS_PER_NODE;
            nodes_a = even_nodes(nodes_a as f64 + more).max(finer_nodes(nodes_b));
        }
    }
    Err(best)
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
    if settings.goal == Goal::Significant {
        return meet_significant(n, l, settings, |s| ln_k0(n.into(), l.into(), s));
    }
    let t0 = Instant::now();
    let sd = StateData::new(n, l)?;
    let digits = settings.digits;
    let goal = 10f64.powi(-(digits as i32));
    // goal bits on ln k0, plus one decimal of margin
    let bits = ((f64::from(digits) + 2.0) * std::f64::consts::LOG2_10).ceil() as u32 + 8;
    let profile = pilot_profile(&sd, bits);
    let first_pole = sd
        .chans
        .iter()
        .flat_map(|c| c.poles.iter().map(|p| p.nprime))
        .min();
    let pans = panels(sd.n, first_pole);
    // each panel gets an equal share of the error budget
    let tol = goal / pans.len() as f64;
    let mut probs = Problems::new(&sd);
    let mut values: Vec<Float> = Vec::with_capacity(pans.len());
    let (mut err, mut nodes, mut prec) = (0.0, 0usize, 0u32);
    let mut rate = FIRST_GUESS_RATE;
    for panel in &pans {
        let (guard, mag) = panel_plan(&profile, panel);
        let start = if panel.first {
            // the product-rule panel converges more slowly (log factor)
            nodes_for(mag, tol, FIRST_PANEL_RATE, 4.0)
        } else {
            nodes_for(mag, tol, rate, 4.0)
        };
        match converge_panel(&mut probs, panel, bits, guard, start, tol) {
            Ok(r) => {
                if !panel.first {
                    rate = r.rate.clamp(BITS_PER_NODE, MAX_RATE);
                }
                err += r.err;
                nodes += r.nodes;
                prec = prec.max(r.prec);
                values.push(r.value);
            }
            Err(panel_best) => {
                return Err(BetheError::NoConvergence {
                    method: "green",
                    n,
                    l,
                    achieved: panel_best * pans.len() as f64,
                    goal,
                })
            }
        }
    }
    // panels may differ in precision: sum at the highest
    let mut s = sd.exact_part(prec);
    for v in &values {
        s -= v;
    }
    let n3 = u64::from(sd.n).pow(3);
    let value = Float::with_val(prec, s * n3 / 2u32);
    if err < goal {
        let terms = sd.chans.iter().map(|c| c.coef.len()).sum();
        return Ok(BetheValue {
            n,
            l,
            value,
            abs_err: err,
            digits,
            goal: Goal::Absolute,
            method: Method::Green,
            bits: prec,
            nodes,
            terms,
            seconds: t0.elapsed().as_secs_f64(),
        });
    }
    Err(BetheError::NoConvergence {
        method: "green",
        n,
        l,
        achieved: err,
        goal,
    })
}
