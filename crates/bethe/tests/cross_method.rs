//! The two independent methods against each other: the Sturmian Green's
//! function (`green`) and the explicit spectral sum (`spectral`) share only the
//! exact basis functions, so their agreement within the combined error
//! estimates checks both.
//!
//! Default run: every state with n <= 12 and a spread sample up to n = 200
//! (l = 0, 1, n-1 and a middle l). With `KZERO_HEAVY=1`: every state with
//! n <= 30 as well.

use kzero_bethe::{agreement, green, spectral, Gauge, Settings};
use rayon::prelude::*;

fn agree(n: i64, l: i64) -> Result<(), String> {
    let s = Settings::with_digits(20);
    let g = green::ln_k0(n, l, &s).map_err(|e| format!("green ({n},{l}): {e}"))?;
    let p = spectral::ln_k0(n, l, Gauge::Velocity, &s)
        .map_err(|e| format!("spectral ({n},{l}): {e}"))?;
    let a = agreement(&g, &p);
    let d = a.difference.abs();
    // Within the combined estimates, and never worse than 1e-18 at 20 digits.
    if !a.consistent || d > 1e-18 {
        return Err(format!(
            "({n},{l}): green {} +- {:e}, spectral {} +- {:e}, |diff| = {d:e}",
            g.value_string(),
            g.abs_err,
            p.value_string(),
            p.abs_err
        ));
    }
    Ok(())
}

fn run(states: Vec<(i64, i64)>) {
    let failures: Vec<String> = states
        .par_iter()
        .filter_map(|&(n, l)| agree(n, l).err())
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn all_states_up_to_n12() {
    let max = if std::env::var("KZERO_HEAVY").is_ok() {
        30
    } else {
        12
    };
    run((1..=max)
        .flat_map(|n| (0..n).map(move |l| (n, l)))
        .collect());
}

#[test]
fn spread_sample_up_to_n200() {
    let mut states = Vec::new();
    for n in [25i64, 60, 120, 200] {
        for l in [0, 1, n / 2, n - 1] {
            states.push((n, l));
        }
    }
    states.sort();
    states.dedup();
    run(states);
}
