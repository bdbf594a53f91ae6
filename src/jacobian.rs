//! The Jacobian of a rotary delta and the maps it gives: joint rates from
//! a platform velocity, platform velocity from joint rates, and joint
//! torques from a force on the platform.
//!
//! Differentiating the closure `|P_i - E_i|^2 = l^2` in time gives, for
//! each arm,
//!
//! ```text
//!   s_i . v = (s_i . dE_i/dt_i) w_i,     s_i = P_i - E_i (the lower arm)
//! ```
//!
//! or `J_p v = J_t w` with the rows of `J_p` the lower-arm vectors and
//! `J_t = diag(b_i)`, `b_i = s_i . dE_i/dt_i`. So `w = J_t^-1 J_p v` and
//! `v = J_p^-1 J_t w = J w`. Virtual work (`tau . w = F . v`) gives the
//! static map `tau = J^T F`.
//!
//! The two ways the maps fail are the singularities of C. Gosselin and
//! J. Angeles, "Singularity Analysis of Closed-Loop Kinematic Chains",
//! IEEE Trans. Robotics and Automation 6(3), 1990: a serial (Type I)
//! singularity when some `b_i = 0` (the lower arm square to the elbow's
//! direction of travel: an arm stretched or folded, a joint that cannot
//! move the platform) and a parallel (Type II) one when `det J_p = 0` (the
//! three lower arms coplanar: the platform can move with the joints held).
//!
//! Margins, each 1 at best and 0 at the singularity:
//!
//! * serial margin of arm `i`: `|b_i| / (|s_i| |dE_i/dt_i|) = |b_i| / (l a)`,
//!   the cosine of the angle between the lower arm and the elbow's
//!   direction of travel;
//! * parallel margin: `|det J_p| / l^3`, the determinant of the three unit
//!   lower-arm vectors, which is 1 when they are mutually orthogonal.
//!
//! Internally the lower-arm vectors are in nominal lower-arm units (each of
//! length `l_i / l`, its arm's lower arm over the nominal one: 1 on the
//! nominal machine, see [`crate::per_arm`]); the relations above hold for
//! rods of any length, and the maps convert to millimetres.

use crate::error::{Error, Input, check_finite};
use crate::forward::{cross, dot};
use crate::scalar::{Arith, Real};

/// The Jacobian at one pose, with the velocity and force maps.
///
/// Units: platform velocity mm/s, joint rates rad/s, force N, torque N*mm,
/// all of the scalar's API type [`Arith::Wide`] (the scalar itself for
/// floats). The pose-dependent parts (unit rods and rates) stay
/// in the internal type.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Jacobian<S: Arith> {
    /// Lower-arm vectors (elbow to platform), base frame, nominal
    /// lower-arm units.
    rods: [[S; 3]; 3],
    /// `b_i` in lower-arm units per radian.
    rates: [S; 3],
    /// Lower-arm length, mm. (`det` of the rods is not kept: the guards
    /// use it once, the maps that divide by it recompute it with the cross
    /// products they need anyway.)
    scale: S::Wide,
}

/// `sum_j m_j w_j`: internal coefficients times API quantities.
fn dot_wide<S: Arith>(m: [S; 3], w: [S::Wide; 3]) -> S::Wide {
    let [m0, m1, m2] = m;
    let [w0, w1, w2] = w;
    m0.mul_wide(w0) + m1.mul_wide(w1) + m2.mul_wide(w2)
}

impl<S: Real> Jacobian<S> {
    pub(crate) const fn new(rods: [[S; 3]; 3], rates: [S; 3], scale: S::Wide) -> Self {
        Self { rods, rates, scale }
    }

    /// `|det|` of the three lower-arm vectors: the parallel margin once
    /// divided by the product of their lengths.
    pub(crate) fn rods_abs_det(&self) -> S {
        let [r0, r1, r2] = self.rods;
        dot(r0, cross(r1, r2)).abs()
    }

    /// Joint rates (rad/s) that move the platform at `velocity` (mm/s):
    /// `w_i = (s_i . v) / b_i`.
    ///
    /// # Errors
    /// [`Error::NonFinite`] for a non-finite velocity;
    /// [`Error::OutOfRange`] when an intermediate value does not fit the
    /// number type (fixed point only); [`Error::NearSerialSingularity`]
    /// naming the arm whose `b_i` is too small to divide by.
    #[cfg_attr(feature = "no-panic", no_panic::no_panic)]
    pub fn joint_rates(&self, velocity: [S::Wide; 3]) -> Result<[S::Wide; 3], Error> {
        check_finite(velocity, Input::Velocity)?;
        let mut out = [S::Wide::ZERO; 3];
        for (arm, (o, (rod, &b))) in out.iter_mut().zip(self.rods.iter().zip(self.rates.iter())).enumerate() {
            #[allow(clippy::cast_possible_truncation)] // arm < 3
            let err = Error::NearSerialSingularity { arm: arm as u8 };
            let along = dot_wide(*rod, velocity);
            if !along.is_finite() {
                return Err(Error::OutOfRange);
            }
            *o = along.checked_div(b.mul_wide(self.scale)).ok_or(err)?;
        }
        Ok(out)
    }

    /// Platform velocity (mm/s) produced by joint rates `rates` (rad/s):
    /// `v = J_p^-1 diag(b) w`.
    ///
    /// # Errors
    /// [`Error::NonFinite`] for non-finite rates; [`Error::OutOfRange`]
    /// when an intermediate value does not fit the number type (fixed
    /// point only); [`Error::NearParallelSingularity`] when `det J_p` is
    /// too small.
    #[cfg_attr(feature = "no-panic", no_panic::no_panic)]
    pub fn cartesian_velocity(&self, rates: [S::Wide; 3]) -> Result<[S::Wide; 3], Error> {
        check_finite(rates, Input::JointRates)?;
        let y = [
            self.rates[0].mul_wide(rates[0]) * self.scale,
            self.rates[1].mul_wide(rates[1]) * self.scale,
            self.rates[2].mul_wide(rates[2]) * self.scale,
        ];
        if !S::Wide::all_finite(y) {
            return Err(Error::OutOfRange);
        }
        self.solve_rods(y)
    }

    /// Joint torques (N*mm) equivalent to a force `force` (N) applied by
    /// the platform: `tau = J^T F`. These are the torques the actuators
    /// must supply for the platform to push on its surroundings with
    /// `force` (or, with the sign flipped, to hold an external load).
    ///
    /// # Errors
    /// [`Error::NonFinite`] for a non-finite force;
    /// [`Error::NearParallelSingularity`] when `det J_p` is too small;
    /// [`Error::OutOfRange`] when a torque does not fit the number type
    /// (beyond +-131 N*m for fixed point; for floats only a finite force
    /// far beyond any machine's, about 1e36 N in f32, gets here or to the
    /// previous error).
    #[cfg_attr(feature = "no-panic", no_panic::no_panic)]
    pub fn joint_torques(&self, force: [S::Wide; 3]) -> Result<[S::Wide; 3], Error> {
        check_finite(force, Input::Force)?;
        let z = self.solve_rods_transposed(force)?;
        let out = [
            self.rates[0].mul_wide(z[0]) * self.scale,
            self.rates[1].mul_wide(z[1]) * self.scale,
            self.rates[2].mul_wide(z[2]) * self.scale,
        ];
        if S::Wide::all_finite(out) { Ok(out) } else { Err(Error::OutOfRange) }
    }

    /// The full Jacobian `J` (mm/rad), `v = J w`, as rows.
    ///
    /// # Errors
    /// [`Error::NearParallelSingularity`] when `det J_p` is too small;
    /// [`Error::OutOfRange`] when an entry does not fit the number type.
    #[cfg_attr(feature = "no-panic", no_panic::no_panic)]
    pub fn matrix(&self) -> Result<[[S::Wide; 3]; 3], Error> {
        let (o, l) = (S::Wide::ZERO, S::Wide::ONE);
        let c0 = self.cartesian_velocity([l, o, o])?;
        let c1 = self.cartesian_velocity([o, l, o])?;
        let c2 = self.cartesian_velocity([o, o, l])?;
        Ok([[c0[0], c1[0], c2[0]], [c0[1], c1[1], c2[1]], [c0[2], c1[2], c2[2]]])
    }

    /// Solves `J_p x = y` by Cramer's rule: `x = sum y_i (s_j x s_k) / det`.
    fn solve_rods(&self, y: [S::Wide; 3]) -> Result<[S::Wide; 3], Error> {
        let [r0, r1, r2] = self.rods;
        let (a, b, c) = (cross(r1, r2), cross(r2, r0), cross(r0, r1));
        let inv = S::ONE.checked_div(dot(r0, a)).ok_or(Error::NearParallelSingularity)?;
        let out = [
            inv.mul_wide(dot_wide([a[0], b[0], c[0]], y)),
            inv.mul_wide(dot_wide([a[1], b[1], c[1]], y)),
            inv.mul_wide(dot_wide([a[2], b[2], c[2]], y)),
        ];
        if S::Wide::all_finite(out) { Ok(out) } else { Err(Error::NearParallelSingularity) }
    }

    /// Solves `J_p^T z = f`: `z_i = f . (s_j x s_k) / det`.
    fn solve_rods_transposed(&self, f: [S::Wide; 3]) -> Result<[S::Wide; 3], Error> {
        let [r0, r1, r2] = self.rods;
        let a = cross(r1, r2);
        let inv = S::ONE.checked_div(dot(r0, a)).ok_or(Error::NearParallelSingularity)?;
        let out = [
            inv.mul_wide(dot_wide(a, f)),
            inv.mul_wide(dot_wide(cross(r2, r0), f)),
            inv.mul_wide(dot_wide(cross(r0, r1), f)),
        ];
        if S::Wide::all_finite(out) { Ok(out) } else { Err(Error::NearParallelSingularity) }
    }
}

#[cfg(test)]
mod tests {
    use crate::{Error, Geometry, Limits, Robot};

    #[test]
    fn a_torque_that_would_overflow_is_an_error_not_infinity() {
        let g: Geometry<f32> =
            Geometry { base_radius: 160.0, platform_radius: 40.0, upper_arm: 280.0, lower_arm: 720.0 };
        let robot = Robot::new(
            g,
            Limits {
                joint_min: [-0.6; 3],
                joint_max: [1.5; 3],
                passive_cone: 0.7,
                min_serial_margin: 0.1,
                min_parallel_margin: 0.1,
            },
        )
        .unwrap();
        let jac = robot.inverse([0.0, 0.0, -700.0]).unwrap().jacobian;
        // Finite in, finite out for an ordinary force ...
        assert!(jac.joint_torques([0.0, 0.0, -50.0]).unwrap().iter().all(|t| t.is_finite()));
        // ... and an error, not an infinite torque, for a finite but absurd one.
        assert_eq!(jac.joint_torques([1.0e37, 0.0, 0.0]), Err(Error::OutOfRange));
    }
}
