//! The photon-energy integrand in the variable nu.
//!
//! With E_n - w = -1/(2 nu^2) (Z = 1), w runs over [0, inf) as nu runs over
//! (0, n], dw = -dnu / nu^3, and w + w0 = 1/(2 nu^2) for w0 = 1/(2n^2). With
//! f(w) = <p^2> - w J(w) and the lower bound states removed,
//! f_up = f - sum_lower c D/(D + w), the quantity
//!
//! ```text
//! S_up = Dsum_up ln(w0) - int_0^n I(nu) dnu,   I = (f_up - 2 Dsum_up nu^2) / nu^3
//! ```
//!
//! is the upper-spectrum part of S = sum_m |p_nm|^2 D_m ln|D_m|. Near nu = 0,
//! I = I_an + I_log ln(nu) with I_an and I_log analytic, which the first
//! panel integrates with a logarithmic product rule.

use super::channel::ChannelFloat;
use super::meixner::{channel_j, NuPoint};
use super::meter::Meter;
use rug::Float;

/// A lower-state term rounded to the working precision.
#[derive(Debug, Clone)]
pub struct PoleFloat {
    /// n'.
    pub nprime: u32,
    /// c D (hartree times the dipole weight).
    pub cd: Float,
}

/// Everything the integrand needs, at one working precision.
#[derive(Debug, Clone)]
pub struct Problem {
    /// Principal quantum number.
    pub n: u32,
    /// Channels at this precision.
    pub channels: Vec<ChannelFloat>,
    /// Lower-state terms of all channels.
    pub poles: Vec<PoleFloat>,
    /// 2 * Dsum_up (exact value rounded).
    pub two_dsum_up: Float,
}

/// Integrand value at one node.
#[derive(Debug, Clone)]
pub struct Sample {
    /// I(nu).
    pub value: Float,
    /// Coefficient I_log of ln(mu) (and hence of ln nu) in I.
    pub log_coef: Float,
}

impl Problem {
    /// I(nu) and its logarithmic coefficient. `meter` records cancellation.
    pub fn sample(&self, nu: &Float, meter: &mut Meter) -> Sample {
        let prec = nu.prec();
        let n = self.n;
        let pt = NuPoint::new(n, nu);
        let nu2 = Float::with_val(prec, nu * nu);
        // w = (n - nu)(n + nu) / (2 nu^2 n^2)
        let nn = u64::from(n) * u64::from(n);
        let w = Float::with_val(prec, Float::with_val(prec, n - Float::with_val(prec, nu)) * Float::with_val(prec, nu + n))
            / (Float::with_val(prec, &nu2 * 2u32) * nn);
        let mut jsum = Float::with_val(prec, 0);
        let mut jlog = Float::with_val(prec, 0);
        for ch in &self.channels {
            let mut m = Meter::new();
            let jv = channel_j(ch, &pt, &mut m);
            meter.merge(&m);
            meter.term(&jv.j);
            jsum += &jv.j;
            jlog += &jv.log_coef;
        }
        meter.result(&jsum);
        let p2 = Float::with_val(prec, 1u32) / nn;
        let wj = Float::with_val(prec, &w * &jsum);
        meter.term(&p2);
        meter.term(&wj);
        let mut f = Float::with_val(prec, &p2 - &wj);
        for pole in &self.poles {
            // D + w = (n'^2 - nu^2)/(2 nu^2 n'^2)
            let npf = pole.nprime;
            let dpw = Float::with_val(prec, Float::with_val(prec, npf - Float::with_val(prec, nu)) * Float::with_val(prec, nu + npf))
                / (Float::with_val(prec, &nu2 * 2u32) * (u64::from(npf) * u64::from(npf)));
            let t = Float::with_val(prec, &pole.cd / &dpw);
            meter.term(&t);
            f -= t;
        }
        let sub = Float::with_val(prec, &self.two_dsum_up * &nu2);
        meter.term(&sub);
        f -= sub;
        meter.result(&f);
        let nu3 = Float::with_val(prec, &nu2 * nu);
        // f = f_reg + (w * jlog) ln mu
        let lc = Float::with_val(prec, &w * &jlog) / &nu3;
        Sample {
            value: f / &nu3,
            log_coef: lc,
        }
    }
}
