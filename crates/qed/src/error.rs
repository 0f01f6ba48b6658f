//! Typed errors of the QED level-shift crate.

use thiserror::Error;

/// Everything that can go wrong when assembling a level shift.
///
/// Every variant carries the offending data, so that callers can print a
/// one-line message naming the problem.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum QedError {
    /// (n, l) is not a bound state: needs n >= 1 and 0 <= l < n.
    #[error("invalid state (n={n}, l={l}): need n >= 1 and 0 <= l < n")]
    InvalidState {
        /// n as given.
        n: i64,
        /// l as given.
        l: i64,
    },
    /// n larger than the range this crate accepts.
    #[error("n = {n} is outside the supported range 1 <= n <= {max}")]
    NOutOfRange {
        /// n as given.
        n: i64,
        /// Largest accepted n.
        max: u32,
    },
    /// J written in a form that is not a positive half-odd number.
    #[error("cannot read J = {text:?}: write it as a half-odd number such as 1/2 or 3/2")]
    BadJ {
        /// The text as given.
        text: String,
    },
    /// J not allowed for this l: needs |l - 1/2| <= J <= l + 1/2.
    #[error("J = {j2}/2 is not allowed for l = {l}: need |l - 1/2| <= J <= l + 1/2")]
    JNotAllowed {
        /// Orbital angular momentum.
        l: u32,
        /// Twice the total angular momentum.
        j2: u32,
    },
    /// Nuclear charge outside the range where the Z alpha expansion is used here.
    #[error("nuclear charge Z = {z} is outside the accepted range 1..={max} (the expansion in Z alpha is not trustworthy beyond it)")]
    ChargeOutOfRange {
        /// Z as given.
        z: i64,
        /// Largest accepted Z.
        max: u32,
    },
    /// Nuclear mass not a finite number of at least the minimum.
    #[error("nuclear mass {mass} m_e is not accepted: need a finite value >= {min} electron masses (or infinite)")]
    MassOutOfRange {
        /// Mass as given, in electron masses.
        mass: f64,
        /// Smallest accepted mass.
        min: f64,
    },
    /// Nuclear radius negative, not finite or absurdly large.
    #[error(
        "nuclear rms charge radius {radius_fm} fm is not accepted: need 0 <= r <= {max_fm} fm"
    )]
    RadiusOutOfRange {
        /// Radius as given, in fm.
        radius_fm: f64,
        /// Largest accepted radius.
        max_fm: f64,
    },
    /// A nucleus preset name that is not known.
    #[error("unknown nucleus {name:?}: known presets are {known}")]
    UnknownNucleus {
        /// The name as given.
        name: String,
        /// The known names, comma separated.
        known: String,
    },
    /// The Bethe logarithm given as input is not usable.
    #[error("Bethe logarithm input not usable: value {value}, error {abs_err} (need a finite value and a finite error >= 0)")]
    BadBetheLog {
        /// Value as given.
        value: f64,
        /// Error as given.
        abs_err: f64,
    },
    /// The Bethe logarithm given is for a different (n, l) than the level.
    #[error("Bethe logarithm is for (n={got_n}, l={got_l}) but the level is (n={n}, l={l})")]
    BetheLogMismatch {
        /// Level n.
        n: u32,
        /// Level l.
        l: u32,
        /// n of the Bethe logarithm.
        got_n: u32,
        /// l of the Bethe logarithm.
        got_l: u32,
    },
}
