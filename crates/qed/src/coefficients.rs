//! Dimensionless coefficients of the one-loop expansion in Z alpha.
//!
//! Notation of the CODATA adjustments (Tiesinga, Mohr, Newell and Taylor,
//! Rev. Mod. Phys. 93, 025010 (2021), section on the theory of hydrogen and
//! deuterium energy levels, "self energy" and "vacuum polarization"):
//!
//! ```text
//! E_SE = (alpha/pi) (Z alpha)^4 / n^3 m_e c^2 [ A41 L + A40 + A50 (Z alpha)
//!        + A62 (Z alpha)^2 L^2 + A61 (Z alpha)^2 L + G_SE(Z alpha) (Z alpha)^2 ]
//! E_VP = (alpha/pi) (Z alpha)^4 / n^3 m_e c^2 [ V40 + V50 (Z alpha)
//!        + V61 (Z alpha)^2 L + G_VP(Z alpha) (Z alpha)^2 ]
//! L    = ln[(m_e/m_r) (Z alpha)^-2]
//! ```
//!
//! This module has the closed-form coefficients only; the remainders G_SE and
//! G_VP (which need an all-order numerical evaluation) are left out by design.
//!
//! # Provenance
//! The formulas are written as given in the CODATA 2018 adjustment. Its text
//! was not available in the project's reference corpus, so no line-by-line
//! comparison with it has been made: every formula taken from it is marked
//! "from memory" beside the function. What holds them instead (all in
//! `tests/coefficients.rs` and `tests/lamb_shift.rs` of this crate):
//!
//! - magnetic part of A40: derived again from the Schwinger moment
//!   a_e = alpha/(2 pi) and the exact <r^-3> of kzero-basis, every level with
//!   n <= 12;
//! - V40: derived again from the short-range (contact) form of the Uehling
//!   potential and the exact |psi(0)|^2 of kzero-basis, n <= 10;
//! - A41 and the -(4/3) ln k0 of A40: the same numbers as in Bethe's
//!   nonrelativistic estimate ([`crate::cutoff_estimate`]);
//! - V61: Kotochigova and Mohr (2005), Eq. (5), whose text was seen;
//! - A50, V50, A61: equivalent original forms and published special values
//!   (from memory);
//! - the whole set: the measured n = 2 Lamb shifts of H and He4+ within the
//!   stated truncation uncertainty (data-checks/lamb_shift.csv).
//!
//! Checks that restate a formula of this module in another arrangement
//! (special values, original forms) are consistency checks of the
//! arithmetic, not outside checks; the tests say so where they stand.

use crate::level::Level;

fn delta_l0(level: &Level) -> f64 {
    if level.l() == 0 {
        1.0
    } else {
        0.0
    }
}

/// A41 = (4/3) delta_l0.
///
/// Source: Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021), self-energy
/// coefficients (from memory); restated in docs/physics.md, section 7.
///
/// # Accuracy
/// Closed form evaluated in f64: relative rounding error below 1e-15.
pub fn a41(level: &Level) -> f64 {
    4.0 / 3.0 * delta_l0(level)
}

/// The Bethe-logarithm part of A40: -(4/3) ln k0(n, l) + (10/9) delta_l0.
///
/// Source: Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021), self-energy
/// coefficients (from memory); restated in docs/physics.md, section 7. `ln_k0`
/// in the convention of docs/physics.md, section 1 (energies in units of
/// Z^2 Ry).
///
/// # Accuracy
/// Closed form evaluated in f64: relative rounding error below 1e-15.
pub fn a40_bethe(level: &Level, ln_k0: f64) -> f64 {
    -4.0 / 3.0 * ln_k0 + 10.0 / 9.0 * delta_l0(level)
}

/// The magnetic-moment part of A40: -(1 - delta_l0) / (2 kappa (2l + 1)),
/// kappa the Dirac quantum number ([`Level::kappa`]).
///
/// Source: Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021), self-energy
/// coefficients (from memory); restated in docs/physics.md, section 7. Derived again in
/// the tests from the Schwinger moment (see the module notes). In the reduced-mass
/// treatment of that source this part carries (m_r/m_e)^2 instead of
/// (m_r/m_e)^3 (from memory). That is also what the physics gives: the
/// anomalous-moment spin-orbit coupling a Z alpha / (m_e m_r r^3) L.s, with
/// <r^-3> proportional to m_r^3, scales as m_r^2 / m_e.
///
/// # Accuracy
/// Closed form evaluated in f64: relative rounding error below 1e-15.
pub fn a40_magnetic(level: &Level) -> f64 {
    if level.l() == 0 {
        return 0.0;
    }
    let kappa = level.kappa() as f64;
    let l = f64::from(level.l());
    -1.0 / (2.0 * kappa * (2.0 * l + 1.0))
}

/// A50 = (139/32 - 2 ln 2) pi delta_l0 (about 9.2911 for S states).
///
/// Source: Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021), self-energy
/// coefficients (from memory).
///
/// # Accuracy
/// Closed form evaluated in f64: relative rounding error below 1e-15.
pub fn a50(level: &Level) -> f64 {
    (139.0 / 32.0 - 2.0 * std::f64::consts::LN_2) * std::f64::consts::PI * delta_l0(level)
}

/// A62 = -delta_l0.
///
/// Source: Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021), self-energy
/// coefficients (from memory).
///
/// # Accuracy
/// Closed form evaluated in f64: relative rounding error below 1e-15.
pub fn a62(level: &Level) -> f64 {
    -delta_l0(level)
}

/// A61:
///
/// ```text
/// [4 (1 + 1/2 + ... + 1/n) + (28/3) ln 2 - 4 ln n - 601/180 - 77/(45 n^2)] delta_l0
/// + (1 - 1/n^2) (2/15 + (1/3) delta_{j,1/2}) delta_l1
/// + [96 n^2 - 32 l (l+1)] (1 - delta_l0) / [3 n^2 (2l-1) (2l) (2l+1) (2l+2) (2l+3)]
/// ```
///
/// Source: Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021), self-energy
/// coefficients (from memory). For 1S it reduces to (28/3) ln 2 - 21/20 = 5.41937.
///
/// # Accuracy
/// Closed form evaluated in f64: relative rounding error below 1e-15.
pub fn a61(level: &Level) -> f64 {
    let n = f64::from(level.n());
    let l = f64::from(level.l());
    if level.l() == 0 {
        let harmonic: f64 = (1..=level.n()).map(|k| 1.0 / f64::from(k)).sum();
        return 4.0 * harmonic + 28.0 / 3.0 * std::f64::consts::LN_2
            - 4.0 * n.ln()
            - 601.0 / 180.0
            - 77.0 / (45.0 * n * n);
    }
    let mut v = 0.0;
    if level.l() == 1 {
        let half = if level.j2() == 1 { 1.0 / 3.0 } else { 0.0 };
        v += (1.0 - 1.0 / (n * n)) * (2.0 / 15.0 + half);
    }
    let den = 3.0
        * n
        * n
        * (2.0 * l - 1.0)
        * (2.0 * l)
        * (2.0 * l + 1.0)
        * (2.0 * l + 2.0)
        * (2.0 * l + 3.0);
    v + (96.0 * n * n - 32.0 * l * (l + 1.0)) / den
}

/// V40 = -(4/15) delta_l0 (Uehling potential, leading order).
///
/// Source: Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021), vacuum
/// polarization (from memory); restated in docs/physics.md, section 7. Derived again in
/// the tests from the contact form of the Uehling potential.
///
/// # Accuracy
/// Closed form evaluated in f64: relative rounding error below 1e-15.
pub fn v40(level: &Level) -> f64 {
    -4.0 / 15.0 * delta_l0(level)
}

/// V50 = (5/48) pi delta_l0.
///
/// Source: Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021), vacuum
/// polarization (from memory).
///
/// # Accuracy
/// Closed form evaluated in f64: relative rounding error below 1e-15.
pub fn v50(level: &Level) -> f64 {
    5.0 / 48.0 * std::f64::consts::PI * delta_l0(level)
}

/// V61 = -(2/15) delta_l0: not part of the included sum (the vacuum
/// polarization is included at orders (Z alpha)^4 and (Z alpha)^5 only), but
/// used by the estimate of the omitted one-loop remainder.
///
/// Source: Kotochigova and Mohr, "Precise theory of levels of hydrogen and
/// deuterium: the Coulomb vacuum polarization correction" (NIST, 2005),
/// Eq. (5), which states the same expansion as the CODATA adjustments.
///
/// # Accuracy
/// Closed form evaluated in f64: relative rounding error below 1e-15.
pub fn v61(level: &Level) -> f64 {
    -2.0 / 15.0 * delta_l0(level)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lv(n: i64, l: i64, j2: i64) -> Level {
        Level::new(n, l, j2).unwrap()
    }

    #[test]
    fn s_state_values() {
        let s1 = lv(1, 0, 1);
        // A50(1S) = 9.2911 (from memory). A61(1S) in its older closed form
        // (28/3) ln 2 - 21/20 (from memory); the general-n form reduces to it
        // by arithmetic, so this is a consistency check.
        assert!((a50(&s1) - 9.291_1).abs() < 1e-4);
        let a61_1s = 28.0 / 3.0 * std::f64::consts::LN_2 - 21.0 / 20.0;
        assert!((a61(&s1) - a61_1s).abs() < 1e-13);
        assert_eq!(a62(&s1), -1.0);
        assert_eq!(a40_magnetic(&s1), 0.0);
        // Consistency check, not an outside one: the harmonic-number part,
        // A61(2S) - A61(1S) = 4/2 - 4 ln 2 - (77/45)(1/4 - 1), restates the
        // general-n formula term by term.
        let d = a61(&lv(2, 0, 1)) - a61(&s1);
        let expect = 2.0 - 4.0 * std::f64::consts::LN_2 + 77.0 / 45.0 * 0.75;
        assert!((d - expect).abs() < 1e-14);
    }

    #[test]
    fn p_and_d_state_values() {
        let p1 = lv(2, 1, 1);
        let p3 = lv(2, 1, 3);
        assert!((a40_magnetic(&p1) + 1.0 / 6.0).abs() < 1e-15);
        assert!((a40_magnetic(&p3) - 1.0 / 12.0).abs() < 1e-15);
        // Fine-structure splitting from the anomalous moment (Schwinger term,
        // common practice): magnetic A40(2P3/2) - A40(2P1/2) = 1/4.
        assert!((a40_magnetic(&p3) - a40_magnetic(&p1) - 0.25).abs() < 1e-15);
        // Consistency check, not an outside one: the general-l expression of
        // A61 specialised by hand (2P1/2: (3/4)(2/15 + 1/3) + 320/1440; 2P3/2;
        // 3D5/2). The published 2P values are compared in tests/coefficients.rs
        // (from memory).
        assert!((a61(&p1) - (0.75 * (2.0 / 15.0 + 1.0 / 3.0) + 320.0 / 1440.0)).abs() < 1e-15);
        assert!((a61(&p3) - (0.75 * 2.0 / 15.0 + 320.0 / 1440.0)).abs() < 1e-15);
        let d = lv(3, 2, 5);
        assert!(
            (a61(&d) - (96.0 * 9.0 - 32.0 * 6.0) / (3.0 * 9.0 * 3.0 * 4.0 * 5.0 * 6.0 * 7.0)).abs()
                < 1e-15
        );
        for f in [a41, a50, a62, v40, v50, v61] {
            assert_eq!(f(&p1), 0.0);
            assert_eq!(f(&d), 0.0);
        }
    }
}
