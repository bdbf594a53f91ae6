//! The number types the solvers run on.
//!
//! Every solver in deltakin is written once, generic over [`Real`], and
//! instantiated for `f32` (the firmware path on parts with an FPU), `f64`
//! (host tools) and [`Fixed`] (parts without one). The traits are
//! deliberately small:
//!
//! * [`Arith`] is plain arithmetic, comparison, a checked division and the
//!   handful of constants the algorithms use.
//! * [`Real`] adds the only transcendental functions the solvers need:
//!   square root, two-argument arc tangent and a joint sine/cosine.
//!
//! A fixed-point type can implement both honestly: nothing here needs a
//! float exponent, and "not a number" is whatever value the type reserves
//! for a failed operation (see [`Fixed`]).
//!
//! # Two kinds of quantity at the API
//! The solvers work in lengths normalised by the lower arm (see
//! `robot.rs`): every internal value is of order one. The API, though,
//! speaks millimetres (up to a few thousand), mm/s, rad/s, newtons and
//! N*mm. A float covers both ranges; a 32-bit fixed-point number cannot
//! cover both with the resolution the solvers need. So [`Arith`] names a
//! second type, [`Arith::Wide`], for every API quantity with a physical
//! unit other than the radian, and three small hooks convert between the
//! two at the edges ([`Arith::mul_wide`], [`Arith::recip`],
//! [`Arith::mul_recip`]). For `f32` and `f64`, `Wide` is the type itself
//! and the hooks are the plain operations the solvers used before, in the
//! same order, so float results are bit for bit what they were.
//!
//! This is the only module that knows how a number is stored.

mod cordic;
mod fixed;
mod float32;
mod float64;

pub use cordic::{ATAN2_MAX_ERROR_LSB, SIN_COS_MAX_ERROR_LSB, SQRT_MAX_ERROR_LSB};
pub use fixed::{Fixed, FixedRecip, FixedWide, MAX_COUNTS_PER_REV};

pub use float32::{
    ATAN2_F32_MAX_ABS_ERROR, SIN_COS_F32_MAX_ABS_ERROR, SIN_COS_F32_VALID_RANGE, SQRT_F32_MAX_REL_ERROR,
};
pub use float32::{atan2_f32, sin_cos_f32, sqrt_f32};

use core::fmt::Debug;
use core::ops::{Add, Mul, Neg, Sub};

/// Plain arithmetic on a real-number stand-in.
///
/// Implementations must never panic. Operations that can fail on a bounded
/// representation (division) come in checked form only.
pub trait Arith:
    Copy
    + Debug
    + PartialOrd
    + Add<Output = Self>
    + Sub<Output = Self>
    + Mul<Output = Self>
    + Neg<Output = Self>
    + Send
    + Sync
    + 'static
{
    /// 0.
    const ZERO: Self;
    /// 1.
    const ONE: Self;
    /// 2.
    const TWO: Self;
    /// 1/2.
    const HALF: Self;
    /// pi.
    const PI: Self;

    /// The type of API quantities with a physical unit other than the
    /// radian: lengths (mm), velocities (mm/s), joint rates (rad/s),
    /// forces (N), torques (N*mm). `Self` for floats; a wider-range format
    /// for fixed point ([`FixedWide`] for [`Fixed`]).
    type Wide: Arith;

    /// A precomputed reciprocal of a [`Arith::Wide`] value (the lower arm),
    /// so that converting millimetres to internal units needs no division.
    type Recip: Copy + Debug + PartialEq + Send + Sync + 'static;

    /// `self * w`, an internal value times an API quantity, as an API
    /// quantity. Not a number (for fixed point: the reserved value) when
    /// the product is out of range.
    #[must_use]
    fn mul_wide(self, w: Self::Wide) -> Self::Wide;

    /// The reciprocal of `den`, for [`Arith::mul_recip`]; `None` when it is
    /// not representable (zero, or outside the type's validated range).
    #[must_use]
    fn recip(den: Self::Wide) -> Option<Self::Recip>;

    /// `num / den` as an internal value, with `r = recip(den)`. Not a
    /// number when the quotient is out of range.
    #[must_use]
    fn mul_recip(num: Self::Wide, r: Self::Recip) -> Self;

    /// Whether every intermediate value of the solvers provably fits this
    /// type for a robot whose lower arm is `lower_arm` (API units), whose
    /// upper arm is `a` and whose base-minus-platform radius is `d` (both
    /// in lower-arm units). Always `true` for floats; fixed point checks
    /// its validated envelope (see [`Fixed`]).
    #[must_use]
    fn admits_geometry(lower_arm: Self::Wide, a: Self, d: Self) -> bool;

    /// `num / den`, rounded to nearest: a fraction from two counts (the
    /// motion layer's time within a phase of a move, counted in
    /// sub-cycle ticks). Valid for `num <= den < 2^31`; accuracy half an
    /// LSB for fixed point, one rounding of each operand and of the
    /// quotient for floats (relative error below 2e-7 in `f32`). Not a
    /// number (for fixed point: the reserved value) when `den` is 0 or the
    /// quotient is out of range.
    #[must_use]
    fn ratio(num: u32, den: u32) -> Self;

    /// Absolute value. For a bounded integer representation the most
    /// negative value saturates to the most positive one.
    #[must_use]
    fn abs(self) -> Self;

    /// `self / rhs`, or `None` when the quotient is not representable
    /// (division by zero, overflow, or a non-finite result).
    #[must_use]
    fn checked_div(self, rhs: Self) -> Option<Self>;

    /// `false` for NaN and infinities; always `true` for types without them.
    #[must_use]
    fn is_finite(self) -> bool;

    /// Whether all three values are finite ([`Arith::is_finite`] of each).
    /// Floats override it with a cheaper test of the same meaning.
    #[must_use]
    #[inline]
    fn all_finite(v: [Self; 3]) -> bool {
        let [a, b, c] = v;
        a.is_finite() && b.is_finite() && c.is_finite()
    }

    /// Converts from `f64`, rounding to nearest. `None` when `v` is not
    /// finite or lies outside the representable range.
    #[must_use]
    fn from_f64(v: f64) -> Option<Self>;

    /// Converts to `f64` (exact for `f32`, `f64` and 32-bit fixed point).
    #[must_use]
    fn to_f64(self) -> f64;

    /// The larger of two values (the first one when they compare equal or
    /// are unordered).
    #[must_use]
    #[inline]
    fn max_of(self, other: Self) -> Self {
        if other > self { other } else { self }
    }

    /// The smaller of two values (the first one when they compare equal or
    /// are unordered).
    #[must_use]
    #[inline]
    fn min_of(self, other: Self) -> Self {
        if other < self { other } else { self }
    }
}

/// The few transcendental functions the solvers need.
///
/// Each implementation documents its method, its valid input range and its
/// measured error bound, and runs in a fixed number of operations.
pub trait Real: Arith {
    /// Whether the forward kinematics ends with one Newton step on the
    /// three sphere equations (see `forward.rs`). `false` for floats,
    /// whose intersection is already within their bound and whose cost
    /// the step would raise; `true` for fixed point, whose foot point
    /// carries a few LSBs of rounding that the intersection amplifies near
    /// the plane of the centres.
    const REFINES_FORWARD: bool = false;

    /// Square root of `self`.
    ///
    /// Valid for `self >= 0`. The solvers check the sign before calling;
    /// for a negative argument the result is unspecified (NaN for floats)
    /// but the call never panics.
    #[must_use]
    fn sqrt(self) -> Self;

    /// Euclidean length `sqrt(x^2 + y^2 + z^2)` of the vector `v`.
    ///
    /// Valid for any finite vector whose squared length the type can
    /// hold. The default squares, sums in the order x, y, z and takes
    /// [`Real::sqrt`] (for floats: the same operations, in the same order,
    /// as writing it out). Fixed point overrides it with an exact sum of
    /// squares, so that a short vector keeps its relative precision (see
    /// [`Fixed`]).
    #[must_use]
    #[inline]
    fn length3(v: [Self; 3]) -> Self {
        let [x, y, z] = v;
        (x * x + y * y + z * z).sqrt()
    }

    /// `l^2 - |v|^2`: the squared height above a foot point `v` of a
    /// sphere of radius `l` (in the forward kinematics, where it is small
    /// and its error is amplified by `1 / (2 h)`).
    ///
    /// Valid for finite values whose squares the type can hold. The
    /// default computes `l * l - (x * x + y * y + z * z)` in that order
    /// (for floats: the operations of writing it out). Fixed point
    /// overrides it with an exact sum in Q.50 and one rounding (0.5 LSB
    /// instead of up to 2 LSBs).
    #[must_use]
    #[inline]
    fn height_sq(l: Self, v: [Self; 3]) -> Self {
        let [x, y, z] = v;
        l * l - (x * x + y * y + z * z)
    }

    /// A reciprocal of the internal value `den`, for dividing several
    /// internal values by it with [`Real::mul_recip_internal`]; `None`
    /// when `den` is not positive-and-representable (floats: when `1 / den`
    /// is not finite). Floats return `1 / den`; fixed point keeps a
    /// normalised 30-bit mantissa and an exponent, so that the quotients
    /// keep their relative precision when `den` is small (a plain Q7.25
    /// reciprocal of 0.13 holds 22 significant bits, and the quotients
    /// inherit its relative rounding).
    #[must_use]
    fn recip_internal(den: Self) -> Option<Self::Recip>;

    /// `num / den` for `r = recip_internal(den)`: floats `num * r` (the
    /// same operation as multiplying by a computed reciprocal); fixed
    /// point rounded to nearest, within 0.5 LSB plus a relative `2^-29`
    /// of the quotient. Not a number when the quotient is out of range.
    #[must_use]
    fn mul_recip_internal(num: Self, r: Self::Recip) -> Self;

    /// Four-quadrant arc tangent of `self / x` in radians, in `[-pi, pi]`.
    /// `atan2(0, 0)` returns 0.
    #[must_use]
    fn atan2(self, x: Self) -> Self;

    /// [`Real::atan2`] for arguments known to be finite, not both zero,
    /// with `|self| + |x| < 1e30`: an implementation may skip its checks
    /// for other inputs. Outside that range the result is unspecified (for
    /// floats, possibly wrong or NaN), but the call never panics. The
    /// default is [`Real::atan2`] itself.
    #[must_use]
    #[inline]
    fn atan2_bounded(self, x: Self) -> Self {
        self.atan2(x)
    }

    /// `(sin(self), cos(self))` for an angle in radians.
    #[must_use]
    fn sin_cos(self) -> (Self, Self);

    /// [`Real::sin_cos`] for an angle known to be finite and within 1e4
    /// radians of zero: an implementation may skip its checks for other
    /// inputs. Outside that range the result is unspecified (for floats,
    /// possibly wrong or NaN), but the call never panics. The default is
    /// [`Real::sin_cos`] itself.
    #[must_use]
    #[inline]
    fn sin_cos_bounded(self) -> (Self, Self) {
        self.sin_cos()
    }
}
