//! The family of logarithmic dipole sums S(k), L(k), ln I(k): exact sum
//! rules, the bridge L(2) = 16 ln k0/(3 n^3), the two methods against each
//! other, error estimates against more precise runs, outside values and an
//! independent mpmath calculation.
//!
//! Default run: a spread of states up to n = 200 for the exact rules, every
//! state with n <= 12 for the cross-method check. `KZERO_HEAVY=1` adds
//! states (n <= 16 for the cross-method check, spectral sums up to n = 200).

use kzero_basis::gordon::radial_dipole;
use kzero_basis::BoundState;
use kzero_bethe::sums::{
    all_powers, exact_power_sum, green_sums, spectral_sums, DipoleSums, K_MAX, K_MIN,
};
use kzero_bethe::{green, spectral, BetheError, Gauge, Settings};
use rayon::prelude::*;
use rug::{Float, Rational};

fn heavy() -> bool {
    std::env::var("KZERO_HEAVY").is_ok()
}

fn all_k() -> Vec<i64> {
    all_powers().into_iter().map(i64::from).collect()
}

fn f(s: &str) -> Float {
    Float::with_val(256, Float::parse(s).expect("decimal"))
}

fn diff(a: &Float, b: &Float) -> f64 {
    Float::with_val(512, a - b).abs().to_f64()
}

/// A spread of states up to n = 200: l = 0, 1, a middle l and n - 1.
fn spread() -> Vec<(i64, i64)> {
    let mut v = Vec::new();
    for n in [1i64, 2, 3, 4, 7, 12, 25, 60, 120, 200] {
        for l in [0, 1, n / 2, n - 1] {
            if l < n {
                v.push((n, l));
            }
        }
    }
    v.sort();
    v.dedup();
    v
}

/// <r^2> = n^2 (5 n^2 + 1 - 3 l (l+1)) / 2 bohr^2 (Bethe & Salpeter, Quantum
/// Mechanics of One- and Two-Electron Atoms (1957)).
fn r2(n: i64, l: i64) -> Rational {
    Rational::from((n * n * (5 * n * n + 1 - 3 * l * (l + 1)), 2))
}

/// The same-n part of the closure sum sum_m w_L |<m|r|n l>|^2: the states
/// n L (L = l +- 1) of the same shell, with exact radial elements from the
/// basis crate (Gordon's formula) and the angular weights
/// (l+1)/(2l+1), l/(2l+1).
fn same_n_part(n: i64, l: i64) -> Rational {
    let st = BoundState::hydrogen(n, l).expect("state");
    let mut s = Rational::new();
    for (big_l, w) in [
        (l + 1, Rational::from((l + 1, 2 * l + 1))),
        (l - 1, Rational::from((l, 2 * l + 1))),
    ] {
        if big_l < 0 || big_l >= n {
            continue;
        }
        let m = BoundState::hydrogen(n, big_l).expect("state");
        s += radial_dipole(&m, &st).expect("dipole").square() * w;
    }
    s
}

/// S(0) = 1 (Thomas-Reiche-Kuhn); S(1) = 4/(3 n^2) (2<p^2>/3 in Ry units,
/// <p^2> = 1/n^2: virial theorem, common practice); S(2) = 16/(3 n^3) for
/// l = 0 and 0 for l >= 1 (the contact term 2 pi |psi(0)|^2, common
/// practice); S(-1) = (<r^2> - same-n part)/3 (closure).
#[test]
fn exact_sum_rules_spread_to_n200() {
    let failures: Vec<String> = spread()
        .par_iter()
        .filter_map(|&(n, l)| {
            let s = |k| exact_power_sum(n, l, k).expect("exact sum");
            let mut bad = Vec::new();
            if s(0) != 1 {
                bad.push(format!("S(0) = {}", s(0)));
            }
            if s(1) != Rational::from((4, 3 * n * n)) {
                bad.push(format!("S(1) = {}", s(1)));
            }
            let s2 = if l == 0 {
                Rational::from((16, 3 * n * n * n))
            } else {
                Rational::new()
            };
            if s(2) != s2 {
                bad.push(format!("S(2) = {}", s(2)));
            }
            let sm1 = (r2(n, l) - same_n_part(n, l)) / Rational::from(3);
            if s(-1) != sm1 {
                bad.push(format!("S(-1) = {} != {}", s(-1), sm1));
            }
            // the same-n part is (9/4) n^2 (n^2 - l^2) w for L = l - 1 plus
            // (9/4) n^2 (n^2 - (l+1)^2) w for L = l + 1 (Bethe & Salpeter
            // (1957), from memory): a check of the closure split itself
            let closed = Rational::from((9 * n * n * (n * n - l * l) * l, 4 * (2 * l + 1)))
                + Rational::from((
                    9 * n * n * (n * n - (l + 1) * (l + 1)) * (l + 1),
                    4 * (2 * l + 1),
                ));
            if same_n_part(n, l) != closed {
                bad.push("same-n part".into());
            }
            (!bad.is_empty()).then(|| format!("({n},{l}): {}", bad.join(", ")))
        })
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// The spectral sums reproduce every exact S(k) within their estimates
/// (S(-2), S(-3), S(-4) have no closed form here: the exact values come from
/// the exact resolvent functions, which the spectral sum does not use).
#[test]
fn spectral_power_sums_match_exact() {
    let mut states = vec![
        (1i64, 0i64),
        (2, 0),
        (2, 1),
        (3, 2),
        (7, 3),
        (12, 0),
        (25, 1),
    ];
    if heavy() {
        states.extend([
            (60, 0),
            (60, 59),
            (120, 1),
            (200, 0),
            (200, 100),
            (200, 199),
        ]);
    }
    let failures: Vec<String> = states
        .par_iter()
        .flat_map(|&(n, l)| {
            let gauge = if n % 2 == 0 {
                Gauge::Length
            } else {
                Gauge::Velocity
            };
            let r = spectral_sums(n, l, &all_k(), gauge, &Settings::with_digits(15))
                .expect("spectral sums");
            r.rows
                .iter()
                .filter_map(|row| {
                    let ex = exact_power_sum(n, l, i64::from(row.k)).expect("exact");
                    let d = diff(&row.s, &Float::with_val(512, &ex));
                    (d > row.s_err || row.s_err >= 1e-15).then(|| {
                        format!(
                            "({n},{l}) k={}: |S - exact| = {d:e}, err {:e}",
                            row.k, row.s_err
                        )
                    })
                })
                .collect::<Vec<_>>()
        })
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// ln k0 published to 15 decimals (Drake & Swainson, Phys. Rev. A 41, 1243
/// (1990), as tabulated in the CODATA 2018 adjustment, Tiesinga et al., Rev.
/// Mod. Phys. 93, 025010 (2021)).
const PUBLISHED_LN_K0: [(i64, i64, &str); 3] = [
    (1, 0, "2.984128555765498"),
    (2, 0, "2.811769893120563"),
    (2, 1, "-0.030016708630213"),
];

fn l2_from_ln_k0(n: i64, v: &Float) -> Float {
    Float::with_val(256, v * 16u32) / (3 * n * n * n) as u32
}

/// L(2) = 16 ln k0 / (3 n^3): against the published values, and on a spread
/// up to n = 200 against ln k0 of the spectral method (the other method).
#[test]
fn l2_is_the_bethe_logarithm() {
    for (n, l, v) in PUBLISHED_LN_K0 {
        let want = l2_from_ln_k0(n, &f(v));
        for r in [
            green_sums(n, l, &[2], &Settings::with_digits(20)).expect("green"),
            spectral_sums(n, l, &[2], Gauge::Velocity, &Settings::with_digits(20))
                .expect("spectral"),
        ] {
            let row = r.row(2).expect("k = 2");
            // the table's last digit: 1e-15 on ln k0
            let tol = 16.0 / (3.0 * (n * n * n) as f64) * 1e-15;
            assert!(
                diff(&row.log_sum, &want) < tol,
                "({n},{l}) {}: L(2) = {}",
                r.method.name(),
                r.printed(&row.log_sum, row.log_err).value
            );
        }
    }
    let states: Vec<(i64, i64)> = spread().into_iter().filter(|&(n, _)| n >= 3).collect();
    let failures: Vec<String> = states
        .par_iter()
        .filter_map(|&(n, l)| {
            let s = Settings::with_digits(18);
            let g = green_sums(n, l, &[2], &s).expect("green sums");
            let row = g.row(2).expect("k = 2");
            let k0 = if n <= 25 {
                spectral::ln_k0(n, l, Gauge::Velocity, &s).expect("spectral ln k0")
            } else {
                // the spectral sum costs seconds at large n: the Green ln k0
                // (a different integrand, e = 1 with the source p|n l>
                // only, through its own driver)
                green::ln_k0(n, l, &s).expect("green ln k0")
            };
            let want = l2_from_ln_k0(n, &k0.value);
            let tol = row.log_err + k0.abs_err * 16.0 / (3.0 * (n * n * n) as f64);
            let d = diff(&row.log_sum, &want);
            (d > tol).then(|| format!("({n},{l}): |L(2) - 16 ln k0/(3n^3)| = {d:e} > {tol:e}"))
        })
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

fn cross(n: i64, l: i64, digits: u32) -> Result<(), String> {
    let s = Settings::with_digits(digits);
    let g = green_sums(n, l, &all_k(), &s).map_err(|e| format!("green ({n},{l}): {e}"))?;
    let gauge = [Gauge::Velocity, Gauge::Length, Gauge::Acceleration][(n + l) as usize % 3];
    let p =
        spectral_sums(n, l, &all_k(), gauge, &s).map_err(|e| format!("spectral ({n},{l}): {e}"))?;
    let goal = 10f64.powi(-(digits as i32));
    let mut bad = Vec::new();
    for (a, b) in g.rows.iter().zip(&p.rows) {
        let ds = diff(&a.s, &b.s);
        let dl = diff(&a.log_sum, &b.log_sum);
        if ds > a.s_err + b.s_err || dl > a.log_err + b.log_err || a.log_err >= goal {
            bad.push(format!(
                "({n},{l}) k={} {}: S {} vs {} (|d| {ds:e}), L {} +- {:e} vs {} +- {:e} (|d| {dl:e})",
                a.k,
                gauge.name(),
                g.printed(&a.s, a.s_err).value,
                p.printed(&b.s, b.s_err).value,
                g.printed(&a.log_sum, a.log_err).value,
                a.log_err,
                p.printed(&b.log_sum, b.log_err).value,
                b.log_err
            ));
        }
    }
    if bad.is_empty() {
        Ok(())
    } else {
        Err(bad.join("\n"))
    }
}

/// Green against spectral for every state with n <= 12 and every supported
/// k (n <= 16 with `KZERO_HEAVY`), in all three dipole forms in turn.
#[test]
fn green_against_spectral_all_states_up_to_n12() {
    let max = if heavy() { 16 } else { 12 };
    let states: Vec<(i64, i64)> = (1..=max)
        .flat_map(|n| (0..n).map(move |l| (n, l)))
        .collect();
    let failures: Vec<String> = states
        .par_iter()
        .filter_map(|&(n, l)| cross(n, l, 12).err())
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// Green against spectral on a spread up to n = 200 (n > 60 with
/// `KZERO_HEAVY` only: those spectral sums take several seconds each).
#[test]
fn green_against_spectral_large_n() {
    let states: Vec<(i64, i64)> = if heavy() {
        vec![(25, 0), (25, 24), (60, 1), (120, 60), (200, 0), (200, 199)]
    } else {
        vec![(25, 0), (25, 24), (60, 1)]
    };
    let failures: Vec<String> = states
        .par_iter()
        .filter_map(|&(n, l)| cross(n, l, 15).err())
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// The error estimates at D = 20 cover the difference from D = 40 runs.
#[test]
fn estimates_at_20_digits_cover_40_digit_runs() {
    let mut states = vec![(1i64, 0i64), (2, 1), (5, 2), (12, 0), (30, 1)];
    if heavy() {
        states.extend([(80, 40), (200, 1)]);
    }
    let failures: Vec<String> = states
        .par_iter()
        .flat_map(|&(n, l)| {
            let mut out = Vec::new();
            let g20 = green_sums(n, l, &all_k(), &Settings::with_digits(20)).expect("green 20");
            let g40 = green_sums(n, l, &all_k(), &Settings::with_digits(40)).expect("green 40");
            check_cover(&g20, &g40, &mut out);
            if n <= 12 {
                let s20 = spectral_sums(n, l, &all_k(), Gauge::Length, &Settings::with_digits(20))
                    .expect("spectral 20");
                let s40 = spectral_sums(n, l, &all_k(), Gauge::Length, &Settings::with_digits(40))
                    .expect("spectral 40");
                check_cover(&s20, &s40, &mut out);
            }
            out
        })
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

fn check_cover(lo: &DipoleSums, hi: &DipoleSums, out: &mut Vec<String>) {
    for (a, b) in lo.rows.iter().zip(&hi.rows) {
        let ds = diff(&a.s, &b.s);
        let dl = diff(&a.log_sum, &b.log_sum);
        if ds > a.s_err + b.s_err || dl > a.log_err + b.log_err {
            out.push(format!(
                "({},{}) {} k={}: D=20 vs D=40: |dS| {ds:e} (est {:e}), |dL| {dl:e} (est {:e})",
                lo.n,
                lo.l,
                lo.method.name(),
                a.k,
                a.s_err,
                a.log_err
            ));
        }
        if a.log_err >= 1e-20 || b.log_err >= 1e-40 {
            out.push(format!("({},{}) k={}: goal missed", lo.n, lo.l, a.k));
        }
    }
}

/// Ground state: static polarizability alpha = 4 S(-2) = 9/2 bohr^3
/// (Bethe & Salpeter (1957)); mean excitation energy of the stopping
/// formula I(0) = exp(L(0)/S(0)) Ry, about 14.99 eV (Inokuti, Rev. Mod.
/// Phys. 43, 297 (1971), from memory), with the infinite-mass Rydberg
/// energy 13.605693122994 eV (CODATA 2018); the 2s value of ln I(2) is
/// ln k0(2,0), whose mean excitation energy 16.646(7) Ry (Bethe, Brown &
/// Stehn, Phys. Rev. 77, 370 (1950)) must contain exp(ln I(2)).
#[test]
fn outside_values() {
    let s = Settings::with_digits(20);
    for r in [
        green_sums(1, 0, &all_k(), &s).expect("green"),
        spectral_sums(1, 0, &all_k(), Gauge::Length, &s).expect("spectral"),
    ] {
        let alpha = Float::with_val(256, &r.row(-2).expect("k=-2").s * 4u32);
        assert!(diff(&alpha, &f("4.5")) < 1e-18, "alpha = {alpha}");
        let (ln_i, err) = r.row(0).expect("k=0").ln_i().expect("S(0) != 0");
        assert!(err < 1e-18);
        let ev = ln_i.exp().to_f64() * 13.605_693_122_994;
        assert!((ev - 14.99).abs() < 0.01, "I(0) = {ev} eV");
    }
    let r = green_sums(2, 0, &[2], &s).expect("green");
    let (ln_i, _) = r.row(2).expect("k=2").ln_i().expect("S(2) != 0");
    let i_ry = ln_i.exp().to_f64();
    assert!((i_ry - 16.646).abs() < 0.007, "2s: I(2) = {i_ry} Ry");
}

/// An independent calculation with mpmath (crates/bethe/tests/support/
/// mpmath_sums.py): closed-form oscillator strengths for 1s, pseudostates
/// for 2p. Needs python3 with mpmath; set KZERO_SKIP_MPMATH=1 to skip it
/// explicitly.
#[test]
fn mpmath_reference() {
    if std::env::var("KZERO_SKIP_MPMATH").is_ok() {
        eprintln!("mpmath_reference skipped by KZERO_SKIP_MPMATH");
        return;
    }
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/support/mpmath_sums.py");
    let out = std::process::Command::new("python3")
        .arg(script)
        .output()
        .expect("python3 must be installed (or set KZERO_SKIP_MPMATH=1)");
    assert!(
        out.status.success(),
        "mpmath script failed (needs mpmath; or set KZERO_SKIP_MPMATH=1): {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).expect("utf-8");
    let s = Settings::with_digits(25);
    let one_s = green_sums(1, 0, &all_k(), &s).expect("1s");
    let two_p = green_sums(2, 1, &all_k(), &s).expect("2p");
    let mut seen = 0;
    for line in text.lines() {
        let w: Vec<&str> = line.split_whitespace().collect();
        assert_eq!(w.len(), 5, "line {line}");
        let r = if w[0] == "1s" { &one_s } else { &two_p };
        let k: i32 = w[1].parse().expect("k");
        let row = r.row(k).expect("row");
        // the references: 1s to the accuracy of mpmath's nsum and quad
        // (1e-18 with the weight D^2 ln D), 2p to the difference of two
        // basis sizes (times 10)
        let tol = if w[0] == "1s" {
            1e-18
        } else {
            w[4].parse::<f64>().expect("err") * 10.0
        };
        let ds = diff(&row.s, &f(w[2]));
        let dl = diff(&row.log_sum, &f(w[3]));
        assert!(
            ds < tol && dl < tol,
            "{line}: S {ds:e}, L {dl:e}, tol {tol:e}"
        );
        seen += 1;
    }
    assert_eq!(seen, 12, "reference lines");
}

#[test]
fn bad_input_is_a_typed_error() {
    let s = Settings::with_digits(20);
    for k in [K_MIN as i64 - 1, K_MAX as i64 + 1, 100] {
        assert!(matches!(
            green_sums(3, 1, &[0, k], &s),
            Err(BetheError::PowerOutOfRange { .. })
        ));
        assert!(matches!(
            spectral_sums(3, 1, &[k], Gauge::Length, &s),
            Err(BetheError::PowerOutOfRange { .. })
        ));
    }
    assert!(matches!(
        green_sums(3, 1, &[], &s),
        Err(BetheError::NoPowers)
    ));
    assert!(matches!(
        green_sums(3, 3, &[0], &s),
        Err(BetheError::InvalidState { .. })
    ));
    assert!(matches!(
        green_sums(i64::from(kzero_bethe::settings::MAX_N) + 1, 0, &[0], &s),
        Err(BetheError::OutOfRange { .. })
    ));
    assert!(matches!(
        spectral_sums(2, 0, &[0], Gauge::Length, &Settings::with_digits(3)),
        Err(BetheError::DigitsOutOfRange { .. })
    ));
    assert!(matches!(
        green_sums(2, 0, &[0], &Settings::significant(10)),
        Err(BetheError::GoalUnsupported { .. })
    ));
    assert!(matches!(
        exact_power_sum(2, 0, -7),
        Err(BetheError::PowerOutOfRange { .. })
    ));
    // the message is one line and names the range
    let msg = green_sums(2, 0, &[3], &s).unwrap_err().to_string();
    assert!(!msg.contains('\n') && msg.contains("-4..=2"), "{msg}");
}
