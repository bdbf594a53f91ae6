//! `deltakin plan`: run a moves file through the motion stream and write
//! one CSV row per control cycle.
//!
//! # The moves file
//! TOML, units in the key names, unknown keys refused. The moves run in
//! order; each starts where the previous one ends.
//!
//! ```toml
//! start_mm = [0.0, 0.0, -700.0]      # where the platform rests first
//!
//! [joint_limits]                     # checked on every cycle
//! speed_deg_s = 720.0                # or a list of three, one per arm
//! accel_deg_s2 = 15000.0
//!
//! [cartesian]                        # defaults for line and pick moves
//! law = "s_curve"                    # "trapezoid", "s_curve" or "poly7"
//! speed_mm_s = 2500.0
//! accel_mm_s2 = 40000.0
//! jerk_mm_s3 = 2.0e6
//! corner_tolerance_mm = 0.5          # optional: join consecutive lines
//!
//! [joint]                            # defaults for joint moves
//! law = "trapezoid"
//! speed_deg_s = 180.0
//! accel_deg_s2 = 1500.0
//! jerk_deg_s3 = 30000.0
//!
//! [[move]]
//! kind = "line"                      # straight line
//! to_mm = [-152.5, 60.0, -760.0]
//! speed_mm_s = 500.0                 # any default may be overridden
//!
//! [[move]]
//! kind = "pick"                      # rise, traverse, descend
//! to_mm = [152.5, 60.0, -760.0]
//! lift_mm = 25.0                     # traverse height above the higher end
//! blend_radius_mm = 10.0             # corner arcs
//!
//! [[move]]
//! kind = "dwell"
//! duration_s = 0.05
//!
//! [[move]]
//! kind = "joint"                     # joint-space straight line
//! to_deg = [20.0, 20.0, 20.0]
//! ```
//!
//! The `[cartesian]` and `[joint]` sections may be left out when every
//! move of that kind gives its own law and bounds.
//!
//! `corner_tolerance_mm` switches on joined corners: a line that follows
//! a line passes their corner without stopping, on a tangent arc at most
//! that far from the corner point, when the corner allows it (not a
//! reversal, and faster than stopping); up to four consecutive lines run
//! as one move. See the `Stream` docs of the core for the rule. Without
//! it every move ends at rest. The summary lists the moves that were
//! joined to the one before.
//!
//! # Output
//! CSV with the header
//! `t_s,x_mm,y_mm,z_mm,theta0_deg,theta1_deg,theta2_deg,omega0_deg_s,omega1_deg_s,omega2_deg_s`,
//! a first row at `t = 0` (the start pose, at rest) and then one row per
//! cycle. Numbers follow the CLI's one format ([`crate::numtext`]): the
//! shortest plain decimal that reads back to the same value at the
//! precision of the number type that computed it (time in `f64`). A [`Summary`] goes to the caller (the CLI prints
//! it on stderr). Nothing is written until every move has been accepted
//! and streamed, so a refused program leaves the output empty.
//!
//! # Errors
//! A number of the robot or moves file that is NaN, infinite or beyond
//! the number type is refused with its key (`moves file: move 6 (pick)
//! lift_mm is not a finite number (nan)`); a refused move is named by its
//! index (from 0), its place in the file and what it is.

use std::fmt;
use std::io::Write;

use deltakin::motion::{Bounds, JointRateLimits, Law, MotionError, Move, Stream};
use deltakin::{Arith, Fixed, Real};
use serde::Deserialize;

use crate::cli::ScalarKind;
use crate::config::{BadNumber, ConfigError, PerArm, RobotFile, number, per_arm};
use crate::numtext::{self, Precision};

/// Moves the stream's queue holds (the one running included).
pub const QUEUE_CAPACITY: usize = 8;

/// The name of a number type on the command line.
#[must_use]
pub const fn scalar_name(scalar: ScalarKind) -> &'static str {
    match scalar {
        ScalarKind::F32 => "f32",
        ScalarKind::F64 => "f64",
        ScalarKind::Fixed => "fixed",
    }
}

/// A time law by name.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum LawName {
    /// Trapezoidal velocity.
    Trapezoid,
    /// Seven-segment S-curve.
    SCurve,
    /// 4-5-6-7 polynomial.
    Poly7,
}

impl From<LawName> for Law {
    fn from(l: LawName) -> Self {
        match l {
            LawName::Trapezoid => Law::Trapezoid,
            LawName::SCurve => Law::SCurve,
            LawName::Poly7 => Law::Poly7,
        }
    }
}

/// `[joint_limits]`.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
#[allow(missing_docs)]
pub struct JointLimitsFile {
    pub speed_deg_s: PerArm,
    pub accel_deg_s2: PerArm,
}

/// `[cartesian]`: defaults for line and pick moves.
#[derive(Clone, Copy, Debug, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
#[allow(missing_docs)]
pub struct CartesianDefaults {
    pub law: Option<LawName>,
    pub speed_mm_s: Option<f64>,
    pub accel_mm_s2: Option<f64>,
    pub jerk_mm_s3: Option<f64>,
    /// Corner tolerance for joining consecutive lines (mm); absent: no joins.
    pub corner_tolerance_mm: Option<f64>,
}

/// `[joint]`: defaults for joint moves.
#[derive(Clone, Copy, Debug, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
#[allow(missing_docs)]
pub struct JointDefaults {
    pub law: Option<LawName>,
    pub speed_deg_s: Option<f64>,
    pub accel_deg_s2: Option<f64>,
    pub jerk_deg_s3: Option<f64>,
}

/// One `[[move]]`.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
#[allow(missing_docs)]
pub enum MoveEntry {
    Line {
        to_mm: [f64; 3],
        law: Option<LawName>,
        speed_mm_s: Option<f64>,
        accel_mm_s2: Option<f64>,
        jerk_mm_s3: Option<f64>,
    },
    Pick {
        to_mm: [f64; 3],
        lift_mm: f64,
        blend_radius_mm: f64,
        law: Option<LawName>,
        speed_mm_s: Option<f64>,
        accel_mm_s2: Option<f64>,
        jerk_mm_s3: Option<f64>,
    },
    Dwell {
        duration_s: f64,
    },
    Joint {
        to_deg: [f64; 3],
        law: Option<LawName>,
        speed_deg_s: Option<f64>,
        accel_deg_s2: Option<f64>,
        jerk_deg_s3: Option<f64>,
    },
}

/// A whole moves file.
#[derive(Clone, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct MovesFile {
    /// Where the platform rests before the first move (mm).
    pub start_mm: [f64; 3],
    /// Joint speed and acceleration limits.
    pub joint_limits: JointLimitsFile,
    /// Defaults for Cartesian moves.
    #[serde(default)]
    pub cartesian: CartesianDefaults,
    /// Defaults for joint moves.
    #[serde(default)]
    pub joint: JointDefaults,
    /// The moves, in order.
    #[serde(rename = "move", default)]
    pub moves: Vec<MoveEntry>,
}

/// Why a plan could not be run.
#[derive(Debug)]
#[non_exhaustive]
pub enum PlanError {
    /// The moves file is not valid TOML in the documented format, or a
    /// move lacks a law or bound that has no default.
    Parse(String),
    /// The robot could not be built.
    Robot(ConfigError),
    /// The rate is not a positive finite number representable in the scalar.
    Rate(f64),
    /// A number of the moves file is not finite or not representable in
    /// the number type (the key is named).
    Number(BadNumber),
    /// The start pose or the limits were refused.
    Start(MotionError),
    /// Move `index` (0-based) was refused; `time_s` is the first offending
    /// time within the move. Nothing was written.
    Move {
        /// Index in the file, from 0.
        index: usize,
        /// The move in words (`line to [0, 0, -1300] mm`).
        what: String,
        /// The motion error (cycle, arm, limit).
        error: MotionError,
        /// `error.cycle` in seconds from the move's start.
        time_s: f64,
    },
    /// The stream stopped while running (never for validated moves).
    Stream(MotionError),
    /// Writing the CSV failed.
    Io(std::io::Error),
}

impl fmt::Display for PlanError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            PlanError::Parse(e) => write!(f, "invalid moves file: {e}"),
            PlanError::Robot(e) => write!(f, "{e}"),
            PlanError::Rate(r) => write!(f, "invalid rate {r} Hz"),
            PlanError::Number(e) => write!(f, "{e}"),
            PlanError::Start(e) => write!(f, "cannot start: {e}"),
            PlanError::Move { index, what, error, time_s } => {
                let nth = index + 1;
                write!(
                    f,
                    "move {index} (the {nth}{} [[move]]: {what}) refused at t = {time_s:.6} s into the move: {}",
                    ordinal_suffix(nth),
                    error.fault
                )
            }
            PlanError::Stream(e) => write!(f, "stream stopped: {e}"),
            PlanError::Io(e) => write!(f, "cannot write output: {e}"),
        }
    }
}

impl std::error::Error for PlanError {}

/// `st`, `nd`, `rd` or `th`.
fn ordinal_suffix(n: usize) -> &'static str {
    match (n % 10, n % 100) {
        (1, r) if r != 11 => "st",
        (2, r) if r != 12 => "nd",
        (3, r) if r != 13 => "rd",
        _ => "th",
    }
}

impl From<std::io::Error> for PlanError {
    fn from(e: std::io::Error) -> Self {
        PlanError::Io(e)
    }
}

/// What a run did, for stderr.
#[derive(Clone, Debug, PartialEq)]
pub struct Summary {
    /// The number type used.
    pub scalar: ScalarKind,
    /// Control rate (Hz).
    pub rate_hz: f64,
    /// Moves run.
    pub moves: usize,
    /// Setpoints written (rows after the `t = 0` row).
    pub setpoints: u64,
    /// Motion time (s).
    pub duration_s: f64,
    /// Peak joint speed of each arm over the run (deg/s) and its limit.
    pub peak_speed_deg_s: [f64; 3],
    /// Joint speed limits (deg/s).
    pub speed_limit_deg_s: [f64; 3],
    /// Peak joint acceleration of each arm, from successive cycles
    /// (deg/s^2), and its limit.
    pub peak_accel_deg_s2: [f64; 3],
    /// Joint acceleration limits (deg/s^2).
    pub accel_limit_deg_s2: [f64; 3],
    /// The largest tool-acceleration usage of any Cartesian move (the
    /// magnitude of the tool's acceleration over that move's own
    /// `accel_mm_s2` bound, as validated) and the move's index; `None`
    /// when no move has a Cartesian bound.
    pub peak_tool_accel: Option<(usize, f64)>,
    /// Moves that were slowed down: (index, time stretch).
    pub time_scaled: Vec<(usize, f64)>,
    /// Lines joined to the line before them through their corner (index).
    pub joined: Vec<usize>,
}

impl fmt::Display for Summary {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(
            f,
            "plan: {} moves, {} setpoints at {} Hz ({}), duration {:.4} s",
            self.moves,
            self.setpoints,
            self.rate_hz,
            scalar_name(self.scalar),
            self.duration_s
        )?;
        for arm in 0..3 {
            writeln!(
                f,
                "  arm {arm}: peak speed {:8.1} of {:8.1} deg/s ({:5.1} %), peak accel {:9.0} of {:9.0} deg/s^2 ({:5.1} %)",
                self.peak_speed_deg_s[arm],
                self.speed_limit_deg_s[arm],
                100.0 * self.peak_speed_deg_s[arm] / self.speed_limit_deg_s[arm],
                self.peak_accel_deg_s2[arm],
                self.accel_limit_deg_s2[arm],
                100.0 * self.peak_accel_deg_s2[arm] / self.accel_limit_deg_s2[arm],
            )?;
        }
        match self.peak_tool_accel {
            Some((index, usage)) => writeln!(
                f,
                "  tool: peak accel {:5.1} % of its move's accel_mm_s2 (move {index}; tangential and centripetal together)",
                100.0 * usage
            )?,
            None => writeln!(f, "  tool: no Cartesian move")?,
        }
        if self.joined.is_empty() {
            writeln!(f, "  corners joined: none")?;
        } else {
            let list: Vec<String> = self.joined.iter().map(ToString::to_string).collect();
            writeln!(f, "  corners joined: move {} (to the move before)", list.join(", "))?;
        }
        if self.time_scaled.is_empty() {
            write!(f, "  time scaling: none (every move ran as asked)")
        } else {
            write!(f, "  time scaling applied to move")?;
            for (i, (index, stretch)) in self.time_scaled.iter().enumerate() {
                let sep = if i == 0 { " " } else { ", " };
                write!(f, "{sep}{index} (x{stretch:.3} slower)")?;
            }
            Ok(())
        }
    }
}

impl MovesFile {
    /// Parses moves-file text.
    ///
    /// # Errors
    /// [`PlanError::Parse`] with the parser's message.
    pub fn parse(text: &str) -> Result<Self, PlanError> {
        toml::from_str(text).map_err(|e| PlanError::Parse(e.to_string()))
    }

    /// Joint rate limits in rad/s and rad/s^2, in the planning type `P`.
    ///
    /// # Errors
    /// [`PlanError::Number`] naming a limit that is not finite or does not
    /// fit `P`.
    pub fn joint_rate_limits<P: Arith>(&self) -> Result<JointRateLimits<P>, PlanError> {
        let l = &self.joint_limits;
        Ok(JointRateLimits {
            speed: per_arm(MOVES, "[joint_limits] speed_deg_s", l.speed_deg_s, f64::to_radians)
                .map_err(PlanError::Number)?,
            accel: per_arm(MOVES, "[joint_limits] accel_deg_s2", l.accel_deg_s2, f64::to_radians)
                .map_err(PlanError::Number)?,
        })
    }

    /// The moves in the planning type `P` (mm and rad), with the defaults
    /// filled in. Every number of the file is converted with its key, the
    /// defaults too (used or not), so a NaN, an infinity or a value beyond
    /// `P` is named where it was written.
    ///
    /// # Errors
    /// [`PlanError::Number`] naming the key; [`PlanError::Parse`] naming a
    /// move that lacks a law or bound with no default.
    pub fn moves_in<P: Real>(&self) -> Result<Vec<Move<P>>, PlanError> {
        let missing = |i: usize, what: &str| PlanError::Parse(format!("move {i}: no {what} and no default"));
        let mm = |v: f64| v;
        let deg = f64::to_radians;
        let c = &self.cartesian;
        let c_speed = opt::<P>("[cartesian] speed_mm_s", c.speed_mm_s, mm)?;
        let c_accel = opt::<P>("[cartesian] accel_mm_s2", c.accel_mm_s2, mm)?;
        let c_jerk = opt::<P>("[cartesian] jerk_mm_s3", c.jerk_mm_s3, mm)?;
        let jd = &self.joint;
        let j_speed = opt::<P>("[joint] speed_deg_s", jd.speed_deg_s, deg)?;
        let j_accel = opt::<P>("[joint] accel_deg_s2", jd.accel_deg_s2, deg)?;
        let j_jerk = opt::<P>("[joint] jerk_deg_s3", jd.jerk_deg_s3, deg)?;
        // A move's own value, else the default; `name` is the key in the move.
        let bound =
            |i: usize, kind: &str, name: &'static str, own: Option<f64>, default: Option<P>, to: fn(f64) -> f64| {
                match own {
                    Some(v) => num::<P>(&|| format!("move {i} ({kind}) {name}"), v, to),
                    None => default.ok_or_else(|| missing(i, name)),
                }
            };
        let cart = |i: usize, kind: &str, law: Option<LawName>, v: Option<f64>, a: Option<f64>, j: Option<f64>| {
            Ok::<_, PlanError>((
                Law::from(law.or(c.law).ok_or_else(|| missing(i, "law"))?),
                Bounds {
                    speed: bound(i, kind, "speed_mm_s", v, c_speed, mm)?,
                    accel: bound(i, kind, "accel_mm_s2", a, c_accel, mm)?,
                    jerk: bound(i, kind, "jerk_mm_s3", j, c_jerk, mm)?,
                },
            ))
        };
        let key = |i: usize, kind: &'static str, name: &'static str| move || format!("move {i} ({kind}) {name}");
        self.moves
            .iter()
            .enumerate()
            .map(|(i, m)| match *m {
                MoveEntry::Line { to_mm, law, speed_mm_s, accel_mm_s2, jerk_mm_s3 } => {
                    let to = xyz::<P>(&key(i, "line", "to_mm")(), to_mm, mm)?;
                    let (law, bounds) = cart(i, "line", law, speed_mm_s, accel_mm_s2, jerk_mm_s3)?;
                    Ok(Move::Line { to, law, bounds })
                }
                MoveEntry::Pick { to_mm, lift_mm, blend_radius_mm, law, speed_mm_s, accel_mm_s2, jerk_mm_s3 } => {
                    let to = xyz::<P>(&key(i, "pick", "to_mm")(), to_mm, mm)?;
                    let lift = num::<P>(&key(i, "pick", "lift_mm"), lift_mm, mm)?;
                    let blend_radius = num::<P>(&key(i, "pick", "blend_radius_mm"), blend_radius_mm, mm)?;
                    let (law, bounds) = cart(i, "pick", law, speed_mm_s, accel_mm_s2, jerk_mm_s3)?;
                    Ok(Move::Pick { to, lift, blend_radius, law, bounds })
                }
                MoveEntry::Dwell { duration_s } => {
                    Ok(Move::Dwell { duration: num::<P>(&key(i, "dwell", "duration_s"), duration_s, |v| v)? })
                }
                MoveEntry::Joint { to_deg, law, speed_deg_s, accel_deg_s2, jerk_deg_s3 } => {
                    let to = xyz::<P>(&key(i, "joint", "to_deg")(), to_deg, deg)?;
                    let law = Law::from(law.or(jd.law).ok_or_else(|| missing(i, "law"))?);
                    let bounds = Bounds {
                        speed: bound(i, "joint", "speed_deg_s", speed_deg_s, j_speed, deg)?,
                        accel: bound(i, "joint", "accel_deg_s2", accel_deg_s2, j_accel, deg)?,
                        jerk: bound(i, "joint", "jerk_deg_s3", jerk_deg_s3, j_jerk, deg)?,
                    };
                    Ok(Move::Joint { to, law, bounds })
                }
            })
            .collect()
    }

    /// Move `index` in words, for messages: `line to [0, 0, -1300] mm`.
    #[must_use]
    pub fn describe(&self, index: usize) -> String {
        let v = |p: [f64; 3]| format!("[{}, {}, {}]", p[0], p[1], p[2]);
        match self.moves.get(index) {
            Some(MoveEntry::Line { to_mm, .. }) => format!("line to {} mm", v(*to_mm)),
            Some(MoveEntry::Pick { to_mm, .. }) => format!("pick to {} mm", v(*to_mm)),
            Some(MoveEntry::Dwell { duration_s }) => format!("dwell for {duration_s} s"),
            Some(MoveEntry::Joint { to_deg, .. }) => format!("joint move to {} deg", v(*to_deg)),
            None => "no such move".to_owned(),
        }
    }
}

/// The file name in messages about its numbers.
const MOVES: &str = "moves file";

/// One number of the moves file (`to_core` changes the unit) in `T`.
fn num<T: Arith>(key: &dyn Fn() -> String, v: f64, to_core: fn(f64) -> f64) -> Result<T, PlanError> {
    number(MOVES, key, v, to_core(v)).map_err(PlanError::Number)
}

/// An optional number (a default) in `T`.
fn opt<T: Arith>(key: &'static str, v: Option<f64>, to_core: fn(f64) -> f64) -> Result<Option<T>, PlanError> {
    v.map(|v| num(&|| key.to_owned(), v, to_core)).transpose()
}

/// Three numbers (`key[0]`, `key[1]`, `key[2]`) in `T`.
fn xyz<T: Arith>(key: &str, v: [f64; 3], to_core: fn(f64) -> f64) -> Result<[T; 3], PlanError> {
    let one = |i: usize| num(&|| format!("{key}[{i}]"), v[i], to_core);
    Ok([one(0)?, one(1)?, one(2)?])
}

/// The precision the CSV prints a number type's values at (see
/// [`crate::numtext`]): `f32` values as `f32`, `f64` and fixed-point ones
/// (exact in `f64`) as `f64`.
#[must_use]
pub const fn precision(scalar: ScalarKind) -> Precision {
    match scalar {
        ScalarKind::F32 => Precision::F32,
        ScalarKind::F64 | ScalarKind::Fixed => Precision::F64,
    }
}

/// One cycle of a plan, in f64 (exactly the streamed values: every `f32`
/// and fixed-point value is an `f64`).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Row {
    /// Time from the start (s).
    pub t_s: f64,
    /// Platform position (mm).
    pub position_mm: [f64; 3],
    /// Joint angles (rad).
    pub joints_rad: [f64; 3],
    /// Joint rates (rad/s).
    pub rates_rad_s: [f64; 3],
}

impl Row {
    /// The row as CSV: time (s, at `f64` precision), position (mm),
    /// joints (deg), joint rates (deg/s), each at `precision`.
    fn write(&self, out: &mut dyn Write, precision: Precision) -> std::io::Result<()> {
        numtext::write(out, self.t_s, Precision::F64)?;
        let deg = |v: [f64; 3]| v.map(f64::to_degrees);
        for v in self.position_mm.into_iter().chain(deg(self.joints_rad)).chain(deg(self.rates_rad_s)) {
            out.write_all(b",")?;
            numtext::write(out, v, precision)?;
        }
        out.write_all(b"\n")
    }
}

/// The CSV header.
pub const CSV_HEADER: &str =
    "t_s,x_mm,y_mm,z_mm,theta0_deg,theta1_deg,theta2_deg,omega0_deg_s,omega1_deg_s,omega2_deg_s";

/// Plans and streams the whole of `moves` on `robot_file` at `rate_hz`,
/// streaming in number type `S` with the moves planned in the float type
/// `P` (`P = S` for floats, `f32` for fixed point, as on a target). The
/// rows (the rest pose at `t = 0`, then one per cycle) come back only
/// when every move was accepted and streamed: a refused move leaves
/// nothing half written.
///
/// # Errors
/// See [`PlanError`]: a number of the files, the robot, the rate, the
/// start, or a move refused (with its index and the first offending time
/// within it).
pub fn plan_with<S: Real, P: Real<Wide = P>>(
    robot_file: &RobotFile,
    moves: &MovesFile,
    rate_hz: f64,
    scalar: ScalarKind,
) -> Result<(Vec<Row>, Summary), PlanError> {
    if !(rate_hz.is_finite() && rate_hz > 0.0) {
        return Err(PlanError::Rate(rate_hz));
    }
    let robot = robot_file.robot::<S>().map_err(PlanError::Robot)?;
    let period = P::from_f64(1.0 / rate_hz).ok_or(PlanError::Rate(rate_hz))?;
    let period_f64 = period.to_f64();
    let limits = moves.joint_rate_limits::<P>()?;
    let start = xyz::<S::Wide>("start_mm", moves.start_mm, |v| v)?;
    let tolerance = opt::<P>("[cartesian] corner_tolerance_mm", moves.cartesian.corner_tolerance_mm, |v| v)?;
    let list = moves.moves_in::<P>()?;
    let mut stream: Stream<S, QUEUE_CAPACITY, P> =
        Stream::new(robot, period, limits, start).map_err(PlanError::Start)?;
    if tolerance.is_some() {
        stream.set_corner_tolerance(tolerance).map_err(PlanError::Start)?;
    }
    let at_start = robot.inverse(start).map_err(|e| PlanError::Start(MotionError::before_sampling(e.into())))?;

    let mut rows = vec![Row {
        t_s: 0.0,
        position_mm: start.map(Arith::to_f64),
        joints_rad: at_start.joints.map(S::to_f64),
        rates_rad_s: [0.0; 3],
    }];
    let mut summary = Summary {
        scalar,
        rate_hz,
        moves: list.len(),
        setpoints: 0,
        duration_s: 0.0,
        peak_speed_deg_s: [0.0; 3],
        speed_limit_deg_s: moves.joint_limits.speed_deg_s.values(),
        peak_accel_deg_s2: [0.0; 3],
        accel_limit_deg_s2: moves.joint_limits.accel_deg_s2.values(),
        peak_tool_accel: None,
        time_scaled: Vec::new(),
        joined: Vec::new(),
    };
    let mut next = 0usize;
    let mut prev_rates = [0.0; 3];
    loop {
        while let Some(m) = list.get(next).filter(|_| !stream.is_full()) {
            let accepted = stream.push(m).map_err(|error| PlanError::Move {
                index: next,
                what: moves.describe(next),
                error,
                time_s: f64::from(error.cycle) * period_f64,
            })?;
            if accepted.joined {
                summary.joined.push(next);
            }
            let tool = accepted.tool_accel_usage.to_f64();
            if tool > summary.peak_tool_accel.map_or(0.0, |(_, u)| u) {
                summary.peak_tool_accel = Some((next, tool));
            }
            if accepted.time_scaled {
                summary.time_scaled.push((next, accepted.stretch.to_f64()));
            }
            next += 1;
        }
        let Some(step) = stream.next_setpoint().map_err(PlanError::Stream)? else { break };
        summary.setpoints += 1;
        #[allow(clippy::cast_precision_loss)] // counts far below 2^53
        let t = summary.setpoints as f64 * period_f64;
        let sp = step.setpoint;
        let rates = sp.joint_rates.map(Arith::to_f64);
        rows.push(Row {
            t_s: t,
            position_mm: sp.position.map(Arith::to_f64),
            joints_rad: sp.joints.map(S::to_f64),
            rates_rad_s: rates,
        });
        for arm in 0..3 {
            let w = rates[arm].to_degrees();
            let a = (rates[arm] - prev_rates[arm]).to_degrees() / period_f64;
            summary.peak_speed_deg_s[arm] = summary.peak_speed_deg_s[arm].max(w.abs());
            summary.peak_accel_deg_s2[arm] = summary.peak_accel_deg_s2[arm].max(a.abs());
        }
        prev_rates = rates;
        summary.duration_s = t;
    }
    Ok((rows, summary))
}

/// Runs `moves` (see [`plan_with`]) and writes the CSV with the digits of
/// `scalar` to `out`. Nothing is written unless the whole plan ran.
///
/// # Errors
/// See [`plan_with`]; [`PlanError::Io`] when writing fails.
pub fn run_with<S: Real, P: Real<Wide = P>>(
    robot_file: &RobotFile,
    moves: &MovesFile,
    rate_hz: f64,
    scalar: ScalarKind,
    out: &mut dyn Write,
) -> Result<Summary, PlanError> {
    let (rows, summary) = plan_with::<S, P>(robot_file, moves, rate_hz, scalar)?;
    let precision = precision(scalar);
    writeln!(out, "{CSV_HEADER}")?;
    for r in &rows {
        r.write(out, precision)?;
    }
    Ok(summary)
}

/// Parses `moves_toml` and runs it (see [`run_with`]). The entry point of
/// `deltakin plan`.
///
/// # Errors
/// See [`PlanError`].
pub fn run(
    robot_file: &RobotFile,
    moves_toml: &str,
    rate_hz: f64,
    scalar: ScalarKind,
    out: &mut dyn Write,
) -> Result<Summary, PlanError> {
    let moves = MovesFile::parse(moves_toml)?;
    match scalar {
        ScalarKind::F32 => run_with::<f32, f32>(robot_file, &moves, rate_hz, scalar, out),
        ScalarKind::F64 => run_with::<f64, f64>(robot_file, &moves, rate_hz, scalar, out),
        ScalarKind::Fixed => run_with::<Fixed, f32>(robot_file, &moves, rate_hz, scalar, out),
    }
}

/// The demo moves file (same text as `examples/demo_moves.toml`).
pub const DEMO_MOVES_TOML: &str = include_str!("../../examples/demo_moves.toml");

#[cfg(test)]
mod tests {
    use super::*;

    /// Rate for the tests (Hz), common practice for servo loops.
    const RATE_HZ: f64 = 2000.0;

    fn run_demo(scalar: ScalarKind) -> (Summary, String) {
        let mut out = Vec::new();
        let summary = run(&RobotFile::demo(), DEMO_MOVES_TOML, RATE_HZ, scalar, &mut out).unwrap();
        (summary, String::from_utf8(out).unwrap())
    }

    #[test]
    fn demo_moves_run_in_every_number_type_within_limits() {
        for scalar in [ScalarKind::F32, ScalarKind::F64, ScalarKind::Fixed] {
            let (s, csv) = run_demo(scalar);
            let lines: Vec<&str> = csv.lines().collect();
            assert_eq!(lines[0], CSV_HEADER);
            assert_eq!(lines.len() as u64, s.setpoints + 2);
            for arm in 0..3 {
                assert!(s.peak_speed_deg_s[arm] <= s.speed_limit_deg_s[arm]);
                assert!(s.peak_accel_deg_s2[arm] <= s.accel_limit_deg_s2[arm]);
            }
            // Every row has ten numbers, plain decimals that read back to
            // the streamed value at the scalar's precision.
            for line in &lines[1..] {
                let fields: Vec<&str> = line.split(',').collect();
                assert_eq!(fields.len(), 10);
                for f in &fields {
                    assert!(!f.contains('e') && f.parse::<f64>().is_ok(), "{line}");
                }
                if scalar == ScalarKind::F32 {
                    let x: f64 = fields[1].parse().unwrap();
                    #[allow(clippy::cast_possible_truncation)]
                    let back = f64::from(x as f32);
                    assert_eq!(numtext::text(back, Precision::F32), fields[1], "{line}");
                }
            }
            assert!(!format!("{s}").is_empty());
            // The two lines back to the middle meet at a 13 degree corner:
            // joined; nothing else is a line after a line.
            assert_eq!(s.joined, vec![DEMO_JOINED_MOVE], "{scalar:?}");
        }
    }

    /// The demo move joined to the one before (the second line back).
    const DEMO_JOINED_MOVE: usize = 8;

    #[test]
    fn corner_tolerance_switches_joins_and_must_be_positive() {
        let without = DEMO_MOVES_TOML.replace("corner_tolerance_mm = 0.5", "");
        let mut out = Vec::new();
        let s = run(&RobotFile::demo(), &without, RATE_HZ, ScalarKind::F32, &mut out).unwrap();
        assert!(s.joined.is_empty());
        let (joined, _) = run_demo(ScalarKind::F32);
        // Joining saves time: no stop at the corner.
        assert!(joined.duration_s < s.duration_s, "{} vs {}", joined.duration_s, s.duration_s);
        let bad = DEMO_MOVES_TOML.replace("corner_tolerance_mm = 0.5", "corner_tolerance_mm = -1.0");
        let err = run(&RobotFile::demo(), &bad, RATE_HZ, ScalarKind::F32, &mut Vec::new()).unwrap_err();
        assert!(matches!(err, PlanError::Start(_)), "{err}");
    }

    #[test]
    fn csv_rows_round_trip_f32_values() {
        let (_, csv) = run_demo(ScalarKind::F32);
        let row = csv.lines().nth(100).unwrap();
        let field = row.split(',').nth(1).unwrap();
        // The shortest round-trip text: read back as f32, it prints the same,
        // and it has no exponent.
        let back: f32 = field.parse().unwrap();
        assert_eq!(numtext::text(f64::from(back), Precision::F32), field);
        assert!(!field.contains(['e', 'E']), "{field}");
    }

    #[test]
    fn unknown_keys_and_missing_bounds_are_refused() {
        let text = DEMO_MOVES_TOML.replace("lift_mm", "lift_mm = 25.0\nhop_mm");
        assert!(matches!(MovesFile::parse(&text), Err(PlanError::Parse(_))));
        let text = "start_mm = [0.0, 0.0, -700.0]\n[joint_limits]\nspeed_deg_s = 720.0\naccel_deg_s2 = 1.0e4\n\
                    [[move]]\nkind = \"line\"\nto_mm = [0.0, 0.0, -650.0]\n";
        let file = MovesFile::parse(text).unwrap();
        assert!(matches!(file.moves_in::<f64>(), Err(PlanError::Parse(_))));
    }

    #[test]
    fn an_unreachable_move_names_its_index_and_time() {
        let text =
            format!("{DEMO_MOVES_TOML}\n[[move]]\nkind = \"line\"\nto_mm = [0.0, 0.0, -1300.0]\nspeed_mm_s = 500.0\n");
        let moves = MovesFile::parse(&text).unwrap();
        let count = moves.moves.len();
        let mut out = Vec::new();
        let err = run(&RobotFile::demo(), &text, RATE_HZ, ScalarKind::F32, &mut out).unwrap_err();
        match err {
            PlanError::Move { index, error, time_s, .. } => {
                assert_eq!(index, count - 1);
                assert!(error.cycle > 0 && time_s > 0.0);
            }
            other => panic!("{other}"),
        }
    }
}
