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
use rug::ops::SubFrom;
use rug::{Assign, Float};
use std::cell::RefCell;

thread_local! {
    /// Floats kept between nodes on this thread for the stored second-kind
    /// functions of [`miller_rho`], so that a node does not allocate and
    /// free them anew. Only their storage is reused: every element is
    /// written before it is read.
    static SPARE: RefCell<Vec<Float>> = const { RefCell::new(Vec::new()) };
}

/// `m` Floats of precision `prec` (values unspecified), from the spare ones
/// of this thread where there are any.
fn take_floats(m: usize, prec: u32) -> Vec<Float> {
    let mut v = SPARE.with(|s| {
        let mut s = s.borrow_mut();
        let keep = s.len().saturating_sub(m);
        s.split_off(keep)
    });
    for f in v.iter_mut() {
        if f.prec() != prec {
            f.set_prec(prec);
        }
    }
    v.resize_with(m, || Float::new(prec));
    v
}

/// Returns Floats to the spare ones of this thread (at most
/// [`SPARE_MAX`] are kept).
fn give_back(v: Vec<Float>) {
    SPARE.with(|s| {
        let mut s = s.borrow_mut();
        let room = SPARE_MAX.saturating_sub(s.len());
        s.extend(v.into_iter().take(room));
    });
}

/// Most spare Floats kept per thread (a few expansions of the largest n).
const SPARE_MAX: usize = 4096;

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
/// z (j+beta) X_{j+1} = [j + (j+beta) z + (1-z) a] X_j - j X_{j-1}, run on
/// the scaled solutions Q_j = (-tau)^j (beta)_j X_j, which obey
///
/// ```text
/// Q_{j+1} = B_j Q_j - j (beta + j - 1) Q_{j-1},   B_j = B_0 + j Delta,
/// B_0 = -(z beta + (1-z) a) / tau,   Delta = -(1 + z) / tau
/// ```
///
/// (multiply the recurrence by (-tau)^(j+1) (beta)_(j+1) / (z (j+beta)) and
/// use z = tau^2): a step costs one full multiplication, one multiplication
/// by an integer and no division. The scale is harmless: it is the same
/// positive or sign-alternating factor for both solutions, so relative
/// errors propagate as in the unscaled recurrence. With eta_j = coef_j
/// (-tau)^j, eta_j X_j = (coef_j / (beta)_j) Q_j ([`scaled_coefs`]).
struct Rec {
    beta: u32,
    /// B_0.
    b0: Float,
    /// Delta.
    delta: Float,
    /// -tau (for the normalization sum of [`miller_rho`]).
    mtau: Float,
    /// B_j of the step being taken.
    bj: Float,
    t: Float,
}

impl Rec {
    fn new(beta: u32, a: &Float, p: &NuPoint) -> Self {
        let prec = a.prec();
        let zp = &p.zp;
        let mut b0 = Float::with_val(prec, &zp.one_minus_z * a);
        b0 += Float::with_val(prec, &zp.z * beta);
        b0 /= &p.tau;
        b0 = -b0;
        let mut delta = Float::with_val(prec, &zp.z + 1u32);
        delta /= &p.tau;
        delta = -delta;
        Rec {
            beta,
            b0,
            delta,
            mtau: Float::with_val(prec, -&p.tau),
            bj: Float::new(prec),
            t: Float::new(prec),
        }
    }

    /// j (beta + j - 1), the coefficient of Q_{j-1} at step j.
    fn lower_coef(&self, j: usize) -> u64 {
        j as u64 * (u64::from(self.beta) + j as u64 - 1)
    }

    /// bj <- B_j = B_0 + j Delta (two roundings).
    fn set_b(&mut self, j: usize) {
        self.bj.assign(&self.delta * j as u64);
        self.bj += &self.b0;
    }

    /// Q_{j+1} from Q_j, Q_{j-1} (forward), written into `out` (whose
    /// precision is kept).
    fn forward_into(&mut self, j: usize, xj: &Float, xjm1: &Float, out: &mut Float) {
        self.set_b(j);
        self.t.assign(&self.bj * xj);
        out.assign(xjm1 * self.lower_coef(j));
        out.sub_from(&self.t);
    }

    /// Q_{j+1} from Q_j, Q_{j-1} (forward), as a new Float.
    fn forward(&mut self, j: usize, xj: &Float, xjm1: &Float) -> Float {
        let mut out = Float::new(xj.prec());
        self.forward_into(j, xj, xjm1, &mut out);
        out
    }

    /// One forward step of two solutions at once, X_{j+1} into `out` and
    /// Y_{j+1} into `out_y`, with B_j formed once: each value is the same
    /// as that of [`Rec::forward_into`] (the outputs must have the working
    /// precision).
    #[allow(clippy::too_many_arguments)]
    fn forward_pair(
        &mut self,
        j: usize,
        xj: &Float,
        xjm1: &Float,
        out: &mut Float,
        yj: &Float,
        yjm1: &Float,
        out_y: &mut Float,
    ) {
        self.set_b(j);
        let k = self.lower_coef(j);
        for (x, xm1, o) in [(xj, xjm1, out), (yj, yjm1, out_y)] {
            self.t.assign(&self.bj * x);
            o.assign(xm1 * k);
            o.sub_from(&self.t);
        }
    }

    /// Q_{j-1} from Q_j, Q_{j+1} (backward): (B_j Q_j - Q_{j+1}) / (j (beta +
    /// j - 1)), written into `out` (j >= 1).
    fn backward_into(&mut self, j: usize, xj: &Float, xjp1: &Float, out: &mut Float) {
        self.set_b(j);
        self.t.assign(&self.bj * xj);
        self.t -= xjp1;
        out.assign(&self.t / self.lower_coef(j));
    }

    /// As [`Rec::backward_into`], and on the way, one step of Horner's
    /// scheme for the normalization sum of [`miller_rho`]:
    /// h <- Q_j + (-tau)/(j+1) h.
    fn backward_horner(
        &mut self,
        j: usize,
        xj: &Float,
        xjp1: &Float,
        out: &mut Float,
        h: &mut Float,
    ) {
        *h *= &self.mtau;
        *h /= j as u64 + 1;
        *h += xj;
        self.backward_into(j, xj, xjp1, out);
    }
}

/// The coefficients coef_j / (beta)_j of the scaled recurrence ([`Rec`])
/// at `prec` bits: eta_j X_j = (coef_j / (beta)_j) Q_j.
///
/// # Accuracy
/// Each is formed from the exact coef_j at prec + 32 bits, divided by the
/// running product (beta)_j at prec + 32 bits (j roundings, relative error
/// below j 2^-(prec+32)), and rounded once to `prec` bits: within one unit
/// in the last place for j < 2^31.
pub(crate) fn scaled_coefs(coef: &[rug::Rational], beta: u32, prec: u32) -> Vec<Float> {
    let wp = prec + 32;
    let mut poch = Float::with_val(wp, 1);
    let mut out = Vec::with_capacity(coef.len());
    for (j, c) in coef.iter().enumerate() {
        let v = Float::with_val(wp, c) / &poch;
        out.push(Float::with_val(prec, &v));
        poch *= u64::from(beta) + j as u64;
    }
    out
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
    let m = ch.scaled.len();
    if m == 0 {
        let zero = JValue {
            j: Float::with_val(prec, 0),
            log_coef: Float::with_val(prec, 0),
        };
        return (zero, None);
    }
    let mut rec = Rec::new(beta, &a, p);
    let sk = second_kind(&mut rec, &a, zp, m, meter, phi_hint, with_log);
    // the forward route runs its recurrence here, in step with that of Q_j
    // (the same coefficients); the other routes have stored every R_j
    let (stored, mut forward) = match sk.rho {
        Rho::Stored(rho) => (rho, None),
        // (R_{j-1}, R_j, R_{j+1}) before step j = 0
        Rho::Forward(r0, r1) => (Vec::new(), Some([Float::new(prec), r0, r1])),
    };
    // T = sum_j eta_j rho_j [eta_j M_j + 2 S_{j-1}],  S_j = sum_{i<=j} eta_i M_i,
    // with eta_j = coef_j (-tau)^j and M_j = M_j(-a); in the scaled form
    // eta_j M_j = c_j Q_j and eta_j rho_j = c_j R_j, c_j = coef_j / (beta)_j
    let mut q_prev = Float::with_val(prec, 0); // Q_{j-1}
    let mut q_cur = Float::with_val(prec, 1); // Q_j
    let mut q_next = Float::new(prec);
    let mut s_prev = Float::with_val(prec, 0);
    let mut t = Float::with_val(prec, 0);
    let mut em = Float::new(prec);
    let mut er = Float::new(prec);
    let mut inner = Float::new(prec);
    let mut biggest = Float::with_val(prec, 0);
    for (j, c) in ch.scaled.iter().enumerate() {
        if j == 1 {
            // Q_1 = B_0 (the rho of the forward route start at R_1)
            rec.forward_into(0, &q_cur, &q_prev, &mut q_next);
        } else if j > 1 {
            match forward.as_mut() {
                None => rec.forward_into(j - 1, &q_cur, &q_prev, &mut q_next),
                Some([r_prev, r_cur, r_next]) => {
                    if r_next.prec() != prec {
                        r_next.set_prec(prec);
                    }
                    rec.forward_pair(j - 1, &q_cur, &q_prev, &mut q_next, r_cur, r_prev, r_next);
                }
            }
        }
        if j > 0 {
            std::mem::swap(&mut q_prev, &mut q_cur);
            std::mem::swap(&mut q_cur, &mut q_next);
        }
        let r_j = match forward.as_mut() {
            None => &stored[j],
            Some(r) => {
                if j > 0 {
                    r.rotate_left(1);
                }
                &r[1]
            }
        };
        em.assign(c * &q_cur);
        er.assign(c * r_j);
        inner.assign(&s_prev << 1u32);
        inner += &em;
        inner *= &er;
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
    give_back(stored);
    (jv, sk.phi)
}

/// weight * <phi_s|G_L|phi_s> for several source functions phi_s of one
/// channel at one node (each given by its scaled matched-Sturmian
/// coefficients, [`scaled_coefs`]): the scaled Meixner functions Q_j and
/// functions of the second kind R_j (with m(a) where their route needs it)
/// are computed once and shared by every source. Returns one [`JValue`]
/// per source, and the Phi used (None when none was needed: the series
/// route of m(a), or the backward route of the second-kind functions).
///
/// # Accuracy
/// As [`channel_j_with`], whose computation this is for one source; the
/// cancellation of every source's final sum is recorded in `meter`.
pub(crate) fn channel_j_sources(
    big_l: u32,
    beta: u32,
    ws2: &Float,
    scaled: &[Vec<Float>],
    p: &NuPoint,
    meter: &mut Meter,
    phi_hint: Option<&Float>,
) -> (Vec<JValue>, Option<Float>) {
    let prec = p.nu.prec();
    let a = Float::with_val(prec, (big_l + 1) - Float::with_val(prec, &p.nu));
    let m = scaled.iter().map(Vec::len).max().unwrap_or(0);
    if m == 0 {
        let zero = JValue {
            j: Float::with_val(prec, 0),
            log_coef: Float::with_val(prec, 0),
        };
        return (vec![zero; scaled.len()], None);
    }
    let mut rec = Rec::new(beta, &a, p);
    // Q_0 = 1, Q_1 = B_0, ...
    let mut qq: Vec<Float> = Vec::with_capacity(m);
    qq.push(Float::with_val(prec, 1));
    let zero = Float::with_val(prec, 0);
    for i in 0..m.saturating_sub(1) {
        let next = rec.forward(i, &qq[i], if i == 0 { &zero } else { &qq[i - 1] });
        qq.push(next);
    }
    let sk = second_kind(&mut rec, &a, &p.zp, m, meter, phi_hint, true);
    let rho = sk.rho.stored(&mut rec, m);
    let scale = Float::with_val(prec, ws2 * &p.nu);
    let mut out = Vec::with_capacity(scaled.len());
    let mut em = Float::new(prec);
    let mut er = Float::new(prec);
    let mut inner = Float::new(prec);
    for coef in scaled {
        // T = sum_j eta_j rho_j [eta_j M_j + 2 S_{j-1}] with eta_j M_j = c_j Q_j,
        // eta_j rho_j = c_j R_j (see channel_j_with)
        let mut s_prev = Float::with_val(prec, 0);
        let mut t = Float::with_val(prec, 0);
        let mut biggest = Float::with_val(prec, 0);
        for (j, c) in coef.iter().enumerate() {
            em.assign(c * &qq[j]);
            er.assign(c * &rho[j]);
            inner.assign(&s_prev << 1u32);
            inner += &em;
            inner *= &er;
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
    give_back(rho);
    (out, sk.phi)
}

/// The functions of the second kind at one node in the scaled form
/// R_j = (-tau)^j (beta)_j rho_j (j < m; see [`Rec`]; R_0 = rho_0 = m(a)),
/// the coefficient of -ln(mu) in m(a), and the Lerch value used.
struct SecondKind {
    rho: Rho,
    /// Coefficient of -ln mu in m(a) (0 when it was not asked for).
    log_coef: Float,
    /// Phi(z, 1, a) when the route computed it.
    phi: Option<Float>,
}

/// R_0..R_{m-1} as [`second_kind`] leaves them.
enum Rho {
    /// All of them.
    Stored(Vec<Float>),
    /// The forward route with m >= 2: R_0 and R_1 ([`forward_start`]);
    /// the rest follow by the forward recurrence ([`forward_rho`]), which
    /// [`channel_j_with`] runs together with that of Q_j.
    Forward(Float, Float),
}

impl Rho {
    /// All of R_0..R_{m-1}.
    fn stored(self, rec: &mut Rec, m: usize) -> Vec<Float> {
        match self {
            Rho::Stored(rho) => rho,
            Rho::Forward(rho0, rho1) => forward_rho(rec, rho0, rho1, m),
        }
    }
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
    // the local growth summed once, whatever thresholds are asked of it
    let mut scan = Scan::new(growth, m);
    // the first index above m where the dominant solution has died out by
    // 2^-need (accumulated local ratios; the asymptotic ratio 1/z bounds
    // it), or None when that takes more than `limit` extra steps
    let miller_top = |scan: &mut Scan, need: f64, limit: usize| {
        let cap = m + ((need / lz.max(1e-9)).ceil() as usize).min(limit + 1) + 16;
        let top = m + scan.damping_reaches(need, cap - m);
        let top = (top + 16).min(cap);
        (top - m <= limit).then_some(top)
    };
    let decision_top = if forward_loss <= FORWARD_LOSS_MAX {
        None
    } else {
        miller_top(
            &mut scan,
            MILLER_DECISION_BITS,
            miller_budget(forward_loss, m),
        )
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
        let normalized_top = miller_top(&mut scan, MILLER_DECISION_BITS, limit - m)
            .and_then(|from| scan.sum_top(MILLER_DECISION_BITS, from, limit));
        if normalized_top.is_some() {
            let need = miller_need(prec);
            let from = miller_top(&mut scan, need, usize::MAX / 2).unwrap_or(m);
            if let Some(top) = scan.sum_top(need, from, usize::MAX / 2) {
                return Route::MillerNormalized(top);
            }
        }
    }
    match decision_top {
        None => Route::Forward(forward_loss),
        Some(_) => match miller_top(&mut scan, miller_need(prec), usize::MAX / 2) {
            Some(top) => Route::Miller(top),
            None => Route::Forward(forward_loss),
        },
    }
}

/// The route of the second-kind functions of m terms at a = L + 1 - nu
/// (at the working precision of `a`) and the point `zp`
/// ([`choose_route`] with the local growth of the recurrence there).
fn route_at(beta: u32, a: &Float, zp: &ZPoint, m: usize) -> Route {
    let lz = -zp.z.to_f64().log2();
    let growth = RootRatio::new(beta, a.to_f64(), zp.z.to_f64(), zp.one_minus_z.to_f64());
    choose_route(&growth, m, lz, zp.mu.to_f64(), a.prec())
}

/// rho_i, i = 0..m, by the route of [`choose_route`]: forward from
/// rho_0 = m(a) (only started here, see [`Rho::Forward`]), or backward (Miller) normalized by the generating-function
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
    match route_at(beta, a, zp, m) {
        Route::Forward(forward_loss) => {
            let (st, phi) = meixner_stieltjes(beta, a, zp, meter, phi_hint, with_log);
            let rho = if m == 1 {
                Rho::Stored(vec![st.value])
            } else {
                let (rho0, rho1) = forward_start(rec, a, zp, st.value, forward_loss, meter);
                Rho::Forward(rho0, rho1)
            };
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
                rho: Rho::Stored(rho),
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
                rho: Rho::Stored(rho),
                log_coef,
                phi: None,
            }
        }
    }
}

/// rho_0 and rho_1 = rho_0 - (1-z)(1 - a rho_0)/(z beta), the start of the
/// forward recurrence from rho_0 = m(a) (m >= 2), returned in the scaled
/// form R_0 = rho_0, R_1 = -tau beta rho_1 ([`Rec`]); the estimated loss
/// of the forward pass is recorded in `meter`.
fn forward_start(
    rec: &Rec,
    a: &Float,
    zp: &ZPoint,
    rho0: Float,
    forward_loss: f64,
    meter: &mut Meter,
) -> (Float, Float) {
    let prec = a.prec();
    meter.loss(forward_loss.ceil() as i32);
    let zb = Float::with_val(prec, &zp.z * rec.beta);
    let one_m_arho = Float::with_val(prec, 1u32 - Float::with_val(prec, a * &rho0));
    let r1 = Float::with_val(
        prec,
        &rho0 - Float::with_val(prec, &zp.one_minus_z * &one_m_arho) / &zb,
    );
    meter.term(&rho0);
    meter.result(&r1);
    let mut r1 = r1 * &rec.mtau;
    r1 *= rec.beta;
    (rho0, r1)
}

/// R_0..R_{m-1} by the forward recurrence from R_0 and R_1
/// ([`forward_start`]).
fn forward_rho(rec: &mut Rec, rho0: Float, rho1: Float, m: usize) -> Vec<Float> {
    let mut rho = Vec::with_capacity(m);
    rho.push(rho0);
    rho.push(rho1);
    for i in 1..m - 1 {
        let next = rec.forward(i, &rho[i], &rho[i - 1]);
        rho.push(next);
    }
    rho
}

/// The backward (Miller) recurrence of [`Rec`] from `top` (y_top = 1,
/// y_(top+1) = 0): y_0..y_{m-1}, proportional to the scaled second-kind
/// functions R_0..R_{m-1} (R_j = (-tau)^j (beta)_j rho_j). With `normalize`
/// they are scaled to R_j by the generating-function identity
///
/// ```text
/// sum_j (beta)_j / j! z^j rho_j = sum_j (-tau)^j / j! R_j = 1 / a
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
    let mut y_hi = Float::with_val(prec, 0); // y_{i+1}
    let mut y = Float::with_val(prec, 1); // y_i, starting at i = top
    let mut y_lo = Float::new(prec); // y_{i-1}
    let mut store = take_floats(m, prec);
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
    // log2 of the weight |c_j| = |tau|^j / j! of the sum at j = top,
    // stepped down with the pass (only for the meter)
    let lt = rec.mtau.to_f64().abs().log2();
    let mut log2_c = if track {
        (0..top).map(|i| lt - ((i + 1) as f64).log2()).sum::<f64>()
    } else {
        0.0
    };
    let mut worst = f64::NEG_INFINITY;
    // Horner: h = H_{i+1} before step i, H_i = y_i + (-tau)/(i + 1) H_{i+1}
    let mut h = Float::with_val(prec, 0);
    for i in (1..=top).rev() {
        if i < m {
            store[i].assign(&y);
        }
        rec.backward_horner(i, &y, &y_hi, &mut y_lo, &mut h);
        if track {
            // c_i H_i: the tail of the sum from i on
            worst = worst.max(log2_c + f64::from(exp2_of(&h)));
            log2_c -= lt - (i as f64).log2();
        }
        std::mem::swap(&mut y_hi, &mut y);
        std::mem::swap(&mut y, &mut y_lo);
    }
    // y = y_0, h = H_1: H_0 = y_0 + (-tau) H_1
    h *= &rec.mtau;
    h += &y;
    if track {
        worst = worst.max(f64::from(exp2_of(&y)));
        meter.loss((worst - f64::from(exp2_of(&h))).ceil() as i32);
    }
    // R_j = y_j / (a H_0)
    h *= a;
    h.recip_mut();
    store[0].assign(&y);
    for v in store.iter_mut() {
        *v *= &h;
    }
    store
}

/// The damping (bits, by the local estimate [`RootRatio::bits`]) a
/// backward run must reach above m for a working precision of `prec` bits:
/// 1.5 prec + 40.
///
/// # Accuracy
/// Measured, not assumed: the local estimate overstates the damping just
/// above the turning point of the recurrence (where the roots of the
/// characteristic equation are nearly equal, as happens above m for a < 0
/// and moderate z). Aiming at prec + 40 left channel values whose error
/// fell only like 2^(-0.6 prec) (the channel L = 1 of (200,0) at
/// nu = 95.25: relative error 2^-153 at 192 bits, 2^-469 at 640, against a
/// 1536-bit evaluation) and that the pilot then counted as cancellation;
/// with 1.5 prec + 40 the same values are at the rounding level (2^-185,
/// 2^-633), and so are the channels of (200,0), (200,100), (200,180) and
/// (20,10) probed at 192 to 640 bits. Near n = 1000 the estimate is still
/// short there (the channel of (1000,0) at nu = 400: 2^-(p - 78) at 192
/// bits, 2^-(p - 197) at 640); the pilot and the pairs of rules measure
/// what is left.
fn miller_need(prec: u32) -> f64 {
    1.5 * f64::from(prec) + 40.0
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
        match self.minimal_root(i) {
            MinimalRoot::Real(t) => t.log2(),
            MinimalRoot::Complex(t2) => 0.5 * t2.log2(),
        }
    }

    /// |t-| at step i >= 1, or |t-|^2 where the roots are complex: the
    /// number whose log2 (half of it in the complex case) is
    /// [`RootRatio::minimal_log2`].
    #[inline]
    fn minimal_root(&self, i: usize) -> MinimalRoot {
        let i = i as f64;
        let q = self.z * (i + self.beta);
        let b = i + q + self.one_minus_z * self.a;
        let disc = b * b - 4.0 * q * i;
        if disc <= 0.0 {
            return MinimalRoot::Complex(i / q);
        }
        MinimalRoot::Real(2.0 * i / (b.abs() + disc.sqrt()))
    }

    /// log2(t+/t-) at step i >= 1 (0 where the roots are complex).
    ///
    /// # Accuracy
    /// A local (Poincare-Perron) estimate in f64: it follows the actual
    /// growth when the coefficients vary slowly with i, and is used only to
    /// choose a route and a starting index, never in a value.
    fn bits(&self, i: usize) -> f64 {
        self.root_ratio(i).map_or(0.0, |x| x.log2().max(0.0))
    }

    /// t+/t- at step i (None where the roots are complex or i = 0): the
    /// number whose log2, clamped at 0, is [`RootRatio::bits`].
    #[inline]
    fn root_ratio(&self, i: usize) -> Option<f64> {
        let i = i as f64;
        let q = self.z * (i + self.beta);
        let b = i + q + self.one_minus_z * self.a;
        let disc = b * b - 4.0 * q * i;
        if disc <= 0.0 || i <= 0.0 {
            return None;
        }
        let r = disc.sqrt();
        // t+ / t- = (b + r)^2 / (4 q i), written without cancellation
        let big = b.abs() + r;
        Some(big * big / (4.0 * q * i))
    }
}

/// The minimal root of [`RootRatio`] at one step.
enum MinimalRoot {
    /// |t-| (real roots).
    Real(f64),
    /// |t-|^2 = i / (z (i + beta)) (complex roots).
    Complex(f64),
}

/// The f64 sequences behind the route decision of one node, each formed
/// once and kept, however many thresholds [`choose_route`] asks of them.
///
/// The decision is defined by sums of f64 logarithms taken step by step
/// (`damping_exact`, `term_exact`). Those sums are what the thresholds are
/// compared with, but they cost one or two logarithms per step; the
/// searches first run on products of the same f64 numbers, rescaled by
/// powers of two ([`Prod`]), whose logarithm equals the sum to within a
/// bound of a few units in the last place per step. Only a comparison that
/// this bound cannot settle (or a product that leaves the normal range)
/// falls back to the sums themselves, so the answer is always that of the
/// sums.
struct Scan<'g> {
    growth: &'g RootRatio,
    m: usize,
    /// damping[k] = bits(m) + ... + bits(m + k - 1), summed in this order
    /// (damping[0] = 0): the damping (bits) of the dominant solution over a
    /// backward run from m + k down to m. Formed only where needed.
    damping: Vec<f64>,
    /// The products of t+/t- (clamped at 1) over the same steps, as far as
    /// they are normal numbers.
    damping_prod: Vec<Prod>,
    /// For j = 1, 2, ... at index j - 1: (log2 of the j-th term
    /// (beta)_j/j! z^j rho_j of the normalization sum of [`miller_rho`]
    /// relative to the first, the largest of these up to j), each term's
    /// logarithm summed in this order. Formed only where needed.
    terms: Vec<(f64, f64)>,
    /// The same by products, as far as they are normal numbers.
    terms_prod: Vec<TermProd>,
}

/// One entry of [`Scan::terms_prod`].
#[derive(Clone, Copy)]
struct TermProd {
    /// The product of the ratios of successive terms.
    term: Prod,
    /// The largest `term` up to here.
    peak: Prod,
    /// A bound on the sum over the steps so far of the magnitudes of the
    /// logarithms that the step-by-step sum rounds (both of each step's
    /// ratios, and the partial sum).
    size: f64,
}

/// Relative bound (generous) on the rounding of one f64 operation or one
/// libm logarithm, used for the distance between a sum of logarithms and
/// the logarithm of the product: 2^-40, against 2^-52 per step actually
/// reached.
const ROUNDING_BOUND: f64 = 1.0 / 1_099_511_627_776.0;

/// A positive f64 product kept as `mant` 2^`exp` with `mant` in [1, 2),
/// rescaled exactly at every step so that it cannot overflow.
#[derive(Clone, Copy)]
struct Prod {
    mant: f64,
    exp: i64,
}

impl Prod {
    const ONE: Prod = Prod { mant: 1.0, exp: 0 };

    /// self * x (one rounding), or None when that is not a positive normal
    /// number.
    #[inline]
    fn times(self, x: f64) -> Option<Prod> {
        let y = self.mant * x;
        if !(y.is_normal() && y > 0.0) {
            return None;
        }
        let bits = y.to_bits();
        let e = ((bits >> 52) & 0x7ff) as i64 - 1023;
        let mant = f64::from_bits((bits & ((1u64 << 52) - 1)) | (1023u64 << 52));
        Some(Prod {
            mant,
            exp: self.exp + e,
        })
    }

    /// log2 of the product (the logarithm of `mant` in [0, 1) plus `exp`).
    fn log2(self) -> f64 {
        self.exp as f64 + self.mant.log2()
    }

    /// Whether self > other.
    fn above(self, other: Prod) -> bool {
        self.exp > other.exp || (self.exp == other.exp && self.mant > other.mant)
    }
}

/// |log2 x| + 1 bounded from above through the exponent of x (positive,
/// normal).
fn log2_size(x: f64) -> f64 {
    let e = ((x.to_bits() >> 52) & 0x7ff) as i64 - 1023;
    (e.abs() + 2) as f64
}

/// Where a sum of logarithms stands against a threshold, when the
/// logarithm `approx` of the product is within `margin` of the sum.
#[derive(PartialEq)]
enum Side {
    Below,
    AtOrAbove,
    Unsure,
}

fn side(approx: f64, threshold: f64, margin: f64) -> Side {
    if approx < threshold - margin {
        Side::Below
    } else if approx >= threshold + margin {
        Side::AtOrAbove
    } else {
        Side::Unsure
    }
}

impl<'g> Scan<'g> {
    fn new(growth: &'g RootRatio, m: usize) -> Self {
        Scan {
            growth,
            m,
            damping: vec![0.0],
            damping_prod: vec![Prod::ONE],
            terms: vec![(0.0, 0.0)],
            terms_prod: vec![TermProd {
                term: Prod::ONE,
                peak: Prod::ONE,
                size: 0.0,
            }],
        }
    }

    /// bits(m) + ... + bits(m + k - 1) (0 for k = 0), summed in this order.
    fn damping_exact(&mut self, k: usize) -> f64 {
        while self.damping.len() <= k {
            let last = self.damping[self.damping.len() - 1];
            let i = self.m + self.damping.len() - 1;
            self.damping.push(last + self.growth.bits(i));
        }
        self.damping[k]
    }

    /// Extends `damping_prod` by up to `steps` entries (fewer when a
    /// product leaves the normal range; it stays short then).
    fn extend_damping_prod(&mut self, steps: usize) {
        let len = self.damping_prod.len();
        let mut last = self.damping_prod[len - 1];
        self.damping_prod.reserve(steps);
        for i in self.m + len - 1..self.m + len - 1 + steps {
            // bits(i) is the log2 of the same number, clamped at 0 (0 also
            // where it is NaN, like f64::max)
            let x = self.growth.root_ratio(i).map_or(1.0, |x| x.max(1.0));
            match last.times(x) {
                Some(p) => {
                    self.damping_prod.push(p);
                    last = p;
                }
                None => return,
            }
        }
    }

    /// The first k in 0..kmax with damping_exact(k) >= need, or kmax.
    fn damping_reaches(&mut self, need: f64, kmax: usize) -> usize {
        const BLOCK: usize = 32;
        let mut k = 0;
        while k < kmax {
            if k == self.damping_prod.len() {
                self.extend_damping_prod(BLOCK.min(kmax - k));
                if k == self.damping_prod.len() {
                    // a product left the normal range
                    return self.damping_reaches_exact(need, kmax);
                }
            }
            let end = self.damping_prod.len().min(kmax);
            // the sum of k nonnegative logarithms against `need`, and the
            // logarithm of their product, are within `margin` of each
            // other (the largest over this stretch of k)
            let margin = ROUNDING_BOUND * (end as f64 + 4.0) * (need.abs() + 8.0);
            // log2 of a product lies in [exp, exp + 1)
            let clear = need - margin - 1.0;
            while k < end {
                let p = self.damping_prod[k];
                if (p.exp as f64) >= clear {
                    match side(p.log2(), need, margin) {
                        Side::Below => {}
                        Side::AtOrAbove => return k,
                        Side::Unsure => return self.damping_reaches_exact(need, kmax),
                    }
                }
                k += 1;
            }
        }
        kmax
    }

    /// [`Scan::damping_reaches`] by the sums themselves.
    fn damping_reaches_exact(&mut self, need: f64, kmax: usize) -> usize {
        let mut k = 0;
        while k < kmax && self.damping_exact(k) < need {
            k += 1;
        }
        k
    }

    /// (log2 of the j-th term of the normalization sum relative to the
    /// first, the largest of these up to j), j >= 1, summed step by step.
    fn term_exact(&mut self, j: usize) -> (f64, f64) {
        while self.terms.len() < j {
            let k = self.terms.len();
            let (log2_term, peak) = self.terms[k - 1];
            let g = self.growth;
            let log2_term = log2_term
                + ((g.z * (g.beta + k as f64) / (k + 1) as f64).log2() + g.minimal_log2(k));
            self.terms.push((log2_term, peak.max(log2_term)));
        }
        self.terms[j - 1]
    }

    /// Extends `terms_prod` (the same as [`Scan::term_exact`] by products)
    /// by up to `steps` entries (fewer when a product leaves the normal
    /// range; it stays short then).
    fn extend_terms_prod(&mut self, steps: usize) {
        let len = self.terms_prod.len();
        let mut last = self.terms_prod[len - 1];
        self.terms_prod.reserve(steps);
        let g = self.growth;
        for k in len..len + steps {
            let ratio = g.z * (g.beta + k as f64) / (k + 1) as f64;
            let root = match g.minimal_root(k) {
                MinimalRoot::Real(t) => t,
                MinimalRoot::Complex(t2) => t2.sqrt(),
            };
            if !(ratio.is_normal() && root.is_normal()) {
                return;
            }
            // two roundings, as two factors
            let Some(term) = last.term.times(ratio * root) else {
                return;
            };
            let peak = if term.above(last.peak) {
                term
            } else {
                last.peak
            };
            let size =
                last.size + log2_size(ratio) + log2_size(root) + (term.exp.abs() + 2) as f64 + 2.0;
            last = TermProd { term, peak, size };
            self.terms_prod.push(last);
        }
    }

    /// The first index j >= `from` at which the terms
    /// (beta)_j/j! z^j rho_j of the normalization sum of [`miller_rho`]
    /// have fallen 2^-need below the largest term seen, plus 16; None when
    /// that index is above `limit`.
    fn sum_top(&mut self, need: f64, from: usize, limit: usize) -> Option<usize> {
        const BLOCK: usize = 32;
        let mut j = from.max(1);
        loop {
            if j > limit + 1 {
                return None;
            }
            if j > self.terms_prod.len() {
                let len = self.terms_prod.len();
                self.extend_terms_prod(j - len + BLOCK);
                if j > self.terms_prod.len() {
                    // a product left the normal range
                    return self.sum_top_exact(need, from, limit);
                }
            }
            let end = self.terms_prod.len().min(limit + 1);
            while j <= end {
                let t = self.terms_prod[j - 1];
                // log2 term - log2 peak against -need; each lies within
                // `margin` of its step-by-step sum
                let margin = 2.0 * ROUNDING_BOUND * (t.size + j as f64 + 4.0);
                let de = (t.term.exp - t.peak.exp) as f64;
                // the difference lies in (de - 1, de + 1)
                let coarse = if de + 1.0 < -need - margin {
                    Side::Below
                } else if de - 1.0 >= -need + margin {
                    Side::AtOrAbove
                } else {
                    side(
                        de + (t.term.mant.log2() - t.peak.mant.log2()),
                        -need,
                        margin,
                    )
                };
                match coarse {
                    Side::Below => return (j + 16 <= limit).then_some(j + 16),
                    Side::AtOrAbove => {}
                    Side::Unsure => return self.sum_top_exact(need, from, limit),
                }
                if j > limit {
                    return None;
                }
                j += 1;
            }
        }
    }

    /// [`Scan::sum_top`] by the sums themselves.
    fn sum_top_exact(&mut self, need: f64, from: usize, limit: usize) -> Option<usize> {
        let mut j = from.max(1);
        loop {
            if j > limit + 1 {
                return None;
            }
            let (log2_term, peak) = self.term_exact(j);
            if log2_term < peak - need {
                return (j + 16 <= limit).then_some(j + 16);
            }
            if j > limit {
                return None;
            }
            j += 1;
        }
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
                    let Route::MillerNormalized(top) = route_at(cf.beta, &a, &p.zp, m) else {
                        continue;
                    };
                    let mut rec = Rec::new(cf.beta, &a, &p);
                    let mut meter = Meter::new();
                    let rho = miller_rho(&mut rec, &a, m, top, true, &mut meter);
                    let mut rec = Rec::new(cf.beta, &a, &p);
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

#[cfg(test)]
mod shortcut_tests {
    use super::*;
    use crate::green::channel::channels;

    /// The searches of the route decision by products of the local ratios
    /// ([`Scan::damping_reaches`], [`Scan::sum_top`]) return the same index
    /// as the step-by-step sums of their logarithms that define the route,
    /// at round thresholds and at thresholds equal to a partial sum (where
    /// only the fallback to the sums can settle the comparison; it must be
    /// taken there), over nodes of several states and both channels.
    #[test]
    fn product_searches_match_sums() {
        let mut compared = 0;
        for &(n, l) in &[
            (8u32, 3u32),
            (20, 0),
            (60, 30),
            (200, 1),
            (200, 100),
            (200, 190),
        ] {
            for big_l in [l + 1, l.wrapping_sub(1)] {
                if big_l >= n {
                    continue;
                }
                let beta = 2 * big_l + 2;
                let m = (n - big_l) as usize;
                for k in 1..40 {
                    let nu = f64::from(n) * f64::from(k) / 40.0 * 0.998_7;
                    let tau = (nu - f64::from(n)) / (nu + f64::from(n));
                    let z = tau * tau;
                    let omz = 4.0 * f64::from(n) * nu / ((f64::from(n) + nu) * (f64::from(n) + nu));
                    let growth = RootRatio::new(beta, f64::from(big_l + 1) - nu, z, omz);
                    let kmax = 20_000;
                    let mut sums = Scan::new(&growth, m);
                    let mut partial = vec![];
                    for k in [1usize, 7, 40, 200] {
                        let d = sums.damping_exact(k);
                        if d > 0.0 {
                            partial.push(d);
                        }
                    }
                    let mut needs = vec![48.0, 300.0, 392.0, 1064.0];
                    needs.extend(&partial);
                    for need in needs {
                        let mut products = Scan::new(&growth, m);
                        let mut sums = Scan::new(&growth, m);
                        assert_eq!(
                            products.damping_reaches(need, kmax),
                            sums.damping_reaches_exact(need, kmax),
                            "({n},{l}) L={big_l} nu={nu} need={need}"
                        );
                        let from = m + 17;
                        assert_eq!(
                            products.sum_top(need, from, kmax),
                            sums.sum_top_exact(need, from, kmax),
                            "({n},{l}) L={big_l} nu={nu} need={need}"
                        );
                        compared += 1;
                    }
                    // a threshold equal to a partial sum of the normalization
                    // terms' logarithms
                    let (term, peak) = sums.term_exact(m + 40);
                    let need = peak - term;
                    if need > 0.0 {
                        let mut products = Scan::new(&growth, m);
                        assert_eq!(
                            products.sum_top(need, m, kmax),
                            sums.sum_top_exact(need, m, kmax),
                            "({n},{l}) L={big_l} nu={nu} need={need}"
                        );
                    }
                }
            }
        }
        assert!(compared > 1000, "{compared}");
    }

    /// [`channel_j_with`] gives bit for bit the value of
    /// [`channel_j_sources`] with one source, which forms M_j(-a) alone and
    /// stores every rho_j first: on the forward route, whose recurrence runs
    /// in step with that of M_j, and on the backward routes, whose
    /// coefficients the M_j recurrence reuses; the forward route must be
    /// taken at some nodes.
    #[test]
    fn forward_in_step_matches_stored() {
        let prec = 256;
        let mut forward_nodes = 0;
        for &(n, l) in &[(6u32, 2u32), (20, 0), (60, 30)] {
            for ch in &channels(n, l).unwrap() {
                let cf = ChannelFloat::new(ch, prec);
                for k in 1..40 {
                    let nu = Float::with_val(prec, f64::from(n) * f64::from(k) / 40.0 * 0.998_7);
                    let p = NuPoint::new(n, &nu);
                    let mut meter = Meter::new();
                    let (one, _) = channel_j_with(&cf, &p, &mut meter, None, true);
                    let mut meter_s = Meter::new();
                    let (many, _) = channel_j_sources(
                        cf.big_l,
                        cf.beta,
                        &cf.ws2,
                        std::slice::from_ref(&cf.scaled),
                        &p,
                        &mut meter_s,
                        None,
                    );
                    assert_eq!(one.j, many[0].j, "({n},{l}) L={} nu={nu}", cf.big_l);
                    assert_eq!(one.log_coef, many[0].log_coef);
                    assert_eq!(meter.loss_bits, meter_s.loss_bits);
                    let a = Float::with_val(prec, (cf.big_l + 1) - Float::with_val(prec, &nu));
                    let route = route_at(cf.beta, &a, &p.zp, cf.coef.len());
                    if matches!(route, Route::Forward(_)) && cf.coef.len() > 2 {
                        forward_nodes += 1;
                    }
                }
            }
        }
        assert!(forward_nodes >= 10, "{forward_nodes}");
    }
}
