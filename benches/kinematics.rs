//! Per-point cost of deltakin's inverse and forward kinematics, guarded and
//! unguarded, in f32, f64 and fixed point, on the demo robot (`examples/demo_robot.toml`,
//! copied in `shared/demo_robot.rs`).
//!
//! Each benchmark solves the same fixed set of points spread through the
//! guarded workspace (see `demo_robot::points`) once per iteration. The
//! throughput is set to the number of points, so criterion's `thrpt` line
//! is points per second; the time per point is the reported time divided
//! by the number of points printed at the start.
//!
//! Goal on the development machine (not a test): f32 guarded inverse and
//! forward kinematics each under 40 ns per point.
//!
//! Run: `cargo bench --bench kinematics`.

use std::hint::black_box;
use std::time::Duration;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use deltakin::Real;

#[path = "shared/demo_robot.rs"]
mod demo_robot;

/// Inverse and forward benchmarks for one scalar type.
fn bench_type<S: Real>(c: &mut Criterion, type_name: &str) {
    let robot = demo_robot::robot::<S>();
    let points64 = demo_robot::points();
    let points: Vec<[S::Wide; 3]> = demo_robot::convert(&points64);
    let joints: Vec<[S; 3]> = demo_robot::convert(&demo_robot::joints(&points64));
    // Benchmark only what is meant: every point passes every guard.
    for (p, j) in points.iter().zip(&joints) {
        assert!(robot.inverse(*p).is_ok(), "{type_name}: inverse refused {p:?}");
        assert!(robot.forward(*j).is_ok(), "{type_name}: forward refused {j:?}");
    }
    let n = u64::try_from(points.len()).expect("few points");

    let mut group = c.benchmark_group(format!("inverse_{type_name}"));
    group.throughput(Throughput::Elements(n));
    group.bench_function("guarded", |b| run(b, &points, |p| robot.inverse(p)));
    group.bench_function("unguarded", |b| run(b, &points, |p| robot.inverse_unguarded(p)));
    group.finish();

    let mut group = c.benchmark_group(format!("forward_{type_name}"));
    group.throughput(Throughput::Elements(n));
    group.bench_function("guarded", |b| run(b, &joints, |j| robot.forward(j)));
    group.bench_function("unguarded", |b| run(b, &joints, |j| robot.forward_unguarded(j)));
    group.finish();
}

/// One iteration solves every input once.
fn run<S: Copy, R>(b: &mut criterion::Bencher<'_>, inputs: &[[S; 3]], solve: impl Fn([S; 3]) -> R) {
    b.iter(|| {
        for &v in inputs {
            black_box(solve(black_box(v)));
        }
    });
}

fn kinematics(c: &mut Criterion) {
    eprintln!("kinematics: {} points per iteration (time per point = time / {0})", demo_robot::points().len());
    bench_type::<f32>(c, "f32");
    bench_type::<f64>(c, "f64");
    bench_type::<deltakin::Fixed>(c, "fixed");
}

/// Short runs: the numbers are for comparison on one machine, not a
/// release gate.
fn config() -> Criterion {
    Criterion::default().warm_up_time(Duration::from_secs(1)).measurement_time(Duration::from_secs(3)).sample_size(50)
}

criterion_group! { name = benches; config = config(); targets = kinematics }
criterion_main!(benches);
