//! The `deltakin` command line: argument parsing, CSV in and out, and
//! dispatch to the core and the report. No kinematics here.
//!
//! Exit status: 0 success; 1 `report` found an enforced gate broken (an
//! accuracy bound, a target budget, ...), `calibrate` a poor fit, `size` a
//! drive failing its verdict; 2 a usage or configuration
//! problem (bad arguments, unreadable or invalid robot, moves, gate or
//! targets file, missing or wrong CSV header, a move `plan` must refuse,
//! I/O failure). A closed stdout pipe (`deltakin plan | head`) is not a
//! failure: the command ends quietly with status 0.

use std::io::{BufWriter, Read, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Args, Parser, Subcommand, ValueEnum};
use deltakin::{Arith, Error, Fixed, FixedWide, Real, Robot, Solution};

use crate::config::{ConfigError, RobotFile};
use crate::crosscheck;
use crate::gates::{self, GateConfig, TargetsFile};
use crate::numtext;
use crate::plan;
use crate::plots;
use crate::report::{self, Report};
use crate::sweep::Density;
use crate::timing;
use crate::volume::{self, VolumeFigures, VolumeGrid};

/// Exit status when `report` finds an enforced gate broken.
pub const EXIT_GATE_FAILED: u8 = 1;
/// Exit status when `calibrate` finds the fit poor or ill-conditioned.
pub const EXIT_POOR_FIT: u8 = 1;
/// Exit status for usage and configuration problems.
pub const EXIT_USAGE: u8 = 2;

/// CSV header `ik` reads and `fk` writes (before `status`).
pub const POSITION_HEADER: [&str; 3] = ["x_mm", "y_mm", "z_mm"];
/// CSV header `fk` reads and `ik` writes (before `status`).
pub const JOINT_HEADER: [&str; 3] = ["theta0_deg", "theta1_deg", "theta2_deg"];
/// Status of a row that is not three numbers.
pub const BAD_ROW: &str = "bad_row";

/// Kinematics of a rotary delta robot: batch inverse and forward
/// kinematics over CSV, an accuracy report, and planned setpoint streams.
///
/// Conventions (frames, units, signs, branches): base frame with z up and
/// the platform below the base (z < 0); arm i at azimuth 120 deg * i; a
/// joint angle is 0 with the upper arm horizontal and positive with the
/// elbow down. Lengths in millimetres, angles in degrees.
#[derive(Debug, Parser)]
#[command(
    name = "deltakin",
    version,
    propagate_version = true,
    after_help = "Exit status: 0 success; 1 `report` found an enforced gate broken; \
                  2 usage or configuration problem (arguments, robot, moves, gate or targets file, \
                  CSV header, a refused move, I/O). A closed output pipe ends quietly with 0."
)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Inverse kinematics: platform positions (CSV from FILE or stdin) to
    /// joint angles (CSV on stdout), row by row.
    ///
    /// Input columns: x_mm,y_mm,z_mm, found by name. Output header:
    /// theta0_deg,theta1_deg,theta2_deg,status, then every other input
    /// column passed through. One output row per input row, in order,
    /// written as it is solved. Every limit and singularity margin of the
    /// robot is enforced (guarded solve, elbow-out branch). status is `ok`
    /// or one word naming the problem (unreachable, joint_limit,
    /// passive_limit, near_serial, near_parallel, non_finite, or bad_row
    /// for a row that is not three numbers), with `_armN` where it
    /// concerns arm N (unreachable_arm2); the angles are empty on a row
    /// that is not `ok`, and the batch goes on. An input status column
    /// (from an earlier stage) is consumed: a row not `ok` keeps its
    /// status. Numbers: the shortest plain decimal that reads back to the
    /// computed value. Blank lines are skipped.
    #[command(after_help = "Example:\n  printf 'x_mm,y_mm,z_mm\\n0,0,-700\\n' | deltakin ik --scalar f32")]
    Ik(SolveArgs),
    /// Forward kinematics: joint angles (CSV from FILE or stdin) to
    /// platform positions (CSV on stdout), row by row; `ik`'s output pipes
    /// into it.
    ///
    /// Input columns: theta0_deg,theta1_deg,theta2_deg, found by name.
    /// Output header: x_mm,y_mm,z_mm,status, then every other input column
    /// passed through (as for `ik`). One output row per input row, in order.
    /// Every limit and singularity margin is enforced (guarded solve,
    /// platform below the elbows). status is `ok` or one word naming the
    /// problem (as for `ik`, plus no_assembly when the arms cannot meet);
    /// the position is empty on a row that is not `ok`.
    #[command(after_help = "Example:\n  printf 'theta0_deg,theta1_deg,theta2_deg\\n20,20,20\\n' | deltakin fk")]
    Fk(SolveArgs),
    /// The release gate: sweep the workspace, cross-check the f64, f32 and
    /// fixed-point cores against the independent f64 reference, find the
    /// usable volume, time the calls on this host, check the gates.
    ///
    /// Prints the robot, the sweep, the worst-case and 99.9th-percentile
    /// IK joint-angle error (microradians) and FK position error
    /// (micrometres) with where they occur, the margins met over the
    /// accepted volume, the status counts, the usable cylinder and ISO
    /// 9283 test cube with its five poses, host time per call (median,
    /// p99.9, worst, share of a 1 to 8 kHz cycle), the target figures
    /// when given, and every gate's verdict. Exits with status 1 when an
    /// enforced gate fails (each one is named), 2 on a usage, robot-file,
    /// gate-file or targets-file problem.
    Report(ReportArgs),
    /// Plan a moves file and stream it: one CSV row per control cycle on
    /// stdout, a summary on stderr.
    ///
    /// Output header:
    /// t_s,x_mm,y_mm,z_mm,theta0_deg,theta1_deg,theta2_deg,omega0_deg_s,omega1_deg_s,omega2_deg_s.
    /// The first row is the start pose at t = 0, at rest; then one row
    /// every 1/rate seconds until the last move ends. Every move is
    /// checked over its whole duration before it is queued (reachability,
    /// joint ranges, passive-joint cones, singularity margins, joint
    /// speeds and accelerations) and slowed down when a joint limit needs
    /// it. The whole program is planned and streamed before any row is
    /// written: a move that no slowing fixes stops the command with exit
    /// status 2, nothing on stdout, and a message naming the move, the time
    /// within it and the limit.
    /// The moves file format is documented in the README and in
    /// examples/demo_moves.toml.
    #[command(after_help = "Example:\n  deltakin plan --moves examples/demo_moves.toml --rate-hz 4000 > setpoints.csv")]
    Plan(PlanArgs),
    /// Calibrate a built machine from measured points, or suggest the
    /// poses to measure.
    ///
    /// Measurements (CSV): theta0_deg,theta1_deg,theta2_deg,x_mm,y_mm,z_mm
    /// (encoder readings before any offset; the position in an instrument
    /// frame whose pose is identified too), or without x_mm,y_mm for probe
    /// mode (z touched on a flat plate of unknown height and tilt). Prints
    /// residuals before and after, each parameter with its standard
    /// deviation, the combinations held at nominal, the observability
    /// index and a verdict. With --suggest-poses N: N joint poses inside
    /// the guarded workspace as CSV theta0_deg,theta1_deg,theta2_deg.
    /// Exit status: 0 accepted, 1 poor fit or ill-conditioned, 2 usage or
    /// input problem (bad rows by line number, too few rows).
    #[command(after_help = "Example:\n  deltakin calibrate --robot examples/demo_robot.toml \
                            --measurements examples/demo_measurements.csv --out calibrated.toml")]
    Calibrate(CalibrateArgs),
    /// Size the drives: can the drive file's motor and gearbox run the
    /// moves file's cycle, and how fast can they run the benchmark pick?
    ///
    /// Per arm over the moves file (one duty cycle, repeated): peak and
    /// RMS torque at the motor shaft, peak speed and winding voltage,
    /// gearbox torques and speed, the load-to-rotor inertia ratio, each
    /// against the drive's limit, and a verdict with the reason. Then the
    /// highest rate of the 25/305/25 mm benchmark pick cycle the drive
    /// sustains (time stretch and bisection). Exit status: 0 every arm
    /// passes, 1 an arm fails its verdict, 2 usage or input problem.
    #[command(after_help = "Example:\n  deltakin size --robot examples/demo_robot.toml \
                            --moves examples/demo_moves.toml --drive examples/demo_drive.toml --plot torque_speed.svg")]
    Size(SizeArgs),
}

/// Options of `size`.
#[derive(Debug, Args)]
pub struct SizeArgs {
    /// Robot file with a `[dynamics]` table; the built-in demo robot when omitted.
    #[arg(long, value_name = "FILE")]
    pub robot: Option<PathBuf>,
    /// Moves file: the duty cycle; the built-in demo moves when omitted.
    #[arg(long, value_name = "FILE")]
    pub moves: Option<PathBuf>,
    /// Drive file (TOML, see examples/demo_drive.toml); the built-in demo drive when omitted.
    #[arg(long, value_name = "FILE")]
    pub drive: Option<PathBuf>,
    /// Servo rate (Hz); default: the drive file's `[servo] rate_hz`, else 4000.
    #[arg(long, value_name = "N")]
    pub rate_hz: Option<f64>,
    /// Centre of the benchmark pick cycle (mm); default: the moves file's start_mm.
    #[arg(long, value_name = "X,Y,Z", value_delimiter = ',', num_args = 3, allow_negative_numbers = true)]
    pub bench_centre_mm: Option<Vec<f64>>,
    /// Hold at each end of the benchmark cycle (s).
    #[arg(long, value_name = "S", default_value_t = crate::size::DEFAULT_DWELL_S)]
    pub dwell_s: f64,
    /// Load-to-rotor inertia ratio above which the verdict adds advice.
    #[arg(long, value_name = "R", default_value_t = crate::size::DEFAULT_MAX_INERTIA_RATIO)]
    pub max_inertia_ratio: f64,
    /// Write the torque-speed picture of the cycle as SVG to FILE.
    #[arg(long, value_name = "FILE")]
    pub plot: Option<PathBuf>,
}

/// Exit status when `size` finds an arm's drive failing its verdict.
pub const EXIT_DRIVE_FAILS: u8 = 1;

/// Options of `calibrate`.
#[derive(Debug, Args)]
pub struct CalibrateArgs {
    /// Nominal robot file (TOML); the built-in demo robot when omitted.
    #[arg(long, value_name = "FILE")]
    pub robot: Option<PathBuf>,
    /// Measurement CSV.
    #[arg(long, value_name = "FILE", required_unless_present = "suggest_poses")]
    pub measurements: Option<PathBuf>,
    /// Stated instrument noise (mm, standard deviation per component).
    #[arg(long, value_name = "MM", default_value_t = DEFAULT_NOISE_MM)]
    pub noise_mm: f64,
    /// Write the calibrated robot file (with an arm_corrections table) to FILE.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Write every figure as JSON to FILE.
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// Write the residuals per point, before and after, as SVG to FILE.
    #[arg(long, value_name = "FILE")]
    pub plot: Option<PathBuf>,
    /// List the residual of every point.
    #[arg(long)]
    pub per_point: bool,
    /// Print N suggested poses (CSV) instead of calibrating.
    #[arg(long, value_name = "N", conflicts_with = "measurements")]
    pub suggest_poses: Option<usize>,
    /// With --suggest-poses: choose them for probe mode (z only).
    #[arg(long, requires = "suggest_poses")]
    pub probe: bool,
}

/// Default of `calibrate --noise-mm`.
pub const DEFAULT_NOISE_MM: f64 = 0.02;

/// Options of `ik` and `fk`.
#[derive(Debug, Args)]
pub struct SolveArgs {
    /// Input CSV file; standard input when omitted or `-`.
    #[arg(value_name = "FILE")]
    pub input: Option<PathBuf>,
    /// Robot file (TOML, see examples/demo_robot.toml); the built-in demo
    /// robot when omitted.
    #[arg(long, value_name = "FILE")]
    pub robot: Option<PathBuf>,
    /// Number type the core computes in.
    #[arg(long, value_enum, default_value_t = ScalarKind::F64)]
    pub scalar: ScalarKind,
}

/// Options of `report`.
#[derive(Debug, Args)]
pub struct ReportArgs {
    /// Robot file (TOML); the built-in demo robot when omitted.
    #[arg(long, value_name = "FILE")]
    pub robot: Option<PathBuf>,
    /// Also write every figure as JSON to FILE.
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// Cartesian (IK) sweep density: grid points per axis; the shell
    /// gets this many squared rays. The reference IK is slow (it samples
    /// the whole circle), so this one is kept coarser.
    #[arg(long, value_name = "N", default_value_t = DEFAULT_IK_GRID,
          value_parser = clap::value_parser!(u16).range(4..=400))]
    pub ik_grid: u16,
    /// Joint (FK) sweep density: grid points per axis; the shell gets this
    /// many squared rays.
    #[arg(long, value_name = "N", default_value_t = DEFAULT_FK_GRID,
          value_parser = clap::value_parser!(u16).range(4..=400))]
    pub fk_grid: u16,
    /// Gate file (TOML): limits over the defaults and the robot file's
    /// gates table. Tables and keys: accuracy (f64|f32|fixed _joint_rad
    /// and _position_mm), host_timing (f32_inverse_median_ns,
    /// f32_forward_median_ns, enforce), targets (required, robot_bytes,
    /// stack_bytes, fixed_over_soft_float, soft_float_targets, and a list
    /// of targets.budget tables). Example: ci/release-gates.toml.
    #[arg(long, value_name = "FILE")]
    pub gates: Option<PathBuf>,
    /// Target figures (JSON from ci/target-report.sh): instructions per
    /// call, stack, flash and robot size on emulated Cortex-M, checked
    /// against the target gates. Without it that section is not run.
    #[arg(long, value_name = "FILE")]
    pub targets: Option<PathBuf>,
    /// Write SVG plots (workspace slices, error map, pick-cycle profiles)
    /// into DIR (created if missing).
    #[arg(long, value_name = "DIR")]
    pub plots: Option<PathBuf>,
    /// Skip the host timing (its goal then shows as not run).
    #[arg(long)]
    pub no_timing: bool,
}

/// Options of `plan`.
#[derive(Debug, Args)]
pub struct PlanArgs {
    /// Robot file (TOML); the built-in demo robot when omitted.
    #[arg(long, value_name = "FILE")]
    pub robot: Option<PathBuf>,
    /// Moves file (TOML, see examples/demo_moves.toml).
    #[arg(long, value_name = "FILE")]
    pub moves: PathBuf,
    /// Control rate (Hz): one setpoint every 1/N seconds.
    #[arg(long, value_name = "N", default_value_t = DEFAULT_RATE_HZ)]
    pub rate_hz: f64,
    /// Number type the stream computes in (planning runs in f32 for
    /// `fixed`, as on a target without a double-precision unit).
    #[arg(long, value_enum, default_value_t = ScalarKind::F32)]
    pub scalar: ScalarKind,
}

/// Default of `plan --rate-hz` (common practice for servo loops: 1-4 kHz).
pub const DEFAULT_RATE_HZ: f64 = 4000.0;

/// Default of `report --ik-grid`.
pub const DEFAULT_IK_GRID: u16 = 32;
/// Default of `report --fk-grid`.
pub const DEFAULT_FK_GRID: u16 = 64;

/// The number type `ik` and `fk` compute in.
///
/// A new number type becomes a new variant here, a [`CliScalar`]
/// implementation below, and one arm in `ScalarKind::dispatch`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum ScalarKind {
    /// 32-bit float (the firmware path on parts with an FPU).
    F32,
    /// 64-bit float.
    F64,
    /// 32-bit fixed point (the firmware path on parts without an FPU):
    /// `Fixed` inside, `FixedWide` millimetres at the API.
    Fixed,
}

/// Something generic over the core's number type, run by
/// [`ScalarKind::dispatch`].
trait WithScalar {
    type Output;
    fn run<S: CliScalar>(self) -> Self::Output;
}

impl ScalarKind {
    fn dispatch<W: WithScalar>(self, job: W) -> W::Output {
        match self {
            ScalarKind::F32 => job.run::<f32>(),
            ScalarKind::F64 => job.run::<f64>(),
            ScalarKind::Fixed => job.run::<Fixed>(),
        }
    }
}

/// How the CLI reads numbers into, and prints numbers from, one of the
/// core's number types: angles in the type itself, lengths in its API
/// type [`deltakin::Arith::Wide`].
pub trait CliScalar: Real {
    /// An input angle (rad), or the status word for a number this type
    /// cannot take. Floats keep NaN and infinities so the core itself
    /// reports them (`non_finite`).
    ///
    /// # Errors
    /// The status word to print.
    fn angle_in(v: f64) -> Result<Self, &'static str>;

    /// An input length (mm), as [`CliScalar::angle_in`].
    ///
    /// # Errors
    /// The status word to print.
    fn length_in(v: f64) -> Result<Self::Wide, &'static str>;

    /// Prints `v` (an output in CSV units, computed from a value of this
    /// type) with as many digits as this type carries: the shortest text
    /// that reads back to the same value.
    fn print(v: f64) -> String;
}

impl CliScalar for f64 {
    fn angle_in(v: f64) -> Result<Self, &'static str> {
        Ok(v)
    }

    fn length_in(v: f64) -> Result<Self, &'static str> {
        Ok(v)
    }

    fn print(v: f64) -> String {
        numtext::text(v, numtext::Precision::F64)
    }
}

impl CliScalar for f32 {
    fn angle_in(v: f64) -> Result<Self, &'static str> {
        // Rounds to nearest; beyond the f32 range this gives an infinity,
        // which the core reports as non_finite.
        #[allow(clippy::cast_possible_truncation)]
        Ok(v as f32)
    }

    fn length_in(v: f64) -> Result<Self, &'static str> {
        Self::angle_in(v)
    }

    fn print(v: f64) -> String {
        numtext::text(v, numtext::Precision::F32)
    }
}

/// Status word for a finite number outside the fixed-point range.
pub const OUT_OF_RANGE: &str = "out_of_range";

fn fixed_in<T: Arith>(v: f64) -> Result<T, &'static str> {
    if !v.is_finite() {
        return Err("non_finite");
    }
    T::from_f64(v).ok_or(OUT_OF_RANGE)
}

impl CliScalar for Fixed {
    fn angle_in(v: f64) -> Result<Self, &'static str> {
        fixed_in(v)
    }

    fn length_in(v: f64) -> Result<FixedWide, &'static str> {
        fixed_in(v)
    }

    fn print(v: f64) -> String {
        // Every fixed-point value is exactly an f64; its shortest f64 text
        // reads back to the same fixed-point value.
        numtext::text(v, numtext::Precision::F64)
    }
}

/// A whole-command failure: one message, exit status 2.
#[derive(Debug)]
pub struct Failure(pub String);

impl From<ConfigError> for Failure {
    fn from(e: ConfigError) -> Self {
        Failure(e.to_string())
    }
}

fn load_robot(path: Option<&Path>) -> Result<RobotFile, Failure> {
    RobotFile::load(path).map_err(Failure::from)
}

/// Which direction a batch solves.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Direction {
    Inverse,
    Forward,
}

impl Direction {
    fn headers(self) -> ([&'static str; 3], [&'static str; 3]) {
        match self {
            Direction::Inverse => (POSITION_HEADER, JOINT_HEADER),
            Direction::Forward => (JOINT_HEADER, POSITION_HEADER),
        }
    }
}

/// How a batch ended early: a whole-command failure, or the reader of
/// stdout went away (a closed pipe, as in `deltakin ik | head`), which
/// ends the command quietly with status 0.
enum Stop {
    Failed(Failure),
    Closed,
}

impl From<Failure> for Stop {
    fn from(f: Failure) -> Self {
        Stop::Failed(f)
    }
}

impl From<ConfigError> for Stop {
    fn from(e: ConfigError) -> Self {
        Stop::Failed(Failure::from(e))
    }
}

/// True for the error a write to a closed pipe gives.
fn closed_pipe(e: &std::io::Error) -> bool {
    e.kind() == std::io::ErrorKind::BrokenPipe
}

/// A failed write: quiet for a closed pipe, a message otherwise.
fn write_stop(e: &std::io::Error) -> Stop {
    if closed_pipe(e) { Stop::Closed } else { Stop::Failed(Failure(format!("cannot write stdout: {e}"))) }
}

/// Bytes of input the CSV reader holds at a time (and the output buffer's
/// size): memory stays bounded whatever the length of the input.
pub const BATCH_BUFFER_BYTES: usize = 64 * 1024;

/// One CSV batch through the guarded core, row by row.
struct Batch<'a, R, W> {
    direction: Direction,
    robot: &'a RobotFile,
    input: R,
    output: W,
}

impl<R: Read, W: Write> WithScalar for Batch<'_, R, W> {
    type Output = Result<(), Stop>;

    fn run<S: CliScalar>(self) -> Self::Output {
        let robot = self.robot.robot::<S>()?;
        solve_batch(&robot, self.direction, self.input, self.output)
    }
}

/// The status column of a failed row: the error's word, and the arm
/// (`_arm0`, `_arm1`, `_arm2`) where the error concerns one arm, as
/// `unreachable_arm2` or `joint_limit_arm0`.
#[must_use]
pub fn status_text(e: &Error) -> String {
    match e.arm() {
        Some(arm) => format!("{}_arm{arm}", e.status_word()),
        None => e.status_word().to_owned(),
    }
}

/// Solves one parsed row (CSV units): the three output numbers as text,
/// or the status for a row that is not `ok`.
fn solve_row<S: CliScalar>(robot: &Robot<S>, direction: Direction, values: [f64; 3]) -> Result<[String; 3], String> {
    fn all3<T>(v: [Result<T, &'static str>; 3]) -> Result<[T; 3], String> {
        let [a, b, c] = v;
        Ok([a?, b?, c?])
    }
    let solved: Result<Solution<S>, Error> = match direction {
        Direction::Inverse => robot.inverse(all3(values.map(S::length_in))?),
        Direction::Forward => robot.forward(all3(values.map(|v| S::angle_in(v.to_radians())))?),
    };
    let s = solved.map_err(|e| status_text(&e))?;
    let out = match direction {
        Direction::Inverse => s.joints.map(|t| t.to_f64().to_degrees()),
        Direction::Forward => s.position.map(Arith::to_f64),
    };
    Ok(out.map(S::print))
}

/// Where the columns of an input header are.
struct Columns {
    /// The three input values, in the order of the direction's header.
    values: [usize; 3],
    /// A `status` column from an earlier stage (`ik`'s output into `fk`).
    status: Option<usize>,
    /// Every other column, passed through in order.
    passed: Vec<usize>,
    /// The output header.
    header: Vec<String>,
}

/// Finds the input columns by name. Other columns are passed through
/// after `status` (renamed `in_NAME` where NAME is an output column).
fn columns(direction: Direction, header: &[String]) -> Result<Columns, Failure> {
    let (in_header, out_header) = direction.headers();
    let want = in_header.join(",");
    let find = |name: &str| -> Result<usize, Failure> {
        let mut at = header.iter().enumerate().filter(|(_, h)| h.as_str() == name).map(|(i, _)| i);
        match (at.next(), at.next()) {
            (Some(i), None) => Ok(i),
            (None, _) => Err(Failure(format!(
                "wrong CSV header: no column {name} (expected {want}, other columns are passed through), found {}",
                header.join(",")
            ))),
            (Some(_), Some(_)) => Err(Failure(format!("wrong CSV header: column {name} appears twice"))),
        }
    };
    let values = [find(in_header[0])?, find(in_header[1])?, find(in_header[2])?];
    let status = match header.iter().filter(|h| h.as_str() == "status").count() {
        0 => None,
        1 => Some(find("status")?),
        _ => return Err(Failure("wrong CSV header: column status appears twice".into())),
    };
    let passed: Vec<usize> = (0..header.len()).filter(|i| !values.contains(i) && status != Some(*i)).collect();
    let mut out: Vec<String> = out_header.iter().map(|&h| h.to_owned()).collect();
    out.push("status".into());
    for &i in &passed {
        let name = header.get(i).map_or("", String::as_str);
        out.push(if out_header.contains(&name) { format!("in_{name}") } else { name.to_owned() });
    }
    Ok(Columns { values, status, passed, header: out })
}

/// Reads `input` one record at a time (a buffer of
/// [`BATCH_BUFFER_BYTES`]) and writes each row as soon as it is solved.
fn solve_batch<S: CliScalar, R: Read, W: Write>(
    robot: &Robot<S>,
    direction: Direction,
    input: R,
    output: W,
) -> Result<(), Stop> {
    let (in_header, _) = direction.headers();
    let want = in_header.join(",");
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .buffer_capacity(BATCH_BUFFER_BYTES)
        .from_reader(input);
    let mut record = csv::ByteRecord::new();
    let read_failure = |e: csv::Error, what: &str| Stop::Failed(Failure(format!("cannot read {what}: {e}")));
    match reader.read_byte_record(&mut record) {
        Ok(true) => {}
        Ok(false) => return Err(Stop::Failed(Failure(format!("no input: expected the CSV header {want}")))),
        Err(e) => return Err(read_failure(e, "the CSV header")),
    }
    let header: Vec<String> = record.iter().map(|f| String::from_utf8_lossy(f).trim().to_owned()).collect();
    let cols = columns(direction, &header)?;
    let width = header.len();
    let mut writer = csv::WriterBuilder::new().buffer_capacity(BATCH_BUFFER_BYTES).from_writer(output);
    let stop = |e: csv::Error| match e.into_kind() {
        csv::ErrorKind::Io(e) => write_stop(&e),
        other => Stop::Failed(Failure(format!("cannot write stdout: {other:?}"))),
    };
    writer.write_record(&cols.header).map_err(stop)?;
    let mut row: Vec<Vec<u8>> = Vec::with_capacity(cols.header.len());
    let mut line = 1usize;
    loop {
        line += 1;
        let good = match reader.read_byte_record(&mut record) {
            Ok(false) => break,
            Ok(true) => true,
            // A malformed record (bad quoting, bad UTF-8) is a bad row; an
            // I/O error is not.
            Err(e) if matches!(e.kind(), csv::ErrorKind::Io(_)) => {
                return Err(read_failure(e, &format!("input line {line}")));
            }
            Err(_) => false,
        };
        let field = |i: usize| record.get(i).map(|f| String::from_utf8_lossy(f).trim().to_owned());
        let number = |i: usize| field(i).and_then(|t| t.parse::<f64>().ok());
        let upstream = cols.status.and_then(field).filter(|s| !s.is_empty() && s != "ok");
        let result = if !good || record.len() != width {
            Err(BAD_ROW.to_owned())
        } else if let Some(status) = upstream {
            // Failed at an earlier stage: keep its status.
            Err(status)
        } else {
            match cols.values.map(number) {
                [Some(a), Some(b), Some(c)] => solve_row(robot, direction, [a, b, c]),
                _ => Err(BAD_ROW.to_owned()),
            }
        };
        row.clear();
        match result {
            Ok(values) => {
                row.extend(values.map(String::into_bytes));
                row.push(b"ok".to_vec());
            }
            Err(status) => {
                row.extend([Vec::new(), Vec::new(), Vec::new()]);
                row.push(status.into_bytes());
            }
        }
        for &i in &cols.passed {
            row.push(if good { record.get(i).unwrap_or_default().to_vec() } else { Vec::new() });
        }
        writer.write_record(&row).map_err(stop)?;
    }
    writer.flush().map_err(|e| write_stop(&e))
}

fn run_batch(args: &SolveArgs, direction: Direction) -> Result<ExitCode, Failure> {
    let robot = load_robot(args.robot.as_deref())?;
    let output = std::io::stdout().lock();
    let result = match args.input.as_deref().filter(|p| *p != Path::new("-")) {
        None => args.scalar.dispatch(Batch { direction, robot: &robot, input: std::io::stdin().lock(), output }),
        Some(path) => {
            let file =
                std::fs::File::open(path).map_err(|e| Failure(format!("cannot read {}: {e}", path.display())))?;
            args.scalar.dispatch(Batch { direction, robot: &robot, input: file, output })
        }
    };
    match result {
        Ok(()) | Err(Stop::Closed) => Ok(ExitCode::SUCCESS),
        Err(Stop::Failed(f)) => Err(f),
    }
}

/// The volume search's density for an IK sweep density: coarser for a
/// quick (small-grid) report, the full default from 30 points per axis.
fn volume_grid(ik: Density) -> VolumeGrid {
    let full = VolumeGrid::default();
    VolumeGrid {
        levels: (4 * ik.grid).clamp(16, full.levels),
        rays: (2 * ik.grid).clamp(12, full.rays),
        cube_points: if ik.grid >= 16 { full.cube_points } else { 5 },
    }
}

fn run_plan(args: &PlanArgs) -> Result<ExitCode, Failure> {
    let robot = load_robot(args.robot.as_deref())?;
    let text = std::fs::read_to_string(&args.moves)
        .map_err(|e| Failure(format!("cannot read moves file {}: {e}", args.moves.display())))?;
    // `plan::run` writes only once the whole program has run: a refused
    // move leaves stdout empty.
    let mut stdout = BufWriter::new(std::io::stdout().lock());
    let summary = match plan::run(&robot, &text, args.rate_hz, args.scalar, &mut stdout)
        .and_then(|summary| stdout.flush().map(|()| summary).map_err(plan::PlanError::Io))
    {
        Ok(summary) => summary,
        // The reader went away (`deltakin plan | head`): end quietly.
        Err(plan::PlanError::Io(e)) if closed_pipe(&e) => return Ok(ExitCode::SUCCESS),
        // A robot-file problem names the robot file, not the moves file.
        Err(plan::PlanError::Robot(e)) => return Err(Failure::from(e)),
        Err(plan::PlanError::Io(e)) => return Err(Failure(format!("cannot write stdout: {e}"))),
        Err(e) => return Err(Failure(format!("{}: {e}", args.moves.display()))),
    };
    eprintln!("{summary}");
    Ok(ExitCode::SUCCESS)
}

/// Writes `text` to stdout: `Ok(false)` when the reader went away (a
/// closed pipe, which ends a command quietly with status 0).
fn write_stdout(text: &str) -> Result<bool, Failure> {
    let mut stdout = std::io::stdout().lock();
    match stdout.write_all(text.as_bytes()).and_then(|()| stdout.flush()) {
        Ok(()) => Ok(true),
        Err(e) if closed_pipe(&e) => Ok(false),
        Err(e) => Err(Failure(format!("cannot write stdout: {e}"))),
    }
}

fn run_report(args: &ReportArgs) -> Result<ExitCode, Failure> {
    let robot = load_robot(args.robot.as_deref())?;
    let mut layers = Vec::new();
    if let Some(g) = &robot.gates {
        layers.push(g.clone());
    }
    if let Some(path) = &args.gates {
        layers.push(GateConfig::read_layer(path).map_err(Failure)?);
    }
    let gate_limits = GateConfig::from_layers(layers).map_err(Failure)?;
    let targets = args.targets.as_deref().map(TargetsFile::load).transpose().map_err(Failure)?;
    if let Some(dir) = &args.plots {
        std::fs::create_dir_all(dir).map_err(|e| Failure(format!("cannot create {}: {e}", dir.display())))?;
    }
    let ik = Density { grid: usize::from(args.ik_grid) };
    let fk = Density { grid: usize::from(args.fk_grid) };
    let started = std::time::Instant::now();
    let findings = crosscheck::run(&robot, args.robot.is_none(), ik, fk, &gate_limits.accuracy.bounds())?;
    let r64 = robot.robot::<f64>()?;
    let grid = volume_grid(ik);
    let usable = volume::usable_volume(&r64, grid);
    let volume = usable.as_ref().map(|v| VolumeFigures::of(v, grid));
    let centre = usable.as_ref().map(|v| v.cube.centre_mm).or(findings.ik.shell_centre).unwrap_or([0.0; 3]);
    let host_timing = if args.no_timing {
        None
    } else {
        Some(timing::run(&robot, &findings.ik_accepted, &findings.fk_accepted, centre)?)
    };
    let plots = match &args.plots {
        Some(dir) => {
            plots::write_all(dir, &robot, usable.as_ref(), ik, gate_limits.accuracy.f32_joint_rad).map_err(Failure)?
        }
        None => Vec::new(),
    };
    let torque_check = crate::torque_error::demo(&robot).map_err(|e| format!("demo program: {e}"));
    let mut gates = gates::evaluate(&gate_limits, &findings, host_timing.as_ref(), targets.as_ref());
    gates.extend(gates::torque_model(&torque_check));
    let torque_model = torque_check.ok().flatten();
    let passed = Report::gates_pass(&gates);
    let full =
        Report { accuracy: findings, volume, host_timing, targets, gate_limits, gates, passed, plots, torque_model };
    let text = report::tables(&full);
    // A closed pipe (`deltakin report | head`) is quiet; the JSON and the
    // gate verdict's exit status still follow.
    write_stdout(&text)?;
    if let Some(path) = &args.json {
        report::write_json(&full, path).map_err(Failure)?;
    }
    eprintln!("deltakin report: done in {:.1} s", started.elapsed().as_secs_f64());
    Ok(if passed { ExitCode::SUCCESS } else { ExitCode::from(EXIT_GATE_FAILED) })
}

fn run_calibrate(args: &CalibrateArgs) -> Result<ExitCode, Failure> {
    use crate::calibrate::{fit, measurements, model::Mode, output, plot, poses};
    let robot = load_robot(args.robot.as_deref())?;
    if let Some(n) = args.suggest_poses {
        let mode = if args.probe { Mode::Probe } else { Mode::Position };
        let joints = poses::suggest_for(&robot, mode, n)?;
        let mut out = String::from("theta0_deg,theta1_deg,theta2_deg\n");
        for j in joints {
            let d = j.map(f64::to_degrees);
            out += &format!("{:?},{:?},{:?}\n", d[0], d[1], d[2]);
        }
        write_stdout(&out)?;
        return Ok(ExitCode::SUCCESS);
    }
    if !(args.noise_mm.is_finite() && args.noise_mm > 0.0) {
        return Err(Failure(format!("--noise-mm {}: must be a positive number of millimetres", args.noise_mm)));
    }
    let path = args.measurements.as_deref().ok_or_else(|| Failure("--measurements FILE is required".into()))?;
    let text = std::fs::read_to_string(path).map_err(|e| Failure(format!("{}: {e}", path.display())))?;
    let (mode, points) = measurements::parse(&text).map_err(|e| Failure(format!("{}: {e}", path.display())))?;
    let fit = fit::fit_robot(&robot, mode, &points).map_err(|e| Failure(format!("{}: {e}", path.display())))?;
    write_stdout(&output::text(&fit, args.noise_mm, args.per_point))?;
    if let Some(out) = &args.out {
        let original = match &args.robot {
            Some(p) => std::fs::read_to_string(p).map_err(|e| Failure(format!("{}: {e}", p.display())))?,
            None => crate::config::DEMO_ROBOT_TOML.to_owned(),
        };
        let calibrated = output::calibrated_robot(&original, &fit).map_err(Failure)?;
        std::fs::write(out, calibrated).map_err(|e| Failure(format!("{}: {e}", out.display())))?;
    }
    if let Some(j) = &args.json {
        let text =
            serde_json::to_string_pretty(&output::json(&fit, args.noise_mm)).map_err(|e| Failure(e.to_string()))?;
        std::fs::write(j, text).map_err(|e| Failure(format!("{}: {e}", j.display())))?;
    }
    if let Some(p) = &args.plot {
        plot::residuals(p, &fit, args.noise_mm).map_err(|e| Failure(format!("{}: {e}", p.display())))?;
    }
    Ok(if fit.accepted(args.noise_mm) { ExitCode::SUCCESS } else { ExitCode::from(EXIT_POOR_FIT) })
}

fn run_size(args: &SizeArgs) -> Result<ExitCode, Failure> {
    use crate::size::{self, Request};
    let robot = load_robot(args.robot.as_deref())?;
    let (moves_text, moves_name) = match &args.moves {
        Some(p) => (
            std::fs::read_to_string(p).map_err(|e| Failure(format!("cannot read moves file {}: {e}", p.display())))?,
            p.display().to_string(),
        ),
        None => (plan::DEMO_MOVES_TOML.to_owned(), "demo moves".to_owned()),
    };
    let moves = plan::MovesFile::parse(&moves_text).map_err(|e| Failure(format!("{moves_name}: {e}")))?;
    let drive = crate::drive::Drive::load(args.drive.as_deref()).map_err(|e| Failure(e.to_string()))?;
    let centre = match args.bench_centre_mm.as_deref() {
        None => moves.start_mm,
        Some(&[x, y, z]) => [x, y, z],
        Some(_) => return Err(Failure("--bench-centre-mm takes three numbers X,Y,Z".into())),
    };
    let request = Request {
        robot: &robot,
        moves: &moves,
        drive: &drive,
        rate_hz: args.rate_hz.or(drive.servo_rate_hz).unwrap_or(DEFAULT_RATE_HZ),
        bench_centre_mm: centre,
        dwell_s: args.dwell_s,
        max_inertia_ratio: args.max_inertia_ratio,
    };
    let sizing = size::size(&request).map_err(Failure)?;
    print!("{}", size::output::text(&sizing));
    if let Some(p) = &args.plot {
        let title = format!("Torque and speed at the motor over the cycle: {}", drive.name);
        size::plot::torque_speed(p, &title, &sizing.figures, &drive)
            .map_err(|e| Failure(format!("{}: {e}", p.display())))?;
    }
    Ok(if sizing.passes() { ExitCode::SUCCESS } else { ExitCode::from(EXIT_DRIVE_FAILS) })
}

/// Runs the parsed command line.
#[must_use]
pub fn run(cli: &Cli) -> ExitCode {
    let result = match &cli.command {
        Command::Ik(args) => run_batch(args, Direction::Inverse),
        Command::Fk(args) => run_batch(args, Direction::Forward),
        Command::Report(args) => run_report(args),
        Command::Plan(args) => run_plan(args),
        Command::Calibrate(args) => run_calibrate(args),
        Command::Size(args) => run_size(args),
    };
    result.unwrap_or_else(|Failure(message)| {
        eprintln!("deltakin: {message}");
        ExitCode::from(EXIT_USAGE)
    })
}

/// Parses the process arguments and runs them. Usage errors print clap's
/// message and exit with status 2; `--help` and `--version` exit 0.
#[must_use]
pub fn main() -> ExitCode {
    run(&Cli::parse())
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    #[test]
    fn clap_definition_is_consistent() {
        Cli::command().debug_assert();
    }

    fn batch(direction: Direction, input: &[u8]) -> Result<Vec<u8>, Stop> {
        let robot = RobotFile::demo().robot::<f64>().unwrap();
        let mut out = Vec::new();
        solve_batch(&robot, direction, input, &mut out).map(|()| out)
    }

    #[test]
    fn header_mismatch_and_missing_header_fail() {
        assert!(batch(Direction::Inverse, b"").is_err());
        assert!(batch(Direction::Inverse, b"x,y,z\n1,2,3\n").is_err());
        assert!(batch(Direction::Forward, b"x_mm,y_mm,z_mm\n").is_err());
        assert!(batch(Direction::Inverse, b"x_mm,y_mm,z_mm,x_mm\n").is_err());
        let ok = batch(Direction::Forward, b"theta0_deg,theta1_deg,theta2_deg\n").ok().unwrap();
        assert_eq!(ok, b"x_mm,y_mm,z_mm,status\n");
    }

    #[test]
    fn columns_are_found_by_name_and_the_rest_passed_through() {
        let out =
            batch(Direction::Inverse, b"id,z_mm,y_mm,x_mm,theta0_deg\nA,-700,0,0,q\nB,-5000,0,0,r\n").ok().unwrap();
        let text = String::from_utf8(out).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines[0], "theta0_deg,theta1_deg,theta2_deg,status,id,in_theta0_deg");
        assert!(lines[1].ends_with(",ok,A,q"), "{}", lines[1]);
        assert!(lines[2].starts_with(",,,unreachable_arm"), "{}", lines[2]);
        assert!(lines[2].ends_with(",B,r"), "{}", lines[2]);
    }

    #[test]
    fn a_failed_status_from_an_earlier_stage_is_kept() {
        let out =
            batch(Direction::Forward, b"theta0_deg,theta1_deg,theta2_deg,status\n,,,unreachable_arm1\n10,10,10,ok\n")
                .ok()
                .unwrap();
        let text = String::from_utf8(out).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines, ["x_mm,y_mm,z_mm,status", ",,,unreachable_arm1", lines[2]]);
        assert!(lines[2].ends_with(",ok"), "{}", lines[2]);
    }

    #[test]
    fn f32_prints_shortest_round_trip_of_the_f32_value() {
        let v = f64::from(0.1f32);
        assert_eq!(<f32 as CliScalar>::print(v), "0.1");
        assert_eq!(<f64 as CliScalar>::print(v), "0.10000000149011612");
    }
}
