//! # kzero-basis: exact hydrogenic states and matrix elements
//!
//! The bound-state basis of kzero: hydrogenic radial functions with exact
//! rational coefficients, exact radial integrals, dipole matrix elements,
//! Coulomb Sturmian functions and their overlaps.
//!
//! ## Conventions
//! Atomic units (hbar = m_e = e = 1), point nucleus of charge Z (a positive
//! rational), infinite nuclear mass, Schroedinger theory. Lengths in bohr,
//! energies in hartree, E_n = -Z^2/(2n^2).
//!
//! ## Accuracy contract
//! Quantities marked *exact* are returned as rationals or as
//! [`exact::Surd`] values (rational times the square root of a rational) and
//! carry no rounding at all. Quantities evaluated in MPFR take a working
//! precision in bits (at least [`error::MIN_PREC`]) and state in their
//! `# Accuracy` section how the result relates to it.
//!
//! ## Example
//! ```
//! use kzero_basis::{state::BoundState, radial::expectation};
//! let s = BoundState::hydrogen(2, 1).unwrap();
//! // <r> = (3n^2 - l(l+1)) / (2Z) = 5 bohr for 2p
//! assert_eq!(expectation(&s, 1).unwrap(), 5);
//! ```
#![deny(missing_docs)]

pub mod closure;
pub mod constants;
pub mod continuum;
pub mod dipole;
pub mod error;
pub mod exact;
pub mod gordon;
pub mod gradient;
pub mod oscillator;
pub mod radial;
pub mod state;
pub mod sturmian;

pub use error::BasisError;
pub use state::BoundState;
