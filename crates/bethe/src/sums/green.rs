//! The logarithmic sums by the photon-energy integral with the Sturmian
//! Green's function.
//!
//! For a source phi_a = (H - E_n)^-a p|n l> (same-n states left out) the
//! resolvent F_a(w) = <phi_a|(H - E_n + w)^-1|phi_a> = sum_m c_m d_m^(-2a)/(d_m + w)
//! is the Sturmian sum of [`crate::green`] with phi_a in place of p|n l>.
//! With c'_m = c_m d_m^(-2a), M'_i = sum c' d^i (exact), w0 = 1/(2n^2), and
//! for any w0 > 0
//!
//! ```text
//! e = 1:  sum c' d ln|d| = M'_1 ln w0 - int_0^inf [M'_0 - w F_a(w) - M'_1/(w + w0)] dw
//! e = 0:  sum c' ln|d|   = M'_0 ln w0 - int_0^inf [F_a(w) - M'_0/(w + w0)] dw
//! ```
//!
//! (principal values at the lower states), so sum c d^(k-1) ln|d| with
//! k = e - 2a + 1 comes from the same samples F_a for e = 0 and e = 1. In the
//! variable nu (E_n - w = -1/(2 nu^2), w + w0 = 1/(2 nu^2), dw = -dnu/nu^3)
//! the integrands are [M'_0 - w F_a - 2 M'_1 nu^2]/nu^3 and
//! [F_a - 2 M'_0 nu^2]/nu^3. A lower state (n' < n, d < 0) adds
//! A [1/(n' - nu) - 1/(n' + nu)] with A = c' d (e = 1) or A = c' (e = 0):
//! these terms are subtracted from the samples, the image terms integrated in
//! closed form (A ln((n + n')/n')) and the lower states' own terms A ln|d|
//! added exactly, as for ln k0. All k share the nodes, and the sources of a
//! channel share the Meixner recurrences of each node.
//!
//! The panels, the pilot for the working precision, the pairs of Gauss rules
//! and the error budget are those of the ln k0 driver, applied to the vector
//! of integrals: a pair of rules must agree on every component (measured on
//! the absolute scale of its L(k)) before a panel is accepted.

use super::chain::StateChains;
use crate::green::exact_part::SmallLogs;
use crate::green::integrand::phi_from_upper;
use crate::green::meixner::{channel_j_sources, scaled_coefs, JValue, NuPoint};
use crate::green::meter::Meter;
use crate::green::panels::{panel_layout, Panel};
use crate::green::pilot::{profile, Measured, PilotPoint, NO_LOG_PART};
use crate::green::quad;
use crate::green::refine::{integrate_panels, ByPrecision};
use crate::green::scale::{exp2_of, quantize};
use crate::BetheError;
use kzero_basis::gordon::radial_dipole_square;
use kzero_basis::sturmian::matched_expansion;
use kzero_basis::BoundState;
use rayon::prelude::*;
use rug::{Assign, Float, Rational};

const METHOD: &str = "green";

/// The integrals of one state: for each requested k, the logarithmic sum
/// sum_m c_m d_m^(k-1) ln(2|d_m|) (hartree, velocity form) and its error
/// estimate, in the order of the requested powers.
pub(crate) struct Out {
    pub values: Vec<(Float, f64)>,
    pub bits: u32,
    pub nodes: usize,
    pub terms: usize,
}

/// One component: the power k, its source index a and e (k = e - 2a + 1).
#[derive(Debug, Clone)]
struct Comp {
    a: usize,
    e: u32,
    /// 2^(k+1)/3: from the hartree sum to L(k).
    factor: f64,
    /// M'_0 = M_(-2a).
    m0: Rational,
    /// M'_1 = M_(1-2a) (used for e = 1).
    m1: Rational,
}

/// A lower state of one channel: n' and its amplitude A (see
/// [`amplitude`]) for every component.
#[derive(Debug, Clone)]
struct Lower {
    nprime: u32,
    amps: Vec<Rational>,
}

/// The amplitude A of a lower state (c = w |p|^2, d < 0) in component
/// `comp`: with c' = c d^(-2a), A = c' d for e = 1 and A = c' for e = 0.
/// All lower states of one component give amplitudes of one sign.
fn amplitude(c: &Rational, d: &Rational, comp: &Comp) -> Rational {
    let mut cp = c.clone();
    for _ in 0..comp.a {
        cp /= Rational::from(d * d);
    }
    if comp.e == 1 {
        cp *= d;
    }
    cp
}

/// Exact, precision-independent data.
struct Exact {
    n: u32,
    /// Per channel: L, beta, w S2, and the coefficient vectors of the sources.
    chans: Vec<(u32, u32, Rational, Vec<Vec<Rational>>)>,
    lower: Vec<Lower>,
    comps: Vec<Comp>,
}

impl Exact {
    fn new(sc: &StateChains, ks: &[i32]) -> Result<Self, BetheError> {
        let n = sc.n;
        let st = BoundState::hydrogen(i64::from(n), i64::from(sc.l))?;
        let mut comps = Vec::with_capacity(ks.len());
        let mut need = 0usize;
        for &k in ks {
            let a = ((2 - k) / 2) as usize;
            let e = (k - 1 + 2 * a as i32) as u32;
            need = need.max(a);
            let moment = |j: i32| {
                sc.moment(j)
                    .cloned()
                    .expect("moment within the chain depth")
            };
            comps.push(Comp {
                a,
                e,
                factor: 2f64.powi(k + 1) / 3.0,
                m0: moment(-2 * a as i32),
                m1: if e == 1 {
                    moment(1 - 2 * a as i32)
                } else {
                    Rational::new()
                },
            });
        }
        let mut chans = Vec::new();
        let mut lower = Vec::new();
        for ch in &sc.chains {
            let big_l = ch.big_l;
            let alpha = 2 * big_l + 1;
            let mut coefs = Vec::with_capacity(need + 1);
            let mut s2 = Rational::new();
            for phi in ch.phi.iter().take(need + 1) {
                let f = phi.to_polyexp(n, &ch.rho);
                let exp = matched_expansion(&f, big_l)?;
                s2 = &exp.radicand / Rational::from(kzero_basis::exact::factorial(alpha));
                coefs.push(exp.coef);
            }
            chans.push((
                big_l,
                2 * big_l + 2,
                Rational::from(&ch.weight * &s2),
                coefs,
            ));
            for np in (big_l + 1)..n {
                let low = BoundState::hydrogen(i64::from(np), i64::from(big_l))?;
                let r2 = radial_dipole_square(&low, &st)?;
                let d = low.energy() - st.energy();
                let c = Rational::from(&d * &d) * r2 * &ch.weight;
                let amps = comps.iter().map(|comp| amplitude(&c, &d, comp)).collect();
                lower.push(Lower { nprime: np, amps });
            }
        }
        Ok(Exact {
            n,
            chans,
            lower,
            comps,
        })
    }

    fn first_lower(&self) -> Option<u32> {
        self.lower.iter().map(|p| p.nprime).min()
    }

    /// Per component: the exact part (lower states, image terms, the
    /// ln w0 term) plus ln 2 times the power sum (units Z^2 Ry in the log).
    fn exact_parts(&self, prec: u32) -> Vec<Float> {
        // the logarithms of the first working precision, shared by the
        // components
        let logs = SmallLogs::new(self.n.max(2), prec + 32);
        (0..self.comps.len())
            .map(|ci| self.exact_part(ci, prec, &logs))
            .collect()
    }

    /// The exact part of component `ci` at `prec` bits. The rational
    /// amplitudes are rounded one by one: an exact sum over the lower states
    /// would grow a common denominator (and cost gcds) with every state. They
    /// share one sign, so their sum loses nothing; the moment that multiplies
    /// ln w0, M minus that sum, may cancel, and the loss is measured and the
    /// sum formed again with those bits on top, until 32 bits are left over.
    /// The logarithms are those of small integers (as in
    /// `ExactState::exact_part`, with the same accuracy), from `logs` (at
    /// prec + 32 bits) or from a table of the higher working precision.
    fn exact_part(&self, ci: usize, prec: u32, logs: &SmallLogs) -> Float {
        let comp = &self.comps[ci];
        let total = if comp.e == 1 { &comp.m1 } else { &comp.m0 };
        let mut wp = prec + 32;
        let mut own: Option<SmallLogs> = None;
        loop {
            let logs = own.as_ref().unwrap_or(logs);
            // ln(2 n^2)
            let ln_2nn = Float::with_val(wp, logs.ln(self.n) * 2u32) + logs.ln(2);
            let mut s = Float::with_val(wp, 0);
            let mut lower_sum = Float::with_val(wp, 0);
            for low in &self.lower {
                let amp = Float::with_val(wp, &low.amps[ci]);
                lower_sum += &amp;
                s += amp * logs.lower_state(self.n, low.nprime, &ln_2nn);
            }
            let total_f = Float::with_val(wp, total);
            // the moment of the upper states alone
            let up = Float::with_val(wp, &total_f - &lower_sum);
            let top = exp2_of(&total_f).max(exp2_of(&lower_sum));
            let lost = if self.lower.is_empty() {
                0
            } else if up.is_zero() {
                wp as i32
            } else {
                (top - exp2_of(&up)).max(0)
            };
            if lost + 32 <= (wp - prec) as i32 {
                let ln2 = Float::with_val(wp, rug::float::Constant::Log2);
                // ln w0 = -ln(2 n^2)
                s -= up * &ln_2nn;
                s += total_f * ln2;
                return Float::with_val(prec, s);
            }
            wp = prec + lost as u32 + 64;
            own = Some(SmallLogs::new(self.n.max(2), wp));
        }
    }

    fn at(&self, prec: u32) -> Integrand {
        Integrand {
            prec,
            n: self.n,
            chans: self
                .chans
                .iter()
                .map(|(big_l, beta, ws2, coefs)| ChanFloat {
                    big_l: *big_l,
                    beta: *beta,
                    ws2: Float::with_val(prec, ws2),
                    scaled: coefs.iter().map(|v| scaled_coefs(v, *beta, prec)).collect(),
                })
                .collect(),
            lower: self
                .lower
                .iter()
                .map(|low| {
                    (
                        Float::with_val(prec, low.nprime),
                        low.amps.iter().map(|a| Float::with_val(prec, a)).collect(),
                    )
                })
                .collect(),
            comps: self
                .comps
                .iter()
                .map(|c| CompFloat {
                    a: c.a,
                    e: c.e,
                    m0: Float::with_val(prec, &c.m0),
                    two_m0: Float::with_val(prec, Rational::from(&c.m0 * 2u32)),
                    two_m1: Float::with_val(prec, Rational::from(&c.m1 * 2u32)),
                    factor_exp: c.factor.log2().ceil() as i32,
                })
                .collect(),
        }
    }
}

struct ChanFloat {
    big_l: u32,
    beta: u32,
    ws2: Float,
    /// Per source, coef_i / (beta)_i at the working precision
    /// (`scaled_coefs`).
    scaled: Vec<Vec<Float>>,
}

struct CompFloat {
    a: usize,
    e: u32,
    m0: Float,
    two_m0: Float,
    two_m1: Float,
    factor_exp: i32,
}

/// Everything the integrand needs at one precision.
struct Integrand {
    prec: u32,
    n: u32,
    chans: Vec<ChanFloat>,
    /// (n', amplitude A per component).
    lower: Vec<(Float, Vec<Float>)>,
    comps: Vec<CompFloat>,
}

/// The integrands of every component at one node, their ln(mu)
/// coefficients and the cancellation each one saw (bits).
struct Sample {
    values: Vec<Float>,
    logs: Vec<Float>,
    losses: Vec<i32>,
}

impl Integrand {
    fn sample(&self, nu: &Float) -> Sample {
        let prec = self.prec;
        let n = self.n;
        let pt = NuPoint::new(n, nu);
        let nu2 = Float::with_val(prec, nu * nu);
        let nu3 = Float::with_val(prec, &nu2 * nu);
        let nn = u64::from(n) * u64::from(n);
        let w = Float::with_val(
            prec,
            Float::with_val(prec, n - Float::with_val(prec, nu)) * Float::with_val(prec, nu + n),
        ) / (Float::with_val(prec, &nu2 * 2u32) * nn);
        let sources = self.chans.iter().map(|c| c.scaled.len()).max().unwrap_or(0);
        let mut jsum = vec![Float::with_val(prec, 0); sources];
        let mut jlog = vec![Float::with_val(prec, 0); sources];
        let mut jmeter = Meter::new();
        // channels come as [L = l-1, L = l+1]: the upper one first; its
        // Phi(z,1,a+2) gives Phi(z,1,a) = 1/a + z/(a+1) + z^2 Phi(z,1,a+2)
        let mut phi_up: Option<Float> = None;
        let top_l = self.chans.last().map_or(0, |c| c.big_l);
        for ch in self.chans.iter().rev() {
            let hint = match (&phi_up, ch.big_l + 2 == top_l) {
                (Some(pu), true) => Some(phi_from_upper(ch.big_l, &pt, pu)),
                _ => None,
            };
            let mut m = Meter::new();
            let (jv, phi): (Vec<JValue>, Option<Float>) = channel_j_sources(
                ch.big_l,
                ch.beta,
                &ch.ws2,
                &ch.scaled,
                &pt,
                &mut m,
                hint.as_ref(),
            );
            if phi_up.is_none() {
                phi_up = phi;
            }
            jmeter.merge(&m);
            for (s, v) in jv.iter().enumerate() {
                jsum[s] += &v.j;
                jlog[s] += &v.log_coef;
            }
        }
        let nc = self.comps.len();
        let mut values = Vec::with_capacity(nc);
        let mut logs = Vec::with_capacity(nc);
        let mut meters = Vec::with_capacity(nc);
        for c in &self.comps {
            let mut meter = jmeter.clone();
            let j = &jsum[c.a];
            let (f, lc) = if c.e == 1 {
                let wj = Float::with_val(prec, &w * j);
                let sub = Float::with_val(prec, &c.two_m1 * &nu2);
                meter.term(&c.m0);
                meter.term(&wj);
                meter.term(&sub);
                let mut f = Float::with_val(prec, &c.m0 - &wj);
                f -= sub;
                meter.result(&f);
                let lc = Float::with_val(prec, &w * &jlog[c.a]) / &nu3;
                (f, lc)
            } else {
                let sub = Float::with_val(prec, &c.two_m0 * &nu2);
                meter.term(j);
                meter.term(&sub);
                let f = Float::with_val(prec, j - &sub);
                meter.result(&f);
                let lc = -Float::with_val(prec, &jlog[c.a] / &nu3);
                (f, lc)
            };
            values.push(f / &nu3);
            logs.push(lc);
            meters.push(meter);
        }
        // the poles of the lower states: 1/(n' - nu) once per state, shared
        // by every component (each term enters its component's meter)
        let mut acc = vec![Float::with_val(prec, 0); nc];
        let mut r = Float::new(prec);
        let mut t = Float::new(prec);
        for (np, amps) in &self.lower {
            r.assign(np - nu);
            r.recip_mut();
            for ((a, meter), amp) in acc.iter_mut().zip(&mut meters).zip(amps) {
                t.assign(&r * amp);
                meter.term(&t);
                *a += &t;
            }
        }
        let mut losses = Vec::with_capacity(nc);
        for ((value, meter), a) in values.iter_mut().zip(&mut meters).zip(&acc) {
            meter.term(value);
            *value -= a;
            meter.result(value);
            losses.push(meter.loss_bits);
        }
        Sample {
            values,
            logs,
            losses,
        }
    }
}

/// The integrals of every component over one panel with `nodes` nodes.
/// Returns the integrals and the loss (bits) on the absolute scale of L(k):
/// 2^(loss - prec) is the rounding level of the panel.
fn panel_integral(ig: &Integrand, panel: &Panel, nodes: usize) -> (Vec<Float>, i32) {
    let prec = ig.prec;
    let r = quad::rule(nodes, prec);
    let nc = ig.comps.len();
    // the first panel [0, nu1] is integrated in nu, the others in u
    let width = panel.first.then(|| panel.end_at(prec));
    let parts: Vec<(Vec<Float>, i32)> = if let Some(h) = &width {
        let h_exp = exp2_of(h);
        let ln_h = Float::with_val(prec, h.ln_ref());
        r.x.par_iter()
            .zip(r.w.par_iter().zip(r.wlog.par_iter()))
            .map(|(x, (w, wl))| {
                let nu = Float::with_val(prec, x * h);
                let s = ig.sample(&nu);
                let ln_nu = Float::with_val(prec, nu.ln_ref());
                let wlt = Float::with_val(prec, wl + Float::with_val(prec, w * &ln_h));
                let mut out = Vec::with_capacity(nc);
                let mut loss = i32::MIN;
                for c in 0..nc {
                    let an = Float::with_val(
                        prec,
                        &s.values[c] - Float::with_val(prec, &s.logs[c] * &ln_nu),
                    );
                    let pa = Float::with_val(prec, &an * w);
                    let pl = Float::with_val(prec, &s.logs[c] * &wlt);
                    let big = exp2_of(&pa).max(exp2_of(&pl)) + h_exp + ig.comps[c].factor_exp;
                    loss = loss.max(s.losses[c] + big);
                    out.push(pa + pl);
                }
                (out, loss)
            })
            .collect()
    } else {
        let mapped = panel.mapped_at(prec);
        r.x.par_iter()
            .zip(r.w.par_iter())
            .map(|(x, w)| {
                let (nu, jac) = mapped.node(x);
                let wj = Float::with_val(prec, w * &jac);
                let s = ig.sample(&nu);
                let mut out = Vec::with_capacity(nc);
                let mut loss = i32::MIN;
                for c in 0..nc {
                    let v = Float::with_val(prec, &s.values[c] * &wj);
                    let big = exp2_of(&v) + ig.comps[c].factor_exp;
                    loss = loss.max(s.losses[c] + big);
                    out.push(v);
                }
                (out, loss)
            })
            .collect()
    };
    let mut sums = vec![Float::with_val(prec, 0); nc];
    let mut loss = i32::MIN;
    for (v, l) in &parts {
        for (s, x) in sums.iter_mut().zip(v) {
            *s += x;
        }
        loss = loss.max(*l);
    }
    if let Some(h) = &width {
        return (sums.into_iter().map(|s| s * h).collect(), loss);
    }
    (sums, loss)
}

/// The integrand at the pilot points of the panels (`pilot_points`) at two
/// precisions: the loss of every component on the absolute scale of its
/// L(k).
fn pilot(ex: &Exact, panels: &[Panel], bits: u32) -> Vec<PilotPoint> {
    let p_lo = quantize(bits + 64);
    let p_hi = p_lo + 128;
    let lo = ex.at(p_lo);
    let hi = ex.at(p_hi);
    profile(panels, bits, |x, first| {
        let a = lo.sample(&Float::with_val(p_lo, x));
        let b = hi.sample(&Float::with_val(p_hi, x));
        let mut loss = i32::MIN;
        let mut mag = i32::MIN;
        let mut log_mag = NO_LOG_PART;
        for (c, comp) in lo.comps.iter().enumerate() {
            let (va, vb) = (&a.values[c], &b.values[c]);
            if !va.is_finite() || !vb.is_finite() {
                return Measured {
                    loss: p_lo as i32 + 64,
                    mag: 0,
                    log_mag: NO_LOG_PART,
                    saturated: false,
                };
            }
            let weight = Float::with_val(p_hi, x) * 2f64.powi(comp.factor_exp);
            let m = exp2_of(&Float::with_val(p_hi, vb * &weight));
            let log_part = Float::with_val(p_hi, &b.logs[c] * x.ln()) * &weight;
            let metered = a.losses[c] + m.max(exp2_of(&log_part));
            let d = Float::with_val(p_hi, Float::with_val(p_hi, va) - vb).abs();
            let seen = if d.is_zero() {
                i32::MIN
            } else {
                p_lo as i32 + exp2_of(&Float::with_val(p_hi, &d * &weight))
            };
            loss = loss.max(seen.max(metered));
            mag = mag.max(m);
            if first {
                log_mag = log_mag.max(exp2_of(&log_part));
            }
        }
        Measured {
            loss,
            mag,
            log_mag,
            saturated: false,
        }
    })
}

/// The logarithmic sums of the powers `ks` (sorted, in range) for the state
/// of `sc`, each to an absolute error below 10^-digits on its L(k).
///
/// # Errors
/// [`BetheError::NoConvergence`] when a panel does not converge.
pub(crate) fn log_sums(sc: &StateChains, ks: &[i32], digits: u32) -> Result<Out, BetheError> {
    let ex = Exact::new(sc, ks)?;
    let goal = 10f64.powi(-(digits as i32));
    let bits = ((f64::from(digits) + 2.0) * std::f64::consts::LOG2_10).ceil() as u32 + 8;
    let panels = panel_layout(ex.n, ex.first_lower());
    let profile = pilot(&ex, &panels, bits);
    let tol = goal / panels.len() as f64;
    let mut probs = ByPrecision::new(|prec| ex.at(prec));
    let factors: Vec<f64> = ex.comps.iter().map(|c| c.factor).collect();
    let done = integrate_panels(
        &panels,
        &profile,
        bits,
        tol,
        &factors,
        &mut |panel, prec, nodes| panel_integral(probs.at(prec), panel, nodes),
    )
    .map_err(|best| BetheError::NoConvergence {
        method: METHOD,
        n: sc.n,
        l: sc.l,
        achieved: best * panels.len() as f64,
        goal,
    })?;
    let (errs, nodes, prec, integrals) = (done.errs, done.nodes, done.prec, done.values);
    let worst = errs.iter().copied().fold(0.0f64, f64::max);
    if worst >= goal {
        return Err(BetheError::NoConvergence {
            method: METHOD,
            n: sc.n,
            l: sc.l,
            achieved: worst,
            goal,
        });
    }
    let mut values = ex.exact_parts(prec);
    for panel_values in &integrals {
        for (v, x) in values.iter_mut().zip(panel_values) {
            *v -= x;
        }
    }
    let terms = ex
        .chans
        .iter()
        .map(|c| c.3.iter().map(Vec::len).sum::<usize>())
        .sum();
    Ok(Out {
        values: values
            .into_iter()
            .zip(ex.comps.iter().zip(errs))
            .map(|(v, (c, e))| (v, e / c.factor))
            .collect(),
        bits: prec,
        nodes,
        terms,
    })
}

/// Estimated single-core CPU seconds of [`super::green_sums`] for (n, l) at
/// `digits` with `count` powers, on the reference machine of
/// benches/README.md (as [`crate::green::cost_estimate`], used for shard
/// plans and estimates).
///
/// # Accuracy
/// The sums cost what one ln k0 costs at the digits their largest member
/// needs: the absolute goal on sums of size up to n^15 (k = -4) asks for
/// about 15 log10 n more digits (at most 40), and the powers share the
/// nodes, so each adds about 1 %. Against measured instruction
/// counts of the whole set k = -4..2 at 20 digits (n = 2 to 200, ratios to
/// ln k0 of 1.2 to 4.0) the model is within 15 %; with only the larger k
/// requested it overestimates (up to about 4 times for k = 2 alone at
/// n = 200).
pub fn cost_estimate(n: u32, l: u32, digits: u32, count: usize) -> f64 {
    let extra = (15.0 * f64::from(n.max(1)).log10()).min(40.0);
    crate::green::cost_estimate(n, l, digits + extra as u32) * (1.0 + 0.01 * count as f64)
}
