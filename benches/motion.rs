//! Per-cycle cost of the setpoint stream in f32 and in fixed point: time
//! law, path, guarded inverse kinematics and Jacobian joint rates, on the
//! demo robot running the 25 / 305 / 25 mm pick cycle (common practice)
//! back and forth.

use criterion::{Criterion, criterion_group, criterion_main};
use deltakin::motion::{Bounds, JointRateLimits, Law, Move, PlannedMove, Stream};
use deltakin::{Arith, Fixed, Geometry, Limits, Real, Robot};
use std::hint::black_box;

fn demo_robot() -> Robot<f32> {
    demo_robot_in::<f32>()
}

/// The demo robot in scalar `S` (lengths in its API type).
fn demo_robot_in<S: Real>() -> Robot<S> {
    let w = |v: f32| S::Wide::from_f64(f64::from(v)).expect("in range");
    let f = |v: f32| S::from_f64(f64::from(v)).expect("in range");
    let geometry =
        Geometry { base_radius: w(160.0), platform_radius: w(40.0), upper_arm: w(280.0), lower_arm: w(720.0) };
    let limits = Limits {
        joint_min: [f(-35f32.to_radians()); 3],
        joint_max: [f(85f32.to_radians()); 3],
        passive_cone: f(40f32.to_radians()),
        min_serial_margin: f(0.1),
        min_parallel_margin: f(0.1),
    };
    Robot::new(geometry, limits).expect("demo robot")
}

/// The pick cycle streamed back and forth in scalar `S`, planned in f32.
fn stream_setpoints<S: Real>(c: &mut Criterion, name: &str) {
    let limits = JointRateLimits { speed: [720f32.to_radians(); 3], accel: [15_000f32.to_radians(); 3] };
    let (a, b) = ([-152.5f32, 60.0, -760.0], [152.5f32, 60.0, -760.0]);
    let wide = |p: [f32; 3]| p.map(|v| S::Wide::from_f64(f64::from(v)).expect("in range"));
    let bounds = Bounds { speed: 2500.0, accel: 40_000.0, jerk: 2.0e6 };
    let pick = |to| Move::Pick { to, lift: 25.0, blend_radius: 10.0, law: Law::SCurve, bounds };
    let mut stream: Stream<S, 4, f32> = Stream::new(demo_robot_in::<S>(), 2.5e-4, limits, wide(a)).expect("stream");
    let there: PlannedMove<S, f32> = stream.plan(&pick(b)).expect("a to b");
    stream.push_planned(there).expect("queued");
    let back = stream.plan(&pick(a)).expect("b to a");
    stream.push_planned(back).expect("queued");
    let mut legs = 0u32;
    c.bench_function(&format!("stream setpoint (pick cycle, s-curve, {name})"), |bench| {
        bench.iter(|| {
            let step = stream.next_setpoint().expect("validated");
            if let Some(s) = step
                && s.setpoint.end_of_move
            {
                legs += 1;
                let next = if legs % 2 == 1 { there } else { back };
                stream.push_planned(next).expect("queued again");
            }
            black_box(step)
        });
    });
}

fn setpoints(c: &mut Criterion) {
    stream_setpoints::<f32>(c, "f32");
    let robot = demo_robot();
    let limits = JointRateLimits { speed: [720f32.to_radians(); 3], accel: [15_000f32.to_radians(); 3] };
    let (a, b) = ([-152.5f32, 60.0, -760.0], [152.5f32, 60.0, -760.0]);
    let bounds = Bounds { speed: 2500.0, accel: 40_000.0, jerk: 2.0e6 };
    let line = {
        let s: Stream<f32, 1> = Stream::new(robot, 2.5e-4, limits, a).expect("stream");
        s.plan(&Move::Line { to: b, law: Law::Trapezoid, bounds }).expect("line")
    };
    let mut k = 0u32;
    c.bench_function("setpoint_at (line, trapezoid, f32)", |bench| {
        bench.iter(|| {
            k = if k >= line.cycles() { 1 } else { k + 1 };
            black_box(line.setpoint_at(&robot, black_box(k)))
        });
    });
}

/// The same pick cycle streamed in fixed point (planned in f32).
fn fixed_setpoints(c: &mut Criterion) {
    stream_setpoints::<Fixed>(c, "fixed");
}

/// The guarded inverse kinematics alone, for comparison: the share of a
/// setpoint that is not the motion layer's.
fn guarded_inverse(c: &mut Criterion) {
    let robot = demo_robot();
    let mut x = -150.0f32;
    c.bench_function("guarded inverse alone (f32)", |bench| {
        bench.iter(|| {
            x = if x > 150.0 { -150.0 } else { x + 0.37 };
            black_box(robot.inverse(black_box([x, 60.0, -760.0])))
        });
    });
}

criterion_group!(benches, setpoints, fixed_setpoints, guarded_inverse);
criterion_main!(benches);
