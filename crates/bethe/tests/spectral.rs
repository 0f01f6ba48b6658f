//! Checks of the spectral-sum method `kzero_bethe::spectral`.
//!
//! Reference values: Drake & Swainson, Phys. Rev. A 41, 1243 (1990), as
//! tabulated in the CODATA 2018 adjustment (Tiesinga et al., Rev. Mod. Phys.
//! 93, 025010 (2021)). Sum rules: <p^2> = Z^2/n^2 (virial theorem),
//! sum |p|^2 D = 2 pi Z |psi(0)|^2 = 2Z^4/n^3 delta_l0, and the
//! Thomas-Reiche-Kuhn sum rule sum f = 1 (all common practice).

use kzero_bethe::spectral::{cost_estimate, ln_k0, spectral_sum, SpectralWeight};
use kzero_bethe::{BetheError, Gauge, Method, Settings};
use rug::Float;

const GAUGES: [Gauge; 3] = [Gauge::Velocity, Gauge::Length, Gauge::Acceleration];

fn f(s: &str) -> Float {
    Float::with_val(256, Float::parse(s).unwrap())
}

fn diff(a: &Float, b: &Float) -> f64 {
    Float::with_val(256, a - b).abs().to_f64()
}

/// Published values, matched to all 15 published decimals (the table's last
/// digit is not always rounded, hence |difference| < 1e-15).
#[test]
fn published_values() {
    let table = [
        // Drake & Swainson (1990), via CODATA 2018 (Tiesinga et al. 2021)
        (1, 0, "2.984128555765498"),
        // Drake & Swainson (1990), via CODATA 2018 (Tiesinga et al. 2021)
        (2, 0, "2.811769893120563"),
        // Drake & Swainson (1990), via CODATA 2018 (Tiesinga et al. 2021)
        (2, 1, "-0.030016708630213"),
    ];
    let settings = Settings::with_digits(20);
    for (n, l, want) in table {
        let v = ln_k0(n, l, Gauge::Velocity, &settings).unwrap();
        assert_eq!(v.method, Method::Spectral);
        assert_eq!((v.n, v.l, v.digits), (n as u32, l as u32, 20));
        assert!(v.abs_err < 1e-20, "({n},{l}) estimate {}", v.abs_err);
        let d = diff(&v.value, &f(want));
        assert!(d < 1e-15, "({n},{l}): {} vs {want}", v.value_string());
    }
}

/// Further n = 3 and 4 entries of the same table, recalled from memory, held
/// to the table's own precision (15 decimals, last digit not always rounded,
/// hence |difference| < 1e-15 as for `published_values`).
#[test]
fn more_table_values_from_memory() {
    let table = [
        (3, 0, "2.767663612491822"),  // from memory (CODATA 2018 table)
        (3, 1, "-0.038190229385312"), // from memory (CODATA 2018 table)
        (3, 2, "-0.005232148140883"), // from memory (CODATA 2018 table)
        (4, 1, "-0.041954894598086"), // from memory (CODATA 2018 table)
        (4, 2, "-0.006740938876975"), // from memory (CODATA 2018 table)
        (4, 3, "-0.001733661482126"), // from memory (CODATA 2018 table)
    ];
    let settings = Settings::with_digits(18);
    for (n, l, want) in table {
        let v = ln_k0(n, l, Gauge::Length, &settings).unwrap();
        let d = diff(&v.value, &f(want));
        assert!(d < 1e-15, "({n},{l}): {} vs {want}", v.value_string());
    }
}

/// The three forms agree within their error estimates.
#[test]
fn gauges_agree() {
    let settings = Settings::with_digits(22);
    for (n, l) in [(1, 0), (2, 1), (3, 2), (5, 0), (6, 4)] {
        let vals: Vec<_> = GAUGES
            .iter()
            .map(|g| ln_k0(n, l, *g, &settings).unwrap())
            .collect();
        for i in 0..3 {
            for j in i + 1..3 {
                let d = diff(&vals[i].value, &vals[j].value);
                let tol = vals[i].abs_err + vals[j].abs_err;
                assert!(
                    d <= tol && tol < 2e-22,
                    "({n},{l}) {} vs {}: diff {d:e}, estimates {tol:e}",
                    GAUGES[i].name(),
                    GAUGES[j].name()
                );
            }
        }
    }
}

/// Sum rules recomputed through the spectral machinery (bound sum, Rydberg
/// tail and continuum integral), to 20 digits, in all three forms.
#[test]
fn sum_rules_through_the_spectrum() {
    let settings = Settings::with_digits(20);
    for (n, l) in [(1i64, 0i64), (2, 0), (2, 1), (3, 2), (12, 0), (12, 5)] {
        let n3 = (n * n * n) as f64;
        for g in GAUGES {
            // <p^2> = Z^2/n^2 (virial theorem)
            let p2 = spectral_sum(n, l, g, SpectralWeight::Power(0), &settings).unwrap();
            let want = Float::with_val(256, 1) / (n * n) as u32;
            assert!(
                diff(&p2.value, &want) < 1e-20,
                "<p^2> ({n},{l}) {}",
                g.name()
            );
            // sum |p|^2 D = 2 Z^4/n^3 for S states, 0 otherwise
            let d1 = spectral_sum(n, l, g, SpectralWeight::Power(1), &settings).unwrap();
            let want = if l == 0 {
                Float::with_val(256, 2) / n3
            } else {
                Float::with_val(256, 0)
            };
            assert!(
                diff(&d1.value, &want) < 1e-20,
                "sum p^2 D ({n},{l}) {}",
                g.name()
            );
            // Thomas-Reiche-Kuhn: (2/3) sum |p|^2 / D = 1 (emission negative)
            let trk = spectral_sum(n, l, g, SpectralWeight::Power(-1), &settings).unwrap();
            let fsum = Float::with_val(256, &trk.value * 2u32) / 3u32;
            assert!(
                diff(&fsum, &Float::with_val(256, 1)) < 1e-18,
                "TRK ({n},{l}) {}: {fsum}",
                g.name()
            );
            // each piece is really there
            assert!(trk.bound != 0 && trk.tail != 0 && trk.continuum != 0);
        }
    }
}

/// The estimated error of a D = 20 run covers its difference from a D = 30
/// run (and the D = 30 estimate is below 1e-30).
#[test]
fn error_estimate_covers_refinement() {
    for (n, l) in [(2, 0), (3, 1), (15, 0), (9, 8)] {
        let a = ln_k0(n, l, Gauge::Velocity, &Settings::with_digits(20)).unwrap();
        let b = ln_k0(n, l, Gauge::Velocity, &Settings::with_digits(30)).unwrap();
        assert!(b.abs_err < 1e-30);
        let d = diff(&a.value, &b.value);
        assert!(
            d <= a.abs_err + b.abs_err && a.abs_err < 1e-20,
            "({n},{l}): |D20 - D30| = {d:e}, estimate {:e}",
            a.abs_err
        );
    }
}

/// |spectral - green| for the same state and digits, checked against both
/// error estimates and the goal. The Green's-function method shares only
/// the exact basis functions with the spectral sum, so this is the
/// independent value for states beyond the published table.
fn assert_matches_green(v: &kzero_bethe::BetheValue, n: i64, l: i64, digits: u32) {
    let g = kzero_bethe::green::ln_k0(n, l, &Settings::with_digits(digits)).unwrap();
    let d = diff(&v.value, &g.value);
    let goal = 10f64.powi(-(digits as i32));
    assert!(
        d <= v.abs_err + g.abs_err && d < goal,
        "({n},{l}) at {digits} digits: spectral {} green {} (diff {d:e}, estimates {:e} + {:e})",
        v.value_string(),
        g.value_string(),
        v.abs_err,
        g.abs_err
    );
}

/// Larger n: a spread of states stays within the goal and agrees with the
/// Green's-function method to it, and S states approach their finite limit
/// from above (values decrease with n).
#[test]
fn larger_n() {
    let s = Settings::with_digits(20);
    let a = ln_k0(30, 0, Gauge::Velocity, &s).unwrap();
    let b = ln_k0(40, 0, Gauge::Length, &s).unwrap();
    assert!(a.abs_err < 1e-20 && b.abs_err < 1e-20);
    assert!(a.value > b.value && b.value > 2.7 && a.value < 2.75);
    assert_matches_green(&a, 30, 0, 20);
    assert_matches_green(&b, 40, 0, 20);
    // above n = 60 the velocity form uses the MPFR closed form for its bound
    // terms, the length form Gordon's exact formula: they must agree
    let v = ln_k0(80, 1, Gauge::Velocity, &s).unwrap();
    let w = ln_k0(80, 1, Gauge::Length, &s).unwrap();
    assert!(diff(&v.value, &w.value) <= v.abs_err + w.abs_err);
    assert!(v.abs_err < 1e-20 && w.abs_err < 1e-20);
    assert_matches_green(&v, 80, 1, 20);
    let c = ln_k0(40, 39, Gauge::Acceleration, &s).unwrap();
    assert!(c.abs_err < 1e-20 && c.value < 0 && c.value > -1e-3);
    assert_matches_green(&c, 40, 39, 20);
}

/// The extremes of the accepted digits range work (5 digits: the working
/// precision must not fall below MPFR's 53-bit floor; 60 digits: the value,
/// not only its estimate, is right, by the Green's-function method).
#[test]
fn digits_range_ends() {
    for d in [5u32, 6] {
        let v = ln_k0(1, 0, Gauge::Velocity, &Settings::with_digits(d)).unwrap();
        // Drake & Swainson (1990), via CODATA 2018 (Tiesinga et al. 2021)
        assert!(diff(&v.value, &f("2.984128555765498")) < 10f64.powi(-(d as i32)));
        assert!(v.abs_err < 10f64.powi(-(d as i32)));
    }
    let v = ln_k0(2, 1, Gauge::Length, &Settings::with_digits(60)).unwrap();
    assert!(v.abs_err < 1e-60);
    // Drake & Swainson (1990), via CODATA 2018 (Tiesinga et al. 2021)
    assert!(diff(&v.value, &f("-0.030016708630213")) < 1e-15);
    assert_matches_green(&v, 2, 1, 60);
}

#[test]
fn bad_input_is_a_typed_error() {
    let s = Settings::default();
    assert!(matches!(
        ln_k0(0, 0, Gauge::Velocity, &s),
        Err(BetheError::InvalidState { .. })
    ));
    assert!(matches!(
        ln_k0(3, 3, Gauge::Length, &s),
        Err(BetheError::InvalidState { .. })
    ));
    assert!(matches!(
        ln_k0(3, -1, Gauge::Length, &s),
        Err(BetheError::InvalidState { .. })
    ));
    assert!(matches!(
        ln_k0(1001, 0, Gauge::Velocity, &s),
        Err(BetheError::OutOfRange { .. })
    ));
    assert!(matches!(
        ln_k0(2, 0, Gauge::Velocity, &Settings::with_digits(2)),
        Err(BetheError::DigitsOutOfRange { .. })
    ));
}

#[test]
fn cost_grows_with_n_and_digits() {
    assert!(cost_estimate(20, 0, 20) > cost_estimate(2, 0, 20));
    assert!(cost_estimate(100, 1, 20) > cost_estimate(20, 0, 20));
    assert!(cost_estimate(20, 0, 40) > cost_estimate(20, 0, 20));
    assert!(cost_estimate(5, 1, 20) > cost_estimate(5, 0, 20));
}

/// The three forms are independent computations: not bit-identical, with
/// their own nodes and terms, and each within its own estimate of a more
/// precise Green's-function value (an independent method).
#[test]
fn forms_are_independent_paths() {
    use kzero_bethe::spectral::ln_k0_all_forms;
    for (n, l) in [(3, 1), (5, 0), (20, 3)] {
        let c = ln_k0_all_forms(n, l, &Settings::with_digits(20)).unwrap();
        let reference = kzero_bethe::green::ln_k0(n, l, &Settings::with_digits(32)).unwrap();
        assert!(c.consistent, "({n},{l}) forms disagree");
        assert!(c.spread > 0, "({n},{l}) forms bit-identical");
        let (v, len, acc) = (&c.values[0], &c.values[1], &c.values[2]);
        assert_eq!(
            (v.method, len.method, acc.method),
            (Method::Spectral, Method::Spectral, Method::Spectral)
        );
        assert!(v.nodes != len.nodes || v.terms != len.terms);
        assert!(v.terms != acc.terms);
        for (g, x) in Gauge::ALL.iter().zip(&c.values) {
            let d = diff(&x.value, &reference.value);
            assert!(
                d <= x.abs_err + reference.abs_err,
                "({n},{l}) {}: off by {d:e}, estimate {:e}",
                g.name(),
                x.abs_err
            );
        }
        assert!(c.spread_f64() <= 2.0 * c.values.iter().map(|x| x.abs_err).fold(0.0, f64::max));
    }
}
