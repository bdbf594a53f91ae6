//! Forward kinematics: joint angles to platform position, as the
//! intersection of three spheres.
//!
//! Shift each elbow inwards by the platform radius: the platform centre
//! then lies on three spheres of radius 1 (lower-arm units) around the
//! shifted elbows `C_i = R_z(phi_i) (d + a cos t_i, 0, -a sin t_i)`, with
//! `d = base_radius - platform_radius`.
//!
//! The usual elimination subtracts sphere equations pairwise and divides by
//! differences of the centres' heights or coordinates, which vanish at
//! ordinary poses (all elbows at equal heights, for one). This module uses
//! the circumcentre form of trilateration instead, which divides only by
//! `|n|^2`, the squared area of the triangle of centres (zero only when the
//! centres are collinear, which is a degenerate machine):
//!
//! ```text
//!   u = C_1 - C_0,  v = C_2 - C_0,  n = u x v
//!   Q = C_0 + (|u|^2 (v x n) + |v|^2 (n x u)) / (2 |n|^2)   circumcentre
//!   h^2 = 1 - |Q - C_0|^2                                  height above it
//!   p = Q -+ sqrt(h^2 / |n|^2) n                           lower of the two
//! ```
//!
//! (The circumcentre formula is the standard vector form, see e.g.
//! "Circumscribed circle", section "Higher dimensions", in any analytic
//! geometry reference; the three-sphere construction follows
//! R. L. Williams II, "The Delta Parallel Robot: Kinematics Solutions",
//! Ohio University, 2016, which intersects the same three spheres.)
//! Equal heights and every other ordinary pose are handled without special
//! cases. Cost: three sine/cosine pairs, one square root, one division and
//! about 60 multiplications and additions.

use crate::error::Error;
use crate::robot::Robot;
use crate::scalar::Real;

#[inline]
pub(crate) fn cross<S: Real>(u: [S; 3], v: [S; 3]) -> [S; 3] {
    let [ux, uy, uz] = u;
    let [vx, vy, vz] = v;
    [uy * vz - uz * vy, uz * vx - ux * vz, ux * vy - uy * vx]
}

#[inline]
pub(crate) fn dot<S: Real>(u: [S; 3], v: [S; 3]) -> S {
    let [ux, uy, uz] = u;
    let [vx, vy, vz] = v;
    ux * vx + uy * vy + uz * vz
}

#[inline]
fn sub<S: Real>(u: [S; 3], v: [S; 3]) -> [S; 3] {
    let [ux, uy, uz] = u;
    let [vx, vy, vz] = v;
    [ux - vx, uy - vy, uz - vz]
}

/// Sphere centre of an arm at azimuth `phi` (`c`, `s` its cosine and
/// sine): its elbow shifted inwards by the platform radius, in lower-arm
/// units and the base frame.
#[inline]
fn centre<S: Real>(robot: &Robot<S>, (c, s): (S, S), sin: S, cos: S) -> [S; 3] {
    let radial = robot.d + robot.a * cos;
    [c * radial, s * radial, -(robot.a * sin)]
}

/// The platform centre (lower-arm units, base frame) for joints whose
/// sines and cosines are given, lower branch, and the three rods (elbow to
/// platform joint, base frame): the platform centre minus each sphere
/// centre.
///
/// # Errors
/// [`Error::NoAssembly`] when the spheres do not meet;
/// [`Error::NearParallelSingularity`] when the centres are collinear (the
/// intersection is then a circle or nothing), or so nearly collinear that
/// the result leaves the number type's range.
#[inline]
pub(crate) fn solve<S: Real>(robot: &Robot<S>, trig: [(S, S); 3]) -> Result<([S; 3], [[S; 3]; 3]), Error> {
    let [(s0, c0), (s1, c1), (s2, c2)] = trig;
    let [_, k1, k2] = &robot.arms;
    // Arm 0 lies on the x axis (azimuth 0, see `Robot::new`).
    let radial0 = robot.d + robot.a * c0;
    let p0 = [radial0, S::ZERO, -(robot.a * s0)];
    let e1 = centre(robot, (k1.cos_phi, k1.sin_phi), s1, c1);
    let e2 = centre(robot, (k2.cos_phi, k2.sin_phi), s2, c2);
    let u = sub(e1, p0);
    let v = sub(e2, p0);
    let n = cross(u, v);
    let n2 = dot(n, n);
    let inv_2n2 = S::ONE.checked_div(S::TWO * n2).ok_or(Error::NearParallelSingularity)?;
    let uu = dot(u, u);
    let vv = dot(v, v);
    let vn = cross(v, n);
    let nu = cross(n, u);
    let q =
        [(uu * vn[0] + vv * nu[0]) * inv_2n2, (uu * vn[1] + vv * nu[1]) * inv_2n2, (uu * vn[2] + vv * nu[2]) * inv_2n2];
    let h2 = S::ONE - dot(q, q);
    if !(h2 >= S::ZERO) {
        return Err(Error::NoAssembly);
    }
    // h2 <= 1 and 1/n2 is finite, so the product cannot overflow.
    let t = (h2 * (inv_2n2 + inv_2n2)).sqrt();
    let t = if n[2] > S::ZERO { -t } else { t };
    let p = [p0[0] + q[0] + t * n[0], p0[1] + q[1] + t * n[1], p0[2] + q[2] + t * n[2]];
    // A bounded number type (fixed point) gives not-a-number when a nearly
    // collinear set of centres drives `t` out of range: report it as the
    // singularity it is close to rather than return it.
    if S::all_finite(p) { Ok((p, [sub(p, p0), sub(p, e1), sub(p, e2)])) } else { Err(Error::NearParallelSingularity) }
}
