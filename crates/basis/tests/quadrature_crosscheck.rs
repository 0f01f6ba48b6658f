//! Exact radial integrals against an independent double-precision
//! evaluation: hydrogenic radial functions coded here from the textbook
//! formula in f64 (Laguerre recurrence, log-factorial normalization) and
//! integrated with generalized Gauss-Laguerre quadrature from the gauss-quad
//! crate (a general-purpose reference library).

use gauss_quad::laguerre::GaussLaguerre;
use gauss_quad::FiniteAboveNegOneF64;
use kzero_basis::gordon::radial_dipole;
use kzero_basis::radial::radial_integral;
use kzero_basis::BoundState;
use std::num::NonZeroUsize;

fn ln_fact(k: u32) -> f64 {
    (2..=k).map(|i| f64::from(i).ln()).sum()
}

/// Generalized Laguerre L_m^(a)(x) by the three-term recurrence.
fn laguerre(m: u32, a: f64, x: f64) -> f64 {
    let (mut p0, mut p1) = (1.0, 1.0 + a - x);
    if m == 0 {
        return p0;
    }
    for j in 1..m {
        let j = f64::from(j);
        let p2 = ((2.0 * j + 1.0 + a - x) * p1 - (j + a) * p0) / (j + 1.0);
        p0 = p1;
        p1 = p2;
    }
    p1
}

/// R_nl(r) / r^l / exp(-r/n) for Z = 1: N (2/n)^l L_{n-l-1}^{(2l+1)}(2r/n).
fn radial_poly(n: u32, l: u32, r: f64) -> f64 {
    let nf = f64::from(n);
    let ln_n2 = 3.0 * (2.0 / nf).ln() + ln_fact(n - l - 1) - (2.0 * nf).ln() - ln_fact(n + l);
    let norm = (0.5 * ln_n2).exp() * (2.0 / nf).powi(l as i32);
    norm * laguerre(n - l - 1, f64::from(2 * l + 1), 2.0 * r / nf)
}

/// (int R_a R_b r^(2+k) dr, int |R_a R_b| r^(2+k) dr) by Gauss-Laguerre with
/// weight x^alpha e^-x, alpha = l_a + l_b + 2 + k.
///
/// Small cases (`damped` false): x = (1/n_a + 1/n_b) r, the rest of the
/// integrand is a polynomial and just enough nodes make the rule exact.
/// Large cases (`damped` true): x = (1/n_a + 1/n_b) r / 2, half of the
/// exponential stays in the integrand and damps it where the far nodes sit
/// (the Golub-Welsch weights there have only absolute accuracy, which costs
/// digits when the integrand grows like a high power of x); 120 nodes.
fn quad(a: (u32, u32), b: (u32, u32), k: i32, damped: bool) -> (f64, f64) {
    let lam = 1.0 / f64::from(a.0) + 1.0 / f64::from(b.0);
    let alpha = f64::from(a.1 + b.1) + 2.0 + f64::from(k);
    let deg = (a.0 - a.1 - 1) + (b.0 - b.1 - 1);
    let (c, nodes) = if damped {
        (lam / 2.0, 120)
    } else {
        (lam, deg as usize / 2 + 2)
    };
    let rule = GaussLaguerre::new(
        NonZeroUsize::new(nodes).unwrap(),
        FiniteAboveNegOneF64::new(alpha).unwrap(),
    );
    let scale = c.powf(-(alpha + 1.0));
    let g = |x: f64| {
        let r = x / c;
        let damp = if damped { (-x).exp() } else { 1.0 };
        radial_poly(a.0, a.1, r) * radial_poly(b.0, b.1, r) * damp
    };
    let v = rule.integrate(g);
    let m = rule.integrate(|x| g(x).abs());
    (v * scale, m * scale)
}

/// ((n_a, l_a), (n_b, l_b), power k)
type Case = ((u32, u32), (u32, u32), i32);

#[test]
fn exact_integrals_match_gauss_laguerre() {
    let cases: &[Case] = &[
        ((1, 0), (2, 1), 1),
        ((2, 0), (2, 1), 1),
        ((3, 2), (3, 2), -2),
        ((4, 1), (7, 0), 1),
        ((10, 3), (12, 4), 1),
        ((10, 0), (10, 0), 2),
        ((15, 0), (15, 0), -1),
        ((15, 0), (15, 0), -2),
        ((12, 2), (16, 2), 0),
        ((14, 6), (19, 5), 1),
        ((17, 7), (20, 8), -2),
        ((18, 4), (20, 5), 1),
        ((19, 0), (20, 1), 1),
        ((20, 1), (20, 0), 1),
        ((20, 10), (20, 10), 3),
        ((20, 19), (20, 19), -3),
    ];
    for &(a, b, k) in cases {
        let sa = BoundState::hydrogen(i64::from(a.0), i64::from(a.1)).unwrap();
        let sb = BoundState::hydrogen(i64::from(b.0), i64::from(b.1)).unwrap();
        let exact = radial_integral(&sa, &sb, k).unwrap().to_float(53).to_f64();
        let damped = a.0.max(b.0) > 12;
        let (q, majorant) = quad(a, b, k, damped);
        let err = (exact - q).abs();
        assert!(
            err <= 1e-10 * majorant,
            "<{a:?}| r^{k} |{b:?}>: exact {exact:e}, quadrature {q:e}, |diff| {err:e}, majorant {majorant:e}"
        );
        if k == 1 && a.1.abs_diff(b.1) == 1 {
            let g = radial_dipole(&sa, &sb).unwrap().to_float(53).to_f64();
            assert!((g - q).abs() <= 1e-10 * majorant, "Gordon {a:?} {b:?}");
        }
    }
}
