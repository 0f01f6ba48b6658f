//! The nucleus: charge, mass and rms charge radius.

use crate::constants as c;
use crate::error::QedError;

/// Largest nuclear charge accepted. Beyond it the omitted terms of relative
/// order (Z alpha)^2 reach about 1% of the shift and the natural-size estimate
/// of the remainder can no longer be trusted.
pub const MAX_Z: u32 = 10;

/// Smallest finite nuclear mass accepted, in electron masses: the recoil
/// terms are estimated to first order in m_e/M only.
pub const MIN_MASS: f64 = 100.0;

/// Largest accepted rms charge radius, in fm.
pub const MAX_RADIUS_FM: f64 = 10.0;

/// Empirical radius constant r0 of r = r0 A^(1/3), in fm (common practice),
/// used when a custom nucleus comes without a radius.
pub const EMPIRICAL_R0_FM: f64 = 1.2;

/// Names of the presets accepted by [`Nucleus::preset`].
pub const PRESET_NAMES: [&str; 3] = ["H", "D", "He4"];

/// A point-like nucleus for the QED terms, with its rms charge radius for
/// the estimate of the omitted nuclear-size term.
#[derive(Debug, Clone, PartialEq)]
pub struct Nucleus {
    /// Short name: a preset name, or `custom`.
    pub name: String,
    /// Charge number Z.
    pub z: u32,
    /// Mass in electron masses; `None` for an infinitely heavy nucleus.
    pub mass_me: Option<f64>,
    /// rms charge radius in fm.
    pub radius_fm: f64,
    /// Where the mass and radius come from.
    pub source: String,
}

impl Nucleus {
    /// A preset: `H` (proton, Z = 1), `D` (deuteron, Z = 1) or `He4`
    /// (alpha particle, Z = 2). Case-insensitive; `p`, `d`, `alpha` are
    /// accepted as well. Masses and the p and d radii are CODATA 2018.
    ///
    /// # Errors
    /// [`QedError::UnknownNucleus`].
    pub fn preset(name: &str) -> Result<Nucleus, QedError> {
        let lower = name.trim().to_ascii_lowercase();
        let (short, z, mass, radius, source) = match lower.as_str() {
            "h" | "p" | "h1" | "1h" => (
                "H",
                1,
                c::PROTON_ELECTRON_MASS_RATIO,
                c::PROTON_RMS_RADIUS_FM,
                "proton: m_p/m_e and r_p from CODATA 2018",
            ),
            "d" | "h2" | "2h" => (
                "D",
                1,
                c::DEUTERON_ELECTRON_MASS_RATIO,
                c::DEUTERON_RMS_RADIUS_FM,
                "deuteron: m_d/m_e and r_d from CODATA 2018",
            ),
            "he4" | "4he" | "alpha" => (
                "He4",
                2,
                c::ALPHA_PARTICLE_ELECTRON_MASS_RATIO,
                c::ALPHA_PARTICLE_RMS_RADIUS_FM,
                "alpha particle: m_alpha/m_e from CODATA 2018, r_alpha from Angeli & Marinova (2013)",
            ),
            _ => {
                return Err(QedError::UnknownNucleus {
                    name: name.to_string(),
                    known: PRESET_NAMES.join(", "),
                })
            }
        };
        Ok(Nucleus {
            name: short.to_string(),
            z,
            mass_me: Some(mass),
            radius_fm: radius,
            source: source.to_string(),
        })
    }

    /// A nucleus of charge `z` and mass `mass_me` electron masses
    /// (`f64::INFINITY` for infinite mass) with rms charge radius `radius_fm`.
    /// Without a radius, r = 1.2 fm A^(1/3) with A the mass in atomic mass
    /// units (a rough empirical rule, common practice; 0 for infinite mass).
    ///
    /// # Errors
    /// [`QedError::ChargeOutOfRange`] unless 1 <= z <= [`MAX_Z`];
    /// [`QedError::MassOutOfRange`] for a mass below [`MIN_MASS`] or NaN;
    /// [`QedError::RadiusOutOfRange`] for a radius outside 0..=[`MAX_RADIUS_FM`].
    pub fn custom(z: i64, mass_me: f64, radius_fm: Option<f64>) -> Result<Nucleus, QedError> {
        check_z(z)?;
        if mass_me.is_nan() || mass_me < MIN_MASS {
            return Err(QedError::MassOutOfRange {
                mass: mass_me,
                min: MIN_MASS,
            });
        }
        let mass = if mass_me.is_infinite() {
            None
        } else {
            Some(mass_me)
        };
        let (radius, rsource) = match (radius_fm, mass) {
            (Some(r), _) => (r, "radius as given"),
            (None, Some(m)) => (
                EMPIRICAL_R0_FM * (m / c::atomic_mass_unit_in_electron_masses()).cbrt(),
                "radius from the empirical rule 1.2 fm A^(1/3)",
            ),
            (None, None) => (0.0, "point nucleus"),
        };
        if !(0.0..=MAX_RADIUS_FM).contains(&radius) {
            return Err(QedError::RadiusOutOfRange {
                radius_fm: radius,
                max_fm: MAX_RADIUS_FM,
            });
        }
        Ok(Nucleus {
            name: "custom".to_string(),
            z: z as u32,
            mass_me: mass,
            radius_fm: radius,
            source: format!("mass as given, {rsource}"),
        })
    }

    /// Replaces the radius (for a preset given with an explicit radius).
    ///
    /// # Errors
    /// [`QedError::RadiusOutOfRange`].
    pub fn with_radius(mut self, radius_fm: f64) -> Result<Nucleus, QedError> {
        if !(0.0..=MAX_RADIUS_FM).contains(&radius_fm) {
            return Err(QedError::RadiusOutOfRange {
                radius_fm,
                max_fm: MAX_RADIUS_FM,
            });
        }
        self.radius_fm = radius_fm;
        self.source.push_str("; radius as given");
        Ok(self)
    }

    /// Reduced-mass ratio m_r/m_e = 1 / (1 + m_e/M) (1 for infinite mass).
    ///
    /// # Accuracy
    /// f64, relative rounding about 1e-16.
    pub fn reduced_mass_ratio(&self) -> f64 {
        match self.mass_me {
            Some(m) => 1.0 / (1.0 + 1.0 / m),
            None => 1.0,
        }
    }

    /// m_e/M (0 for infinite mass).
    pub fn electron_to_nucleus_mass(&self) -> f64 {
        match self.mass_me {
            Some(m) => 1.0 / m,
            None => 0.0,
        }
    }
}

/// Checks 1 <= z <= [`MAX_Z`].
///
/// # Errors
/// [`QedError::ChargeOutOfRange`].
pub fn check_z(z: i64) -> Result<u32, QedError> {
    if z < 1 || z > i64::from(MAX_Z) {
        Err(QedError::ChargeOutOfRange { z, max: MAX_Z })
    } else {
        Ok(z as u32)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn presets() {
        let h = Nucleus::preset("H").unwrap();
        assert_eq!(h.z, 1);
        // m_r/m_e for hydrogen = 1 - m_e/m_p + ... with m_e/m_p = 5.44617021487e-4 (CODATA 2018).
        let mr = h.reduced_mass_ratio();
        assert!((1.0 / mr - 1.0 - 5.446_170_214_87e-4).abs() < 1e-15);
        assert_eq!(Nucleus::preset("he4").unwrap().z, 2);
        assert_eq!(Nucleus::preset("d").unwrap().name, "D");
        assert!(matches!(
            Nucleus::preset("U238"),
            Err(QedError::UnknownNucleus { .. })
        ));
    }

    #[test]
    fn custom_checks() {
        assert!(Nucleus::custom(0, 2000.0, None).is_err());
        assert!(Nucleus::custom(11, 2000.0, None).is_err());
        assert!(Nucleus::custom(1, 50.0, None).is_err());
        assert!(Nucleus::custom(1, f64::NAN, None).is_err());
        assert!(Nucleus::custom(1, 2000.0, Some(-1.0)).is_err());
        let inf = Nucleus::custom(3, f64::INFINITY, None).unwrap();
        assert_eq!(inf.reduced_mass_ratio(), 1.0);
        assert_eq!(inf.radius_fm, 0.0);
        // 12 u: r = 1.2 * 12^(1/3) fm = 2.747 fm.
        let c12 = Nucleus::custom(6, 12.0 * 1_822.888_486, None).unwrap();
        assert!((c12.radius_fm - 2.747).abs() < 1e-3);
    }
}
