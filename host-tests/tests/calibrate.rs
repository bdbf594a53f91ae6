//! `deltakin calibrate`: synthetic machines with known per-arm errors,
//! measured with Gaussian noise in a random instrument frame, fitted back.
//!
//! Regenerate the shipped demo measurements and the scipy cross-check
//! input with `cargo test -p deltakin-harness --release --test calibrate
//! -- --ignored regenerate` (deterministic seeds).

// Parameters are indexed in parallel arrays (fitted, expected, std dev).
#![allow(clippy::needless_range_loop)]

use deltakin::{ArmCorrection, Robot};
use deltakin_harness::calibrate::fit::{Fit, fit, fit_robot};
use deltakin_harness::calibrate::identify::hold_constraints;
use deltakin_harness::calibrate::model::{self, ARM_PARAMETERS, Mode, Model, Point, arm_vector};
use deltakin_harness::calibrate::{jacobian, measurements, poses};
use deltakin_harness::config::RobotFile;
use deltakin_harness::reference::{self, PerArmMachine};
use nalgebra::{DMatrix, DVector, Matrix3, Vector3};

/// Instrument noise of the synthetic measurements (mm, per component).
const NOISE_MM: f64 = 0.02;
/// Poses measured per synthetic fit.
const POSES: usize = 40;
/// Unseen poses for the prediction check.
const UNSEEN: usize = 30;
/// An identifiable parameter must be within this many reported standard
/// deviations of the truth.
const SIGMAS: f64 = 3.0;
/// Two-sided chi-square acceptance: the statistic's z-score
/// `(chi2 - dof) / sqrt(2 dof)` must lie within this (about a 0.1 % two-sided
/// test per fit).
const CHI_SQUARE_Z: f64 = 3.3;
/// Calibrated prediction error at unseen poses: at most this many times the noise (RMS).
const PREDICTION_NOISE_FACTOR: f64 = 3.0;
/// ... and at least the noise over this (it cannot beat the instrument by much).
const PREDICTION_FLOOR_FACTOR: f64 = 0.05;
/// The nominal model's RMS prediction error at unseen poses is at least this (mm).
const NOMINAL_AT_LEAST_MM: f64 = 0.5;
/// Monte Carlo: reported / observed standard deviation within these bounds.
const MC_RATIO: (f64, f64) = (0.6, 1.6);
/// Monte Carlo repetitions.
const MC_RUNS: usize = 30;

fn demo() -> RobotFile {
    RobotFile::demo()
}

/// The demo's "as built" machine: true per-arm errors (mm, rad), from the
/// hand-written fixture `fixtures/demo_truth.toml` (an `[arm_corrections]`
/// table, mm and deg), read through the robot file's own parser.
fn demo_truth() -> [ArmCorrection<f64>; 3] {
    let truth =
        std::fs::read_to_string(root().join("host-tests/tests/fixtures/demo_truth.toml")).expect("truth fixture");
    let text = format!("{}\n{truth}", deltakin_harness::config::DEMO_ROBOT_TOML);
    RobotFile::parse(&text).expect("truth fixture parses").corrections_f64()
}

fn random_truth(rng: &mut poses::Rng) -> [ArmCorrection<f64>; 3] {
    [0, 1, 2].map(|_| ArmCorrection {
        joint_offset: rng.range(-1.0, 1.0).to_radians(),
        upper_arm: rng.range(-1.0, 1.0),
        lower_arm: rng.range(-1.0, 1.0),
        radial_difference: rng.range(-1.0, 1.0),
        azimuth: rng.range(-0.5, 0.5).to_radians(),
        axis_height: rng.range(-1.0, 1.0),
    })
}

/// A random instrument frame: any yaw, a few degrees of tilt, a metre away.
fn random_frame(rng: &mut poses::Rng) -> (Matrix3<f64>, Vector3<f64>) {
    let r = model::rotation(2, rng.range(-3.1, 3.1)).0
        * model::rotation(1, rng.range(-0.1, 0.1)).0
        * model::rotation(0, rng.range(-0.1, 0.1)).0;
    (r, Vector3::new(rng.range(-1000.0, 1000.0), rng.range(-1000.0, 1000.0), rng.range(-500.0, 500.0)))
}

/// Points at `joints` on the true machine, each seen through `see`
/// (platform position, generator) -> measured components.
fn measure_with(
    truth: &PerArmMachine,
    joints: &[[f64; 3]],
    rng: &mut poses::Rng,
    see: impl Fn([f64; 3], &mut poses::Rng) -> [f64; 3],
) -> Vec<Point> {
    joints
        .iter()
        .map(|j| Point { joints: *j, measured: see(reference::forward(truth, *j).expect("pose closes"), &mut *rng) })
        .collect()
}

fn measure(
    truth: &PerArmMachine,
    frame: &(Matrix3<f64>, Vector3<f64>),
    joints: &[[f64; 3]],
    noise: f64,
    rng: &mut poses::Rng,
) -> Vec<Point> {
    measure_with(truth, joints, rng, |p, rng| {
        let q = frame.0 * Vector3::from(p) + frame.1;
        [0, 1, 2].map(|k| q[k] + noise * rng.gauss())
    })
}

fn probe_measure(
    truth: &PerArmMachine,
    plate: [f64; 3],
    joints: &[[f64; 3]],
    noise: f64,
    rng: &mut poses::Rng,
) -> Vec<Point> {
    measure_with(truth, joints, rng, |p, rng| {
        [0.0, 0.0, p[2] + plate[0] + plate[1].tan() * p[0] + plate[2].tan() * p[1] + noise * rng.gauss()]
    })
}

fn nominal_robot() -> Robot<f64> {
    demo().robot().expect("demo robot")
}

fn suggested(mode: Mode, n: usize) -> Vec<[f64; 3]> {
    poses::suggest_for(&demo(), mode, n).expect("poses")
}

/// The per-arm parameters the fit should find: the truth moved along each
/// held direction until that direction's per-arm part is at nominal
/// (the fit's own convention), in physical units.
fn expected(fit: &Fit, truth: &[ArmCorrection<f64>; 3]) -> Vec<f64> {
    let scales = &fit.model.scales;
    let x: Vec<f64> = arm_vector(truth).iter().zip(scales).map(|(v, s)| v / s).collect();
    let null = &fit.start_identifiability.unidentifiable;
    let c = hold_constraints(null);
    let k = null.len();
    // Find alpha with C (x + sum alpha_k v_k)_arm = 0.
    let a = DMatrix::from_fn(k, k, |r, q| (0..ARM_PARAMETERS).map(|i| c[(r, i)] * null[q][i]).sum::<f64>());
    let b = DVector::from_fn(k, |r, _| -(0..ARM_PARAMETERS).map(|i| c[(r, i)] * x[i]).sum::<f64>());
    let alpha = a.lu().solve(&b).unwrap_or_else(|| DVector::zeros(k));
    (0..ARM_PARAMETERS).map(|i| (x[i] + (0..k).map(|q| alpha[q] * null[q][i]).sum::<f64>()) * scales[i]).collect()
}

/// RMS prediction error (mm) of the machine `params` at `joints` against
/// the true machine, after the fit's instrument frame is taken out.
fn prediction_rms(
    fit: &Fit,
    params: &[f64],
    truth: &PerArmMachine,
    frame: &(Matrix3<f64>, Vector3<f64>),
    joints: &[[f64; 3]],
) -> f64 {
    let m = fit.model.machine(params);
    let mut r = Vec::new();
    for j in joints {
        let q_true = frame.0 * Vector3::from(reference::forward(truth, *j).expect("closes")) + frame.1;
        let q = fit.model.observe(&fit.params, reference::forward(&m, *j).expect("closes"));
        r.extend((0..3).map(|k| q_true[k] - q[k]));
    }
    model::rms(&r)
}

fn chi_square_z(fit: &Fit) -> f64 {
    let dof = fit.dof() as f64;
    (fit.chi_square(NOISE_MM) - dof) / (2.0 * dof).sqrt()
}

#[test]
fn jacobian_matches_finite_differences() {
    const H: f64 = 1e-6;
    const REL_TOL: f64 = 1e-5;
    let mut rng = poses::Rng::new(7);
    let truth = PerArmMachine::new(&demo().geometry_f64(), &random_truth(&mut rng));
    let frame = random_frame(&mut rng);
    let joints = suggested(Mode::Position, 4);
    for mode in [Mode::Position, Mode::Probe] {
        let pts = match mode {
            Mode::Position => measure(&truth, &frame, &joints, 0.0, &mut rng),
            Mode::Probe => probe_measure(&truth, [3.0, 0.01, -0.02], &joints, 0.0, &mut rng),
        };
        let model = Model::new(mode, demo().geometry_f64());
        let x: Vec<f64> = (0..mode.parameters()).map(|_| rng.range(-0.5, 0.5)).collect();
        let j = jacobian::residual_jacobian(&model, &x, &pts).expect("jacobian");
        let scale = j.amax();
        for c in 0..x.len() {
            let (mut xp, mut xm) = (x.clone(), x.clone());
            xp[c] += H;
            xm[c] -= H;
            let rp = model.residuals(&model.physical(&xp), &pts).expect("closes");
            let rm = model.residuals(&model.physical(&xm), &pts).expect("closes");
            for r in 0..rp.len() {
                let fd = (rp[r] - rm[r]) / (2.0 * H);
                assert!(
                    (fd - j[(r, c)]).abs() <= REL_TOL * scale,
                    "{mode:?} row {r} column {c}: analytic {} fd {fd}",
                    j[(r, c)]
                );
            }
        }
    }
}

/// Seeds of the synthetic machines (each: a machine, a frame, the noise).
const SYNTHETIC_SEEDS: [u64; 3] = [11, 12, 13];

#[test]
fn synthetic_machines_are_recovered() {
    let joints = suggested(Mode::Position, POSES + UNSEEN);
    let (fit_joints, unseen) = joints.split_at(POSES);
    for seed in SYNTHETIC_SEEDS {
        let mut rng = poses::Rng::new(seed);
        let truth_c = random_truth(&mut rng);
        let truth = PerArmMachine::new(&demo().geometry_f64(), &truth_c);
        let frame = random_frame(&mut rng);
        let pts = measure(&truth, &frame, fit_joints, NOISE_MM, &mut rng);
        let f = fit_robot(&demo(), Mode::Position, &pts).expect("fit runs");
        assert!(f.converged, "seed {seed}: not converged");
        assert!(f.accepted(NOISE_MM), "seed {seed}: not accepted");
        let want = expected(&f, &truth_c);
        for k in 0..ARM_PARAMETERS {
            let err = f.params[k] - want[k];
            assert!(f.std_dev[k] > 0.0, "seed {seed}: {} has no std dev", model::name(f.mode, k));
            assert!(
                err.abs() <= SIGMAS * f.std_dev[k],
                "seed {seed}: {} off by {err:e}, std dev {:e}",
                model::name(f.mode, k),
                f.std_dev[k]
            );
        }
        let z = chi_square_z(&f);
        assert!(z.abs() <= CHI_SQUARE_Z, "seed {seed}: chi-square z {z}");
        let calibrated = prediction_rms(&f, &f.params, &truth, &frame, unseen);
        let nominal = prediction_rms(&f, &f.start, &truth, &frame, unseen);
        assert!(calibrated <= PREDICTION_NOISE_FACTOR * NOISE_MM, "seed {seed}: calibrated predicts {calibrated} mm");
        assert!(
            calibrated >= PREDICTION_FLOOR_FACTOR * NOISE_MM,
            "seed {seed}: calibrated {calibrated} mm beats the noise: suspicious"
        );
        assert!(nominal >= NOMINAL_AT_LEAST_MM, "seed {seed}: nominal only {nominal} mm off");
    }
}

/// Outside source: for a Delta with a translating platform, a common
/// azimuth error of the three actuators cannot be told from a rotation of
/// the measuring frame about the vertical, and a common actuator height
/// from a vertical translation of that frame (M. Vischer and R. Clavel,
/// "Kinematic calibration of the parallel Delta robot", Robotica 16, 1998;
/// P. Besnard and W. Khalil, "Identifiable parameters for parallel robots
/// kinematic calibration", ICRA 2001; both from memory). The platform
/// radius only shows through its difference with the actuator radius,
/// which the model already carries as one parameter. Exactly these two
/// directions must come out of the SVD, and nothing else.
#[test]
fn unidentifiable_combinations_match_the_literature() {
    let pts = measure(
        &PerArmMachine::new(&demo().geometry_f64(), &demo_truth()),
        &random_frame(&mut poses::Rng::new(3)),
        &suggested(Mode::Position, POSES),
        0.0,
        &mut poses::Rng::new(4),
    );
    let f = fit_robot(&demo(), Mode::Position, &pts).expect("fit");
    let null = &f.start_identifiability.unidentifiable;
    assert_eq!(null.len(), 2, "held: {:?}", f.held);
    assert_literature_null_space(null);
}

/// The null space's per-arm parts span exactly {common azimuth, common
/// axis height} (any basis of that plane; the SVD picks one).
fn assert_literature_null_space(null: &[Vec<f64>]) {
    const SPAN_TOL: f64 = 1e-4;
    let third = 1.0 / 3.0_f64.sqrt();
    let mut az = vec![0.0; ARM_PARAMETERS];
    let mut ht = vec![0.0; ARM_PARAMETERS];
    for i in 0..3 {
        az[6 * i + 4] = third;
        ht[6 * i + 5] = third;
    }
    let dot = |a: &[f64], b: &[f64]| a.iter().zip(b).map(|(x, y)| x * y).sum::<f64>();
    let mut coeffs = Vec::new();
    for v in null {
        let arm = &v[..ARM_PARAMETERS];
        let (ca, ch) = (dot(arm, &az), dot(arm, &ht));
        let rest: f64 = arm.iter().enumerate().map(|(k, x)| (x - ca * az[k] - ch * ht[k]).powi(2)).sum::<f64>().sqrt();
        assert!(rest < SPAN_TOL, "direction outside the literature's plane: {v:?}");
        coeffs.push((ca, ch));
    }
    let det = coeffs[0].0 * coeffs[1].1 - coeffs[0].1 * coeffs[1].0;
    assert!(det.abs() > 0.1, "the two directions do not span both trades: {coeffs:?}");
}

#[test]
fn reported_std_devs_match_the_spread_of_repeated_fits() {
    let joints = suggested(Mode::Position, POSES);
    let truth_c = random_truth(&mut poses::Rng::new(21));
    let truth = PerArmMachine::new(&demo().geometry_f64(), &truth_c);
    let frame = random_frame(&mut poses::Rng::new(22));
    let mut rng = poses::Rng::new(23);
    let fits: Vec<Fit> = (0..MC_RUNS)
        .map(|_| {
            fit_robot(&demo(), Mode::Position, &measure(&truth, &frame, &joints, NOISE_MM, &mut rng)).expect("fit")
        })
        .collect();
    let n = MC_RUNS as f64;
    for k in 0..ARM_PARAMETERS {
        let mean = fits.iter().map(|f| f.params[k]).sum::<f64>() / n;
        let spread = (fits.iter().map(|f| (f.params[k] - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
        let reported = fits.iter().map(|f| f.std_dev[k]).sum::<f64>() / n;
        let ratio = reported / spread;
        assert!(
            ratio >= MC_RATIO.0 && ratio <= MC_RATIO.1,
            "{}: reported {reported:e}, spread {spread:e}",
            model::name(Mode::Position, k)
        );
    }
}

#[test]
fn probe_mode_fits_the_heights_it_sees() {
    const PROBE_POSES: usize = 60;
    let joints = suggested(Mode::Probe, PROBE_POSES + UNSEEN);
    let (fit_joints, unseen) = joints.split_at(PROBE_POSES);
    let mut rng = poses::Rng::new(31);
    let truth_c = random_truth(&mut rng);
    let truth = PerArmMachine::new(&demo().geometry_f64(), &truth_c);
    let plate = [-812.5, 0.004, -0.003];
    let pts = probe_measure(&truth, plate, fit_joints, NOISE_MM, &mut rng);
    let f = fit_robot(&demo(), Mode::Probe, &pts).expect("fit");
    assert!(f.converged);
    println!(
        "probe singular values {:?}\nheld {:?}\ncondition {:e}",
        f.start_identifiability.singular_values, f.held, f.identifiability.condition
    );
    // The same two exact trades as with a position instrument (common
    // azimuth, common axis height against the plate height).
    assert_eq!(f.start_identifiability.unidentifiable.len(), 2, "held {:?}", f.held);
    assert_literature_null_space(&f.start_identifiability.unidentifiable);
    let z = chi_square_z(&f);
    assert!(z.abs() <= CHI_SQUARE_Z, "chi-square z {z}");
    let want = expected(&f, &truth_c);
    println!(
        "probe std devs {:?}",
        (0..ARM_PARAMETERS)
            .map(|k| format!("{} {:.4}", model::name(f.mode, k), model::printed(f.mode, k, f.std_dev[k])))
            .collect::<Vec<_>>()
    );
    for k in 0..ARM_PARAMETERS {
        if f.std_dev[k] > 0.0 && f.std_dev[k].is_finite() {
            assert!((f.params[k] - want[k]).abs() <= SIGMAS * f.std_dev[k] + 1e-9, "{}", model::name(f.mode, k));
        }
    }
    // Heights at unseen poses are predicted within the noise band.
    let unseen_pts = probe_measure(&truth, plate, unseen, 0.0, &mut rng);
    let r = f.model.residuals(&f.params, &unseen_pts).expect("closes");
    let r0 = f.model.residuals(&f.start, &unseen_pts).expect("closes");
    assert!(model::rms(&r) <= PREDICTION_NOISE_FACTOR * NOISE_MM, "probe predicts {} mm", model::rms(&r));
    assert!(model::rms(&r0) >= model::rms(&r), "nominal {} calibrated {}", model::rms(&r0), model::rms(&r));
}

#[test]
fn suggested_poses_pass_the_guards_and_beat_random_ones() {
    let robot = nominal_robot();
    let s = suggested(Mode::Position, POSES);
    assert_eq!(s.len(), POSES);
    assert!(s.iter().all(|j| robot.forward(*j).is_ok()));
    let model = Model::new(Mode::Position, demo().geometry_f64());
    let params = vec![0.0; Mode::Position.parameters()];
    let o_suggested = poses::observability(&model, &params, &s);
    let random = poses::candidates(&robot, POSES * 3, &mut poses::Rng::new(41));
    let o_random = poses::observability(&model, &params, &random[..POSES]);
    println!("observability O1: suggested {o_suggested:.4e}, random {o_random:.4e}");
    assert!(o_suggested > o_random, "suggested {o_suggested} random {o_random}");
}

#[test]
fn too_few_points_and_bad_rows_are_refused() {
    let pts = measure(
        &PerArmMachine::new(&demo().geometry_f64(), &demo_truth()),
        &random_frame(&mut poses::Rng::new(1)),
        &suggested(Mode::Position, 5),
        0.0,
        &mut poses::Rng::new(2),
    );
    let e = fit(Mode::Position, demo().geometry_f64(), &[0.0; 18], &pts).expect_err("too few");
    assert!(e.to_string().contains("at least 9"), "{e}");
    let text = "theta0_deg,theta1_deg,theta2_deg,x_mm,y_mm,z_mm\n1,2,3,4,5,6\n1,2,x,4,5,6\n\n1,2,3,4,5\n";
    let err = measurements::parse(text).expect_err("bad rows");
    assert_eq!(err, measurements::MeasurementError::BadRows(vec![3, 5]));
}

/// Writes the demo measurement file (beside the demo robot, from the
/// truth fixture) and the scipy cross-check input.
#[test]
#[ignore = "regenerates committed fixtures"]
fn regenerate() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let truth = PerArmMachine::new(&demo().geometry_f64(), &demo_truth());
    let joints = suggested(Mode::Position, POSES);
    let mut rng = poses::Rng::new(2026);
    let frame = random_frame(&mut rng);
    let pts = measure(&truth, &frame, &joints, NOISE_MM, &mut rng);
    std::fs::write(root.join("examples/demo_measurements.csv"), measurements::write(Mode::Position, &pts))
        .expect("write");
    let mut rng = poses::Rng::new(99);
    let t = random_truth(&mut rng);
    let scipy_truth = PerArmMachine::new(&demo().geometry_f64(), &t);
    let frame = random_frame(&mut rng);
    let pts = measure(&scipy_truth, &frame, &joints, NOISE_MM, &mut rng);
    std::fs::write(root.join("ci/fixtures/calibrate_synthetic.csv"), measurements::write(Mode::Position, &pts))
        .expect("write");
}

// --- the command line -------------------------------------------------

fn root() -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("..")
}

fn deltakin(args: &[&str]) -> std::process::Output {
    std::process::Command::new(env!("CARGO_BIN_EXE_deltakin")).args(args).output().expect("run deltakin")
}

fn tmp(name: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("deltakin-calibrate-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    dir.join(name)
}

/// `deltakin calibrate` on the demo robot and measurements, plus `extra`.
fn calibrate_demo(extra: &[&str]) -> std::process::Output {
    let robot = root().join("examples/demo_robot.toml");
    let meas = root().join("examples/demo_measurements.csv");
    let mut args = vec!["calibrate", "--robot", robot.to_str().unwrap(), "--measurements", meas.to_str().unwrap()];
    args.extend_from_slice(extra);
    deltakin(&args)
}

#[test]
fn cli_demo_is_accepted_and_its_output_loads() {
    let (out_robot, json) = (tmp("calibrated.toml"), tmp("cal.json"));
    let out = calibrate_demo(&["--out", out_robot.to_str().unwrap(), "--json", json.to_str().unwrap(), "--per-point"]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(0), "{text}\n{}", String::from_utf8_lossy(&out.stderr));
    assert!(
        text.contains("ACCEPTED") && text.contains("arm 0 azimuth") && text.contains("observability index"),
        "{text}"
    );
    let file = RobotFile::load(Some(&out_robot)).expect("calibrated file parses");
    let _: Robot<f32> = file.robot().expect("Robot::new accepts it");
    let _: Robot<f64> = file.robot().expect("f64 too");
    // Its corrections are the demo's truth, within a few std devs (as fitted).
    let j: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json).expect("json")).expect("json parses");
    assert_eq!(j["accepted"], true);
    // fk accepts the calibrated file.
    let fk = std::process::Command::new(env!("CARGO_BIN_EXE_deltakin"))
        .args(["fk", "--robot", out_robot.to_str().unwrap()])
        .stdin(std::process::Stdio::piped())
        .stdout(std::process::Stdio::piped())
        .spawn()
        .and_then(|mut c| {
            use std::io::Write;
            c.stdin.take().expect("stdin").write_all(b"theta0_deg,theta1_deg,theta2_deg\n20,25,30\n")?;
            c.wait_with_output()
        })
        .expect("fk");
    assert!(String::from_utf8_lossy(&fk.stdout).contains(",ok"), "{}", String::from_utf8_lossy(&fk.stdout));
}

#[test]
fn cli_poor_fit_exits_1() {
    // The same data with the noise understated tenfold: poor.
    let out = calibrate_demo(&["--noise-mm", "0.002"]);
    assert_eq!(out.status.code(), Some(1), "{}", String::from_utf8_lossy(&out.stdout));
    assert!(String::from_utf8_lossy(&out.stdout).contains("POOR"));
}

#[test]
fn cli_input_problems_exit_2_with_line_numbers() {
    let text = std::fs::read_to_string(root().join("examples/demo_measurements.csv")).expect("demo");
    let mut lines: Vec<String> = text.lines().map(str::to_owned).collect();
    lines[4] = "1,2,three,4,5,6".into();
    lines[7] = "1,2,3".into();
    let bad = tmp("bad.csv");
    std::fs::write(&bad, lines.join("\n")).expect("write");
    let out = deltakin(&["calibrate", "--measurements", bad.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("line(s) 5, 8"), "{err}");
    let few = tmp("few.csv");
    std::fs::write(&few, text.lines().take(5).collect::<Vec<_>>().join("\n")).expect("write");
    let out = deltakin(&["calibrate", "--measurements", few.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("at least 9"), "{}", String::from_utf8_lossy(&out.stderr));
    assert_eq!(deltakin(&["calibrate"]).status.code(), Some(2));
}

#[test]
fn cli_suggests_guarded_poses() {
    const N: usize = 12;
    let out = deltakin(&["calibrate", "--suggest-poses", &N.to_string()]);
    assert_eq!(out.status.code(), Some(0));
    let text = String::from_utf8_lossy(&out.stdout);
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("theta0_deg,theta1_deg,theta2_deg"));
    let robot = nominal_robot();
    let rows: Vec<[f64; 3]> = lines
        .map(|l| {
            let v: Vec<f64> = l.split(',').map(|s| s.parse::<f64>().expect("number")).collect();
            [v[0], v[1], v[2]].map(f64::to_radians)
        })
        .collect();
    assert_eq!(rows.len(), N);
    assert!(rows.iter().all(|j| robot.forward(*j).is_ok()));
}

/// Agreement with the scipy fixture (mm or deg): both solve the same
/// least-squares problem to convergence, so they differ by the solvers'
/// stopping tolerances only, far below the parameters' std devs (~0.01).
const SCIPY_TOL: f64 = 1e-4;

/// Outside source: scipy.optimize.least_squares (trust-region reflective)
/// on ci/fixtures/calibrate_synthetic.csv with its own model
/// (ci/fixtures/calibrate_scipy.py, run once; the JSON is committed).
#[test]
fn matches_scipy_least_squares_on_a_synthetic_case() {
    let text = std::fs::read_to_string(root().join("ci/fixtures/calibrate_synthetic.csv")).expect("fixture");
    let (mode, pts) = measurements::parse(&text).expect("parses");
    let f = fit_robot(&demo(), mode, &pts).expect("fit");
    let j: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(root().join("ci/fixtures/calibrate_scipy.json")).expect("json"))
            .expect("json");
    for k in 0..ARM_PARAMETERS {
        let name = model::name(mode, k);
        let theirs = j["parameters"][&name].as_f64().expect("parameter in fixture");
        let ours = model::printed(mode, k, f.params[k]);
        assert!((ours - theirs).abs() <= SCIPY_TOL, "{name}: deltakin {ours}, scipy {theirs}");
    }
    let rms = j["rms_mm"].as_f64().expect("rms");
    assert!((f.rms_after() - rms).abs() <= SCIPY_TOL, "rms {} vs {rms}", f.rms_after());
}

/// The shipped demo: its figures (printed with --nocapture) and the same
/// acceptance as the synthetic machines.
#[test]
fn demo_measurements_recover_the_demo_truth() {
    let text = std::fs::read_to_string(root().join("examples/demo_measurements.csv")).expect("demo");
    let (mode, pts) = measurements::parse(&text).expect("parses");
    let f = fit_robot(&demo(), mode, &pts).expect("fit");
    let frame = random_frame(&mut poses::Rng::new(2026));
    let truth = PerArmMachine::new(&demo().geometry_f64(), &demo_truth());
    let unseen = poses::candidates(&nominal_robot(), 3 * UNSEEN, &mut poses::Rng::new(77));
    let unseen = &unseen[..UNSEEN];
    let calibrated = prediction_rms(&f, &f.params, &truth, &frame, unseen);
    let nominal = prediction_rms(&f, &f.start, &truth, &frame, unseen);
    let want = expected(&f, &demo_truth());
    println!("demo: unseen-pose prediction RMS nominal {nominal:.4} mm, calibrated {calibrated:.4} mm");
    println!("demo: chi-square {:.1} on {} dof, z {:.2}", f.chi_square(NOISE_MM), f.dof(), chi_square_z(&f));
    for k in 0..ARM_PARAMETERS {
        println!(
            "demo: {:<28} fitted {:+.4} true (held convention) {:+.4} std dev {:.4}",
            model::name(mode, k),
            model::printed(mode, k, f.params[k]),
            model::printed(mode, k, want[k]),
            model::printed(mode, k, f.std_dev[k])
        );
        assert!((f.params[k] - want[k]).abs() <= SIGMAS * f.std_dev[k], "{}", model::name(mode, k));
    }
    assert!(chi_square_z(&f).abs() <= CHI_SQUARE_Z);
    assert!(
        calibrated <= PREDICTION_NOISE_FACTOR * NOISE_MM && nominal >= NOMINAL_AT_LEAST_MM,
        "{calibrated} {nominal}"
    );
}
