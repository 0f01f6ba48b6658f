//! The spectral sum of a vector of weights: one run over the spectrum
//! (bound terms, Rydberg tail, continuum) evaluates the matrix elements and
//! densities of every node once and multiplies them by each weight, and the
//! refinement of the module docs applies to every component, each with its
//! own absolute goal. ln k0 and the sum rules are a vector of one component,
//! the dipole-sum family ([`crate::sums`]) one of several.

use super::{
    cheb_order, closed_form_bound_terms, exact_terms, form_discretization, form_of, pow_float,
    pow_rat, quadrature, split_point, tail, ExactTerm, EXACT_MAX_N, METHOD,
};
use crate::error::BetheError;
use crate::value::Gauge;
use kzero_basis::continuum::{BoundFreeKernel, DipoleForm, LossHint};
use kzero_basis::gradient::Channel;
use kzero_basis::BoundState;
use rug::{Float, Rational};

/// One summed quantity, in velocity-form language (D = E_m - E_n in hartree,
/// Z = 1): sum_m |p_nm|^2 D_m^j, times ln(2|D_m|) when `log` is set, with an
/// absolute goal.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Component {
    /// Power of D.
    pub(crate) j: i32,
    /// Whether the weight carries ln(2|D|).
    pub(crate) log: bool,
    /// Absolute error goal on this sum.
    pub(crate) goal: f64,
    /// Factor from this sum to the quantity reported to the user (used in
    /// the figures of [`BetheError::NoConvergence`] only).
    pub(crate) scale: f64,
}

/// The bits a first run starts from: `bits` = log2(size / goal) of the
/// component that needs most, and `tail_bits` the same for the Rydberg tail
/// alone (which sets the order of its interpolation). For a sum whose size
/// is of order one both are -log2(goal).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Plan {
    pub(crate) bits: f64,
    pub(crate) tail_bits: f64,
}

/// The components' values with their error estimates and the pieces of the
/// final run.
pub(crate) struct VectorSum {
    pub(crate) values: Vec<Float>,
    pub(crate) errs: Vec<f64>,
    /// Bound part n' <= N1 per component.
    pub(crate) bound: Vec<Float>,
    /// Rydberg tail per component.
    pub(crate) tail: Vec<Float>,
    /// Continuum per component.
    pub(crate) continuum: Vec<Float>,
    pub(crate) bits: u32,
    pub(crate) nodes: usize,
    pub(crate) terms: usize,
}

/// The weights D^j [ln(2|D|)] of every component at one energy, at `prec`
/// bits (the logarithm is formed once).
fn weights(comps: &[Component], d: &Float, prec: u32) -> Vec<Float> {
    let ln = comps.iter().any(|c| c.log).then(|| {
        let ad = Float::with_val(prec, d.abs_ref()) * 2u32;
        ad.ln()
    });
    comps
        .iter()
        .map(|c| {
            let p = pow_float(d, c.j, prec);
            match (&ln, c.log) {
                (Some(ln), true) => p * ln,
                _ => p,
            }
        })
        .collect()
}

/// [`weights`] at an exact D: the power exact, rounded once.
fn weights_exact(comps: &[Component], d: &Rational, prec: u32) -> Vec<Float> {
    let ln = comps.iter().any(|c| c.log).then(|| {
        let ad = Float::with_val(prec, &(Rational::from(d.abs_ref()) * 2u32));
        ad.ln()
    });
    comps
        .iter()
        .map(|c| {
            let p = Float::with_val(prec, &pow_rat(d, c.j));
            match (&ln, c.log) {
                (Some(ln), true) => p * ln,
                _ => p,
            }
        })
        .collect()
}

/// Numerical settings of one run.
#[derive(Debug, Clone, Copy)]
struct RunParams {
    bits: u32,
    /// Bits fewer for the tail and the continuum (whose sizes over the
    /// goals are that much smaller than the bound part's).
    light: u32,
    min_level: u32,
    n1: u32,
    cheb: usize,
    cheb2: usize,
    /// Truncation threshold of the quadrature, relative to each goal.
    trunc: f64,
}

struct RunResult {
    values: Vec<Float>,
    bound: Vec<Float>,
    tail: Vec<Float>,
    cont: Vec<Float>,
    est: Vec<f64>,
    abs_sum: Vec<f64>,
    level: u32,
    nodes: usize,
    terms: usize,
}

/// Everything fixed for one vector sum: the state, the dipole form, the
/// components, the bound-free kernels of the open channels with their
/// angular weights, and how the bound terms are computed.
struct Setup<'a> {
    state: BoundState,
    form: DipoleForm,
    comps: &'a [Component],
    kernels: Vec<(BoundFreeKernel, Rational)>,
    /// One loss hint per kernel, carried from each evaluation of that kernel
    /// to the next within this sum only (see
    /// [`kzero_basis::continuum::LossHint`]): the sum's evaluations run in a
    /// fixed order, so its results do not depend on anything else.
    loss_hints: Vec<LossHint>,
    /// Bound terms from the MPFR closed form instead of exact rationals.
    closed_form_bound: bool,
    /// Scale of the continuum map k = 2^map_exp kappa tan(phi) (per form).
    map_exp: i32,
}

/// acc[c] += base w[c], |base w[c]| added to abs[c].
fn add_weighted(acc: &mut [Float], abs: &mut [f64], base: &Float, w: Vec<Float>) {
    for ((a, s), wi) in acc.iter_mut().zip(abs.iter_mut()).zip(w) {
        let v = Float::with_val(base.prec(), base * &wi);
        *s += v.to_f64().abs();
        *a += v;
    }
}

impl Setup<'_> {
    fn shift(&self) -> i32 {
        self.form.velocity_power_shift()
    }

    /// The tail density without the weight, sum_L w_L I_b(nu)^2 D^shift, and
    /// D, at w = u / a^2 (nu = a / sqrt(u)).
    fn tail_density(&mut self, u: &Float, a: u32, prec: u32) -> Result<(Float, Float), BetheError> {
        let nu = Float::with_val(prec, a) / Float::with_val(prec, u.sqrt_ref());
        let n = self.state.n();
        let w = Float::with_val(prec, u / (a * a));
        let d = (Float::with_val(prec, Rational::from((1, n * n))) - &w) / 2u32;
        let mut dens = Float::with_val(prec, 0);
        for ((k, wl), hint) in self.kernels.iter().zip(&mut self.loss_hints) {
            let v = k.bound_continued_hinted(&nu, prec, hint)?;
            dens += Float::with_val(prec, v.value.square_ref()) * wl;
        }
        dens *= pow_float(&d, self.shift(), prec);
        Ok((dens, d))
    }

    /// The continuum integrand of every component per dphi at a node,
    /// sum_L w_L I_c^2 D^shift F_c(D) dE/dphi, with k = s tan(phi),
    /// s = 2^map_exp kappa: D = (k^2 + kappa^2)/2 and
    /// dE/dphi = s^2 sin(phi) / cos(phi)^3.
    fn cont_integrands(
        &mut self,
        sin: &Float,
        cos: &Float,
        prec: u32,
    ) -> Result<Vec<Float>, BetheError> {
        let kap = Float::with_val(prec, &self.state.kappa());
        let mut sc = kap.clone();
        sc <<= self.map_exp;
        let k = Float::with_val(prec, &sc * sin) / cos;
        let c2 = Float::with_val(prec, cos * cos);
        let kap2 = Float::with_val(prec, &kap * &kap);
        let k2 = Float::with_val(prec, &k * &k);
        let d = Float::with_val(prec, &kap2 + &k2) / 2u32;
        let sc2 = Float::with_val(prec, &sc * &sc);
        let de = Float::with_val(prec, &sc2 * sin) / &c2 / cos;
        let mut dens = Float::with_val(prec, 0);
        for ((kern, wl), hint) in self.kernels.iter().zip(&mut self.loss_hints) {
            let v = kern.continuum_k_hinted(&k, prec, hint)?;
            dens += Float::with_val(prec, v.value.square_ref()) * wl;
        }
        dens *= pow_float(&d, self.shift(), prec);
        Ok(weights(self.comps, &d, prec)
            .into_iter()
            .map(|w| Float::with_val(prec, &dens * &w) * &de)
            .collect())
    }

    fn run(&mut self, p: &RunParams, exact: &[ExactTerm]) -> Result<RunResult, BetheError> {
        let b = p.bits;
        let nc = self.comps.len();
        let zero = || vec![Float::with_val(b, 0); nc];
        // bound part
        let mut bound = zero();
        let mut abs_sum = vec![0.0f64; nc];
        for t in exact {
            let base = Float::with_val(b, &t.coef);
            add_weighted(
                &mut bound,
                &mut abs_sum,
                &base,
                weights_exact(self.comps, &t.d, b),
            );
        }
        let mut closed_terms = 0;
        if self.closed_form_bound {
            let comps = self.comps;
            let shift = self.shift();
            closed_terms = closed_form_bound_terms(
                &self.kernels,
                &mut self.loss_hints,
                &self.state,
                shift,
                p.n1,
                b,
                |v, d| add_weighted(&mut bound, &mut abs_sum, &v, weights(comps, d, b)),
            )?;
        }
        // tail and continuum at `light` bits fewer; their rounding counts
        // 2^light times as much in abs_sum, which then measures every
        // rounding on the scale of b bits
        let tb = b - p.light;
        let light_scale = f64::from(p.light as i32).exp2();
        // tail: the densities at the Chebyshev points serve every component
        let a = p.n1 + 1;
        let mut tails: Vec<Vec<Float>> = Vec::with_capacity(2);
        let mut tail_terms = 0;
        for kk in [p.cheb, p.cheb2] {
            let mut vals: Vec<Vec<Float>> = vec![Vec::with_capacity(kk); nc];
            for u in &tail::nodes(kk, tb) {
                let (dens, d) = self.tail_density(u, a, tb)?;
                for (c, w) in weights(self.comps, &d, tb).into_iter().enumerate() {
                    vals[c].push(Float::with_val(tb, &dens * &w));
                }
            }
            tail_terms += kk;
            let tw = tail::weights(kk, a, tb);
            tails.push(vals.iter().map(|v| tail::sum(&tw, v, tb)).collect());
        }
        let tail_est: Vec<f64> = (0..nc)
            .map(|c| {
                Float::with_val(53, &tails[1][c] - &tails[0][c])
                    .abs()
                    .to_f64()
            })
            .collect();
        let tail = tails.pop().expect("two tails");
        for (s, t) in abs_sum.iter_mut().zip(&tail) {
            *s += t.to_f64().abs() * light_scale;
        }
        // continuum
        // truncation: walk out in steps of 1/4 until every weighted
        // integrand is below its truncation threshold on each side (the
        // neglected remainder is of the size of the last term: the weights
        // fall doubly exponentially)
        let mut ends = [0.0f64; 2];
        for (side, sign) in [(0usize, -1.0f64), (1, 1.0)] {
            let mut t = 2.0f64;
            loop {
                let tau = Float::with_val(tb, t * sign);
                let nd = quadrature::node(&tau, tb);
                let fs = self.cont_integrands(&nd.sin, &nd.cos, tb)?;
                // the component furthest above its threshold: (ratio, |wf|, goal)
                let mut worst = (0.0f64, 0.0f64, 0.0f64);
                let mut below = true;
                for (f, c) in fs.iter().zip(self.comps) {
                    let wf = Float::with_val(53, f * &nd.weight).abs().to_f64();
                    let eps = c.goal * p.trunc;
                    below &= wf < eps;
                    if wf / eps > worst.0 {
                        worst = (wf / eps, wf * c.scale, c.goal * c.scale);
                    }
                }
                if below {
                    break;
                }
                t += 0.25;
                if t > 7.0 {
                    return Err(BetheError::NoConvergence {
                        method: METHOD,
                        n: self.state.n(),
                        l: self.state.l(),
                        achieved: worst.1,
                        goal: worst.2,
                    });
                }
            }
            ends[side] = t * sign;
        }
        let (tlo, thi) = (ends[0], ends[1]);
        let mut prev: Option<Vec<Float>> = None;
        let mut acc = vec![Float::with_val(tb, 0); nc]; // sum of w f over all nodes so far
        let mut abs_acc = vec![0.0f64; nc];
        let mut nodes = 0usize;
        let mut level = 0u32;
        let mut cont_est = vec![f64::INFINITY; nc];
        let cont = loop {
            for (i, den) in quadrature::level_taus(level, tlo, thi) {
                let tau = Float::with_val(tb, i) / den as u32;
                let nd = quadrature::node(&tau, tb);
                let fs = self.cont_integrands(&nd.sin, &nd.cos, tb)?;
                for ((f, s), m) in fs.into_iter().zip(&mut acc).zip(&mut abs_acc) {
                    let wf = f * &nd.weight;
                    *m = m.max(wf.to_f64().abs());
                    *s += wf;
                }
                nodes += 1;
            }
            let h = Float::with_val(tb, Float::i_exp(1, -(level as i32)));
            let cur: Vec<Float> = acc.iter().map(|s| Float::with_val(tb, s * &h)).collect();
            let mut done = false;
            if let Some(pv) = &prev {
                let mut all = level >= p.min_level;
                for ((e, (x, y)), c) in cont_est.iter_mut().zip(cur.iter().zip(pv)).zip(self.comps)
                {
                    *e = Float::with_val(53, x - y).abs().to_f64();
                    all &= *e < c.goal * 0.25;
                }
                done = all;
            }
            if done || level >= 9 {
                break cur;
            }
            prev = Some(cur);
            level += 1;
        };
        let mut values = Vec::with_capacity(nc);
        let mut est = Vec::with_capacity(nc);
        for c in 0..nc {
            abs_sum[c] += (abs_acc[c] * 4.0 + cont[c].to_f64().abs()) * light_scale;
            let mut v = Float::with_val(b, &bound[c] + &tail[c]);
            v += &cont[c];
            values.push(v);
            let rounding = abs_sum[c] * f64::from(b as i32 - 12).exp2().recip();
            // the truncated ends are bounded by eps each (doubly exponential decay)
            let eps = self.comps[c].goal * p.trunc;
            est.push(tail_est[c] + cont_est[c] + rounding + 2.0 * eps);
        }
        Ok(RunResult {
            values,
            bound,
            tail,
            cont,
            est,
            abs_sum,
            level,
            nodes,
            terms: exact.len() + closed_terms + tail_terms,
        })
    }
}

/// The sums of `comps` for the state (n, l) (validated by the caller) in the
/// dipole form `gauge`, each to its own absolute goal, by the refinement of
/// the module docs: a first run, a second with more bits, higher tail
/// orders, the split point moved by 4 and a smaller truncation threshold;
/// each component's estimate is the larger of the two runs' difference and
/// the second run's own estimates, and every one must meet its goal (three
/// attempts).
///
/// # Errors
/// [`BetheError::NoConvergence`] (with the figures of the component furthest
/// from its goal, times its `scale`); basis errors.
pub(crate) fn vector_sum(
    n: u32,
    l: u32,
    gauge: Gauge,
    comps: &[Component],
    plan: Plan,
) -> Result<VectorSum, BetheError> {
    let state = BoundState::hydrogen(i64::from(n), i64::from(l))?;
    let form = form_of(gauge);
    let mut kernels = Vec::new();
    for ch in Channel::open(l) {
        kernels.push((BoundFreeKernel::new(&state, ch, form)?, ch.weight(l)));
    }
    let (map_exp, split_offset) = form_discretization(form);
    let loss_hints = vec![LossHint::new(); kernels.len()];
    let mut setup = Setup {
        state,
        form,
        comps,
        kernels,
        loss_hints,
        closed_form_bound: n > EXACT_MAX_N && form != DipoleForm::Length,
        map_exp,
    };
    let n1 = split_point(n) + split_offset;
    let (exact, extra) = if setup.closed_form_bound {
        (Vec::new(), Vec::new())
    } else {
        (
            exact_terms(&setup.state, form, 1, n1)?,
            exact_terms(&setup.state, form, n1 + 1, n1 + 4)?,
        )
    };
    // the tail (and the continuum beyond it) needs `light` bits less than
    // the sum as a whole
    let light = (plan.bits - plan.tail_bits).max(0.0).floor() as u32;
    let mut bits = ((plan.bits + 32.0).ceil() as u32).max(64);
    let mut cheb = cheb_order(n, n1 + 1, plan.tail_bits + 8.0);
    let mut min_level = 2u32;
    // (worst ratio err/goal, its err and goal times the scale) of the best attempt
    let mut best = (f64::INFINITY, f64::INFINITY, f64::NAN);
    for _attempt in 0..3 {
        let p1 = RunParams {
            bits,
            light: light.min(bits - 64),
            min_level,
            n1,
            cheb,
            cheb2: cheb + 3.max(cheb / 4),
            trunc: 1e-3,
        };
        let r1 = setup.run(&p1, &exact)?;
        // measured cancellation: bits needed beyond each goal
        let need = r1
            .abs_sum
            .iter()
            .zip(comps)
            .map(|(s, c)| (s / c.goal).log2().max(0.0))
            .fold(0.0f64, f64::max)
            + 24.0;
        let bits2 = (bits + 32).max(need.ceil() as u32 + 8);
        let mut exact2: Vec<ExactTerm> = Vec::with_capacity(exact.len() + extra.len());
        exact2.extend(exact.iter().chain(&extra).map(|t| ExactTerm {
            coef: t.coef.clone(),
            d: t.d.clone(),
        }));
        let c2 = cheb_order(n, n1 + 5, f64::from(bits2 - light) - 24.0).max(cheb + 4);
        let p2 = RunParams {
            bits: bits2,
            light: light.min(bits2 - 64),
            min_level: r1.level,
            n1: n1 + 4,
            cheb: c2,
            cheb2: c2 + 3.max(c2 / 4),
            trunc: 1e-6,
        };
        let r2 = setup.run(&p2, &exact2)?;
        let mut errs = Vec::with_capacity(comps.len());
        let mut ok = true;
        let mut worst = (0.0f64, 0.0f64, 0.0f64);
        for (c, comp) in comps.iter().enumerate() {
            let diff = Float::with_val(53, &r1.values[c] - &r2.values[c])
                .abs()
                .to_f64();
            let err = diff.max(r2.est[c]);
            let ratio = if err.is_nan() {
                f64::INFINITY
            } else {
                err / comp.goal
            };
            ok &= err < comp.goal;
            if ratio >= worst.0 {
                worst = (ratio, err * comp.scale, comp.goal * comp.scale);
            }
            errs.push(err);
        }
        if ok {
            return Ok(VectorSum {
                values: r2.values,
                errs,
                bound: r2.bound,
                tail: r2.tail,
                continuum: r2.cont,
                bits: bits2,
                nodes: r2.nodes,
                terms: r2.terms,
            });
        }
        if worst.0 < best.0 {
            best = worst;
        }
        bits = bits2 + 32;
        cheb = c2 + 8;
        min_level = r2.level + 1;
    }
    Err(BetheError::NoConvergence {
        method: METHOD,
        n,
        l,
        achieved: best.1,
        goal: best.2,
    })
}
