//! Speed of three f32 math backends for the functions deltakin's solvers
//! need: `micromath` (fast approximations), `libm` (the Rust port of MUSL)
//! and deltakin's own kernels (`deltakin::scalar::{sqrt_f32, atan2_f32,
//! sin_cos_f32}`).
//!
//! Their accuracy is measured and asserted by
//! `host-tests/tests/math_backends.rs`. On the host these timings show
//! relative cost only: an x86-64 core has hardware square root and
//! double-precision arithmetic, which a Cortex-M4F lacks.
//!
//! Each benchmark evaluates a fixed array of inputs once per iteration;
//! the throughput is set to the array length, so `thrpt` is calls per
//! second and the time per call is the reported time divided by
//! `INPUTS`.
//!
//! Run: `cargo bench --bench math_backends`.

use std::hint::black_box;
use std::time::Duration;

use criterion::{BenchmarkGroup, Criterion, Throughput, criterion_group, criterion_main, measurement::WallTime};
use deltakin::scalar::{atan2_f32, sin_cos_f32, sqrt_f32};
use micromath::F32Ext;

/// Inputs per iteration.
const INPUTS: usize = 1024;

/// `INPUTS` values spread evenly in `log10` over `[1e-3, 1e5]` (sqrt).
fn sqrt_inputs() -> Vec<f32> {
    (0..INPUTS).map(|i| 10f64.powf(-3.0 + 8.0 * i as f64 / (INPUTS - 1) as f64) as f32).collect()
}

/// `INPUTS` points on a circle of radius 500 (mm, a platform-sized
/// number) around the full turn (atan2).
fn atan2_inputs() -> Vec<(f32, f32)> {
    (0..INPUTS)
        .map(|i| {
            let a = -std::f64::consts::PI + std::f64::consts::TAU * (i as f64 + 0.5) / INPUTS as f64;
            ((500.0 * a.sin()) as f32, (500.0 * a.cos()) as f32)
        })
        .collect()
}

/// `INPUTS` angles spread evenly over `[-pi, pi]` (sin/cos).
fn angle_inputs() -> Vec<f32> {
    (0..INPUTS)
        .map(|i| (-std::f64::consts::PI + std::f64::consts::TAU * i as f64 / (INPUTS - 1) as f64) as f32)
        .collect()
}

/// One benchmark: `f` applied to every input once per iteration.
fn each<T: Copy, R>(group: &mut BenchmarkGroup<'_, WallTime>, name: &str, inputs: &[T], f: impl Fn(T) -> R) {
    group.bench_function(name, |b| {
        b.iter(|| {
            for &v in inputs {
                black_box(f(black_box(v)));
            }
        });
    });
}

fn backends(c: &mut Criterion) {
    eprintln!("math_backends: {INPUTS} calls per iteration (time per call = time / {INPUTS})");
    let n = u64::try_from(INPUTS).expect("small");

    let xs = sqrt_inputs();
    let mut group = c.benchmark_group("sqrt");
    group.throughput(Throughput::Elements(n));
    each(&mut group, "micromath", &xs, F32Ext::sqrt);
    each(&mut group, "libm_sqrtf", &xs, libm::sqrtf);
    each(&mut group, "deltakin_sqrt_f32", &xs, sqrt_f32);
    group.finish();

    let yx = atan2_inputs();
    let mut group = c.benchmark_group("atan2");
    group.throughput(Throughput::Elements(n));
    each(&mut group, "micromath", &yx, |(y, x)| F32Ext::atan2(y, x));
    each(&mut group, "libm_atan2f", &yx, |(y, x)| libm::atan2f(y, x));
    each(&mut group, "deltakin_atan2_f32", &yx, |(y, x)| atan2_f32(y, x));
    group.finish();

    let angles = angle_inputs();
    let mut group = c.benchmark_group("sin_cos");
    group.throughput(Throughput::Elements(n));
    each(&mut group, "micromath", &angles, F32Ext::sin_cos);
    each(&mut group, "libm_sincosf", &angles, libm::sincosf);
    each(&mut group, "deltakin_sin_cos_f32", &angles, sin_cos_f32);
    group.finish();
}

/// Short runs: for comparison on one machine, not a release gate.
fn config() -> Criterion {
    Criterion::default().warm_up_time(Duration::from_secs(1)).measurement_time(Duration::from_secs(2)).sample_size(50)
}

criterion_group! { name = benches; config = config(); targets = backends }
criterion_main!(benches);
