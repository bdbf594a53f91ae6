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
//! Group `versus_textbook` times guarded f32 IK and FK beside a plain
//! textbook f64 closed form (`shared/textbook.rs`) on the same points in
//! the same run; the host goal is a ratio of at most 1.0. The same ratio
//! in instructions (deterministic): `bash ci/host-cost.sh`.
//!
//! Run: `cargo bench --bench kinematics` (`-- versus_textbook` for the
//! comparison alone).

use std::hint::black_box;
use std::time::Duration;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use deltakin::Real;

#[path = "shared/demo_robot.rs"]
mod demo_robot;
#[path = "shared/textbook.rs"]
mod textbook;

/// Agreement demanded of the textbook baseline with deltakin's guarded
/// f64 calls on the bench points before it is timed: joint angles (rad)
/// and positions (mm); both are exact closed forms, so only rounding
/// separates them.
const TEXTBOOK_AGREEMENT_RAD: f64 = 1e-9;
const TEXTBOOK_AGREEMENT_MM: f64 = 1e-7;

/// Guarded f32 inverse and forward kinematics beside a plain textbook f64
/// closed form (`shared/textbook.rs`) on the same points, in one run: the
/// host goal is a ratio of at most 1.0 (instructions, `ci/host-cost.sh`,
/// and time, here).
fn versus_textbook(c: &mut Criterion) {
    let robot = demo_robot::robot::<f32>();
    let r64 = demo_robot::robot::<f64>();
    let book = textbook::Textbook::new(
        demo_robot::BASE_RADIUS_MM,
        demo_robot::PLATFORM_RADIUS_MM,
        demo_robot::UPPER_ARM_MM,
        demo_robot::LOWER_ARM_MM,
    );
    let points64 = demo_robot::points();
    let joints64 = demo_robot::joints(&points64);
    for (p, j) in points64.iter().zip(&joints64) {
        let t = book.inverse(*p).expect("textbook inverse reaches every bench point");
        let q = book.forward(*j).expect("textbook forward assembles every bench point");
        let want = r64.forward(*j).expect("bench joints pass the guards").position;
        for k in 0..3 {
            assert!((t[k] - j[k]).abs() < TEXTBOOK_AGREEMENT_RAD, "textbook inverse at {p:?}: {t:?} vs {j:?}");
            assert!((q[k] - want[k]).abs() < TEXTBOOK_AGREEMENT_MM, "textbook forward at {j:?}: {q:?} vs {want:?}");
        }
    }
    let points: Vec<[f32; 3]> = demo_robot::convert(&points64);
    let joints: Vec<[f32; 3]> = demo_robot::convert(&joints64);
    let n = u64::try_from(points.len()).expect("few points");

    let mut group = c.benchmark_group("versus_textbook");
    group.throughput(Throughput::Elements(n));
    group.bench_function("inverse_guarded_f32", |b| run(b, &points, |p| robot.inverse(p)));
    group.bench_function("inverse_textbook_f64", |b| run(b, &points64, |p| book.inverse(p)));
    group.bench_function("forward_guarded_f32", |b| run(b, &joints, |j| robot.forward(j)));
    group.bench_function("forward_textbook_f64", |b| run(b, &joints64, |j| book.forward(j)));
    group.finish();
}

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
    versus_textbook(c);
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
