//! The firmware-facing entry points: guarded inverse and forward
//! kinematics, and their unguarded twins for diagnostics.
//!
//! Every entry point checks its input for non-finite numbers first, runs a
//! fixed sequence of operations (no loop depends on the input), and
//! returns either a [`Solution`] or an [`Error`] naming what is wrong.

use crate::error::{Bound, Error, Input, check_finite};
use crate::forward;
use crate::guard;
use crate::inverse::{self, ArmState};
use crate::robot::Robot;
use crate::scalar::Real;
use crate::solution::Solution;

impl<S: Real> Robot<S> {
    /// Guarded inverse kinematics: joint angles (rad) for a platform
    /// position `target` (mm, base frame), elbow-out branch, with margins
    /// and Jacobian, after checking every limit.
    ///
    /// # Errors
    /// [`Error::NonFinite`], [`Error::Unreachable`] (naming the arm), or
    /// the first violated limit: [`Error::JointLimit`],
    /// [`Error::NearSerialSingularity`] (also for an arm on the elbow-in
    /// branch), [`Error::NearParallelSingularity`], [`Error::PassiveLimit`].
    ///
    /// # Panics
    /// Never.
    #[cfg_attr(feature = "no-panic", no_panic::no_panic)]
    pub fn inverse(&self, target: [S::Wide; 3]) -> Result<Solution<S>, Error> {
        self.inverse_guarded(target)
    }

    /// Guarded inverse kinematics and the joint rates (rad/s) that move
    /// the platform at `velocity` (mm/s): [`Robot::inverse`] followed by
    /// [`crate::Jacobian::joint_rates`], with the same results and errors,
    /// but without handing the whole [`Solution`] back through memory
    /// (the motion layer's per-cycle step).
    #[inline]
    pub(crate) fn inverse_with_rates(
        &self,
        target: [S::Wide; 3],
        velocity: [S::Wide; 3],
    ) -> Result<([S; 3], [S::Wide; 3]), Error> {
        let solution = self.inverse_guarded(target)?;
        Ok((solution.joints, solution.jacobian.joint_rates(velocity)?))
    }

    /// The body of [`Robot::inverse`], inlined into both entry points.
    #[inline(always)]
    fn inverse_guarded(&self, target: [S::Wide; 3]) -> Result<Solution<S>, Error> {
        let solution = self.inverse_solve(target)?;
        guard::check_joints(self, solution.joints)?;
        guard::check_margins(self, &solution)?;
        Ok(solution)
    }

    /// Guarded forward kinematics: platform position (mm) for joint angles
    /// `joints` (rad), lower branch, with margins and Jacobian, after
    /// checking every limit. The joint ranges are checked before solving.
    ///
    /// # Errors
    /// [`Error::NonFinite`], [`Error::JointLimit`], [`Error::NoAssembly`],
    /// or the first violated limit as for [`Robot::inverse`].
    ///
    /// # Panics
    /// Never.
    #[cfg_attr(feature = "no-panic", no_panic::no_panic)]
    pub fn forward(&self, joints: [S; 3]) -> Result<Solution<S>, Error> {
        check_finite(joints, Input::JointAngles)?;
        guard::check_joints(self, joints)?;
        // The joint ranges lie inside (-pi, pi) (see `Limits::validate`),
        // so the unguarded twin's one-turn check cannot fail here.
        let solution = self.forward_solve(joints)?;
        guard::check_margins(self, &solution)?;
        Ok(solution)
    }

    /// Inverse kinematics **without limit checks**, for diagnostics,
    /// workspace maps and tests. Margins and tilts are still computed, so
    /// a caller can see how far outside its limits a pose lies.
    ///
    /// # Errors
    /// [`Error::NonFinite`] or [`Error::Unreachable`] only.
    ///
    /// # Panics
    /// Never.
    #[cfg_attr(feature = "no-panic", no_panic::no_panic)]
    pub fn inverse_unguarded(&self, target: [S::Wide; 3]) -> Result<Solution<S>, Error> {
        self.inverse_solve(target)
    }

    /// The body of [`Robot::inverse_unguarded`], inlined into every
    /// inverse entry point.
    #[inline(always)]
    fn inverse_solve(&self, target: [S::Wide; 3]) -> Result<Solution<S>, Error> {
        check_finite(target, Input::Position)?;
        // Out of range (fixed point) gives not-a-number, which the
        // solver reports as unreachable: such a target is beyond reach.
        let p = target.map(|v| S::mul_recip(v, self.inv_scale));
        let (arms, plane_y) = inverse::solve_arms(self, p)?;
        Ok(Solution::assemble(self, target, arms, inverse::base_rods(self, &arms, plane_y)))
    }

    /// Forward kinematics **without limit checks**, for diagnostics,
    /// workspace maps and tests. Any angle within one full turn either way
    /// (`|theta| <= 2 pi`) is accepted.
    ///
    /// # Errors
    /// [`Error::NonFinite`], [`Error::JointLimit`] for an angle beyond one
    /// full turn, [`Error::NoAssembly`], or
    /// [`Error::NearParallelSingularity`] when the three sphere centres are
    /// collinear.
    ///
    /// # Panics
    /// Never.
    #[cfg_attr(feature = "no-panic", no_panic::no_panic)]
    pub fn forward_unguarded(&self, joints: [S; 3]) -> Result<Solution<S>, Error> {
        check_finite(joints, Input::JointAngles)?;
        let turn = S::TWO * S::PI;
        for (arm, &t) in joints.iter().enumerate() {
            #[allow(clippy::cast_possible_truncation)] // arm < 3
            let arm = arm as u8;
            if t > turn {
                return Err(Error::JointLimit { arm, bound: Bound::Max });
            }
            if t < -turn {
                return Err(Error::JointLimit { arm, bound: Bound::Min });
            }
        }
        self.forward_solve(joints)
    }

    /// Forward kinematics for finite joint angles within one turn.
    #[inline]
    fn forward_solve(&self, joints: [S; 3]) -> Result<Solution<S>, Error> {
        // Finite and within one turn (the callers check), plus a joint
        // offset of at most 0.2 rad (see `ArmCorrection::validate`), so
        // inside the bounded sine and cosine's range.
        let [t0, t1, t2] = joints;
        let [k0, k1, k2] = &self.arms;
        let trig = [
            (t0 + k0.joint_offset).sin_cos_bounded(),
            (t1 + k1.joint_offset).sin_cos_bounded(),
            (t2 + k2.joint_offset).sin_cos_bounded(),
        ];
        let (p, rods) = forward::solve(self, trig)?;
        let [g0, g1, g2] = trig;
        let [[x0, y0, z0], [x1, y1, z1], [x2, y2, z2]] = rods;
        // Each rod's radial component in its arm's plane; z is common to
        // all frames.
        let arms = [
            ArmState::new(t0, g0, [k0.cos_phi * x0 + k0.sin_phi * y0, z0]),
            ArmState::new(t1, g1, [k1.cos_phi * x1 + k1.sin_phi * y1, z1]),
            ArmState::new(t2, g2, [k2.cos_phi * x2 + k2.sin_phi * y2, z2]),
        ];
        Ok(Solution::assemble(self, p.map(|v| v.mul_wide(self.scale)), arms, rods))
    }
}

#[cfg(test)]
mod tests {
    use crate::{Arith, Error, Geometry, Limits, Robot};

    /// A small test machine (invented numbers).
    fn robot<S: crate::Real>() -> Robot<S> {
        let f = |v: f64| S::from_f64(v).unwrap();
        let w = |v: f64| S::Wide::from_f64(v).unwrap();
        let g = Geometry { base_radius: w(180.0), platform_radius: w(45.0), upper_arm: w(300.0), lower_arm: w(750.0) };
        let l = Limits {
            joint_min: [f(-0.8); 3],
            joint_max: [f(1.6); 3],
            passive_cone: f(0.7),
            min_serial_margin: f(0.02),
            min_parallel_margin: f(0.02),
        };
        Robot::new(g, l).unwrap()
    }

    /// Round-trip tolerances (mm): f64 is limited by rounding of order
    /// 1e-13 relative; f32 by its 24-bit mantissa on lengths near 1000 mm.
    const ROUND_TRIP_F64_MM: f64 = 1e-9;
    const ROUND_TRIP_F32_MM: f32 = 2e-3;

    fn grid() -> impl Iterator<Item = [f64; 3]> {
        (0..7).flat_map(|i| {
            (0..7).flat_map(move |j| {
                (0..5).map(move |k| {
                    [-300.0 + 100.0 * f64::from(i), -300.0 + 100.0 * f64::from(j), -700.0 - 80.0 * f64::from(k)]
                })
            })
        })
    }

    #[test]
    fn forward_of_inverse_returns_the_target() {
        let (r64, r32) = (robot::<f64>(), robot::<f32>());
        let mut solved = 0;
        for p in grid() {
            let Ok(sol) = r64.inverse(p) else { continue };
            solved += 1;
            let back = r64.forward(sol.joints).unwrap();
            for (a, b) in back.position.iter().zip(p.iter()) {
                assert!((a - b).abs() < ROUND_TRIP_F64_MM, "{p:?} -> {:?}", back.position);
            }
            let p32 = p.map(|v| v as f32);
            let sol32 = r32.inverse_unguarded(p32).unwrap();
            let back32 = r32.forward_unguarded(sol32.joints).unwrap();
            for (a, b) in back32.position.iter().zip(p32.iter()) {
                assert!((a - b).abs() < ROUND_TRIP_F32_MM, "{p32:?} -> {:?}", back32.position);
            }
        }
        assert!(solved > 100, "only {solved} grid points inside the guards");
    }

    #[test]
    fn closure_holds_and_margins_are_normalised() {
        let r = robot::<f64>();
        for p in grid() {
            let Ok(sol) = r.inverse_unguarded(p) else { continue };
            let m = sol.margins;
            assert!(m.parallel >= 0.0 && m.parallel <= 1.0 + 1e-12);
            for s in m.serial {
                assert!((0.0..=1.0 + 1e-12).contains(&s));
            }
        }
    }

    #[test]
    fn unreachable_names_an_arm_and_far_angles_are_refused() {
        let r = robot::<f64>();
        assert!(matches!(r.inverse([0.0, 0.0, -5000.0]), Err(Error::Unreachable { .. })));
        assert!(matches!(r.forward_unguarded([7.0, 0.0, 0.0]), Err(Error::JointLimit { arm: 0, .. })));
        assert!(matches!(r.forward([0.0, 0.0, f64::NAN]), Err(Error::NonFinite { .. })));
    }

    #[test]
    fn elbow_in_poses_have_negative_serial_margin_and_are_refused() {
        // Wide joint range and cones, so that only the branch can refuse.
        let r = Robot::new(
            *robot::<f64>().geometry(),
            Limits {
                joint_min: [-3.0; 3],
                joint_max: [3.0; 3],
                passive_cone: 1.55,
                min_serial_margin: 0.02,
                min_parallel_margin: 0.0,
            },
        )
        .unwrap();
        let target = [40.0, -30.0, -820.0];
        let sol = r.inverse(target).unwrap();
        assert!(sol.margins.serial.iter().all(|&m| m > 0.0));
        // Arm 0's other root at the same platform position: reflect its
        // elbow about the line from the actuator axis to the platform
        // joint (in the arm plane, x radial, z up, lower-arm units).
        let scale = 750.0;
        let (d, a) = ((180.0 - 45.0) / scale, 300.0 / scale);
        let (x, z) = (target[0] / scale - d, target[2] / scale);
        let t = sol.joints[0];
        let (ex, ez) = (a * t.cos(), -a * t.sin());
        let n2 = x * x + z * z;
        let k = 2.0 * (ex * x + ez * z) / n2;
        let (rx, rz) = (k * x - ex, k * z - ez);
        let other = (-rz).atan2(rx);
        assert!(other.cos() < t.cos(), "the reflected root is the elbow-in one");
        let joints = [other, sol.joints[1], sol.joints[2]];
        let fk = r.forward_unguarded(joints).unwrap();
        for (p, q) in fk.position.iter().zip(target.iter()) {
            assert!((p - q).abs() < 1e-9, "same platform position");
        }
        assert!(fk.margins.serial[0] < 0.0 && fk.margins.serial[1] > 0.0);
        // Inside the joint range, so only the branch check can refuse it.
        assert!(r.limits().joint_min[0] < other && other < r.limits().joint_max[0], "{other}");
        assert_eq!(r.forward(joints), Err(Error::NearSerialSingularity { arm: 0 }));
    }
}
