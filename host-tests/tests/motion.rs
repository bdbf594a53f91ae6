//! Property tests of the motion layer on the demo robot, streamed in f32
//! and in fixed point (both firmware paths; planning in f32): random moves
//! keep every guard and joint limit on every emitted setpoint; moves
//! through forbidden regions are refused before anything is emitted; the
//! queue keeps its moves in order; a long stream of a closed pick cycle
//! does not drift.

use std::cell::Cell;

use deltakin::motion::{Bounds, JointRateLimits, Law, MAX_JOINED_LINES, MotionFault, Move, Stream};
use deltakin::{Arith, Fixed, Real, Robot};
use deltakin_harness::config::RobotFile;
use proptest::prelude::*;
use proptest::test_runner::{Config, RngAlgorithm, TestRng, TestRunner};

mod common;

/// Cases per property (kept small: each case streams thousands of
/// setpoints through the debug-build kinematics).
const MOVE_CASES: u32 = 40;
const REJECT_CASES: u32 = 40;
const QUEUE_CASES: u32 = 64;
/// Relative slack when re-checking the stream's joint limits in f64 from
/// its f32 numbers (a few f32 rounding steps).
const LIMIT_RECHECK_REL: f64 = 1e-5;
/// Control period (s): 4 kHz.
const PERIOD: f32 = 2.5e-4;

fn robot() -> Robot<f32> {
    RobotFile::demo().robot::<f32>().expect("demo robot")
}

/// An f32 position (mm) in the stream's API type.
fn wide<S: Real>(p: [f32; 3]) -> [S::Wide; 3] {
    p.map(|v| S::Wide::from_f64(f64::from(v)).expect("in range"))
}

fn to_f64<A: Arith>(v: [A; 3]) -> [f64; 3] {
    v.map(A::to_f64)
}

fn runner(cases: u32) -> TestRunner {
    TestRunner::new_with_rng(
        Config { cases: common::cases(cases), failure_persistence: None, ..Config::default() },
        TestRng::deterministic_rng(RngAlgorithm::ChaCha),
    )
}

fn law(i: u8) -> Law {
    match i % 3 {
        0 => Law::Trapezoid,
        1 => Law::SCurve,
        _ => Law::Poly7,
    }
}

/// A point well inside the demo robot's guarded workspace (mm).
fn inner_point() -> impl Strategy<Value = [f32; 3]> {
    (0.0f32..230.0, 0.0f32..std::f32::consts::TAU, -810.0f32..-640.0)
        .prop_map(|(r, a, z)| [r * a.cos(), r * a.sin(), z])
}

#[derive(Clone, Debug)]
struct MoveCase {
    start: [f32; 3],
    to: [f32; 3],
    pick: Option<(f32, f32)>,
    law: u8,
    bounds: (f32, f32, f32),
    joint_speed_deg_s: f32,
    joint_accel_deg_s2: f32,
}

fn move_case() -> impl Strategy<Value = MoveCase> {
    (
        inner_point(),
        inner_point(),
        proptest::option::of((5.0f32..50.0, 0.05f32..1.0)),
        0u8..3,
        (200.0f32..3000.0, 2_000.0f32..60_000.0, 1.0e5f32..5.0e6),
        (150.0f32..900.0, 2_000.0f32..30_000.0),
    )
        .prop_map(|(start, to, pick, law, bounds, (v, a))| MoveCase {
            start,
            to,
            pick,
            law,
            bounds,
            joint_speed_deg_s: v,
            joint_accel_deg_s2: a,
        })
}

/// Relative slack for the fixed-point stream: its joint rates are Q18.14
/// (LSB 6.1e-5 rad/s), so a rate difference times the 4 kHz rate carries
/// up to 0.25 rad/s^2 of rounding against limits of 35 rad/s^2 and more;
/// the validation compares the same rounded numbers, so this only covers
/// the f64 recomputation here.
const LIMIT_RECHECK_REL_FIXED: f64 = 1e-5;

fn random_moves_keep_every_guard_and_joint_limit<S: Real>(recheck_rel: f64) {
    let robot = RobotFile::demo().robot::<S>().expect("demo robot");
    let name = std::any::type_name::<S>();
    let worst_speed = Cell::new(0.0f64);
    let worst_accel = Cell::new(0.0f64);
    let scaled = Cell::new(0u32);
    let accepted = Cell::new(0u32);
    let result = runner(MOVE_CASES).run(&move_case(), |c| {
        let limits = JointRateLimits {
            speed: [c.joint_speed_deg_s.to_radians(); 3],
            accel: [c.joint_accel_deg_s2.to_radians(); 3],
        };
        let mut stream: Stream<S, 2, f32> = Stream::new(robot, PERIOD, limits, wide::<S>(c.start)).expect("start");
        let bounds = Bounds { speed: c.bounds.0, accel: c.bounds.1, jerk: c.bounds.2 };
        let mv = match c.pick {
            None => Move::Line { to: c.to, law: law(c.law), bounds },
            Some((lift, frac)) => {
                let across = ((c.to[0] - c.start[0]).powi(2) + (c.to[1] - c.start[1]).powi(2)).sqrt();
                let r = (frac * lift).min(0.5 * across);
                Move::Pick { to: c.to, lift, blend_radius: r, law: law(c.law), bounds }
            }
        };
        let acc = match stream.push(&mv) {
            Ok(a) => a,
            // A pick cycle lifted out of the workspace, or a blend that
            // does not fit: not a reachable move, nothing to check.
            // A path that would graze a guard between two setpoints, or a
            // blend so tight that no allowed slowing keeps the tool's
            // acceleration within its bound: refused, nothing to check.
            Err(e)
                if matches!(
                    e.fault,
                    MotionFault::Kinematics(_)
                        | MotionFault::InvalidMove(_)
                        | MotionFault::BetweenCycles(_)
                        | MotionFault::ToolAccel
                ) =>
            {
                prop_assert_eq!(stream.next_setpoint(), Ok(None));
                return Ok(());
            }
            Err(e) => return Err(TestCaseError::fail(format!("refused: {e}"))),
        };
        accepted.set(accepted.get() + 1);
        scaled.set(scaled.get() + u32::from(acc.time_scaled));
        let mut prev = [0.0f64; 3];
        let mut count = 0u32;
        while let Some(step) = stream.next_setpoint().expect("validated move streams") {
            count += 1;
            let sp = step.setpoint;
            // Every guard, checked again from the emitted position.
            let again = robot.inverse(sp.position);
            prop_assert!(again.is_ok(), "guard fails at cycle {}: {:?}", sp.cycle, again);
            prop_assert_eq!(again.map(|s| s.joints).ok(), Some(sp.joints));
            #[allow(clippy::needless_range_loop)] // four parallel arrays
            for arm in 0..3 {
                let w = sp.joint_rates[arm].to_f64();
                let speed = w.abs() / f64::from(limits.speed[arm]);
                let accel = ((w - prev[arm]) / f64::from(PERIOD)).abs() / f64::from(limits.accel[arm]);
                prop_assert!(speed <= 1.0 + recheck_rel, "speed {speed} at cycle {}", sp.cycle);
                prop_assert!(accel <= 1.0 + recheck_rel, "accel {accel} at cycle {}", sp.cycle);
                worst_speed.set(worst_speed.get().max(speed));
                worst_accel.set(worst_accel.get().max(accel));
            }
            prev = to_f64(sp.joint_rates);
        }
        prop_assert_eq!(count, acc.cycles);
        // The move ends on its target, at rest.
        prop_assert_eq!(to_f64(stream.tail()), to_f64(wide::<S>(c.to)));
        Ok(())
    });
    result.unwrap();
    let (accepted, scaled) = (accepted.get(), scaled.get());
    eprintln!(
        "{name}: {accepted} of {MOVE_CASES} moves accepted, {scaled} time scaled; worst joint speed use {:.4} %, worst joint \
         acceleration use {:.4} % of the limits",
        100.0 * worst_speed.get(),
        100.0 * worst_accel.get()
    );
    assert!(accepted >= MOVE_CASES / 2, "too few reachable cases: {accepted}");
    assert!(scaled > 0, "no case exercised time scaling");
}

#[test]
fn random_moves_keep_every_guard_and_joint_limit_on_every_setpoint_f32() {
    random_moves_keep_every_guard_and_joint_limit::<f32>(LIMIT_RECHECK_REL);
}

#[test]
fn random_moves_keep_every_guard_and_joint_limit_on_every_setpoint_fixed() {
    random_moves_keep_every_guard_and_joint_limit::<Fixed>(LIMIT_RECHECK_REL_FIXED);
}

#[test]
fn moves_through_forbidden_regions_are_refused_before_any_setpoint() {
    let robot = robot();
    let limits = JointRateLimits { speed: [20.0; 3], accel: [500.0; 3] };
    let bounds = Bounds { speed: 1000.0, accel: 20_000.0, jerk: 1.0e6 };
    // Targets beyond reach (far out or far down) or up near the base,
    // where the arms stretch towards serial singularities and their
    // joint limits.
    let forbidden = prop_oneof![
        (600.0f32..900.0, 0.0f32..std::f32::consts::TAU, -800.0f32..-600.0).prop_map(|(r, a, z)| [
            r * a.cos(),
            r * a.sin(),
            z
        ]),
        (0.0f32..100.0, -1200.0f32..-1000.0).prop_map(|(x, z)| [x, 0.0, z]),
        (0.0f32..100.0, -380.0f32..-250.0).prop_map(|(x, z)| [x, -x, z]),
    ];
    let result = runner(REJECT_CASES).run(&(inner_point(), forbidden, 0u8..3), |(start, to, l)| {
        prop_assert!(robot.inverse(to).is_err());
        let mut stream: Stream<f32, 2> = Stream::new(robot, PERIOD, limits, start).expect("start inside");
        let err = stream.push(&Move::Line { to, law: law(l), bounds }).expect_err("must be refused");
        prop_assert!(matches!(err.fault, MotionFault::Kinematics(_) | MotionFault::BetweenCycles(_)), "{err:?}");
        prop_assert!(err.cycle >= 1);
        prop_assert!(stream.is_empty());
        prop_assert_eq!(stream.next_setpoint(), Ok(None));
        prop_assert_eq!(stream.tail(), start);
        Ok(())
    });
    result.unwrap();
}

#[test]
fn the_queue_keeps_every_move_in_order_and_refuses_when_full() {
    const CAP: usize = 4;
    let robot = robot();
    let limits = JointRateLimits { speed: [20.0; 3], accel: [2000.0; 3] };
    let home = [0.0f32, 0.0, -700.0];
    // Operations: Some(dwell cycles) pushes a dwell, None runs 3 cycles.
    let ops = proptest::collection::vec(proptest::option::of(1u32..6), 1..40);
    let result = runner(QUEUE_CASES).run(&ops, |ops| {
        let mut stream: Stream<f32, CAP> = Stream::new(robot, PERIOD, limits, home).expect("home");
        let mut expected: std::collections::VecDeque<(u32, u32)> = Default::default();
        let mut next_id = 0u32;
        let mut emitted_in_move = 0u32;
        let mut step = |stream: &mut Stream<f32, CAP>, expected: &mut std::collections::VecDeque<(u32, u32)>| {
            let got = stream.next_setpoint().expect("dwell streams");
            match (got, expected.front().copied()) {
                (None, None) => Ok(()),
                (Some(sp), Some((id, cycles))) => {
                    prop_assert_eq!(sp.move_id, id);
                    emitted_in_move += 1;
                    prop_assert_eq!(sp.setpoint.cycle, emitted_in_move);
                    prop_assert_eq!(sp.setpoint.end_of_move, emitted_in_move == cycles);
                    if sp.setpoint.end_of_move {
                        expected.pop_front();
                        emitted_in_move = 0;
                    }
                    Ok(())
                }
                (got, want) => Err(TestCaseError::fail(format!("emitted {got:?}, expected move {want:?}"))),
            }
        };
        for op in ops {
            match op {
                Some(cycles) => {
                    let mv = Move::Dwell { duration: cycles as f32 * PERIOD };
                    let was_full = stream.is_full();
                    match stream.push(&mv) {
                        Ok(acc) => {
                            prop_assert!(!was_full);
                            prop_assert_eq!(acc.id, next_id);
                            next_id += 1;
                            expected.push_back((acc.id, acc.cycles));
                        }
                        Err(e) => {
                            prop_assert!(was_full);
                            prop_assert_eq!(e.fault, MotionFault::QueueFull);
                        }
                    }
                    prop_assert_eq!(stream.len(), expected.len());
                }
                None => {
                    for _ in 0..3 {
                        step(&mut stream, &mut expected)?;
                    }
                }
            }
        }
        // Drain: every accepted move comes out, in order.
        for _ in 0..(CAP as u32 * 8) {
            step(&mut stream, &mut expected)?;
        }
        prop_assert!(expected.is_empty());
        Ok(())
    });
    result.unwrap();
}

/// Setpoints in the drift test (at least one million).
const DRIFT_SETPOINTS: u64 = 1_000_000;
/// Largest allowed distance between start and end (mm): 1 micrometre.
const DRIFT_MAX_MM: f64 = 1e-3;

/// Streams a closed pick cycle for at least [`DRIFT_SETPOINTS`] cycles in
/// `S` and returns (end distance, worst return distance) from the start (mm).
fn closed_pick_cycle_drift<S: Real>() -> (f64, f64) {
    let robot = RobotFile::demo().robot::<S>().expect("demo robot");
    let name = std::any::type_name::<S>();
    let limits = JointRateLimits { speed: [(720.0f32).to_radians(); 3], accel: [(15_000.0f32).to_radians(); 3] };
    let a = [-152.5f32, 60.0, -760.0];
    let b = [152.5f32, 60.0, -760.0];
    let bounds = Bounds { speed: 2500.0, accel: 40_000.0, jerk: 2.0e6 };
    let pick = |to| Move::Pick { to, lift: 25.0, blend_radius: 10.0, law: Law::SCurve, bounds };
    let (a_f32, b_f32) = (a, b);
    let a = wide::<S>(a);
    let mut stream: Stream<S, 2, f32> = Stream::new(robot, PERIOD, limits, a).expect("start");
    // Plan each leg once (from where it starts) and queue copies: the
    // stream computes every setpoint from the time within its move, so
    // repeating the legs cannot accumulate anything.
    let there = stream.plan(&pick(b_f32)).expect("a to b");
    stream.push_planned(there).expect("queued");
    let back = stream.plan(&pick(a_f32)).expect("b to a");
    let _ = stream.next_setpoint();
    stream.push_planned(back).expect("queued");
    let mut emitted = 1u64;
    let mut leg = 0u64;
    let mut worst_return = 0.0f64;
    let mut last = a;
    let mut stopping = false;
    while emitted < DRIFT_SETPOINTS || !stream.is_empty() {
        let Some(step) = stream.next_setpoint().expect("streams") else { break };
        emitted += 1;
        if step.setpoint.end_of_move {
            last = step.setpoint.position;
            leg += 1;
            if leg.is_multiple_of(2) {
                let d = dist(last, a);
                worst_return = worst_return.max(d);
            }
            // The queue already holds leg `leg + 1`; past the count, stop
            // pushing once that one closes the cycle (an even leg).
            stopping |= emitted >= DRIFT_SETPOINTS && leg % 2 == 1;
            if !stopping {
                let next = if leg % 2 == 1 { there } else { back };
                stream.push_planned(next).expect("queued again");
            }
        }
    }
    let drift = dist(last, a);
    eprintln!(
        "{name}: {emitted} setpoints, {leg} legs: end {drift:e} mm from the start, worst return {worst_return:e} mm"
    );
    assert!(emitted >= DRIFT_SETPOINTS);
    assert_eq!(leg % 2, 0, "the stream must finish on a closed cycle");
    (drift, worst_return)
}

#[test]
fn a_million_setpoints_of_a_closed_pick_cycle_end_where_they_started() {
    for (drift, worst_return) in [closed_pick_cycle_drift::<f32>(), closed_pick_cycle_drift::<Fixed>()] {
        assert!(drift <= DRIFT_MAX_MM && worst_return <= DRIFT_MAX_MM);
    }
}

fn dist<A: Arith>(p: [A; 3], q: [A; 3]) -> f64 {
    p.iter().zip(q.iter()).map(|(a, b)| (a.to_f64() - b.to_f64()).powi(2)).sum::<f64>().sqrt()
}

/// Corner tolerance of the join tests (mm).
const CORNER_TOL: f32 = 0.5;
/// How close the joined path passes the corner point, against the
/// tolerance (mm): the arc is sized to pass at exactly the tolerance, the
/// samples 0.25 mm apart miss its midpoint by far less than this.
const CORNER_PASS_SLACK_MM: f64 = 0.01;
/// Path bounds of the join tests (mm/s, mm/s^2, mm/s^3).
const JOIN_BOUNDS: Bounds<f32> = Bounds { speed: 1000.0, accel: 20_000.0, jerk: 1.0e6 };
/// Platform acceleration allowed from the second differences of the
/// emitted positions, as a multiple of the path acceleration bound: the
/// bound holds for the magnitude of the tool's acceleration, tangential
/// and centripetal together (time scaling keeps it).
const JOIN_ACCEL_FACTOR: f64 = 1.0;
/// Rounding in those second differences (mm/s^2): a position LSB of
/// 6.1e-5 mm (fixed point) over a 2.5e-4 s period squared gives about
/// 1e3 mm/s^2 per LSB; four LSB.
const JOIN_ACCEL_NOISE: f64 = 4.0e3;
/// Speed the platform must keep through a joined corner, as a fraction
/// of the path speed bound (a stop would be 0).
const JUNCTION_MIN_FRACTION: f64 = 0.5;

/// Distance from the corner point (mm) within which the joined motion
/// must keep its speed.
const CORNER_NEAR_MM: f64 = 20.0;

fn join_limits() -> JointRateLimits<f32> {
    JointRateLimits { speed: [720.0f32.to_radians(); 3], accel: [15_000.0f32.to_radians(); 3] }
}

fn line(to: [f32; 3]) -> Move<f32> {
    Move::Line { to, law: Law::SCurve, bounds: JOIN_BOUNDS }
}

/// What streaming a queue to its end showed.
struct Streamed {
    positions: Vec<[f64; 3]>,
    /// Cycles flagged as the end of a move, with their joint rates.
    ends: Vec<(usize, [f64; 3])>,
}

/// Streams everything queued, checking on every setpoint the guards (again
/// from the emitted position) and the joint speed and acceleration limits
/// (again in f64), and returns the positions (`start`, where the queue
/// begins, first).
fn stream_checked<S: Real, const N: usize>(
    stream: &mut Stream<S, N, f32>,
    start: [f64; 3],
    limits: &JointRateLimits<f32>,
    recheck_rel: f64,
) -> Streamed {
    let robot = *stream.robot();
    let mut out = Streamed { positions: vec![start], ends: Vec::new() };
    let mut prev = [0.0f64; 3];
    while let Some(step) = stream.next_setpoint().expect("validated moves stream") {
        let sp = step.setpoint;
        let again = robot.inverse(sp.position).expect("guards hold on every setpoint");
        assert_eq!(again.joints, sp.joints);
        let rates = to_f64(sp.joint_rates);
        for arm in 0..3 {
            let speed = rates[arm].abs() / f64::from(limits.speed[arm]);
            let accel = ((rates[arm] - prev[arm]) / f64::from(PERIOD)).abs() / f64::from(limits.accel[arm]);
            assert!(speed <= 1.0 + recheck_rel, "joint speed {speed} at cycle {}", sp.cycle);
            assert!(accel <= 1.0 + recheck_rel, "joint accel {accel} at cycle {}", sp.cycle);
        }
        prev = rates;
        out.positions.push(to_f64(sp.position));
        if sp.end_of_move {
            out.ends.push((out.positions.len() - 1, rates));
        }
    }
    out
}

fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

fn norm(a: [f64; 3]) -> f64 {
    (a[0] * a[0] + a[1] * a[1] + a[2] * a[2]).sqrt()
}

/// Platform speed (mm/s) between successive positions.
fn speeds(p: &[[f64; 3]]) -> Vec<f64> {
    p.windows(2).map(|w| norm(sub(w[1], w[0])) / f64::from(PERIOD)).collect()
}

/// Checks the positions are continuous in position and velocity: no step
/// longer than the speed bound allows, and no velocity change larger than
/// the acceleration bound allows (second differences).
fn assert_smooth(p: &[[f64; 3]]) {
    let dt = f64::from(PERIOD);
    let v_max = f64::from(JOIN_BOUNDS.speed);
    let a_max = JOIN_ACCEL_FACTOR * f64::from(JOIN_BOUNDS.accel) + JOIN_ACCEL_NOISE;
    for (i, w) in p.windows(3).enumerate() {
        let (v0, v1) = (sub(w[1], w[0]), sub(w[2], w[1]));
        assert!(norm(v1) / dt <= v_max * (1.0 + LIMIT_RECHECK_REL) + JOIN_ACCEL_NOISE * dt, "speed at {i}");
        let a = norm(sub(v1, v0)) / (dt * dt);
        assert!(a <= a_max, "platform acceleration {a} mm/s^2 at cycle {i}");
    }
}

/// Two lines with a shallow corner (a 14.9 degree turn at `corner`) are
/// joined: one queue entry, no stop, the arc passes the corner at the
/// tolerance, every setpoint within the guards and limits, position and
/// velocity continuous; the pair ends exactly on the second target.
fn shallow_corner_is_joined<S: Real>(recheck_rel: f64) {
    let robot = RobotFile::demo().robot::<S>().expect("demo robot");
    let limits = join_limits();
    let (home, corner, end) = ([0.0f32, 0.0, -700.0], [150.0f32, 0.0, -700.0], [300.0f32, 40.0, -700.0]);
    let mut stream: Stream<S, 4, f32> = Stream::new(robot, PERIOD, limits, wide::<S>(home)).expect("home");
    stream.set_corner_tolerance(Some(CORNER_TOL)).expect("tolerance");
    let a = stream.push(&line(corner)).expect("first line");
    let b = stream.push(&line(end)).expect("second line");
    assert!(!a.joined);
    assert!(b.joined, "a shallow corner joins");
    assert_eq!((a.id, b.id), (0, 1));
    assert_eq!(stream.len(), 1, "the joined pair is one queue entry");
    assert_eq!(to_f64(stream.tail()), to_f64(wide::<S>(end)));
    let out = stream_checked(&mut stream, to_f64(wide::<S>(home)), &limits, recheck_rel);
    assert_eq!(out.positions.len() - 1, b.cycles as usize);
    assert_eq!(out.ends.len(), 1, "no stop at the corner");
    assert_eq!(out.positions.last().copied(), Some(to_f64(wide::<S>(end))));
    assert_smooth(&out.positions);
    // Closest approach to the corner point: the tolerance.
    let c = to_f64(wide::<S>(corner));
    let (at, pass) = out
        .positions
        .iter()
        .enumerate()
        .map(|(i, p)| (i, norm(sub(*p, c))))
        .fold((0, f64::INFINITY), |best, x| if x.1 < best.1 { x } else { best });
    assert!((pass - f64::from(CORNER_TOL)).abs() < CORNER_PASS_SLACK_MM, "passes the corner at {pass} mm");
    // Speed through the corner: well above zero.
    let v = speeds(&out.positions);
    let junction = v[at];
    assert!(junction > JUNCTION_MIN_FRACTION * f64::from(JOIN_BOUNDS.speed), "junction speed {junction} mm/s");
    // No slowing down anywhere near the corner.
    let near = out.positions.windows(2).zip(v.iter()).filter(|(w, _)| norm(sub(w[0], c)) < CORNER_NEAR_MM);
    assert!(near.clone().count() > 0);
    for (_, &s) in near {
        assert!(s > JUNCTION_MIN_FRACTION * f64::from(JOIN_BOUNDS.speed), "speed {s} mm/s near the corner");
    }
    eprintln!("{}: corner passed at {pass:.4} mm, {junction:.1} mm/s, {} cycles", std::any::type_name::<S>(), b.cycles);
}

#[test]
fn a_shallow_corner_is_joined_without_a_stop_f32() {
    shallow_corner_is_joined::<f32>(LIMIT_RECHECK_REL);
}

#[test]
fn a_shallow_corner_is_joined_without_a_stop_fixed() {
    shallow_corner_is_joined::<Fixed>(LIMIT_RECHECK_REL_FIXED);
}

/// Three lines with two shallow corners join into one entry and stream
/// within every limit, smoothly, in f32 and in fixed point.
fn three_lines_join_into_one_move<S: Real>(recheck_rel: f64) {
    let robot = RobotFile::demo().robot::<S>().expect("demo robot");
    let limits = join_limits();
    let home = [-150.0f32, 0.0, -700.0];
    let mut stream: Stream<S, 4, f32> = Stream::new(robot, PERIOD, limits, wide::<S>(home)).expect("home");
    stream.set_corner_tolerance(Some(CORNER_TOL)).expect("tolerance");
    let targets = [[-20.0f32, 15.0, -705.0], [100.0, 0.0, -710.0], [220.0, 20.0, -700.0]];
    let joined: Vec<bool> = targets.iter().map(|&t| stream.push(&line(t)).expect("line").joined).collect();
    assert_eq!(joined, [false, true, true]);
    assert_eq!(stream.len(), 1);
    let out = stream_checked(&mut stream, to_f64(wide::<S>(home)), &limits, recheck_rel);
    assert_eq!(out.ends.len(), 1, "no stop at either corner");
    assert_eq!(out.positions.last().copied(), Some(to_f64(wide::<S>(targets[2]))));
    assert_smooth(&out.positions);
}

#[test]
fn three_lines_join_into_one_move_f32() {
    three_lines_join_into_one_move::<f32>(LIMIT_RECHECK_REL);
}

#[test]
fn three_lines_join_into_one_move_fixed() {
    three_lines_join_into_one_move::<Fixed>(LIMIT_RECHECK_REL_FIXED);
}

#[test]
fn collinear_lines_are_joined_at_full_speed() {
    let limits = join_limits();
    let (home, mid, end) = ([0.0f32, 0.0, -700.0], [100.0f32, 0.0, -700.0], [250.0f32, 0.0, -700.0]);
    let mut stream: Stream<f32, 4> = Stream::new(robot(), PERIOD, limits, home).expect("home");
    stream.set_corner_tolerance(Some(CORNER_TOL)).expect("tolerance");
    stream.push(&line(mid)).expect("first line");
    assert!(stream.push(&line(end)).expect("second line").joined);
    let out = stream_checked(&mut stream, to_f64(home), &limits, LIMIT_RECHECK_REL);
    assert_smooth(&out.positions);
    let at = out.positions.iter().position(|p| p[0] >= 100.0).expect("passes the junction");
    let v = speeds(&out.positions)[at];
    // Cruise: the bound reached 25 mm after the start (v^2 / 2a plus the
    // jerk phases), long before the junction.
    assert!((v / f64::from(JOIN_BOUNDS.speed) - 1.0).abs() < 1e-3, "junction speed {v} mm/s");
}

#[test]
fn a_reversal_and_a_sharp_corner_stop_at_the_corner() {
    let limits = join_limits();
    let home = [0.0f32, 0.0, -700.0];
    let corner = [150.0f32, 0.0, -700.0];
    for end in [[50.0f32, 0.0, -700.0], [150.0, 150.0, -700.0]] {
        let mut stream: Stream<f32, 4> = Stream::new(robot(), PERIOD, limits, home).expect("home");
        stream.set_corner_tolerance(Some(CORNER_TOL)).expect("tolerance");
        stream.push(&line(corner)).expect("first line");
        let b = stream.push(&line(end)).expect("second line");
        assert!(!b.joined, "{end:?} must not join");
        assert_eq!(stream.len(), 2);
        let out = stream_checked(&mut stream, to_f64(home), &limits, LIMIT_RECHECK_REL);
        // The first move ends on the corner, at rest.
        let (i, rates) = out.ends[0];
        assert_eq!(out.positions[i], to_f64(corner));
        assert_eq!(rates, [0.0; 3]);
        assert_eq!(out.ends.len(), 2);
    }
}

#[test]
fn no_join_without_a_tolerance_or_once_the_first_line_runs() {
    let limits = join_limits();
    let (home, corner, end) = ([0.0f32, 0.0, -700.0], [150.0f32, 0.0, -700.0], [300.0f32, 40.0, -700.0]);
    // No tolerance: the stream's behaviour is unchanged.
    let mut stream: Stream<f32, 4> = Stream::new(robot(), PERIOD, limits, home).expect("home");
    stream.push(&line(corner)).expect("first line");
    assert!(!stream.push(&line(end)).expect("second line").joined);
    assert_eq!(stream.len(), 2);
    // The first line already running: it cannot change any more.
    let mut stream: Stream<f32, 4> = Stream::new(robot(), PERIOD, limits, home).expect("home");
    stream.set_corner_tolerance(Some(CORNER_TOL)).expect("tolerance");
    stream.push(&line(corner)).expect("first line");
    assert!(stream.next_setpoint().expect("streams").is_some());
    assert!(!stream.push(&line(end)).expect("second line").joined);
    let out = stream_checked(&mut stream, to_f64(home), &limits, LIMIT_RECHECK_REL);
    assert_eq!(out.ends.len(), 2);
    assert_eq!(out.ends[0].1, [0.0; 3]);
    // A bad tolerance is refused.
    for bad in [0.0f32, -1.0, f32::NAN] {
        assert!(stream.set_corner_tolerance(Some(bad)).is_err());
    }
}

/// Rounding of one position step (mm): four f32 units in the last place
/// at 1000 mm (6.1e-5 mm each).
const STEP_ROUND_MM: f64 = 2.5e-4;

/// Cases of the joined-queue property (each streams a few thousand
/// setpoints).
const JOIN_QUEUE_CASES: u32 = 24;

/// One operation on a stream with joins: push a line to the next
/// waypoint, or run some cycles.
#[derive(Clone, Debug)]
enum JoinOp {
    /// Line to the next waypoint: `dx` further along x, at `y`, `z`.
    Line {
        dx: f32,
        y: f32,
        z: f32,
    },
    Run(u32),
}

fn join_op() -> impl Strategy<Value = JoinOp> {
    prop_oneof![
        (40.0f32..110.0, -25.0f32..25.0, -720.0f32..-690.0).prop_map(|(dx, y, z)| JoinOp::Line { dx, y, z }),
        (1u32..600).prop_map(JoinOp::Run),
    ]
}

/// Lines zig-zagging across the workspace with corners from collinear to
/// sharp, pushed while the queue runs: the queue keeps its entries in
/// order (a joined line merges into the entry before it, which had not
/// started), counts them right, refuses a push only when full and not
/// joinable, and every emitted setpoint is within the guards and the
/// joint limits, continuous across joins, ending on the last target.
#[test]
fn joined_lines_keep_the_queue_invariants_and_every_limit() {
    const CAP: usize = 3;
    let robot = robot();
    let limits = join_limits();
    let home = [-200.0f32, 0.0, -700.0];
    let ops = proptest::collection::vec(join_op(), 1..14);
    let joins = Cell::new(0u32);
    let stops = Cell::new(0u32);
    let longest = Cell::new(0usize);
    let result = runner(JOIN_QUEUE_CASES).run(&ops, |ops| {
        let mut stream: Stream<f32, CAP> = Stream::new(robot, PERIOD, limits, home).expect("home");
        stream.set_corner_tolerance(Some(CORNER_TOL)).expect("tolerance");
        // The model: (first id, cycles) per entry, cycles emitted of the front.
        let mut expected: std::collections::VecDeque<(u32, u32, usize)> = Default::default();
        let mut emitted = 0u32;
        let mut next_id = 0u32;
        let mut at = home;
        let mut last = to_f64(home);
        let mut prev_rates = [0.0f64; 3];
        let mut step = |stream: &mut Stream<f32, CAP>,
                        expected: &mut std::collections::VecDeque<(u32, u32, usize)>,
                        emitted: &mut u32|
         -> Result<bool, TestCaseError> {
            let got = stream.next_setpoint().expect("validated moves stream");
            match (got, expected.front().copied()) {
                (None, None) => Ok(false),
                (Some(s), Some((id, cycles, _))) => {
                    *emitted += 1;
                    let sp = s.setpoint;
                    prop_assert_eq!(s.move_id, id);
                    prop_assert_eq!(sp.cycle, *emitted);
                    prop_assert_eq!(sp.end_of_move, *emitted == cycles);
                    prop_assert_eq!(robot.inverse(sp.position).map(|g| g.joints).ok(), Some(sp.joints));
                    let rates = to_f64(sp.joint_rates);
                    for arm in 0..3 {
                        let speed = rates[arm].abs() / f64::from(limits.speed[arm]);
                        let accel =
                            ((rates[arm] - prev_rates[arm]) / f64::from(PERIOD)).abs() / f64::from(limits.accel[arm]);
                        prop_assert!(speed <= 1.0 + LIMIT_RECHECK_REL, "speed {}", speed);
                        prop_assert!(accel <= 1.0 + LIMIT_RECHECK_REL, "accel {}", accel);
                    }
                    prev_rates = rates;
                    let pos = to_f64(sp.position);
                    // Position continuous: no step beyond the speed bound.
                    let step_mm = norm(sub(pos, last));
                    let max_step = f64::from(JOIN_BOUNDS.speed) * f64::from(PERIOD);
                    prop_assert!(step_mm <= max_step + STEP_ROUND_MM, "step {}", step_mm);
                    last = pos;
                    if sp.end_of_move {
                        expected.pop_front();
                        *emitted = 0;
                    }
                    Ok(true)
                }
                (got, want) => Err(TestCaseError::fail(format!("emitted {got:?}, expected {want:?}"))),
            }
        };
        for op in ops {
            match op {
                JoinOp::Line { dx, y, z } => {
                    let to = [at[0] + dx, y, z];
                    if to[0] > 220.0 {
                        continue;
                    }
                    let was_full = stream.is_full();
                    let front_running = expected.len() == 1 && emitted > 0;
                    match stream.push(&line(to)) {
                        Ok(acc) => {
                            prop_assert_eq!(acc.id, next_id);
                            next_id += 1;
                            at = to;
                            if acc.joined {
                                joins.set(joins.get() + 1);
                                // Only an entry that has not started can change.
                                prop_assert!(!front_running && !expected.is_empty());
                                if let Some(back) = expected.back_mut() {
                                    back.1 = acc.cycles;
                                    back.2 += 1;
                                    prop_assert!(back.2 <= MAX_JOINED_LINES);
                                    longest.set(longest.get().max(back.2));
                                }
                            } else {
                                prop_assert!(!was_full);
                                stops.set(stops.get() + u32::from(!expected.is_empty()));
                                expected.push_back((acc.id, acc.cycles, 1));
                            }
                        }
                        Err(e) => {
                            prop_assert!(was_full, "refused: {}", e);
                            prop_assert_eq!(e.fault, MotionFault::QueueFull);
                        }
                    }
                    prop_assert_eq!(stream.len(), expected.len());
                    prop_assert_eq!(to_f64(stream.tail()), to_f64(at));
                }
                JoinOp::Run(n) => {
                    for _ in 0..n {
                        step(&mut stream, &mut expected, &mut emitted)?;
                    }
                }
            }
        }
        while step(&mut stream, &mut expected, &mut emitted)? {}
        prop_assert!(expected.is_empty());
        prop_assert_eq!(last, to_f64(at));
        Ok(())
    });
    result.unwrap();
    let (joins, stops) = (joins.get(), stops.get());
    let longest = longest.get();
    eprintln!(
        "joined queue: {joins} lines joined, {stops} queued behind another move without a join, longest chain {longest}"
    );
    assert!(joins > 0 && stops > 0, "both joins and stops exercised: {joins}, {stops}");
    assert!(longest > 2, "no chain of more than two lines: {longest}");
}
