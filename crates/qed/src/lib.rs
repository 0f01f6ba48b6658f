//! # kzero-qed: leading one-loop QED level shifts of hydrogenic ions
//!
//! Assembles the one-loop self-energy and vacuum-polarization shift of a
//! hydrogenic level n l_j from its Bethe logarithm ln k0(n, l), in the
//! expansion in Z alpha, truncated after the coefficients known in closed
//! form: A41, A40, A50, A62, A61 (self-energy) and V40, V50 (vacuum
//! polarization), with the reduced-mass factors of the CODATA 2018
//! adjustment and CODATA 2018 constants ([`constants`]).
//!
//! **This is a truncated expansion, not a complete bound-state QED
//! evaluation.** Published level evaluations include further terms: the
//! all-order remainders G_SE and G_VP, two-loop and higher QED, recoil
//! corrections and nuclear-structure effects. Their sizes are estimated
//! ([`shift::Omitted`]) and combined into the uncertainty of the result.
//!
//! ## Units and conventions
//! Shifts are energies divided by h, in MHz; positive raises the level. They
//! are shifts relative to the Dirac energy with reduced mass. ln k0 is an
//! input (value and error estimate, [`shift::BetheLog`]) in the convention of
//! the kzero engine: energies in units of Z^2 Ry, independent of Z and of the
//! masses. This crate does not compute ln k0.
//!
//! ## Accuracy contract
//! Arithmetic is f64 (relative rounding near 1e-15, far below everything
//! else). The stated uncertainty is an *estimate* of the omitted terms,
//! formed by the rules in [`shift::Omitted::rule`] and combined as
//! [`shift::UNCERTAINTY_RULE`] says; it is not a bound. Constants'
//! uncertainties are not propagated (they are below 1e-9 relative, except the
//! nuclear radii, which only enter an estimate).
//!
//! ## Example
//! ```
//! use kzero_qed::{level::Level, nucleus::Nucleus, shift::{BetheLog, level_shift}};
//! let h = Nucleus::preset("H").unwrap();
//! // ln k0(2,0) and ln k0(2,1): Drake & Swainson, Phys. Rev. A 41, 1243 (1990).
//! let s = level_shift(&Level::new(2, 0, 1).unwrap(), &h,
//!     &BetheLog::new(2, 0, 2.811769893120563, 1e-15).unwrap()).unwrap();
//! let p = level_shift(&Level::new(2, 1, 1).unwrap(), &h,
//!     &BetheLog::new(2, 1, -0.030016708630213, 1e-15).unwrap()).unwrap();
//! let lamb = s.total_mhz - p.total_mhz;
//! // Measured 1057.845(9) MHz (Lundeen & Pipkin, Phys. Rev. Lett. 46, 232 (1981)).
//! assert!((lamb - 1057.845).abs() < s.uncertainty_mhz.hypot(p.uncertainty_mhz));
//! ```
#![deny(missing_docs)]

pub mod coefficients;
pub mod constants;
pub mod error;
pub mod level;
pub mod nucleus;
pub mod shift;

pub use error::QedError;
pub use level::Level;
pub use nucleus::Nucleus;
pub use shift::{
    cutoff_estimate, level_shift, BetheLog, CutoffEstimate, Family, LevelShift, TermId, TermKind,
};
