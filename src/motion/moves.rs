//! Moves: what a caller asks for ([`Move`]) and what the validation turns
//! it into ([`PlannedMove`]), plus the one function that computes the
//! setpoint of any cycle of a planned move. The validation and the stream
//! both call that function with the same arguments, so every setpoint the
//! stream emits is one the validation has checked, bit for bit.

use super::error::{MotionError, MoveFault};
use super::law::{Bounds, Law, Profile, constant, div};
use super::path::{Path, Pick};
use crate::error::Error;
use crate::robot::Robot;
use crate::scalar::Real;

/// One move, as a caller describes it. The start is always where the
/// previous move (or the stream's start pose) ends.
///
/// Cartesian quantities in mm, mm/s, mm/s^2, mm/s^3; joint ones in rad,
/// rad/s, rad/s^2, rad/s^3; times in seconds.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Move<S> {
    /// Straight line to `to` (mm).
    Line {
        /// Target platform position (mm).
        to: [S; 3],
        /// Time law along the line.
        law: Law,
        /// Path speed, acceleration and jerk bounds (mm/s, mm/s^2, mm/s^3).
        bounds: Bounds<S>,
    },
    /// Pick-and-place cycle to `to`: rise, traverse at `lift` above the
    /// higher end point, descend, corners rounded with `blend_radius`.
    Pick {
        /// Target platform position (mm).
        to: [S; 3],
        /// Height of the traverse above the higher end point (mm).
        lift: S,
        /// Radius of the two corner arcs (mm), positive, at most `lift`
        /// and at most half the horizontal distance.
        blend_radius: S,
        /// Time law along the whole path (one law for the whole cycle).
        law: Law,
        /// Path speed, acceleration and jerk bounds (mm/s, mm/s^2, mm/s^3).
        bounds: Bounds<S>,
    },
    /// Stay where the previous move ended.
    Dwell {
        /// Time to stay (s).
        duration: S,
    },
    /// Joint-space straight line to the joint angles `to` (rad).
    Joint {
        /// Target joint angles (rad).
        to: [S; 3],
        /// Time law for the joint with the largest travel.
        law: Law,
        /// Speed, acceleration and jerk bounds of that joint (rad/s,
        /// rad/s^2, rad/s^3).
        bounds: Bounds<S>,
    },
}

/// One cycle's output.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Setpoint<S> {
    /// Platform position (mm).
    pub position: [S; 3],
    /// Joint angles (rad).
    pub joints: [S; 3],
    /// Joint velocities (rad/s).
    pub joint_rates: [S; 3],
    /// Cycle within the move, 1 for the first cycle after it starts.
    pub cycle: u32,
    /// `true` on the move's last cycle: the setpoint is the move's target.
    pub end_of_move: bool,
}

/// A validated move, ready to be streamed. Built by
/// [`super::Stream::plan`] or [`super::Stream::push`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlannedMove<S> {
    pub(crate) path: Path<S>,
    pub(crate) profile: Profile<S>,
    pub(crate) start: [S; 3],
    pub(crate) end: [S; 3],
    /// Joint angles at the end (rad).
    pub(crate) end_joints: [S; 3],
    pub(crate) period: S,
    /// Cycles the move lasts; the last one lands on the target.
    pub(crate) cycles: u32,
    /// Time stretch (>= 1) and its inverse, and the law time per cycle.
    pub(crate) stretch: S,
    pub(crate) inv_stretch: S,
    pub(crate) law_dt: S,
    /// Largest joint speed and acceleration over the move, as fractions
    /// of their limits.
    pub(crate) speed_usage: S,
    pub(crate) accel_usage: S,
}

impl<S: Real<Wide = S>> PlannedMove<S> {
    /// Number of cycles the move lasts.
    #[must_use]
    pub const fn cycles(&self) -> u32 {
        self.cycles
    }

    /// The law's duration after time scaling (s). The move lasts
    /// `cycles() * period`, the duration rounded up to whole cycles.
    #[must_use]
    pub fn duration(&self) -> S {
        self.profile.duration() * self.stretch
    }

    /// Where the move starts (mm).
    #[must_use]
    pub const fn start(&self) -> [S; 3] {
        self.start
    }

    /// Where the move ends (mm).
    #[must_use]
    pub const fn end(&self) -> [S; 3] {
        self.end
    }

    /// The time stretch applied: 1 when the move runs as asked, larger
    /// when it was slowed to respect the joint speed or acceleration
    /// limits (every speed divided by it, accelerations by its square).
    #[must_use]
    pub const fn stretch(&self) -> S {
        self.stretch
    }

    /// Whether the move was slowed down (time scaled).
    #[must_use]
    pub fn time_scaled(&self) -> bool {
        self.stretch > S::ONE
    }

    /// Largest joint speed over the move as a fraction of its limit (the
    /// worst arm); at most 1.
    #[must_use]
    pub const fn speed_usage(&self) -> S {
        self.speed_usage
    }

    /// Largest joint acceleration over the move (from successive cycles)
    /// as a fraction of its limit (the worst arm); at most 1.
    #[must_use]
    pub const fn accel_usage(&self) -> S {
        self.accel_usage
    }

    /// The setpoint of cycle `cycle` (1 ..= `cycles()`), for random access
    /// and tests; the stream counts cycles itself. Identical to what the
    /// stream emits at that cycle.
    ///
    /// # Errors
    /// The guarded kinematics' error (never for a validated move and a
    /// cycle in range on the robot it was planned for).
    pub fn setpoint_at(&self, robot: &Robot<S>, cycle: u32) -> Result<Setpoint<S>, Error> {
        let k = S::from_f64(f64::from(cycle)).ok_or(Error::NonFinite { input: crate::error::Input::Position })?;
        self.setpoint(robot, cycle, k)
    }

    /// The setpoint of cycle `cycle`, whose number is also given as `S`
    /// (`k`, exact). Time law, path, guarded kinematics and joint rates.
    #[inline]
    pub(crate) fn setpoint(&self, robot: &Robot<S>, cycle: u32, k: S) -> Result<Setpoint<S>, Error> {
        let end_of_move = cycle >= self.cycles;
        let (s, v) = if end_of_move {
            (self.profile.length(), S::ZERO)
        } else {
            let g = self.profile.sample(k * self.law_dt);
            (g.pos, g.vel * self.inv_stretch)
        };
        let p = self.path.at(s);
        let d = p.tangent;
        if let Path::Joint { .. } = self.path {
            let sol = robot.forward(p.point)?;
            return Ok(Setpoint {
                position: sol.position,
                joints: sol.joints,
                joint_rates: [d[0] * v, d[1] * v, d[2] * v],
                cycle,
                end_of_move,
            });
        }
        let sol = robot.inverse(p.point)?;
        let joint_rates = sol.jacobian.joint_rates([d[0] * v, d[1] * v, d[2] * v])?;
        Ok(Setpoint { position: p.point, joints: sol.joints, joint_rates, cycle, end_of_move })
    }
}

fn finite3<S: Real>(v: [S; 3]) -> Result<[S; 3], MotionError> {
    if v.iter().all(|x| x.is_finite()) { Ok(v) } else { Err(MotionError::invalid(MoveFault::NonFinite)) }
}

fn norm3<S: Real>(v: [S; 3]) -> S {
    (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()
}

/// A path and its (unscaled) time law, before sampling.
pub(crate) struct Shaped<S> {
    pub(crate) path: Path<S>,
    pub(crate) profile: Profile<S>,
    pub(crate) end: [S; 3],
}

/// Builds the path and time law of `mv` from `start` (mm), whose joint
/// angles are `start_joints` (rad). For a joint move `end` is the start;
/// the validation replaces it with the solved end point.
pub(crate) fn shape<S: Real<Wide = S>>(
    mv: &Move<S>,
    start: [S; 3],
    start_joints: [S; 3],
) -> Result<Shaped<S>, MotionError> {
    match *mv {
        Move::Line { to, law, bounds } => {
            let to = finite3(to)?;
            let delta = [to[0] - start[0], to[1] - start[1], to[2] - start[2]];
            let length = norm3(delta);
            if !(length > S::ZERO) {
                return Err(MotionError::invalid(MoveFault::ZeroLength));
            }
            let inv = div(S::ONE, length)?;
            let dir = delta.map(|c| c * inv);
            let profile = Profile::plan(law, length, bounds)?;
            Ok(Shaped { path: Path::Line { to, dir, length }, profile, end: to })
        }
        Move::Pick { to, lift, blend_radius, law, bounds } => {
            let to = finite3(to)?;
            let [lift, r, _] = finite3([lift, blend_radius, S::ZERO])?;
            let blend = MotionError::invalid(MoveFault::Blend);
            let (dx, dy) = (to[0] - start[0], to[1] - start[1]);
            let across = (dx * dx + dy * dy).sqrt();
            let z_top = start[2].max_of(to[2]) + lift;
            let (rise, fall) = (z_top - start[2], z_top - to[2]);
            if !(r > S::ZERO && r <= rise && r <= fall && S::TWO * r <= across) {
                return Err(blend);
            }
            let inv_across = div(S::ONE, across)?;
            let arc = constant::<S>(core::f64::consts::FRAC_PI_2)? * r;
            let b1 = rise - r;
            let b2 = b1 + arc;
            let b3 = b2 + (across - S::TWO * r);
            let b4 = b3 + arc;
            let length = b4 + (fall - r);
            let pick = Pick {
                from: start,
                to,
                u: [dx * inv_across, dy * inv_across],
                z_top,
                r,
                inv_r: div(S::ONE, r)?,
                b: [b1, b2, b3, b4],
                length,
            };
            let profile = Profile::plan(law, length, bounds)?;
            Ok(Shaped { path: Path::Pick(pick), profile, end: to })
        }
        Move::Dwell { duration } => {
            let profile = Profile::hold(duration)?;
            Ok(Shaped { path: Path::Hold { at: start }, profile, end: start })
        }
        Move::Joint { to, law, bounds } => {
            let to = finite3(to)?;
            let delta = [to[0] - start_joints[0], to[1] - start_joints[1], to[2] - start_joints[2]];
            let length = delta[0].abs().max_of(delta[1].abs()).max_of(delta[2].abs());
            if !(length > S::ZERO) {
                return Err(MotionError::invalid(MoveFault::ZeroLength));
            }
            let inv = div(S::ONE, length)?;
            let dir = delta.map(|c| c * inv);
            let profile = Profile::plan(law, length, bounds)?;
            // The Cartesian end is known once the last cycle is solved.
            Ok(Shaped { path: Path::Joint { to, dir, length }, profile, end: start })
        }
    }
}
