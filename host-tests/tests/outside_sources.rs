//! Checks of deltakin against sources outside deltakin: a published worked
//! example, closed-form geometry, and facts of the trade. Each check names
//! its source.

use deltakin::{Error, Geometry, Limits, Robot};
use deltakin_harness::reference;

/// The paper's values have three significant figures (one decimal of a
/// degree), so they are good to half a unit of the last digit.
const PAPER_TOL_DEG: f64 = 0.05;

/// Limits wide enough never to matter here (the checks use the unguarded
/// solvers); the neutral pose at 0.75 rad assembles on every machine below.
fn open_limits<S: deltakin::Real>() -> Limits<S> {
    let f = |v: f64| S::from_f64(v).expect("small constant");
    Limits {
        joint_min: [f(-1.5); 3],
        joint_max: [f(3.0); 3],
        passive_cone: f(1.5),
        min_serial_margin: f(0.0),
        min_parallel_margin: f(0.0),
    }
}

/// The worked example of R. L. Williams II, "The Delta Parallel Robot:
/// Kinematics Solutions", Ohio University, 2016: base side 567 mm, platform
/// side 76 mm, upper arm 524 mm, lower arm 1244 mm.
///
/// Mapping onto deltakin: the paper gives the side lengths of the base and
/// platform triangles. The actuator axes lie on the base triangle's sides,
/// so `base_radius` is the inradius `side * sqrt(3) / 6`; the platform
/// joints sit at the platform triangle's corners, so `platform_radius` is
/// the circumradius `side * sqrt(3) / 3`.
fn williams_geometry() -> Geometry<f64> {
    let s3 = 3.0_f64.sqrt();
    Geometry { base_radius: 567.0 * s3 / 6.0, platform_radius: 76.0 * s3 / 3.0, upper_arm: 524.0, lower_arm: 1244.0 }
}

/// The paper's frame has its arms at azimuths -90, 30 and 150 deg, ours at
/// 0, 120 and 240 deg: turning the paper's points by +90 deg about z puts
/// its first arm on our arm 0, its second on our arm 1 and its third on our
/// arm 2. Its joint angles are positive downward from the horizontal, as
/// ours are, so angles carry over unchanged.
fn from_paper_frame(p: [f64; 3]) -> [f64; 3] {
    [-p[1], p[0], p[2]]
}

/// Williams (2016), inverse-kinematics examples. The expected angles are
/// from memory and were confirmed to three significant figures by an
/// independent computation before being written here.
const WILLIAMS_IK: [([f64; 3], [f64; 3]); 2] =
    [([0.0, 0.0, -900.0], [-20.5, -20.5, -20.5]), ([300.0, 500.0, -1100.0], [47.5, -11.6, 21.4])];

#[test]
fn williams_2016_worked_example_inverse_kinematics() {
    let g = williams_geometry();
    let r64 = Robot::new(g, open_limits()).expect("valid machine");
    #[allow(clippy::cast_possible_truncation)]
    let g32: Geometry<f32> = Geometry {
        base_radius: g.base_radius as f32,
        platform_radius: g.platform_radius as f32,
        upper_arm: g.upper_arm as f32,
        lower_arm: g.lower_arm as f32,
    };
    let r32 = Robot::new(g32, open_limits()).expect("valid machine");
    for (paper_point, paper_deg) in WILLIAMS_IK {
        let p = from_paper_frame(paper_point);
        #[allow(clippy::cast_possible_truncation)]
        let p32 = p.map(|v| v as f32);
        let core64 = r64.inverse_unguarded(p).expect("reachable").joints;
        let core32 = r32.inverse_unguarded(p32).expect("reachable").joints.map(f64::from);
        let oracle = reference::inverse(&g, p).expect("reachable");
        for (who, got) in [("f64 core", core64), ("f32 core", core32), ("reference", oracle)] {
            for arm in 0..3 {
                let deg = got[arm].to_degrees();
                assert!(
                    (deg - paper_deg[arm]).abs() <= PAPER_TOL_DEG,
                    "{who}, point {paper_point:?}, arm {arm}: {deg} deg, paper {} deg",
                    paper_deg[arm]
                );
            }
        }
    }
}

/// The serial margin the conventions define (the cosine of the angle
/// between the lower arm and the elbow's direction of travel) for a
/// platform on the vertical axis, from the triangle formed by the actuator
/// axis, the elbow and the platform joint: with `D` the distance from the
/// actuator axis to the platform joint, the law of cosines gives the angle
/// `gamma` at the elbow, `cos gamma = (a^2 + l^2 - D^2) / (2 a l)`, and the
/// elbow travels square to the upper arm, so the margin is `sin gamma`.
/// (Law of cosines: any trigonometry text; Euclid, Elements II.12-13.)
fn on_axis_margin(g: &Geometry<f64>, z: f64) -> f64 {
    let (a, l) = (g.upper_arm, g.lower_arm);
    let d = g.base_radius - g.platform_radius;
    let cos_gamma = (a * a + l * l - (d * d + z * z)) / (2.0 * a * l);
    (1.0 - cos_gamma * cos_gamma).max(0.0).sqrt()
}

/// Agreement between the core's serial margin and the triangle's (plain
/// number). Both lose accuracy as the margin m shrinks (rounding of about
/// eps / m, the closed form through `1 - cos^2`). Measured worst here:
/// 1.5e-12, 1e-6 mm from the stretched height; 13x headroom.
const ON_AXIS_MARGIN_TOL: f64 = 2e-11;

/// Distances (mm) inside the reachable side of each singular height.
const APPROACH_MM: [f64; 5] = [10.0, 1.0, 1e-2, 1e-4, 1e-6];

/// Closed-form geometry: on the vertical axis an arm is fully stretched
/// (actuator axis, elbow and platform joint in line, `D = l + a`) or fully
/// folded (`D = l - a`) exactly at `z = -sqrt((l +- a)^2 - (base_radius -
/// platform_radius)^2)`, a serial (Type I) singularity in the sense of
/// C. Gosselin and J. Angeles, IEEE Trans. Robotics and Automation 6(3),
/// 1990. The core's serial margin must follow the triangle's closed form
/// and fall to zero there; past those heights the arm cannot reach.
#[test]
fn serial_margin_vanishes_where_the_arms_stretch_or_fold_on_the_axis() {
    let g = williams_geometry();
    let robot = Robot::new(g, open_limits()).expect("valid machine");
    let d = g.base_radius - g.platform_radius;
    let stretched = -((g.lower_arm + g.upper_arm).powi(2) - d * d).sqrt();
    let folded = -((g.lower_arm - g.upper_arm).powi(2) - d * d).sqrt();
    // Reachable heights on the axis lie between the two: above `stretched`
    // and below `folded`.
    for (singular, inward) in [(stretched, 1.0), (folded, -1.0)] {
        let mut previous = f64::INFINITY;
        for delta in APPROACH_MM {
            let z = singular + inward * delta;
            let sol = robot.inverse_unguarded([0.0, 0.0, z]).expect("reachable on the axis");
            let expected = on_axis_margin(&g, z);
            for (arm, &m) in sol.margins.serial.iter().enumerate() {
                assert!(
                    (m - expected).abs() <= ON_AXIS_MARGIN_TOL,
                    "z {z}, arm {arm}: margin {m}, triangle {expected}"
                );
            }
            // Falls towards zero as z approaches the singular height ...
            assert!(expected < previous);
            previous = expected;
        }
        // ... where, 1e-6 mm away, it is about sqrt(2 D 1e-6 / (a l)) with
        // D = l +- a: 7.4e-5 stretched, 4.7e-5 folded on this machine.
        assert!(previous < 2e-4 && previous > 1e-5, "margin {previous} 1e-6 mm from z = {singular}");
        // Past the singular height the arm cannot close the loop.
        let beyond = robot.inverse_unguarded([0.0, 0.0, singular - inward * 1e-3]);
        assert!(matches!(beyond, Err(Error::Unreachable { .. })), "{beyond:?}");
    }
}

/// Rotation by +120 deg about z.
fn rotate120(p: [f64; 3]) -> [f64; 3] {
    let (c, s) = (-0.5, 0.75_f64.sqrt());
    [c * p[0] - s * p[1], s * p[0] + c * p[1], p[2]]
}

/// Agreement of the cycled angles (rad): rounding of the rotation only.
const SYMMETRY_TOL_RAD: f64 = 1e-12;

/// Common practice: the three arms of a rotary delta are identical and
///120 deg apart, so turning the target by 120 deg about the vertical axis
/// hands each arm's angle to the next arm. Checked on the Williams machine
/// over a grid of its workspace, with the core and with the reference.
#[test]
fn the_three_arms_are_120_degrees_apart() {
    let g = williams_geometry();
    let robot = Robot::new(g, open_limits()).expect("valid machine");
    let mut checked = 0;
    for x in [-400.0, -150.0, 0.0, 250.0] {
        for y in [-300.0, 0.0, 350.0] {
            for z in [-1000.0, -1300.0] {
                let p = [x, y, z];
                let Ok(a) = robot.inverse_unguarded(p) else { continue };
                let b = robot.inverse_unguarded(rotate120(p)).expect("the turned target is reachable too");
                let (ra, rb) = (reference::inverse(&g, p).expect("reachable"), reference::inverse(&g, rotate120(p)));
                let rb = rb.expect("reachable");
                for i in 0..3 {
                    assert!((a.joints[i] - b.joints[(i + 1) % 3]).abs() <= SYMMETRY_TOL_RAD, "{p:?}, arm {i}");
                    assert!((ra[i] - rb[(i + 1) % 3]).abs() <= SYMMETRY_TOL_RAD, "reference, {p:?}, arm {i}");
                }
                checked += 1;
            }
        }
    }
    assert!(checked >= 20, "only {checked} grid points reachable");
}

/// Grid cells per side of the volume estimate.
const VOLUME_GRID: usize = 36;

/// Volume (mm^3) of the reachable set below the base plane (where the
/// conventions put the working volume), estimated by counting cell
/// centres of a grid over the box `|x|, |y| <= h`, `-2h <= z <= 0`, with
/// `h = lower_arm + upper_arm`, where the unguarded core finds a solution
/// (no joint or passive-joint limits).
fn reachable_volume(g: Geometry<f64>) -> f64 {
    let robot = Robot::new(g, open_limits()).expect("valid machine");
    let half = g.lower_arm + g.upper_arm;
    let step = 2.0 * half / VOLUME_GRID as f64;
    let at = |k: usize| -half + step * (k as f64 + 0.5);
    let mut inside = 0_u32;
    for i in 0..VOLUME_GRID {
        for j in 0..VOLUME_GRID {
            for k in 0..VOLUME_GRID {
                if robot.inverse_unguarded([at(i), at(j), at(k) - half]).is_ok() {
                    inside += 1;
                }
            }
        }
    }
    f64::from(inside) * step.powi(3)
}

/// Common practice (design rule of rotary deltas): with the arms fixed, a
/// larger offset `base_radius - platform_radius` pulls the three reachable
/// sets apart and shrinks the volume they share, which is why designers
/// keep the platform radius close to the base radius.
#[test]
fn a_larger_base_minus_platform_offset_shrinks_the_reachable_volume() {
    let volumes: Vec<f64> = [0.0, 100.0, 200.0, 300.0, 400.0]
        .iter()
        .map(|&d| {
            reachable_volume(Geometry {
                base_radius: 40.0 + d,
                platform_radius: 40.0,
                upper_arm: 400.0,
                lower_arm: 1000.0,
            })
        })
        .collect();
    for w in volumes.windows(2) {
        assert!(w[1] < w[0], "{volumes:?}");
    }
    // And not by a rounding: the widest offset loses more than a third.
    assert!(volumes[4] < 0.67 * volumes[0], "{volumes:?}");
}

/// Common practice: with the upper arm and the offset fixed, a longer
/// lower arm (a larger lower/upper ratio) gives a larger reachable volume.
#[test]
fn a_larger_lower_to_upper_ratio_enlarges_the_reachable_volume() {
    let volumes: Vec<f64> = [1.5, 2.0, 2.5, 3.0, 3.5]
        .iter()
        .map(|&ratio| {
            reachable_volume(Geometry {
                base_radius: 240.0,
                platform_radius: 40.0,
                upper_arm: 400.0,
                lower_arm: 400.0 * ratio,
            })
        })
        .collect();
    for w in volumes.windows(2) {
        assert!(w[1] > w[0], "{volumes:?}");
    }
}
