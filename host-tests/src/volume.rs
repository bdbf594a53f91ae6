//! The usable volume: the largest upright cylinder and the largest
//! axis-aligned cube inside the region where every guard passes, and the
//! five ISO 9283 test poses in that cube.
//!
//! "Usable" means the guarded f64 core accepts the point: reachable, inside
//! the joint ranges and passive-joint cones, and above both minimum
//! singularity margins.
//!
//! Method (deterministic, bounded):
//! * Slices: at each of `levels` heights, the guarded region's extent along
//!   `rays` directions from the z axis is found by stepping out and then
//!   bisecting the first exit. The largest disc centred on the axis that
//!   fits a slice has the smallest of those extents as its radius (the
//!   slices of a rotary delta's workspace are star-shaped about the axis;
//!   the cylinder is then re-checked on a dense grid of its own points).
//! * Cylinder: over every run of consecutive levels, radius = the smallest
//!   disc radius in the run, volume = pi r^2 h; the largest wins.
//! * Cube: centred on the z axis (the workspace's axis of symmetry), for
//!   each centre height the half-edge is bisected until a grid of points
//!   on and inside the cube all pass; the largest cube wins.
//! * ISO 9283:1998 (from memory): the test cube has maximal volume in the
//!   most-used region with edges parallel to the base frame; P1 is the
//!   centre of a diagonal plane of the cube, P2 to P5 lie on that plane's
//!   diagonals at 10 % of the diagonal length from its corners. deltakin
//!   uses the diagonal plane through the edges at (-h, -h) and (+h, +h).

use deltakin::{Robot, Solution};
use rayon::prelude::*;
use serde::Serialize;

/// Sampling density for the volume search.
#[derive(Clone, Copy, Debug)]
pub struct VolumeGrid {
    /// Heights sampled between the lowest and highest usable z.
    pub levels: usize,
    /// Directions sampled around the axis at each height.
    pub rays: usize,
    /// Points per cube edge in the fit check.
    pub cube_points: usize,
}

impl Default for VolumeGrid {
    fn default() -> Self {
        Self { levels: 120, rays: 72, cube_points: 9 }
    }
}

/// An upright cylinder on the z axis (mm).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Cylinder {
    /// Radius.
    pub radius_mm: f64,
    /// Bottom face height.
    pub z_min_mm: f64,
    /// Top face height.
    pub z_max_mm: f64,
}

impl Cylinder {
    /// Volume in cubic millimetres.
    #[must_use]
    pub fn volume_mm3(&self) -> f64 {
        std::f64::consts::PI * self.radius_mm * self.radius_mm * (self.z_max_mm - self.z_min_mm)
    }
}

/// An axis-aligned cube centred on the z axis (mm).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Cube {
    /// Centre.
    pub centre_mm: [f64; 3],
    /// Edge length.
    pub edge_mm: f64,
}

/// One ISO 9283 test pose.
#[derive(Clone, Copy, Debug)]
pub struct TestPose {
    /// "P1" .. "P5".
    pub label: &'static str,
    /// The guarded solution at the pose.
    pub solution: Solution<f64>,
}

/// What the volume search found.
#[derive(Clone, Debug)]
pub struct UsableVolume {
    /// The largest cylinder.
    pub cylinder: Cylinder,
    /// The largest cube.
    pub cube: Cube,
    /// P1 .. P5 in the cube; empty only if a pose failed the guards.
    pub poses: Vec<TestPose>,
}

fn usable(robot: &Robot<f64>, p: [f64; 3]) -> bool {
    robot.inverse(p).is_ok()
}

/// Heights (mm) between which the usable region lies, found on the axis
/// and on a coarse cylinder of directions; `None` when nothing is usable.
fn z_span(robot: &Robot<f64>) -> Option<(f64, f64)> {
    let g = robot.geometry();
    let reach = g.upper_arm + g.lower_arm;
    let n = 400;
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for i in 0..=n {
        let z = -(reach * f64::from(i) / f64::from(n)) - 1e-9;
        let r_step = reach / 20.0;
        for k in 0..=20 {
            let r = r_step * f64::from(k);
            for (c, s) in [(1.0, 0.0), (-0.5, 0.866_025_403_784_438_6), (-1.0, 0.0), (0.0, -1.0)] {
                if usable(robot, [r * c, r * s, z]) {
                    lo = lo.min(z);
                    hi = hi.max(z);
                }
            }
        }
    }
    (lo <= hi).then_some((lo, hi))
}

/// Extent of the usable region along a ray from the axis at height `z`:
/// 0 when the axis point itself fails.
fn ray_extent(robot: &Robot<f64>, z: f64, angle: f64, max_r: f64) -> f64 {
    let (s, c) = angle.sin_cos();
    if !usable(robot, [0.0, 0.0, z]) {
        return 0.0;
    }
    let steps = 64;
    let mut inside = 0.0;
    let mut outside = max_r;
    for k in 1..=steps {
        let r = max_r * f64::from(k) / f64::from(steps);
        if usable(robot, [r * c, r * s, z]) {
            inside = r;
        } else {
            outside = r;
            break;
        }
    }
    for _ in 0..40 {
        let mid = 0.5 * (inside + outside);
        if usable(robot, [mid * c, mid * s, z]) {
            inside = mid;
        } else {
            outside = mid;
        }
    }
    inside
}

fn cube_fits(robot: &Robot<f64>, centre: [f64; 3], half: f64, n: usize) -> bool {
    let n = n.max(2);
    let t = |i: usize| -half + 2.0 * half * (i as f64) / ((n - 1) as f64);
    (0..n)
        .all(|i| (0..n).all(|j| (0..n).all(|k| usable(robot, [centre[0] + t(i), centre[1] + t(j), centre[2] + t(k)]))))
}

/// Searches the usable volume of `robot`. `None` when no point is usable.
#[must_use]
pub fn usable_volume(robot: &Robot<f64>, grid: VolumeGrid) -> Option<UsableVolume> {
    let (z_lo, z_hi) = z_span(robot)?;
    let g = robot.geometry();
    let max_r = g.base_radius - g.platform_radius + g.upper_arm + g.lower_arm;
    let levels = grid.levels.max(2);
    let z_at = |i: usize| z_lo + (z_hi - z_lo) * (i as f64) / ((levels - 1) as f64);
    let radii: Vec<f64> = (0..levels)
        .into_par_iter()
        .map(|i| {
            (0..grid.rays)
                .map(|k| ray_extent(robot, z_at(i), std::f64::consts::TAU * (k as f64) / (grid.rays as f64), max_r))
                .fold(f64::INFINITY, f64::min)
        })
        .collect();
    let mut cylinder = Cylinder { radius_mm: 0.0, z_min_mm: z_lo, z_max_mm: z_lo };
    for i in 0..levels {
        let mut r = f64::INFINITY;
        for (j, &radius) in radii.iter().enumerate().skip(i) {
            r = r.min(radius);
            if r <= 0.0 {
                break;
            }
            let c = Cylinder { radius_mm: r, z_min_mm: z_at(i), z_max_mm: z_at(j) };
            if c.volume_mm3() > cylinder.volume_mm3() {
                cylinder = c;
            }
        }
    }
    // Largest cube per centre height (in parallel), then the first largest.
    let halves: Vec<f64> = (0..levels)
        .into_par_iter()
        .map(|i| {
            let centre = [0.0, 0.0, z_at(i)];
            if !usable(robot, centre) {
                return 0.0;
            }
            let (mut inside, mut outside) = (0.0, 0.5 * (z_hi - z_lo) + 1.0);
            for _ in 0..30 {
                let mid = 0.5 * (inside + outside);
                if cube_fits(robot, centre, mid, grid.cube_points) {
                    inside = mid;
                } else {
                    outside = mid;
                }
            }
            inside
        })
        .collect();
    let mut cube = Cube { centre_mm: [0.0, 0.0, z_lo], edge_mm: 0.0 };
    for (i, &half) in halves.iter().enumerate() {
        if 2.0 * half > cube.edge_mm {
            cube = Cube { centre_mm: [0.0, 0.0, z_at(i)], edge_mm: 2.0 * half };
        }
    }
    let poses = iso9283_points(&cube)
        .into_iter()
        .filter_map(|(label, p)| robot.inverse(p).ok().map(|solution| TestPose { label, solution }))
        .collect();
    Some(UsableVolume { cylinder, cube, poses })
}

/// One ISO 9283 pose as the report shows it.
#[derive(Clone, Debug, Serialize)]
pub struct PoseFigures {
    /// "P1" .. "P5".
    pub label: &'static str,
    /// Platform position (mm).
    pub position_mm: [f64; 3],
    /// Joint angles (deg).
    pub joints_deg: [f64; 3],
    /// Serial margin of each arm (1 far from the singularity, 0 at it).
    pub serial_margin: [f64; 3],
    /// Parallel margin.
    pub parallel_margin: f64,
    /// Largest passive-joint tilt from its neutral axis (deg).
    pub max_passive_tilt_deg: f64,
}

/// The usable volume as the report shows it.
#[derive(Clone, Debug, Serialize)]
pub struct VolumeFigures {
    /// The largest upright cylinder on the z axis.
    pub cylinder: Cylinder,
    /// Its volume (mm^3).
    pub cylinder_volume_mm3: f64,
    /// The ISO 9283 test cube.
    pub cube: Cube,
    /// Its volume (mm^3).
    pub cube_volume_mm3: f64,
    /// P1 .. P5 with joint angles and margins.
    pub poses: Vec<PoseFigures>,
    /// Heights sampled, directions per height, points per cube edge.
    pub levels: usize,
    #[allow(missing_docs)]
    pub rays: usize,
    #[allow(missing_docs)]
    pub cube_points: usize,
}

impl VolumeFigures {
    /// The figures of `v`, found with `grid`.
    #[must_use]
    pub fn of(v: &UsableVolume, grid: VolumeGrid) -> Self {
        let poses = v
            .poses
            .iter()
            .map(|p| {
                let s = &p.solution;
                let min_cos = s.margins.passive_tilt_cos.iter().flatten().copied().fold(f64::INFINITY, f64::min);
                PoseFigures {
                    label: p.label,
                    position_mm: s.position,
                    joints_deg: s.joints.map(f64::to_degrees),
                    serial_margin: s.margins.serial,
                    parallel_margin: s.margins.parallel,
                    max_passive_tilt_deg: min_cos.clamp(-1.0, 1.0).acos().to_degrees(),
                }
            })
            .collect();
        Self {
            cylinder: v.cylinder,
            cylinder_volume_mm3: v.cylinder.volume_mm3(),
            cube: v.cube,
            cube_volume_mm3: v.cube.edge_mm.powi(3),
            poses,
            levels: grid.levels,
            rays: grid.rays,
            cube_points: grid.cube_points,
        }
    }
}

/// The five ISO 9283 poses of a cube: P1 at the centre of the diagonal
/// plane through the edges at (-h, -h) and (+h, +h), P2 to P5 on that
/// plane's diagonals at 10 % of the diagonal from its corners.
#[must_use]
pub fn iso9283_points(cube: &Cube) -> [(&'static str, [f64; 3]); 5] {
    let h = 0.5 * cube.edge_mm;
    let [cx, cy, cz] = cube.centre_mm;
    let corner = |sx: f64, sz: f64| [cx + sx * h, cy + sx * h, cz + sz * h];
    let towards = |from: [f64; 3], to: [f64; 3]| {
        [from[0] + 0.1 * (to[0] - from[0]), from[1] + 0.1 * (to[1] - from[1]), from[2] + 0.1 * (to[2] - from[2])]
    };
    let (c1, c2, c3, c4) = (corner(-1.0, -1.0), corner(1.0, -1.0), corner(1.0, 1.0), corner(-1.0, 1.0));
    [
        ("P1", [cx, cy, cz]),
        ("P2", towards(c3, c1)),
        ("P3", towards(c4, c2)),
        ("P4", towards(c1, c3)),
        ("P5", towards(c2, c4)),
    ]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::config::RobotFile;

    #[test]
    fn iso_points_sit_on_the_diagonals_at_ten_percent() {
        let cube = Cube { centre_mm: [0.0, 0.0, -700.0], edge_mm: 200.0 };
        let pts = iso9283_points(&cube);
        assert_eq!(pts[0].1, [0.0, 0.0, -700.0]);
        // Diagonal of the plane: corners (-100,-100,-800) and (100,100,-600).
        let diag = (200.0f64 * 200.0 * 2.0 + 200.0 * 200.0).sqrt();
        for (_, p) in &pts[1..] {
            let from_centre = ((p[0]).powi(2) + (p[1]).powi(2) + (p[2] + 700.0).powi(2)).sqrt();
            // 10 % in from a corner is 40 % of the diagonal from the centre.
            assert!((from_centre - 0.4 * diag).abs() < 1e-9);
            assert!((p[0] - p[1]).abs() < 1e-12, "on the diagonal plane x = y");
        }
    }

    #[test]
    fn demo_robot_volume_is_usable_and_consistent() {
        let robot = RobotFile::demo().robot::<f64>().unwrap();
        let grid = VolumeGrid { levels: 24, rays: 12, cube_points: 5 };
        let v = usable_volume(&robot, grid).unwrap();
        assert!(v.cylinder.radius_mm > 50.0 && v.cylinder.z_max_mm > v.cylinder.z_min_mm);
        assert!(v.cube.edge_mm > 50.0);
        // The cube's inscribed circle cannot be wider than the workspace.
        assert!(0.5 * v.cube.edge_mm < 1000.0);
        assert_eq!(v.poses.len(), 5, "every ISO pose passes the guards");
        // The cylinder's own points pass the guards (spot check on its rim).
        let c = v.cylinder;
        for k in 0..12 {
            let a = std::f64::consts::TAU * f64::from(k) / 12.0;
            let r = 0.99 * c.radius_mm;
            let zm = 0.5 * (c.z_min_mm + c.z_max_mm);
            assert!(robot.inverse([r * a.cos(), r * a.sin(), zm]).is_ok());
        }
    }
}
