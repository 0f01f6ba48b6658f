//! Criterion benches of the Green's-function method (`kzero_bethe::green`):
//! ln k0(1,0) at 20, 50 and 100 digits, and ln k0(200,0) at 20 digits.
//! Figures go to benches/README.md ("Green's-function method").
//!
//! Note: quadrature rules are kept in a bounded process-wide cache (they
//! depend only on nodes and bits, so the cache changes times, not results),
//! so after the first iteration each sample measures the engine without
//! rule construction, as in a table run.

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use kzero_bethe::green::ln_k0;
use kzero_bethe::Settings;
use std::time::Duration;

fn green(c: &mut Criterion) {
    let mut g = c.benchmark_group("green_1s");
    g.sample_size(10);
    g.measurement_time(Duration::from_secs(15));
    for digits in [20u32, 50, 100] {
        let s = Settings::with_digits(digits);
        g.bench_function(format!("ln_k0_1_0_d{digits}"), |b| {
            b.iter(|| ln_k0(black_box(1), black_box(0), &s).unwrap())
        });
    }
    g.finish();
    let mut g = c.benchmark_group("green_large");
    g.sample_size(10);
    g.measurement_time(Duration::from_secs(60));
    g.warm_up_time(Duration::from_secs(1));
    let s = Settings::with_digits(20);
    g.bench_function("ln_k0_200_0_d20", |b| {
        b.iter(|| ln_k0(black_box(200), black_box(0), &s).unwrap())
    });
    g.finish();
}

criterion_group!(benches, green);
criterion_main!(benches);
