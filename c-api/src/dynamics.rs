//! Joint torques of the simplified rigid-body model (the core's
//! `Dynamics::torques`), in f32.

use deltakin::{Dynamics, DynamicsParams};

use crate::access::{clear, held, input, store};
use crate::kinematics::{put_triple, triple};
use crate::robot::{finish, plain};
use crate::status::{DeltakinFault, DeltakinStatus, from_error};
use crate::storage::{DeltakinDynamicsF32, DeltakinRobotF32};
use crate::types::DeltakinDynamicsParams;

/// Validates the physical parameters `params` and folds them with the
/// robot's upper arms and joint offsets into `dynamics` (f32). Runs once at
/// start-up (double arithmetic).
///
/// # Errors
/// `NULL_POINTER`, `NOT_INITIALISED` (robot), `INVALID_DYNAMICS` (fault
/// names the arm for per-arm parameters). On error the storage is marked
/// uninitialised.
///
/// # Safety
/// As `deltakin_inverse_f32`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_dynamics_init_f32(
    dynamics: *mut DeltakinDynamicsF32,
    robot: *const DeltakinRobotF32,
    params: *const DeltakinDynamicsParams,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        if dynamics.is_null() {
            return Err(plain(DeltakinStatus::NullPointer));
        }
        // SAFETY: non-null, caller's contract.
        unsafe { clear(dynamics) };
        // SAFETY: caller's contract.
        let (robot, p) = unsafe { (held(robot).map_err(plain)?, input(params).map_err(plain)?) };
        let params = DynamicsParams {
            upper_arm_mass: p.upper_arm_mass_kg,
            upper_arm_com: p.upper_arm_com_mm,
            upper_arm_inertia: p.upper_arm_inertia_kg_mm2,
            lower_arm_mass: p.lower_arm_mass_kg,
            lower_arm_elbow_share: p.lower_arm_elbow_share,
            platform_mass: p.platform_mass_kg,
            payload: p.payload_kg,
            viscous: p.viscous_n_mm_s,
            coulomb: p.coulomb_n_mm,
            coulomb_rate: p.coulomb_rate_rad_s,
        };
        let value = Dynamics::new(&params, robot).map_err(from_error)?;
        // SAFETY: non-null, caller's contract.
        unsafe { store(dynamics, value) };
        Ok(())
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}

/// Joint torques (N*mm, three floats to `torques_n_mm`) at the joint
/// readings `joints_rad` (rad) with joint rates `rates_rad_s` (rad/s),
/// joint accelerations `accels_rad_s2` (rad/s^2) and the platform
/// acceleration `platform_accel_mm_s2` (mm/s^2) that goes with them:
/// guarded forward kinematics for the Jacobian, then the core's
/// `Dynamics::torques` (model, source and bounds in `src/dynamics.rs`).
///
/// # Errors
/// As `deltakin_forward_f32` for the joints; `NON_FINITE`,
/// `NEAR_PARALLEL`, `OUT_OF_RANGE` from the model; `NOT_INITIALISED` for
/// either storage.
///
/// # Safety
/// As `deltakin_inverse_f32`; `dynamics` built for this `robot`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_torques_f32(
    dynamics: *const DeltakinDynamicsF32,
    robot: *const DeltakinRobotF32,
    joints_rad: *const f32,
    rates_rad_s: *const f32,
    accels_rad_s2: *const f32,
    platform_accel_mm_s2: *const f32,
    torques_n_mm: *mut f32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        // SAFETY: caller's contract.
        let (d, robot) = unsafe { (held(dynamics).map_err(plain)?, held(robot).map_err(plain)?) };
        // SAFETY: caller's contract.
        let (j, w, dw, a) = unsafe {
            (triple(joints_rad)?, triple(rates_rad_s)?, triple(accels_rad_s2)?, triple(platform_accel_mm_s2)?)
        };
        let s = robot.forward(j).map_err(from_error)?;
        let tau = d.torques(j, &s.jacobian, w, dw, a).map_err(from_error)?;
        // SAFETY: caller's contract.
        unsafe { put_triple(torques_n_mm, tau) }
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}
