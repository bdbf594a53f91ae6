//! Forward kinematics: joint angles to platform position, as the
//! intersection of three spheres.
//!
//! Shift each elbow inwards by the platform radius: the platform centre
//! then lies on three spheres of radius `l_i` (nominal lower-arm units,
//! 1 on the nominal machine) around the shifted elbows
//! `C_i = R_z(phi_i) (d_i + a_i cos t_i, 0, h_i - a_i sin t_i)`, with each
//! arm's own azimuth `phi_i`, radial difference `d_i` (base minus platform
//! radius), axis height `h_i`, upper arm `a_i` and true joint angle `t_i`
//! (reading plus joint offset), see [`crate::per_arm`].
//!
//! The usual elimination subtracts sphere equations pairwise and divides by
//! differences of the centres' heights or coordinates, which vanish at
//! ordinary poses (all elbows at equal heights, for one). This module uses
//! the circumcentre form of trilateration instead, which divides only by
//! `|n|`, twice the area of the triangle of centres (zero only when the
//! centres are collinear: the three lower arms are then coplanar, a
//! parallel singularity):
//!
//! ```text
//!   u = C_1 - C_0,  v = C_2 - C_0,  n = u x v,  m = n / |n|
//!   U = |u|^2 + l_0^2 - l_1^2,  V = |v|^2 + l_0^2 - l_2^2
//!   Q = C_0 + (U (v x m) + V (m x u)) / (2 |n|)            foot point
//!   h^2 = l_0^2 - |Q - C_0|^2                              height above it
//!   p = Q -+ h m                                           lower of the two
//! ```
//!
//! With equal radii `Q` is the circumcentre of the three centres. With
//! unequal ones it is the point of their plane whose squared distances to
//! the centres differ by the differences of the squared radii (the radical
//! centre of the three circles): `(Q - C_0) . u = U / 2` and
//! `(Q - C_0) . v = V / 2` follow from `(v x m) . u = (m x u) . v = |n|`,
//! which is what subtracting the sphere equations demands.
//!
//! (Dividing by `|n|` instead of the textbook `|n|^2` keeps every
//! intermediate value of order one, which matters to a bounded number
//! type: fixed point cannot hold `1 / |n|^2` for the small triangles of
//! machines with a short upper arm.)
//!
//! (The circumcentre formula is the standard vector form, see e.g.
//! "Circumscribed circle", section "Higher dimensions", in any analytic
//! geometry reference; the three-sphere construction follows
//! R. L. Williams II, "The Delta Parallel Robot: Kinematics Solutions",
//! Ohio University, 2016, which intersects the same three spheres.)
//! Equal heights and every other ordinary pose are handled without special
//! cases. Cost: three sine/cosine pairs, two square roots, one division and
//! about 60 multiplications and additions.

use crate::error::Error;
use crate::per_arm::ArmConstants;
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

/// Sphere centre of arm `k`: its elbow shifted inwards by the platform
/// radius, in lower-arm units and the base frame, from the true joint
/// angle's sine and cosine.
#[inline]
fn centre<S: Real>(k: &ArmConstants<S>, sin: S, cos: S) -> [S; 3] {
    let radial = k.d + k.a * cos;
    [k.cos_phi * radial, k.sin_phi * radial, k.h - k.a * sin]
}

/// The platform centre (lower-arm units, base frame) for true joint angles
/// whose sines and cosines are given, lower branch, and the three rods (elbow to
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
    let [k0, k1, k2] = &robot.arms;
    let p0 = centre(k0, s0, c0);
    let e1 = centre(k1, s1, c1);
    let e2 = centre(k2, s2, c2);
    let l0_sq = k0.l * k0.l;
    let u = sub(e1, p0);
    let v = sub(e2, p0);
    let n = cross(u, v);
    // The unit normal m = n / |n|, and 1 / (2 |n|): dividing by |n| rather
    // than |n|^2 keeps every intermediate of order one, which a bounded
    // number type (fixed point) needs when the centres' triangle is small.
    // Through `length3`: a short upper arm makes the triangle, and so `n`,
    // small, and its length must keep its relative precision (for fixed
    // point an exact sum of squares; floats compute `dot(n, n).sqrt()`).
    let n_len = S::length3(n);
    // One reciprocal of 2 |n| for every division below: through
    // `recip_internal` so that fixed point keeps its relative precision
    // (a Q7.25 reciprocal of a small 2 |n| holds few significant bits, and
    // q, whose error the near-plane intersection amplifies, inherits
    // them). Floats: the same products as multiplying by `1 / (2 |n|)`.
    let inv_2n = S::recip_internal(S::TWO * n_len).ok_or(Error::NearParallelSingularity)?;
    let m = [n[0] + n[0], n[1] + n[1], n[2] + n[2]].map(|c| S::mul_recip_internal(c, inv_2n));
    // The radii enter as differences of squares (zero on the nominal machine).
    let uu = dot(u, u) + (l0_sq - k1.l * k1.l);
    let vv = dot(v, v) + (l0_sq - k2.l * k2.l);
    let vm = cross(v, m);
    let mu = cross(m, u);
    let q = [uu * vm[0] + vv * mu[0], uu * vm[1] + vv * mu[1], uu * vm[2] + vv * mu[2]]
        .map(|x| S::mul_recip_internal(x, inv_2n));
    // Through `height_sq` (floats: the same operations as writing it
    // out): near the plane of the centres h is small and its error is that
    // of h2 over 2 h, so fixed point forms h2 from exact squares.
    let h2 = S::height_sq(k0.l, q);
    if !(h2 >= S::ZERO) {
        return Err(Error::NoAssembly);
    }
    // The lower of the two points: along -m when m points up.
    let h = h2.sqrt();
    let t = if m[2] > S::ZERO { -h } else { h };
    let p = [p0[0] + q[0] + t * m[0], p0[1] + q[1] + t * m[1], p0[2] + q[2] + t * m[2]];
    let p = if S::REFINES_FORWARD { refine(p, p0, [u, v], n, [k0.l, k1.l, k2.l]) } else { p };
    // A bounded number type (fixed point) gives not-a-number when a nearly
    // collinear set of centres drives `q` out of range: report it as the
    // singularity it is close to rather than return it.
    if S::all_finite(p) { Ok((p, [sub(p, p0), sub(p, e1), sub(p, e2)])) } else { Err(Error::NearParallelSingularity) }
}

/// One Newton step on the sphere equations `|p - C_i|^2 = l_i^2`, for
/// number types that ask for it ([`Real::REFINES_FORWARD`]: fixed point).
///
/// With the rods `r_i = p - C_i` and the residuals `g_i = l_i^2 - |r_i|^2`
/// (formed exactly by [`Real::height_sq`]), the linearised equations
/// `2 r_i . dp = g_i` give `dp = (g_0 (r_1 x r_2) + g_1 (r_2 x r_0) + g_2
/// (r_0 x r_1)) / (2 det)` with `det = r_0 . (r_1 x r_2)` (Cramer's rule;
/// `det` is zero only at the parallel singularity). The closed form above
/// leaves a few LSBs of rounding in its foot point, which the
/// intersection amplifies along the normal when the platform is near the
/// plane of the centres; the step's own rounding is that of the small
/// correction, so the result is limited by the centres' rounding alone.
/// When `det` has no usable reciprocal the point is returned unchanged
/// (the caller's checks still apply).
#[inline]
fn refine<S: Real>(p: [S; 3], c0: [S; 3], uv: [[S; 3]; 2], n: [S; 3], l: [S; 3]) -> [S; 3] {
    let [u, v] = uv;
    // r_1 = r_0 - u and r_2 = r_0 - v, so r_2 x r_0 = r_0 x v, r_0 x r_1 =
    // u x r_0 and r_1 x r_2 = n - (r_2 x r_0) - (r_0 x r_1): two cross
    // products, and det = r_0 . n.
    let r0 = sub(p, c0);
    let (r1, r2) = (sub(r0, u), sub(r0, v));
    let [l0, l1, l2] = l;
    let g = [S::height_sq(l0, r0), S::height_sq(l1, r1), S::height_sq(l2, r2)];
    let (a1, a2) = (cross(r0, v), cross(u, r0));
    let det = dot(r0, n);
    let (det, g) = if det < S::ZERO { (-det, g.map(|x| -x)) } else { (det, g) };
    let Some(inv) = S::recip_internal(det + det) else { return p };
    // g_0 a_0 + g_1 a_1 + g_2 a_2 = g_0 n + (g_1 - g_0) a_1 + (g_2 - g_0) a_2.
    let [g0, g1, g2] = g;
    let (d1, d2) = (g1 - g0, g2 - g0);
    let step = |nk: S, x: S, y: S| S::mul_recip_internal(g0 * nk + d1 * x + d2 * y, inv);
    let dp = [step(n[0], a1[0], a2[0]), step(n[1], a1[1], a2[1]), step(n[2], a1[2], a2[2])];
    [p[0] + dp[0], p[1] + dp[1], p[2] + dp[2]]
}
