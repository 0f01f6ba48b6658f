//! The pilot: the loss to cancellation of the integrand, measured before
//! the quadrature at a few photon energies placed by panel, and the
//! starting plan (guard bits, size) of each panel drawn from it.
//!
//! The points: in the first panel [0, nu1], [`FIRST_PANEL_POINTS`]
//! log-spaced from about the smallest node its rule would have with twice
//! the nodes the goal asks for (the loss grows slowly as nu -> 0, and
//! points further down would measure losses no node sees); on the mapped
//! panels, both ends of each panel and equally spaced points in u between
//! them, at most [`MAX_U_SPACING`] apart (the midpoint of every panel longer
//! than that; 5 points in all at n = 1, 8 at n = 20, 10 from n = 60 to 200,
//! 12 at n = 1000). Each point is
//! evaluated at two precisions, the higher one at least [`HIGHER_BY`] bits
//! above the lower one and [`METER_HEADROOM`] bits above the loss the lower
//! one's meter saw, and the difference is the loss; where the higher
//! evaluation kept too few bits, it is repeated at twice its precision. A
//! panel's guard is the worst loss of its own points (ends included) plus
//! [`GUARD_MARGIN`]; the meter of every node of the quadrature raises it
//! when it sees more. Each point also records the size of the logarithmic
//! part of the first panel's integrand, which sets the first panel's start
//! ([`super::rates::first_panel_nodes`]).

use super::exact_part::ExactState;
use super::integrand::Integrand;
use super::meter::Meter;
use super::panels::Panel;
use super::rates::FIRST_PANEL_RATE;
use super::scale::{exp2_of, ln_k0_scale, quantize};
use rayon::prelude::*;
use rug::Float;

/// Pilot points in the first panel (log-spaced from about its smallest
/// node to its right end).
pub(crate) const FIRST_PANEL_POINTS: u32 = 4;

/// Largest spacing in u of the pilot points on the mapped panels (the
/// points include both ends of every mapped panel, so a panel of the
/// longest length, 4, has its midpoint as the one point inside). The
/// guards and the printed values of the rows n = 100 and 150 at 20 digits
/// are those of a spacing of 1.5 (one point more per panel where the
/// panels are longer than 3: n = 3 to 5, 15 to 38 and from 64 on) but for
/// one state whose guard fell by a word (benches/README.md, "Tenth
/// round").
pub(crate) const MAX_U_SPACING: f64 = 2.0;

/// Bits by which the higher evaluation of a pilot point exceeds the lower
/// one at least: its rounding error is 2^-32 of the lower one's, so their
/// difference is the lower one's error (rounding errors grow linearly
/// through the computation, so this holds even when the lower one kept no
/// correct bit).
pub(crate) const HIGHER_BY: u32 = 32;

/// Bits the higher evaluation of a pilot point keeps above the loss the
/// lower one's meter saw (relative to the point's size), so that it is not
/// saturated ([`SATURATION_BITS`]) where the lower one lost most of its
/// bits: the meter records the cancellations it can see and has fallen
/// short of the measured loss by up to 64 bits (rows n = 100 to 200 at 20
/// digits, benches/README.md, "Tenth round"), plus the 16 bits the higher
/// evaluation must keep. Without it, such a point was evaluated at
/// p + 32 bits only to find it saturated and evaluate it again at twice
/// that. The loss is still the measured difference; this only picks the
/// precision of the reference.
pub(crate) const METER_HEADROOM: u32 = 80;

/// Safety margin (bits) on top of the worst pilot loss of a panel. The pair
/// of rules of [`super::refine::converge_panel`] differs by 32 bits, so
/// rounding errors the pilot missed show up in their difference.
pub(crate) const GUARD_MARGIN: i32 = 24;

/// Most times the higher evaluation of a pilot point is repeated at twice
/// its precision when it kept fewer than [`SATURATION_BITS`] bits.
const MAX_REMEASURE: u32 = 4;

/// A higher evaluation that kept fewer bits than this (relative to the
/// point's own size) gives no reliable size of the point, and its rounding
/// may no longer be small against the lower one's: it is repeated at a
/// higher precision.
const SATURATION_BITS: i32 = 16;

/// One point of the pilot: photon-energy variable, loss bits, and the binary
/// exponent of the node's contribution scale (n^3/2) nu |I(nu)|.
#[derive(Debug, Clone, Copy)]
pub(crate) struct PilotPoint {
    pub(crate) nu: f64,
    pub(crate) loss: i32,
    pub(crate) mag: i32,
    /// Binary exponent of the logarithmic part's contribution (n^3/2) nu
    /// |I_log ln nu| at a point of the first panel (the largest over the
    /// components); far below any other size elsewhere.
    pub(crate) log_mag: i32,
}

/// What one pair of evaluations at a pilot point measured: the loss and
/// magnitude of [`PilotPoint`], and whether the higher evaluation kept too
/// few bits for them to be trusted (it must be repeated at a higher
/// precision).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Measured {
    pub(crate) loss: i32,
    pub(crate) mag: i32,
    pub(crate) log_mag: i32,
    pub(crate) saturated: bool,
}

/// The binary exponent [`PilotPoint::log_mag`] records where there is no
/// logarithmic part.
pub(crate) const NO_LOG_PART: i32 = -(1 << 20);

/// Loss profile of the integrand: evaluates it at the points of
/// [`pilot_points`] at two precisions (p = bits + 64 rounded up to 32, and
/// the larger of p + [`HIGHER_BY`] and the lower evaluation's metered loss
/// plus [`METER_HEADROOM`], rounded up to 32) and compares. Rounding errors
/// grow linearly through the computation, so the difference is the lower
/// evaluation's error even when that one kept no correct bit; but where the
/// higher evaluation kept fewer than [`SATURATION_BITS`] bits, it is
/// repeated at twice its precision (at most [`MAX_REMEASURE`] times), so
/// that the size of every point is measured too. Returns the points with nu
/// increasing.
///
/// The loss is measured on the absolute scale of ln k0 (as in
/// [`super::panels::panel_integral`]): the difference of the two
/// evaluations at nu, times (n^3/2) nu (the weight of a log-spaced sample),
/// is the absolute error the node would bring into ln k0 at the lower
/// precision. A node whose value is far below the others may lose all its
/// relative digits without costing any bits of ln k0.
pub(crate) fn pilot_profile(state: &ExactState, panels: &[Panel], bits: u32) -> Vec<PilotPoint> {
    let p_lo = quantize(bits + 64);
    let lo = state.integrand(p_lo);
    let hi = state.integrand(p_lo + HIGHER_BY);
    let scale = ln_k0_scale(state.n);
    profile(panels, bits, |x, first| {
        let low = LowSample::at(&lo, x);
        let headroom = quantize(low.meter_loss.max(0) as u32 + METER_HEADROOM);
        let mut p_hi = (p_lo + HIGHER_BY).max(headroom);
        let mut at = if p_hi == hi.prec() {
            measure_point(&low, &hi, x, first, scale)
        } else {
            measure_point(&low, &state.integrand(p_hi), x, first, scale)
        };
        for _ in 0..MAX_REMEASURE {
            if !at.saturated {
                break;
            }
            p_hi *= 2;
            at = measure_point(&low, &state.integrand(p_hi), x, first, scale);
        }
        at
    })
}

/// The lower evaluation of a pilot point: I'(nu) at the precision of its
/// integrand, and the loss its meter saw.
struct LowSample {
    value: Float,
    meter_loss: i32,
}

impl LowSample {
    fn at(lo: &Integrand, x: f64) -> Self {
        let mut meter = Meter::new();
        let value = lo
            .sample(&Float::with_val(lo.prec(), x), &mut meter, false)
            .value;
        LowSample {
            value,
            meter_loss: meter.loss_bits,
        }
    }
}

/// The lower evaluation `low` at `x` against the higher one by `hi` (at
/// least [`HIGHER_BY`] bits more); `first` asks for the logarithmic
/// coefficient (the first panel splits I into I_an + I_log ln nu, and each
/// part carries its own rounding). `scale` is n^3/2.
fn measure_point(low: &LowSample, hi: &Integrand, x: f64, first: bool, scale: f64) -> Measured {
    let (p_lo, p_hi) = (low.value.prec(), hi.prec());
    let mut high_meter = Meter::new();
    let high_sample = hi.sample(&Float::with_val(p_hi, x), &mut high_meter, first);
    let high_value = high_sample.value;
    if !low.value.is_finite() || !high_value.is_finite() {
        return Measured {
            loss: p_lo as i32 + 64,
            mag: 0,
            log_mag: NO_LOG_PART,
            saturated: false,
        };
    }
    // contribution scale of the node: (n^3/2) nu |I| (log-spaced points)
    let weight = Float::with_val(p_hi, x) * scale;
    let mag = exp2_of(&Float::with_val(p_hi, &high_value * &weight));
    let log_part = Float::with_val(p_hi, &high_sample.log_coef * x.ln()) * &weight;
    let log_mag = if first {
        exp2_of(&log_part).max(NO_LOG_PART)
    } else {
        NO_LOG_PART
    };
    let size = mag.max(exp2_of(&log_part));
    let metered = low.meter_loss + size;
    let difference = Float::with_val(p_hi, Float::with_val(p_hi, &low.value) - &high_value).abs();
    if difference.is_zero() {
        return Measured {
            loss: metered,
            mag,
            log_mag,
            saturated: false,
        };
    }
    // absolute error on ln k0 at p_lo is |difference| (n^3/2) nu = 2^(loss - p_lo)
    let seen = p_lo as i32 + exp2_of(&Float::with_val(p_hi, &difference * &weight));
    Measured {
        loss: seen.max(metered),
        mag,
        log_mag,
        // the higher evaluation's own relative error is 2^(seen - size - p_hi)
        saturated: seen - size > p_hi as i32 - SATURATION_BITS,
    }
}

/// The photon-energy points of the pilot for the panels `panels` (from
/// [`super::panels::panel_layout`]) at a goal of `bits` bits, with a flag
/// for the points of the first panel, nu increasing:
///
/// - in the first panel [0, nu1], [`FIRST_PANEL_POINTS`] points log-spaced
///   from about the smallest node of its rule with twice the nodes the goal
///   asks for (the loss grows slowly as nu -> 0, and no node lies further
///   down) to nu1;
/// - on the mapped panels, both ends of every panel and points equally
///   spaced in u between them, at most [`MAX_U_SPACING`] apart (the last
///   end just below nu = n).
pub(crate) fn pilot_points(panels: &[Panel], bits: u32) -> Vec<(f64, bool)> {
    let mut out = Vec::new();
    let mut mapped = Vec::new();
    for panel in panels {
        if panel.first {
            let nodes = 2.0 * f64::from(bits + 8) / FIRST_PANEL_RATE;
            let low = panel.end * smallest_gauss_node(nodes);
            let count = FIRST_PANEL_POINTS;
            for i in 0..count {
                let t = f64::from(i) / f64::from(count - 1);
                out.push((low * (panel.end / low).powf(t), true));
            }
        } else {
            mapped.push(panel);
        }
    }
    for (k, panel) in mapped.iter().enumerate() {
        let u1 = panel.u1_f64();
        let steps = ((u1 - panel.u0) / MAX_U_SPACING).ceil().max(1.0) as u32;
        // the left end of each mapped panel is the right end of the one
        // before (or nu1, already a point of the first panel)
        for i in 1..=steps {
            let mut u = panel.u0 + (u1 - panel.u0) * f64::from(i) / f64::from(steps);
            if k + 1 == mapped.len() && i == steps {
                // just inside nu = n, where the Gauss nodes end
                u -= 0.01 * (u1 - panel.u0) / f64::from(steps);
            }
            out.push((panel.nu_f64(u), false));
        }
    }
    out
}

/// About the smallest node of the Gauss-Legendre rule of `nodes` nodes on
/// [0, 1]: (j0 / (N + 1/2))^2 / 4, with j0 = 2.4048 the first zero of the
/// Bessel function J0 (the usual asymptotic form of the first zero of the
/// Legendre polynomial).
fn smallest_gauss_node(nodes: f64) -> f64 {
    let theta = 2.404_825_557_695_773 / (nodes + 0.5);
    0.25 * theta * theta
}

/// A loss profile: `measure(nu, first)` measures each point of
/// [`pilot_points`] (see [`pilot_profile`]; evaluated in parallel).
/// Returns the points with nu increasing.
pub(crate) fn profile(
    panels: &[Panel],
    bits: u32,
    measure: impl Fn(f64, bool) -> Measured + Sync,
) -> Vec<PilotPoint> {
    let points = pilot_points(panels, bits);
    let found: Vec<Measured> = points
        .par_iter()
        .map(|&(x, first)| measure(x, first))
        .collect();
    points
        .into_iter()
        .zip(found)
        .map(|((nu, _), m)| PilotPoint {
            nu,
            loss: m.loss,
            mag: m.mag,
            log_mag: m.log_mag,
        })
        .collect()
}

/// Pilot points that speak for a panel: those inside it, ends included (for
/// the first panel, every point up to nu1), else the nearest one.
fn panel_points(profile: &[PilotPoint], panel: &Panel) -> Vec<PilotPoint> {
    // the ends are shared with the neighbours; allow for their rounding
    let (lo, hi) = (panel.start * (1.0 - 1e-9), panel.end * (1.0 + 1e-9));
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
    /// Binary exponent of the expected contribution of the logarithmic
    /// part I_log ln nu (first panel; [`NO_LOG_PART`] elsewhere).
    pub(crate) log_magnitude_exp: i32,
}

/// The starting plan of `panel`.
pub(crate) fn panel_plan(profile: &[PilotPoint], panel: &Panel) -> PanelPlan {
    let pts = panel_points(profile, panel);
    let worst = pts.iter().map(|p| p.loss).max().unwrap_or(0);
    // the panel's contribution is about its largest node scale, times the
    // ratio of its width to the log-spacing of the points (at most 2 here)
    let magnitude_exp = pts.iter().map(|p| p.mag).max().unwrap_or(0) + 1;
    let log_magnitude_exp = pts
        .iter()
        .map(|p| p.log_mag)
        .max()
        .unwrap_or(NO_LOG_PART)
        .saturating_add(1);
    let guard = (worst.max(0) + GUARD_MARGIN) as u32;
    PanelPlan {
        guard,
        magnitude_exp,
        log_magnitude_exp,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::green::panels::panel_layout;
    use crate::green::quad;

    /// The points reach down to the smallest node of the first panel's rule
    /// with twice the nodes the goal asks for (checked against the rule
    /// itself), end at nu1, and cover every mapped panel from end to end at
    /// most MAX_U_SPACING apart in u.
    #[test]
    fn points_cover_every_panel() {
        for (n, first_lower, bits) in [
            (1, None, 40),
            (2, Some(1), 82),
            (60, None, 82),
            (200, None, 148),
            (1000, None, 148),
        ] {
            let panels = panel_layout(n, first_lower);
            let points = pilot_points(&panels, bits);
            assert!(points.windows(2).all(|w| w[0].0 < w[1].0), "n = {n}");
            let nu1 = panels[0].end;
            let nodes = (2.0 * f64::from(bits + 8) / FIRST_PANEL_RATE).round() as usize;
            let smallest = quad::rule(nodes, 64).x[0].to_f64() * nu1;
            assert!(
                points[0].0 <= smallest * 1.05 && points[0].0 >= smallest * 0.8,
                "n = {n}: lowest point {} against the smallest node {smallest}",
                points[0].0
            );
            let first: Vec<f64> = points.iter().filter(|p| p.1).map(|p| p.0).collect();
            assert_eq!(first.len() as u32, FIRST_PANEL_POINTS);
            assert!((first[first.len() - 1] / nu1 - 1.0).abs() < 1e-12);
            let c = f64::from(n + 1);
            let u: Vec<f64> = points
                .iter()
                .filter(|p| !p.1)
                .map(|p| (p.0 / (c - p.0)).ln())
                .collect();
            let mut previous = (nu1 / (c - nu1)).ln();
            for &x in &u {
                assert!(x - previous <= MAX_U_SPACING * (1.0 + 1e-9), "n = {n}");
                previous = x;
            }
            for p in &panels[1..] {
                let has = |nu: f64| points.iter().any(|q| (q.0 / nu - 1.0).abs() < 1e-9);
                assert!(has(p.start), "n = {n}: no point at {}", p.start);
                if !p.at_n {
                    assert!(has(p.end), "n = {n}: no point at {}", p.end);
                }
            }
            let top = points[points.len() - 1].0;
            assert!(top < f64::from(n) && top > f64::from(n) * 0.99, "n = {n}");
        }
    }

    /// The pilot's losses are those of a pair at 512 and 544 bits (within
    /// 8 bits) at every point of (60, 30), whose integrand loses about 40
    /// bits on the scale of ln k0 near nu = 0 (the pilot's pair for a goal
    /// of 5 digits is at 96 and 128 bits). Where the higher evaluation of a
    /// pair keeps too few bits (a pair at 32 and 64 bits at the lowest
    /// point) the point is flagged as saturated, and the evaluation
    /// repeated at twice the precision, as `pilot_profile` does, clears the
    /// flag.
    #[test]
    fn losses_match_a_higher_pair_and_saturated_points_are_repeated() {
        let state = ExactState::new(60, 30).unwrap();
        let panels = panel_layout(60, state.first_lower_state());
        let bits = ((5.0 + 2.0) * std::f64::consts::LOG2_10).ceil() as u32 + 8;
        assert_eq!(quantize(bits + 64), 96);
        let profile = pilot_profile(&state, &panels, bits);
        let scale = ln_k0_scale(60);
        let (lo, hi) = (state.integrand(512), state.integrand(544));
        let reference_at = |nu: f64, first: bool| {
            let r = measure_point(&LowSample::at(&lo, nu), &hi, nu, first, scale);
            assert!(!r.saturated);
            r.loss
        };
        let x = profile[0].nu;
        let low = LowSample::at(&state.integrand(32), x);
        let lowest = measure_point(&low, &state.integrand(32 + HIGHER_BY), x, true, scale);
        assert!(lowest.saturated, "{lowest:?}");
        let again = measure_point(&low, &state.integrand(2 * (32 + HIGHER_BY)), x, true, scale);
        assert!(!again.saturated, "{again:?}");
        for p in &profile {
            let first = p.nu <= panels[0].end * (1.0 + 1e-9);
            let reference = reference_at(p.nu, first);
            assert!(
                (p.loss - reference).abs() <= 8,
                "nu = {}: loss {} against {} at 512 bits",
                p.nu,
                p.loss,
                reference
            );
        }
    }
}
