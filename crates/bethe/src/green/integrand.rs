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
//! is the upper-spectrum part of S_h = sum_m |p_nm|^2 D_m ln|D_m|, with D in
//! hartree (the change to units of Z^2 Ry, Dsum ln 2, is added in the exact
//! part; docs/physics.md, sections 3.2 to 3.4). Writing
//! A = c D and using w + D = (n'^2 - nu^2)/(2 nu^2 n'^2),
//!
//! ```text
//! I = [f - 2 Dsum nu^2]/nu^3 - sum_lower A [1/(n' - nu) - 1/(n' + nu)]
//! ```
//!
//! The sampled integrand I' drops the image terms A/(n' + nu) (integrated in
//! closed form, A ln((n + n')/n')), so that it has no poles near nu = 0 on
//! the negative axis. Near nu = 0, I' = I_an + I_log ln(nu) with I_an and
//! I_log analytic, which the first panel integrates with a logarithmic
//! product rule.

use super::channel::ChannelFloat;
use super::meixner::{channel_j_with, NuPoint};
use super::meter::Meter;
use rug::ops::DivFrom;
use rug::{Assign, Float};

/// A lower state rounded to the working precision: it contributes the
/// simple pole -A / (n' - nu) to the integrand, with residue A = c D.
#[derive(Debug, Clone)]
pub(crate) struct LowerPole {
    /// n' (as a float, for the pole position).
    pub(crate) nprime: Float,
    /// A = c D (hartree times the weighted |p|^2 of the lower state).
    pub(crate) residue: Float,
}

/// Everything the sampled integrand I'(nu) needs, at one working precision
/// (the precision of [`Integrand::two_dipole_sum`]).
#[derive(Debug, Clone)]
pub(crate) struct Integrand {
    /// Principal quantum number.
    pub(crate) n: u32,
    /// Channels at this precision.
    pub(crate) channels: Vec<ChannelFloat>,
    /// Lower-state poles of all channels.
    pub(crate) lower_poles: Vec<LowerPole>,
    /// 2 Dsum, with Dsum = sum_m |p_nm|^2 D_m (2/n^3 for S states, else 0;
    /// hartree, Z = 1).
    pub(crate) two_dipole_sum: Float,
}

/// Integrand value at one node.
#[derive(Debug, Clone)]
pub(crate) struct Sample {
    /// I'(nu).
    pub(crate) value: Float,
    /// Coefficient I_log of ln(mu) (and hence of ln nu) in I'.
    pub(crate) log_coef: Float,
}

/// Phi(z, 1, a) of the channel L = `big_l` at `nu` (a = L + 1 - nu, at the
/// precision of `nu`) from Phi(z, 1, a + 2) of the channel L + 2
/// (`phi_up`): Phi(z, 1, a) = 1/a + z/(a + 1) + z^2 Phi(z, 1, a + 2).
pub(crate) fn phi_from_upper(big_l: u32, nu: &Float, z: &Float, phi_up: &Float) -> Float {
    let prec = nu.prec();
    let a = Float::with_val(prec, (big_l + 1) - Float::with_val(prec, nu));
    let a1 = Float::with_val(prec, &a + 1u32);
    let mut v = Float::with_val(prec, z * z) * phi_up;
    v += Float::with_val(prec, z / &a1);
    v += Float::with_val(prec, a.recip_ref());
    v
}

impl Integrand {
    /// Working precision of this integrand (bits).
    pub(crate) fn prec(&self) -> u32 {
        self.two_dipole_sum.prec()
    }

    /// I'(nu) and its logarithmic coefficient (only when `with_log` asks
    /// for it, else 0; the value does not depend on it). `meter` records
    /// cancellation.
    pub(crate) fn sample(&self, nu: &Float, meter: &mut Meter, with_log: bool) -> Sample {
        let prec = nu.prec();
        let n = self.n;
        let pt = NuPoint::new(n, nu);
        let nu2 = Float::with_val(prec, nu * nu);
        // w = (n - nu)(n + nu) / (2 nu^2 n^2)
        let nn = u64::from(n) * u64::from(n);
        let w = Float::with_val(
            prec,
            Float::with_val(prec, n - Float::with_val(prec, nu)) * Float::with_val(prec, nu + n),
        ) / (Float::with_val(prec, &nu2 * 2u32) * nn);
        let mut jsum = Float::with_val(prec, 0);
        let mut jlog = Float::with_val(prec, 0);
        // channels come as [L = l-1, L = l+1]: evaluate the upper one first;
        // its Phi(z,1,a+2) gives Phi(z,1,a) = 1/a + z/(a+1) + z^2 Phi(z,1,a+2)
        let mut phi_up: Option<Float> = None;
        for ch in self.channels.iter().rev() {
            let mut m = Meter::new();
            let hint = match (
                &phi_up,
                ch.big_l + 2 == self.channels.last().map_or(0, |c| c.big_l),
            ) {
                (Some(pu), true) => Some(phi_from_upper(ch.big_l, nu, &pt.zp.z, pu)),
                _ => None,
            };
            let (jv, phi) = channel_j_with(ch, &pt, &mut m, hint.as_ref(), with_log);
            if phi_up.is_none() {
                phi_up = phi;
            }
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
        let sub = Float::with_val(prec, &self.two_dipole_sum * &nu2);
        meter.term(&sub);
        f -= sub;
        meter.result(&f);
        let nu3 = Float::with_val(prec, &nu2 * nu);
        // f = f_reg + (w * jlog) ln mu
        let lc = Float::with_val(prec, &w * &jlog) / &nu3;
        let mut value = f / &nu3;
        // minus sum_lower A / (n' - nu), A = c D: the poles of the lower states
        let mut acc = Float::with_val(prec, 0);
        let mut t = Float::new(prec);
        let mut biggest = Float::with_val(prec, 0);
        for pole in &self.lower_poles {
            // A / (n' - nu), one rounding
            t.assign(&pole.nprime - nu);
            t.div_from(&pole.residue);
            if t.cmp_abs(&biggest) == Some(std::cmp::Ordering::Greater) {
                biggest.assign(&t);
            }
            acc += &t;
        }
        meter.term(&value);
        meter.term(&biggest);
        value -= &acc;
        meter.result(&value);
        Sample {
            value,
            log_coef: lc,
        }
    }
}
