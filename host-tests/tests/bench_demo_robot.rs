//! The benches carry their own copy of the demo robot's numbers
//! (`benches/shared/demo_robot.rs`; the root package cannot depend on the
//! harness). These tests keep that copy equal to
//! `examples/demo_robot.toml` and check that every benchmark point lies
//! inside the guarded workspace, so the benches measure accepted solves.

use deltakin_harness::config::{PerArm, RobotFile};

#[path = "../../benches/shared/demo_robot.rs"]
#[allow(dead_code, clippy::unwrap_used, clippy::expect_used)]
mod demo_robot;

#[test]
fn bench_copy_equals_the_demo_robot_file() {
    let demo = RobotFile::demo();
    let g = &demo.geometry;
    assert_eq!(
        [g.base_radius_mm, g.platform_radius_mm, g.upper_arm_mm, g.lower_arm_mm],
        [
            demo_robot::BASE_RADIUS_MM,
            demo_robot::PLATFORM_RADIUS_MM,
            demo_robot::UPPER_ARM_MM,
            demo_robot::LOWER_ARM_MM
        ]
    );
    let l = &demo.limits;
    assert_eq!(l.joint_min_deg, PerArm::All(demo_robot::JOINT_MIN_DEG));
    assert_eq!(l.joint_max_deg, PerArm::All(demo_robot::JOINT_MAX_DEG));
    assert_eq!(
        [l.passive_cone_deg, l.min_serial_margin, l.min_parallel_margin],
        [demo_robot::PASSIVE_CONE_DEG, demo_robot::MIN_SERIAL_MARGIN, demo_robot::MIN_PARALLEL_MARGIN]
    );
    // The built robots agree to the bit, in both precisions.
    assert_eq!(demo.robot::<f64>().unwrap(), demo_robot::robot::<f64>());
    assert_eq!(demo.robot::<f32>().unwrap(), demo_robot::robot::<f32>());
}

#[test]
fn every_bench_point_passes_the_guards_in_both_precisions() {
    let points = demo_robot::points();
    assert_eq!(points.len(), demo_robot::LAYERS.len() * (1 + 2 * demo_robot::RING_POINTS));
    let joints = demo_robot::joints(&points);
    let (r32, r64) = (demo_robot::robot::<f32>(), demo_robot::robot::<f64>());
    let (p32, j32) = (demo_robot::convert::<f32>(&points), demo_robot::convert::<f32>(&joints));
    for (i, (p, j)) in points.iter().zip(&joints).enumerate() {
        assert!(r64.inverse(*p).is_ok(), "f64 inverse refused point {i} {p:?}");
        assert!(r64.forward(*j).is_ok(), "f64 forward refused point {i} {j:?}");
        assert!(r32.inverse(p32[i]).is_ok(), "f32 inverse refused point {i} {p:?}");
        assert!(r32.forward(j32[i]).is_ok(), "f32 forward refused point {i} {j:?}");
    }
}

#[test]
fn bench_points_span_the_workspace() {
    // Heights from near the top to near the bottom of the guarded volume
    // (about -560 mm to -880 mm on this robot) and outer rings reaching at
    // least 200 mm from the axis at every height.
    let points = demo_robot::points();
    let z: Vec<f64> = points.iter().map(|p| p[2]).collect();
    let (z_hi, z_lo) = (z.iter().copied().fold(f64::MIN, f64::max), z.iter().copied().fold(f64::MAX, f64::min));
    assert!(z_hi >= -620.0 && z_lo <= -800.0, "z from {z_lo} to {z_hi}");
    for &(_, inner, outer) in &demo_robot::LAYERS {
        assert!(inner > 0.0 && outer >= 200.0 && outer > inner);
    }
}
