//! The Sturmian sum of one channel at one photon energy, in closed form.
//!
//! At E = E_n - w = -1/(2 nu^2) (Z = 1), with tau = (nu - n)/(nu + n),
//! z = tau^2, beta = 2L+2 and a = L + 1 - nu, the overlaps of g_L with the
//! Sturmians of scale nu are O_k = sqrt(S2 (1-z)^beta (beta)_k/k!) tau^k P(k)
//! with P(k) = sum_i coef_i (-tau)^i M_i(k; beta, z) (Meixner polynomials), so
//!
//! ```text
//! J_L(nu) = nu * S2 * T,   T = sum_k w_k P(k)^2 / (k + a),   w_k = (1-z)^beta z^k (beta)_k / k!
//! ```
//!
//! By orthogonality, sum_k w_k M_i M_j / (k+a) = M_i(-a) rho_j for i <= j, with
//! rho_j = sum_k w_k M_j(k) / (k+a) the functions of the second kind, so T
//! costs O(M) once rho_0 = m(a) is known ([`super::stieltjes`]). Both M_i(-a)
//! and rho_i obey the Meixner three-term recurrence; rho is computed forward
//! when z is close to 1 and by backward (Miller) recurrence otherwise.

use super::channel::ChannelFloat;
use super::meter::Meter;
use super::scale::exp2_of;
use super::stieltjes::{meixner_stieltjes, stieltjes_cost, stieltjes_log_coef, ZPoint};
use rug::{Assign, Float};

/// Photon-energy point data for the node nu (shared by both channels).
#[derive(Debug, Clone)]
pub(crate) struct NuPoint {
    /// nu (bohr-like scale of the Sturmians), 0 < nu < n.
    pub(crate) nu: Float,
    /// tau = (nu - n)/(nu + n).
    pub(crate) tau: Float,
    /// z, 1 - z and mu = -ln z.
    pub(crate) zp: ZPoint,
}

impl NuPoint {
    /// Builds the point for state principal number `n` without cancellation:
    /// 1 - z = 4 n nu / (n + nu)^2, mu = 2 ln((n + nu)/(n - nu)).
    pub(crate) fn new(n: u32, nu: &Float) -> Self {
        let prec = nu.prec();
        let np = Float::with_val(prec, nu + n);
        let nm = Float::with_val(prec, nu - n);
        let tau = Float::with_val(prec, &nm / &np);
        let z = Float::with_val(prec, &tau * &tau);
        let one_minus_z = Float::with_val(prec, nu * 4u32) * n / Float::with_val(prec, &np * &np);
        let mu = Float::with_val(prec, (Float::with_val(prec, &np / -nm)).ln()) * 2u32;
        NuPoint {
            nu: nu.clone(),
            tau,
            zp: ZPoint { z, one_minus_z, mu },
        }
    }
}

/// J_L at one node, with the coefficient of -ln(mu) separated:
/// J = regular - log_coef * ln(mu) (log_coef is 0 when z < Z_SERIES).
#[derive(Debug, Clone)]
pub(crate) struct JValue {
    /// weight * J_L(nu).
    pub(crate) j: Float,
    /// weight * (coefficient of -ln mu in J_L).
    pub(crate) log_coef: Float,
}

/// Work space for the Meixner three-term recurrence
/// z (i+beta) X_{i+1} = [i + (i+beta) z + (1-z) a] X_i - i X_{i-1}.
struct Rec {
    z: Float,
    c1: Float,
    beta: u32,
    t1: Float,
    t2: Float,
}

impl Rec {
    fn new(beta: u32, a: &Float, pt: &ZPoint) -> Self {
        let prec = a.prec();
        Rec {
            z: pt.z.clone(),
            c1: Float::with_val(prec, &pt.one_minus_z * a),
            beta,
            t1: Float::new(prec),
            t2: Float::new(prec),
        }
    }

    /// X_{i+1} from X_i, X_{i-1} (forward).
    fn forward(&mut self, i: usize, xi: &Float, xim1: &Float) -> Float {
        let mut out = Float::new(xi.prec());
        self.forward_into(i, xi, xim1, &mut out);
        out
    }

    /// X_{i+1} from X_i, X_{i-1} (forward), written into `out` (whose
    /// precision is kept).
    fn forward_into(&mut self, i: usize, xi: &Float, xim1: &Float, out: &mut Float) {
        let ib = i as u32 + self.beta;
        // t2 = z (i + beta); t1 = (t2 + i + c1) X_i - i X_{i-1}
        self.t2.assign(&self.z * ib);
        self.t1.assign(&self.t2 + &self.c1);
        self.t1 += i as u32;
        self.t1 *= xi;
        out.assign(xim1 * i as u32);
        self.t1 -= &*out;
        out.assign(&self.t1 / &self.t2);
    }

    /// X_{i-1} from X_i, X_{i+1} (backward): (b_i X_i - z (i+beta) X_{i+1}) / i,
    /// written into `out`.
    fn backward_into(&mut self, i: usize, xi: &Float, xip1: &Float, out: &mut Float) {
        self.t2.assign(&self.z * (i as u32 + self.beta));
        self.backward_rest(i, xi, xip1, out);
    }

    /// The rest of a backward step, with t2 = z (i+beta) already set.
    fn backward_rest(&mut self, i: usize, xi: &Float, xip1: &Float, out: &mut Float) {
        self.t1.assign(&self.t2 + &self.c1);
        self.t1 += i as u32;
        self.t1 *= xi;
        self.t2 *= xip1;
        self.t1 -= &self.t2;
        out.assign(&self.t1 / i as u32);
    }

    /// As [`Rec::backward_into`], and on the way, one step of Horner's scheme for the
    /// normalization sum of [`miller_rho`]: h <- X_i + z (i+beta)/(i+1) h.
    fn backward_horner(
        &mut self,
        i: usize,
        xi: &Float,
        xip1: &Float,
        out: &mut Float,
        h: &mut Float,
    ) {
        self.t2.assign(&self.z * (i as u32 + self.beta));
        *h *= &self.t2;
        *h /= i as u32 + 1;
        *h += xi;
        self.backward_rest(i, xi, xip1, out);
    }
}

/// weight * J_L(nu) for one channel, with its logarithmic coefficient.
///
/// # Accuracy
/// Cancellation (in m(a), in the recurrences, in the normalization of the
/// backward route and in the final sum) is partly recorded in `meter`; the
/// caller measures the rest by comparing precisions (see the pilot module).
#[cfg(test)]
pub(crate) fn channel_j(ch: &ChannelFloat, p: &NuPoint, meter: &mut Meter) -> JValue {
    channel_j_with(ch, p, meter, None, true).0
}

/// weight * J_L(nu) for one channel (as `channel_j`), with Phi(z, 1, L+1-nu)
/// supplied by the caller when known; also returns the Phi used (None when
/// none was needed: the series route of m(a), or the backward route of the
/// second-kind functions, which needs no m(a)). The logarithmic coefficient
/// is computed only when `with_log` is set (it is 0 otherwise); the value
/// does not depend on `with_log`.
pub(crate) fn channel_j_with(
    ch: &ChannelFloat,
    p: &NuPoint,
    meter: &mut Meter,
    phi_hint: Option<&Float>,
    with_log: bool,
) -> (JValue, Option<Float>) {
    let prec = p.nu.prec();
    let beta = ch.beta;
    let zp = &p.zp;
    let a = Float::with_val(prec, (ch.big_l + 1) - Float::with_val(prec, &p.nu));
    let m = ch.coef.len();
    if m == 0 {
        let zero = JValue {
            j: Float::with_val(prec, 0),
            log_coef: Float::with_val(prec, 0),
        };
        return (zero, None);
    }
    let mut rec = Rec::new(beta, &a, zp);
    let sk = second_kind(&mut rec, &a, zp, m, meter, phi_hint, with_log);
    // T = sum_j eta_j rho_j [eta_j M_j + 2 S_{j-1}],  S_j = sum_{i<=j} eta_i M_i,
    // with eta_j = coef_j (-tau)^j and M_j = M_j(-a) (forward recurrence,
    // M_0 = 1, M_1 = 1 + a (1-z)/(z beta)), both formed on the way
    let mtau = Float::with_val(prec, -&p.tau);
    let mut pw = Float::with_val(prec, 1);
    let mut eta = Float::new(prec);
    let mut m_prev = Float::with_val(prec, 1); // M_{j-1}
    let mut m_cur = Float::with_val(prec, 1); // M_j
    let mut m_next = Float::new(prec);
    let mut s_prev = Float::with_val(prec, 0);
    let mut t = Float::with_val(prec, 0);
    let mut em = Float::new(prec);
    let mut inner = Float::new(prec);
    let mut biggest = Float::with_val(prec, 0);
    for (j, (c, rho_j)) in ch.coef.iter().zip(&sk.rho).enumerate() {
        if j == 1 {
            let zb = Float::with_val(prec, &zp.z * beta);
            m_cur.assign(&rec.c1 / &zb);
            m_cur += 1u32;
        } else if j > 1 {
            rec.forward_into(j - 1, &m_cur, &m_prev, &mut m_next);
            std::mem::swap(&mut m_prev, &mut m_cur);
            std::mem::swap(&mut m_cur, &mut m_next);
        }
        eta.assign(c * &pw);
        pw *= &mtau;
        em.assign(&eta * &m_cur);
        inner.assign(&s_prev * 2u32);
        inner += &em;
        inner *= &eta;
        inner *= rho_j;
        if inner.cmp_abs(&biggest) == Some(std::cmp::Ordering::Greater) {
            biggest.assign(&inner);
        }
        t += &inner;
        s_prev += &em;
    }
    meter.term(&biggest);
    meter.result(&t);
    let scale = Float::with_val(prec, &ch.ws2 * &p.nu);
    // P(-a) = S_{M}; log part of T = P(-a)^2 * log_coef(m)
    let log_coef = if with_log {
        let p2 = Float::with_val(prec, &s_prev * &s_prev);
        Float::with_val(prec, p2 * &sk.log_coef) * &scale
    } else {
        Float::with_val(prec, 0)
    };
    let jv = JValue {
        j: Float::with_val(prec, &t * &scale),
        log_coef,
    };
    (jv, sk.phi)
}

/// weight * <phi_s|G_L|phi_s> for several source functions phi_s of one
/// channel at one node (each given by its matched-Sturmian coefficients):
/// the Meixner functions M_i(-a) and the functions of the second kind rho_i
/// (with m(a) where their route needs it) are computed once and shared by
/// every source. Returns one [`JValue`] per source, and the Phi used (None
/// when none was needed: the series route of m(a), or the backward route of
/// the second-kind functions).
///
/// # Accuracy
/// As [`channel_j_with`], whose computation this is for one source; the
/// cancellation of every source's final sum is recorded in `meter`.
pub(crate) fn channel_j_sources(
    big_l: u32,
    beta: u32,
    ws2: &Float,
    coefs: &[Vec<Float>],
    p: &NuPoint,
    meter: &mut Meter,
    phi_hint: Option<&Float>,
) -> (Vec<JValue>, Option<Float>) {
    let prec = p.nu.prec();
    let zp = &p.zp;
    let a = Float::with_val(prec, (big_l + 1) - Float::with_val(prec, &p.nu));
    let m = coefs.iter().map(Vec::len).max().unwrap_or(0);
    if m == 0 {
        let zero = JValue {
            j: Float::with_val(prec, 0),
            log_coef: Float::with_val(prec, 0),
        };
        return (vec![zero; coefs.len()], None);
    }
    let mut rec = Rec::new(beta, &a, zp);
    // M_i(-a): M_0 = 1, M_1 = 1 + a (1-z)/(z beta)
    let zb = Float::with_val(prec, &zp.z * beta);
    let mut mm: Vec<Float> = Vec::with_capacity(m);
    mm.push(Float::with_val(prec, 1));
    if m > 1 {
        let m1 = Float::with_val(prec, &rec.c1 / &zb) + 1u32;
        mm.push(m1);
    }
    for i in 1..m.saturating_sub(1) {
        let next = rec.forward(i, &mm[i], &mm[i - 1]);
        mm.push(next);
    }
    let sk = second_kind(&mut rec, &a, zp, m, meter, phi_hint, true);
    let rho = &sk.rho;
    let mtau = Float::with_val(prec, -&p.tau);
    let scale = Float::with_val(prec, ws2 * &p.nu);
    let mut out = Vec::with_capacity(coefs.len());
    let mut eta = Float::new(prec);
    let mut pw = Float::new(prec);
    let mut em = Float::new(prec);
    let mut inner = Float::new(prec);
    for coef in coefs {
        // T = sum_j eta_j rho_j [eta_j M_j + 2 S_{j-1}],  S_j = sum_{i<=j} eta_i M_i,
        // eta_j = coef_j (-tau)^j
        let mut s_prev = Float::with_val(prec, 0);
        let mut t = Float::with_val(prec, 0);
        let mut biggest = Float::with_val(prec, 0);
        pw.assign(1);
        for (j, c) in coef.iter().enumerate() {
            eta.assign(c * &pw);
            pw *= &mtau;
            em.assign(&eta * &mm[j]);
            inner.assign(&s_prev * 2u32);
            inner += &em;
            inner *= &eta;
            inner *= &rho[j];
            if inner.cmp_abs(&biggest) == Some(std::cmp::Ordering::Greater) {
                biggest.assign(&inner);
            }
            t += &inner;
            s_prev += &em;
        }
        meter.term(&biggest);
        meter.result(&t);
        let p2 = Float::with_val(prec, &s_prev * &s_prev);
        out.push(JValue {
            j: Float::with_val(prec, &t * &scale),
            log_coef: Float::with_val(prec, p2 * &sk.log_coef) * &scale,
        });
    }
    (out, sk.phi)
}

/// The functions of the second kind rho_j (j < m) at one node, the
/// coefficient of -ln(mu) in rho_0 = m(a), and the Lerch value used.
struct SecondKind {
    rho: Vec<Float>,
    /// Coefficient of -ln mu in m(a) (0 when it was not asked for).
    log_coef: Float,
    /// Phi(z, 1, a) when the route computed it.
    phi: Option<Float>,
}

/// How the functions of the second kind are computed at one node.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Route {
    /// Forward from rho_0 = m(a); the estimated loss (bits) of the pass.
    Forward(f64),
    /// Backward (Miller) from the index given, normalized by rho_0 = m(a).
    Miller(usize),
    /// Backward (Miller) from the index given, normalized by the
    /// generating-function identity sum_j (beta)_j/j! z^j rho_j = 1/a.
    MillerNormalized(usize),
}

/// The route of the second-kind functions rho_0..rho_{m-1}, by cost: the
/// forward pass from m(a) when it loses little (or when a backward run
/// normalized by m(a) would cost more than the precision the forward loss
/// needs: slow decay, small beta with z near 1), the backward (Miller) run
/// normalized by m(a) otherwise; and the backward run normalized by the
/// generating-function identity, which needs no m(a), whenever its longer
/// run (the normalization sum must have converged too) costs less than the
/// route so chosen. The choice is made at a fixed reference damping
/// ([`MILLER_DECISION_BITS`], with m(a) costed at that precision) and does
/// not depend on the working precision (only the starting index of a
/// backward run does), so that the pilot (two precisions) sees the same
/// route as the quadrature and measures its loss.
fn choose_route(growth: &RootRatio, m: usize, lz: f64, muf: f64, prec: u32) -> Route {
    let forward_loss: f64 = (1..m).map(|i| growth.bits(i)).sum();
    // the first index above m where the dominant solution has died out by
    // 2^-need (accumulated local ratios; the asymptotic ratio 1/z bounds
    // it), or None when that takes more than `limit` extra steps
    let miller_top = |need: f64, limit: usize| {
        let cap = m + ((need / lz.max(1e-9)).ceil() as usize).min(limit + 1) + 16;
        let mut top = m;
        let mut acc = 0.0;
        while acc < need && top < cap {
            acc += growth.bits(top);
            top += 1;
        }
        let top = (top + 16).min(cap);
        (top - m <= limit).then_some(top)
    };
    let decision_top = if forward_loss <= FORWARD_LOSS_MAX {
        None
    } else {
        miller_top(MILLER_DECISION_BITS, miller_budget(forward_loss, m))
    };
    // costs in multiplications (see `miller_budget`)
    let stieltjes = stieltjes_cost(
        growth.beta as u32,
        growth.z,
        muf,
        growth.a,
        MILLER_DECISION_BITS as u32,
    );
    let coef_ops = OPS_PER_COEF * m as f64;
    // a forward loss raises the precision of the whole node (of the whole
    // panel, in fact), m(a) included
    let chosen_cost = match decision_top {
        None => (stieltjes + coef_ops) * precision_factor(forward_loss),
        Some(top) => stieltjes + coef_ops + OPS_PER_MILLER_STEP * top as f64,
    };
    let steps_affordable = (chosen_cost - coef_ops) / (OPS_PER_MILLER_STEP + OPS_PER_HORNER_STEP);
    if steps_affordable >= m as f64 {
        let limit = steps_affordable as usize;
        let normalized_top = miller_top(MILLER_DECISION_BITS, limit - m)
            .and_then(|from| growth.sum_top(MILLER_DECISION_BITS, from, limit));
        if normalized_top.is_some() {
            let need = f64::from(prec) + 40.0;
            let from = miller_top(need, usize::MAX / 2).unwrap_or(m);
            if let Some(top) = growth.sum_top(need, from, usize::MAX / 2) {
                return Route::MillerNormalized(top);
            }
        }
    }
    match decision_top {
        None => Route::Forward(forward_loss),
        Some(_) => match miller_top(f64::from(prec) + 40.0, usize::MAX / 2) {
            Some(top) => Route::Miller(top),
            None => Route::Forward(forward_loss),
        },
    }
}

/// rho_i, i = 0..m, by the route of [`choose_route`]: forward from
/// rho_0 = m(a), or backward (Miller) normalized by the generating-function
/// identity (no m(a) then; its logarithmic coefficient is formed alone, when
/// `with_log` asks for it).
fn second_kind(
    rec: &mut Rec,
    a: &Float,
    zp: &ZPoint,
    m: usize,
    meter: &mut Meter,
    phi_hint: Option<&Float>,
    with_log: bool,
) -> SecondKind {
    let prec = a.prec();
    let beta = rec.beta;
    let lz = -zp.z.to_f64().log2();
    let growth = RootRatio::new(beta, a.to_f64(), zp.z.to_f64(), zp.one_minus_z.to_f64());
    match choose_route(&growth, m, lz, zp.mu.to_f64(), prec) {
        Route::Forward(forward_loss) => {
            let (st, phi) = meixner_stieltjes(beta, a, zp, meter, phi_hint, with_log);
            let rho = forward_rho(rec, a, zp, st.value, m, forward_loss, meter);
            SecondKind {
                rho,
                log_coef: st.log_coef,
                phi,
            }
        }
        Route::Miller(top) => {
            let (st, phi) = meixner_stieltjes(beta, a, zp, meter, phi_hint, with_log);
            let mut rho = miller_rho(rec, a, m, top, false, meter);
            // rho_j = y_j rho_0 / y_0
            let norm = Float::with_val(prec, &st.value / &rho[0]);
            rho[0].assign(&st.value);
            for v in rho.iter_mut().skip(1) {
                *v *= &norm;
            }
            SecondKind {
                rho,
                log_coef: st.log_coef,
                phi,
            }
        }
        Route::MillerNormalized(top) => {
            let rho = miller_rho(rec, a, m, top, true, meter);
            let log_coef = if with_log {
                stieltjes_log_coef(beta, a, zp)
            } else {
                Float::with_val(prec, 0)
            };
            SecondKind {
                rho,
                log_coef,
                phi: None,
            }
        }
    }
}

/// rho_0..rho_{m-1} by the forward recurrence from rho_0 = m(a); the
/// estimated loss of the pass is recorded in `meter`.
fn forward_rho(
    rec: &mut Rec,
    a: &Float,
    zp: &ZPoint,
    rho0: Float,
    m: usize,
    forward_loss: f64,
    meter: &mut Meter,
) -> Vec<Float> {
    let prec = a.prec();
    let mut rho = Vec::with_capacity(m);
    if m == 1 {
        rho.push(rho0);
        return rho;
    }
    meter.loss(forward_loss.ceil() as i32);
    // rho_1 = rho_0 - (1-z)(1 - a rho_0)/(z beta)
    let zb = Float::with_val(prec, &zp.z * rec.beta);
    let one_m_arho = Float::with_val(prec, 1u32 - Float::with_val(prec, a * &rho0));
    let r1 = Float::with_val(
        prec,
        &rho0 - Float::with_val(prec, &zp.one_minus_z * &one_m_arho) / &zb,
    );
    meter.term(&rho0);
    meter.result(&r1);
    rho.push(rho0);
    rho.push(r1);
    for i in 1..m - 1 {
        let next = rec.forward(i, &rho[i], &rho[i - 1]);
        rho.push(next);
    }
    rho
}

/// The backward (Miller) recurrence from `top` (y_top = 1, y_(top+1) = 0):
/// y_0..y_{m-1}, proportional to rho_0..rho_{m-1}. With `normalize` they
/// are scaled to rho_j by the generating-function identity
///
/// ```text
/// sum_j (beta)_j / j! z^j rho_j = 1 / a
/// ```
///
/// (the generating function sum_j (beta)_j/j! M_j(k) t^j =
/// (1 - t/z)^k (1 - t)^(-k-beta) of the Meixner polynomials at t = z keeps
/// only k = 0 of rho_j = sum_k w_k M_j(k)/(k + a); docs/physics.md,
/// section 4.3), whose sum is formed by Horner's scheme during the pass, so
/// that no m(a) is needed; without it they are returned as they are.
///
/// # Accuracy
/// `top` must lie where the dominant solution has died out and where the
/// terms of the normalization sum have fallen 2^-(prec + 40) below their
/// largest ([`choose_route`]). For a > 0 every rho_j is positive
/// (rho_j = (1-z)^beta int_0^1 s^(a-1) (1-s)^j (1-sz)^(-j-beta) ds), so the
/// sum has no cancellation; for a < 0 (nu > L + 1) it can cancel near the
/// poles a = -k, and the loss, max_j |sum_{i >= j} terms| / |sum|, is
/// recorded in `meter`.
fn miller_rho(
    rec: &mut Rec,
    a: &Float,
    m: usize,
    top: usize,
    normalize: bool,
    meter: &mut Meter,
) -> Vec<Float> {
    let prec = a.prec();
    let beta = rec.beta;
    let mut y_hi = Float::with_val(prec, 0); // y_{i+1}
    let mut y = Float::with_val(prec, 1); // y_i, starting at i = top
    let mut y_lo = Float::new(prec); // y_{i-1}
    let mut store: Vec<Float> = vec![Float::new(prec); m];
    if !normalize {
        for i in (1..=top).rev() {
            if i < m {
                store[i].assign(&y);
            }
            rec.backward_into(i, &y, &y_hi, &mut y_lo);
            std::mem::swap(&mut y_hi, &mut y);
            std::mem::swap(&mut y, &mut y_lo);
        }
        store[0].assign(&y);
        return store;
    }
    let track = a.is_sign_negative();
    // log2 of the weight c_j = (beta)_j / j! z^j of the sum at j = top,
    // stepped down with the pass (only for the meter)
    let zf = rec.z.to_f64();
    let mut log2_c = if track {
        (0..top)
            .map(|i| (zf * f64::from(beta + i as u32) / (i + 1) as f64).log2())
            .sum::<f64>()
    } else {
        0.0
    };
    let mut worst = f64::NEG_INFINITY;
    // Horner: h = H_{i+1} before step i, H_i = y_i + z (beta + i)/(i + 1) H_{i+1}
    let mut h = Float::with_val(prec, 0);
    for i in (1..=top).rev() {
        if i < m {
            store[i].assign(&y);
        }
        rec.backward_horner(i, &y, &y_hi, &mut y_lo, &mut h);
        if track {
            // c_i H_i: the tail of the sum from i on
            worst = worst.max(log2_c + f64::from(exp2_of(&h)));
            log2_c -= (zf * f64::from(beta + i as u32 - 1) / i as f64).log2();
        }
        std::mem::swap(&mut y_hi, &mut y);
        std::mem::swap(&mut y, &mut y_lo);
    }
    // y = y_0, h = H_1: H_0 = y_0 + z beta H_1
    h *= &rec.z;
    h *= beta;
    h += &y;
    if track {
        worst = worst.max(f64::from(exp2_of(&y)));
        meter.loss((worst - f64::from(exp2_of(&h))).ceil() as i32);
    }
    // rho_j = y_j / (a H_0)
    h *= a;
    h.recip_mut();
    store[0].assign(&y);
    for v in store.iter_mut() {
        *v *= &h;
    }
    store
}

/// Largest estimated loss (bits) of the forward recurrence for rho before
/// the backward (Miller) route is taken.
const FORWARD_LOSS_MAX: f64 = 48.0;

/// Cost per expansion coefficient and channel at one node (the Meixner
/// functions, the channel sum), in multiplications at the working
/// precision: the unit of the cost model of the routes (measured with MPFR
/// at 192 to 416 bits, like the costs of [`stieltjes_cost`]).
const OPS_PER_COEF: f64 = 12.0;

/// Cost of one step of a backward (Miller) run (multiplications).
const OPS_PER_MILLER_STEP: f64 = 5.0;

/// Further cost per backward step of the normalization sum (multiplications).
const OPS_PER_HORNER_STEP: f64 = 2.0;

/// Cost factor of `loss` more bits on a node (operation costs grow like
/// bits^1.6, at a reference precision of 192 bits).
fn precision_factor(loss: f64) -> f64 {
    ((192.0 + loss) / 192.0).powf(1.6)
}

/// Damping (bits) of the dominant solution assumed when the length of a
/// Miller run is compared with the forward route (a fixed value, so that the
/// route does not depend on the working precision).
const MILLER_DECISION_BITS: f64 = 300.0;

/// Most extra steps for which the backward (Miller) route is cheaper than
/// the forward route with `forward_loss` more bits on the whole node.
///
/// Cost model (multiplications, at a reference precision of 192 bits):
/// a node costs about [`OPS_PER_COEF`] m per channel, and precision costs
/// grow like bits^1.6, so `forward_loss` extra bits cost
/// 12 m ((192 + loss)/192)^1.6 - 12 m; a Miller run costs about
/// [`OPS_PER_MILLER_STEP`] per extra step.
fn miller_budget(forward_loss: f64, m: usize) -> usize {
    let penalty = OPS_PER_COEF * m as f64 * (precision_factor(forward_loss) - 1.0);
    (penalty / OPS_PER_MILLER_STEP) as usize
}

/// Local growth of the two solutions of the Meixner recurrence
/// z (i+beta) X_{i+1} = [i + (i+beta) z + (1-z) a] X_i - i X_{i-1}: at step
/// i the solutions grow like the roots t+ > t- of
/// z (i+beta) t^2 - [i + (i+beta) z + (1-z) a] t + i = 0, so a forward pass
/// amplifies the error of the minimal solution by about t+/t- per step, and
/// a backward (Miller) pass damps the dominant one by the same factor.
struct RootRatio {
    beta: f64,
    a: f64,
    z: f64,
    one_minus_z: f64,
}

impl RootRatio {
    fn new(beta: u32, a: f64, z: f64, one_minus_z: f64) -> Self {
        RootRatio {
            beta: f64::from(beta),
            a,
            z,
            one_minus_z,
        }
    }

    /// log2 |t-| at step i >= 1: the local ratio rho_{i+1}/rho_i of the
    /// minimal solution (log2 sqrt(i/q) where the roots are complex).
    ///
    /// # Accuracy
    /// As [`RootRatio::bits`]: a local estimate, used only to choose a
    /// starting index.
    fn minimal_log2(&self, i: usize) -> f64 {
        let i = i as f64;
        let q = self.z * (i + self.beta);
        let b = i + q + self.one_minus_z * self.a;
        let disc = b * b - 4.0 * q * i;
        if disc <= 0.0 {
            return 0.5 * (i / q).log2();
        }
        (2.0 * i / (b.abs() + disc.sqrt())).log2()
    }

    /// The first index j >= `from` at which the terms
    /// (beta)_j/j! z^j rho_j of the normalization sum of [`miller_rho`]
    /// have fallen 2^-need below the largest term seen, plus 16; None when
    /// that index is above `limit`.
    fn sum_top(&self, need: f64, from: usize, limit: usize) -> Option<usize> {
        let mut log2_term = 0.0f64;
        let mut peak = 0.0f64;
        let mut j = 1usize;
        loop {
            if j >= from && log2_term < peak - need {
                return (j + 16 <= limit).then_some(j + 16);
            }
            if j > limit {
                return None;
            }
            log2_term +=
                (self.z * (self.beta + j as f64) / (j + 1) as f64).log2() + self.minimal_log2(j);
            peak = peak.max(log2_term);
            j += 1;
        }
    }

    /// log2(t+/t-) at step i >= 1 (0 where the roots are complex).
    ///
    /// # Accuracy
    /// A local (Poincare-Perron) estimate in f64: it follows the actual
    /// growth when the coefficients vary slowly with i, and is used only to
    /// choose a route and a starting index, never in a value.
    fn bits(&self, i: usize) -> f64 {
        let i = i as f64;
        let q = self.z * (i + self.beta);
        let b = i + q + self.one_minus_z * self.a;
        let disc = b * b - 4.0 * q * i;
        if disc <= 0.0 || i <= 0.0 {
            return 0.0;
        }
        let r = disc.sqrt();
        // t+ / t- = (b + r)^2 / (4 q i), written without cancellation
        let big = b.abs() + r;
        (big * big / (4.0 * q * i)).log2().max(0.0)
    }
}

/// Reference evaluation by direct summation over k of the overlaps (no
/// closed form, no recurrence); cost O(K M). Used to test `channel_j`.
#[cfg(test)]
pub(crate) fn channel_j_direct(ch: &ChannelFloat, p: &NuPoint, kmax: usize) -> Float {
    use rug::ops::Pow;
    let prec = p.nu.prec();
    let beta = ch.beta;
    let zp = &p.zp;
    let m = ch.coef.len();
    let a = Float::with_val(prec, (ch.big_l + 1) - Float::with_val(prec, &p.nu));
    let mtau = Float::with_val(prec, -&p.tau);
    // B''_j = sum_i coef_i C(i,j) (-tau)^(i-j); v_j = j! (1-z)^j B''_j / (beta)_j
    let mut v = Vec::with_capacity(m);
    let mut fact_over_poch = Float::with_val(prec, 1); // j!/(beta)_j
    let mut omz_pow = Float::with_val(prec, 1);
    for j in 0..m {
        let mut b = Float::with_val(prec, 0);
        let mut pw = Float::with_val(prec, 1);
        let mut binom = rug::Integer::from(1);
        for i in j..m {
            b += Float::with_val(prec, &ch.coef[i] * &pw) * &binom;
            pw *= &mtau;
            binom *= (i + 1) as u32;
            binom /= (i + 1 - j) as u32;
        }
        v.push(Float::with_val(prec, &b * &fact_over_poch) * &omz_pow);
        fact_over_poch *= (j + 1) as u32;
        fact_over_poch /= beta + j as u32;
        omz_pow *= &zp.one_minus_z;
    }
    // u_k = sum_j C(k,j) tau^(k-j) v_j ; sum_k (beta)_k/k! u_k^2 /(k+a)
    let mut sum = Float::with_val(prec, 0);
    let mut wk = Float::with_val(prec, 1); // (beta)_k / k!
    for k in 0..kmax {
        let mut u = Float::with_val(prec, 0);
        let mut binom = rug::Integer::from(1);
        for (j, vj) in v.iter().enumerate().take(k.min(m - 1) + 1) {
            let tp = Float::with_val(prec, p.tau.clone().pow((k - j) as u32));
            u += Float::with_val(prec, vj * &tp) * &binom;
            binom *= (k - j) as u32;
            binom /= (j + 1) as u32;
        }
        let term = Float::with_val(prec, &u * &u) * &wk / Float::with_val(prec, &a + k as u32);
        sum += term;
        wk *= beta + k as u32;
        wk /= (k + 1) as u32;
    }
    let omz_beta = Float::with_val(prec, zp.one_minus_z.clone().pow(beta));
    sum * omz_beta * &ch.ws2 * &p.nu
}

#[cfg(test)]
mod normalization_tests {
    use super::*;
    use crate::green::channel::channels;

    fn rel(a: &Float, b: &Float) -> f64 {
        (Float::with_val(a.prec(), a - b) / b).abs().to_f64()
    }

    /// The backward run normalized by the generating-function identity
    /// sum_j (beta)_j/j! z^j rho_j = 1/a gives the same second-kind
    /// functions as the same run normalized by rho_0 = m(a) (Stieltjes
    /// transform with the Lerch function): rho_0 to 2^-200 and every rho_j
    /// to 1e-40 relative at 256 bits, wherever the route choice takes it:
    /// at small L with a < 0 (nu above L + 1), at large L with either sign
    /// of a; the
    /// route must be taken at many nodes of each kind, so that the
    /// comparison cannot pass empty.
    #[test]
    fn normalization_identity_matches_stieltjes() {
        let prec = 256;
        let mut taken = std::collections::BTreeMap::new();
        for &(n, l) in &[
            (8u32, 3u32),
            (12, 5),
            (20, 0),
            (60, 30),
            (200, 1),
            (200, 100),
            (200, 190),
        ] {
            for ch in &channels(n, l).unwrap() {
                let cf = ChannelFloat::new(ch, prec);
                let m = cf.coef.len();
                for k in 1..120 {
                    let nu = Float::with_val(prec, f64::from(n) * f64::from(k) / 120.0 * 0.998_7);
                    let p = NuPoint::new(n, &nu);
                    let a = Float::with_val(prec, (cf.big_l + 1) - Float::with_val(prec, &nu));
                    let growth = RootRatio::new(
                        cf.beta,
                        a.to_f64(),
                        p.zp.z.to_f64(),
                        p.zp.one_minus_z.to_f64(),
                    );
                    let lz = -p.zp.z.to_f64().log2();
                    let Route::MillerNormalized(top) =
                        choose_route(&growth, m, lz, p.zp.mu.to_f64(), prec)
                    else {
                        continue;
                    };
                    let mut rec = Rec::new(cf.beta, &a, &p.zp);
                    let mut meter = Meter::new();
                    let rho = miller_rho(&mut rec, &a, m, top, true, &mut meter);
                    let mut rec = Rec::new(cf.beta, &a, &p.zp);
                    let y = miller_rho(&mut rec, &a, m, top, false, &mut Meter::new());
                    let st = meixner_stieltjes(cf.beta, &a, &p.zp, &mut Meter::new(), None, false)
                        .0
                        .value;
                    let r0 = rel(&rho[0], &st);
                    assert!(
                        r0 < 2f64.powi(-200),
                        "({n},{l}) L={} nu={}: rho_0 {r0:e} from m(a)",
                        cf.big_l,
                        nu.to_f64()
                    );
                    let norm = Float::with_val(prec, &st / &y[0]);
                    for (j, (r, yj)) in rho.iter().zip(&y).enumerate() {
                        let old = Float::with_val(prec, yj * &norm);
                        let rj = rel(r, &old);
                        assert!(
                            rj < 1e-40,
                            "({n},{l}) L={} nu={} j={j}: {rj:e}",
                            cf.big_l,
                            nu.to_f64()
                        );
                    }
                    let kind = (cf.big_l >= 50, a.is_sign_negative());
                    *taken.entry(kind).or_insert(0) += 1;
                }
            }
        }
        // (large L?, a < 0?) -> nodes compared; at small L with a > 0
        // (nu < L + 1, z near 1 for these n) the route is not taken
        for kind in [(false, true), (true, false), (true, true)] {
            let count = taken.get(&kind).copied().unwrap_or(0);
            assert!(
                count >= 5,
                "{kind:?}: route taken at {count} nodes only ({taken:?})"
            );
        }
    }
}
