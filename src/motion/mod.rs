//! Interpolated setpoint streams: limit-checked motion at the servo rate.
//!
//! The pieces, bottom up:
//!
//! * [`law`]: time laws (trapezoid, seven-segment S-curve, 4-5-6-7
//!   polynomial), planned in closed form from speed, acceleration and
//!   jerk bounds, rest to rest.
//! * `path`: straight line, pick-and-place cycle with rounded corners,
//!   dwell, joint-space line.
//! * [`Move`] describes a move; [`Stream::plan`] / [`Stream::push`] turn it
//!   into a [`PlannedMove`] after checking every cycle of it (see
//!   [`check`] for what is checked, how moves are slowed down instead of
//!   rejected, and what the check costs).
//! * [`Stream`] holds a fixed-capacity queue of planned moves and yields
//!   one [`Setpoint`] per control cycle: platform position, joint angles
//!   (guarded inverse kinematics) and joint rates (Jacobian), with a flag
//!   on the last cycle of each move. See [`Stream`] for what happens
//!   between consecutive moves (they meet at rest).
//!
//! Everything is generic over [`crate::Real`], allocates nothing and
//! never panics. Time inside a move is always `k * period` with `k` the
//! cycle number counted exactly, never a running sum, so a stream of any
//! length does not drift: each move ends exactly on its target.
//!
//! The motion layer only calls the guarded kinematics
//! ([`crate::Robot::inverse`], [`crate::Robot::forward`]) and the
//! Jacobian's public maps.
//!
//! # Units
//! Millimetres, radians and seconds, as in the rest of the core.
//!
//! # Number ranges
//! Planning multiplies and divides the bounds (a jerk bound of 1e6 mm/s^3
//! is typical), so a fixed-point type needs the range to hold them.

pub mod check;
mod error;
pub mod law;
mod moves;
mod path;
mod stream;

pub use check::{JointRateLimits, MAX_MOVE_CYCLES, MAX_TIME_STRETCH, TIME_SCALING_PASSES};
pub use error::{MotionError, MotionFault, MoveFault};
pub use law::{Bounds, Law, LawSample, Profile};
pub use moves::{Move, PlannedMove, Setpoint};
pub use stream::{Accepted, Stream, StreamSetpoint};
