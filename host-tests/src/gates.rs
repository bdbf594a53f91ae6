//! The gates of `deltakin report`: what must hold for a build to pass,
//! where the limits come from, and the verdict on each.
//!
//! # Where the limits come from
//! Built-in defaults (below), overridden key by key by a `[gates]` table
//! in the robot file, overridden in turn by a gate file (`--gates FILE`).
//! Every table and key is optional; an unknown key is refused (exit 2).
//!
//! # The gate file
//! TOML; the same keys go under `[gates]` in a robot file (as
//! `[gates.accuracy]`, `[gates.host_timing]`, `[gates.targets]`,
//! `[[gates.targets.budget]]`). Shown with the defaults:
//!
//! ```toml
//! [accuracy]                    # worst error against the reference
//! f64_joint_rad = 1e-13         # bounds.rs F64_JOINT_ERR_RAD
//! f64_position_mm = 5e-11       # bounds.rs F64_POS_ERR_MM
//! f32_joint_rad = 1e-5          # bounds.rs F32_JOINT_ERR_RAD
//! f32_position_mm = 2e-3        # bounds.rs F32_POS_ERR_MM
//! fixed_joint_rad = 5e-6        # bounds.rs FIXED_JOINT_ERR_RAD
//! fixed_position_mm = 5e-3      # bounds.rs FIXED_POS_ERR_MM
//!
//! [host_timing]                 # a goal on this machine, not a gate:
//! f32_inverse_median_ns = 40.0  # shown as pass/fail, but a miss fails
//! f32_forward_median_ns = 40.0  # the report only with enforce = true
//! enforce = false
//!
//! [targets]                     # figures from --targets FILE
//! required = false              # true: no --targets file fails the report
//! robot_bytes = 256             # size of a robot value, every target
//! stack_bytes = 512             # stack per call, every target and call
//! fixed_over_soft_float = 0.3   # fixed-point worst <= this x soft-float f32
//! soft_float_targets = ["thumbv6m-none-eabi"]
//!
//! [[targets.budget]]            # worst instructions per call; listing any
//! target = "thumbv7em-none-eabihf"  # budget replaces the default list
//! scalar = "f32"
//! inverse_instructions = 400
//! forward_instructions = 300
//! setpoint_step_instructions = 900
//! flash_kinematics_bytes = 8192 # IK + FK + guards
//!
//! [[targets.budget]]
//! target = "thumbv6m-none-eabi"
//! scalar = "fixed"
//! inverse_instructions = 3000
//! forward_instructions = 2500
//! ```
//!
//! # The targets file
//! JSON written by `ci/target-report.sh`:
//! `{"targets":[{"target","board","scalar","robot_bytes","flash_kinematics_bytes",
//! "calls":[{"call":"inverse"|"forward"|"setpoint_step","points","worst_instructions",
//! "median_instructions","stack_bytes","flash_bytes"}]}]}`. Without it the
//! target gates are "not run" (a failure only with `required = true`).
//!
//! # Verdicts
//! Each gate is `pass`, `fail` or `not run`, and either enforced (a
//! failure makes `report` exit with status 1) or shown only. Only the host
//! timing goal is shown-only by default: a shared or throttled machine
//! can miss it with nothing wrong in the build.

use std::path::Path;

use serde::{Deserialize, Serialize};

use crate::bounds::ErrorBounds;
use crate::crosscheck::Findings;
use crate::timing::HostTiming;

/// `[accuracy]`: worst error bounds (rad, mm).
#[derive(Clone, Copy, Debug, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields, default)]
#[allow(missing_docs)]
pub struct AccuracyGates {
    pub f64_joint_rad: f64,
    pub f64_position_mm: f64,
    pub f32_joint_rad: f64,
    pub f32_position_mm: f64,
    pub fixed_joint_rad: f64,
    pub fixed_position_mm: f64,
}

impl Default for AccuracyGates {
    fn default() -> Self {
        let b = ErrorBounds::default();
        Self {
            f64_joint_rad: b.joint_rad[0],
            f64_position_mm: b.position_mm[0],
            f32_joint_rad: b.joint_rad[1],
            f32_position_mm: b.position_mm[1],
            fixed_joint_rad: b.joint_rad[2],
            fixed_position_mm: b.position_mm[2],
        }
    }
}

impl AccuracyGates {
    /// As the cross-check takes them.
    #[must_use]
    pub fn bounds(&self) -> ErrorBounds {
        ErrorBounds {
            joint_rad: [self.f64_joint_rad, self.f32_joint_rad, self.fixed_joint_rad],
            position_mm: [self.f64_position_mm, self.f32_position_mm, self.fixed_position_mm],
        }
    }
}

/// `[host_timing]`: the host goal (ns) and whether it is enforced.
#[derive(Clone, Copy, Debug, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields, default)]
pub struct HostTimingGates {
    /// Ceiling for the median f32 guarded IK (ns).
    pub f32_inverse_median_ns: f64,
    /// Ceiling for the median f32 guarded FK (ns).
    pub f32_forward_median_ns: f64,
    /// Whether a miss fails the report.
    pub enforce: bool,
}

/// Default host goal for the f32 guarded IK and FK medians (ns).
pub const HOST_F32_MEDIAN_NS: f64 = 40.0;

impl Default for HostTimingGates {
    fn default() -> Self {
        Self { f32_inverse_median_ns: HOST_F32_MEDIAN_NS, f32_forward_median_ns: HOST_F32_MEDIAN_NS, enforce: false }
    }
}

/// One `[[targets.budget]]`: ceilings for one target and number type.
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct TargetBudget {
    /// Rust target triple, as in the targets file.
    pub target: String,
    /// `"f32"` or `"fixed"` (or `"f64"`), as in the targets file.
    pub scalar: String,
    /// Worst instructions per guarded IK.
    pub inverse_instructions: Option<u64>,
    /// Worst instructions per guarded FK.
    pub forward_instructions: Option<u64>,
    /// Worst instructions per setpoint step.
    pub setpoint_step_instructions: Option<u64>,
    /// Flash pulled in by IK + FK + guards (bytes).
    pub flash_kinematics_bytes: Option<u64>,
}

/// `[targets]`: ceilings on the emulated-target figures.
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields, default)]
pub struct TargetGates {
    /// Whether a report without a targets file fails.
    pub required: bool,
    /// Size of a robot value (bytes), every target.
    pub robot_bytes: u64,
    /// Stack per call (bytes), every target and call.
    pub stack_bytes: u64,
    /// Fixed-point worst instructions at most this times the f32 figure on
    /// the targets in `soft_float_targets`.
    pub fixed_over_soft_float: f64,
    /// Targets without an FPU, where f32 runs in software.
    pub soft_float_targets: Vec<String>,
    /// Instruction and flash budgets per target and number type.
    pub budget: Vec<TargetBudget>,
}

/// Default M0 target (no FPU).
pub const M0_TARGET: &str = "thumbv6m-none-eabi";
/// Default M4F target.
pub const M4F_TARGET: &str = "thumbv7em-none-eabihf";

impl Default for TargetGates {
    fn default() -> Self {
        Self {
            required: false,
            robot_bytes: 256,
            stack_bytes: 512,
            fixed_over_soft_float: 0.3,
            soft_float_targets: vec![M0_TARGET.to_owned()],
            budget: vec![
                TargetBudget {
                    target: M4F_TARGET.to_owned(),
                    scalar: "f32".to_owned(),
                    inverse_instructions: Some(400),
                    forward_instructions: Some(300),
                    setpoint_step_instructions: Some(900),
                    flash_kinematics_bytes: Some(8192),
                },
                TargetBudget {
                    target: M0_TARGET.to_owned(),
                    scalar: "fixed".to_owned(),
                    inverse_instructions: Some(3000),
                    forward_instructions: Some(2500),
                    setpoint_step_instructions: None,
                    flash_kinematics_bytes: None,
                },
            ],
        }
    }
}

/// Every gate limit.
#[derive(Clone, Debug, Default, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields, default)]
pub struct GateConfig {
    #[allow(missing_docs)]
    pub accuracy: AccuracyGates,
    #[allow(missing_docs)]
    pub host_timing: HostTimingGates,
    #[allow(missing_docs)]
    pub targets: TargetGates,
}

/// Merges `over` into `base`, key by key; tables merge, anything else
/// (arrays included) is replaced.
fn merge(base: &mut toml::Table, over: toml::Table) {
    for (k, v) in over {
        match (base.get_mut(&k), v) {
            (Some(toml::Value::Table(b)), toml::Value::Table(o)) => merge(b, o),
            (_, v) => {
                base.insert(k, v);
            }
        }
    }
}

impl GateConfig {
    /// The limits from the layers in order (later keys win) over the
    /// defaults.
    ///
    /// # Errors
    /// The parser's message for a wrong key or type.
    pub fn from_layers(layers: Vec<toml::Table>) -> Result<Self, String> {
        let mut all = toml::Table::new();
        for layer in layers {
            merge(&mut all, layer);
        }
        GateConfig::deserialize(toml::Value::Table(all)).map_err(|e| format!("invalid gates: {e}"))
    }

    /// Parses gate-file text over the defaults.
    ///
    /// # Errors
    /// The parser's message.
    pub fn parse(text: &str) -> Result<Self, String> {
        let table: toml::Table = text.parse().map_err(|e| format!("invalid gate file: {e}"))?;
        Self::from_layers(vec![table])
    }

    /// Reads a gate file as a TOML table.
    ///
    /// # Errors
    /// A message naming the file.
    pub fn read_layer(path: &Path) -> Result<toml::Table, String> {
        let text =
            std::fs::read_to_string(path).map_err(|e| format!("cannot read gate file {}: {e}", path.display()))?;
        text.parse().map_err(|e| format!("invalid gate file {}: {e}", path.display()))
    }
}

/// One call's figures on one target (from the targets file).
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
#[allow(missing_docs)]
pub struct TargetCall {
    pub call: String,
    pub points: u64,
    pub worst_instructions: u64,
    pub median_instructions: u64,
    pub stack_bytes: u64,
    pub flash_bytes: u64,
}

/// One target and number type (from the targets file).
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
#[allow(missing_docs)]
pub struct TargetFigures {
    pub target: String,
    pub board: String,
    pub scalar: String,
    pub robot_bytes: u64,
    pub calls: Vec<TargetCall>,
    pub flash_kinematics_bytes: u64,
}

/// The targets file.
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
pub struct TargetsFile {
    /// One entry per target and number type.
    pub targets: Vec<TargetFigures>,
}

impl TargetsFile {
    /// Reads and parses a targets file.
    ///
    /// # Errors
    /// A message naming the file.
    pub fn load(path: &Path) -> Result<Self, String> {
        let text =
            std::fs::read_to_string(path).map_err(|e| format!("cannot read targets file {}: {e}", path.display()))?;
        serde_json::from_str(&text).map_err(|e| format!("invalid targets file {}: {e}", path.display()))
    }

    fn find(&self, target: &str, scalar: &str) -> Option<&TargetFigures> {
        self.targets.iter().find(|t| t.target == target && t.scalar == scalar)
    }
}

impl TargetFigures {
    fn call(&self, name: &str) -> Option<&TargetCall> {
        self.calls.iter().find(|c| c.call == name)
    }
}

/// Verdict on one gate.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// The figure is within its limit.
    Pass,
    /// The figure breaks its limit.
    Fail,
    /// The figure was not measured.
    NotRun,
}

impl Verdict {
    /// As printed.
    #[must_use]
    pub fn word(self) -> &'static str {
        match self {
            Verdict::Pass => "pass",
            Verdict::Fail => "FAIL",
            Verdict::NotRun => "not run",
        }
    }
}

/// One gate and its verdict.
#[derive(Clone, Debug, Serialize)]
pub struct Gate {
    /// Section: `accuracy`, `host_timing` or `targets`.
    pub section: &'static str,
    /// What is gated, in words.
    pub name: String,
    /// The measured figure (absent when not run).
    pub measured: Option<f64>,
    /// The limit (the figure must be at most this).
    pub limit: f64,
    /// Unit of both.
    pub unit: &'static str,
    /// The verdict.
    pub verdict: Verdict,
    /// Whether a `fail` (or a `not run` of a required gate) fails the
    /// report.
    pub enforced: bool,
    /// Where the limit comes from, or why the gate did not run.
    pub note: String,
}

impl Gate {
    fn at_most(section: &'static str, name: String, measured: f64, limit: f64, unit: &'static str) -> Self {
        // A NaN figure fails.
        let verdict = if measured <= limit { Verdict::Pass } else { Verdict::Fail };
        Gate { section, name, measured: Some(measured), limit, unit, verdict, enforced: true, note: String::new() }
    }

    fn not_run(
        section: &'static str,
        name: String,
        limit: f64,
        unit: &'static str,
        enforced: bool,
        note: &str,
    ) -> Self {
        Gate { section, name, measured: None, limit, unit, verdict: Verdict::NotRun, enforced, note: note.to_owned() }
    }

    /// Whether this gate fails the report.
    #[must_use]
    pub fn fails_report(&self) -> bool {
        self.enforced && self.verdict != Verdict::Pass
    }
}

/// Accuracy gates: one per sweep and number type (worst error against its
/// bound, as the cross-check applied it), and one for points where the
/// reference or a core found no solution.
fn accuracy(findings: &Findings) -> Vec<Gate> {
    let mut out = Vec::new();
    for s in [&findings.ik, &findings.fk] {
        let what = if s.problem == "ik" { "IK joint-angle error" } else { "FK position error" };
        for c in &s.scalars {
            let mut g = Gate::at_most(
                "accuracy",
                format!("{} {what}, worst", c.scalar),
                c.error.max,
                c.bound,
                if s.problem == "ik" { "urad" } else { "um" },
            );
            c.bound_name.clone_into(&mut g.note);
            out.push(g);
        }
        let failed: usize = s.scalars.iter().map(|c| c.reference_failed + c.core_failed).sum();
        let mut g = Gate::at_most(
            "accuracy",
            format!("{} accepted points without a solution", s.problem.to_uppercase()),
            f64::from(u32::try_from(failed).unwrap_or(u32::MAX)),
            0.0,
            "points",
        );
        "reference or core failed where the f64 guard accepts".clone_into(&mut g.note);
        out.push(g);
        if s.accepted == 0 {
            out.push(Gate::not_run(
                "accuracy",
                format!("{} sweep", s.problem.to_uppercase()),
                0.0,
                "points",
                true,
                "no swept point is accepted by the guarded f64 core",
            ));
        }
    }
    out
}

fn host(timing: Option<&HostTiming>, g: &HostTimingGates) -> Vec<Gate> {
    let note = if g.enforce { "goal, enforced by the gates" } else { "goal only: a miss does not fail the report" };
    [
        ("inverse", "f32 guarded IK, median", g.f32_inverse_median_ns),
        ("forward", "f32 guarded FK, median", g.f32_forward_median_ns),
    ]
    .into_iter()
    .map(|(call, name, limit)| {
        let found = timing.and_then(|t| t.calls.iter().find(|c| c.call == call && c.scalar == "f32"));
        let mut gate = match found {
            Some(c) => Gate::at_most("host_timing", name.to_owned(), c.median_ns, limit, "ns"),
            None => Gate::not_run("host_timing", name.to_owned(), limit, "ns", g.enforce, "timing was skipped"),
        };
        gate.enforced = g.enforce;
        if gate.note.is_empty() {
            note.clone_into(&mut gate.note);
        }
        gate
    })
    .collect()
}

/// The call names of the targets file, with the words the report uses.
const CALLS: [(&str, &str); 3] = [("inverse", "IK"), ("forward", "FK"), ("setpoint_step", "setpoint step")];

#[allow(clippy::cast_precision_loss)] // byte and instruction counts far below 2^53
fn targets(file: Option<&TargetsFile>, g: &TargetGates) -> Vec<Gate> {
    let Some(file) = file else {
        return vec![Gate::not_run(
            "targets",
            "instructions, flash, stack and robot size on the targets".to_owned(),
            0.0,
            "-",
            g.required,
            "not run: no --targets file (ci/target-report.sh writes one)",
        )];
    };
    let mut out = Vec::new();
    for b in &g.budget {
        let who = format!("{} {}", b.target, b.scalar);
        let found = file.find(&b.target, &b.scalar);
        let per_call = [b.inverse_instructions, b.forward_instructions, b.setpoint_step_instructions];
        for ((call, words), limit) in CALLS.iter().zip(per_call) {
            let Some(limit) = limit else { continue };
            let name = format!("{who}: {words}, worst instructions");
            match found.and_then(|t| t.call(call)) {
                Some(c) => out.push(Gate::at_most("targets", name, c.worst_instructions as f64, limit as f64, "instr")),
                None => out.push(Gate::not_run(
                    "targets",
                    name,
                    limit as f64,
                    "instr",
                    true,
                    "missing from the targets file",
                )),
            }
        }
        if let Some(limit) = b.flash_kinematics_bytes {
            let name = format!("{who}: flash for IK + FK + guards");
            match found {
                Some(t) => {
                    out.push(Gate::at_most("targets", name, t.flash_kinematics_bytes as f64, limit as f64, "bytes"));
                }
                None => out.push(Gate::not_run(
                    "targets",
                    name,
                    limit as f64,
                    "bytes",
                    true,
                    "missing from the targets file",
                )),
            }
        }
    }
    for t in &file.targets {
        let who = format!("{} {}", t.target, t.scalar);
        out.push(Gate::at_most(
            "targets",
            format!("{who}: robot value"),
            t.robot_bytes as f64,
            g.robot_bytes as f64,
            "bytes",
        ));
        for c in &t.calls {
            out.push(Gate::at_most(
                "targets",
                format!("{who}: stack of {}", c.call),
                c.stack_bytes as f64,
                g.stack_bytes as f64,
                "bytes",
            ));
        }
    }
    for target in &g.soft_float_targets {
        let (Some(fixed), Some(soft)) = (file.find(target, "fixed"), file.find(target, "f32")) else { continue };
        for (call, words) in CALLS {
            let (Some(f), Some(s)) = (fixed.call(call), soft.call(call)) else { continue };
            let ratio = if s.worst_instructions == 0 {
                f64::INFINITY
            } else {
                f.worst_instructions as f64 / s.worst_instructions as f64
            };
            let mut gate = Gate::at_most(
                "targets",
                format!("{target}: {words} fixed / soft-float f32, worst instructions"),
                ratio,
                g.fixed_over_soft_float,
                "ratio",
            );
            gate.note = format!("{} / {} instructions", f.worst_instructions, s.worst_instructions);
            out.push(gate);
        }
    }
    out
}

/// Every gate's verdict.
#[must_use]
pub fn evaluate(
    config: &GateConfig,
    findings: &Findings,
    timing: Option<&HostTiming>,
    targets_file: Option<&TargetsFile>,
) -> Vec<Gate> {
    let mut out = accuracy(findings);
    out.extend(host(timing, &config.host_timing));
    out.extend(targets(targets_file, &config.targets));
    out
}

/// The simplified-torque gates: the core's torques against the
/// full-dynamics reference on the demo program, worst and RMS in percent
/// of the peak ([`crate::bounds::SIMPLIFIED_TORQUE_WORST_PCT`],
/// [`crate::bounds::SIMPLIFIED_TORQUE_RMS_PCT`]). Not run (and not
/// required) when the robot file has no `[dynamics]` table, or when the
/// demo program does not run on this robot (the reason in the note).
#[must_use]
pub fn torque_model(figures: &Result<Option<crate::torque_error::TorqueError>, String>) -> Vec<Gate> {
    use crate::bounds::{SIMPLIFIED_TORQUE_RMS_PCT, SIMPLIFIED_TORQUE_WORST_PCT};
    let section = "dynamics";
    let worst = "simplified torques vs full reference, worst".to_owned();
    let rms = "simplified torques vs full reference, RMS".to_owned();
    match figures {
        Ok(Some(f)) => {
            let mut a = Gate::at_most(section, worst, f.worst_pct, SIMPLIFIED_TORQUE_WORST_PCT, "% of peak");
            "bounds::SIMPLIFIED_TORQUE_WORST_PCT".clone_into(&mut a.note);
            let mut b = Gate::at_most(section, rms, f.rms_pct, SIMPLIFIED_TORQUE_RMS_PCT, "% of peak");
            "bounds::SIMPLIFIED_TORQUE_RMS_PCT".clone_into(&mut b.note);
            vec![a, b]
        }
        Ok(None) => vec![Gate::not_run(
            section,
            worst,
            SIMPLIFIED_TORQUE_WORST_PCT,
            "% of peak",
            false,
            "the robot file has no [dynamics] table",
        )],
        Err(e) => vec![Gate::not_run(section, worst, SIMPLIFIED_TORQUE_WORST_PCT, "% of peak", false, e)],
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn defaults_are_the_documented_limits() {
        let d = GateConfig::default();
        assert_eq!(d.accuracy.bounds(), ErrorBounds::default());
        assert_eq!(
            d.host_timing,
            HostTimingGates { f32_inverse_median_ns: 40.0, f32_forward_median_ns: 40.0, enforce: false }
        );
        assert_eq!((d.targets.robot_bytes, d.targets.stack_bytes, d.targets.fixed_over_soft_float), (256, 512, 0.3));
        assert_eq!(d.targets.budget[0].inverse_instructions, Some(400));
        assert_eq!(d.targets.budget[1].forward_instructions, Some(2500));
        // The empty file is the defaults.
        assert_eq!(GateConfig::parse("").unwrap(), d);
    }

    #[test]
    fn a_gate_file_overrides_key_by_key_and_refuses_unknown_keys() {
        let g = GateConfig::parse("[accuracy]\nf32_joint_rad = 2e-6\n[host_timing]\nenforce = true\n").unwrap();
        assert_eq!(g.accuracy.f32_joint_rad, 2e-6);
        assert_eq!(g.accuracy.f64_joint_rad, crate::bounds::F64_JOINT_ERR_RAD);
        assert!(g.host_timing.enforce);
        assert_eq!(g.host_timing.f32_inverse_median_ns, HOST_F32_MEDIAN_NS);
        assert!(GateConfig::parse("[accuracy]\nf32_joint_urad = 2.0\n").unwrap_err().contains("f32_joint_urad"));
        assert!(GateConfig::parse("[timing]\n").is_err());
        // A budget list replaces the default list.
        let g = GateConfig::parse(
            "[[targets.budget]]\ntarget = \"thumbv7m-none-eabi\"\nscalar = \"fixed\"\ninverse_instructions = 1000\n",
        )
        .unwrap();
        assert_eq!(g.targets.budget.len(), 1);
        assert_eq!(g.targets.budget[0].forward_instructions, None);
    }

    #[test]
    fn later_layers_win() {
        let robot: toml::Table = "[accuracy]\nf32_joint_rad = 3e-6\nf64_joint_rad = 1e-14\n".parse().unwrap();
        let file: toml::Table = "[accuracy]\nf32_joint_rad = 4e-6\n".parse().unwrap();
        let g = GateConfig::from_layers(vec![robot, file]).unwrap();
        assert_eq!((g.accuracy.f32_joint_rad, g.accuracy.f64_joint_rad), (4e-6, 1e-14));
    }

    fn call(name: &str, worst: u64, stack: u64) -> TargetCall {
        TargetCall {
            call: name.to_owned(),
            points: 100,
            worst_instructions: worst,
            median_instructions: worst / 2,
            stack_bytes: stack,
            flash_bytes: 1000,
        }
    }

    #[test]
    fn target_gates_check_budgets_stack_size_and_the_soft_float_ratio() {
        let entry = |target: &str, scalar: &str, calls: Vec<TargetCall>| TargetFigures {
            target: target.to_owned(),
            board: "b".to_owned(),
            scalar: scalar.to_owned(),
            robot_bytes: 200,
            calls,
            flash_kinematics_bytes: 9000,
        };
        let file = TargetsFile {
            targets: vec![
                entry(M4F_TARGET, "f32", vec![call("inverse", 390, 300), call("forward", 301, 300)]),
                entry(M0_TARGET, "fixed", vec![call("inverse", 2900, 600), call("forward", 2000, 300)]),
                entry(M0_TARGET, "f32", vec![call("inverse", 10_000, 300), call("forward", 6000, 300)]),
            ],
        };
        let gates = targets(Some(&file), &TargetGates::default());
        let verdict = |needle: &str| {
            gates.iter().find(|g| g.name.contains(needle)).map(|g| g.verdict).unwrap_or_else(|| panic!("{needle}"))
        };
        assert_eq!(verdict("eabihf f32: IK, worst"), Verdict::Pass);
        assert_eq!(verdict("eabihf f32: FK, worst"), Verdict::Fail); // 301 > 300
        assert_eq!(verdict("eabihf f32: setpoint step"), Verdict::NotRun);
        assert_eq!(verdict("eabihf f32: flash"), Verdict::Fail); // 9000 > 8192
        assert_eq!(verdict("eabi fixed: stack of inverse"), Verdict::Fail); // 600 > 512
        assert_eq!(verdict("IK fixed / soft-float"), Verdict::Pass); // 0.29
        assert_eq!(verdict("FK fixed / soft-float"), Verdict::Fail); // 0.33
        assert!(gates.iter().all(|g| g.enforced));
        let none = targets(None, &TargetGates::default());
        assert_eq!(none.len(), 1);
        assert!(!none[0].fails_report(), "not run and not required");
        let required = TargetGates { required: true, ..TargetGates::default() };
        assert!(targets(None, &required)[0].fails_report());
    }
}
