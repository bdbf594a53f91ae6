//! The cross-check behind `deltakin report`: runs the guarded f32 and f64
//! cores and the independent reference over the sweeps, gathers the
//! figures and compares them with the bounds in [`crate::bounds`].
//!
//! Per input point (see [`crate::sweep`] for how points are chosen):
//! * each core's guarded status is counted;
//! * a point belongs to the **accepted volume** when the guarded f64 core
//!   accepts it; only those are cross-checked;
//! * each core's answer there is compared with the reference's at the
//!   same input (the guarded answer, or the unguarded one when the f32
//!   guard rejects a point the f64 guard accepts: rounding can flip a
//!   guard decision at the boundary, and the accuracy is still measured);
//! * IK error: the largest joint-angle difference over the three arms;
//!   FK error: the Euclidean distance between the positions;
//! * margins (smallest serial over arms, parallel, largest passive-joint
//!   tilt) are taken from each core's own accepted solutions.

use std::collections::BTreeMap;

use deltakin::{Arith, Error, Fixed, Geometry, Real, Robot, Solution};
use serde::Serialize;

use crate::bounds;
use crate::config::RobotFile;
use crate::progress;
use crate::reference::{self, PerArmMachine};
use crate::stats::{self, Extreme, Summary};
use crate::sweep::{self, Density, PointSet, par_map_progress};

/// Which problem a sweep checks.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Kind {
    /// Position (mm) to joint angles.
    Inverse,
    /// Joint angles (rad) to position.
    Forward,
}

/// The robot as the report describes it (file units).
#[derive(Clone, Debug, Serialize)]
pub struct RobotSummary {
    /// Name from the robot file.
    pub name: String,
    /// Whether this is the built-in demo robot.
    pub builtin_demo: bool,
    #[allow(missing_docs)]
    pub base_radius_mm: f64,
    #[allow(missing_docs)]
    pub platform_radius_mm: f64,
    #[allow(missing_docs)]
    pub upper_arm_mm: f64,
    #[allow(missing_docs)]
    pub lower_arm_mm: f64,
    #[allow(missing_docs)]
    pub joint_min_deg: [f64; 3],
    #[allow(missing_docs)]
    pub joint_max_deg: [f64; 3],
    #[allow(missing_docs)]
    pub passive_cone_deg: f64,
    #[allow(missing_docs)]
    pub min_serial_margin: f64,
    #[allow(missing_docs)]
    pub min_parallel_margin: f64,
}

/// One core's figures over one sweep.
#[derive(Clone, Debug, Serialize)]
pub struct ScalarFindings {
    /// `"f64"`, `"f32"` or `"fixed"`.
    pub scalar: &'static str,
    /// Error against the reference over the accepted volume, in
    /// [`SweepFindings::error_unit`]; `worst_at` in
    /// [`SweepFindings::input_unit`].
    pub error: Summary,
    /// The documented bound for `error.max`, same unit.
    pub bound: f64,
    /// Name of the bound in `bounds.rs`.
    pub bound_name: &'static str,
    /// Accepted points where the reference found no solution.
    pub reference_failed: usize,
    /// Accepted points where this core (even unguarded) found no solution.
    pub core_failed: usize,
    /// Accepted points this core's guard rejects.
    pub rejected_where_f64_accepts: usize,
    /// Points this core's guard accepts and the f64 guard rejects.
    pub accepted_where_f64_rejects: usize,
    /// Smallest serial margin over the arms and the points this core accepts.
    pub min_serial_margin: Option<Extreme>,
    /// Smallest parallel margin over the points this core accepts.
    pub min_parallel_margin: Option<Extreme>,
    /// Largest passive-joint tilt from its neutral axis (deg).
    pub max_passive_tilt_deg: Option<Extreme>,
    /// Guarded status word (or `ok`) over every swept point.
    pub status_counts: BTreeMap<&'static str, usize>,
}

/// One sweep's figures.
#[derive(Clone, Debug, Serialize)]
pub struct SweepFindings {
    /// `"ik"` or `"fk"`.
    pub problem: &'static str,
    /// Unit of inputs, box corners and worst-case locations (`mm` or `deg`).
    pub input_unit: &'static str,
    /// Unit of errors and bounds (`urad` or `um`).
    pub error_unit: &'static str,
    /// Grid points per axis.
    pub grid_n: usize,
    /// Box covered by the grid (input unit).
    pub grid_box_lo: [f64; 3],
    #[allow(missing_docs)]
    pub grid_box_hi: [f64; 3],
    /// Points in the grid.
    pub grid_points: usize,
    /// Shell rays and the points they produced.
    pub shell_rays: usize,
    #[allow(missing_docs)]
    pub shell_points: usize,
    /// Where the shell rays start (input unit).
    pub shell_centre: Option<[f64; 3]>,
    /// Swept points the guarded f64 core accepts (grid + shell).
    pub accepted: usize,
    /// The f64 core, the f32 core, then the fixed-point core when the robot
    /// lies inside its envelope.
    pub scalars: Vec<ScalarFindings>,
}

/// Everything `deltakin report` found.
#[derive(Clone, Debug, Serialize)]
pub struct Findings {
    /// The robot.
    pub robot: RobotSummary,
    /// The Cartesian sweep (IK).
    pub ik: SweepFindings,
    /// The joint sweep (FK).
    pub fk: SweepFindings,
    /// Every broken bound, in words. Empty when the accuracy gates pass.
    pub breaches: Vec<String>,
    /// The swept positions the guarded f64 core accepts (mm), for timing.
    #[serde(skip)]
    pub ik_accepted: Vec<[f64; 3]>,
    /// The swept joint triples the guarded f64 core accepts (rad).
    #[serde(skip)]
    pub fk_accepted: Vec<[f64; 3]>,
}

/// Margins at one accepted pose.
#[derive(Clone, Copy, Debug)]
struct MarginSample {
    serial: f64,
    parallel: f64,
    tilt_deg: f64,
}

fn margin_sample<S: Real>(s: &Solution<S>) -> MarginSample {
    let m = &s.margins;
    let serial = m.serial.iter().map(|v| v.to_f64()).fold(f64::INFINITY, f64::min);
    let min_cos = m.passive_tilt_cos.iter().flatten().map(|v| v.to_f64()).fold(f64::INFINITY, f64::min);
    MarginSample { serial, parallel: m.parallel.to_f64(), tilt_deg: min_cos.clamp(-1.0, 1.0).acos().to_degrees() }
}

/// One core at one input.
#[derive(Clone, Copy, Debug)]
struct Side {
    status: &'static str,
    margins: Option<MarginSample>,
    /// The input exactly as this core's number type holds it (core units),
    /// so the reference is asked the same question; `None` when the type
    /// cannot hold it or the core is not available.
    input: Option<[f64; 3]>,
    /// Joint angles (rad) or position (mm), from the guarded solve or,
    /// when the guard rejects, the unguarded one; `None` when both fail.
    output: Option<[f64; 3]>,
}

/// A core that is not in this report (the robot lies outside the number
/// type's envelope).
const UNAVAILABLE: Side = Side { status: "unavailable", margins: None, input: None, output: None };

fn status_of<S: Arith>(r: &Result<Solution<S>, Error>) -> &'static str {
    match r {
        Ok(_) => "ok",
        Err(e) => e.status_word(),
    }
}

fn convert3<T: Arith>(v: [f64; 3]) -> Option<[T; 3]> {
    Some([T::from_f64(v[0])?, T::from_f64(v[1])?, T::from_f64(v[2])?])
}

/// The input of one solve in the core's own types: positions are API
/// lengths (`S::Wide`), joint angles are `S`.
#[derive(Clone, Copy)]
enum CoreInput<S: Arith> {
    Position([S::Wide; 3]),
    Joints([S; 3]),
}

fn side<S: Real>(robot: &Robot<S>, kind: Kind, input: [f64; 3]) -> Side {
    // Sweep inputs are f32-rounded and finite, so conversion only fails for
    // a number type with a narrower range.
    let unrepresentable = Side { status: "unrepresentable", ..UNAVAILABLE };
    let x = match kind {
        Kind::Inverse => convert3::<S::Wide>(input).map(CoreInput::<S>::Position),
        Kind::Forward => convert3::<S>(input).map(CoreInput::<S>::Joints),
    };
    let Some(x) = x else { return unrepresentable };
    let (exact, guarded) = match x {
        CoreInput::Position(p) => (p.map(Arith::to_f64), robot.inverse(p)),
        CoreInput::Joints(t) => (t.map(Arith::to_f64), robot.forward(t)),
    };
    let status = status_of(&guarded);
    let margins = guarded.as_ref().ok().map(margin_sample);
    let solution = guarded
        .or_else(|_| match x {
            CoreInput::Position(p) => robot.inverse_unguarded(p),
            CoreInput::Joints(t) => robot.forward_unguarded(t),
        })
        .ok();
    let output = solution.map(|s| match kind {
        Kind::Inverse => s.joints.map(Arith::to_f64),
        Kind::Forward => s.position.map(Arith::to_f64),
    });
    Side { status, margins, input: Some(exact), output }
}

/// Outcome of comparing one core with the reference at one point.
#[derive(Clone, Copy, Debug)]
enum Outcome {
    NotAccepted,
    Measured(f64),
    ReferenceFailed,
    CoreFailed,
}

fn error_between(kind: Kind, core: [f64; 3], reference: [f64; 3]) -> f64 {
    let d = [0, 1, 2].map(|k| core[k] - reference[k]);
    match kind {
        Kind::Inverse => d.iter().fold(0.0, |m: f64, v| m.max(v.abs())),
        Kind::Forward => (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt(),
    }
}

/// The number types a report covers, in table order.
pub const SCALAR_NAMES: [&str; 3] = ["f64", "f32", "fixed"];

/// Every core at one input.
#[derive(Clone, Copy, Debug)]
struct Sample {
    sides: [Side; 3],
    outcomes: [Outcome; 3],
}

struct Setup {
    r64: Robot<f64>,
    r32: Robot<f32>,
    /// `None` when the robot lies outside the fixed-point envelope.
    rfx: Option<Robot<Fixed>>,
    /// Each core's machine (dimensions and per-arm corrections) exactly
    /// as its number type holds them.
    geometries: [PerArmMachine; 3],
}

fn reference_solve(kind: Kind, g: &PerArmMachine, input: [f64; 3]) -> Option<[f64; 3]> {
    match kind {
        Kind::Inverse => reference::inverse(g, input),
        Kind::Forward => reference::forward(g, input),
    }
}

/// A question for the reference: dimensions and input.
type Question = (PerArmMachine, [f64; 3]);

fn sample(setup: &Setup, kind: Kind, input: [f64; 3]) -> Sample {
    let sides = [
        side(&setup.r64, kind, input),
        side(&setup.r32, kind, input),
        setup.rfx.as_ref().map_or(UNAVAILABLE, |r| side(r, kind, input)),
    ];
    if sides[0].status != "ok" {
        return Sample { sides, outcomes: [Outcome::NotAccepted; 3] };
    }
    // The reference answers each core's own question (its dimensions and
    // its input, exactly as held); identical questions are asked once.
    let mut asked: Vec<(Question, Option<[f64; 3]>)> = Vec::with_capacity(3);
    let mut outcomes = [Outcome::NotAccepted; 3];
    for ((side, g), outcome) in sides.iter().zip(setup.geometries.iter()).zip(outcomes.iter_mut()) {
        let Some(exact) = side.input else { continue };
        let key = (*g, exact);
        let reference = match asked.iter().find(|(k, _)| *k == key) {
            Some(&(_, r)) => r,
            None => {
                let r = reference_solve(kind, g, exact);
                asked.push((key, r));
                r
            }
        };
        *outcome = match (side.output, reference) {
            (_, None) => Outcome::ReferenceFailed,
            (None, Some(_)) => Outcome::CoreFailed,
            (Some(c), Some(r)) => Outcome::Measured(error_between(kind, c, r)),
        };
    }
    Sample { sides, outcomes }
}

fn geometry_as_f64<S: Real>(g: &Geometry<S>) -> Geometry<f64> {
    Geometry {
        base_radius: g.base_radius.to_f64(),
        platform_radius: g.platform_radius.to_f64(),
        upper_arm: g.upper_arm.to_f64(),
        lower_arm: g.lower_arm.to_f64(),
    }
}

/// Display units of a sweep: (input unit, factor from core units; error
/// unit, factor from core units).
fn units(kind: Kind) -> (&'static str, f64, &'static str, f64) {
    match kind {
        Kind::Inverse => ("mm", 1.0, "urad", 1e6),
        Kind::Forward => ("deg", 180.0 / std::f64::consts::PI, "um", 1e3),
    }
}

/// Names of the gate-file keys that override the joint bounds.
const GATE_JOINT_NAMES: [&str; 3] =
    ["gates: accuracy.f64_joint_rad", "gates: accuracy.f32_joint_rad", "gates: accuracy.fixed_joint_rad"];
/// Names of the gate-file keys that override the position bounds.
const GATE_POSITION_NAMES: [&str; 3] =
    ["gates: accuracy.f64_position_mm", "gates: accuracy.f32_position_mm", "gates: accuracy.fixed_position_mm"];

fn aggregate(
    kind: Kind,
    points: &PointSet,
    samples: &[Sample],
    inputs: &[[f64; 3]],
    limits: &bounds::ErrorBounds,
) -> SweepFindings {
    let (input_unit, to_input, error_unit, to_error) = units(kind);
    let show = |p: [f64; 3]| p.map(|v| v * to_input);
    let accepted = samples.iter().filter(|s| s.sides[0].status == "ok").count();
    let defaults = bounds::ErrorBounds::default();
    let bound_of = |i: usize| match kind {
        Kind::Inverse => (
            limits.joint_rad[i],
            if limits.joint_rad[i] == defaults.joint_rad[i] {
                bounds::JOINT_BOUND_NAMES[i]
            } else {
                GATE_JOINT_NAMES[i]
            },
        ),
        Kind::Forward => (
            limits.position_mm[i],
            if limits.position_mm[i] == defaults.position_mm[i] {
                bounds::POSITION_BOUND_NAMES[i]
            } else {
                GATE_POSITION_NAMES[i]
            },
        ),
    };
    // A core that is unavailable for this robot has no column.
    let present: Vec<usize> = (0..3).filter(|&i| samples.iter().all(|s| s.sides[i].status != "unavailable")).collect();
    let scalars = present
        .into_iter()
        .map(|i| {
            let mut errors = Vec::with_capacity(accepted);
            let (mut reference_failed, mut core_failed, mut rejected, mut extra) = (0, 0, 0, 0);
            let (mut serial, mut parallel, mut tilt) = (None, None, None);
            let mut status_counts = BTreeMap::new();
            for (s, &input) in samples.iter().zip(inputs) {
                let side = &s.sides[i];
                *status_counts.entry(side.status).or_insert(0) += 1;
                let at = show(input);
                if let Some(m) = side.margins {
                    stats::keep_min(&mut serial, m.serial, at);
                    stats::keep_min(&mut parallel, m.parallel, at);
                    stats::keep_max(&mut tilt, m.tilt_deg, at);
                }
                let f64_ok = s.sides[0].status == "ok";
                let this_ok = side.status == "ok";
                rejected += usize::from(f64_ok && !this_ok);
                extra += usize::from(!f64_ok && this_ok);
                match s.outcomes[i] {
                    Outcome::NotAccepted => {}
                    Outcome::Measured(e) => errors.push((e * to_error, at)),
                    Outcome::ReferenceFailed => reference_failed += 1,
                    Outcome::CoreFailed => core_failed += 1,
                }
            }
            let (bound, bound_name) = bound_of(i);
            ScalarFindings {
                scalar: SCALAR_NAMES[i],
                error: stats::summarize(&errors),
                bound: bound * to_error,
                bound_name,
                reference_failed,
                core_failed,
                rejected_where_f64_accepts: rejected,
                accepted_where_f64_rejects: extra,
                min_serial_margin: serial,
                min_parallel_margin: parallel,
                max_passive_tilt_deg: tilt,
                status_counts,
            }
        })
        .collect();
    SweepFindings {
        problem: match kind {
            Kind::Inverse => "ik",
            Kind::Forward => "fk",
        },
        input_unit,
        error_unit,
        grid_n: points.grid_n,
        grid_box_lo: show(points.grid_box.lo),
        grid_box_hi: show(points.grid_box.hi),
        grid_points: points.grid.len(),
        shell_rays: points.rays,
        shell_points: points.shell.len(),
        shell_centre: points.centre.map(show),
        accepted,
        scalars,
    }
}

fn run_sweep(
    setup: &Setup,
    kind: Kind,
    points: &PointSet,
    limits: &bounds::ErrorBounds,
) -> (SweepFindings, Vec<[f64; 3]>) {
    let inputs: Vec<[f64; 3]> = points.grid.iter().chain(points.shell.iter()).copied().collect();
    let what = match kind {
        Kind::Inverse => "IK cross-check",
        Kind::Forward => "FK cross-check",
    };
    let samples = par_map_progress(&inputs, &|p| sample(setup, kind, *p), &progress::bar(inputs.len(), what));
    let accepted = samples.iter().zip(&inputs).filter(|(s, _)| s.sides[0].status == "ok").map(|(_, p)| *p).collect();
    (aggregate(kind, points, &samples, &inputs, limits), accepted)
}

fn breaches_of(sweep: &SweepFindings) -> Vec<String> {
    let label = sweep.problem.to_uppercase();
    let mut out = Vec::new();
    if sweep.accepted == 0 {
        out.push(format!("{label} sweep: no swept point is accepted by the guarded f64 core, so nothing was checked"));
    }
    for s in &sweep.scalars {
        let e = &s.error;
        // `summarize` reports a NaN error as infinite, so `>` catches it.
        if e.max > s.bound {
            let at = e
                .worst_at
                .map_or_else(String::new, |p| format!(" at ({}, {}, {}) {}", p[0], p[1], p[2], sweep.input_unit));
            out.push(format!(
                "{label} {}: worst error {} {} exceeds {} = {} {}{at}",
                s.scalar, e.max, sweep.error_unit, s.bound_name, s.bound, sweep.error_unit
            ));
        }
        if s.reference_failed > 0 {
            out.push(format!(
                "{label} {}: reference failed on {} of {} accepted points",
                s.scalar, s.reference_failed, sweep.accepted
            ));
        }
        if s.core_failed > 0 {
            out.push(format!(
                "{label} {}: core found no solution (even unguarded) on {} of {} accepted points",
                s.scalar, s.core_failed, sweep.accepted
            ));
        }
    }
    out
}

/// Why the cross-check could not start.
pub type SetupError = crate::config::ConfigError;

/// Sweeps the workspace of `file`'s robot, cross-checks the cores and
/// compares their worst errors with `limits`.
///
/// # Errors
/// When the robot cannot be built in f64 or f32.
pub fn run(
    file: &RobotFile,
    builtin_demo: bool,
    ik: Density,
    fk: Density,
    limits: &bounds::ErrorBounds,
) -> Result<Findings, SetupError> {
    let r64 = file.robot::<f64>()?;
    let r32 = file.robot::<f32>()?;
    // Outside the fixed-point envelope the report covers the floats only.
    let rfx = file.robot::<Fixed>().ok();
    let corrections64 = file.corrections_f64();
    let corrections32 = file.corrections_as_held::<f32>().unwrap_or(corrections64);
    let corrections_fx = file.corrections_as_held::<Fixed>().unwrap_or(corrections64);
    let geometries = [
        PerArmMachine::new(r64.geometry(), &corrections64),
        PerArmMachine::new(&geometry_as_f64(r32.geometry()), &corrections32),
        rfx.as_ref().map_or(PerArmMachine::new(r64.geometry(), &corrections64), |r| {
            PerArmMachine::new(&geometry_as_f64(r.geometry()), &corrections_fx)
        }),
    ];
    let setup = Setup { geometries, r64, r32, rfx };
    let g = &file.geometry;
    let l = &file.limits;
    let robot = RobotSummary {
        name: file.name.clone(),
        builtin_demo,
        base_radius_mm: g.base_radius_mm,
        platform_radius_mm: g.platform_radius_mm,
        upper_arm_mm: g.upper_arm_mm,
        lower_arm_mm: g.lower_arm_mm,
        joint_min_deg: l.joint_min_deg.values(),
        joint_max_deg: l.joint_max_deg.values(),
        passive_cone_deg: l.passive_cone_deg,
        min_serial_margin: l.min_serial_margin,
        min_parallel_margin: l.min_parallel_margin,
    };
    let (ik, ik_accepted) = run_sweep(&setup, Kind::Inverse, &sweep::cartesian(&setup.r64, ik), limits);
    let (fk, fk_accepted) = run_sweep(&setup, Kind::Forward, &sweep::joint(&setup.r64, fk), limits);
    let mut breaches = breaches_of(&ik);
    breaches.extend(breaches_of(&fk));
    Ok(Findings { robot, ik, fk, breaches, ik_accepted, fk_accepted })
}
