//! A joint trajectory as sizing sees it: per sample the joint angles,
//! rates and accelerations, the platform acceleration, each arm's load
//! inertia, and the time the sample stands for; and the joint torques of
//! the robot file's model along it, played at any time stretch.
//!
//! # Accelerations (method)
//! The setpoint stream gives joint angles and rates at the servo period
//! `T` (planned in f64 on the host). Joint accelerations are the central
//! differences of the rates, `a_k = (w_(k+1) - w_(k-1)) / 2T` (one-sided
//! at the two ends, where the stream starts and ends at rest); the
//! platform acceleration is the central difference of the platform
//! velocity `v_k = J(theta_k) w_k` (the core's Jacobian). The error is
//! `O(T^2)` times the third derivative of the rate, below 1e-4 of the peak
//! acceleration at the 4 kHz servo rate on the demo cycle (tested against
//! a rate profile with a known derivative); at a jump of a trapezoid law's
//! acceleration the difference gives the mean of the two sides for one
//! sample.
//!
//! # Time stretch
//! Playing a planned path `k` times faster multiplies rates by `k`,
//! accelerations by `k^2` and durations by `1/k`; the path and its samples
//! stay the same. This is exactly what replanning with every speed,
//! acceleration and jerk bound scaled by `k`, `k^2`, `k^3` gives, without
//! replanning. Holds (dwells) keep their duration.
//!
//! # Load inertia
//! Arm `i`'s load inertia at a sample is the diagonal entry `M_ii` of the
//! model's joint-space mass matrix, from the torque of a unit acceleration
//! of that joint alone (the platform then moving at `J e_i`) minus the
//! torque at rest; kg*m^2 at the joint.

use deltakin::{Dynamics, Jacobian, Robot};

use crate::plan::Row;

/// N*mm to N*m.
const NM_PER_NMM: f64 = 1e-3;
/// N*mm per rad/s^2 (= 1e-3 kg*m^2) to kg*m^2.
const KG_M2_PER_NMM_S2: f64 = 1e-3;

/// One sample of a trajectory.
#[derive(Clone, Copy, Debug)]
pub struct Sample {
    /// Time the sample stands for, s (at stretch 1).
    pub weight_s: f64,
    /// `false` for a hold, whose duration a time stretch leaves alone.
    pub stretches: bool,
    /// Joint readings, rad.
    pub joints: [f64; 3],
    /// Joint rates, rad/s.
    pub rates: [f64; 3],
    /// Joint accelerations, rad/s^2.
    pub accels: [f64; 3],
    /// Platform acceleration, mm/s^2.
    pub platform_accel: [f64; 3],
    /// Each arm's load inertia at the joint, kg*m^2.
    pub inertia: [f64; 3],
    jacobian: Jacobian<f64>,
}

/// A trajectory: samples and the durations of its motion and its holds.
#[derive(Clone, Debug)]
pub struct Profile {
    /// The samples in time order.
    pub samples: Vec<Sample>,
    /// Motion time at stretch 1, s.
    pub motion_s: f64,
    /// Hold time (unchanged by a stretch), s.
    pub hold_s: f64,
}

/// The joint side of one sample at some stretch: torque (N*m at the
/// gearbox output), rate (rad/s), acceleration (rad/s^2) per arm, and the
/// time it stands for (s).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct JointLoad {
    /// Torque per arm, N*m.
    pub torque: [f64; 3],
    /// Rate per arm, rad/s.
    pub rate: [f64; 3],
    /// Acceleration per arm, rad/s^2.
    pub accel: [f64; 3],
    /// Duration, s.
    pub weight_s: f64,
}

fn scaled(v: [f64; 3], s: f64) -> [f64; 3] {
    v.map(|x| x * s)
}

fn diff(a: [f64; 3], b: [f64; 3], over: f64) -> [f64; 3] {
    [(a[0] - b[0]) / over, (a[1] - b[1]) / over, (a[2] - b[2]) / over]
}

/// Each arm's load inertia at the joint (kg*m^2) at a pose; see the
/// module docs.
fn load_inertia(dynamics: &Dynamics<f64>, joints: [f64; 3], jac: &Jacobian<f64>) -> Result<[f64; 3], String> {
    let at_rest = dynamics.torques(joints, jac, [0.0; 3], [0.0; 3], [0.0; 3]).map_err(|e| e.to_string())?;
    let mut out = [0.0; 3];
    for (i, o) in out.iter_mut().enumerate() {
        let mut unit = [0.0; 3];
        unit[i] = 1.0;
        let platform = jac.cartesian_velocity(unit).map_err(|e| e.to_string())?;
        let t = dynamics.torques(joints, jac, [0.0; 3], unit, platform).map_err(|e| e.to_string())?;
        *o = (t[i] - at_rest[i]) * KG_M2_PER_NMM_S2;
    }
    Ok(out)
}

impl Profile {
    /// The profile of a planned stream: `rows` one servo `period` (s)
    /// apart, from rest to rest.
    ///
    /// # Errors
    /// The core's message when a pose has no Jacobian or torque (a row
    /// the stream accepted always has one).
    pub fn from_rows(robot: &Robot<f64>, dynamics: &Dynamics<f64>, rows: &[Row], period: f64) -> Result<Self, String> {
        let n = rows.len();
        if n < 2 {
            return Err("the moves file gives no motion to size".to_owned());
        }
        let mut jacobians = Vec::with_capacity(n);
        let mut velocities = Vec::with_capacity(n);
        for r in rows {
            let s = robot.forward_unguarded(r.joints_rad).map_err(|e| format!("at t = {} s: {e}", r.t_s))?;
            velocities.push(s.jacobian.cartesian_velocity(r.rates_rad_s).map_err(|e| e.to_string())?);
            jacobians.push(s.jacobian);
        }
        let mut samples = Vec::with_capacity(n);
        for k in 0..n {
            let (before, after, over) = match k {
                0 => (0, 1, period),
                k if k == n - 1 => (k - 1, k, period),
                k => (k - 1, k + 1, 2.0 * period),
            };
            let accels = diff(rows[after].rates_rad_s, rows[before].rates_rad_s, over);
            let platform_accel = diff(velocities[after], velocities[before], over);
            let weight_s = if k == 0 || k == n - 1 { period / 2.0 } else { period };
            let joints = rows[k].joints_rad;
            samples.push(Sample {
                weight_s,
                stretches: true,
                joints,
                rates: rows[k].rates_rad_s,
                accels,
                platform_accel,
                inertia: load_inertia(dynamics, joints, &jacobians[k])?,
                jacobian: jacobians[k],
            });
        }
        #[allow(clippy::cast_precision_loss)] // counts far below 2^53
        let motion_s = (n - 1) as f64 * period;
        Ok(Profile { samples, motion_s, hold_s: 0.0 })
    }

    /// Appends a hold of `duration_s` at rest at joint readings `joints`.
    ///
    /// # Errors
    /// The core's message when the pose has no Jacobian.
    pub fn hold(
        &mut self,
        robot: &Robot<f64>,
        dynamics: &Dynamics<f64>,
        joints: [f64; 3],
        duration_s: f64,
    ) -> Result<(), String> {
        let s = robot.forward_unguarded(joints).map_err(|e| e.to_string())?;
        self.samples.push(Sample {
            weight_s: duration_s,
            stretches: false,
            joints,
            rates: [0.0; 3],
            accels: [0.0; 3],
            platform_accel: [0.0; 3],
            inertia: load_inertia(dynamics, joints, &s.jacobian)?,
            jacobian: s.jacobian,
        });
        self.hold_s += duration_s;
        Ok(())
    }

    /// The cycle time at stretch `k`, s.
    #[must_use]
    pub fn cycle_s(&self, k: f64) -> f64 {
        self.motion_s / k + self.hold_s
    }

    /// The joint loads along the profile played `k` times faster.
    ///
    /// # Errors
    /// The core's message if a torque cannot be computed (non-finite).
    pub fn loads(&self, dynamics: &Dynamics<f64>, k: f64) -> Result<Vec<JointLoad>, String> {
        self.samples
            .iter()
            .map(|s| {
                let (sv, sa, w) = if s.stretches { (k, k * k, s.weight_s / k) } else { (1.0, 1.0, s.weight_s) };
                let rate = scaled(s.rates, sv);
                let accel = scaled(s.accels, sa);
                let t = dynamics
                    .torques(s.joints, &s.jacobian, rate, accel, scaled(s.platform_accel, sa))
                    .map_err(|e| e.to_string())?;
                Ok(JointLoad { torque: scaled(t, NM_PER_NMM), rate, accel, weight_s: w })
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::config::RobotFile;

    /// Relative error allowed of the central difference on a smooth
    /// profile at 4 kHz (the O(T^2) term is about 1e-7 here).
    const DIFF_REL: f64 = 1e-5;

    #[test]
    fn central_differences_recover_a_known_acceleration() {
        let file = RobotFile::demo();
        let robot = file.robot::<f64>().unwrap();
        let dynamics = file.dynamics(&robot).unwrap().unwrap();
        // theta(t) = 0.3 + 0.2 sin(2 pi t) on every arm, 0 <= t <= 0.25 s
        // (the rate is 0 at the end, as a stream's is).
        let period = 1.0 / 4000.0;
        let w = 2.0 * std::f64::consts::PI;
        let rows: Vec<Row> = (0..=1000)
            .map(|k| {
                let t = f64::from(k) * period;
                Row {
                    t_s: t,
                    position_mm: [0.0; 3],
                    joints_rad: [0.3 + 0.2 * (w * t).sin(); 3],
                    rates_rad_s: [0.2 * w * (w * t).cos(); 3],
                }
            })
            .collect();
        let p = Profile::from_rows(&robot, &dynamics, &rows, period).unwrap();
        assert!((p.motion_s - 0.25).abs() < 1e-12);
        let peak = 0.2 * w * w;
        for (k, s) in p.samples.iter().enumerate().skip(1).take(998) {
            let t = f64::from(u32::try_from(k).unwrap()) * period;
            let exact = -0.2 * w * w * (w * t).sin();
            assert!((s.accels[1] - exact).abs() <= DIFF_REL * peak, "sample {k}: {} vs {exact}", s.accels[1]);
        }
        let total: f64 = p.samples.iter().map(|s| s.weight_s).sum();
        assert!((total - 0.25).abs() < 1e-12, "weights sum to the motion time");
    }

    #[test]
    fn a_stretch_scales_inertial_torque_by_its_square_and_time_by_its_inverse() {
        let file = RobotFile::demo();
        let robot = file.robot::<f64>().unwrap();
        let dynamics = file.dynamics(&robot).unwrap().unwrap();
        let mut p = Profile { samples: Vec::new(), motion_s: 1.0, hold_s: 0.0 };
        p.hold(&robot, &dynamics, [0.4, 0.5, 0.6], 1.0).unwrap();
        assert!(p.samples[0].inertia.iter().all(|&j| j > 0.0));
        // At rest the hold gives the gravity torque at any stretch.
        let gravity = p.loads(&dynamics, 1.0).unwrap()[0];
        assert_eq!(p.loads(&dynamics, 3.0).unwrap()[0], gravity);
        // The same pose as a moving sample at zero rate: gravity plus inertia,
        // the inertial part 9 times larger at stretch 3, its time a third.
        let mut s = p.samples[0];
        s.stretches = true;
        s.accels = [10.0, -5.0, 2.0];
        s.platform_accel = s.jacobian.cartesian_velocity(s.accels).unwrap();
        let moving = Profile { samples: vec![s], motion_s: 1.0, hold_s: 0.0 };
        let (one, three) = (moving.loads(&dynamics, 1.0).unwrap()[0], moving.loads(&dynamics, 3.0).unwrap()[0]);
        for i in 0..3 {
            let (a, b) = (one.torque[i] - gravity.torque[i], three.torque[i] - gravity.torque[i]);
            assert!(a.abs() > 1e-3, "arm {i}: a visible inertial torque");
            assert!((b - 9.0 * a).abs() <= 1e-9 * a.abs(), "arm {i}: {a} {b}");
        }
        assert!((three.weight_s - 1.0 / 3.0).abs() < 1e-15);
        assert!((moving.cycle_s(4.0) - 0.25).abs() < 1e-15 && (p.cycle_s(4.0) - 1.25).abs() < 1e-15);
    }
}
