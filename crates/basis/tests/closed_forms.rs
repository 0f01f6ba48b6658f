//! Diagonal expectation values against the closed forms in Bethe & Salpeter,
//! Quantum Mechanics of One- and Two-Electron Atoms (1957).

use kzero_basis::radial::expectation;
use kzero_basis::BoundState;
use rug::Rational;

fn q(n: i64, d: i64) -> Rational {
    Rational::from((n, d))
}

fn check_state(n: i64, l: i64, z: i64) {
    let s = BoundState::new(n, l, Rational::from(z)).unwrap();
    let zr = Rational::from(z);
    let ll = l * (l + 1);
    // normalization
    assert_eq!(expectation(&s, 0).unwrap(), 1, "norm ({n},{l})");
    // <r> = (3n^2 - l(l+1)) / (2Z)   [Bethe & Salpeter 1957]
    assert_eq!(expectation(&s, 1).unwrap(), q(3 * n * n - ll, 2) / &zr);
    // <r^2> = n^2 (5n^2 + 1 - 3l(l+1)) / (2Z^2)   [Bethe & Salpeter 1957]
    assert_eq!(
        expectation(&s, 2).unwrap(),
        q(n * n * (5 * n * n + 1 - 3 * ll), 2) / Rational::from(&zr * &zr)
    );
    // <1/r> = Z/n^2   [Bethe & Salpeter 1957]
    assert_eq!(expectation(&s, -1).unwrap(), Rational::from(&zr / (n * n)));
    // <1/r^2> = Z^2 / (n^3 (l + 1/2))   [Bethe & Salpeter 1957]
    assert_eq!(
        expectation(&s, -2).unwrap(),
        Rational::from(&zr * &zr) / q(n * n * n * (2 * l + 1), 2)
    );
    if l > 0 {
        // <1/r^3> = Z^3 / (n^3 l (l+1/2)(l+1))   [Bethe & Salpeter 1957]
        assert_eq!(
            expectation(&s, -3).unwrap(),
            Rational::from(&zr * &zr) * &zr / q(n * n * n * l * (2 * l + 1) * (l + 1), 2)
        );
    }
}

#[test]
fn small_states_all_l() {
    for n in 1..=12 {
        for l in 0..n {
            check_state(n, l, 1);
        }
    }
    check_state(3, 1, 2);
    check_state(5, 2, 92);
}

#[test]
fn large_n_up_to_200() {
    for &(n, l) in &[
        (50, 0),
        (100, 7),
        (150, 149),
        (200, 0),
        (200, 1),
        (200, 199),
    ] {
        check_state(n, l, 1);
    }
}
