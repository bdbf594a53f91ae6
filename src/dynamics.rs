//! Inverse dynamics of a rotary delta: the joint torques (N*mm) that move
//! the robot with given joint rates and accelerations, for feed-forward to
//! the drives.
//!
//! # Model and source
//! The common simplified rigid-body model, by virtual work, after
//! A. Codourey, "Dynamic modeling of parallel robots for computed-torque
//! control implementation", Int. J. Robotics Research 17(12), 1998 (from
//! memory):
//!
//! * each upper arm is a rigid body turning about its actuator axis, with
//!   inertia `I_u` about that axis and its centre of mass at `r_c` from the
//!   axis along the arm. `I_u` is whatever turns with the arm that the
//!   caller wants in the torque: the arm alone gives the torque at the
//!   gearbox output; adding the drive's reflected inertia
//!   `n^2 (J_rotor + J_gearbox)` gives feed-forward that also accelerates
//!   the motor (deltakin's robot file holds the arm alone, its drive file
//!   the motor and gearbox);
//! * each lower-arm pair (both rods, mass `m_l`) is split into a point mass
//!   `share * m_l` at the elbow and `(1 - share) * m_l` at the platform;
//!   the rods' own rotational inertia is neglected;
//! * the platform, the payload and the platform's share of the three lower
//!   arms are one point mass `m_p`;
//! * gravity `g = 9.80665 m/s^2` along `-z` (z points up, see
//!   `docs/conventions.md`).
//!
//! Virtual work (`tau . w = F . v` through the Jacobian, `tau = J^T F`)
//! gives, per arm `i`, with `theta_i` the true joint angle (reading plus
//! offset; positive elbow down, so the elbow height is `-a_i sin theta_i`):
//!
//! ```text
//!   tau_i = (I_u,i + m_e,i a_i^2) theta''_i                  arm + elbow share
//!         - (m_u,i r_c,i + m_e,i a_i) g cos theta_i           their weight
//!         + [J^T m_p (a_p - g_vec)]_i                         platform point mass
//!         + c_v,i theta'_i + c_c,i sat(theta'_i / w_c)        friction
//! ```
//!
//! with `m_e,i = share_i m_l,i`, `g_vec = (0, 0, -g)`, `a_p` the platform
//! acceleration and `sat(x) = max(-1, min(1, x))`. The weight term is
//! `dV/dtheta_i` of the potential `V = -(m_u r_c + m_e a) g sin theta`: the
//! motor must pull up (negative torque) to hold an arm horizontal.
//!
//! **Coulomb friction at rest.** `sign(w)` is undefined at `w = 0`; the
//! model uses the documented smooth rule `c_c sat(w / w_c)`: zero at rest,
//! linear for `|w| < w_c`, the full `+-c_c` beyond. `w_c`
//! ([`DynamicsParams::coulomb_rate`]) is a model parameter (the demo uses
//! 0.01 rad/s); it is not a clamp of any input.
//!
//! # Units
//! Inputs: joint readings rad, rates rad/s, accelerations rad/s^2, platform
//! acceleration mm/s^2. Parameters in kg, mm, kg*mm^2. Output N*mm. Masses
//! in kg times lengths in mm and accelerations in mm/s^2 give 1e-3 N*mm; the
//! constructor folds that factor into the stored coefficients.
//!
//! # Accuracy
//! Against the model's own equations evaluated in `f64`: `f32` within a few
//! ulp of the largest term (relative 1e-6 of the peak torque). The model
//! itself neglects the rods' rotational inertia; its error against a full
//! rigid-body model is a property of the machine, measured by the host
//! harness, not a bound of this routine.
//!
//! # Number types
//! Written once over [`Real`]. `f32` and `f64` are the supported types.
//! Fixed point compiles and never panics, but the N*mm coefficients
//! (platform mass about 1e-3 N*s^2/mm) fall below the resolution of
//! [`crate::FixedWide`] (6.1e-5), so its torques are not validated and may
//! come back [`Error::OutOfRange`]; use a float type for dynamics.
//!
//! Bounded time: a fixed sequence of about 60 multiplications and adds,
//! one `sin_cos` per arm and the Jacobian's transposed solve.

use core::fmt;

use crate::error::{Error, Input, check_finite};
use crate::jacobian::Jacobian;
use crate::robot::Robot;
use crate::scalar::{Arith, Real};

/// Standard gravity, mm/s^2 (9.80665 m/s^2, the conventional value).
pub const GRAVITY_MM_S2: f64 = 9806.65;

/// Which dynamics parameter a [`Error::InvalidDynamics`] names.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum DynamicsParameter {
    /// Upper arm mass negative or not finite.
    UpperArmMass,
    /// Upper arm centre of mass distance negative or not finite.
    UpperArmCom,
    /// Upper arm inertia not positive or not finite.
    UpperArmInertia,
    /// Lower arm mass negative or not finite.
    LowerArmMass,
    /// Lower arm elbow share outside `[0, 1]`.
    LowerArmElbowShare,
    /// Platform mass negative or not finite.
    PlatformMass,
    /// Payload negative or not finite.
    Payload,
    /// Viscous friction negative or not finite.
    Viscous,
    /// Coulomb friction negative or not finite.
    Coulomb,
    /// Coulomb smoothing rate not positive or not finite.
    CoulombRate,
    /// A derived coefficient does not fit the number type.
    Unrepresentable,
}

impl fmt::Display for DynamicsParameter {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            DynamicsParameter::UpperArmMass => "upper arm mass must be finite and not negative",
            DynamicsParameter::UpperArmCom => "upper arm centre of mass distance must be finite and not negative",
            DynamicsParameter::UpperArmInertia => "upper arm inertia must be finite and positive",
            DynamicsParameter::LowerArmMass => "lower arm mass must be finite and not negative",
            DynamicsParameter::LowerArmElbowShare => "lower arm elbow share must lie in [0, 1]",
            DynamicsParameter::PlatformMass => "platform mass must be finite and not negative",
            DynamicsParameter::Payload => "payload must be finite and not negative",
            DynamicsParameter::Viscous => "viscous friction must be finite and not negative",
            DynamicsParameter::Coulomb => "Coulomb friction must be finite and not negative",
            DynamicsParameter::CoulombRate => "Coulomb smoothing rate must be finite and positive",
            DynamicsParameter::Unrepresentable => "a derived coefficient does not fit the number type",
        })
    }
}

/// The physical parameters, as a user gives them (`f64`, kg / mm / N*mm).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "serde", serde(deny_unknown_fields))]
pub struct DynamicsParams {
    /// Mass of each upper arm, kg.
    pub upper_arm_mass: [f64; 3],
    /// Actuator axis to each upper arm's centre of mass, mm.
    pub upper_arm_com: [f64; 3],
    /// Each upper arm's inertia about its actuator axis, kg*mm^2 (the arm
    /// alone, or with the drive's reflected inertia added: see the module
    /// docs).
    pub upper_arm_inertia: [f64; 3],
    /// Mass of each lower-arm pair (both rods), kg.
    pub lower_arm_mass: [f64; 3],
    /// Share of each lower arm's mass lumped at the elbow, 0 to 1.
    pub lower_arm_elbow_share: [f64; 3],
    /// Platform mass (tool included), kg.
    pub platform_mass: f64,
    /// Payload, kg.
    pub payload: f64,
    /// Viscous friction per joint, N*mm*s/rad.
    pub viscous: [f64; 3],
    /// Coulomb friction per joint, N*mm.
    pub coulomb: [f64; 3],
    /// Joint rate at which Coulomb friction reaches its full value, rad/s.
    pub coulomb_rate: f64,
}

/// Validated coefficients of the simplified model, in the scalar's API
/// type, ready for [`Dynamics::torques`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Dynamics<S: Arith> {
    /// `(I_u + m_e a^2) * 1e-3`, N*mm per rad/s^2.
    inertia: [S::Wide; 3],
    /// `(m_u r_c + m_e a) g * 1e-3`, N*mm.
    weight: [S::Wide; 3],
    /// `m_p * 1e-3`, N per mm/s^2.
    platform: S::Wide,
    /// `m_p g * 1e-3`, N.
    platform_weight: S::Wide,
    viscous: [S::Wide; 3],
    coulomb: [S::Wide; 3],
    /// `1 / w_c`, s/rad.
    coulomb_inv_rate: S::Wide,
    /// Joint zero offsets of the robot, rad.
    offsets: [S; 3],
}

fn nonneg(v: f64) -> bool {
    v.is_finite() && v >= 0.0
}

fn per_arm(values: [f64; 3], ok: fn(f64) -> bool, parameter: DynamicsParameter) -> Result<(), Error> {
    for (arm, v) in (0u8..).zip(values) {
        if !ok(v) {
            return Err(Error::InvalidDynamics { arm: Some(arm), parameter });
        }
    }
    Ok(())
}

fn wide<S: Arith>(v: f64) -> Result<S::Wide, Error> {
    S::Wide::from_f64(v).ok_or(Error::InvalidDynamics { arm: None, parameter: DynamicsParameter::Unrepresentable })
}

impl DynamicsParams {
    /// Checks every parameter.
    ///
    /// # Errors
    /// [`Error::InvalidDynamics`] naming the first bad parameter (and its
    /// arm, for per-arm ones).
    pub fn validate(&self) -> Result<(), Error> {
        use DynamicsParameter as P;
        per_arm(self.upper_arm_mass, nonneg, P::UpperArmMass)?;
        per_arm(self.upper_arm_com, nonneg, P::UpperArmCom)?;
        per_arm(self.upper_arm_inertia, |v| v.is_finite() && v > 0.0, P::UpperArmInertia)?;
        per_arm(self.lower_arm_mass, nonneg, P::LowerArmMass)?;
        per_arm(self.lower_arm_elbow_share, |v| (0.0..=1.0).contains(&v), P::LowerArmElbowShare)?;
        if !nonneg(self.platform_mass) {
            return Err(Error::InvalidDynamics { arm: None, parameter: P::PlatformMass });
        }
        if !nonneg(self.payload) {
            return Err(Error::InvalidDynamics { arm: None, parameter: P::Payload });
        }
        per_arm(self.viscous, nonneg, P::Viscous)?;
        per_arm(self.coulomb, nonneg, P::Coulomb)?;
        if !(self.coulomb_rate.is_finite() && self.coulomb_rate > 0.0) {
            return Err(Error::InvalidDynamics { arm: None, parameter: P::CoulombRate });
        }
        Ok(())
    }

    /// The lumped platform mass `m_p`: platform, payload and each lower
    /// arm's platform share, kg.
    #[must_use]
    pub fn platform_point_mass(&self) -> f64 {
        let rods: f64 = self.lower_arm_mass.iter().zip(self.lower_arm_elbow_share).map(|(m, s)| m * (1.0 - s)).sum();
        self.platform_mass + self.payload + rods
    }
}

impl<S: Real> Dynamics<S> {
    /// Validates `params` and folds them with `robot`'s upper arm lengths
    /// and joint offsets into the model's coefficients. Runs once, at
    /// start-up (it uses `f64`).
    ///
    /// # Errors
    /// [`Error::InvalidDynamics`] naming the bad parameter.
    pub fn new(params: &DynamicsParams, robot: &Robot<S>) -> Result<Self, Error> {
        params.validate()?;
        let arms = robot.upper_arms().map(Arith::to_f64);
        let mut inertia = [S::Wide::ZERO; 3];
        let mut weight = [S::Wide::ZERO; 3];
        let mut viscous = [S::Wide::ZERO; 3];
        let mut coulomb = [S::Wide::ZERO; 3];
        for i in 0..3 {
            let (a, m_e) = (
                arms.get(i).copied().unwrap_or(0.0),
                params.lower_arm_mass.get(i).copied().unwrap_or(0.0)
                    * params.lower_arm_elbow_share.get(i).copied().unwrap_or(0.0),
            );
            let iu = params.upper_arm_inertia.get(i).copied().unwrap_or(0.0);
            let mr = params.upper_arm_mass.get(i).copied().unwrap_or(0.0)
                * params.upper_arm_com.get(i).copied().unwrap_or(0.0);
            if let (Some(x), Some(w), Some(v), Some(c)) =
                (inertia.get_mut(i), weight.get_mut(i), viscous.get_mut(i), coulomb.get_mut(i))
            {
                *x = wide::<S>((iu + m_e * a * a) * 1e-3)?;
                *w = wide::<S>((mr + m_e * a) * GRAVITY_MM_S2 * 1e-3)?;
                *v = wide::<S>(params.viscous.get(i).copied().unwrap_or(0.0))?;
                *c = wide::<S>(params.coulomb.get(i).copied().unwrap_or(0.0))?;
            }
        }
        let m_p = params.platform_point_mass();
        Ok(Self {
            inertia,
            weight,
            platform: wide::<S>(m_p * 1e-3)?,
            platform_weight: wide::<S>(m_p * GRAVITY_MM_S2 * 1e-3)?,
            viscous,
            coulomb,
            coulomb_inv_rate: wide::<S>(1.0 / params.coulomb_rate)?,
            offsets: robot.joint_offsets(),
        })
    }

    /// Joint torques (N*mm), arms 0, 1, 2, for joint readings `joints`
    /// (rad, as the encoders see them), the Jacobian at that pose (from
    /// the same [`crate::Solution`]), joint rates `rates` (rad/s), joint
    /// accelerations `accels` (rad/s^2) and the platform acceleration
    /// `platform_accel` (mm/s^2) that goes with them.
    ///
    /// Bounded time, no loop over input-dependent counts.
    ///
    /// # Errors
    /// [`Error::NonFinite`] for a non-finite input;
    /// [`Error::NearParallelSingularity`] when the Jacobian cannot map the
    /// platform force; [`Error::OutOfRange`] when a torque does not fit the
    /// number type.
    #[cfg_attr(feature = "no-panic", no_panic::no_panic)]
    pub fn torques(
        &self,
        joints: [S; 3],
        jacobian: &Jacobian<S>,
        rates: [S::Wide; 3],
        accels: [S::Wide; 3],
        platform_accel: [S::Wide; 3],
    ) -> Result<[S::Wide; 3], Error> {
        check_finite(joints, Input::JointAngles)?;
        check_finite(rates, Input::JointRates)?;
        check_finite(accels, Input::JointRates)?;
        check_finite(platform_accel, Input::Velocity)?;
        let [ax, ay, az] = platform_accel;
        let force = [self.platform * ax, self.platform * ay, self.platform * az + self.platform_weight];
        let mut tau = jacobian.joint_torques(force)?;
        let one = S::Wide::ONE;
        for (i, t) in tau.iter_mut().enumerate() {
            let (Some(&q), Some(&off), Some(&w), Some(&dw)) =
                (joints.get(i), self.offsets.get(i), rates.get(i), accels.get(i))
            else {
                return Err(Error::OutOfRange);
            };
            let (Some(&ii), Some(&gw), Some(&cv), Some(&cc)) =
                (self.inertia.get(i), self.weight.get(i), self.viscous.get(i), self.coulomb.get(i))
            else {
                return Err(Error::OutOfRange);
            };
            let (_, cos) = (q + off).sin_cos();
            let slip = (w * self.coulomb_inv_rate).max_of(-one).min_of(one);
            *t = *t + ii * dw - cos.mul_wide(gw) + cv * w + cc * slip;
        }
        if S::Wide::all_finite(tau) { Ok(tau) } else { Err(Error::OutOfRange) }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{Geometry, Limits};

    fn robot() -> Robot<f64> {
        let g = Geometry { base_radius: 160.0, platform_radius: 40.0, upper_arm: 280.0, lower_arm: 720.0 };
        Robot::new(
            g,
            Limits {
                joint_min: [-0.6; 3],
                joint_max: [1.5; 3],
                passive_cone: 0.7,
                min_serial_margin: 0.1,
                min_parallel_margin: 0.1,
            },
        )
        .unwrap()
    }

    fn params() -> DynamicsParams {
        DynamicsParams {
            upper_arm_mass: [0.6; 3],
            upper_arm_com: [120.0; 3],
            upper_arm_inertia: [21_000.0; 3],
            lower_arm_mass: [0.18; 3],
            lower_arm_elbow_share: [0.5; 3],
            platform_mass: 0.35,
            payload: 0.2,
            viscous: [0.0; 3],
            coulomb: [0.0; 3],
            coulomb_rate: 0.01,
        }
    }

    /// Relative tolerance of an f64 evaluation against the same terms
    /// written out by hand.
    const REL_TOL: f64 = 1e-12;

    #[test]
    fn bad_parameters_are_named() {
        let mut p = params();
        p.lower_arm_elbow_share[2] = 1.2;
        assert_eq!(
            Dynamics::<f64>::new(&p, &robot()),
            Err(Error::InvalidDynamics { arm: Some(2), parameter: DynamicsParameter::LowerArmElbowShare })
        );
        let mut p = params();
        p.payload = -0.1;
        assert_eq!(
            Dynamics::<f64>::new(&p, &robot()),
            Err(Error::InvalidDynamics { arm: None, parameter: DynamicsParameter::Payload })
        );
        let mut p = params();
        p.upper_arm_mass[1] = f64::NAN;
        assert!(matches!(Dynamics::<f64>::new(&p, &robot()), Err(Error::InvalidDynamics { arm: Some(1), .. })));
    }

    #[test]
    fn terms_add_up_as_written() {
        let r = robot();
        let p = DynamicsParams { viscous: [2.0; 3], coulomb: [30.0; 3], ..params() };
        let d = Dynamics::new(&p, &r).unwrap();
        let sol = r.inverse([30.0, -10.0, -650.0]).unwrap();
        let (w, dw, acc) = ([1.0, -0.5, 0.002], [50.0, -20.0, 10.0], [1000.0, 2000.0, -3000.0]);
        let tau = d.torques(sol.joints, &sol.jacobian, w, dw, acc).unwrap();
        let m_p = p.platform_point_mass() * 1e-3;
        let jt = sol.jacobian.joint_torques([m_p * acc[0], m_p * acc[1], m_p * (acc[2] + GRAVITY_MM_S2)]).unwrap();
        for i in 0..3 {
            let m_e = 0.09;
            let want = jt[i] + (21_000.0 + m_e * 280.0 * 280.0) * 1e-3 * dw[i]
                - (0.6 * 120.0 + m_e * 280.0) * GRAVITY_MM_S2 * 1e-3 * sol.joints[i].cos()
                + 2.0 * w[i]
                + 30.0 * (w[i] / 0.01).clamp(-1.0, 1.0);
            assert!((tau[i] - want).abs() <= REL_TOL * want.abs().max(1.0), "arm {i}: {} vs {want}", tau[i]);
        }
    }

    #[test]
    fn coulomb_is_zero_at_rest_and_odd() {
        let r = robot();
        let p = DynamicsParams { coulomb: [30.0; 3], ..params() };
        let d = Dynamics::new(&p, &r).unwrap();
        let sol = r.inverse([0.0, 0.0, -700.0]).unwrap();
        let z = [0.0; 3];
        let at_rest = d.torques(sol.joints, &sol.jacobian, z, z, z).unwrap();
        let up = d.torques(sol.joints, &sol.jacobian, [1.0; 3], z, z).unwrap();
        let down = d.torques(sol.joints, &sol.jacobian, [-1.0; 3], z, z).unwrap();
        for i in 0..3 {
            assert!(((up[i] - at_rest[i]) - 30.0).abs() < 1e-9);
            assert!(((at_rest[i] - down[i]) - 30.0).abs() < 1e-9);
        }
    }

    #[test]
    fn f32_agrees_with_f64() {
        let g = Geometry { base_radius: 160.0f32, platform_radius: 40.0, upper_arm: 280.0, lower_arm: 720.0 };
        let r32 = Robot::new(
            g,
            Limits {
                joint_min: [-0.6f32; 3],
                joint_max: [1.5; 3],
                passive_cone: 0.7,
                min_serial_margin: 0.1,
                min_parallel_margin: 0.1,
            },
        )
        .unwrap();
        let (r64, p) = (robot(), params());
        let d32 = Dynamics::new(&p, &r32).unwrap();
        let d64 = Dynamics::new(&p, &r64).unwrap();
        let s32 = r32.inverse([50.0, 20.0, -700.0]).unwrap();
        let s64 = r64.inverse([50.0, 20.0, -700.0]).unwrap();
        let t32 = d32.torques(s32.joints, &s32.jacobian, [3.0; 3], [200.0; 3], [0.0, 0.0, 20_000.0]).unwrap();
        let t64 = d64.torques(s64.joints, &s64.jacobian, [3.0; 3], [200.0; 3], [0.0, 0.0, 20_000.0]).unwrap();
        let peak = t64.iter().fold(0.0f64, |m, t| m.max(t.abs()));
        for i in 0..3 {
            assert!((f64::from(t32[i]) - t64[i]).abs() <= 1e-5 * peak, "{} vs {}", t32[i], t64[i]);
        }
    }

    /// Statics by virtual work, independently of the Jacobian: at rest the
    /// torques are the gradient of the potential energy
    /// `V(q) = m_p g z(q) - sum (m_u r_c + m_e a) g sin q_i`, here by
    /// central differences of forward kinematics (step 1e-6 rad).
    #[test]
    fn torques_at_rest_are_the_gradient_of_the_potential() {
        /// Central-difference truncation and rounding, relative to the peak.
        const STATICS_REL_TOL: f64 = 1e-6;
        let (r, p) = (robot(), params());
        let d = Dynamics::new(&p, &r).unwrap();
        let sol = r.inverse([60.0, -40.0, -720.0]).unwrap();
        let tau = d.torques(sol.joints, &sol.jacobian, [0.0; 3], [0.0; 3], [0.0; 3]).unwrap();
        let g = GRAVITY_MM_S2 * 1e-3;
        let arm = (0.6 * 120.0 + 0.09 * 280.0) * g;
        let potential = |q: [f64; 3]| {
            let z = r.forward_unguarded(q).unwrap().position[2];
            p.platform_point_mass() * g * z - q.iter().map(|t| arm * t.sin()).sum::<f64>()
        };
        let h = 1e-6;
        let peak = tau.iter().fold(0.0f64, |m, t| m.max(t.abs()));
        for i in 0..3 {
            let (mut qp, mut qm) = (sol.joints, sol.joints);
            qp[i] += h;
            qm[i] -= h;
            let grad = (potential(qp) - potential(qm)) / (2.0 * h);
            assert!((tau[i] - grad).abs() <= STATICS_REL_TOL * peak, "arm {i}: {} vs {grad}", tau[i]);
        }
    }
}
