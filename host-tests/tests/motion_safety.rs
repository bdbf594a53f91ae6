//! Motion safety: the stream never emits a setpoint past a limit, nor a
//! path that crosses a guard between two setpoints, nor a move that beats
//! the joint limits by being shorter than a cycle, nor a blend whose tool
//! acceleration exceeds the move's bound. Each regression case is named
//! for what it guards; the property test checks the continuous guarantee
//! by sampling the path between setpoints.

use deltakin::motion::{
    Bounds, JointRateLimits, Law, MotionError, MotionFault, Move, PlannedMove, Stream, joint_rounding_rad,
};
use std::cell::Cell;

use deltakin::{Arith, Bound, Error, JointEnd, Real, Robot};
use deltakin_harness::config::RobotFile;
use proptest::prelude::*;
use proptest::test_runner::{Config, RngAlgorithm, TestRng, TestRunner};

/// Sub-samples of the path between two consecutive setpoints in the
/// continuous-guarantee property test.
const SUBSAMPLES: u32 = 16;
/// Relative slack when re-checking the stream's limits in f64 from its
/// own numbers (a few rounding steps of the stream's type).
const RECHECK_REL: f64 = 1e-5;
/// Dense samples along a reproducer's line, to show the guard it would
/// cross really is crossed somewhere on it.
const DENSE: u32 = 200_000;
/// How close to its bound the demo pick cycle's tool acceleration must
/// come (the bound binds: time scaling slows the cycle only as far as
/// it must), as a fraction of the bound.
const TOOL_ACCEL_BINDING: f64 = 0.95;
/// Rounding in tool accelerations from second differences of f64
/// positions (mm/s^2): far below 1e-3 of the demo's 40,000 bound.
const TOOL_ACCEL_NOISE: f64 = 1.0;

fn demo<S: Real>() -> Robot<S> {
    RobotFile::demo().robot::<S>().expect("demo robot")
}

fn wide<S: Real>(p: [f64; 3]) -> [S::Wide; 3] {
    p.map(|v| <S::Wide as Arith>::from_f64(v).expect("in range"))
}

fn limits(speed_deg_s: f32, accel_deg_s2: f32) -> JointRateLimits<f32> {
    JointRateLimits { speed: [speed_deg_s.to_radians(); 3], accel: [accel_deg_s2.to_radians(); 3] }
}

/// Pushes one move on a fresh stream of type `S` (planned in f32).
fn push_one<S: Real>(
    start: [f64; 3],
    mv: &Move<f32>,
    period: f32,
    limits: JointRateLimits<f32>,
) -> Result<Stream<S, 2, f32>, MotionError> {
    let mut stream: Stream<S, 2, f32> = Stream::new(demo::<S>(), period, limits, wide::<S>(start))?;
    stream.push(mv)?;
    Ok(stream)
}

/// Every setpoint a stream emits, with the joint angles before the first.
fn drain<S: Real>(stream: &mut Stream<S, 2, f32>, start_joints: [f64; 3]) -> Vec<([f64; 3], [f64; 3], [f64; 3])> {
    let mut out = vec![([f64::NAN; 3], start_joints, [0.0; 3])];
    while let Some(s) = stream.next_setpoint().expect("validated move streams") {
        let sp = s.setpoint;
        out.push((sp.position.map(Arith::to_f64), sp.joints.map(Arith::to_f64), sp.joint_rates.map(Arith::to_f64)));
    }
    out
}

/// Checks the emitted joints: each step within the speed limit, each
/// step one that a joint within the acceleration limit `A` can make
/// between the two rates it lies between: within
/// `(A T / 4) (1 - u^2) + 2 e / T` of their mean, `u` the rate change
/// over `A T` and `e` the joint rounding of the type (the exact bound of
/// `deltakin::motion::check`, re-derived here: the rate's envelopes
/// `w0 + A t` and `w1 + A (T - t)` meet at the peak; what a servo
/// following the setpoints sees is what the rates say).
fn assert_steps_within_limits<S: Real>(
    rows: &[([f64; 3], [f64; 3], [f64; 3])],
    period: f64,
    lim: &JointRateLimits<f32>,
) {
    let rounding = joint_rounding_rad::<S>();
    for (k, w) in rows.windows(2).enumerate() {
        let ((_, q0, w0), (_, q1, w1)) = (w[0], w[1]);
        for arm in 0..3 {
            let step = (q1[arm] - q0[arm]) / period;
            let vmax = f64::from(lim.speed[arm]);
            let amax = f64::from(lim.accel[arm]);
            assert!(step.abs() <= vmax * (1.0 + RECHECK_REL), "cycle {k} arm {arm}: step {step} rad/s");
            let gap = (step - 0.5 * (w0[arm] + w1[arm])).abs();
            let u = ((w1[arm] - w0[arm]).abs() / (amax * period)).min(1.0);
            let allowed = (0.25 * amax * period * (1.0 - u * u) + 2.0 * rounding / period) * (1.0 + RECHECK_REL);
            assert!(gap <= allowed, "cycle {k} arm {arm}: step {step} against rates {} {}", w0[arm], w1[arm]);
        }
    }
}

/// A fast line shorter than one cycle's travel: a units mistake in the
/// bounds (mm/s written as um/s) that the joint limits must catch.
fn units_mistake_line() -> Move<f32> {
    Move::Line {
        to: [100.0, 0.0, -700.0],
        law: Law::Trapezoid,
        bounds: Bounds { speed: 1.0e7, accel: 1.0e12, jerk: 1.0e14 },
    }
}

fn short_move_is_refused_or_slowed<S: Real>(mv: &Move<f32>) {
    let lim = limits(720.0, 15_000.0);
    let start = [0.0, 0.0, -700.0];
    match push_one::<S>(start, mv, 2.5e-4, lim) {
        Err(e) => assert!(
            matches!(
                e.fault,
                MotionFault::JointSpeed { .. } | MotionFault::JointAccel { .. } | MotionFault::Unrepresentable
            ),
            "{}: refused for another reason: {e}",
            std::any::type_name::<S>()
        ),
        Ok(mut stream) => {
            let q0 = demo::<S>().inverse(wide::<S>(start)).expect("start").joints.map(|v| v.to_f64());
            let rows = drain(&mut stream, q0);
            assert!(rows.len() > 2, "a slowed move lasts more than one cycle");
            assert_steps_within_limits::<S>(&rows, 2.5e-4, &lim);
        }
    }
}

#[test]
fn a_line_shorter_than_a_cycle_cannot_jump_past_the_joint_speed_limit() {
    short_move_is_refused_or_slowed::<f32>(&units_mistake_line());
    short_move_is_refused_or_slowed::<f64>(&units_mistake_line());
    short_move_is_refused_or_slowed::<deltakin::Fixed>(&units_mistake_line());
    // And the exact refusal in f32: the joint speed of arm 0 at cycle 1.
    let e = push_one::<f32>([0.0, 0.0, -700.0], &units_mistake_line(), 2.5e-4, limits(720.0, 15_000.0)).err();
    assert_eq!(e, Some(MotionError { cycle: 1, fault: MotionFault::JointSpeed { arm: 0 } }));
}

#[test]
fn a_joint_move_shorter_than_a_cycle_cannot_jump_past_the_joint_speed_limit() {
    let mv = Move::Joint {
        to: [30.0f32.to_radians(), 20.0f32.to_radians(), 25.0f32.to_radians()],
        law: Law::Trapezoid,
        bounds: Bounds { speed: 1.0e7f32.to_radians(), accel: 1.0e12f32.to_radians(), jerk: 1.0e14f32.to_radians() },
    };
    short_move_is_refused_or_slowed::<f32>(&mv);
    short_move_is_refused_or_slowed::<f64>(&mv);
    short_move_is_refused_or_slowed::<deltakin::Fixed>(&mv);
}

#[test]
fn a_tiny_fast_move_is_slowed_to_the_joint_limits_not_jumped() {
    // 0.5 mm at absurd bounds: one cycle as asked, a jump of about
    // 0.07 degrees; slowed by time scaling to steps within the limits.
    let mv = Move::Line {
        to: [0.5, 0.0, -700.0],
        law: Law::Trapezoid,
        bounds: Bounds { speed: 1.0e5, accel: 1.0e8, jerk: 1.0e10 },
    };
    let lim = limits(720.0, 15_000.0);
    for period in [2.5e-4f32, 1.0e-3] {
        let mut stream = push_one::<f32>([0.0, 0.0, -700.0], &mv, period, lim).expect("slowed, not refused");
        let q0 = demo::<f32>().inverse([0.0, 0.0, -700.0]).expect("start").joints.map(f64::from);
        let rows = drain(&mut stream, q0);
        assert!(rows.len() > 3, "the move was slowed over several cycles ({} rows)", rows.len());
        assert_steps_within_limits::<f32>(&rows, f64::from(period), &lim);
    }
}

/// The fuzz finding `ci/fuzz/regressions/one-cycle-line-jumps-the-joints`
/// (f32, 500 Hz, joint limits 1 rad/s and 20 rad/s^2): a line so short and
/// fast that it lasts one cycle, whose step of 6e-5 rad between two rests
/// needs about 60 rad/s^2. The old allowance (`A T / 2` plus a flat
/// rounding) let it through; a joint within 20 rad/s^2 moves at most
/// `A T^2 / 4 = 2e-5 rad` between two rests, so it is slowed (or refused).
#[test]
fn a_one_cycle_step_past_the_rest_to_rest_acceleration_bound_is_slowed() {
    use deltakin::Geometry;
    use deltakin::Limits;
    use deltakin_harness::contract::Contract;
    let robot = Robot::<f32>::new(
        Geometry { base_radius: 42823.492, platform_radius: 93182.555, upper_arm: 2724.4548, lower_arm: 51015.277 },
        Limits {
            joint_min: [2.3510803e-38, 9.1837e-41, 2.603241e-29],
            joint_max: [3.0039215; 3],
            passive_cone: 0.6953163,
            min_serial_margin: 1e-45,
            min_parallel_margin: 0.0,
        },
    )
    .expect("the fuzzed machine is admitted");
    let (period, lim) = (2.0e-3f32, JointRateLimits { speed: [1.0f32; 3], accel: [20.0f32; 3] });
    // The first coordinate is the subnormal the fuzzer found (bits 0x8100).
    let start = [f32::from_bits(0x8100), 3.0517578e-5, 4.3921376e-5];
    let mv = Move::Line {
        to: [2.3510607e-38, 1.5046328e-36, 3.00391],
        law: Law::Poly7,
        bounds: Bounds { speed: 9.965484e17, accel: 9.96938e17, jerk: 9.96938e17 },
    };
    let mut stream: Stream<f32, 2, f32> = Stream::new(robot, period, lim, start).expect("start");
    match stream.push(&mv) {
        Err(e) => assert!(matches!(e.fault, MotionFault::JointAccel { .. } | MotionFault::JointSpeed { .. }), "{e}"),
        Ok(acc) => {
            assert!(acc.cycles > 1, "slowed past one cycle");
            let q0 = robot.inverse(start).expect("start").joints;
            let limits_f64 = JointRateLimits { speed: [1.0; 3], accel: [20.0; 3] };
            let mut contract = Contract::new(robot, f64::from(period), &limits_f64, q0);
            let mut rows = vec![([f64::NAN; 3], q0.map(f64::from), [0.0; 3])];
            while let Some(s) = stream.next_setpoint().expect("validated move streams") {
                contract.check(&s.setpoint).unwrap_or_else(|v| panic!("{v}"));
                let sp = s.setpoint;
                rows.push((sp.position.map(f64::from), sp.joints.map(f64::from), sp.joint_rates.map(f64::from)));
            }
            contract.finish().unwrap_or_else(|v| panic!("{v}"));
            assert_steps_within_limits::<f32>(&rows, f64::from(period), &lim);
        }
    }
}

/// The line of the joint-minimum reproducer (demo robot): its samples at
/// 4 kHz all keep theta1 above -35 degrees, the path between two of them
/// does not.
const GRAZE_FROM: [f64; 3] = [-19.17, 193.28, -558.266393954143];
const GRAZE_TO: [f64; 3] = [-262.65, 132.71, -536.666393954143];
/// The line of the elbow-cone reproducer (demo robot, 1 kHz).
const CONE_FROM: [f64; 3] = [229.70169566316144, 146.99766299664924, -540.1128815704187];
const CONE_TO: [f64; 3] = [158.8671134592073, -76.96345904197761, -554.306190744629];

fn trapezoid(speed: f32) -> Bounds<f32> {
    Bounds { speed, accel: 1.0e5, jerk: 1.0e7 }
}

/// The smallest value of `f` at `DENSE` points along the segment, by the
/// f64 core without guards.
fn dense_min(from: [f64; 3], to: [f64; 3], f: impl Fn(&deltakin::Solution<f64>) -> f64) -> f64 {
    let robot = demo::<f64>();
    (0..=DENSE)
        .map(|i| {
            let t = f64::from(i) / f64::from(DENSE);
            let p = [0, 1, 2].map(|c| from[c] + t * (to[c] - from[c]));
            f(&robot.inverse_unguarded(p).expect("reachable"))
        })
        .fold(f64::INFINITY, f64::min)
}

fn refusal<S: Real>(from: [f64; 3], mv: &Move<f32>, period: f32, lim: JointRateLimits<f32>) -> MotionFault {
    push_one::<S>(from, mv, period, lim).err().map(|e| e.fault).expect("refused")
}

#[test]
fn a_line_that_crosses_the_joint_minimum_between_setpoints_is_refused() {
    // The crossing is real: dense samples of the line go below -35 deg.
    let lowest = dense_min(GRAZE_FROM, GRAZE_TO, |s| s.joints[1]);
    assert!(lowest < (-35.0f64).to_radians(), "theta1 reaches {} deg", lowest.to_degrees());
    let mv = Move::Line { to: GRAZE_TO.map(|v| v as f32), law: Law::Trapezoid, bounds: trapezoid(2480.0) };
    let lim = limits(720.0, 1.0e6);
    let want = MotionFault::BetweenCycles(Error::JointLimit { arm: 1, bound: Bound::Min });
    assert_eq!(refusal::<f32>(GRAZE_FROM, &mv, 2.5e-4, lim), want);
    assert_eq!(refusal::<f64>(GRAZE_FROM, &mv, 2.5e-4, lim), want);
}

#[test]
fn a_line_that_leaves_the_elbow_cone_between_setpoints_is_refused() {
    let cone_cos = 40.0f64.to_radians().cos();
    let lowest = dense_min(CONE_FROM, CONE_TO, |s| s.margins.passive_tilt_cos[0][0]);
    assert!(lowest < cone_cos, "the elbow tilts {} deg at most", lowest.acos().to_degrees());
    let mv = Move::Line { to: CONE_TO.map(|v| v as f32), law: Law::Trapezoid, bounds: trapezoid(2340.0) };
    let lim = limits(720.0, 1.0e6);
    let want = MotionFault::BetweenCycles(Error::PassiveLimit { arm: 0, end: JointEnd::Elbow });
    assert_eq!(refusal::<f32>(CONE_FROM, &mv, 1.0e-3, lim), want);
    assert_eq!(refusal::<f64>(CONE_FROM, &mv, 1.0e-3, lim), want);
}

/// Tool accelerations (mm/s^2) from second differences of the emitted
/// positions, the start at rest counted before the first.
fn tool_accels(start: [f64; 3], rows: &[([f64; 3], [f64; 3], [f64; 3])], period: f64) -> Vec<f64> {
    let mut p: Vec<[f64; 3]> = vec![start, start];
    p.extend(rows.iter().skip(1).map(|r| r.0));
    let last = *p.last().expect("rows");
    p.push(last);
    p.windows(3)
        .map(|w| {
            let a = [0, 1, 2].map(|c| (w[2][c] - 2.0 * w[1][c] + w[0][c]) / (period * period));
            (a[0] * a[0] + a[1] * a[1] + a[2] * a[2]).sqrt()
        })
        .collect()
}

#[test]
fn the_pick_cycle_keeps_the_tool_acceleration_within_its_bound() {
    // The demo's benchmark pick (25 up, 305 across, 25 down, 10 mm
    // blends) at the demo's bounds, streamed in f64.
    let accel = 40_000.0f32;
    let mv = Move::Pick {
        to: [152.5, 60.0, -760.0],
        lift: 25.0,
        blend_radius: 10.0,
        law: Law::SCurve,
        bounds: Bounds { speed: 2500.0, accel, jerk: 2.0e6 },
    };
    let start = [-152.5, 60.0, -760.0];
    let lim = limits(720.0, 15_000.0);
    let mut stream = push_one::<f64>(start, &mv, 2.5e-4, lim).expect("the demo pick runs");
    let q0 = demo::<f64>().inverse(start).expect("start").joints;
    let rows = drain(&mut stream, q0);
    let peak = tool_accels(start, &rows, 2.5e-4).into_iter().fold(0.0, f64::max);
    let bound = f64::from(accel);
    assert!(peak <= bound + TOOL_ACCEL_NOISE, "tool acceleration {peak} mm/s^2");
    assert!(peak >= TOOL_ACCEL_BINDING * bound, "the bound binds: peak {peak} mm/s^2");
    assert_steps_within_limits::<f64>(&rows, 2.5e-4, &lim);
}

#[test]
fn the_planned_pick_reports_its_tool_acceleration_usage() {
    let mv = Move::Pick {
        to: [152.5, 60.0, -760.0],
        lift: 25.0,
        blend_radius: 10.0,
        law: Law::SCurve,
        bounds: Bounds { speed: 2500.0, accel: 40_000.0, jerk: 2.0e6 },
    };
    let stream: Stream<f32, 2, f32> =
        Stream::new(demo::<f32>(), 2.5e-4, limits(720.0, 15_000.0), [-152.5, 60.0, -760.0]).expect("start");
    let planned: PlannedMove<f32> = stream.plan(&mv).expect("planned");
    let usage = planned.tool_accel_usage();
    assert!((TOOL_ACCEL_BINDING as f32..=1.0).contains(&usage), "usage {usage}");
    assert!(planned.time_scaled());
}

#[derive(Clone, Debug)]
struct LineCase {
    from: [f64; 3],
    to: [f64; 3],
    speed: f32,
    period: f32,
    /// `Some(d)`: stop the line `d` mm short of the first point where it
    /// leaves the guarded workspace, so that it ends close to a limit.
    short_of_limit: Option<f64>,
}

/// Where the line from `from` towards `to` first fails a guard, less
/// `back` mm (`to` itself when it never does): by a fine scan and
/// bisection with the f64 core.
fn stop_short(robot: &Robot<f64>, from: [f64; 3], to: [f64; 3], back: f64) -> [f64; 3] {
    const SCAN: u32 = 2_000;
    let at = |t: f64| [0, 1, 2].map(|c| from[c] + t * (to[c] - from[c]));
    let Some(i) = (1..=SCAN).find(|&i| robot.inverse(at(f64::from(i) / f64::from(SCAN))).is_err()) else {
        return to;
    };
    let (mut lo, mut hi) = (f64::from(i - 1) / f64::from(SCAN), f64::from(i) / f64::from(SCAN));
    for _ in 0..50 {
        let mid = 0.5 * (lo + hi);
        if robot.inverse(at(mid)).is_ok() { lo = mid } else { hi = mid }
    }
    let len = (0..3).map(|c| (to[c] - from[c]).powi(2)).sum::<f64>().sqrt();
    at((lo - back / len).max(0.0))
}

/// Points anywhere in and around the demo robot's workspace, so that many
/// lines graze or cross a guard.
fn any_point() -> impl Strategy<Value = [f64; 3]> {
    (0.0f64..320.0, 0.0f64..std::f64::consts::TAU, -900.0f64..-480.0)
        .prop_map(|(r, a, z)| [r * a.cos(), r * a.sin(), z])
}

fn line_case() -> impl Strategy<Value = LineCase> {
    (
        any_point(),
        any_point(),
        200.0f32..3000.0,
        prop_oneof![Just(2.5e-4f32), Just(5.0e-4), Just(1.0e-3)],
        proptest::option::of(0.0f64..1.0),
    )
        .prop_map(|(from, to, speed, period, short_of_limit)| LineCase { from, to, speed, period, short_of_limit })
}

fn cases(default: u32) -> u32 {
    std::env::var("PROPTEST_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(default)
}

#[test]
fn no_point_between_accepted_setpoints_violates_a_guard() {
    let robot = demo::<f64>();
    let lim = limits(720.0, 1.0e6);
    let mut runner = TestRunner::new_with_rng(
        Config { cases: cases(64), failure_persistence: None, ..Config::default() },
        TestRng::deterministic_rng(RngAlgorithm::ChaCha),
    );
    let accepted = Cell::new(0u32);
    let between = Cell::new(0u32);
    let near = Cell::new(0u32);
    runner
        .run(&line_case(), |c| {
            if robot.inverse(c.from).is_err() {
                return Ok(());
            }
            let to = match c.short_of_limit {
                Some(back) => stop_short(&robot, c.from, c.to, back),
                None => c.to,
            };
            let mv = Move::Line { to: to.map(|v| v as f32), law: Law::Trapezoid, bounds: trapezoid(c.speed) };
            let mut stream = match push_one::<f64>(c.from, &mv, c.period, lim) {
                Ok(s) => s,
                Err(e) => {
                    between.set(between.get() + u32::from(matches!(e.fault, MotionFault::BetweenCycles(_))));
                    return Ok(());
                }
            };
            accepted.set(accepted.get() + 1);
            near.set(near.get() + u32::from(c.short_of_limit.is_some()));
            let rows = drain(&mut stream, robot.inverse(c.from).expect("start").joints);
            let mut prev = c.from;
            for r in rows.iter().skip(1) {
                for j in 1..SUBSAMPLES {
                    let t = f64::from(j) / f64::from(SUBSAMPLES);
                    let p = [0, 1, 2].map(|i| prev[i] + t * (r.0[i] - prev[i]));
                    let guarded = robot.inverse(p);
                    prop_assert!(guarded.is_ok(), "between setpoints at {p:?}: {guarded:?}");
                }
                prev = r.0;
            }
            Ok(())
        })
        .unwrap();
    let (accepted, between, near) = (accepted.get(), between.get(), near.get());
    eprintln!(
        "{accepted} lines accepted and sampled between setpoints ({near} ending within 1 mm of a limit); {between} \
         refused for a crossing between them"
    );
    // Grazing crossings are rare at random (the tightening is second
    // order); the regression cases above cover them.
    assert!(near > 0 && accepted > near, "the cases reach limits and the open workspace");
}
