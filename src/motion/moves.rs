//! Moves: what a caller asks for ([`Move`]) and what the validation turns
//! it into ([`PlannedMove`]), plus the one function that computes the
//! setpoint of any cycle of a planned move. The validation and the stream
//! both call that function with the same arguments, so every setpoint the
//! stream emits is one the validation has checked, bit for bit.

use super::error::{MotionError, MotionFault, MoveFault};
use super::law::{Bounds, Law, Profile, Timing, constant, convert, div};
use super::path::{Corner, Path, Pick, Target};
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
    /// Joint angles at the start (rad).
    pub(crate) start_joints: [S; 3],
    /// The line move this was planned from, when it is a single line
    /// (the stream may join the next line to it, see [`super::Stream`]).
    pub(crate) line: Option<Move<P>>,
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

    /// Whether this move is two line moves joined through their corner
    /// (see [`super::Stream`]).
    #[must_use]
    pub const fn is_joined(&self) -> bool {
        matches!(self.path, Path::Corner(_))
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
                let sol = robot.inverse(point)?;
                let joint_rates = sol.jacobian.joint_rates(velocity)?;
                Ok(Setpoint { position: point, joints: sol.joints, joint_rates, cycle, end_of_move })
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

/// Turn angles below this (rad) count as collinear: the two lines are
/// joined without an arc (the direction steps by less than this, a
/// velocity step below `1e-4` of the path speed, which the validation
/// checks like any other).
pub const COLLINEAR_TURN: f64 = 1e-4;

/// Largest corner arc radius (mm): keeps the arc centre and the arc's
/// points inside the fixed-point range; a smaller radius than the
/// tolerance allows only lowers the corner's deviation.
pub const MAX_CORNER_RADIUS: f64 = 2000.0;

/// Smallest corner arc radius (mm): below it (a near reversal, or a very
/// small tolerance) the pair is not joined and the platform stops.
pub const MIN_CORNER_RADIUS: f64 = 1e-3;

/// The bounds of a joined pair: the smaller of each.
fn tighter<P: Real>(a: Bounds<P>, b: Bounds<P>) -> Bounds<P> {
    Bounds { speed: a.speed.min_of(b.speed), accel: a.accel.min_of(b.accel), jerk: a.jerk.min_of(b.jerk) }
}

/// Joins two consecutive line moves, `first` from `start` and `second`
/// from the end of `first`, into one path (line, tangent arc, line) under
/// one time law, or `None` when they should not be joined.
///
/// The corner rule (see [`super::Stream`]): with turn angle `theta`
/// between the two directions, the arc radius is the largest that keeps
/// the arc within `tolerance` (mm) of the corner point,
/// `r = tolerance cos(theta/2) / (1 - cos(theta/2))` (the corner-to-arc
/// distance of a tangent arc is `r (1/cos(theta/2) - 1)`, plane
/// geometry), reduced so that the arc takes at most half of either line
/// (`r tan(theta/2) <= L/2`) and at most [`MAX_CORNER_RADIUS`]. The law's
/// speed bound is lowered to `sqrt(a r)` so that the centripetal
/// acceleration on the arc stays within the path acceleration bound `a`.
/// The law and the bounds are those of `first`, each bound tightened to
/// `second`'s when smaller. The pair is joined only when the joined law
/// is shorter than the two laws run one after the other; otherwise (a
/// sharp corner, where the arc speed would be low; a reversal; an arc
/// below [`MIN_CORNER_RADIUS`]) it returns `None`.
///
/// # Errors
/// The errors of [`shape`] for either line, or
/// [`MotionFault::Unrepresentable`].
pub(crate) fn shape_corner<S: Real, P: Real<Wide = P>>(
    first: &Move<P>,
    second: &Move<P>,
    start: [S::Wide; 3],
    tolerance: P,
) -> Result<Option<Shaped<S, P>>, MotionError> {
    let (Move::Line { to: mid, law, bounds: bounds1 }, Move::Line { to: end, law: law2, bounds: bounds2 }) =
        (*first, *second)
    else {
        return Ok(None);
    };
    let from: [P; 3] = convert3(start)?;
    let (mid, end) = (finite3(mid)?, finite3(end)?);
    let a = [mid[0] - from[0], mid[1] - from[1], mid[2] - from[2]];
    let b = [end[0] - mid[0], end[1] - mid[1], end[2] - mid[2]];
    let (l1, l2) = (norm3(a), norm3(b));
    if !(l1 > P::ZERO && l2 > P::ZERO) {
        return Err(MotionError::invalid(MoveFault::ZeroLength));
    }
    let (i1, i2) = (div(P::ONE, l1)?, div(P::ONE, l2)?);
    let d1 = a.map(|c| c * i1);
    let d2 = b.map(|c| c * i2);
    let cos = (d1[0] * d2[0] + d1[1] * d2[1] + d1[2] * d2[2]).max_of(-P::ONE).min_of(P::ONE);
    // The part of d2 across d1; its length is sin(theta).
    let across = [d2[0] - cos * d1[0], d2[1] - cos * d1[1], d2[2] - cos * d1[2]];
    let sin = norm3(across);
    let theta = sin.atan2(cos);
    let bounds = tighter(bounds1, bounds2);
    let (length, arc) = if theta < constant::<P>(COLLINEAR_TURN)? {
        (l1 + l2, None)
    } else if !(P::ONE + cos > P::ZERO) {
        // A reversal: no arc fits.
        return Ok(None);
    } else {
        let half_cos = ((P::ONE + cos) * P::HALF).sqrt();
        let tan_half = div(sin, P::ONE + cos)?;
        let by_tolerance = div(tolerance * half_cos, P::ONE - half_cos)?;
        let by_length = div(l1.min_of(l2) * P::HALF, tan_half)?;
        let r = by_tolerance.min_of(by_length).min_of(constant::<P>(MAX_CORNER_RADIUS)?);
        if !(r >= constant::<P>(MIN_CORNER_RADIUS)?) {
            return Ok(None);
        }
        let e = r * tan_half;
        let inv_sin = div(P::ONE, sin)?;
        let n = across.map(|c| c * inv_sin);
        (l1 + l2 - P::TWO * e + r * theta, Some((r, e, n)))
    };
    let bounds = match arc {
        Some((r, _, _)) => Bounds { speed: bounds.speed.min_of((bounds.accel * r).sqrt()), ..bounds },
        None => bounds,
    };
    let profile = Profile::plan(law, length, bounds)?;
    let apart = Profile::plan(law, l1, bounds1)?.duration() + Profile::plan(law2, l2, bounds2)?.duration();
    if !(profile.duration() < apart) {
        return Ok(None);
    }
    let (r, e, n) = arc.unwrap_or((P::ONE, P::ZERO, [P::ZERO; 3]));
    let b1 = l1 - e;
    let b2 = if arc.is_some() { b1 + r * theta } else { b1 };
    let t1 = [mid[0] - e * d1[0], mid[1] - e * d1[1], mid[2] - e * d1[2]];
    let centre = [t1[0] + r * n[0], t1[1] + r * n[1], t1[2] + r * n[2]];
    let r_s: S::Wide = convert(r)?;
    let to: [S::Wide; 3] = convert3(end)?;
    let corner = Corner {
        from: start,
        to,
        d1: convert3(d1)?,
        d2: convert3(d2)?,
        n: convert3(n)?,
        centre: convert3(centre)?,
        r: r_s,
        inv_r: S::recip(r_s).ok_or(MotionError::before_sampling(MotionFault::Unrepresentable))?,
        b1: convert(b1)?,
        b2: convert(b2)?,
        length: convert(length)?,
    };
    Ok(Some(Shaped { path: Path::Corner(corner), profile, end: to }))
}
