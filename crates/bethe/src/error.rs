//! Typed errors of the Bethe-logarithm crate.

use kzero_basis::BasisError;
use thiserror::Error;

/// Everything that can go wrong when computing a Bethe logarithm.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum BetheError {
    /// (n, l) is not a bound state: needs n >= 1 and 0 <= l < n.
    #[error("invalid state (n={n}, l={l}): need n >= 1 and 0 <= l < n")]
    InvalidState {
        /// n as given.
        n: i64,
        /// l as given.
        l: i64,
    },
    /// n beyond the range this method supports.
    #[error("n = {n} is outside the supported range 1 <= n <= {max} of the {method} method")]
    OutOfRange {
        /// n as given.
        n: u32,
        /// Largest supported n.
        max: u32,
        /// Method name.
        method: &'static str,
    },
    /// Requested digits outside the accepted range.
    #[error("{option} {digits} is outside the accepted range {min}..={max}")]
    DigitsOutOfRange {
        /// The option that set them: `--digits` (absolute) or `--significant`.
        option: &'static str,
        /// Digits as given.
        digits: u32,
        /// Smallest accepted.
        min: u32,
        /// Largest accepted.
        max: u32,
    },
    /// Refinement did not reach the requested accuracy.
    #[error("{method} method did not converge for (n={n}, l={l}): estimated error {achieved:.1e} > goal {goal:.1e}")]
    NoConvergence {
        /// Method name.
        method: &'static str,
        /// State.
        n: u32,
        /// State.
        l: u32,
        /// Best error estimate reached.
        achieved: f64,
        /// Requested absolute error.
        goal: f64,
    },
    /// A significant-digit goal that would need an absolute goal finer than
    /// the finest accepted one (the value is too close to zero).
    #[error("(n={n}, l={l}): {digits} significant digits need an absolute goal of 10^-{needed}, beyond the finest accepted 10^-{max} (the value is too close to zero)")]
    GoalOutOfReach {
        /// State.
        n: u32,
        /// State.
        l: u32,
        /// Requested significant digits.
        digits: u32,
        /// Decimals the absolute goal would need.
        needed: u32,
        /// Finest accepted absolute goal (decimals).
        max: u32,
    },
    /// A gauge that is not available for this class of states.
    #[error("the {gauge} form is not available for (n={n}, l={l}): {reason}")]
    GaugeUnsupported {
        /// Gauge name.
        gauge: &'static str,
        /// State.
        n: u32,
        /// State.
        l: u32,
        /// Why.
        reason: String,
    },
    /// A power k of the dipole sums outside the supported range.
    #[error("k = {k} is outside the supported powers {min}..={max} of the dipole sums")]
    PowerOutOfRange {
        /// k as given.
        k: i64,
        /// Smallest supported k.
        min: i32,
        /// Largest supported k.
        max: i32,
    },
    /// A kind of accuracy goal that a computation does not offer.
    #[error("{what} take an absolute goal only (--digits), not {goal} digits")]
    GoalUnsupported {
        /// The goal's name.
        goal: &'static str,
        /// What was asked for.
        what: &'static str,
    },
    /// An empty list of powers k.
    #[error("no power k was requested")]
    NoPowers,
    /// An error from the basis crate.
    #[error(transparent)]
    Basis(#[from] BasisError),
}
