//! Moves: what a caller asks for ([`Move`]) and what the validation turns
//! it into ([`PlannedMove`]), plus the one function that computes the
//! setpoint of any cycle of a planned move. The validation and the stream
//! both call that function with the same arguments, so every setpoint the
//! stream emits is one the validation has checked, bit for bit.

use super::error::{MotionError, MotionFault, MoveFault};
use super::law::{Bounds, Law, Profile, Timing, constant, convert, div};
use super::path::{Path, Pick, Target};
use crate::error::Error;
use crate::robot::Robot;
use crate::scalar::{Arith, Real};

/// One move, as a caller describes it, in the planning type `P` (a float
/// type; see [`super::Stream`]). The start is always where the previous
/// move (or the stream's start pose) ends.
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
pub struct Setpoint<S: Arith> {
    /// Platform position (mm).
    pub position: [S::Wide; 3],
    /// Joint angles (rad).
    pub joints: [S; 3],
    /// Joint velocities (rad/s).
    pub joint_rates: [S::Wide; 3],
    /// Cycle within the move, 1 for the first cycle after it starts.
    pub cycle: u32,
    /// `true` on the move's last cycle: the setpoint is the move's target.
    pub end_of_move: bool,
}

/// A validated move, ready to be streamed. Built by
/// [`super::Stream::plan`] or [`super::Stream::push`].
///
/// `S` is the type the stream runs in (its path and time law are stored
/// in `S` and [`Arith::Wide`], see the `motion` module docs); `P` is the
/// float type the move was planned in (the period, the stretch and the
/// limit usage figures).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlannedMove<S: Arith, P = S> {
    pub(crate) path: Path<S>,
    pub(crate) timing: Timing<S>,
    pub(crate) start: [S::Wide; 3],
    pub(crate) end: [S::Wide; 3],
    /// Joint angles at the end (rad).
    pub(crate) end_joints: [S; 3],
    pub(crate) period: P,
    /// Cycles the move lasts; the last one lands on the target.
    pub(crate) cycles: u32,
    /// Time stretch (>= 1) and the stretched duration (s).
    pub(crate) stretch: P,
    pub(crate) duration: P,
    /// Largest joint speed and acceleration over the move, as fractions
    /// of their limits.
    pub(crate) speed_usage: P,
    pub(crate) accel_usage: P,
    /// Whether the validation slowed the move down for a joint limit.
    pub(crate) time_scaled: bool,
}

impl<S: Real, P: Real<Wide = P>> PlannedMove<S, P> {
    /// Number of cycles the move lasts.
    #[must_use]
    pub const fn cycles(&self) -> u32 {
        self.cycles
    }

    /// The move's duration after time scaling (s): exactly `cycles() *
    /// period`. The law is stretched so that it ends on a whole cycle.
    #[must_use]
    pub const fn duration(&self) -> P {
        self.duration
    }

    /// Where the move starts (mm).
    #[must_use]
    pub const fn start(&self) -> [S::Wide; 3] {
        self.start
    }

    /// Where the move ends (mm).
    #[must_use]
    pub const fn end(&self) -> [S::Wide; 3] {
        self.end
    }

    /// The time stretch applied: 1 when the move runs as asked (up to the
    /// rounding of its duration to whole cycles, at most one cycle),
    /// larger when it was slowed to respect the joint speed or
    /// acceleration limits (every speed divided by it, accelerations by
    /// its square).
    #[must_use]
    pub const fn stretch(&self) -> P {
        self.stretch
    }

    /// Whether the move was slowed down to respect a joint limit (time
    /// scaled), beyond the rounding of its duration to whole cycles.
    #[must_use]
    pub const fn time_scaled(&self) -> bool {
        self.time_scaled
    }

    /// Largest joint speed over the move as a fraction of its limit (the
    /// worst arm); at most 1.
    #[must_use]
    pub const fn speed_usage(&self) -> P {
        self.speed_usage
    }

    /// Largest joint acceleration over the move (from successive cycles)
    /// as a fraction of its limit (the worst arm); at most 1.
    #[must_use]
    pub const fn accel_usage(&self) -> P {
        self.accel_usage
    }

    /// The setpoint of cycle `cycle` (1 ..= `cycles()`), for random access
    /// and tests; identical to what the stream emits at that cycle.
    ///
    /// # Errors
    /// The guarded kinematics' error (never for a validated move and a
    /// cycle in range on the robot it was planned for).
    pub fn setpoint_at(&self, robot: &Robot<S>, cycle: u32) -> Result<Setpoint<S>, Error> {
        self.setpoint(robot, cycle)
    }

    /// The setpoint of cycle `cycle`: time law, path, guarded kinematics
    /// and joint rates.
    #[inline]
    pub(crate) fn setpoint(&self, robot: &Robot<S>, cycle: u32) -> Result<Setpoint<S>, Error> {
        let end_of_move = cycle >= self.cycles;
        let (sigma, speed) = if end_of_move { (S::ONE, S::Wide::ZERO) } else { self.timing.sample(cycle) };
        match self.path.at(sigma, speed) {
            Target::Joints { angles, rates } => {
                let sol = robot.forward(angles)?;
                Ok(Setpoint { position: sol.position, joints: sol.joints, joint_rates: rates, cycle, end_of_move })
            }
            Target::Cartesian { point, velocity } => {
                let (joints, joint_rates) = robot.inverse_with_rates(point, velocity)?;
                Ok(Setpoint { position: point, joints, joint_rates, cycle, end_of_move })
            }
        }
    }
}

fn finite3<P: Arith>(v: [P; 3]) -> Result<[P; 3], MotionError> {
    if v.iter().all(|x| x.is_finite()) { Ok(v) } else { Err(MotionError::invalid(MoveFault::NonFinite)) }
}

fn norm3<P: Real>(v: [P; 3]) -> P {
    (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()
}

fn convert3<B: Arith, A: Arith>(v: [A; 3]) -> Result<[B; 3], MotionError> {
    Ok([convert(v[0])?, convert(v[1])?, convert(v[2])?])
}

/// A path (in the streaming type) and its unscaled time law (in the
/// planning type), before sampling.
pub(crate) struct Shaped<S: Arith, P> {
    pub(crate) path: Path<S>,
    pub(crate) profile: Profile<P>,
    pub(crate) end: [S::Wide; 3],
}

/// Builds the path and time law of `mv` from `start` (mm), whose joint
/// angles are `start_joints` (rad). The geometry is worked out in the
/// planning type `P` and stored in the streaming type `S`; the start and
/// the target are stored as given, so that a move ends exactly where the
/// next one starts. For a joint move `end` is the start; the validation
/// replaces it with the solved end point.
pub(crate) fn shape<S: Real, P: Real<Wide = P>>(
    mv: &Move<P>,
    start: [S::Wide; 3],
    start_joints: [S; 3],
) -> Result<Shaped<S, P>, MotionError> {
    let from: [P; 3] = convert3(start)?;
    match *mv {
        Move::Line { to, law, bounds } => {
            let to = finite3(to)?;
            let delta = [to[0] - from[0], to[1] - from[1], to[2] - from[2]];
            let length = norm3(delta);
            if !(length > P::ZERO) {
                return Err(MotionError::invalid(MoveFault::ZeroLength));
            }
            let inv = div(P::ONE, length)?;
            let dir = convert3(delta.map(|c| c * inv))?;
            let profile = Profile::plan(law, length, bounds)?;
            let to = convert3(to)?;
            Ok(Shaped { path: Path::Line { to, dir, length: convert(length)? }, profile, end: to })
        }
        Move::Pick { to, lift, blend_radius, law, bounds } => {
            let to = finite3(to)?;
            let [lift, r, _] = finite3([lift, blend_radius, P::ZERO])?;
            let blend = MotionError::invalid(MoveFault::Blend);
            let (dx, dy) = (to[0] - from[0], to[1] - from[1]);
            let across = (dx * dx + dy * dy).sqrt();
            let z_top = from[2].max_of(to[2]) + lift;
            let (rise, fall) = (z_top - from[2], z_top - to[2]);
            if !(r > P::ZERO && r <= rise && r <= fall && P::TWO * r <= across) {
                return Err(blend);
            }
            let inv_across = div(P::ONE, across)?;
            let arc = constant::<P>(core::f64::consts::FRAC_PI_2)? * r;
            let b1 = rise - r;
            let b2 = b1 + arc;
            let b3 = b2 + (across - P::TWO * r);
            let b4 = b3 + arc;
            let length = b4 + (fall - r);
            let r_s: S::Wide = convert(r)?;
            let to_s = convert3(to)?;
            let pick = Pick {
                from: start,
                to: to_s,
                u: [convert(dx * inv_across)?, convert(dy * inv_across)?],
                z_top: convert(z_top)?,
                r: r_s,
                inv_r: S::recip(r_s).ok_or(MotionError::before_sampling(MotionFault::Unrepresentable))?,
                b: [convert(b1)?, convert(b2)?, convert(b3)?, convert(b4)?],
                length: convert(length)?,
            };
            let profile = Profile::plan(law, length, bounds)?;
            Ok(Shaped { path: Path::Pick(pick), profile, end: to_s })
        }
        Move::Dwell { duration } => {
            let profile = Profile::hold(duration)?;
            Ok(Shaped { path: Path::Hold { at: start }, profile, end: start })
        }
        Move::Joint { to, law, bounds } => {
            let to = finite3(to)?;
            let q: [P; 3] = convert3(start_joints)?;
            let delta = [to[0] - q[0], to[1] - q[1], to[2] - q[2]];
            let length = delta[0].abs().max_of(delta[1].abs()).max_of(delta[2].abs());
            if !(length > P::ZERO) {
                return Err(MotionError::invalid(MoveFault::ZeroLength));
            }
            let inv = div(P::ONE, length)?;
            let dir = convert3(delta.map(|c| c * inv))?;
            let profile = Profile::plan(law, length, bounds)?;
            // The Cartesian end is known once the last cycle is solved.
            let path = Path::Joint { to: convert3(to)?, dir, length: convert(length)? };
            Ok(Shaped { path, profile, end: start })
        }
    }
}
