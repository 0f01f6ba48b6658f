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
use crate::exact::{binomial, factorial, PolyExp};
use crate::radial::radial_function;
use crate::state::BoundState;
use crate::sturmian::MatchedExpansion;
use rug::ops::Pow;
use rug::{Integer, Rational};

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

/// The matched Sturmian expansion of g_L: the same [`MatchedExpansion`] as
/// `matched_expansion(&gradient_function(state, channel)?, L)` (L =
/// `channel.big_l(l)`), formed in integers without the intermediate
/// polynomials.
///
/// With 2 kappa = u/v (reduced), nr = n - l - 1, c0 = -l (`Up`) or l + 1
/// (`Down`) and B_i = C(n+l, nr-i) nr!/i! (an integer; B_-1 = B_(nr+1) =
/// 0), the coefficient of r^(l+i) in g_L, divided by sqrt(radicand), is
/// (-1)^i (u/v)^(l+i) H_i / (2 nr!) with H_i = 2 (l+i+c0) B_i + B_(i-1).
/// In the notation of [`crate::sturmian::matched_expansion`] every D_q
/// then carries the same factor v / (2 u nr!): D_q = (-1)^i H_i
/// (2L+1+q)! v / (2 u nr!) with i = q + L - l, and coef_i = (-1)^i
/// sum_(q >= i) D_q C(q, i) is a Taylor shift by 1 of integers (additions
/// only) followed by one reduction per coefficient.
///
/// # Errors
/// [`BasisError::InvalidArgument`] for `Down` when l = 0.
///
/// # Accuracy
/// Exact.
pub fn gradient_expansion(
    state: &BoundState,
    channel: Channel,
) -> Result<MatchedExpansion, BasisError> {
    let l = state.l();
    if channel == Channel::Down && l == 0 {
        return Err(BasisError::InvalidArgument(
            "the l-1 channel does not exist for l = 0".into(),
        ));
    }
    let n = state.n();
    let nr = n - l - 1;
    let big_l = channel.big_l(l);
    let alpha = 2 * big_l + 1;
    let two_kappa = state.kappa() * 2u32;
    // the normalization of R_nl, as in radial_function:
    // N^2 = (2 kappa)^3 (n-l-1)! / (2n (n+l)!)
    let radicand =
        two_kappa.clone().pow(3u32) * Rational::from((factorial(nr), factorial(n + l) * 2u32 * n));
    let (u, v) = two_kappa.into_numer_denom();
    // B_i for i = 0..=nr: B_0 = C(n+l, nr) nr!, B_(i+1) = B_i (nr-i) / ((2l+2+i)(i+1))
    let mut b = Vec::with_capacity(nr as usize + 1);
    let mut bi = binomial(n + l, nr) * factorial(nr);
    for i in 0..=nr {
        if i > 0 {
            bi *= nr - (i - 1);
            bi.div_exact_mut(&Integer::from(u64::from(2 * l + 1 + i) * u64::from(i)));
        }
        b.push(bi.clone());
    }
    let c0: i64 = match channel {
        Channel::Up => -i64::from(l),
        Channel::Down => i64::from(l) + 1,
    };
    // H_i for i = -1..=nr+1 (index i + 1)
    let h = |i: i64| -> Integer {
        let cur = if (0..=i64::from(nr)).contains(&i) {
            Integer::from(&b[i as usize] * (2 * (i64::from(l) + i + c0)))
        } else {
            Integer::new()
        };
        if (1..=i64::from(nr) + 1).contains(&i) {
            cur + &b[(i - 1) as usize]
        } else {
            cur
        }
    };
    // D'_q = (-1)^i H_i (alpha+q)!, q = 0..=n-L, i = q + L - l
    let qmax = n - big_l;
    let shift = i64::from(big_l) - i64::from(l);
    let mut fact = factorial(alpha);
    let mut a: Vec<Integer> = Vec::with_capacity(qmax as usize + 1);
    for q in 0..=qmax {
        if q > 0 {
            fact *= alpha + q;
        }
        let i = i64::from(q) + shift;
        let mut d = h(i) * &fact;
        if i.rem_euclid(2) == 1 {
            d = -d;
        }
        a.push(d);
    }
    // sum_q D'_q (x + 1)^q by repeated synthetic division (as in
    // matched_expansion)
    let top = a.len() - 1;
    for i in 0..top {
        for j in (i..top).rev() {
            let (lo, hi) = a.split_at_mut(j + 1);
            lo[j] += &hi[0];
        }
    }
    let den = factorial(nr) * u * 2u32;
    let coef = a
        .into_iter()
        .enumerate()
        .map(|(i, t)| {
            let s = Rational::from((t * &v, den.clone()));
            if i % 2 == 1 {
                -s
            } else {
                s
            }
        })
        .collect();
    Ok(MatchedExpansion {
        big_l,
        coef,
        radicand,
    })
}
