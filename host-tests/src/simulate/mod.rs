//! `deltakin simulate`: the three servo loops on the full-dynamics plant,
//! driven by the setpoint stream the firmware runs.
//!
//! # Model
//! Per joint, at the servo rate `1/Ts` of the drive file:
//! * **PID** on the joint-angle error `e` (rad), output volts:
//!   `u = Kp e + I + D + u_ff`, `D_k = (Tf D_(k-1) + Kd (e_k - e_(k-1))) / (Tf + Ts)`
//!   (first-order filtered derivative, backward Euler), `I += Ki e Ts`
//!   only while the output is not saturated in the direction of `e`
//!   (conditional integration, a common anti-windup; K. J. Astrom and
//!   T. Hagglund, "Advanced PID Control", ISA 2006, chapter 3; from
//!   memory); `u` limited to the output limit and the supply voltage,
//!   held for the tick (zero-order hold).
//! * **Motor** ([`motor`]): `L di/dt = u - R i - K_e N w`, torque `K_t i`.
//! * **Gearbox**: ratio `N`, efficiency `eta` (applied in both directions,
//!   a simplification), rigid; joint torque `eta N K_t i`; the rotor and
//!   gearbox inertia reflect as `N^2 (J_rotor + J_gear)` onto the joint.
//! * **Joint friction**: the robot file's viscous and Coulomb terms (the
//!   same smooth Coulomb rule as the core).
//! * **Plant**: [`crate::reference::dynamics::FullDynamics`] with uniform
//!   rods, forward dynamics.
//!
//! Between ticks the 9 states (joints, rates, currents) are integrated by
//! `ode_solvers`' Dopri5 (Dormand-Prince 5(4) with step control, rtol
//! [`RTOL`]): a kept, tested crate with error control, chosen over a
//! hand-written fixed-step Runge-Kutta because the electrical time
//! constant (about 2 ms) and the servo period (0.25 ms) are close and a
//! fixed step would need its own accuracy argument.
//!
//! **Feed-forward** (when on): the core's torques
//! ([`deltakin::Dynamics::torques`], friction included) for the commanded
//! motion, plus the rotor's `N^2 J theta''`, turned into volts through the
//! motor's steady equation `u_ff = R i_ff + K_e N theta'`,
//! `i_ff = tau / (eta N K_t)`. Commanded accelerations by central
//! differences of the streamed rates, platform accelerations of the
//! streamed positions (host side: the setpoints are known one tick ahead).

pub mod motor;

use ode_solvers::{Dopri5, SVector, System};

use crate::cli::ScalarKind;
use crate::config::RobotFile;
use crate::drive::Drive;
use crate::plan::{self, MovesFile, Row};
use crate::reference::PerArmMachine;
use crate::reference::dynamics::{Bodies, FullDynamics};

/// Relative tolerance of the integrator (absolute the same).
pub const RTOL: f64 = 1e-8;

type State = SVector<f64, 9>;

/// One simulated tick.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Sample {
    /// Time, s.
    pub t_s: f64,
    /// Commanded joints, rad.
    pub commanded_rad: [f64; 3],
    /// Simulated joints, rad.
    pub simulated_rad: [f64; 3],
    /// Commanded tool position, mm.
    pub commanded_mm: [f64; 3],
    /// Simulated tool position, mm.
    pub simulated_mm: [f64; 3],
    /// Winding volts applied.
    pub volts: [f64; 3],
    /// Whether each loop's output was at its limit.
    pub saturated: [bool; 3],
}

/// Summary of one run.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Summary {
    /// Feed-forward on.
    pub feed_forward: bool,
    /// Worst joint error, any arm, rad.
    pub joint_worst_rad: f64,
    /// RMS joint error over ticks and arms, rad.
    pub joint_rms_rad: f64,
    /// Worst tool position error, mm.
    pub tool_worst_mm: f64,
    /// RMS tool position error, mm.
    pub tool_rms_mm: f64,
    /// Tool error at the last setpoint, mm.
    pub tool_end_mm: f64,
    /// Time with at least one loop saturated, s.
    pub saturated_s: f64,
}

struct Plant<'a> {
    full: &'a FullDynamics,
    drive: &'a Drive,
    volts: [f64; 3],
    viscous: [f64; 3],
    coulomb: [f64; 3],
    coulomb_rate: f64,
    failed: std::cell::Cell<bool>,
}

impl System<f64, State> for Plant<'_> {
    fn system(&self, _t: f64, y: &State, dy: &mut State) {
        let q = [y[0], y[1], y[2]];
        let w = [y[3], y[4], y[5]];
        let mut tau = [0.0; 3];
        for i in 0..3 {
            let d = &self.drive.arms[i];
            let n = d.gearbox.ratio;
            tau[i] = d.gearbox.efficiency * n * d.motor.torque_constant * y[6 + i] * 1e3
                - self.viscous[i] * w[i]
                - self.coulomb[i] * (w[i] / self.coulomb_rate).clamp(-1.0, 1.0);
            dy[6 + i] = motor::current_rate(
                d.motor.resistance,
                d.motor.inductance,
                d.motor.back_emf,
                self.volts[i],
                y[6 + i],
                n * w[i],
            );
        }
        let a = self.full.accelerations(q, w, tau).unwrap_or_else(|| {
            self.failed.set(true);
            [0.0; 3]
        });
        for i in 0..3 {
            dy[i] = w[i];
            dy[3 + i] = a[i];
        }
    }
}

/// Simulates `moves` on `robot_file` with `drive`, with or without the
/// core's torque feed-forward.
///
/// # Errors
/// A message when the drive has no `[servo]` table, the robot file no
/// `[dynamics]` table, the program does not plan, or the plant leaves the
/// reference's domain (names the time).
pub fn run(
    robot_file: &RobotFile,
    drive: &Drive,
    moves: &MovesFile,
    feed_forward: bool,
) -> Result<(Vec<Sample>, Summary), String> {
    let rate = drive.servo_rate_hz.ok_or("the drive file has no [servo] table")?;
    let gains = drive.arms.each_ref().map(|a| a.servo);
    let gains = [gains[0], gains[1], gains[2]].map(|g| g.ok_or("the drive file has no [servo] gains"));
    let gains = [gains[0]?, gains[1]?, gains[2]?];
    let params = robot_file.dynamics.ok_or("the robot file has no [dynamics] table")?.params();
    let robot = robot_file.robot::<f64>().map_err(|e| e.to_string())?;
    let core = deltakin::Dynamics::new(&params, &robot).map_err(|e| e.to_string())?;
    let mut bodies = Bodies::from_params(&params, false);
    for i in 0..3 {
        let d = &drive.arms[i];
        let n = d.gearbox.ratio;
        bodies.upper_inertia[i] += n * n * (d.motor.rotor_inertia + d.gearbox.inertia_at_input) * 1e6;
    }
    let machine = PerArmMachine::new(&robot_file.geometry_f64(), &robot_file.corrections_f64());
    let full = FullDynamics::new(&machine, bodies);
    let (rows, _) = plan::plan_with::<f32, f32>(robot_file, moves, rate, ScalarKind::F32).map_err(|e| e.to_string())?;
    let ts = 1.0 / rate;
    let first = rows.first().ok_or("empty program")?;
    // Start at rest on the first setpoint, holding current for the statics.
    let hold = full.torques(first.joints_rad, [0.0; 3], [0.0; 3]).ok_or("start pose outside the reference")?;
    let mut y = State::zeros();
    for i in 0..3 {
        let d = &drive.arms[i];
        y[i] = first.joints_rad[i];
        y[6 + i] = hold[i] * 1e-3 / (d.gearbox.efficiency * d.gearbox.ratio * d.motor.torque_constant);
    }
    let mut integ = [0.0; 3];
    for i in 0..3 {
        integ[i] = drive.arms[i].motor.resistance * y[6 + i];
    }
    let (mut deriv, mut prev_e) = ([0.0; 3], [0.0; 3]);
    let mut out = Vec::with_capacity(rows.len());
    let (mut sq_j, mut sq_t, mut worst_j, mut worst_t, mut sat_s) = (0.0, 0.0, 0.0f64, 0.0f64, 0.0);
    for k in 0..rows.len() {
        let row = &rows[k];
        let q = [y[0], y[1], y[2]];
        let mut volts = [0.0; 3];
        let mut saturated = [false; 3];
        let ff = if feed_forward { feed_forward_volts(&core, &robot, drive, &rows, k, ts)? } else { [0.0; 3] };
        for i in 0..3 {
            let g = gains[i];
            let e = row.joints_rad[i] - q[i];
            deriv[i] = (g.derivative_filter * deriv[i] + g.derivative * (e - prev_e[i])) / (g.derivative_filter + ts);
            prev_e[i] = e;
            let limit = g.output_limit.min(drive.arms[i].motor.supply_voltage);
            let raw = g.proportional * e + integ[i] + deriv[i] + ff[i];
            let u = raw.clamp(-limit, limit);
            saturated[i] = u != raw;
            if !(saturated[i] && raw.signum() == e.signum()) {
                integ[i] += g.integral * e * ts;
            }
            volts[i] = u;
        }
        let sim_mm = full.platform(q).ok_or_else(|| format!("plant disassembled at t = {:.4} s", row.t_s))?;
        let ej = (0..3).map(|i| (row.joints_rad[i] - q[i]).abs()).fold(0.0, f64::max);
        let et = dist(row.position_mm, sim_mm);
        worst_j = worst_j.max(ej);
        worst_t = worst_t.max(et);
        sq_j += (0..3).map(|i| (row.joints_rad[i] - q[i]).powi(2)).sum::<f64>();
        sq_t += et * et;
        if saturated.iter().any(|&s| s) {
            sat_s += ts;
        }
        out.push(Sample {
            t_s: row.t_s,
            commanded_rad: row.joints_rad,
            simulated_rad: q,
            commanded_mm: row.position_mm,
            simulated_mm: sim_mm,
            volts,
            saturated,
        });
        let plant = Plant {
            full: &full,
            drive,
            volts,
            viscous: params.viscous,
            coulomb: params.coulomb,
            coulomb_rate: params.coulomb_rate,
            failed: std::cell::Cell::new(false),
        };
        let mut stepper = Dopri5::new(plant, row.t_s, row.t_s + ts, ts, y, RTOL, RTOL);
        stepper.integrate().map_err(|e| format!("integration at t = {:.4} s: {e}", row.t_s))?;
        y = *stepper.y_out().last().ok_or("integrator returned nothing")?;
        if y.iter().any(|v| !v.is_finite()) {
            return Err(format!("plant left the reference's domain at t = {:.4} s", row.t_s));
        }
    }
    #[allow(clippy::cast_precision_loss)] // tens of thousands of ticks
    let n = out.len().max(1) as f64;
    let last = out.last().map_or(0.0, |s| dist(s.commanded_mm, s.simulated_mm));
    let summary = Summary {
        feed_forward,
        joint_worst_rad: worst_j,
        joint_rms_rad: (sq_j / (3.0 * n)).sqrt(),
        tool_worst_mm: worst_t,
        tool_rms_mm: (sq_t / n).sqrt(),
        tool_end_mm: last,
        saturated_s: sat_s,
    };
    Ok((out, summary))
}

/// Feed-forward volts at setpoint `k` (see the module header).
fn feed_forward_volts(
    core: &deltakin::Dynamics<f64>,
    robot: &deltakin::Robot<f64>,
    drive: &Drive,
    rows: &[Row],
    k: usize,
    ts: f64,
) -> Result<[f64; 3], String> {
    let row = &rows[k];
    let (prev, next) = (&rows[k.saturating_sub(1)], &rows[(k + 1).min(rows.len() - 1)]);
    let span = (next.t_s - prev.t_s).max(ts);
    let acc: [f64; 3] = std::array::from_fn(|i| (next.rates_rad_s[i] - prev.rates_rad_s[i]) / span);
    let pacc: [f64; 3] = if k > 0 && k + 1 < rows.len() {
        std::array::from_fn(|c| (next.position_mm[c] - 2.0 * row.position_mm[c] + prev.position_mm[c]) / (ts * ts))
    } else {
        [0.0; 3]
    };
    let sol = robot.inverse_unguarded(row.position_mm).map_err(|e| format!("feed-forward at {} s: {e}", row.t_s))?;
    let tau = core
        .torques(row.joints_rad, &sol.jacobian, row.rates_rad_s, acc, pacc)
        .map_err(|e| format!("feed-forward at {} s: {e}", row.t_s))?;
    Ok(std::array::from_fn(|i| {
        let d = &drive.arms[i];
        let n = d.gearbox.ratio;
        let motor_torque = tau[i] * 1e-3 / (d.gearbox.efficiency * n)
            + (d.motor.rotor_inertia + d.gearbox.inertia_at_input) * n * acc[i];
        d.motor.resistance * motor_torque / d.motor.torque_constant + d.motor.back_emf * n * row.rates_rad_s[i]
    }))
}

fn dist(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

/// The CSV of a run: commanded and simulated joints (deg) and tool (mm).
#[must_use]
pub fn csv(samples: &[Sample]) -> String {
    let mut s = String::from(
        "t_s,cmd_theta0_deg,cmd_theta1_deg,cmd_theta2_deg,sim_theta0_deg,sim_theta1_deg,sim_theta2_deg,\
         cmd_x_mm,cmd_y_mm,cmd_z_mm,sim_x_mm,sim_y_mm,sim_z_mm,volts0,volts1,volts2\n",
    );
    for p in samples {
        let mut v = vec![p.t_s];
        v.extend(p.commanded_rad.map(f64::to_degrees));
        v.extend(p.simulated_rad.map(f64::to_degrees));
        v.extend(p.commanded_mm);
        v.extend(p.simulated_mm);
        v.extend(p.volts);
        s += &v.iter().map(|x| format!("{x:.9e}")).collect::<Vec<_>>().join(",");
        s.push('\n');
    }
    s
}
