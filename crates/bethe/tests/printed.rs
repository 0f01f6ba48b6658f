//! The printed-value rule and the significant-digit goal, checked against
//! higher-precision runs of the same methods (the printed decimal must lie
//! within its printed error of the more precise value), and against the
//! published table values of Drake & Swainson, Phys. Rev. A 41, 1243 (1990),
//! as tabulated in the CODATA 2018 adjustment (Tiesinga et al., Rev. Mod.
//! Phys. 93, 025010 (2021)).

use kzero_bethe::value::{format_err, printed};
use kzero_bethe::{green, spectral, BetheError, BetheValue, Gauge, Goal, Settings};
use rug::Float;

fn parse(s: &str) -> Float {
    Float::with_val(1024, Float::parse(s).unwrap())
}

/// |printed - reference| + reference error <= printed error.
fn assert_covers(v: &BetheValue, reference: &BetheValue) {
    let p = v.printed();
    let d = Float::with_val(1024, &parse(&p.value) - &reference.value)
        .abs()
        .to_f64();
    assert!(
        d + reference.abs_err <= p.err,
        "({},{}) {} digits ({}): printed {} +- {} is {d:.3e} from the reference {} +- {:.1e}",
        v.n,
        v.l,
        v.digits,
        v.goal.name(),
        p.value,
        p.abs_err,
        reference.value_string(),
        reference.abs_err
    );
    // the printed error is the estimate plus the rounding, never less
    assert!(p.err >= v.abs_err);
}

#[test]
fn printed_decimals_are_covered_absolute_goal() {
    for (n, l) in [(1, 0), (2, 1), (5, 0), (10, 9), (20, 3)] {
        for d in [5u32, 12, 20, 33] {
            let v = green::ln_k0(n, l, &Settings::with_digits(d)).unwrap();
            let r = green::ln_k0(n, l, &Settings::with_digits(d + 12)).unwrap();
            assert_eq!(v.decimals(), d as usize + 2);
            assert_covers(&v, &r);
        }
    }
}

#[test]
fn printed_decimals_are_covered_spectral() {
    for (n, l) in [(2, 0), (4, 3)] {
        for d in [6u32, 17] {
            for g in [Gauge::Velocity, Gauge::Length, Gauge::Acceleration] {
                let v = spectral::ln_k0(n, l, g, &Settings::with_digits(d)).unwrap();
                let r = green::ln_k0(n, l, &Settings::with_digits(d + 15)).unwrap();
                assert_covers(&v, &r);
            }
        }
    }
}

/// D significant digits: |error| <= 10^-D |value|, D + 2 significant digits
/// printed, and the printed decimal covered by its printed error.
#[test]
fn significant_goal() {
    for (n, l) in [(1, 0), (2, 1), (40, 39), (120, 119)] {
        for d in [5u32, 12, 24] {
            let v = green::ln_k0(n, l, &Settings::significant(d)).unwrap();
            assert_eq!((v.goal, v.digits), (Goal::Significant, d));
            let r = green::ln_k0(n, l, &Settings::significant(d + 12)).unwrap();
            let mag = r.value.to_f64().abs();
            let actual = Float::with_val(1024, &v.value - &r.value).abs().to_f64();
            assert!(
                actual <= 10f64.powi(-(d as i32)) * mag,
                "({n},{l}) {d} significant: off by {actual:e} of {mag:e}"
            );
            assert!(v.abs_err <= 10f64.powi(-(d as i32)) * mag);
            assert_covers(&v, &r);
            // D + 2 significant digits are printed
            let s = v.value_string();
            let sig = s
                .trim_start_matches('-')
                .replace('.', "")
                .trim_start_matches('0')
                .len();
            assert_eq!(sig, d as usize + 2, "({n},{l}) {d}: {s}");
        }
    }
}

/// The significant goal of the spectral method, and the published values
/// through it.
#[test]
fn significant_goal_spectral_published() {
    for (n, l, published) in [
        (1, 0, "2.984128555765498"),  // Drake & Swainson 1990, via CODATA 2018
        (2, 0, "2.811769893120563"),  // Drake & Swainson 1990, via CODATA 2018
        (2, 1, "-0.030016708630213"), // Drake & Swainson 1990, via CODATA 2018
    ] {
        let v = spectral::ln_k0(n, l, Gauge::Length, &Settings::significant(16)).unwrap();
        let d = Float::with_val(256, &v.value - &parse(published))
            .abs()
            .to_f64();
        // the table carries 15 decimals, not always rounded
        assert!(d < 1e-15, "({n},{l}): {}", v.value_string());
        assert!(v.abs_err <= 1e-16 * v.value.to_f64().abs());
    }
}

#[test]
fn significant_goal_out_of_range() {
    assert!(matches!(
        green::ln_k0(2, 1, &Settings::significant(201)),
        Err(BetheError::DigitsOutOfRange {
            option: "--significant",
            ..
        })
    ));
    // a sum that vanishes (sum |p|^2 D = 0 for l > 0) has no significant digits
    assert!(matches!(
        spectral::spectral_sum(
            2,
            1,
            Gauge::Velocity,
            spectral::SpectralWeight::Power(1),
            &Settings::significant(5)
        ),
        Err(BetheError::GoalOutOfReach { .. })
    ));
}

#[test]
fn errors_round_up() {
    assert_eq!(format_err(1.04e-23), "1.1e-23");
    assert_eq!(format_err(1.0e-23), "1.0e-23");
    assert_eq!(format_err(9.91e-5), "1.0e-4");
    assert_eq!(format_err(2.449e-10), "2.5e-10");
    assert_eq!(format_err(0.0), "0");
    for e in [3.0e-27, 4.4e-8, 1.2345e-100, 7.77e-3] {
        assert!(format_err(e).parse::<f64>().unwrap() >= e);
    }
}

/// The rounding is folded in: 2.98412855576549841... at 7 decimals is
/// 2.9841286, 4.44e-8 away, so an estimate of 2.4e-10 prints as 4.5e-8.
#[test]
fn rounding_is_folded_into_the_error() {
    let x = parse("2.98412855576549841");
    let p = printed(&x, 2.4e-10, 7);
    assert_eq!(p.value, "2.9841286");
    assert_eq!(p.abs_err, "4.5e-8");
    let p = printed(&x, 0.0, 17);
    assert_eq!(p.value, "2.98412855576549841");
    // only the binary-to-decimal difference of the 1024-bit input is left
    assert!(p.err < 1e-300);
    let p = printed(&parse("0.125"), 0.0, 3);
    assert_eq!((p.value.as_str(), p.abs_err.as_str()), ("0.125", "0"));
    let p = printed(&parse("-0.5"), 1e-30, 0);
    assert!(p.err >= 0.5);
}

/// The f64 handed on (to the level-shift code) carries an error that covers
/// it: the estimate plus the conversion.
#[test]
fn f64_conversion_is_covered() {
    for (n, l) in [(1, 0), (2, 1), (7, 3)] {
        let v = green::ln_k0(n, l, &Settings::with_digits(25)).unwrap();
        let (x, e) = v.to_f64_with_err();
        let d = Float::with_val(256, &v.value - x).abs().to_f64();
        assert!(d > 0.0 && d + v.abs_err <= e, "({n},{l})");
        assert!(e < 1e-15);
    }
}
