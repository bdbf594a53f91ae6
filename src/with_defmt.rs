//! `defmt::Format` (feature `defmt`) for the values a firmware logs: the
//! fixed-point numbers, solutions and setpoints. The error enums and
//! [`crate::Margins`] derive it where they are declared; the types here
//! hold [`crate::Arith::Wide`] fields or private parts, so their
//! implementations are written out.
//!
//! Fixed-point values print as `f32` (the nearest `f32` of the exact
//! value; the reserved "not a number" as NaN). A [`Solution`] prints its
//! joints, position and margins, not the Jacobian's internals.

use defmt::{Format, Formatter, write};

use crate::motion::{Setpoint, StreamSetpoint};
use crate::scalar::{Arith, Fixed, FixedWide};
use crate::solution::Solution;

impl Format for Fixed {
    fn format(&self, f: Formatter<'_>) {
        write!(f, "{=f32}", self.to_f32());
    }
}

impl Format for FixedWide {
    fn format(&self, f: Formatter<'_>) {
        write!(f, "{=f32}", self.to_f32());
    }
}

impl<S: Arith + Format> Format for Solution<S>
where
    S::Wide: Format,
{
    fn format(&self, f: Formatter<'_>) {
        write!(
            f,
            "Solution {{ joints: {} rad, position: {} mm, margins: {} }}",
            self.joints, self.position, self.margins
        );
    }
}

impl<S: Arith + Format> Format for Setpoint<S>
where
    S::Wide: Format,
{
    fn format(&self, f: Formatter<'_>) {
        write!(
            f,
            "Setpoint {{ position: {} mm, joints: {} rad, joint_rates: {} rad/s, cycle: {=u32}, end_of_move: {=bool} }}",
            self.position, self.joints, self.joint_rates, self.cycle, self.end_of_move
        );
    }
}

impl<S: Arith + Format> Format for StreamSetpoint<S>
where
    S::Wide: Format,
{
    fn format(&self, f: Formatter<'_>) {
        write!(f, "StreamSetpoint {{ move_id: {=u32}, setpoint: {} }}", self.move_id, self.setpoint);
    }
}
