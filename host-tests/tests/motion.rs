//! Property tests of the motion layer on the demo robot, streamed in f32
//! and in fixed point (both firmware paths; planning in f32): random moves
//! keep every guard and joint limit on every emitted setpoint; moves
//! through forbidden regions are refused before anything is emitted; the
//! queue keeps its moves in order; a long stream of a closed pick cycle
//! does not drift.

use std::cell::Cell;

use deltakin::motion::{Bounds, JointRateLimits, Law, MotionFault, Move, Stream};
use deltakin::{Arith, Fixed, Real, Robot};
use deltakin_harness::config::RobotFile;
use proptest::prelude::*;
use proptest::test_runner::{Config, RngAlgorithm, TestRng, TestRunner};

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
        Config { cases, failure_persistence: None, ..Config::default() },
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
            Err(e) if matches!(e.fault, MotionFault::Kinematics(_) | MotionFault::InvalidMove(_)) => {
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
        prop_assert!(matches!(err.fault, MotionFault::Kinematics(_)), "{err:?}");
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
            if leg % 2 == 0 {
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
