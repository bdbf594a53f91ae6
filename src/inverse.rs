//! Inverse kinematics: platform position to joint angles, one closed form
//! per arm.
//!
//! In the vertical plane of arm `i` (x radial, y tangential, z up, at the
//! arm's own azimuth), with all lengths in nominal lower-arm units (the
//! nominal lower arm is 1; this arm's upper arm is `a`, its lower arm `l`,
//! see [`crate::per_arm`]), the platform centre at `(x', y', z')`,
//! `X = x' - d` (`d` the arm's radial difference) and `Z = z' - h` (`h`
//! its axis height), the loop-closure equation `|E_i - P_i| = l` becomes
//!
//! ```text
//!   (a cos t - X)^2 + y'^2 + (a sin t + Z)^2 = l^2
//!   => A cos t + B sin t = K,   A = -X,  B = Z,
//!      K = (l^2 - a^2 - X^2 - y'^2 - Z^2) / (2a).
//! ```
//!
//! Here `t` is the arm's true angle; the joint reading returned is `t`
//! minus the arm's joint offset.
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
//! `s . dE/dt / (a l)` with `s` the rod, i.e. `(sin t X + cos t Z) / l`
//! (the upper-arm terms cancel), and substituting the solution,
//! `rho^2 (sin t X + cos t Z) = -A sin_num + B cos_num = sgn(B) w rho^2`:
//! the margin is `w / l`, up to its sign convention. This is both cheaper
//! and more accurate than recomputing it from the rounded sine and cosine.
//!
//! Each arm's plane is turned by its own azimuth (nominally 0, 120 and 240
//! degrees; on the nominal machine every product below is the one the
//! symmetric form had, so its results are unchanged bit for bit in f32
//! and f64).
//!
//! Cost per arm: one square root, one `atan2`, one division and about 25
//! multiplications and additions. No iteration.

use crate::error::Error;
use crate::per_arm::ArmConstants;
use crate::robot::Robot;
use crate::scalar::Real;

/// One arm's closed loop, in lower-arm units and the arm's plane frame.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct ArmState<S> {
    /// Joint reading (rad): the true angle minus the arm's joint offset.
    pub(crate) theta: S,
    /// sin and cos of the true joint angle.
    pub(crate) sin: S,
    pub(crate) cos: S,
    /// Lower-arm vector from elbow to platform joint (unit length up to
    /// rounding) in the arm's plane frame: its x (radial) and z components.
    /// The whole vector, in the base frame, goes to the Jacobian
    /// separately.
    pub(crate) rod: [S; 2],
    /// `rod . (sin t, 0, cos t)`: the rod's component along the elbow's
    /// direction of travel (up to the factor `-a`), whose magnitude divided
    /// by the rod's length is the serial margin.
    pub(crate) along: S,
}

impl<S: Real> ArmState<S> {
    /// An arm's state from its joint reading, the true angle's sine and
    /// cosine, and the rod's plane components `[x, z]`.
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

/// The platform centre `p` (lower-arm units, base frame) seen from arm
/// `k`: `(X, y', Z)` in the arm's plane frame, with `X` measured from the
/// point where the platform joint sits when the elbow is on the actuator
/// axis and `Z` from the axis height.
#[inline]
fn arm_plane_point<S: Real>(k: &ArmConstants<S>, p: [S; 3]) -> [S; 3] {
    let (c, s) = (k.cos_phi, k.sin_phi);
    let [x, y, z] = p;
    [c * x + s * y - k.d, c * y - s * x, z - k.h]
}

/// Rod vector (elbow to platform joint) in the arm's plane frame, from the
/// arm-plane point and the true joint angle's sine and cosine.
#[inline]
fn rod_vector<S: Real>(k: &ArmConstants<S>, q: [S; 3], sin: S, cos: S) -> [S; 3] {
    let [x, y, z] = q;
    [x - k.a * cos, y, z + k.a * sin]
}

/// Solves one arm, elbow-out branch. `q` is the platform centre seen from
/// the arm (see [`arm_plane_point`]), `arm` its number for the error.
///
/// # Errors
/// [`Error::Unreachable`] naming the arm when the closure has no real
/// solution, or when the platform joint sits on the actuator axis itself
/// (`rho = 0`), where the angle is undefined.
#[inline(always)]
fn solve_arm<S: Real>(arm_k: &ArmConstants<S>, arm: u8, q: [S; 3]) -> Result<ArmState<S>, Error> {
    let unreachable = Error::Unreachable { arm };
    let [x, y, z] = q;
    let k = (arm_k.l2_minus_a2 - x * x - y * y - z * z) * arm_k.inv_two_a;
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
    let [rx, _, rz] = rod_vector(arm_k, q, sin, cos);
    // The numerators are finite and form a vector of length rho^2, which
    // is above zero (its reciprocal is finite) and below (l + a)^2 < 5:
    // `disc >= 0` means `|K| <= rho`, which bounds `rho` by `l + a` (the
    // closure's triangle inequality). So the bounded arc tangent applies.
    let theta = sin_num.atan2_bounded(cos_num) - arm_k.joint_offset;
    Ok(ArmState { theta, sin, cos, rod: [rx, rz], along: sgn_b_w })
}

/// Solves all three arms for the platform centre `p` (lower-arm units):
/// their states and the platform centre's y coordinate in each arm's
/// plane (the rods' y components there, see [`base_rods`]).
///
/// # Errors
/// The first arm's [`Error::Unreachable`], arms taken in order 0, 1, 2.
///
/// Always inlined: out of line, the three arm states came back through
/// memory and were read again by the solution's assembly (on the
/// Cortex-M4F 33 instructions and 140 bytes of stack per guarded call).
#[inline(always)]
pub(crate) fn solve_arms<S: Real>(robot: &Robot<S>, p: [S; 3]) -> Result<([ArmState<S>; 3], [S; 3]), Error> {
    let [k0, k1, k2] = &robot.arms;
    let (q0, q1, q2) = (arm_plane_point(k0, p), arm_plane_point(k1, p), arm_plane_point(k2, p));
    let arms = [solve_arm(k0, 0, q0)?, solve_arm(k1, 1, q1)?, solve_arm(k2, 2, q2)?];
    Ok((arms, [q0[1], q1[1], q2[1]]))
}

/// The rods of solved arms in the base frame, given each rod's y
/// component in its arm's plane: each arm's plane turns by its azimuth.
#[inline]
pub(crate) fn base_rods<S: Real>(robot: &Robot<S>, arms: &[ArmState<S>; 3], plane_y: [S; 3]) -> [[S; 3]; 3] {
    let [k0, k1, k2] = &robot.arms;
    let [s0, s1, s2] = arms;
    let [y0, y1, y2] = plane_y;
    let ([x0, z0], [x1, z1], [x2, z2]) = (s0.rod, s1.rod, s2.rod);
    [rotate(k0, [x0, y0, z0]), rotate(k1, [x1, y1, z1]), rotate(k2, [x2, y2, z2])]
}
