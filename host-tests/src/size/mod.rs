//! `deltakin size`: can a motor and gearbox run a robot's cycle, and how
//! fast can they run the benchmark pick cycle?
//!
//! Given a robot file (with its `[dynamics]` table), a moves file and a
//! drive file, the moves file is planned and streamed (f64, at the servo
//! rate) and treated as one duty cycle, repeated. Along it:
//!
//! * [`profile`]: joint accelerations by central differences of the
//!   stream's rates, the robot file's simplified model's joint torques
//!   (`deltakin::Dynamics`), each arm's load inertia; time stretching;
//! * [`shaft`]: joint to motor shaft through the gearbox (efficiency by
//!   power direction, rotor and gearbox inertia added, reflected inertia
//!   `J / n^2`, winding voltage), RMS and cubic means;
//! * [`verdict`]: per arm the peak and RMS motor torque, peak speed and
//!   voltage, gearbox torques and speed, the load-to-rotor inertia ratio,
//!   each against its limit, and a verdict with the reason;
//! * [`mod@bench`]: the 25/305/25 mm benchmark pick cycle and the highest pick
//!   rate the drive sustains, by a time stretch and bisection;
//! * [`plot`]: the torque-speed picture against the motor's envelope;
//! * [`output`]: the text report.
//!
//! The inertia rule: the robot file's upper-arm inertia is the arm alone;
//! the rotor and gearbox inertia come from the drive file and are added
//! here, at the motor (see [`crate::drive`]).

pub mod bench;
pub mod output;
pub mod plot;
pub mod profile;
pub mod shaft;
pub mod verdict;

use crate::cli::ScalarKind;
use crate::config::RobotFile;
use crate::drive::Drive;
use crate::plan::{self, MovesFile};

use bench::{Bench, Highest};
use profile::Profile;
use verdict::{ArmFigures, Use, Verdict};

/// Default hold at each end of the benchmark cycle (s): the gripper's
/// dwell, as in the demo moves file.
pub const DEFAULT_DWELL_S: f64 = 0.05;
/// Default advice threshold of the load-to-rotor inertia ratio (a rule of
/// thumb for geared servo axes, common practice).
pub const DEFAULT_MAX_INERTIA_RATIO: f64 = 10.0;

/// What `size` is asked.
#[derive(Clone, Debug)]
pub struct Request<'a> {
    /// The robot file (must have `[dynamics]`).
    pub robot: &'a RobotFile,
    /// The moves file: the duty cycle.
    pub moves: &'a MovesFile,
    /// The drive.
    pub drive: &'a Drive,
    /// Servo rate (Hz).
    pub rate_hz: f64,
    /// Centre of the benchmark cycle (mm).
    pub bench_centre_mm: [f64; 3],
    /// Hold at each end of the benchmark cycle (s).
    pub dwell_s: f64,
    /// Advice threshold of the inertia ratio.
    pub max_inertia_ratio: f64,
}

/// The benchmark figures.
#[derive(Clone, Debug)]
pub struct BenchResult {
    /// The planned cycle.
    pub bench: Bench,
    /// Cycles per minute at the moves file's bounds.
    pub per_minute_at_bounds: f64,
    /// The highest use at the moves file's bounds and its arm.
    pub use_at_bounds: (usize, Use),
    /// The highest rate the drive sustains.
    pub highest: Highest,
}

/// Everything `size` found.
#[derive(Clone, Debug)]
pub struct Sizing {
    /// Robot name.
    pub robot_name: String,
    /// The drive.
    pub drive: Drive,
    /// Servo rate (Hz).
    pub rate_hz: f64,
    /// The duty cycle's length (s).
    pub cycle_s: f64,
    /// Per-arm figures over the duty cycle.
    pub figures: [ArmFigures; 3],
    /// Per-arm verdicts.
    pub verdicts: [Verdict; 3],
    /// Advice threshold used.
    pub max_inertia_ratio: f64,
    /// The benchmark.
    pub bench: BenchResult,
}

impl Sizing {
    /// `true` when every arm passes (advice allowed).
    #[must_use]
    pub fn passes(&self) -> bool {
        self.verdicts.iter().all(Verdict::passes)
    }
}

/// Runs the sizing.
///
/// # Errors
/// A message naming the file or the option at fault: no `[dynamics]`
/// table, a robot or moves file the planner refuses, a benchmark centre
/// the stream's guards refuse, a bad rate, dwell or threshold.
pub fn size(req: &Request<'_>) -> Result<Sizing, String> {
    if !(req.rate_hz.is_finite() && req.rate_hz > 0.0) {
        return Err(format!("servo rate {} Hz: must be a finite number above zero", req.rate_hz));
    }
    if !(req.dwell_s.is_finite() && req.dwell_s >= 0.0) {
        return Err(format!("--dwell-s {}: must be a finite number of seconds, zero or more", req.dwell_s));
    }
    if !(req.max_inertia_ratio.is_finite() && req.max_inertia_ratio > 0.0) {
        return Err(format!("--max-inertia-ratio {}: must be a finite number above zero", req.max_inertia_ratio));
    }
    let robot = req.robot.robot::<f64>().map_err(|e| e.to_string())?;
    let dynamics = req
        .robot
        .dynamics(&robot)
        .map_err(|e| e.to_string())?
        .ok_or("robot file: no [dynamics] table (masses and inertias); sizing needs it")?;
    let (rows, summary) = plan::plan_with::<f64, f64>(req.robot, req.moves, req.rate_hz, ScalarKind::F64)
        .map_err(|e| format!("moves file: {e}"))?;
    let profile = Profile::from_rows(&robot, &dynamics, &rows, 1.0 / req.rate_hz)?;
    let loads = profile.loads(&dynamics, 1.0)?;
    let figures = [0, 1, 2].map(|arm| ArmFigures::of(arm, &profile, &loads, &req.drive.arms[arm]));
    let verdicts = [0, 1, 2].map(|arm| figures[arm].verdict(&req.drive.arms[arm], req.max_inertia_ratio));

    let bench = Bench::plan(req.robot, &robot, &dynamics, req.moves, req.rate_hz, req.bench_centre_mm, req.dwell_s)?;
    let at_bounds = bench.figures(&dynamics, req.drive, 1.0)?;
    let use_at_bounds = verdict::highest_of(&at_bounds, req.drive);
    let highest = bench.highest_rate(&dynamics, req.drive)?;
    Ok(Sizing {
        robot_name: req.robot.name.clone(),
        drive: req.drive.clone(),
        rate_hz: req.rate_hz,
        cycle_s: summary.duration_s,
        figures,
        verdicts,
        max_inertia_ratio: req.max_inertia_ratio,
        bench: BenchResult { per_minute_at_bounds: bench.per_minute(1.0), use_at_bounds, highest, bench },
    })
}
