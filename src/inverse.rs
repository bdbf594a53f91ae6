//! Inverse kinematics: platform position to joint angles, one closed form
//! per arm.
//!
//! In the vertical plane of arm `i` (x radial, y tangential, z up), with
//! all lengths in lower-arm units (the lower arm is 1, the upper arm `a`),
//! the platform centre at `(x', y', z)` and `X = x' - (base_radius -
//! platform_radius)`, the loop-closure equation of the conventions,
//! `|E_i - P_i| = 1`, becomes
//!
//! ```text
//!   (a cos t - X)^2 + y'^2 + (a sin t + z)^2 = 1
//!   => A cos t + B sin t = K,   A = -X,  B = z,
//!      K = (1 - a^2 - X^2 - y'^2 - z^2) / (2a).
//! ```
//!
//! This is the classical linear-combination form (solved in most robotics
//! texts, e.g. J. J. Craig, "Introduction to Robotics", 3rd ed., 2005,
//! section 4.7). With `rho^2 = A^2 + B^2` it has a real solution exactly
//! when `rho^2 - K^2 >= 0`; writing `w = sqrt(rho^2 - K^2)`, the two
//! solutions are
//!
//! ```text
//!   rho^2 cos t = A K -+ s B w,   rho^2 sin t = B K +- s A w   (s = +-1)
//! ```
//!
//! and the conventions' elbow-out branch (the larger `cos t`) is the one
//! with `+|B| w` in the cosine. The angle is `atan2` of the two numerators,
//! so no division is needed for it; the guard divides once by `rho^2` to
//! get the elbow's sine and cosine without calling `sin_cos`.
//!
//! Cost per arm: one square root, one `atan2`, one division and about 25
//! multiplications and additions. No iteration.

use crate::error::Error;
use crate::robot::Robot;
use crate::scalar::Real;

/// One arm's closed loop, in lower-arm units and the arm's plane frame.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct ArmState<S> {
    /// Joint angle (rad).
    pub(crate) theta: S,
    /// sin and cos of the joint angle.
    pub(crate) sin: S,
    pub(crate) cos: S,
    /// Lower-arm vector from elbow to platform joint (unit length up to
    /// rounding), in the arm's plane frame.
    pub(crate) rod: [S; 3],
}

/// The platform centre `p` (lower-arm units, base frame) seen from arm
/// `arm`: `(X, y', z)` with `X` measured from the point where the platform
/// joint sits when the elbow is on the actuator axis.
#[inline]
pub(crate) fn arm_plane_point<S: Real>(robot: &Robot<S>, arm: usize, p: [S; 3]) -> [S; 3] {
    let (c, s) = robot.arms.get(arm).map_or((S::ONE, S::ZERO), |k| (k.cos_phi, k.sin_phi));
    let [x, y, z] = p;
    [c * x + s * y - robot.d, c * y - s * x, z]
}

/// Rod vector (elbow to platform joint) in the arm's plane frame, from the
/// arm-plane point and the joint angle's sine and cosine.
#[inline]
pub(crate) fn rod_vector<S: Real>(robot: &Robot<S>, q: [S; 3], sin: S, cos: S) -> [S; 3] {
    let [x, y, z] = q;
    [x - robot.a * cos, y, z + robot.a * sin]
}

/// Solves one arm, elbow-out branch. `p` is the platform centre in
/// lower-arm units.
///
/// # Errors
/// [`Error::Unreachable`] naming the arm when the closure has no real
/// solution, or when the platform joint sits on the actuator axis itself
/// (`rho = 0`), where the angle is undefined.
pub(crate) fn solve_arm<S: Real>(robot: &Robot<S>, arm: usize, p: [S; 3]) -> Result<ArmState<S>, Error> {
    #[allow(clippy::cast_possible_truncation)] // arm < 3
    let unreachable = Error::Unreachable { arm: arm as u8 };
    let q = arm_plane_point(robot, arm, p);
    let [x, y, z] = q;
    let k = (robot.one_minus_a2 - x * x - y * y - z * z) * robot.inv_two_a;
    let (ca, cb) = (-x, z);
    let rho2 = ca * ca + cb * cb;
    let disc = rho2 - k * k;
    // `!(>=)` also catches NaN from overflowing intermediate values.
    if !(disc >= S::ZERO) {
        return Err(unreachable);
    }
    let w = disc.sqrt();
    let (abs_b, sgn_b_w) = if cb < S::ZERO { (-cb, -w) } else { (cb, w) };
    let cos_num = ca * k + abs_b * w;
    let sin_num = cb * k - sgn_b_w * ca;
    let inv_rho2 = S::ONE.checked_div(rho2).ok_or(unreachable)?;
    let (sin, cos) = (sin_num * inv_rho2, cos_num * inv_rho2);
    Ok(ArmState { theta: sin_num.atan2(cos_num), sin, cos, rod: rod_vector(robot, q, sin, cos) })
}

/// Solves all three arms for the platform centre `p` (lower-arm units).
///
/// # Errors
/// The first arm's [`Error::Unreachable`], arms taken in order 0, 1, 2.
pub(crate) fn solve_arms<S: Real>(robot: &Robot<S>, p: [S; 3]) -> Result<[ArmState<S>; 3], Error> {
    Ok([solve_arm(robot, 0, p)?, solve_arm(robot, 1, p)?, solve_arm(robot, 2, p)?])
}
