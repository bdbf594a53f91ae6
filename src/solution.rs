//! A solved pose: joint angles and platform position together with the
//! singularity margins, the passive-joint tilts and the Jacobian, all
//! computed from the same three closed loops.

use crate::forward::dot;
use crate::inverse::ArmState;
use crate::jacobian::Jacobian;
use crate::robot::{Robot, to_upper_arm_frame};
use crate::scalar::{Arith, Real};

/// How far a pose is from trouble. See [`crate::jacobian`] for the margin
/// formulas and [`Robot`] for the passive-joint axes.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Margins<S> {
    /// Serial (Type I) margin of each arm, in `[-1, 1]`: the cosine of the
    /// angle between the lower arm and the elbow's direction of travel,
    /// signed so that it is positive on the conventions' elbow-out branch
    /// and negative on the other (elbow-in) one. The two branches meet at
    /// the serial singularity (margin 0), so a negative margin means the
    /// arm has passed through it; the guard rejects it like any margin
    /// below the minimum. Inverse kinematics always returns the elbow-out
    /// branch (margin >= 0); forward kinematics can meet either.
    pub serial: [S; 3],
    /// Parallel (Type II) margin, in `[0, 1]`: `|det|` of the three unit
    /// lower-arm vectors.
    pub parallel: S,
    /// Cosine of each passive joint's tilt from its neutral axis, per arm
    /// `[elbow, platform]`. 1 is on the axis; the guard demands at least
    /// `cos(passive_cone)`.
    pub passive_tilt_cos: [[S; 2]; 3],
}

/// A solved pose of the robot.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Solution<S: Arith> {
    /// Joint angles (rad), arms 0, 1, 2.
    pub joints: [S; 3],
    /// Platform centre (mm), base frame.
    pub position: [S::Wide; 3],
    /// Singularity margins and passive-joint tilts at this pose.
    pub margins: Margins<S>,
    /// The Jacobian at this pose, for velocity and force maps.
    pub jacobian: Jacobian<S>,
}

impl<S: Real> Solution<S> {
    /// Assembles a solution from the three arm loops. `position_mm` is the
    /// platform centre in millimetres.
    pub(crate) fn assemble(robot: &Robot<S>, position_mm: [S::Wide; 3], arms: [ArmState<S>; 3]) -> Self {
        let mut rods = [[S::ZERO; 3]; 3];
        let mut rates = [S::ZERO; 3];
        let mut serial = [S::ZERO; 3];
        let mut tilt = [[S::ONE; 2]; 3];
        let [_, _, z] = position_mm;
        let above = z > S::Wide::ZERO;
        let parts = rods.iter_mut().zip(rates.iter_mut()).zip(serial.iter_mut()).zip(tilt.iter_mut());
        for ((((rod_w, rate), margin), tilt), (state, k)) in parts.zip(arms.iter().zip(robot.arms.iter())) {
            let [rx, ry, rz] = state.rod;
            // Rod in the base frame: rotate the arm-plane vector by phi.
            *rod_w = [k.cos_phi * rx - k.sin_phi * ry, k.sin_phi * rx + k.cos_phi * ry, rz];
            // dE/dt = a (-sin t, 0, -cos t) in the arm plane.
            let along = state.sin * rx + state.cos * rz;
            *rate = -(robot.a * along);
            // Signed so that the conventions' branch is positive: on the
            // elbow-out branch `along` is negative below the actuator plane
            // and positive above it (see `Margins::serial`).
            *margin = if above { along } else { -along };
            let elbow_local = to_upper_arm_frame(state.rod, state.sin, state.cos);
            *tilt = [dot(elbow_local, k.elbow_axis), dot(state.rod, k.platform_axis)];
        }
        let jacobian = Jacobian::new(rods, rates, robot.scale);
        Self {
            joints: arms.map(|s| s.theta),
            position: position_mm,
            margins: Margins { serial, parallel: jacobian.parallel_margin(), passive_tilt_cos: tilt },
            jacobian,
        }
    }
}
