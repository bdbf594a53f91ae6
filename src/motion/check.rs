//! Validation before motion, and time scaling.
//!
//! A move is sampled at every cycle the stream will emit for it (the same
//! function, the same arguments, so the same bits). Each sample must pass
//! the guarded kinematics ([`crate::Robot::inverse`], or
//! [`crate::Robot::forward`] for a joint move): reachable, inside the joint
//! ranges, the passive-joint cones and the singularity margins. Any
//! failure rejects the move, naming the cycle and (through the kinematic
//! error) the arm and the limit: slowing down does not change where the
//! path goes.
//!
//! Joint speeds come from the Jacobian at each sample; joint
//! accelerations from the difference of successive cycles' joint speeds
//! divided by the period (what a servo following the setpoints sees),
//! starting and ending at rest. When one exceeds its limit the move is
//! stretched in time by
//! `r = max(speed usage, sqrt(acceleration usage)) * (1 + 1/256)`:
//! speeds scale by `1/r` and accelerations by `1/r^2`, so one pass nearly
//! always suffices; sampling changes slightly with the stretch, so the
//! stretched move is checked again, for at most [`TIME_SCALING_PASSES`]
//! passes. A move that still exceeds a limit, or would need a stretch
//! beyond [`MAX_TIME_STRETCH`], is rejected with the first offending
//! cycle, arm and limit of the last pass.
//!
//! # Cost
//! At most `TIME_SCALING_PASSES x cycles` samples, `cycles <=`
//! [`MAX_MOVE_CYCLES`]; each sample costs one setpoint (time law, path,
//! guarded inverse kinematics and Jacobian, the same as one stream cycle,
//! see the `motion` benchmark) plus about 15 operations for the limits. A
//! move that needs no scaling costs exactly one pass: for a 0.3 s move at
//! 4 kHz, 1,200 setpoints.

use super::error::{MotionError, MotionFault, MoveFault};
use super::law::{constant, convert, div};
use super::moves::{Lines, Move, PlannedMove, Setpoint, Shaped, shape};
use crate::robot::Robot;
use crate::scalar::{Arith, Real};

/// Longest move accepted, in cycles (2^20: about 262 s at 4 kHz). Keeps
/// the validation bounded and the sub-cycle tick counts of the stream
/// below 2^28.
pub const MAX_MOVE_CYCLES: u32 = 1 << 20;

/// Largest time stretch the validation applies before rejecting a move.
pub const MAX_TIME_STRETCH: f64 = 64.0;

/// Most validation passes per move (the first at the requested speed).
pub const TIME_SCALING_PASSES: usize = 4;

/// Extra stretch added on top of the measured need, so that sampling
/// changes do not leave the move a hair over its limits.
const TIME_SCALING_HEADROOM: f64 = 1.0 + 1.0 / 256.0;

/// Joint speed (rad/s) and acceleration (rad/s^2) limits of each arm.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct JointRateLimits<S> {
    /// Largest joint speed of each arm (rad/s).
    pub speed: [S; 3],
    /// Largest joint acceleration of each arm (rad/s^2).
    pub accel: [S; 3],
}

/// The limits and the period, prepared for the validation (planning type).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Checker<P> {
    pub(crate) period: P,
    rate: P,
    inv_speed: [P; 3],
    inv_accel: [P; 3],
}

fn positive<P: Real>(v: P) -> Result<P, MotionError> {
    if !v.is_finite() {
        return Err(MotionError::invalid(MoveFault::NonFinite));
    }
    if !(v > P::ZERO) {
        return Err(MotionError::invalid(MoveFault::NotPositive));
    }
    Ok(v)
}

fn inverse3<P: Real>(v: [P; 3]) -> Result<[P; 3], MotionError> {
    Ok([div(P::ONE, positive(v[0])?)?, div(P::ONE, positive(v[1])?)?, div(P::ONE, positive(v[2])?)?])
}

impl<P: Real> Checker<P> {
    pub(crate) fn new(period: P, limits: &JointRateLimits<P>) -> Result<Self, MotionError> {
        let period = positive(period)?;
        Ok(Self {
            period,
            rate: div(P::ONE, period)?,
            inv_speed: inverse3(limits.speed)?,
            inv_accel: inverse3(limits.accel)?,
        })
    }
}

/// What one pass over a move found.
struct Scan<S: Arith, P> {
    speed: P,
    accel: P,
    first_over: Option<MotionError>,
    last: Option<Setpoint<S>>,
}

/// Samples every cycle of `mv`. The joint rates come out of the stream's
/// own arithmetic (`S`); the limits are compared in the planning type.
fn scan<S: Real, P: Real<Wide = P>>(
    robot: &Robot<S>,
    checker: &Checker<P>,
    mv: &PlannedMove<S, P>,
) -> Result<Scan<S, P>, MotionError> {
    let mut out = Scan { speed: P::ZERO, accel: P::ZERO, first_over: None, last: None };
    let mut prev = [P::ZERO; 3];
    for cycle in 1..=mv.cycles.min(MAX_MOVE_CYCLES) {
        let sp = mv.setpoint(robot, cycle).map_err(|e| MotionError { cycle, fault: e.into() })?;
        let rates: [P; 3] = [convert(sp.joint_rates[0])?, convert(sp.joint_rates[1])?, convert(sp.joint_rates[2])?];
        let arms = rates.iter().zip(prev.iter()).zip(checker.inv_speed.iter().zip(checker.inv_accel.iter()));
        for (arm, ((&w, &w_prev), (&inv_v, &inv_a))) in arms.enumerate() {
            #[allow(clippy::cast_possible_truncation)] // arm < 3
            let arm = arm as u8;
            let speed = w.abs() * inv_v;
            let accel = ((w - w_prev) * checker.rate).abs() * inv_a;
            // `!(x <= 1)` also flags NaN.
            if out.first_over.is_none() {
                if !(speed <= P::ONE) {
                    out.first_over = Some(MotionError { cycle, fault: MotionFault::JointSpeed { arm } });
                } else if !(accel <= P::ONE) {
                    out.first_over = Some(MotionError { cycle, fault: MotionFault::JointAccel { arm } });
                }
            }
            out.speed = out.speed.max_of(speed);
            out.accel = out.accel.max_of(accel);
        }
        prev = rates;
        out.last = Some(sp);
    }
    Ok(out)
}

/// The move `shaped` stretched in time by at least `stretch`, rounded up
/// so that it lasts a whole number of cycles.
fn stretched<S: Real, P: Real<Wide = P>>(
    shaped: &Shaped<S, P>,
    start: [S::Wide; 3],
    start_joints: [S; 3],
    period: P,
    stretch: P,
) -> Result<PlannedMove<S, P>, MotionError> {
    let law_duration = shaped.profile.duration();
    let ratio = (law_duration * stretch).to_f64() / period.to_f64();
    let cycles = libm::ceil(ratio).max(1.0);
    if !(cycles <= f64::from(MAX_MOVE_CYCLES)) {
        return Err(MotionError::before_sampling(MotionFault::TooLong));
    }
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)] // 1 <= cycles <= 2^20
    let cycles = cycles as u32;
    let duration = constant::<P>(f64::from(cycles))? * period;
    // A dwell has no speeds to scale: its stretch is 1.
    let stretch =
        if law_duration > P::ZERO && shaped.profile.length() > P::ZERO { div(duration, law_duration)? } else { P::ONE };
    Ok(PlannedMove {
        path: shaped.path,
        timing: shaped.profile.timing(cycles, stretch)?,
        start,
        end: shaped.end,
        start_joints,
        lines: None,
        end_joints: start_joints,
        period,
        cycles,
        stretch,
        duration,
        speed_usage: P::ZERO,
        accel_usage: P::ZERO,
        time_scaled: false,
    })
}

/// Plans and validates `mv` from `start` (mm) with joint angles
/// `start_joints` (rad), time scaling it when needed.
pub(crate) fn plan<S: Real, P: Real<Wide = P>>(
    robot: &Robot<S>,
    checker: &Checker<P>,
    mv: &Move<P>,
    start: [S::Wide; 3],
    start_joints: [S; 3],
) -> Result<PlannedMove<S, P>, MotionError> {
    let shaped = shape(mv, start, start_joints)?;
    let mut planned = validate(robot, checker, &shaped, start, start_joints)?;
    if let Move::Line { to, law, bounds } = *mv {
        planned.lines = Some(Lines::single(to, law, bounds, shaped.profile.duration()));
    }
    Ok(planned)
}

/// Validates the shaped move `shaped` from `start` (mm) with joint angles
/// `start_joints` (rad), time scaling it when needed.
pub(crate) fn validate<S: Real, P: Real<Wide = P>>(
    robot: &Robot<S>,
    checker: &Checker<P>,
    shaped: &Shaped<S, P>,
    start: [S::Wide; 3],
    start_joints: [S; 3],
) -> Result<PlannedMove<S, P>, MotionError> {
    let headroom = constant::<P>(TIME_SCALING_HEADROOM)?;
    let max_stretch = constant::<P>(MAX_TIME_STRETCH)?;
    let mut stretch = P::ONE;
    let mut refusal = MotionError::before_sampling(MotionFault::TooLong);
    for pass in 0..TIME_SCALING_PASSES {
        let mut planned = stretched(shaped, start, start_joints, checker.period, stretch)?;
        let found = scan(robot, checker, &planned)?;
        let Some(over) = found.first_over else {
            planned.speed_usage = found.speed;
            planned.accel_usage = found.accel;
            planned.time_scaled = pass > 0;
            if let Some(last) = found.last {
                planned.end = last.position;
                planned.end_joints = last.joints;
            }
            return Ok(planned);
        };
        refusal = over;
        let need = found.speed.max_of(found.accel.sqrt());
        // The stretch actually streamed (rounded up to whole cycles).
        let next = planned.stretch * need * headroom;
        if !(next <= max_stretch) {
            break;
        }
        stretch = next;
    }
    Err(refusal)
}
