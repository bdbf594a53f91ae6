//! The core's simplified torques against the full-dynamics reference on a
//! planned program (the demo pick cycle in `deltakin report`).
//!
//! # Method
//! The program is planned in f64 at [`SAMPLE_RATE_HZ`]; both models get
//! the same joint motion at every [`EVERY`]-th setpoint: the streamed
//! joints and rates, and joint accelerations by central differences of the
//! streamed rates (error `O(T^2)` of the rate's third derivative, below
//! 1e-4 of the peak at 4 kHz; at the jump of a trapezoid joint move the
//! difference is the mean of the two sides, for both models alike). The
//! platform acceleration the core needs comes from the reference closure
//! (`FullDynamics::platform_motion`) for the same joint motion. Friction is
//! left out of both (it is the same term in each). The reference uses
//! uniform rods ([`crate::reference::dynamics::RodMass::uniform`]).
//!
//! Figures are N*mm and percent of the reference's peak torque over the
//! program (any arm).

use serde::Serialize;

use crate::cli::ScalarKind;
use crate::config::RobotFile;
use crate::plan::{self, MovesFile};
use crate::reference::PerArmMachine;
use crate::reference::dynamics::{Bodies, FullDynamics};

/// Planning rate of the comparison (Hz).
pub const SAMPLE_RATE_HZ: f64 = 4000.0;

/// Every how many setpoints the two models are compared.
pub const EVERY: usize = 2;

/// The comparison's figures.
#[derive(Clone, Copy, Debug, Serialize, PartialEq)]
pub struct TorqueError {
    /// Setpoints compared.
    pub samples: usize,
    /// Largest reference torque, any arm, N*mm.
    pub peak_nmm: f64,
    /// Largest |simplified - reference|, any arm, N*mm.
    pub worst_nmm: f64,
    /// RMS of the difference over all samples and arms, N*mm.
    pub rms_nmm: f64,
    /// `worst_nmm` in percent of `peak_nmm`.
    pub worst_pct: f64,
    /// `rms_nmm` in percent of `peak_nmm`.
    pub rms_pct: f64,
    /// Time of the worst difference, s.
    pub worst_at_s: f64,
}

/// Compares the two models on `moves` run on `robot_file`. `Ok(None)` when
/// the robot file has no `[dynamics]` table.
///
/// # Errors
/// A message when the program does not plan, or when a model cannot be
/// evaluated at a setpoint (names the time).
pub fn measure(robot_file: &RobotFile, moves: &MovesFile) -> Result<Option<TorqueError>, String> {
    let Some(dyn_file) = robot_file.dynamics else { return Ok(None) };
    let mut params = dyn_file.params();
    params.viscous = [0.0; 3];
    params.coulomb = [0.0; 3];
    let robot = robot_file.robot::<f64>().map_err(|e| e.to_string())?;
    let core = deltakin::Dynamics::new(&params, &robot).map_err(|e| e.to_string())?;
    let machine = PerArmMachine::new(&robot_file.geometry_f64(), &robot_file.corrections_f64());
    let full = FullDynamics::new(&machine, Bodies::from_params(&params, false));
    let (rows, _) =
        plan::plan_with::<f64, f64>(robot_file, moves, SAMPLE_RATE_HZ, ScalarKind::F64).map_err(|e| e.to_string())?;
    let (mut peak, mut worst, mut sum_sq, mut n, mut worst_at) = (0.0f64, 0.0f64, 0.0, 0usize, 0.0);
    for k in (1..rows.len().saturating_sub(1)).step_by(EVERY) {
        let (prev, row, next) = (&rows[k - 1], &rows[k], &rows[k + 1]);
        let dt = next.t_s - prev.t_s;
        let accel: [f64; 3] = std::array::from_fn(|i| (next.rates_rad_s[i] - prev.rates_rad_s[i]) / dt);
        let fail = |what: &str| format!("{what} at t = {:.6} s", row.t_s);
        let reference = full.torques(row.joints_rad, row.rates_rad_s, accel).ok_or_else(|| fail("reference"))?;
        let motion = full
            .platform_motion(row.joints_rad, row.rates_rad_s, Some(accel))
            .ok_or_else(|| fail("reference closure"))?;
        let sol = robot.inverse_unguarded(row.position_mm).map_err(|e| fail(&e.to_string()))?;
        let simplified = core
            .torques(row.joints_rad, &sol.jacobian, row.rates_rad_s, accel, motion.acceleration)
            .map_err(|e| fail(&e.to_string()))?;
        for i in 0..3 {
            let d = simplified[i] - reference[i];
            peak = peak.max(reference[i].abs());
            if d.abs() > worst {
                worst = d.abs();
                worst_at = row.t_s;
            }
            sum_sq += d * d;
            n += 1;
        }
    }
    if n == 0 || peak <= 0.0 {
        return Err("the program has no setpoint to compare".into());
    }
    #[allow(clippy::cast_precision_loss)] // a few tens of thousands
    let rms = (sum_sq / n as f64).sqrt();
    Ok(Some(TorqueError {
        samples: n / 3,
        peak_nmm: peak,
        worst_nmm: worst,
        rms_nmm: rms,
        worst_pct: 100.0 * worst / peak,
        rms_pct: 100.0 * rms / peak,
        worst_at_s: worst_at,
    }))
}

/// [`measure`] on the demo moves file.
///
/// # Errors
/// See [`measure`].
pub fn demo(robot_file: &RobotFile) -> Result<Option<TorqueError>, String> {
    let moves = MovesFile::parse(plan::DEMO_MOVES_TOML).map_err(|e| e.to_string())?;
    measure(robot_file, &moves)
}
