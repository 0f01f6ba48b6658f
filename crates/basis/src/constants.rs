//! Physical constants (CODATA 2018) used to convert atomic-unit results to SI.
//!
//! Every value is the CODATA 2018 recommended value, Tiesinga, Mohr, Newell
//! and Taylor, Rev. Mod. Phys. 93, 025010 (2021); the standard uncertainty in
//! the last digits is given in parentheses in each doc comment. Values fixed
//! exactly by the 2019 SI are marked "exact".
//!
//! # Accuracy
//! The constants are stored as `f64`: the stated decimal value rounded to
//! the nearest double (relative rounding error below 1.2e-16, far below
//! every stated uncertainty).

/// Fine-structure constant alpha = 7.2973525693(11) x 10^-3 (dimensionless).
/// CODATA 2018, Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021).
pub const FINE_STRUCTURE: f64 = 7.297_352_569_3e-3;

/// Inverse fine-structure constant 1/alpha = 137.035999084(21).
/// CODATA 2018, Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021).
pub const INVERSE_FINE_STRUCTURE: f64 = 137.035_999_084;

/// Atomic unit of time hbar / E_h = 2.4188843265857(47) x 10^-17 s.
/// CODATA 2018, Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021).
pub const ATOMIC_UNIT_OF_TIME_S: f64 = 2.418_884_326_585_7e-17;

/// Hartree energy in electronvolts, E_h = 27.211386245988(53) eV.
/// CODATA 2018, Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021).
pub const HARTREE_EV: f64 = 27.211_386_245_988;

/// Rydberg constant R_inf = 10973731.568160(21) m^-1.
/// CODATA 2018, Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021).
pub const RYDBERG_PER_M: f64 = 10_973_731.568_160;

/// Speed of light in vacuum c = 299792458 m/s (exact).
/// CODATA 2018, Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021).
pub const SPEED_OF_LIGHT_M_PER_S: f64 = 299_792_458.0;

/// Proton-electron mass ratio m_p / m_e = 1836.15267343(11).
/// CODATA 2018, Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021).
pub const PROTON_ELECTRON_MASS_RATIO: f64 = 1_836.152_673_43;
