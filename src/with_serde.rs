//! `serde` support (feature `serde`) for the fixed-point numbers, so that
//! the configuration values ([`crate::Geometry`], [`crate::Limits`],
//! [`crate::ArmCorrection`], [`crate::motion::Move`], which derive
//! `Serialize`/`Deserialize` where they are declared) read and write for
//! every scalar. No std and no allocation.
//!
//! A [`Fixed`] or [`FixedWide`] is written as the `f64` of its exact value
//! (every value of both formats is exact in `f64`) and read from any
//! number, rounded to the nearest step of the format; a number the format
//! cannot hold, or not finite, is an error naming the format's range, never
//! a clamped or wrapped value. The reserved "not a number" is written as
//! NaN, which reading refuses.

use core::fmt;

use serde::de::{self, Deserializer, Visitor};
use serde::ser::Serializer;
use serde::{Deserialize, Serialize};

use crate::scalar::{Arith, Fixed, FixedWide};

impl Serialize for Fixed {
    fn serialize<Ser: Serializer>(&self, s: Ser) -> Result<Ser::Ok, Ser::Error> {
        s.serialize_f64(self.to_f64())
    }
}

impl Serialize for FixedWide {
    fn serialize<Ser: Serializer>(&self, s: Ser) -> Result<Ser::Ok, Ser::Error> {
        s.serialize_f64(self.to_f64())
    }
}

/// Reads a number of any kind as `f64`, then converts it with `convert`.
struct FixedVisitor<T> {
    convert: fn(f64) -> Option<T>,
    expecting: &'static str,
}

impl<T> FixedVisitor<T> {
    fn finish<E: de::Error>(&self, v: f64) -> Result<T, E> {
        (self.convert)(v).ok_or_else(|| E::invalid_value(de::Unexpected::Float(v), &self.expecting))
    }
}

impl<T> Visitor<'_> for FixedVisitor<T> {
    type Value = T;

    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.expecting)
    }

    fn visit_f64<E: de::Error>(self, v: f64) -> Result<T, E> {
        self.finish(v)
    }

    #[allow(clippy::cast_precision_loss)] // only values far outside both formats lose digits
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<T, E> {
        self.finish(v as f64)
    }

    #[allow(clippy::cast_precision_loss)] // as above
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<T, E> {
        self.finish(v as f64)
    }
}

impl<'de> Deserialize<'de> for Fixed {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_f64(FixedVisitor {
            convert: <Fixed as Arith>::from_f64,
            expecting: "a finite number within Q7.25's range (-64 to 64)",
        })
    }
}

impl<'de> Deserialize<'de> for FixedWide {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_f64(FixedVisitor {
            convert: <FixedWide as Arith>::from_f64,
            expecting: "a finite number within Q18.14's range (-131072 to 131072)",
        })
    }
}
