//! Property tests of the deltakin core, in f64 and f32, over random valid
//! machines and random guarded poses, checked against the independent
//! reference (`deltakin_harness::reference`) and against the algebraic
//! properties every rotary delta must have.
//!
//! Machines: lower arm 200 to 2000 mm, lower/upper ratio 1.5 to 3.5,
//! `base_radius - platform_radius` 0 to 1.2 upper arms, platform radius
//! 0.02 to 0.6 upper arms. Limits: joint range +-1 rad around a neutral
//! angle chosen so the rod leans 0.3 lower arms outward of vertical at the
//! neutral pose, passive cone 0.7 rad (40 deg), both margins at least 0.1.
//! Poses: joint angles drawn inside the range and kept when the guarded
//! f64 core accepts them and every arm is on the elbow-out branch (checked
//! by the reference's mirror construction); a refused draw (about four in
//! five) is mapped to the last accepted pose on the joint-space path to it
//! from the neutral pose, a pose at the limit of the guard that refused
//! it. So every draw is a case and nothing is filtered (measured: none of
//! 5,000 draws needed the filter).
//!
//! Case counts are named constants (the any-bit-pattern count runs once
//! for f32 and once for f64); `PROPTEST_CASES` overrides them all. Runs are
//! reproducible: the seed is fixed unless `PROPTEST_RNG_SEED` is set.

// `ensure!` negates its condition on purpose: a NaN error fails the check.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use std::sync::Mutex;

use deltakin::{Error, Geometry, Input, Limits, Robot, Solution};
use deltakin_harness::bounds;
use deltakin_harness::reference;
use proptest::prelude::*;
use proptest::test_runner::{TestCaseError, TestRunner};

mod common;

/// Round trips and closure, f64 and f32.
const CASES_ROUND_TRIP: u32 = 512;
/// Core against the reference (the accuracy bounds).
const CASES_REFERENCE: u32 = 512;
/// 120-degree symmetry.
const CASES_SYMMETRY: u32 = 512;
/// Jacobian against finite differences.
const CASES_JACOBIAN: u32 = 512;
/// Velocity and force maps.
const CASES_MAPS: u32 = 512;
/// Non-finite numbers in every argument of every public function (each
/// case tries every argument slot with NaN, +inf and -inf).
const CASES_NON_FINITE: u32 = 128;
/// Arbitrary bit patterns, f32 and f64.
const CASES_ANY_BITS: u32 = 2048;

// Tolerances. "Measured" is the worst case over four to six runs with
// different seeds (2,000 to 3,000 cases per property).

/// f64 round trip FK(IK(p)) = p and closure, relative to the lower arm.
/// Measured worst: 1.0e-15 (a few ulps of lengths near 1); 20x headroom.
const ROUND_TRIP_F64_REL: f64 = 2e-14;
/// f64 round trip IK(FK(theta)) = theta (rad). Measured worst: 9.8e-15;
/// 10x headroom.
const ROUND_TRIP_F64_RAD: f64 = 1e-13;
/// f32 round trip and closure, relative to the lower arm. Measured worst:
/// 6.5e-7 (a few f32 ulps amplified by up to 1/margin = 10); 3x headroom.
const ROUND_TRIP_F32_REL: f64 = 2e-6;
/// f32 round trip of angles (rad). Measured worst: 5.0e-6 (FK rounding
/// seen through IK at serial margin 0.1); 3x headroom.
const ROUND_TRIP_F32_RAD: f64 = 1.5e-5;
/// Symmetry, f64: rotating the target by 120 deg costs the rounding of the
/// rotation itself. In rad for angles, plain for margins, relative to the
/// lower arm for positions. Measured worst: 3.6e-15 rad, 3.9e-15, 5.5e-16;
/// 25x headroom.
const SYMMETRY_F64_TOL: f64 = 1e-13;
/// Central-difference step (rad) and the agreement expected, relative to
/// the largest entry of J. Truncation is about h^2 |p'''| / 6 and rounding
/// about eps |p| / h, each near 1e-11 relative at h = 1e-5, growing as the
/// margins shrink towards 0.1. Measured worst: 5.8e-10; 17x headroom.
const FD_STEP_RAD: f64 = 1e-5;
const FD_REL_TOL: f64 = 1e-8;
/// Velocity and force maps, relative. f64 measured worst: 2e-15 (25x
/// headroom); f32 measured worst 9e-7 (a 3x3 solve at a determinant of at
/// least 0.1; 11x headroom).
const MAPS_F64_REL: f64 = 5e-14;
const MAPS_F32_REL: f64 = 1e-5;

/// Runs `test` on `cases` values of `strategy`; a failure panics with the
/// shrunk input.
fn check<S: Strategy>(cases: u32, strategy: S, test: impl Fn(S::Value) -> Result<(), TestCaseError>)
where
    S::Value: std::fmt::Debug,
{
    let mut runner = TestRunner::new(common::config(cases));
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

/// A random machine with one pose the guarded f64 core accepts.
#[derive(Clone, Copy, Debug)]
struct Case {
    geometry: Geometry<f64>,
    limits: Limits<f64>,
    /// Joint angles (rad) and the platform centre (mm) they give.
    theta: [f64; 3],
    position: [f64; 3],
}

impl Case {
    fn robot64(&self) -> Robot<f64> {
        Robot::new(self.geometry, self.limits).expect("validated when the case was drawn")
    }

    fn robot32(&self) -> Robot<f32> {
        Robot::new(geometry32(&self.geometry), limits32(&self.limits)).expect("f32 twin of a valid robot")
    }

    /// The f32 robot's geometry, exactly, in f64: the reference for f32
    /// results must see the same (rounded) machine.
    fn geometry_of_f32(&self) -> Geometry<f64> {
        let g = geometry32(&self.geometry);
        Geometry {
            base_radius: f64::from(g.base_radius),
            platform_radius: f64::from(g.platform_radius),
            upper_arm: f64::from(g.upper_arm),
            lower_arm: f64::from(g.lower_arm),
        }
    }
}

#[allow(clippy::cast_possible_truncation)] // rounding to f32 is the point
fn geometry32(g: &Geometry<f64>) -> Geometry<f32> {
    Geometry {
        base_radius: g.base_radius as f32,
        platform_radius: g.platform_radius as f32,
        upper_arm: g.upper_arm as f32,
        lower_arm: g.lower_arm as f32,
    }
}

#[allow(clippy::cast_possible_truncation)]
fn limits32(l: &Limits<f64>) -> Limits<f32> {
    Limits {
        joint_min: l.joint_min.map(|v| v as f32),
        joint_max: l.joint_max.map(|v| v as f32),
        passive_cone: l.passive_cone as f32,
        min_serial_margin: l.min_serial_margin as f32,
        min_parallel_margin: l.min_parallel_margin as f32,
    }
}

/// Geometry and limits from the drawn parameters; returns the neutral angle.
fn machine(lower: f64, ratio: f64, offset: f64, platform: f64) -> (Geometry<f64>, Limits<f64>, f64) {
    let upper = lower / ratio;
    let platform_radius = platform * upper;
    let d = offset * upper;
    let geometry = Geometry { base_radius: platform_radius + d, platform_radius, upper_arm: upper, lower_arm: lower };
    // Neutral angle: rod leaning 0.3 lower arms outward of vertical, i.e.
    // d + upper cos(mid) = 0.3 lower, when the arm can do that.
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

/// Bisection steps that bring a refused draw to the last accepted pose on
/// its way from the neutral pose (2^-40 of the offsets).
const BOUNDARY_STEPS: usize = 40;
/// Offsets (rad) from the neutral angle, all three joints alike, of the
/// symmetric poses a refused draw starts its bisection from: the neutral
/// pose first.
const ANCHORS: [f64; 9] = [0.0, 0.25, -0.25, 0.5, -0.5, 0.75, -0.75, 1.0, -1.0];

/// Whether the guarded f64 core accepts `theta` with every arm on the
/// elbow-out branch; the platform position when it does.
fn accepted(robot: &Robot<f64>, g: &Geometry<f64>, theta: [f64; 3]) -> Option<[f64; 3]> {
    let position = robot.forward(theta).ok()?.position;
    // Guarded FK also accepts elbow-in arms when the joint range reaches
    // them; inverse kinematics never returns those.
    reference::is_elbow_out(g, theta, position).then_some(position)
}

/// A valid case from the drawn numbers, by construction: the drawn pose
/// when the guards accept it, else the last accepted pose on the straight
/// joint-space path from the neutral pose to it (a pose at the limit of
/// whichever guard refused the draw). `None` only when every one of the
/// [`ANCHORS`] is refused too.
fn case_from(lower: f64, ratio: f64, offset: f64, platform: f64, u: [f64; 3]) -> Option<Case> {
    let (geometry, limits, mid) = machine(lower, ratio, offset, platform);
    let robot = Robot::new(geometry, limits).ok()?;
    let at = |s: f64| u.map(|v| mid + s * v);
    if let Some(position) = accepted(&robot, &geometry, at(1.0)) {
        return Some(Case { geometry, limits, theta: at(1.0), position });
    }
    // The start: the neutral pose, or the first accepted of the symmetric
    // poses beside it (the neutral pose of a machine whose mid-range angle
    // puts the rod across the elbow's travel is serial-singular).
    let (anchor, mut position) = ANCHORS.iter().find_map(|&k| {
        let t = [mid + k; 3];
        accepted(&robot, &geometry, t).map(|p| (t, p))
    })?;
    let drawn = at(1.0);
    let between = |s: f64| [0, 1, 2].map(|i| anchor[i] + s * (drawn[i] - anchor[i]));
    let (mut inside, mut outside) = (0.0, 1.0);
    for _ in 0..BOUNDARY_STEPS {
        let s = 0.5 * (inside + outside);
        match accepted(&robot, &geometry, between(s)) {
            Some(p) => (inside, position) = (s, p),
            None => outside = s,
        }
    }
    Some(Case { geometry, limits, theta: between(inside), position })
}

/// Fractions of the drawn radius offset tried in turn: about one machine
/// in a hundred of the family (a large offset on a short lower arm) has
/// no guarded pose near its neutral one (its rods cross the elbows'
/// travel there); it gives way to the same machine with a smaller offset.
const OFFSET_FALLBACKS: [f64; 5] = [1.0, 0.75, 0.5, 0.25, 0.0];

fn cases() -> impl Strategy<Value = Case> {
    let params = (200.0..2000.0_f64, 1.5..3.5_f64, 0.0..1.2_f64, 0.02..0.6_f64, prop::array::uniform3(-1.0..1.0_f64));
    params.prop_filter_map("no guarded pose even at offset 0", |(lower, ratio, offset, platform, u)| {
        OFFSET_FALLBACKS.iter().find_map(|&k| case_from(lower, ratio, k * offset, platform, u))
    })
}

fn dist(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

fn max_diff(a: [f64; 3], b: [f64; 3]) -> f64 {
    (0..3).map(|k| (a[k] - b[k]).abs()).fold(0.0, f64::max)
}

fn wide(v: [f32; 3]) -> [f64; 3] {
    v.map(f64::from)
}

#[allow(clippy::cast_possible_truncation)]
fn narrow(v: [f64; 3]) -> [f32; 3] {
    v.map(|x| x as f32)
}

#[test]
fn round_trips_and_closure_hold() {
    check(CASES_ROUND_TRIP, cases(), |c| {
        let l = c.geometry.lower_arm;
        // f64: the case's pose came from the guarded FK.
        let r = c.robot64();
        // Unguarded IK and FK: a pose right at a guard may round either way.
        let ik = r.inverse_unguarded(c.position).map_err(|e| TestCaseError::fail(format!("IK {e:?}")))?;
        ensure!(max_diff(ik.joints, c.theta) <= ROUND_TRIP_F64_RAD, "IK(FK(theta)) {:?} vs {:?}", ik.joints, c.theta);
        let fk = r.forward_unguarded(ik.joints).map_err(|e| TestCaseError::fail(format!("FK {e:?}")))?;
        ensure!(dist(fk.position, c.position) <= ROUND_TRIP_F64_REL * l, "FK(IK(p)) {:?}", fk.position);
        for s in [&ik, &fk] {
            let err = reference::closure_error(&c.geometry, s.joints, s.position);
            ensure!(err <= ROUND_TRIP_F64_REL * l, "f64 closure off by {err} mm");
        }
        // f32: from the rounded pose, without guards (rounding may cross one).
        let r32 = c.robot32();
        let g32 = c.geometry_of_f32();
        let p32 = narrow(c.position);
        let ik = r32.inverse_unguarded(p32).map_err(|e| TestCaseError::fail(format!("f32 IK {e:?}")))?;
        let fk = r32.forward_unguarded(ik.joints).map_err(|e| TestCaseError::fail(format!("f32 FK {e:?}")))?;
        ensure!(dist(wide(fk.position), wide(p32)) <= ROUND_TRIP_F32_REL * l, "f32 FK(IK(p)) {:?}", fk.position);
        let t32 = narrow(c.theta);
        let fk = r32.forward_unguarded(t32).map_err(|e| TestCaseError::fail(format!("f32 FK {e:?}")))?;
        let ik = r32.inverse_unguarded(fk.position).map_err(|e| TestCaseError::fail(format!("f32 IK {e:?}")))?;
        ensure!(max_diff(wide(ik.joints), wide(t32)) <= ROUND_TRIP_F32_RAD, "f32 IK(FK(theta)) {:?}", ik.joints);
        for s in [&ik, &fk] {
            let err = reference::closure_error(&g32, wide(s.joints), wide(s.position));
            ensure!(err <= ROUND_TRIP_F32_REL * l, "f32 closure off by {err} mm");
        }
        Ok(())
    });
}

/// Largest errors seen against the reference:
/// `[f64 joint rad, f64 position mm, f32 joint rad, f32 position mm]`.
static WORST: Mutex<[f64; 4]> = Mutex::new([0.0; 4]);

fn record(slot: usize, err: f64) {
    let mut w = WORST.lock().unwrap_or_else(std::sync::PoisonError::into_inner);
    w[slot] = w[slot].max(err);
}

#[test]
fn core_agrees_with_the_reference_within_the_documented_bounds() {
    check(CASES_REFERENCE, cases(), |c| {
        let g = c.geometry;
        // f64 inverse and forward, against the reference on the same inputs.
        let r = c.robot64();
        let want = reference::inverse(&g, c.position).ok_or_else(|| TestCaseError::fail("reference IK failed"))?;
        let got = r.inverse_unguarded(c.position).map_err(|e| TestCaseError::fail(format!("{e:?}")))?.joints;
        let e = max_diff(got, want);
        record(0, e);
        ensure!(e <= bounds::F64_JOINT_ERR_RAD, "f64 IK off by {e} rad");
        let want = reference::forward(&g, c.theta).ok_or_else(|| TestCaseError::fail("reference FK failed"))?;
        let e = dist(c.position, want);
        record(1, e);
        ensure!(e <= bounds::F64_POS_ERR_MM, "f64 FK off by {e} mm");
        // f32: the same machine and inputs rounded to f32; the reference
        // sees exactly the rounded numbers.
        let (r32, g32) = (c.robot32(), c.geometry_of_f32());
        let p32 = narrow(c.position);
        let want = reference::inverse(&g32, wide(p32)).ok_or_else(|| TestCaseError::fail("reference IK (f32)"))?;
        let got = r32.inverse_unguarded(p32).map_err(|e| TestCaseError::fail(format!("{e:?}")))?.joints;
        let e = max_diff(wide(got), want);
        record(2, e);
        ensure!(e <= bounds::F32_JOINT_ERR_RAD, "f32 IK off by {e} rad");
        let t32 = narrow(c.theta);
        let want = reference::forward(&g32, wide(t32)).ok_or_else(|| TestCaseError::fail("reference FK (f32)"))?;
        let got = r32.forward_unguarded(t32).map_err(|e| TestCaseError::fail(format!("{e:?}")))?.position;
        let e = dist(wide(got), want);
        record(3, e);
        ensure!(e <= bounds::F32_POS_ERR_MM, "f32 FK off by {e} mm");
        Ok(())
    });
    // Two-sided: over hundreds of poses f32 must show f32-sized errors; a
    // result this close to f64 would mean the f32 path is not what runs.
    let w = *WORST.lock().unwrap_or_else(std::sync::PoisonError::into_inner);
    assert!(w[2] >= bounds::F32_JOINT_ERR_FLOOR_RAD, "f32 joint error implausibly small: {}", w[2]);
    assert!(w[3] >= bounds::F32_POS_ERR_FLOOR_MM, "f32 position error implausibly small: {}", w[3]);
}

/// Rotation by +120 deg about z.
fn rotate120(p: [f64; 3]) -> [f64; 3] {
    let (c, s) = (-0.5, 0.75_f64.sqrt());
    [c * p[0] - s * p[1], s * p[0] + c * p[1], p[2]]
}

#[test]
fn rotating_the_target_by_120_degrees_cycles_the_arms() {
    check(CASES_SYMMETRY, cases(), |c| {
        let r = c.robot64();
        let l = c.geometry.lower_arm;
        let base = r.inverse_unguarded(c.position).map_err(|e| TestCaseError::fail(format!("{e:?}")))?;
        let turned = r.inverse_unguarded(rotate120(c.position)).map_err(|e| TestCaseError::fail(format!("{e:?}")))?;
        for i in 0..3 {
            let (a, b) = (base.joints[i], turned.joints[(i + 1) % 3]);
            ensure!((a - b).abs() <= SYMMETRY_F64_TOL, "arm {i}: {a} moved to {b}");
            let (ma, mb) = (base.margins.serial[i], turned.margins.serial[(i + 1) % 3]);
            ensure!((ma - mb).abs() <= SYMMETRY_F64_TOL, "serial margin of arm {i}: {ma} vs {mb}");
        }
        // And forward: cycling the angles turns the platform by 120 deg.
        let t = c.theta;
        let fk = r.forward_unguarded([t[2], t[0], t[1]]).map_err(|e| TestCaseError::fail(format!("{e:?}")))?;
        ensure!(dist(fk.position, rotate120(c.position)) <= SYMMETRY_F64_TOL * l, "FK {:?}", fk.position);
        Ok(())
    });
}

#[test]
fn jacobian_matches_central_differences_of_forward_kinematics() {
    check(CASES_JACOBIAN, cases(), |c| {
        let r = c.robot64();
        let sol = r.forward(c.theta).map_err(|e| TestCaseError::fail(format!("{e:?}")))?;
        let j = sol.jacobian.matrix().map_err(|e| TestCaseError::fail(format!("{e:?}")))?;
        let scale = j.iter().flatten().fold(0.0_f64, |m, v| m.max(v.abs()));
        for col in 0..3 {
            let (mut up, mut down) = (c.theta, c.theta);
            up[col] += FD_STEP_RAD;
            down[col] -= FD_STEP_RAD;
            let pu = r.forward_unguarded(up).map_err(|e| TestCaseError::fail(format!("{e:?}")))?.position;
            let pd = r.forward_unguarded(down).map_err(|e| TestCaseError::fail(format!("{e:?}")))?.position;
            for row in 0..3 {
                let fd = (pu[row] - pd[row]) / (2.0 * FD_STEP_RAD);
                let e = (fd - j[row][col]).abs() / scale;
                ensure!(e <= FD_REL_TOL, "J[{row}][{col}] = {} but differences give {fd}", j[row][col]);
            }
        }
        Ok(())
    });
}

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

fn norm(a: [f64; 3]) -> f64 {
    dot(a, a).sqrt()
}

/// Checks the three maps of one solution, all converted to f64.
fn check_maps(
    rates: [f64; 3],
    velocity: [f64; 3],
    back: [f64; 3],
    force: [f64; 3],
    torque: [f64; 3],
    tol: f64,
) -> Result<(), TestCaseError> {
    ensure!(max_diff(back, rates) <= tol * norm(rates), "joint_rates(cartesian_velocity(w)) = {back:?} for {rates:?}");
    // Virtual work: tau . w = F . v, relative to |tau| |w| + |F| |v|.
    let (work_j, work_c) = (dot(torque, rates), dot(force, velocity));
    let size = norm(torque) * norm(rates) + norm(force) * norm(velocity);
    ensure!((work_j - work_c).abs() <= tol * size, "tau.w = {work_j} but F.v = {work_c}");
    Ok(())
}

#[test]
fn velocity_and_force_maps_are_consistent() {
    let w = prop::array::uniform3(-2.0..2.0_f64);
    let f = prop::array::uniform3(-500.0..500.0_f64);
    check(CASES_MAPS, (cases(), w, f), |(c, w, f)| {
        let sol = c.robot64().forward(c.theta).map_err(|e| TestCaseError::fail(format!("{e:?}")))?;
        let jac = sol.jacobian;
        let fail = |e: Error| TestCaseError::fail(format!("{e:?}"));
        let v = jac.cartesian_velocity(w).map_err(fail)?;
        // v = J w with the matrix too.
        let m = jac.matrix().map_err(fail)?;
        let jw = [dot(m[0], w), dot(m[1], w), dot(m[2], w)];
        ensure!(max_diff(jw, v) <= MAPS_F64_REL * norm(v).max(1.0), "matrix() disagrees with cartesian_velocity");
        check_maps(w, v, jac.joint_rates(v).map_err(fail)?, f, jac.joint_torques(f).map_err(fail)?, MAPS_F64_REL)?;
        // f32, at the rounded pose.
        let sol = c.robot32().forward_unguarded(narrow(c.theta)).map_err(fail)?;
        let jac = sol.jacobian;
        let (w32, f32_) = (narrow(w), narrow(f));
        let v = jac.cartesian_velocity(w32).map_err(fail)?;
        let back = jac.joint_rates(v).map_err(fail)?;
        let tau = jac.joint_torques(f32_).map_err(fail)?;
        check_maps(wide(w32), wide(v), wide(back), wide(f32_), wide(tau), MAPS_F32_REL)
    });
}

/// A fixed machine and a solved pose for the argument tests.
fn fixed<S: deltakin::Real<Wide = S>>() -> (Robot<S>, Solution<S>) {
    let file = deltakin_harness::config::RobotFile::demo();
    let robot = file.robot::<S>().expect("demo robot");
    let p = [20.0, -30.0, -650.0].map(|v| S::from_f64(v).expect("small"));
    let sol = robot.inverse(p).expect("demo pose inside the guards");
    (robot, sol)
}

/// Every public entry point called with `v` as its argument.
fn all_entry_points<S: deltakin::Real<Wide = S>>(
    robot: &Robot<S>,
    sol: &Solution<S>,
    v: [S; 3],
) -> [(Input, Result<(), Error>); 7] {
    let j = &sol.jacobian;
    [
        (Input::Position, robot.inverse(v).map(drop)),
        (Input::Position, robot.inverse_unguarded(v).map(drop)),
        (Input::JointAngles, robot.forward(v).map(drop)),
        (Input::JointAngles, robot.forward_unguarded(v).map(drop)),
        (Input::Velocity, j.joint_rates(v).map(drop)),
        (Input::JointRates, j.cartesian_velocity(v).map(drop)),
        (Input::Force, j.joint_torques(v).map(drop)),
    ]
}

fn non_finite_everywhere<S: deltakin::Real<Wide = S>>(finite: [f64; 3], bad: [S; 3]) -> Result<(), TestCaseError> {
    let (robot, sol) = fixed::<S>();
    let base = finite.map(|v| S::from_f64(v).expect("finite and small"));
    for slot in 0..3 {
        for b in bad {
            let mut v = base;
            v[slot] = b;
            for (input, result) in all_entry_points(&robot, &sol, v) {
                ensure!(result == Err(Error::NonFinite { input }), "{b:?} in slot {slot}: {result:?} ({input:?})");
            }
        }
    }
    Ok(())
}

#[test]
fn every_non_finite_argument_is_an_error() {
    check(CASES_NON_FINITE, prop::array::uniform3(-1000.0..1000.0_f64), |finite| {
        non_finite_everywhere(finite, [f64::NAN, f64::INFINITY, f64::NEG_INFINITY])?;
        non_finite_everywhere(finite, [f32::NAN, f32::INFINITY, f32::NEG_INFINITY])
    });
}

/// Runs every entry point on `v`, and the Jacobian maps of any pose that
/// solves; demands finite numbers in every `Ok`.
fn no_panic_and_no_silent_garbage<S: deltakin::Real<Wide = S>>(v: [S; 3]) -> Result<(), TestCaseError> {
    let (robot, sol) = fixed::<S>();
    let finite = |x: &[S; 3]| x.iter().all(|v| v.is_finite());
    let mut solutions = vec![sol];
    let solved = [robot.inverse(v), robot.inverse_unguarded(v), robot.forward(v), robot.forward_unguarded(v)];
    for s in solved.into_iter().flatten() {
        ensure!(finite(&s.joints) && finite(&s.position), "non-finite solution {s:?} for {v:?}");
        solutions.push(s);
    }
    for s in &solutions {
        let j = &s.jacobian;
        for out in [j.joint_rates(v), j.cartesian_velocity(v), j.joint_torques(v)].into_iter().flatten() {
            ensure!(finite(&out), "non-finite map output {out:?} for {v:?}");
        }
    }
    Ok(())
}

#[test]
fn no_f32_bit_pattern_panics_or_returns_non_finite_numbers() {
    let any = prop_oneof![any::<u32>().prop_map(f32::from_bits), -2000.0..2000.0_f32, -7.0..7.0_f32];
    check(CASES_ANY_BITS, prop::array::uniform3(any), no_panic_and_no_silent_garbage::<f32>);
}

#[test]
fn no_f64_bit_pattern_panics_or_returns_non_finite_numbers() {
    let any = prop_oneof![any::<u64>().prop_map(f64::from_bits), -2000.0..2000.0_f64, -7.0..7.0_f64];
    check(CASES_ANY_BITS, prop::array::uniform3(any), no_panic_and_no_silent_garbage::<f64>);
}
