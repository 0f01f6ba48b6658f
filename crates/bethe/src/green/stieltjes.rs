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
//!
//! Phi itself takes the cheapest of three routes ([`lerch_route`]): its
//! power series, the continued fraction of 2F1(1, a; a+1; z) = a Phi
//! ([`phi_cf`], moderate z), or the form above (z near 1).

use super::meter::Meter;
use rug::ops::Pow;
use rug::{Assign, Float, Integer, Rational};
use std::collections::HashMap;
use std::sync::{Arc, Mutex, OnceLock};

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
/// The logarithmic coefficient is formed only when `with_log` asks for it
/// (0 otherwise); the value does not depend on it.
pub(crate) fn meixner_stieltjes(
    beta: u32,
    a: &Float,
    pt: &ZPoint,
    meter: &mut Meter,
    phi_hint: Option<&Float>,
    with_log: bool,
) -> (WithLog, Option<Float>) {
    let prec = a.prec();
    if pt.z < Z_SERIES {
        let m = WithLog {
            value: series(beta, a, pt, meter),
            log_coef: if with_log {
                stieltjes_log_coef(beta, a, pt)
            } else {
                Float::with_val(prec, 0)
            },
        };
        return (m, None);
    }
    // poly = sum_{i=0}^{beta-2} q_i y^(beta-1-i), y = 1-z, with
    // q_{beta-2} = 1/(beta-1) and q_{i-1} = q_i (i+1-a)/i, summed from the
    // top coefficient down through the terms u_i = q_i y^(beta-1-i) (no
    // table of coefficients), as far down as the plan finds them above
    // the rounding level
    let plan = poly_plan(
        beta,
        a.to_f64(),
        &PointF64 {
            y: pt.one_minus_z.to_f64(),
            z: pt.z.to_f64(),
            mu: pt.mu.to_f64(),
        },
        prec,
    );
    let y = &pt.one_minus_z;
    let ay = Float::with_val(prec, a * y);
    let mut u = Float::with_val(prec, y / (beta - 1));
    let mut poly = u.clone();
    meter.term(&u);
    let mut g = Float::new(prec);
    for i in (plan.stop + 1..beta as usize - 1).rev() {
        // u_{i-1} = u_i ((i+1) y - a y) / i
        g.assign(y * (i as u64 + 1));
        g -= &ay;
        u *= &g;
        u /= i as u64;
        meter.term(&u);
        poly += &u;
    }
    if !plan.with_tail {
        // the Lerch part and the lower terms lie below the rounding level
        // of the largest term (see `poly_plan`)
        meter.result(&poly);
        let m = WithLog {
            value: poly,
            log_coef: Float::with_val(prec, 0),
        };
        return (m, None);
    }
    // r y^beta = (1-a) u_0 y
    let mut ry = Float::with_val(prec, 1u32 - a);
    ry *= &u;
    ry *= y;
    let phi = match phi_hint {
        Some(v) => WithLog {
            value: v.clone(),
            log_coef: if with_log {
                Float::with_val(prec, Float::with_val(prec, a * &pt.mu).exp())
            } else {
                Float::with_val(prec, 0)
            },
        },
        None => lerch_phi(a, pt, meter, with_log),
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

/// z, 1 - z and mu = -ln z of a [`ZPoint`] in f64 (for planning only).
struct PointF64 {
    y: f64,
    z: f64,
    mu: f64,
}

/// How much of the polynomial part of m(a) [`meixner_stieltjes`] sums.
#[derive(Debug, Clone, Copy, PartialEq)]
struct PolyPlan {
    /// The lowest index i of the terms u_i summed (the terms run from
    /// beta - 2 down to it).
    stop: usize,
    /// Whether the Lerch part C(beta-1-a, beta-1) y^beta Phi(z, 1, a) (and
    /// with it the logarithmic coefficient) is formed; `stop` is 0 then.
    with_tail: bool,
}

/// Bits below the largest term of m(a) (on top of the working precision)
/// under which [`poly_plan`] drops the lower terms and the Lerch part.
const POLY_DROP_GUARD: f64 = 32.0;

/// Which terms of the polynomial part of m(a) lie above the rounding
/// level, at a = `af`, the point `pt` and `prec` bits: the magnitudes
/// log2 |u_i| of the terms u_i = q_i y^(beta-1-i) follow in f64 from
/// u_{beta-2} = y/(beta-1) and |u_{i-1}/u_i| = |i+1-a| y / i (with
/// |i+1-a| bounded below by its f64 rounding, so that a term is never
/// taken smaller than it is). With M the largest of them, the terms below
/// index `stop` are dropped when each lies below 2^(M - prec - 32) / beta,
/// and the Lerch part when (1-a) u_0 y times a bound on |Phi(z, 1, a)|
/// and on its logarithmic part (the larger of the two uses, the value and
/// the coefficient of -ln mu times |ln mu| + 64, covers the weights of the
/// logarithmic product rule) lies below 2^(M - prec - 32). For a sum whose
/// result is near its largest term this leaves the value within 2^-32 of
/// its rounding level; a cancelling sum is measured as before by the
/// meter, against the same largest term.
///
/// The bound on Phi: with d the distance of a from the nearest
/// non-positive integer, the at most two terms with |k + a| < 1 give 2/d,
/// the terms with k + a >= 1 at most -ln(1-z)/z, those with k + a <= -1
/// at most 1 + ln(1 + |a|).
fn poly_plan(beta: u32, af: f64, pt: &PointF64, prec: u32) -> PolyPlan {
    let b = beta as usize;
    let all = PolyPlan {
        stop: 0,
        with_tail: true,
    };
    if !(pt.y > 0.0 && pt.y.is_finite() && af.is_finite() && pt.mu > 0.0) {
        return all;
    }
    let ly = pt.y.log2();
    // lu[i] = log2 |u_i|
    let mut lu = vec![0.0f64; b - 1];
    let mut cur = ly - f64::from(beta - 1).log2();
    lu[b - 2] = cur;
    for i in (1..b - 1).rev() {
        let i1 = (i + 1) as f64;
        let g = (i1 - af).abs().max(4.0 * f64::EPSILON * (i1 + af.abs()));
        cur += (g / i as f64).log2() + ly;
        lu[i - 1] = cur;
    }
    let top = lu.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let cut = top - f64::from(prec) - POLY_DROP_GUARD;
    let d = if af > 0.0 {
        af
    } else {
        (af - af.round()).abs()
    };
    if d <= 0.0 {
        return all;
    }
    let phi_bound = 2.0 / d + (1.0 / pt.y).ln() / pt.z + 1.0 + (1.0 + af.abs()).ln();
    let log_part = (af * pt.mu).exp() * (pt.mu.ln().abs() + 64.0);
    let tail = (1.0 - af).abs().log2() + lu[0] + ly + (phi_bound + log_part).log2();
    // (a NaN anywhere keeps everything)
    if tail.is_nan() || tail >= cut {
        return all;
    }
    let each = cut - (b as f64).log2();
    match lu.iter().position(|&v| v.is_nan() || v > each) {
        Some(stop) => PolyPlan {
            stop,
            with_tail: false,
        },
        None => all,
    }
}

/// Estimated cost of [`meixner_stieltjes`] without a hint at `prec` bits,
/// in multiplications at that precision, from z = `zf`, mu = `muf` and
/// a = `af`; it follows the routes taken there. The unit costs were
/// measured with MPFR at 192 to 416 bits (benches/README.md): an
/// exponential costs about 60 multiplications, [`digamma_parts`] with its
/// logarithm about 400, a term of a series with one division about 4 to
/// 5.5, a level of the continued fraction about 5.
///
/// # Accuracy
/// A rough model (within a factor of about 2), used only to choose the
/// route of the second-kind functions, never in a value.
pub(crate) fn stieltjes_cost(beta: u32, zf: f64, muf: f64, af: f64, prec: u32) -> f64 {
    let b = f64::from(beta);
    let series_terms = f64::from(prec + 16) * std::f64::consts::LN_2 / muf + (-af).max(0.0);
    if zf < Z_SERIES {
        // the series past its peak at beta z/(1-z), and the logarithmic
        // coefficient
        return 5.5 * (series_terms + b * zf / (1.0 - zf)) + 4.0 * b + EXP_COST;
    }
    let lerch = lerch_route(prec, -(-muf).exp_m1(), muf, af).1;
    3.5 * b + lerch + EXP_COST
}

/// Cost of an MPFR exponential, in multiplications at the same precision
/// (measured, 192 to 416 bits).
const EXP_COST: f64 = 60.0;

/// Cost of [`digamma_parts`] with its logarithm, in multiplications at the
/// same precision (measured, 192 to 416 bits).
const DIGAMMA_COST: f64 = 400.0;

/// The coefficient of -ln(mu) in m(a):
/// C(beta-1-a, beta-1) (1-z)^beta e^(a mu), with
/// C(beta-1-a, beta-1) = prod_{j=1}^{beta-1} (j - a)/j.
///
/// # Accuracy
/// A product of 2 beta + 2 rounded factors and one exponential: relative
/// error about (2 beta + 4) 2^-prec.
pub(crate) fn stieltjes_log_coef(beta: u32, a: &Float, pt: &ZPoint) -> Float {
    let prec = a.prec();
    let mut r = Float::with_val(prec, 1);
    let mut f = Float::new(prec);
    for j in 1..beta {
        f.assign(j - a);
        r *= &f;
        r /= j;
    }
    let y_beta = Float::with_val(prec, pt.one_minus_z.clone().pow(beta));
    let chi = Float::with_val(prec, Float::with_val(prec, a * &pt.mu).exp());
    r * y_beta * chi
}

/// Guard bits of the tail of a direct series above the bits its terms
/// still need (see [`tail_prec`]).
const TAIL_GUARD: u32 = 24;

/// Working precision of a term of a direct series once its terms decrease
/// monotonically: a term 2^-d below the largest term of the sum (binary
/// exponents `max_exp` and `term_exp`) needs only prec - d bits for an
/// absolute error of 2^-prec times the largest term. Returns
/// prec + [`TAIL_GUARD`] - d rounded up to a multiple of 64 bits (the limb
/// size, which sets the cost of an MPFR operation), at least 64 and at most
/// `prec`.
///
/// # Accuracy
/// The precision only falls while the terms decrease, so step k <= j of
/// the recurrence of a term's numerator rounds at 2^-p_k <=
/// 2^(max_exp - prec - TAIL_GUARD) / |term k| and term j (of N in the
/// tail) carries an absolute error below
/// 3 (j + 1) 2^(max_exp - prec - TAIL_GUARD); all N together stay below
/// 1.5 (N + 1)^2 2^-TAIL_GUARD times 2^(max_exp - prec), which is below
/// 2^(max_exp - prec) (the scale the meter charges) for N < 3300 tail
/// terms and far below it when the terms decrease geometrically.
fn tail_prec(prec: u32, max_exp: i32, term_exp: i32) -> u32 {
    let drop = i64::from(max_exp) - i64::from(term_exp);
    let need = i64::from(prec) + i64::from(TAIL_GUARD) - drop.max(0);
    let tier = ((need.max(1) + 63) / 64) * 64;
    tier.clamp(64, i64::from(prec).max(64)) as u32
}

/// Rounds each working variable of a series tail to `prec` bits (the step
/// down to [`tail_prec`] of both direct series).
fn set_precs<const N: usize>(prec: u32, xs: [&mut Float; N]) {
    for x in xs {
        x.set_prec(prec);
    }
}

/// Direct summation of the defining series (fast for small z). Past its
/// peak and past the pole of 1/(k + a), the terms decrease monotonically
/// and are formed at the lower precision [`tail_prec`] (the sum stays at
/// full precision).
fn series(beta: u32, a: &Float, pt: &ZPoint, meter: &mut Meter) -> Float {
    let prec = a.prec();
    let mut c = Float::with_val(prec, 1); // z^k (beta)_k / k!
    let mut sum = Float::with_val(prec, 0);
    let peak = (beta as f64 * pt.z.to_f64() / (1.0 - pt.z.to_f64()).max(1e-300)).ceil() as usize;
    let ar = a.to_f64();
    let mut k = 0usize;
    let mut den = Float::new(prec);
    let mut t = Float::new(prec);
    let mut max_exp = i32::MIN;
    let mut wp = prec;
    // z and a at the working precision (rounded copies in the tail)
    let mut z_w = pt.z.clone();
    let mut a_w = a.clone();
    loop {
        den.assign(&a_w + k as u32);
        t.assign(&c / &den);
        meter.term(&t);
        sum += &t;
        let te = t.get_exp();
        if let Some(e) = te {
            max_exp = max_exp.max(e);
        }
        let beyond_pole = (k as f64) > -ar + 1.0;
        if k > peak && beyond_pole && !sum.is_zero() {
            let small = t.is_zero()
                || t.get_exp().unwrap_or(i32::MIN) < sum.get_exp().unwrap_or(0) - prec as i32 - 8;
            if small {
                break;
            }
            if let Some(e) = te {
                let p = tail_prec(prec, max_exp, e);
                if p < wp {
                    wp = p;
                    set_precs(wp, [&mut c, &mut den, &mut t, &mut z_w, &mut a_w]);
                }
            }
        }
        c *= &z_w;
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

/// The routes of Phi(z, 1, a) for z >= [`Z_SERIES`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum LerchRoute {
    /// The power series ([`phi_series`]).
    Series,
    /// The continued fraction ([`phi_cf`]), after a shift of a to a + s > 0
    /// when a <= 0.
    Fraction,
    /// The form with the separated logarithm, its integral a series in mu
    /// ([`phi_bernoulli`]), after a shift of a into (0, max(1, 8/mu)] (or
    /// the power series where a downward shift would amplify rounding
    /// errors too much).
    Bernoulli,
}

/// Cost of a term of [`phi_series`] (or of a head term of a shift), in
/// multiplications at the working precision.
const SERIES_TERM_COST: f64 = 3.75;

/// Cost of a level of [`phi_cf`], in multiplications at the working
/// precision (the deep levels run at lower precision; measured against the
/// power series and the Bernoulli route at 128 to 416 bits, benches/README.md).
const CF_LEVEL_COST: f64 = 5.0;

/// The cheapest route of Phi(z, 1, a) at `prec` bits and its estimated cost
/// in multiplications, from z = `zf`, 1 - z = `yf`, mu = `muf`, a = `af`.
fn lerch_route(prec: u32, yf: f64, muf: f64, af: f64) -> (LerchRoute, f64) {
    let series_terms = f64::from(prec + 16) * std::f64::consts::LN_2 / muf + (-af).max(0.0);
    let series = SERIES_TERM_COST * series_terms;
    let head = if af <= 0.0 {
        SERIES_TERM_COST * ((-af).floor() + 1.0)
    } else {
        0.0
    };
    // the argument the Bernoulli route works at (see `lerch_bernoulli`)
    let top = (8.0 / muf).max(1.0);
    let a_used = if af <= 0.0 {
        af + (-af).floor() + 1.0
    } else {
        af.min(top)
    };
    let shift_down = SERIES_TERM_COST * (af - top).max(0.0).ceil();
    let bernoulli = bernoulli_cost(prec, muf, a_used * muf) + head + shift_down;
    let levels = cf_levels(prec, yf);
    let fraction = if levels < CF_MAX_LEVELS as f64 {
        CF_LEVEL_COST * levels + head
    } else {
        f64::INFINITY
    };
    [
        (LerchRoute::Series, series),
        (LerchRoute::Fraction, fraction),
        (LerchRoute::Bernoulli, bernoulli),
    ]
    .into_iter()
    .fold((LerchRoute::Series, f64::INFINITY), |best, r| {
        if r.1 < best.1 {
            r
        } else {
            best
        }
    })
}

/// Phi(z, 1, a) = sum_{k<s} z^k/(k+a) + z^s Phi(z, 1, a + s) for a <= 0,
/// with s = floor(-a) + 1 (a + s in (0, 1]) and Phi(z, 1, a + s) from
/// `base` (None when `base` gives none).
fn shifted_up(
    a: &Float,
    pt: &ZPoint,
    meter: &mut Meter,
    base: impl FnOnce(&Float, &ZPoint, &mut Meter) -> Option<Float>,
) -> Option<Float> {
    let prec = a.prec();
    let s = (-a.to_f64()).floor() as u32 + 1;
    let ap = Float::with_val(prec, a + s);
    let base = base(&ap, pt, meter)?;
    let mut zk = Float::with_val(prec, 1);
    let mut head = Float::with_val(prec, 0);
    let mut t = Float::new(prec);
    for k in 0..s {
        t.assign(a + k);
        t.recip_mut();
        t *= &zk;
        meter.term(&t);
        head += &t;
        zk *= &pt.z;
    }
    let mut value = Float::with_val(prec, &zk * &base);
    meter.term(&value);
    value += head;
    Some(value)
}

/// Phi(z, 1, a) for z in [Z_SERIES, 1) with its logarithmic part separated:
/// value = regular - log_coef ln(mu), log_coef = e^(a mu). The route is the
/// cheapest of [`lerch_route`].
pub(crate) fn lerch_phi(a: &Float, pt: &ZPoint, meter: &mut Meter, with_log: bool) -> WithLog {
    let prec = a.prec();
    let mu = &pt.mu;
    let muf = mu.to_f64();
    let af = a.to_f64();
    let (route, _) = lerch_route(prec, pt.one_minus_z.to_f64(), muf, af);
    let fraction = match route {
        LerchRoute::Fraction if af > 0.0 => phi_cf(a, pt, meter),
        LerchRoute::Fraction => shifted_up(a, pt, meter, phi_cf),
        _ => None,
    };
    let mut value = match (route, fraction) {
        (_, Some(v)) => v,
        (LerchRoute::Series, _) => phi_series(a, pt, meter),
        _ => lerch_bernoulli(a, pt, meter),
    };
    meter.result(&value);
    let log_coef = if with_log {
        Float::with_val(prec, Float::with_val(prec, a * mu).exp())
    } else {
        Float::with_val(prec, 0)
    };
    value.set_prec(prec);
    WithLog { value, log_coef }
}

/// Phi(z, 1, a) by the Bernoulli route: a shifted into (0, max(1, 8/mu)],
/// or the power series where a downward shift would amplify rounding
/// errors by more than 30 bits (z < 0.9).
fn lerch_bernoulli(a: &Float, pt: &ZPoint, meter: &mut Meter) -> Float {
    let prec = a.prec();
    let muf = pt.mu.to_f64();
    let af = a.to_f64();
    let top = (8.0 / muf).max(1.0);
    if af <= 0.0 {
        let base = |ap: &Float, pt: &ZPoint, m: &mut Meter| Some(phi_bernoulli(ap, pt, m));
        shifted_up(a, pt, meter, base).unwrap_or_else(|| phi_series(a, pt, meter))
    } else if af > top && (af - top).ceil() * muf / std::f64::consts::LN_2 > 30.0 && pt.z < 0.9 {
        phi_series(a, pt, meter)
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
        (base - head) / zk
    } else {
        phi_bernoulli(a, pt, meter)
    }
}

/// Phi(z, 1, a) = sum_k z^k/(k+a) by direct summation; past the pole of
/// 1/(k + a) the terms decrease monotonically and are formed at the lower
/// precision [`tail_prec`] (the sum stays at full precision).
fn phi_series(a: &Float, pt: &ZPoint, meter: &mut Meter) -> Float {
    let prec = a.prec();
    let mut zk = Float::with_val(prec, 1);
    let mut sum = Float::with_val(prec, 0);
    let ar = a.to_f64();
    let mut k = 0u32;
    let mut den = Float::new(prec);
    let mut t = Float::new(prec);
    let mut max_exp = i32::MIN;
    let mut wp = prec;
    let mut z_w = pt.z.clone();
    let mut a_w = a.clone();
    loop {
        den.assign(&a_w + k);
        t.assign(&zk / &den);
        meter.term(&t);
        sum += &t;
        let te = t.get_exp();
        if let Some(e) = te {
            max_exp = max_exp.max(e);
        }
        if f64::from(k) > -ar + 1.0 {
            if t.is_zero()
                || t.get_exp().unwrap_or(i32::MIN) < sum.get_exp().unwrap_or(0) - prec as i32 - 8
            {
                break;
            }
            if let Some(e) = te {
                let p = tail_prec(prec, max_exp, e);
                if p < wp {
                    wp = p;
                    set_precs(wp, [&mut zk, &mut den, &mut t, &mut z_w, &mut a_w]);
                }
            }
        }
        zk *= &z_w;
        k += 1;
        if k > 50_000_000 {
            break;
        }
    }
    sum
}

/// Guard bits of the continued fraction [`phi_cf`] above the precision of
/// the result: its truncation and the roundings of every level together
/// stay below 2^-(prec + CF_GUARD) times a few units, relative.
const CF_GUARD: u32 = 16;

/// Most levels of the continued fraction (beyond them another route is
/// cheaper by far; it also keeps m^2 within u32).
const CF_MAX_LEVELS: usize = 100_000;

/// Bits gained per level of the continued fraction of Phi(z, 1, a) at
/// 1 - z = `yf`: log2((1 + sqrt y)/(1 - sqrt y)), from the rate
/// ((1 - sqrt y)/(1 + sqrt y))^2 per two levels of its Pade approximants.
fn cf_bits_per_level(yf: f64) -> f64 {
    let s = yf.clamp(0.0, 1.0).sqrt().min(1.0 - 1e-15);
    2.0 * s.atanh() / std::f64::consts::LN_2
}

/// Predicted levels of [`phi_cf`] at `prec` bits (a > 0; fewer are
/// needed for large a).
fn cf_levels(prec: u32, yf: f64) -> f64 {
    f64::from(prec + CF_GUARD + 8) / cf_bits_per_level(yf).max(1e-300) + 8.0
}

/// The plan of one evaluation of [`phi_cf`], from a pass in double
/// precision: the depth N, the precision of each level j = 0..N and the
/// estimated rounding error of the result in units of 2^-prec (relative).
struct CfPlan {
    depth: usize,
    precs: Vec<u32>,
    error_units: f64,
}

/// The partial numerator P_k of the continued fraction (k >= 1):
/// (a + m)^2 for k = 2m + 1, m^2 for k = 2m.
fn cf_numerator(k: usize, af: f64) -> f64 {
    let m = (k / 2) as f64;
    if k % 2 == 1 {
        (af + m) * (af + m)
    } else {
        m * m
    }
}

/// Plans [`phi_cf`] for a = `af` > 0, z = `zf`, 1 - z = `yf` at `prec`
/// bits. The levels are g_j = (a + j) - c_{j+1}/g_{j+1}, c_k = P_k z, and
/// a relative error e in g_{j+1} becomes s_j e in g_j with
/// s_j = c_{j+1}/(g_{j+1} g_j); with L_j = sum_{i<j} log2 s_i, the
/// truncation at depth N (g_N = a + N) changes the result by 2^L_{N+1}
/// relative, and a rounding at level j reaches the result multiplied by
/// 2^L_j (2 |a + j| + 6 |c/g|)/|g_j| (the roundings of a + j, of c, of the
/// quotient, of the difference, and of a and z at that level's precision).
/// Level j is evaluated at prec + [`CF_GUARD`] + L_j + log2 of that factor
/// bits (whole limbs, at least 64, at most prec, never falling towards
/// level 0). None when the depth would pass [`CF_MAX_LEVELS`].
fn cf_plan(af: f64, zf: f64, yf: f64, prec: u32) -> Option<CfPlan> {
    let n0 = cf_levels(prec, yf).ceil() as usize;
    let nf = n0 + n0 / 2 + 16;
    if nf > CF_MAX_LEVELS {
        return None;
    }
    // g_j in double precision from a start far below the depth needed (the
    // levels contract, so the start does not matter at the levels used)
    let mut g = vec![0.0f64; nf + 1];
    g[nf] = af + nf as f64;
    for j in (0..nf).rev() {
        g[j] = (af + j as f64) - cf_numerator(j + 1, af) * zf / g[j + 1];
    }
    // L_j = log2(sens) + sens_exp, kept as a product (no logarithm per level)
    let target = -((prec + CF_GUARD) as i32);
    let mut sens = 1.0f64;
    let mut sens_exp = 0i32;
    let mut levels = Vec::with_capacity(n0 + 8);
    let mut depth = None;
    for j in 0..nf {
        let q = cf_numerator(j + 1, af) * zf / g[j + 1];
        let local = (2.0 * (af + j as f64).abs() + 6.0 * q.abs()) / g[j].abs() + 1.0;
        levels.push((sens, sens_exp, local));
        sens *= (q / g[j]).abs();
        if !(sens > 0.0 && sens.is_finite()) {
            return None;
        }
        if sens < pow2(-256) {
            sens *= pow2(256);
            sens_exp -= 256;
        } else if sens > pow2(256) {
            sens *= pow2(-256);
            sens_exp += 256;
        }
        // L_{j+1} < target
        let k = target - sens_exp;
        if k > -1000 && (k >= 1000 || sens < pow2(k)) {
            depth = Some(j);
            break;
        }
    }
    let depth = depth?;
    // precisions from the deepest level up, never falling towards level 0;
    // log2 of 2^L_j times the local factor rounded up (at most 1 bit over)
    let mut precs = vec![0u32; depth + 1];
    let mut error_units = 0.0f64;
    let mut p_prev = 64u32;
    let top = prec.max(64);
    for j in (0..=depth).rev() {
        let (s, se, local) = levels[j];
        let need = (prec + CF_GUARD) as i32 + se + log2_floor(s * local) + 1;
        let tier = ((need.max(1) as u32).div_ceil(64) * 64).clamp(64, top);
        let p = tier.max(p_prev);
        p_prev = p;
        precs[j] = p;
        error_units += s * local * pow2(se + prec as i32 - p as i32);
    }
    Some(CfPlan {
        depth,
        precs,
        error_units,
    })
}

/// Phi(z, 1, a) for a > 0 by the continued fraction of the hypergeometric
/// function 2F1(1, a; a + 1; z) = a Phi(z, 1, a):
///
/// ```text
/// Phi(z, 1, a) = 1 / (a - P_1 z / (a + 1 - P_2 z / (a + 2 - P_3 z / ...))),
/// P_{2m+1} = (a + m)^2,  P_{2m} = m^2,
/// ```
///
/// evaluated from the depth of [`cf_plan`] upwards, each level at the
/// precision the plan gives it. About log2((1 + sqrt y)/(1 - sqrt y)) bits
/// per level (y = 1 - z): far fewer levels than terms of the power series
/// once z is not small. None when the plan finds the depth too large.
///
/// # Accuracy
/// Truncation below 2^-(prec + [`CF_GUARD`]) relative; the estimated
/// rounding error of all levels (a bound from the double-precision pass of
/// [`cf_plan`]) is recorded in `meter` as a loss when it exceeds 2^-prec.
fn phi_cf(a: &Float, pt: &ZPoint, meter: &mut Meter) -> Option<Float> {
    let prec = a.prec();
    let plan = cf_plan(a.to_f64(), pt.z.to_f64(), pt.one_minus_z.to_f64(), prec)?;
    let depth = plan.depth;
    let mut wp = plan.precs[depth];
    let mut z_w = Float::with_val(wp, &pt.z);
    let mut a_w = Float::with_val(wp, a);
    let mut g = Float::with_val(wp, &a_w + depth as u32);
    let mut t = Float::new(wp);
    let mut b = Float::new(wp);
    for j in (0..depth).rev() {
        let p = plan.precs[j];
        if p != wp {
            wp = p;
            z_w.set_prec(wp);
            z_w.assign(&pt.z);
            a_w.set_prec(wp);
            a_w.assign(a);
            t.set_prec(wp);
            b.set_prec(wp);
            g.set_prec(wp);
        }
        let k = j + 1;
        let m = (k / 2) as u32;
        if k % 2 == 1 {
            t.assign(&a_w + m);
            t.square_mut();
            t *= &z_w;
        } else {
            t.assign(&z_w * (m * m));
        }
        t /= &g;
        b.assign(&a_w + j as u32);
        b -= &t;
        std::mem::swap(&mut g, &mut b);
    }
    let loss = (plan.error_units.max(1.0)).log2().ceil() as i32;
    if loss > 0 {
        meter.loss(loss);
    }
    Some(Float::with_val(prec, g.recip_ref()))
}

/// The plan of [`phi_bernoulli`] at `prec` bits for mu = `muf` and
/// x = a mu = `xf`: the highest power k of the series (even), the level
/// where the backward recurrence of T_j starts, and the number of terms of
/// T_0.
struct BernoulliPlan {
    k: usize,
    start: usize,
    t0_terms: usize,
}

/// See [`BernoulliPlan`]. A term b_j mu^j T_j of the series is below
/// 2 (mu / 2 pi)^j for j >= 2 (|B_j| / j! <= 3.3 (2 pi)^-j and T_j <= 1/j), so
/// k = (prec + 25) / log2(2 pi / mu) powers make it smaller than
/// 2^-(prec + 24). The backward recurrence of T_j damps the error of its
/// start T_J = e^-x / J (relative error below x / (J + 1 - x)) by x / j per
/// level below J, so it starts where those factors from k up reach
/// 2^-(prec + 24). T_0 = sum_{i>=1} (-x)^i / (i i!) is summed until its
/// terms fall below 2^-(prec + 24) of its scale.
fn bernoulli_plan(prec: u32, muf: f64, xf: f64) -> BernoulliPlan {
    let bits = f64::from(prec) + 24.0;
    let per_power = (2.0 * std::f64::consts::PI / muf).log2().max(0.5);
    let k = ((((bits + 1.0) / per_power).ceil() as usize).max(2)).div_ceil(2) * 2;
    let x = xf.max(1e-300);
    let mut start = k.max(xf.floor() as usize + 1);
    // the product of start / x (times 2^acc) until it reaches 2^(bits + 8)
    let goal = (bits + 8.0).ceil() as i32;
    let mut damped = 1.0f64;
    let mut acc = 0i32;
    while goal - acc >= 1000 || damped < pow2(goal - acc) {
        let r = start as f64 / x;
        if r > pow2(64) {
            acc += log2_floor(r);
        } else {
            damped *= r;
            if damped > pow2(256) {
                damped *= pow2(-256);
                acc += 256;
            }
        }
        start += 1;
    }
    // terms x^i / (i i!) against the scale min(x, 1) of T_0: w_i = term /
    // scale times 2^w_exp, down to 2^-bits
    let floor_bits = -(bits.ceil() as i32);
    let mut w = x / x.min(1.0);
    let mut w_exp = 0i32;
    let mut i = 1usize;
    loop {
        let k = floor_bits - w_exp;
        let small = k > -1000 && (k >= 1000 || w / (i as f64) < pow2(k));
        if (i as f64) > xf && small {
            break;
        }
        i += 1;
        w *= x / i as f64;
        if w < pow2(-256) {
            w *= pow2(256);
            w_exp -= 256;
        }
    }
    BernoulliPlan {
        k,
        start,
        t0_terms: i,
    }
}

/// 2^k as a double (k clamped to the normal range).
fn pow2(k: i32) -> f64 {
    f64::from_bits(((k.clamp(-1022, 1023) + 1023) as u64) << 52)
}

/// floor(log2 v) for a positive finite v (its binary exponent).
fn log2_floor(v: f64) -> i32 {
    let e = ((v.to_bits() >> 52) & 0x7ff) as i32;
    if e == 0 {
        v.log2().floor() as i32
    } else {
        e - 1023
    }
}

/// Estimated cost of [`phi_bernoulli`] in multiplications at `prec` bits
/// (an exponential, the digamma function with one logarithm, three
/// operations per level of the recurrence and per power of the series,
/// four per term of T_0), with the counts of [`bernoulli_plan`] in closed
/// form: the levels below the start damp by at least k / x each, and T_0
/// needs n terms with n log2(n / (e x)) about prec + 24 (Stirling).
fn bernoulli_cost(prec: u32, muf: f64, xf: f64) -> f64 {
    let bits = f64::from(prec) + 24.0;
    let per_power = (2.0 * std::f64::consts::PI / muf).log2().max(0.5);
    let k = ((bits + 1.0) / per_power).ceil().max(2.0);
    let x = xf.max(1e-300);
    let k0 = k.max(xf.floor() + 1.0);
    let start = k0 + (bits + 8.0) / (k0 / x).log2().max(0.1);
    let ex = std::f64::consts::E * x;
    let mut n = (2.0 * ex).max(8.0);
    for _ in 0..2 {
        n = (2.0 * ex).max(bits / (n / ex).log2().max(1.0));
    }
    EXP_COST + DIGAMMA_COST + 3.0 * start + 1.5 * k + 4.0 * n
}

/// e^(a mu) [ -ln mu - gamma - psi(a) + I ] for a > 0, with
/// I = int_{-mu}^0 (G(t) - 1)/t dt summed as a series in mu.
///
/// G(t) = t e^(a t)/(e^t - 1) = e^(a t) sum_j b_j t^j (b_j = B_j / j!, the
/// Bernoulli numbers), so with x = a mu and
/// T_j = int_0^1 s^(j-1) e^(-x s) ds (j >= 1),
/// T_0 = int_0^1 (e^(-x s) - 1)/s ds = sum_{i>=1} (-x)^i / (i i!),
///
/// ```text
/// I = -sum_j b_j (-mu)^j T_j = -T_0 - (mu/2) T_1 - sum_{m>=1} b_2m mu^2m T_2m
/// ```
///
/// (b_1 = -1/2, the other odd b_j vanish). The T_j come from the backward
/// recurrence T_j = (e^-x + x T_{j+1}) / j, whose terms are positive (a
/// relative error never grows on the way down), and the powers by Horner's
/// scheme in mu^2; ln mu and the logarithm of the digamma function are
/// taken together as ln(mu X) ([`digamma_parts`]). One exponential and one
/// logarithm per call, no quadrature rule.
///
/// # Accuracy
/// Every part is formed at prec + 16 bits (T_0, an alternating series, at
/// 1.45 x more); truncations below 2^-(prec + 24) (see [`bernoulli_plan`]).
/// The cancellation between the parts is recorded in `meter`.
fn phi_bernoulli(a: &Float, pt: &ZPoint, meter: &mut Meter) -> Float {
    let prec = a.prec();
    let wp = prec + 16;
    let mu = Float::with_val(wp, &pt.mu);
    let x = Float::with_val(wp, a * &mu);
    let xf = x.to_f64();
    let plan = bernoulli_plan(prec, mu.to_f64(), xf);
    let pre = Float::with_val(wp, x.exp_ref());
    let e = Float::with_val(wp, pre.recip_ref());
    let coef = taylor_coefficients_at(wp, plan.k / 2);
    let mu2 = Float::with_val(wp, &mu * &mu);
    // T_j from T_J = e^-x / J down to T_1; h collects sum b_j mu^(j-2) T_j
    // over the even j <= k by Horner's scheme
    let mut t = Float::with_val(wp, &e / plan.start as u32);
    let mut h = Float::with_val(wp, 0);
    let mut prod = Float::new(wp);
    for j in (1..plan.start).rev() {
        t *= &x;
        t += &e;
        t /= j as u32;
        if j % 2 == 0 && j <= plan.k {
            h *= &mu2;
            prod.assign(&coef[j / 2 - 1] * &t);
            h += &prod;
        }
    }
    h *= &mu2;
    // T_0 at the bits its alternating terms need
    let wp0 = wp + (1.45 * xf).ceil() as u32 + 1;
    let x0 = Float::with_val(wp0, a * &pt.mu);
    let mut u = x0.clone();
    let mut t0 = Float::with_val(wp0, -&u);
    let mut term = Float::new(wp0);
    for i in 2..=plan.t0_terms as u32 {
        u *= &x0;
        u /= i;
        term.assign(&u / i);
        if i % 2 == 0 {
            t0 += &term;
        } else {
            t0 -= &term;
        }
    }
    // I = -T_0 - (mu/2) T_1 - mu^2 h
    let mut integral = Float::with_val(wp, -&t0);
    prod.assign(&mu * &t);
    prod /= 2u32;
    integral -= &prod;
    integral -= &h;
    // -ln mu - gamma - psi(a) = -ln(mu X) - gamma - rest
    let (big_x, rest) = digamma_parts(a, wp);
    prod.assign(&mu * &big_x);
    let mut inner = Float::with_val(wp, -Float::with_val(wp, prod.ln_ref()));
    inner -= Float::with_val(wp, rug::float::Constant::Euler);
    inner -= &rest;
    meter.term(&inner);
    meter.term(&integral);
    inner += &integral;
    meter.result(&inner);
    inner *= &pre;
    Float::with_val(prec, inner)
}

/// Most terms of the asymptotic series in [`digamma_parts`]; above them
/// (very high precision) the MPFR digamma function is used.
const DIGAMMA_MAX_TERMS: usize = 120;

/// The Bernoulli numbers B_0..=B_`top` (exact, from
/// sum_{j<=m} C(m+1, j) B_j = 0), computed as far as a caller has needed
/// them and kept for the process.
fn bernoulli_numbers(top: usize) -> Arc<Vec<Rational>> {
    static B: OnceLock<Mutex<Arc<Vec<Rational>>>> = OnceLock::new();
    let cell = B.get_or_init(|| Mutex::new(Arc::new(vec![Rational::from(1)])));
    let mut known = cell.lock().unwrap_or_else(|e| e.into_inner());
    if known.len() > top {
        return known.clone();
    }
    let mut b: Vec<Rational> = known.as_ref().clone();
    for m in b.len()..=top {
        // B_m = -1/(m+1) sum_{j<m} C(m+1, j) B_j
        let mut sum = Rational::new();
        let mut binom = Integer::from(1); // C(m+1, j)
        for (j, bj) in b.iter().enumerate() {
            if !bj.is_zero() {
                sum += Rational::from(bj * &binom);
            }
            binom *= (m + 1 - j) as u32;
            binom /= (j + 1) as u32;
        }
        b.push(-sum / Rational::from(m + 1));
    }
    let b = Arc::new(b);
    *known = b.clone();
    b
}

/// The two coefficient sequences built from the even Bernoulli numbers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
enum Coefficients {
    /// B_2k / (2k), of the asymptotic series of the digamma function.
    Digamma,
    /// B_2k / (2k)!, of the Taylor series of t / (e^t - 1).
    Taylor,
}

/// The first `count` (k = 1..) coefficients of `kind`, rounded to `prec`
/// bits and kept per (kind, precision); every entry is the exact value
/// rounded, whatever was asked before (the cache changes times, never
/// values).
fn coefficients_at(kind: Coefficients, prec: u32, count: usize) -> Arc<Vec<Float>> {
    type Cache = Mutex<HashMap<(Coefficients, u32), Arc<Vec<Float>>>>;
    static C: OnceLock<Cache> = OnceLock::new();
    let cache = C.get_or_init(|| Mutex::new(HashMap::new()));
    if let Some(v) = cache
        .lock()
        .ok()
        .and_then(|c| c.get(&(kind, prec)).cloned())
        .filter(|v| v.len() >= count)
    {
        return v;
    }
    let b = bernoulli_numbers(2 * count);
    let mut fact = Integer::from(1);
    let v: Arc<Vec<Float>> = Arc::new(
        (1..=count)
            .map(|k| {
                let q = match kind {
                    Coefficients::Digamma => &b[2 * k] / Rational::from(2 * k),
                    Coefficients::Taylor => {
                        fact *= (2 * k - 1) as u32;
                        fact *= (2 * k) as u32;
                        &b[2 * k] / Rational::from(&fact)
                    }
                };
                Float::with_val(prec, &q)
            })
            .collect(),
    );
    if let Ok(mut c) = cache.lock() {
        c.insert((kind, prec), v.clone());
    }
    v
}

/// B_2m / (2m)!, m = 1..=`count`, at `prec` bits (see [`coefficients_at`]).
fn taylor_coefficients_at(prec: u32, count: usize) -> Arc<Vec<Float>> {
    coefficients_at(Coefficients::Taylor, prec, count)
}

/// Terms K of the asymptotic series of psi(X) at X = `xf` for a truncation
/// below 2^-`bits`: log2 of the first term left out,
/// 2 (2K)! / (2K (2 pi X)^2K), by steps. None above [`DIGAMMA_MAX_TERMS`].
fn digamma_terms(bits: f64, xf: f64) -> Option<usize> {
    let log2_2pix = (2.0 * std::f64::consts::PI * xf).log2();
    let mut log2_term = 1.0 - 2.0 * log2_2pix; // k = 1: 2 * 2! / (2 (2 pi X)^2)
    let mut k = 1usize;
    while log2_term > -bits {
        if k >= DIGAMMA_MAX_TERMS {
            return None;
        }
        // ratio of the (k+1)-th term to the k-th
        let kf = k as f64;
        log2_term += ((2.0 * kf + 1.0) * (2.0 * kf + 2.0) * (2.0 * kf) / (2.0 * kf + 2.0)).log2()
            - 2.0 * log2_2pix;
        k += 1;
    }
    Some(k)
}

/// psi(a) = ln X + rest for a > 0, both parts at `wp` bits, so that a caller can merge ln X with a logarithm
/// of its own.
///
/// The argument is shifted up to X = a + s >= 0.16 (wp - 16) + 8 by
/// psi(a) = psi(X) - sum_{j<s} 1/(a + j), and
/// psi(X) = ln X - 1/(2X) - sum_{k=1}^{K} B_2k / (2k X^2k) with K chosen so
/// that the first term left out is below 2^-(wp - 8) ([`digamma_terms`]).
/// Above [`DIGAMMA_MAX_TERMS`] terms the MPFR digamma function gives rest
/// (with X = 1).
fn digamma_parts(a: &Float, wp: u32) -> (Float, Float) {
    let prec = wp.saturating_sub(16).max(1);
    let af = a.to_f64();
    let x0 = (0.16 * f64::from(prec) + 8.0).ceil();
    let shift = if af < x0 { (x0 - af).ceil() as u32 } else { 0 };
    let xf = af + f64::from(shift);
    let bits = f64::from(prec) + 8.0;
    let Some(k) = digamma_terms(bits, xf) else {
        let aw = Float::with_val(wp, a);
        return (
            Float::with_val(wp, 1),
            Float::with_val(wp, aw.digamma_ref()),
        );
    };
    // enough terms for any argument at this precision (X >= x0)
    let count = digamma_terms(bits, x0).unwrap_or(DIGAMMA_MAX_TERMS).max(k);
    let coef = coefficients_at(Coefficients::Digamma, wp, count);
    let aw = Float::with_val(wp, a);
    let x = Float::with_val(wp, &aw + shift);
    let y = Float::with_val(wp, Float::with_val(wp, &x * &x).recip_ref());
    // sum_{k=1}^{K} c_k y^k by Horner
    let mut series = Float::with_val(wp, &coef[k - 1]);
    for c in coef[..k - 1].iter().rev() {
        series *= &y;
        series += c;
    }
    series *= &y;
    let mut rest = Float::with_val(wp, Float::with_val(wp, &x * 2u32).recip_ref());
    rest += &series;
    let mut t = Float::new(wp);
    for j in 0..shift {
        t.assign(&aw + j);
        t.recip_mut();
        rest += &t;
    }
    rest = -rest;
    (x, rest)
}

/// The digamma function psi(a) for a > 0, at a's precision: ln X + rest
/// from [`digamma_parts`] at 16 more bits, rounded. About six times cheaper
/// than the MPFR digamma function at 200 to 400 bits.
///
/// # Accuracy
/// Relative error about 2^-prec (checked against the MPFR digamma function
/// in the tests).
#[cfg(test)]
pub(crate) fn digamma(a: &Float) -> Float {
    let wp = a.prec() + 16;
    let (x, rest) = digamma_parts(a, wp);
    let mut psi = Float::with_val(wp, x.ln_ref());
    psi += &rest;
    Float::with_val(a.prec(), psi)
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

    /// The point `pt` (the same values) at `prec` bits.
    fn same_point(pt: &ZPoint, prec: u32) -> ZPoint {
        ZPoint {
            z: Float::with_val(prec, &pt.z),
            one_minus_z: Float::with_val(prec, &pt.one_minus_z),
            mu: Float::with_val(prec, &pt.mu),
        }
    }

    /// Asserts that `v`, computed at `prec` bits with the loss `loss` its
    /// meter recorded, lies within 2^(loss - prec + slack) relative of the
    /// reference `r` (computed at a higher precision).
    fn assert_within_loss(v: &Float, r: &Float, loss: i32, prec: u32, slack: i32, what: &str) {
        let hp = r.prec();
        let rel = Float::with_val(hp, (Float::with_val(hp, v) - r) / r)
            .abs()
            .to_f64();
        let allowed = 2f64.powi(loss - prec as i32 + slack);
        assert!(
            rel <= allowed,
            "{what}: {rel:e} > {allowed:e} (loss {loss})"
        );
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

    /// The digamma function of this module against the MPFR one (a general
    /// reference library) at several arguments and precisions.
    #[test]
    fn digamma_matches_mpfr() {
        for prec in [64u32, 192, 288, 416, 700] {
            for aval in ["0.0031", "0.37", "1", "3.6", "41.5", "97.25", "1234.5"] {
                let a = Float::with_val(prec, Float::parse(aval).unwrap());
                let ours = digamma(&a);
                let mpfr = Float::with_val(prec + 64, Float::with_val(prec + 64, &a).digamma_ref());
                let rel = (Float::with_val(prec + 64, &ours - &mpfr) / &mpfr)
                    .abs()
                    .to_f64();
                assert!(
                    rel <= 2f64.powi(-(prec as i32) + 2),
                    "prec={prec} a={aval}: rel {rel:e}"
                );
            }
        }
    }

    /// The direct series with their tails at lower precision (see
    /// [`tail_prec`]) against the same series at 256 more bits: the error
    /// stays within a few units of 2^-prec times the largest term (the
    /// scale the meter reports as the loss; the rounding of the terms before
    /// the tail alone reaches a few units at large beta).
    #[test]
    fn series_tails_keep_the_accuracy() {
        for prec in [128u32, 224, 704] {
            for zs in ["0.01", "0.2", "0.249"] {
                for aval in ["0.37", "-7.5", "41.25", "-60.5"] {
                    for beta in [2u32, 40, 400] {
                        let pt = point(zs, prec);
                        let a = Float::with_val(prec, Float::parse(aval).unwrap());
                        let mut m = Meter::new();
                        let v = series(beta, &a, &pt, &mut m);
                        let hp = prec + 256;
                        let pt_hi = same_point(&pt, hp);
                        let a_hi = Float::with_val(hp, &a);
                        let r = series(beta, &a_hi, &pt_hi, &mut Meter::new());
                        assert_within_loss(
                            &v,
                            &r,
                            m.loss_bits,
                            prec,
                            8,
                            &format!("series prec={prec} z={zs} a={aval} beta={beta}"),
                        );
                    }
                }
            }
            for zs in ["0.3", "0.6", "0.86"] {
                for aval in ["0.37", "-7.5", "41.25"] {
                    let pt = point(zs, prec);
                    let a = Float::with_val(prec, Float::parse(aval).unwrap());
                    let mut m = Meter::new();
                    let v = phi_series(&a, &pt, &mut m);
                    m.result(&v);
                    let hp = prec + 256;
                    let r = phi_series(
                        &Float::with_val(hp, &a),
                        &same_point(&pt, hp),
                        &mut Meter::new(),
                    );
                    assert_within_loss(
                        &v,
                        &r,
                        m.loss_bits,
                        prec,
                        8,
                        &format!("phi prec={prec} z={zs} a={aval}"),
                    );
                }
            }
        }
    }

    /// The continued fraction (levels at the precisions of its plan)
    /// against the same function at 256 more bits by an independent route:
    /// the power series where it converges in 200000 terms, the Bernoulli
    /// route nearer to z = 1. The error stays within a few units of 2^-prec
    /// times 2^loss (the loss the plan records in the meter); negative a
    /// goes through the upward shift of [`lerch_phi`].
    #[test]
    fn continued_fraction_keeps_the_accuracy() {
        for prec in [128u32, 224, 704] {
            for zs in ["0.25", "0.6", "0.9", "0.99", "0.9999"] {
                for aval in ["0.0013", "0.37", "3.6", "41.25", "400.5", "-7.5"] {
                    let pt = point(zs, prec);
                    let a = Float::with_val(prec, Float::parse(aval).unwrap());
                    let mut m = Meter::new();
                    let v = if a > 0 {
                        phi_cf(&a, &pt, &mut m).expect("a plan")
                    } else {
                        shifted_up(&a, &pt, &mut m, phi_cf).expect("a plan")
                    };
                    m.result(&v);
                    let hp = prec + 256;
                    let pt_hi = same_point(&pt, hp);
                    let a_hi = Float::with_val(hp, &a);
                    let r = if pt.z < 0.95 {
                        phi_series(&a_hi, &pt_hi, &mut Meter::new())
                    } else {
                        lerch_bernoulli(&a_hi, &pt_hi, &mut Meter::new())
                    };
                    assert_within_loss(
                        &v,
                        &r,
                        m.loss_bits,
                        prec,
                        2,
                        &format!("cf prec={prec} z={zs} a={aval}"),
                    );
                }
            }
        }
    }

    /// The series in mu of the Bernoulli route against the same function at
    /// 256 more bits by an independent route (the continued fraction, or
    /// for z within 1e-6 of 1, where that is too deep, the Bernoulli route
    /// itself), for a from 0.0013 to 8 / mu (x = a mu up to 8, the largest
    /// the route is given) at 128 to 704 bits: the error stays within a few
    /// units of 2^-prec times 2^loss (the cancellation the meter records).
    #[test]
    fn bernoulli_series_keeps_the_accuracy() {
        for prec in [128u32, 224, 704] {
            for zs in ["0.25", "0.9", "0.99", "0.9999", "0.999999999"] {
                let pt = point(zs, prec);
                let muf = pt.mu.to_f64();
                for af in [0.0013, 0.37, 1.0, 3.6, 0.5 / muf, 8.0 / muf] {
                    let a = Float::with_val(prec, af);
                    let mut m = Meter::new();
                    let v = phi_bernoulli(&a, &pt, &mut m);
                    let hp = prec + 256;
                    let pt_hi = same_point(&pt, hp);
                    let a_hi = Float::with_val(hp, &a);
                    let r = phi_cf(&a_hi, &pt_hi, &mut Meter::new())
                        .unwrap_or_else(|| phi_bernoulli(&a_hi, &pt_hi, &mut Meter::new()));
                    assert_within_loss(
                        &v,
                        &r,
                        m.loss_bits,
                        prec,
                        3,
                        &format!("bernoulli prec={prec} z={zs} a={af}"),
                    );
                }
            }
        }
    }

    #[test]
    fn phi_matches_series() {
        let prec = 200;
        for zs in ["0.3", "0.77", "0.995"] {
            for aval in ["0.37", "3.6", "-2.25", "41.5"] {
                let pt = point(zs, prec);
                let a = Float::with_val(prec, Float::parse(aval).unwrap());
                let mut m = Meter::new();
                let v = lerch_phi(&a, &pt, &mut m, true).value;
                let b = brute_phi(&a, &pt.z);
                let rel = Float::with_val(prec, (v - &b) / &b).abs().to_f64();
                assert!(rel < 1e-50, "z={zs} a={aval} rel={rel:e}");
            }
        }
    }

    /// Where the plan drops the lower terms of the polynomial part and the
    /// Lerch part of m(a) (large beta, z up to near 1, a of either sign),
    /// the value stays within its rounding level of the same function at
    /// 256 more bits, and the logarithmic coefficient the higher
    /// evaluation keeps is as negligible; the drop must happen at many of
    /// the points, so that the comparison cannot pass empty.
    #[test]
    fn dropped_terms_stay_below_the_rounding_level() {
        let mut dropped = 0;
        for prec in [192u32, 320] {
            for beta in [40u32, 82, 164, 302] {
                for zs in ["0.3", "0.6", "0.9", "0.99", "0.9999"] {
                    for shift in [0.0f64, -0.3, -7.7, -30.2, -0.6 * f64::from(beta) - 0.37] {
                        let pt = point(zs, prec);
                        let af = f64::from(beta) / 2.0 + shift;
                        let a = Float::with_val(prec, af);
                        let mut m = Meter::new();
                        let (v, _) = meixner_stieltjes(beta, &a, &pt, &mut m, None, true);
                        let hp = prec + 256;
                        let hpt = same_point(&pt, hp);
                        let ha = Float::with_val(hp, &a);
                        let (r, _) =
                            meixner_stieltjes(beta, &ha, &hpt, &mut Meter::new(), None, true);
                        let what = format!("beta={beta} z={zs} a={af} prec={prec}");
                        assert_within_loss(&v.value, &r.value, m.loss_bits, prec, 8, &what);
                        let plan = poly_plan(
                            beta,
                            af,
                            &PointF64 {
                                y: pt.one_minus_z.to_f64(),
                                z: pt.z.to_f64(),
                                mu: pt.mu.to_f64(),
                            },
                            prec,
                        );
                        if !plan.with_tail {
                            dropped += 1;
                            assert!(v.log_coef.is_zero());
                            let weight = pt.mu.to_f64().ln().abs() + 64.0;
                            let rel = (r.log_coef.to_f64() * weight / r.value.to_f64()).abs();
                            assert!(
                                rel <= 2f64.powi(m.loss_bits - prec as i32 + 8),
                                "{what}: log part {rel:e}"
                            );
                        }
                    }
                }
            }
        }
        assert!(dropped >= 40, "dropped at {dropped} points only");
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
                    let closed = meixner_stieltjes(beta, &a, &pt, &mut m, None, true).0.value;
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
