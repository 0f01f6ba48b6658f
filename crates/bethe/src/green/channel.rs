//! One intermediate partial wave L = l +- 1 of p|n l>: its Sturmian
//! expansion, its angular weight and the lower bound states that put poles on
//! the photon-energy path.

use kzero_basis::gordon::radial_dipole_square;
use kzero_basis::gradient::{gradient_expansion, Channel as Dir};
use kzero_basis::BoundState;
use rayon::prelude::*;
use rug::{Float, Rational};

use super::meixner::scaled_coefs;
use crate::BetheError;

/// A lower bound state |n' L> (E_n' < E_n): its term c D / (D + w) is
/// subtracted from the integrand and its contribution c D ln|D| added exactly.
#[derive(Debug, Clone)]
pub(crate) struct LowerState {
    /// Principal quantum number n' < n.
    pub(crate) nprime: u32,
    /// c = weight * |<n' L| p |n l>|^2 (exact, atomic units).
    pub(crate) weighted_p2: Rational,
    /// D = E_n' - E_n < 0 (hartree, exact).
    pub(crate) energy_diff: Rational,
}

/// Exact data of one channel (independent of the photon energy).
#[derive(Debug, Clone)]
pub(crate) struct ChannelData {
    /// Intermediate angular momentum L.
    pub(crate) big_l: u32,
    /// Meixner parameter beta = 2L + 2.
    pub(crate) beta: u32,
    /// Angular weight (l+1)/(2l+1) or l/(2l+1).
    pub(crate) weight: Rational,
    /// Expansion coefficients coef_i of g_L in matched Sturmians (see
    /// `kzero_basis::sturmian::MatchedExpansion`).
    pub(crate) coef: Vec<Rational>,
    /// S2 = radicand / (2L+1)!: J_L = nu * S2 * T(nu).
    pub(crate) s2: Rational,
    /// Lower states of this channel (n' < n, poles on the photon-energy path).
    pub(crate) lower_states: Vec<LowerState>,
}

/// Builds the exact data for every open channel of |n l> (Z = 1).
///
/// # Errors
/// Propagates basis-crate errors (none for valid states).
pub(crate) fn channels(n: u32, l: u32) -> Result<Vec<ChannelData>, BetheError> {
    let st = BoundState::hydrogen(i64::from(n), i64::from(l))?;
    // the two channels are independent: formed in parallel
    let out = Dir::open(l)
        .into_par_iter()
        .map(|dir| channel_data(&st, n, l, dir))
        .collect::<Result<Vec<_>, BetheError>>()?;
    Ok(out)
}

/// The exact data of the channel `dir` of |n l> (`st`).
fn channel_data(st: &BoundState, n: u32, l: u32, dir: Dir) -> Result<ChannelData, BetheError> {
    let big_l = dir.big_l(l);
    // the matched Sturmian expansion of g_L, formed in integers
    let exp = gradient_expansion(st, dir)?;
    let alpha = 2 * big_l + 1;
    let s2 = &exp.radicand / Rational::from(kzero_basis::exact::factorial(alpha));
    // exact and independent of each other: formed in parallel (the
    // big-number work of Gordon's formula grows like n^2 per lower
    // state and dominates single states near n = 1000)
    let lower_states = ((big_l + 1)..n)
        .into_par_iter()
        .map(|np| {
            let lower = BoundState::hydrogen(i64::from(np), i64::from(big_l))?;
            // exact |<n' L| r |n l>|^2 by Gordon's closed formula
            let r2 = radial_dipole_square(&lower, st)?;
            let d = lower.energy() - st.energy();
            // |p|^2 = D^2 |r|^2 (radial), times the angular weight
            let c = Rational::from(&d * &d) * r2 * dir.weight(l);
            Ok(LowerState {
                nprime: np,
                weighted_p2: c,
                energy_diff: d,
            })
        })
        .collect::<Result<Vec<_>, BetheError>>()?;
    Ok(ChannelData {
        big_l,
        beta: 2 * big_l + 2,
        weight: dir.weight(l),
        coef: exp.coef,
        s2,
        lower_states,
    })
}

/// The channel data rounded to a working precision.
#[derive(Debug, Clone)]
pub(crate) struct ChannelFloat {
    /// L.
    pub(crate) big_l: u32,
    /// beta = 2L+2.
    pub(crate) beta: u32,
    /// weight * S2.
    pub(crate) ws2: Float,
    /// coef_i / (beta)_i, the coefficients of the scaled Meixner
    /// recurrence (`meixner::scaled_coefs`).
    pub(crate) scaled: Vec<Float>,
    /// coef_i (for the reference sums of the tests).
    #[cfg(test)]
    pub(crate) coef: Vec<Float>,
}

impl ChannelFloat {
    /// Rounds `c` to `prec` bits.
    pub(crate) fn new(c: &ChannelData, prec: u32) -> Self {
        ChannelFloat {
            big_l: c.big_l,
            beta: c.beta,
            ws2: Float::with_val(prec, Rational::from(&c.weight * &c.s2)),
            scaled: scaled_coefs(&c.coef, c.beta, prec),
            #[cfg(test)]
            coef: c.coef.iter().map(|q| Float::with_val(prec, q)).collect(),
        }
    }
}
