//! The one number format of the CSV the CLI writes (`ik`, `fk`, `plan`):
//! the shortest plain decimal (no exponent) that reads back to the same
//! value at the precision of the number type that computed it. `f32`
//! results are printed as the nearest `f32` of the value in output units
//! (degrees, millimetres); `f64` and fixed-point results as the `f64` (every
//! fixed-point value is exact in `f64`). Quantities the harness computes in
//! `f64` itself (time) use the `f64` rule.
//!
//! Rust's `Display` for floats gives exactly that text (shortest
//! round-trip digits, never an exponent), so `0.1f32` prints `0.1` and
//! `f64::from(0.1f32)` prints `0.10000000149011612`.

use std::io::{self, Write};

/// The precision a number is printed at.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Precision {
    /// Shortest text that reads back to the same `f32`.
    F32,
    /// Shortest text that reads back to the same `f64`.
    F64,
}

/// `v` as text at `precision` (NaN prints `NaN`, infinities `inf`/`-inf`).
#[must_use]
pub fn text(v: f64, precision: Precision) -> String {
    match precision {
        // Rounds to nearest: the value as the f32 path holds it.
        #[allow(clippy::cast_possible_truncation)]
        Precision::F32 => format!("{}", v as f32),
        Precision::F64 => format!("{v}"),
    }
}

/// Writes [`text`] of `v` to `out`.
///
/// # Errors
/// Any write error.
pub fn write(out: &mut dyn Write, v: f64, precision: Precision) -> io::Result<()> {
    match precision {
        #[allow(clippy::cast_possible_truncation)]
        Precision::F32 => write!(out, "{}", v as f32),
        Precision::F64 => write!(out, "{v}"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shortest_round_trip_plain_decimals() {
        for v in [0.1, -700.0, 123.456_789_012_345_67, 1.0e-7, 2.5e6, f64::from(0.1f32), -1.0e-12] {
            let t = text(v, Precision::F64);
            assert!(!t.contains('e'), "{t}");
            assert_eq!(t.parse::<f64>().unwrap(), v, "{t}");
            #[allow(clippy::cast_possible_truncation)]
            let v32 = v as f32;
            let t32 = text(v, Precision::F32);
            assert!(!t32.contains('e'), "{t32}");
            assert_eq!(t32.parse::<f32>().unwrap(), v32, "{t32}");
            assert!(t32.len() <= t.len().max(2), "{t32} longer than {t}");
        }
        assert_eq!(text(f64::from(0.1f32), Precision::F32), "0.1");
        assert_eq!(text(f64::from(0.1f32), Precision::F64), "0.10000000149011612");
        let mut out = Vec::new();
        write(&mut out, -0.25, Precision::F32).unwrap();
        assert_eq!(out, b"-0.25");
    }
}
