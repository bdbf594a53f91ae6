//! The documented accuracy bounds of deltakin, checked by the tests and
//! gated by `deltakin report`. Each is the worst case over the guarded
//! workspace (all limits satisfied, both singularity margins at least 0.1)
//! against the independent f64 reference, for machines with a lower arm of
//! 200 to 2000 mm and a lower/upper ratio of 1.5 to 3.5. The f32 figures
//! compare the f32 core with the reference run on exactly the same
//! (f32-rounded) dimensions and inputs, so they measure the arithmetic
//! alone, not the rounding of the inputs.
//!
//! Measured on about 8,000 random accepted poses of random machines (the
//! machine family of `tests/properties.rs`); each bound is the measured
//! worst case with the headroom stated beside it. Position errors are
//! Euclidean distances; joint errors the largest over the three arms.

/// f64 core, joint angle (rad). Measured worst 8.4e-15 rad: a few ulps of
/// the angle, near the reference's own accuracy (its roots are bisected to
/// 1e-15 rad). Bound 1e-13: 12x headroom for rarer poses nearer the
/// margins, where the error grows as 1/margin.
pub const F64_JOINT_ERR_RAD: f64 = 1e-13;
/// f64 core, platform position (mm). Measured worst 2.6e-12 mm (a few ulps
/// of lengths up to about 4000 mm, times the conditioning at a parallel
/// margin of 0.1). Bound 5e-11: about 20x headroom.
pub const F64_POS_ERR_MM: f64 = 5e-11;
/// f32 core, joint angle (rad). Measured worst 3.84e-6 rad (the f32 ulp
/// near 1, 6e-8, amplified by the closed form's cancellation near the
/// serial margin of 0.1). Bound 1e-5: 2.6x headroom.
pub const F32_JOINT_ERR_RAD: f64 = 1e-5;
/// f32 core, platform position (mm). Measured worst 6.7e-4 mm, on a
/// machine with a lower arm near 2000 mm (4.5e-7 of the lower arm: a few
/// f32 ulps amplified by the parallel-margin conditioning). Bound 2e-3 mm:
/// 3x headroom.
pub const F32_POS_ERR_MM: f64 = 2e-3;
/// Lower edge for the worst f32 joint error over a test run of a few
/// hundred poses: an f32 computation cannot be much better than its ulp
/// (6e-8 near 1). Typical run worst: about 1e-6 rad. A run below this
/// floor means the f32 path is not really computing in f32.
pub const F32_JOINT_ERR_FLOOR_RAD: f64 = 5e-8;
/// Lower edge for the worst f32 position error over a test run, as for
/// [`F32_JOINT_ERR_FLOOR_RAD`]. Typical run worst: about 1e-4 mm.
pub const F32_POS_ERR_FLOOR_MM: f64 = 5e-6;
/// Fixed-point core, joint angle (rad): the fixed-point target, 5 urad,
/// over the whole envelope `Robot::<Fixed>::new` admits (lower arm 50 to
/// 4000 mm, upper arm 0.2 lower arms or more, `R <= 1.25`; see
/// `deltakin::Fixed`), for the dimensions as the robot holds them
/// (Q18.14). Measured worst 3.83e-6 rad over 60,000 random cases at and
/// between the envelope's corners (`tests/fixed_point.rs`, three seeds of
/// 20,000; 3.07e-6 with the default seed), on small machines (50 mm lower
/// arm, upper arm at 0.2 of it) near the serial margin: 1.3x headroom.
pub const FIXED_JOINT_ERR_RAD: f64 = 5e-6;
/// Fixed-point core, platform position (mm): the fixed-point target, 5 um,
/// over the whole envelope `Robot::<Fixed>::new` admits (as for
/// [`FIXED_JOINT_ERR_RAD`]), for the dimensions as the robot holds them.
/// Measured worst 3.92 um over 60,000 random cases at and between the
/// envelope's corners (`tests/fixed_point.rs`, three seeds of 20,000; 3.55
/// um with the default seed), always on a lower arm near 4000 mm: about
/// 0.9e-6 lower arms (30 Q7.25 LSBs), what the rounding of the sphere
/// centres (about one LSB each) becomes through the intersection, which
/// near the plane of the centres amplifies it about 26 times. Headroom
/// 1.28x at the largest machine, more for every smaller one (the error is
/// constant in lower-arm units). Before the forward kinematics kept the
/// precision of its foot point (normalised reciprocal of `2 |n|`, exact
/// `h^2`, a closing Newton step) the worst case was 17.6 um.
pub const FIXED_POS_ERR_MM: f64 = 5e-3;

/// The accuracy bounds a report gates on: the constants above unless a
/// gate file says otherwise. Index 0 is f64, 1 is f32, 2 is fixed point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ErrorBounds {
    /// Joint-angle bound (rad) per number type.
    pub joint_rad: [f64; 3],
    /// Position bound (mm) per number type.
    pub position_mm: [f64; 3],
}

/// Names of the joint-angle constants, in [`ErrorBounds`] order.
pub const JOINT_BOUND_NAMES: [&str; 3] = ["F64_JOINT_ERR_RAD", "F32_JOINT_ERR_RAD", "FIXED_JOINT_ERR_RAD"];
/// Names of the position constants, in [`ErrorBounds`] order.
pub const POSITION_BOUND_NAMES: [&str; 3] = ["F64_POS_ERR_MM", "F32_POS_ERR_MM", "FIXED_POS_ERR_MM"];

impl Default for ErrorBounds {
    fn default() -> Self {
        Self {
            joint_rad: [F64_JOINT_ERR_RAD, F32_JOINT_ERR_RAD, FIXED_JOINT_ERR_RAD],
            position_mm: [F64_POS_ERR_MM, F32_POS_ERR_MM, FIXED_POS_ERR_MM],
        }
    }
}

/// The core's simplified torques against the full-dynamics reference on
/// the demo program (`torque_error`), worst difference in percent of the
/// reference's peak torque. Not an accuracy of the arithmetic but of the
/// model: the lumped rods carry `s(1-s) m L^2` of inertia about their
/// centre (`m L^2/4` at the demo's share 0.5) where uniform rods carry
/// `m L^2/12`. Measured 6.63 % (778 of 11,738 N*mm, at 2.404 s) on the
/// demo robot; bound 10 %: 1.5x headroom.
pub const SIMPLIFIED_TORQUE_WORST_PCT: f64 = 10.0;
/// As [`SIMPLIFIED_TORQUE_WORST_PCT`], RMS over the program and the arms.
/// Measured 0.99 % (117 N*mm); bound 2 %.
pub const SIMPLIFIED_TORQUE_RMS_PCT: f64 = 2.0;
