//! Checks of the energy-normalized Coulomb continuum and the closed-form
//! bound-free integrals of `kzero_basis::continuum`.
//!
//! Outside references: the exact bound-bound radial integrals (polynomial x
//! exponential integrals, `radial::radial_integral`), the commutator
//! identities p = i[H, r] and grad V = i[H, p] (common practice), the
//! Gauss-Laguerre rule of the gauss-quad crate (an independent
//! general-purpose library) and the large-r amplitude sqrt(2/(pi k)) of an
//! energy-normalized radial function (common practice).

use gauss_quad::GaussLaguerre;
use kzero_basis::continuum::{continuum_function, BoundFreeKernel, DipoleForm, LossHint};
use kzero_basis::gradient::{gradient_function, Channel};
use kzero_basis::radial::{radial_integral, reduced_radial_function};
use kzero_basis::{BasisError, BoundState};
use rug::{Float, Rational};

const P: u32 = 256;

fn exact(m: &BoundState, s: &BoundState, ch: Channel, form: DipoleForm) -> Float {
    match form {
        DipoleForm::Length => radial_integral(m, s, 1).unwrap().to_float(P),
        DipoleForm::Velocity => reduced_radial_function(m)
            .integral_with(&gradient_function(s, ch).unwrap(), 0)
            .unwrap()
            .to_float(P),
        DipoleForm::Acceleration => {
            let v = radial_integral(m, s, -2).unwrap().to_float(P);
            v * Float::with_val(P, s.z())
        }
    }
}

const FORMS: [DipoleForm; 3] = [
    DipoleForm::Length,
    DipoleForm::Velocity,
    DipoleForm::Acceleration,
];

fn rel(a: &Float, b: &Float) -> f64 {
    let d = Float::with_val(P, a - b).abs();
    let s = Float::with_val(P, a.abs_ref()).max(&Float::with_val(P, b.abs_ref()));
    (d / s).to_f64()
}

/// The continued closed form at integer nu = n' reproduces
/// sqrt(n'^3/Z^2) times the exact bound-bound integral, in all three forms.
#[test]
fn continuation_matches_exact_bound_bound() {
    let cases: &[(i64, i64, i64, i64)] = &[
        // (n, l, Z numerator, Z denominator)
        (1, 0, 1, 1),
        (2, 1, 1, 1),
        (3, 2, 2, 1),
        (5, 0, 3, 2),
        (20, 7, 1, 1),
        (60, 1, 1, 1),
    ];
    for &(n, l, zn, zd) in cases {
        let z = Rational::from((zn, zd));
        let s = BoundState::new(n, l, z.clone()).unwrap();
        for ch in Channel::open(l as u32) {
            let big_l = ch.big_l(l as u32) as i64;
            for form in FORMS {
                let k = BoundFreeKernel::new(&s, ch, form).unwrap();
                for np in [n + 1, n + 3, 2 * n + 5] {
                    let m = BoundState::new(np, big_l, z.clone()).unwrap();
                    let ex = exact(&m, &s, ch, form);
                    // sqrt(n'^3 / Z^2)
                    let sc = Float::with_val(
                        P,
                        &Rational::from((np * np * np, 1)) / Rational::from(&z * &z),
                    )
                    .sqrt();
                    let want = ex * sc;
                    let got = k.bound_continued(&Float::with_val(P, np), P).unwrap().value;
                    assert!(
                        rel(&want, &got) < 1e-70,
                        "({n},{l}) Z={zn}/{zd} L={big_l} {form:?} n'={np}: {want} vs {got}"
                    );
                }
            }
        }
    }
}

/// The integer-n' closed form (below and above n) against the exact
/// integrals, including n' < n where 1 - z < 0.
#[test]
fn bound_bound_closed_form_matches_exact() {
    for &(n, l) in &[(4i64, 1i64), (12, 0), (40, 6)] {
        let s = BoundState::hydrogen(n, l).unwrap();
        for ch in Channel::open(l as u32) {
            let big_l = ch.big_l(l as u32) as i64;
            for form in FORMS {
                let k = BoundFreeKernel::new(&s, ch, form).unwrap();
                for np in [big_l + 1, n - 1, n + 1, n + 7] {
                    if np <= big_l || np == n {
                        continue;
                    }
                    let m = BoundState::hydrogen(np, big_l).unwrap();
                    let sc = Float::with_val(P, np * np * np).sqrt();
                    let want = exact(&m, &s, ch, form) * sc;
                    let got = k.bound_bound(np as u32, P).unwrap().value;
                    assert!(
                        rel(&want, &got) < 1e-70,
                        "({n},{l}) L={big_l} {form:?} n'={np}: {want} vs {got}"
                    );
                }
                assert!(k.bound_bound(n as u32, P).is_err());
            }
        }
    }
}

/// p = i[H, r] and grad V = i[H, p]: in the continuum, velocity = -D length
/// and acceleration = -D velocity (D = E - E_n), to the working precision,
/// from near threshold to very high energy.
#[test]
fn three_forms_agree_in_the_continuum() {
    let states: &[(i64, i64)] = &[(1, 0), (2, 1), (4, 3), (9, 0), (30, 2)];
    let energies = ["1e-12", "3e-3", "0.5", "40", "1e6", "1e15"];
    for &(n, l) in states {
        let s = BoundState::hydrogen(n, l).unwrap();
        let en = Float::with_val(P, &s.energy());
        for ch in Channel::open(l as u32) {
            let ks: Vec<BoundFreeKernel> = FORMS
                .iter()
                .map(|f| BoundFreeKernel::new(&s, ch, *f).unwrap())
                .collect();
            for e in energies {
                let ef = Float::with_val(P, Float::parse(e).unwrap());
                let d = Float::with_val(P, &ef - &en);
                let v: Vec<Float> = ks
                    .iter()
                    .map(|k| k.continuum(&ef, P).unwrap().value)
                    .collect();
                let lv = -Float::with_val(P, &v[0] * &d);
                let va = -Float::with_val(P, &v[1] * &d);
                assert!(rel(&lv, &v[1]) < 1e-60, "({n},{l}) E={e} length/velocity");
                assert!(rel(&va, &v[2]) < 1e-60, "({n},{l}) E={e} velocity/accel");
            }
        }
    }
}

/// Threshold: n'^3 |<n' L|r|n l>|^2 -> |<E=0 L|r|n l>|^2, with the 1/n'^2
/// approach of a smooth density; the continuum side joins from above.
#[test]
fn rydberg_series_joins_the_continuum() {
    for &(n, l) in &[(1i64, 0i64), (2, 1), (3, 0)] {
        let s = BoundState::hydrogen(n, l).unwrap();
        for ch in Channel::open(l as u32) {
            let big_l = ch.big_l(l as u32) as i64;
            let k = BoundFreeKernel::new(&s, ch, DipoleForm::Length).unwrap();
            let zero = Float::with_val(P, 0);
            let at0 = Float::with_val(P, k.continuum(&zero, P).unwrap().value.square_ref());
            let mut scaled = Vec::new();
            for np in [100i64, 200, 400] {
                let m = BoundState::hydrogen(np, big_l).unwrap();
                let ex = radial_integral(&m, &s, 1).unwrap().square();
                let dens = Float::with_val(P, &(ex * Rational::from(np * np * np)));
                let diff = Float::with_val(P, &dens - &at0);
                scaled.push((diff * Float::with_val(P, np * np)).to_f64());
            }
            // (density - threshold value) n'^2 tends to a constant
            let r1 = (scaled[1] / scaled[0] - 1.0).abs();
            let r2 = (scaled[2] / scaled[1] - 1.0).abs();
            assert!(r2 < 1e-3 && r2 < r1, "({n},{l}) L={big_l}: {scaled:?}");
            // from above threshold: E = 1e-12 differs from E = 0 by O(E)
            let tiny = Float::with_val(P, Float::parse("1e-12").unwrap());
            let up = Float::with_val(P, k.continuum(&tiny, P).unwrap().value.square_ref());
            assert!(rel(&up, &at0) < 1e-9, "({n},{l}) continuum side");
            // and the continued bound side at nu = 1e6
            let nu = Float::with_val(P, 1_000_000);
            let down = Float::with_val(P, k.bound_continued(&nu, P).unwrap().value.square_ref());
            assert!(rel(&down, &at0) < 1e-9, "({n},{l}) bound side");
        }
    }
}

/// The closed form against direct integration of the power-series continuum
/// function with the gauss-quad Gauss-Laguerre rule (double precision).
#[test]
fn closed_form_against_gauss_laguerre() {
    let rule = GaussLaguerre::new(
        std::num::NonZeroUsize::new(120).unwrap(),
        0.0.try_into().unwrap(),
    );
    for &(n, l, k) in &[(1i64, 0i64, 0.5f64), (2, 1, 0.8), (3, 1, 0.3)] {
        let s = BoundState::hydrogen(n, l).unwrap();
        let kap = 1.0 / n as f64;
        let u_nl = reduced_radial_function(&s);
        for ch in Channel::open(l as u32) {
            let big_l = ch.big_l(l as u32);
            let ker = BoundFreeKernel::new(&s, ch, DipoleForm::Length).unwrap();
            let kf = Float::with_val(P, k);
            let closed = ker.continuum_k(&kf, P).unwrap().value.to_f64();
            // int e^{-x} g(x) dx with r = x / kappa: int u_E r u_nl dr
            let z = Rational::from(1);
            let num = rule.integrate(|x| {
                let r = x / kap;
                let rf = Float::with_val(80, r);
                let (u, _) = continuum_function(&kf, big_l, &z, &rf, 80).unwrap();
                let b = u_nl.eval(&rf, 80).to_f64() * (kap * r).exp(); // strip e^{-kappa r}
                u.to_f64() * r * b / kap
            });
            assert!(
                ((num - closed) / closed).abs() < 1e-8,
                "({n},{l}) L={big_l} k={k}: quadrature {num} vs closed {closed}"
            );
        }
    }
}

/// Energy normalization: at large r the amplitude of u_EL tends to
/// sqrt(2/(pi k)) (WKB amplitude with the local wave number).
#[test]
fn energy_normalization_amplitude() {
    let z = Rational::from(1);
    for &(k, big_l) in &[(1.0f64, 0u32), (0.7, 1), (1.5, 3)] {
        let kf = Float::with_val(P, k);
        let r = 400.0f64;
        let (u, du) = continuum_function(&kf, big_l, &z, &Float::with_val(P, r), 64).unwrap();
        let (u, du) = (u.to_f64(), du.to_f64());
        let ll = f64::from(big_l * (big_l + 1));
        let kloc = (k * k + 2.0 / r - ll / (r * r)).sqrt();
        // WKB: u = A kloc^{-1/2} sin(...), so u^2 kloc + du^2/kloc = A^2
        let a2 = u * u * kloc + du * du / kloc;
        let want = 2.0 / std::f64::consts::PI;
        assert!(
            ((a2 - want) / want).abs() < 1e-4,
            "k={k} L={big_l}: {a2} vs {want}"
        );
    }
}

#[test]
fn bad_arguments_are_typed_errors() {
    let s = BoundState::hydrogen(3, 0).unwrap();
    assert!(matches!(
        BoundFreeKernel::new(&s, Channel::Down, DipoleForm::Length),
        Err(BasisError::InvalidArgument(_))
    ));
    let k = BoundFreeKernel::new(&s, Channel::Up, DipoleForm::Velocity).unwrap();
    let neg = Float::with_val(P, -1);
    assert!(matches!(
        k.continuum(&neg, P),
        Err(BasisError::InvalidArgument(_))
    ));
    assert!(matches!(
        k.continuum(&Float::with_val(P, 1), 20),
        Err(BasisError::PrecisionTooLow { .. })
    ));
    assert!(matches!(
        k.bound_continued(&Float::with_val(P, 3), P),
        Err(BasisError::InvalidArgument(_))
    ));
    let nan = Float::with_val(P, rug::float::Special::Nan);
    assert!(k.continuum(&nan, P).is_err());
}

/// An evaluation depends only on its arguments and on the loss hint its
/// caller passes: the same call gives the same value, measured loss and
/// working precision whatever the kernel evaluated before (here, high
/// energies that cancel strongly), and a hinted sequence repeated with a
/// fresh hint repeats its results exactly.
#[test]
fn evaluations_do_not_depend_on_earlier_calls() {
    let s = BoundState::hydrogen(40, 1).unwrap();
    let same = |a: &kzero_basis::continuum::RadialValue,
                b: &kzero_basis::continuum::RadialValue| {
        a.value == b.value && a.lost_bits == b.lost_bits && a.work_bits == b.work_bits
    };
    for form in FORMS {
        let e = Float::with_val(P, 0.3);
        let fresh = BoundFreeKernel::new(&s, Channel::Up, form).unwrap();
        let first = fresh.continuum(&e, P).unwrap();
        let used = BoundFreeKernel::new(&s, Channel::Up, form).unwrap();
        for k in [3.0, 8.0, 20.0] {
            used.continuum_k(&Float::with_val(P, k), P).unwrap();
        }
        used.bound_continued(&Float::with_val(P, 55.5), P).unwrap();
        let again = used.continuum(&e, P).unwrap();
        assert!(same(&first, &again), "{form:?}: {first:?} then {again:?}");
        let copy = used.clone();
        assert!(
            same(&first, &copy.continuum(&e, P).unwrap()),
            "{form:?}: clone"
        );
        let run = || {
            let mut hint = LossHint::new();
            [20.0, 8.0, 0.7].map(|k| {
                used.continuum_k_hinted(&Float::with_val(P, k), P, &mut hint)
                    .unwrap()
            })
        };
        let (a, b) = (run(), run());
        for (x, y) in a.iter().zip(&b) {
            assert!(same(x, y), "{form:?}: hinted sequence {x:?} then {y:?}");
        }
    }
}

/// A hint carried from an evaluation that lost few bits must not spoil one
/// that loses many (about 1,480 bits for the continued 1000 l=500 state above
/// the split point of the spectral tail): the result equals a fresh-hint
/// evaluation to the requested precision.
#[test]
fn a_low_hint_before_a_large_loss_still_converges() {
    let s = BoundState::hydrogen(1000, 500).unwrap();
    let prec = 161;
    for ch in [Channel::Down, Channel::Up] {
        let kern = BoundFreeKernel::new(&s, ch, DipoleForm::Velocity).unwrap();
        for low in [0.5f64, 2.0, 10.0] {
            let mut hint = LossHint::new();
            kern.continuum_k_hinted(&Float::with_val(prec, low), prec, &mut hint)
                .unwrap();
            let nu = Float::with_val(prec, 1305.0776455943292);
            let carried = kern.bound_continued_hinted(&nu, prec, &mut hint).unwrap();
            let fresh = kern.bound_continued(&nu, prec).unwrap();
            let d = Float::with_val(prec, &carried.value - &fresh.value).abs();
            let scale = Float::with_val(prec, fresh.value.clone().abs()) >> (prec - 16);
            assert!(
                d <= scale,
                "{ch:?} after k = {low}: carried {} vs fresh {}",
                carried.value.to_f64(),
                fresh.value.to_f64()
            );
        }
    }
}
