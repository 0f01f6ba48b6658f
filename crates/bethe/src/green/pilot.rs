//! The pilot: the loss to cancellation of the integrand, measured before
//! the quadrature at 24 log-spaced photon energies, and the starting plan
//! (guard bits, size) of each panel drawn from it.

use super::exact_part::ExactState;
use super::meter::Meter;
use super::panels::Panel;
use super::scale::{exp2_of, ln_k0_scale, quantize};
use rayon::prelude::*;
use rug::Float;

/// Number of pilot points.
pub(crate) const PILOT_POINTS: u32 = 24;

/// Safety margin (bits) on top of the worst pilot loss of a panel. The pair
/// of rules of [`super::refine::converge_panel`] differs by 32 bits, so
/// rounding errors the pilot missed show up in their difference.
pub(crate) const GUARD_MARGIN: i32 = 24;

/// One point of the pilot: photon-energy variable, loss bits, and the binary
/// exponent of the node's contribution scale (n^3/2) nu |I(nu)|.
#[derive(Debug, Clone, Copy)]
pub(crate) struct PilotPoint {
    pub(crate) nu: f64,
    pub(crate) loss: i32,
    pub(crate) mag: i32,
}

/// Loss profile of the integrand: evaluates it at [`PILOT_POINTS`]
/// log-spaced photon energies (nu from 1e-5 to 0.99 n) at two precisions
/// (bits + 64 rounded up to 32, and 64 more but at least 256) and compares. Returns the points with nu increasing.
///
/// The loss is measured on the absolute scale of ln k0 (as in
/// [`super::panels::panel_integral`]): the difference of the two
/// evaluations at nu, times (n^3/2) nu (the weight of a log-spaced sample),
/// is the absolute error the node would bring into ln k0 at the lower
/// precision. A node whose value is far below the others may lose all its
/// relative digits without costing any bits of ln k0.
pub(crate) fn pilot_profile(state: &ExactState, bits: u32) -> Vec<PilotPoint> {
    let p_lo = quantize(bits + 64);
    // the higher evaluation only has to be far more accurate than the lower
    // one (by 2^64: the loss is a property of the computation, the same at
    // both precisions); at least 256 bits, so that losses up to about 200
    // bits stay measurable at few digits
    let p_hi = (p_lo + 64).max(256);
    let lo = state.integrand(p_lo);
    let hi = state.integrand(p_hi);
    let scale = ln_k0_scale(state.n);
    profile(state.n, |x| {
        let mut meter = Meter::new();
        let low_value = lo
            .sample(&Float::with_val(p_lo, x), &mut meter, false)
            .value;
        let mut high_meter = Meter::new();
        let high_sample = hi.sample(&Float::with_val(p_hi, x), &mut high_meter, true);
        let high_value = high_sample.value;
        if !low_value.is_finite() || !high_value.is_finite() {
            return (p_lo as i32 + 64, 0);
        }
        // contribution scale of the node: (n^3/2) nu |I| (log-spaced points)
        let weight = Float::with_val(p_hi, x) * scale;
        let mag = exp2_of(&Float::with_val(p_hi, &high_value * &weight));
        let difference =
            Float::with_val(p_hi, Float::with_val(p_hi, &low_value) - &high_value).abs();
        // the first panel splits I into I_an + I_log ln nu: each part
        // carries its own rounding
        let log_part = Float::with_val(p_hi, &high_sample.log_coef * x.ln()) * &weight;
        let metered = meter.loss_bits + mag.max(exp2_of(&log_part));
        if difference.is_zero() {
            return (metered, mag);
        }
        // absolute error on ln k0 at p_lo is |difference| (n^3/2) nu = 2^(loss - p_lo)
        let seen = p_lo as i32 + exp2_of(&Float::with_val(p_hi, &difference * &weight));
        (seen.max(metered), mag)
    })
}

/// The [`PILOT_POINTS`] photon-energy points of the pilot for principal
/// quantum number `n`: log-spaced over [1e-5, 0.99 n] (down to the smallest
/// nodes of the first panel), where the losses vary smoothly with nu; the
/// odd factor keeps the points off the integers.
fn pilot_points(n: u32) -> Vec<f64> {
    let lo_nu = 1e-5;
    let hi_nu = 0.99 * f64::from(n);
    let count = PILOT_POINTS;
    (0..count)
        .map(|i| {
            let t = f64::from(i) / f64::from(count - 1);
            lo_nu * (hi_nu / lo_nu).powf(t) * 0.998_7
        })
        .collect()
}

/// A loss profile: `measure(nu)` gives (loss bits, magnitude exponent) at
/// each pilot point (see [`pilot_profile`]; evaluated in parallel). Returns
/// the points with nu increasing.
pub(crate) fn profile(n: u32, measure: impl Fn(f64) -> (i32, i32) + Sync) -> Vec<PilotPoint> {
    let points = pilot_points(n);
    let found: Vec<(i32, i32)> = points.par_iter().map(|&x| measure(x)).collect();
    points
        .into_iter()
        .zip(found)
        .map(|(nu, (loss, mag))| PilotPoint { nu, loss, mag })
        .collect()
}

/// Pilot points that speak for a panel: those within a factor 2 of it (all
/// points below 2 nu1 for the first panel), else the nearest one.
fn panel_points(profile: &[PilotPoint], panel: &Panel) -> Vec<PilotPoint> {
    let (lo, hi) = (panel.start / 2.0, panel.end * 2.0);
    let inside: Vec<PilotPoint> = profile
        .iter()
        .filter(|p| (lo..=hi).contains(&p.nu) || (panel.first && p.nu <= hi))
        .copied()
        .collect();
    if !inside.is_empty() {
        return inside;
    }
    let mid = 0.5 * (panel.start + panel.end);
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

/// Starting plan of one panel, drawn from the pilot.
#[derive(Debug, Clone, Copy)]
pub(crate) struct PanelPlan {
    /// Guard bits: the worst pilot loss near the panel plus [`GUARD_MARGIN`].
    pub(crate) guard: u32,
    /// Binary exponent of the panel's expected contribution to ln k0.
    pub(crate) magnitude_exp: i32,
}

/// The starting plan of `panel`.
pub(crate) fn panel_plan(profile: &[PilotPoint], panel: &Panel) -> PanelPlan {
    let pts = panel_points(profile, panel);
    let worst = pts.iter().map(|p| p.loss).max().unwrap_or(0);
    // the panel's contribution is about its largest node scale, times the
    // ratio of its width to the log-spacing of the points (at most 2 here)
    let magnitude_exp = pts.iter().map(|p| p.mag).max().unwrap_or(0) + 1;
    let guard = (worst.max(0) + GUARD_MARGIN) as u32;
    PanelPlan {
        guard,
        magnitude_exp,
    }
}
