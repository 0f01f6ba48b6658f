//! Hydrogenic bound states: quantum numbers, nuclear charge, energies.

use crate::error::BasisError;
use rug::Rational;

/// A bound state |n l> of a one-electron atom with point nucleus of charge Z
/// and infinite nuclear mass (atomic units).
///
/// Invariants (checked by [`BoundState::new`]): n >= 1, 0 <= l < n, Z > 0.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BoundState {
    n: u32,
    l: u32,
    z: Rational,
}

impl BoundState {
    /// Builds |n l> for nuclear charge `z` (a positive rational; use
    /// `Rational::from(1)` for hydrogen).
    ///
    /// # Errors
    /// [`BasisError::InvalidState`] unless n >= 1 and 0 <= l < n;
    /// [`BasisError::InvalidCharge`] unless z > 0.
    pub fn new(n: i64, l: i64, z: Rational) -> Result<Self, BasisError> {
        if n < 1 || l < 0 || l >= n || n > u32::MAX as i64 {
            return Err(BasisError::InvalidState { n, l });
        }
        if z <= 0 {
            return Err(BasisError::InvalidCharge { z: z.to_string() });
        }
        Ok(BoundState {
            n: n as u32,
            l: l as u32,
            z,
        })
    }

    /// Hydrogen (Z = 1) state |n l>.
    ///
    /// # Errors
    /// As [`BoundState::new`].
    pub fn hydrogen(n: i64, l: i64) -> Result<Self, BasisError> {
        Self::new(n, l, Rational::from(1))
    }

    /// Principal quantum number n.
    pub fn n(&self) -> u32 {
        self.n
    }

    /// Orbital angular momentum l.
    pub fn l(&self) -> u32 {
        self.l
    }

    /// Nuclear charge Z.
    pub fn z(&self) -> &Rational {
        &self.z
    }

    /// Number of radial nodes n - l - 1.
    pub fn radial_nodes(&self) -> u32 {
        self.n - self.l - 1
    }

    /// Exact energy E_n = -Z^2 / (2 n^2) in hartree.
    pub fn energy(&self) -> Rational {
        let z2 = Rational::from(&self.z * &self.z);
        -z2 / Rational::from(2u64 * u64::from(self.n) * u64::from(self.n))
    }

    /// Exponential decay constant kappa = Z / n (inverse bohr): the radial
    /// function falls off like exp(-kappa r).
    pub fn kappa(&self) -> Rational {
        Rational::from(&self.z / self.n)
    }

    /// The same state with another angular momentum, validated.
    ///
    /// # Errors
    /// As [`BoundState::new`].
    pub fn with_l(&self, l: i64) -> Result<Self, BasisError> {
        Self::new(i64::from(self.n), l, self.z.clone())
    }
}
