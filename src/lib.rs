#![doc = include_str!("lib.md")]
#![no_std]
#![forbid(unsafe_code)]
// `!(a >= b)` is deliberate throughout: it is true for NaN, so a NaN never
// passes a check.
#![allow(clippy::neg_cmp_op_on_partial_ord)]
#![warn(missing_docs)]
#![deny(clippy::unwrap_used, clippy::expect_used, clippy::panic, clippy::indexing_slicing, clippy::float_cmp_const)]
#![cfg_attr(test, allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing))]

#[cfg(feature = "std")]
extern crate std;

pub mod dynamics;
mod error;
pub mod forward;
mod guard;
pub mod inverse;
pub mod jacobian;
pub mod motion;
pub mod per_arm;
mod robot;
pub mod scalar;
mod solution;
mod solve;
#[cfg(feature = "defmt")]
mod with_defmt;
#[cfg(feature = "serde")]
mod with_serde;

pub use dynamics::{Dynamics, DynamicsParameter, DynamicsParams};
pub use error::{ArmParameter, Bound, ConfigFault, Error, Input, JointEnd};
pub use jacobian::Jacobian;
pub use per_arm::{ArmCorrection, Corrections};
pub use robot::{Geometry, Limits, MAX_DIMENSION_MM, MIN_DIMENSION_MM, Robot};
pub use scalar::{Arith, Fixed, FixedWide, Real};

/// The README's examples, compiled and run as doctests (the README is the
/// repository's front page; the crate's is `src/lib.md`).
#[cfg(doctest)]
#[doc = include_str!("../README.md")]
pub struct ReadmeDoctests;
pub use solution::{Margins, Solution};
