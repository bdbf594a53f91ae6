//! The setpoint stream and its move queue.

use heapless::Deque;

use super::check::{Checker, JointRateLimits, plan, validate};
use super::error::{MotionError, MotionFault, MoveFault};
use super::moves::{Move, PlannedMove, Setpoint, join_lines};
use crate::robot::Robot;
use crate::scalar::{Arith, Real};

/// What [`Stream::push`] reports about an accepted move.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Accepted<S> {
    /// The move's number in this stream (counts pushes from 0, wrapping).
    pub id: u32,
    /// Cycles the move lasts.
    pub cycles: u32,
    /// Time stretch applied (1: as asked).
    pub stretch: S,
    /// Whether the move was slowed to respect the joint limits.
    pub time_scaled: bool,
    /// Peak joint speed over the move as a fraction of its limit.
    pub speed_usage: S,
    /// Peak joint acceleration over the move as a fraction of its limit.
    pub accel_usage: S,
    /// Peak tool acceleration over the move as a fraction of the move's
    /// Cartesian acceleration bound (0 for a joint move or a dwell).
    pub tool_accel_usage: S,
    /// Whether the move was joined to the previous one through their
    /// corner (see [`Stream`]); `cycles`, `stretch` and the usages are
    /// then those of the joined pair.
    pub joined: bool,
}

/// One cycle of the stream: the setpoint and the move it belongs to.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct StreamSetpoint<S: Arith> {
    /// The move's number (see [`Accepted::id`]).
    pub move_id: u32,
    /// Position, joints, joint rates, cycle within the move, end flag.
    pub setpoint: Setpoint<S>,
}

/// A queue of validated moves, streamed one setpoint per control cycle.
///
/// Holds a copy of the robot, the cycle period, the joint rate limits and
/// up to `N` moves (a `heapless` deque: no allocation). Moves are
/// validated when they are pushed, so that [`Stream::next_setpoint`] only
/// replays what was checked; each cycle costs one setpoint (time law,
/// path, guarded kinematics, Jacobian) and never loops.
///
/// # Between consecutive moves
/// By default moves are not joined: every move starts where the previous
/// one ends and every time law runs from rest to rest, so at the junction
/// of two moves the platform stops. Each law is stretched (by less than
/// one cycle) to last a whole number of cycles, so the last cycle of a
/// move is exactly its target at zero velocity, on the law's own
/// deceleration (zero acceleration for the S-curve and the polynomial;
/// the trapezoid's acceleration steps, as it does everywhere in that
/// law); the next cycle is the first cycle of the next move. No cycle is
/// inserted or lost and nothing jumps, whatever angle the two paths make;
/// the cost is the stop.
///
/// # Joined corners
/// With a corner tolerance set ([`Stream::set_corner_tolerance`]), a
/// [`Move::Line`] pushed while the last queued entry is a line (or lines
/// already joined) that has not started yet is joined to it when the
/// corner allows: the queued entry is replaced by one move that runs the
/// lines with every corner rounded by a tangent circular arc, under one
/// time law, so the platform passes the corners without stopping, on arcs
/// that stay within the tolerance of the corner points. Up to
/// [`super::MAX_JOINED_LINES`] lines join into one entry. The corner rule
/// (own choice, built from plane geometry and the centripetal
/// acceleration `v^2 / r`):
///
/// * arc radius: the largest keeping the arc within the tolerance of the
///   corner, `r = tol cos(theta/2) / (1 - cos(theta/2))` for a turn of
///   `theta`, at most what lets the arc take half of either line, at
///   most [`super::MAX_CORNER_RADIUS`]; a collinear corner (turn below
///   [`super::COLLINEAR_TURN`]) has no arc;
/// * speed through the corners: the joined law's speed bound is lowered
///   to `sqrt(a r)` for the smallest arc, `a` the path acceleration
///   bound, so the centripetal acceleration on every arc stays within it;
///   where the law still accelerates on an arc, the validation's
///   tool-acceleration check (see [`super::check`]) slows the joined move
///   until the magnitude of the tool's acceleration is within `a`;
///   the junction speed is the law's speed there: the full speed through
///   a collinear or shallow corner, `sqrt(a r)` at most through a tighter
///   one, zero (a stop) through a reversal;
/// * the law is the first line's, each bound the smallest of the lines';
/// * a line is joined only when the joined law is shorter than the queued
///   entry's law followed by the new line's (before time scaling). A
///   reversal (no arc fits), a sharp corner (the arc speed would be too
///   low to gain time) or short lines therefore stop at the corner, as
///   without a tolerance.
///
/// The joined lines are validated as a whole, exactly like a single move
/// (guarded kinematics, joint speed and acceleration on every cycle, time
/// scaling), before they replace the queued entry; if that fails, or the
/// entry is already running, or it is not a line (a pick, a dwell, a
/// joint move), or it already holds [`super::MAX_JOINED_LINES`] lines,
/// the new line is planned alone from the corner and the platform stops
/// there. No setpoint is emitted that was not checked. Joined lines are
/// one queue entry; its setpoints carry the first line's id, and
/// [`Accepted::joined`] tells the caller. Joining needs no free queue
/// slot. Picks are never joined, nor lines given to
/// [`Stream::push_planned`].
///
/// # Number types
/// `S` is the type the stream computes each cycle in (`f32`, `f64` or
/// [`crate::Fixed`]); positions, velocities and joint rates are in its
/// [`Arith::Wide`] type. `P` is the float type moves are given and
/// planned in (`S` by default; `f32` for a fixed-point stream). See the
/// `motion` module documentation.
#[derive(Clone, Debug)]
pub struct Stream<S: Arith, const N: usize, P = S> {
    robot: Robot<S>,
    checker: Checker<P>,
    queue: Deque<(u32, PlannedMove<S, P>), N>,
    /// Cycle within the front move (an integer: time is never a scalar).
    cycle: u32,
    /// Where the last queued move ends (or the stream's start).
    tail: [S::Wide; 3],
    tail_joints: [S; 3],
    /// The last emitted setpoint's position and joints.
    last_position: [S::Wide; 3],
    last_joints: [S; 3],
    next_id: u32,
    /// Corner tolerance (mm) for joining lines; `None`: never join.
    corner_tolerance: Option<P>,
}

impl<S: Real, P: Real<Wide = P>, const N: usize> Stream<S, N, P> {
    /// A stream at rest at `start` (mm), emitting one setpoint every
    /// `period` seconds and keeping joint speeds and accelerations inside
    /// `limits`.
    ///
    /// # Errors
    /// An invalid period or limit ([`MotionFault::InvalidMove`]), or the
    /// guarded kinematics' error at `start`.
    pub fn new(
        robot: Robot<S>,
        period: P,
        limits: JointRateLimits<P>,
        start: [S::Wide; 3],
    ) -> Result<Self, MotionError> {
        const { assert!(N > 0, "a stream needs room for at least one move") };
        let checker = Checker::new(&robot, period, &limits)?;
        let at_start = robot.inverse(start).map_err(|e| MotionError::before_sampling(e.into()))?;
        Ok(Self {
            robot,
            checker,
            queue: Deque::new(),
            cycle: 0,
            tail: start,
            tail_joints: at_start.joints,
            last_position: start,
            last_joints: at_start.joints,
            next_id: 0,
            corner_tolerance: None,
        })
    }

    /// Sets how far (mm) a joined corner may pass from the corner point
    /// of two consecutive lines; `None` (the default) never joins. Takes
    /// effect for the lines pushed next. See "Joined corners" above.
    ///
    /// # Errors
    /// [`MotionFault::InvalidMove`] for a tolerance that is not positive
    /// and finite.
    pub fn set_corner_tolerance(&mut self, tolerance: Option<P>) -> Result<(), MotionError> {
        if let Some(t) = tolerance {
            if !t.is_finite() {
                return Err(MotionError::invalid(MoveFault::NonFinite));
            }
            if !(t > P::ZERO) {
                return Err(MotionError::invalid(MoveFault::NotPositive));
            }
        }
        self.corner_tolerance = tolerance;
        Ok(())
    }

    /// The corner tolerance (mm), `None` when lines are not joined.
    #[must_use]
    pub const fn corner_tolerance(&self) -> Option<P> {
        self.corner_tolerance
    }

    /// Plans and validates `mv` from where the queue ends, without queuing
    /// it. See [`super::check`] for what is checked and what it costs.
    ///
    /// # Errors
    /// The first reason the move cannot run (see [`MotionFault`]).
    pub fn plan(&self, mv: &Move<P>) -> Result<PlannedMove<S, P>, MotionError> {
        plan(&self.robot, &self.checker, mv, self.tail, self.tail_joints)
    }

    /// Plans, validates and queues `mv`, joining it to the last queued
    /// line when a corner tolerance is set and the corner allows (see
    /// "Joined corners" above). A full queue is reported before any
    /// planning work beyond the join attempt.
    ///
    /// # Errors
    /// [`MotionFault::QueueFull`], or the first reason the move cannot run.
    pub fn push(&mut self, mv: &Move<P>) -> Result<Accepted<P>, MotionError> {
        if let Some(accepted) = self.join(mv) {
            return Ok(accepted);
        }
        if self.queue.is_full() {
            return Err(MotionError::before_sampling(MotionFault::QueueFull));
        }
        let planned = self.plan(mv)?;
        let id = self.push_planned(planned)?;
        Ok(Accepted {
            id,
            cycles: planned.cycles(),
            stretch: planned.stretch(),
            time_scaled: planned.time_scaled(),
            speed_usage: planned.speed_usage(),
            accel_usage: planned.accel_usage(),
            tool_accel_usage: planned.tool_accel_usage(),
            joined: false,
        })
    }

    /// Joins the line `mv` to the last queued line when allowed, replacing
    /// that entry by the validated pair; `None` leaves everything as it was.
    fn join(&mut self, mv: &Move<P>) -> Option<Accepted<P>> {
        let tolerance = self.corner_tolerance?;
        if !matches!(mv, Move::Line { .. }) {
            return None;
        }
        // The front move is running once a cycle of it has been emitted.
        if self.queue.len() == 1 && self.cycle > 0 {
            return None;
        }
        let &(_, back) = self.queue.back()?;
        let prev = back.lines?;
        let (shaped, lines) = join_lines(&prev, mv, back.start, tolerance).ok()??;
        let mut joined = validate(&self.robot, &self.checker, &shaped, back.start, back.start_joints).ok()?;
        joined.lines = Some(lines);
        let (_, slot) = self.queue.back_mut()?;
        *slot = joined;
        self.tail = joined.end;
        self.tail_joints = joined.end_joints;
        let id = self.next_id;
        self.next_id = id.wrapping_add(1);
        Some(Accepted {
            id,
            cycles: joined.cycles(),
            stretch: joined.stretch(),
            time_scaled: joined.time_scaled(),
            speed_usage: joined.speed_usage(),
            accel_usage: joined.accel_usage(),
            tool_accel_usage: joined.tool_accel_usage(),
            joined: true,
        })
    }

    /// Queues a move planned earlier by [`Stream::plan`] on this stream
    /// (for a cycle that repeats, plan each leg once and push the copies).
    /// Returns the move's number.
    ///
    /// # Errors
    /// [`MotionFault::QueueFull`]; [`MotionFault::Discontinuous`] when the
    /// move does not start exactly where the queue ends or was planned for
    /// another period.
    pub fn push_planned(&mut self, planned: PlannedMove<S, P>) -> Result<u32, MotionError> {
        if self.queue.is_full() {
            return Err(MotionError::before_sampling(MotionFault::QueueFull));
        }
        if planned.start != self.tail || planned.period != self.checker.period {
            return Err(MotionError::before_sampling(MotionFault::Discontinuous));
        }
        let id = self.next_id;
        let end = planned.end;
        self.queue.push_back((id, planned)).map_err(|_| MotionError::before_sampling(MotionFault::QueueFull))?;
        self.next_id = id.wrapping_add(1);
        self.tail = end;
        self.tail_joints = planned.end_joints;
        Ok(id)
    }

    /// The next cycle's setpoint, or `None` when the queue is empty (the
    /// platform rests at [`Stream::tail`]). Costs one setpoint; no loop.
    ///
    /// # Errors
    /// Only if a queued move fails the guarded kinematics, which the
    /// validation excludes. Should it happen anyway, the queue is cleared
    /// and the error returned: the caller holds the last good setpoint.
    pub fn next_setpoint(&mut self) -> Result<Option<StreamSetpoint<S>>, MotionError> {
        // The move is used in place: a copy would cost a few hundred bytes
        // of stack and as many of copying every cycle.
        let Some((move_id, mv)) = self.queue.front() else { return Ok(None) };
        let move_id = *move_id;
        let cycle = self.cycle.saturating_add(1);
        self.cycle = cycle;
        match mv.setpoint(&self.robot, cycle) {
            Ok(setpoint) => {
                self.last_position = setpoint.position;
                self.last_joints = setpoint.joints;
                if setpoint.end_of_move {
                    let _ = self.queue.pop_front();
                    self.cycle = 0;
                }
                Ok(Some(StreamSetpoint { move_id, setpoint }))
            }
            Err(e) => {
                self.abort();
                Err(MotionError { cycle, fault: e.into() })
            }
        }
    }

    /// Drops every queued move, including the one running: the platform is
    /// taken to be where the last emitted setpoint put it, and the next
    /// push starts there. Meant for faults and emergency stops: stopping
    /// mid-move is not a planned deceleration.
    pub fn abort(&mut self) {
        self.tail = self.last_position;
        self.tail_joints = self.last_joints;
        self.queue.clear();
        self.cycle = 0;
    }

    /// Moves queued, including the one running.
    #[must_use]
    pub fn len(&self) -> usize {
        self.queue.len()
    }

    /// Whether no move is queued.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.queue.is_empty()
    }

    /// Whether another move can be pushed.
    #[must_use]
    pub fn is_full(&self) -> bool {
        self.queue.is_full()
    }

    /// Where the last queued move ends (mm): the start of the next push.
    #[must_use]
    pub const fn tail(&self) -> [S::Wide; 3] {
        self.tail
    }

    /// The cycle period (s).
    #[must_use]
    pub const fn period(&self) -> P {
        self.checker.period
    }

    /// The robot the stream drives.
    #[must_use]
    pub const fn robot(&self) -> &Robot<S> {
        &self.robot
    }
}
