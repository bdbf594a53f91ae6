//! `deltakin size` run as a user runs it: exit statuses 0 (every arm
//! passes), 1 (a drive fails its verdict), 2 (bad input), the reasons and
//! the picture; and the benchmark search's own consistency.

use std::path::PathBuf;
use std::process::{Command, Output};

use deltakin_harness::config::{DEMO_ROBOT_TOML, RobotFile};
use deltakin_harness::drive::{DEMO_DRIVE_TOML, Drive};
use deltakin_harness::plan::{DEMO_MOVES_TOML, MovesFile};
use deltakin_harness::size::bench::Highest;
use deltakin_harness::size::{self, DEFAULT_DWELL_S, DEFAULT_MAX_INERTIA_RATIO, Request};

/// Relative width the bisection stops at (1e-6) with room for rounding.
const SEARCH_REL: f64 = 1e-5;

fn size(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_deltakin")).arg("size").args(args).output().expect("run deltakin size")
}

fn temp_file(name: &str, text: &str) -> PathBuf {
    let path = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join(format!("size-{name}"));
    std::fs::write(&path, text).expect("write temp file");
    path
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8(bytes.to_vec()).expect("utf-8")
}

/// The demo drive with the line of `key` set to `key = value`.
fn drive_with(key: &str, value: &str) -> String {
    DEMO_DRIVE_TOML
        .lines()
        .map(|l| if l.split_whitespace().next() == Some(key) { format!("{key} = {value}") } else { l.to_owned() })
        .collect::<Vec<_>>()
        .join("\n")
}

#[test]
fn the_demo_drive_passes_and_draws_its_picture() {
    let plot = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("size-plot.svg");
    let out = size(&["--plot", plot.to_str().unwrap()]);
    let stdout = text(&out.stdout);
    assert_eq!(out.status.code(), Some(0), "{stdout}{}", text(&out.stderr));
    assert!(stdout.contains("overall: PASS"), "{stdout}");
    assert!(stdout.contains("highest rate the drive sustains:"), "{stdout}");
    let svg = std::fs::read_to_string(&plot).expect("plot written");
    assert!(svg.starts_with("<svg") && svg.contains("motor rated (continuous) torque"), "an SVG with the envelope");
}

#[test]
fn a_weak_motor_fails_with_the_reason_and_status_1() {
    let weak = drive_with("rated_torque_nmm", "60.0").replace("peak_torque_nmm = 950.0", "peak_torque_nmm = 200.0");
    let path = temp_file("weak.toml", &weak);
    let out = size(&["--drive", path.to_str().unwrap()]);
    let stdout = text(&out.stdout);
    assert_eq!(out.status.code(), Some(1), "{stdout}{}", text(&out.stderr));
    assert!(stdout.contains("overall: FAIL"), "{stdout}");
    assert!(stdout.contains("arm 0: FAIL: motor peak torque"), "{stdout}");
    assert!(stdout.contains("motor RMS torque (thermal)"), "{stdout}");
}

#[test]
fn bad_input_is_status_2_with_the_key_named() {
    let bad = temp_file("bad.toml", &drive_with("efficiency", "1.5"));
    let out = size(&["--drive", bad.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("[gearbox] efficiency = 1.5 must be above 0 and at most 1"));

    let typo = temp_file("typo.toml", &DEMO_DRIVE_TOML.replace("\nratio =", "\ngear_ratio ="));
    let out = size(&["--drive", typo.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("gear_ratio"));

    let start = DEMO_ROBOT_TOML.find("[dynamics]").unwrap();
    let bare = temp_file("robot.toml", &DEMO_ROBOT_TOML[..start]);
    let out = size(&["--robot", bare.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("no [dynamics] table"), "{}", text(&out.stderr));

    let out = size(&["--drive", "/nonexistent/drive.toml"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("cannot read drive file"));

    let out = size(&["--dwell-s", "-1"]);
    assert_eq!(out.status.code(), Some(2));
    let out = size(&["--bench-centre-mm", "0,0,-2000"]);
    assert_eq!(out.status.code(), Some(2), "a benchmark outside the workspace is refused");
}

#[test]
fn the_highest_rate_sits_on_a_limit() {
    let robot = RobotFile::parse(DEMO_ROBOT_TOML).unwrap();
    let moves = MovesFile::parse(DEMO_MOVES_TOML).unwrap();
    let drive = Drive::demo();
    let request = Request {
        robot: &robot,
        moves: &moves,
        drive: &drive,
        rate_hz: 4000.0,
        bench_centre_mm: moves.start_mm,
        dwell_s: DEFAULT_DWELL_S,
        max_inertia_ratio: DEFAULT_MAX_INERTIA_RATIO,
    };
    let sizing = size::size(&request).unwrap();
    let Highest::At { k, per_minute, binding, .. } = sizing.bench.highest else {
        panic!("the demo drive has a finite highest rate: {:?}", sizing.bench.highest)
    };
    assert!((binding.ratio() - 1.0).abs() <= SEARCH_REL && binding.ratio() <= 1.0, "{binding:?}");
    // Just above the found stretch some limit is broken.
    let r64 = robot.robot::<f64>().unwrap();
    let dynamics = robot.dynamics(&r64).unwrap().unwrap();
    let above = sizing.bench.bench.figures(&dynamics, &drive, k * (1.0 + 2.0 * SEARCH_REL)).unwrap();
    assert!((0..3).any(|a| above[a].highest_use(&drive.arms[a]).ratio() > 1.0));
    let cycle = sizing.bench.bench.profile.cycle_s(k);
    assert!((per_minute - 60.0 / cycle).abs() < 1e-9);
    assert!(sizing.passes());
}
