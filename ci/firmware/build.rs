//! Host side of the probe, run by cargo before the firmware is compiled:
//!
//! 1. picks the memory map of the emulated board for the target being
//!    built and puts it where cortex-m-rt's `link.x` looks for `memory.x`;
//! 2. generates `points.rs`, the probe's fixed set of workspace points of
//!    the demo robot (`examples/demo_robot.toml`): a grid over the
//!    workspace plus a shell just inside the guard boundary, and a shell
//!    just outside it. Which points pass is decided by deltakin's own
//!    guarded inverse kinematics in f64 on the host; every value is
//!    embedded as the raw bits of each scalar the probe can be built with
//!    (f32 bits, `Fixed` / `FixedWide` raw integers), so the firmware
//!    converts nothing.
use std::fmt::Write as _;
use std::{env, fs, path::PathBuf};

use deltakin::{Arith, Fixed, FixedWide, Geometry, Limits, Robot};

/// The robot file the probe measures.
const ROBOT_FILE: &str = "../../examples/demo_robot.toml";
/// Depth of the shells: inside points lie this far inside the guard
/// boundary along their ray, outside points this far beyond it (mm). Far
/// above the f32 and fixed-point position errors (a few um), so every
/// scalar must agree with f64 on which side a point lies.
const SHELL_DEPTH_MM: f64 = 0.1;
/// Bisection stops when the bracket is shorter than this (mm).
const BISECT_TOL_MM: f64 = 1e-4;
/// March step when looking for the first failing point along a ray (mm).
const MARCH_STEP_MM: f64 = 5.0;
/// Longest ray searched (mm): beyond any reach of the demo robot.
const MAX_RAY_MM: f64 = 3000.0;
/// Rays of the shell: azimuths per elevation ring, and the elevations
/// (deg) of the rings; plus one ray straight up and one straight down.
const RAY_AZIMUTHS: usize = 12;
const RAY_ELEVATIONS_DEG: [f64; 7] = [-75.0, -50.0, -25.0, 0.0, 25.0, 50.0, 75.0];
/// Interior grid: points per axis over the box around the shell.
const GRID_PER_AXIS: usize = 6;

fn main() {
    let target = env::var("TARGET").unwrap_or_default();
    let out = PathBuf::from(env::var("OUT_DIR").unwrap_or_default());
    let memory = if target.starts_with("thumbv6m") {
        // micro:bit (nRF51, Cortex-M0): 256 KiB flash, 16 KiB RAM.
        "MEMORY { FLASH : ORIGIN = 0x00000000, LENGTH = 256K\n RAM : ORIGIN = 0x20000000, LENGTH = 16K }\n"
    } else {
        // MPS2 AN386 (Cortex-M4): 4 MiB each.
        "MEMORY { FLASH : ORIGIN = 0x00000000, LENGTH = 4M\n RAM : ORIGIN = 0x20000000, LENGTH = 4M }\n"
    };
    fs::write(out.join("memory.x"), memory).unwrap_or_else(|e| panic!("memory.x: {e}"));
    fs::write(out.join("points.rs"), points()).unwrap_or_else(|e| panic!("points.rs: {e}"));
    println!("cargo::rustc-check-cfg=cfg(small_ram)");
    if target.starts_with("thumbv6m") {
        println!("cargo:rustc-cfg=small_ram");
    }
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=build.rs");
    println!("cargo:rerun-if-changed={ROBOT_FILE}");
}

/// The demo robot's numbers (mm, rad, margins).
struct RobotNumbers {
    geometry: [f64; 4],
    /// joint min, joint max, passive cone (rad), serial and parallel margin.
    limits: [f64; 5],
}

/// Reads the flat `key = number` lines of the robot file this probe needs
/// (a list of three joint limits per arm is not supported here).
fn robot_numbers() -> RobotNumbers {
    let text = fs::read_to_string(ROBOT_FILE).unwrap_or_else(|e| panic!("{ROBOT_FILE}: {e}"));
    let get = |key: &str| -> f64 {
        text.lines()
            .filter_map(|line| line.split('#').next())
            .filter_map(|line| line.split_once('='))
            .find(|(k, _)| k.trim() == key)
            .map(|(_, v)| v.trim().parse::<f64>().unwrap_or_else(|e| panic!("{ROBOT_FILE}: {key}: {e}")))
            .unwrap_or_else(|| panic!("{ROBOT_FILE}: no single number for {key}"))
    };
    RobotNumbers {
        geometry: [get("base_radius_mm"), get("platform_radius_mm"), get("upper_arm_mm"), get("lower_arm_mm")],
        limits: [
            get("joint_min_deg").to_radians(),
            get("joint_max_deg").to_radians(),
            get("passive_cone_deg").to_radians(),
            get("min_serial_margin"),
            get("min_parallel_margin"),
        ],
    }
}

fn robot_f64(n: &RobotNumbers) -> Robot<f64> {
    let [base_radius, platform_radius, upper_arm, lower_arm] = n.geometry;
    let [lo, hi, cone, serial, parallel] = n.limits;
    Robot::new(
        Geometry { base_radius, platform_radius, upper_arm, lower_arm },
        Limits {
            joint_min: [lo; 3],
            joint_max: [hi; 3],
            passive_cone: cone,
            min_serial_margin: serial,
            min_parallel_margin: parallel,
        },
    )
    .unwrap_or_else(|e| panic!("demo robot: {e}"))
}

fn add(p: [f64; 3], d: [f64; 3], t: f64) -> [f64; 3] {
    [p[0] + t * d[0], p[1] + t * d[1], p[2] + t * d[2]]
}

/// A point inside and a point outside the guard boundary along the ray
/// from `centre` in direction `dir` (unit), or `None` when the ray finds
/// no clean crossing (the shell points must pass / fail as expected).
fn shell_pair(robot: &Robot<f64>, centre: [f64; 3], dir: [f64; 3]) -> Option<([f64; 3], [f64; 3])> {
    let ok = |t: f64| robot.inverse(add(centre, dir, t)).is_ok();
    let mut lo = 0.0;
    let mut hi = MARCH_STEP_MM;
    while ok(hi) {
        lo = hi;
        hi += MARCH_STEP_MM;
        if hi > MAX_RAY_MM {
            return None;
        }
    }
    while hi - lo > BISECT_TOL_MM {
        let mid = 0.5 * (lo + hi);
        if ok(mid) { lo = mid } else { hi = mid }
    }
    let (inside, outside) = (lo - SHELL_DEPTH_MM, hi + SHELL_DEPTH_MM);
    (inside > 0.0 && ok(inside) && !ok(outside)).then(|| (add(centre, dir, inside), add(centre, dir, outside)))
}

/// The probe's points: inside ones with their f64 joints, outside ones.
struct Points {
    inside: Vec<([f64; 3], [f64; 3])>,
    outside: Vec<[f64; 3]>,
}

/// Formats one scalar's table module; `wide` and `narrow` turn a value
/// into the literal of its raw bits as the scalar's `Wide` and own type.
fn table(
    name: &str,
    ty: &str,
    n: &RobotNumbers,
    points: &Points,
    wide: impl Fn(f64) -> String,
    narrow: impl Fn(f64) -> String,
) -> String {
    let mut s = String::new();
    let w3 = |p: [f64; 3]| p.map(&wide).join(", ");
    let n3 = |p: [f64; 3]| p.map(&narrow).join(", ");
    let _ = writeln!(s, "pub mod {name} {{");
    let _ = writeln!(s, "    /// base radius, platform radius, upper arm, lower arm (mm), as `Wide` raw values.");
    let _ = writeln!(s, "    pub const GEOMETRY: [{ty}; 4] = [{}];", n.geometry.map(&wide).join(", "));
    let _ = writeln!(s, "    /// joint min, joint max, passive cone (rad), serial and parallel margin, raw.");
    let _ = writeln!(s, "    pub const LIMITS: [{ty}; 5] = [{}];", n.limits.map(&narrow).join(", "));
    let _ = writeln!(s, "    /// Inside points: position (mm, `Wide` raw) and f64 joints (rad, raw).");
    let _ = writeln!(s, "    pub const INSIDE: [[[{ty}; 3]; 2]; {}] = [", points.inside.len());
    for (p, j) in &points.inside {
        let _ = writeln!(s, "        [[{}], [{}]],", w3(*p), n3(*j));
    }
    let _ = writeln!(s, "    ];");
    let _ = writeln!(s, "    /// Outside points: position (mm, `Wide` raw).");
    let _ = writeln!(s, "    pub const OUTSIDE: [[{ty}; 3]; {}] = [", points.outside.len());
    for p in &points.outside {
        let _ = writeln!(s, "        [{}],", w3(*p));
    }
    let _ = writeln!(s, "    ];");
    let _ = writeln!(s, "    /// Sanity tolerances: joint angle (rad, raw) and position (mm, `Wide` raw).");
    let _ = writeln!(s, "    pub const JOINT_TOL: {ty} = {};", narrow(JOINT_TOL_RAD));
    let _ = writeln!(s, "    pub const POSITION_TOL: {ty} = {};", wide(POSITION_TOL_MM));
    let _ = writeln!(s, "}}");
    s
}

/// On-target sanity tolerances against the host's f64 figures: ten times
/// the f32 bounds the host tests hold (`host-tests/src/bounds.rs`: 1e-5
/// rad, 2e-3 mm; fixed point 5e-6 rad, 5e-3 mm), so they catch a broken
/// build, not a small loss of accuracy, which the host tests cover.
const JOINT_TOL_RAD: f64 = 1e-4;
const POSITION_TOL_MM: f64 = 2e-2;

fn points() -> String {
    let numbers = robot_numbers();
    let robot = robot_f64(&numbers);

    // Centre of the rays: the middle of the joint range on every arm.
    let mid = 0.5 * (numbers.limits[0] + numbers.limits[1]);
    let centre = robot.forward([mid; 3]).unwrap_or_else(|e| panic!("demo robot, mid-range pose: {e}")).position;

    let mut dirs = vec![[0.0, 0.0, 1.0], [0.0, 0.0, -1.0]];
    for el in RAY_ELEVATIONS_DEG {
        let (se, ce) = el.to_radians().sin_cos();
        for k in 0..RAY_AZIMUTHS {
            // Half a step off the arms' azimuths, so no ray lies in an arm's plane.
            let az = (k as f64 + 0.5) * std::f64::consts::TAU / RAY_AZIMUTHS as f64;
            let (sa, ca) = az.sin_cos();
            dirs.push([ce * ca, ce * sa, se]);
        }
    }
    let pairs: Vec<_> = dirs.iter().filter_map(|&d| shell_pair(&robot, centre, d)).collect();
    if pairs.len() < dirs.len() / 2 {
        panic!("only {} of {} rays crossed the guard boundary cleanly", pairs.len(), dirs.len());
    }

    // Interior grid over the box of the inside shell.
    let mut lo = [f64::MAX; 3];
    let mut hi = [f64::MIN; 3];
    for (p, _) in &pairs {
        for a in 0..3 {
            lo[a] = lo[a].min(p[a]);
            hi[a] = hi[a].max(p[a]);
        }
    }
    let mut inside = Vec::new();
    let step = |a: usize, i: usize| lo[a] + (hi[a] - lo[a]) * (i as f64 + 0.5) / GRID_PER_AXIS as f64;
    for i in 0..GRID_PER_AXIS {
        for j in 0..GRID_PER_AXIS {
            for k in 0..GRID_PER_AXIS {
                let p = [step(0, i), step(1, j), step(2, k)];
                if let Ok(s) = robot.inverse(p) {
                    inside.push((p, s.joints));
                }
            }
        }
    }
    let mut outside = Vec::new();
    for (pin, pout) in &pairs {
        let s = robot.inverse(*pin).unwrap_or_else(|e| panic!("shell point {pin:?}: {e}"));
        inside.push((*pin, s.joints));
        outside.push(*pout);
    }

    let mut s = String::new();
    let _ = writeln!(
        s,
        "// Generated by build.rs from {ROBOT_FILE}: {} grid points and {} shell points inside, {} outside.",
        inside.len() - pairs.len(),
        pairs.len(),
        outside.len()
    );
    let _ = writeln!(s, "pub const GRID_POINTS: usize = {};", inside.len() - pairs.len());
    let points = Points { inside, outside };
    let bits = |v: f64| format!("0x{:08x}", (v as f32).to_bits());
    let fixed = |v: f64| match Fixed::from_f64(v) {
        Some(f) => f.to_raw().to_string(),
        None => panic!("{v} is out of the Fixed range"),
    };
    let fixed_wide = |v: f64| match FixedWide::from_f64(v) {
        Some(f) => f.to_raw().to_string(),
        None => panic!("{v} is out of the FixedWide range"),
    };
    s += &table("f32_table", "u32", &numbers, &points, bits, bits);
    s += &table("fixed_table", "i32", &numbers, &points, fixed_wide, fixed);
    s
}
