//! From the joint to the motor shaft: one arm's torque, speed and winding
//! voltage at the motor for a given joint torque, rate and acceleration,
//! and the cycle means used to judge a drive.
//!
//! # Method (textbook drive-train relations)
//! With gear ratio `n` (motor turns per arm turn) and efficiency `eta`:
//!
//! ```text
//!   w_m = n w                     motor speed from the joint rate w
//!   a_m = n a                     motor acceleration from the joint acceleration a
//!   t_l = t / (n eta)             load torque at the motor when it drives the load (t w >= 0)
//!   t_l = t eta / n               when the load drives the motor back (t w < 0)
//!   t_m = t_l + (J_rotor + J_gearbox) a_m
//!   V   = R t_m / k_t + k_e w_m   winding voltage in steady state (inductance neglected)
//! ```
//!
//! `t` is the torque the arm needs at the gearbox output (the robot
//! file's model: the arm alone, see [`crate::drive`]); the rotor and the
//! gearbox's own inertia (stated at its input) are added at the motor
//! shaft. A load inertia `J` at the joint appears at the motor as `J / n^2`
//! (reflected inertia, the textbook gear relation), used for the
//! load-to-rotor ratio. At rest (`t w = 0`) the motoring rule is used,
//! the conservative one.
//!
//! Units: SI throughout (N*m, rad/s, rad/s^2, kg*m^2, V). Accuracy: exact
//! arithmetic of these relations in f64.

use crate::drive::ArmDrive;

/// One arm at one instant, at the motor shaft.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ShaftState {
    /// Motor speed, rad/s (signed).
    pub speed: f64,
    /// Motor torque, N*m (signed).
    pub torque: f64,
    /// Winding voltage in steady state, V (signed).
    pub voltage: f64,
}

/// The inertia `joint_inertia` (kg*m^2, about the joint) seen at the
/// motor through a gear of ratio `ratio`: `J / n^2`.
#[must_use]
pub fn reflected_inertia(joint_inertia: f64, ratio: f64) -> f64 {
    joint_inertia / (ratio * ratio)
}

/// The motor shaft state for joint torque `torque` (N*m at the gearbox
/// output), joint rate `rate` (rad/s) and acceleration `accel` (rad/s^2).
/// See the module docs for the relations.
#[must_use]
pub fn at_motor(drive: &ArmDrive, torque: f64, rate: f64, accel: f64) -> ShaftState {
    let (n, eta) = (drive.gearbox.ratio, drive.gearbox.efficiency);
    let load = if torque * rate >= 0.0 { torque / (n * eta) } else { torque * eta / n };
    let own = (drive.motor.rotor_inertia + drive.gearbox.inertia_at_input) * n * accel;
    let speed = n * rate;
    let t_m = load + own;
    let voltage = drive.motor.resistance * t_m / drive.motor.torque_constant + drive.motor.back_emf * speed;
    ShaftState { speed, torque: t_m, voltage }
}

/// Time-weighted root mean square of `values` with weights `weights`
/// (seconds): `sqrt(sum w v^2 / sum w)`; 0 for an empty or weightless set.
#[must_use]
pub fn rms(values: &[f64], weights: &[f64]) -> f64 {
    let total: f64 = weights.iter().sum();
    if total <= 0.0 {
        return 0.0;
    }
    (values.iter().zip(weights).map(|(v, w)| w * v * v).sum::<f64>() / total).sqrt()
}

/// Speed-weighted cubic mean of a torque, `(sum |w| dt |t|^3 / sum |w| dt)^(1/3)`,
/// the mean output torque gearbox life ratings are usually compared with
/// (common practice); the largest `|torque|` when nothing turns.
#[must_use]
pub fn cubic_mean(torques: &[f64], speeds: &[f64], weights: &[f64]) -> f64 {
    let mut num = 0.0;
    let mut den = 0.0;
    for ((t, s), w) in torques.iter().zip(speeds).zip(weights) {
        num += s.abs() * w * t.abs().powi(3);
        den += s.abs() * w;
    }
    if den > 0.0 { (num / den).cbrt() } else { torques.iter().fold(0.0, |m, t| f64::max(m, t.abs())) }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::drive::Drive;

    /// Relative tolerance for exact arithmetic (a few f64 roundings).
    const EXACT_REL: f64 = 1e-12;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= EXACT_REL * b.abs().max(1e-300)
    }

    fn drive(ratio: f64, efficiency: f64, rotor_kg_m2: f64, gearbox_kg_m2: f64) -> ArmDrive {
        let mut d = Drive::demo().arms[0];
        d.gearbox.ratio = ratio;
        d.gearbox.efficiency = efficiency;
        d.motor.rotor_inertia = rotor_kg_m2;
        d.gearbox.inertia_at_input = gearbox_kg_m2;
        d.motor.resistance = 0.5;
        d.motor.torque_constant = 0.1;
        d.motor.back_emf = 0.1;
        d
    }

    #[test]
    fn rms_of_known_profiles() {
        // A square wave +-2 over equal times: RMS 2.
        assert!(close(rms(&[2.0, -2.0, 2.0, -2.0], &[1.0; 4]), 2.0));
        // 3 for 1 s, 0 for 3 s: sqrt(9 / 4) = 1.5 (a torque pulse with a dwell).
        assert!(close(rms(&[3.0, 0.0], &[1.0, 3.0]), 1.5));
        // A sine sampled evenly over whole periods: amplitude / sqrt(2).
        let n = 1000;
        let v: Vec<f64> = (0..n).map(|k| 5.0 * (2.0 * std::f64::consts::PI * k as f64 / n as f64).sin()).collect();
        assert!(close(rms(&v, &vec![1e-3; n]), 5.0 / 2f64.sqrt()));
        assert_eq!(rms(&[], &[]), 0.0);
    }

    #[test]
    fn reflected_inertia_is_j_over_n_squared() {
        // 0.04 kg*m^2 at the arm through 20:1 is 1e-4 kg*m^2 at the motor.
        assert!(close(reflected_inertia(0.04, 20.0), 1e-4));
        assert!(close(reflected_inertia(0.5, 1.0), 0.5));
    }

    #[test]
    fn efficiency_costs_torque_when_motoring_and_helps_when_braking() {
        let d = drive(10.0, 0.8, 0.0, 0.0);
        // Driving: 8 N*m at the arm turning forwards -> 8 / (10 * 0.8) = 1 N*m.
        let s = at_motor(&d, 8.0, 1.0, 0.0);
        assert!(close(s.torque, 1.0) && close(s.speed, 10.0));
        // Holding at rest counts as driving: 1 N*m.
        assert!(close(at_motor(&d, 8.0, 0.0, 0.0).torque, 1.0));
        // Braking: 8 N*m against the motion -> 8 * 0.8 / 10 = 0.64 N*m.
        assert!(close(at_motor(&d, 8.0, -1.0, 0.0).torque, 0.64));
        assert!(close(at_motor(&d, -8.0, 1.0, 0.0).torque, -0.64));
    }

    #[test]
    fn rotor_and_gearbox_inertia_add_at_the_motor() {
        // Rotor 2e-5 + gearbox 1e-5 kg*m^2, ratio 20, joint accel 50 rad/s^2:
        // motor accel 1000 rad/s^2, torque 3e-5 * 1000 = 0.03 N*m, no load.
        let d = drive(20.0, 0.9, 2e-5, 1e-5);
        let s = at_motor(&d, 0.0, 0.0, 50.0);
        assert!(close(s.torque, 0.03), "{s:?}");
        // Plus a load of 1.8 N*m driving forwards: 1.8 / (20 * 0.9) = 0.1 N*m.
        let s = at_motor(&d, 1.8, 2.0, 50.0);
        assert!(close(s.torque, 0.13) && close(s.speed, 40.0));
        // Winding voltage: R t / k_t + k_e w = 0.5 * 0.13 / 0.1 + 0.1 * 40 = 4.65 V.
        assert!(close(s.voltage, 4.65), "{s:?}");
    }

    #[test]
    fn cubic_mean_weights_by_speed() {
        // 2 N*m at 10 rad/s for 1 s and 4 N*m at rest: the resting torque
        // does not wear the gear, mean 2.
        assert!(close(cubic_mean(&[2.0, 4.0], &[10.0, 0.0], &[1.0, 1.0]), 2.0));
        // 1 and 2 N*m at equal speed and time: ((1 + 8) / 2)^(1/3).
        assert!(close(cubic_mean(&[1.0, -2.0], &[5.0, -5.0], &[1.0, 1.0]), 4.5f64.cbrt()));
        // Nothing turns: the largest torque.
        assert!(close(cubic_mean(&[1.0, -3.0], &[0.0, 0.0], &[1.0, 1.0]), 3.0));
    }
}
