//! Criterion benches of the spectral-sum method (`kzero_bethe::spectral`):
//! ln k0 at 20 digits, velocity form, for (2,0), (20,0) and (100,1).
//! Figures go to benches/README.md ("Spectral method").

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use kzero_bethe::spectral::ln_k0;
use kzero_bethe::{Gauge, Settings};
use std::time::Duration;

fn spectral(c: &mut Criterion) {
    let s = Settings::with_digits(20);
    let mut g = c.benchmark_group("spectral_d20");
    g.sample_size(10);
    g.measurement_time(Duration::from_secs(20));
    for (n, l) in [(2i64, 0i64), (20, 0)] {
        g.bench_function(format!("ln_k0_{n}_{l}"), |b| {
            b.iter(|| ln_k0(black_box(n), black_box(l), Gauge::Velocity, &s).unwrap())
        });
    }
    g.finish();
    let mut g = c.benchmark_group("spectral_d20_large");
    g.sample_size(10);
    g.measurement_time(Duration::from_secs(40));
    g.warm_up_time(Duration::from_secs(1));
    g.bench_function("ln_k0_100_1", |b| {
        b.iter(|| ln_k0(black_box(100), black_box(1), Gauge::Velocity, &s).unwrap())
    });
    g.finish();
}

criterion_group!(benches, spectral);
criterion_main!(benches);
