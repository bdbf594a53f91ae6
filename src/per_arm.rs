//! The per-arm model: each arm's own kinematic parameters, given as
//! corrections to the nominal symmetric [`Geometry`]. All corrections zero
//! is the nominal machine of the conventions.
//!
//! # The parameters, and why these
//! A built robot differs from its drawing arm by arm. deltakin carries,
//! per arm `i`, the parameters a kinematic calibration of a rotary delta
//! can identify from platform positions:
//!
//! | field of [`ArmCorrection`] | unit | what it corrects |
//! |---|---|---|
//! | `joint_offset` | rad | joint zero: the true angle of the conventions when the joint reads 0 |
//! | `upper_arm` | mm | the upper arm length |
//! | `lower_arm` | mm | the lower arm (parallelogram rod) length |
//! | `radial_difference` | mm | actuator axis radius minus platform joint radius |
//! | `azimuth` | rad | the azimuth of the arm's vertical plane (nominal `120 deg * i`) |
//! | `axis_height` | mm | the height of the actuator axis above the base plane |
//!
//! The machine they describe (lengths in mm, `t_i` the joint reading):
//!
//! ```text
//!   phi_i = 120 deg * i + azimuth_i,      T_i = t_i + joint_offset_i
//!   a_i = upper_arm + upper_arm_i,        l_i = lower_arm + lower_arm_i
//!   d_i = base_radius - platform_radius + radial_difference_i
//!   C_i = R_z(phi_i) (d_i + a_i cos T_i, 0, axis_height_i - a_i sin T_i)
//!   closure   |p - C_i| = l_i             (p the platform centre)
//! ```
//!
//! `C_i` is arm `i`'s elbow shifted inwards by the platform radius: the
//! point the platform centre keeps at distance `l_i`.
//!
//! Why the set is what it is (the identifiability argument, after the
//! kinematic-calibration literature of the Delta robot; all citations
//! from memory: P. Vischer and R. Clavel, "Kinematic calibration of the
//! parallel Delta robot", Robotica 16(2), 1998; P. Maurine and E. Dombre,
//! "A calibration procedure for the parallel robot Delta 4", IEEE ICRA
//! 1996; and, on which parameters of a parallel robot a calibration can
//! separate, S. Besnard and W. Khalil, "Identifiable parameters for
//! parallel robots kinematic calibration", IEEE ICRA 2001):
//!
//! * The platform only translates, so each lower arm's closure involves
//!   the actuator axis and the platform joint only through their
//!   difference. The actuator radius and the platform joint radius are
//!   therefore not separately identifiable from platform positions: only
//!   `radial_difference` is carried (a correction of the actuator radius
//!   and one of the platform radius enter identically). For the same
//!   reason a platform joint height is not separable from the axis height
//!   (and a common one is the tool offset): only `axis_height` is carried.
//! * The upper arm length, the lower arm length and the joint offset of an
//!   arm are separable from each other because the joint swings the upper
//!   arm through a range of angles: the offset shifts the angle, the upper
//!   arm scales the swing, the lower arm the sphere's radius.
//! * The azimuth turns the arm's vertical plane (the actuator together
//!   with its platform joint pair) about z; the height lifts its axis.
//!
//! What a calibration with an instrument of unknown pose cannot separate
//! (that instrument pose has six parameters of its own): a common azimuth
//! correction of all three arms is a rotation of the whole machine about
//! z, and a common axis height a translation along z, so both trade with
//! the instrument's pose; the calibration must hold such combinations
//! fixed. Not carried at all: tilts of the actuator axes, parallelogram
//! defects (unequal rods of one pair, skewed joints) and a tangential
//! offset of a platform joint pair from its actuator's plane. They are
//! second-order in the position for a machine built to drawing tolerances
//! or need a model with more than three degrees of freedom per arm.
//!
//! # Admitted ranges
//! A correction is refused with [`ConfigFault::CorrectionTooLarge`] when
//! it is larger than the bound below: the per-arm model is for calibration
//! (tenths of a millimetre, tenths of a degree), and a larger value is
//! almost always a unit mix-up. Refused, never clamped.
//!
//! * joint offset: at most [`MAX_JOINT_OFFSET_RAD`] either way;
//! * azimuth: at most [`MAX_AZIMUTH_CORRECTION_RAD`] either way;
//! * each length (upper arm, lower arm, radial difference, axis height):
//!   at most [`MAX_LENGTH_CORRECTION`] of the nominal lower arm either way.
//!
//! The corrected arm must itself be one deltakin serves: upper arm at
//! least [`crate::MIN_DIMENSION_MM`], lower arm longer than the upper arm,
//! and inside the number type's validated envelope (fixed point: see
//! `check_arm_in_number_range` in this file).

use crate::error::{ArmParameter, ConfigFault, Error};
use crate::robot::Geometry;
use crate::scalar::{Arith, Real};

/// Largest joint offset correction accepted (rad, either way): 0.2 rad,
/// about 11.5 deg.
pub const MAX_JOINT_OFFSET_RAD: f64 = 0.2;

/// Largest azimuth correction accepted (rad, either way): 0.2 rad, about
/// 11.5 deg.
pub const MAX_AZIMUTH_CORRECTION_RAD: f64 = 0.2;

/// Largest length correction accepted, as a fraction of the nominal lower
/// arm (either way): 0.1, so 72 mm on a 720 mm lower arm.
pub const MAX_LENGTH_CORRECTION: f64 = 0.1;

/// One arm's corrections to the nominal [`Geometry`]: each arm's real
/// parameter is the nominal one plus its correction (see the module
/// documentation for the machine they describe, why these six, and the
/// ranges admitted).
///
/// Angles are radians in the scalar type, lengths millimetres in the
/// scalar's API type [`Arith::Wide`] (the scalar itself for floats).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "serde", serde(deny_unknown_fields))]
#[cfg_attr(
    feature = "serde",
    serde(bound(
        serialize = "S: serde::Serialize, S::Wide: serde::Serialize",
        deserialize = "S: serde::Deserialize<'de>, S::Wide: serde::Deserialize<'de>"
    ))
)]
pub struct ArmCorrection<S: Arith> {
    /// Joint zero offset (rad): the true joint angle of the conventions
    /// when the joint reads 0. The solvers take and give joint readings;
    /// the true angle is the reading plus this offset.
    pub joint_offset: S,
    /// Upper arm length correction (mm).
    pub upper_arm: S::Wide,
    /// Lower arm length correction (mm).
    pub lower_arm: S::Wide,
    /// Correction of the radial difference, actuator axis radius minus
    /// platform joint radius (mm). A translating platform reveals only
    /// the difference, so one number stands for both radii.
    pub radial_difference: S::Wide,
    /// Azimuth correction of the arm's vertical plane (rad, from +x
    /// towards +y, added to `120 deg * i`).
    pub azimuth: S,
    /// Height of the actuator axis above the base plane (mm, z up).
    pub axis_height: S::Wide,
}

impl<S: Arith> ArmCorrection<S> {
    /// No correction: the nominal arm.
    pub const ZERO: Self = Self {
        joint_offset: S::ZERO,
        upper_arm: S::Wide::ZERO,
        lower_arm: S::Wide::ZERO,
        radial_difference: S::Wide::ZERO,
        azimuth: S::ZERO,
        axis_height: S::Wide::ZERO,
    };
}

impl<S: Arith> Default for ArmCorrection<S> {
    fn default() -> Self {
        Self::ZERO
    }
}

/// The corrections of arms 0, 1 and 2.
pub type Corrections<S> = [ArmCorrection<S>; 3];

/// Constants of one arm, in lower-arm units (the nominal lower arm is 1).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct ArmConstants<S> {
    /// cos and sin of the arm's azimuth.
    pub(crate) cos_phi: S,
    pub(crate) sin_phi: S,
    /// Radial difference `d_i` and actuator axis height.
    pub(crate) d: S,
    pub(crate) h: S,
    /// Upper arm `a_i`, lower arm `l_i` and its inverse.
    pub(crate) a: S,
    pub(crate) l: S,
    pub(crate) inv_l: S,
    /// `l_i^2 - a_i^2` and `1 / (2 a_i)`, for the closure equation.
    pub(crate) l2_minus_a2: S,
    pub(crate) inv_two_a: S,
    /// Joint zero offset (rad): true angle = reading + offset.
    pub(crate) joint_offset: S,
    /// Neutral axis of the elbow joint, a unit vector in the upper arm's
    /// own frame (x along the upper arm, y along the actuator axis, z the
    /// third axis), divided by `l_i` (so that its dot product with a rod of
    /// length `l_i` is the cosine of the tilt): its x and z components.
    /// Its y component is zero, as the neutral pose has the platform on
    /// the z axis, in every arm's vertical plane.
    pub(crate) elbow_axis: [S; 2],
    /// Neutral axis of the platform joint, a unit vector in the arm's
    /// vertical plane frame (x radial, y tangential, z up), divided by
    /// `l_i`: its x and z components (y is zero, as for the elbow).
    pub(crate) platform_axis: [S; 2],
}

/// `S::from_f64` that reports an unrepresentable value as a fault.
fn constant<S: Real>(v: f64) -> Result<S, Error> {
    S::from_f64(v).ok_or(Error::InvalidGeometry(ConfigFault::Unrepresentable))
}

impl<S: Real> ArmCorrection<S> {
    /// Checks one arm's corrections against the nominal geometry, in this
    /// order: every correction finite; each inside its admitted range (see
    /// the module documentation); the corrected upper arm at least
    /// [`crate::MIN_DIMENSION_MM`]; the corrected lower arm longer than
    /// the corrected upper arm. `geometry` must itself be valid.
    ///
    /// # Errors
    /// [`Error::InvalidArm`] naming `arm`, the parameter and the fault.
    pub fn validate(&self, arm: u8, geometry: &Geometry<S>) -> Result<(), Error> {
        let fault = |parameter, fault| Err(Error::InvalidArm { arm, parameter, fault });
        let angles = [(ArmParameter::JointOffset, self.joint_offset), (ArmParameter::Azimuth, self.azimuth)];
        let lengths = [
            (ArmParameter::UpperArm, self.upper_arm),
            (ArmParameter::LowerArm, self.lower_arm),
            (ArmParameter::RadialDifference, self.radial_difference),
            (ArmParameter::AxisHeight, self.axis_height),
        ];
        for &(parameter, v) in &angles {
            if !v.is_finite() {
                return fault(parameter, ConfigFault::NonFinite);
            }
        }
        for &(parameter, v) in &lengths {
            if !v.is_finite() {
                return fault(parameter, ConfigFault::NonFinite);
            }
        }
        let max_offset = constant::<S>(MAX_JOINT_OFFSET_RAD)?;
        let max_azimuth = constant::<S>(MAX_AZIMUTH_CORRECTION_RAD)?;
        for (&(parameter, v), max) in angles.iter().zip([max_offset, max_azimuth]) {
            if !(v.abs() <= max) {
                return fault(parameter, ConfigFault::CorrectionTooLarge);
            }
        }
        // A type that cannot represent the bound holds no larger value.
        if let Some(max) = S::Wide::from_f64(MAX_LENGTH_CORRECTION * geometry.lower_arm.to_f64()) {
            for &(parameter, v) in &lengths {
                if !(v.abs() <= max) {
                    return fault(parameter, ConfigFault::CorrectionTooLarge);
                }
            }
        }
        let upper = geometry.upper_arm + self.upper_arm;
        let lower = geometry.lower_arm + self.lower_arm;
        let min =
            S::Wide::from_f64(crate::MIN_DIMENSION_MM).ok_or(Error::InvalidGeometry(ConfigFault::Unrepresentable))?;
        if !(upper >= min) {
            return fault(ArmParameter::UpperArm, ConfigFault::TooSmall);
        }
        if !(lower > upper) {
            return fault(ArmParameter::LowerArm, ConfigFault::LowerArmNotLonger);
        }
        Ok(())
    }
}

/// Checks that the number type serves arm `arm` as corrected: the
/// number-range check of one arm (fixed point's validated envelope, see
/// [`crate::scalar::Fixed`]; always passes for floats). It asks
/// [`Arith::admits_geometry`] twice: once with the arm's upper arm `a` and
/// radial reach `|d| + |h|` in nominal lower-arm units (the magnitudes the
/// solvers hold), once with both relative to the arm's own lower arm `l`
/// (the shape of its closure). The corrections are added one at a time in
/// the order upper arm, radial difference, axis height, lower arm, and
/// the first one that leaves the envelope is named.
///
/// `nominal_mm` is the nominal lower arm (mm), `lower_mm` this arm's,
/// `d0` the nominal radial difference (lower-arm units).
///
/// # Errors
/// [`Error::InvalidArm`] with [`ConfigFault::Unrepresentable`].
pub(crate) fn check_arm_in_number_range<S: Real>(
    arm: u8,
    nominal_mm: S::Wide,
    lower_mm: S::Wide,
    d0: S,
    k: &ArmConstants<S>,
) -> Result<(), Error> {
    let fits = |a: S, reach: S, l_mm: S::Wide, inv_l: S| {
        S::admits_geometry(nominal_mm, a, reach) && S::admits_geometry(l_mm, a * inv_l, reach * inv_l)
    };
    let steps = [
        (ArmParameter::UpperArm, k.a, d0.abs(), nominal_mm, S::ONE),
        (ArmParameter::RadialDifference, k.a, k.d.abs(), nominal_mm, S::ONE),
        (ArmParameter::AxisHeight, k.a, k.d.abs() + k.h.abs(), nominal_mm, S::ONE),
        (ArmParameter::LowerArm, k.a, k.d.abs() + k.h.abs(), lower_mm, k.inv_l),
    ];
    for (parameter, a, reach, l_mm, inv_l) in steps {
        if !fits(a, reach, l_mm, inv_l) {
            return Err(Error::InvalidArm { arm, parameter, fault: ConfigFault::Unrepresentable });
        }
    }
    Ok(())
}

/// Arm `arm`'s constants: its corrections `c` applied to `geometry`, in
/// lower-arm units (`inv_scale` the reciprocal of the nominal lower arm),
/// at nominal azimuth `(cos, sin)` `nominal_azimuth`, with the neutral
/// pose at joint reading `joint_mid`. `c` must have passed
/// [`ArmCorrection::validate`].
///
/// # Errors
/// [`Error::InvalidArm`] with [`ConfigFault::Unrepresentable`] when a
/// value does not fit the number type; [`ConfigFault::NeutralPose`] (as
/// [`Error::InvalidLimits`]) when the lower arm cannot close the loop at
/// the neutral pose.
pub(crate) fn arm_constants<S: Real>(
    arm: u8,
    geometry: &Geometry<S>,
    c: &ArmCorrection<S>,
    inv_scale: S::Recip,
    nominal_azimuth: (S, S),
    joint_mid: S,
) -> Result<ArmConstants<S>, Error> {
    let unrepresentable = |parameter| Error::InvalidArm { arm, parameter, fault: ConfigFault::Unrepresentable };
    let units = |v: S::Wide, parameter| {
        let u = S::mul_recip(v, inv_scale);
        if u.is_finite() { Ok(u) } else { Err(unrepresentable(parameter)) }
    };
    let a = units(geometry.upper_arm + c.upper_arm, ArmParameter::UpperArm)?;
    let d =
        units(geometry.base_radius - geometry.platform_radius + c.radial_difference, ArmParameter::RadialDifference)?;
    let h = units(c.axis_height, ArmParameter::AxisHeight)?;
    // The nominal lower arm is exactly 1: add the correction to it rather
    // than divide the corrected length (which need not round to 1).
    let l = S::ONE + units(c.lower_arm, ArmParameter::LowerArm)?;
    let inv_l = S::ONE.checked_div(l).ok_or(unrepresentable(ArmParameter::LowerArm))?;
    let inv_two_a = S::ONE.checked_div(S::TWO * a).ok_or(unrepresentable(ArmParameter::UpperArm))?;
    let (c0, s0) = nominal_azimuth;
    // Exactly the nominal constants when uncorrected, else the nominal
    // direction turned by the correction (angle addition).
    let (cos_phi, sin_phi) = if c.azimuth == S::ZERO {
        (c0, s0)
    } else {
        let (sd, cd) = c.azimuth.sin_cos();
        (c0 * cd - s0 * sd, s0 * cd + c0 * sd)
    };
    let (sm, cm) = (joint_mid + c.joint_offset).sin_cos();
    // Platform on the axis: radial gap from elbow to platform joint.
    let gap = d + a * cm;
    let drop2 = l * l - gap * gap;
    if !(drop2 > S::ZERO) {
        return Err(Error::InvalidLimits(ConfigFault::NeutralPose));
    }
    // Rod direction, elbow towards platform, in the arm's plane (its y
    // component is zero: the platform is on the z axis), divided by l
    // once to be a unit vector and once more for the tilt test.
    let inv_l2 = inv_l * inv_l;
    let down = -drop2.sqrt();
    let w = [-(gap * inv_l2), S::ZERO, down * inv_l2];
    let [ex, _, ez] = crate::robot::to_upper_arm_frame(w, sm, cm);
    let k = ArmConstants {
        cos_phi,
        sin_phi,
        d,
        h,
        a,
        l,
        inv_l,
        l2_minus_a2: l * l - a * a,
        inv_two_a,
        joint_offset: c.joint_offset,
        elbow_axis: [ex, ez],
        platform_axis: [w[0], w[2]],
    };
    if !(cos_phi.is_finite() && sin_phi.is_finite()) {
        return Err(unrepresentable(ArmParameter::Azimuth));
    }
    if !(k.l2_minus_a2.is_finite() && ex.is_finite() && ez.is_finite()) {
        return Err(unrepresentable(ArmParameter::LowerArm));
    }
    Ok(k)
}
