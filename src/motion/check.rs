//! Validation before motion, and time scaling.
//!
//! A move is sampled at every cycle the stream will emit for it (the same
//! function, the same arguments, so the same bits), and at its start.
//! What is checked, and what happens when it fails:
//!
//! * **Each sample** must pass the guarded kinematics
//!   ([`crate::Robot::inverse`], or [`crate::Robot::forward`] for a joint
//!   move): reachable, inside the joint ranges, the passive-joint cones
//!   and the singularity margins. A failure refuses the move
//!   ([`MotionFault::Kinematics`]), naming the cycle and (through the
//!   kinematic error) the arm and the limit: slowing down does not change
//!   where the path goes.
//! * **Between samples** no point of the path may violate a guard: each
//!   sample is checked against its limits tightened by how far the
//!   guarded quantities can move along the stretch of path to the next
//!   sample (see [`super::between`] for the bound and why it is sound). A
//!   failure refuses the move ([`MotionFault::BetweenCycles`]) unless the
//!   move is being slowed anyway for a rate limit, in which case the
//!   slower move (shorter stretches) is checked again.
//! * **Joint speed**: the larger of the Jacobian rate at each sample and
//!   the step from the previous sample over the period (a move shorter
//!   than a cycle has zero rates at its one sample, but not a zero step).
//! * **Joint acceleration**: the change of successive samples' Jacobian
//!   rates over the period (what a servo following the setpoints sees),
//!   starting and ending at rest; and the step must be one that a joint
//!   whose acceleration stays within the limit can make with those rates
//!   at its two ends (see [Step consistency](#step-consistency)), counted
//!   as acceleration usage.
//! * **Tool acceleration** (Cartesian moves): the magnitude of the tool's
//!   acceleration, `sqrt(a_t^2 + (v^2 kappa)^2)` with the law's tangential
//!   acceleration `a_t` and speed `v` (the larger of the cycle's two ends)
//!   and the largest curvature `kappa` of any arc the cycle's stretch
//!   touches, within the move's acceleration bound.
//!
//! When a speed or acceleration exceeds its limit the move is stretched
//! in time by
//! `r = max(speed usage, sqrt(acceleration usage), sqrt(tool usage)) * (1 + h)`,
//! `h` = 1/256 on the first pass, 1/32 on the second, 1/4 on the third:
//! speeds scale by `1/r` and accelerations by `1/r^2`, so one pass nearly
//! always suffices; sampling changes with the stretch (a peak narrower
//! than a cycle is averaged differently), so the stretched move is
//! checked again, for at most [`TIME_SCALING_PASSES`]
//! passes. A move that still exceeds a limit, or would need a stretch
//! beyond [`MAX_TIME_STRETCH`], is rejected with the first offending
//! cycle, arm and limit of the last pass.
//!
//! # Step consistency
//! Between two setpoints `T` seconds apart a joint moves by `q T` (`q`
//! the step over the period, rad/s) with rates `w0` and `w1` at the two
//! ends. If its rate `w(t)` changes by at most `A` per second
//! (`|w'| <= A`) on the way, then `w(t) <= min(w0 + A t, w1 + A (T - t))`
//! and `w(t) >= max(w0 - A t, w1 - A (T - t))`; integrating these two
//! envelopes, the step can differ from the trapezoid `(w0 + w1) / 2` by at
//! most
//!
//! `gap_max = (A T / 4) (1 - u^2)`, with `u = |w1 - w0| / (A T) <= 1`,
//!
//! and every value in between is reached by some rate within the limit
//! (the two envelopes and their convex combinations). So
//! `|q - (w0 + w1) / 2| <= gap_max` holds exactly when a joint motion
//! within the acceleration limit passes through both setpoints with both
//! rates: the check is necessary and sufficient, the worst case
//! (`A T / 4`) being a step between two rests. It is counted as the
//! usage `u^2 + gap / (A T / 4)`, which is at most 1 exactly then (and at
//! least `u^2`: the rate difference is checked on its own too).
//!
//! The setpoints are rounded: each joint angle is within the inverse
//! kinematics' accuracy bound `e` of the number type (see
//! [`joint_rounding_rad`]) of the exact angle, so a step may differ from
//! the exact one by `2 e`; the gap is reduced by `2 e / T` before it is
//! compared. The guarantee is therefore: joint angles within `e` of the
//! emitted ones are passed through, with the emitted rates, by a motion
//! within the acceleration limit. A jump larger than the arithmetic's own
//! accuracy cannot pass.
//!
//! # Cost
//! At most `TIME_SCALING_PASSES x (cycles + 1)` samples, `cycles <=`
//! [`MAX_MOVE_CYCLES`]; each sample costs one setpoint (time law, path,
//! guarded inverse kinematics and Jacobian, the same as one stream cycle,
//! see the `motion` benchmark) plus, in the planning type, about 150
//! operations and four square roots for the limits, the bounds between
//! samples and the tool's acceleration (one time-law sample). A move
//! that needs no scaling costs exactly one pass: for a 0.3 s move at
//! 4 kHz, 1,201 samples.

use super::between::{Pose, Reach, Travel};
use super::error::{MotionError, MotionFault, MoveFault};
use super::law::{Profile, constant, convert, div};
use super::moves::{Lines, Move, PlannedMove, Setpoint, Shaped, shape};
use super::path::MAX_JOINED_LINES;
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

/// Documented accuracy bound (rad) of the `f64` inverse kinematics' joint
/// angles (measured worst 8.4e-15 rad against the independent reference).
pub const JOINT_ROUNDING_F64_RAD: f64 = 1.0e-13;
/// Documented accuracy bound (rad) of the `f32` inverse kinematics' joint
/// angles (measured worst 3.8e-6 rad near the serial margin of 0.1).
pub const JOINT_ROUNDING_F32_RAD: f64 = 1.0e-5;
/// Documented accuracy bound (rad) of the fixed-point inverse kinematics'
/// joint angles (the 5 urad target over the admitted envelope).
pub const JOINT_ROUNDING_FIXED_RAD: f64 = 5.0e-6;

/// The accuracy bound (rad) of a setpoint's joint angles computed in `S`:
/// the documented bound of its inverse kinematics, told apart by the
/// type's resolution near 1 (no type tag is needed): a type that cannot
/// hold `2^-30` is fixed point (LSB `2^-25`,
/// [`JOINT_ROUNDING_FIXED_RAD`]); one for which `1 + 2^-30` rounds to 1
/// has a 24-bit significand ([`JOINT_ROUNDING_F32_RAD`]); finer types get
/// [`JOINT_ROUNDING_F64_RAD`].
///
/// The bounds are the worst errors measured against the independent
/// reference with headroom (`host-tests/src/bounds.rs`), over the robots
/// each type serves.
///
/// # Panics
/// Never.
#[must_use]
pub fn joint_rounding_rad<S: Arith>() -> f64 {
    let tiny = 1.0 / f64::from(1u32 << 30);
    match S::from_f64(tiny) {
        Some(t) if t.to_f64() > 0.0 => {
            if (S::ONE + t).to_f64() > 1.0 {
                JOINT_ROUNDING_F64_RAD
            } else {
                JOINT_ROUNDING_F32_RAD
            }
        }
        _ => JOINT_ROUNDING_FIXED_RAD,
    }
}

/// Extra stretch added on top of the measured need, so that sampling
/// changes do not leave the move a hair over its limits; it grows by
/// [`TIME_SCALING_HEADROOM_GROWTH`] on every further pass.
const TIME_SCALING_HEADROOM: f64 = 1.0 / 256.0;

/// How much the headroom grows per pass. A peak of acceleration narrower
/// than a cycle (a law's acceleration step where a blend arc ends, say) is
/// sampled as part of a cycle's average, so the usage a pass measures
/// there can under-state what the stretched move will show, and a fixed
/// headroom then creeps up on the limit pass after pass. Growing it (1/256,
/// 1/32, 1/4) makes the last passes decisive; moves that pass at once
/// or after one stretch are not slowed more than before.
const TIME_SCALING_HEADROOM_GROWTH: f64 = 8.0;

/// Joint speed (rad/s) and acceleration (rad/s^2) limits of each arm.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "serde", serde(deny_unknown_fields))]
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
    /// `1 / (accel * period / 4)`: the largest gap between a setpoint's
    /// step and the mean of its two Jacobian rates between two rests
    /// (rad/s), per arm.
    inv_step_gap: [P; 3],
    /// Twice the joint-angle rounding of the stream's type over the
    /// period (rad/s): subtracted from each gap.
    rounding: P,
    /// The robot's dimensions and limits, for the guards between samples.
    reach: Reach<P>,
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
    pub(crate) fn new<S: Real>(robot: &Robot<S>, period: P, limits: &JointRateLimits<P>) -> Result<Self, MotionError> {
        let period = positive(period)?;
        let rate = div(P::ONE, period)?;
        let rounding = constant::<P>(2.0 * joint_rounding_rad::<S>())? * rate;
        let accel = [positive(limits.accel[0])?, positive(limits.accel[1])?, positive(limits.accel[2])?];
        let gap = accel.map(|a| a * period * P::HALF * P::HALF);
        Ok(Self {
            period,
            rate,
            inv_speed: inverse3(limits.speed)?,
            inv_accel: inverse3(accel)?,
            inv_step_gap: inverse3(gap)?,
            rounding,
            reach: Reach::new(robot)?,
        })
    }
}

/// What one pass over a move found.
struct Scan<S: Arith, P> {
    speed: P,
    accel: P,
    tool: P,
    /// The first limit (speed, acceleration) over, which time scaling
    /// may fix.
    first_over: Option<MotionError>,
    /// The first guard that could be crossed between samples.
    first_between: Option<MotionError>,
    last: Option<Setpoint<S>>,
}

/// A path's arcs in the planning type: `(start, end, 1/r)`, arc length
/// in mm.
struct Curves<P> {
    arcs: [(P, P, P); MAX_JOINED_LINES - 1],
    count: usize,
}

impl<P: Real> Curves<P> {
    fn new<S: Real>(mv: &PlannedMove<S, P>) -> Result<Self, MotionError> {
        let found = mv.path.arcs();
        let mut arcs = [(P::ZERO, P::ZERO, P::ONE); MAX_JOINED_LINES - 1];
        for (slot, &(b_in, b_out, r)) in arcs.iter_mut().zip(found.arcs.iter()).take(found.count) {
            *slot = (convert(b_in)?, convert(b_out)?, div(P::ONE, convert(r)?)?);
        }
        Ok(Self { arcs, count: found.count })
    }

    /// The largest curvature (1/mm) of any arc the stretch from arc
    /// length `from` to `to` (mm) touches.
    fn curvature(&self, from: P, to: P) -> P {
        let mut k = P::ZERO;
        for &(b_in, b_out, inv_r) in self.arcs.iter().take(self.count) {
            if b_in <= to && b_out >= from {
                k = k.max_of(inv_r);
            }
        }
        k
    }
}

/// The tool's acceleration on a Cartesian move with a bound: the bound
/// and the time stretch, to sample the unscaled law as streamed.
struct Tool<P> {
    inv_bound: P,
    /// `period / stretch` (law seconds per cycle) and `1 / stretch`.
    law_step: P,
    inv_stretch: P,
}

impl<P: Real> Tool<P> {
    fn new<S: Real>(shaped: &Shaped<S, P>, mv: &PlannedMove<S, P>) -> Result<Option<Self>, MotionError> {
        let Some(bound) = shaped.accel_bound else { return Ok(None) };
        Ok(Some(Self {
            inv_bound: div(P::ONE, positive(bound)?)?,
            law_step: div(mv.period, mv.stretch)?,
            inv_stretch: div(P::ONE, mv.stretch)?,
        }))
    }

    /// Speed (mm/s) and tangential acceleration (mm/s^2) at the end of
    /// cycle `cycle`, as streamed (stretched).
    fn at(&self, profile: &Profile<P>, cycle: u32) -> Result<(P, P), MotionError> {
        let t = constant::<P>(f64::from(cycle))? * self.law_step;
        let s = profile.sample(t);
        Ok((s.vel * self.inv_stretch, s.acc * self.inv_stretch * self.inv_stretch))
    }
}

/// Samples every cycle of `mv` (the shaped move `shaped` as planned): the
/// guarded kinematics at each setpoint and the guards between them (see
/// [`super::between`]), which refuse the move; the joint speeds and
/// accelerations and the tool's acceleration, which time scaling can
/// bring within their limits. The joint rates come out of the stream's
/// own arithmetic (`S`); the limits are compared in the planning type.
///
/// Joint speed is the larger of the Jacobian rate at the setpoint and the
/// step from the previous setpoint divided by the period (what the servo
/// sees: a move shorter than a cycle has zero rates at its one setpoint,
/// but not a zero step). Joint acceleration is the change of the Jacobian
/// rates over the period; and the step must be one a joint within the
/// acceleration limit can make between the two rates (see the module
/// docs, Step consistency), counted as acceleration usage, so that
/// setpoints that jump further than their rates say are slowed down or
/// refused like any other acceleration. The platform is at rest before
/// the first and after the last setpoint.
fn scan<S: Real, P: Real<Wide = P>>(
    robot: &Robot<S>,
    checker: &Checker<P>,
    shaped: &Shaped<S, P>,
    mv: &PlannedMove<S, P>,
) -> Result<Scan<S, P>, MotionError> {
    let mut out =
        Scan { speed: P::ZERO, accel: P::ZERO, tool: P::ZERO, first_over: None, first_between: None, last: None };
    let at_start = mv.checked_setpoint(robot, 0).map_err(|e| MotionError { cycle: 0, fault: e.into() })?;
    let mut pose = Pose::new(at_start.setpoint.joints, &at_start.margins)?;
    let mut sigma: P = convert(at_start.sigma)?;
    let length: Option<P> = match mv.path.cartesian_length() {
        Some(l) => Some(convert(l)?),
        None => None,
    };
    let tool = Tool::new(shaped, mv)?;
    let curves = Curves::new(mv)?;
    let mut law_prev = (P::ZERO, P::ZERO);
    let mut prev_rates = [P::ZERO; 3];
    let cycles = mv.cycles.min(MAX_MOVE_CYCLES);
    for cycle in 1..=cycles {
        // A failed sample refuses the move; an earlier crossing between
        // samples is reported first.
        let c = mv
            .checked_setpoint(robot, cycle)
            .map_err(|e| out.first_between.unwrap_or(MotionError { cycle, fault: e.into() }))?;
        let sp = c.setpoint;
        let next = Pose::new(sp.joints, &c.margins)?;
        let next_sigma: P = convert(c.sigma)?;
        let mut curvature = P::ZERO;
        let travel = match length {
            Some(l) => {
                curvature = curves.curvature(sigma * l, next_sigma * l);
                Travel::Cartesian { length: (next_sigma - sigma) * l, curvature }
            }
            None => Travel::Joints([
                next.joints[0] - pose.joints[0],
                next.joints[1] - pose.joints[1],
                next.joints[2] - pose.joints[2],
            ]),
        };
        let crossing = checker.reach.check(&pose, &next, travel, cycle - 1);
        if out.first_between.is_none() {
            out.first_between = crossing.err();
        }
        let rates: [P; 3] = [convert(sp.joint_rates[0])?, convert(sp.joint_rates[1])?, convert(sp.joint_rates[2])?];
        let mut step = [P::ZERO; 3];
        for (arm, slot) in step.iter_mut().enumerate() {
            if let (Some(&now), Some(&before)) = (next.joints.get(arm), pose.joints.get(arm)) {
                *slot = (now - before) * checker.rate;
            }
        }
        let joint = joint_usage(checker, rates, prev_rates, step);
        out.note(joint, cycle);
        if let Some(tool) = &tool {
            let law = tool.at(&shaped.profile, cycle)?;
            let ((v, a), (v0, a0)) = (law, law_prev);
            let speed = v.max_of(v0);
            let centripetal = speed * speed * curvature;
            let tangential = a.abs().max_of(a0.abs());
            let usage = (tangential * tangential + centripetal * centripetal).sqrt() * tool.inv_bound;
            out.tool = out.tool.max_of(usage);
            if out.first_over.is_none() && !(usage <= P::ONE) {
                out.first_over = Some(MotionError { cycle, fault: MotionFault::ToolAccel });
            }
            law_prev = law;
        }
        prev_rates = rates;
        pose = next;
        sigma = next_sigma;
        out.last = Some(sp);
    }
    // At rest after the last setpoint: its rate stops.
    let stop = joint_usage(checker, [P::ZERO; 3], prev_rates, [P::ZERO; 3]);
    out.note(stop, cycles);
    Ok(out)
}

/// Per arm: speed and acceleration usage (fractions of the limits).
type JointUsage<P> = [(P, P); 3];

/// The joint speed and acceleration usage of one cycle: Jacobian rates
/// `rates` after `prev_rates`, and the setpoint step (rad/s) `step`
/// between them.
fn joint_usage<P: Real>(checker: &Checker<P>, rates: [P; 3], prev_rates: [P; 3], step: [P; 3]) -> JointUsage<P> {
    let mut usage = [(P::ZERO, P::ZERO); 3];
    for (arm, slot) in usage.iter_mut().enumerate() {
        let get = |v: &[P; 3]| v.get(arm).copied().unwrap_or(P::ZERO);
        let (w, w0, q) = (get(&rates), get(&prev_rates), get(&step));
        let speed = w.abs().max_of(q.abs()) * get(&checker.inv_speed);
        let accel = (w - w0).abs() * checker.rate * get(&checker.inv_accel);
        // Step consistency (module docs): u^2 + gap / (A T / 4) <= 1, the
        // gap less the rounding of the two setpoints.
        let gap = ((q - (w + w0) * P::HALF).abs() - checker.rounding).max_of(P::ZERO) * get(&checker.inv_step_gap);
        // (u past 1 is over already, and scaled as an acceleration.)
        let u = accel.min_of(P::ONE);
        *slot = (speed, accel.max_of(u * u + gap));
    }
    usage
}

impl<S: Arith, P: Real> Scan<S, P> {
    /// Records one cycle's joint usage, and the first limit it exceeds.
    fn note(&mut self, usage: JointUsage<P>, cycle: u32) {
        for (arm, &(speed, accel)) in usage.iter().enumerate() {
            #[allow(clippy::cast_possible_truncation)] // arm < 3
            let arm = arm as u8;
            // `!(x <= 1)` also flags NaN.
            if self.first_over.is_none() {
                if !(speed <= P::ONE) {
                    self.first_over = Some(MotionError { cycle, fault: MotionFault::JointSpeed { arm } });
                } else if !(accel <= P::ONE) {
                    self.first_over = Some(MotionError { cycle, fault: MotionFault::JointAccel { arm } });
                }
            }
            self.speed = self.speed.max_of(speed);
            self.accel = self.accel.max_of(accel);
        }
    }
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
        tool_accel_usage: P::ZERO,
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
    let mut headroom = TIME_SCALING_HEADROOM;
    let max_stretch = constant::<P>(MAX_TIME_STRETCH)?;
    let mut stretch = P::ONE;
    let mut refusal = MotionError::before_sampling(MotionFault::TooLong);
    for pass in 0..TIME_SCALING_PASSES {
        let mut planned = stretched(shaped, start, start_joints, checker.period, stretch)?;
        let found = scan(robot, checker, shaped, &planned)?;
        let Some(over) = found.first_over else {
            // Within the rate limits: a guard crossing between samples
            // is the path's own, and refuses the move.
            if let Some(crossing) = found.first_between {
                return Err(crossing);
            }
            planned.speed_usage = found.speed;
            planned.accel_usage = found.accel;
            planned.tool_accel_usage = found.tool;
            planned.time_scaled = pass > 0;
            if let Some(last) = found.last {
                planned.end = last.position;
                planned.end_joints = last.joints;
            }
            return Ok(planned);
        };
        refusal = over;
        let need = found.speed.max_of(found.accel.sqrt()).max_of(found.tool.sqrt());
        // The stretch actually streamed (rounded up to whole cycles).
        let next = planned.stretch * need * constant::<P>(1.0 + headroom)?;
        headroom *= TIME_SCALING_HEADROOM_GROWTH;
        if !(next <= max_stretch) {
            break;
        }
        stretch = next;
    }
    Err(refusal)
}
