//! Absorption oscillator strengths and spontaneous-emission rates.
//!
//! For a dipole transition from |n l> to |n' l'> (l' = l +- 1, same Z),
//!
//! ```text
//! f(n l -> n' l') = (2/3) (E_n' - E_n) w(l -> l') |<n' l'| r |n l>|^2
//! ```
//!
//! in atomic units, summed over the final and averaged over the initial
//! magnetic substates (w = (l+1)/(2l+1) or l/(2l+1), see [`crate::dipole`]).
//! Sign convention: f is positive for absorption (E_n' > E_n), negative for
//! emission (E_n' < E_n), so that g_i f_ik = -g_k f_ki and the
//! Thomas-Reiche-Kuhn sum over all final states is 1. For n' = n the levels
//! are degenerate and f = 0 exactly.
//!
//! The spontaneous-emission rate from an upper level u to a lower level d,
//! summed over the lower and averaged over (equivalently: for any one of)
//! the upper magnetic substates, is
//!
//! ```text
//! A(u -> d) = (4/3) alpha^3 (E_u - E_d)^3 w(l_u -> l_d) |<d| r |u>|^2   (hartree / hbar)
//! ```
//!
//! converted to s^-1 with the CODATA 2018 atomic unit of time
//! ([`crate::constants`]).
//!
//! Nuclear mass: everything here is for infinite nuclear mass unless a
//! [`NuclearMass`] says otherwise. In the non-relativistic theory a finite
//! nuclear mass M rescales energies by mu/m_e and lengths by m_e/mu
//! (mu = m_e M/(m_e + M)), so A scales by mu/m_e and f (defined with the
//! electron mass) by m_e/mu.
//!
//! # Accuracy
//! Oscillator strengths and rates in atomic units (divided by alpha^3) are
//! exact rationals. Rates in s^-1 are `f64`: relative error a few 1e-16 from
//! rounding plus the CODATA uncertainty of alpha^3 (about 5e-10 relative).
//! Fine structure, relativistic and QED corrections are not included (they
//! change hydrogen rates at the 1e-5 relative level).

use crate::constants::{ATOMIC_UNIT_OF_TIME_S, FINE_STRUCTURE};
use crate::dipole::{dipole_squared, transition_energy, DipoleForm};
use crate::error::BasisError;
use crate::state::BoundState;
use rug::Rational;

/// The nuclear mass used to convert rates (and oscillator strengths) from
/// the infinite-mass values.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub enum NuclearMass {
    /// Infinitely heavy nucleus (no reduced-mass correction).
    Infinite,
    /// A nucleus of `ratio` electron masses (for example
    /// [`crate::constants::PROTON_ELECTRON_MASS_RATIO`] for hydrogen).
    ElectronMasses(f64),
}

impl NuclearMass {
    /// The reduced-mass ratio mu/m_e = M/(M + m_e) (1 for an infinite mass).
    ///
    /// # Errors
    /// [`BasisError::InvalidArgument`] unless the mass ratio is finite and > 0.
    pub fn reduced_mass_ratio(self) -> Result<f64, BasisError> {
        match self {
            NuclearMass::Infinite => Ok(1.0),
            NuclearMass::ElectronMasses(m) => {
                if m.is_finite() && m > 0.0 {
                    Ok(m / (m + 1.0))
                } else {
                    Err(BasisError::InvalidArgument(format!(
                        "nuclear mass must be a positive finite number of electron masses, got {m}"
                    )))
                }
            }
        }
    }
}

/// The oscillator strength f(initial -> fin), exact, infinite nuclear mass
/// (positive for absorption, negative for emission, 0 for n = n').
///
/// # Errors
/// [`BasisError::NotDipoleAllowed`] unless |l - l'| = 1;
/// [`BasisError::InvalidArgument`] if the charges differ.
///
/// # Accuracy
/// Exact rational.
pub fn oscillator_strength(initial: &BoundState, fin: &BoundState) -> Result<Rational, BasisError> {
    let de = transition_energy(initial, fin);
    if de == 0 {
        // validate the selection rule even for degenerate levels
        crate::dipole::angular_weight(initial.l(), fin.l()).map_err(|_| {
            BasisError::NotDipoleAllowed {
                n: initial.n(),
                l: initial.l(),
                n2: fin.n(),
                l2: fin.l(),
            }
        })?;
        if initial.z() != fin.z() {
            return Err(BasisError::InvalidArgument(
                "oscillator strength between different nuclear charges".into(),
            ));
        }
        return Ok(Rational::new());
    }
    let r2 = dipole_squared(initial, fin, DipoleForm::Length)?;
    Ok(r2 * de * Rational::from((2, 3)))
}

/// The emission rate divided by alpha^3, A / alpha^3, in atomic units
/// (hartree/hbar), exact: (4/3) dE^3 w |r|^2 for infinite nuclear mass.
///
/// # Errors
/// [`BasisError::InvalidArgument`] unless E_upper > E_lower (and for
/// different charges); [`BasisError::NotDipoleAllowed`] unless
/// |l_u - l_d| = 1.
///
/// # Accuracy
/// Exact rational.
pub fn emission_rate_au_over_alpha3(
    upper: &BoundState,
    lower: &BoundState,
) -> Result<Rational, BasisError> {
    let de = transition_energy(lower, upper);
    if de <= 0 {
        return Err(BasisError::InvalidArgument(format!(
            "emission needs the upper level above the lower one: ({} {}) -> ({} {})",
            upper.n(),
            upper.l(),
            lower.n(),
            lower.l()
        )));
    }
    let r2 = dipole_squared(upper, lower, DipoleForm::Length)?;
    let de3 = Rational::from(&de * &de) * &de;
    Ok(r2 * de3 * Rational::from((4, 3)))
}

/// The spontaneous-emission rate A(upper -> lower) in s^-1 (summed over the
/// lower, for any one of the upper magnetic substates), CODATA 2018
/// constants, with the reduced-mass scaling of `mass`.
///
/// # Errors
/// As [`emission_rate_au_over_alpha3`]; [`BasisError::InvalidArgument`] for
/// a non-positive or non-finite nuclear mass.
///
/// # Accuracy
/// Relative error about 5e-10 (CODATA uncertainty of alpha^3) plus
/// double rounding; no fine-structure or QED corrections.
pub fn emission_rate(
    upper: &BoundState,
    lower: &BoundState,
    mass: NuclearMass,
) -> Result<f64, BasisError> {
    let mu = mass.reduced_mass_ratio()?;
    let a = emission_rate_au_over_alpha3(upper, lower)?;
    Ok(a.to_f64() * FINE_STRUCTURE.powi(3) / ATOMIC_UNIT_OF_TIME_S * mu)
}

/// The shell-averaged oscillator strength f(n -> n2) of hydrogenic charge
/// `z`: (1/n^2) sum over l < n, l' < n2 with |l - l'| = 1 of
/// (2l+1) f(n l -> n2 l'), the quantity tabulated for unresolved hydrogen
/// lines (statistical weight 2n^2 of the lower level, spin included).
/// Exact, infinite nuclear mass.
///
/// # Errors
/// [`BasisError::InvalidState`] for n or n2 < 1 (reported with l = 0);
/// [`BasisError::InvalidCharge`] unless z > 0.
///
/// # Accuracy
/// Exact rational.
pub fn shell_oscillator_strength(n: i64, n2: i64, z: &Rational) -> Result<Rational, BasisError> {
    let mut sum = Rational::new();
    BoundState::new(n, 0, z.clone())?;
    BoundState::new(n2, 0, z.clone())?;
    for l in 0..n {
        let a = BoundState::new(n, l, z.clone())?;
        for l2 in [l - 1, l + 1] {
            if l2 < 0 || l2 >= n2 {
                continue;
            }
            let b = BoundState::new(n2, l2, z.clone())?;
            sum += oscillator_strength(&a, &b)? * Rational::from(2 * l + 1);
        }
    }
    Ok(sum / (Rational::from(n) * Rational::from(n)))
}

/// The shell-averaged emission rate A(n_upper -> n_lower) in s^-1:
/// (1/n_u^2) sum over l_u of (2l_u+1) sum over l_d of A(n_u l_u -> n_d l_d),
/// the rate tabulated for unresolved hydrogen lines (populations of the
/// upper shell statistical).
///
/// # Errors
/// As [`emission_rate`] and [`shell_oscillator_strength`].
///
/// # Accuracy
/// As [`emission_rate`].
pub fn shell_emission_rate(
    n_upper: i64,
    n_lower: i64,
    z: &Rational,
    mass: NuclearMass,
) -> Result<f64, BasisError> {
    let mu = mass.reduced_mass_ratio()?;
    BoundState::new(n_upper, 0, z.clone())?;
    BoundState::new(n_lower, 0, z.clone())?;
    let mut sum = Rational::new();
    for l in 0..n_upper {
        let u = BoundState::new(n_upper, l, z.clone())?;
        for l2 in [l - 1, l + 1] {
            if l2 < 0 || l2 >= n_lower {
                continue;
            }
            let d = BoundState::new(n_lower, l2, z.clone())?;
            sum += emission_rate_au_over_alpha3(&u, &d)? * Rational::from(2 * l + 1);
        }
    }
    let a = sum / (Rational::from(n_upper) * Rational::from(n_upper));
    Ok(a.to_f64() * FINE_STRUCTURE.powi(3) / ATOMIC_UNIT_OF_TIME_S * mu)
}
