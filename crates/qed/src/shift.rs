//! The truncated one-loop level shift: included terms, their sum, and the
//! estimate of what is left out.

use crate::coefficients as k;
use crate::constants::{self as c, ALPHA};
use crate::error::QedError;
use crate::level::Level;
use crate::nucleus::{check_z, Nucleus, MAX_RADIUS_FM, MIN_MASS};

/// A Bethe logarithm ln k0(n, l) (docs/physics.md, section 1: energies in units
/// of Z^2 Ry, independent of Z and of the masses) with its error estimate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BetheLog {
    /// Principal quantum number.
    pub n: u32,
    /// Orbital angular momentum.
    pub l: u32,
    /// ln k0(n, l).
    pub value: f64,
    /// Estimated absolute error of `value` (>= 0).
    pub abs_err: f64,
}

impl BetheLog {
    /// ln k0(n, l) = `value` +- `abs_err`.
    ///
    /// # Errors
    /// [`QedError::BadBetheLog`] for a non-finite value or a negative or
    /// non-finite error.
    pub fn new(n: u32, l: u32, value: f64, abs_err: f64) -> Result<BetheLog, QedError> {
        if !value.is_finite() || !abs_err.is_finite() || abs_err < 0.0 {
            return Err(QedError::BadBetheLog { value, abs_err });
        }
        Ok(BetheLog {
            n,
            l,
            value,
            abs_err,
        })
    }
}

/// The part of the one-loop correction a term belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum TermKind {
    /// The electron self-energy (coefficients A).
    SelfEnergy,
    /// The vacuum polarization (coefficients V).
    VacuumPolarization,
}

/// A coefficient family: the terms that share a coefficient name and an
/// order (A40 has a Bethe-logarithm part and a magnetic-moment part).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum Family {
    /// A41 L.
    A41,
    /// A40 (both parts).
    A40,
    /// A50 (Z alpha).
    A50,
    /// A62 (Z alpha)^2 L^2.
    A62,
    /// A61 (Z alpha)^2 L.
    A61,
    /// V40.
    V40,
    /// V50 (Z alpha).
    V50,
}

impl Family {
    /// Every family, in the order of the terms.
    pub const ALL: [Family; 7] = [
        Family::A41,
        Family::A40,
        Family::A50,
        Family::A62,
        Family::A61,
        Family::V40,
        Family::V50,
    ];

    /// The coefficient name: `A41`, ..., `V50`.
    pub fn name(self) -> &'static str {
        match self {
            Family::A41 => "A41",
            Family::A40 => "A40",
            Family::A50 => "A50",
            Family::A62 => "A62",
            Family::A61 => "A61",
            Family::V40 => "V40",
            Family::V50 => "V50",
        }
    }

    /// The shift-table column: `a41_mhz`, ..., `v50_mhz`.
    pub fn column(self) -> &'static str {
        match self {
            Family::A41 => "a41_mhz",
            Family::A40 => "a40_mhz",
            Family::A50 => "a50_mhz",
            Family::A62 => "a62_mhz",
            Family::A61 => "a61_mhz",
            Family::V40 => "v40_mhz",
            Family::V50 => "v50_mhz",
        }
    }

    /// Self-energy or vacuum polarization.
    pub fn kind(self) -> TermKind {
        match self {
            Family::V40 | Family::V50 => TermKind::VacuumPolarization,
            _ => TermKind::SelfEnergy,
        }
    }
}

/// One included term of the expansion, by identity.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum TermId {
    /// A41 L.
    A41,
    /// The Bethe-logarithm part of A40.
    A40BetheLog,
    /// The anomalous-magnetic-moment part of A40.
    A40MagneticMoment,
    /// A50 (Z alpha).
    A50,
    /// A62 (Z alpha)^2 L^2.
    A62,
    /// A61 (Z alpha)^2 L.
    A61,
    /// V40.
    V40,
    /// V50 (Z alpha).
    V50,
}

impl TermId {
    /// Every term, in the order of [`LevelShift::terms`].
    pub const ALL: [TermId; 8] = [
        TermId::A41,
        TermId::A40BetheLog,
        TermId::A40MagneticMoment,
        TermId::A50,
        TermId::A62,
        TermId::A61,
        TermId::V40,
        TermId::V50,
    ];

    /// The printed name, e.g. `A41`, `A40 (Bethe log)`, `V50`.
    pub fn name(self) -> &'static str {
        match self {
            TermId::A41 => "A41",
            TermId::A40BetheLog => "A40 (Bethe log)",
            TermId::A40MagneticMoment => "A40 (magnetic moment)",
            TermId::A50 => "A50",
            TermId::A62 => "A62",
            TermId::A61 => "A61",
            TermId::V40 => "V40",
            TermId::V50 => "V50",
        }
    }

    /// The order of the term, e.g. `alpha (Z alpha)^6 L`.
    pub fn order(self) -> &'static str {
        match self {
            TermId::A41 => "alpha (Z alpha)^4 L",
            TermId::A40BetheLog | TermId::A40MagneticMoment | TermId::V40 => "alpha (Z alpha)^4",
            TermId::A50 | TermId::V50 => "alpha (Z alpha)^5",
            TermId::A62 => "alpha (Z alpha)^6 L^2",
            TermId::A61 => "alpha (Z alpha)^6 L",
        }
    }

    /// The coefficient family.
    pub fn family(self) -> Family {
        match self {
            TermId::A41 => Family::A41,
            TermId::A40BetheLog | TermId::A40MagneticMoment => Family::A40,
            TermId::A50 => Family::A50,
            TermId::A62 => Family::A62,
            TermId::A61 => Family::A61,
            TermId::V40 => Family::V40,
            TermId::V50 => Family::V50,
        }
    }

    /// Self-energy or vacuum polarization.
    pub fn kind(self) -> TermKind {
        self.family().kind()
    }
}

/// One included term of the expansion.
///
/// `mhz = unit_mhz * mass_factor * coefficient * multiplier`, where
/// `unit_mhz` is [`LevelShift::unit_mhz`].
#[derive(Debug, Clone, PartialEq)]
pub struct Term {
    /// Which term (its family and kind: [`TermId::family`],
    /// [`TermId::kind`]).
    pub id: TermId,
    /// Name of the coefficient, e.g. `A41`, `A40 (Bethe log)`, `V50`
    /// ([`TermId::name`]).
    pub name: &'static str,
    /// The order of the term, e.g. `alpha (Z alpha)^6 L` ([`TermId::order`]).
    pub order: &'static str,
    /// The dimensionless coefficient (A41, A40, ...).
    pub coefficient: f64,
    /// The dimensionless power/log factor: 1, L, (Z alpha), (Z alpha)^2 L, ...
    pub multiplier: f64,
    /// The reduced-mass factor, (m_r/m_e)^3 or (m_r/m_e)^2.
    pub mass_factor: f64,
    /// The contribution in MHz (E/h; positive raises the level).
    pub mhz: f64,
}

/// The estimated size of one class of contributions that is left out.
#[derive(Debug, Clone, PartialEq)]
pub struct Omitted {
    /// Short name of the class.
    pub name: &'static str,
    /// How the size is estimated.
    pub rule: &'static str,
    /// Estimated magnitude in MHz (>= 0; an estimate, not a bound).
    pub mhz: f64,
}

/// How [`LevelShift::uncertainty_mhz`] is formed.
pub const UNCERTAINTY_RULE: &str = "square root of the sum of squares of the estimated sizes \
of the omitted contribution classes and of the ln k0 error propagated through A40";

/// A truncated one-loop QED level shift (self-energy and vacuum
/// polarization), relative to the Dirac energy with reduced mass.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelShift {
    /// The level.
    pub level: Level,
    /// The nucleus.
    pub nucleus: Nucleus,
    /// The Bethe logarithm used.
    pub ln_k0: BetheLog,
    /// Z alpha.
    pub z_alpha: f64,
    /// L = ln[(m_e/m_r) (Z alpha)^-2].
    pub log_l: f64,
    /// m_r/m_e.
    pub reduced_mass_ratio: f64,
    /// (alpha/pi) (Z alpha)^4 / n^3 m_e c^2 / h in MHz.
    pub unit_mhz: f64,
    /// The included terms, in the order A41, A40 (Bethe log), A40 (magnetic
    /// moment), A50, A62, A61, V40, V50 (all present; zero where the
    /// coefficient vanishes for this l).
    pub terms: Vec<Term>,
    /// Sum of the self-energy terms, MHz.
    pub self_energy_mhz: f64,
    /// Sum of the vacuum-polarization terms, MHz.
    pub vacuum_polarization_mhz: f64,
    /// Sum of all included terms, MHz.
    pub total_mhz: f64,
    /// Estimated sizes of the omitted contribution classes.
    pub omitted: Vec<Omitted>,
    /// ln k0 error propagated to the shift, MHz.
    pub ln_k0_error_mhz: f64,
    /// Combined uncertainty, MHz (see [`UNCERTAINTY_RULE`]).
    pub uncertainty_mhz: f64,
}

/// (alpha/pi) (Z alpha)^4 / n^3 m_e c^2 / h in MHz.
fn unit_mhz(z: u32, n: u32) -> f64 {
    let za = f64::from(z) * ALPHA;
    ALPHA / std::f64::consts::PI * za.powi(4) / f64::from(n).powi(3)
        * c::electron_rest_frequency_mhz()
}

fn check_inputs(level: &Level, nucleus: &Nucleus, ln_k0: &BetheLog) -> Result<(), QedError> {
    check_z(i64::from(nucleus.z))?;
    // The fields of `Nucleus` are public: re-check what the constructors check.
    if let Some(m) = nucleus.mass_me {
        if !m.is_finite() || m < MIN_MASS {
            return Err(QedError::MassOutOfRange {
                mass: m,
                min: MIN_MASS,
            });
        }
    }
    if !(0.0..=MAX_RADIUS_FM).contains(&nucleus.radius_fm) {
        return Err(QedError::RadiusOutOfRange {
            radius_fm: nucleus.radius_fm,
            max_fm: MAX_RADIUS_FM,
        });
    }
    if ln_k0.n != level.n() || ln_k0.l != level.l() {
        return Err(QedError::BetheLogMismatch {
            n: level.n(),
            l: level.l(),
            got_n: ln_k0.n,
            got_l: ln_k0.l,
        });
    }
    BetheLog::new(ln_k0.n, ln_k0.l, ln_k0.value, ln_k0.abs_err)?;
    Ok(())
}

/// The one-loop self-energy and vacuum-polarization shift of `level`, truncated
/// after the closed-form coefficients A41, A40, A50, A62, A61 and V40, V50
/// (see [`crate::coefficients`]).
///
/// Reduced-mass treatment as in the CODATA 2018 adjustment (Tiesinga et al.,
/// Rev. Mod. Phys. 93, 025010 (2021); from memory): every term carries
/// (m_r/m_e)^3 except the magnetic-moment part of A40, which carries
/// (m_r/m_e)^2, and the logarithms have the argument (m_e/m_r)(Z alpha)^-2.
///
/// # Accuracy
/// The sum is evaluated in f64 (relative rounding about 1e-15); what limits
/// it is the truncation. [`LevelShift::uncertainty_mhz`] combines
/// natural-size estimates of the omitted classes (listed in
/// [`LevelShift::omitted`] with their rules): an *estimate* of what a
/// complete evaluation would add beyond the Dirac energy with reduced mass,
/// not a bound. For hydrogen 2S1/2 - 2P1/2 it is about 0.8 MHz against an
/// actual difference from experiment of about 0.4 MHz.
///
/// # Errors
/// [`QedError::ChargeOutOfRange`], [`QedError::MassOutOfRange`],
/// [`QedError::RadiusOutOfRange`] (for a hand-built [`Nucleus`]),
/// [`QedError::BetheLogMismatch`], [`QedError::BadBetheLog`].
pub fn level_shift(
    level: &Level,
    nucleus: &Nucleus,
    ln_k0: &BetheLog,
) -> Result<LevelShift, QedError> {
    check_inputs(level, nucleus, ln_k0)?;
    let za = f64::from(nucleus.z) * ALPHA;
    let mr = nucleus.reduced_mass_ratio();
    let m3 = mr.powi(3);
    let m2 = mr.powi(2);
    let big_l = (1.0 / (mr * za * za)).ln();
    let unit = unit_mhz(nucleus.z, level.n());

    let mut terms = Vec::with_capacity(TermId::ALL.len());
    for id in TermId::ALL {
        let (coefficient, multiplier, mass_factor) = match id {
            TermId::A41 => (k::a41(level), big_l, m3),
            TermId::A40BetheLog => (k::a40_bethe(level, ln_k0.value), 1.0, m3),
            TermId::A40MagneticMoment => (k::a40_magnetic(level), 1.0, m2),
            TermId::A50 => (k::a50(level), za, m3),
            TermId::A62 => (k::a62(level), za * za * big_l * big_l, m3),
            TermId::A61 => (k::a61(level), za * za * big_l, m3),
            TermId::V40 => (k::v40(level), 1.0, m3),
            TermId::V50 => (k::v50(level), za, m3),
        };
        // `+ 0.0` turns a negative zero (a vanishing coefficient with a
        // minus sign) into +0 for printing.
        terms.push(Term {
            id,
            name: id.name(),
            order: id.order(),
            coefficient: coefficient + 0.0,
            multiplier,
            mass_factor,
            mhz: unit * mass_factor * coefficient * multiplier + 0.0,
        });
    }

    let sum_of = |kind: TermKind| -> f64 {
        terms
            .iter()
            .filter(|t| t.id.kind() == kind)
            .map(|t| t.mhz)
            .sum()
    };
    let self_energy_mhz = sum_of(TermKind::SelfEnergy);
    let vacuum_polarization_mhz = sum_of(TermKind::VacuumPolarization);
    let total_mhz = self_energy_mhz + vacuum_polarization_mhz;

    let omitted = omitted_estimates(level, nucleus, za, big_l, unit);
    let ln_k0_error_mhz = 4.0 / 3.0 * ln_k0.abs_err * unit * m3;
    let uncertainty_mhz = (omitted.iter().map(|o| o.mhz * o.mhz).sum::<f64>()
        + ln_k0_error_mhz * ln_k0_error_mhz)
        .sqrt();

    Ok(LevelShift {
        level: *level,
        nucleus: nucleus.clone(),
        ln_k0: *ln_k0,
        z_alpha: za,
        log_l: big_l,
        reduced_mass_ratio: mr,
        unit_mhz: unit,
        terms,
        self_energy_mhz,
        vacuum_polarization_mhz,
        total_mhz,
        omitted,
        ln_k0_error_mhz,
        uncertainty_mhz,
    })
}

/// Natural-size estimates of the contribution classes that the truncated sum
/// leaves out. All in MHz, all >= 0.
fn omitted_estimates(
    level: &Level,
    nucleus: &Nucleus,
    za: f64,
    big_l: f64,
    unit: f64,
) -> Vec<Omitted> {
    let m3 = nucleus.reduced_mass_ratio().powi(3);
    let s_state = level.l() == 0;

    // One-loop remainder: G_SE and G_VP at (Z alpha)^6 without logarithm, and
    // higher orders. Taken as large as the largest included (Z alpha)^6 term.
    let c6 = (k::a62(level).abs() * big_l * big_l)
        .max(k::a61(level).abs() * big_l)
        .max(k::v61(level).abs() * big_l);
    let one_loop = unit * m3 * za * za * c6;

    // Two-loop QED at its leading order alpha^2 (Z alpha)^4, coefficient of
    // natural size 1.
    let two_loop = unit * m3 * ALPHA / std::f64::consts::PI;

    // Recoil beyond the reduced mass, leading order (Z alpha)^5 m_e/M / pi
    // m_e c^2 / n^3 = unit * Z * m_e/M; coefficient L for S states (which carry
    // a logarithm at this order), 1 otherwise.
    let rec_coef = if s_state { big_l } else { 1.0 };
    let recoil = unit * m3 * f64::from(nucleus.z) * nucleus.electron_to_nucleus_mass() * rec_coef;

    // Finite nuclear size, leading order (S states only):
    // (2/3) (m_r/m_e)^3 (Z alpha)^4 / n^3 m_e c^2 (r / lambda_C)^2.
    let size = if s_state {
        let ratio = nucleus.radius_fm / c::REDUCED_COMPTON_WAVELENGTH_FM;
        2.0 / 3.0 * m3 * za.powi(4) / f64::from(level.n()).powi(3)
            * c::electron_rest_frequency_mhz()
            * ratio
            * ratio
    } else {
        0.0
    };

    vec![
        Omitted {
            name: "one-loop remainder",
            rule: "G_SE + G_VP at alpha (Z alpha)^6 and beyond, taken as large as the largest \
included alpha (Z alpha)^6 term: (alpha/pi)(Z alpha)^6/n^3 m_e c^2 (m_r/m_e)^3 \
max(|A62| L^2, |A61| L, |V61| L)",
            mhz: one_loop,
        },
        Omitted {
            name: "two-loop",
            rule: "two-loop QED at its leading order with a coefficient of natural size 1: \
(alpha/pi)^2 (Z alpha)^4/n^3 m_e c^2 (m_r/m_e)^3",
            mhz: two_loop,
        },
        Omitted {
            name: "recoil",
            rule: "recoil beyond the reduced mass at its leading order, coefficient L for S \
states and 1 otherwise: (m_e/M)(m_r/m_e)^3 (Z alpha)^5/(pi n^3) m_e c^2 x (L or 1)",
            mhz: recoil,
        },
        Omitted {
            name: "nuclear size",
            rule: "finite nuclear size at leading order (S states only): (2/3)(m_r/m_e)^3 \
(Z alpha)^4/n^3 m_e c^2 (r/lambda_C)^2, r the rms charge radius",
            mhz: size,
        },
    ]
}

/// The original nonrelativistic estimate: Bethe's sum over intermediate
/// states with the virtual-photon energy cut off at the electron rest energy
/// m_e c^2.
#[derive(Debug, Clone, PartialEq)]
pub struct CutoffEstimate {
    /// The dimensionless coefficient
    /// C = (4/3) [delta_l0 ln(2 m_e/(m_r (Z alpha)^2)) - ln k0(n, l)],
    /// so that the estimate is C (alpha/pi)(Z alpha)^4/n^3 m_e c^2 (m_r/m_e)^3.
    pub coefficient: f64,
    /// ln(2 m_e/(m_r (Z alpha)^2)) = ln(m_e c^2 / (Z^2 Ry_M)), the logarithm of
    /// the cutoff over the unit of ln k0 (Ry_M = reduced-mass Rydberg energy).
    pub cutoff_log: f64,
    /// The estimate in MHz.
    pub mhz: f64,
    /// ln k0 error propagated to the estimate, MHz.
    pub ln_k0_error_mhz: f64,
}

/// Bethe's nonrelativistic estimate with the cutoff K = m_e c^2:
///
/// ```text
/// dE = (4/3) (alpha/pi) (Z alpha)^4/n^3 m_e c^2 (m_r/m_e)^3
///      [delta_l0 ln(K/(Z^2 Ry_M)) - ln k0(n,l)]
/// ```
///
/// from dE = (2 alpha / 3 pi m_e^2) sum_m |p_nm|^2 (E_m - E_n) ln(K/|E_m - E_n|)
/// with the sum rules of docs/physics.md, section 2 (worked out in section 7);
/// the electron-spin terms and vacuum polarization are not part of it. For
/// comparison only.
///
/// # Accuracy
/// Exact evaluation of that formula in f64; as a physical prediction it is
/// off by the terms the expansion of [`level_shift`] adds (about 15 MHz for
/// hydrogen 2S - 2P).
///
/// # Errors
/// As [`level_shift`].
pub fn cutoff_estimate(
    level: &Level,
    nucleus: &Nucleus,
    ln_k0: &BetheLog,
) -> Result<CutoffEstimate, QedError> {
    check_inputs(level, nucleus, ln_k0)?;
    let za = f64::from(nucleus.z) * ALPHA;
    let mr = nucleus.reduced_mass_ratio();
    let m3 = mr.powi(3);
    let cutoff_log = (2.0 / (mr * za * za)).ln();
    let s = if level.l() == 0 { 1.0 } else { 0.0 };
    let coefficient = 4.0 / 3.0 * (s * cutoff_log - ln_k0.value);
    let unit = unit_mhz(nucleus.z, level.n());
    Ok(CutoffEstimate {
        coefficient,
        cutoff_log,
        mhz: unit * m3 * coefficient,
        ln_k0_error_mhz: 4.0 / 3.0 * ln_k0.abs_err * unit * m3,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn terms_come_in_order_with_their_kind() {
        let h = Nucleus::preset("H").unwrap();
        // ln k0(2,0) = 2.811769893120563 (Drake & Swainson, Phys. Rev. A 41,
        // 1243 (1990)).
        let b = BetheLog::new(2, 0, 2.811769893120563, 1e-15).unwrap();
        let s = level_shift(&Level::new(2, 0, 1).unwrap(), &h, &b).unwrap();
        let ids: Vec<TermId> = s.terms.iter().map(|t| t.id).collect();
        assert_eq!(ids, TermId::ALL);
        let se: f64 = s
            .terms
            .iter()
            .filter(|t| t.id.kind() == TermKind::SelfEnergy)
            .map(|t| t.mhz)
            .sum();
        assert_eq!(se, s.self_energy_mhz);
        assert!(s.vacuum_polarization_mhz < 0.0 && s.self_energy_mhz > 0.0);
        for id in TermId::ALL {
            let v = id.kind() == TermKind::VacuumPolarization;
            assert_eq!(v, id.name().starts_with('V'), "{}", id.name());
            assert!(id.name().starts_with(id.family().name()));
        }
    }
}
