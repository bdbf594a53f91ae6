//! Arbitrary bytes as geometry, limits, targets, joint angles, velocities,
//! forces and a move, fed to every public entry point of the core in f32,
//! f64 and fixed point, and to the motion stream (f32 and fixed point).
//! The fuzzer looks for panics (there must be none); the asserts below
//! check that whatever the core accepts is finite.
#![no_main]

use deltakin::motion::{Bounds, JointRateLimits, Law, Move, Stream};
use deltakin::{Arith, Fixed, Geometry, Limits, Real, Robot, Solution};
use libfuzzer_sys::fuzz_target;

/// Reads little-endian f32 values from the input, zero-padded.
struct Words<'a>(&'a [u8]);

impl Words<'_> {
    fn next(&mut self) -> f32 {
        let mut b = [0u8; 4];
        for (dst, src) in b.iter_mut().zip(self.0.iter()) {
            *dst = *src;
        }
        self.0 = self.0.get(4..).unwrap_or(&[]);
        f32::from_le_bytes(b)
    }
    fn three(&mut self) -> [f32; 3] {
        [self.next(), self.next(), self.next()]
    }
}

/// Fuzzed value to `T`: NaN and out-of-range values map to zero for types
/// that cannot hold them (fixed point), so the core still sees the rest.
fn to<T: Arith>(v: f32) -> T {
    T::from_f64(f64::from(v)).unwrap_or(T::ZERO)
}

fn check_solution<S: Real>(s: &Solution<S>) {
    assert!(s.joints.iter().all(|v| v.is_finite()), "accepted joints not finite");
    assert!(s.position.iter().all(|v| v.is_finite()), "accepted position not finite");
    assert!(s.margins.serial.iter().all(|v| v.is_finite()) && s.margins.parallel.is_finite());
}

fn robot<S: Real>(w: &mut Words<'_>, raw: bool) -> Option<Robot<S>> {
    // `raw` passes f32 values through unchanged (NaN, infinities included).
    let len = |v: f32| if raw { S::Wide::from_f64(f64::from(v)).unwrap_or(S::Wide::ZERO) } else { to::<S::Wide>(v) };
    let geometry = Geometry { base_radius: len(w.next()), platform_radius: len(w.next()), upper_arm: len(w.next()), lower_arm: len(w.next()) };
    let limits = Limits {
        joint_min: w.three().map(to::<S>),
        joint_max: w.three().map(to::<S>),
        passive_cone: to::<S>(w.next()),
        min_serial_margin: to::<S>(w.next()),
        min_parallel_margin: to::<S>(w.next()),
    };
    Robot::new(geometry, limits).ok()
}

fn kinematics<S: Real>(w: &mut Words<'_>, robot: &Robot<S>) {
    let target = w.three().map(to::<S::Wide>);
    let joints = w.three().map(to::<S>);
    let vector = w.three().map(to::<S::Wide>);
    for result in [robot.inverse(target), robot.inverse_unguarded(target), robot.forward(joints), robot.forward_unguarded(joints)] {
        if let Ok(s) = result {
            check_solution(&s);
            let _ = s.jacobian.joint_rates(vector);
            let _ = s.jacobian.cartesian_velocity(vector);
            let _ = s.jacobian.joint_torques(vector);
            let _ = s.jacobian.matrix();
        }
    }
}

/// At most this many setpoints are stepped per input, and moves are kept
/// short (speeds and accelerations from the input, but no slower than
/// these floors) so that one input stays fast to run: the planner's own
/// bound is 2^20 cycles, which is correct but slow for fuzzing.
const STEPS: usize = 256;

fn motion<S: Real>(w: &mut Words<'_>, robot: Robot<S>) {
    let start = w.three();
    let to_mm = w.three();
    let law = match w.next().to_bits() % 3 {
        0 => Law::Trapezoid,
        1 => Law::SCurve,
        _ => Law::Poly7,
    };
    let floor = |v: f32, min: f32| if v.is_finite() { v.abs().max(min) } else { v };
    let bounds = Bounds { speed: floor(w.next(), 200.0), accel: floor(w.next(), 4000.0), jerk: floor(w.next(), 1.0e5) };
    let limits = JointRateLimits { speed: w.three().map(|v| floor(v, 1.0)), accel: w.three().map(|v| floor(v, 20.0)) };
    let Ok(mut stream) = Stream::<S, 2, f32>::new(robot, 1.0e-3, limits, start.map(to::<S::Wide>)) else { return };
    let mv = if w.next().to_bits() % 2 == 0 {
        Move::Line { to: to_mm, law, bounds }
    } else {
        Move::Pick { to: to_mm, lift: w.next(), blend_radius: w.next(), law, bounds }
    };
    if stream.push(&mv).is_err() {
        return;
    }
    for _ in 0..STEPS {
        match stream.next_setpoint() {
            Ok(Some(step)) => assert!(step.setpoint.joints.iter().all(|v| v.is_finite())),
            Ok(None) | Err(_) => break,
        }
    }
}

fn exercise<S: Real>(data: &[u8]) {
    let mut w = Words(data);
    if let Some(robot) = robot::<S>(&mut w, true) {
        kinematics(&mut w, &robot);
        motion(&mut w, robot);
    }
}

fuzz_target!(|data: &[u8]| {
    exercise::<f32>(data);
    exercise::<f64>(data);
    exercise::<Fixed>(data);
});
