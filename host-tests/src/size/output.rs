//! The text report of `deltakin size`: a table per arm in the drive
//! file's units (N*mm, rpm, V), the verdicts with their reasons, and the
//! benchmark pick rate.

use std::fmt::Write;

use super::Sizing;
use super::bench::{self, Highest};
use super::verdict::{Check, Use, Verdict};
use crate::drive::ArmDrive;

/// rad/s to rpm.
const RPM_PER_RAD_S: f64 = 30.0 / std::f64::consts::PI;
/// N*m to N*mm.
const NMM_PER_NM: f64 = 1e3;
/// kg*m^2 to kg*mm^2.
const KG_MM2_PER_KG_M2: f64 = 1e6;

/// A check's unit and the factor from SI to it.
#[must_use]
pub const fn unit(check: Check) -> (f64, &'static str) {
    match check {
        Check::MotorPeakTorque | Check::MotorThermal | Check::GearboxPeakTorque | Check::GearboxMeanTorque => {
            (NMM_PER_NM, "N*mm")
        }
        Check::MotorSpeed | Check::GearboxInputSpeed => (RPM_PER_RAD_S, "rpm"),
        Check::SupplyVoltage => (1.0, "V"),
    }
}

/// `figure of limit unit (percent)`.
#[must_use]
pub fn describe(u: &Use) -> String {
    let (f, name) = unit(u.check);
    format!("{} {:.0} of {:.0} {name} ({:.0} %)", u.check.words(), u.value * f, u.limit * f, 100.0 * u.ratio())
}

/// The three arms' values of `limit` in the display unit: one number when
/// they agree, else `a/b/c`.
fn limit_text(arms: &[ArmDrive; 3], limit: impl Fn(&ArmDrive) -> f64) -> String {
    let v = arms.each_ref().map(limit);
    if v[0] == v[1] && v[1] == v[2] { format!("{:.0}", v[0]) } else { format!("{:.0}/{:.0}/{:.0}", v[0], v[1], v[2]) }
}

fn verdict_word(v: &Verdict) -> &'static str {
    match v {
        Verdict::Pass(_) => "pass",
        Verdict::Advice(..) => "pass (advice)",
        Verdict::Fail(_) => "FAIL",
    }
}

/// The whole report.
#[must_use]
pub fn text(s: &Sizing) -> String {
    let mut out = String::new();
    let arms = &s.drive.arms;
    let d0 = &arms[0];
    let _ = writeln!(out, "deltakin size: robot \"{}\", drive \"{}\"", s.robot_name, s.drive.name);
    let _ = writeln!(
        out,
        "drive (arm 0): ratio {}, efficiency {}, rotor {} + gearbox {} kg*mm^2 at the motor",
        d0.gearbox.ratio,
        d0.gearbox.efficiency,
        d0.motor.rotor_inertia * KG_MM2_PER_KG_M2,
        d0.gearbox.inertia_at_input * KG_MM2_PER_KG_M2,
    );
    if arms.iter().any(|a| a != d0) {
        let _ = writeln!(out, "  (the arms' drives differ: limits below are listed arm 0/1/2)");
    }
    let _ = writeln!(
        out,
        "cycle: the moves file as one duty cycle, repeated: {:.3} s at {} Hz (planned in f64; joint \
         accelerations by central differences of the streamed rates)\n",
        s.cycle_s, s.rate_hz
    );
    let _ = writeln!(out, "{:<36}{:>12}{:>12}{:>12}   limit", "", "arm 0", "arm 1", "arm 2");
    let f = &s.figures;
    let mut row = |label: &str, value: &dyn Fn(usize) -> String, limit: String| {
        let _ = writeln!(out, "{label:<36}{:>12}{:>12}{:>12}   {limit}", value(0), value(1), value(2));
    };
    let nmm = |v: f64| format!("{:.0}", v * NMM_PER_NM);
    let rpm = |v: f64| format!("{:.0}", v * RPM_PER_RAD_S);
    row(
        "motor peak torque (N*mm)",
        &|a| nmm(f[a].peak_torque),
        format!("{} peak", limit_text(arms, |d| d.motor.peak_torque * NMM_PER_NM)),
    );
    row(
        "motor RMS torque (N*mm)",
        &|a| nmm(f[a].rms_torque),
        format!("{} rated", limit_text(arms, |d| d.motor.rated_torque * NMM_PER_NM)),
    );
    row(
        "thermal load (RMS / rated)",
        &|a| format!("{:.2}", f[a].rms_torque / arms[a].motor.rated_torque),
        "1".to_owned(),
    );
    row(
        "motor peak speed (rpm)",
        &|a| rpm(f[a].peak_speed),
        format!("{} max", limit_text(arms, |d| d.motor.max_speed * RPM_PER_RAD_S)),
    );
    row("motor mean |speed| (rpm)", &|a| rpm(f[a].mean_speed), String::new());
    row(
        "peak winding voltage (V)",
        &|a| format!("{:.1}", f[a].peak_voltage),
        format!("{} supply", limit_text(arms, |d| d.motor.supply_voltage)),
    );
    row(
        "gearbox peak output torque (N*mm)",
        &|a| nmm(f[a].peak_output_torque),
        format!("{} peak", limit_text(arms, |d| d.gearbox.peak_output_torque * NMM_PER_NM)),
    );
    row(
        "gearbox cubic-mean torque (N*mm)",
        &|a| nmm(f[a].mean_output_torque),
        format!("{} rated", limit_text(arms, |d| d.gearbox.rated_output_torque * NMM_PER_NM)),
    );
    row(
        "gearbox peak input speed (rpm)",
        &|a| rpm(f[a].peak_speed),
        format!("{} max", limit_text(arms, |d| d.gearbox.max_input_speed * RPM_PER_RAD_S)),
    );
    row(
        "load / rotor inertia (worst)",
        &|a| format!("{:.1}", f[a].inertia_ratio),
        format!("{} advice", s.max_inertia_ratio),
    );
    row("verdict", &|a| verdict_word(&s.verdicts[a]).to_owned(), String::new());
    let _ = writeln!(out);
    for (arm, v) in s.verdicts.iter().enumerate() {
        match v {
            Verdict::Pass(u) => {
                let _ = writeln!(out, "arm {arm}: pass; highest use {}", describe(u));
            }
            Verdict::Advice(u, ratio) => {
                let _ = writeln!(
                    out,
                    "arm {arm}: pass; highest use {}; advice: load/rotor inertia {ratio:.1} is above {} \
                     (a stiff position loop is harder to tune; a higher ratio or a larger rotor lowers it)",
                    describe(u),
                    s.max_inertia_ratio
                );
            }
            Verdict::Fail(uses) => {
                let list: Vec<String> = uses.iter().map(describe).collect();
                let _ = writeln!(out, "arm {arm}: FAIL: {}", list.join("; "));
            }
        }
    }
    let overall = if s.passes() { "PASS" } else { "FAIL" };
    let (arm, u) = super::verdict::highest_of(&s.figures, &s.drive);
    let _ = writeln!(out, "overall: {overall} (highest use: arm {arm} {})\n", describe(&u));

    let b = &s.bench;
    let c = b.bench.centre_mm;
    let _ = writeln!(
        out,
        "benchmark pick cycle ({} mm up, {} mm across, {} mm down, and back; common practice): centre \
         ({}, {}, {}) mm, across along x, corners blended {} mm, {} s hold at each end",
        bench::LIFT_MM,
        bench::ACROSS_MM,
        bench::LIFT_MM,
        c[0],
        c[1],
        c[2],
        bench::BLEND_MM,
        b.bench.dwell_s
    );
    let p = &b.bench.profile;
    let (arm, u) = b.use_at_bounds;
    let _ = writeln!(
        out,
        "  at the moves file's bounds: {:.3} s motion + {:.3} s hold = {:.3} s, {:.1} cycles/min; highest use arm {arm} {}",
        p.motion_s,
        p.hold_s,
        p.cycle_s(1.0),
        b.per_minute_at_bounds,
        describe(&u)
    );
    match b.highest {
        Highest::At { k, per_minute, arm, binding } => {
            let _ = writeln!(
                out,
                "  highest rate the drive sustains: {per_minute:.1} cycles/min ({:.3} s per cycle, the motion \
                 played {k:.3} times as fast), bound by arm {arm} {}",
                p.cycle_s(k),
                describe(&binding)
            );
            if k > 1.0 {
                let _ = writeln!(
                    out,
                    "  (faster than the moves file's bounds allow: running it needs those bounds raised by \
                     {k:.3}x in speed and {:.3}x in acceleration)",
                    k * k
                );
            }
        }
        Highest::Unbounded => {
            let _ = writeln!(out, "  highest rate: no drive limit reached up to 1024 times the moves file's bounds");
        }
        Highest::Never { arm, binding } => {
            let _ =
                writeln!(out, "  highest rate: none: even 1024 times slower, arm {arm} breaks {}", describe(&binding));
        }
    }
    out
}
