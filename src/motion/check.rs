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
use super::law::{constant, div};
use super::moves::{Move, PlannedMove, Setpoint, Shaped, shape};
use crate::robot::Robot;
use crate::scalar::Real;

/// Longest move accepted, in cycles (2^20: about 262 s at 4 kHz). Keeps
/// the validation bounded and the cycle count exact in `f32` (below 2^24).
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

/// The limits and the period, prepared for the validation.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Checker<S> {
    pub(crate) period: S,
    rate: S,
    inv_speed: [S; 3],
    inv_accel: [S; 3],
}

fn positive<S: Real>(v: S) -> Result<S, MotionError> {
    if !v.is_finite() {
        return Err(MotionError::invalid(MoveFault::NonFinite));
    }
    if !(v > S::ZERO) {
        return Err(MotionError::invalid(MoveFault::NotPositive));
    }
    Ok(v)
}

fn inverse3<S: Real>(v: [S; 3]) -> Result<[S; 3], MotionError> {
    Ok([div(S::ONE, positive(v[0])?)?, div(S::ONE, positive(v[1])?)?, div(S::ONE, positive(v[2])?)?])
}

impl<S: Real> Checker<S> {
    pub(crate) fn new(period: S, limits: &JointRateLimits<S>) -> Result<Self, MotionError> {
        let period = positive(period)?;
        Ok(Self {
            period,
            rate: div(S::ONE, period)?,
            inv_speed: inverse3(limits.speed)?,
            inv_accel: inverse3(limits.accel)?,
        })
    }
}

/// What one pass over a move found.
struct Scan<S> {
    speed: S,
    accel: S,
    first_over: Option<MotionError>,
    last: Option<Setpoint<S>>,
}

/// Samples every cycle of `mv`.
fn scan<S: Real<Wide = S>>(
    robot: &Robot<S>,
    checker: &Checker<S>,
    mv: &PlannedMove<S>,
) -> Result<Scan<S>, MotionError> {
    let mut out = Scan { speed: S::ZERO, accel: S::ZERO, first_over: None, last: None };
    let mut prev = [S::ZERO; 3];
    let mut k = S::ZERO;
    for cycle in 1..=mv.cycles.min(MAX_MOVE_CYCLES) {
        k = k + S::ONE;
        let sp = mv.setpoint(robot, cycle, k).map_err(|e| MotionError { cycle, fault: e.into() })?;
        let arms = sp.joint_rates.iter().zip(prev.iter()).zip(checker.inv_speed.iter().zip(checker.inv_accel.iter()));
        for (arm, ((&w, &w_prev), (&inv_v, &inv_a))) in arms.enumerate() {
            #[allow(clippy::cast_possible_truncation)] // arm < 3
            let arm = arm as u8;
            let speed = w.abs() * inv_v;
            let accel = ((w - w_prev) * checker.rate).abs() * inv_a;
            // `!(x <= 1)` also flags NaN.
            if out.first_over.is_none() {
                if !(speed <= S::ONE) {
                    out.first_over = Some(MotionError { cycle, fault: MotionFault::JointSpeed { arm } });
                } else if !(accel <= S::ONE) {
                    out.first_over = Some(MotionError { cycle, fault: MotionFault::JointAccel { arm } });
                }
            }
            out.speed = out.speed.max_of(speed);
            out.accel = out.accel.max_of(accel);
        }
        prev = sp.joint_rates;
        out.last = Some(sp);
    }
    Ok(out)
}

/// The move `shaped` stretched in time by `stretch`, with its cycle count.
fn stretched<S: Real<Wide = S>>(
    shaped: &Shaped<S>,
    start: [S; 3],
    period: S,
    stretch: S,
) -> Result<PlannedMove<S>, MotionError> {
    let inv_stretch = div(S::ONE, stretch)?;
    let law_dt = period * inv_stretch;
    let ratio = shaped.profile.duration().to_f64() / law_dt.to_f64();
    let cycles = libm::ceil(ratio).max(1.0);
    if !(cycles <= f64::from(MAX_MOVE_CYCLES)) {
        return Err(MotionError::before_sampling(MotionFault::TooLong));
    }
    // The stream counts cycles in `S`: the count must be exact there.
    if S::from_f64(cycles).map(S::to_f64) != Some(cycles) {
        return Err(MotionError::before_sampling(MotionFault::Unrepresentable));
    }
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)] // 1 <= cycles <= 2^20
    let cycles = cycles as u32;
    Ok(PlannedMove {
        path: shaped.path,
        profile: shaped.profile,
        start,
        end: shaped.end,
        end_joints: shaped.end,
        period,
        cycles,
        stretch,
        inv_stretch,
        law_dt,
        speed_usage: S::ZERO,
        accel_usage: S::ZERO,
    })
}

/// Plans and validates `mv` from `start` (mm) with joint angles
/// `start_joints` (rad), time scaling it when needed.
pub(crate) fn plan<S: Real<Wide = S>>(
    robot: &Robot<S>,
    checker: &Checker<S>,
    mv: &Move<S>,
    start: [S; 3],
    start_joints: [S; 3],
) -> Result<PlannedMove<S>, MotionError> {
    let shaped = shape(mv, start, start_joints)?;
    let headroom = constant::<S>(TIME_SCALING_HEADROOM)?;
    let max_stretch = constant::<S>(MAX_TIME_STRETCH)?;
    let mut stretch = S::ONE;
    let mut refusal = MotionError::before_sampling(MotionFault::TooLong);
    for _ in 0..TIME_SCALING_PASSES {
        let mut planned = stretched(&shaped, start, checker.period, stretch)?;
        let found = scan(robot, checker, &planned)?;
        let Some(over) = found.first_over else {
            planned.speed_usage = found.speed;
            planned.accel_usage = found.accel;
            if let Some(last) = found.last {
                planned.end = last.position;
                planned.end_joints = last.joints;
            }
            return Ok(planned);
        };
        refusal = over;
        let need = found.speed.max_of(found.accel.sqrt());
        let next = stretch * need * headroom;
        if !(next <= max_stretch) {
            break;
        }
        stretch = next;
    }
    Err(refusal)
}
