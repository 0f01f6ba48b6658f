//! Criterion benches of the basis crate: one bound-bound dipole integral at
//! n = 200 by Gordon's formula and by direct exact integration, and a set of
//! Sturmian overlaps at an unmatched scale. Figures go to benches/README.md.

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use kzero_basis::gordon::radial_dipole;
use kzero_basis::gradient::{gradient_function, Channel};
use kzero_basis::radial::radial_integral;
use kzero_basis::sturmian::sturmian_overlaps;
use kzero_basis::BoundState;
use rug::Float;

fn dipole_n200(c: &mut Criterion) {
    let a = BoundState::hydrogen(200, 1).unwrap();
    let b = BoundState::hydrogen(199, 0).unwrap();
    let mut g = c.benchmark_group("dipole_200p_199s");
    g.sample_size(20);
    g.bench_function("gordon", |bch| {
        bch.iter(|| radial_dipole(black_box(&a), black_box(&b)).unwrap())
    });
    g.bench_function("direct", |bch| {
        bch.iter(|| radial_integral(black_box(&a), black_box(&b), 1).unwrap())
    });
    g.finish();
}

fn overlaps_n50(c: &mut Criterion) {
    let s = BoundState::hydrogen(50, 0).unwrap();
    let f = gradient_function(&s, Channel::Up).unwrap();
    let nu = Float::with_val(256, 35.5);
    let mut g = c.benchmark_group("sturmian_overlaps_50s_L1");
    g.sample_size(10);
    g.bench_function("k0_400_128bits", |bch| {
        bch.iter(|| sturmian_overlaps(black_box(&f), 1, &nu, 400, 128).unwrap())
    });
    g.finish();
}

/// One bound-free radial dipole element <E p| r |50 s> at E = 0.5 hartree,
/// 128 bits, closed form (`continuum::BoundFreeKernel`); the kernel (exact
/// bound-state data) is built once and a loss hint is carried from one
/// evaluation to the next, as in a spectral-sum run.
fn bound_free_n50(c: &mut Criterion) {
    use kzero_basis::continuum::{BoundFreeKernel, DipoleForm, LossHint};
    let s = BoundState::hydrogen(50, 0).unwrap();
    let kernel = BoundFreeKernel::new(&s, Channel::Up, DipoleForm::Length).unwrap();
    let e = Float::with_val(128, 0.5);
    let mut g = c.benchmark_group("bound_free_50s_Ep");
    g.sample_size(20);
    g.bench_function("length_E0.5_128bits", |bch| {
        let mut hint = LossHint::new();
        bch.iter(|| {
            kernel
                .continuum_hinted(black_box(&e), 128, &mut hint)
                .unwrap()
        })
    });
    g.bench_function("kernel_build", |bch| {
        bch.iter(|| BoundFreeKernel::new(black_box(&s), Channel::Up, DipoleForm::Length).unwrap())
    });
    g.finish();
}

criterion_group!(benches, dipole_n200, overlaps_n50, bound_free_n50);
criterion_main!(benches);
