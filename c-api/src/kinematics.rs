//! Inverse and forward kinematics, guarded and unguarded, and the velocity
//! maps through the Jacobian, in f32 and fixed point.
//!
//! Each function is one call of the core (plus, for the velocity maps, the
//! guarded solve that yields the Jacobian at the pose); accuracy and
//! errors are the core's: see `Robot::inverse`, `Robot::forward` and
//! `Jacobian` in the core's documentation, and the bounds measured in
//! `host-tests/src/bounds.rs`.

use deltakin::{Error, Fixed, FixedWide, Robot, Solution};

use crate::access::{held, output};
use crate::robot::{finish, plain};
use crate::status::{DeltakinFault, DeltakinStatus, from_error};
use crate::storage::{DeltakinRobotF32, DeltakinRobotQ};
use crate::types::{DeltakinPoseF32, DeltakinPoseQ};

type Failure = (DeltakinStatus, DeltakinFault);

/// Three values at `p`, or `NullPointer`.
///
/// # Safety
/// `p` is null or points to three live values.
pub(crate) unsafe fn triple<T: Copy>(p: *const T) -> Result<[T; 3], Failure> {
    if p.is_null() {
        return Err(plain(DeltakinStatus::NullPointer));
    }
    // SAFETY: non-null; the caller guarantees three live, aligned values,
    // and `[T; 3]` has the alignment of `T`.
    Ok(unsafe { p.cast::<[T; 3]>().read() })
}

/// Writes three values to `p`, or `NullPointer`.
///
/// # Safety
/// `p` is null or points to room for three values nothing else accesses.
pub(crate) unsafe fn put_triple<T: Copy>(p: *mut T, v: [T; 3]) -> Result<(), Failure> {
    if p.is_null() {
        return Err(plain(DeltakinStatus::NullPointer));
    }
    // SAFETY: non-null; the caller guarantees room for three aligned
    // values.
    unsafe { p.cast::<[T; 3]>().write(v) };
    Ok(())
}

fn pose_f32(s: &Solution<f32>) -> DeltakinPoseF32 {
    DeltakinPoseF32 {
        joints_rad: s.joints,
        position_mm: s.position,
        serial_margin: s.margins.serial,
        parallel_margin: s.margins.parallel,
    }
}

fn pose_q(s: &Solution<Fixed>) -> DeltakinPoseQ {
    DeltakinPoseQ {
        joints_rad: s.joints.map(Fixed::to_raw),
        position_mm: s.position.map(FixedWide::to_raw),
        serial_margin: s.margins.serial.map(Fixed::to_raw),
        parallel_margin: s.margins.parallel.to_raw(),
    }
}

/// The shared body of the f32 pose functions.
///
/// # Safety
/// Caller's contract of the entry points.
#[inline(always)]
unsafe fn solve_f32(
    robot: *const DeltakinRobotF32,
    arg: *const f32,
    pose: *mut DeltakinPoseF32,
    fault: *mut DeltakinFault,
    solve: impl FnOnce(&Robot<f32>, [f32; 3]) -> Result<Solution<f32>, Error>,
) -> DeltakinStatus {
    let r = (|| {
        // SAFETY: caller's contract.
        let (robot, arg, out) = unsafe { (held(robot).map_err(plain)?, triple(arg)?, output(pose).map_err(plain)?) };
        *out = pose_f32(&solve(robot, arg).map_err(from_error)?);
        Ok(())
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}

/// The shared body of the fixed-point pose functions.
///
/// # Safety
/// Caller's contract of the entry points.
#[inline(always)]
unsafe fn solve_q(
    robot: *const DeltakinRobotQ,
    arg: *const i32,
    pose: *mut DeltakinPoseQ,
    fault: *mut DeltakinFault,
    solve: impl FnOnce(&Robot<Fixed>, [i32; 3]) -> Result<Solution<Fixed>, Error>,
) -> DeltakinStatus {
    let r = (|| {
        // SAFETY: caller's contract.
        let (robot, arg, out) = unsafe { (held(robot).map_err(plain)?, triple(arg)?, output(pose).map_err(plain)?) };
        *out = pose_q(&solve(robot, arg).map_err(from_error)?);
        Ok(())
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}

/// Guarded inverse kinematics: joint readings (rad) for the platform
/// position `target_mm` (three floats, mm, base frame), elbow-out branch,
/// written to `pose` with the margins, after checking every limit.
/// Accuracy: joint angles within the f32 bound of the core's host tests
/// (`host-tests/src/bounds.rs`).
///
/// # Errors
/// `NULL_POINTER`, `NOT_INITIALISED`, `NON_FINITE`, `UNREACHABLE` (arm),
/// or the first violated limit: `JOINT_LIMIT` (arm, end), `NEAR_SERIAL`
/// (arm), `NEAR_PARALLEL`, `PASSIVE_LIMIT` (arm, end).
///
/// # Safety
/// `robot` initialised by `deltakin_robot_init_f32`; every non-null pointer
/// points to a live object of its type (three floats for arrays) that
/// nothing else accesses during the call.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_inverse_f32(
    robot: *const DeltakinRobotF32,
    target_mm: *const f32,
    pose: *mut DeltakinPoseF32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    unsafe { solve_f32(robot, target_mm, pose, fault, |r, t| r.inverse(t)) }
}

/// Inverse kinematics without limit checks (diagnostics, workspace maps):
/// as `deltakin_inverse_f32`, margins still computed.
///
/// # Errors
/// `NULL_POINTER`, `NOT_INITIALISED`, `NON_FINITE`, `UNREACHABLE` (arm).
///
/// # Safety
/// As `deltakin_inverse_f32`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_inverse_unguarded_f32(
    robot: *const DeltakinRobotF32,
    target_mm: *const f32,
    pose: *mut DeltakinPoseF32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    unsafe { solve_f32(robot, target_mm, pose, fault, |r, t| r.inverse_unguarded(t)) }
}

/// Guarded forward kinematics: the platform position (mm) for joint
/// readings `joints_rad` (three floats, rad), lower branch, written to
/// `pose` with the margins, after checking every limit.
///
/// # Errors
/// `NULL_POINTER`, `NOT_INITIALISED`, `NON_FINITE`, `JOINT_LIMIT` (arm,
/// end), `NO_ASSEMBLY`, or a violated limit as for `deltakin_inverse_f32`.
///
/// # Safety
/// As `deltakin_inverse_f32`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_forward_f32(
    robot: *const DeltakinRobotF32,
    joints_rad: *const f32,
    pose: *mut DeltakinPoseF32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    unsafe { solve_f32(robot, joints_rad, pose, fault, |r, j| r.forward(j)) }
}

/// Forward kinematics without limit checks: any reading within one turn
/// either way.
///
/// # Errors
/// `NULL_POINTER`, `NOT_INITIALISED`, `NON_FINITE`, `JOINT_LIMIT` (beyond
/// one turn), `NO_ASSEMBLY`, `NEAR_PARALLEL` (collinear sphere centres).
///
/// # Safety
/// As `deltakin_inverse_f32`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_forward_unguarded_f32(
    robot: *const DeltakinRobotF32,
    joints_rad: *const f32,
    pose: *mut DeltakinPoseF32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    unsafe { solve_f32(robot, joints_rad, pose, fault, |r, j| r.forward_unguarded(j)) }
}

/// Guarded inverse kinematics in fixed point: `target_mm` three Q18.14 mm,
/// `pose` in Q7.25 rad / Q18.14 mm / Q7.25 margins.
///
/// # Errors
/// As `deltakin_inverse_f32`.
///
/// # Safety
/// As `deltakin_inverse_f32`, with a robot from `deltakin_robot_init_q`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_inverse_q(
    robot: *const DeltakinRobotQ,
    target_mm: *const i32,
    pose: *mut DeltakinPoseQ,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    unsafe { solve_q(robot, target_mm, pose, fault, |r, t| r.inverse(t.map(FixedWide::from_raw))) }
}

/// Inverse kinematics in fixed point without limit checks.
///
/// # Errors
/// As `deltakin_inverse_unguarded_f32`.
///
/// # Safety
/// As `deltakin_inverse_q`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_inverse_unguarded_q(
    robot: *const DeltakinRobotQ,
    target_mm: *const i32,
    pose: *mut DeltakinPoseQ,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    unsafe { solve_q(robot, target_mm, pose, fault, |r, t| r.inverse_unguarded(t.map(FixedWide::from_raw))) }
}

/// Guarded forward kinematics in fixed point: `joints_rad` three Q7.25 rad.
///
/// # Errors
/// As `deltakin_forward_f32`.
///
/// # Safety
/// As `deltakin_inverse_q`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_forward_q(
    robot: *const DeltakinRobotQ,
    joints_rad: *const i32,
    pose: *mut DeltakinPoseQ,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    unsafe { solve_q(robot, joints_rad, pose, fault, |r, j| r.forward(j.map(Fixed::from_raw))) }
}

/// Forward kinematics in fixed point without limit checks.
///
/// # Errors
/// As `deltakin_forward_unguarded_f32`.
///
/// # Safety
/// As `deltakin_inverse_q`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_forward_unguarded_q(
    robot: *const DeltakinRobotQ,
    joints_rad: *const i32,
    pose: *mut DeltakinPoseQ,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    unsafe { solve_q(robot, joints_rad, pose, fault, |r, j| r.forward_unguarded(j.map(Fixed::from_raw))) }
}

/// Joint rates (rad/s, three floats to `rates_rad_s`) that move the
/// platform at `velocity_mm_s` (mm/s) from the position `position_mm`
/// (mm): guarded inverse kinematics at the position, then the Jacobian.
///
/// # Errors
/// As `deltakin_inverse_f32` for the position; then `NON_FINITE` for the
/// velocity, `NEAR_SERIAL` (arm) when an arm's rate cannot be divided out.
///
/// # Safety
/// As `deltakin_inverse_f32`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_joint_rates_f32(
    robot: *const DeltakinRobotF32,
    position_mm: *const f32,
    velocity_mm_s: *const f32,
    rates_rad_s: *mut f32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        // SAFETY: caller's contract.
        let (robot, p, v) = unsafe { (held(robot).map_err(plain)?, triple(position_mm)?, triple(velocity_mm_s)?) };
        let s = robot.inverse(p).map_err(from_error)?;
        let w = s.jacobian.joint_rates(v).map_err(from_error)?;
        // SAFETY: caller's contract.
        unsafe { put_triple(rates_rad_s, w) }
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}

/// Tool velocity (mm/s, three floats to `velocity_mm_s`) produced by the
/// joint rates `rates_rad_s` (rad/s) at the joint readings `joints_rad`
/// (rad): guarded forward kinematics, then the Jacobian.
///
/// # Errors
/// As `deltakin_forward_f32` for the joints; then `NON_FINITE` for the
/// rates, `NEAR_PARALLEL` when the Jacobian cannot be inverted.
///
/// # Safety
/// As `deltakin_inverse_f32`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_tool_velocity_f32(
    robot: *const DeltakinRobotF32,
    joints_rad: *const f32,
    rates_rad_s: *const f32,
    velocity_mm_s: *mut f32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        // SAFETY: caller's contract.
        let (robot, j, w) = unsafe { (held(robot).map_err(plain)?, triple(joints_rad)?, triple(rates_rad_s)?) };
        let s = robot.forward(j).map_err(from_error)?;
        let v = s.jacobian.cartesian_velocity(w).map_err(from_error)?;
        // SAFETY: caller's contract.
        unsafe { put_triple(velocity_mm_s, v) }
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}

/// Joint rates in fixed point: `position_mm` Q18.14 mm, `velocity_mm_s`
/// Q18.14 mm/s, `rates_rad_s` Q18.14 rad/s.
///
/// # Errors
/// As `deltakin_joint_rates_f32`, plus `OUT_OF_RANGE` when a value does not
/// fit Q18.14.
///
/// # Safety
/// As `deltakin_inverse_q`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_joint_rates_q(
    robot: *const DeltakinRobotQ,
    position_mm: *const i32,
    velocity_mm_s: *const i32,
    rates_rad_s: *mut i32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        // SAFETY: caller's contract.
        let (robot, p, v) = unsafe { (held(robot).map_err(plain)?, triple(position_mm)?, triple(velocity_mm_s)?) };
        let s = robot.inverse(p.map(FixedWide::from_raw)).map_err(from_error)?;
        let w = s.jacobian.joint_rates(v.map(FixedWide::from_raw)).map_err(from_error)?;
        // SAFETY: caller's contract.
        unsafe { put_triple(rates_rad_s, w.map(FixedWide::to_raw)) }
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}

/// Tool velocity in fixed point: `joints_rad` Q7.25 rad, `rates_rad_s`
/// Q18.14 rad/s, `velocity_mm_s` Q18.14 mm/s.
///
/// # Errors
/// As `deltakin_tool_velocity_f32`, plus `OUT_OF_RANGE`.
///
/// # Safety
/// As `deltakin_inverse_q`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_tool_velocity_q(
    robot: *const DeltakinRobotQ,
    joints_rad: *const i32,
    rates_rad_s: *const i32,
    velocity_mm_s: *mut i32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        // SAFETY: caller's contract.
        let (robot, j, w) = unsafe { (held(robot).map_err(plain)?, triple(joints_rad)?, triple(rates_rad_s)?) };
        let s = robot.forward(j.map(Fixed::from_raw)).map_err(from_error)?;
        let v = s.jacobian.cartesian_velocity(w.map(FixedWide::from_raw)).map_err(from_error)?;
        // SAFETY: caller's contract.
        unsafe { put_triple(velocity_mm_s, v.map(FixedWide::to_raw)) }
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}
