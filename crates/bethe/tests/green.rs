//! Outside checks of the Green's-function method (`kzero_bethe::green`).

use kzero_bethe::{green, BetheError, Settings};
use rug::Float;

fn value(n: i64, l: i64, digits: u32) -> kzero_bethe::BetheValue {
    green::ln_k0(n, l, &Settings::with_digits(digits))
        .unwrap_or_else(|e| panic!("({n},{l}) at {digits} digits: {e}"))
}

fn diff(a: &Float, b: &Float) -> f64 {
    Float::with_val(a.prec().max(b.prec()), a - b)
        .abs()
        .to_f64()
}

/// Drake & Swainson, Phys. Rev. A 41, 1243 (1990), as tabulated in the CODATA
/// 2018 adjustment (Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)).
/// The table's last digit is not always rounded: |difference| < 1e-15.
#[test]
fn published_values_n1_n2() {
    for (n, l, published) in [
        (1, 0, "2.984128555765498"),  // Drake & Swainson 1990, via CODATA 2018
        (2, 0, "2.811769893120563"),  // Drake & Swainson 1990, via CODATA 2018
        (2, 1, "-0.030016708630213"), // Drake & Swainson 1990, via CODATA 2018
    ] {
        let r = value(n, l, 20);
        let p = Float::with_val(128, Float::parse(published).unwrap());
        let d = diff(&r.value, &p);
        assert!(d < 1e-15, "({n},{l}): {} vs {published}", r.value_string());
        assert!(r.abs_err < 1e-20);
    }
}

/// Bethe, Brown & Stehn, Phys. Rev. 77, 370 (1950): the 2s mean excitation
/// energy is 16.646(7) Ry, i.e. exp(ln k0(2,0)) lies in [16.639, 16.653].
#[test]
fn mean_excitation_energy_2s() {
    let r = value(2, 0, 10);
    let k0 = r.value.to_f64().exp();
    // 16.646(7) Ry: Bethe, Brown & Stehn, Phys. Rev. 77, 370 (1950)
    assert!((16.639..=16.653).contains(&k0), "k0(2s) = {k0} Ry");
}

/// The error estimate of a 20-digit run covers its difference from a 40-digit
/// run, over a spread of states (self-consistency; the 40-digit run stands in
/// for the exact value).
#[test]
fn error_estimate_covers_higher_precision() {
    let states = [
        (1, 0),
        (2, 1),
        (20, 0),
        (50, 3),
        // first-panel rounding once stalled the node refinement here
        (100, 16),
        (200, 0),
        (200, 1),
        (200, 199),
        // the backward route normalized by the generating-function identity
        // (no m(a)) at many nodes: large L, a of either sign
        (200, 100),
        // and at small L, above nu = L + 1
        (20, 0),
        (60, 30),
        // the panels in u: one, two and three of them past the first panel
        // (the u-length, about 2 ln n + 0.7, crosses 4 between n = 5 and 6
        // and 8 between n = 38 and 39)
        (5, 2),
        (6, 2),
        (38, 10),
        (39, 10),
        // and a state whose small-nu panels run at the highest precision
        // (the forward loss of the second-kind functions at mid l)
        (200, 30),
    ];
    for (n, l) in states {
        let lo = value(n, l, 20);
        let hi = value(n, l, 40);
        let d = diff(&lo.value, &hi.value);
        assert!(
            d <= lo.abs_err,
            "({n},{l}): |v20 - v40| = {d:e} exceeds the estimate {:e}",
            lo.abs_err
        );
        assert!(lo.abs_err < 1e-20 && hi.abs_err < 1e-40);
    }
}

/// Shape (common practice, noted in docs/physics.md, section 1): S-state values lie
/// between 2.7 and 3.0 and decrease with n toward a finite limit, with
/// shrinking steps; l > 0 values are small, negative, and shrink in size with l.
#[test]
fn physical_shape() {
    let s: Vec<f64> = (1..=8).map(|n| value(n, 0, 12).value.to_f64()).collect();
    for w in s.windows(2) {
        assert!(w[1] < w[0], "ln k0(n,0) not decreasing: {s:?}");
    }
    for w in s.windows(3) {
        assert!(w[0] - w[1] > w[1] - w[2], "steps not shrinking: {s:?}");
    }
    assert!(s.iter().all(|v| (2.7..3.0).contains(v))); // common practice (docs/physics.md, section 1)
    let far = value(40, 0, 12).value.to_f64();
    assert!(far < s[7] && far > 2.7, "ln k0(40,0) = {far}");
    let n = 10;
    let p: Vec<f64> = (1..n).map(|l| value(n, l, 12).value.to_f64()).collect();
    assert!(p.iter().all(|v| *v < 0.0), "{p:?}");
    for w in p.windows(2) {
        assert!(
            w[1].abs() < w[0].abs(),
            "|ln k0(10,l)| not shrinking: {p:?}"
        );
    }
}

#[test]
fn bad_input_is_a_typed_error() {
    let s = Settings::default();
    assert!(matches!(
        green::ln_k0(0, 0, &s),
        Err(BetheError::InvalidState { .. })
    ));
    assert!(matches!(
        green::ln_k0(3, 3, &s),
        Err(BetheError::InvalidState { .. })
    ));
    assert!(matches!(
        green::ln_k0(3, -1, &s),
        Err(BetheError::InvalidState { .. })
    ));
    assert!(matches!(
        green::ln_k0(1001, 0, &s),
        Err(BetheError::OutOfRange { max: 1000, .. })
    ));
    for d in [4, 201] {
        assert!(matches!(
            green::ln_k0(1, 0, &Settings::with_digits(d)),
            Err(BetheError::DigitsOutOfRange { .. })
        ));
    }
}
