//! The range above n = 200, up to the supported n = 1000.
//!
//! Checks, as for the lower range: the two independent methods agree within
//! their combined error estimates, and the error estimate of a 20-digit run
//! of the Green's-function method covers its difference from a 40-digit run
//! (the 40-digit run stands in for the exact value). Above the range the
//! refusal is a typed error.
//!
//! Default run: a sample small enough for CI (n = 300, 500 and 1000, the
//! cheap and the costly ends of l). With `KZERO_HEAVY=1`: every
//! l in {0, 1, 2, n/2, n-1} for n = 300, 500 and 1000, at 20 digits.

use kzero_bethe::{green, spectral, BetheError, Gauge, Settings};
use rayon::prelude::*;
use rug::Float;

fn heavy() -> bool {
    std::env::var("KZERO_HEAVY").is_ok()
}

fn diff(a: &Float, b: &Float) -> f64 {
    Float::with_val(a.prec().max(b.prec()), a - b)
        .abs()
        .to_f64()
}

fn agree(n: i64, l: i64, digits: u32) -> Result<(), String> {
    let s = Settings::with_digits(digits);
    let g = green::ln_k0(n, l, &s).map_err(|e| format!("green ({n},{l}): {e}"))?;
    let p = spectral::ln_k0(n, l, Gauge::Velocity, &s)
        .map_err(|e| format!("spectral ({n},{l}): {e}"))?;
    let d = diff(&g.value, &p.value);
    let goal = 10f64.powi(-(digits as i32));
    if d > g.abs_err + p.abs_err || g.abs_err >= goal || p.abs_err >= goal {
        return Err(format!(
            "({n},{l}) at {digits} digits: green {} +- {:e}, spectral {} +- {:e}, |diff| = {d:e}",
            g.value_string(),
            g.abs_err,
            p.value_string(),
            p.abs_err
        ));
    }
    Ok(())
}

fn run(states: &[(i64, i64)], digits: u32) {
    let failures: Vec<String> = states
        .par_iter()
        .filter_map(|&(n, l)| agree(n, l, digits).err())
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn methods_agree_beyond_n200() {
    if heavy() {
        let mut states = Vec::new();
        for n in [300i64, 500, 1000] {
            for l in [0, 1, 2, n / 2, n - 1] {
                states.push((n, l));
            }
        }
        run(&states, 20);
    } else {
        run(
            &[(300, 1), (300, 150), (300, 299), (500, 499), (1000, 999)],
            12,
        );
    }
}

fn covers(n: i64, l: i64) -> Result<(), String> {
    let run = |digits: u32| {
        green::ln_k0(n, l, &Settings::with_digits(digits))
            .map_err(|e| format!("({n},{l}) at {digits} digits: {e}"))
    };
    let (lo, hi) = (run(20)?, run(40)?);
    let d = diff(&lo.value, &hi.value);
    if d > lo.abs_err || lo.abs_err >= 1e-20 || hi.abs_err >= 1e-40 {
        return Err(format!(
            "({n},{l}): |v20 - v40| = {d:e}, estimates {:e} and {:e}",
            lo.abs_err, hi.abs_err
        ));
    }
    Ok(())
}

#[test]
fn error_estimate_covers_higher_precision_beyond_n200() {
    let mut states = vec![(300, 2), (500, 250), (1000, 0), (1000, 999)];
    if heavy() {
        states.extend([(300, 0), (500, 1), (1000, 1), (1000, 2), (1000, 500)]);
    }
    let failures: Vec<String> = states
        .par_iter()
        .filter_map(|&(n, l)| covers(n, l).err())
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn above_the_range_is_a_typed_error() {
    let s = Settings::default();
    assert!(matches!(
        green::ln_k0(1001, 0, &s),
        Err(BetheError::OutOfRange {
            n: 1001,
            max: 1000,
            ..
        })
    ));
    assert!(matches!(
        spectral::ln_k0(1001, 1000, Gauge::Velocity, &s),
        Err(BetheError::OutOfRange {
            n: 1001,
            max: 1000,
            ..
        })
    ));
}
