//! The power and logarithmic sums by the explicit sum over the spectrum.
//!
//! Every requested sum is sum_m c_m d_m^j F(d_m) (velocity-form weights
//! c_m = w_L |<m|p|n l>|^2, d_m in hartree, F = 1 or ln(2|d_m|)), so all of
//! them share the expensive part of a node: the bound-bound squared elements,
//! the tail density and the continuum density are computed once per node and
//! multiplied by each weight. The pieces (bound states up to N1, the Rydberg
//! tail by Chebyshev interpolation, the continuum by tanh-sinh quadrature)
//! and the refinement are those of [`crate::spectral`], applied to the vector
//! of sums with a goal for each component.

use crate::error::BetheError;
use crate::spectral::{
    cheb_order, closed_form_bound_terms, exact_terms, form_of, pow_float, pow_rat, quadrature,
    split_point, tail, ExactTerm, EXACT_MAX_N,
};
use crate::value::Gauge;
use kzero_basis::continuum::{BoundFreeKernel, DipoleForm, LossHint};
use kzero_basis::gradient::Channel;
use kzero_basis::BoundState;
use rug::{Float, Rational};

const METHOD: &str = "spectral";

/// One summed quantity: sum_m c_m d_m^j [ln(2|d_m|)] with an absolute goal.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Component {
    /// Power of d (hartree) in velocity-form language.
    pub j: i32,
    /// Whether the weight carries ln(2|d|).
    pub log: bool,
    /// Absolute error goal on this sum.
    pub goal: f64,
    /// Factor from this sum to the reported quantity (for error messages).
    pub scale: f64,
}

/// Result of the vector sum: per component value and error estimate.
pub(crate) struct VectorSum {
    pub values: Vec<Float>,
    pub errs: Vec<f64>,
    pub bits: u32,
    pub nodes: usize,
    pub terms: usize,
}

fn weights(comps: &[Component], d: &Float, prec: u32) -> Vec<Float> {
    let ln = Float::with_val(prec, Float::with_val(prec, d.abs_ref()) * 2u32).ln();
    comps
        .iter()
        .map(|c| {
            let p = pow_float(d, c.j, prec);
            if c.log {
                p * &ln
            } else {
                p
            }
        })
        .collect()
}

fn weights_exact(comps: &[Component], d: &Rational, prec: u32) -> Vec<Float> {
    let ln = Float::with_val(prec, &(Rational::from(d.abs_ref()) * 2u32)).ln();
    comps
        .iter()
        .map(|c| {
            let p = Float::with_val(prec, &pow_rat(d, c.j));
            if c.log {
                p * &ln
            } else {
                p
            }
        })
        .collect()
}

#[derive(Debug, Clone, Copy)]
struct RunParams {
    bits: u32,
    min_level: u32,
    n1: u32,
    cheb: usize,
    cheb2: usize,
    trunc: f64,
}

struct RunResult {
    values: Vec<Float>,
    est: Vec<f64>,
    abs_sum: Vec<f64>,
    level: u32,
    nodes: usize,
    terms: usize,
}

struct Problem<'a> {
    state: BoundState,
    form: DipoleForm,
    comps: &'a [Component],
    kernels: Vec<(BoundFreeKernel, Rational)>,
    /// One loss hint per kernel (its evaluations run along energy sequences).
    hints: Vec<LossHint>,
    closed: bool,
}

fn add_into(acc: &mut [Float], abs: &mut [f64], base: &Float, w: &[Float]) {
    for ((a, s), wi) in acc.iter_mut().zip(abs.iter_mut()).zip(w) {
        let v = Float::with_val(base.prec(), base * wi);
        *s += v.to_f64().abs();
        *a += v;
    }
}

impl Problem<'_> {
    fn shift(&self) -> i32 {
        self.form.velocity_power_shift()
    }

    /// Tail density without the weight, and d, at w = u / a^2.
    fn tail_density(&mut self, u: &Float, a: u32, prec: u32) -> Result<(Float, Float), BetheError> {
        let nu = Float::with_val(prec, a) / Float::with_val(prec, u.sqrt_ref());
        let n = self.state.n();
        let w = Float::with_val(prec, u / (a * a));
        let d = (Float::with_val(prec, Rational::from((1, n * n))) - &w) / 2u32;
        let mut dens = Float::with_val(prec, 0);
        for ((k, wl), hint) in self.kernels.iter().zip(&mut self.hints) {
            let v = k.bound_continued_hinted(&nu, prec, hint)?;
            dens += Float::with_val(prec, v.value.square_ref()) * wl;
        }
        dens *= pow_float(&d, self.shift(), prec);
        Ok((dens, d))
    }

    /// Continuum density per dphi (without the weight) and d at a node.
    fn cont_density(
        &mut self,
        sin: &Float,
        cos: &Float,
        prec: u32,
    ) -> Result<(Float, Float), BetheError> {
        let kap = Float::with_val(prec, &self.state.kappa());
        let k = Float::with_val(prec, &kap * sin) / cos;
        let c2 = Float::with_val(prec, cos * cos);
        let kap2 = Float::with_val(prec, &kap * &kap);
        let d = Float::with_val(prec, &kap2 / &c2) / 2u32;
        let de = Float::with_val(prec, &kap2 * sin) / &c2 / cos;
        let mut dens = Float::with_val(prec, 0);
        for ((kern, wl), hint) in self.kernels.iter().zip(&mut self.hints) {
            let v = kern.continuum_k_hinted(&k, prec, hint)?;
            dens += Float::with_val(prec, v.value.square_ref()) * wl;
        }
        dens *= pow_float(&d, self.shift(), prec);
        Ok((dens * de, d))
    }

    fn run(&mut self, p: &RunParams, exact: &[ExactTerm]) -> Result<RunResult, BetheError> {
        let b = p.bits;
        let nc = self.comps.len();
        let zero = || vec![Float::with_val(b, 0); nc];
        let mut bound = zero();
        let mut abs_sum = vec![0.0f64; nc];
        for t in exact {
            let base = Float::with_val(b, &t.coef);
            add_into(
                &mut bound,
                &mut abs_sum,
                &base,
                &weights_exact(self.comps, &t.d, b),
            );
        }
        let mut closed_terms = 0;
        if self.closed {
            let comps = self.comps;
            let shift = self.shift();
            closed_terms = closed_form_bound_terms(
                &self.kernels,
                &mut self.hints,
                &self.state,
                shift,
                p.n1,
                b,
                |v, d| add_into(&mut bound, &mut abs_sum, &v, &weights(comps, d, b)),
            )?;
        }
        // tail: the densities at the Chebyshev points serve every component
        let a = p.n1 + 1;
        let mut tails: Vec<Vec<Float>> = Vec::new();
        let mut tail_terms = 0;
        for kk in [p.cheb, p.cheb2] {
            let us = tail::nodes(kk, b);
            let mut vals: Vec<Vec<Float>> = vec![Vec::with_capacity(kk); nc];
            for u in &us {
                let (dens, d) = self.tail_density(u, a, b)?;
                for (c, w) in weights(self.comps, &d, b).into_iter().enumerate() {
                    vals[c].push(Float::with_val(b, &dens * &w));
                }
            }
            tail_terms += kk;
            let coefs = tail::coefficients_many(&vals, b);
            let refs: Vec<&[Float]> = coefs.iter().map(Vec::as_slice).collect();
            tails.push(tail::sum_many(&refs, a, b));
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
            *s += t.to_f64().abs();
        }
        // continuum: walk out until every weighted integrand is below its
        // truncation threshold on each side
        let mut ends = [0.0f64; 2];
        for (side, sign) in [(0usize, -1.0f64), (1, 1.0)] {
            let mut t = 2.0f64;
            loop {
                let tau = Float::with_val(b, t * sign);
                let nd = quadrature::node(&tau, b);
                let (f, d) = self.cont_density(&nd.sin, &nd.cos, b)?;
                let fw = Float::with_val(b, &f * &nd.weight);
                let ws = weights(self.comps, &d, b);
                // (ratio to the threshold, size on the reported scale, goal there)
                let worst = ws
                    .iter()
                    .zip(self.comps)
                    .map(|(w, c)| {
                        let v = Float::with_val(53, &fw * w).abs().to_f64();
                        (v / (c.goal * p.trunc), v * c.scale, c.goal * c.scale)
                    })
                    .fold((0.0f64, 0.0, 0.0), |a, x| if x.0 > a.0 { x } else { a });
                if worst.0 < 1.0 {
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
        let mut acc = zero();
        let mut abs_acc = vec![0.0f64; nc];
        let mut prev: Option<Vec<Float>> = None;
        let mut nodes = 0usize;
        let mut level = 0u32;
        let mut cont_est = vec![f64::INFINITY; nc];
        let cont = loop {
            for (i, den) in quadrature::level_taus(level, tlo, thi) {
                let tau = Float::with_val(b, i) / den as u32;
                let nd = quadrature::node(&tau, b);
                let (f, d) = self.cont_density(&nd.sin, &nd.cos, b)?;
                let fw = Float::with_val(b, &f * &nd.weight);
                for (c, w) in weights(self.comps, &d, b).into_iter().enumerate() {
                    let v = Float::with_val(b, &fw * &w);
                    abs_acc[c] = abs_acc[c].max(v.to_f64().abs());
                    acc[c] += v;
                }
                nodes += 1;
            }
            let h = Float::with_val(b, Float::i_exp(1, -(level as i32)));
            let cur: Vec<Float> = acc.iter().map(|s| Float::with_val(b, s * &h)).collect();
            let mut done = level >= 9;
            if let Some(pv) = &prev {
                let mut all = level >= p.min_level;
                for c in 0..nc {
                    cont_est[c] = Float::with_val(53, &cur[c] - &pv[c]).abs().to_f64();
                    if cont_est[c] >= self.comps[c].goal * 0.25 {
                        all = false;
                    }
                }
                done |= all;
            }
            if done {
                break cur;
            }
            prev = Some(cur);
            level += 1;
        };
        let mut values = Vec::with_capacity(nc);
        let mut est = Vec::with_capacity(nc);
        for c in 0..nc {
            abs_sum[c] += abs_acc[c] * 4.0 + cont[c].to_f64().abs();
            let mut v = Float::with_val(b, &bound[c] + &tail[c]);
            v += &cont[c];
            values.push(v);
            let rounding = abs_sum[c] * f64::from(b as i32 - 12).exp2().recip();
            let eps = self.comps[c].goal * p.trunc;
            est.push(tail_est[c] + cont_est[c] + rounding + 2.0 * eps);
        }
        Ok(RunResult {
            values,
            est,
            abs_sum,
            level,
            nodes,
            terms: exact.len() + closed_terms + tail_terms,
        })
    }
}

/// The vector of sums `comps` for (n, l) (validated by the caller) in the
/// dipole form `gauge`, each to its own absolute goal.
///
/// # Errors
/// [`BetheError::NoConvergence`] when some component misses its goal after
/// three attempts; basis errors.
pub(crate) fn vector_sum(
    n: u32,
    l: u32,
    gauge: Gauge,
    comps: &[Component],
) -> Result<VectorSum, BetheError> {
    let state = BoundState::hydrogen(i64::from(n), i64::from(l))?;
    let form = form_of(gauge);
    let mut kernels = Vec::new();
    for ch in Channel::open(l) {
        kernels.push((BoundFreeKernel::new(&state, ch, form)?, ch.weight(l)));
    }
    let hints = vec![LossHint::new(); kernels.len()];
    let mut prob = Problem {
        state,
        form,
        comps,
        kernels,
        hints,
        closed: n > EXACT_MAX_N && form != DipoleForm::Length,
    };
    let n1 = split_point(n);
    let (exact, extra) = if prob.closed {
        (Vec::new(), Vec::new())
    } else {
        (
            exact_terms(&prob.state, form, 1, n1)?,
            exact_terms(&prob.state, form, n1 + 1, n1 + 4)?,
        )
    };
    // bits for the goals on the scale of each sum: the neighbours n +- 1
    // (exact, length form) dominate the sums of negative powers
    let near = exact_terms(
        &prob.state,
        DipoleForm::Length,
        n.saturating_sub(1).max(1),
        n + 1,
    )?;
    let digits_bits = comps
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let mag = near
                .iter()
                .map(|t| {
                    let w = &weights_exact(comps, &t.d, 64)[i];
                    (Float::with_val(64, &t.coef) * w).to_f64().abs()
                })
                .fold(1.0f64, f64::max);
            mag.log2() - c.goal.log2()
        })
        .fold(0.0f64, f64::max);
    let mut bits = ((digits_bits + 32.0).ceil() as u32).max(64);
    let mut cheb = cheb_order(n, n1 + 1, digits_bits + 8.0);
    let mut min_level = 2u32;
    let mut best = f64::INFINITY;
    let mut worst_goal = f64::NAN;
    for _attempt in 0..3 {
        let p1 = RunParams {
            bits,
            min_level,
            n1,
            cheb,
            cheb2: cheb + 3.max(cheb / 4),
            trunc: 1e-3,
        };
        let r1 = prob.run(&p1, &exact)?;
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
        exact2.extend(exact.iter().chain(extra.iter()).map(|t| ExactTerm {
            coef: t.coef.clone(),
            d: t.d.clone(),
        }));
        let c2 = cheb_order(n, n1 + 5, f64::from(bits2) - 24.0).max(cheb + 4);
        let p2 = RunParams {
            bits: bits2,
            min_level: r1.level,
            n1: n1 + 4,
            cheb: c2,
            cheb2: c2 + 3.max(c2 / 4),
            trunc: 1e-6,
        };
        let r2 = prob.run(&p2, &exact2)?;
        let mut errs = Vec::with_capacity(comps.len());
        let mut ok = true;
        let mut ratio = 0.0f64;
        for (c, comp) in comps.iter().enumerate() {
            let diff = Float::with_val(53, &r1.values[c] - &r2.values[c])
                .abs()
                .to_f64();
            let err = diff.max(r2.est[c]);
            if err >= comp.goal || err.is_nan() {
                ok = false;
            }
            if err / comp.goal > ratio {
                ratio = err / comp.goal;
                best = err * comp.scale;
                worst_goal = comp.goal * comp.scale;
            }
            errs.push(err);
        }
        if ok {
            return Ok(VectorSum {
                values: r2.values,
                errs,
                bits: bits2,
                nodes: r2.nodes,
                terms: r2.terms,
            });
        }
        bits = bits2 + 32;
        cheb = c2 + 8;
        min_level = r2.level + 1;
    }
    Err(BetheError::NoConvergence {
        method: METHOD,
        n,
        l,
        achieved: best,
        goal: worst_goal,
    })
}
