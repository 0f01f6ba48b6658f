//! The exact data of one state and the exact part of S: the lower-state
//! terms, their image terms, and the constants of the split.
//!
//! With D_m = E_m - E_n in hartree (Z = 1), the photon-energy integral is
//! written for S_h = sum_m |p_nm|^2 D_m ln|D_m| (logarithm of D in
//! hartree). The Bethe-logarithm numerator measures D in units of Z^2 Ry,
//! and D / (Z^2 Ry) = 2 D / hartree at Z = 1: S = S_h + Dsum ln 2 with
//! Dsum = sum_m |p_nm|^2 D_m, and [`ExactState::exact_part`] adds that
//! Dsum ln 2 explicitly (docs/physics.md, section 3.4).

use super::channel::{channels, ChannelData, ChannelFloat};
use super::integrand::{Integrand, LowerPole};
use crate::BetheError;
use rug::{Float, Rational};

/// Exact, precision-independent data of one state.
pub(crate) struct ExactState {
    /// Principal quantum number.
    pub(crate) n: u32,
    /// The open channels L = l - 1, l + 1.
    pub(crate) channels: Vec<ChannelData>,
    /// Dsum = sum_m |p_nm|^2 D_m = 2/n^3 for l = 0, else 0 (hartree, Z = 1).
    pub(crate) dipole_sum: Rational,
    /// The residues A = c D of the lower states, channel by channel in the
    /// order of [`ChannelData::lower_states`] (exact; each is negative).
    residues: Vec<Rational>,
}

impl ExactState {
    /// The data of (n, l).
    ///
    /// # Errors
    /// Propagates basis-crate errors (none for valid states).
    pub(crate) fn new(n: u32, l: u32) -> Result<Self, BetheError> {
        let channels = channels(n, l)?;
        let dipole_sum = if l == 0 {
            Rational::from((2u64, u64::from(n).pow(3)))
        } else {
            Rational::new()
        };
        // the residues are kept apart: their exact sum would grow a common
        // denominator (and cost gcds) with every lower state
        let residues = channels
            .iter()
            .flat_map(|ch| ch.lower_states.iter())
            .map(|low| Rational::from(&low.weighted_p2 * &low.energy_diff))
            .collect();
        Ok(ExactState {
            n,
            channels,
            dipole_sum,
            residues,
        })
    }

    /// The smallest n' of the lower states (None for n = 1 and for states
    /// without lower states in either channel).
    pub(crate) fn first_lower_state(&self) -> Option<u32> {
        self.channels
            .iter()
            .flat_map(|c| c.lower_states.iter().map(|low| low.nprime))
            .min()
    }

    /// The integrand rounded to `prec` bits. The two channels put their
    /// lower-state poles at the same n' (n' > l + 1): their residues are
    /// added (both negative, so without cancellation) and each pole is
    /// sampled once.
    pub(crate) fn integrand(&self, prec: u32) -> Integrand {
        let mut by_level: std::collections::BTreeMap<u32, Float> = Default::default();
        let lows = self.channels.iter().flat_map(|ch| ch.lower_states.iter());
        for (low, a) in lows.zip(&self.residues) {
            *by_level
                .entry(low.nprime)
                .or_insert_with(|| Float::with_val(prec, 0)) += a;
        }
        let lower_poles = by_level
            .into_iter()
            .map(|(nprime, residue)| LowerPole {
                nprime: Float::with_val(prec, nprime),
                residue,
            })
            .collect();
        Integrand {
            n: self.n,
            channels: self
                .channels
                .iter()
                .map(|c| ChannelFloat::new(c, prec))
                .collect(),
            lower_poles,
            two_dipole_sum: Float::with_val(prec, Rational::from(&self.dipole_sum * 2u32)),
        }
    }

    /// The part of S computed exactly, at `prec` bits: the sum over lower
    /// states of c D ln|D| (D in hartree) and of their image terms
    /// -c D ln((n + n')/n'), plus Dsum_up ln w0 (w0 = 1/(2 n^2), the
    /// binding energy in hartree) and Dsum ln 2 (the change of the unit of
    /// D inside the logarithm from hartree to Z^2 Ry).
    pub(crate) fn exact_part(&self, prec: u32) -> Float {
        // Dsum_up = Dsum - sum_lower c D: every c D is negative, so the sum
        // has no cancellation and is formed in floats (a guard of 32 bits
        // covers the roundings of up to 2^31 terms); the terms c D ln|D| and
        // the image terms are rounded one by one as well
        let wp = prec + 32;
        let mut s = Float::with_val(wp, 0);
        let mut upper = Float::with_val(wp, &self.dipole_sum);
        let lows = self.channels.iter().flat_map(|ch| ch.lower_states.iter());
        for (low, a) in lows.zip(&self.residues) {
            let cd = Float::with_val(wp, a);
            upper -= &cd;
            let ln_abs_d = Float::with_val(wp, -low.energy_diff.clone()).ln();
            let ln_ratio =
                Float::with_val(wp, Rational::from((self.n + low.nprime, low.nprime))).ln();
            s += cd * (ln_abs_d - ln_ratio);
        }
        let nn = u64::from(self.n) * u64::from(self.n);
        let ln_w0 = Float::with_val(wp, Rational::from((1u64, 2 * nn))).ln();
        s += upper * ln_w0;
        let ln2 = Float::with_val(wp, rug::float::Constant::Log2);
        s += Float::with_val(wp, &self.dipole_sum) * ln2;
        Float::with_val(prec, s)
    }
}
