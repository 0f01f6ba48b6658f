//! Typed errors of the basis crate.

use thiserror::Error;

/// Everything that can go wrong when asking the basis crate for a quantity.
///
/// Every variant carries the offending data so that callers (the `kzero`
/// binary in particular) can print a one-line message.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[non_exhaustive]
pub enum BasisError {
    /// The pair (n, l) is not a hydrogenic bound state: needs n >= 1 and 0 <= l < n.
    #[error("invalid state (n={n}, l={l}): need n >= 1 and 0 <= l < n")]
    InvalidState {
        /// Principal quantum number as given.
        n: i64,
        /// Orbital angular momentum as given.
        l: i64,
    },
    /// The nuclear charge must be a positive rational number.
    #[error("invalid nuclear charge Z = {z}: must be positive")]
    InvalidCharge {
        /// The charge as given, printed as a rational.
        z: String,
    },
    /// MPFR working precision below the supported minimum (53 bits).
    #[error("working precision of {bits} bits is below the minimum of {min} bits")]
    PrecisionTooLow {
        /// Requested bits.
        bits: u32,
        /// Smallest accepted value.
        min: u32,
    },
    /// A radial integral that diverges (for example r^k with k too negative).
    #[error("radial integral <{n} {l}| r^{power} |{n2} {l2}> diverges")]
    Divergent {
        /// Bra principal quantum number.
        n: u32,
        /// Bra angular momentum.
        l: u32,
        /// Ket principal quantum number.
        n2: u32,
        /// Ket angular momentum.
        l2: u32,
        /// Power of r.
        power: i32,
    },
    /// A dipole (or other) transition that the selection rules forbid.
    #[error("transition ({n} {l}) -> ({n2} {l2}) is not dipole-allowed (need |l - l2| = 1)")]
    NotDipoleAllowed {
        /// Initial principal quantum number.
        n: u32,
        /// Initial angular momentum.
        l: u32,
        /// Final principal quantum number.
        n2: u32,
        /// Final angular momentum.
        l2: u32,
    },
    /// An exact integral that must be rational came out with a square root.
    #[error("integral did not reduce to a rational")]
    NotRational,
    /// An argument outside the domain of the function (stated in the message).
    #[error("invalid argument: {0}")]
    InvalidArgument(String),
}

/// Smallest MPFR precision (in bits) the library accepts: IEEE double.
pub const MIN_PREC: u32 = 53;

/// Checks a working precision against [`MIN_PREC`].
pub fn check_prec(bits: u32) -> Result<(), BasisError> {
    if bits < MIN_PREC {
        Err(BasisError::PrecisionTooLow {
            bits,
            min: MIN_PREC,
        })
    } else {
        Ok(())
    }
}
