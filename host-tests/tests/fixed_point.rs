//! The fixed-point path (`Robot<Fixed>`, Q7.25 inside, Q18.14 millimetres
//! at the API) against the independent f64 reference
//! (`deltakin_harness::reference`): a dense joint-space sweep over a
//! family of geometries with lower arms of 200 to 2000 mm, random property
//! tests, the elementary functions' errors in LSBs, and the envelope's
//! extreme geometry, poses and just-outside inputs.
//!
//! Accuracy is judged on exactly representable inputs: a target is first
//! rounded to Q18.14 and the reference solves that exact value, and a
//! forward-kinematics check feeds the reference the fixed joint angles
//! themselves, so the figures are the fixed solvers' own errors.

#![allow(clippy::needless_range_loop)] // index loops over x, y, z read best here

use deltakin::scalar::{ATAN2_MAX_ERROR_LSB, SIN_COS_MAX_ERROR_LSB, SQRT_MAX_ERROR_LSB};
use deltakin::{Arith, ConfigFault, Error, Fixed, FixedWide, Geometry, Limits, Real, Robot, Solution};
use deltakin_harness::reference;
use proptest::prelude::*;

// The bounds and their measured figures live with the others.
use deltakin_harness::bounds::{FIXED_JOINT_ERR_RAD, FIXED_POS_ERR_MM};
/// A pose counts as clear of a guard threshold when every margin, tilt
/// cosine and joint angle is at least this far from its limit; there the
/// fixed and f64 guards must agree. Far above the fixed rounding (1e-6).
const GUARD_CLEARANCE: f64 = 1e-4;

/// Q7.25 LSB.
const LSB: f64 = 1.0 / 33_554_432.0;

fn limits_f64() -> Limits<f64> {
    Limits::uniform(-0.7, 1.5, 0.75, 0.08, 0.08)
}

/// A geometry from the lower arm (mm) and ratios to it: upper arm `a`,
/// base minus platform radius `d`, platform radius `pr`.
fn geometry(lower: f64, a: f64, d: f64, pr: f64) -> Geometry<f64> {
    Geometry { base_radius: (pr + d) * lower, platform_radius: pr * lower, upper_arm: a * lower, lower_arm: lower }
}

fn wide(v: f64) -> FixedWide {
    FixedWide::from_f64(v).expect("representable")
}

fn fixed(v: f64) -> Fixed {
    Fixed::from_f64(v).expect("representable")
}

/// The fixed robot for an f64 geometry and limits; also returns the f64
/// geometry exactly as the fixed robot holds it (rounded to Q18.14).
fn fixed_robot(g: &Geometry<f64>, l: &Limits<f64>) -> Result<(Robot<Fixed>, Geometry<f64>), Error> {
    let gf: Geometry<Fixed> = Geometry {
        base_radius: wide(g.base_radius),
        platform_radius: wide(g.platform_radius),
        upper_arm: wide(g.upper_arm),
        lower_arm: wide(g.lower_arm),
    };
    let lf = Limits {
        joint_min: l.joint_min.map(fixed),
        joint_max: l.joint_max.map(fixed),
        passive_cone: fixed(l.passive_cone),
        min_serial_margin: fixed(l.min_serial_margin),
        min_parallel_margin: fixed(l.min_parallel_margin),
    };
    let exact = Geometry {
        base_radius: gf.base_radius.to_f64(),
        platform_radius: gf.platform_radius.to_f64(),
        upper_arm: gf.upper_arm.to_f64(),
        lower_arm: gf.lower_arm.to_f64(),
    };
    Ok((Robot::new(gf, lf)?, exact))
}

/// Smallest distance of an f64 solution from any guard threshold.
fn clearance(s: &Solution<f64>, l: &Limits<f64>, cos_cone: f64) -> f64 {
    let mut c = f64::INFINITY;
    for i in 0..3 {
        c = c.min((s.joints[i] - l.joint_min[i]).abs()).min((s.joints[i] - l.joint_max[i]).abs());
        c = c.min((s.margins.serial[i] - l.min_serial_margin).abs());
        for t in s.margins.passive_tilt_cos[i] {
            c = c.min((t - cos_cone).abs());
        }
    }
    c.min((s.margins.parallel - l.min_parallel_margin).abs())
}

#[derive(Default, Debug)]
struct Worst {
    joint_rad: f64,
    pos_mm: f64,
    poses: usize,
}

/// Checks one pose given by joint angles (rad) that the f64 core accepts
/// with its guards; returns false when the pose was skipped.
fn check_pose(robot: &Robot<Fixed>, g: &Geometry<f64>, r64: &Robot<f64>, theta: [f64; 3], worst: &mut Worst) -> bool {
    let Ok(s64) = r64.forward(theta) else { return false };
    let l = r64.limits();
    let near_guard = clearance(&s64, l, l.passive_cone.cos()) < GUARD_CLEARANCE;
    // Inverse: the target rounded to Q18.14, solved exactly by the reference.
    let target = s64.position.map(wide);
    let exact = target.map(FixedWide::to_f64);
    let Some(want) = reference::inverse(g, exact) else { return false };
    let got = robot.inverse_unguarded(target).unwrap_or_else(|e| panic!("{g:?} {exact:?}: {e}"));
    for i in 0..3 {
        let e = (got.joints[i].to_f64() - want[i]).abs();
        assert!(e <= FIXED_JOINT_ERR_RAD, "{g:?} {exact:?}: joint {i} off by {e:e} rad");
        worst.joint_rad = worst.joint_rad.max(e);
    }
    // Guards agree away from their thresholds.
    let guarded = robot.inverse(target);
    if !near_guard {
        assert!(guarded.is_ok(), "{g:?} {exact:?}: fixed guard refused a clear pose: {guarded:?}");
    }
    if let Ok(s) = guarded {
        assert!(s.joints.iter().chain(s.margins.serial.iter()).all(|v| v.is_finite()));
    }
    // Forward: the fixed joint angles, exactly, into both.
    let joints = got.joints;
    let exact_joints = joints.map(Fixed::to_f64);
    let Some(want_p) = reference::forward(g, exact_joints) else { return false };
    let fk = robot.forward_unguarded(joints).unwrap_or_else(|e| panic!("{g:?} {exact_joints:?}: {e}"));
    for i in 0..3 {
        let e = (fk.position[i].to_f64() - want_p[i]).abs();
        assert!(e <= FIXED_POS_ERR_MM, "{g:?} {exact_joints:?}: position {i} off by {e:e} mm");
        worst.pos_mm = worst.pos_mm.max(e);
    }
    worst.poses += 1;
    true
}

/// Ratios `(a, d, platform)` of the sweep family: from a short, narrow
/// machine to one near the envelope's edge (`R <= 1.25`).
const FAMILY: [(f64, f64, f64); 5] =
    [(0.3, 0.1, 0.05), (0.39, 0.167, 0.056), (0.5, 0.25, 0.08), (0.65, 0.35, 0.1), (0.7, 0.3, 0.12)];
const LOWER_ARMS_MM: [f64; 5] = [200.0, 450.0, 1000.0, 1500.0, 2000.0];

#[test]
fn dense_sweep_meets_the_targets() {
    let l = limits_f64();
    let mut worst = Worst::default();
    let n = 9;
    for &lower in &LOWER_ARMS_MM {
        for &(a, d, pr) in &FAMILY {
            let g0 = geometry(lower, a, d, pr);
            let (robot, g) = fixed_robot(&g0, &l).expect("inside the envelope");
            let r64 = Robot::new(g, l).unwrap();
            let mut checked = 0;
            for i in 0..n {
                for j in 0..n {
                    for k in 0..n {
                        let t = |m: usize| -0.65 + 2.1 * m as f64 / (n - 1) as f64;
                        checked += usize::from(check_pose(&robot, &g, &r64, [t(i), t(j), t(k)], &mut worst));
                    }
                }
            }
            assert!(checked > 30, "{g:?}: only {checked} guarded poses");
        }
    }
    println!(
        "fixed worst over {} poses: joint {:.3e} rad ({:.3} urad), position {:.3e} mm ({:.3} um)",
        worst.poses,
        worst.joint_rad,
        worst.joint_rad * 1e6,
        worst.pos_mm,
        worst.pos_mm * 1e3
    );
}

proptest! {
    // A fixed seed (unless PROPTEST_RNG_SEED says otherwise), so CI runs the
    // same 400 cases every time; the regressions file is replayed first.
    #![proptest_config(ProptestConfig {
        cases: 400,
        rng_seed: match ProptestConfig::default().rng_seed {
            proptest::test_runner::RngSeed::Random => proptest::test_runner::RngSeed::Fixed(0x6465_6c74_616b_696e),
            fixed => fixed,
        },
        ..ProptestConfig::default()
    })]

    #[test]
    fn random_geometries_and_poses_meet_the_targets(
        lower in 200.0f64..2000.0,
        a in 0.25f64..0.72,
        d in 0.0f64..0.45,
        pr in 0.03f64..0.15,
        t0 in -0.65f64..1.45,
        t1 in -0.65f64..1.45,
        t2 in -0.65f64..1.45,
    ) {
        prop_assume!((d + a) * (d + a) + a * a <= 1.55);
        // The neutral pose (joints at mid-range, 0.4 rad) must assemble.
        prop_assume!(d + a * 0.4f64.cos() < 0.97);
        let l = limits_f64();
        let (robot, g) = fixed_robot(&geometry(lower, a, d, pr), &l).expect("inside the envelope");
        let r64 = Robot::new(g, l).unwrap();
        let mut worst = Worst::default();
        check_pose(&robot, &g, &r64, [t0, t1, t2], &mut worst);
    }
}

/// Max error in LSBs of the fixed elementary functions, through the
/// public `Real` trait, over edge cases and sweeps; printed for the record.
#[test]
fn elementary_functions_edge_cases_in_lsb() {
    let err = |got: Fixed, want: f64| (got.to_f64() - want).abs() / LSB;
    let m = i32::MAX;
    // sqrt: zero, tiny, one, the largest argument, and a sweep.
    let mut w_sqrt = 0.0f64;
    for raw in [0, 1, 2, 3, 255, 1 << 24, m - 1, m].into_iter().chain((0..50_000).map(|i| i * 42_949)) {
        let x = Fixed::from_raw(raw);
        w_sqrt = w_sqrt.max(err(x.sqrt(), x.to_f64().sqrt()));
    }
    assert!(!Fixed::from_raw(-1).sqrt().is_finite());
    // atan2: all eight octants (and their borders) at several magnitudes,
    // near +-pi, zero and tiny arguments, the largest arguments.
    let mut w_atan = 0.0f64;
    let mut at = |y: i32, x: i32| {
        let (fy, fx) = (Fixed::from_raw(y), Fixed::from_raw(x));
        let e = err(fy.atan2(fx), fy.to_f64().atan2(fx.to_f64()));
        w_atan = w_atan.max(e);
    };
    for octant in 0..8 {
        for step in 0..=64 {
            let ang = std::f64::consts::FRAC_PI_4 * (f64::from(octant) + f64::from(step) / 64.0) - std::f64::consts::PI;
            for mag in [3.0 * LSB, 1e-4, 0.5, 1.0, 2.9, 32.0, 63.99] {
                at((ang.sin() * mag / LSB) as i32, (ang.cos() * mag / LSB) as i32);
            }
        }
    }
    for y in [1, -1, 7, -7, 1 << 10, -(1 << 10)] {
        at(y, -m);
        at(y, -(1 << 24));
        at(y, m);
    }
    for (y, x) in [(m, m), (-m, -m), (m, -m), (-m, m), (1, 1), (-1, -1), (0, 1), (1, 0), (0, -1), (-1, 0)] {
        at(y, x);
    }
    assert_eq!(Fixed::ZERO.atan2(Fixed::ZERO), Fixed::ZERO);
    // sin_cos: around every multiple of pi/4 in [-4 pi, 4 pi], near +-pi,
    // zero, tiny, and the largest arguments.
    let mut w_sc = 0.0f64;
    let mut sc = |raw: i32| {
        let t = Fixed::from_raw(raw);
        let (s, c) = t.sin_cos();
        let v = t.to_f64();
        w_sc = w_sc.max(err(s, v.sin())).max(err(c, v.cos()));
    };
    for q in -16..=16 {
        let centre = (f64::from(q) * std::f64::consts::FRAC_PI_4 / LSB) as i32;
        for off in -300..=300 {
            sc(centre + off);
        }
    }
    for raw in [0, 1, -1, 5, m, -m, m - 12_345, -m + 12_345] {
        sc(raw);
    }
    println!("elementary functions, max error in Q7.25 LSBs: sqrt {w_sqrt:.3}, atan2 {w_atan:.3}, sin_cos {w_sc:.3}");
    assert!(w_sqrt <= SQRT_MAX_ERROR_LSB, "sqrt {w_sqrt}");
    assert!(w_atan <= ATAN2_MAX_ERROR_LSB, "atan2 {w_atan}");
    assert!(w_sc <= SIN_COS_MAX_ERROR_LSB, "sin_cos {w_sc}");
}

/// The ratio `d` that puts `R = sqrt((|d| + a)^2 + a^2)` at `r` for `a`.
fn d_at_r(a: f64, r: f64) -> f64 {
    (r * r - a * a).sqrt() - a
}

/// The envelope's extreme geometries: longest and shortest lower arm,
/// `R` just inside 1.25, positive and negative `d`. No operation may
/// overflow into a wrong value: every call returns an error or finite
/// numbers, and where the f64 core accepts a clear pose the fixed path
/// agrees with the reference.
#[test]
fn extreme_geometry_and_poses_do_not_overflow() {
    let l = Limits::uniform(-0.5, 2.5, 1.2, 0.0, 0.0);
    let a = 0.75;
    let d = d_at_r(a, 1.249);
    for lower in [4000.0, 50.0] {
        // A negative d needs a platform wider than the base.
        for (dd, pr) in [(d, 0.05), (-d, 0.5)] {
            let g0 = geometry(lower, a, dd, pr);
            let (robot, g) = fixed_robot(&g0, &l).unwrap_or_else(|e| panic!("{g0:?}: {e}"));
            let r64 = Robot::new(g, l).unwrap();
            // Joint space, beyond the limits to a full turn either way.
            let n = 25;
            let mut agreed = 0;
            for i in 0..n {
                for j in 0..n {
                    for k in 0..n {
                        let t = |m: usize| -6.2 + 12.4 * m as f64 / (n - 1) as f64;
                        let th = [t(i), t(j), t(k)];
                        let joints = th.map(fixed);
                        if let Ok(s) = robot.forward_unguarded(joints) {
                            assert!(s.position.iter().all(|v| v.is_finite()), "{th:?}");
                            assert!(s.joints.iter().all(|v| v.is_finite()));
                        }
                        if let Ok(s) = robot.forward(joints) {
                            assert!(s.position.iter().all(|v| v.is_finite()), "{th:?}");
                            let all = s.margins.serial.iter().chain(s.margins.passive_tilt_cos.iter().flatten());
                            assert!(all.chain([&s.margins.parallel]).all(|v| v.is_finite()));
                            let exact = joints.map(Fixed::to_f64);
                            if let (Some(p), Ok(s64)) = (reference::forward(&g, exact), r64.forward(exact)) {
                                if s64.margins.parallel > 0.05 && s64.margins.serial.iter().all(|&m| m > 0.05) {
                                    for c in 0..3 {
                                        let e = (s.position[c].to_f64() - p[c]).abs();
                                        assert!(e <= FIXED_POS_ERR_MM * lower / 2000.0, "{g:?} {th:?}: {e:e} mm");
                                    }
                                    agreed += 1;
                                }
                            }
                        }
                    }
                }
            }
            assert!(agreed > 10, "{g:?}: only {agreed} poses compared");
            // Cartesian space: a box out to twice the reach, and the
            // largest representable targets.
            let reach = (1.0 + a + dd.abs() + 0.05) * lower;
            let n = 21;
            for i in 0..n {
                for j in 0..n {
                    for k in 0..n {
                        let c = |m: usize| -2.0 * reach + 4.0 * reach * m as f64 / (n - 1) as f64;
                        let target = [c(i), c(j), c(k)].map(wide);
                        if let Ok(s) = robot.inverse(target) {
                            assert!(s.joints.iter().all(|v| v.is_finite()));
                            let jac = s.jacobian.matrix();
                            assert!(jac.map_or(true, |m| m.iter().flatten().all(|v| v.is_finite())));
                        }
                    }
                }
            }
            let max = FixedWide::from_mm(131_071).unwrap();
            for target in [[max, max, -max], [-max, FixedWide::ZERO, FixedWide::ZERO]] {
                assert!(matches!(robot.inverse_unguarded(target), Err(Error::Unreachable { .. })));
            }
        }
    }
}

#[test]
fn inputs_just_outside_the_envelope_are_errors() {
    let l = limits_f64();
    let refused = Err(Error::InvalidGeometry(ConfigFault::Unrepresentable));
    let ok = |g: Geometry<f64>| fixed_robot(&g, &l).map(|_| ());
    // Lower arm: the envelope is [50, 4000] mm.
    assert!(ok(geometry(4000.0, 0.4, 0.2, 0.05)).is_ok());
    assert_eq!(ok(geometry(4000.5, 0.4, 0.2, 0.05)), refused);
    assert!(ok(geometry(50.0, 0.4, 0.2, 0.05)).is_ok());
    assert_eq!(ok(geometry(49.9, 0.4, 0.2, 0.05)), refused);
    // Upper arm at least 0.2 lower arms.
    assert!(ok(geometry(1000.0, 0.201, 0.2, 0.05)).is_ok());
    assert_eq!(ok(geometry(1000.0, 0.199, 0.2, 0.05)), refused);
    // R = sqrt((|d| + a)^2 + a^2) at most 1.25.
    let a = 0.6;
    let mut lim = limits_f64();
    lim.joint_min = [0.6; 3];
    lim.joint_max = [1.5; 3];
    assert!(fixed_robot(&geometry(1000.0, a, d_at_r(a, 1.249), 0.05), &lim).is_ok());
    assert_eq!(fixed_robot(&geometry(1000.0, a, d_at_r(a, 1.251), 0.05), &lim).map(|_| ()), refused);
    assert!(fixed_robot(&geometry(1000.0, a, -d_at_r(a, 1.249), 0.9), &lim).is_ok());
    assert_eq!(fixed_robot(&geometry(1000.0, a, -d_at_r(a, 1.251), 0.9), &lim).map(|_| ()), refused);
    // The f64 core takes all of these.
    assert!(Robot::new(geometry(4000.5, 0.4, 0.2, 0.05), l).is_ok());
    assert!(Robot::new(geometry(1000.0, a, d_at_r(a, 1.251), 0.05), lim).is_ok());

    // Targets: beyond Q18.14 there is no value; far but representable
    // targets are unreachable, not wrapped.
    assert_eq!(FixedWide::from_mm(131_072), None);
    assert_eq!(FixedWide::from_f32(131_072.0), None);
    let (robot, _) = fixed_robot(&geometry(200.0, 0.4, 0.2, 0.05), &l).unwrap();
    let far = FixedWide::from_mm(131_071).unwrap();
    let z = FixedWide::from_mm(-150).unwrap();
    assert!(matches!(robot.inverse([far, FixedWide::ZERO, z]), Err(Error::Unreachable { .. })));
    // 64 lower arms is just beyond Q7.25 after conversion: still an error.
    let just = FixedWide::from_mm(12_800).unwrap();
    assert!(matches!(robot.inverse([just, FixedWide::ZERO, z]), Err(Error::Unreachable { .. })));
    assert!(matches!(robot.inverse([FixedWide::NAN, FixedWide::ZERO, z]), Err(Error::NonFinite { .. })));
    // Joint angles beyond a full turn, and not-a-number.
    let turn = fixed(2.0 * std::f64::consts::PI + 1e-3);
    assert!(matches!(robot.forward_unguarded([turn, Fixed::ZERO, Fixed::ZERO]), Err(Error::JointLimit { arm: 0, .. })));
    assert!(matches!(robot.forward([Fixed::NAN, Fixed::ZERO, Fixed::ZERO]), Err(Error::NonFinite { .. })));

    // Jacobian maps: results beyond Q18.14 are errors.
    let s = robot.inverse([FixedWide::ZERO, FixedWide::ZERO, FixedWide::from_mm(-190).unwrap()]).unwrap();
    let big_force = [FixedWide::ZERO, FixedWide::ZERO, FixedWide::from_mm(130_000).unwrap()];
    assert_eq!(s.jacobian.joint_torques(big_force), Err(Error::OutOfRange));
    let small_force = [FixedWide::ZERO, FixedWide::ZERO, FixedWide::from_mm(-10).unwrap()];
    assert!(s.jacobian.joint_torques(small_force).is_ok());
    let fast = [FixedWide::from_mm(100_000).unwrap(); 3];
    assert!(matches!(s.jacobian.cartesian_velocity(fast), Err(Error::OutOfRange | Error::NearParallelSingularity)));
    let v = s.jacobian.cartesian_velocity([FixedWide::ONE; 3]).unwrap();
    let back = s.jacobian.joint_rates(v).unwrap();
    for w in back {
        assert!((w.to_f64() - 1.0).abs() < 1e-3, "{w:?}");
    }
}

/// The f32 and f64 paths keep their results through the `Wide` hooks:
/// a float robot built and solved the old way still agrees with the
/// reference (a sanity check that the generic edge changed nothing).
#[test]
fn float_paths_unchanged_in_shape() {
    let g = geometry(720.0, 0.389, 0.167, 0.056);
    let r = Robot::new(g, limits_f64()).unwrap();
    let s = r.inverse([10.0, -20.0, -700.0]).unwrap();
    let want = reference::inverse(&g, [10.0, -20.0, -700.0]).unwrap();
    for i in 0..3 {
        assert!((s.joints[i] - want[i]).abs() < 1e-9);
    }
}
