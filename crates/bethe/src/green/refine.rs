//! Adaptive refinement of one panel: pairs of Gauss rules at two node
//! counts and two precisions, until their difference meets the panel's
//! share of the goal.

use super::panels::Panel;
use super::pilot::{panel_plan, PilotPoint, GUARD_MARGIN};
use super::rates::{
    even_nodes, finer_nodes, first_panel_nodes, nodes_for, BITS_PER_NODE, MAX_NODES,
};
use super::scale::quantize;
use rug::Float;

/// Most pairs of rules tried on one panel before giving up.
pub(crate) const MAX_TRIES: u32 = 8;

/// The integrals of every component over one panel and the loss (bits) on
/// the scale of the reported quantities.
pub(crate) type PanelIntegrals = (Vec<Float>, i32);

/// An integrand at several working precisions, each built by `build` on
/// first use and kept for the rest of the computation.
pub(crate) struct ByPrecision<T, F> {
    build: F,
    built: Vec<(u32, T)>,
}

impl<T, F: Fn(u32) -> T> ByPrecision<T, F> {
    /// No precision built yet.
    pub(crate) fn new(build: F) -> Self {
        ByPrecision {
            build,
            built: Vec::new(),
        }
    }

    /// The integrand at `prec` bits.
    pub(crate) fn at(&mut self, prec: u32) -> &T {
        let i = match self.built.iter().position(|(p, _)| *p == prec) {
            Some(i) => i,
            None => {
                self.built.push((prec, (self.build)(prec)));
                self.built.len() - 1
            }
        };
        &self.built[i].1
    }
}

/// One converged panel: per component the integral of the finer rule and
/// its error estimate on the scale of the reported quantity, and the nodes
/// and bits it took.
pub(crate) struct PanelResult {
    pub(crate) values: Vec<Float>,
    pub(crate) errs: Vec<f64>,
    pub(crate) nodes: usize,
    pub(crate) prec: u32,
}

/// Where the pairs of rules on one panel start and what they aim at.
#[derive(Debug, Clone, Copy)]
pub(crate) struct PairPlan {
    /// Goal bits of the reported quantity (the working precision is
    /// `bits + guard`).
    pub(crate) bits: u32,
    /// Guard bits to start with (the pilot's plan).
    pub(crate) guard: u32,
    /// Nodes of the cruder rule of the first pair.
    pub(crate) coarse_nodes: usize,
    /// Bits of accuracy assumed per added node when a pair misses the
    /// tolerance (at most [`BITS_PER_NODE`]).
    pub(crate) rate: f64,
    /// The panel's share of the goal, on the scale of the reported
    /// quantities.
    pub(crate) tol: f64,
}

/// Integrates one panel until every component's error (on the scale of its
/// reported quantity: the integral times its entry of `scales`) is below
/// `plan.tol`, starting with `plan.guard` bits on top of `plan.bits` and
/// `plan.coarse_nodes` nodes in the cruder rule. `integrate(prec, nodes)`
/// gives the integrals of every component over the panel with the
/// `nodes`-node rule at `prec` bits and the loss (bits) on the scale of the
/// reported quantities.
///
/// A pair of rules is compared: the cruder (N nodes, p bits) and the finer
/// ([`finer_nodes`], p + 32 bits); their difference estimates the error of
/// the cruder rule, and the finer value is returned. While the estimate
/// misses the tolerance on some component, the next pair reuses the finer
/// rule as its cruder one when its error is expected to meet the tolerance
/// (at `plan.rate` bits per node), and otherwise starts from the node count
/// that rate predicts.
///
/// # Errors
/// `Err(best)` with the smallest error estimate (the largest over the
/// components) reached when the panel does not converge within
/// [`MAX_TRIES`] pairs.
pub(crate) fn converge_panel(
    integrate: &mut dyn FnMut(u32, usize) -> PanelIntegrals,
    scales: &[f64],
    plan: PairPlan,
) -> Result<PanelResult, f64> {
    let PairPlan {
        bits,
        mut guard,
        mut coarse_nodes,
        rate,
        tol,
    } = plan;
    let mut best = f64::INFINITY;
    let mut last_err = f64::INFINITY;
    // the two rules of a pair are at base = bits + guard and base + 32 bits,
    // in either order; `coarse_at_higher_prec` says the cruder one is at
    // base + 32 (after the finer rule of a pair became the cruder one of
    // the next)
    let mut coarse_at_higher_prec = false;
    let mut reused_coarse: Option<PanelIntegrals> = None;
    // a loss that eats the guard the pair actually has (the bits of its
    // lower precision above `bits`, at least `guard`: the meter saw more
    // cancellation than the pilot and the rounding up to whole words left
    // room for), or a non-finite value: the guard to start again with
    let short_of_bits = |loss: i32, v: &[Float], guard: u32| {
        let room = quantize(bits + guard) - bits;
        (loss + 16 > room as i32 || v.iter().any(|x| !x.is_finite()))
            .then(|| (loss.max(guard as i32) + GUARD_MARGIN) as u32)
    };
    for _ in 0..MAX_TRIES {
        let base = quantize(bits + guard);
        let (coarse_prec, fine_prec) = if coarse_at_higher_prec {
            (base + 32, base)
        } else {
            (base, base + 32)
        };
        let (coarse_value, coarse_loss) = match reused_coarse.take() {
            Some(c) => c,
            None => integrate(coarse_prec, coarse_nodes),
        };
        if let Some(g) = short_of_bits(coarse_loss, &coarse_value, guard) {
            guard = g;
            coarse_at_higher_prec = false;
            continue;
        }
        let fine_nodes = finer_nodes(coarse_nodes);
        let (fine_value, fine_loss) = integrate(fine_prec, fine_nodes);
        let loss = coarse_loss.max(fine_loss);
        if let Some(g) = short_of_bits(loss, &fine_value, guard) {
            guard = g;
            coarse_at_higher_prec = false;
            continue;
        }
        // floor: rounding level of the pair after the measured loss
        let floor = 2f64.powi(loss - base as i32);
        let errs: Vec<f64> = coarse_value
            .iter()
            .zip(&fine_value)
            .zip(scales)
            .map(|((c, f), scale)| {
                let diff = Float::with_val(coarse_prec.max(fine_prec), c - f)
                    .abs()
                    .to_f64()
                    * scale;
                diff.max(floor) * 2.0
            })
            .collect();
        let err = errs.iter().copied().fold(0.0f64, f64::max);
        best = best.min(err);
        if err < tol {
            return Ok(PanelResult {
                values: fine_value,
                errs,
                nodes: fine_nodes,
                prec: coarse_prec.max(fine_prec),
            });
        }
        if fine_nodes >= MAX_NODES {
            break;
        }
        if err > last_err * 2f64.powi(-8) {
            // more nodes did not help: rounding, not the rule, sets the
            // difference; start again with more bits
            last_err = f64::INFINITY;
            guard += 32;
            coarse_at_higher_prec = false;
            continue;
        }
        last_err = err;
        // expected error of the finer rule at the assumed rate
        let gained = rate * (fine_nodes - coarse_nodes) as f64;
        if err.log2() - gained < tol.log2() - 4.0 {
            reused_coarse = Some((fine_value, fine_loss));
            coarse_nodes = fine_nodes;
            coarse_at_higher_prec = !coarse_at_higher_prec;
        } else {
            let more = (err.log2() - tol.log2() + 4.0) / rate;
            coarse_nodes = even_nodes(coarse_nodes as f64 + more).max(finer_nodes(fine_nodes));
        }
    }
    Err(best)
}

/// The integrals of all panels, in order.
pub(crate) struct Panels {
    /// Per panel, the integral of every component.
    pub(crate) values: Vec<Vec<Float>>,
    /// Per component, the sum of the panels' error estimates.
    pub(crate) errs: Vec<f64>,
    /// Nodes of the accepted rules.
    pub(crate) nodes: usize,
    /// Highest working precision used.
    pub(crate) prec: u32,
}

/// Integrates `panels` in order, each to an error below `tol` on every
/// component (see [`converge_panel`]): a panel starts from the pilot's plan
/// (its guard, and the nodes its size needs at the panel's expected rate,
/// [`Panel::expected_rate`]; the first panel, with its logarithmic product
/// rule, from the sizes of its two parts, [`first_panel_nodes`]). `integrate(panel, prec, nodes)` gives the
/// integrals of every component over `panel` and the loss.
///
/// # Errors
/// `Err(best)` with the smallest error estimate reached on the first panel
/// that does not converge.
pub(crate) fn integrate_panels(
    panels: &[Panel],
    profile: &[PilotPoint],
    bits: u32,
    tol: f64,
    scales: &[f64],
    integrate: &mut dyn FnMut(&Panel, u32, usize) -> PanelIntegrals,
) -> Result<Panels, f64> {
    let mut out = Panels {
        values: Vec::with_capacity(panels.len()),
        errs: vec![0.0; scales.len()],
        nodes: 0,
        prec: 0,
    };
    for panel in panels {
        let plan = panel_plan(profile, panel);
        let (start, rate) = if panel.first {
            // the product-rule panel: its own start, and the largest rate
            // when more nodes are needed
            let start = first_panel_nodes(plan.magnitude_exp, plan.log_magnitude_exp, tol, 4.0);
            (start, BITS_PER_NODE)
        } else {
            let expected = panel.expected_rate();
            let start = nodes_for(plan.magnitude_exp, tol, expected, 4.0);
            (start, expected.min(BITS_PER_NODE))
        };
        let mut on_panel = |prec: u32, nodes: usize| integrate(panel, prec, nodes);
        let plan = PairPlan {
            bits,
            guard: plan.guard,
            coarse_nodes: start,
            rate,
            tol,
        };
        let done = converge_panel(&mut on_panel, scales, plan)?;
        for (e, x) in out.errs.iter_mut().zip(&done.errs) {
            *e += x;
        }
        out.nodes += done.nodes;
        out.prec = out.prec.max(done.prec);
        out.values.push(done.values);
    }
    Ok(out)
}
