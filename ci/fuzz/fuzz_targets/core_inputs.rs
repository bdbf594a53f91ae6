//! Arbitrary bytes as geometry, limits, targets, joint angles, velocities,
//! forces and a program of moves, fed to every public entry point of the
//! core in f32, f64 and fixed point, and to the motion stream. NaN and
//! infinities reach the core unchanged (fixed point gets its reserved
//! "not a number"): the core must refuse them with an error, never panic.
//!
//! Every setpoint the stream emits is checked against the setpoint
//! contract (`host-tests/src/contract.rs`, included below, shared with the
//! host tests): both guarded solves accept it, the joint speed and
//! acceleration limits hold for the Jacobian rates and for the finite
//! differences of the joints, the rates agree with the joints, and the
//! stream starts and ends at rest. A violation panics with the decoded
//! input (geometry, limits, period, moves).
#![no_main]

use deltakin::motion::{Bounds, JointRateLimits, Law, Move, Stream};
use deltakin::{Arith, Fixed, FixedWide, Geometry, Limits, Real, Robot, Solution};
use libfuzzer_sys::fuzz_target;

#[path = "../../../host-tests/src/contract.rs"]
#[allow(dead_code)]
mod contract;

use contract::{Contract, Rounding};

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
    /// A choice among `n`.
    fn pick(&mut self, n: u32) -> u32 {
        self.next().to_bits() % n
    }
}

/// A fuzzed f32 in a core type, NaN and infinities included: floats keep
/// them; fixed point maps them, and finite values beyond its range, to
/// its reserved "not a number".
trait Raw: Arith {
    fn raw(v: f32) -> Self;
}

impl Raw for f32 {
    fn raw(v: f32) -> Self {
        v
    }
}

impl Raw for f64 {
    fn raw(v: f32) -> Self {
        f64::from(v)
    }
}

impl Raw for Fixed {
    fn raw(v: f32) -> Self {
        Fixed::from_f64(f64::from(v)).unwrap_or(Fixed::NAN)
    }
}

impl Raw for FixedWide {
    fn raw(v: f32) -> Self {
        FixedWide::from_f64(f64::from(v)).unwrap_or(FixedWide::NAN)
    }
}

fn check_solution<S: Real>(s: &Solution<S>) {
    assert!(s.joints.iter().all(|v| v.is_finite()), "accepted joints not finite");
    assert!(s.position.iter().all(|v| v.is_finite()), "accepted position not finite");
    assert!(s.margins.serial.iter().all(|v| v.is_finite()) && s.margins.parallel.is_finite());
}

fn robot<S: Real + Raw>(w: &mut Words<'_>) -> Option<Robot<S>>
where
    S::Wide: Raw,
{
    let len = |v: f32| S::Wide::raw(v);
    let geometry = Geometry { base_radius: len(w.next()), platform_radius: len(w.next()), upper_arm: len(w.next()), lower_arm: len(w.next()) };
    let limits = Limits {
        joint_min: w.three().map(S::raw),
        joint_max: w.three().map(S::raw),
        passive_cone: S::raw(w.next()),
        min_serial_margin: S::raw(w.next()),
        min_parallel_margin: S::raw(w.next()),
    };
    Robot::new(geometry, limits).ok()
}

fn kinematics<S: Real + Raw>(w: &mut Words<'_>, robot: &Robot<S>)
where
    S::Wide: Raw,
{
    let target = w.three().map(S::Wide::raw);
    let joints = w.three().map(S::raw);
    let vector = w.three().map(S::Wide::raw);
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

/// At most this many setpoints are stepped per input, and bounds are kept
/// from being tiny (speeds and accelerations from the input, but no
/// slower than floors) and dwells short, so that one input stays fast to
/// run: the planner's own bound is 2^20 cycles, correct but slow for
/// fuzzing. Non-finite, zero and negative values pass unchanged.
const STEPS: usize = 1024;
/// Moves per program.
const MAX_MOVES: u32 = 6;
/// Longest dwell (s).
const MAX_DWELL_S: f32 = 0.05;
/// Servo periods (s): 500 Hz to 8 kHz; the last choice takes the period
/// from the input (non-finite, zero and negative included).
const PERIODS: [f32; 5] = [1.0 / 500.0, 1.0e-3, 5.0e-4, 2.5e-4, 1.25e-4];

fn floor(v: f32, min: f32) -> f32 {
    if v.is_finite() && v > 0.0 { v.max(min) } else { v }
}

fn law(w: &mut Words<'_>) -> Law {
    match w.pick(3) {
        0 => Law::Trapezoid,
        1 => Law::SCurve,
        _ => Law::Poly7,
    }
}

fn one_move<P: Real<Wide = P> + Raw>(w: &mut Words<'_>) -> Move<P> {
    let p = |v: f32| P::raw(v);
    let cart = |w: &mut Words<'_>| Bounds {
        speed: p(floor(w.next(), 200.0)),
        accel: p(floor(w.next(), 4000.0)),
        jerk: p(floor(w.next(), 1.0e5)),
    };
    match w.pick(4) {
        0 => {
            let to = w.three().map(p);
            Move::Line { to, law: law(w), bounds: cart(w) }
        }
        1 => {
            let to = w.three().map(p);
            let (lift, blend_radius) = (p(w.next()), p(w.next()));
            Move::Pick { to, lift, blend_radius, law: law(w), bounds: cart(w) }
        }
        2 => {
            let d = w.next();
            Move::Dwell { duration: p(if d.is_finite() && d > 0.0 { d.min(MAX_DWELL_S) } else { d }) }
        }
        _ => {
            let to = w.three().map(p);
            let law = law(w);
            let bounds = Bounds { speed: p(floor(w.next(), 1.0)), accel: p(floor(w.next(), 20.0)), jerk: p(floor(w.next(), 1000.0)) };
            Move::Joint { to, law, bounds }
        }
    }
}

fn motion<S: Rounding + Raw, P: Real<Wide = P> + Raw>(w: &mut Words<'_>, robot: Robot<S>)
where
    S::Wide: Raw,
{
    let start = w.three().map(S::Wide::raw);
    let choice = w.pick(PERIODS.len() as u32 + 1) as usize;
    let period_raw = w.next();
    let period = P::raw(PERIODS.get(choice).copied().unwrap_or(if period_raw.is_finite() && period_raw > 0.0 { period_raw.max(1.0e-4) } else { period_raw }));
    let limits = JointRateLimits { speed: w.three().map(|v| P::raw(floor(v, 1.0))), accel: w.three().map(|v| P::raw(floor(v, 20.0))) };
    let tolerance = match w.pick(3) {
        0 => None,
        _ => Some(P::raw(w.next())),
    };
    let count = 1 + w.pick(MAX_MOVES) as usize;
    let program: Vec<(Move<P>, usize)> = (0..count).map(|_| (one_move::<P>(w), w.pick(STEPS as u32) as usize)).collect();
    let Ok(mut stream) = Stream::<S, 4, P>::new(robot, period, limits, start) else { return };
    let _ = stream.set_corner_tolerance(tolerance);
    let Ok(at_start) = robot.inverse(start) else { panic!("the stream started where the guards refuse") };
    let limits_f64 = JointRateLimits { speed: limits.speed.map(P::to_f64), accel: limits.accel.map(P::to_f64) };
    let mut contract = Contract::new(robot, period.to_f64(), &limits_f64, at_start.joints);
    let case = || {
        format!(
            "geometry {:?}\nlimits {:?}\nperiod {} s, joint limits {limits_f64:?}, start {:?}, corner tolerance {:?}\nprogram (move, push at step) {program:?}",
            robot.geometry(),
            robot.limits(),
            period.to_f64(),
            start.map(Arith::to_f64),
            tolerance.map(P::to_f64),
        )
    };
    let mut next = 0;
    for step in 0..STEPS {
        // Push each move once its step has come (all of them once the
        // stream runs dry), while the queue has room; refused moves are
        // skipped.
        while let Some((mv, at)) = program.get(next) {
            if (*at > step && !stream.is_empty()) || stream.is_full() {
                break;
            }
            let _ = stream.push(mv);
            next += 1;
        }
        match stream.next_setpoint() {
            Ok(Some(s)) => {
                if let Err(v) = contract.check(&s.setpoint) {
                    panic!("setpoint contract broken: {v}\nsetpoint {:?}\n{}", s.setpoint, case());
                }
            }
            Ok(None) => {
                if let Err(v) = contract.hold() {
                    panic!("setpoint contract broken at rest: {v}\n{}", case());
                }
                if next >= program.len() {
                    if let Err(v) = contract.finish() {
                        panic!("setpoint contract broken at the end: {v}\n{}", case());
                    }
                    return;
                }
            }
            Err(e) => panic!("a validated move failed while streaming: {e}\n{}", case()),
        }
    }
}

fn exercise<S: Rounding + Raw, P: Real<Wide = P> + Raw>(data: &[u8])
where
    S::Wide: Raw,
{
    let mut w = Words(data);
    if let Some(robot) = robot::<S>(&mut w) {
        kinematics(&mut w, &robot);
        motion::<S, P>(&mut w, robot);
    }
}

fuzz_target!(|data: &[u8]| {
    exercise::<f32, f32>(data);
    exercise::<f64, f64>(data);
    exercise::<Fixed, f32>(data);
});
