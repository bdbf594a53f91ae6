//! The guards: joint ranges, passive-joint cones and singularity margins.
//! They turn a raw solution into an accepted one or an error that names
//! the limit and the arm. No solver logic lives here.

use crate::error::{Bound, Error, JointEnd};
use crate::robot::Robot;
use crate::scalar::Real;
use crate::solution::Solution;

/// Checks joint angles against each arm's range.
///
/// # Errors
/// [`Error::JointLimit`] for the first arm out of range.
#[inline]
pub(crate) fn check_joints<S: Real>(robot: &Robot<S>, joints: [S; 3]) -> Result<(), Error> {
    let limits = robot.limits();
    for (arm, (&t, (&lo, &hi))) in joints.iter().zip(limits.joint_min.iter().zip(limits.joint_max.iter())).enumerate() {
        #[allow(clippy::cast_possible_truncation)] // arm < 3
        let arm = arm as u8;
        if !(t >= lo) {
            return Err(Error::JointLimit { arm, bound: Bound::Min });
        }
        if !(t <= hi) {
            return Err(Error::JointLimit { arm, bound: Bound::Max });
        }
    }
    Ok(())
}

/// Checks a solution against every limit but the joint ranges (see
/// [`check_joints`], which callers run first), in this order: serial
/// margins (which also refuse the elbow-in branch, whose margin is
/// negative), parallel margin, passive-joint cones (elbow before platform).
/// The first violation is reported.
///
/// # Errors
/// [`Error::PassiveLimit`], [`Error::NearSerialSingularity`] or
/// [`Error::NearParallelSingularity`].
#[inline]
pub(crate) fn check_margins<S: Real>(robot: &Robot<S>, solution: &Solution<S>) -> Result<(), Error> {
    let m = &solution.margins;
    let min_serial = robot.limits().min_serial_margin;
    for (arm, &margin) in m.serial.iter().enumerate() {
        if !(margin >= min_serial) {
            #[allow(clippy::cast_possible_truncation)] // arm < 3
            return Err(Error::NearSerialSingularity { arm: arm as u8 });
        }
    }
    if !(m.parallel >= robot.limits().min_parallel_margin) {
        return Err(Error::NearParallelSingularity);
    }
    for (arm, &[elbow, platform]) in m.passive_tilt_cos.iter().enumerate() {
        #[allow(clippy::cast_possible_truncation)] // arm < 3
        let arm = arm as u8;
        if !(elbow >= robot.cos_cone) {
            return Err(Error::PassiveLimit { arm, end: JointEnd::Elbow });
        }
        if !(platform >= robot.cos_cone) {
            return Err(Error::PassiveLimit { arm, end: JointEnd::Platform });
        }
    }
    Ok(())
}
