//! The per-arm model (`Robot::with_corrections`) against the independent
//! reference (`deltakin_harness::reference`, which follows the per-arm
//! machine literally with its own numeric methods), in f64, f32 and fixed
//! point, with the accuracy bounds of `deltakin_harness::bounds`; the
//! exact facts every per-arm machine must show (zero corrections are the
//! nominal robot, common corrections are rigid motions); the Jacobian
//! against finite differences of the reference; and validation naming the
//! arm and the parameter.
//!
//! Machines: the property-test family of `tests/properties.rs` (lower arm
//! 200 to 2000 mm, lower/upper 1.5 to 3.5) and, for fixed point, the
//! random family of `tests/fixed_point.rs`, each with random per-arm
//! corrections of a built machine: joint offsets up to +-1 deg, lengths
//! and the radial difference up to +-1 mm, azimuths up to +-0.5 deg, axis
//! heights up to +-1 mm. Poses: joint angles drawn inside the range and
//! kept when the guarded f64 per-arm core accepts them and every arm is on
//! the elbow-out branch (the reference's mirror construction). Runs are
//! reproducible: the seed is fixed unless `PROPTEST_RNG_SEED` is set.

#![allow(clippy::neg_cmp_op_on_partial_ord)] // `ensure!` negates on purpose: NaN fails

use std::sync::Mutex;

use deltakin::{
    Arith, ArmCorrection, ArmParameter, ConfigFault, Error, Fixed, FixedWide, Geometry, Limits, Real, Robot,
};
use deltakin_harness::bounds;
use deltakin_harness::reference::{self, PerArmMachine};
use proptest::prelude::*;
use proptest::test_runner::{Config, RngSeed, TestCaseError, TestRunner};

/// Per-arm machines against the reference, f64 and f32.
const CASES_REFERENCE: u32 = 256;
/// Per-arm machines against the reference, fixed point.
const CASES_FIXED: u32 = 192;
/// Jacobian against finite differences of the reference.
const CASES_JACOBIAN: u32 = 128;
/// Rigid-motion facts.
const CASES_RIGID: u32 = 128;

/// Seed used unless `PROPTEST_RNG_SEED` names another.
const SEED: u64 = 0x7065_722d_6172_6d73;

/// Largest corrections drawn (a machine built to ordinary tolerances).
const MAX_OFFSET_DEG: f64 = 1.0;
const MAX_LENGTH_MM: f64 = 1.0;
const MAX_AZIMUTH_DEG: f64 = 0.5;

/// A common correction is an exact rigid motion of the machine (or a
/// shift of every joint reading), so the f64 core must reproduce the
/// nominal results to its rounding: joint angles (rad) and positions
/// relative to the lower arm. Rounding of the rotated target and of the
/// corrected constants, a few ulps at up to 1/margin = 10 amplification:
/// 1e-13 rad is 10x above the core's measured f64 error (bounds.rs).
const RIGID_F64_RAD: f64 = 1e-12;
const RIGID_F64_REL: f64 = 1e-13;

/// `Robot::upper_arms` and `lower_arms` give the lengths back from lower-arm
/// units: two roundings, so within this many ulps (relative).
const LENGTH_ULPS: f64 = 4.0;

/// Central-difference step (rad) and agreement relative to the largest
/// entry of J, as in `tests/properties.rs` (truncation and rounding about
/// 1e-11 relative at this step).
const FD_STEP_RAD: f64 = 1e-5;
const FD_REL_TOL: f64 = 1e-8;

fn config(cases: u32) -> Config {
    let base = Config::default();
    let seed = match base.rng_seed {
        RngSeed::Fixed(s) => RngSeed::Fixed(s),
        RngSeed::Random => RngSeed::Fixed(SEED),
    };
    Config { cases, failure_persistence: None, rng_seed: seed, ..base }
}

fn check<S: Strategy>(cases: u32, strategy: S, test: impl Fn(S::Value) -> Result<(), TestCaseError>)
where
    S::Value: std::fmt::Debug,
{
    let mut runner = TestRunner::new(config(cases));
    if let Err(e) = runner.run(&strategy, test) {
        panic!("{e}");
    }
}

macro_rules! ensure {
    ($cond:expr, $($fmt:tt)+) => {
        if !$cond {
            return Err(TestCaseError::fail(format!($($fmt)+)));
        }
    };
}

fn fail(what: &str) -> impl Fn(Error) -> TestCaseError + '_ {
    move |e| TestCaseError::fail(format!("{what}: {e}"))
}

/// Random corrections of one arm within the ranges above.
fn arm_correction() -> impl Strategy<Value = ArmCorrection<f64>> {
    let (o, l, z) = (MAX_OFFSET_DEG.to_radians(), MAX_LENGTH_MM, MAX_AZIMUTH_DEG.to_radians());
    (-o..o, -l..l, -l..l, -l..l, -z..z, -l..l).prop_map(
        |(joint_offset, upper_arm, lower_arm, radial_difference, azimuth, axis_height)| ArmCorrection {
            joint_offset,
            upper_arm,
            lower_arm,
            radial_difference,
            azimuth,
            axis_height,
        },
    )
}

fn corrections() -> impl Strategy<Value = [ArmCorrection<f64>; 3]> {
    prop::array::uniform3(arm_correction())
}

/// Geometry and limits of the properties family; returns the neutral angle
/// (the rod leans 0.3 lower arms outward of vertical there).
fn machine(lower: f64, ratio: f64, offset: f64, platform: f64) -> (Geometry<f64>, Limits<f64>, f64) {
    let upper = lower / ratio;
    let platform_radius = platform * upper;
    let d = offset * upper;
    let geometry = Geometry { base_radius: platform_radius + d, platform_radius, upper_arm: upper, lower_arm: lower };
    let c = (0.3 * lower - d) / upper;
    let mid = if c >= 1.0 { 0.3 } else { c.acos() };
    let limits = Limits {
        joint_min: [(mid - 1.0).max(-3.1); 3],
        joint_max: [(mid + 1.0).min(3.1); 3],
        passive_cone: 0.7,
        min_serial_margin: 0.1,
        min_parallel_margin: 0.1,
    };
    (geometry, limits, mid)
}

/// A per-arm machine with one pose the guarded f64 core accepts.
#[derive(Clone, Copy, Debug)]
struct Case {
    geometry: Geometry<f64>,
    corrections: [ArmCorrection<f64>; 3],
    limits: Limits<f64>,
    /// Joint readings (rad) and the platform centre (mm) they give.
    theta: [f64; 3],
    position: [f64; 3],
}

impl Case {
    fn robot64(&self) -> Robot<f64> {
        Robot::with_corrections(self.geometry, self.corrections, self.limits).expect("validated when drawn")
    }

    fn machine(&self) -> PerArmMachine {
        PerArmMachine::new(&self.geometry, &self.corrections)
    }
}

fn cases() -> impl Strategy<Value = Case> {
    let params = (200.0..2000.0_f64, 1.5..3.5_f64, 0.0..1.2_f64, 0.02..0.6_f64, prop::array::uniform3(-1.0..1.0_f64));
    (params, corrections()).prop_filter_map("pose refused by the guarded core", |(p, corrections)| {
        let (lower, ratio, offset, platform, u) = p;
        let (geometry, limits, mid) = machine(lower, ratio, offset, platform);
        let robot = Robot::with_corrections(geometry, corrections, limits).ok()?;
        let theta = u.map(|v| mid + v);
        let position = robot.forward(theta).ok()?.position;
        let m = PerArmMachine::new(&geometry, &corrections);
        if !reference::is_elbow_out(&m, theta, position) {
            return None;
        }
        Some(Case { geometry, corrections, limits, theta, position })
    })
}

fn dist(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

fn max_diff(a: [f64; 3], b: [f64; 3]) -> f64 {
    (0..3).map(|k| (a[k] - b[k]).abs()).fold(0.0, f64::max)
}

/// Values rounded to scalar `S` (lengths to `S::Wide`) and back: the
/// machine exactly as `S` holds it, and `S`'s own numbers.
fn geometry_in<S: Real>(g: &Geometry<f64>) -> Geometry<S> {
    let w = |v: f64| S::Wide::from_f64(v).expect("representable");
    Geometry {
        base_radius: w(g.base_radius),
        platform_radius: w(g.platform_radius),
        upper_arm: w(g.upper_arm),
        lower_arm: w(g.lower_arm),
    }
}

fn geometry_back<S: Real>(g: &Geometry<S>) -> Geometry<f64> {
    Geometry {
        base_radius: g.base_radius.to_f64(),
        platform_radius: g.platform_radius.to_f64(),
        upper_arm: g.upper_arm.to_f64(),
        lower_arm: g.lower_arm.to_f64(),
    }
}

fn corrections_in<S: Real>(c: &[ArmCorrection<f64>; 3]) -> [ArmCorrection<S>; 3] {
    let w = |v: f64| S::Wide::from_f64(v).expect("representable");
    let s = |v: f64| S::from_f64(v).expect("representable");
    c.map(|c| ArmCorrection {
        joint_offset: s(c.joint_offset),
        upper_arm: w(c.upper_arm),
        lower_arm: w(c.lower_arm),
        radial_difference: w(c.radial_difference),
        azimuth: s(c.azimuth),
        axis_height: w(c.axis_height),
    })
}

fn limits_in<S: Real>(l: &Limits<f64>) -> Limits<S> {
    let s = |v: f64| S::from_f64(v).expect("representable");
    Limits {
        joint_min: l.joint_min.map(s),
        joint_max: l.joint_max.map(s),
        passive_cone: s(l.passive_cone),
        min_serial_margin: s(l.min_serial_margin),
        min_parallel_margin: s(l.min_parallel_margin),
    }
}

/// A robot in scalar `S` for an f64 machine, and that machine exactly as
/// `S` holds it (what the reference must solve).
fn robot_in<S: Real>(
    g: &Geometry<f64>,
    c: &[ArmCorrection<f64>; 3],
    l: &Limits<f64>,
) -> Result<(Robot<S>, PerArmMachine), Error> {
    let (gs, cs) = (geometry_in::<S>(g), corrections_in::<S>(c));
    let robot = Robot::with_corrections(gs, cs, limits_in::<S>(l))?;
    Ok((robot, PerArmMachine::new(&geometry_back(&gs), &deltakin_harness::config::corrections_to_f64(&cs))))
}

/// `S`'s per-arm robot against the reference on `S`'s own inputs: the
/// largest joint error (rad) of IK at the case's position and the position
/// error (mm) of FK at the case's joints, both rounded to `S` first.
fn errors_of<S: Real>(c: &Case) -> Result<(f64, f64), TestCaseError> {
    let (robot, m) = robot_in::<S>(&c.geometry, &c.corrections, &c.limits).map_err(fail("robot"))?;
    let p = c.position.map(|v| S::Wide::from_f64(v).expect("representable"));
    let p_exact = p.map(Arith::to_f64);
    let want = reference::inverse(&m, p_exact).ok_or_else(|| TestCaseError::fail("reference IK"))?;
    let got = robot.inverse_unguarded(p).map_err(fail("IK"))?.joints.map(Arith::to_f64);
    let joint = max_diff(got, want);
    let t = c.theta.map(|v| S::from_f64(v).expect("representable"));
    let t_exact = t.map(Arith::to_f64);
    let want = reference::forward(&m, t_exact).ok_or_else(|| TestCaseError::fail("reference FK"))?;
    let got = robot.forward_unguarded(t).map_err(fail("FK"))?.position.map(Arith::to_f64);
    Ok((joint, dist(got, want)))
}

/// Worst errors seen: `[f64 rad, f64 mm, f32 rad, f32 mm, fixed rad, fixed mm]`.
static WORST: Mutex<[f64; 6]> = Mutex::new([0.0; 6]);

fn record(slot: usize, err: f64) {
    let mut w = WORST.lock().unwrap_or_else(std::sync::PoisonError::into_inner);
    w[slot] = w[slot].max(err);
}

fn worst() -> [f64; 6] {
    *WORST.lock().unwrap_or_else(std::sync::PoisonError::into_inner)
}

#[test]
fn per_arm_robots_agree_with_the_reference_in_f64_and_f32() {
    check(CASES_REFERENCE, cases(), |c| {
        let (joint, pos) = errors_of::<f64>(&c)?;
        record(0, joint);
        record(1, pos);
        ensure!(joint <= bounds::F64_JOINT_ERR_RAD, "f64 IK off by {joint} rad");
        ensure!(pos <= bounds::F64_POS_ERR_MM, "f64 FK off by {pos} mm");
        let (joint, pos) = errors_of::<f32>(&c)?;
        record(2, joint);
        record(3, pos);
        ensure!(joint <= bounds::F32_JOINT_ERR_RAD, "f32 IK off by {joint} rad");
        ensure!(pos <= bounds::F32_POS_ERR_MM, "f32 FK off by {pos} mm");
        Ok(())
    });
    let w = worst();
    eprintln!("per-arm worst: f64 {:.2e} rad {:.2e} mm; f32 {:.2e} rad {:.2e} mm", w[0], w[1], w[2], w[3]);
    // Two-sided: f32 must show f32-sized errors (else the f32 path is not
    // what runs).
    assert!(w[2] >= bounds::F32_JOINT_ERR_FLOOR_RAD, "f32 joint error implausibly small: {}", w[2]);
    assert!(w[3] >= bounds::F32_POS_ERR_FLOOR_MM, "f32 position error implausibly small: {}", w[3]);
}

/// Fixed-point cases: the random family of `tests/fixed_point.rs` (ratios
/// to the lower arm: upper `a`, base minus platform radius `d`, platform
/// radius `pr`) with random corrections and joint angles in its range.
fn fixed_cases() -> impl Strategy<Value = Case> {
    let params = (200.0..2000.0f64, 0.25..0.72f64, 0.0..0.45f64, 0.03..0.15f64, prop::array::uniform3(-0.65..1.45f64));
    (params, corrections()).prop_filter_map("outside the family or refused", |(p, corrections)| {
        let (lower, a, d, pr, theta) = p;
        if (d + a) * (d + a) + a * a > 1.55 || d + a * 0.4f64.cos() >= 0.97 {
            return None;
        }
        let geometry = Geometry {
            base_radius: (pr + d) * lower,
            platform_radius: pr * lower,
            upper_arm: a * lower,
            lower_arm: lower,
        };
        let limits = Limits {
            joint_min: [-0.7; 3],
            joint_max: [1.5; 3],
            passive_cone: 0.75,
            min_serial_margin: 0.08,
            min_parallel_margin: 0.08,
        };
        let robot = Robot::with_corrections(geometry, corrections, limits).ok()?;
        let position = robot.forward(theta).ok()?.position;
        if !reference::is_elbow_out(&PerArmMachine::new(&geometry, &corrections), theta, position) {
            return None;
        }
        Some(Case { geometry, corrections, limits, theta, position })
    })
}

#[test]
fn per_arm_fixed_point_robots_agree_with_the_reference() {
    check(CASES_FIXED, fixed_cases(), |c| {
        let (joint, pos) = errors_of::<Fixed>(&c)?;
        record(4, joint);
        record(5, pos);
        ensure!(joint <= bounds::FIXED_JOINT_ERR_RAD, "fixed IK off by {joint} rad");
        ensure!(pos <= bounds::FIXED_POS_ERR_MM, "fixed FK off by {pos} mm");
        Ok(())
    });
    let w = worst();
    eprintln!("per-arm worst: fixed {:.2e} rad {:.2e} mm", w[4], w[5]);
    // Two-sided: Q7.25 rounding (LSB 3e-8) must show.
    assert!(w[4] >= 3e-8, "fixed joint error implausibly small: {}", w[4]);
}

#[test]
fn the_reference_and_the_core_follow_the_per_arm_machine_not_the_nominal_one() {
    // A 1 mm lower-arm correction on arm 0 moves the platform by an amount
    // of the order of a millimetre: both sides must see it.
    let (g, l, _) = machine(720.0, 720.0 / 280.0, 120.0 / 280.0, 40.0 / 280.0);
    let mut c = [ArmCorrection::ZERO; 3];
    c[0].lower_arm = 1.0;
    let robot = Robot::with_corrections(g, c, l).unwrap();
    let nominal = Robot::new(g, l).unwrap();
    let theta = [0.5, 0.6, 0.7];
    let (per_arm, plain) =
        (robot.forward_unguarded(theta).unwrap().position, nominal.forward_unguarded(theta).unwrap().position);
    let moved = dist(per_arm, plain);
    assert!((0.3..3.0).contains(&moved), "moved {moved} mm");
    let want = reference::forward(&PerArmMachine::new(&g, &c), theta).unwrap();
    assert!(dist(per_arm, want) <= bounds::F64_POS_ERR_MM);
    assert!(dist(plain, want) > 0.3);
}

#[test]
fn zero_corrections_are_the_nominal_robot() {
    check(CASES_RIGID, cases(), |c| {
        let nominal = Robot::new(c.geometry, c.limits).map_err(fail("nominal"))?;
        let zero = Robot::with_corrections(c.geometry, [ArmCorrection::ZERO; 3], c.limits).map_err(fail("zero"))?;
        ensure!(nominal == zero, "robots differ");
        let (a, b) = (nominal.inverse_unguarded(c.position), zero.inverse_unguarded(c.position));
        ensure!(a == b, "IK differs: {a:?} vs {b:?}");
        // The accessors convert from lower-arm units: within a few ulps.
        let near = |v: [f64; 3], want: f64| v.iter().all(|x| (x - want).abs() <= LENGTH_ULPS * f64::EPSILON * want);
        ensure!(near(nominal.upper_arms(), c.geometry.upper_arm), "upper arms {:?}", nominal.upper_arms());
        ensure!(near(nominal.lower_arms(), c.geometry.lower_arm), "lower arms {:?}", nominal.lower_arms());
        Ok(())
    });
}

fn rotate_z(angle: f64, p: [f64; 3]) -> [f64; 3] {
    let (s, c) = angle.sin_cos();
    [c * p[0] - s * p[1], s * p[0] + c * p[1], p[2]]
}

/// The same correction on every arm, of one parameter.
fn common(parameter: ArmParameter, v: f64) -> [ArmCorrection<f64>; 3] {
    let mut c = ArmCorrection::ZERO;
    match parameter {
        ArmParameter::JointOffset => c.joint_offset = v,
        ArmParameter::Azimuth => c.azimuth = v,
        ArmParameter::AxisHeight => c.axis_height = v,
        _ => unreachable!("not a rigid motion"),
    }
    [c; 3]
}

#[test]
fn common_corrections_are_rigid_motions() {
    // Closed-form facts of the model (no outside source needed): the same
    // joint offset on every arm shifts every reading by it; the same
    // azimuth turns the whole machine about z; the same axis height lifts
    // it. Checked on the nominal poses of random machines.
    let values = (-0.02..0.02f64, -0.01..0.01f64, -1.0..1.0f64);
    check(CASES_RIGID, (cases(), values), |(c, (offset, azimuth, height))| {
        let nominal = Robot::new(c.geometry, c.limits).map_err(fail("nominal"))?;
        let Ok(base) = nominal.inverse_unguarded(c.position) else { return Ok(()) };
        let l = c.geometry.lower_arm;
        let build = |corr| Robot::with_corrections(c.geometry, corr, c.limits).map_err(fail("corrected"));
        let r = build(common(ArmParameter::JointOffset, offset))?;
        let s = r.inverse_unguarded(c.position).map_err(fail("offset IK"))?;
        ensure!(max_diff(s.joints, base.joints.map(|t| t - offset)) <= RIGID_F64_RAD, "offset: {:?}", s.joints);
        ensure!(max_diff(s.margins.serial, base.margins.serial) <= RIGID_F64_RAD, "offset margins");
        let r = build(common(ArmParameter::Azimuth, azimuth))?;
        let target = rotate_z(azimuth, c.position);
        let s = r.inverse_unguarded(target).map_err(fail("azimuth IK"))?;
        ensure!(max_diff(s.joints, base.joints) <= RIGID_F64_RAD, "azimuth: {:?} vs {:?}", s.joints, base.joints);
        let back = r.forward_unguarded(base.joints).map_err(fail("azimuth FK"))?;
        ensure!(dist(back.position, target) <= RIGID_F64_REL * l, "azimuth FK {:?}", back.position);
        let r = build(common(ArmParameter::AxisHeight, height))?;
        let lifted = [c.position[0], c.position[1], c.position[2] + height];
        let s = r.inverse_unguarded(lifted).map_err(fail("height IK"))?;
        ensure!(max_diff(s.joints, base.joints) <= RIGID_F64_RAD, "height: {:?}", s.joints);
        ensure!((s.margins.parallel - base.margins.parallel).abs() <= RIGID_F64_RAD, "height margin");
        Ok(())
    });
}

#[test]
fn per_arm_jacobian_matches_finite_differences_of_the_reference() {
    check(CASES_JACOBIAN, cases(), |c| {
        let s = c.robot64().forward_unguarded(c.theta).map_err(fail("FK"))?;
        let j = s.jacobian.matrix().map_err(fail("J"))?;
        let fd = reference::jacobian_fd(&c.machine(), c.theta, FD_STEP_RAD)
            .ok_or_else(|| TestCaseError::fail("reference FK near the pose"))?;
        let scale = j.iter().flatten().fold(0.0f64, |m, v| m.max(v.abs()));
        for r in 0..3 {
            for k in 0..3 {
                let e = (j[r][k] - fd[r][k]).abs();
                ensure!(e <= FD_REL_TOL * scale, "J[{r}][{k}] {} vs {} (scale {scale})", j[r][k], fd[r][k]);
            }
        }
        // Margins follow the real arms: the serial margin is the cosine
        // between the rod and the elbow's travel, from the reference's own
        // elbows and platform joints.
        let m = c.machine();
        for i in 0..3 {
            let arm = reference::Machine::arm(&m, i);
            let e = reference::elbow(&m, i, c.theta[i]);
            let pj = reference::platform_joint(&m, i, s.position);
            let rod = [pj[0] - e[0], pj[1] - e[1], pj[2] - e[2]];
            let (e1, e0) = (reference::elbow(&m, i, c.theta[i] + 1e-7), reference::elbow(&m, i, c.theta[i] - 1e-7));
            let travel = [e1[0] - e0[0], e1[1] - e0[1], e1[2] - e0[2]];
            let dot = rod[0] * travel[0] + rod[1] * travel[1] + rod[2] * travel[2];
            let cosine = dot.abs() / (arm.lower_arm * dist(e1, e0));
            ensure!(
                (s.margins.serial[i].abs() - cosine).abs() <= 1e-7,
                "arm {i} margin {} vs {cosine}",
                s.margins.serial[i]
            );
        }
        Ok(())
    });
}

#[test]
fn validation_names_the_arm_and_the_parameter() {
    let (g, l, _) = machine(720.0, 720.0 / 280.0, 120.0 / 280.0, 40.0 / 280.0);
    let one = |arm: usize, set: fn(&mut ArmCorrection<f64>)| {
        let mut c = [ArmCorrection::ZERO; 3];
        set(&mut c[arm]);
        Robot::with_corrections(g, c, l)
    };
    let bad = |arm, parameter, fault| Err(Error::InvalidArm { arm, parameter, fault });
    use ArmParameter::*;
    use ConfigFault::*;
    assert_eq!(one(1, |c| c.joint_offset = f64::NAN), bad(1, JointOffset, NonFinite));
    assert_eq!(one(2, |c| c.axis_height = f64::INFINITY), bad(2, AxisHeight, NonFinite));
    // 1 deg given as 1 rad, on either side of the 0.2 rad bound.
    assert_eq!(one(0, |c| c.joint_offset = 1.0), bad(0, JointOffset, CorrectionTooLarge));
    assert!(one(0, |c| c.joint_offset = 0.19).is_ok());
    assert_eq!(one(1, |c| c.azimuth = -0.21), bad(1, Azimuth, CorrectionTooLarge));
    // Lengths: at most 0.1 of the 720 mm lower arm (72 mm) either way.
    assert_eq!(one(2, |c| c.upper_arm = 72.5), bad(2, UpperArm, CorrectionTooLarge));
    assert!(one(2, |c| c.upper_arm = 71.5).is_ok());
    assert_eq!(one(0, |c| c.lower_arm = -80.0), bad(0, LowerArm, CorrectionTooLarge));
    assert_eq!(one(1, |c| c.radial_difference = 100.0), bad(1, RadialDifference, CorrectionTooLarge));
    assert_eq!(one(2, |c| c.axis_height = -73.0), bad(2, AxisHeight, CorrectionTooLarge));
    // A corrected upper arm below the minimum dimension, and a lower arm
    // not longer than its upper arm (a machine built for it).
    let small = Geometry { upper_arm: 1.5, lower_arm: 20.0, base_radius: 5.0, platform_radius: 2.0 };
    let mut c = [ArmCorrection::ZERO; 3];
    c[1].upper_arm = -0.8;
    assert_eq!(
        Robot::with_corrections(
            small,
            c,
            Limits {
                joint_min: [-0.5; 3],
                joint_max: [0.5; 3],
                passive_cone: 1.5,
                min_serial_margin: 0.0,
                min_parallel_margin: 0.0
            }
        ),
        bad(1, UpperArm, TooSmall)
    );
    let close = Geometry { upper_arm: 700.0, ..g };
    let mut c = [ArmCorrection::ZERO; 3];
    c[2].lower_arm = -30.0;
    assert_eq!(Robot::with_corrections(close, c, l), bad(2, LowerArm, LowerArmNotLonger));
    // The nominal checks come first, with their own errors.
    let mut c = [ArmCorrection::ZERO; 3];
    c[0].joint_offset = 1.0;
    assert_eq!(
        Robot::with_corrections(Geometry { upper_arm: -1.0, ..g }, c, l),
        Err(Error::InvalidGeometry(NotPositive))
    );
}

#[test]
fn fixed_point_refuses_an_arm_that_leaves_its_envelope_and_names_the_parameter() {
    // The envelope asks sqrt((|d| + a)^2 + a^2) <= 1.25 lower arms (see
    // deltakin::Fixed); this machine sits just inside it (1.2474).
    let lower = 1000.0;
    let (a, d) = (0.7, 0.3325);
    let g = Geometry::<Fixed> {
        base_radius: FixedWide::from_f64((0.1 + d) * lower).unwrap(),
        platform_radius: FixedWide::from_f64(0.1 * lower).unwrap(),
        upper_arm: FixedWide::from_f64(a * lower).unwrap(),
        lower_arm: FixedWide::from_f64(lower).unwrap(),
    };
    let f = |v: f64| Fixed::from_f64(v).unwrap();
    let l = Limits {
        joint_min: [f(-0.7); 3],
        joint_max: [f(1.5); 3],
        passive_cone: f(0.75),
        min_serial_margin: f(0.08),
        min_parallel_margin: f(0.08),
    };
    Robot::new(g, l).expect("inside the envelope");
    let mut c = [ArmCorrection::<Fixed>::ZERO; 3];
    c[1].upper_arm = FixedWide::from_f64(5.0).unwrap();
    assert_eq!(
        Robot::with_corrections(g, c, l),
        Err(Error::InvalidArm { arm: 1, parameter: ArmParameter::UpperArm, fault: ConfigFault::Unrepresentable })
    );
    let mut c = [ArmCorrection::<Fixed>::ZERO; 3];
    c[2].axis_height = FixedWide::from_f64(5.0).unwrap();
    assert_eq!(
        Robot::with_corrections(g, c, l),
        Err(Error::InvalidArm { arm: 2, parameter: ArmParameter::AxisHeight, fault: ConfigFault::Unrepresentable })
    );
}
