//! Sturmian overlaps at any scale: against the exact matched expansion,
//! against an independent exact rational evaluation (explicit Laguerre sum),
//! against completeness (sum of squared overlaps = int f^2 r dr, exact), and
//! at two working precisions.

use kzero_basis::exact::{binomial, factorial, PolyExp};
use kzero_basis::gradient::{gradient_expansion, gradient_function, Channel};
use kzero_basis::radial::reduced_radial_function;
use kzero_basis::sturmian::{matched_expansion, sturmian_overlap, sturmian_overlaps};
use kzero_basis::{BasisError, BoundState};
use rug::ops::Pow;
use rug::{Float, Rational};

fn st(n: i64, l: i64) -> BoundState {
    BoundState::hydrogen(n, l).unwrap()
}

/// The exact int f^2 r dr as a float.
fn norm2(f: &PolyExp, prec: u32) -> Float {
    f.integral_with(f, 1).unwrap().to_float(prec)
}

fn rel_diff(a: &Float, b: &Float) -> f64 {
    let d = Float::with_val(a.prec(), a - b).abs();
    let m = Float::with_val(a.prec(), b.abs_ref());
    (d / m).to_f64()
}

#[test]
fn matched_scale_agrees_with_exact_expansion() {
    let bits = 200;
    let cases: Vec<(PolyExp, u32, i64)> = vec![
        (reduced_radial_function(&st(3, 1)), 1, 3),
        (gradient_function(&st(4, 1), Channel::Up).unwrap(), 2, 4),
        (gradient_function(&st(4, 1), Channel::Down).unwrap(), 0, 4),
        (gradient_function(&st(7, 0), Channel::Up).unwrap(), 1, 7),
        (gradient_function(&st(12, 5), Channel::Down).unwrap(), 4, 12),
    ];
    for (f, big_l, n) in cases {
        let nu = Float::with_val(bits, n); // 1/kappa = n for Z = 1
                                           // The stored coefficients of matched_expansion already include
                                           // f.scale, so its normalization must be sqrt(f.radicand) alone for
                                           // sum gamma_i^2 = int f^2 r dr. The returned radicand is checked as
                                           // it comes, since a wrong one would reach the Green engine unseen.
        let exact = matched_expansion(&f, big_l).unwrap();
        assert_eq!(exact.radicand, f.radicand, "n={n} L={big_l}: radicand");
        let mut s2 = Float::with_val(bits, 0);
        for k in 0..exact.coef.len() {
            let g = exact.gamma(k, bits);
            s2 += Float::with_val(bits, &g * &g);
        }
        assert!(
            rel_diff(&s2, &norm2(&f, bits)) < 1e-55,
            "matched completeness n={n}"
        );
        let kmax = exact.coef.len() as u32 + 5;
        let got = sturmian_overlaps(&f, big_l, &nu, kmax, bits).unwrap();
        let scale = norm2(&f, bits).sqrt();
        for (k, g) in got.iter().enumerate() {
            let want = if k < exact.coef.len() {
                exact.gamma(k, bits)
            } else {
                Float::with_val(bits, 0)
            };
            let err = Float::with_val(bits, g - &want).abs() / &scale;
            assert!(err.to_f64() < 1e-55, "n={n} L={big_l} k={k}: {g} vs {want}");
        }
    }
}

/// gamma_k by the explicit Laguerre sum, exact in rationals for rational nu:
/// gamma_k = N_k sqrt(rad) scale sum_p c_p (nu/2)^(p+1)
///           sum_i (-1)^i C(k+a, k-i)/i! (s+i)!/beta^(s+i+1),  s = L+1+p.
fn gamma_exact(f: &PolyExp, big_l: u32, k: u32, nu: &Rational, prec: u32) -> Float {
    let a = 2 * big_l + 1;
    let beta = (Rational::from(nu * &f.kappa) + 1u32) / 2u32;
    let half_nu = Rational::from(nu / 2u32);
    let mut sum = Rational::new();
    for (p, c) in f.coeffs.iter().enumerate() {
        if *c == 0 {
            continue;
        }
        let p = p as u32;
        let s = big_l + 1 + p;
        let mut inner = Rational::new();
        for i in 0..=k {
            let mut t = Rational::from((binomial(k + a, k - i) * factorial(s + i), factorial(i)));
            t /= beta.clone().pow(s + i + 1);
            if i % 2 == 1 {
                inner -= t;
            } else {
                inner += t;
            }
        }
        sum += inner * half_nu.clone().pow(p + 1) * c;
    }
    sum *= &f.scale;
    let nk2 = Rational::from((factorial(k), factorial(k + a)));
    let r = Rational::from(&nk2 * &f.radicand);
    Float::with_val(prec, &r).sqrt() * Float::with_val(prec, &sum)
}

#[test]
fn any_scale_agrees_with_explicit_laguerre_sum() {
    let bits = 160;
    let f = gradient_function(&st(5, 2), Channel::Up).unwrap(); // L = 3, kappa = 1/5
    for nu in [
        Rational::from((5, 2)),
        Rational::from((29, 4)),
        Rational::from(13),
    ] {
        let nuf = Float::with_val(bits, &nu);
        let got = sturmian_overlaps(&f, 3, &nuf, 30, bits).unwrap();
        for k in [0u32, 1, 2, 7, 15, 30] {
            let want = gamma_exact(&f, 3, k, &nu, bits + 64);
            let g = &got[k as usize];
            assert!(
                rel_diff(g, &Float::with_val(bits, &want)) < 1e-45,
                "nu={nu} k={k}: {g} vs {want}"
            );
            let single = sturmian_overlap(&f, 3, k, &nuf, bits).unwrap();
            assert_eq!(&single, g);
        }
    }
    let f = reduced_radial_function(&st(6, 1)); // L = 1
    let nu = Rational::from((3, 1));
    let got = sturmian_overlaps(&f, 1, &Float::with_val(bits, &nu), 25, bits).unwrap();
    for k in [0u32, 3, 11, 25] {
        let want = gamma_exact(&f, 1, k, &nu, bits + 64);
        assert!(rel_diff(&got[k as usize], &Float::with_val(bits, &want)) < 1e-45);
    }
}

#[test]
fn completeness_at_other_scales() {
    // sum_k gamma_k^2 = int f^2 r dr (exact) for gradient functions
    let bits = 256;
    for (n, l, ch) in [
        (1i64, 0i64, Channel::Up),
        (2, 0, Channel::Up),
        (2, 1, Channel::Down),
        (3, 1, Channel::Up),
        (6, 2, Channel::Down),
    ] {
        let s = st(n, l);
        let f = gradient_function(&s, ch).unwrap();
        let big_l = ch.big_l(l as u32);
        let exact = norm2(&f, bits);
        for factor in [0.6f64, 1.7] {
            let nu = Float::with_val(bits, factor * n as f64);
            let rho = ((1.0 - factor) / (1.0 + factor)).abs();
            // terms fall like k^(2D) rho^(2k): enough k for 2^-200
            let kmax = (140.0 / -rho.log10()) as u32 + 60;
            let g = sturmian_overlaps(&f, big_l, &nu, kmax, bits).unwrap();
            let mut sum = Float::with_val(bits, 0);
            for x in &g {
                sum += Float::with_val(bits, x * x);
            }
            let rd = rel_diff(&sum, &exact);
            assert!(
                rd < 1e-60,
                "n={n} l={l} {ch:?} nu={factor}n: rel diff {rd:e}"
            );
            // partial sums approach from below and the tail is small
            let last = g.last().unwrap().to_f64().abs();
            assert!(last < 1e-70 * exact.to_f64().sqrt());
        }
    }
}

#[test]
fn two_precisions_agree_at_large_n() {
    // strong cancellation: n = 40 gradient function at nu far from 1/kappa
    let f = gradient_function(&st(40, 0), Channel::Up).unwrap();
    let nu = Float::with_val(300, 17.25);
    let lo = sturmian_overlaps(&f, 1, &nu, 200, 64).unwrap();
    let hi = sturmian_overlaps(&f, 1, &nu, 200, 256).unwrap();
    let scale = norm2(&f, 256).sqrt();
    for k in 0..=200 {
        let err = Float::with_val(256, &lo[k] - &hi[k]).abs() / &scale;
        assert!(err.to_f64() < 2e-18, "k={k}: {} vs {}", lo[k], hi[k]);
    }
    // completeness for the same function at a scale where the series converges
    let nu = Float::with_val(256, 31.5);
    let g = sturmian_overlaps(&f, 1, &nu, 900, 128).unwrap();
    let mut sum = Float::with_val(256, 0);
    for x in &g {
        sum += Float::with_val(256, x * x);
    }
    let rd = rel_diff(&sum, &norm2(&f, 256));
    assert!(rd < 1e-30, "completeness n=40: {rd:e}");
}

#[test]
fn bad_input_is_a_typed_error() {
    let f = gradient_function(&st(3, 1), Channel::Up).unwrap();
    let nu = Float::with_val(64, 2);
    assert!(matches!(
        sturmian_overlaps(&f, 2, &nu, 5, 52),
        Err(BasisError::PrecisionTooLow { bits: 52, .. })
    ));
    for bad in [0.0, -1.0, f64::NAN, f64::INFINITY] {
        assert!(matches!(
            sturmian_overlaps(&f, 2, &Float::with_val(64, bad), 5, 64),
            Err(BasisError::InvalidArgument(_))
        ));
    }
    assert!(matches!(
        sturmian_overlaps(&f, 2, &nu, 5, (1 << 20) + 1),
        Err(BasisError::InvalidArgument(_))
    ));
    // r^2 at the origin cannot be expanded in L = 3 Sturmians this way
    assert!(matches!(
        sturmian_overlaps(&f, 3, &nu, 5, 64),
        Err(BasisError::InvalidArgument(_))
    ));
}

#[test]
fn n200_two_precisions_and_completeness() {
    // the largest n of the engine: 200s, L = 1 channel, at nu = 0.5 n
    let f = gradient_function(&st(200, 0), Channel::Up).unwrap();
    let nu = Float::with_val(64, 100);
    let kmax = 700;
    let lo = sturmian_overlaps(&f, 1, &nu, kmax, 64).unwrap();
    let hi = sturmian_overlaps(&f, 1, &nu, kmax, 160).unwrap();
    let n2 = norm2(&f, 160);
    let scale = Float::with_val(160, n2.sqrt_ref());
    let mut sum = Float::with_val(160, 0);
    for k in 0..=kmax as usize {
        let err = Float::with_val(160, &lo[k] - &hi[k]).abs() / &scale;
        assert!(err.to_f64() < 2e-18, "k={k}: {} vs {}", lo[k], hi[k]);
        sum += Float::with_val(160, &hi[k] * &hi[k]);
    }
    let rd = rel_diff(&sum, &n2);
    assert!(rd < 1e-40, "completeness n=200: {rd:e}");
}

/// The expansion of g_L formed in integers is the same exact expansion as
/// the one of the polynomial g_L: all states up to n = 25, both channels,
/// a rational charge, and a few large n.
#[test]
fn gradient_expansion_equals_expansion_of_gradient() {
    let check = |s: &BoundState| {
        for ch in Channel::open(s.l()) {
            let want =
                matched_expansion(&gradient_function(s, ch).unwrap(), ch.big_l(s.l())).unwrap();
            let got = gradient_expansion(s, ch).unwrap();
            assert_eq!(got, want, "n = {}, l = {}, {ch:?}", s.n(), s.l());
        }
    };
    for n in 1..=25 {
        for l in 0..n {
            check(&st(n, l));
        }
    }
    for &(n, l) in &[(200i64, 0i64), (200, 1), (200, 20), (200, 199), (150, 75)] {
        check(&st(n, l));
    }
    for &(n, l) in &[(1i64, 0i64), (5, 2), (9, 4), (13, 1)] {
        check(&BoundState::new(n, l, Rational::from((7, 3))).unwrap());
    }
    assert!(matches!(
        gradient_expansion(&st(3, 0), Channel::Down),
        Err(BasisError::InvalidArgument(_))
    ));
}
