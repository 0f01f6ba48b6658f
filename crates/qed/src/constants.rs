//! CODATA 2018 constants used by the level-shift formulas.
//!
//! Every value below is the 2018 CODATA recommended value (Tiesinga, Mohr,
//! Newell and Taylor, Rev. Mod. Phys. 93, 025010 (2021); NIST listing
//! "Fundamental Physical Constants --- Complete Listing, 2018 CODATA
//! adjustment", the allascii.txt table), written with all the digits of that
//! listing and compared with it value by value (alpha, m_e c^2, h, e, the
//! reduced Compton wavelength, the p, d and alpha mass ratios, A_r(e), r_p,
//! r_d, R_inf h c). Their
//! standard uncertainties (relative 1e-10 or smaller for everything but the
//! charge radii) are far below the truncation uncertainty of the shifts and
//! are not propagated.

/// Fine-structure constant alpha = 7.2973525693(11) e-3 (CODATA 2018).
pub const ALPHA: f64 = 7.297_352_569_3e-3;

/// Electron mass energy equivalent m_e c^2 = 0.51099895000(15) MeV, in eV
/// (CODATA 2018).
pub const ELECTRON_REST_ENERGY_EV: f64 = 0.510_998_950_00e6;

/// Rydberg constant times hc in eV, R_inf h c = 13.605693122994(26) eV
/// (CODATA 2018): the energy unit Ry of an infinitely heavy nucleus.
pub const RYDBERG_ENERGY_EV: f64 = 13.605_693_122_994;

/// Standard uncertainty of [`RYDBERG_ENERGY_EV`], 0.000000000026 eV
/// (CODATA 2018).
pub const RYDBERG_ENERGY_EV_UNCERTAINTY: f64 = 2.6e-11;

/// Planck constant h = 6.62607015e-34 J Hz^-1 (exact in the 2019 SI, CODATA 2018).
pub const PLANCK_J_S: f64 = 6.626_070_15e-34;

/// Elementary charge e = 1.602176634e-19 C (exact in the 2019 SI, CODATA 2018).
pub const ELEMENTARY_CHARGE_C: f64 = 1.602_176_634e-19;

/// Reduced Compton wavelength of the electron hbar/(m_e c) =
/// 3.8615926796(12) e-13 m, in fm (CODATA 2018).
pub const REDUCED_COMPTON_WAVELENGTH_FM: f64 = 386.159_267_96;

/// Proton-electron mass ratio m_p/m_e = 1836.15267343(11) (CODATA 2018).
pub const PROTON_ELECTRON_MASS_RATIO: f64 = 1_836.152_673_43;

/// Deuteron-electron mass ratio m_d/m_e = 3670.48296788(13) (CODATA 2018).
pub const DEUTERON_ELECTRON_MASS_RATIO: f64 = 3_670.482_967_88;

/// Alpha particle-electron mass ratio m_alpha/m_e = 7294.29954142(24) (CODATA 2018).
pub const ALPHA_PARTICLE_ELECTRON_MASS_RATIO: f64 = 7_294.299_541_42;

/// Electron relative atomic mass A_r(e) = 5.48579909065(16) e-4 (CODATA 2018):
/// one atomic mass unit is 1/A_r(e) electron masses.
pub const ELECTRON_RELATIVE_ATOMIC_MASS: f64 = 5.485_799_090_65e-4;

/// Proton rms charge radius r_p = 0.8414(19) fm (CODATA 2018).
pub const PROTON_RMS_RADIUS_FM: f64 = 0.8414;

/// Deuteron rms charge radius r_d = 2.12799(74) fm (CODATA 2018).
pub const DEUTERON_RMS_RADIUS_FM: f64 = 2.127_99;

/// Alpha-particle rms charge radius 1.6755(28) fm. CODATA 2018 lists no
/// value; this is the compilation of Angeli and Marinova, At. Data Nucl.
/// Data Tables 99, 69 (2013) (from memory). It only enters the estimate of
/// the omitted nuclear-size term, never the sum of included terms.
pub const ALPHA_PARTICLE_RMS_RADIUS_FM: f64 = 1.6755;

/// The electron rest energy as a frequency, m_e c^2 / h, in MHz
/// (1.2355899e14 MHz), from [`ELECTRON_REST_ENERGY_EV`] and the exact h and e.
///
/// # Accuracy
/// f64 quotient, relative rounding about 1e-16; the CODATA 2018 standard
/// uncertainty of m_e c^2 is 3e-10 relative.
pub fn electron_rest_frequency_mhz() -> f64 {
    ELECTRON_REST_ENERGY_EV * ELEMENTARY_CHARGE_C / PLANCK_J_S / 1e6
}

/// One atomic mass unit in electron masses, 1 / A_r(e) (about 1822.888).
///
/// # Accuracy
/// f64 reciprocal, relative rounding about 1e-16.
pub fn atomic_mass_unit_in_electron_masses() -> f64 {
    1.0 / ELECTRON_RELATIVE_ATOMIC_MASS
}

/// The constants used, as (name, value, unit) rows, for provenance output.
pub fn listing() -> Vec<(&'static str, f64, &'static str)> {
    vec![
        ("alpha", ALPHA, "1"),
        ("electron_rest_energy", ELECTRON_REST_ENERGY_EV, "eV"),
        (
            "electron_rest_frequency",
            electron_rest_frequency_mhz(),
            "MHz",
        ),
        ("rydberg_energy", RYDBERG_ENERGY_EV, "eV"),
        ("planck_constant", PLANCK_J_S, "J s"),
        ("elementary_charge", ELEMENTARY_CHARGE_C, "C"),
        (
            "reduced_compton_wavelength",
            REDUCED_COMPTON_WAVELENGTH_FM,
            "fm",
        ),
        (
            "proton_electron_mass_ratio",
            PROTON_ELECTRON_MASS_RATIO,
            "1",
        ),
        (
            "deuteron_electron_mass_ratio",
            DEUTERON_ELECTRON_MASS_RATIO,
            "1",
        ),
        (
            "alpha_particle_electron_mass_ratio",
            ALPHA_PARTICLE_ELECTRON_MASS_RATIO,
            "1",
        ),
        (
            "electron_relative_atomic_mass",
            ELECTRON_RELATIVE_ATOMIC_MASS,
            "1",
        ),
        ("proton_rms_charge_radius", PROTON_RMS_RADIUS_FM, "fm"),
        ("deuteron_rms_charge_radius", DEUTERON_RMS_RADIUS_FM, "fm"),
        (
            "alpha_particle_rms_charge_radius",
            ALPHA_PARTICLE_RMS_RADIUS_FM,
            "fm",
        ),
    ]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn compton_frequency_matches_the_listed_compton_wavelength() {
        // c / lambda_C with lambda_C = 2.42631023867e-12 m (CODATA 2018):
        // an independent route to m_e c^2 / h.
        let from_wavelength = 299_792_458.0 / 2.426_310_238_67e-12 / 1e6;
        let rel = (electron_rest_frequency_mhz() / from_wavelength - 1.0).abs();
        assert!(rel < 1e-10, "relative difference {rel}");
    }

    #[test]
    fn rydberg_energy_is_alpha_squared_half_electron_rest_energy() {
        // R_inf h c = alpha^2 m_e c^2 / 2 (common practice): the listed
        // values agree within the uncertainties of alpha and m_e c^2.
        let derived = ALPHA * ALPHA * ELECTRON_REST_ENERGY_EV / 2.0;
        assert!((derived / RYDBERG_ENERGY_EV - 1.0).abs() < 1e-9);
    }

    #[test]
    fn alpha_matches_the_listed_inverse() {
        // 1/alpha = 137.035999084(21) (CODATA 2018).
        assert!((1.0 / ALPHA - 137.035_999_084).abs() < 1e-8);
    }

    #[test]
    fn reduced_compton_wavelength_is_alpha_times_bohr_radius() {
        // a_0 = 5.29177210903e-11 m (CODATA 2018); hbar/(m_e c) = alpha a_0.
        let from_bohr = ALPHA * 5.291_772_109_03e4; // fm
        assert!((from_bohr / REDUCED_COMPTON_WAVELENGTH_FM - 1.0).abs() < 1e-10);
    }
}
