//! Interpolated setpoint streams: limit-checked motion at the servo rate.
//!
//! The pieces, bottom up:
//!
//! * [`law`]: time laws (trapezoid, seven-segment S-curve, 4-5-6-7
//!   polynomial), planned in closed form from speed, acceleration and
//!   jerk bounds, rest to rest.
//! * `path`: straight line, pick-and-place cycle with rounded corners,
//!   two lines joined by a tangent arc, dwell, joint-space line.
//! * [`Move`] describes a move; [`Stream::plan`] / [`Stream::push`] turn it
//!   into a [`PlannedMove`] after checking every cycle of it and the path
//!   between cycles (see [`check`] for what is checked, how moves are
//!   slowed down instead of rejected, and what the check costs, and
//!   [`between`] for the guarantee between setpoints).
//! * [`Stream`] holds a fixed-capacity queue of planned moves and yields
//!   one [`Setpoint`] per control cycle: platform position, joint angles
//!   (guarded inverse kinematics) and joint rates (Jacobian), with a flag
//!   on the last cycle of each move. See [`Stream`] for what happens
//!   between consecutive moves: they meet at rest, except two lines
//!   joined through their corner when a corner tolerance is set
//!   ([`Stream::set_corner_tolerance`]).
//!
//! Everything allocates nothing and never panics. Time inside a move is
//! the cycle number, an integer, never a running sum; each move ends
//! exactly on its target and the next one starts exactly there, so a
//! stream of any length does not drift (measured: a closed pick cycle
//! streamed for 1e6 cycles returns to its start with zero error in f32
//! and in fixed point, `host-tests/tests/motion.rs`).
//!
//! The motion layer only calls the guarded kinematics
//! ([`crate::Robot::inverse`], [`crate::Robot::forward`]) and the
//! Jacobian's public maps.
//!
//! # Units
//! Millimetres, radians and seconds, as in the rest of the core.
//!
//! # Two number types: streaming `S`, planning `P`
//! [`Stream<S, N, P>`] streams in any [`crate::Real`] type `S`, including
//! [`crate::Fixed`], and plans in a float type `P` (`P = S` by default;
//! `f32` for a fixed-point stream). Planning multiplies and divides the
//! bounds (a jerk bound of 1e6 mm/s^3 is typical) and the segment times,
//! which no 32-bit fixed-point format holds with useful resolution, so it
//! stays in `P`: shaping the path, the closed-form law, the time scaling
//! and the limit comparisons. The validation samples every cycle through
//! the stream's own `S` arithmetic, so what it checks is, bit for bit,
//! what the stream emits.
//!
//! Per cycle, everything is of order one or an API quantity:
//! the cycle counter is a `u32`; the time law is evaluated per phase in
//! its own normalised time `u in [0, 1]` (an exact integer ratio of
//! sub-cycle ticks, [`crate::Arith::ratio`]) as a cubic (trapezoid,
//! S-curve) or the 4-5-6-7 polynomial, giving the covered fraction
//! `sigma in [0, 1]` of the path (in `S`) and the path speed (in
//! [`crate::Arith::Wide`], mm/s or rad/s); the path maps `sigma` to a
//! position in `Wide` millimetres (arc angles through a precomputed
//! reciprocal of the blend radius); Cartesian velocities and joint rates
//! are `Wide`. For fixed point that is Q7.25 for `sigma` (resolution
//! 3e-8 of the move) and Q18.14 for positions (6.1e-5 mm) and rates
//! (6.1e-5 rad/s).

pub mod between;
pub mod check;
mod error;
pub mod law;
mod moves;
mod path;
mod stream;

pub use between::{TRAVEL_FLOOR_MM, TRAVEL_FLOOR_RAD, TRAVEL_SLACK};
pub use check::{
    JOINT_ROUNDING_F32_RAD, JOINT_ROUNDING_F64_RAD, JOINT_ROUNDING_FIXED_RAD, JointRateLimits, MAX_MOVE_CYCLES,
    MAX_TIME_STRETCH, TIME_SCALING_PASSES, joint_rounding_rad,
};
pub use error::{MotionError, MotionFault, MoveFault};
pub use law::{Bounds, Law, LawSample, Profile};
pub use moves::{COLLINEAR_TURN, MAX_CORNER_RADIUS, MIN_CORNER_RADIUS, Move, PlannedMove, Setpoint};
pub use path::MAX_JOINED_LINES;
pub use stream::{Accepted, Stream, StreamSetpoint};
