//! The same (state, settings) gives the same result whatever was computed
//! before in the process: value (every bit), error estimate, bits, nodes
//! and terms, for both methods. Each test computes a state X, then other
//! states at other precisions, then X again, and X once more at the end of
//! a sequence in another order. The two tests run at the same time in one
//! process, so each also checks that a concurrent computation changes
//! nothing.

use kzero_bethe::{green, spectral, BetheValue, Gauge, Settings};

/// Everything a result reports, except the run time.
fn fingerprint(v: &BetheValue) -> (String, u32, u64, u32, usize, usize) {
    (
        v.value.to_string_radix(16, None),
        v.value.prec(),
        v.abs_err.to_bits(),
        v.bits,
        v.nodes,
        v.terms,
    )
}

fn check_history_free(
    name: &str,
    x: (i64, i64, u32),
    others: &[(i64, i64, u32)],
    run: impl Fn(i64, i64, u32) -> BetheValue,
) {
    let first = fingerprint(&run(x.0, x.1, x.2));
    for &(n, l, d) in others {
        run(n, l, d);
    }
    let after = fingerprint(&run(x.0, x.1, x.2));
    assert_eq!(first, after, "{name} {x:?}: after other states");
    for &(n, l, d) in others.iter().rev() {
        run(n, l, d);
    }
    let reordered = fingerprint(&run(x.0, x.1, x.2));
    assert_eq!(
        first, reordered,
        "{name} {x:?}: after the others in reverse"
    );
}

#[test]
fn green_results_do_not_depend_on_history() {
    check_history_free(
        "green",
        (6, 2, 20),
        &[(1, 0, 30), (40, 3, 20), (6, 2, 35), (3, 1, 45)],
        |n, l, d| green::ln_k0(n, l, &Settings::with_digits(d)).unwrap(),
    );
}

#[test]
fn spectral_results_do_not_depend_on_history() {
    for gauge in [Gauge::Velocity, Gauge::Length] {
        check_history_free(
            "spectral",
            (4, 1, 20),
            &[(1, 0, 25), (25, 2, 20), (4, 1, 30), (2, 0, 35)],
            |n, l, d| spectral::ln_k0(n, l, gauge, &Settings::with_digits(d)).unwrap(),
        );
    }
}
