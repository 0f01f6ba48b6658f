//! The panels of the nu integral and the integral of the sampled integrand
//! over one panel with one Gauss rule.

use super::integrand::Integrand;
use super::meter::Meter;
use super::quad;
use super::scale::{exp2_of, ln_k0_scale_exp};
use rayon::prelude::*;
use rug::Float;

/// One quadrature panel of the nu integral.
///
/// The first panel [0, nu1] is integrated in nu with the logarithmic
/// product rule. Every later panel is an interval [u0, u1] of the variable
/// u = ln(nu / (c - nu)), c = n + 1, integrated with a Gauss rule in u:
/// nu = c / (1 + e^-u) and dnu/du = nu (c - nu) / c. The map sends the
/// branch point nu = 0 and the pole of the first upper state nu = n + 1 to
/// u = -inf and u = +inf, and the other singularities of the integrand
/// (nu <= 0 and the poles nu = n + 2, n + 3, ...) to Im u = pi, so the
/// integrand is analytic in the strip |Im u| < pi and a Gauss rule on a
/// panel of half-length h in u converges like rho^(-2N) with
/// rho = (pi + sqrt(pi^2 + h^2)) / h.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Panel {
    /// Left end in nu (0 for the first panel; approximate, for planning).
    pub(crate) start: f64,
    /// Right end in nu (approximate, for planning).
    pub(crate) end: f64,
    /// The first panel [0, nu1], integrated with the logarithmic product rule.
    pub(crate) first: bool,
    /// Left end in u (-inf for the first panel).
    pub(crate) u0: f64,
    /// Right end in u; ignored when `at_n` is set.
    pub(crate) u1: f64,
    /// The panel ends at nu = n exactly (u1 = ln n, formed at the working
    /// precision).
    pub(crate) at_n: bool,
    /// c = n + 1.
    pub(crate) c: u32,
}

/// Longest panel in u (half-length 2: rho = 3.4, about 3.5 bits per node).
pub(crate) const MAX_U_LENGTH: f64 = 4.0;

impl Panel {
    /// nu = c / (1 + e^-u) at the precision of `u`, with e^-u.
    fn nu_of_u(&self, u: &Float) -> (Float, Float) {
        let prec = u.prec();
        let e = Float::with_val(prec, -u).exp();
        let nu = Float::with_val(prec, self.c) / Float::with_val(prec, &e + 1u32);
        (nu, e)
    }

    /// The right end in u at `prec` bits.
    fn u1_at(&self, prec: u32) -> Float {
        if self.at_n {
            Float::with_val(prec, self.c - 1).ln()
        } else {
            Float::with_val(prec, self.u1)
        }
    }

    /// The right end in nu at `prec` bits (the same number the next panel
    /// starts from).
    pub(crate) fn end_at(&self, prec: u32) -> Float {
        self.nu_of_u(&self.u1_at(prec)).0
    }

    /// The mapped panel at `prec` bits, with what every node shares
    /// (its left end and length in u) formed once.
    pub(crate) fn mapped_at(&self, prec: u32) -> MappedPanel<'_> {
        let u0 = Float::with_val(prec, self.u0);
        let len = Float::with_val(prec, self.u1_at(prec) - &u0);
        MappedPanel {
            panel: self,
            u0,
            len,
        }
    }

    /// The right end in u in double precision (ln n for the last panel).
    pub(crate) fn u1_f64(&self) -> f64 {
        if self.at_n {
            f64::from(self.c - 1).ln()
        } else {
            self.u1
        }
    }

    /// nu at `u` in double precision, for planning.
    pub(crate) fn nu_f64(&self, u: f64) -> f64 {
        nu_of_u(u, f64::from(self.c))
    }

    /// Bits per node a Gauss rule on this mapped panel is expected to gain
    /// (2 log2 rho for the strip |Im u| < pi, see the type's docs).
    pub(crate) fn expected_rate(&self) -> f64 {
        let h = 0.5 * (self.u1_f64() - self.u0);
        let pi = std::f64::consts::PI;
        let rho = (pi + (pi * pi + h * h).sqrt()) / h;
        2.0 * rho.log2()
    }
}

/// A mapped panel at one working precision ([`Panel::mapped_at`]).
pub(crate) struct MappedPanel<'p> {
    panel: &'p Panel,
    /// Left end in u.
    u0: Float,
    /// Length in u.
    len: Float,
}

impl MappedPanel<'_> {
    /// The node at x in [0, 1] (at the working precision): nu and dnu/dx.
    pub(crate) fn node(&self, x: &Float) -> (Float, Float) {
        let prec = x.prec();
        let u = Float::with_val(prec, x * &self.len) + &self.u0;
        let (nu, e) = self.panel.nu_of_u(&u);
        // dnu/du = nu (c - nu)/c = nu^2 e / c
        let mut jac = Float::with_val(prec, &nu * &nu) * &e;
        jac /= self.panel.c;
        jac *= &self.len;
        (nu, jac)
    }
}

/// u = ln(nu / (c - nu)) in double precision.
fn u_of_nu(nu: f64, c: f64) -> f64 {
    (nu / (c - nu)).ln()
}

/// nu = c / (1 + e^-u) in double precision.
fn nu_of_u(u: f64, c: f64) -> f64 {
    c / (1.0 + (-u).exp())
}

/// The first panel [0, nu1] and the panels on [nu1, n] for the state of
/// principal quantum number `n` whose lowest lower state (if any) has
/// principal quantum number `first_lower`: equal panels in u of length at
/// most [`MAX_U_LENGTH`].
pub(crate) fn panel_layout(n: u32, first_lower: Option<u32>) -> Vec<Panel> {
    let nf = f64::from(n);
    let c = n + 1;
    let cf = f64::from(c);
    // The first panel (logarithmic product rule) is kept short: its
    // integrand pieces I_an, I_log have singularities at distances of order
    // one (lower-state structure, large L), and it stops short of the first
    // lower-state pole; the odd factor keeps nodes and boundaries off the
    // integers (poles of single terms).
    let mut nu1 = (0.3 * nf).min(0.5) * 1.013_7;
    if let Some(p) = first_lower {
        nu1 = nu1.min((f64::from(p) - 0.5) * 0.987_3);
    }
    let u_first = u_of_nu(nu1, cf);
    let u_last = nf.ln();
    let mut out = vec![Panel {
        start: 0.0,
        end: nu1,
        first: true,
        u0: f64::NEG_INFINITY,
        u1: u_first,
        at_n: false,
        c,
    }];
    let count = ((u_last - u_first) / MAX_U_LENGTH).ceil().max(1.0) as usize;
    let step = (u_last - u_first) / count as f64;
    for i in 0..count {
        let u0 = if i == 0 {
            u_first
        } else {
            u_first + step * i as f64
        };
        let at_n = i + 1 == count;
        let u1 = if at_n {
            u_last
        } else {
            u_first + step * (i + 1) as f64
        };
        out.push(Panel {
            start: nu_of_u(u0, cf),
            end: if at_n { nf } else { nu_of_u(u1, cf) },
            first: false,
            u0,
            u1,
            at_n,
            c,
        });
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
    // the first panel [0, nu1] is integrated in nu, the others in u
    let width = panel.first.then(|| panel.end_at(prec));
    // per node: (weighted contribution, loss on the scale of ln k0)
    let contributions: Vec<(Float, i32)> = if let Some(width) = &width {
        // int_0^nu1 I = nu1 [sum w_i I_an + sum (W_i + w_i ln nu1) I_log]
        let ln_width = Float::with_val(prec, width.ln_ref());
        rule.x
            .par_iter()
            .zip(rule.w.par_iter().zip(rule.wlog.par_iter()))
            .map(|(x, (w, w_log))| {
                let nu = Float::with_val(prec, x * width);
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
                    exp2_of(&analytic_part).max(exp2_of(&log_part)) + exp2_of(width) + scale_exp;
                (analytic_part + log_part, meter.loss_bits + size)
            })
            .collect()
    } else {
        let mapped = panel.mapped_at(prec);
        rule.x
            .par_iter()
            .zip(rule.w.par_iter())
            .map(|(x, w)| {
                let (nu, jac) = mapped.node(x);
                let mut meter = Meter::new();
                let sample = integrand.sample(&nu, &mut meter, false);
                let weighted = Float::with_val(prec, &sample.value * w) * &jac;
                let size = exp2_of(&weighted) + scale_exp;
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
    if let Some(width) = &width {
        sum *= width;
    }
    (sum, loss)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The panels tile (0, n] without gaps: each mapped panel starts at the
    /// u where the one before ends, the first panel ends at the same nu (at
    /// the working precision) where the second starts, the last ends at
    /// nu = n exactly, and no mapped panel is longer than MAX_U_LENGTH.
    #[test]
    fn panels_tile_the_interval() {
        let prec = 256;
        for (n, first_lower) in [
            (1, None),
            (2, Some(1)),
            (2, None),
            (20, Some(9)),
            (1000, None),
        ] {
            let panels = panel_layout(n, first_lower);
            assert!(panels[0].first && panels.len() >= 2);
            assert!(panels.iter().skip(1).all(|p| !p.first));
            let second = &panels[1];
            let x0 = Float::with_val(prec, 0);
            assert_eq!(
                panels[0].end_at(prec),
                second.mapped_at(prec).node(&x0).0,
                "n = {n}"
            );
            for pair in panels[1..].windows(2) {
                assert_eq!(pair[0].u1, pair[1].u0);
                assert!(!pair[0].at_n);
            }
            let last = panels.last().unwrap();
            assert!(last.at_n);
            let x1 = Float::with_val(prec, 1);
            assert_eq!(
                last.mapped_at(prec).node(&x1).0,
                Float::with_val(prec, n),
                "n = {n}"
            );
            for p in &panels[1..] {
                let u1 = if p.at_n { f64::from(n).ln() } else { p.u1 };
                assert!(u1 - p.u0 <= MAX_U_LENGTH * (1.0 + 1e-12));
                assert!(p.expected_rate() >= 3.5);
            }
        }
    }

    /// The mapped rule on a function with the singularities the integrand
    /// has (a pole at nu = n + 1, just beyond the end, and one on the
    /// negative axis close to nu = 0): with the node count the expected
    /// rate asks for 140 bits, the sum over the mapped panels matches the
    /// closed form, ln((n + 1 - nu1)/1) + ln((n + 0.3)/(nu1 + 0.3)), to
    /// 1e-40.
    #[test]
    fn mapped_rule_meets_its_expected_rate() {
        let prec = 256;
        for n in [1u32, 7, 200, 1000] {
            let panels = panel_layout(n, None);
            let nu1 = panels[0].end_at(prec);
            let mut sum = Float::with_val(prec, 0);
            for p in &panels[1..] {
                let nodes = (140.0 / p.expected_rate()).ceil() as usize + 4;
                let rule = quad::rule(nodes, prec);
                let mapped = p.mapped_at(prec);
                for (x, w) in rule.x.iter().zip(&rule.w) {
                    let (nu, jac) = mapped.node(x);
                    let f = Float::with_val(prec, Float::with_val(prec, (n + 1) - &nu).recip())
                        + Float::with_val(prec, Float::with_val(prec, &nu + 0.3f64).recip());
                    sum += Float::with_val(prec, f * w) * &jac;
                }
            }
            let c = Float::with_val(prec, n + 1);
            let exact = Float::with_val(prec, Float::with_val(prec, &c - &nu1).ln())
                + Float::with_val(
                    prec,
                    Float::with_val(prec, Float::with_val(prec, n) + 0.3f64)
                        / Float::with_val(prec, &nu1 + 0.3f64),
                )
                .ln();
            let err = Float::with_val(prec, &sum - &exact).abs().to_f64();
            assert!(err < 1e-40, "n = {n}: error {err:e}");
        }
    }
}
