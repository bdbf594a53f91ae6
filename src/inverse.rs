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
//! so no division is needed for it; one division by `rho^2` gives the
//! elbow's sine and cosine without calling `sin_cos` (two divisions when
//! `rho^2 < 1/16`, where its reciprocal could overflow a bounded type).
//!
//! The same two numerators give the serial margin for free. The margin is
//! `s . dE/dt / a` with `s` the unit rod, i.e. `sin t X + cos t z` (the
//! upper-arm terms cancel), and substituting the solution,
//! `rho^2 (sin t X + cos t z) = -A sin_num + B cos_num = sgn(B) w rho^2`:
//! the margin is `w` itself, up to its sign convention. This is both
//! cheaper and more accurate than recomputing it from the rounded sine and
//! cosine.
//!
//! The three arms sit at the conventions' azimuths 0, 120 and 240 degrees
//! (set by `Robot::new`), so arm 0's plane is the xz plane and arms 1 and
//! 2 are mirror images: their plane coordinates share four products.
//!
//! Cost per arm: one square root, one `atan2`, one division and about 20
//! multiplications and additions. No iteration.

use crate::error::Error;
use crate::robot::{ArmConstants, Robot};
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
    /// rounding) in the arm's plane frame: its x (radial) and z components.
    /// The whole vector, in the base frame, goes to the Jacobian
    /// separately.
    pub(crate) rod: [S; 2],
    /// `rod . (sin t, 0, cos t)`: the rod's component along the elbow's
    /// direction of travel (up to the factor `-a`), whose magnitude is the
    /// serial margin.
    pub(crate) along: S,
}

impl<S: Real> ArmState<S> {
    /// An arm's state from its joint angle, the angle's sine and cosine,
    /// and the rod's plane components `[x, z]`.
    #[inline]
    pub(crate) fn new(theta: S, (sin, cos): (S, S), rod: [S; 2]) -> Self {
        let [rx, rz] = rod;
        Self { theta, sin, cos, rod, along: sin * rx + cos * rz }
    }
}

/// An arm-plane vector in the base frame: turned by the arm's azimuth.
#[inline]
fn rotate<S: Real>(k: &ArmConstants<S>, v: [S; 3]) -> [S; 3] {
    let [x, y, z] = v;
    [k.cos_phi * x - k.sin_phi * y, k.sin_phi * x + k.cos_phi * y, z]
}

/// The platform centre `p` (lower-arm units, base frame) seen from each
/// arm: `(X, y', z)` with `X` measured from the point where the platform
/// joint sits when the elbow is on the actuator axis. Arm 0 lies on the x
/// axis; arms 1 and 2 at +-120 degrees share their products.
#[inline]
fn arm_plane_points<S: Real>(robot: &Robot<S>, p: [S; 3]) -> [[S; 3]; 3] {
    let [_, k1, _] = &robot.arms;
    let (c, s) = (k1.cos_phi, k1.sin_phi);
    let [x, y, z] = p;
    let (cx, cy, sx, sy) = (c * x, c * y, s * x, s * y);
    [[x - robot.d, y, z], [cx + sy - robot.d, cy - sx, z], [cx - sy - robot.d, cy + sx, z]]
}

/// Rod vector (elbow to platform joint) in the arm's plane frame, from the
/// arm-plane point and the joint angle's sine and cosine.
#[inline]
fn rod_vector<S: Real>(robot: &Robot<S>, q: [S; 3], sin: S, cos: S) -> [S; 3] {
    let [x, y, z] = q;
    [x - robot.a * cos, y, z + robot.a * sin]
}

/// Solves one arm, elbow-out branch. `q` is the platform centre seen from
/// the arm (see [`arm_plane_points`]), `arm` its number for the error.
///
/// # Errors
/// [`Error::Unreachable`] naming the arm when the closure has no real
/// solution, or when the platform joint sits on the actuator axis itself
/// (`rho = 0`), where the angle is undefined.
#[inline(always)]
fn solve_arm<S: Real>(robot: &Robot<S>, arm: u8, q: [S; 3]) -> Result<ArmState<S>, Error> {
    let unreachable = Error::Unreachable { arm };
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
    // One reciprocal and two products; but when the platform joint passes
    // within a quarter lower arm of the actuator axis (rho^2 < 1/16,
    // reachable with a long upper arm at a serial margin of 0.1) the
    // reciprocal can leave a bounded type's range, so there the two
    // quotients, which never exceed 1, are taken directly.
    let (sin, cos) = if rho2 >= S::HALF * S::HALF * S::HALF * S::HALF {
        let inv_rho2 = S::ONE.checked_div(rho2).ok_or(unreachable)?;
        (sin_num * inv_rho2, cos_num * inv_rho2)
    } else {
        (sin_num.checked_div(rho2).ok_or(unreachable)?, cos_num.checked_div(rho2).ok_or(unreachable)?)
    };
    let [rx, _, rz] = rod_vector(robot, q, sin, cos);
    // The numerators are finite and form a vector of length rho^2, which
    // is above zero (its reciprocal is finite) and below (1 + a)^2 < 4:
    // `disc >= 0` means `|K| <= rho`, which bounds `rho` by `1 + a` (the
    // closure's triangle inequality). So the bounded arc tangent applies.
    Ok(ArmState { theta: sin_num.atan2_bounded(cos_num), sin, cos, rod: [rx, rz], along: sgn_b_w })
}

/// Solves all three arms for the platform centre `p` (lower-arm units):
/// their states and the platform centre's y coordinate in each arm's
/// plane (the rods' y components there, see [`base_rods`]).
///
/// # Errors
/// The first arm's [`Error::Unreachable`], arms taken in order 0, 1, 2.
#[inline]
pub(crate) fn solve_arms<S: Real>(robot: &Robot<S>, p: [S; 3]) -> Result<([ArmState<S>; 3], [S; 3]), Error> {
    let [q0, q1, q2] = arm_plane_points(robot, p);
    let arms = [solve_arm(robot, 0, q0)?, solve_arm(robot, 1, q1)?, solve_arm(robot, 2, q2)?];
    Ok((arms, [q0[1], q1[1], q2[1]]))
}

/// The rods of solved arms in the base frame, given each rod's y
/// component in its arm's plane: arm 0's plane is the xz plane; arms 1
/// and 2 turn by their azimuths.
#[inline]
pub(crate) fn base_rods<S: Real>(robot: &Robot<S>, arms: &[ArmState<S>; 3], plane_y: [S; 3]) -> [[S; 3]; 3] {
    let [_, k1, k2] = &robot.arms;
    let [s0, s1, s2] = arms;
    let [y0, y1, y2] = plane_y;
    let ([x0, z0], [x1, z1], [x2, z2]) = (s0.rod, s1.rod, s2.rod);
    [[x0, y0, z0], rotate(k1, [x1, y1, z1]), rotate(k2, [x2, y2, z2])]
}
