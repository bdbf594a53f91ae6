//! The independent f64 reference: slow, simple and deliberately unlike the
//! core, so that the two can check each other.
//!
//! Nothing here calls deltakin's solvers or reuses their closed forms; the
//! only thing shared is the definition of the machine in the conventions:
//!
//! ```text
//!   elbow          E_i = R_z(phi_i) (base_radius + upper_arm cos t_i, 0, -upper_arm sin t_i)
//!   platform joint P_i = p + R_z(phi_i) (platform_radius, 0, 0)
//!   closure        |E_i - P_i| = lower_arm,        phi_i = 120 deg * i
//! ```
//!
//! evaluated literally, as vectors in the base frame, in millimetres.
//!
//! # Per-arm machines
//! Every function takes any [`Machine`]: a nominal [`Geometry`] or a
//! [`PerArmMachine`], whose arms each have their own dimensions, azimuth,
//! actuator axis height and joint zero offset ([`ArmModel`]). The machine
//! is then the same literal construction with each arm's own numbers:
//!
//! ```text
//!   E_i = R_z(phi_i) (base_radius_i + upper_arm_i cos(t_i + offset_i), 0,
//!                     axis_height_i - upper_arm_i sin(t_i + offset_i))
//!   P_i = p + R_z(phi_i) (platform_radius_i, 0, 0),     |E_i - P_i| = lower_arm_i
//! ```
//!
//! with `t_i` the joint reading. A per-arm correction of the radial
//! difference goes to the actuator radius (`base_radius_i`), the platform
//! radius stays nominal: the closure sees only their difference.
//!
//! # Inverse kinematics: sampling and bracketing, arm by arm
//! For each arm the residual `f(t) = |E_i(t) - P_i|^2 - lower_arm^2` is
//! sampled on the whole circle at a fixed step of `2 pi / IK_SAMPLES`.
//! * Every sign change between neighbouring samples brackets a root, which
//!   bisection narrows to [`IK_ROOT_TOL_RAD`] (bisection halves the bracket
//!   each step and cannot fail on a continuous function; see any numerical
//!   analysis text, e.g. R. L. Burden and J. D. Faires, "Numerical
//!   Analysis", section 2.1).
//! * Two roots closer than one step leave no sign change among the
//!   samples, so every sample where `|f|` has a local minimum is examined
//!   too: golden-section search (Burden and Faires, or W. H. Press et al.,
//!   "Numerical Recipes", section 10.2) finds the extremum of `f` between
//!   the neighbouring samples; if `f` changes sign there, both halves are
//!   bisected, and if it only touches zero (within a rounding tolerance)
//!   the extremum itself is the (double) root.
//!
//! Of the roots found, the elbow-out one (the largest `cos t`) is returned,
//! as the conventions prescribe. The answer is then checked by recomputing
//! the closure.
//!
//! # Forward kinematics: safeguarded Newton
//! The three closure equations `F_i(p) = |E_i - P_i(p)|^2 - lower_arm^2 = 0`
//! are solved for `p` by Newton's method with a backtracking line search
//! on `|F|^2` (step halved until the merit decreases; J. E. Dennis and
//! R. B. Schnabel, "Numerical Methods for Unconstrained Optimization and
//! Nonlinear Equations", SIAM 1996, section 6.3), at most
//! [`FK_MAX_ITERATIONS`] iterations, the 3x3 Newton system solved by
//! Gaussian elimination with partial pivoting. It starts twice: once well
//! below the elbows and once well above, which leads to the two assembly
//! modes; of the runs that converge, the one with the smaller `z` is kept
//! (the conventions' lower branch), after checking its residuals.
//!
//! Cost: the elbows at the samples are computed once per arm and kept
//! (per thread), so a call costs 4,097 squared distances per arm plus a
//! few hundred trigonometric evaluations in the searches, and thousands in
//! forward kinematics. This is a test oracle, not a solver.

pub mod dynamics;

use deltakin::{ArmCorrection, Geometry};

/// Samples of the whole circle in the inverse-kinematics root search
/// (step 2 pi / 4096 = 1.5 mrad).
pub const IK_SAMPLES: usize = 4096;

/// Samples per segment in the screening of the inverse-kinematics samples
/// (see [`arm_roots`]): every 16th sample is evaluated first.
const SEGMENT: usize = 16;

/// Segments of the circle.
const SEGMENTS: usize = IK_SAMPLES / SEGMENT;
const _: () = assert!(SEGMENTS * SEGMENT == IK_SAMPLES);

/// Width (rad) to which bisection narrows a root's bracket.
pub const IK_ROOT_TOL_RAD: f64 = 1e-15;

/// Most Newton iterations in forward kinematics, per starting point.
pub const FK_MAX_ITERATIONS: usize = 200;

/// Largest closure error accepted in an answer, relative to the lower arm:
/// `| |E_i - P_i| - lower_arm | <= RESIDUAL_REL_TOL * lower_arm`. A root
/// found to 1e-15 rad moves the elbow by about 1e-12 mm, so 1e-11 leaves
/// room for rounding in the residual itself.
pub const RESIDUAL_REL_TOL: f64 = 1e-11;

/// Golden-section steps used to locate the extremum of the residual
/// between two samples (each shrinks the interval by 0.618; 80 steps take
/// a 3 mrad interval below 1e-18 rad).
const GOLDEN_STEPS: usize = 80;

/// Most bisection steps (a safety bound: 60 already reach 1e-15 rad from
/// a bracket of one sample step).
const BISECTION_STEPS: usize = 200;

/// One arm of a machine, every parameter literal: millimetres and radians.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ArmModel {
    /// Base centre to the actuator axis, radially (mm).
    pub base_radius: f64,
    /// Platform centre to the platform joint axis, radially (mm).
    pub platform_radius: f64,
    /// Actuator axis to elbow axis (mm).
    pub upper_arm: f64,
    /// Elbow axis to platform joint axis (mm).
    pub lower_arm: f64,
    /// Azimuth of the arm's vertical plane (rad, from +x towards +y).
    pub azimuth: f64,
    /// Height of the actuator axis above the base plane (mm).
    pub axis_height: f64,
    /// True joint angle at a joint reading of 0 (rad).
    pub joint_offset: f64,
}

/// A machine the reference can solve: three arms.
pub trait Machine {
    /// Arm `i` (0, 1 or 2).
    fn arm(&self, i: usize) -> ArmModel;
}

impl Machine for Geometry<f64> {
    fn arm(&self, i: usize) -> ArmModel {
        ArmModel {
            base_radius: self.base_radius,
            platform_radius: self.platform_radius,
            upper_arm: self.upper_arm,
            lower_arm: self.lower_arm,
            azimuth: (120.0 * i as f64).to_radians(),
            axis_height: 0.0,
            joint_offset: 0.0,
        }
    }
}

/// A machine whose arms differ: the nominal geometry with per-arm
/// corrections applied, literally.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PerArmMachine {
    /// Arms 0, 1, 2.
    pub arms: [ArmModel; 3],
}

impl PerArmMachine {
    /// The machine `g` with `corrections` (mm and rad, as in the core's
    /// [`ArmCorrection`]) added arm by arm.
    #[must_use]
    pub fn new(g: &Geometry<f64>, corrections: &[ArmCorrection<f64>; 3]) -> Self {
        let arms = [0, 1, 2].map(|i| {
            let c = &corrections[i];
            let nominal = g.arm(i);
            ArmModel {
                base_radius: nominal.base_radius + c.radial_difference,
                upper_arm: nominal.upper_arm + c.upper_arm,
                lower_arm: nominal.lower_arm + c.lower_arm,
                azimuth: nominal.azimuth + c.azimuth,
                axis_height: c.axis_height,
                joint_offset: c.joint_offset,
                ..nominal
            }
        });
        Self { arms }
    }
}

impl Machine for PerArmMachine {
    fn arm(&self, i: usize) -> ArmModel {
        self.arms[i]
    }
}

/// The longest lower arm of a machine (mm): the scale of its tolerances.
fn longest_lower_arm<M: Machine + ?Sized>(g: &M) -> f64 {
    (0..3).map(|i| g.arm(i).lower_arm).fold(0.0, f64::max)
}

/// Rotates `v` by `angle` (rad) about z.
fn rotate_z(angle: f64, v: [f64; 3]) -> [f64; 3] {
    let (s, c) = angle.sin_cos();
    [c * v[0] - s * v[1], s * v[0] + c * v[1], v[2]]
}

fn distance(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

/// Elbow position (mm, base frame) of arm `arm` at joint reading `theta`
/// (rad), straight from the conventions (with the arm's own parameters).
#[must_use]
pub fn elbow<M: Machine + ?Sized>(g: &M, arm: usize, theta: f64) -> [f64; 3] {
    arm_elbow(&g.arm(arm), theta)
}

/// [`elbow`] for one arm's own parameters.
fn arm_elbow(m: &ArmModel, theta: f64) -> [f64; 3] {
    let t = theta + m.joint_offset;
    let local = [m.base_radius + m.upper_arm * t.cos(), 0.0, m.axis_height - m.upper_arm * t.sin()];
    rotate_z(m.azimuth, local)
}

/// Position (mm, base frame) of arm `arm`'s platform joint when the
/// platform centre is at `p` (mm).
#[must_use]
pub fn platform_joint<M: Machine + ?Sized>(g: &M, arm: usize, p: [f64; 3]) -> [f64; 3] {
    let m = g.arm(arm);
    let r = rotate_z(m.azimuth, [m.platform_radius, 0.0, 0.0]);
    [p[0] + r[0], p[1] + r[1], p[2] + r[2]]
}

/// Length of each lower arm (mm), elbow to platform joint, for joint
/// angles `theta` (rad) and platform centre `p` (mm). A consistent pose
/// gives each arm's `lower_arm`.
#[must_use]
pub fn rod_lengths<M: Machine + ?Sized>(g: &M, theta: [f64; 3], p: [f64; 3]) -> [f64; 3] {
    [0, 1, 2].map(|i| distance(elbow(g, i, theta[i]), platform_joint(g, i, p)))
}

/// Largest closure error `| |E_i - P_i| - lower_arm_i |` (mm) over the arms.
#[must_use]
pub fn closure_error<M: Machine + ?Sized>(g: &M, theta: [f64; 3], p: [f64; 3]) -> f64 {
    let lengths = rod_lengths(g, theta, p);
    (0..3).map(|i| (lengths[i] - g.arm(i).lower_arm).abs()).fold(0.0, f64::max)
}

fn closes<M: Machine + ?Sized>(g: &M, theta: [f64; 3], p: [f64; 3]) -> bool {
    closure_error(g, theta, p) <= RESIDUAL_REL_TOL * longest_lower_arm(g)
}

fn squared_distance(e: [f64; 3], joint: [f64; 3]) -> f64 {
    (e[0] - joint[0]).powi(2) + (e[1] - joint[1]).powi(2) + (e[2] - joint[2]).powi(2)
}

/// The closure residual of one arm, `|E_i(t) - P_i|^2 - lower_arm_i^2` (mm^2).
fn residual<M: Machine + ?Sized>(g: &M, arm: usize, t: f64, joint: [f64; 3]) -> f64 {
    let e = elbow(g, arm, t);
    let l = g.arm(arm).lower_arm;
    squared_distance(e, joint) - l * l
}

/// The step (rad) between the inverse-kinematics samples.
fn sample_step() -> f64 {
    2.0 * std::f64::consts::PI / IK_SAMPLES as f64
}

/// Sample `k` (0..=IK_SAMPLES) of the circle, from -pi.
fn sample_angle(step: f64, k: usize) -> f64 {
    -std::f64::consts::PI + step * k as f64
}

/// Arm models whose sampled elbows a thread keeps (a report uses one
/// machine, a test a handful).
const SAMPLE_CACHE_ARMS: usize = 16;

type SampledElbows = std::rc::Rc<Vec<[f64; 3]>>;

thread_local! {
    static SAMPLE_CACHE: std::cell::RefCell<Vec<(ArmModel, SampledElbows)>> =
        const { std::cell::RefCell::new(Vec::new()) };
}

/// The elbow (mm, base frame) of arm `m` at every sample angle, computed
/// once per arm model and thread and then reused: the samples depend on
/// the machine alone, not on the platform position.
fn sampled_elbows(m: &ArmModel) -> SampledElbows {
    SAMPLE_CACHE.with(|cache| {
        let mut cache = cache.borrow_mut();
        if let Some((_, e)) = cache.iter().find(|(k, _)| k == m) {
            return e.clone();
        }
        let step = sample_step();
        let elbows: SampledElbows =
            std::rc::Rc::new((0..=IK_SAMPLES).map(|k| arm_elbow(m, sample_angle(step, k))).collect());
        if cache.len() >= SAMPLE_CACHE_ARMS {
            cache.remove(0);
        }
        cache.push((*m, elbows.clone()));
        elbows
    })
}

/// Bisection of a bracket `[lo, hi]` with `f(lo)` and `f(hi)` of opposite
/// signs (or one of them zero).
fn bisect(f: &dyn Fn(f64) -> f64, mut lo: f64, mut hi: f64) -> f64 {
    let mut f_lo = f(lo);
    if f_lo == 0.0 {
        return lo;
    }
    for _ in 0..BISECTION_STEPS {
        let mid = 0.5 * (lo + hi);
        if hi - lo <= IK_ROOT_TOL_RAD || mid <= lo || mid >= hi {
            break;
        }
        let f_mid = f(mid);
        if f_mid == 0.0 {
            return mid;
        }
        if (f_mid < 0.0) == (f_lo < 0.0) {
            lo = mid;
            f_lo = f_mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// Golden-section search for the minimum of `h` on `[lo, hi]`.
fn golden_min(h: &dyn Fn(f64) -> f64, mut lo: f64, mut hi: f64) -> f64 {
    let r = 0.5 * (5.0_f64.sqrt() - 1.0);
    let mut x1 = hi - r * (hi - lo);
    let mut x2 = lo + r * (hi - lo);
    let (mut h1, mut h2) = (h(x1), h(x2));
    for _ in 0..GOLDEN_STEPS {
        if h1 <= h2 {
            hi = x2;
            x2 = x1;
            h2 = h1;
            x1 = hi - r * (hi - lo);
            h1 = h(x1);
        } else {
            lo = x1;
            x1 = x2;
            h1 = h2;
            x2 = lo + r * (hi - lo);
            h2 = h(x2);
        }
    }
    0.5 * (lo + hi)
}

/// Every root in `[-pi, pi)` of arm `arm`'s closure for platform centre
/// `p` (mm), in radians, in no particular order; duplicates possible.
#[must_use]
pub fn arm_roots<M: Machine + ?Sized>(g: &M, arm: usize, p: [f64; 3]) -> Vec<f64> {
    let joint = platform_joint(g, arm, p);
    let f = |t: f64| residual(g, arm, t, joint);
    let step = sample_step();
    let m = g.arm(arm);
    // The residual at the samples, from the arm's elbows there (the same
    // `elbow` evaluation as `f`, done once per arm and kept).
    let elbows = sampled_elbows(&m);
    let l2 = m.lower_arm * m.lower_arm;
    let sample = |k: usize| elbows.get(k).map_or(f64::NAN, |e| squared_distance(*e, joint) - l2);
    let ts = |k: usize| sample_angle(step, k);
    // Rounding scale of the residual: squares of lengths of order |E| + |P| + l.
    let scale =
        m.base_radius + m.upper_arm + m.lower_arm + m.axis_height.abs() + joint.iter().map(|v| v.abs()).sum::<f64>();
    let touch_tol = 64.0 * f64::EPSILON * scale * scale;
    // Which samples can matter, from every SEGMENT-th one: `f' = 2 (E - P)
    // . dE/dt` and `|dE/dt| = upper_arm`, `|E - P| <= scale`, so `|f'| <=
    // lip = 2 upper_arm scale`. On a segment of width `w` whose ends have
    // `|f0| + |f1| > lip w`, `|f| > (|f0| + |f1| - lip w) / 2 > 0`
    // throughout: no root, no sign change, nothing within the touch
    // tolerance (the margins below cover rounding). Only the samples of
    // the other segments and their neighbours are examined, exactly as if
    // every sample were: the rest could only have run searches that find
    // nothing.
    let lip_w = 1.01 * 2.0 * m.upper_arm * scale * (SEGMENT as f64 * step) + 4.0 * touch_tol;
    let coarse: Vec<f64> = (0..=SEGMENTS).map(|j| sample(j * SEGMENT)).collect();
    let live: Vec<bool> = coarse.windows(2).map(|w| w[0].abs() + w[1].abs() <= lip_w).collect();
    let examined: Vec<usize> =
        (0..SEGMENTS).filter(|&j| live[(j + SEGMENTS - 1) % SEGMENTS] || live[j] || live[(j + 1) % SEGMENTS]).collect();
    let mut fs = [f64::NAN; IK_SAMPLES + 1];
    for &j in &examined {
        let (first, last) = (j * SEGMENT, (j + 1) * SEGMENT);
        for k in [(first + IK_SAMPLES - 1) % IK_SAMPLES].into_iter().chain(first..=last) {
            fs[k] = sample(k);
        }
    }
    let mut roots = Vec::new();
    for k in examined.iter().flat_map(|&j| j * SEGMENT..(j + 1) * SEGMENT) {
        let (t0, t1, f0, f1) = (ts(k), ts(k + 1), fs[k], fs[k + 1]);
        if f0 == 0.0 {
            roots.push(t0);
        } else if (f0 < 0.0) != (f1 < 0.0) && f1 != 0.0 {
            roots.push(bisect(&f, t0, t1));
        }
        // Local minimum of |f| among the samples (cyclic neighbours).
        let prev = fs[(k + IK_SAMPLES - 1) % IK_SAMPLES];
        let next = fs[k + 1];
        if f0 != 0.0 && f0.abs() <= prev.abs() && f0.abs() <= next.abs() {
            let s = f0.signum();
            let (lo, hi) = (t0 - step, t0 + step);
            let t_ext = golden_min(&|t| s * f(t), lo, hi);
            let f_ext = f(t_ext);
            if s * f_ext < 0.0 {
                // Two roots between the samples, on either side of t_ext.
                if (f(lo) < 0.0) != (f_ext < 0.0) {
                    roots.push(bisect(&f, lo, t_ext));
                }
                if (f(hi) < 0.0) != (f_ext < 0.0) {
                    roots.push(bisect(&f, t_ext, hi));
                }
            } else if f_ext.abs() <= touch_tol {
                roots.push(t_ext);
            }
        }
    }
    // Fold into [-pi, pi).
    roots.iter().map(|&t| if t >= std::f64::consts::PI { t - 2.0 * std::f64::consts::PI } else { t }).collect()
}

/// Elbow-out joint reading (rad) of one arm for platform centre `p` (mm),
/// or `None` when the arm cannot reach it. Elbow-out is the larger cosine
/// of the true angle (reading plus joint offset).
#[must_use]
pub fn inverse_arm<M: Machine + ?Sized>(g: &M, arm: usize, p: [f64; 3]) -> Option<f64> {
    let m = g.arm(arm);
    let roots = arm_roots(g, arm, p);
    let best = roots.into_iter().fold(None, |best: Option<f64>, t| match best {
        Some(b) if (b + m.joint_offset).cos() >= (t + m.joint_offset).cos() => Some(b),
        _ => Some(t),
    })?;
    let closure = (distance(elbow(g, arm, best), platform_joint(g, arm, p)) - m.lower_arm).abs();
    (closure <= RESIDUAL_REL_TOL * m.lower_arm).then_some(best)
}

/// Elbow-out joint readings (rad) for platform centre `p` (mm), or `None`.
#[must_use]
pub fn inverse<M: Machine + ?Sized>(g: &M, p: [f64; 3]) -> Option<[f64; 3]> {
    if !p.iter().all(|v| v.is_finite()) {
        return None;
    }
    Some([inverse_arm(g, 0, p)?, inverse_arm(g, 1, p)?, inverse_arm(g, 2, p)?])
}

/// The other root of arm `arm`'s closure, given one root `theta` (rad)
/// for platform centre `p` (mm), found by plain geometry rather than by
/// search: in the arm's vertical plane both elbows lie on the circle of
/// radius `upper_arm` around the actuator axis and on the circle where the
/// lower arm's sphere around the platform joint cuts that plane, so they
/// are mirror images across the line joining the two circles' centres.
/// `None` when those centres coincide (the roots then form a continuum).
#[must_use]
pub fn other_root<M: Machine + ?Sized>(g: &M, arm: usize, theta: f64, p: [f64; 3]) -> Option<f64> {
    let m = g.arm(arm);
    // Work in the arm's plane frame: x radial, z up (y drops out), from
    // the actuator axis.
    let joint = rotate_z(-m.azimuth, platform_joint(g, arm, p));
    let elbow = rotate_z(-m.azimuth, elbow(g, arm, theta));
    let axis = [joint[0] - m.base_radius, joint[2] - m.axis_height];
    let len = axis[0].hypot(axis[1]);
    if len.is_nan() || len <= 0.0 {
        return None;
    }
    let u = [axis[0] / len, axis[1] / len];
    let e = [elbow[0] - m.base_radius, elbow[2] - m.axis_height];
    let along = e[0] * u[0] + e[1] * u[1];
    let mirrored = [2.0 * along * u[0] - e[0], 2.0 * along * u[1] - e[1]];
    // Elbow offset is upper_arm (cos t, -sin t), t the true angle.
    Some((-mirrored[1]).atan2(mirrored[0]) - m.joint_offset)
}

/// `true` when every arm of the pose (`theta` rad, `p` mm) sits on the
/// elbow-out branch of the conventions (the cosine of the true angle at
/// least that of the other root's), so that inverse kinematics would give
/// `theta` back.
#[must_use]
pub fn is_elbow_out<M: Machine + ?Sized>(g: &M, theta: [f64; 3], p: [f64; 3]) -> bool {
    (0..3).all(|i| {
        let offset = g.arm(i).joint_offset;
        other_root(g, i, theta[i], p).is_some_and(|other| (theta[i] + offset).cos() >= (other + offset).cos())
    })
}

/// Solves the 3x3 system `m x = b` by Gaussian elimination with partial
/// pivoting; `None` when a pivot vanishes.
fn solve3(mut m: [[f64; 3]; 3], mut b: [f64; 3]) -> Option<[f64; 3]> {
    for col in 0..3 {
        let pivot = (col..3).max_by(|&i, &j| m[i][col].abs().total_cmp(&m[j][col].abs()))?;
        if m[pivot][col] == 0.0 || !m[pivot][col].is_finite() {
            return None;
        }
        m.swap(col, pivot);
        b.swap(col, pivot);
        let pivot_row = m[col];
        for row in col + 1..3 {
            let k = m[row][col] / pivot_row[col];
            for (entry, &p) in m[row].iter_mut().zip(pivot_row.iter()).skip(col) {
                *entry -= k * p;
            }
            b[row] -= k * b[col];
        }
    }
    let mut x = [0.0; 3];
    for row in (0..3).rev() {
        let mut acc = b[row];
        for c in row + 1..3 {
            acc -= m[row][c] * x[c];
        }
        x[row] = acc / m[row][row];
    }
    x.iter().all(|v| v.is_finite()).then_some(x)
}

/// One Newton run from `start`; the converged point, or `None`.
fn newton<M: Machine + ?Sized>(g: &M, elbows: [[f64; 3]; 3], start: [f64; 3]) -> Option<[f64; 3]> {
    let l2 = [0, 1, 2].map(|i| g.arm(i).lower_arm.powi(2));
    let eval = |p: [f64; 3]| -> ([f64; 3], [[f64; 3]; 3]) {
        let mut f = [0.0; 3];
        let mut jac = [[0.0; 3]; 3];
        for i in 0..3 {
            let pj = platform_joint(g, i, p);
            let s = [pj[0] - elbows[i][0], pj[1] - elbows[i][1], pj[2] - elbows[i][2]];
            f[i] = s[0] * s[0] + s[1] * s[1] + s[2] * s[2] - l2[i];
            jac[i] = [2.0 * s[0], 2.0 * s[1], 2.0 * s[2]];
        }
        (f, jac)
    };
    let merit = |f: [f64; 3]| f[0] * f[0] + f[1] * f[1] + f[2] * f[2];
    let mut p = start;
    let (mut f, mut jac) = eval(p);
    let step_tol = 1e-13 * longest_lower_arm(g);
    for _ in 0..FK_MAX_ITERATIONS {
        let dx = solve3(jac, f)?;
        let mut lambda = 1.0;
        let m0 = merit(f);
        let mut accepted = None;
        for _ in 0..40 {
            let trial = [p[0] - lambda * dx[0], p[1] - lambda * dx[1], p[2] - lambda * dx[2]];
            let (ft, jt) = eval(trial);
            if merit(ft) < m0 || merit(ft) == 0.0 {
                accepted = Some((trial, ft, jt));
                break;
            }
            lambda *= 0.5;
        }
        let Some((trial, ft, jt)) = accepted else {
            // No decrease possible: either converged to rounding or stuck.
            break;
        };
        let moved = lambda * (dx[0].abs() + dx[1].abs() + dx[2].abs());
        (p, f, jac) = (trial, ft, jt);
        if moved <= step_tol {
            break;
        }
    }
    Some(p)
}

/// Lower-branch platform centre (mm) for joint angles `theta` (rad), or
/// `None` when the loops cannot be closed.
#[must_use]
pub fn forward<M: Machine + ?Sized>(g: &M, theta: [f64; 3]) -> Option<[f64; 3]> {
    if !theta.iter().all(|v| v.is_finite()) {
        return None;
    }
    let elbows = [0, 1, 2].map(|i| elbow(g, i, theta[i]));
    let centre = [0, 1].map(|k| elbows.iter().map(|e| e[k]).sum::<f64>() / 3.0);
    let lowest = elbows.iter().map(|e| e[2]).fold(f64::INFINITY, f64::min);
    let highest = elbows.iter().map(|e| e[2]).fold(f64::NEG_INFINITY, f64::max);
    let reach = longest_lower_arm(g);
    let starts = [[centre[0], centre[1], lowest - reach], [centre[0], centre[1], highest + reach]];
    starts
        .iter()
        .filter_map(|&s| newton(g, elbows, s))
        .filter(|&p| closes(g, theta, p))
        .min_by(|a, b| a[2].total_cmp(&b[2]))
}

/// Central finite-difference Jacobian `dp/dtheta` (mm/rad, rows x, y, z)
/// of the reference forward kinematics at `theta`, with step `h` (rad).
#[must_use]
pub fn jacobian_fd<M: Machine + ?Sized>(g: &M, theta: [f64; 3], h: f64) -> Option<[[f64; 3]; 3]> {
    let mut m = [[0.0; 3]; 3];
    for j in 0..3 {
        let (mut tp, mut tm) = (theta, theta);
        tp[j] += h;
        tm[j] -= h;
        let (pp, pm) = (forward(g, tp)?, forward(g, tm)?);
        for i in 0..3 {
            m[i][j] = (pp[i] - pm[i]) / (2.0 * h);
        }
    }
    Some(m)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn geometry() -> Geometry<f64> {
        Geometry { base_radius: 160.0, platform_radius: 40.0, upper_arm: 280.0, lower_arm: 720.0 }
    }

    /// Angle agreement expected of the reference with itself (rad).
    const SELF_RAD: f64 = 1e-12;
    /// Position agreement expected of the reference with itself (mm).
    const SELF_MM: f64 = 1e-9;

    #[test]
    fn inverse_closes_the_loops_and_forward_returns_the_point() {
        let g = geometry();
        let mut checked = 0;
        for &p in &[[0.0, 0.0, -600.0], [120.0, -80.0, -700.0], [-200.0, 150.0, -550.0], [50.0, 220.0, -820.0]] {
            let theta = inverse(&g, p).expect("reachable");
            assert!(closure_error(&g, theta, p) <= RESIDUAL_REL_TOL * g.lower_arm);
            let back = forward(&g, theta).expect("assembles");
            for k in 0..3 {
                assert!((back[k] - p[k]).abs() < SELF_MM, "{p:?} -> {back:?}");
            }
            checked += 1;
        }
        assert_eq!(checked, 4);
    }

    #[test]
    fn forward_then_inverse_returns_the_angles() {
        let g = geometry();
        for theta in [[0.2, 0.4, 0.6], [-0.3, 0.1, 0.9], [0.5, 0.5, 0.5]] {
            let p = forward(&g, theta).expect("assembles");
            assert!(closure_error(&g, theta, p) <= RESIDUAL_REL_TOL * g.lower_arm);
            let back = inverse(&g, p).expect("reachable");
            for k in 0..3 {
                assert!((back[k] - theta[k]).abs() < SELF_RAD, "{theta:?} -> {back:?}");
            }
        }
    }

    #[test]
    fn pose_on_the_axis_has_equal_angles() {
        let g = geometry();
        let theta = inverse(&g, [0.0, 0.0, -650.0]).expect("reachable");
        assert!((theta[0] - theta[1]).abs() < SELF_RAD && (theta[0] - theta[2]).abs() < SELF_RAD, "{theta:?}");
        let p = forward(&g, [0.4; 3]).expect("assembles");
        assert!(p[0].abs() < SELF_MM && p[1].abs() < SELF_MM && p[2] < 0.0, "{p:?}");
    }

    #[test]
    fn both_roots_are_found_and_the_elbow_out_one_is_chosen() {
        let g = geometry();
        let p = [30.0, -40.0, -600.0];
        let roots = arm_roots(&g, 0, p);
        let mut distinct: Vec<f64> = Vec::new();
        for r in roots {
            if distinct.iter().all(|d| (d - r).abs() > 1e-9) {
                distinct.push(r);
            }
        }
        assert_eq!(distinct.len(), 2, "{distinct:?}");
        let chosen = inverse_arm(&g, 0, p).expect("reachable");
        let other = distinct.iter().copied().find(|r| (r - chosen).abs() > 1e-9).expect("second root");
        assert!(chosen.cos() > other.cos());
        // Elbow-out: the chosen elbow is farther from the z axis.
        let radial = |e: [f64; 3]| e[0].hypot(e[1]);
        assert!(radial(elbow(&g, 0, chosen)) > radial(elbow(&g, 0, other)));
    }

    #[test]
    fn the_mirrored_elbow_is_the_other_root() {
        let g = geometry();
        for &p in &[[30.0, -40.0, -600.0], [-150.0, 90.0, -750.0]] {
            for arm in 0..3 {
                let roots = arm_roots(&g, arm, p);
                let chosen = inverse_arm(&g, arm, p).expect("reachable");
                let other = other_root(&g, arm, chosen, p).expect("distinct centres");
                assert!(roots.iter().any(|r| (r - other).abs() < 1e-12), "{other} not in {roots:?}");
                assert!((other - chosen).abs() > 1e-6 && chosen.cos() > other.cos());
                let mut theta = inverse(&g, p).expect("reachable");
                assert!(is_elbow_out(&g, theta, p));
                theta[arm] = other;
                assert!(!is_elbow_out(&g, theta, p));
            }
        }
    }

    #[test]
    fn a_nearly_tangent_pair_of_roots_is_not_missed() {
        // On the axis, just inside the stretched-arm height, the two roots
        // are far closer than one sample step.
        let g = geometry();
        let d = g.base_radius - g.platform_radius;
        let z_stretched = -((g.lower_arm + g.upper_arm).powi(2) - d * d).sqrt();
        let p = [0.0, 0.0, z_stretched + 1e-7];
        let roots = arm_roots(&g, 0, p);
        assert!(!roots.is_empty());
        let theta = inverse_arm(&g, 0, p).expect("reachable, barely");
        // Stretched: the elbow lies on the line from the actuator axis
        // (radius base_radius) to the platform joint (radius platform_radius).
        let expected = (-z_stretched).atan2(-d);
        assert!((theta - expected).abs() < 1e-3, "{theta} vs {expected}");
        assert!(inverse_arm(&g, 0, [0.0, 0.0, z_stretched - 1e-3]).is_none());
    }

    #[test]
    fn unreachable_and_non_finite_give_none() {
        let g = geometry();
        assert!(inverse(&g, [0.0, 0.0, -5000.0]).is_none());
        assert!(inverse(&g, [f64::NAN, 0.0, -600.0]).is_none());
        assert!(forward(&g, [0.0, f64::INFINITY, 0.0]).is_none());
    }

    #[test]
    fn finite_difference_jacobian_moves_the_platform_consistently() {
        let g = geometry();
        let theta = [0.3, 0.5, 0.2];
        let j = jacobian_fd(&g, theta, 1e-6).expect("assembles");
        let dt = [1e-4, -2e-4, 1.5e-4];
        let p0 = forward(&g, theta).expect("assembles");
        let p1 = forward(&g, [theta[0] + dt[0], theta[1] + dt[1], theta[2] + dt[2]]).expect("assembles");
        for i in 0..3 {
            let predicted = j[i][0] * dt[0] + j[i][1] * dt[1] + j[i][2] * dt[2];
            // Second-order term: about |p''| |dt|^2, well under 1e-4 mm here.
            assert!((p1[i] - p0[i] - predicted).abs() < 1e-4, "row {i}");
        }
    }
}
