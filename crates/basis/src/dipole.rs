//! Bound-bound dipole matrix elements in the length, velocity and
//! acceleration forms.
//!
//! For an initial state |n l> and a final state |n' l'> with l' = l +- 1 (same
//! nuclear charge Z), the squared matrix elements of a vector operator
//! O = O(r) r-hat, summed over the final magnetic substates m' and averaged
//! over the initial ones m, factor as
//!
//! ```text
//! (1/(2l+1)) sum_{m m'} |<n' l' m'| O |n l m>|^2 = w(l -> l') |O_rad|^2,
//! w(l -> l+1) = (l+1)/(2l+1),   w(l -> l-1) = l/(2l+1)
//! ```
//!
//! with the radial amplitudes
//!
//! * length, O = r: r_rad = int R_n'l' R_nl r^3 dr (bohr), by Gordon's
//!   formula ([`crate::gordon::radial_dipole`]);
//! * velocity, O = p = -i grad: p_rad = int u_n'l' g_l' dr (inverse bohr),
//!   g_l' from [`crate::gradient::gradient_function`];
//! * acceleration, O = grad V = Z r-hat / r^2 (V = -Z/r): a_rad = Z <n'l'| r^-2 |n l>
//!   (hartree per bohr).
//!
//! The three satisfy |p_rad| = |dE| |r_rad| and |a_rad| = |dE| |p_rad| with
//! dE = E_n' - E_n (hartree): the gauge identities of docs/physics.md, section 2,
//! checked exactly in the tests. For n' = n (degenerate levels) the velocity
//! and acceleration elements vanish exactly while the length element does not.
//!
//! # Accuracy
//! Exact: every amplitude is an exact [`Surd`], every squared element an
//! exact rational.

use crate::error::BasisError;
use crate::exact::Surd;
use crate::gordon::radial_dipole;
use crate::gradient::{gradient_function, Channel};
use crate::radial::{radial_integral, reduced_radial_function};
use crate::state::BoundState;
use rug::Rational;

/// The form (gauge) in which a dipole matrix element is taken.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum DipoleForm {
    /// Position operator r (bohr).
    Length,
    /// Momentum operator p = -i grad (inverse bohr, atomic units of momentum).
    Velocity,
    /// Force operator grad V = Z r-hat / r^2 (hartree per bohr).
    Acceleration,
}

impl DipoleForm {
    /// All three forms, in the order length, velocity, acceleration.
    pub const ALL: [DipoleForm; 3] = [
        DipoleForm::Length,
        DipoleForm::Velocity,
        DipoleForm::Acceleration,
    ];
}

/// Checks that `initial -> final` is a dipole transition between states of
/// the same charge and returns the channel seen from the initial state.
fn channel_of(initial: &BoundState, fin: &BoundState) -> Result<Channel, BasisError> {
    if initial.z() != fin.z() {
        return Err(BasisError::InvalidArgument(format!(
            "dipole element between different nuclear charges ({} and {})",
            initial.z(),
            fin.z()
        )));
    }
    if fin.l() == initial.l() + 1 {
        Ok(Channel::Up)
    } else if initial.l() == fin.l() + 1 {
        Ok(Channel::Down)
    } else {
        Err(BasisError::NotDipoleAllowed {
            n: initial.n(),
            l: initial.l(),
            n2: fin.n(),
            l2: fin.l(),
        })
    }
}

/// The angular weight w(l -> l2): (l+1)/(2l+1) for l2 = l+1, l/(2l+1) for
/// l2 = l-1 (sum over final, average over initial magnetic substates).
///
/// # Errors
/// [`BasisError::NotDipoleAllowed`] unless |l - l2| = 1 (the reported
/// principal quantum numbers are 0).
pub fn angular_weight(l: u32, l2: u32) -> Result<Rational, BasisError> {
    if l2 == l + 1 {
        Ok(Channel::Up.weight(l))
    } else if l == l2 + 1 {
        Ok(Channel::Down.weight(l))
    } else {
        Err(BasisError::NotDipoleAllowed { n: 0, l, n2: 0, l2 })
    }
}

/// The signed radial amplitude of `form` between `initial` and `fin`
/// (see the module header for definitions and units).
///
/// The length amplitude comes from Gordon's formula; the velocity and
/// acceleration amplitudes from direct exact integration, so that the gauge
/// identities compare two independent routes.
///
/// # Errors
/// [`BasisError::NotDipoleAllowed`] unless |l - l'| = 1;
/// [`BasisError::InvalidArgument`] if the charges differ.
///
/// # Accuracy
/// Exact.
pub fn radial_amplitude(
    initial: &BoundState,
    fin: &BoundState,
    form: DipoleForm,
) -> Result<Surd, BasisError> {
    let channel = channel_of(initial, fin)?;
    match form {
        DipoleForm::Length => radial_dipole(fin, initial),
        DipoleForm::Velocity => {
            let g = gradient_function(initial, channel)?;
            reduced_radial_function(fin).integral_with(&g, 0)
        }
        DipoleForm::Acceleration => {
            let s = radial_integral(fin, initial, -2)?;
            Ok(Surd {
                coef: s.coef * initial.z(),
                radicand: s.radicand,
            })
        }
    }
}

/// The squared dipole matrix element of `form`, summed over the final and
/// averaged over the initial magnetic substates:
/// w(l -> l') |O_rad|^2 (units: the square of those of the form).
///
/// # Errors
/// [`BasisError::NotDipoleAllowed`] unless |l - l'| = 1;
/// [`BasisError::InvalidArgument`] if the charges differ.
///
/// # Accuracy
/// Exact rational.
pub fn dipole_squared(
    initial: &BoundState,
    fin: &BoundState,
    form: DipoleForm,
) -> Result<Rational, BasisError> {
    let w = angular_weight(initial.l(), fin.l()).map_err(|_| BasisError::NotDipoleAllowed {
        n: initial.n(),
        l: initial.l(),
        n2: fin.n(),
        l2: fin.l(),
    })?;
    Ok(radial_amplitude(initial, fin, form)?.square() * w)
}

/// The transition energy dE = E_final - E_initial (hartree), exact; positive
/// for absorption.
pub fn transition_energy(initial: &BoundState, fin: &BoundState) -> Rational {
    fin.energy() - initial.energy()
}
