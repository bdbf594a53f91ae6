//! The workspace sweeps behind `deltakin report`: which points and joint
//! triples get checked.
//!
//! * **Cartesian sweep (for IK).** A box that must enclose every
//!   reachable platform position is derived from the geometry and the
//!   joint ranges ([`geometry_box`]). A coarse grid over it finds the
//!   accepted volume's extent; a dense grid then covers that extent plus
//!   one coarse cell on every side.
//! * **Joint sweep (for FK).** A grid over the three joint ranges.
//! * **Shells.** Errors and margins are worst at the edge of the accepted
//!   volume, which a grid only grazes. From an accepted point near the
//!   volume's centre, rays in evenly spread directions march outward to
//!   the first rejected point; bisection then locates the guard boundary
//!   and points at a few fixed depths just inside it are added.
//!
//! "Accepted" always means accepted by the guarded f64 core. Every point
//! produced is rounded to the nearest f32 triple, so the f32 and f64 cores
//! see exactly the same input and one reference solution serves both.
//! Everything is deterministic: same robot and density, same points.

use deltakin::{Geometry, Limits, Robot};
use rayon::prelude::*;
use serde::Serialize;

/// An axis-aligned box (mm for positions, rad for joint angles).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Box3 {
    /// Lower corner.
    pub lo: [f64; 3],
    /// Upper corner.
    pub hi: [f64; 3],
}

impl Box3 {
    /// Grid spacing along each axis for `n` points per axis.
    #[must_use]
    pub fn spacing(&self, n: usize) -> [f64; 3] {
        #[allow(clippy::cast_precision_loss)]
        let steps = n.saturating_sub(1).max(1) as f64;
        [0, 1, 2].map(|k| (self.hi[k] - self.lo[k]) / steps)
    }

    /// Length of the diagonal.
    #[must_use]
    pub fn diagonal(&self) -> f64 {
        (0..3).map(|k| (self.hi[k] - self.lo[k]).powi(2)).sum::<f64>().sqrt()
    }
}

/// Rounds each coordinate to the nearest f32 (exactly representable in
/// both precisions afterwards).
#[must_use]
pub fn snap_f32(p: [f64; 3]) -> [f64; 3] {
    #[allow(clippy::cast_possible_truncation)]
    p.map(|v| f64::from(v as f32))
}

/// `n` points per axis (n >= 2), endpoints included, x slowest.
#[must_use]
pub fn grid(b: &Box3, n: usize) -> Vec<[f64; 3]> {
    let n = n.max(2);
    let h = b.spacing(n);
    let mut out = Vec::with_capacity(n * n * n);
    for i in 0..n {
        for j in 0..n {
            for k in 0..n {
                #[allow(clippy::cast_precision_loss)]
                let at = |axis: usize, idx: usize| {
                    if idx + 1 == n { b.hi[axis] } else { b.lo[axis] + h[axis] * idx as f64 }
                };
                out.push(snap_f32([at(0, i), at(1, j), at(2, k)]));
            }
        }
    }
    out
}

/// Smallest and largest `sin(theta)` over `[lo, hi]` (radians, inside
/// `(-pi, pi)`, as the limits guarantee).
fn sin_range(lo: f64, hi: f64) -> (f64, f64) {
    let half_pi = std::f64::consts::FRAC_PI_2;
    let (a, b) = (lo.sin(), hi.sin());
    let min = if lo <= -half_pi && -half_pi <= hi { -1.0 } else { a.min(b) };
    let max = if lo <= half_pi && half_pi <= hi { 1.0 } else { a.max(b) };
    (min, max)
}

/// A box enclosing every platform position the robot can reach with its
/// joints inside their ranges.
///
/// Radially: a platform joint lies within `lower_arm` of its elbow, the
/// elbow within `base_radius + upper_arm` of the z axis, and the platform
/// centre `platform_radius` further in than its joint, so
/// `|(x, y)| <= base_radius - platform_radius + upper_arm + lower_arm`
/// (the absolute value of the first difference, to stay safe for a
/// platform wider than the base). Vertically: the elbow height is
/// `-upper_arm * sin(theta)` over the joint range, and the platform is
/// within `lower_arm` of it.
#[must_use]
pub fn geometry_box(g: &Geometry<f64>, l: &Limits<f64>) -> Box3 {
    let radius = (g.base_radius - g.platform_radius).abs() + g.upper_arm + g.lower_arm;
    let lo_t = l.joint_min.iter().copied().fold(f64::INFINITY, f64::min);
    let hi_t = l.joint_max.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let (s_min, s_max) = sin_range(lo_t, hi_t);
    let elbow_lo = -g.upper_arm * s_max;
    let elbow_hi = -g.upper_arm * s_min;
    Box3 { lo: [-radius, -radius, elbow_lo - g.lower_arm], hi: [radius, radius, elbow_hi + g.lower_arm] }
}

/// The joint-range box (rad).
#[must_use]
pub fn joint_box(l: &Limits<f64>) -> Box3 {
    Box3 { lo: l.joint_min, hi: l.joint_max }
}

/// `m` unit vectors spread evenly over the sphere (Fibonacci lattice:
/// equal-area bands in z, golden-angle steps in azimuth; R. Swinbank and
/// R. J. Purser, "Fibonacci grids", Q. J. Royal Meteorological Society
/// 132, 2006).
#[must_use]
pub fn sphere_directions(m: usize) -> Vec<[f64; 3]> {
    let golden_angle = std::f64::consts::PI * (3.0 - 5f64.sqrt());
    #[allow(clippy::cast_precision_loss)]
    (0..m)
        .map(|i| {
            let z = 1.0 - (2.0 * i as f64 + 1.0) / m as f64;
            let r = (1.0 - z * z).max(0.0).sqrt();
            let phi = golden_angle * i as f64;
            [r * phi.cos(), r * phi.sin(), z]
        })
        .collect()
}

/// How rays find the edge of the accepted set.
#[derive(Clone, Copy, Debug)]
pub struct ShellPlan {
    /// Step of the outward march (smaller than the thinnest feature the
    /// ray should not jump over).
    pub step: f64,
    /// Farthest distance from the centre a ray goes.
    pub reach: f64,
    /// Distances inside the located boundary at which points are taken.
    pub depths: [f64; 3],
}

/// Bisection stops when the bracket is this small relative to `reach`
/// (f64 rounding of the coordinates is about 1e-16 relative).
const BISECTION_REL_WIDTH: f64 = 1e-13;
/// Cap on bisection steps (each halves the bracket).
const BISECTION_MAX_STEPS: usize = 80;

/// Points just inside the boundary of the set `accept` along each ray
/// from `centre` (which must be accepted) in `directions`. A ray that
/// stays accepted up to `plan.reach` contributes nothing.
pub fn shell(
    accept: &(dyn Fn([f64; 3]) -> bool + Sync),
    centre: [f64; 3],
    directions: &[[f64; 3]],
    plan: &ShellPlan,
) -> Vec<[f64; 3]> {
    let along = |d: [f64; 3], t: f64| [centre[0] + t * d[0], centre[1] + t * d[1], centre[2] + t * d[2]];
    let mut out = Vec::with_capacity(directions.len() * plan.depths.len());
    for &d in directions {
        let mut inside = 0.0;
        let mut outside = None;
        let mut t = plan.step;
        while t <= plan.reach {
            if accept(along(d, t)) {
                inside = t;
            } else {
                outside = Some(t);
                break;
            }
            t += plan.step;
        }
        let Some(mut outside) = outside else { continue };
        for _ in 0..BISECTION_MAX_STEPS {
            if outside - inside <= BISECTION_REL_WIDTH * plan.reach {
                break;
            }
            let mid = 0.5 * (inside + outside);
            if accept(along(d, mid)) {
                inside = mid;
            } else {
                outside = mid;
            }
        }
        for depth in plan.depths {
            if inside - depth > 0.0 {
                out.push(snap_f32(along(d, inside - depth)));
            }
        }
    }
    out
}

/// The accepted point nearest the centroid of `accepted`, the start of
/// every shell ray.
#[must_use]
pub fn central_point(accepted: &[[f64; 3]]) -> Option<[f64; 3]> {
    if accepted.is_empty() {
        return None;
    }
    #[allow(clippy::cast_precision_loss)]
    let n = accepted.len() as f64;
    let c = [0, 1, 2].map(|k| accepted.iter().map(|p| p[k]).sum::<f64>() / n);
    let d2 = |p: &[f64; 3]| (0..3).map(|k| (p[k] - c[k]).powi(2)).sum::<f64>();
    accepted.iter().copied().min_by(|a, b| d2(a).total_cmp(&d2(b)))
}

/// Bounding box of `points`, grown by `pad` on each axis and clipped to
/// `within`.
fn padded_bounds(points: &[[f64; 3]], pad: [f64; 3], within: &Box3) -> Option<Box3> {
    let first = points.first()?;
    let (mut lo, mut hi) = (*first, *first);
    for p in points {
        for k in 0..3 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    }
    Some(Box3 {
        lo: [0, 1, 2].map(|k| (lo[k] - pad[k]).max(within.lo[k])),
        hi: [0, 1, 2].map(|k| (hi[k] + pad[k]).min(within.hi[k])),
    })
}

/// One sweep's point sets.
#[derive(Clone, Debug)]
pub struct PointSet {
    /// The box the dense grid covers.
    pub grid_box: Box3,
    /// Grid points per axis.
    pub grid_n: usize,
    /// Dense grid points (accepted or not).
    pub grid: Vec<[f64; 3]>,
    /// Where the shell rays start.
    pub centre: Option<[f64; 3]>,
    /// Number of shell rays.
    pub rays: usize,
    /// Shell points (most accepted; a few may fall just outside after
    /// rounding to f32).
    pub shell: Vec<[f64; 3]>,
}

/// Density of one sweep.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Density {
    /// Dense grid points per axis (>= 2).
    pub grid: usize,
}

impl Density {
    /// Points per axis of the coarse pass that finds the accepted extent.
    #[must_use]
    pub fn coarse(self) -> usize {
        (self.grid / 2).max(12)
    }

    /// Shell rays: as many as the points of one grid layer, so the shell
    /// is about as finely spread as the grid.
    #[must_use]
    pub fn rays(self) -> usize {
        (self.grid * self.grid).max(16)
    }
}

/// Runs `f` over `items` on all available cores (rayon), results in
/// input order.
pub fn par_map<T: Sync, R: Send>(items: &[T], f: &(dyn Fn(&T) -> R + Sync)) -> Vec<R> {
    items.par_iter().map(f).collect()
}

/// [`par_map`] that advances `bar` by one per item.
pub fn par_map_progress<T: Sync, R: Send>(
    items: &[T],
    f: &(dyn Fn(&T) -> R + Sync),
    bar: &indicatif::ProgressBar,
) -> Vec<R> {
    let out = items
        .par_iter()
        .map(|x| {
            let r = f(x);
            bar.inc(1);
            r
        })
        .collect();
    bar.finish_and_clear();
    out
}

fn accepted_of(points: &[[f64; 3]], accept: &(dyn Fn([f64; 3]) -> bool + Sync)) -> Vec<[f64; 3]> {
    let keep = par_map(points, &|p| accept(*p));
    points.iter().zip(keep).filter_map(|(p, k)| k.then_some(*p)).collect()
}

/// Distances inside the IK boundary at which shell points are taken (mm).
pub const CARTESIAN_SHELL_DEPTHS_MM: [f64; 3] = [0.0, 1e-3, 0.1];
/// Distances inside the FK boundary at which shell points are taken (rad).
pub const JOINT_SHELL_DEPTHS_RAD: [f64; 3] = [0.0, 1e-6, 1e-4];

/// The Cartesian sweep for IK.
#[must_use]
pub fn cartesian(robot: &Robot<f64>, density: Density) -> PointSet {
    let accept = |p: [f64; 3]| robot.inverse(p).is_ok();
    let outer = geometry_box(robot.geometry(), robot.limits());
    let coarse_n = density.coarse();
    let coarse = accepted_of(&grid(&outer, coarse_n), &accept);
    let grid_box = padded_bounds(&coarse, outer.spacing(coarse_n), &outer).unwrap_or(outer);
    let dense = grid(&grid_box, density.grid);
    let accepted = accepted_of(&dense, &accept);
    let centre = central_point(&accepted);
    with_shell(&accept, density, grid_box, dense, centre, outer.diagonal(), CARTESIAN_SHELL_DEPTHS_MM)
}

/// The joint sweep for FK.
#[must_use]
pub fn joint(robot: &Robot<f64>, density: Density) -> PointSet {
    let accept = |t: [f64; 3]| robot.forward(t).is_ok();
    let grid_box = joint_box(robot.limits());
    let dense = grid(&grid_box, density.grid);
    let accepted = accepted_of(&dense, &accept);
    let mid = snap_f32([0, 1, 2].map(|k| 0.5 * (grid_box.lo[k] + grid_box.hi[k])));
    let centre = if accept(mid) { Some(mid) } else { central_point(&accepted) };
    with_shell(&accept, density, grid_box, dense, centre, grid_box.diagonal(), JOINT_SHELL_DEPTHS_RAD)
}

/// Completes a point set: the boundary shell from rays out of `centre`
/// (half a grid cell per step, out to `reach`, points at `depths` inside
/// the boundary), beside the dense grid.
fn with_shell(
    accept: &(dyn Fn([f64; 3]) -> bool + Sync),
    density: Density,
    grid_box: Box3,
    dense: Vec<[f64; 3]>,
    centre: Option<[f64; 3]>,
    reach: f64,
    depths: [f64; 3],
) -> PointSet {
    let h = grid_box.spacing(density.grid);
    let plan = ShellPlan { step: 0.5 * h.iter().copied().fold(f64::INFINITY, f64::min), reach, depths };
    let rays = density.rays();
    let shell = centre.map_or_else(Vec::new, |c| shell_parallel(accept, c, &sphere_directions(rays), &plan));
    PointSet { grid_box, grid_n: density.grid, grid: dense, centre, rays, shell }
}

/// [`shell`] with the rays split over the cores; output in ray order.
fn shell_parallel(
    accept: &(dyn Fn([f64; 3]) -> bool + Sync),
    centre: [f64; 3],
    directions: &[[f64; 3]],
    plan: &ShellPlan,
) -> Vec<[f64; 3]> {
    par_map(directions, &|d| shell(accept, centre, std::slice::from_ref(d), plan)).into_iter().flatten().collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn grid_has_n_cubed_points_with_exact_corners() {
        let b = Box3 { lo: [-1.0, 0.0, 2.0], hi: [1.0, 3.0, 5.0] };
        let g = grid(&b, 4);
        assert_eq!(g.len(), 64);
        assert_eq!(g.first(), Some(&b.lo));
        assert_eq!(g.last(), Some(&b.hi));
    }

    #[test]
    fn directions_are_unit_and_balanced() {
        let d = sphere_directions(500);
        const UNIT_TOL: f64 = 1e-12;
        // A balanced set has a mean direction near zero; 1/m is generous.
        const MEAN_TOL: f64 = 1.0 / 500.0;
        let mut mean = [0.0; 3];
        for v in &d {
            let n = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
            assert!((n - 1.0).abs() < UNIT_TOL);
            for k in 0..3 {
                mean[k] += v[k] / 500.0;
            }
        }
        assert!(mean.iter().all(|m| m.abs() < MEAN_TOL), "{mean:?}");
    }

    #[test]
    fn shell_finds_a_sphere_boundary() {
        // Unit ball: every shell point at depth 0 lies within the bisection
        // width (plus f32 rounding) of radius 1.
        let accept = |p: [f64; 3]| p[0] * p[0] + p[1] * p[1] + p[2] * p[2] <= 1.0;
        let plan = ShellPlan { step: 0.1, reach: 3.0, depths: [0.0, 0.01, 0.1] };
        let pts = shell(&accept, [0.0; 3], &sphere_directions(50), &plan);
        assert_eq!(pts.len(), 150);
        const F32_ROUNDING: f64 = 1e-7;
        for (i, p) in pts.iter().enumerate() {
            let r = (p[0] * p[0] + p[1] * p[1] + p[2] * p[2]).sqrt();
            let want = 1.0 - plan.depths[i % 3];
            assert!((r - want).abs() < F32_ROUNDING, "{r} vs {want}");
        }
    }

    #[test]
    fn geometry_box_encloses_the_extreme_poses() {
        let g = Geometry { base_radius: 160.0, platform_radius: 40.0, upper_arm: 280.0, lower_arm: 720.0 };
        let l = Limits {
            joint_min: [-0.6; 3],
            joint_max: [1.5; 3],
            passive_cone: 0.7,
            min_serial_margin: 0.1,
            min_parallel_margin: 0.1,
        };
        let b = geometry_box(&g, &l);
        assert_eq!(b.hi[0], 120.0 + 1000.0);
        // sin is largest at 1.5 rad (inside the range, below pi/2).
        assert!((b.lo[2] - (-280.0 * 1.5f64.sin() - 720.0)).abs() < 1e-9);
        assert!((b.hi[2] - (280.0 * 0.6f64.sin() + 720.0)).abs() < 1e-9);
    }

    #[test]
    fn every_reachable_position_lies_in_the_geometry_box() {
        // FK over the whole joint box (unguarded: any assembly counts)
        // must land inside the box derived from the geometry.
        let robot = crate::config::RobotFile::demo().robot::<f64>().unwrap();
        let b = geometry_box(robot.geometry(), robot.limits());
        let mut reached = 0;
        for t in grid(&joint_box(robot.limits()), 15) {
            let Ok(s) = robot.forward_unguarded(t) else { continue };
            reached += 1;
            let p = s.position;
            assert!((0..3).all(|k| b.lo[k] <= p[k] && p[k] <= b.hi[k]), "{t:?} -> {p:?} outside {b:?}");
            assert!(p[0].hypot(p[1]) <= b.hi[0], "{p:?}");
        }
        assert!(reached > 1000, "only {reached} joint triples assemble");
    }

    #[test]
    fn demo_sweeps_stay_in_their_boxes_and_find_a_shell() {
        let robot = crate::config::RobotFile::demo().robot::<f64>().unwrap();
        let outer = geometry_box(robot.geometry(), robot.limits());
        let set = cartesian(&robot, Density { grid: 8 });
        assert_eq!(set.grid.len(), 512);
        assert_eq!(set.shell.len() % 3, 0);
        // Most rays end on a boundary inside the box; a few shell points
        // may fall out after rounding to f32, but not most.
        assert!(set.shell.len() >= 3 * set.rays / 2, "{} shell points", set.shell.len());
        let inside = set.shell.iter().filter(|p| robot.inverse(**p).is_ok()).count();
        assert!(2 * inside > set.shell.len());
        for p in set.grid.iter().chain(&set.shell) {
            assert!((0..3).all(|k| outer.lo[k] <= p[k] && p[k] <= outer.hi[k]), "{p:?}");
        }
        let joints = joint(&robot, Density { grid: 8 });
        let jb = joint_box(robot.limits());
        for t in joints.grid.iter().chain(&joints.shell) {
            // f32 rounding may step a corner value out by half an ulp.
            const F32_HALF_ULP_RAD: f64 = 1e-7;
            assert!((0..3).all(|k| jb.lo[k] - F32_HALF_ULP_RAD <= t[k] && t[k] <= jb.hi[k] + F32_HALF_ULP_RAD));
        }
        assert!(!joints.shell.is_empty());
    }

    #[test]
    fn par_map_keeps_order() {
        let v: Vec<u32> = (0..1001).collect();
        assert_eq!(par_map(&v, &|x| x * 2), v.iter().map(|x| x * 2).collect::<Vec<_>>());
    }
}
