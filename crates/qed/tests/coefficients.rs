//! Checks of the closed-form coefficients that do not rest on recalling the
//! formulas: derivations from independent physics (the electron's anomalous
//! magnetic moment with exact hydrogen expectation values from kzero-basis),
//! and published special values and equivalent forms.

use kzero_basis::{radial::expectation, BoundState};
use kzero_qed::coefficients as k;
use kzero_qed::Level;
use rug::Rational;

fn lv(n: i64, l: i64, j2: i64) -> Level {
    Level::new(n, l, j2).unwrap()
}

/// The magnetic-moment part of A40 is the anomalous-moment spin-orbit energy.
///
/// With the Schwinger moment a_e = alpha/(2 pi) (J. Schwinger, Phys. Rev. 73,
/// 416 (1948); common practice), the extra spin-orbit operator (no Thomas
/// half for the anomalous part; common practice) is
/// a_e (Z alpha / (m^2 r^3)) L.S, so its expectation in units of
/// (alpha/pi)(Z alpha)^4 m c^2 / n^3 is (1/2) n^3 <r^-3> <L.S>, with <r^-3> in
/// units of (a_0/Z)^-3 and <L.S> = [j(j+1) - l(l+1) - 3/4] / 2. Here <r^-3>
/// is the exact rational from the radial functions of kzero-basis, so the
/// comparison is independent of the closed form -1/(2 kappa (2l+1)).
#[test]
fn a40_magnetic_is_the_schwinger_moment_spin_orbit_energy() {
    let mut checked = 0;
    for n in 2..=12i64 {
        for l in 1..n {
            let state = BoundState::new(n, l, Rational::from(1)).unwrap();
            let r3 = expectation(&state, -3).unwrap().to_f64();
            for j2 in [2 * l - 1, 2 * l + 1] {
                let j = j2 as f64 / 2.0;
                let lf = l as f64;
                let ls = (j * (j + 1.0) - lf * (lf + 1.0) - 0.75) / 2.0;
                // a_e = alpha/(2 pi), Schwinger (1948); spin-orbit form: common practice
                let derived = 0.5 * (n as f64).powi(3) * r3 * ls;
                let got = k::a40_magnetic(&lv(n, l, j2));
                assert!(
                    (got - derived).abs() <= 1e-15 * derived.abs().max(1e-3),
                    "n={n} l={l} 2j={j2}: closed form {got}, derived {derived}"
                );
                checked += 1;
            }
        }
    }
    assert_eq!(checked, 2 * (1..=11).sum::<i32>());
}

/// A61 of the n = 2 P levels: 103/180 for 2P1/2 and 29/90 for 2P3/2
/// (Jentschura & Pachucki, Phys. Rev. A 54, 1853 (1996); from memory).
#[test]
fn a61_two_p_special_values() {
    // 103/180 and 29/90: Jentschura & Pachucki (1996), from memory
    assert!((k::a61(&lv(2, 1, 1)) - 103.0 / 180.0).abs() < 1e-15); // from memory
    assert!((k::a61(&lv(2, 1, 3)) - 29.0 / 90.0).abs() < 1e-15); // from memory
}

/// A61(2S) = (16/3) ln 2 + 67/30 (from memory), an equivalent closed form of
/// the general-n S-state expression.
#[test]
fn a61_two_s_special_value() {
    let expect = 16.0 / 3.0 * std::f64::consts::LN_2 + 67.0 / 30.0; // from memory
    assert!((k::a61(&lv(2, 0, 1)) - expect).abs() < 1e-14);
}

/// A50 in its original form 4 pi [139/128 - (1/2) ln 2] (from memory), and
/// V50 = (5/48) pi (from memory), both for S states only.
#[test]
fn order_five_coefficients_in_their_original_forms() {
    let pi = std::f64::consts::PI;
    let s = lv(3, 0, 1);
    let a50 = 4.0 * pi * (139.0 / 128.0 - 0.5 * std::f64::consts::LN_2); // from memory
    assert!((k::a50(&s) - a50).abs() < 1e-14);
    assert!((k::v50(&s) - 5.0 * pi / 48.0).abs() < 1e-15); // from memory
    assert_eq!(k::a50(&lv(3, 1, 1)), 0.0);
}

/// The leading vacuum polarization is the Uehling term -(4/15) delta_l0: the
/// Uehling potential at short range acts as the contact term
/// -(4 alpha (Z alpha)/(15 m^2)) delta^3(r) (common practice), and
/// |psi_n0(0)|^2 = (Z alpha m)^3/(pi n^3), which gives -(4/15)(alpha/pi)(Z
/// alpha)^4 m / n^3. Here |psi(0)|^2 is taken from the exact radial function
/// at r = 0 (kzero-basis), independently of the closed form.
#[test]
fn v40_is_the_uehling_contact_term() {
    for n in 1..=10i64 {
        let state = BoundState::new(n, 0, Rational::from(1)).unwrap();
        let r = kzero_basis::radial::radial_function(&state);
        let r0 = r.eval(&rug::Float::with_val(64, 0), 64).to_f64();
        // |psi(0)|^2 = R(0)^2 / (4 pi) in units of (a_0/Z)^-3.
        let psi0_sq = r0 * r0 / (4.0 * std::f64::consts::PI);
        // Coefficient of (alpha/pi)(Z alpha)^4 m / n^3: -(4/15) pi n^3 |psi(0)|^2.
        // Uehling contact term -(4/15) alpha (Z alpha) / m^2 delta(r): common practice
        let derived = -4.0 / 15.0 * std::f64::consts::PI * (n as f64).powi(3) * psi0_sq;
        let got = k::v40(&lv(n, 0, 1));
        assert!((got - derived).abs() < 1e-14, "n={n}: {got} vs {derived}");
    }
}
