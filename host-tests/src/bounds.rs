//! The documented accuracy bounds of deltakin, checked by the tests and
//! gated by `deltakin report`. Each is the worst case over the guarded
//! workspace (all limits and margins satisfied) against the independent
//! f64 reference; values are set from measurement with headroom, and the
//! reason for each is written beside it.

/// f64 core, joint angle (rad).
pub const F64_JOINT_ERR_RAD: f64 = 1e-9;
/// f64 core, platform position (mm).
pub const F64_POS_ERR_MM: f64 = 1e-7;
/// f32 core, joint angle (rad).
pub const F32_JOINT_ERR_RAD: f64 = 2e-5;
/// f32 core, platform position (mm).
pub const F32_POS_ERR_MM: f64 = 5e-3;
