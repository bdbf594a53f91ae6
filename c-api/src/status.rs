//! The status every entry point returns, and the optional fault details.
//!
//! The status values 1 to 12 are the kinds of the core's `deltakin::Error`,
//! named after its status words (`Error::status_word`); 20 to 27 the
//! motion layer's own faults (`MotionError::status_word`); 40 and up what
//! only the C interface can meet (a null pointer, storage never
//! initialised). The arm, the end of a range and the control cycle go into
//! a [`DeltakinFault`] when the caller passes one.

use deltakin::motion::{MotionError, MotionFault};
use deltakin::{Bound, Error, JointEnd};

/// What an entry point reports. `DELTAKIN_STATUS_OK` (0) is success;
/// everything else names what is wrong, and no output was written (except
/// the fault details).
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DeltakinStatus {
    /// Success.
    Ok = 0,
    /// An input held NaN or an infinity (`non_finite`).
    NonFinite = 1,
    /// Inverse kinematics: an arm cannot reach the target; the fault names
    /// the arm (`unreachable`).
    Unreachable = 2,
    /// Forward kinematics: no platform position closes all three loops
    /// (`no_assembly`).
    NoAssembly = 3,
    /// A joint angle is outside its range; the fault names the arm and the
    /// end, 0 minimum, 1 maximum (`joint_limit`).
    JointLimit = 4,
    /// A passive joint would leave its cone; the fault names the arm and
    /// the end, 0 elbow, 1 platform (`passive_limit`).
    PassiveLimit = 5,
    /// An arm is too close to a serial singularity; the fault names the
    /// arm (`near_serial`).
    NearSerial = 6,
    /// Too close to a parallel singularity (`near_parallel`).
    NearParallel = 7,
    /// The geometry cannot describe a buildable machine
    /// (`invalid_geometry`).
    InvalidGeometry = 8,
    /// The limits are inconsistent (`invalid_limits`).
    InvalidLimits = 9,
    /// An arm's corrected parameters are refused; the fault names the arm
    /// (`invalid_arm`).
    InvalidArm = 10,
    /// A dynamics parameter is invalid; the fault names the arm for
    /// per-arm parameters (`invalid_dynamics`).
    InvalidDynamics = 11,
    /// A result does not fit the number type (fixed point) (`out_of_range`).
    OutOfRange = 12,
    /// Motion: the tool acceleration bound is exceeded even after the
    /// largest time scaling (`tool_accel`).
    ToolAccel = 20,
    /// Motion: an arm's joint speed limit is exceeded; the fault names the
    /// arm (`joint_speed`).
    JointSpeed = 21,
    /// Motion: an arm's joint acceleration limit is exceeded; the fault
    /// names the arm (`joint_accel`).
    JointAccel = 22,
    /// Motion: the move's parameters are invalid (`invalid_move`).
    InvalidMove = 23,
    /// Motion: the move would last too many cycles (`too_long`).
    TooLong = 24,
    /// Motion: a constant or cycle count does not fit the number type
    /// (`unrepresentable`).
    Unrepresentable = 25,
    /// Motion: the move queue is full; the move was not added
    /// (`queue_full`).
    QueueFull = 26,
    /// Motion: a move does not start where the queue ends
    /// (`discontinuous`).
    Discontinuous = 27,
    /// The stream has no queued move: no setpoint was written, the platform
    /// rests where the last move ended. Not a fault.
    StreamIdle = 30,
    /// A required pointer was NULL.
    NullPointer = 40,
    /// The storage was never initialised by its `_init` function (or its
    /// initialisation failed).
    NotInitialised = 41,
    /// An integer code in an input struct (a move kind, a time law) is not
    /// one of the documented values.
    BadCode = 42,
    /// A fault this version of the interface does not name (a newer core).
    Unknown = 99,
}

/// Details of a fault, for callers that want more than the status.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DeltakinFault {
    /// The arm (0, 1, 2) the fault concerns, or -1 when none.
    pub arm: i32,
    /// Which end: for `DELTAKIN_STATUS_JOINT_LIMIT` 0 minimum, 1 maximum;
    /// for `DELTAKIN_STATUS_PASSIVE_LIMIT` 0 elbow, 1 platform; else -1.
    pub end: i32,
    /// Motion faults: the cycle of the move at which the fault was found
    /// (0: before sampling); 0 otherwise.
    pub cycle: u32,
    /// Motion faults: 1 when a guard could be violated between two
    /// setpoints rather than at one; 0 otherwise.
    pub between_cycles: u32,
}

impl DeltakinFault {
    /// No details: no arm, no end, cycle 0.
    pub const NONE: Self = Self { arm: -1, end: -1, cycle: 0, between_cycles: 0 };
}

/// The status and details of a kinematic error.
#[must_use]
pub fn from_error(e: Error) -> (DeltakinStatus, DeltakinFault) {
    use DeltakinStatus as S;
    let mut f = DeltakinFault::NONE;
    let status = match e {
        Error::NonFinite { .. } => S::NonFinite,
        Error::Unreachable { arm } => {
            f.arm = arm.into();
            S::Unreachable
        }
        Error::NoAssembly => S::NoAssembly,
        Error::JointLimit { arm, bound } => {
            f.arm = arm.into();
            f.end = match bound {
                Bound::Min => 0,
                Bound::Max => 1,
            };
            S::JointLimit
        }
        Error::PassiveLimit { arm, end } => {
            f.arm = arm.into();
            f.end = match end {
                JointEnd::Elbow => 0,
                JointEnd::Platform => 1,
            };
            S::PassiveLimit
        }
        Error::NearSerialSingularity { arm } => {
            f.arm = arm.into();
            S::NearSerial
        }
        Error::NearParallelSingularity => S::NearParallel,
        Error::InvalidGeometry(_) => S::InvalidGeometry,
        Error::InvalidLimits(_) => S::InvalidLimits,
        Error::InvalidArm { arm, .. } => {
            f.arm = arm.into();
            S::InvalidArm
        }
        Error::InvalidDynamics { arm, .. } => {
            f.arm = arm.map_or(-1, i32::from);
            S::InvalidDynamics
        }
        Error::OutOfRange => S::OutOfRange,
        _ => S::Unknown,
    };
    (status, f)
}

/// The status and details of a motion error.
#[must_use]
pub fn from_motion(e: MotionError) -> (DeltakinStatus, DeltakinFault) {
    use DeltakinStatus as S;
    let (status, mut f) = match e.fault {
        MotionFault::Kinematics(k) => from_error(k),
        MotionFault::BetweenCycles(k) => {
            let (s, mut f) = from_error(k);
            f.between_cycles = 1;
            (s, f)
        }
        MotionFault::ToolAccel => (S::ToolAccel, DeltakinFault::NONE),
        MotionFault::JointSpeed { arm } => (S::JointSpeed, DeltakinFault { arm: arm.into(), ..DeltakinFault::NONE }),
        MotionFault::JointAccel { arm } => (S::JointAccel, DeltakinFault { arm: arm.into(), ..DeltakinFault::NONE }),
        MotionFault::InvalidMove(_) => (S::InvalidMove, DeltakinFault::NONE),
        MotionFault::TooLong => (S::TooLong, DeltakinFault::NONE),
        MotionFault::Unrepresentable => (S::Unrepresentable, DeltakinFault::NONE),
        MotionFault::QueueFull => (S::QueueFull, DeltakinFault::NONE),
        MotionFault::Discontinuous => (S::Discontinuous, DeltakinFault::NONE),
        _ => (S::Unknown, DeltakinFault::NONE),
    };
    f.cycle = e.cycle;
    (status, f)
}

#[cfg(test)]
mod tests {
    use super::*;
    use deltakin::motion::MoveFault;
    use deltakin::{ArmParameter, ConfigFault, Input};

    /// The C names are the core's status words, so a log reads the same
    /// from Rust and from C.
    fn c_name(s: DeltakinStatus) -> &'static str {
        use DeltakinStatus as S;
        match s {
            S::NonFinite => "non_finite",
            S::Unreachable => "unreachable",
            S::NoAssembly => "no_assembly",
            S::JointLimit => "joint_limit",
            S::PassiveLimit => "passive_limit",
            S::NearSerial => "near_serial",
            S::NearParallel => "near_parallel",
            S::InvalidGeometry => "invalid_geometry",
            S::InvalidLimits => "invalid_limits",
            S::InvalidArm => "invalid_arm",
            S::InvalidDynamics => "invalid_dynamics",
            S::OutOfRange => "out_of_range",
            S::ToolAccel => "tool_accel",
            S::JointSpeed => "joint_speed",
            S::JointAccel => "joint_accel",
            S::InvalidMove => "invalid_move",
            S::TooLong => "too_long",
            S::Unrepresentable => "unrepresentable",
            S::QueueFull => "queue_full",
            S::Discontinuous => "discontinuous",
            _ => "",
        }
    }

    #[test]
    fn every_core_error_maps_to_its_own_status_word_and_arm() {
        let errors = [
            Error::NonFinite { input: Input::Position },
            Error::Unreachable { arm: 2 },
            Error::NoAssembly,
            Error::JointLimit { arm: 1, bound: Bound::Max },
            Error::PassiveLimit { arm: 0, end: JointEnd::Platform },
            Error::NearSerialSingularity { arm: 1 },
            Error::NearParallelSingularity,
            Error::InvalidGeometry(ConfigFault::NotPositive),
            Error::InvalidLimits(ConfigFault::JointRange),
            Error::InvalidArm { arm: 2, parameter: ArmParameter::Azimuth, fault: ConfigFault::CorrectionTooLarge },
            Error::OutOfRange,
        ];
        for e in errors {
            let (s, f) = from_error(e);
            assert_eq!(c_name(s), e.status_word(), "{e:?}");
            let arm = match e {
                Error::Unreachable { arm }
                | Error::JointLimit { arm, .. }
                | Error::PassiveLimit { arm, .. }
                | Error::NearSerialSingularity { arm }
                | Error::InvalidArm { arm, .. } => i32::from(arm),
                _ => -1,
            };
            assert_eq!(f.arm, arm, "{e:?}");
        }
        assert_eq!(from_error(Error::JointLimit { arm: 1, bound: Bound::Min }).1.end, 0);
        assert_eq!(from_error(Error::PassiveLimit { arm: 1, end: JointEnd::Platform }).1.end, 1);
    }

    #[test]
    fn motion_faults_keep_their_cycle_and_status_word() {
        let faults = [
            MotionFault::Kinematics(Error::Unreachable { arm: 1 }),
            MotionFault::BetweenCycles(Error::NearSerialSingularity { arm: 0 }),
            MotionFault::ToolAccel,
            MotionFault::JointSpeed { arm: 2 },
            MotionFault::JointAccel { arm: 1 },
            MotionFault::InvalidMove(MoveFault::ZeroLength),
            MotionFault::TooLong,
            MotionFault::Unrepresentable,
            MotionFault::QueueFull,
            MotionFault::Discontinuous,
        ];
        for fault in faults {
            let e = MotionError { cycle: 17, fault };
            let (s, f) = from_motion(e);
            assert_eq!(c_name(s), e.status_word(), "{fault:?}");
            assert_eq!(f.cycle, 17);
            assert_eq!(f.between_cycles, u32::from(matches!(fault, MotionFault::BetweenCycles(_))));
        }
    }
}
