//! The one error type of deltakin.

use core::fmt;

/// Which input argument held a non-finite number.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Input {
    /// A Cartesian target or position (mm).
    Position,
    /// A joint-angle triple (rad).
    JointAngles,
    /// A Cartesian velocity (mm/s).
    Velocity,
    /// A joint-rate triple (rad/s).
    JointRates,
    /// A force on the platform (N).
    Force,
}

/// Which end of a joint range was crossed.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Bound {
    /// Below the minimum.
    Min,
    /// Above the maximum.
    Max,
}

/// Which end of a lower arm a passive (ball or universal) joint sits at.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum JointEnd {
    /// At the elbow, on the upper arm.
    Elbow,
    /// At the moving platform.
    Platform,
}

/// Why a geometry or a set of limits cannot describe a buildable machine.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ConfigFault {
    /// A dimension or limit is NaN or infinite.
    NonFinite,
    /// A dimension is zero or negative.
    NotPositive,
    /// A dimension exceeds [`crate::MAX_DIMENSION_MM`].
    TooLarge,
    /// A dimension is below [`crate::MIN_DIMENSION_MM`].
    TooSmall,
    /// The lower arm is not longer than the upper arm.
    LowerArmNotLonger,
    /// The joint range is empty (`min >= max`) or leaves `(-pi, pi)`.
    JointRange,
    /// The passive-joint cone half-angle is outside `(0, pi/2)`.
    PassiveCone,
    /// A minimum singularity margin is outside `[0, 1)`.
    Margin,
    /// The neutral pose (platform on the z axis, joints mid-range) cannot
    /// be assembled, so the passive joints have no neutral axis.
    NeutralPose,
    /// The number type cannot represent this geometry (fixed point only).
    Unrepresentable,
    /// A per-arm correction exceeds the range deltakin admits for it (see
    /// [`crate::ArmCorrection`]): a calibration that far from the drawing,
    /// or a unit mix-up (degrees given as radians, metres as millimetres).
    CorrectionTooLarge,
}

/// Which per-arm parameter of a robot a [`Error::InvalidArm`] concerns (see
/// [`crate::ArmCorrection`], whose fields these name).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ArmParameter {
    /// The joint zero offset.
    JointOffset,
    /// The upper arm length.
    UpperArm,
    /// The lower arm length.
    LowerArm,
    /// The radial difference, actuator axis radius minus platform joint
    /// radius.
    RadialDifference,
    /// The actuator azimuth.
    Azimuth,
    /// The actuator axis height.
    AxisHeight,
}

impl ArmParameter {
    /// The parameter's name in robot files (without the unit suffix), as
    /// used in the per-arm table of the host harness.
    #[must_use]
    pub const fn name(self) -> &'static str {
        match self {
            ArmParameter::JointOffset => "joint_offset",
            ArmParameter::UpperArm => "upper_arm",
            ArmParameter::LowerArm => "lower_arm",
            ArmParameter::RadialDifference => "radial_difference",
            ArmParameter::Azimuth => "azimuth",
            ArmParameter::AxisHeight => "axis_height",
        }
    }
}

/// Everything that can go wrong in deltakin. Small and `Copy`, so a
/// firmware loop can store or forward it freely.
///
/// Arm numbers are 0, 1 and 2, in the order of the conventions (arm `i`
/// sits at azimuth `120 deg * i`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Error {
    /// An input held NaN or an infinity.
    NonFinite {
        /// The argument that held it.
        input: Input,
    },
    /// Inverse kinematics: this arm cannot reach the target.
    Unreachable {
        /// The arm.
        arm: u8,
    },
    /// Forward kinematics: the three spheres do not meet, so no platform
    /// position closes all three loops.
    NoAssembly,
    /// A joint angle lies outside its configured range.
    JointLimit {
        /// The arm.
        arm: u8,
        /// Which end of the range.
        bound: Bound,
    },
    /// A passive joint would leave its cone of motion.
    PassiveLimit {
        /// The arm.
        arm: u8,
        /// Which end of the lower arm.
        end: JointEnd,
    },
    /// An arm is closer to a serial (Type I) singularity than allowed: the
    /// lower arm is nearly square to the elbow's direction of travel, the
    /// arm nearly stretched or folded. Also reported for an arm on the
    /// elbow-in branch, which lies beyond that singularity.
    NearSerialSingularity {
        /// The arm.
        arm: u8,
    },
    /// The pose is closer to a parallel (Type II) singularity than allowed:
    /// the three lower arms are nearly coplanar.
    NearParallelSingularity,
    /// The geometry cannot describe a buildable machine.
    InvalidGeometry(ConfigFault),
    /// The limits are inconsistent or do not fit the geometry.
    InvalidLimits(ConfigFault),
    /// One arm's corrected parameters do not describe a machine deltakin
    /// serves (see [`crate::Robot::with_corrections`]).
    InvalidArm {
        /// The arm.
        arm: u8,
        /// The parameter at fault.
        parameter: ArmParameter,
        /// What is wrong with it.
        fault: ConfigFault,
    },
    /// A dynamics parameter is invalid (see [`crate::dynamics::Dynamics`]).
    InvalidDynamics {
        /// The arm, for per-arm parameters; `None` for the platform's.
        arm: Option<u8>,
        /// The parameter at fault.
        parameter: crate::dynamics::DynamicsParameter,
    },
    /// A result does not fit the number type (fixed point only: a velocity,
    /// rate or torque beyond the range of [`crate::scalar::FixedWide`]).
    OutOfRange,
}

impl Error {
    /// The arm the error concerns (0, 1 or 2), for the errors that have
    /// one; `None` for the others.
    #[must_use]
    pub const fn arm(&self) -> Option<u8> {
        match *self {
            Error::Unreachable { arm }
            | Error::JointLimit { arm, .. }
            | Error::PassiveLimit { arm, .. }
            | Error::NearSerialSingularity { arm }
            | Error::InvalidArm { arm, .. } => Some(arm),
            Error::InvalidDynamics { arm, .. } => arm,
            Error::NonFinite { .. }
            | Error::NoAssembly
            | Error::NearParallelSingularity
            | Error::InvalidGeometry(_)
            | Error::InvalidLimits(_)
            | Error::OutOfRange => None,
        }
    }

    /// One short lowercase word naming the error, as used in the status
    /// column of the CLI and handy for firmware logs.
    #[must_use]
    pub const fn status_word(&self) -> &'static str {
        match self {
            Error::NonFinite { .. } => "non_finite",
            Error::Unreachable { .. } => "unreachable",
            Error::NoAssembly => "no_assembly",
            Error::JointLimit { .. } => "joint_limit",
            Error::PassiveLimit { .. } => "passive_limit",
            Error::NearSerialSingularity { .. } => "near_serial",
            Error::NearParallelSingularity => "near_parallel",
            Error::InvalidGeometry(_) => "invalid_geometry",
            Error::InvalidLimits(_) => "invalid_limits",
            Error::InvalidArm { .. } => "invalid_arm",
            Error::InvalidDynamics { .. } => "invalid_dynamics",
            Error::OutOfRange => "out_of_range",
        }
    }
}

impl fmt::Display for ConfigFault {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            ConfigFault::NonFinite => "a value is not finite",
            ConfigFault::NotPositive => "a dimension is not positive",
            ConfigFault::TooLarge => "a dimension exceeds the supported maximum",
            ConfigFault::TooSmall => "a dimension is below the supported minimum",
            ConfigFault::LowerArmNotLonger => "the lower arm must be longer than the upper arm",
            ConfigFault::JointRange => "the joint range is empty or leaves (-180, 180) degrees",
            ConfigFault::PassiveCone => "the passive-joint cone half-angle must lie in (0, 90) degrees",
            ConfigFault::Margin => "a minimum singularity margin must lie in [0, 1)",
            ConfigFault::NeutralPose => "the neutral pose (joints mid-range) cannot be assembled",
            ConfigFault::Unrepresentable => "the number type cannot represent this geometry",
            ConfigFault::CorrectionTooLarge => "the correction exceeds its admitted range",
        })
    }
}

impl fmt::Display for ArmParameter {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            ArmParameter::JointOffset => "joint zero offset",
            ArmParameter::UpperArm => "upper arm length",
            ArmParameter::LowerArm => "lower arm length",
            ArmParameter::RadialDifference => "radial difference (actuator minus platform joint radius)",
            ArmParameter::Azimuth => "actuator azimuth",
            ArmParameter::AxisHeight => "actuator axis height",
        })
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::NonFinite { input } => write!(f, "non-finite number in the {input:?} input"),
            Error::Unreachable { arm } => write!(f, "arm {arm} cannot reach the target"),
            Error::NoAssembly => f.write_str("the joint angles close no platform position"),
            Error::JointLimit { arm, bound: Bound::Min } => write!(f, "arm {arm} below its joint minimum"),
            Error::JointLimit { arm, bound: Bound::Max } => write!(f, "arm {arm} above its joint maximum"),
            Error::PassiveLimit { arm, end: JointEnd::Elbow } => {
                write!(f, "arm {arm}: elbow ball joint outside its cone")
            }
            Error::PassiveLimit { arm, end: JointEnd::Platform } => {
                write!(f, "arm {arm}: platform ball joint outside its cone")
            }
            Error::NearSerialSingularity { arm } => {
                write!(f, "arm {arm} too close to a serial singularity (stretched or folded)")
            }
            Error::NearParallelSingularity => f.write_str("too close to a parallel singularity"),
            Error::InvalidGeometry(why) => write!(f, "invalid geometry: {why}"),
            Error::InvalidLimits(why) => write!(f, "invalid limits: {why}"),
            Error::InvalidArm { arm, parameter, fault } => write!(f, "invalid arm {arm} {parameter}: {fault}"),
            Error::InvalidDynamics { arm: Some(arm), parameter } => {
                write!(f, "invalid dynamics, arm {arm}: {parameter}")
            }
            Error::InvalidDynamics { arm: None, parameter } => write!(f, "invalid dynamics: {parameter}"),
            Error::OutOfRange => f.write_str("a result does not fit the number type"),
        }
    }
}

impl core::error::Error for Error {}

/// `Ok` when all three numbers are finite, else [`Error::NonFinite`]
/// naming `input`.
pub(crate) fn check_finite<A: crate::scalar::Arith>(v: [A; 3], input: Input) -> Result<(), Error> {
    if A::all_finite(v) { Ok(()) } else { Err(Error::NonFinite { input }) }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_arm_is_named_where_the_error_has_one() {
        assert_eq!(Error::Unreachable { arm: 2 }.arm(), Some(2));
        assert_eq!(Error::JointLimit { arm: 1, bound: Bound::Min }.arm(), Some(1));
        assert_eq!(Error::PassiveLimit { arm: 0, end: JointEnd::Platform }.arm(), Some(0));
        assert_eq!(Error::NearSerialSingularity { arm: 2 }.arm(), Some(2));
        assert_eq!(Error::NearParallelSingularity.arm(), None);
        assert_eq!(Error::NoAssembly.arm(), None);
        assert_eq!(Error::NonFinite { input: Input::JointAngles }.arm(), None);
    }

    #[test]
    fn status_words_are_short_lowercase_and_distinct() {
        let all = [
            Error::NonFinite { input: Input::Position },
            Error::Unreachable { arm: 0 },
            Error::NoAssembly,
            Error::JointLimit { arm: 1, bound: Bound::Max },
            Error::PassiveLimit { arm: 2, end: JointEnd::Elbow },
            Error::NearSerialSingularity { arm: 0 },
            Error::NearParallelSingularity,
            Error::InvalidGeometry(ConfigFault::NotPositive),
            Error::InvalidLimits(ConfigFault::JointRange),
            Error::InvalidArm { arm: 1, parameter: ArmParameter::UpperArm, fault: ConfigFault::TooSmall },
            Error::OutOfRange,
        ];
        for (i, a) in all.iter().enumerate() {
            let w = a.status_word();
            assert!(w.bytes().all(|b| b.is_ascii_lowercase() || b == b'_'), "{w}");
            for b in &all[i + 1..] {
                assert_ne!(w, b.status_word());
            }
        }
    }

    #[test]
    fn an_arm_fault_names_the_arm_and_the_parameter() {
        let e = Error::InvalidArm { arm: 2, parameter: ArmParameter::Azimuth, fault: ConfigFault::CorrectionTooLarge };
        let mut buf = [0u8; 128];
        let mut w = Writer { buf: &mut buf, len: 0 };
        fmt::write(&mut w, format_args!("{e}")).unwrap();
        let text = core::str::from_utf8(&w.buf[..w.len]).unwrap();
        assert_eq!(text, "invalid arm 2 actuator azimuth: the correction exceeds its admitted range");
        assert_eq!(ArmParameter::LowerArm.name(), "lower_arm");
    }

    /// A fixed buffer to format into (the core has no allocator).
    struct Writer<'a> {
        buf: &'a mut [u8],
        len: usize,
    }

    impl fmt::Write for Writer<'_> {
        fn write_str(&mut self, s: &str) -> fmt::Result {
            let end = self.len + s.len();
            self.buf.get_mut(self.len..end).ok_or(fmt::Error)?.copy_from_slice(s.as_bytes());
            self.len = end;
            Ok(())
        }
    }
}
