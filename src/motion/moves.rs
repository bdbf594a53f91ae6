//! Moves: what a caller asks for ([`Move`]) and what the validation turns
//! it into ([`PlannedMove`]), plus the one function that computes the
//! setpoint of any cycle of a planned move. The validation and the stream
//! both call that function with the same arguments, so every setpoint the
//! stream emits is one the validation has checked, bit for bit.

use super::error::{MotionError, MotionFault, MoveFault};
use super::law::{Bounds, Law, Profile, Timing, constant, convert, div};
use super::path::{Bend, Chain, MAX_JOINED_LINES, Path, Pick, Target};
use crate::error::Error;
use crate::robot::Robot;
use crate::scalar::{Arith, Real};
use crate::solution::Margins;

/// One move, as a caller describes it, in the planning type `P` (a float
/// type; see [`super::Stream`]). The start is always where the previous
/// move (or the stream's start pose) ends.
///
/// Cartesian quantities in mm, mm/s, mm/s^2, mm/s^3; joint ones in rad,
/// rad/s, rad/s^2, rad/s^3; times in seconds.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "serde", serde(rename_all = "snake_case", deny_unknown_fields))]
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
    /// The line moves this was planned from, when it is a line or lines
    /// joined (the stream may join the next line to it, see
    /// [`super::Stream`]).
    pub(crate) lines: Option<Lines<P>>,
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
    /// Largest tool acceleration over the move as a fraction of the
    /// move's Cartesian acceleration bound (0 for a joint move or a dwell).
    pub(crate) tool_accel_usage: P,
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

    /// Whether this move is line moves joined through their corners (see
    /// [`super::Stream`]).
    #[must_use]
    pub const fn is_joined(&self) -> bool {
        matches!(self.path, Path::Chain(_))
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

    /// Largest tool acceleration over the move (tangential and
    /// centripetal together, at every cycle) as a fraction of the move's
    /// Cartesian acceleration bound; at most 1. 0 for a joint move or a
    /// dwell, which have no Cartesian bound.
    #[must_use]
    pub const fn tool_accel_usage(&self) -> P {
        self.tool_accel_usage
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

    /// The setpoint of cycle `cycle` (0 ..= `cycles()`, 0 the start) as
    /// the validation sees it: the same setpoint as [`Self::setpoint`],
    /// bit for bit (the same time law, path and guarded inverse or forward
    /// kinematics, whose joint rates [`Robot::inverse_with_rates`] computes
    /// from the same solution), together with the pose's margins and the
    /// path fraction `sigma`.
    pub(crate) fn checked_setpoint(&self, robot: &Robot<S>, cycle: u32) -> Result<Checked<S>, Error> {
        let end_of_move = cycle >= self.cycles;
        let (sigma, speed) = if end_of_move { (S::ONE, S::Wide::ZERO) } else { self.timing.sample(cycle) };
        let (setpoint, margins) = match self.path.at(sigma, speed) {
            Target::Joints { angles, rates } => {
                let sol = robot.forward(angles)?;
                let sp =
                    Setpoint { position: sol.position, joints: sol.joints, joint_rates: rates, cycle, end_of_move };
                (sp, sol.margins)
            }
            Target::Cartesian { point, velocity } => {
                let sol = robot.inverse(point)?;
                let joint_rates = sol.jacobian.joint_rates(velocity)?;
                (Setpoint { position: point, joints: sol.joints, joint_rates, cycle, end_of_move }, sol.margins)
            }
        };
        Ok(Checked { setpoint, margins, sigma })
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

/// A setpoint with what the validation needs besides: the margins of its
/// pose and the path fraction it lies at.
pub(crate) struct Checked<S: Arith> {
    pub(crate) setpoint: Setpoint<S>,
    pub(crate) margins: Margins<S>,
    pub(crate) sigma: S,
}

fn finite3<P: Arith>(v: [P; 3]) -> Result<[P; 3], MotionError> {
    if P::all_finite(v) { Ok(v) } else { Err(MotionError::invalid(MoveFault::NonFinite)) }
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
    /// The bound on the tool's acceleration (mm/s^2) for a Cartesian move
    /// with a time law, `None` for a dwell or a joint move.
    pub(crate) accel_bound: Option<P>,
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
            let path = Path::Line { to, dir, length: convert(length)? };
            Ok(Shaped { path, profile, end: to, accel_bound: Some(bounds.accel) })
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
            Ok(Shaped { path: Path::Pick(pick), profile, end: to_s, accel_bound: Some(bounds.accel) })
        }
        Move::Dwell { duration } => {
            let profile = Profile::hold(duration)?;
            Ok(Shaped { path: Path::Hold { at: start }, profile, end: start, accel_bound: None })
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
            Ok(Shaped { path, profile, end: start, accel_bound: None })
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

/// A run of line moves, kept with a queued move so that the next line can
/// join it: the targets (mm), the law and bounds of the joined law, and
/// that law's duration before time scaling (s).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Lines<P> {
    pub(crate) to: [[P; 3]; MAX_JOINED_LINES],
    pub(crate) count: usize,
    pub(crate) law: Law,
    pub(crate) bounds: Bounds<P>,
    pub(crate) law_duration: P,
}

impl<P: Real> Lines<P> {
    /// One line to `to` under `law` within `bounds`, lasting `law_duration`.
    pub(crate) fn single(to: [P; 3], law: Law, bounds: Bounds<P>, law_duration: P) -> Self {
        Self { to: [to; MAX_JOINED_LINES], count: 1, law, bounds, law_duration }
    }
}

/// Joined lines: the shaped move and the run it now holds.
pub(crate) type Joined<S, P> = (Shaped<S, P>, Lines<P>);

/// The geometry of one corner, in the planning type.
#[derive(Clone, Copy)]
struct Round<P> {
    r: P,
    e: P,
    theta: P,
    n: [P; 3],
}

/// Rounds the corner between directions `d1` and `d2` of lines of length
/// `l1` and `l2` (each gives at most half its length to the arc) within
/// `tolerance` (mm); `None` for a reversal or an arc below
/// [`MIN_CORNER_RADIUS`].
fn round<P: Real>(d1: [P; 3], d2: [P; 3], l1: P, l2: P, tolerance: P) -> Result<Option<Round<P>>, MotionError> {
    let cos = (d1[0] * d2[0] + d1[1] * d2[1] + d1[2] * d2[2]).max_of(-P::ONE).min_of(P::ONE);
    // The part of d2 across d1; its length is sin(theta).
    let across = [d2[0] - cos * d1[0], d2[1] - cos * d1[1], d2[2] - cos * d1[2]];
    let sin = norm3(across);
    let theta = sin.atan2(cos);
    if theta < constant::<P>(COLLINEAR_TURN)? {
        return Ok(Some(Round { r: P::ONE, e: P::ZERO, theta: P::ZERO, n: [P::ZERO; 3] }));
    }
    if !(P::ONE + cos > P::ZERO) {
        // A reversal: no arc fits.
        return Ok(None);
    }
    let half_cos = ((P::ONE + cos) * P::HALF).sqrt();
    let tan_half = div(sin, P::ONE + cos)?;
    let by_tolerance = div(tolerance * half_cos, P::ONE - half_cos)?;
    let by_length = div(l1.min_of(l2) * P::HALF, tan_half)?;
    let r = by_tolerance.min_of(by_length).min_of(constant::<P>(MAX_CORNER_RADIUS)?);
    if !(r >= constant::<P>(MIN_CORNER_RADIUS)?) {
        return Ok(None);
    }
    let inv_sin = div(P::ONE, sin)?;
    Ok(Some(Round { r, e: r * tan_half, theta, n: across.map(|c| c * inv_sin) }))
}

/// Joins the line move `next` to the run of lines `prev` that starts at
/// `start` (mm): one path of lines and tangent arcs under one time law,
/// with the run extended by `next`; `None` when they should not be
/// joined (the caller then queues `next` on its own, after a stop).
///
/// The corner rule (see [`super::Stream`]): with turn angle `theta`
/// between two directions, the arc radius is the largest that keeps
/// the arc within `tolerance` (mm) of the corner point,
/// `r = tolerance cos(theta/2) / (1 - cos(theta/2))` (the corner-to-arc
/// distance of a tangent arc is `r (1/cos(theta/2) - 1)`, plane
/// geometry), reduced so that the arc takes at most half of either line
/// (`r tan(theta/2) <= L/2`) and at most [`MAX_CORNER_RADIUS`]. The law's
/// speed bound is lowered to `sqrt(a r)` for the smallest arc, so that
/// the centripetal acceleration on every arc stays within the path
/// acceleration bound `a`. The law is the first line's, each bound the
/// smallest of the lines'. The run is joined only when the joined law is
/// shorter than `prev`'s law followed by `next`'s (both before time
/// scaling); never beyond [`MAX_JOINED_LINES`] lines, nor through a
/// reversal or an arc below [`MIN_CORNER_RADIUS`].
///
/// # Errors
/// The errors of [`shape`] for the new line, or
/// [`MotionFault::Unrepresentable`].
#[allow(clippy::too_many_lines)] // one geometric construction, step by step
pub(crate) fn join_lines<S: Real, P: Real<Wide = P>>(
    prev: &Lines<P>,
    next: &Move<P>,
    start: [S::Wide; 3],
    tolerance: P,
) -> Result<Option<Joined<S, P>>, MotionError> {
    let Move::Line { to: end, law: next_law, bounds: next_bounds } = *next else {
        return Ok(None);
    };
    if prev.count >= MAX_JOINED_LINES || prev.count == 0 {
        return Ok(None);
    }
    let end = finite3(end)?;
    let mut lines = *prev;
    if let Some(slot) = lines.to.get_mut(prev.count) {
        *slot = end;
    }
    lines.count = prev.count + 1;
    lines.bounds = tighter(prev.bounds, next_bounds);
    let from: [P; 3] = convert3(start)?;
    // Directions and lengths of every line.
    let mut dir = [[P::ZERO; 3]; MAX_JOINED_LINES];
    let mut len = [P::ZERO; MAX_JOINED_LINES];
    let mut p = from;
    for (i, &q) in lines.to.iter().enumerate().take(lines.count) {
        let v = [q[0] - p[0], q[1] - p[1], q[2] - p[2]];
        let l = norm3(v);
        if !(l > P::ZERO) {
            return Err(MotionError::invalid(MoveFault::ZeroLength));
        }
        let inv = div(P::ONE, l)?;
        if let (Some(d), Some(ls)) = (dir.get_mut(i), len.get_mut(i)) {
            *d = v.map(|c| c * inv);
            *ls = l;
        }
        p = q;
    }
    let alone = Profile::plan(next_law, len.get(prev.count).copied().unwrap_or(P::ONE), next_bounds)?.duration();
    // Every corner, then the arc lengths along the chain.
    let none = Round { r: P::ONE, e: P::ZERO, theta: P::ZERO, n: [P::ZERO; 3] };
    let mut rounds = [none; MAX_JOINED_LINES - 1];
    let mut speed = lines.bounds.speed;
    for (i, slot) in rounds.iter_mut().enumerate().take(lines.count - 1) {
        let (Some(&d1), Some(&d2), Some(&l1), Some(&l2)) = (dir.get(i), dir.get(i + 1), len.get(i), len.get(i + 1))
        else {
            return Ok(None);
        };
        let Some(r) = round(d1, d2, l1, l2, tolerance)? else { return Ok(None) };
        if r.theta > P::ZERO {
            speed = speed.min_of((lines.bounds.accel * r.r).sqrt());
        }
        *slot = r;
    }
    let wide = |v: P| -> Result<S::Wide, MotionError> { convert(v) };
    let mut bends = [None; MAX_JOINED_LINES - 1];
    let (mut base, mut e_prev) = (P::ZERO, P::ZERO);
    for (i, slot) in bends.iter_mut().enumerate().take(lines.count - 1) {
        let (Some(rd), Some(&corner), Some(&l1), Some(&d1), Some(&d2)) =
            (rounds.get(i), lines.to.get(i), len.get(i), dir.get(i), dir.get(i + 1))
        else {
            return Ok(None);
        };
        let b_in = base + l1 - e_prev - rd.e;
        let b_out = b_in + rd.r * rd.theta;
        let t_in = [corner[0] - rd.e * d1[0], corner[1] - rd.e * d1[1], corner[2] - rd.e * d1[2]];
        let centre = [t_in[0] + rd.r * rd.n[0], t_in[1] + rd.r * rd.n[1], t_in[2] + rd.r * rd.n[2]];
        let t_out = [corner[0] + rd.e * d2[0], corner[1] + rd.e * d2[1], corner[2] + rd.e * d2[2]];
        let r_s = wide(rd.r)?;
        *slot = Some(Bend {
            b_in: wide(b_in)?,
            b_out: wide(b_out)?,
            centre: convert3(centre)?,
            d_in: convert3(d1)?,
            n: convert3(rd.n)?,
            r: r_s,
            inv_r: S::recip(r_s).ok_or(MotionError::before_sampling(MotionFault::Unrepresentable))?,
            t_out: convert3(t_out)?,
            d_out: convert3(d2)?,
        });
        (base, e_prev) = (b_out, rd.e);
    }
    let last = len.get(prev.count).copied().unwrap_or(P::ZERO);
    let length = base + last - e_prev;
    let law = lines.law;
    let profile = Profile::plan(law, length, Bounds { speed, ..lines.bounds })?;
    if !(profile.duration() < prev.law_duration + alone) {
        return Ok(None);
    }
    lines.law_duration = profile.duration();
    let Some(first) = bends.first().copied().flatten() else { return Ok(None) };
    let bend = bends.map(|b| b.unwrap_or(first));
    let to: [S::Wide; 3] = convert3(end)?;
    let chain = Chain {
        from: start,
        d0: convert3(dir.first().copied().unwrap_or([P::ZERO; 3]))?,
        to,
        bend,
        bends: lines.count - 1,
        length: wide(length)?,
    };
    let shaped = Shaped { path: Path::Chain(chain), profile, end: to, accel_bound: Some(lines.bounds.accel) };
    Ok(Some((shaped, lines)))
}
