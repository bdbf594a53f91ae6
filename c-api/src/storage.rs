//! Caller-provided storage: one opaque C struct per kind of object, sized
//! and aligned so that a C declaration such as `DeltakinRobotF32 robot;`
//! (static, on the stack, or in a struct) can hold the core's value.
//!
//! Each struct is a tag word (set by the `_init` function once the value
//! is valid, so that storage never initialised is refused with
//! `DELTAKIN_STATUS_NOT_INITIALISED`) and a body of 64-bit words (8-byte
//! alignment on every target, the largest the core's values need). The
//! sizes are exported as constants and checked against the core's types
//! at compile time, for the target being built: a 32-bit and a 64-bit
//! target lay out the stream's queue indices differently, so the body is
//! sized for the larger.

use deltakin::motion::Stream;
use deltakin::{Dynamics, Fixed, Robot};

/// Moves a setpoint stream can queue (pushed and not yet finished).
pub const DELTAKIN_STREAM_QUEUE: usize = 4;

/// The core's robot in f32.
pub(crate) type RobotF32 = Robot<f32>;
/// The core's robot in fixed point.
pub(crate) type RobotQ = Robot<Fixed>;
/// The core's dynamics model in f32.
pub(crate) type DynamicsF32 = Dynamics<f32>;
/// The core's f32 stream.
pub(crate) type StreamF32 = Stream<f32, DELTAKIN_STREAM_QUEUE, f32>;
/// The core's fixed-point stream, planned in f32.
pub(crate) type StreamQ = Stream<Fixed, DELTAKIN_STREAM_QUEUE, f32>;

/// Size of [`DeltakinRobotF32`] in bytes.
pub const DELTAKIN_ROBOT_F32_SIZE: usize = 240;
/// Size of [`DeltakinRobotQ`] in bytes.
pub const DELTAKIN_ROBOT_Q_SIZE: usize = 256;
/// Size of [`DeltakinDynamicsF32`] in bytes.
pub const DELTAKIN_DYNAMICS_F32_SIZE: usize = 80;
/// Size of [`DeltakinStreamF32`] in bytes.
pub const DELTAKIN_STREAM_F32_SIZE: usize = 2920;
/// Size of [`DeltakinStreamQ`] in bytes.
pub const DELTAKIN_STREAM_Q_SIZE: usize = 3064;
/// Alignment of every storage struct in bytes.
pub const DELTAKIN_STORAGE_ALIGN: usize = 8;

/// Storage for a robot in f32 (`deltakin_robot_init_f32`).
#[repr(C)]
pub struct DeltakinRobotF32 {
    /// Internal: set by the `_init` function once the body is valid.
    pub tag: u32,
    /// Internal: padding.
    pub reserved: u32,
    /// Internal: the core's value.
    pub body: [u64; 29],
}

/// Storage for a robot in fixed point (`deltakin_robot_init_q`).
#[repr(C)]
pub struct DeltakinRobotQ {
    /// Internal: set by the `_init` function once the body is valid.
    pub tag: u32,
    /// Internal: padding.
    pub reserved: u32,
    /// Internal: the core's value.
    pub body: [u64; 31],
}

/// Storage for a dynamics model in f32 (`deltakin_dynamics_init_f32`).
#[repr(C)]
pub struct DeltakinDynamicsF32 {
    /// Internal: set by the `_init` function once the body is valid.
    pub tag: u32,
    /// Internal: padding.
    pub reserved: u32,
    /// Internal: the core's value.
    pub body: [u64; 9],
}

/// Storage for a setpoint stream in f32 (`deltakin_stream_init_f32`).
#[repr(C)]
pub struct DeltakinStreamF32 {
    /// Internal: set by the `_init` function once the body is valid.
    pub tag: u32,
    /// Internal: padding.
    pub reserved: u32,
    /// Internal: the core's value.
    pub body: [u64; 364],
}

/// Storage for a fixed-point setpoint stream (`deltakin_stream_init_q`).
#[repr(C)]
pub struct DeltakinStreamQ {
    /// Internal: set by the `_init` function once the body is valid.
    pub tag: u32,
    /// Internal: padding.
    pub reserved: u32,
    /// Internal: the core's value.
    pub body: [u64; 382],
}

/// Ties a storage struct to the core type it holds and its tag.
pub(crate) trait Slot {
    /// The core value held in the body.
    type Value;
    /// The tag written once the body holds a valid value (a different one
    /// per kind, so that a robot is never read as a stream).
    const TAG: u32;
}

impl Slot for DeltakinRobotF32 {
    type Value = RobotF32;
    const TAG: u32 = 0x444b_5231;
}
impl Slot for DeltakinRobotQ {
    type Value = RobotQ;
    const TAG: u32 = 0x444b_5251;
}
impl Slot for DeltakinDynamicsF32 {
    type Value = DynamicsF32;
    const TAG: u32 = 0x444b_4431;
}
impl Slot for DeltakinStreamF32 {
    type Value = StreamF32;
    const TAG: u32 = 0x444b_5331;
}
impl Slot for DeltakinStreamQ {
    type Value = StreamQ;
    const TAG: u32 = 0x444b_5351;
}

/// Compile-time check that storage `S` has the exported size and holds `T` at offset 8: size, the
/// body's room, and alignment.
macro_rules! fits {
    ($storage:ty, $value:ty, $size:expr) => {
        const _: () = {
            assert!(core::mem::size_of::<$storage>() == $size);
            assert!(core::mem::align_of::<$storage>() == DELTAKIN_STORAGE_ALIGN);
            assert!(core::mem::size_of::<$value>() <= $size - 8);
            assert!(core::mem::align_of::<$value>() <= DELTAKIN_STORAGE_ALIGN);
        };
    };
}
fits!(DeltakinRobotF32, RobotF32, DELTAKIN_ROBOT_F32_SIZE);
fits!(DeltakinRobotQ, RobotQ, DELTAKIN_ROBOT_Q_SIZE);
fits!(DeltakinDynamicsF32, DynamicsF32, DELTAKIN_DYNAMICS_F32_SIZE);
fits!(DeltakinStreamF32, StreamF32, DELTAKIN_STREAM_F32_SIZE);
fits!(DeltakinStreamQ, StreamQ, DELTAKIN_STREAM_Q_SIZE);

#[cfg(test)]
mod tests {
    use super::*;

    /// The sizes leave little slack (at most 8 bytes plus what a 64-bit
    /// host adds to the stream's queue indices), so C storage is not
    /// wasted.
    #[test]
    fn storage_is_not_oversized() {
        const SLACK: usize = 8 + 64;
        assert!(DELTAKIN_ROBOT_F32_SIZE - 8 - size_of::<RobotF32>() < SLACK);
        assert!(DELTAKIN_ROBOT_Q_SIZE - 8 - size_of::<RobotQ>() < SLACK);
        assert!(DELTAKIN_DYNAMICS_F32_SIZE - 8 - size_of::<DynamicsF32>() < SLACK);
        assert!(DELTAKIN_STREAM_F32_SIZE - 8 - size_of::<StreamF32>() < SLACK);
        assert!(DELTAKIN_STREAM_Q_SIZE - 8 - size_of::<StreamQ>() < SLACK);
    }
}
