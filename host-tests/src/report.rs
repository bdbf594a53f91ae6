//! Formatting of `deltakin report`: plain-text tables for people and JSON
//! for machines. No computation beyond unit-free formatting.

use std::collections::BTreeSet;
use std::fmt::Write as _;
use std::path::Path;

use crate::crosscheck::{Findings, ScalarFindings, SweepFindings};
use crate::stats::Extreme;

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
pub fn tables(f: &Findings) -> String {
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

    out.push('\n');
    if f.breaches.is_empty() {
        out.push_str("Result: PASS (every bound in host-tests/src/bounds.rs holds)\n");
    } else {
        let _ = writeln!(out, "Result: FAIL ({} broken)", f.breaches.len());
        for b in &f.breaches {
            let _ = writeln!(out, "  - {b}");
        }
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
pub fn json(f: &Findings) -> Result<String, serde_json::Error> {
    serde_json::to_string_pretty(f)
}

/// Writes [`json`] to `path`.
///
/// # Errors
/// The I/O or serialisation error, as text naming the file.
pub fn write_json(f: &Findings, path: &Path) -> Result<(), String> {
    let text = json(f).map_err(|e| format!("cannot encode the report as JSON: {e}"))?;
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
