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
use super::stieltjes::{meixner_stieltjes, ZPoint};
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
        let ib = i as u32 + self.beta;
        self.t2.assign(&self.z * ib);
        self.t1.assign(&self.t2 + &self.c1);
        self.t1 += i as u32;
        self.t1 *= xi;
        self.t2 *= xip1;
        self.t1 -= &self.t2;
        out.assign(&self.t1 / i as u32);
    }
}

/// weight * J_L(nu) for one channel.
///
/// # Accuracy
/// Cancellation (in m(a), in the forward recurrence and in the final sum) is
/// partly recorded in `meter`; the caller measures the rest by comparing
/// precisions (see the pilot module).
#[cfg(test)]
pub(crate) fn channel_j(ch: &ChannelFloat, p: &NuPoint, meter: &mut Meter) -> JValue {
    channel_j_with(ch, p, meter, None).0
}

/// weight * J_L(nu) for one channel (as `channel_j`), with Phi(z, 1, L+1-nu) supplied by the caller when known;
/// also returns the Phi used (None on the series route).
pub(crate) fn channel_j_with(
    ch: &ChannelFloat,
    p: &NuPoint,
    meter: &mut Meter,
    phi_hint: Option<&Float>,
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
    // rho_0 = m(a)
    let (st, phi_used) = meixner_stieltjes(beta, &a, zp, meter, phi_hint);
    let rho = second_kind(&mut rec, &a, zp, &st.value, m, meter);
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
    for (j, (c, rho_j)) in ch.coef.iter().zip(&rho).enumerate() {
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
    // P(-a) = S_{M}; log part of T = P(-a)^2 * log_coef(m)
    let p2 = Float::with_val(prec, &s_prev * &s_prev);
    let scale = Float::with_val(prec, &ch.ws2 * &p.nu);
    let jv = JValue {
        j: Float::with_val(prec, &t * &scale),
        log_coef: Float::with_val(prec, p2 * &st.log_coef) * scale,
    };
    (jv, phi_used)
}

/// weight * <phi_s|G_L|phi_s> for several source functions phi_s of one
/// channel at one node (each given by its matched-Sturmian coefficients):
/// the Meixner functions M_i(-a), the functions of the second kind rho_i and
/// the Stieltjes transform are computed once and shared by every source.
/// Returns one [`JValue`] per source, and the Phi used (None on the series
/// route).
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
    let (st, phi_used) = meixner_stieltjes(beta, &a, zp, meter, phi_hint);
    let rho = second_kind(&mut rec, &a, zp, &st.value, m, meter);
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
            log_coef: Float::with_val(prec, p2 * &st.log_coef) * &scale,
        });
    }
    (out, phi_used)
}

/// rho_i, i = 0..m, from rho_0 = m(a): forward recurrence when it is stable
/// enough (z near 1), backward (Miller) recurrence normalized to rho_0 otherwise.
fn second_kind(
    rec: &mut Rec,
    a: &Float,
    zp: &ZPoint,
    rho0: &Float,
    m: usize,
    meter: &mut Meter,
) -> Vec<Float> {
    let prec = a.prec();
    let beta = rec.beta;
    let lz = -zp.z.to_f64().log2();
    let growth = RootRatio::new(beta, a.to_f64(), zp.z.to_f64(), zp.one_minus_z.to_f64());
    let forward_loss: f64 = (1..m).map(|i| growth.bits(i)).sum();
    let mut rho = Vec::with_capacity(m);
    rho.push(rho0.clone());
    if m == 1 {
        return rho;
    }
    let zb = Float::with_val(prec, &zp.z * beta);
    // Miller: start far enough above m that the dominant solution has died
    // out by 2^-(prec + 40) at m (accumulated local ratios); the asymptotic
    // ratio 1/z bounds the start.
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
    // forward when it loses little, or when a Miller run would cost more
    // than the precision the forward loss needs (slow decay: small beta with
    // z near 1); the loss is then recorded so that the caller's guard covers
    // it. The choice does not depend on the working precision, so that the
    // pilot (two precisions) sees the same route as the quadrature and
    // measures its loss.
    let top = if forward_loss <= FORWARD_LOSS_MAX {
        None
    } else {
        miller_top(MILLER_DECISION_BITS, miller_budget(forward_loss, m))
            .and_then(|_| miller_top(f64::from(prec) + 40.0, usize::MAX / 2))
    };
    if top.is_none() {
        meter.loss(forward_loss.ceil() as i32);
        // rho_1 = rho_0 - (1-z)(1 - a rho_0)/(z beta)
        let one_m_arho = Float::with_val(prec, 1u32 - Float::with_val(prec, a * rho0));
        let r1 = Float::with_val(
            prec,
            rho0 - Float::with_val(prec, &zp.one_minus_z * &one_m_arho) / &zb,
        );
        meter.term(rho0);
        meter.result(&r1);
        rho.push(r1);
        for i in 1..m - 1 {
            let next = rec.forward(i, &rho[i], &rho[i - 1]);
            rho.push(next);
        }
        return rho;
    }
    let top = top.unwrap_or(m);
    let mut y_hi = Float::with_val(prec, 0); // y_{i+1}
    let mut y = Float::with_val(prec, 1); // y_i, starting at i = top
    let mut y_lo = Float::new(prec); // y_{i-1}
    let mut store: Vec<Float> = vec![Float::with_val(prec, 0); m];
    for i in (1..=top).rev() {
        if i < m {
            store[i].assign(&y);
        }
        rec.backward_into(i, &y, &y_hi, &mut y_lo);
        std::mem::swap(&mut y_hi, &mut y);
        std::mem::swap(&mut y, &mut y_lo);
    }
    let norm = Float::with_val(prec, rho0 / &y);
    for v in store.iter().skip(1) {
        rho.push(Float::with_val(prec, v * &norm));
    }
    rho
}

/// Largest estimated loss (bits) of the forward recurrence for rho before
/// the backward (Miller) route is taken.
const FORWARD_LOSS_MAX: f64 = 48.0;

/// Damping (bits) of the dominant solution assumed when the length of a
/// Miller run is compared with the forward route (a fixed value, so that the
/// route does not depend on the working precision).
const MILLER_DECISION_BITS: f64 = 300.0;

/// Most extra steps for which the backward (Miller) route is cheaper than
/// the forward route with `forward_loss` more bits on the whole node.
///
/// Cost model (MPFR operations, at a reference precision of 192 bits):
/// a node costs about 12 m operations per channel, and precision costs grow
/// like bits^1.6, so `forward_loss` extra bits cost
/// 12 m ((192 + loss)/192)^1.6 - 12 m; a Miller run costs about 5
/// operations per extra step.
fn miller_budget(forward_loss: f64, m: usize) -> usize {
    let penalty = 12.0 * m as f64 * (((192.0 + forward_loss) / 192.0).powf(1.6) - 1.0);
    (penalty / 5.0) as usize
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
