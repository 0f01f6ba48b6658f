//! Criterion benches of the dipole sums (`kzero_bethe::sums`): the whole set
//! k = -4..2 of one state against one ln k0 of the same state, by both
//! methods, at 20 digits. Figures go to benches/README.md ("Dipole sums").

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use kzero_bethe::sums::{green_sums, spectral_sums};
use kzero_bethe::{green, spectral, Gauge, Settings};
use std::time::Duration;

fn sums(c: &mut Criterion) {
    let s = Settings::with_digits(20);
    let ks: Vec<i64> = (-4..=2).collect();
    let mut g = c.benchmark_group("sums_d20");
    g.sample_size(10);
    g.measurement_time(Duration::from_secs(5));
    g.warm_up_time(Duration::from_secs(1));
    for (n, l) in [(2i64, 0i64), (12, 0)] {
        g.bench_function(format!("green_all_k_{n}_{l}"), |b| {
            b.iter(|| green_sums(black_box(n), black_box(l), &ks, &s).unwrap())
        });
        g.bench_function(format!("green_ln_k0_{n}_{l}"), |b| {
            b.iter(|| green::ln_k0(black_box(n), black_box(l), &s).unwrap())
        });
        g.bench_function(format!("spectral_all_k_{n}_{l}"), |b| {
            b.iter(|| spectral_sums(black_box(n), black_box(l), &ks, Gauge::Length, &s).unwrap())
        });
        g.bench_function(format!("spectral_ln_k0_{n}_{l}"), |b| {
            b.iter(|| spectral::ln_k0(black_box(n), black_box(l), Gauge::Length, &s).unwrap())
        });
    }
    g.finish();
}

criterion_group!(benches, sums);
criterion_main!(benches);
