//! The simplified dynamics model of the core against its own energy
//! balance: along a joint trajectory, `sum(tau_i * w_i) = d/dt (KE + PE)`
//! (Lagrangian mechanics, any textbook, e.g. Goldstein, "Classical
//! Mechanics", ch. 1-2: the power of the generalised forces equals the rate
//! of change of the total energy of a conservative system; from memory).
//! Energies are computed here from forward kinematics, independently of the
//! core's Jacobian mapping.

use deltakin::Robot;
use deltakin_harness::config::RobotFile;

/// Central differences at step `H` in time: truncation O(H^2) of the
/// platform accelerations and of the energy rate, relative to the peak power.
const H: f64 = 1e-4;
const POWER_REL_TOL: f64 = 1e-4;

#[test]
fn power_in_equals_rate_of_change_of_energy() {
    let file = RobotFile::demo();
    let robot: Robot<f64> = file.robot().unwrap();
    let mut p = file.dynamics.unwrap().params();
    p.viscous = [0.0; 3];
    p.coulomb = [0.0; 3];
    let dynamics = deltakin::Dynamics::new(&p, &robot).unwrap();
    let home = robot.inverse([0.0, 0.0, -700.0]).unwrap().joints;
    let (amp, omega, phase) = ([0.25, 0.18, 0.3], [6.0, 9.0, 7.5], [0.0, 1.0, 2.0]);
    let q = |t: f64| std::array::from_fn::<f64, 3, _>(|i| home[i] + amp[i] * (omega[i] * t + phase[i]).sin());
    let w = |t: f64| std::array::from_fn::<f64, 3, _>(|i| amp[i] * omega[i] * (omega[i] * t + phase[i]).cos());
    let dw =
        |t: f64| std::array::from_fn::<f64, 3, _>(|i| -amp[i] * omega[i] * omega[i] * (omega[i] * t + phase[i]).sin());
    let pos = |t: f64| robot.forward_unguarded(q(t)).unwrap().position;
    let g = deltakin::dynamics::GRAVITY_MM_S2;
    let m_p = p.platform_point_mass();
    let arm = |i: usize| {
        let m_e = p.lower_arm_mass[i] * p.lower_arm_elbow_share[i];
        let a = 280.0;
        (p.upper_arm_inertia[i] + m_e * a * a, p.upper_arm_mass[i] * p.upper_arm_com[i] + m_e * a)
    };
    // Total energy, 1e-3 N*mm units folded in (kg mm^2 / s^2 = 1e-3 N*mm).
    let energy = |t: f64| {
        let (x0, x1) = (pos(t - H), pos(t + H));
        let v: [f64; 3] = std::array::from_fn(|k| (x1[k] - x0[k]) / (2.0 * H));
        let (qt, wt) = (q(t), w(t));
        let mut e = 0.5 * m_p * v.iter().map(|c| c * c).sum::<f64>() + m_p * g * pos(t)[2];
        for i in 0..3 {
            let (inertia, moment) = arm(i);
            e += 0.5 * inertia * wt[i] * wt[i] - moment * g * qt[i].sin();
        }
        e * 1e-3
    };
    let mut worst: f64 = 0.0;
    let mut peak: f64 = 0.0;
    for k in 0..50 {
        let t = 0.02 * f64::from(k);
        let sol = robot.inverse_unguarded(pos(t)).unwrap();
        let (x0, x1, x) = (pos(t - H), pos(t + H), pos(t));
        let acc: [f64; 3] = std::array::from_fn(|c| (x1[c] - 2.0 * x[c] + x0[c]) / (H * H));
        let tau = dynamics.torques(q(t), &sol.jacobian, w(t), dw(t), acc).unwrap();
        let power: f64 = tau.iter().zip(w(t)).map(|(a, b)| a * b).sum();
        let rate = (energy(t + H) - energy(t - H)) / (2.0 * H);
        worst = worst.max((power - rate).abs());
        peak = peak.max(power.abs());
    }
    assert!(peak > 0.0);
    assert!(worst <= POWER_REL_TOL * peak, "power balance off by {worst} N*mm/s of {peak}");
}
