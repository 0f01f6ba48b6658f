//! # kzero-bethe: hydrogenic Bethe logarithms
//!
//! ln k0(n, l) for any hydrogenic state with n <= 1000, by two independent
//! methods:
//!
//! * [`green`]: the integral over the virtual-photon energy with the Coulomb
//!   Green's function in its Sturmian representation (the default);
//! * [`spectral`]: the explicit sum over the bound and continuum spectrum, in
//!   the velocity, length and acceleration forms.
//!
//! The same two methods give the whole family of logarithmic dipole sums
//! S(k), L(k) and the mean excitation energies ln I(k) ([`sums`]), of which
//! ln k0 is the member k = 2.
//!
//! ## Definition and units
//! ln k0(n,l) = S / D0 with S = sum_m |<n l|p|m>|^2 (E_m - E_n) ln(|E_m - E_n| / (Z^2 Ry))
//! and D0 = 2 Z^4 / n^3 for every l. The result does not depend on Z; all
//! computations run at Z = 1 (atomic units, infinite nuclear mass). The
//! definitions, conventions and derivations are in the repository's
//! docs/physics.md.
//!
//! ## Accuracy contract
//! [`Settings::digits`] = D asks for an absolute error below 10^-D
//! ([`Goal::Absolute`]), or with [`Goal::Significant`] for
//! |error| <= 10^-D |value| (met through absolute goals from a measured
//! magnitude, see [`Settings`]). Each
//! result carries `abs_err`, an *estimate* of the actual error obtained by
//! refinement: the computation is repeated with more quadrature nodes, more
//! series terms and more working bits, and the difference (times a safety
//! factor) is the estimate. A result whose estimate does not meet the goal is
//! returned as [`BetheError::NoConvergence`], never as a number. Working
//! precision is chosen from D plus guard bits that the methods measure at the
//! given (n, l) (cancellation grows with n).
//!
//! ## Printed values
//! Every decimal string of this crate follows one rule ([`value::printed`]):
//! the value is rounded to nearest (D + 2 decimals for an absolute goal,
//! D + 2 significant digits for a significant one), and the printed error is
//! `abs_err` plus that rounding, rounded *up* to two significant digits. So
//! |printed value - exact| <= printed error whenever `abs_err` covers the
//! computed value.
#![deny(missing_docs)]

pub mod error;
pub mod green;
pub mod settings;
pub mod spectral;
pub mod sums;
pub mod value;

pub use error::BetheError;
pub use settings::{Goal, Settings};
pub use value::{agreement, Agreement, BetheValue, Gauge, Method, Printed, UnknownName};
