//! Radial parts of p|n l> = -i grad (R_nl Y_lm).
//!
//! The gradient of R(r) Y_lm has an L = l+1 part with radial function
//! R' - l R / r and an L = l-1 part with radial function R' + (l+1) R / r.
//! After summing |.|^2 over the final magnetic substates and averaging over
//! the initial ones, the L = l+1 part carries the weight (l+1)/(2l+1) and the
//! L = l-1 part the weight l/(2l+1).
//!
//! Functions here return the *reduced* form g_L(r) = r * (radial part), so
//! that <m L| p |n l> reduces to int_0^inf u_mL(r) g_L(r) dr.

use crate::error::BasisError;
use crate::exact::PolyExp;
use crate::radial::radial_function;
use crate::state::BoundState;
use rug::Rational;

/// The intermediate angular momentum of a dipole channel.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Channel {
    /// L = l + 1.
    Up,
    /// L = l - 1 (only for l >= 1).
    Down,
}

impl Channel {
    /// The channels open to a state of angular momentum `l`: `Up` always,
    /// `Down` when l >= 1.
    pub fn open(l: u32) -> Vec<Channel> {
        if l == 0 {
            vec![Channel::Up]
        } else {
            vec![Channel::Down, Channel::Up]
        }
    }

    /// The intermediate angular momentum L for initial angular momentum `l`.
    ///
    /// # Panics
    /// Never for channels returned by [`Channel::open`]; `Down` with l = 0 is
    /// a caller bug and saturates to 0.
    pub fn big_l(self, l: u32) -> u32 {
        match self {
            Channel::Up => l + 1,
            Channel::Down => l.saturating_sub(1),
        }
    }

    /// The angular weight of |<L|p|l>|^2 (summed over final, averaged over
    /// initial magnetic substates): (l+1)/(2l+1) for `Up`, l/(2l+1) for `Down`.
    pub fn weight(self, l: u32) -> Rational {
        match self {
            Channel::Up => Rational::from((l + 1, 2 * l + 1)),
            Channel::Down => Rational::from((l, 2 * l + 1)),
        }
    }
}

/// The reduced radial function g_L(r) = r R' - l R (`Up`) or r R' + (l+1) R
/// (`Down`) of the state, in inverse bohr times the normalization of R.
///
/// # Errors
/// [`BasisError::InvalidArgument`] for `Down` when l = 0.
pub fn gradient_function(state: &BoundState, channel: Channel) -> Result<PolyExp, BasisError> {
    let l = state.l();
    if channel == Channel::Down && l == 0 {
        return Err(BasisError::InvalidArgument(
            "the l-1 channel does not exist for l = 0".into(),
        ));
    }
    let r = radial_function(state);
    let rd = r.r_derivative();
    let c = match channel {
        Channel::Up => Rational::from(-(l as i64)),
        Channel::Down => Rational::from(l + 1),
    };
    rd.lin_comb(&Rational::from(1), &r, &c)
}
