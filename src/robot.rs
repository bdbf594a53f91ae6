//! A robot: its dimensions, its limits, and the per-arm constants the
//! solvers use, computed once when the robot is built.
//!
//! Lengths are millimetres and angles radians at this interface. Inside,
//! every length is divided by the lower-arm length, so the solvers see
//! numbers of order one whatever the size of the machine: the lower arm is
//! exactly 1, the upper arm below 1, and every position in the workspace
//! below about 3. That keeps f32 rounding uniform and lets a fixed-point
//! type use a narrow, fixed format.

use crate::error::{ConfigFault, Error};
use crate::per_arm::{self, ArmConstants, ArmCorrection, Corrections};
use crate::scalar::{Arith, Real};

/// Largest dimension deltakin accepts, in millimetres (100 m). Squares of
/// positions stay far inside every supported number type.
pub const MAX_DIMENSION_MM: f64 = 1.0e5;

/// Smallest dimension deltakin accepts, in millimetres. Together with
/// [`MAX_DIMENSION_MM`] it bounds every ratio of dimensions by 1e5, so the
/// precomputed constants (such as `1 / (2 upper_arm / lower_arm)`) stay
/// finite and far from the limits of f32.
pub const MIN_DIMENSION_MM: f64 = 1.0;

/// The four dimensions of a rotary delta robot, in millimetres (see the
/// conventions in the crate documentation). They are API lengths, so they
/// take the scalar's [`Arith::Wide`] type (the scalar itself for floats).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "serde", serde(deny_unknown_fields))]
#[cfg_attr(
    feature = "serde",
    serde(bound(serialize = "S::Wide: serde::Serialize", deserialize = "S::Wide: serde::Deserialize<'de>"))
)]
pub struct Geometry<S: Arith> {
    /// Base centre to each actuator axis, measured radially.
    pub base_radius: S::Wide,
    /// Platform centre to the axis where a lower arm meets the platform.
    pub platform_radius: S::Wide,
    /// Actuator axis to elbow axis.
    pub upper_arm: S::Wide,
    /// Elbow axis to platform axis (parallelogram rod length).
    pub lower_arm: S::Wide,
}

/// What the guarded solvers enforce.
///
/// Write it as a struct literal, so that every value is named where the
/// robot is built (the same range on every arm is `[value; 3]`), and let
/// [`Robot::new`] validate it (or call [`Limits::validate`] first):
///
/// ```
/// use deltakin::Limits;
///
/// let limits: Limits<f32> = Limits {
///     joint_min: [(-35.0f32).to_radians(); 3],
///     joint_max: [85.0f32.to_radians(); 3],
///     passive_cone: 40.0f32.to_radians(), // half-angle
///     min_serial_margin: 0.1,
///     min_parallel_margin: 0.1,
/// };
/// limits.validate()?;
/// # Ok::<(), deltakin::Error>(())
/// ```
///
/// # What a minimum margin of zero means
/// The margins run from 0 at a singularity to 1 at the best pose (see
/// [`crate::Margins`]). A minimum of 0 switches that guard off up to the
/// singularity itself: the serial guard then refuses only the elbow-in
/// branch (a negative serial margin), and the parallel guard refuses
/// nothing (the parallel margin is never negative). Poses arbitrarily
/// close to a singularity pass, where the joint rates for a given tool
/// speed and the joint torques for a given force grow without bound, and
/// [`Jacobian`](crate::Jacobian) maps may fail. That is meant for
/// diagnostics and workspace maps; a machine that commands motion should
/// set positive minimums (the demo robot uses 0.1). [`Limits::validate`]
/// accepts 0 and refuses negative values and values of 1 or more; the
/// harness warns about a robot file whose minimum margin is 0.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "serde", serde(deny_unknown_fields))]
pub struct Limits<S> {
    /// Lowest joint angle of each arm (rad), arms 0, 1, 2.
    pub joint_min: [S; 3],
    /// Highest joint angle of each arm (rad), arms 0, 1, 2.
    pub joint_max: [S; 3],
    /// Half-angle of the cone each passive joint may move in, around its
    /// neutral axis (rad): the largest tilt of a rod from that axis, not
    /// the cone's full opening. See [`Robot`] for what exactly is measured.
    pub passive_cone: S,
    /// Smallest serial margin accepted on any arm, in `[0, 1)` (0: see
    /// above).
    pub min_serial_margin: S,
    /// Smallest parallel margin accepted, in `[0, 1)` (0: see above).
    pub min_parallel_margin: S,
}

impl<S: Copy> Limits<S> {
    /// The same joint range on all three arms, from five positional values
    /// (in the order of the fields).
    #[deprecated(
        since = "0.2.0",
        note = "five unnamed values are easy to swap: write the `Limits { .. }` literal, every value named \
                (`joint_min: [value; 3]` for the same range on every arm)"
    )]
    #[must_use]
    pub const fn uniform(
        joint_min: S,
        joint_max: S,
        passive_cone: S,
        min_serial_margin: S,
        min_parallel_margin: S,
    ) -> Self {
        Self {
            joint_min: [joint_min; 3],
            joint_max: [joint_max; 3],
            passive_cone,
            min_serial_margin,
            min_parallel_margin,
        }
    }
}

/// A validated rotary delta robot, ready for the solvers.
///
/// Plain `Copy` data without pointers: build it once at start-up and keep
/// it wherever the firmware keeps its state (a `static` cell, a task's
/// resources, a field of the motion controller). Building costs, per arm,
/// a square root, two divisions and one or two sine/cosine pairs, plus
/// one pair for the cone.
///
/// # Passive joints
/// Each lower arm ends in a ball (or universal) joint at the elbow and at
/// the platform, which allows the rod to tilt at most `passive_cone` away
/// from the joint's neutral axis. The neutral axis of arm `i` is the rod's
/// direction (elbow towards platform) at arm `i`'s neutral pose: the
/// platform on the z axis and joint `i` at the middle of its range (with
/// equal ranges on all arms this is one pose of the whole machine). At the
/// elbow the axis is fixed to the upper arm, so it turns with the joint;
/// at the platform it is fixed to the platform, which only translates. The
/// guard measures the angle between the rod's current direction and each
/// axis and rejects a pose where either exceeds `passive_cone`.
///
/// # Per-arm parameters
/// [`Robot::with_corrections`] builds a robot whose arms each carry their
/// own joint offset, lengths, radial difference, azimuth and axis height
/// (see [`crate::ArmCorrection`]); [`Robot::new`] is the nominal machine,
/// every correction zero. The solvers always use the per-arm form; the
/// per-arm lengths are read back with [`Robot::upper_arms`] and
/// [`Robot::lower_arms`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Robot<S: Arith> {
    geometry: Geometry<S>,
    limits: Limits<S>,
    /// Nominal lower arm (mm) and its inverse: the internal length unit.
    pub(crate) scale: S::Wide,
    pub(crate) inv_scale: S::Recip,
    /// cos of the passive-joint cone half-angle.
    pub(crate) cos_cone: S,
    /// Each arm's own constants (lengths in nominal lower-arm units).
    pub(crate) arms: [ArmConstants<S>; 3],
}

/// `S::from_f64` that reports an unrepresentable value as a fault.
fn constant<S: Real>(v: f64) -> Result<S, ConfigFault> {
    S::from_f64(v).ok_or(ConfigFault::Unrepresentable)
}

impl<S: Real> Geometry<S> {
    /// Checks that the four dimensions describe a machine deltakin serves.
    ///
    /// * every dimension finite and positive;
    /// * none below [`MIN_DIMENSION_MM`] or above [`MAX_DIMENSION_MM`];
    /// * the lower arm strictly longer than the upper arm. Every rotary
    ///   delta in practice is built this way (ratios of about 1.5 to 3.5),
    ///   and it is the design family deltakin's accuracy is verified on; a
    ///   shorter lower arm is refused rather than served with unverified
    ///   numbers.
    ///
    /// # Errors
    /// [`Error::InvalidGeometry`] naming the first failed check.
    pub fn validate(&self) -> Result<(), Error> {
        let dims = [self.base_radius, self.platform_radius, self.upper_arm, self.lower_arm];
        let min = S::Wide::from_f64(MIN_DIMENSION_MM).ok_or(Error::InvalidGeometry(ConfigFault::Unrepresentable))?;
        if !dims.iter().all(|v| v.is_finite()) {
            return Err(Error::InvalidGeometry(ConfigFault::NonFinite));
        }
        if !dims.iter().all(|&v| v > S::Wide::ZERO) {
            return Err(Error::InvalidGeometry(ConfigFault::NotPositive));
        }
        // A type that cannot represent the maximum holds no larger value.
        if let Some(max) = S::Wide::from_f64(MAX_DIMENSION_MM) {
            if !dims.iter().all(|&v| v <= max) {
                return Err(Error::InvalidGeometry(ConfigFault::TooLarge));
            }
        }
        if !dims.iter().all(|&v| v >= min) {
            return Err(Error::InvalidGeometry(ConfigFault::TooSmall));
        }
        if !(self.lower_arm > self.upper_arm) {
            return Err(Error::InvalidGeometry(ConfigFault::LowerArmNotLonger));
        }
        Ok(())
    }
}

impl<S: Real> Limits<S> {
    /// Checks the limits on their own: finite; each joint range non-empty
    /// and inside `(-pi, pi)`; cone half-angle in `(0, pi/2)` (a ball joint
    /// cannot tilt further, and the cosine test needs it); margins in
    /// `[0, 1)` (a margin of 1 is the best possible pose, so a minimum of 1
    /// would reject everything).
    ///
    /// # Errors
    /// [`Error::InvalidLimits`] naming the first failed check.
    pub fn validate(&self) -> Result<(), Error> {
        let bad = |f| Err(Error::InvalidLimits(f));
        let scalars = [self.passive_cone, self.min_serial_margin, self.min_parallel_margin];
        let finite = self.joint_min.iter().chain(self.joint_max.iter()).chain(scalars.iter()).all(|v| v.is_finite());
        if !finite {
            return bad(ConfigFault::NonFinite);
        }
        for (&lo, &hi) in self.joint_min.iter().zip(self.joint_max.iter()) {
            if !(lo < hi && lo > -S::PI && hi < S::PI) {
                return bad(ConfigFault::JointRange);
            }
        }
        let half_pi = S::PI * S::HALF;
        if !(self.passive_cone > S::ZERO && self.passive_cone < half_pi) {
            return bad(ConfigFault::PassiveCone);
        }
        for m in [self.min_serial_margin, self.min_parallel_margin] {
            if !(m >= S::ZERO && m < S::ONE) {
                return bad(ConfigFault::Margin);
            }
        }
        Ok(())
    }
}

impl<S: Real> Robot<S> {
    /// Validates geometry and limits and precomputes the per-arm constants
    /// of the nominal machine: [`Robot::with_corrections`] with every
    /// correction zero.
    ///
    /// # Errors
    /// [`Error::InvalidGeometry`] or [`Error::InvalidLimits`] with the
    /// reason; [`ConfigFault::NeutralPose`] when the lower arm cannot close
    /// the loop at some arm's neutral pose;
    /// [`ConfigFault::Unrepresentable`] when the number type cannot serve
    /// this geometry (fixed point outside its validated envelope, see
    /// [`crate::scalar::Fixed`]).
    pub fn new(geometry: Geometry<S>, limits: Limits<S>) -> Result<Self, Error> {
        Self::with_corrections(geometry, [ArmCorrection::ZERO; 3], limits)
    }

    /// Validates a per-arm robot: the nominal `geometry`, each arm's
    /// `corrections` to it (arms 0, 1, 2; see [`crate::ArmCorrection`]
    /// for the model and the admitted ranges) and the `limits`, and
    /// precomputes each arm's constants. The joint limits are on the joint
    /// readings (the angles the solvers take and give), not on the true
    /// angles. With every correction zero the robot is exactly the one
    /// [`Robot::new`] builds.
    ///
    /// # Errors
    /// As [`Robot::new`], checked first on the nominal geometry; then
    /// [`Error::InvalidArm`] naming the first arm and parameter at fault
    /// (checked in the order of [`ArmCorrection::validate`], then the
    /// number type's envelope for each arm).
    pub fn with_corrections(
        geometry: Geometry<S>,
        corrections: Corrections<S>,
        limits: Limits<S>,
    ) -> Result<Self, Error> {
        geometry.validate()?;
        limits.validate()?;
        let geo_fault = Error::InvalidGeometry;
        let unrepresentable = geo_fault(ConfigFault::Unrepresentable);
        let scale = geometry.lower_arm;
        let inv_scale = S::recip(scale).ok_or(unrepresentable)?;
        let a = S::mul_recip(geometry.upper_arm, inv_scale);
        let d = S::mul_recip(geometry.base_radius - geometry.platform_radius, inv_scale);
        if !(a.is_finite() && d.is_finite() && S::admits_geometry(scale, a, d)) {
            return Err(unrepresentable);
        }
        for (arm, c) in (0u8..).zip(corrections.iter()) {
            c.validate(arm, &geometry)?;
        }
        let half_sqrt3 = constant::<S>(0.866_025_403_784_438_6).map_err(geo_fault)?;
        let azimuths = [(S::ONE, S::ZERO), (-S::HALF, half_sqrt3), (-S::HALF, -half_sqrt3)];
        let build = |arm: u8, c: &ArmCorrection<S>, azimuth: (S, S), lo: S, hi: S| {
            let k = per_arm::arm_constants(arm, &geometry, c, inv_scale, azimuth, (lo + hi) * S::HALF)?;
            per_arm::check_arm_in_number_range(arm, scale, geometry.lower_arm + c.lower_arm, d, &k)?;
            Ok::<_, Error>(k)
        };
        let [c0, c1, c2] = &corrections;
        let [z0, z1, z2] = azimuths;
        let ([lo0, lo1, lo2], [hi0, hi1, hi2]) = (limits.joint_min, limits.joint_max);
        let arms = [build(0, c0, z0, lo0, hi0)?, build(1, c1, z1, lo1, hi1)?, build(2, c2, z2, lo2, hi2)?];
        Ok(Self { geometry, limits, scale, inv_scale, cos_cone: limits.passive_cone.sin_cos().1, arms })
    }

    /// The nominal dimensions this robot was built from (mm).
    #[must_use]
    pub const fn geometry(&self) -> &Geometry<S> {
        &self.geometry
    }

    /// The limits this robot enforces.
    #[must_use]
    pub const fn limits(&self) -> &Limits<S> {
        &self.limits
    }

    /// Each arm's upper arm length (mm), arms 0, 1, 2: nominal plus
    /// correction, as the solvers hold it (in lower-arm units, converted
    /// back: within a rounding or two of the sum; for fixed point within a
    /// few LSB of [`crate::FixedWide`]).
    #[must_use]
    pub fn upper_arms(&self) -> [S::Wide; 3] {
        self.arms.map(|k| k.a.mul_wide(self.scale))
    }

    /// Each arm's lower arm length (mm), arms 0, 1, 2, as for
    /// [`Robot::upper_arms`].
    #[must_use]
    pub fn lower_arms(&self) -> [S::Wide; 3] {
        self.arms.map(|k| k.l.mul_wide(self.scale))
    }

    /// Each arm's joint zero offset (rad), exactly as given: the true
    /// joint angle is the reading plus the offset.
    #[must_use]
    pub fn joint_offsets(&self) -> [S; 3] {
        self.arms.map(|k| k.joint_offset)
    }
}

/// Expresses a vector given in an arm's vertical-plane frame (x radial, y
/// tangential, z up) in the frame of that arm's upper arm at joint angle
/// `theta` (x along the upper arm), given `sin(theta)` and `cos(theta)`.
/// The upper arm is the plane frame turned by `theta` about y, down being
/// positive, so this applies the inverse of that rotation.
#[inline]
pub(crate) fn to_upper_arm_frame<S: Real>(v: [S; 3], sin_t: S, cos_t: S) -> [S; 3] {
    let [x, y, z] = v;
    [cos_t * x - sin_t * z, y, sin_t * x + cos_t * z]
}

#[cfg(test)]
mod tests {
    use super::*;

    fn geometry() -> Geometry<f64> {
        Geometry { base_radius: 200.0, platform_radius: 50.0, upper_arm: 350.0, lower_arm: 800.0 }
    }

    fn limits() -> Limits<f64> {
        Limits {
            joint_min: [-0.7; 3],
            joint_max: [1.5; 3],
            passive_cone: 0.6,
            min_serial_margin: 0.05,
            min_parallel_margin: 0.05,
        }
    }

    #[test]
    fn builds_and_keeps_its_inputs() {
        let robot = Robot::new(geometry(), limits()).expect("valid robot");
        assert_eq!(*robot.geometry(), geometry());
        assert_eq!(*robot.limits(), limits());
        for arm in &robot.arms {
            assert_eq!((arm.l, arm.inv_l, arm.h, arm.joint_offset), (1.0, 1.0, 0.0, 0.0));
            let n2: f64 = arm.elbow_axis.iter().map(|v| v * v).sum();
            let p2: f64 = arm.platform_axis.iter().map(|v| v * v).sum();
            assert!((n2 - 1.0).abs() < 1e-12 && (p2 - 1.0).abs() < 1e-12);
        }
    }

    #[test]
    #[allow(deprecated)]
    fn the_positional_form_equals_the_named_one() {
        assert_eq!(Limits::uniform(-0.7, 1.5, 0.6, 0.05, 0.05), limits());
    }

    #[test]
    fn a_zero_margin_is_accepted_and_switches_the_guard_off_up_to_the_singularity() {
        let off = Limits { min_serial_margin: 0.0, min_parallel_margin: 0.0, ..limits() };
        assert_eq!(off.validate(), Ok(()));
        assert_eq!(Limits { min_serial_margin: -0.0, ..limits() }.validate(), Ok(()));
        assert_eq!(
            Limits { min_serial_margin: -1e-12, ..limits() }.validate(),
            Err(Error::InvalidLimits(ConfigFault::Margin))
        );
    }

    #[test]
    fn rejects_each_bad_geometry_with_its_reason() {
        let cases = [
            (Geometry { base_radius: f64::NAN, ..geometry() }, ConfigFault::NonFinite),
            (Geometry { upper_arm: 0.0, ..geometry() }, ConfigFault::NotPositive),
            (Geometry { platform_radius: -1.0, ..geometry() }, ConfigFault::NotPositive),
            (Geometry { lower_arm: 2.0e5, ..geometry() }, ConfigFault::TooLarge),
            (Geometry { platform_radius: 0.5, ..geometry() }, ConfigFault::TooSmall),
            (Geometry { base_radius: 1e-40, ..geometry() }, ConfigFault::TooSmall),
            (Geometry { lower_arm: 350.0, ..geometry() }, ConfigFault::LowerArmNotLonger),
        ];
        for (g, why) in cases {
            assert_eq!(Robot::new(g, limits()), Err(Error::InvalidGeometry(why)));
        }
    }

    #[test]
    fn rejects_each_bad_limit_with_its_reason() {
        let l = limits();
        let cases = [
            (Limits { passive_cone: f64::INFINITY, ..l }, ConfigFault::NonFinite),
            (Limits { joint_min: [0.0, 1.6, 0.0], ..l }, ConfigFault::JointRange),
            (Limits { joint_max: [1.0, 1.0, 3.2], ..l }, ConfigFault::JointRange),
            (Limits { passive_cone: 0.0, ..l }, ConfigFault::PassiveCone),
            (Limits { passive_cone: 1.6, ..l }, ConfigFault::PassiveCone),
            (Limits { min_serial_margin: 1.0, ..l }, ConfigFault::Margin),
            (Limits { min_parallel_margin: -0.1, ..l }, ConfigFault::Margin),
        ];
        for (bad, why) in cases {
            assert_eq!(Robot::new(geometry(), bad), Err(Error::InvalidLimits(why)));
        }
    }

    #[test]
    fn neutral_pose_that_cannot_close_is_refused() {
        // Radial gap of 1200 mm at mid-range against an 800 mm lower arm.
        let g = Geometry { base_radius: 1300.0, platform_radius: 50.0, ..geometry() };
        let l = Limits {
            joint_min: [-0.1; 3],
            joint_max: [0.1; 3],
            passive_cone: 0.6,
            min_serial_margin: 0.05,
            min_parallel_margin: 0.05,
        };
        assert_eq!(Robot::new(g, l), Err(Error::InvalidLimits(ConfigFault::NeutralPose)));
    }
}
