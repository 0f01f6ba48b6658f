//! Checks of the closed-form coefficients that do not rest on recalling the
//! formulas: derivations from independent physics (the electron's anomalous
//! magnetic moment and the Uehling potential, with exact hydrogen wave
//! functions from kzero-basis). Special values and equivalent forms recalled
//! from memory are consistency checks only, and say so.

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

/// A50 in its original form 4 pi [139/128 - (1/2) ln 2] (from memory), for S
/// states only. Consistency check, not an outside one: the original form is
/// recalled, not read from a source, and it is the same number rearranged.
#[test]
fn a50_in_its_original_form() {
    let pi = std::f64::consts::PI;
    let s = lv(3, 0, 1);
    let a50 = 4.0 * pi * (139.0 / 128.0 - 0.5 * std::f64::consts::LN_2); // from memory
    assert!((k::a50(&s) - a50).abs() < 1e-14);
    assert_eq!(k::a50(&lv(3, 1, 1)), 0.0);
}

/// J_k = int_1^inf (1 + 1/(2 t^2)) sqrt(t^2 - 1) / t^(2+k) dt, the moments of
/// the spectral weight of the Uehling potential, by the trapezoidal rule in
/// t = cosh s. The integrand is even in s and decays like e^(-k s), so the
/// rule converges exponentially (step 0.05 on [0, 40]: error far below 1e-15).
fn uehling_moment(k: i32) -> f64 {
    let h = 0.05;
    let steps = 800;
    let mut sum = 0.0;
    for i in 0..=steps {
        let s = f64::from(i) * h;
        let c = s.cosh();
        let v = (1.0 + 0.5 / (c * c)) * s.sinh().powi(2) / c.powi(k + 2);
        sum += if i == 0 { 0.5 * v } else { v };
    }
    sum * h
}

/// V40 and V50 derived again from the Uehling potential itself,
///
/// ```text
/// V_U(r) = -(Z alpha / r) (2 alpha / 3 pi) int_1^inf dt e^(-2 m r t)
///          (1 + 1/(2 t^2)) sqrt(t^2 - 1) / t^2
/// ```
///
/// (E. A. Uehling, Phys. Rev. 48, 55 (1935); this spectral form is common
/// practice), averaged over the exact S-state densities of kzero-basis.
/// The range of V_U is the electron Compton wavelength, so only the density
/// near the origin matters: |psi(r)|^2 = P0 + P1 r + ... (r in a0/Z). With
/// the moments J_k above, int V_U d^3r = -(2/3) alpha (Z alpha) J_0 / m^2
/// and int r V_U d^3r = -(2/3) alpha (Z alpha) J_1 / m^3, which
/// give, in units of (alpha/pi)(Z alpha)^4 m / n^3,
///
/// ```text
/// V40 = -(2/3) pi n^3 P0 J_0,      V50 = -(2/3) pi n^3 P1 J_1.
/// ```
///
/// P0 and P1 come from the exact radial function R(r) and its derivative at
/// r = 0 (|psi|^2 = R^2 / 4 pi, so P1 = 2 P0 R'(0)/R(0)), and J_0, J_1 by
/// quadrature, so nothing here restates -4/15 or 5 pi/48.
#[test]
fn v40_and_v50_from_the_uehling_potential() {
    let (j0, j1) = (uehling_moment(2), uehling_moment(3));
    let zero = rug::Float::with_val(128, 0);
    for n in 1..=10i64 {
        let state = BoundState::new(n, 0, Rational::from(1)).unwrap();
        let r = kzero_basis::radial::radial_function(&state);
        let r0 = r.eval(&zero, 128).to_f64();
        // R'(0)/R(0): r R'(r) = e^(-kappa r) sum d_p r^p, so R'(0) is d_1 in
        // the units in which R(0) is c_0 (exact rationals, same normalization).
        let cusp = Rational::from(&r.r_derivative().rational_coeffs()[1] / &r.rational_coeffs()[0]);
        let four_pi = 4.0 * std::f64::consts::PI;
        let p0 = r0 * r0 / four_pi;
        let p1 = 2.0 * p0 * cusp.to_f64();
        let n3 = (n as f64).powi(3);
        let v40 = -2.0 / 3.0 * std::f64::consts::PI * n3 * p0 * j0;
        let v50 = -2.0 / 3.0 * std::f64::consts::PI * n3 * p1 * j1;
        let s = lv(n, 0, 1);
        assert!(
            (k::v40(&s) - v40).abs() < 1e-14,
            "n={n}: V40 {} vs {v40}",
            k::v40(&s)
        );
        assert!(
            (k::v50(&s) - v50).abs() < 1e-14,
            "n={n}: V50 {} vs {v50}",
            k::v50(&s)
        );
    }
    // P states: the density vanishes at the origin like r^2, so neither order
    // contributes.
    for (n, l, j2) in [(2, 1, 1), (3, 1, 3), (3, 2, 5)] {
        assert_eq!(k::v40(&lv(n, l, j2)), 0.0);
        assert_eq!(k::v50(&lv(n, l, j2)), 0.0);
    }
}
