//! The plain `#[repr(C)]` structs passed by value or through pointers.
//!
//! `F32` structs hold `float`s in millimetres, radians and seconds. `Q`
//! structs hold `int32_t` raw fixed-point values: lengths, velocities and
//! joint rates Q18.14 (`value * 2^14`), angles and margins Q7.25
//! (`value * 2^25`). Moves of a fixed-point stream are planned in `float`
//! (the core plans in a float type, see the core's `motion` module), so
//! both streams take [`DeltakinMoveF32`].

/// The four nominal dimensions (mm), see the conventions in the README.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DeltakinGeometryF32 {
    /// Base centre to each actuator axis, radially (mm).
    pub base_radius_mm: f32,
    /// Platform centre to the lower arms' platform axis, radially (mm).
    pub platform_radius_mm: f32,
    /// Actuator axis to elbow axis (mm).
    pub upper_arm_mm: f32,
    /// Elbow axis to platform axis, parallelogram rod length (mm).
    pub lower_arm_mm: f32,
}

/// What the guarded solvers enforce.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DeltakinLimitsF32 {
    /// Lowest joint reading of each arm (rad).
    pub joint_min_rad: [f32; 3],
    /// Highest joint reading of each arm (rad).
    pub joint_max_rad: [f32; 3],
    /// Half-angle of each passive joint's cone (rad), in (0, pi/2).
    pub passive_cone_rad: f32,
    /// Smallest serial margin accepted, in [0, 1).
    pub min_serial_margin: f32,
    /// Smallest parallel margin accepted, in [0, 1).
    pub min_parallel_margin: f32,
}

/// One arm's corrections to the nominal geometry (all zero: the nominal
/// arm). Admitted ranges as in the core's `ArmCorrection`.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DeltakinArmCorrectionF32 {
    /// Joint zero offset (rad): true angle = reading + offset.
    pub joint_offset_rad: f32,
    /// Upper arm length correction (mm).
    pub upper_arm_mm: f32,
    /// Lower arm length correction (mm).
    pub lower_arm_mm: f32,
    /// Correction of actuator axis radius minus platform joint radius (mm).
    pub radial_difference_mm: f32,
    /// Azimuth correction of the arm's plane (rad, +x towards +y).
    pub azimuth_rad: f32,
    /// Height of the actuator axis above the base plane (mm, z up).
    pub axis_height_mm: f32,
}

/// A solved pose.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DeltakinPoseF32 {
    /// Joint readings (rad), arms 0, 1, 2.
    pub joints_rad: [f32; 3],
    /// Platform centre (mm), base frame.
    pub position_mm: [f32; 3],
    /// Serial margin of each arm, in [-1, 1] (negative: elbow-in branch).
    pub serial_margin: [f32; 3],
    /// Parallel margin, in [0, 1].
    pub parallel_margin: f32,
}

/// Geometry in fixed point: every dimension Q18.14 mm.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DeltakinGeometryQ {
    /// Base centre to each actuator axis (Q18.14 mm).
    pub base_radius_mm: i32,
    /// Platform centre to the platform axis (Q18.14 mm).
    pub platform_radius_mm: i32,
    /// Upper arm (Q18.14 mm).
    pub upper_arm_mm: i32,
    /// Lower arm (Q18.14 mm).
    pub lower_arm_mm: i32,
}

/// Limits in fixed point: angles Q7.25 rad, margins Q7.25.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DeltakinLimitsQ {
    /// Lowest joint reading of each arm (Q7.25 rad).
    pub joint_min_rad: [i32; 3],
    /// Highest joint reading of each arm (Q7.25 rad).
    pub joint_max_rad: [i32; 3],
    /// Passive-joint cone half-angle (Q7.25 rad).
    pub passive_cone_rad: i32,
    /// Smallest serial margin (Q7.25).
    pub min_serial_margin: i32,
    /// Smallest parallel margin (Q7.25).
    pub min_parallel_margin: i32,
}

/// One arm's corrections in fixed point: angles Q7.25 rad, lengths
/// Q18.14 mm.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DeltakinArmCorrectionQ {
    /// Joint zero offset (Q7.25 rad).
    pub joint_offset_rad: i32,
    /// Upper arm correction (Q18.14 mm).
    pub upper_arm_mm: i32,
    /// Lower arm correction (Q18.14 mm).
    pub lower_arm_mm: i32,
    /// Radial difference correction (Q18.14 mm).
    pub radial_difference_mm: i32,
    /// Azimuth correction (Q7.25 rad).
    pub azimuth_rad: i32,
    /// Actuator axis height (Q18.14 mm).
    pub axis_height_mm: i32,
}

/// A solved pose in fixed point.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DeltakinPoseQ {
    /// Joint readings (Q7.25 rad).
    pub joints_rad: [i32; 3],
    /// Platform centre (Q18.14 mm).
    pub position_mm: [i32; 3],
    /// Serial margins (Q7.25).
    pub serial_margin: [i32; 3],
    /// Parallel margin (Q7.25).
    pub parallel_margin: i32,
}

/// The physical parameters of the simplified dynamics model (kg, mm, N*mm,
/// s), as the core's `DynamicsParams`. `double`: used once, at start-up.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DeltakinDynamicsParams {
    /// Mass of each upper arm (kg).
    pub upper_arm_mass_kg: [f64; 3],
    /// Actuator axis to each upper arm's centre of mass (mm).
    pub upper_arm_com_mm: [f64; 3],
    /// Each upper arm's inertia about its axis, rotor and gearbox included
    /// (kg*mm^2).
    pub upper_arm_inertia_kg_mm2: [f64; 3],
    /// Mass of each lower-arm pair (kg).
    pub lower_arm_mass_kg: [f64; 3],
    /// Share of each lower arm's mass lumped at the elbow, 0 to 1.
    pub lower_arm_elbow_share: [f64; 3],
    /// Platform mass, tool included (kg).
    pub platform_mass_kg: f64,
    /// Payload (kg).
    pub payload_kg: f64,
    /// Viscous friction per joint (N*mm*s/rad).
    pub viscous_n_mm_s: [f64; 3],
    /// Coulomb friction per joint (N*mm).
    pub coulomb_n_mm: [f64; 3],
    /// Joint rate at which Coulomb friction reaches its full value (rad/s).
    pub coulomb_rate_rad_s: f64,
}

/// The kind of a move: the values of [`DeltakinMoveF32::kind`].
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DeltakinMoveKind {
    /// Straight line to `to` (mm).
    Line = 0,
    /// Pick-and-place cycle to `to` (mm): rise by `lift_mm`, traverse,
    /// descend, corners rounded with `blend_radius_mm`.
    Pick = 1,
    /// Stay for `duration_s`.
    Dwell = 2,
    /// Joint-space line to the joint readings `to` (rad).
    Joint = 3,
}

/// The time law of a move: the values of [`DeltakinMoveF32::law`].
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DeltakinLaw {
    /// Trapezoidal velocity (the jerk bound is ignored).
    Trapezoid = 0,
    /// Seven-segment jerk-limited S-curve.
    SCurve = 1,
    /// The 4-5-6-7 polynomial.
    Poly7 = 2,
}

/// One move, planned in `float`. Fields a kind does not use are ignored.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DeltakinMoveF32 {
    /// A `DeltakinMoveKind` value.
    pub kind: i32,
    /// A `DeltakinLaw` value (ignored by a dwell).
    pub law: i32,
    /// Target: platform position (mm) for a line or pick, joint readings
    /// (rad) for a joint move.
    pub to: [f32; 3],
    /// Speed bound along the path (mm/s; rad/s for a joint move).
    pub speed: f32,
    /// Acceleration bound (mm/s^2; rad/s^2).
    pub accel: f32,
    /// Jerk bound (mm/s^3; rad/s^3).
    pub jerk: f32,
    /// Pick: traverse height above the higher end point (mm).
    pub lift_mm: f32,
    /// Pick: corner arc radius (mm).
    pub blend_radius_mm: f32,
    /// Dwell: time to stay (s).
    pub duration_s: f32,
}

/// What a stream reports about an accepted move.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DeltakinAcceptedF32 {
    /// The move's number in this stream (counts pushes from 0, wrapping).
    pub id: u32,
    /// Control cycles the move lasts.
    pub cycles: u32,
    /// Time stretch applied (1: as asked).
    pub stretch: f32,
    /// 1 when the move was slowed to respect the joint limits.
    pub time_scaled: u32,
}

/// One control cycle's setpoint.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DeltakinSetpointF32 {
    /// Platform position (mm).
    pub position_mm: [f32; 3],
    /// Joint readings (rad).
    pub joints_rad: [f32; 3],
    /// Joint rates (rad/s).
    pub joint_rates_rad_s: [f32; 3],
    /// The move's number (see `DeltakinAcceptedF32::id`).
    pub move_id: u32,
    /// Cycle within the move, 1 for the first.
    pub cycle: u32,
    /// 1 on the move's last cycle (the setpoint is its target), else 0.
    pub end_of_move: u32,
}

/// One control cycle's setpoint in fixed point.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DeltakinSetpointQ {
    /// Platform position (Q18.14 mm).
    pub position_mm: [i32; 3],
    /// Joint readings (Q7.25 rad).
    pub joints_rad: [i32; 3],
    /// Joint rates (Q18.14 rad/s).
    pub joint_rates_rad_s: [i32; 3],
    /// The move's number.
    pub move_id: u32,
    /// Cycle within the move, 1 for the first.
    pub cycle: u32,
    /// 1 on the move's last cycle, else 0.
    pub end_of_move: u32,
}

/// Joint speed and acceleration limits of a stream.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DeltakinRateLimitsF32 {
    /// Largest joint speed of each arm (rad/s).
    pub speed_rad_s: [f32; 3],
    /// Largest joint acceleration of each arm (rad/s^2).
    pub accel_rad_s2: [f32; 3],
}
