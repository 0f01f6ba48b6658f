//! The Stieltjes transform of the normalized Meixner weight,
//!
//! ```text
//! m(a) = (1-z)^beta * sum_{k>=0} z^k (beta)_k / (k! (k + a)),   0 <= z < 1,
//! ```
//!
//! for real a that is not a non-positive integer, and the Lerch function
//! Phi(z, 1, a) = sum_k z^k / (k + a) behind it.
//!
//! Near z = 1 both carry a logarithm: with mu = -ln z,
//! Phi(e^-mu, 1, a) = e^(a mu) [ -ln mu - gamma - psi(a) + int_{-mu}^0 (G(t) - 1)/t dt ],
//! G(t) = t e^(a t) / (e^t - 1), valid for 0 < mu < 2 pi. The coefficient of
//! -ln mu is returned separately so that callers can integrate the
//! logarithmic part of an integrand exactly.

use super::meter::Meter;
use super::quad;
use rug::ops::Pow;
use rug::{Assign, Float};

/// Below this z the defining series is summed directly.
pub(crate) const Z_SERIES: f64 = 0.25;

/// A value with a separated logarithmic part: value = regular - log_coef * ln(mu).
#[derive(Debug, Clone)]
pub(crate) struct WithLog {
    /// The full value.
    pub(crate) value: Float,
    /// Coefficient of -ln(mu) inside `value` (0 when not separated).
    pub(crate) log_coef: Float,
}

/// Point data shared by the functions of this module.
#[derive(Debug, Clone)]
pub(crate) struct ZPoint {
    /// z in [0, 1).
    pub(crate) z: Float,
    /// 1 - z, computed without cancellation by the caller.
    pub(crate) one_minus_z: Float,
    /// mu = -ln z (> 0), computed without cancellation by the caller.
    pub(crate) mu: Float,
}

/// m(a) for the Meixner parameter `beta` >= 2.
///
/// # Accuracy
/// Direct summation for z < [`Z_SERIES`]; otherwise the division of
/// C(k+beta-1, beta-1) by (k+a) leaves a polynomial part summed in closed form
/// plus C(beta-1-a, beta-1) Phi(z,1,a). Cancellation in either route is
/// recorded in `meter` (bits lost); the result has about prec - loss bits.
/// `phi_hint`, when given, is Phi(z, 1, a) already computed by the caller
/// (for instance from the other channel by the recurrence in a); the Phi used
/// is returned beside m(a) (None on the series route, which needs none).
pub(crate) fn meixner_stieltjes(
    beta: u32,
    a: &Float,
    pt: &ZPoint,
    meter: &mut Meter,
    phi_hint: Option<&Float>,
) -> (WithLog, Option<Float>) {
    let prec = a.prec();
    if pt.z < Z_SERIES {
        // r = C(beta-1-a, beta-1) = prod_{j=1}^{beta-1} (j - a) / j
        let mut r = Float::with_val(prec, 1);
        let mut f = Float::new(prec);
        for j in 1..beta {
            f.assign(j - a);
            r *= &f;
            r /= j;
        }
        let y_beta = Float::with_val(prec, pt.one_minus_z.clone().pow(beta));
        let chi = Float::with_val(prec, Float::with_val(prec, a * &pt.mu).exp());
        let m = WithLog {
            value: series(beta, a, pt, meter),
            log_coef: r * y_beta * chi,
        };
        return (m, None);
    }
    // poly = sum_{i=0}^{beta-2} q_i y^(beta-1-i), y = 1-z, with
    // q_{beta-2} = 1/(beta-1) and q_{i-1} = q_i (i+1-a)/i, summed from the
    // top coefficient down through the terms u_i = q_i y^(beta-1-i) (no
    // table of coefficients)
    let y = &pt.one_minus_z;
    let mut u = Float::with_val(prec, y / (beta - 1));
    let mut poly = u.clone();
    meter.term(&u);
    let mut f = Float::new(prec);
    for i in (1..beta - 1).rev() {
        f.assign((i + 1) - a);
        u *= &f;
        u /= i;
        u *= y;
        meter.term(&u);
        poly += &u;
    }
    // r y^beta = (1-a) u_0 y
    let mut ry = Float::with_val(prec, 1u32 - a);
    ry *= &u;
    ry *= y;
    let phi = match phi_hint {
        Some(v) => WithLog {
            value: v.clone(),
            log_coef: Float::with_val(prec, Float::with_val(prec, a * &pt.mu).exp()),
        },
        None => lerch_phi(a, pt, meter),
    };
    let tail = Float::with_val(prec, &ry * &phi.value);
    meter.term(&tail);
    let value = Float::with_val(prec, &poly + &tail);
    meter.result(&value);
    (
        WithLog {
            value,
            log_coef: Float::with_val(prec, &ry * &phi.log_coef),
        },
        Some(phi.value),
    )
}

/// Direct summation of the defining series (fast for small z).
fn series(beta: u32, a: &Float, pt: &ZPoint, meter: &mut Meter) -> Float {
    let prec = a.prec();
    let mut c = Float::with_val(prec, 1); // z^k (beta)_k / k!
    let mut sum = Float::with_val(prec, 0);
    let peak = (beta as f64 * pt.z.to_f64() / (1.0 - pt.z.to_f64()).max(1e-300)).ceil() as usize;
    let ar = a.to_f64();
    let mut k = 0usize;
    let mut den = Float::new(prec);
    let mut t = Float::new(prec);
    loop {
        den.assign(a + k as u32);
        t.assign(&c / &den);
        meter.term(&t);
        sum += &t;
        let beyond_pole = (k as f64) > -ar + 1.0;
        if k > peak && beyond_pole && !sum.is_zero() {
            let small = t.is_zero()
                || t.get_exp().unwrap_or(i32::MIN) < sum.get_exp().unwrap_or(0) - prec as i32 - 8;
            if small {
                break;
            }
        }
        c *= &pt.z;
        c *= beta + k as u32;
        c /= (k + 1) as u32;
        k += 1;
        if k > 10_000_000 {
            break;
        }
    }
    meter.result(&sum);
    let y_beta = Float::with_val(prec, pt.one_minus_z.clone().pow(beta));
    sum * y_beta
}

/// Phi(z, 1, a) for z in [Z_SERIES, 1) with its logarithmic part separated:
/// value = regular - log_coef ln(mu), log_coef = e^(a mu).
pub(crate) fn lerch_phi(a: &Float, pt: &ZPoint, meter: &mut Meter) -> WithLog {
    let prec = a.prec();
    let mu = &pt.mu;
    let muf = mu.to_f64();
    let af = a.to_f64();
    // choose a' in (0, max(1, 8/mu)] by shifting a by an integer s
    let top = (8.0 / muf).max(1.0);
    let mut value;
    // the direct series costs about (prec ln 2 / mu) cheap terms; the
    // Bernoulli route about nodes(prec, mu) exponentials (~40 terms each)
    let direct_terms = f64::from(prec + 16) * std::f64::consts::LN_2 / muf + (-af).max(0.0);
    if direct_terms < 40.0 * bernoulli_nodes(prec, muf, af.min(top)) as f64 {
        value = phi_series(a, pt, meter);
    } else if af <= 0.0 {
        // shift up: Phi(a) = sum_{k<s} z^k/(k+a) + z^s Phi(a+s), a+s in (0,1]
        let s = (-af).floor() as u32 + 1;
        let ap = Float::with_val(prec, a + s);
        let base = phi_bernoulli(&ap, pt, meter);
        let mut zk = Float::with_val(prec, 1);
        let mut head = Float::with_val(prec, 0);
        for k in 0..s {
            let t = Float::with_val(prec, &zk / Float::with_val(prec, a + k));
            meter.term(&t);
            head += t;
            zk *= &pt.z;
        }
        value = Float::with_val(prec, &zk * &base);
        meter.term(&value);
        value += head;
    } else if af > top && (af - top).ceil() * muf / std::f64::consts::LN_2 > 30.0 && pt.z < 0.9 {
        // a shift would amplify rounding errors too much: sum the series
        value = phi_series(a, pt, meter);
    } else if af > top {
        // shift down: Phi(a) = z^-s [Phi(a') - sum_{k<s} z^k/(k+a')], a' = a - s
        let s = (af - top).ceil() as u32;
        let ap = Float::with_val(prec, a - s);
        let base = phi_bernoulli(&ap, pt, meter);
        meter.term(&base);
        let mut zk = Float::with_val(prec, 1);
        let mut head = Float::with_val(prec, 0);
        for k in 0..s {
            head += Float::with_val(prec, &zk / Float::with_val(prec, &ap + k));
            zk *= &pt.z;
        }
        value = (base - head) / zk;
    } else {
        value = phi_bernoulli(a, pt, meter);
    }
    meter.result(&value);
    let log_coef = Float::with_val(prec, Float::with_val(prec, a * mu).exp());
    WithLog { value, log_coef }
}

/// Phi(z, 1, a) = sum_k z^k/(k+a) by direct summation.
fn phi_series(a: &Float, pt: &ZPoint, meter: &mut Meter) -> Float {
    let prec = a.prec();
    let mut zk = Float::with_val(prec, 1);
    let mut sum = Float::with_val(prec, 0);
    let ar = a.to_f64();
    let mut k = 0u32;
    let mut den = Float::new(prec);
    let mut t = Float::new(prec);
    loop {
        den.assign(a + k);
        t.assign(&zk / &den);
        meter.term(&t);
        sum += &t;
        if f64::from(k) > -ar + 1.0
            && (t.is_zero()
                || t.get_exp().unwrap_or(i32::MIN) < sum.get_exp().unwrap_or(0) - prec as i32 - 8)
        {
            break;
        }
        zk *= &pt.z;
        k += 1;
        if k > 50_000_000 {
            break;
        }
    }
    sum
}

/// Gauss nodes for the integral of the Bernoulli route at `prec` bits,
/// rounded up to a short ladder of sizes so that cached rules are reused.
fn bernoulli_nodes(prec: u32, muf: f64, af: f64) -> usize {
    let bits_per_node = 2.0 * (4.0 * std::f64::consts::PI / muf + 1.0).log2();
    let nb = ((f64::from(prec) + 24.0) / bits_per_node).ceil() as usize
        + (af.max(0.0) * muf).ceil() as usize
        + 4;
    let mut size = 8usize;
    loop {
        if size >= nb {
            return size;
        }
        let mid = size + size / 2;
        if mid >= nb {
            return mid;
        }
        size *= 2;
    }
}

/// e^(a mu) [ -ln mu - gamma - psi(a) + int_{-mu}^0 (G(t)-1)/t dt ] for a > 0.
fn phi_bernoulli(a: &Float, pt: &ZPoint, meter: &mut Meter) -> Float {
    let prec = a.prec();
    let mu = &pt.mu;
    let nb = bernoulli_nodes(prec, mu.to_f64(), a.to_f64());
    let rule = quad::rule(nb, prec);
    let mut integral = Float::with_val(prec, 0);
    for (x, w) in rule.x.iter().zip(&rule.w) {
        // t = -mu x; G - 1 over t, with 1 - e^{-mu x} by expm1
        let mx = Float::with_val(prec, mu * x);
        let denom = -Float::with_val(prec, -mx.clone()).exp_m1(); // 1 - e^{-mu x}
        let e = Float::with_val(prec, -Float::with_val(prec, a * &mx)).exp();
        let g = Float::with_val(prec, &mx * &e) / &denom;
        let h = Float::with_val(prec, g - 1u32) / Float::with_val(prec, -mx);
        integral += h * w;
    }
    integral *= mu;
    let ln_mu = Float::with_val(prec, mu.ln_ref());
    let euler = Float::with_val(prec, rug::float::Constant::Euler);
    let psi = Float::with_val(prec, a.digamma_ref());
    let mut inner = Float::with_val(prec, -&ln_mu);
    inner -= &euler;
    inner -= &psi;
    meter.term(&inner);
    meter.term(&integral);
    inner += &integral;
    meter.result(&inner);
    let pre = Float::with_val(prec, Float::with_val(prec, a * mu).exp());
    inner * pre
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(zf: &str, prec: u32) -> ZPoint {
        let z = Float::with_val(prec, Float::parse(zf).unwrap());
        let one_minus_z = Float::with_val(prec, 1u32 - &z);
        let mu = -Float::with_val(prec, z.ln_ref());
        ZPoint { z, one_minus_z, mu }
    }

    fn brute_phi(a: &Float, z: &Float) -> Float {
        let prec = a.prec() + 64;
        let mut s = Float::with_val(prec, 0);
        let mut zk = Float::with_val(prec, 1);
        for k in 0..200_000u32 {
            s += Float::with_val(prec, &zk / Float::with_val(prec, a + k));
            zk *= z;
        }
        s
    }

    #[test]
    fn phi_matches_series() {
        let prec = 200;
        for zs in ["0.3", "0.77", "0.995"] {
            for aval in ["0.37", "3.6", "-2.25", "41.5"] {
                let pt = point(zs, prec);
                let a = Float::with_val(prec, Float::parse(aval).unwrap());
                let mut m = Meter::new();
                let v = lerch_phi(&a, &pt, &mut m).value;
                let b = brute_phi(&a, &pt.z);
                let rel = Float::with_val(prec, (v - &b) / &b).abs().to_f64();
                assert!(rel < 1e-50, "z={zs} a={aval} rel={rel:e}");
            }
        }
    }

    #[test]
    fn stieltjes_routes_agree() {
        // closed route (z >= Z_SERIES) against direct summation at higher precision
        let prec = 256;
        for beta in [2u32, 5, 12] {
            for zs in ["0.3", "0.9", "0.999"] {
                for aval in ["0.8", "-3.3", "7.25"] {
                    let pt = point(zs, prec);
                    let a = Float::with_val(prec, Float::parse(aval).unwrap());
                    let mut m = Meter::new();
                    let closed = meixner_stieltjes(beta, &a, &pt, &mut m, None).0.value;
                    let mut m2 = Meter::new();
                    let direct = series(beta, &a, &pt, &mut m2);
                    let rel = Float::with_val(prec, (closed - &direct) / &direct)
                        .abs()
                        .to_f64();
                    assert!(rel < 1e-60, "beta={beta} z={zs} a={aval} rel={rel:e}");
                }
            }
        }
    }
}
