//! The core's `serde` feature: the configuration values round-trip
//! through TOML and JSON unchanged, unknown keys are refused with the key
//! named, and fixed-point values read from plain numbers, refusing one the
//! format cannot hold.

use deltakin::motion::{Bounds, JointRateLimits, Law, Move};
use deltakin::{Arith, ArmCorrection, DynamicsParams, Fixed, FixedWide, Geometry, Limits};

fn demo_geometry() -> Geometry<f64> {
    Geometry { base_radius: 160.0, platform_radius: 40.0, upper_arm: 280.0, lower_arm: 720.0 }
}

fn demo_limits() -> Limits<f64> {
    Limits {
        joint_min: [-0.61, -0.6, -0.59],
        joint_max: [1.48; 3],
        passive_cone: 0.69,
        min_serial_margin: 0.1,
        min_parallel_margin: 0.12,
    }
}

#[test]
fn configuration_values_round_trip_through_toml_and_json() {
    let geometry = demo_geometry();
    let limits = demo_limits();
    let arm = ArmCorrection::<f64> {
        joint_offset: 0.003,
        upper_arm: 0.2,
        lower_arm: -0.4,
        radial_difference: 0.1,
        azimuth: -0.001,
        axis_height: 0.5,
    };
    let dynamics = DynamicsParams {
        upper_arm_mass: [0.62, 0.63, 0.61],
        upper_arm_com: [115.0; 3],
        upper_arm_inertia: [24_000.0; 3],
        lower_arm_mass: [0.16; 3],
        lower_arm_elbow_share: [0.5; 3],
        platform_mass: 0.38,
        payload: 0.25,
        viscous: [15.0; 3],
        coulomb: [120.0; 3],
        coulomb_rate: 0.01,
    };
    let rates = JointRateLimits { speed: [12.5; 3], accel: [260.0; 3] };
    let bounds = Bounds { speed: 2500.0, accel: 40_000.0, jerk: 2.0e6 };
    let moves = [
        Move::Line { to: [10.0, -20.0, -700.0], law: Law::SCurve, bounds },
        Move::Pick { to: [152.5, 60.0, -760.0], lift: 25.0, blend_radius: 10.0, law: Law::Poly7, bounds },
        Move::Dwell { duration: 0.05 },
        Move::Joint { to: [0.3, 0.3, 0.3], law: Law::Trapezoid, bounds },
    ];

    assert_eq!(toml::from_str::<Geometry<f64>>(&toml::to_string(&geometry).unwrap()).unwrap(), geometry);
    assert_eq!(toml::from_str::<Limits<f64>>(&toml::to_string(&limits).unwrap()).unwrap(), limits);
    assert_eq!(toml::from_str::<ArmCorrection<f64>>(&toml::to_string(&arm).unwrap()).unwrap(), arm);
    assert_eq!(toml::from_str::<DynamicsParams>(&toml::to_string(&dynamics).unwrap()).unwrap(), dynamics);
    assert_eq!(toml::from_str::<JointRateLimits<f64>>(&toml::to_string(&rates).unwrap()).unwrap(), rates);
    for m in moves {
        let json = serde_json::to_string(&m).unwrap();
        assert_eq!(serde_json::from_str::<Move<f64>>(&json).unwrap(), m, "{json}");
    }
    // f32 values survive the text form too (serde_json prints the shortest
    // digits that read back to the same f32).
    let g32 = Geometry::<f32> { base_radius: 160.1, platform_radius: 40.3, upper_arm: 280.7, lower_arm: 720.9 };
    assert_eq!(serde_json::from_str::<Geometry<f32>>(&serde_json::to_string(&g32).unwrap()).unwrap(), g32);
}

#[test]
fn the_text_form_names_every_value() {
    let text = toml::to_string(&demo_limits()).unwrap();
    for key in ["joint_min", "joint_max", "passive_cone", "min_serial_margin", "min_parallel_margin"] {
        assert!(text.contains(key), "{key} missing from {text}");
    }
    let json = serde_json::to_string(&Move::Dwell { duration: 0.05f64 }).unwrap();
    assert_eq!(json, r#"{"dwell":{"duration":0.05}}"#);
}

#[test]
fn unknown_and_missing_keys_are_refused_by_name() {
    let extra =
        "base_radius = 160.0\nplatform_radius = 40.0\nupper_arm = 280.0\nlower_arm = 720.0\nbase_radius_mm = 1.0\n";
    let err = toml::from_str::<Geometry<f64>>(extra).unwrap_err().to_string();
    assert!(err.contains("base_radius_mm"), "{err}");
    let missing = "base_radius = 160.0\nplatform_radius = 40.0\nupper_arm = 280.0\n";
    let err = toml::from_str::<Geometry<f64>>(missing).unwrap_err().to_string();
    assert!(err.contains("lower_arm"), "{err}");
    let err = serde_json::from_str::<Move<f64>>(r#"{"dwell":{"duration":0.05,"speed":1.0}}"#).unwrap_err().to_string();
    assert!(err.contains("speed"), "{err}");
    let err = serde_json::from_str::<Move<f64>>(r#"{"hop":{"duration":0.05}}"#).unwrap_err().to_string();
    assert!(err.contains("hop"), "{err}");
}

#[test]
fn fixed_point_reads_plain_numbers_and_refuses_what_it_cannot_hold() {
    let g: Geometry<Fixed> =
        toml::from_str("base_radius = 160\nplatform_radius = 40.5\nupper_arm = 280.0\nlower_arm = 720.25\n").unwrap();
    assert_eq!(g.base_radius, FixedWide::from_mm(160).unwrap());
    assert_eq!(g.lower_arm.to_f32(), 720.25);
    // Round trip: the exact value is written, so it reads back bit for bit.
    let back: Geometry<Fixed> = serde_json::from_str(&serde_json::to_string(&g).unwrap()).unwrap();
    assert_eq!(back, g);
    // 200 m is beyond Q18.14 (+-131 m): refused, not clamped.
    let err = toml::from_str::<Geometry<Fixed>>(
        "base_radius = 200000.0\nplatform_radius = 40\nupper_arm = 280\nlower_arm = 720\n",
    )
    .unwrap_err()
    .to_string();
    assert!(err.contains("Q18.14"), "{err}");
    // Q7.25 holds angles up to 64 rad; 100 rad is refused.
    let err = serde_json::from_str::<Fixed>("100.0").unwrap_err().to_string();
    assert!(err.contains("Q7.25"), "{err}");
    let ok: Fixed = serde_json::from_str("-0.61").unwrap();
    assert_eq!(ok, <Fixed as Arith>::from_f64(-0.61).unwrap());
}
