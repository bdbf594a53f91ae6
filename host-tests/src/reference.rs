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
//! Cost: thousands of trigonometric evaluations per call. This is a test
//! oracle, not a solver.

use deltakin::Geometry;

/// Samples of the whole circle in the inverse-kinematics root search
/// (step 2 pi / 4096 = 1.5 mrad).
pub const IK_SAMPLES: usize = 4096;

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

/// Azimuth (rad) of arm `i`.
fn azimuth(arm: usize) -> f64 {
    (120.0 * arm as f64).to_radians()
}

/// Rotates `v` by `angle` (rad) about z.
fn rotate_z(angle: f64, v: [f64; 3]) -> [f64; 3] {
    let (s, c) = angle.sin_cos();
    [c * v[0] - s * v[1], s * v[0] + c * v[1], v[2]]
}

fn distance(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

/// Elbow position (mm, base frame) of arm `arm` at joint angle `theta`
/// (rad), straight from the conventions.
#[must_use]
pub fn elbow(g: &Geometry<f64>, arm: usize, theta: f64) -> [f64; 3] {
    let local = [g.base_radius + g.upper_arm * theta.cos(), 0.0, -g.upper_arm * theta.sin()];
    rotate_z(azimuth(arm), local)
}

/// Position (mm, base frame) of arm `arm`'s platform joint when the
/// platform centre is at `p` (mm).
#[must_use]
pub fn platform_joint(g: &Geometry<f64>, arm: usize, p: [f64; 3]) -> [f64; 3] {
    let r = rotate_z(azimuth(arm), [g.platform_radius, 0.0, 0.0]);
    [p[0] + r[0], p[1] + r[1], p[2] + r[2]]
}

/// Length of each lower arm (mm), elbow to platform joint, for joint
/// angles `theta` (rad) and platform centre `p` (mm). A consistent pose
/// gives `lower_arm` three times.
#[must_use]
pub fn rod_lengths(g: &Geometry<f64>, theta: [f64; 3], p: [f64; 3]) -> [f64; 3] {
    [0, 1, 2].map(|i| distance(elbow(g, i, theta[i]), platform_joint(g, i, p)))
}

/// Largest closure error `| |E_i - P_i| - lower_arm |` (mm) over the arms.
#[must_use]
pub fn closure_error(g: &Geometry<f64>, theta: [f64; 3], p: [f64; 3]) -> f64 {
    rod_lengths(g, theta, p).iter().map(|l| (l - g.lower_arm).abs()).fold(0.0, f64::max)
}

fn closes(g: &Geometry<f64>, theta: [f64; 3], p: [f64; 3]) -> bool {
    closure_error(g, theta, p) <= RESIDUAL_REL_TOL * g.lower_arm
}

/// The closure residual of one arm, `|E_i(t) - P_i|^2 - lower_arm^2` (mm^2).
fn residual(g: &Geometry<f64>, arm: usize, t: f64, joint: [f64; 3]) -> f64 {
    let e = elbow(g, arm, t);
    let d2 = (e[0] - joint[0]).powi(2) + (e[1] - joint[1]).powi(2) + (e[2] - joint[2]).powi(2);
    d2 - g.lower_arm * g.lower_arm
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
pub fn arm_roots(g: &Geometry<f64>, arm: usize, p: [f64; 3]) -> Vec<f64> {
    let joint = platform_joint(g, arm, p);
    let f = |t: f64| residual(g, arm, t, joint);
    let step = 2.0 * std::f64::consts::PI / IK_SAMPLES as f64;
    let ts: Vec<f64> = (0..=IK_SAMPLES).map(|k| -std::f64::consts::PI + step * k as f64).collect();
    let fs: Vec<f64> = ts.iter().map(|&t| f(t)).collect();
    // Rounding scale of the residual: squares of lengths of order |E| + |P| + l.
    let scale = g.base_radius + g.upper_arm + g.lower_arm + joint.iter().map(|v| v.abs()).sum::<f64>();
    let touch_tol = 64.0 * f64::EPSILON * scale * scale;
    let mut roots = Vec::new();
    for k in 0..IK_SAMPLES {
        let (t0, t1, f0, f1) = (ts[k], ts[k + 1], fs[k], fs[k + 1]);
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

/// Elbow-out joint angle (rad) of one arm for platform centre `p` (mm),
/// or `None` when the arm cannot reach it.
#[must_use]
pub fn inverse_arm(g: &Geometry<f64>, arm: usize, p: [f64; 3]) -> Option<f64> {
    let roots = arm_roots(g, arm, p);
    let best = roots.into_iter().fold(None, |best: Option<f64>, t| match best {
        Some(b) if b.cos() >= t.cos() => Some(b),
        _ => Some(t),
    })?;
    let closure = (distance(elbow(g, arm, best), platform_joint(g, arm, p)) - g.lower_arm).abs();
    (closure <= RESIDUAL_REL_TOL * g.lower_arm).then_some(best)
}

/// Elbow-out joint angles (rad) for platform centre `p` (mm), or `None`.
#[must_use]
pub fn inverse(g: &Geometry<f64>, p: [f64; 3]) -> Option<[f64; 3]> {
    if !p.iter().all(|v| v.is_finite()) {
        return None;
    }
    Some([inverse_arm(g, 0, p)?, inverse_arm(g, 1, p)?, inverse_arm(g, 2, p)?])
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
        for row in col + 1..3 {
            let k = m[row][col] / m[col][col];
            for c in col..3 {
                m[row][c] -= k * m[col][c];
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
fn newton(g: &Geometry<f64>, elbows: [[f64; 3]; 3], start: [f64; 3]) -> Option<[f64; 3]> {
    let l2 = g.lower_arm * g.lower_arm;
    let eval = |p: [f64; 3]| -> ([f64; 3], [[f64; 3]; 3]) {
        let mut f = [0.0; 3];
        let mut jac = [[0.0; 3]; 3];
        for i in 0..3 {
            let pj = platform_joint(g, i, p);
            let s = [pj[0] - elbows[i][0], pj[1] - elbows[i][1], pj[2] - elbows[i][2]];
            f[i] = s[0] * s[0] + s[1] * s[1] + s[2] * s[2] - l2;
            jac[i] = [2.0 * s[0], 2.0 * s[1], 2.0 * s[2]];
        }
        (f, jac)
    };
    let merit = |f: [f64; 3]| f[0] * f[0] + f[1] * f[1] + f[2] * f[2];
    let mut p = start;
    let (mut f, mut jac) = eval(p);
    let step_tol = 1e-13 * g.lower_arm;
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
pub fn forward(g: &Geometry<f64>, theta: [f64; 3]) -> Option<[f64; 3]> {
    if !theta.iter().all(|v| v.is_finite()) {
        return None;
    }
    let elbows = [0, 1, 2].map(|i| elbow(g, i, theta[i]));
    let centre = [0, 1].map(|k| elbows.iter().map(|e| e[k]).sum::<f64>() / 3.0);
    let lowest = elbows.iter().map(|e| e[2]).fold(f64::INFINITY, f64::min);
    let highest = elbows.iter().map(|e| e[2]).fold(f64::NEG_INFINITY, f64::max);
    let starts = [[centre[0], centre[1], lowest - g.lower_arm], [centre[0], centre[1], highest + g.lower_arm]];
    starts
        .iter()
        .filter_map(|&s| newton(g, elbows, s))
        .filter(|&p| closes(g, theta, p))
        .min_by(|a, b| a[2].total_cmp(&b[2]))
}

/// Central finite-difference Jacobian `dp/dtheta` (mm/rad, rows x, y, z)
/// of the reference forward kinematics at `theta`, with step `h` (rad).
#[must_use]
pub fn jacobian_fd(g: &Geometry<f64>, theta: [f64; 3], h: f64) -> Option<[[f64; 3]; 3]> {
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
