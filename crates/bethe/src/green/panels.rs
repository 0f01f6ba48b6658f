//! The panels of the nu integral and the integral of the sampled integrand
//! over one panel with one Gauss rule.

use super::integrand::Integrand;
use super::meter::Meter;
use super::quad;
use super::scale::{exp2_of, ln_k0_scale_exp};
use rayon::prelude::*;
use rug::Float;

/// One quadrature panel [start, end] of the nu integral.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Panel {
    /// Left end (0 for the first panel).
    pub(crate) start: f64,
    /// Right end.
    pub(crate) end: f64,
    /// The first panel [0, nu1], integrated with the logarithmic product rule.
    pub(crate) first: bool,
}

/// The first panel [0, nu1] and the panels on [nu1, n] for the state of
/// principal quantum number `n` whose lowest lower state (if any) has
/// principal quantum number `first_lower`.
///
/// Each panel [start, end] after the first satisfies end <= 2 start (the
/// branch point nu = 0 is at least one width away) and
/// n + 1 - end >= end - start (so is the pole of the first upper state at
/// nu = n + 1).
pub(crate) fn panel_layout(n: u32, first_lower: Option<u32>) -> Vec<Panel> {
    let nf = f64::from(n);
    // The first panel (logarithmic product rule) is kept short: its
    // integrand pieces I_an, I_log have singularities at distances of order
    // one (lower-state structure, large L), and it stops short of the first
    // lower-state pole; the odd factor keeps nodes and boundaries off the
    // integers (poles of single terms).
    let mut nu1 = (0.3 * nf).min(0.5) * 1.013_7;
    if let Some(p) = first_lower {
        nu1 = nu1.min((f64::from(p) - 0.5) * 0.987_3);
    }
    let mut out = vec![Panel {
        start: 0.0,
        end: nu1,
        first: true,
    }];
    let mut start = nu1;
    while start < nf {
        let mut end = (2.0 * start).min((nf + 1.0 + start) / 2.0);
        if end > nf - 1e-9 || nf - end < 0.05 * (end - start) {
            end = nf;
        }
        out.push(Panel {
            start,
            end,
            first: false,
        });
        start = end;
    }
    out
}

/// The integral of the sampled integrand over `panel` with the `nodes`-node
/// rule at the integrand's precision. Returns (integral, loss bits).
///
/// The loss is on the absolute scale of ln k0: a node whose computation
/// lost `k` bits to cancellation and whose contribution to ln k0 is about
/// 2^e has a rounding error of about 2^(k + e - prec) on ln k0, and the loss
/// reported is the largest k + e over the nodes, so that 2^(loss - prec)
/// is the rounding level of the panel (up to the number of nodes).
pub(crate) fn panel_integral(integrand: &Integrand, panel: &Panel, nodes: usize) -> (Float, i32) {
    let prec = integrand.prec();
    let scale_exp = ln_k0_scale_exp(integrand.n);
    let rule = quad::rule(nodes, prec);
    let start = Float::with_val(prec, panel.start);
    // width in MPFR: the f64 difference would leave gaps between panels
    let width = Float::with_val(prec, Float::with_val(prec, panel.end) - &start);
    // per node: (weighted contribution, loss on the scale of ln k0)
    let contributions: Vec<(Float, i32)> = if panel.first {
        // int_0^nu1 I = nu1 [sum w_i I_an + sum (W_i + w_i ln nu1) I_log]
        let ln_width = Float::with_val(prec, width.ln_ref());
        rule.x
            .par_iter()
            .zip(rule.w.par_iter().zip(rule.wlog.par_iter()))
            .map(|(x, (w, w_log))| {
                let nu = Float::with_val(prec, x * &width);
                let mut meter = Meter::new();
                let sample = integrand.sample(&nu, &mut meter, true);
                let ln_nu = Float::with_val(prec, nu.ln_ref());
                let analytic = Float::with_val(
                    prec,
                    &sample.value - Float::with_val(prec, &sample.log_coef * &ln_nu),
                );
                let log_weight =
                    Float::with_val(prec, w_log + Float::with_val(prec, w * &ln_width));
                let analytic_part = Float::with_val(prec, &analytic * w);
                let log_part = Float::with_val(prec, &sample.log_coef * &log_weight);
                let size =
                    exp2_of(&analytic_part).max(exp2_of(&log_part)) + exp2_of(&width) + scale_exp;
                (analytic_part + log_part, meter.loss_bits + size)
            })
            .collect()
    } else {
        rule.x
            .par_iter()
            .zip(rule.w.par_iter())
            .map(|(x, w)| {
                let nu = Float::with_val(prec, &start + Float::with_val(prec, x * &width));
                let mut meter = Meter::new();
                let sample = integrand.sample(&nu, &mut meter, false);
                let weighted = Float::with_val(prec, &sample.value * w);
                let size = exp2_of(&weighted) + exp2_of(&width) + scale_exp;
                (weighted, meter.loss_bits + size)
            })
            .collect()
    };
    let mut sum = Float::with_val(prec, 0);
    let mut loss = i32::MIN;
    for (contribution, node_loss) in &contributions {
        sum += contribution;
        loss = loss.max(*node_loss);
    }
    (sum * width, loss)
}
