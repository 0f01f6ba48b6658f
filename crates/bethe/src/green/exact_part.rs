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
    ///
    /// With |D| = (n - n')(n + n') / (2 n^2 n'^2), the logarithm of a lower
    /// state is ln|D| - ln((n + n')/n') = ln(n - n') - ln n' - ln(2 n^2), and
    /// ln w0 = -ln(2 n^2): every logarithm is one of small integers, taken
    /// from one [`SmallLogs`] table of the call.
    ///
    /// # Accuracy
    /// The sum is formed at prec + 32 bits and rounded once to `prec`. Each
    /// logarithm of a lower state has a relative error below 2^(7 - wp)
    /// (n <= 1000; see [`SmallLogs`]; its magnitude is at least ln(2n), so
    /// the subtractions lose at most 3 bits), each c D is rounded once:
    /// the guard of 32 bits covers these errors for up to 2^24 lower
    /// states, far more than any n allows.
    pub(crate) fn exact_part(&self, prec: u32) -> Float {
        // Dsum_up = Dsum - sum_lower c D: every c D is negative, so the sum
        // has no cancellation and is formed in floats; the terms
        // c D ln|D| and the image terms are rounded one by one as well
        let wp = prec + 32;
        let logs = SmallLogs::new(self.n.max(2), wp);
        // ln(2 n^2)
        let ln_2nn = Float::with_val(wp, logs.ln(self.n) * 2u32) + logs.ln(2);
        let mut s = Float::with_val(wp, 0);
        let mut upper = Float::with_val(wp, &self.dipole_sum);
        let lows = self.channels.iter().flat_map(|ch| ch.lower_states.iter());
        for (low, a) in lows.zip(&self.residues) {
            let cd = Float::with_val(wp, a);
            upper -= &cd;
            s += cd * logs.lower_state(self.n, low.nprime, &ln_2nn);
        }
        s -= upper * &ln_2nn;
        let ln2 = Float::with_val(wp, rug::float::Constant::Log2);
        s += Float::with_val(wp, &self.dipole_sum) * ln2;
        Float::with_val(prec, s)
    }
}

/// ln k for k = 1..=max at one working precision, formed for one call (no
/// state is kept between calls). The logarithm of each prime is correctly
/// rounded; a composite k takes ln p + ln(k/p), p its smallest prime
/// factor.
///
/// # Accuracy
/// ln k is a sum of Omega(k) <= log2(k) correctly rounded prime logarithms
/// (all positive) with Omega(k) - 1 roundings of the additions: relative
/// error below 2 log2(k) 2^-wp.
pub(crate) struct SmallLogs {
    table: Vec<Float>,
}

impl SmallLogs {
    /// The table up to `max` (>= 1) at `wp` bits.
    pub(crate) fn new(max: u32, wp: u32) -> Self {
        let max = max as usize;
        // smallest prime factors by a sieve
        let mut spf = vec![0u32; max + 1];
        for i in 2..=max {
            if spf[i] == 0 {
                let mut j = i;
                while j <= max {
                    if spf[j] == 0 {
                        spf[j] = i as u32;
                    }
                    j += i;
                }
            }
        }
        let mut table: Vec<Float> = Vec::with_capacity(max + 1);
        table.push(Float::new(wp)); // k = 0: unused
        table.push(Float::new(wp)); // ln 1 = 0
        for k in 2..=max {
            let p = spf[k] as usize;
            let v = if p == k {
                Float::with_val(wp, k as u32).ln()
            } else {
                Float::with_val(wp, &table[p] + &table[k / p])
            };
            table.push(v);
        }
        SmallLogs { table }
    }

    /// ln k (1 <= k <= max).
    pub(crate) fn ln(&self, k: u32) -> &Float {
        &self.table[k as usize]
    }

    /// ln|D| - ln((n + n')/n') = ln(n - n') - ln n' - ln(2 n^2) for a lower
    /// state n' < n (D in hartree), given `ln_2nn` = ln(2 n^2): negative,
    /// of magnitude at least ln(2n).
    pub(crate) fn lower_state(&self, n: u32, nprime: u32, ln_2nn: &Float) -> Float {
        let mut v = Float::with_val(ln_2nn.prec(), self.ln(n - nprime) - self.ln(nprime));
        v -= ln_2nn;
        v
    }
}

#[cfg(test)]
mod tests {
    use super::SmallLogs;
    use rug::Float;

    /// Every ln k of the table is within its stated bound 2 log2(k) 2^-wp
    /// of MPFR's correctly rounded logarithm at 64 more bits, and the
    /// logarithm of a lower state within 2^(7-wp) relative.
    #[test]
    fn small_logs_within_their_bound() {
        for &(max, wp) in &[(1000u32, 96u32), (257, 320), (60, 53)] {
            let logs = SmallLogs::new(max, wp);
            assert!(logs.ln(1).is_zero());
            for k in 2..=max {
                let exact = Float::with_val(wp + 64, k).ln();
                let err = Float::with_val(wp + 64, logs.ln(k) - &exact).abs() / &exact;
                let bound = 2.0 * f64::from(k).log2() * (-f64::from(wp)).exp2();
                assert!(err.to_f64() <= bound, "k = {k}, wp = {wp}");
            }
            let n = max;
            let ln_2nn = Float::with_val(wp, logs.ln(n) * 2u32) + logs.ln(2);
            for np in 1..n {
                let got = logs.lower_state(n, np, &ln_2nn);
                let q =
                    rug::Rational::from((n - np, 2 * u64::from(n) * u64::from(n) * u64::from(np)));
                let exact = Float::with_val(wp + 64, q).ln();
                let err = Float::with_val(wp + 64, &got - &exact).abs() / &exact.abs();
                assert!(
                    err.to_f64() <= (7.0 - f64::from(wp)).exp2(),
                    "n' = {np}, wp = {wp}"
                );
            }
        }
    }
}
