//! Building a robot into caller storage: nominal geometry, per-arm
//! corrections and limits, validated by the core (`Robot::with_corrections`).

use deltakin::{ArmCorrection, Fixed, FixedWide, Geometry, Limits, Robot};

use crate::access::{clear, input, store};
use crate::status::{DeltakinFault, DeltakinStatus, from_error};
use crate::storage::{DeltakinRobotF32, DeltakinRobotQ};
use crate::types::{
    DeltakinArmCorrectionF32, DeltakinArmCorrectionQ, DeltakinGeometryF32, DeltakinGeometryQ, DeltakinLimitsF32,
    DeltakinLimitsQ,
};

/// Writes `details` to `fault` when it is not null; returns `status`.
///
/// # Safety
/// `fault` is null or points to a writable `DeltakinFault`.
pub(crate) unsafe fn report(
    fault: *mut DeltakinFault,
    status: DeltakinStatus,
    details: DeltakinFault,
) -> DeltakinStatus {
    // SAFETY: the caller guarantees a null or writable pointer.
    if let Some(f) = unsafe { fault.as_mut() } {
        *f = details;
    }
    status
}

/// Turns a result into a status, writing the fault details.
///
/// # Safety
/// As [`report`].
pub(crate) unsafe fn finish(
    fault: *mut DeltakinFault,
    r: Result<(), (DeltakinStatus, DeltakinFault)>,
) -> DeltakinStatus {
    match r {
        // SAFETY: passed through from the caller.
        Ok(()) => unsafe { report(fault, DeltakinStatus::Ok, DeltakinFault::NONE) },
        // SAFETY: passed through from the caller.
        Err((s, f)) => unsafe { report(fault, s, f) },
    }
}

/// A bare status as an error with no details.
pub(crate) const fn plain(s: DeltakinStatus) -> (DeltakinStatus, DeltakinFault) {
    (s, DeltakinFault::NONE)
}

/// Validates a robot in f32 and writes it into `robot`.
///
/// `geometry`: nominal dimensions (mm). `corrections`: an array of three
/// per-arm corrections (arms 0, 1, 2), or NULL for the nominal machine.
/// `limits`: joint ranges (rad), passive cone (rad), minimum margins.
/// `fault`: NULL, or where to write the arm of an `INVALID_ARM`.
///
/// Runs once at start-up: a few square roots and sine/cosine pairs.
///
/// # Errors
/// `NULL_POINTER` (robot, geometry or limits NULL), `INVALID_GEOMETRY`,
/// `INVALID_LIMITS`, `INVALID_ARM` (fault names the arm). On any error the
/// storage is marked uninitialised, and every function given it returns
/// `NOT_INITIALISED`.
///
/// # Safety
/// Every non-null pointer points to a live object of its type (three for
/// `corrections`) that nothing else accesses during the call.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_robot_init_f32(
    robot: *mut DeltakinRobotF32,
    geometry: *const DeltakinGeometryF32,
    corrections: *const DeltakinArmCorrectionF32,
    limits: *const DeltakinLimitsF32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        if robot.is_null() {
            return Err(plain(DeltakinStatus::NullPointer));
        }
        // SAFETY: non-null, caller's contract.
        unsafe { clear(robot) };
        // SAFETY: caller's contract.
        let (g, l) = unsafe { (input(geometry).map_err(plain)?, input(limits).map_err(plain)?) };
        let geometry = Geometry::<f32> {
            base_radius: g.base_radius_mm,
            platform_radius: g.platform_radius_mm,
            upper_arm: g.upper_arm_mm,
            lower_arm: g.lower_arm_mm,
        };
        let limits = Limits::<f32> {
            joint_min: l.joint_min_rad,
            joint_max: l.joint_max_rad,
            passive_cone: l.passive_cone_rad,
            min_serial_margin: l.min_serial_margin,
            min_parallel_margin: l.min_parallel_margin,
        };
        let mut c = [ArmCorrection::<f32>::ZERO; 3];
        if !corrections.is_null() {
            // SAFETY: non-null; the caller guarantees three live entries.
            let given = unsafe { &*corrections.cast::<[DeltakinArmCorrectionF32; 3]>() };
            for (out, g) in c.iter_mut().zip(given) {
                *out = ArmCorrection {
                    joint_offset: g.joint_offset_rad,
                    upper_arm: g.upper_arm_mm,
                    lower_arm: g.lower_arm_mm,
                    radial_difference: g.radial_difference_mm,
                    azimuth: g.azimuth_rad,
                    axis_height: g.axis_height_mm,
                };
            }
        }
        let value = Robot::with_corrections(geometry, c, limits).map_err(from_error)?;
        // SAFETY: non-null, caller's contract.
        unsafe { store(robot, value) };
        Ok(())
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}

/// Validates a fixed-point robot and writes it into `robot`: as
/// `deltakin_robot_init_f32`, with lengths Q18.14 mm and angles and
/// margins Q7.25. The fixed-point type serves a validated envelope of
/// geometries (upper arm up to 0.7 of the lower arm, see the core's
/// `Fixed`); outside it `INVALID_GEOMETRY` or `INVALID_ARM`.
///
/// # Errors
/// As `deltakin_robot_init_f32`.
///
/// # Safety
/// As `deltakin_robot_init_f32`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_robot_init_q(
    robot: *mut DeltakinRobotQ,
    geometry: *const DeltakinGeometryQ,
    corrections: *const DeltakinArmCorrectionQ,
    limits: *const DeltakinLimitsQ,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        if robot.is_null() {
            return Err(plain(DeltakinStatus::NullPointer));
        }
        // SAFETY: non-null, caller's contract.
        unsafe { clear(robot) };
        // SAFETY: caller's contract.
        let (g, l) = unsafe { (input(geometry).map_err(plain)?, input(limits).map_err(plain)?) };
        let w = FixedWide::from_raw;
        let a = Fixed::from_raw;
        let geometry = Geometry::<Fixed> {
            base_radius: w(g.base_radius_mm),
            platform_radius: w(g.platform_radius_mm),
            upper_arm: w(g.upper_arm_mm),
            lower_arm: w(g.lower_arm_mm),
        };
        let limits = Limits::<Fixed> {
            joint_min: l.joint_min_rad.map(a),
            joint_max: l.joint_max_rad.map(a),
            passive_cone: a(l.passive_cone_rad),
            min_serial_margin: a(l.min_serial_margin),
            min_parallel_margin: a(l.min_parallel_margin),
        };
        let mut c = [ArmCorrection::<Fixed>::ZERO; 3];
        if !corrections.is_null() {
            // SAFETY: non-null; the caller guarantees three live entries.
            let given = unsafe { &*corrections.cast::<[DeltakinArmCorrectionQ; 3]>() };
            for (out, g) in c.iter_mut().zip(given) {
                *out = ArmCorrection {
                    joint_offset: a(g.joint_offset_rad),
                    upper_arm: w(g.upper_arm_mm),
                    lower_arm: w(g.lower_arm_mm),
                    radial_difference: w(g.radial_difference_mm),
                    azimuth: a(g.azimuth_rad),
                    axis_height: w(g.axis_height_mm),
                };
            }
        }
        let value = Robot::with_corrections(geometry, c, limits).map_err(from_error)?;
        // SAFETY: non-null, caller's contract.
        unsafe { store(robot, value) };
        Ok(())
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}
