//! Guards between samples: no point of the commanded path between two
//! consecutive setpoints may violate a guard.
//!
//! The stream emits one setpoint per cycle, and the guarded kinematics
//! check each of them; but the servo follows the path *between* them too,
//! and a path that grazes a limit can cross it between two accepted
//! setpoints. This file bounds how far every guarded quantity can move
//! along one cycle's stretch of path and checks each sample against its
//! limits tightened by that bound.
//!
//! # Method (own derivation from the closure equations; interpolation
//! error bound from any numerical analysis text, e.g. Burden and Faires,
//! "Numerical Analysis", linear Lagrange interpolation, from memory)
//! Take one cycle's stretch of path, from sample `k` to sample `k+1`,
//! and a path parameter `s` over it: the arc length for a Cartesian path
//! (the paths are parameterised by arc length, so the stretch's length
//! is exactly `(sigma_{k+1} - sigma_k) L`), a fraction of the stretch for
//! a joint-space path (whose joints move linearly). Every guarded
//! quantity `g` (each joint angle, serial margin, passive-joint tilt
//! cosine, and the parallel margin) is a smooth function of the pose,
//! known at both ends of the stretch. If `|g''| <= H` along the stretch
//! of parameter length `h`, then everywhere on it
//!
//! ```text
//!   min(g_k, g_{k+1}) - H h^2 / 8  <=  g  <=  max(g_k, g_{k+1}) + H h^2 / 8
//! ```
//!
//! (the error of linear interpolation, which needs `g'` only Lipschitz,
//! so it holds across the joints between a line and an arc). Each sample
//! is therefore checked against its limits tightened by `H h^2 / 8`.
//!
//! The bounds `H` follow from the closure `|P_i - E_i| = l_i` of each
//! arm `i` (upper arm `a_i`, lower arm `l_i`, mm): with `r_i = P_i - E_i`
//! the rod (constant length, so its unit vector is `u_i = r_i / l_i`),
//! `e_i` the unit direction of elbow travel (it turns with the joint),
//! `m_i = u_i . e_i` the serial margin, and primes derivatives along `s`:
//!
//! * `u_i . p' = a_i m_i theta_i'` (the closure differentiated, as in
//!   [`crate::jacobian`]), so on a Cartesian path of unit speed
//!   `|theta_i'| <= 1 / (a_i m_i)`;
//! * `r_i' = p' - a_i theta_i' e_i` and
//!   `r_i'' = p'' - a_i theta_i'' e_i - a_i theta_i'^2 de_i/dtheta`, with
//!   `|p'| = 1`, `|p''| = kappa` (the curvature: 0 on a line, `1/r` on an
//!   arc) on a Cartesian path;
//! * differentiating `a_i m_i theta_i' = u_i . p'` once more gives
//!   `theta_i''`; `m_i''` and the tilt cosines' second derivatives
//!   (`u_i . n` with the neutral axis `n` fixed at the platform and
//!   turning with the joint at the elbow) follow by the product rule,
//!   each bounded by the norms above; `det(u_0, u_1, u_2)`'s by
//!   `sum |u_i''| + 2 sum_{i<j} |u_i'| |u_j'|`.
//!
//! On a joint path the joint rates are the constants of the stretch, the
//! joints' second derivatives are zero (the joint ranges, convex, need
//! no tightening), and the platform's derivatives come from the closure:
//! `J_p p' = diag(a_i m_i) theta'` with the rows of `J_p` the unit rods,
//! so `|p'| <= sum a_i |theta_i'| / det` (each column of `J_p^-1` is a
//! cross product of two unit vectors over `det`), and likewise `p''`.
//!
//! These bounds need lower bounds on the serial margins (Cartesian) or
//! on `det` (joint) along the stretch. They come from a first-order
//! argument that closes on itself: on a Cartesian stretch of length `D`,
//! if `m_i >= mu` along it then `m_i` falls by at most
//! `D (1 + a_i/l_i) / (a_i mu) + D/l_i` (from `|m_i'| <= |u_i'| +
//! |theta_i'|`), so the largest `mu` with
//! `mu + D (1 + a_i/l_i) / (a_i mu) + D/l_i <= m_i(k)` (the larger root
//! of a quadratic) bounds `m_i` from below over the whole stretch: were
//! `m_i` to fall below it, the first point where it does would contradict
//! the bound that holds up to that point. A positive bound also keeps the
//! arm off its reach boundary, so the inverse kinematics stay defined and
//! smooth along the stretch. `det` on a joint stretch is handled the same
//! way. No real root means the stretch is too long for the margin: the
//! sample is refused as near that singularity.
//!
//! The last sample is checked by the guarded kinematics like every
//! other, so every point of the path, at and between samples, is inside
//! every guard.
//!
//! # How much it tightens
//! The tightening is second order in the stretch: at 2.5 m/s and 4 kHz
//! (0.625 mm per cycle) on the demo robot it is about 1e-5 rad on a
//! joint on a straight line, and grows with the path's curvature and as
//! a margin nears its minimum; at 1 kHz (four times the stretch) sixteen
//! times that.
//!
//! Rounding: the stretch's length and the joint travels are widened by
//! [`TRAVEL_SLACK`] (relative) plus [`TRAVEL_FLOOR_MM`] /
//! [`TRAVEL_FLOOR_RAD`], more than the rounding of the path fraction and
//! of the path's evaluation in every supported number type.

use crate::error::{Bound, Error, JointEnd};
use crate::robot::Robot;
use crate::scalar::{Arith, Real};
use crate::solution::Margins;

use super::error::{MotionError, MotionFault};
use super::law::{convert, div};

/// Relative widening of each stretch's travel, for rounding.
pub const TRAVEL_SLACK: f64 = 1.0 / 1024.0;

/// Absolute widening of each stretch's platform travel (mm): above the
/// resolution of a path point in f32 at 10 m from the origin and in
/// fixed point (6.1e-5 mm).
pub const TRAVEL_FLOOR_MM: f64 = 2.0e-3;

/// Absolute widening of each stretch's joint travel (rad): above the
/// resolution of a joint angle in f32 and in fixed point (3e-8 rad).
pub const TRAVEL_FLOOR_RAD: f64 = 1.0e-6;

/// The robot's dimensions and limits in the planning type, for the bounds.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Reach<P> {
    /// Upper and lower arm of each arm (mm).
    upper: [P; 3],
    lower: [P; 3],
    joint_min: [P; 3],
    joint_max: [P; 3],
    min_serial: P,
    min_parallel: P,
    cos_cone: P,
    sin_cone: P,
    slack: P,
    floor_mm: P,
    floor_rad: P,
}

/// One sample as the bounds need it, in the planning type.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Pose<P> {
    pub(crate) joints: [P; 3],
    pub(crate) serial: [P; 3],
    pub(crate) parallel: P,
    /// Tilt cosines per arm, `[elbow, platform]`.
    pub(crate) tilt_cos: [[P; 2]; 3],
}

/// How the path travels over one stretch between two samples.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Travel<P> {
    /// A Cartesian path: the stretch's length (mm) and the largest
    /// curvature (1/mm) of any arc it touches.
    Cartesian {
        /// Arc length of the stretch (mm).
        length: P,
        /// Largest curvature on the stretch (1/mm), 0 on a line.
        curvature: P,
    },
    /// A joint-space path: each joint's travel over the stretch (rad).
    Joints([P; 3]),
}

/// Per arm: bounds on `|theta'|`, `|theta''|`, and the rod's `|u'|`,
/// `|u''|` along the stretch's parameter.
#[derive(Clone, Copy)]
struct Rates<P> {
    theta1: P,
    theta2: P,
    rod1: P,
    rod2: P,
}

fn convert3<B: Arith, A: Arith>(v: [A; 3]) -> Result<[B; 3], MotionError> {
    Ok([convert(v[0])?, convert(v[1])?, convert(v[2])?])
}

impl<P: Real> Pose<P> {
    /// The pose of a sample: its joints and its margins.
    pub(crate) fn new<S: Real>(joints: [S; 3], margins: &Margins<S>) -> Result<Self, MotionError> {
        let t = margins.passive_tilt_cos;
        Ok(Self {
            joints: convert3(joints)?,
            serial: convert3(margins.serial)?,
            parallel: convert(margins.parallel)?,
            tilt_cos: [
                [convert(t[0][0])?, convert(t[0][1])?],
                [convert(t[1][0])?, convert(t[1][1])?],
                [convert(t[2][0])?, convert(t[2][1])?],
            ],
        })
    }
}

/// The larger root of `x^2 - b x + c = 0`, when it is real and positive:
/// the largest `x` with `x + c / x <= b`.
fn larger_root<P: Real>(b: P, c: P) -> Option<P> {
    let disc = b * b - P::TWO * P::TWO * c;
    if !(disc >= P::ZERO && b > P::ZERO) {
        return None;
    }
    let root = (b + disc.sqrt()) * P::HALF;
    (root > P::ZERO && root.is_finite()).then_some(root)
}

impl<P: Real> Reach<P> {
    pub(crate) fn new<S: Real>(robot: &Robot<S>) -> Result<Self, MotionError> {
        let l = robot.limits();
        let cone: P = convert(l.passive_cone)?;
        let (sin_cone, cos_cone) = cone.sin_cos();
        Ok(Self {
            upper: convert3(robot.upper_arms())?,
            lower: convert3(robot.lower_arms())?,
            joint_min: convert3(l.joint_min)?,
            joint_max: convert3(l.joint_max)?,
            min_serial: convert(l.min_serial_margin)?,
            min_parallel: convert(l.min_parallel_margin)?,
            cos_cone,
            sin_cone,
            slack: convert(1.0 + TRAVEL_SLACK)?,
            floor_mm: convert(TRAVEL_FLOOR_MM)?,
            floor_rad: convert(TRAVEL_FLOOR_RAD)?,
        })
    }

    /// Checks that no point of the stretch of path from the sample `from`
    /// to the next sample `to`, travelling `travel`, violates a guard
    /// (see the module docs).
    ///
    /// # Errors
    /// The kinematic error of the guard that could be crossed, as
    /// [`MotionFault::BetweenCycles`] at cycle `cycle` (the sample the
    /// stretch leaves from).
    pub(crate) fn check(&self, from: &Pose<P>, to: &Pose<P>, travel: Travel<P>, cycle: u32) -> Result<(), MotionError> {
        let fail = |e: Error| MotionError { cycle, fault: MotionFault::BetweenCycles(e) };
        let (h, rates) = self.rates(from, travel).map_err(|e| match e {
            Bootstrap::Serial(arm) => fail(serial(arm)),
            Bootstrap::Parallel => fail(Error::NearParallelSingularity),
            Bootstrap::Motion(e) => e,
        })?;
        // Linear interpolation error factor h^2 / 8.
        let q = h * h * P::HALF * P::HALF * P::HALF;
        let mut det_h = P::ZERO;
        for (arm, r) in rates.iter().enumerate() {
            let id = arm_id(arm);
            let get = |v: &[P; 3]| v.get(arm).copied().unwrap_or(P::ZERO);
            let (lo, hi) = (get(&self.joint_min), get(&self.joint_max));
            let (t0, t1) = (get(&from.joints), get(&to.joints));
            let joint = r.theta2 * q;
            if !(t0.min_of(t1) - joint >= lo) {
                return Err(fail(Error::JointLimit { arm: id, bound: Bound::Min }));
            }
            if !(t0.max_of(t1) + joint <= hi) {
                return Err(fail(Error::JointLimit { arm: id, bound: Bound::Max }));
            }
            // m = u . e and the elbow tilt cosine u . n(theta) share one bound.
            let turning = r.rod2 + P::TWO * r.rod1 * r.theta1 + r.theta2 + r.theta1 * r.theta1;
            if !(get(&from.serial).min_of(get(&to.serial)) - turning * q >= self.min_serial) {
                return Err(fail(serial(arm)));
            }
            let tilt = |p: &Pose<P>| p.tilt_cos.get(arm).copied().unwrap_or([P::ZERO; 2]);
            let ([e0, p0], [e1, p1]) = (tilt(from), tilt(to));
            if !(e0.min_of(e1) - turning * q >= self.cos_cone) {
                return Err(fail(Error::PassiveLimit { arm: id, end: JointEnd::Elbow }));
            }
            if !(p0.min_of(p1) - r.rod2 * q >= self.cos_cone) {
                return Err(fail(Error::PassiveLimit { arm: id, end: JointEnd::Platform }));
            }
            det_h = det_h + r.rod2;
        }
        let [r0, r1, r2] = rates;
        det_h = det_h + P::TWO * (r0.rod1 * r1.rod1 + r0.rod1 * r2.rod1 + r1.rod1 * r2.rod1);
        if !(from.parallel.min_of(to.parallel) - det_h * q >= self.min_parallel) {
            return Err(fail(Error::NearParallelSingularity));
        }
        Ok(())
    }

    /// The stretch's parameter length and each arm's derivative bounds
    /// along it.
    fn rates(&self, from: &Pose<P>, travel: Travel<P>) -> Result<(P, [Rates<P>; 3]), Bootstrap> {
        let zero = Rates { theta1: P::ZERO, theta2: P::ZERO, rod1: P::ZERO, rod2: P::ZERO };
        let mut out = [zero; 3];
        match travel {
            Travel::Cartesian { length, curvature } => {
                // Unit speed along the arc length: |p'| = 1, |p''| = kappa.
                let h = length.abs() * self.slack + self.floor_mm;
                for (arm, slot) in out.iter_mut().enumerate() {
                    let (a, l, m) = self.arm(arm, from);
                    // mu + h (1 + a/l) / (a mu) + h/l <= m
                    let c = div(h * (P::ONE + div(a, l)?), a)?;
                    let mu = larger_root(m - div(h, l)?, c).ok_or(Bootstrap::Serial(arm))?;
                    let theta1 = div(P::ONE, a * mu)?;
                    let rod1 = div(P::ONE + a * theta1, l)?;
                    let margin1 = rod1 + theta1;
                    let theta2 = div(rod1 + curvature + a * margin1 * theta1, a * mu)?;
                    let rod2 = div(curvature + a * theta2 + a * theta1 * theta1, l)?;
                    *slot = Rates { theta1, theta2, rod1, rod2 };
                }
                Ok((h, out))
            }
            Travel::Joints(q) => {
                // Parameter: the fraction of the stretch; theta' = travel.
                let mut theta_sum = P::ZERO;
                let mut l_min = self.lower[0];
                for (arm, (slot, &t)) in out.iter_mut().zip(q.iter()).enumerate() {
                    slot.theta1 = t.abs() * self.slack + self.floor_rad;
                    let (a, l, _) = self.arm(arm, from);
                    theta_sum = theta_sum + a * slot.theta1;
                    l_min = l_min.min_of(l);
                }
                // det + 3 k / det + k <= det(k), k = theta_sum / l_min.
                let k = div(theta_sum, l_min)?;
                let three = P::TWO + P::ONE;
                let det = larger_root(from.parallel - k, three * k).ok_or(Bootstrap::Parallel)?;
                let p1 = div(theta_sum, det)?;
                let mut p2 = P::ZERO;
                for (arm, slot) in out.iter_mut().enumerate() {
                    let (a, l, _) = self.arm(arm, from);
                    slot.rod1 = div(p1 + a * slot.theta1, l)?;
                    p2 = p2 + a * (slot.rod1 + slot.theta1) * slot.theta1 + slot.rod1 * p1;
                }
                let p2 = div(p2, det)?;
                for (arm, slot) in out.iter_mut().enumerate() {
                    let (a, l, _) = self.arm(arm, from);
                    slot.rod2 = div(p2 + a * slot.theta1 * slot.theta1, l)?;
                }
                Ok((P::ONE, out))
            }
        }
    }

    /// Upper arm, lower arm (mm) and serial margin of `arm` at `pose`.
    fn arm(&self, arm: usize, pose: &Pose<P>) -> (P, P, P) {
        let pick = |v: &[P; 3]| v.get(arm).copied().unwrap_or(P::ONE);
        (pick(&self.upper), pick(&self.lower), pose.serial.get(arm).copied().unwrap_or(P::ZERO))
    }
}

/// Why the derivative bounds could not be closed.
enum Bootstrap {
    /// The stretch is too long for this arm's serial margin.
    Serial(usize),
    /// The stretch is too long for the parallel margin.
    Parallel,
    /// A planning-type operation failed.
    Motion(MotionError),
}

impl From<MotionError> for Bootstrap {
    fn from(e: MotionError) -> Self {
        Bootstrap::Motion(e)
    }
}

#[allow(clippy::cast_possible_truncation)] // arm < 3
const fn arm_id(arm: usize) -> u8 {
    arm as u8
}

const fn serial(arm: usize) -> Error {
    Error::NearSerialSingularity { arm: arm_id(arm) }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn larger_root_is_the_largest_x_with_x_plus_c_over_x_at_most_b() {
        // x^2 - 5x + 6 = (x - 2)(x - 3).
        assert_eq!(larger_root(5.0_f64, 6.0), Some(3.0));
        assert_eq!(larger_root(1.0_f64, 1.0), None);
        assert_eq!(larger_root(-1.0_f64, 0.0), None);
    }
}
