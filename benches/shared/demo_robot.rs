//! The demo robot and the benchmark points, for the benches.
//!
//! The numbers are a copy of `examples/demo_robot.toml`: the root package
//! cannot depend on the harness that parses that file. The host test
//! `host-tests/tests/bench_demo_robot.rs` includes this file and checks
//! the copy against the file, and that every point passes the guards, so
//! neither can drift.
//!
//! Used as `#[path = "shared/demo_robot.rs"] mod demo_robot;` (a file in a
//! subfolder of `benches/` is not a bench target of its own).

use deltakin::{Arith, Geometry, Limits, Real, Robot};

/// `[geometry]` of `examples/demo_robot.toml`, millimetres.
pub const BASE_RADIUS_MM: f64 = 160.0;
pub const PLATFORM_RADIUS_MM: f64 = 40.0;
pub const UPPER_ARM_MM: f64 = 280.0;
pub const LOWER_ARM_MM: f64 = 720.0;

/// `[limits]` of `examples/demo_robot.toml` (one value for all arms).
pub const JOINT_MIN_DEG: f64 = -35.0;
pub const JOINT_MAX_DEG: f64 = 85.0;
pub const PASSIVE_CONE_DEG: f64 = 40.0;
pub const MIN_SERIAL_MARGIN: f64 = 0.1;
pub const MIN_PARALLEL_MARGIN: f64 = 0.1;

/// Converts as the harness does: degrees to radians in f64, then rounds
/// to `S`.
fn to<S: Arith>(v: f64) -> S {
    S::from_f64(v).expect("demo robot numbers are representable")
}

/// The demo robot in scalar type `S`.
pub fn robot<S: Real>() -> Robot<S> {
    let geometry = Geometry {
        base_radius: to(BASE_RADIUS_MM),
        platform_radius: to(PLATFORM_RADIUS_MM),
        upper_arm: to(UPPER_ARM_MM),
        lower_arm: to(LOWER_ARM_MM),
    };
    let limits = Limits {
        joint_min: [to(JOINT_MIN_DEG.to_radians()); 3],
        joint_max: [to(JOINT_MAX_DEG.to_radians()); 3],
        passive_cone: to(PASSIVE_CONE_DEG.to_radians()),
        min_serial_margin: to(MIN_SERIAL_MARGIN),
        min_parallel_margin: to(MIN_PARALLEL_MARGIN),
    };
    Robot::new(geometry, limits).expect("the demo robot is valid")
}

/// Where the points lie: four heights through the guarded workspace
/// (which spans z from about -560 mm to -880 mm), and at each an inner and
/// an outer ring radius (mm). The outer ring sits at about 85 % of the
/// largest radius the guards accept at every azimuth at that height.
pub const LAYERS: [(f64, f64, f64); 4] =
    [(-600.0, 200.0, 380.0), (-675.0, 180.0, 360.0), (-750.0, 160.0, 300.0), (-825.0, 100.0, 200.0)];

/// Points per ring.
pub const RING_POINTS: usize = 6;

/// The benchmark points (mm, base frame): per layer the centre, six points
/// on the inner ring at azimuths 0, 60, ..., 300 deg and six on the outer
/// ring turned by 30 deg, so the outer points fall between the arms and
/// in line with them in turn. 52 points.
pub fn points() -> Vec<[f64; 3]> {
    let mut out = Vec::new();
    for &(z, inner, outer) in &LAYERS {
        out.push([0.0, 0.0, z]);
        for (radius, offset_deg) in [(inner, 0.0), (outer, 30.0)] {
            for k in 0..RING_POINTS {
                let az = (offset_deg + 60.0 * k as f64).to_radians();
                out.push([radius * az.cos(), radius * az.sin(), z]);
            }
        }
    }
    out
}

/// The joint angles (rad) of every point, from guarded f64 inverse
/// kinematics: the inputs of the forward benches.
pub fn joints(points: &[[f64; 3]]) -> Vec<[f64; 3]> {
    let r = robot::<f64>();
    points.iter().map(|&p| r.inverse(p).expect("benchmark point inside the guards").joints).collect()
}

/// Rounds a list of triples to scalar type `S`.
pub fn convert<S: Arith>(v: &[[f64; 3]]) -> Vec<[S; 3]> {
    v.iter().map(|t| t.map(to::<S>)).collect()
}
