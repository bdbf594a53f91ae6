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

mod common;

// The bounds and their measured figures live with the others.
use deltakin_harness::bounds::{FIXED_JOINT_ERR_RAD, FIXED_POS_ERR_MM};
/// A pose counts as clear of a guard threshold when every margin, tilt
/// cosine and joint angle is at least this far from its limit; there the
/// fixed and f64 guards must agree. Far above the fixed rounding (1e-6).
const GUARD_CLEARANCE: f64 = 1e-4;

/// Two roots of an arm whose cosines differ by at most this are a tie of
/// the elbow-out rule (the platform in the base plane, where they are
/// equal): far below any real difference between the branches, far above
/// the reference's rounding (1e-15).
const ELBOW_TIE_COS: f64 = 1e-9;

/// Q7.25 LSB.
const LSB: f64 = 1.0 / 33_554_432.0;

fn limits_f64() -> Limits<f64> {
    Limits {
        joint_min: [-0.7; 3],
        joint_max: [1.5; 3],
        passive_cone: 0.75,
        min_serial_margin: 0.08,
        min_parallel_margin: 0.08,
    }
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

/// The difference of two angles (rad), as an angle: the reference
/// reports roots in `[0, 2 pi)`, the core in `[-pi, pi]`, and an elbow
/// above the base plane near `-pi/2` is the same joint angle in both.
fn angle_between(a: f64, b: f64) -> f64 {
    use std::f64::consts::{PI, TAU};
    ((a - b + PI).rem_euclid(TAU) - PI).abs()
}

#[derive(Default, Debug)]
struct Worst {
    joint_rad: f64,
    joint_at: Option<(Geometry<f64>, [f64; 3])>,
    pos_mm: f64,
    /// Worst position error over the lower arm, and where.
    pos_rel: f64,
    pos_rel_at: Option<(Geometry<f64>, [f64; 3])>,
    poses: usize,
}

/// Checks one pose given by joint angles (rad) that the f64 core accepts
/// with its guards; returns false when the pose was skipped.
fn check_pose(robot: &Robot<Fixed>, g: &Geometry<f64>, r64: &Robot<f64>, theta: [f64; 3], worst: &mut Worst) -> bool {
    let Ok(s64) = r64.forward(theta) else { return false };
    let l = r64.limits();
    let mut near_guard = clearance(&s64, l, l.passive_cone.cos()) < GUARD_CLEARANCE;
    // Inverse: the target rounded to Q18.14, solved exactly by the reference.
    let target = s64.position.map(wide);
    let exact = target.map(FixedWide::to_f64);
    let Some(want) = reference::inverse(g, exact) else { return false };
    let got = robot.inverse_unguarded(target).unwrap_or_else(|e| panic!("{g:?} {exact:?}: {e}"));
    for i in 0..3 {
        let mut e = angle_between(got.joints[i].to_f64(), want[i]);
        // With the platform in the base plane (z = 0) an arm's two roots
        // have equal cosines: the conventions' elbow-out rule cannot pick
        // one, so either is right (and the guards may judge the other).
        if let Some(other) = reference::other_root(g, i, want[i], exact) {
            if (other.cos() - want[i].cos()).abs() <= ELBOW_TIE_COS {
                e = e.min(angle_between(got.joints[i].to_f64(), other));
                near_guard = true;
            }
        }
        assert!(e <= FIXED_JOINT_ERR_RAD, "{g:?} {exact:?}: joint {i} off by {e:e} rad");
        if e > worst.joint_rad {
            worst.joint_rad = e;
            worst.joint_at = Some((*g, exact));
        }
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
    let e = (0..3).map(|i| (fk.position[i].to_f64() - want_p[i]).powi(2)).sum::<f64>().sqrt();
    assert!(e <= FIXED_POS_ERR_MM, "{g:?} {exact_joints:?}: position off by {e:e} mm");
    worst.pos_mm = worst.pos_mm.max(e);
    if e / g.lower_arm > worst.pos_rel {
        worst.pos_rel = e / g.lower_arm;
        worst.pos_rel_at = Some((*g, exact_joints));
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

/// Cases of [`random_geometries_and_poses_meet_the_targets`]
/// (`PROPTEST_CASES` overrides every count in this file).
const CASES_RANDOM: u32 = 400;
/// Cases of [`envelope_corners_meet_the_bounds_at_random`].
const CASES_CORNERS: u32 = 400;

/// Largest `R = sqrt((|d| + a)^2 + a^2)` the corner generators use: just
/// inside [`Fixed::ENVELOPE_MAX_R`], so that rounding the dimensions to
/// Q18.14 (at most 6e-7 lower arms on a 50 mm arm) cannot push it out.
const CORNER_MAX_R: f64 = 1.2495;
/// Smallest upper arm (lower-arm units) the corner generators use: just
/// above [`Fixed::ENVELOPE_MIN_A`], for the same reason.
const CORNER_MIN_A: f64 = 0.200_01;
/// Bisection steps that bring a pose to a guard's threshold (2^-40 of
/// the joint offsets: far below the fixed rounding).
const BOUNDARY_STEPS: usize = 40;
/// Fewest measured poses, as a share of the cases, for a generator run to
/// count. The generators give a guarded pose whenever some neutral pose of
/// the machine passes the guards (measured: 2,846 of 3,000 cases; the rest
/// are machines whose every neutral candidate sits at a guard, or poses
/// the reference cannot solve), so a lower share means a generator broke.
const MIN_MEASURED_SHARE: f64 = 0.9;

fn runner(default_cases: u32) -> proptest::test_runner::TestRunner {
    proptest::test_runner::TestRunner::new(common::config(default_cases))
}

/// The random family's `d` (lower-arm units) for a fraction `fd` of its
/// largest value: `R^2 <= 1.55` and the neutral pose (joints at 0.4 rad)
/// assembling with room (`d + a cos 0.4 < 0.97`) bound it, as does 0.45.
fn family_d(a: f64, fd: f64) -> f64 {
    let max = ((1.55 - a * a).sqrt() - a).min(0.97 - 1e-3 - a * 0.4f64.cos()).min(0.45);
    fd * max
}

#[test]
fn random_geometries_and_poses_meet_the_targets() {
    let params = (200.0f64..2000.0, 0.25f64..0.72, 0.0f64..=1.0, 0.03f64..0.15, prop::array::uniform3(-0.65f64..1.45));
    let result = runner(CASES_RANDOM).run(&params, |(lower, a, fd, pr, theta)| {
        let l = limits_f64();
        let (robot, g) = fixed_robot(&geometry(lower, a, family_d(a, fd), pr), &l).expect("inside the envelope");
        let r64 = Robot::new(g, l).unwrap();
        let mut worst = Worst::default();
        check_pose(&robot, &g, &r64, theta, &mut worst);
        Ok(())
    });
    if let Err(e) = result {
        panic!("{e}");
    }
}

/// A fraction in `[0, 1]` that lands on the ends far more often than a
/// uniform draw: exactly 0 or 1, within 1 % of either, or anywhere.
fn corner_fraction() -> impl Strategy<Value = f64> {
    prop_oneof![Just(0.0), Just(1.0), 0.0f64..0.01, 0.99f64..=1.0, 0.0f64..=1.0]
}

/// A machine of the admitted envelope and one guarded pose of it.
#[derive(Clone, Copy, Debug)]
struct EnvelopeCase {
    /// The machine as the fixed robot holds it (Q18.14 dimensions).
    geometry: Geometry<f64>,
    limits: Limits<f64>,
    /// Joint angles (rad), accepted by the guarded f64 core.
    theta: [f64; 3],
}

/// Where a machine sits in the envelope, every entry a fraction in
/// `[0, 1]` (0 and 1 are the corners) or a sign.
#[derive(Clone, Copy, Debug)]
struct Corner {
    /// Lower arm, log scale from 50 to 4000 mm.
    lower: f64,
    /// Upper arm, from the smallest ratio to the largest `R` allows.
    a: f64,
    /// `|d|`, from 0 to the largest `R` allows for this `a`.
    d: f64,
    d_negative: bool,
    /// Platform radius, from 1 mm (or just wider than the base, for a
    /// negative `d`) to half a lower arm more.
    platform: f64,
    /// The rod's lean at the neutral pose, over what the arm can reach.
    gap: f64,
    /// Elbow above the base plane at the neutral pose.
    mid_negative: bool,
    /// Joint range half-width, 0.05 to 1.5 rad.
    half_width: f64,
    /// Passive cone, 0.3 to 1.55 rad.
    cone: f64,
    /// The pose: each joint's offset from the neutral angle, in half-widths.
    offsets: [f64; 3],
}

fn corner() -> impl Strategy<Value = Corner> {
    let sign = any::<bool>();
    let offset = prop_oneof![Just(-1.0), Just(1.0), -1.0f64..=1.0];
    (
        (corner_fraction(), corner_fraction(), corner_fraction(), sign, corner_fraction()),
        (corner_fraction(), any::<bool>(), corner_fraction(), corner_fraction(), prop::array::uniform3(offset)),
    )
        .prop_map(|((lower, a, d, d_negative, platform), (gap, mid_negative, half_width, cone, offsets))| Corner {
            lower,
            a,
            d,
            d_negative,
            platform,
            gap,
            mid_negative,
            half_width,
            cone,
            offsets,
        })
}

/// Joint angles `mid + s * offsets * half_width`, kept inside the range.
fn along(mid: f64, half_width: f64, offsets: [f64; 3], s: f64, l: &Limits<f64>) -> [f64; 3] {
    let mut t = offsets.map(|u| mid + s * u * half_width);
    for i in 0..3 {
        t[i] = t[i].clamp(l.joint_min[i], l.joint_max[i]);
    }
    t
}

impl Corner {
    /// The machine and a guarded pose, or `None` when no neutral pose of
    /// the machine passes the guards (never seen in the measured runs).
    ///
    /// The pose is the drawn one when the guarded f64 core accepts it;
    /// otherwise the last accepted pose on the way from the neutral pose
    /// to it, found by bisection: a pose at one of the guards' limits.
    fn case(&self) -> Option<EnvelopeCase> {
        let lower = (50.0 * 80f64.powf(self.lower)).clamp(50.0, 4000.0);
        let a_max = CORNER_MAX_R / 2f64.sqrt();
        let a = CORNER_MIN_A + self.a * (a_max - CORNER_MIN_A);
        let d_max = ((CORNER_MAX_R * CORNER_MAX_R - a * a).sqrt() - a).max(0.0);
        let d = if self.d_negative { -self.d * d_max } else { self.d * d_max };
        // base = platform + d >= 1 mm, with a micrometre to spare.
        let pr_min = 1.001 / lower + (-d).max(0.0);
        let pr = pr_min + 0.5 * self.platform;
        let half_width = 0.05 + 1.45 * self.half_width;
        let cone = 0.3 + 1.25 * self.cone;
        // The rod's lean g = d + a cos(mid) at the neutral pose: within
        // what the arm reaches and within 0.9 (a rod leaning less than
        // 0.3 is near the parallel singularity). The drawn lean first,
        // then fixed alternatives, each with both elbow sides.
        let (lo, hi) = ((d - a).max(-0.9), (d + a).min(0.9));
        for f in [self.gap, 1.0 - self.gap, 0.0, 1.0, 0.5, 0.25, 0.75] {
            for mid_negative in [self.mid_negative, !self.mid_negative] {
                let g = lo + f * (hi - lo);
                let mid = ((g - d) / a).clamp(-1.0, 1.0).acos();
                let mid = if mid_negative { -mid } else { mid };
                let l = Limits {
                    joint_min: [(mid - half_width).max(-3.1); 3],
                    joint_max: [(mid + half_width).min(3.1); 3],
                    passive_cone: cone,
                    min_serial_margin: 0.1,
                    min_parallel_margin: 0.1,
                };
                let (_, held) = fixed_robot(&geometry(lower, a, d, pr), &l)
                    .unwrap_or_else(|e| panic!("inside the envelope: {lower} {a} {d} {pr}: {e}"));
                let Ok(r64) = Robot::new(held, l) else { continue };
                let accepted = |t: [f64; 3]| r64.forward(t).is_ok();
                if !accepted([mid; 3]) {
                    continue;
                }
                let mut theta = along(mid, half_width, self.offsets, 1.0, &l);
                if !accepted(theta) {
                    let (mut inside, mut outside) = (0.0, 1.0);
                    for _ in 0..BOUNDARY_STEPS {
                        let s = 0.5 * (inside + outside);
                        if accepted(along(mid, half_width, self.offsets, s, &l)) { inside = s } else { outside = s }
                    }
                    theta = along(mid, half_width, self.offsets, inside, &l);
                }
                return Some(EnvelopeCase { geometry: held, limits: l, theta });
            }
        }
        None
    }
}

/// Runs [`check_pose`] on one envelope case; `false` when nothing was
/// measured.
fn check_envelope_case(c: &EnvelopeCase, worst: &mut Worst) -> bool {
    let (robot, g) = fixed_robot(&c.geometry, &c.limits).expect("inside the envelope");
    let r64 = Robot::new(g, c.limits).unwrap();
    check_pose(&robot, &g, &r64, c.theta, worst)
}

/// Every corner of the envelope `Robot::<Fixed>::new` admits, random
/// fractions in between and poses at the guards' limits: the documented
/// bounds hold at every guarded pose.
#[test]
fn envelope_corners_meet_the_bounds_at_random() {
    let worst = std::sync::Mutex::new((Worst::default(), 0usize));
    let cases = common::cases(CASES_CORNERS);
    let result = runner(CASES_CORNERS).run(&corner(), |k| {
        let mut w = worst.lock().unwrap_or_else(std::sync::PoisonError::into_inner);
        if let Some(c) = k.case() {
            let (ref mut w, ref mut measured) = *w;
            *measured += usize::from(check_envelope_case(&c, w));
        }
        Ok(())
    });
    if let Err(e) = result {
        panic!("{e}");
    }
    let (w, measured) = worst.into_inner().unwrap_or_else(std::sync::PoisonError::into_inner);
    println!(
        "envelope corners, {measured} poses of {cases} cases: joint {:.3} urad, position {:.3} um, {:.3e} lower arms\n{w:?}",
        w.joint_rad * 1e6,
        w.pos_mm * 1e3,
        w.pos_rel
    );
    assert!(measured as f64 >= MIN_MEASURED_SHARE * f64::from(cases), "only {measured} of {cases} cases measured");
}

/// The envelope's corners one by one: both ends of the lower arm, the
/// smallest and largest upper arm, `d` at zero and at both extremes,
/// the narrowest and a wide platform, the neutral lean at both ends, each
/// pose at both ends of every joint range and at the guards' limits in
/// between.
#[test]
fn envelope_corners_meet_the_bounds_one_by_one() {
    let mut worst = Worst::default();
    let mut cases = 0usize;
    let ends = [0.0, 1.0];
    for lower in ends {
        for a in [0.0, 0.5, 1.0] {
            for (d, d_negative) in [(0.0, false), (1.0, false), (1.0, true)] {
                for platform in ends {
                    for gap in ends {
                        for half_width in [0.3, 1.0] {
                            for pose in 0..27 {
                                let offsets = [pose % 3, pose / 3 % 3, pose / 9].map(|k| f64::from(k as u8) - 1.0);
                                let k = Corner {
                                    lower,
                                    a,
                                    d,
                                    d_negative,
                                    platform,
                                    gap,
                                    mid_negative: false,
                                    half_width,
                                    cone: 1.0,
                                    offsets,
                                };
                                if let Some(c) = k.case() {
                                    cases += usize::from(check_envelope_case(&c, &mut worst));
                                }
                            }
                        }
                    }
                }
            }
        }
    }
    println!(
        "envelope corners one by one, {cases} poses: joint {:.3} urad, position {:.3} um, {:.3e} lower arms\n{worst:?}",
        worst.joint_rad * 1e6,
        worst.pos_mm * 1e3,
        worst.pos_rel
    );
    assert!(cases > 2000, "only {cases} corner poses measured");
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
    let l = Limits {
        joint_min: [-0.5; 3],
        joint_max: [2.5; 3],
        passive_cone: 1.2,
        min_serial_margin: 0.0,
        min_parallel_margin: 0.0,
    };
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
                                        assert!(e <= FIXED_POS_ERR_MM, "{g:?} {th:?}: {e:e} mm");
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

/// Issue 8, first reproducer: a 50 mm machine with the upper arm at 0.2
/// of the lower arm, arm 2 at a serial margin of 0.10. Its joint angles
/// meet the bound against the machine the robot holds; the 14.5 urad
/// reported against the dimensions as written is the rounding of those
/// dimensions to Q18.14 (base radius 52.59481339626533 mm is held as
/// 52.594787..., 26 nm off), which on this small machine, at this margin,
/// turns the joint by 13 urad before any arithmetic runs.
#[test]
fn small_machine_ik_at_serial_margin_0_1_meets_the_bound_on_its_held_dimensions() {
    let written =
        Geometry { base_radius: 52.594_813_396_265_33, platform_radius: 1.0, upper_arm: 10.05, lower_arm: 50.0 };
    let l = Limits {
        joint_min: [60f64.to_radians(); 3],
        joint_max: [170f64.to_radians(); 3],
        passive_cone: 60f64.to_radians(),
        min_serial_margin: 0.1,
        min_parallel_margin: 0.1,
    };
    let (robot, held) = fixed_robot(&written, &l).expect("inside the envelope");
    let target = [1.330_139_160_156_25, 6.477_539_062_5, -15.707_580_566_406_25];
    let got = robot.inverse(target.map(wide)).expect("a guarded pose");
    assert!(target.map(wide).map(FixedWide::to_f64) == target, "the target is exactly representable");
    let want = reference::inverse(&held, target).unwrap();
    for i in 0..3 {
        let e = angle_between(got.joints[i].to_f64(), want[i]);
        assert!(e <= FIXED_JOINT_ERR_RAD, "joint {i} off by {e:e} rad");
    }
    // The same machine before its dimensions were rounded: the shift of
    // joint 2 is the rounding's, the same for the exact reference.
    let as_written = reference::inverse(&written, target).unwrap();
    let shift = angle_between(as_written[2], want[2]);
    assert!(
        (DIMENSION_ROUNDING_SHIFT_RAD.0..=DIMENSION_ROUNDING_SHIFT_RAD.1).contains(&shift),
        "rounding the dimensions turns joint 2 by {shift:e} rad"
    );
}

/// How far rounding the first reproducer's dimensions to Q18.14 turns its
/// joint 2, in the exact reference (rad): measured 12.6 urad; the limits
/// bracket it by a fifth either way.
const DIMENSION_ROUNDING_SHIFT_RAD: (f64, f64) = (10e-6, 15e-6);

/// Issue 8, second reproducer: a 4000 mm lower arm with an 802 mm upper
/// arm, equal radii, parallel margin 0.10. The centres' triangle is small
/// (|n| = 0.10), and squaring its normal in Q7.25 lost 65 LSBs of its
/// length: 8.0 um. With the exact sum of squares of `Real::length3` the
/// error is 0.90 um.
#[test]
fn short_upper_arm_fk_keeps_the_small_centre_triangle_precise() {
    let g0 = Geometry { base_radius: 2000.0, platform_radius: 2000.0, upper_arm: 802.0, lower_arm: 4000.0 };
    let l = Limits {
        joint_min: [(-35f64).to_radians(); 3],
        joint_max: [85f64.to_radians(); 3],
        passive_cone: 60f64.to_radians(),
        min_serial_margin: 0.1,
        min_parallel_margin: 0.1,
    };
    let (robot, g) = fixed_robot(&g0, &l).expect("inside the envelope");
    assert_eq!(g, g0, "integer millimetres are held exactly");
    let joints =
        [-28.268_472_748_146_95f64, 49.486_204_395_339_56, -6.659_166_355_837_51].map(|d| fixed(d.to_radians()));
    let exact = joints.map(Fixed::to_f64);
    let want = reference::forward(&g, exact).unwrap();
    let got = robot.forward(joints).expect("a guarded pose");
    let e = (0..3).map(|i| (got.position[i].to_f64() - want[i]).powi(2)).sum::<f64>().sqrt();
    assert!(e <= SHORT_UPPER_ARM_FK_MAX_MM, "position off by {e:e} mm");
}

/// The second reproducer's position error may not return towards the
/// 8.0 um it had: measured 0.90 um before the foot point kept its
/// precision and the Newton step, limit 2 um.
const SHORT_UPPER_ARM_FK_MAX_MM: f64 = 2e-3;

/// Position error limit (mm) for [`near_plane_intersection_meets_5_um_on_a_4000_mm_arm`]:
/// measured 0.92 and 0.55 um (17.6 and 5.1 um before).
const NEAR_PLANE_FK_MAX_MM: f64 = 2e-3;

/// The two worst forward-kinematics poses the envelope-corner generator
/// found at 20,000 cases, both on 4000 mm lower arms with the platform
/// near the plane of the sphere centres (a wide base, a short upper arm,
/// the arms near vertical). The first was off by 17.6 um: the Q7.25
/// reciprocal of the centre triangle's `2 |n|` (about 0.13, so 22
/// significant bits) scaled the foot point, whose error the intersection
/// amplifies about 26 times. After a normalised reciprocal and an exact
/// `h^2` the second was still off by 5.1 um from the products forming
/// the foot point; the closing Newton step on the sphere equations
/// brought both under 1 um.
#[test]
fn near_plane_intersection_meets_5_um_on_a_4000_mm_arm() {
    let cases = [
        (
            Geometry {
                base_radius: 4_107.409_912_109_375,
                platform_radius: 1.000_976_562_5,
                upper_arm: 823.313_171_386_718_8,
                lower_arm: 4000.0,
            },
            [1.551_814_347_505_569_5, 1.551_814_198_493_957_5, 2.041_167_676_448_822],
        ),
        (
            Geometry {
                base_radius: 3_836.062_866_210_937_5,
                platform_radius: 1.000_976_562_5,
                upper_arm: 1_026.170_776_367_187_5,
                lower_arm: 4000.0,
            },
            [1.492_945_402_860_641_5, 1.372_260_332_107_544, 1.372_260_332_107_544],
        ),
    ];
    for (g0, theta) in cases {
        let lo = theta.iter().copied().fold(f64::INFINITY, f64::min) - 0.1;
        let hi = theta.iter().copied().fold(f64::NEG_INFINITY, f64::max) + 0.1;
        let l = Limits {
            joint_min: [lo; 3],
            joint_max: [hi; 3],
            passive_cone: 1.5,
            min_serial_margin: 0.0,
            min_parallel_margin: 0.0,
        };
        let (robot, g) = fixed_robot(&g0, &l).expect("inside the envelope");
        assert_eq!(g, g0, "the dimensions are exact in Q18.14");
        let joints = theta.map(fixed);
        let want = reference::forward(&g, joints.map(Fixed::to_f64)).unwrap();
        let got = robot.forward_unguarded(joints).expect("assembles");
        let e = (0..3).map(|i| (got.position[i].to_f64() - want[i]).powi(2)).sum::<f64>().sqrt();
        assert!(e <= NEAR_PLANE_FK_MAX_MM, "{g:?}: position off by {e:e} mm");
    }
}

/// Found by the envelope-corner generator: with a long upper arm (0.88 of
/// the lower) and equal radii, a guarded pose can put arm 0's platform
/// joint within 0.11 lower arms of its actuator axis, where `1 / rho^2`
/// (above 64) left Q7.25 and inverse kinematics called the pose
/// unreachable. The sine and cosine are now quotients there.
#[test]
#[allow(clippy::inconsistent_digit_grouping)] // exact binary fractions, as printed by the generator
fn platform_joint_near_the_actuator_axis_is_solved_not_refused() {
    let g0 = Geometry {
        base_radius: 2001.000_976_562_5,
        platform_radius: 2004.624_633_789_062_5,
        upper_arm: 3526.027_221_679_687_5,
        lower_arm: 4000.0,
    };
    let l = Limits {
        joint_min: [-3.0; 3],
        joint_max: [3.0; 3],
        passive_cone: 1.5,
        min_serial_margin: 0.1,
        min_parallel_margin: 0.1,
    };
    let (robot, g) = fixed_robot(&g0, &l).expect("inside the envelope");
    let target = [-52.459_960_937_5, -1972.826_782_226_562_5, -403.035_644_531_25];
    let got = robot.inverse_unguarded(target.map(wide)).expect("reachable");
    let want = reference::inverse(&g, target).unwrap();
    for i in 0..3 {
        let e = angle_between(got.joints[i].to_f64(), want[i]);
        assert!(e <= FIXED_JOINT_ERR_RAD, "joint {i} off by {e:e} rad");
    }
    let r64 = Robot::new(g, l).unwrap();
    let s64 = r64.inverse_unguarded(target).unwrap();
    // At the serial guard (margin 0.1 to within the target's rounding).
    assert!(s64.margins.serial.iter().all(|&m| m >= 0.0999), "a pose at the serial guard: {:?}", s64.margins);
}

/// Once a failure case of the earlier random-machine property: `R = 1.32`
/// lies outside the envelope, which `Robot::<Fixed>::new` refuses.
#[test]
fn former_regression_machine_outside_the_envelope_is_refused() {
    let g = geometry(200.0, 0.712_667_008_555_177_4, 0.402_459_711_010_835_66, 0.03);
    assert_eq!(fixed_robot(&g, &limits_f64()).map(|_| ()), Err(Error::InvalidGeometry(ConfigFault::Unrepresentable)));
}
