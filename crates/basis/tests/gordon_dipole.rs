//! Gordon's closed formula against direct exact integration, and the three
//! dipole forms against each other (gauge identities, docs/physics.md, section 2).

use kzero_basis::dipole::{dipole_squared, radial_amplitude, transition_energy, DipoleForm};
use kzero_basis::exact::Surd;
use kzero_basis::gordon::{
    gordon_hydrogen, gordon_hydrogen_square, radial_dipole, radial_dipole_square,
};
use kzero_basis::radial::radial_integral;
use kzero_basis::{BasisError, BoundState};
use rug::{Integer, Rational};

fn st(n: i64, l: i64) -> BoundState {
    BoundState::hydrogen(n, l).unwrap()
}

fn sign(s: &Surd) -> i32 {
    s.coef.cmp0() as i32
}

/// Gordon's value equals the direct integral exactly: same square, same sign;
/// the square formed without the square root is the same rational.
fn check_pair(a: &BoundState, b: &BoundState) {
    let g = radial_dipole(a, b).unwrap();
    let d = radial_integral(a, b, 1).unwrap();
    assert_eq!(
        radial_dipole_square(a, b).unwrap(),
        d.square(),
        "square <{} {}|r|{} {}>",
        a.n(),
        a.l(),
        b.n(),
        b.l()
    );
    assert_eq!(
        g.square(),
        d.square(),
        "<{} {}|r|{} {}>",
        a.n(),
        a.l(),
        b.n(),
        b.l()
    );
    assert_eq!(
        sign(&g),
        sign(&d),
        "sign <{} {}|r|{} {}>",
        a.n(),
        a.l(),
        b.n(),
        b.l()
    );
}

#[test]
fn gordon_equals_direct_all_pairs_up_to_12() {
    let mut count = 0;
    for n in 1..=12 {
        for l in 1..n {
            for n2 in l..=12 {
                check_pair(&st(n, l), &st(n2, l - 1));
                check_pair(&st(n2, l - 1), &st(n, l));
                count += 2;
            }
        }
    }
    assert!(count > 500);
}

#[test]
fn gordon_equals_direct_sample_up_to_200() {
    let cases: &[(i64, i64, i64)] = &[
        (200, 1, 199),
        (199, 1, 200),
        (200, 1, 200),
        (200, 199, 199),
        (200, 100, 150),
        (150, 3, 3),
        (100, 50, 100),
        (57, 12, 181),
        (200, 7, 7),
        (200, 150, 199),
    ];
    for &(n, l, n2) in cases {
        check_pair(&st(n, l), &st(n2, l - 1));
    }
}

#[test]
fn gordon_scales_with_rational_charge() {
    let z = Rational::from((7, 3));
    for &(n, l, n2) in &[(2i64, 1i64, 1i64), (5, 2, 4), (9, 4, 9), (13, 1, 2)] {
        let a = BoundState::new(n, l, z.clone()).unwrap();
        let b = BoundState::new(n2, l - 1, z.clone()).unwrap();
        let g = radial_dipole(&a, &b).unwrap();
        let d = radial_integral(&a, &b, 1).unwrap();
        assert_eq!(g.square(), d.square());
        let h = gordon_hydrogen(n as u32, l as u32, n2 as u32).unwrap();
        assert_eq!(g.square(), h.square() / Rational::from(&z * &z));
        assert_eq!(radial_dipole_square(&a, &b).unwrap(), g.square());
        assert_eq!(
            gordon_hydrogen_square(n as u32, l as u32, n2 as u32).unwrap(),
            h.square()
        );
    }
}

#[test]
fn closed_form_diagonal_and_lyman_alpha() {
    // <2p|r|1s> = 128 sqrt(6) / 243 bohr  (Bethe & Salpeter 1957, closed form)
    let g = radial_dipole(&st(2, 1), &st(1, 0)).unwrap();
    assert_eq!(g.square(), Rational::from((128 * 128 * 6, 243 * 243)));
    // <n l|r|n l-1> = (3/2) n sqrt(n^2 - l^2)  (Bethe & Salpeter 1957)
    for n in [2i64, 5, 30, 200] {
        for l in [1i64, n / 2, n - 1] {
            if l < 1 {
                continue;
            }
            let g = radial_dipole(&st(n, l), &st(n, l - 1)).unwrap();
            let want = Rational::from((9 * n * n * (n * n - l * l), 4));
            assert_eq!(g.square(), want, "diagonal n={n} l={l}");
            let g2 = radial_dipole_square(&st(n, l), &st(n, l - 1)).unwrap();
            assert_eq!(g2, want, "diagonal square n={n} l={l}");
        }
    }
}

#[test]
fn gauge_identities_exact() {
    // |p| = |dE| |r| and |grad V| = |dE| |p|, exactly, for many pairs.
    let mut pairs = Vec::new();
    for n in 1..=8 {
        for l in 0..n {
            for n2 in 1..=9 {
                for l2 in [l - 1, l + 1] {
                    if l2 >= 0 && l2 < n2 {
                        pairs.push((st(n, l), st(n2, l2)));
                    }
                }
            }
        }
    }
    pairs.push((st(40, 3), st(41, 4)));
    pairs.push((st(60, 0), st(3, 1)));
    let z = Rational::from((5, 2));
    pairs.push((
        BoundState::new(4, 2, z.clone()).unwrap(),
        BoundState::new(7, 1, z).unwrap(),
    ));
    for (a, b) in &pairs {
        let de = transition_energy(a, b);
        let de2 = Rational::from(&de * &de);
        let r2 = dipole_squared(a, b, DipoleForm::Length).unwrap();
        let p2 = dipole_squared(a, b, DipoleForm::Velocity).unwrap();
        let f2 = dipole_squared(a, b, DipoleForm::Acceleration).unwrap();
        assert_eq!(
            p2,
            Rational::from(&de2 * &r2),
            "velocity/length {a:?} {b:?}"
        );
        assert_eq!(
            f2,
            Rational::from(&de2 * &p2),
            "acceleration/velocity {a:?} {b:?}"
        );
        if a.n() == b.n() {
            assert_eq!(p2, 0);
            assert!(r2 > 0);
        }
    }
}

#[test]
fn angular_weights_and_symmetry() {
    // weight (l+1)/(2l+1) up, l/(2l+1) down: (2l+1) |r_{l->l'}|^2 is symmetric
    for (a, b) in [
        (st(3, 1), st(4, 2)),
        (st(5, 4), st(6, 3)),
        (st(2, 0), st(3, 1)),
    ] {
        let ab = dipole_squared(&a, &b, DipoleForm::Length).unwrap();
        let ba = dipole_squared(&b, &a, DipoleForm::Length).unwrap();
        assert_eq!(
            ab * Rational::from(2 * a.l() + 1),
            ba * Rational::from(2 * b.l() + 1)
        );
    }
    let r = radial_amplitude(&st(2, 0), &st(2, 1), DipoleForm::Length).unwrap();
    // <2p|r|2s> = 3 sqrt(3) (magnitude)  (Bethe & Salpeter 1957)
    assert_eq!(r.square(), 27);
    let w = dipole_squared(&st(2, 0), &st(2, 1), DipoleForm::Length).unwrap();
    assert_eq!(w, 27);
    let w = dipole_squared(&st(2, 1), &st(2, 0), DipoleForm::Length).unwrap();
    assert_eq!(w, 9);
}

#[test]
fn bad_input_is_a_typed_error() {
    assert!(matches!(
        dipole_squared(&st(3, 1), &st(4, 1), DipoleForm::Length),
        Err(BasisError::NotDipoleAllowed { .. })
    ));
    assert!(matches!(
        dipole_squared(&st(3, 0), &st(4, 2), DipoleForm::Velocity),
        Err(BasisError::NotDipoleAllowed { .. })
    ));
    assert!(matches!(
        radial_dipole(&st(3, 0), &st(4, 0)),
        Err(BasisError::NotDipoleAllowed { .. })
    ));
    let other = BoundState::new(2, 0, Rational::from(2)).unwrap();
    assert!(matches!(
        dipole_squared(&st(2, 1), &other, DipoleForm::Acceleration),
        Err(BasisError::InvalidArgument(_))
    ));
    assert!(matches!(
        gordon_hydrogen(3, 0, 2),
        Err(BasisError::InvalidState { .. })
    ));
    assert!(matches!(
        gordon_hydrogen(3, 3, 4),
        Err(BasisError::InvalidState { .. })
    ));
    assert!(matches!(
        gordon_hydrogen(3, 2, 1),
        Err(BasisError::InvalidState { .. })
    ));
    assert!(matches!(
        gordon_hydrogen(0, 1, 1),
        Err(BasisError::InvalidState { .. })
    ));
    assert!(matches!(
        radial_dipole_square(&st(3, 0), &st(4, 0)),
        Err(BasisError::NotDipoleAllowed { .. })
    ));
    assert!(matches!(
        radial_dipole_square(&st(2, 1), &other),
        Err(BasisError::InvalidArgument(_))
    ));
    assert!(matches!(
        gordon_hydrogen_square(3, 2, 1),
        Err(BasisError::InvalidState { .. })
    ));
}

/// The square formed without the square root (reduced in pieces) is the
/// canonical rational of the square of the exact surd (reduced by a gcd):
/// coprime parts, positive denominator, equal value. All pairs up to
/// n = 40 (n2 up to 45) and a sample up to n = 400.
#[test]
fn gordon_square_is_the_canonical_square() {
    let check = |n: u32, l: u32, n2: u32| {
        let sq = gordon_hydrogen_square(n, l, n2).unwrap();
        assert_eq!(
            Integer::from(sq.numer().gcd_ref(sq.denom())),
            1,
            "({n}, {l}, {n2})"
        );
        assert!(*sq.denom() > 0);
        assert_eq!(
            sq,
            gordon_hydrogen(n, l, n2).unwrap().square(),
            "({n}, {l}, {n2})"
        );
    };
    for n in 2..=40 {
        for l in 1..n {
            for n2 in l..=45 {
                check(n, l, n2);
            }
        }
    }
    for &(n, l, n2) in &[
        (400, 1, 399),
        (400, 200, 300),
        (397, 3, 250),
        (300, 150, 150),
        (300, 150, 299),
        (250, 1, 1),
        (2, 1, 400),
        (360, 7, 359),
    ] {
        check(n, l, n2);
    }
}
