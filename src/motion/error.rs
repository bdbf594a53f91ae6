//! The error of the motion layer: a kinematic [`Error`] or a motion limit,
//! together with the control cycle at which it was found.

use core::fmt;

use crate::error::Error;

/// What is wrong with a move's parameters (found before any sampling).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum MoveFault {
    /// A number in the move (target, bound, lift, radius, duration) is NaN
    /// or infinite.
    NonFinite,
    /// A speed, acceleration or jerk bound, a dwell time or the cycle
    /// period is zero or negative.
    NotPositive,
    /// The move has no length (target equal to the start); use a dwell.
    ZeroLength,
    /// A pick cycle whose blend radius does not fit: it must be positive,
    /// at most the rise and the fall, and at most half the traverse; the
    /// traverse must not be zero.
    Blend,
}

/// Why a move was refused, or why a stream stopped.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum MotionFault {
    /// A sample failed the guarded kinematics: unreachable, a joint range,
    /// a passive-joint cone or a singularity margin (the inner error names
    /// the arm and the limit).
    Kinematics(Error),
    /// A guard could be violated between two setpoints: a sample passed,
    /// but the stretch of path from it to the next sample comes closer to
    /// the limit than the sample's margin allows (see
    /// [`super::between`]); the inner error names the arm and the limit,
    /// the cycle is the sample the stretch leaves from (0: the move's
    /// start).
    BetweenCycles(Error),
    /// The tool's acceleration (tangential and centripetal together)
    /// exceeds the move's Cartesian acceleration bound even after the
    /// largest allowed time scaling.
    ToolAccel,
    /// The joint speed limit of this arm is exceeded even after the
    /// largest allowed time scaling.
    JointSpeed {
        /// The arm.
        arm: u8,
    },
    /// The joint acceleration limit of this arm is exceeded even after the
    /// largest allowed time scaling.
    JointAccel {
        /// The arm.
        arm: u8,
    },
    /// The move's parameters are invalid.
    InvalidMove(MoveFault),
    /// The move would last more than [`super::MAX_MOVE_CYCLES`] cycles.
    TooLong,
    /// A constant or a cycle count cannot be represented in the number type.
    Unrepresentable,
    /// The move queue is full; the move was not added.
    QueueFull,
    /// A pre-planned move does not start where the queue ends, or was
    /// planned for another cycle period.
    Discontinuous,
}

/// A motion error: what went wrong and at which control cycle of the move
/// (1 is the first cycle after the move starts; 0 when the fault was found
/// before sampling). Multiply by the cycle period for seconds.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MotionError {
    /// Cycle of the move at which the fault was found (0: before sampling).
    pub cycle: u32,
    /// What went wrong.
    pub fault: MotionFault,
}

impl MotionError {
    /// A fault found before any sample was taken.
    #[must_use]
    pub const fn before_sampling(fault: MotionFault) -> Self {
        Self { cycle: 0, fault }
    }

    /// An invalid-move fault found before sampling.
    #[must_use]
    pub const fn invalid(why: MoveFault) -> Self {
        Self::before_sampling(MotionFault::InvalidMove(why))
    }

    /// One short lowercase word naming the fault (the kinematic status word
    /// for a kinematic fault).
    #[must_use]
    pub const fn status_word(&self) -> &'static str {
        match self.fault {
            MotionFault::Kinematics(e) => e.status_word(),
            MotionFault::BetweenCycles(e) => e.status_word(),
            MotionFault::ToolAccel => "tool_accel",
            MotionFault::JointSpeed { .. } => "joint_speed",
            MotionFault::JointAccel { .. } => "joint_accel",
            MotionFault::InvalidMove(_) => "invalid_move",
            MotionFault::TooLong => "too_long",
            MotionFault::Unrepresentable => "unrepresentable",
            MotionFault::QueueFull => "queue_full",
            MotionFault::Discontinuous => "discontinuous",
        }
    }
}

impl fmt::Display for MoveFault {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            MoveFault::NonFinite => "a number in the move is not finite",
            MoveFault::NotPositive => "a bound, duration or period is not positive",
            MoveFault::ZeroLength => "the move has zero length",
            MoveFault::Blend => "the blend radius does not fit the pick cycle",
        })
    }
}

impl fmt::Display for MotionFault {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            MotionFault::Kinematics(e) => write!(f, "{e}"),
            MotionFault::BetweenCycles(e) => write!(f, "between this cycle and the next: {e}"),
            MotionFault::ToolAccel => f.write_str("tool acceleration bound exceeded"),
            MotionFault::JointSpeed { arm } => write!(f, "arm {arm} joint speed limit exceeded"),
            MotionFault::JointAccel { arm } => write!(f, "arm {arm} joint acceleration limit exceeded"),
            MotionFault::InvalidMove(why) => write!(f, "invalid move: {why}"),
            MotionFault::TooLong => f.write_str("the move lasts too many cycles"),
            MotionFault::Unrepresentable => f.write_str("the number type cannot represent the move"),
            MotionFault::QueueFull => f.write_str("the move queue is full"),
            MotionFault::Discontinuous => f.write_str("the move does not start where the queue ends"),
        }
    }
}

impl fmt::Display for MotionError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.cycle == 0 { write!(f, "{}", self.fault) } else { write!(f, "{} at cycle {}", self.fault, self.cycle) }
    }
}

impl core::error::Error for MotionError {}

impl From<Error> for MotionFault {
    fn from(e: Error) -> Self {
        MotionFault::Kinematics(e)
    }
}
