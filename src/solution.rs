//! A solved pose: joint angles and platform position together with the
//! singularity margins, the passive-joint tilts and the Jacobian, all
//! computed from the same three closed loops.

use crate::inverse::ArmState;
use crate::jacobian::Jacobian;
use crate::per_arm::ArmConstants;
use crate::robot::Robot;
use crate::scalar::{Arith, Real};

/// How far a pose is from trouble. See [`crate::jacobian`] for the margin
/// formulas and [`Robot`] for the passive-joint axes.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
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
    /// Assembles a solution from the three arm loops and their rods in the
    /// base frame. `position_mm` is the platform centre in millimetres.
    #[inline]
    pub(crate) fn assemble(
        robot: &Robot<S>,
        position_mm: [S::Wide; 3],
        arms: [ArmState<S>; 3],
        rods: [[S; 3]; 3],
    ) -> Self {
        let [_, _, z] = position_mm;
        let above = z > S::Wide::ZERO;
        let [k0, k1, k2] = &robot.arms;
        let [s0, s1, s2] = &arms;
        let parts = [part(k0, s0, above), part(k1, s1, above), part(k2, s2, above)];
        let jacobian = Jacobian::new(rods, parts.map(|(rate, _, _)| rate), robot.scale);
        // |det| of the rods over the product of their lengths: the
        // determinant of the unit rods (the lengths are 1 on the nominal
        // machine).
        let inv_lengths = k0.inv_l * k1.inv_l * k2.inv_l;
        Self {
            joints: [s0.theta, s1.theta, s2.theta],
            position: position_mm,
            margins: Margins {
                serial: parts.map(|(_, margin, _)| margin),
                parallel: jacobian.rods_abs_det() * inv_lengths,
                passive_tilt_cos: parts.map(|(_, _, tilt)| tilt),
            },
            jacobian,
        }
    }
}

/// One arm's Jacobian rate `b_i`, serial margin and passive-joint tilt
/// cosines `[elbow, platform]`.
#[inline]
fn part<S: Real>(k: &ArmConstants<S>, state: &ArmState<S>, above: bool) -> (S, S, [S; 2]) {
    let [rx, rz] = state.rod;
    // dE/dt = a (-sin t, 0, -cos t) in the arm plane, so b = -a along.
    let rate = -(k.a * state.along);
    // Divided by the rod's length (1 on the nominal machine) and signed
    // so that the conventions' branch is positive: on the elbow-out
    // branch `along` is negative below the actuator plane and positive
    // above it (see `Margins::serial`).
    let along = state.along * k.inv_l;
    let margin = if above { along } else { -along };
    // The rod in the upper arm's frame is (cos t rx - sin t rz, ry,
    // along); both neutral axes have no y component, and are stored
    // divided by the rod's length, so these are the tilts' cosines.
    let [ex, ez] = k.elbow_axis;
    let [px, pz] = k.platform_axis;
    let elbow = ex * (state.cos * rx - state.sin * rz) + ez * state.along;
    (rate, margin, [elbow, px * rx + pz * rz])
}
