//! The `deltakin` binary, run as a user runs it: CSV through stdin and
//! stdout, exit statuses, messages on stderr.

use std::io::Write;
use std::path::PathBuf;
use std::process::{Command, Output, Stdio};

use deltakin_harness::bounds;
use deltakin_harness::cli::status_text;
use deltakin_harness::config::{DEMO_ROBOT_TOML, RobotFile};

const IK_HEADER: &str = "theta0_deg,theta1_deg,theta2_deg,status";
const FK_HEADER: &str = "x_mm,y_mm,z_mm,status";
const POSITION_IN: &str = "x_mm,y_mm,z_mm";
const JOINT_IN: &str = "theta0_deg,theta1_deg,theta2_deg";

/// Exit status for usage and configuration problems (documented in `deltakin --help`).
const EXIT_USAGE: i32 = 2;

fn run(args: &[&str], stdin: &str) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_deltakin"))
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start deltakin");
    // A command that fails before reading stdin closes it: a broken pipe
    // here is that, not an error of the test.
    match child.stdin.take().expect("stdin").write_all(stdin.as_bytes()) {
        Err(e) if e.kind() != std::io::ErrorKind::BrokenPipe => panic!("write stdin: {e}"),
        _ => {}
    }
    child.wait_with_output().expect("deltakin output")
}

fn stdout_lines(out: &Output) -> Vec<String> {
    String::from_utf8(out.stdout.clone()).expect("utf-8 stdout").lines().map(str::to_owned).collect()
}

/// A row of output: three optional numbers and the status.
fn parse_out_row(line: &str) -> (Option<[f64; 3]>, String) {
    let f: Vec<&str> = line.split(',').collect();
    assert_eq!(f.len(), 4, "{line}");
    let nums = if f[3] == "ok" {
        Some([f[0], f[1], f[2]].map(|v| v.parse::<f64>().expect("number")))
    } else {
        assert!(f[..3].iter().all(|v| v.is_empty()), "error row with numbers: {line}");
        None
    };
    (nums, f[3].to_owned())
}

fn temp_file(name: &str, text: &str) -> PathBuf {
    let path = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join(name);
    std::fs::write(&path, text).expect("write temp file");
    path
}

/// A grid of targets around the demo robot's workspace centre; most lie
/// inside the guards, some outside.
fn demo_targets() -> Vec<[f64; 3]> {
    let mut v = Vec::new();
    for x in [-300.0, -150.0, 0.0, 150.0, 300.0] {
        for y in [-300.0, -150.0, 0.0, 150.0, 300.0] {
            for z in [-600.0, -700.0, -800.0, -900.0] {
                v.push([x, y, z]);
            }
        }
    }
    v
}

fn csv_of(header: &str, rows: &[[f64; 3]]) -> String {
    let mut s = format!("{header}\n");
    for r in rows {
        s.push_str(&format!("{},{},{}\n", r[0], r[1], r[2]));
    }
    s
}

#[test]
fn ik_then_fk_returns_the_targets() {
    let targets = demo_targets();
    // Per scalar: the FK position bound from bounds.rs. The f32 round trip
    // also carries the IK error times the arm's lever (about 1e3 mm/rad)
    // and the f32 rounding of the printed degrees; on the demo robot the
    // report measures the IK error below 1e-6 rad, so the sum stays below
    // the FK bound (about 1e-3 mm of 2e-3).
    for (scalar, bound_mm) in [("f64", bounds::F64_POS_ERR_MM), ("f32", bounds::F32_POS_ERR_MM)] {
        let ik = run(&["ik", "--scalar", scalar], &csv_of(POSITION_IN, &targets));
        assert!(ik.status.success(), "{}", String::from_utf8_lossy(&ik.stderr));
        let lines = stdout_lines(&ik);
        assert_eq!(lines.len(), targets.len() + 1);
        let solved: Vec<([f64; 3], [f64; 3])> =
            targets.iter().zip(&lines[1..]).filter_map(|(p, line)| parse_out_row(line).0.map(|t| (*p, t))).collect();
        assert!(solved.len() * 2 > targets.len(), "{scalar}: only {} of {} solved", solved.len(), targets.len());
        let joints: Vec<[f64; 3]> = solved.iter().map(|s| s.1).collect();
        let fk = run(&["fk", "--scalar", scalar], &csv_of(JOINT_IN, &joints));
        assert!(fk.status.success());
        let back = stdout_lines(&fk);
        assert_eq!(back[0], FK_HEADER);
        for ((p, _), line) in solved.iter().zip(&back[1..]) {
            let (q, status) = parse_out_row(line);
            assert_eq!(status, "ok", "{scalar}: {p:?} -> {line}");
            let q = q.expect("position");
            let err = ((q[0] - p[0]).powi(2) + (q[1] - p[1]).powi(2) + (q[2] - p[2]).powi(2)).sqrt();
            assert!(err <= bound_mm, "{scalar}: {p:?} came back as {q:?} ({err} mm)");
        }
    }
}

#[test]
fn headers_are_exact_and_row_order_is_kept() {
    let robot = RobotFile::demo().robot::<f64>().expect("demo robot");
    // Interleave solvable and failing rows so a reordering would show.
    let targets = [[0.0, 0.0, -700.0], [0.0, 0.0, -5000.0], [120.0, -80.0, -650.0], [-200.0, 10.0, -820.0]];
    let out = run(&["ik"], &csv_of(POSITION_IN, &targets));
    let lines = stdout_lines(&out);
    assert_eq!(lines[0], IK_HEADER);
    assert_eq!(lines.len(), targets.len() + 1);
    for (p, line) in targets.iter().zip(&lines[1..]) {
        let (angles, status) = parse_out_row(line);
        match robot.inverse(*p) {
            Ok(s) => {
                assert_eq!(status, "ok");
                // The printed value reads back to exactly the f64 degrees.
                assert_eq!(angles, Some(s.joints.map(f64::to_degrees)), "{p:?}");
            }
            Err(e) => assert_eq!(status, status_text(&e), "{p:?}"),
        }
    }
    let fk = run(&["fk"], &format!("{JOINT_IN}\n10,20,30\n"));
    assert_eq!(stdout_lines(&fk)[0], FK_HEADER);
}

#[test]
fn malformed_rows_are_bad_rows_and_the_batch_goes_on() {
    let input = format!("{POSITION_IN}\n0,0,-700\n1,2\nabc,0,-700\n1,2,3,4\n0,0,-700\n");
    let out = run(&["ik"], &input);
    assert!(out.status.success());
    let status: Vec<String> = stdout_lines(&out)[1..].iter().map(|l| parse_out_row(l).1).collect();
    assert_eq!(status, ["ok", "bad_row", "bad_row", "bad_row", "ok"]);
}

#[test]
fn non_finite_and_unreachable_rows_name_their_error() {
    for scalar in ["f64", "f32"] {
        // 1e39 overflows f32 and becomes infinite there; in f64 it is finite
        // and simply out of reach.
        let input = format!("{POSITION_IN}\nnan,0,-700\n0,inf,-700\n0,0,-5000\n1e39,0,-700\n");
        let out = run(&["ik", "--scalar", scalar], &input);
        let status: Vec<String> = stdout_lines(&out)[1..].iter().map(|l| parse_out_row(l).1).collect();
        // Unreachable rows name the arm that cannot reach (arm 0 is checked first).
        let big = if scalar == "f32" { "non_finite" } else { "unreachable_arm0" };
        assert_eq!(status, ["non_finite", "non_finite", "unreachable_arm0", big], "{scalar}");
        let out = run(&["fk", "--scalar", scalar], &format!("{JOINT_IN}\n10,NaN,10\n"));
        assert_eq!(parse_out_row(&stdout_lines(&out)[1]).1, "non_finite");
    }
}

#[test]
fn whole_command_failures_exit_with_a_message() {
    let unknown_key = temp_file("unknown_key.toml", &format!("{DEMO_ROBOT_TOML}\nwrist_mm = 3.0\n"));
    let invalid = temp_file("invalid.toml", &DEMO_ROBOT_TOML.replace("upper_arm_mm = 280.0", "upper_arm_mm = 900.0"));
    let missing = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("no_such_robot.toml");
    let cases: [(Vec<&str>, &str, &str); 5] = [
        (vec!["ik", "--robot", unknown_key.to_str().unwrap()], POSITION_IN, "wrist_mm"),
        (vec!["fk", "--robot", invalid.to_str().unwrap()], JOINT_IN, "geometry"),
        (vec!["report", "--robot", missing.to_str().unwrap()], "", "no_such_robot.toml"),
        (vec!["ik"], "x,y,z\n1,2,3\n", "header"),
        (vec!["fk"], "", "header"),
    ];
    for (args, stdin, mention) in cases {
        let out = run(&args, stdin);
        assert_eq!(out.status.code(), Some(EXIT_USAGE), "{args:?}");
        assert!(out.stdout.is_empty(), "{args:?}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(mention), "{args:?}: {err}");
        // One message (a TOML error may add a quoted excerpt on later lines).
        assert!(err.starts_with("deltakin: ") && err.matches("deltakin: ").count() == 1, "{err}");
    }
}

#[test]
fn help_works_on_every_command() {
    for args in [&["--help"][..], &["ik", "--help"], &["fk", "--help"], &["report", "--help"], &["help", "report"]] {
        let out = run(args, "");
        assert!(out.status.success(), "{args:?}");
        let text = String::from_utf8_lossy(&out.stdout);
        assert!(text.contains("Usage: deltakin"), "{args:?}: {text}");
    }
    let ik = String::from_utf8(run(&["ik", "--help"], "").stdout).unwrap();
    assert!(ik.contains(POSITION_IN) && ik.contains(IK_HEADER) && ik.contains("bad_row"));
}

#[test]
fn report_on_a_small_robot_passes_and_prints_its_tables() {
    // An invented small robot, distinct from the demo.
    let robot = temp_file(
        "small_robot.toml",
        "name = \"bench-top-sorter\"\n\
         [geometry]\nbase_radius_mm = 90.0\nplatform_radius_mm = 25.0\nupper_arm_mm = 150.0\nlower_arm_mm = 380.0\n\
         [limits]\njoint_min_deg = -30.0\njoint_max_deg = [80.0, 82.0, 84.0]\npassive_cone_deg = 38.0\n\
         min_serial_margin = 0.15\nmin_parallel_margin = 0.2\n",
    );
    let json = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("small_robot_report.json");
    let _ = std::fs::remove_file(&json);
    let out = run(
        &[
            "report",
            "--robot",
            robot.to_str().unwrap(),
            "--ik-grid",
            "6",
            "--fk-grid",
            "10",
            "--json",
            json.to_str().unwrap(),
        ],
        "",
    );
    let text = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(0), "{text}\n{}", String::from_utf8_lossy(&out.stderr));
    for heading in ["bench-top-sorter", "Robot", "Sweep", "Accuracy against", "Margins met", "Guarded status"] {
        assert!(text.contains(heading), "missing {heading}:\n{text}");
    }
    assert!(text.contains("Result: PASS"));
    let figures: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    for sweep in ["ik", "fk"] {
        let s = &figures[sweep];
        assert!(s["accepted"].as_u64().unwrap() > 0, "{sweep}");
        for scalar in s["scalars"].as_array().unwrap() {
            let e = &scalar["error"];
            assert_eq!(e["count"], s["accepted"]);
            assert!(e["max"].as_f64().unwrap() <= scalar["bound"].as_f64().unwrap());
            assert_eq!(scalar["reference_failed"], 0);
        }
    }
    assert_eq!(figures["breaches"].as_array().map(Vec::len), Some(0));
}

/// The small robot of the report tests: quick sweeps, no timing.
fn small_robot(extra: &str) -> PathBuf {
    temp_file(
        &format!("small_robot_{}.toml", extra.len()),
        &format!(
            "name = \"bench-top-sorter\"\n\
             [geometry]\nbase_radius_mm = 90.0\nplatform_radius_mm = 25.0\nupper_arm_mm = 150.0\nlower_arm_mm = 380.0\n\
             [limits]\njoint_min_deg = -30.0\njoint_max_deg = [80.0, 82.0, 84.0]\npassive_cone_deg = 38.0\n\
             min_serial_margin = 0.15\nmin_parallel_margin = 0.2\n{extra}"
        ),
    )
}

const QUICK: [&str; 5] = ["--ik-grid", "6", "--fk-grid", "8", "--no-timing"];

#[test]
fn report_json_carries_the_usable_volume_and_the_gates() {
    let robot = small_robot("");
    let json = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("volume_report.json");
    let _ = std::fs::remove_file(&json);
    let mut args = vec!["report", "--robot", robot.to_str().unwrap(), "--json", json.to_str().unwrap()];
    args.extend(QUICK);
    let out = run(&args, "");
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let text = String::from_utf8_lossy(&out.stdout);
    for heading in ["Usable volume", "ISO 9283 test poses", "Gates", "Targets (emulated Cortex-M): not run"] {
        assert!(text.contains(heading), "missing {heading}:\n{text}");
    }
    let figures: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    let v = &figures["volume"];
    let c = &v["cylinder"];
    let (r, z0, z1) =
        (c["radius_mm"].as_f64().unwrap(), c["z_min_mm"].as_f64().unwrap(), c["z_max_mm"].as_f64().unwrap());
    assert!(r > 0.0 && z0 < z1 && z1 < 0.0, "{c}");
    let volume = v["cylinder_volume_mm3"].as_f64().unwrap();
    const REL: f64 = 1e-12;
    assert!((volume - std::f64::consts::PI * r * r * (z1 - z0)).abs() <= REL * volume);
    assert!(v["cube"]["edge_mm"].as_f64().unwrap() > 0.0);
    let poses = v["poses"].as_array().unwrap();
    assert_eq!(poses.len(), 5);
    let robot_f64 = RobotFile::parse(&std::fs::read_to_string(&robot).unwrap()).unwrap().robot::<f64>().unwrap();
    for p in poses {
        let at: Vec<f64> = p["position_mm"].as_array().unwrap().iter().map(|x| x.as_f64().unwrap()).collect();
        let s = robot_f64.inverse([at[0], at[1], at[2]]).expect("each ISO pose passes the guards");
        let joints: Vec<f64> = p["joints_deg"].as_array().unwrap().iter().map(|x| x.as_f64().unwrap()).collect();
        for (got, want) in joints.iter().zip(s.joints) {
            assert_eq!(*got, want.to_degrees());
        }
        assert_eq!(p["parallel_margin"].as_f64().unwrap(), s.margins.parallel);
    }
    assert!(figures["host_timing"].is_null());
    assert!(figures["targets"].is_null());
    assert_eq!(figures["passed"], true);
    let gates = figures["gates"].as_array().unwrap();
    assert!(gates.iter().any(|g| g["section"] == "targets" && g["verdict"] == "not_run" && g["enforced"] == false));
}

#[test]
fn a_failing_gate_exits_1_and_a_bad_gate_file_exits_2() {
    let robot = small_robot("");
    // An f32 bound far below any f32 computation (1e-12 rad) must fail.
    let gates = temp_file("tight_gates.toml", "[accuracy]\nf32_joint_rad = 1e-12\n");
    let mut args = vec!["report", "--robot", robot.to_str().unwrap(), "--gates", gates.to_str().unwrap()];
    args.extend(QUICK);
    let out = run(&args, "");
    let text = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(1), "{text}");
    assert!(text.contains("Result: FAIL") && text.contains("f32 IK joint-angle error"), "{text}");
    assert!(text.contains("gates: accuracy.f32_joint_rad"), "{text}");
    // The same limit in the robot file's [gates] table.
    let strict = small_robot("[gates.accuracy]\nf32_joint_rad = 1e-12\n");
    let mut args = vec!["report", "--robot", strict.to_str().unwrap()];
    args.extend(QUICK);
    assert_eq!(run(&args, "").status.code(), Some(1));
    // A required targets section without a targets file fails too.
    let required = temp_file("required_targets.toml", "[targets]\nrequired = true\n");
    let mut args = vec!["report", "--robot", robot.to_str().unwrap(), "--gates", required.to_str().unwrap()];
    args.extend(QUICK);
    assert_eq!(run(&args, "").status.code(), Some(1));
    // An unknown key is a configuration problem.
    let bad = temp_file("bad_gates.toml", "[accuracy]\nf32_joint_urad = 10.0\n");
    let mut args = vec!["report", "--robot", robot.to_str().unwrap(), "--gates", bad.to_str().unwrap()];
    args.extend(QUICK);
    let out = run(&args, "");
    assert_eq!(out.status.code(), Some(EXIT_USAGE));
    assert!(String::from_utf8_lossy(&out.stderr).contains("f32_joint_urad"));
}

#[test]
fn a_targets_file_is_gated() {
    let robot = small_robot("");
    let call = |name: &str, worst: u32| {
        format!(
            "{{\"call\":\"{name}\",\"points\":50,\"worst_instructions\":{worst},\"median_instructions\":{},\
             \"stack_bytes\":200,\"flash_bytes\":1500}}",
            worst / 2
        )
    };
    let entry = |target: &str, scalar: &str, calls: &[String]| {
        format!(
            "{{\"target\":\"{target}\",\"board\":\"b\",\"scalar\":\"{scalar}\",\"robot_bytes\":120,\
             \"calls\":[{}],\"flash_kinematics_bytes\":6000}}",
            calls.join(",")
        )
    };
    let file = |ik_worst: u32| {
        format!(
            "{{\"targets\":[{},{}]}}",
            entry(
                "thumbv7em-none-eabihf",
                "f32",
                &[call("inverse", ik_worst), call("forward", 250), call("setpoint_step", 800)]
            ),
            entry("thumbv6m-none-eabi", "fixed", &[call("inverse", 2500), call("forward", 2000)])
        )
    };
    for (ik_worst, status) in [(390, 0), (401, 1)] {
        let targets = temp_file(&format!("targets_{ik_worst}.json"), &file(ik_worst));
        let mut args = vec!["report", "--robot", robot.to_str().unwrap(), "--targets", targets.to_str().unwrap()];
        args.extend(QUICK);
        let out = run(&args, "");
        let text = String::from_utf8_lossy(&out.stdout);
        assert_eq!(out.status.code(), Some(status), "IK worst {ik_worst}:\n{text}");
        assert!(text.contains("thumbv7em-none-eabihf f32: IK, worst instructions"), "{text}");
    }
}

#[test]
fn plots_are_svg_files_with_axis_labels() {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("report_plots");
    let _ = std::fs::remove_dir_all(&dir);
    // The demo robot, so the demo pick cycle runs on it.
    let mut args = vec!["report", "--plots", dir.to_str().unwrap()];
    args.extend(QUICK);
    let out = run(&args, "");
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let want: [(&str, &[&str]); 5] = [
        ("workspace_xy.svg", &["x (mm)", "y (mm)", "usable cylinder", "ISO 9283 test cube"]),
        ("workspace_xz.svg", &["x (mm)", "z (mm)", "rejected by a guard"]),
        ("error_map_f32_ik.svg", &["x (mm)", "y (mm)", "µrad"]),
        ("pick_joint_angles.svg", &["time (s)", "joint angle (deg)", "joint range", "arm 0"]),
        ("pick_joint_speeds.svg", &["time (s)", "joint speed (deg/s)", "joint speed limit"]),
    ];
    for (name, labels) in want {
        let svg = std::fs::read_to_string(dir.join(name)).unwrap_or_else(|e| panic!("{name}: {e}"));
        assert!(svg.starts_with("<svg") || svg.starts_with("<?xml"), "{name}");
        // The contents of every <text> element: labels are SVG text, not paths.
        let texts: Vec<&str> = svg
            .split("<text")
            .skip(1)
            .filter_map(|t| {
                t.split_once('>').and_then(|(_, rest)| rest.split_once("</text>")).map(|(body, _)| body.trim())
            })
            .collect();
        for label in labels {
            assert!(texts.iter().any(|t| t.contains(label)), "{name}: no text {label} in {texts:?}");
        }
    }
}

/// The demo moves file, as a user passes it.
fn demo_moves_path() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../examples/demo_moves.toml")
}

/// Header of `plan`'s CSV (documented in `deltakin plan --help`).
const PLAN_HEADER: &str = "t_s,x_mm,y_mm,z_mm,theta0_deg,theta1_deg,theta2_deg,omega0_deg_s,omega1_deg_s,omega2_deg_s";
/// Relative slack on the printed time step: 9 significant digits of f32
/// text, and the f32 period 1/rate rounded (below 1e-7 relative).
const PLAN_STEP_REL: f64 = 1e-6;
/// The last row's joint angles against the last move's target (deg): the
/// stream lands exactly on the target, so only the printing and the
/// rounding of 20 deg in radians remain (f32: 6e-8 relative; fixed
/// point: half a Q7.25 LSB, 1e-6 deg).
const PLAN_END_DEG: f64 = 1e-5;

fn plan_rows(out: &Output) -> Vec<[f64; 10]> {
    let lines = stdout_lines(out);
    assert_eq!(lines[0], PLAN_HEADER);
    lines[1..]
        .iter()
        .map(|l| {
            let v: Vec<f64> = l.split(',').map(|f| f.parse().expect("number")).collect();
            v.try_into().expect("ten fields")
        })
        .collect()
}

#[test]
fn plan_streams_the_demo_moves_at_the_given_rate_and_ends_on_the_last_target() {
    let moves = demo_moves_path();
    for (rate, scalar) in [(4000.0, "f32"), (1000.0, "f32"), (4000.0, "fixed"), (2000.0, "f64")] {
        let rate_text = format!("{rate}");
        let out = run(&["plan", "--moves", moves.to_str().unwrap(), "--rate-hz", &rate_text, "--scalar", scalar], "");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(out.status.success(), "{err}");
        assert!(err.contains("plan:") && err.contains("peak speed") && err.contains("time scaling"), "{err}");
        let rows = plan_rows(&out);
        assert!(rows.len() > 100);
        assert_eq!(rows[0][0], 0.0);
        for (i, w) in rows.windows(2).enumerate() {
            let step = w[1][0] - w[0][0];
            assert!((step * rate - 1.0).abs() <= PLAN_STEP_REL * (i as f64 + 2.0), "row {i}: step {step}");
        }
        // The last move is a joint move to 20 deg on every arm, ending at rest.
        let last = rows.last().unwrap();
        for arm in 0..3 {
            assert!((last[4 + arm] - 20.0).abs() <= PLAN_END_DEG, "{last:?}");
            assert_eq!(last[7 + arm], 0.0, "{last:?}");
        }
    }
    // Default rate: 4 kHz.
    let out = run(&["plan", "--moves", moves.to_str().unwrap()], "");
    let rows = plan_rows(&out);
    assert!((rows[1][0] - 2.5e-4).abs() <= PLAN_STEP_REL * 2.5e-4);
}

#[test]
fn plan_failures_exit_with_one_message() {
    let demo = std::fs::read_to_string(demo_moves_path()).unwrap();
    let bad_toml = temp_file("bad_moves.toml", &demo.replace("lift_mm", "hop_mm"));
    let unreachable = temp_file(
        "unreachable_moves.toml",
        &format!("{demo}\n[[move]]\nkind = \"line\"\nto_mm = [0.0, 0.0, -1300.0]\nspeed_mm_s = 500.0\n"),
    );
    let missing = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("no_such_moves.toml");
    let demo_path = demo_moves_path();
    let cases: [(Vec<&str>, &str); 4] = [
        (vec!["plan", "--moves", bad_toml.to_str().unwrap()], "hop_mm"),
        (vec!["plan", "--moves", unreachable.to_str().unwrap()], "move 10 ("),
        (vec!["plan", "--moves", missing.to_str().unwrap()], "no_such_moves.toml"),
        (vec!["plan", "--moves", demo_path.to_str().unwrap(), "--rate-hz=0"], "rate"),
    ];
    for (args, mention) in cases {
        let out = run(&args, "");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(EXIT_USAGE), "{args:?}: {err}");
        assert!(err.contains(mention), "{args:?}: {err}");
        assert!(err.starts_with("deltakin: ") && err.matches("deltakin: ").count() == 1, "{err}");
    }
}

/// The demo moves plus an unreachable last line: move 10 (0-based), after
/// about 2,200 cycles of good setpoints.
fn demo_moves_then_unreachable() -> String {
    let demo = std::fs::read_to_string(demo_moves_path()).unwrap();
    format!("{demo}\n[[move]]\nkind = \"line\"\nto_mm = [0.0, 0.0, -1300.0]\nspeed_mm_s = 500.0\n")
}

#[test]
fn a_refused_move_leaves_stdout_empty_and_names_the_move() {
    let moves = temp_file("refused_last_move.toml", &demo_moves_then_unreachable());
    for scalar in ["f32", "f64", "fixed"] {
        let out = run(&["plan", "--moves", moves.to_str().unwrap(), "--scalar", scalar], "");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(EXIT_USAGE), "{scalar}: {err}");
        // Not one row of the moves before it: the program is refused whole.
        assert!(out.stdout.is_empty(), "{scalar}: {} bytes on stdout", out.stdout.len());
        assert!(err.contains("move 10 (the 11th [[move]]: line to [0, 0, -1300] mm) refused"), "{scalar}: {err}");
        assert!(err.starts_with("deltakin: ") && err.matches("deltakin: ").count() == 1, "{err}");
    }
}

/// Runs `ik` and `plan` in every number type on a demo robot whose text
/// has `from` replaced by `to`; each must exit 2 with exactly `message`.
fn assert_robot_number_refused(name: &str, from: &str, to: &str, message: &str) {
    assert!(DEMO_ROBOT_TOML.contains(from), "{from}");
    let robot = temp_file(name, &DEMO_ROBOT_TOML.replace(from, to));
    let moves = demo_moves_path();
    for scalar in ["f32", "f64", "fixed"] {
        let ik =
            run(&["ik", "--robot", robot.to_str().unwrap(), "--scalar", scalar], &format!("{POSITION_IN}\n0,0,-700\n"));
        let plan = run(
            &["plan", "--robot", robot.to_str().unwrap(), "--moves", moves.to_str().unwrap(), "--scalar", scalar],
            "",
        );
        for out in [ik, plan] {
            let err = String::from_utf8_lossy(&out.stderr);
            assert_eq!(out.status.code(), Some(EXIT_USAGE), "{scalar}: {err}");
            assert!(out.stdout.is_empty(), "{scalar}");
            assert_eq!(err.trim_end(), format!("deltakin: {message}"), "{scalar}");
        }
    }
}

#[test]
fn a_nan_robot_limit_is_named_by_its_key_not_blamed_on_the_number_type() {
    assert_robot_number_refused(
        "nan_joint_min.toml",
        "joint_min_deg = -35.0",
        "joint_min_deg = nan",
        "robot file: [limits] joint_min_deg is not a finite number (nan)",
    );
    // One arm of a per-arm list, and a geometry key.
    assert_robot_number_refused(
        "nan_joint_max_arm.toml",
        "joint_max_deg = 85.0",
        "joint_max_deg = [85.0, nan, 85.0]",
        "robot file: [limits] joint_max_deg[1] is not a finite number (nan)",
    );
    assert_robot_number_refused(
        "nan_lower_arm.toml",
        "lower_arm_mm = 720.0",
        "lower_arm_mm = nan",
        "robot file: [geometry] lower_arm_mm is not a finite number (nan)",
    );
}

#[test]
fn an_infinite_robot_limit_is_named_by_its_key_not_blamed_on_the_number_type() {
    assert_robot_number_refused(
        "inf_passive_cone.toml",
        "passive_cone_deg = 40.0",
        "passive_cone_deg = inf",
        "robot file: [limits] passive_cone_deg is not a finite number (inf)",
    );
    assert_robot_number_refused(
        "inf_serial_margin.toml",
        "min_serial_margin = 0.1",
        "min_serial_margin = -inf",
        "robot file: [limits] min_serial_margin is not a finite number (-inf)",
    );
}

#[test]
fn a_non_finite_moves_number_is_named_by_its_key_not_blamed_on_the_number_type() {
    let demo = std::fs::read_to_string(demo_moves_path()).unwrap();
    let cases = [
        ("lift_mm = 60.0", "lift_mm = nan", "moves file: move 6 (pick) lift_mm is not a finite number (nan)"),
        (
            "accel_deg_s2 = 15000.0",
            "accel_deg_s2 = [15000.0, inf, 15000.0]",
            "moves file: [joint_limits] accel_deg_s2[1] is not a finite number (inf)",
        ),
        (
            "start_mm = [0.0, 0.0, -700.0]",
            "start_mm = [0.0, 0.0, nan]",
            "moves file: start_mm[2] is not a finite number (nan)",
        ),
        // A default no move overrides is still a number of the file.
        ("jerk_deg_s3 = 30000.0", "jerk_deg_s3 = nan", "moves file: [joint] jerk_deg_s3 is not a finite number (nan)"),
        (
            "duration_s = 0.05",
            "duration_s = -inf",
            "moves file: move 1 (dwell) duration_s is not a finite number (-inf)",
        ),
    ];
    for (i, (from, to, message)) in cases.into_iter().enumerate() {
        assert!(demo.contains(from), "{from}");
        let moves = temp_file(&format!("non_finite_moves_{i}.toml"), &demo.replacen(from, to, 1));
        for scalar in ["f32", "f64", "fixed"] {
            let out = run(&["plan", "--moves", moves.to_str().unwrap(), "--scalar", scalar], "");
            let err = String::from_utf8_lossy(&out.stderr);
            assert_eq!(out.status.code(), Some(EXIT_USAGE), "{scalar}: {err}");
            assert!(out.stdout.is_empty(), "{scalar}");
            assert_eq!(err.trim_end(), format!("deltakin: {}: {message}", moves.display()), "{scalar}");
        }
    }
}

/// The demo robot with an `[arm_corrections]` table (invented numbers of
/// the size a calibration finds).
const PER_ARM_TABLE: &str = "\n[arm_corrections]\njoint_offset_deg = [0.5, -0.3, 0.2]\n\
    upper_arm_mm = [0.4, -0.2, 0.1]\nlower_arm_mm = [-0.6, 0.3, 0.2]\nradial_difference_mm = [0.2, -0.5, 0.0]\n\
    azimuth_deg = [0.1, -0.2, 0.3]\naxis_height_mm = [0.5, -0.4, 0.8]\n";

#[test]
fn a_per_arm_robot_file_is_used_by_ik_fk_and_plan() {
    let text = format!("{DEMO_ROBOT_TOML}{PER_ARM_TABLE}");
    let path = temp_file("per_arm_robot.toml", &text);
    let robot = path.to_str().unwrap();
    let file = RobotFile::parse(&text).unwrap();
    let machine = deltakin_harness::reference::PerArmMachine::new(&file.geometry_f64(), &file.corrections_f64());
    let targets = [[0.0, 0.0, -700.0], [100.0, -50.0, -750.0], [-150.0, 120.0, -820.0]];
    let ik = run(&["ik", "--robot", robot], &csv_of(POSITION_IN, &targets));
    assert!(ik.status.success(), "{}", String::from_utf8_lossy(&ik.stderr));
    let nominal = run(&["ik"], &csv_of(POSITION_IN, &targets));
    let (lines, plain) = (stdout_lines(&ik), stdout_lines(&nominal));
    let mut joints = Vec::new();
    for ((p, line), plain) in targets.iter().zip(&lines[1..]).zip(&plain[1..]) {
        let got = parse_out_row(line).0.expect("solved");
        let want = deltakin_harness::reference::inverse(&machine, *p).expect("reference solves it");
        for k in 0..3 {
            // f64 core against the per-arm reference (bounds.rs), in degrees.
            assert!((got[k].to_radians() - want[k]).abs() <= bounds::F64_JOINT_ERR_RAD, "{p:?}: {line}");
        }
        // The corrections move the joints by up to tenths of a degree.
        let plain = parse_out_row(plain).0.expect("nominal solved");
        assert!((0..3).any(|k| (got[k] - plain[k]).abs() > 0.05), "{line} vs nominal {plain:?}");
        joints.push(got);
    }
    let fk = run(&["fk", "--robot", robot], &csv_of(JOINT_IN, &joints));
    assert!(fk.status.success());
    for (p, line) in targets.iter().zip(&stdout_lines(&fk)[1..]) {
        let q = parse_out_row(line).0.expect("assembled");
        let err = ((q[0] - p[0]).powi(2) + (q[1] - p[1]).powi(2) + (q[2] - p[2]).powi(2)).sqrt();
        assert!(err <= bounds::F64_POS_ERR_MM, "{p:?} came back as {q:?}");
    }
    let moves = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../examples/demo_moves.toml");
    let plan = run(&["plan", "--robot", robot, "--moves", moves.to_str().unwrap()], "");
    assert!(plan.status.success(), "{}", String::from_utf8_lossy(&plan.stderr));
    assert!(stdout_lines(&plan).len() > 100);
    // A correction out of range is a configuration error naming arm and parameter.
    let bad = temp_file(
        "per_arm_bad.toml",
        &text.replace("azimuth_deg = [0.1, -0.2, 0.3]", "azimuth_deg = [0.1, 20.0, 0.3]"),
    );
    let out = run(&["ik", "--robot", bad.to_str().unwrap()], &csv_of(POSITION_IN, &targets));
    assert_eq!(out.status.code(), Some(EXIT_USAGE));
    let msg = String::from_utf8_lossy(&out.stderr);
    assert!(msg.contains("arm 1 actuator azimuth"), "{msg}");
}

#[test]
fn ik_output_pipes_into_fk_and_failed_rows_keep_their_status() {
    let ik = run(&["ik", "--scalar", "f64"], &format!("{POSITION_IN},id\n0,0,-700,a\n0,0,-5000,b\n100,50,-650,c\n"));
    assert!(ik.status.success());
    let ik_text = String::from_utf8(ik.stdout.clone()).unwrap();
    assert_eq!(stdout_lines(&ik)[0], format!("{IK_HEADER},id"));
    let fk = run(&["fk", "--scalar", "f64"], &ik_text);
    assert!(fk.status.success(), "{}", String::from_utf8_lossy(&fk.stderr));
    let lines = stdout_lines(&fk);
    assert_eq!(lines[0], format!("{FK_HEADER},id"));
    let want = [([0.0, 0.0, -700.0], "a"), ([100.0, 50.0, -650.0], "c")];
    for (line, (p, id)) in [&lines[1], &lines[3]].into_iter().zip(want) {
        let f: Vec<&str> = line.split(',').collect();
        assert_eq!((f[3], f[4]), ("ok", id), "{line}");
        for k in 0..3 {
            let v: f64 = f[k].parse().unwrap();
            assert!((v - p[k]).abs() <= bounds::F64_POS_ERR_MM, "{line}");
        }
    }
    assert_eq!(lines[2], ",,,unreachable_arm0,b");
}

#[test]
fn ik_and_fk_read_a_file_argument_like_stdin() {
    let input = format!("{POSITION_IN}\n0,0,-700\n120,-80,-650\n");
    let path = temp_file("ik_input.csv", &input);
    let from_file = run(&["ik", path.to_str().unwrap()], "");
    let from_stdin = run(&["ik"], &input);
    let dash = run(&["ik", "-"], &input);
    assert!(from_file.status.success());
    assert_eq!(from_file.stdout, from_stdin.stdout);
    assert_eq!(dash.stdout, from_stdin.stdout);
    let missing = run(&["fk", "/no/such/input.csv"], "");
    assert_eq!(missing.status.code(), Some(EXIT_USAGE));
    assert!(String::from_utf8_lossy(&missing.stderr).contains("/no/such/input.csv"));
}

/// Runs `args` with stdout into a pipe that is closed after `keep` bytes.
fn run_into_closed_pipe(args: &[&str], stdin: &str, keep: usize) -> Output {
    use std::io::Read;
    let mut child = Command::new(env!("CARGO_BIN_EXE_deltakin"))
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start deltakin");
    let mut stdin_pipe = child.stdin.take().expect("stdin");
    let text = stdin.to_owned();
    let feeder = std::thread::spawn(move || {
        let _ = stdin_pipe.write_all(text.as_bytes());
    });
    let mut first = vec![0u8; keep];
    child.stdout.take().expect("stdout").read_exact(&mut first).expect("first bytes");
    // The stdout pipe is dropped here: the reader has gone away.
    let out = child.wait_with_output().expect("deltakin output");
    feeder.join().expect("feeder");
    out
}

#[test]
fn a_closed_pipe_ends_plan_ik_and_fk_quietly() {
    let moves = demo_moves_path();
    let plan = run_into_closed_pipe(&["plan", "--moves", moves.to_str().unwrap()], "", 200);
    assert_eq!(plan.status.code(), Some(0), "{}", String::from_utf8_lossy(&plan.stderr));
    assert!(plan.stderr.is_empty(), "{}", String::from_utf8_lossy(&plan.stderr));
    // Enough rows that the output outgrows every buffer on the way.
    let mut input = format!("{POSITION_IN}\n");
    for _ in 0..200_000 {
        input.push_str("10,20,-700\n");
    }
    let ik = run_into_closed_pipe(&["ik"], &input, 100);
    assert_eq!(ik.status.code(), Some(0), "{}", String::from_utf8_lossy(&ik.stderr));
    assert!(ik.stderr.is_empty(), "{}", String::from_utf8_lossy(&ik.stderr));
}

#[test]
fn plan_ik_and_fk_print_plain_decimals_that_round_trip() {
    let moves = demo_moves_path();
    let plan = run(&["plan", "--moves", moves.to_str().unwrap(), "--scalar", "f64"], "");
    assert!(plan.status.success());
    let ik = run(&["ik"], &format!("{POSITION_IN}\n12.5,-7.25,-700\n"));
    for out in [&plan, &ik] {
        for line in stdout_lines(out).iter().skip(1).take(50) {
            for field in line.split(',').filter(|f| !f.is_empty() && *f != "ok") {
                assert!(!field.contains('e'), "exponent in {line}");
                let v: f64 = field.parse().expect("number");
                assert_eq!(format!("{v}"), *field, "not the shortest text in {line}");
            }
        }
    }
}

#[test]
fn a_zero_margin_robot_file_is_warned_about() {
    let file = temp_file(
        "zero_margin.toml",
        &DEMO_ROBOT_TOML.replace("min_parallel_margin = 0.1", "min_parallel_margin = 0.0"),
    );
    let out = run(&["ik", "--robot", file.to_str().unwrap()], &format!("{POSITION_IN}\n0,0,-700\n"));
    assert!(out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("warning") && err.contains("min_parallel_margin"), "{err}");
    let demo = run(&["ik"], &format!("{POSITION_IN}\n0,0,-700\n"));
    assert!(demo.stderr.is_empty());
}
