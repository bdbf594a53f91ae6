//! Formatting of `deltakin report`: plain-text tables for people and JSON
//! for machines. No computation beyond unit-free formatting.

use std::collections::BTreeSet;
use std::fmt::Write as _;
use std::path::Path;

use serde::Serialize;

use crate::crosscheck::{Findings, ScalarFindings, SweepFindings};
use crate::gates::{Gate, GateConfig, TargetsFile, Verdict};
use crate::stats::Extreme;
use crate::timing::HostTiming;
use crate::volume::VolumeFigures;

/// Everything `deltakin report` found and decided: the JSON document.
///
/// The cross-check's fields (`robot`, `ik`, `fk`, `breaches`) sit at the
/// top level, as before the other sections were added.
#[derive(Clone, Debug, Serialize)]
pub struct Report {
    /// Sweeps and accuracy.
    #[serde(flatten)]
    pub accuracy: Findings,
    /// The usable volume; `None` when no point passes the guards.
    pub volume: Option<VolumeFigures>,
    /// Host timing; `None` when skipped.
    pub host_timing: Option<HostTiming>,
    /// The targets file as read; `None` when none was given.
    pub targets: Option<TargetsFile>,
    /// The gate limits in force (defaults, robot file, gate file).
    pub gate_limits: GateConfig,
    /// The core's simplified torques against the full-dynamics reference
    /// on the demo program; `None` without a `[dynamics]` table.
    pub torque_model: Option<crate::torque_error::TorqueError>,
    /// Every gate's verdict.
    pub gates: Vec<Gate>,
    /// Whether every enforced gate passed (the exit status is 0 exactly
    /// then).
    pub passed: bool,
    /// SVG files written by `--plots`, with what each shows.
    pub plots: Vec<(String, String)>,
}

impl Report {
    /// Whether every enforced gate passed.
    #[must_use]
    pub fn gates_pass(gates: &[Gate]) -> bool {
        !gates.iter().any(Gate::fails_report)
    }
}

/// A table with a header row; the first `left` columns are left-aligned,
/// the rest right-aligned.
struct Table {
    header: Vec<String>,
    rows: Vec<Vec<String>>,
    left: usize,
}

impl Table {
    fn new(header: &[&str], left: usize) -> Self {
        Self { header: header.iter().map(|s| (*s).to_owned()).collect(), rows: Vec::new(), left }
    }

    fn row(&mut self, cells: Vec<String>) {
        self.rows.push(cells);
    }

    fn render(&self, out: &mut String) {
        let cols = self.header.len();
        let mut width = vec![0; cols];
        for r in std::iter::once(&self.header).chain(&self.rows) {
            for (w, c) in width.iter_mut().zip(r) {
                *w = (*w).max(c.chars().count());
            }
        }
        let line = |out: &mut String, r: &[String]| {
            out.push_str("  ");
            for (i, (c, &w)) in r.iter().zip(&width).enumerate() {
                if i > 0 {
                    out.push_str("  ");
                }
                if i < self.left {
                    let _ = write!(out, "{c:<w$}");
                } else {
                    let _ = write!(out, "{c:>w$}");
                }
            }
            while out.ends_with(' ') {
                out.pop();
            }
            out.push('\n');
        };
        line(out, &self.header);
        let rule: Vec<String> = width.iter().map(|&w| "-".repeat(w)).collect();
        line(out, &rule);
        for r in &self.rows {
            line(out, r);
        }
    }
}

/// About four significant digits, fixed notation in the comfortable range.
fn num(v: f64) -> String {
    if v == 0.0 {
        return "0".to_owned();
    }
    if !v.is_finite() {
        return format!("{v}");
    }
    let mag = v.abs();
    if (1e-3..1e6).contains(&mag) {
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let decimals = (3 - mag.log10().floor() as i32).max(0) as usize;
        format!("{v:.decimals$}")
    } else {
        format!("{v:.3e}")
    }
}

fn point(p: [f64; 3]) -> String {
    format!("({:.3}, {:.3}, {:.3})", p[0], p[1], p[2])
}

fn extreme(e: Option<Extreme>) -> (String, String) {
    e.map_or_else(|| ("-".to_owned(), "-".to_owned()), |e| (num(e.value), point(e.at)))
}

fn deg_range(lo: [f64; 3], hi: [f64; 3]) -> String {
    if lo.iter().all(|&v| v == lo[0]) && hi.iter().all(|&v| v == hi[0]) {
        format!("{} .. {} deg, every arm", lo[0], hi[0])
    } else {
        format!("arm 0: {} .. {}, arm 1: {} .. {}, arm 2: {} .. {} deg", lo[0], hi[0], lo[1], hi[1], lo[2], hi[2])
    }
}

fn sweeps(f: &Findings) -> [&SweepFindings; 2] {
    [&f.ik, &f.fk]
}

fn label(s: &SweepFindings) -> String {
    s.problem.to_uppercase()
}

/// The whole report as text.
#[must_use]
pub fn tables(r: &Report) -> String {
    let mut out = accuracy_tables(&r.accuracy);
    if let Some(v) = &r.volume {
        volume_tables(&mut out, v);
    } else {
        out.push_str("\nUsable volume: no point passes the guards\n");
    }
    match &r.host_timing {
        Some(t) => timing_table(&mut out, t),
        None => out.push_str("\nHost timing: skipped\n"),
    }
    target_tables(&mut out, r.targets.as_ref());
    if let Some(t) = &r.torque_model {
        out.push_str(
            "\nTorque model (demo program; simplified core model vs full-dynamics reference, friction left out)\n",
        );
        let mut tab = Table::new(&["samples", "peak N*mm", "worst N*mm", "worst %", "at s", "RMS N*mm", "RMS %"], 0);
        tab.row(vec![
            t.samples.to_string(),
            num(t.peak_nmm),
            num(t.worst_nmm),
            num(t.worst_pct),
            num(t.worst_at_s),
            num(t.rms_nmm),
            num(t.rms_pct),
        ]);
        tab.render(&mut out);
    }
    gate_table(&mut out, &r.gates);
    if !r.plots.is_empty() {
        out.push_str("\nPlots\n");
        let mut t = Table::new(&["file", "shows"], 2);
        for (file, what) in &r.plots {
            t.row(vec![file.clone(), what.clone()]);
        }
        t.render(&mut out);
    }
    out.push('\n');
    let failed: Vec<&Gate> = r.gates.iter().filter(|g| g.fails_report()).collect();
    if failed.is_empty() {
        out.push_str("Result: PASS (every enforced gate holds)\n");
    } else {
        let _ = writeln!(out, "Result: FAIL ({} enforced gate(s) broken)", failed.len());
        for g in failed {
            let _ = writeln!(out, "  - {}: {}", g.section, g.name);
        }
        for b in &r.accuracy.breaches {
            let _ = writeln!(out, "  - {b}");
        }
    }
    out
}

fn volume_tables(out: &mut String, v: &VolumeFigures) {
    let c = &v.cylinder;
    out.push_str(
        "\nUsable volume (every guard passes in f64; upright cylinder and ISO 9283 test cube on the z axis)\n",
    );
    let mut t = Table::new(&["shape", "centre (mm)", "size", "z range (mm)", "volume (litres)"], 3);
    t.row(vec![
        "cylinder".into(),
        point([0.0, 0.0, 0.5 * (c.z_min_mm + c.z_max_mm)]),
        format!("radius {} mm, height {} mm", num(c.radius_mm), num(c.z_max_mm - c.z_min_mm)),
        format!("{} .. {}", num(c.z_min_mm), num(c.z_max_mm)),
        num(v.cylinder_volume_mm3 * 1e-6),
    ]);
    let h = 0.5 * v.cube.edge_mm;
    t.row(vec![
        "ISO 9283 cube".into(),
        point(v.cube.centre_mm),
        format!("edge {} mm", num(v.cube.edge_mm)),
        format!("{} .. {}", num(v.cube.centre_mm[2] - h), num(v.cube.centre_mm[2] + h)),
        num(v.cube_volume_mm3 * 1e-6),
    ]);
    t.render(out);
    let _ = writeln!(
        out,
        "  (search: {} heights, {} directions per height, {} points per cube edge)",
        v.levels, v.rays, v.cube_points
    );
    out.push_str("\nISO 9283 test poses (P1 cube centre; P2..P5 on the diagonals of the plane x = y, 10 % in from the corners)\n");
    let mut t = Table::new(
        &[
            "pose",
            "position (mm)",
            "theta0 (deg)",
            "theta1 (deg)",
            "theta2 (deg)",
            "min serial",
            "parallel",
            "max passive tilt (deg)",
        ],
        2,
    );
    for p in &v.poses {
        t.row(vec![
            p.label.into(),
            point(p.position_mm),
            format!("{:.3}", p.joints_deg[0]),
            format!("{:.3}", p.joints_deg[1]),
            format!("{:.3}", p.joints_deg[2]),
            num(p.serial_margin.iter().copied().fold(f64::INFINITY, f64::min)),
            num(p.parallel_margin),
            num(p.max_passive_tilt_deg),
        ]);
    }
    t.render(out);
}

fn timing_table(out: &mut String, t: &HostTiming) {
    let build = if t.optimised_build { "" } else { " -- DEBUG BUILD, not representative" };
    let _ = writeln!(
        out,
        "\nHost timing per call over the accepted sweep points (fastest of {} batches of {} calls per point){build}\n\
         (cycle columns: share of one control cycle taken by the worst per-call time)",
        t.repeats, t.batch
    );
    let mut header = vec![
        "call".to_owned(),
        "scalar".to_owned(),
        "points".to_owned(),
        "median (ns)".to_owned(),
        "p99.9 (ns)".to_owned(),
        "worst (ns)".to_owned(),
    ];
    header.extend(t.rates_hz.iter().map(|hz| format!("{} kHz", hz / 1000.0)));
    let header: Vec<&str> = header.iter().map(String::as_str).collect();
    let mut tab = Table::new(&header, 2);
    for c in &t.calls {
        let mut row = vec![
            match c.call {
                "inverse" => "guarded IK".to_owned(),
                "forward" => "guarded FK".to_owned(),
                _ => "setpoint step".to_owned(),
            },
            c.scalar.to_owned(),
            c.points.to_string(),
            num(c.median_ns),
            num(c.p999_ns),
            num(c.worst_ns),
        ];
        row.extend(c.worst_cycle_share.iter().map(|s| format!("{} %", num(100.0 * s))));
        tab.row(row);
    }
    tab.render(out);
}

fn target_tables(out: &mut String, file: Option<&TargetsFile>) {
    let Some(file) = file else {
        out.push_str("\nTargets (emulated Cortex-M): not run (no --targets FILE; ci/target-report.sh writes one)\n");
        return;
    };
    out.push_str("\nTargets (emulated Cortex-M, from the targets file)\n");
    let mut t = Table::new(
        &["target", "board", "scalar", "call", "points", "median instr", "worst instr", "stack (B)", "flash (B)"],
        4,
    );
    for e in &file.targets {
        for c in &e.calls {
            t.row(vec![
                e.target.clone(),
                e.board.clone(),
                e.scalar.clone(),
                c.call.clone(),
                c.points.to_string(),
                c.median_instructions.to_string(),
                c.worst_instructions.to_string(),
                c.stack_bytes.to_string(),
                c.flash_bytes.to_string(),
            ]);
        }
    }
    t.render(out);
    let mut t = Table::new(&["target", "scalar", "robot value (B)", "flash IK + FK + guards (B)"], 2);
    for e in &file.targets {
        t.row(vec![
            e.target.clone(),
            e.scalar.clone(),
            e.robot_bytes.to_string(),
            e.flash_kinematics_bytes.to_string(),
        ]);
    }
    t.render(out);
}

fn gate_table(out: &mut String, gates: &[Gate]) {
    out.push_str("\nGates (a figure must be at most its limit; `shown only` gates do not affect the exit status)\n");
    let mut t =
        Table::new(&["section", "gate", "measured", "limit", "unit", "verdict", "enforced", "limit from / note"], 2);
    for g in gates {
        t.row(vec![
            g.section.into(),
            g.name.clone(),
            g.measured.map_or_else(|| "-".to_owned(), num),
            if g.verdict == Verdict::NotRun && g.unit == "-" { "-".to_owned() } else { num(g.limit) },
            g.unit.into(),
            g.verdict.word().into(),
            if g.enforced { "yes".into() } else { "shown only".into() },
            g.note.clone(),
        ]);
    }
    t.render(out);
}

/// The cross-check's tables (robot, sweeps, accuracy, margins, status).
#[must_use]
pub fn accuracy_tables(f: &Findings) -> String {
    let mut out = String::new();
    let r = &f.robot;
    let origin = if r.builtin_demo { " (built-in demo robot)" } else { "" };
    let _ = writeln!(out, "deltakin report: {}{origin}\n", r.name);

    out.push_str("Robot\n");
    let mut t = Table::new(&["quantity", "value"], 2);
    t.row(vec!["base radius".into(), format!("{} mm", r.base_radius_mm)]);
    t.row(vec!["platform radius".into(), format!("{} mm", r.platform_radius_mm)]);
    t.row(vec!["upper arm".into(), format!("{} mm", r.upper_arm_mm)]);
    t.row(vec!["lower arm".into(), format!("{} mm", r.lower_arm_mm)]);
    t.row(vec!["joint range".into(), deg_range(r.joint_min_deg, r.joint_max_deg)]);
    t.row(vec!["passive-joint cone".into(), format!("{} deg half-angle", r.passive_cone_deg)]);
    t.row(vec!["minimum serial margin".into(), format!("{}", r.min_serial_margin)]);
    t.row(vec!["minimum parallel margin".into(), format!("{}", r.min_parallel_margin)]);
    t.render(&mut out);

    out.push_str("\nSweep (grid over a box, plus a shell just inside the guard boundary)\n");
    let mut t =
        Table::new(&["sweep", "inputs", "box lo", "box hi", "grid", "rays", "shell pts", "accepted (f64 guard)"], 4);
    for s in sweeps(f) {
        let inputs = if s.problem == "ik" { "x, y, z (mm)" } else { "theta0..2 (deg)" };
        t.row(vec![
            label(s),
            inputs.into(),
            point(s.grid_box_lo),
            point(s.grid_box_hi),
            format!("{}^3 = {}", s.grid_n, s.grid_points),
            s.shell_rays.to_string(),
            s.shell_points.to_string(),
            s.accepted.to_string(),
        ]);
    }
    t.render(&mut out);

    out.push_str(
        "\nAccuracy against the independent f64 reference over the accepted volume\n\
         (IK: largest joint-angle error of the three arms; FK: platform position error)\n",
    );
    let mut t = Table::new(
        &["sweep", "scalar", "unit", "worst", "p99.9", "bound", "worst at", "checked", "ref failed", "core failed"],
        3,
    );
    for s in sweeps(f) {
        for c in &s.scalars {
            t.row(vec![
                label(s),
                c.scalar.into(),
                s.error_unit.into(),
                num(c.error.max),
                num(c.error.p999),
                num(c.bound),
                c.error.worst_at.map_or_else(|| "-".to_owned(), |p| format!("{} {}", point(p), s.input_unit)),
                c.error.count.to_string(),
                c.reference_failed.to_string(),
                c.core_failed.to_string(),
            ]);
        }
    }
    t.render(&mut out);

    out.push_str("\nMargins met over the points each core accepts (location in the sweep's input unit)\n");
    let mut t =
        Table::new(&["sweep", "scalar", "min serial", "at", "min parallel", "at", "max passive tilt (deg)", "at"], 2);
    for s in sweeps(f) {
        for c in &s.scalars {
            let (sv, sa) = extreme(c.min_serial_margin);
            let (pv, pa) = extreme(c.min_parallel_margin);
            let (tv, ta) = extreme(c.max_passive_tilt_deg);
            t.row(vec![label(s), c.scalar.into(), sv, sa, pv, pa, tv, ta]);
        }
    }
    t.render(&mut out);

    out.push_str("\nGuarded status of every swept point\n");
    for s in sweeps(f) {
        let words: BTreeSet<&str> = s.scalars.iter().flat_map(|c| c.status_counts.keys().copied()).collect();
        let mut header = vec!["sweep", "scalar"];
        header.extend(words.iter().copied());
        header.extend(["rejects f64-accepted", "accepts f64-rejected"]);
        let mut t = Table::new(&header, 2);
        for c in &s.scalars {
            t.row(status_row(s, c, &words));
        }
        t.render(&mut out);
    }

    out
}

fn status_row(s: &SweepFindings, c: &ScalarFindings, words: &BTreeSet<&str>) -> Vec<String> {
    let mut row = vec![label(s), c.scalar.to_owned()];
    row.extend(words.iter().map(|w| c.status_counts.get(w).copied().unwrap_or(0).to_string()));
    let relative = c.scalar != "f64";
    let rel = |v: usize| if relative { v.to_string() } else { "-".to_owned() };
    row.push(rel(c.rejected_where_f64_accepts));
    row.push(rel(c.accepted_where_f64_rejects));
    row
}

/// Every figure as pretty-printed JSON.
///
/// # Errors
/// When serialisation fails (it does not for these types).
pub fn json(r: &Report) -> Result<String, serde_json::Error> {
    serde_json::to_string_pretty(r)
}

/// Writes [`json`] to `path`.
///
/// # Errors
/// The I/O or serialisation error, as text naming the file.
pub fn write_json(r: &Report, path: &Path) -> Result<(), String> {
    let text = json(r).map_err(|e| format!("cannot encode the report as JSON: {e}"))?;
    std::fs::write(path, text + "\n").map_err(|e| format!("cannot write {}: {e}", path.display()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_show_about_four_significant_digits() {
        assert_eq!(num(0.0), "0");
        assert_eq!(num(1.23456), "1.235");
        assert_eq!(num(123.456), "123.5");
        assert_eq!(num(0.0123456), "0.01235");
        assert_eq!(num(1.5e-7), "1.500e-7");
        assert_eq!(num(f64::INFINITY), "inf");
    }

    #[test]
    fn tables_align_columns() {
        let mut t = Table::new(&["a", "bb"], 1);
        t.row(vec!["long".into(), "1".into()]);
        let mut out = String::new();
        t.render(&mut out);
        assert_eq!(out, "  a     bb\n  ----  --\n  long   1\n");
    }
}
