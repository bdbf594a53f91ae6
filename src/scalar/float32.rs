//! `f32`, the firmware path, with its own square-root and sine/cosine
//! kernels.
//!
//! Why not libm throughout: on a Cortex-M4F libm's `sqrtf` is software
//! (about 59 instructions) and its `sinf`/`cosf` evaluate in double
//! precision, which a single-precision FPU must emulate (about 2,250
//! instructions for both). libm's `atan2f` is a single-precision routine,
//! but with branches and two divisions on its usual path it cost more than
//! the rest of a guarded inverse solution. The kernels below use
//! single-precision arithmetic only and a fixed operation count.
//!
//! Each kernel is checked against libm's `f64` functions by the unit tests
//! in this file, which assert the error bounds published here.
//!
//! Why no hardware square root (`vsqrt.f32`) on the Cortex-M4F: on the
//! stable toolchains deltakin builds with (rustup's 1.95, Debian's
//! `rustc-web` 1.96) `core` has no `f32` square root (the inherent
//! `f32::sqrt` is std's; `core::f32::math::sqrt` is unstable, feature
//! `core_float_math`, rust-lang/rust#137578), libm 0.2.16 picks a hardware
//! square root only for x86 with SSE2, AArch64 with NEON and wasm32 (on
//! `thumbv7em` its `sqrtf` is the software routine), and emitting the
//! instruction directly needs inline assembly, which `forbid(unsafe_code)`
//! rules out. So no route exists on stable without unsafe code; once
//! `core_float_math` is stable, [`sqrt_f32`]'s callers can switch.

use super::{Arith, Real};

/// Bound on the relative error of [`sqrt_f32`] over all positive finite
/// `f32` inputs. Measured: 8.93e-8 (0.75 ulp) over every 7th bit pattern;
/// the unit tests assert this bound on a sparser sample.
pub const SQRT_F32_MAX_REL_ERROR: f32 = 1.0e-7;

/// Bound on the absolute error of either output of [`sin_cos_f32`] for
/// `|x| <= SIN_COS_F32_VALID_RANGE`, against libm's `f64` sine and cosine.
/// Measured: 8.6e-8 over 2e7 evenly spaced arguments in the valid range
/// (and the same on `[-7, 7]`); the unit tests assert it on a sparser set.
pub const SIN_COS_F32_MAX_ABS_ERROR: f32 = 1.0e-7;

/// The argument range (radians, either sign) over which
/// [`SIN_COS_F32_MAX_ABS_ERROR`] holds. Joint angles live in `[-pi, pi]`.
pub const SIN_COS_F32_VALID_RANGE: f32 = 1.0e4;

/// 2^100 and 2^-50, used to move tiny and huge arguments of [`sqrt_f32`]
/// into the range where the bit-level first guess and the Newton steps work.
const TWO_POW_100: f32 = 1.267_650_6e30;
const TWO_POW_M100: f32 = 7.888_609e-31;
const TWO_POW_50: f32 = 1.125_899_9e15;
const TWO_POW_M50: f32 = 8.881_784e-16;

/// Square root in single precision with a fixed operation count.
///
/// Method: a first guess of `1/sqrt(x)` from the exponent and mantissa bits
/// with the magic constant and the modified Newton step of L. V. Moroz,
/// C. J. Walczyk, A. Hrynchyshyn, V. Holimath and J. L. Cieslinski, "Fast
/// calculation of inverse square root with the use of magic constant --
/// analytical approach", Applied Mathematics and Computation 316 (2018),
/// 245-255 (their `InvSqrt` with one iteration, relative error 6.50e-4;
/// measured over every `f32` in `[1, 4)` by the test
/// `sqrt_first_guess_error`), one ordinary Newton-Raphson step for
/// `1/sqrt(x)` (the error becomes `1.5 e^2`, measured 7.7e-7), then
/// `s = x * y` and one correction `s + y/2 * (x - s*s)` on the residual,
/// which squares the error again and leaves only the rounding of `s*s`.
///
/// * Input: any `f32`. Tiny (`< 1e-30`, including subnormal) and huge
///   (`> 1e30`) arguments are scaled by an exact power of two first.
/// * Output: `sqrt(x)` within [`SQRT_F32_MAX_REL_ERROR`] relative error;
///   `+0`/`-0` return themselves, `+inf` returns `+inf`, negative numbers
///   and NaN return NaN.
/// * Cost: 14 floating-point operations and four integer ones on the
///   usual path (`1e-30 <= x <= 1e30`, tested with one unsigned compare of
///   the bit pattern), no loop, no division.
///
/// # Panics
/// Never.
#[must_use]
#[inline]
pub const fn sqrt_f32(x: f32) -> f32 {
    // `1e-30 <= x <= 1e30` as one unsigned compare on the bits: positive
    // floats order like their bit patterns, and negative numbers and NaN
    // fall outside the interval.
    if x.to_bits().wrapping_sub(SQRT_FAST_MIN_BITS) <= SQRT_FAST_MAX_BITS - SQRT_FAST_MIN_BITS {
        return sqrt_normal(x);
    }
    sqrt_edge(x)
}

/// Bit patterns of `1e-30` and `1e30`, the ends of [`sqrt_f32`]'s usual path.
const SQRT_FAST_MIN_BITS: u32 = 1.0e-30_f32.to_bits();
const SQRT_FAST_MAX_BITS: u32 = 1.0e30_f32.to_bits();

/// [`sqrt_f32`] outside its usual path: zeros, negative numbers, NaN,
/// infinity, and tiny or huge arguments.
#[cold]
#[inline(never)]
const fn sqrt_edge(x: f32) -> f32 {
    if !(x > 0.0) {
        // Zero keeps its sign; negative numbers and NaN have no root.
        return if x == 0.0 { x } else { f32::NAN };
    }
    if x == f32::INFINITY {
        return x;
    }
    if x < 1.0e-30 { sqrt_normal(x * TWO_POW_100) * TWO_POW_M50 } else { sqrt_normal(x * TWO_POW_M100) * TWO_POW_50 }
}

/// The body of [`sqrt_f32`] for `1e-30 <= x <= 1e30`... and a little
/// beyond: it needs `x` normal and below 2^100, so that
/// `bits >> 1 < 0x5f1f_fff9` (no wrap) and no product overflows.
#[inline]
const fn sqrt_normal(x: f32) -> f32 {
    let mut y = f32::from_bits(0x5f1f_fff9_u32.wrapping_sub(x.to_bits() >> 1));
    y = y * (MOROZ_K1 * (MOROZ_K2 - x * y * y));
    y = y * (1.5 - 0.5 * x * y * y);
    let s = x * y;
    s + 0.5 * y * (x - s * s)
}

/// The two coefficients of the modified Newton step of Moroz et al. (see
/// [`sqrt_f32`]), as published.
#[allow(clippy::excessive_precision)]
const MOROZ_K1: f32 = 0.703_952_253;
#[allow(clippy::excessive_precision)]
const MOROZ_K2: f32 = 2.389_244_56;

/// pi/2 split in three parts for Cody-Waite argument reduction
/// (W. J. Cody and W. Waite, "Software Manual for the Elementary
/// Functions", Prentice-Hall, 1980). The first part has 8 significant bits,
/// so `k * PIO2_1` is exact for `|k| < 2^16`; the constants are twice the
/// pi/4 split used by the Cephes single-precision library (from memory;
/// the test `pio2_split_sums_to_pi_over_2` checks the sum and bit counts).
#[allow(clippy::excessive_precision)] // written as the exact decimal of the f32 value
const PIO2_1: f32 = 1.570_312_5;
#[allow(clippy::excessive_precision)]
const PIO2_2: f32 = 4.837_512_969_970_703_125e-4;
#[allow(clippy::excessive_precision)]
const PIO2_3: f32 = 7.549_789_954_891_882_16e-8;

/// Taylor coefficients of sine and cosine (exact reciprocals of factorials,
/// rounded to f32). On `|r| <= pi/4` the first omitted term is below
/// 2e-9 for sine (r^11/11!) and 2e-10 for cosine (r^12/12!), far under
/// half an ulp of the result.
const S3: f32 = -1.0 / 6.0;
const S5: f32 = 1.0 / 120.0;
const S7: f32 = -1.0 / 5040.0;
const S9: f32 = 1.0 / 362_880.0;
const C2: f32 = -0.5;
const C4: f32 = 1.0 / 24.0;
const C6: f32 = -1.0 / 720.0;
const C8: f32 = 1.0 / 40_320.0;
const C10: f32 = -1.0 / 3_628_800.0;

/// 1.5 * 2^23: adding it to an `f32` of magnitude below 2^22 rounds that
/// value to an integer held in the low mantissa bits.
const ROUND_SHIFT: f32 = 12_582_912.0;

/// Sine and cosine of one angle in single precision with a fixed
/// operation count.
///
/// Method: Cody-Waite reduction `r = x - k*pi/2` with `k` the nearest
/// integer to `x * 2/pi` and pi/2 in three parts (see `PIO2_1`), then
/// Taylor polynomials of degree 9 (sine) and 10 (cosine) in Horner form on
/// `|r| <= pi/4`, and the quadrant `k mod 4` picks signs and swaps.
///
/// * Input: radians; accuracy [`SIN_COS_F32_MAX_ABS_ERROR`] holds for
///   `|x| <= SIN_COS_F32_VALID_RANGE`. Larger arguments, NaN and
///   infinities return `(NaN, NaN)`: no result of known accuracy exists
///   for them without a much longer reduction.
/// * Cost: about 30 floating-point operations, one move of the rounded
///   quotient's bits to an integer register, no loop, no division, no
///   double precision.
///
/// # Panics
/// Never.
#[must_use]
pub const fn sin_cos_f32(x: f32) -> (f32, f32) {
    // Also true for NaN.
    if !(x.abs() <= SIN_COS_F32_VALID_RANGE) {
        return (f32::NAN, f32::NAN);
    }
    sin_cos_reduced(x)
}

/// The body of [`sin_cos_f32`], for `|x| <= SIN_COS_F32_VALID_RANGE`.
#[inline]
const fn sin_cos_reduced(x: f32) -> (f32, f32) {
    let t = x * core::f32::consts::FRAC_2_PI;
    // Round to the nearest integer by adding 1.5 * 2^23: the sum has no
    // fraction bits left, so it is rounded (to even on a tie), and its low
    // mantissa bits hold k in two's complement (|t| < 2^22, so the sum
    // stays in [2^23, 2^24)). Subtracting the constant again is exact.
    let shifted = t + ROUND_SHIFT;
    let kf = shifted - ROUND_SHIFT;
    let k = shifted.to_bits();
    let r = ((x - kf * PIO2_1) - kf * PIO2_2) - kf * PIO2_3;
    let r2 = r * r;
    let sin_r = r + r * r2 * (S3 + r2 * (S5 + r2 * (S7 + r2 * S9)));
    let cos_r = 1.0 + r2 * (C2 + r2 * (C4 + r2 * (C6 + r2 * (C8 + r2 * C10))));
    match k & 3 {
        0 => (sin_r, cos_r),
        1 => (cos_r, -sin_r),
        2 => (-sin_r, -cos_r),
        _ => (-cos_r, sin_r),
    }
}

/// Bound on the absolute error (rad) of [`atan2_f32`] over all finite and
/// infinite arguments, against libm's `f64` `atan2`. Measured: 1.81e-7
/// (in the octants next to +-pi, where half an ulp of the result is
/// already 1.2e-7) over 2^21 angles around the circle on five radii from
/// 1e-30 to 1e36, 2e7 random finite bit patterns and 2e7 ratios in
/// `[0.3, 3]` around the octant boundaries; libm's own `atan2f` measures
/// 2.49e-7 on the same sample. The unit tests assert the bound on a
/// sparser sample of the same kinds.
pub const ATAN2_F32_MAX_ABS_ERROR: f32 = 2.0e-7;

/// tan(pi/8) and tan(3pi/8): the octant boundaries of [`atan2_f32`].
#[allow(clippy::excessive_precision)]
const TAN_PI_8: f32 = 0.414_213_562_373_095;
#[allow(clippy::excessive_precision)]
const TAN_3PI_8: f32 = 2.414_213_562_373_095;

/// `k * pi/4` for k = 1, 2, 3, 4 as a rounded `f32` (`_HI`) plus the
/// rounded remainder (`_LO`), so that `HI + LO` carries the angle to about
/// 1e-15. The test `atan2_angle_splits` checks each pair.
#[allow(clippy::excessive_precision)]
const PIO4_HI: f32 = 0.785_398_185_253_143_3;
#[allow(clippy::excessive_precision)]
const PIO4_LO: f32 = -2.185_569_414_336_896_4e-8;
#[allow(clippy::excessive_precision)]
const PIO2_HI: f32 = 1.570_796_370_506_286_6;
#[allow(clippy::excessive_precision)]
const PIO2_LO: f32 = -4.371_138_828_673_793e-8;
#[allow(clippy::excessive_precision)]
const PI3O4_HI: f32 = 2.356_194_496_154_785;
#[allow(clippy::excessive_precision)]
const PI3O4_LO: f32 = -5.962_440_319_251_527e-9;
#[allow(clippy::excessive_precision)]
const PI_HI: f32 = 3.141_592_741_012_573_2;
#[allow(clippy::excessive_precision)]
const PI_LO: f32 = -8.742_277_657_347_586e-8;

/// Coefficients of `atan(r) ~ r + r^3 (A3 + A5 r^2 + A7 r^4 + A9 r^6)` on
/// `|r| <= tan(pi/8)`, the minimax (equal-ripple) fit of the absolute
/// error found with the Remez exchange algorithm in 40-digit arithmetic
/// (E. Ya. Remez, 1934; as described in J.-M. Muller, "Elementary
/// Functions: Algorithms and Implementation", 3rd ed., Birkhauser, 2016,
/// chapter 3). Fit error: 4.94e-9 on `[0, 0.41422]`; the test
/// `atan_polynomial_error` measures the f32 coefficients in f64
/// arithmetic.
#[allow(clippy::excessive_precision)]
const A3: f32 = -0.333_327_566_042_478_3;
#[allow(clippy::excessive_precision)]
const A5: f32 = 0.199_718_769_852_042_7;
#[allow(clippy::excessive_precision)]
const A7: f32 = -0.138_244_293_412_366_9;
#[allow(clippy::excessive_precision)]
const A9: f32 = 0.079_025_197_094_382_26;

/// Four-quadrant arc tangent of `y / x` in single precision with a fixed
/// operation count.
///
/// Method: argument reduction by a multiple of pi/4 (the additive
/// reduction of W. J. Cody and W. Waite, "Software Manual for the
/// Elementary Functions", Prentice-Hall, 1980, chapter 11, here applied to
/// the pair `(x, |y|)`): the point is turned by `-k pi/4`, `k` in 0..=4,
/// chosen by comparing `|y|` with `tan(pi/8) |x|` and `tan(3pi/8) |x|`, so
/// that the reduced ratio `r` lies in `[-tan(pi/8), tan(pi/8)]`. For odd
/// `k` this is the identity `atan(u) - pi/4 = atan((u - 1)/(u + 1))`, i.e.
/// `r = (|y| - |x|) / (|y| + |x|)`; for even `k` a swap of coordinates.
/// Either way one division gives `r`. Then `atan(r)` from an odd minimax
/// polynomial of degree 9 (see `A3`), and the result is
/// `k pi/4 + atan(r)` with `k pi/4` in two parts, signed like `y`.
///
/// * Input: any two `f32`. Follows libm's `atan2f` on special values:
///   `atan2(+-0, +0) = +-0`, `atan2(+-0, -0) = +-pi`, infinities give the
///   limiting angles (`atan2(inf, inf) = pi/4`), NaN in gives NaN out.
/// * Output: radians in `[-pi, pi]`, within [`ATAN2_F32_MAX_ABS_ERROR`]
///   of the exact angle. Results near zero keep their relative accuracy
///   (`atan2(1e-30, 1) = 1e-30`).
/// * Cost: one division, 14 other floating-point operations and two
///   comparisons on the usual path (`0 < |x| + |y| < 1e38`, tested with
///   one unsigned compare of the sum's bit pattern), no loop.
///
/// # Panics
/// Never.
#[must_use]
#[inline(always)]
pub const fn atan2_f32(y: f32, x: f32) -> f32 {
    let sum = x.abs() + y.abs();
    // `0 < sum < 1e38` as one unsigned compare on the bits (`sum` is not
    // negative; NaN lies above the interval).
    if sum.to_bits().wrapping_sub(1) < ATAN2_FAST_END_BITS - 1 {
        return atan2_reduced(y, x);
    }
    atan2_edge(y, x)
}

/// Bit pattern of `1e38`, the end of [`atan2_f32`]'s usual path.
const ATAN2_FAST_END_BITS: u32 = 1.0e38_f32.to_bits();

/// [`atan2_f32`] outside its usual path: NaN, both arguments zero,
/// infinite or huge arguments.
#[cold]
#[inline(never)]
const fn atan2_edge(y: f32, x: f32) -> f32 {
    let sum = x.abs() + y.abs();
    if x.is_nan() || y.is_nan() {
        return x + y;
    }
    if sum == 0.0 {
        // Both zero: the sign of x picks 0 or pi, the sign of y the side.
        return (if x.is_sign_negative() { PI_HI } else { 0.0 }).copysign(y);
    }
    // Infinite or huge: the limiting direction, or the same direction at
    // a quarter of the length (exact), where `|x| + |y|` cannot overflow.
    if x.abs() == f32::INFINITY || y.abs() == f32::INFINITY {
        atan2_reduced(infinite_to_unit(y), infinite_to_unit(x))
    } else {
        atan2_reduced(0.25 * y, 0.25 * x)
    }
}

/// `+-1` for `+-inf`, `+-0` for anything else, keeping the sign.
#[inline]
const fn infinite_to_unit(v: f32) -> f32 {
    (if v.abs() == f32::INFINITY { 1.0_f32 } else { 0.0_f32 }).copysign(v)
}

/// The body of [`atan2_f32`], for finite arguments, not both zero, with
/// `|x| + |y|` finite.
#[inline]
const fn atan2_reduced(y: f32, x: f32) -> f32 {
    let (ax, ay) = (x.abs(), y.abs());
    // Per octant of (|x|, |y|): numerator and denominator of the reduced
    // ratio, and the angle k pi/4 to add for x >= 0 and for x < 0 (where
    // the angle is pi minus the first-quadrant one).
    let (num, den, pos, neg) = if ay <= TAN_PI_8 * ax {
        (ay, ax, (0.0, 0.0), (PI_HI, PI_LO))
    } else if ay <= TAN_3PI_8 * ax {
        (ay - ax, ay + ax, (PIO4_HI, PIO4_LO), (PI3O4_HI, PI3O4_LO))
    } else {
        (-ax, ay, (PIO2_HI, PIO2_LO), (PIO2_HI, PIO2_LO))
    };
    let r = num / den;
    let (r, (hi, lo)) = if x.is_sign_negative() { (-r, neg) } else { (r, pos) };
    let z = r * r;
    let atan_r = r + r * z * (A3 + z * (A5 + z * (A7 + z * A9)));
    (hi + (lo + atan_r)).copysign(y)
}

impl Arith for f32 {
    const ZERO: Self = 0.0;
    const ONE: Self = 1.0;
    const TWO: Self = 2.0;
    const HALF: Self = 0.5;
    const PI: Self = core::f32::consts::PI;
    type Wide = Self;
    type Recip = Self;

    #[inline]
    fn mul_wide(self, w: Self) -> Self {
        self * w
    }

    #[inline]
    fn recip(den: Self) -> Option<Self> {
        Self::ONE.checked_div(den)
    }

    #[inline]
    fn mul_recip(num: Self, r: Self) -> Self {
        num * r
    }

    #[inline]
    fn ratio(num: u32, den: u32) -> Self {
        if den == 0 {
            return f32::NAN;
        }
        // Exact below 2^24 (f32) and 2^53 (f64); otherwise rounded once.
        #[allow(clippy::cast_precision_loss)]
        let (n, d) = (num as f32, den as f32);
        n / d
    }

    #[inline]
    fn admits_geometry(_lower_arm: Self, _a: Self, _d: Self) -> bool {
        true
    }

    #[inline]
    fn abs(self) -> Self {
        f32::abs(self)
    }

    #[inline]
    fn checked_div(self, rhs: Self) -> Option<Self> {
        let q = self / rhs;
        if q.is_finite() { Some(q) } else { None }
    }

    #[inline]
    fn is_finite(self) -> bool {
        f32::is_finite(self)
    }

    #[inline]
    fn all_finite(v: [Self; 3]) -> bool {
        // A finite value times zero is a zero; an infinity or NaN gives
        // NaN, which then fails the comparison. Three multiplications and
        // one comparison instead of three classifications.
        let [a, b, c] = v;
        a * 0.0 + b * 0.0 + c * 0.0 == 0.0
    }

    #[inline]
    fn from_f64(v: f64) -> Option<Self> {
        // `as` rounds to nearest and maps out-of-range values to infinity.
        #[allow(clippy::cast_possible_truncation)]
        let f = v as f32;
        if f.is_finite() { Some(f) } else { None }
    }

    #[inline]
    fn to_f64(self) -> f64 {
        f64::from(self)
    }
}

impl Real for f32 {
    #[inline]
    fn recip_internal(den: Self) -> Option<Self> {
        Self::ONE.checked_div(den)
    }

    #[inline]
    fn mul_recip_internal(num: Self, r: Self) -> Self {
        num * r
    }

    #[inline(always)]
    fn sqrt(self) -> Self {
        sqrt_f32(self)
    }

    #[inline(always)]
    fn atan2(self, x: Self) -> Self {
        atan2_f32(self, x)
    }

    /// [`atan2_f32`]'s usual path without its range test: the arguments
    /// are inside it by the caller's promise.
    #[inline(always)]
    fn atan2_bounded(self, x: Self) -> Self {
        atan2_reduced(self, x)
    }

    #[inline]
    fn sin_cos(self) -> (Self, Self) {
        sin_cos_f32(self)
    }

    /// [`sin_cos_f32`] without its range test: the argument is inside
    /// [`SIN_COS_F32_VALID_RANGE`] by the caller's promise.
    #[inline]
    fn sin_cos_bounded(self) -> (Self, Self) {
        sin_cos_reduced(self)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative error of `got` against the f64 value `want`.
    fn rel_err(got: f32, want: f64) -> f64 {
        ((f64::from(got) - want) / want).abs()
    }

    #[test]
    fn pio2_split_sums_to_pi_over_2() {
        let sum = f64::from(PIO2_1) + f64::from(PIO2_2) + f64::from(PIO2_3);
        // The three parts carry pi/2 to well beyond f32 precision.
        // (The third part, rounded to f32, leaves 1.8e-15.)
        assert!((sum - core::f64::consts::FRAC_PI_2).abs() < 4e-15);
        // PIO2_1 has at most 8 significant bits: its mantissa ends in 16 zeros.
        assert_eq!(PIO2_1.to_bits() & 0xffff, 0);
        // Exact product for the largest k in the valid range.
        let k = (SIN_COS_F32_VALID_RANGE * core::f32::consts::FRAC_2_PI) as i32 + 1;
        let kf = k as f32;
        assert_eq!(f64::from(kf * PIO2_1), f64::from(kf) * f64::from(PIO2_1));
    }

    #[test]
    fn sqrt_special_values() {
        assert_eq!(sqrt_f32(0.0).to_bits(), 0.0f32.to_bits());
        assert_eq!(sqrt_f32(-0.0).to_bits(), (-0.0f32).to_bits());
        assert_eq!(sqrt_f32(f32::INFINITY), f32::INFINITY);
        assert!(sqrt_f32(-1.0).is_nan());
        assert!(sqrt_f32(f32::NEG_INFINITY).is_nan());
        assert!(sqrt_f32(f32::NAN).is_nan());
        assert_eq!(sqrt_f32(4.0), 2.0);
        assert_eq!(sqrt_f32(1.0), 1.0);
    }

    #[test]
    fn usual_path_ends_give_the_same_accuracy_on_both_sides() {
        // sqrt: each end of the usual path, one ulp inside and outside
        // (the bit compare must split exactly where the float compare did).
        for end in [1.0e-30f32, 1.0e30] {
            let b = end.to_bits();
            for v in [f32::from_bits(b - 1), end, f32::from_bits(b + 1)] {
                let err = rel_err(sqrt_f32(v), f64::from(v).sqrt());
                assert!(err <= f64::from(SQRT_F32_MAX_REL_ERROR), "sqrt({v:e}): {err:e}");
            }
        }
        // Negative numbers, however small or large, have no root.
        for v in [-1.0e-30f32, -1.0e30, -1.0e-45, -f32::MIN_POSITIVE, -1.0] {
            assert!(sqrt_f32(v).is_nan(), "sqrt({v:e})");
        }
        // atan2: sums of magnitudes on each side of 1e38 and the smallest
        // positive one, in all four quadrants.
        let end = 1.0e38f32;
        let below = f32::from_bits(end.to_bits() - 1);
        let pairs = [(end, 0.0f32), (below, 0.0), (0.5 * end, 0.5 * end), (0.5 * below, 0.5 * below), (1.0e-45, 0.0)];
        for (a, b) in pairs {
            for (y, x) in [(a, b), (b, a), (-a, b), (a, -b), (-b, -a)] {
                let err = atan2_err(y, x);
                assert!(err <= f64::from(ATAN2_F32_MAX_ABS_ERROR), "atan2({y:e}, {x:e}): {err:e}");
            }
        }
    }

    #[test]
    fn bounded_atan2_is_the_usual_path() {
        // Around the circle on radii from tiny to large: the same bits.
        for radius in [1.0e-20f32, 1.0e-3, 1.0, 3.7, 1.0e20] {
            for i in 0..4096 {
                let a = (i as f32) * (2.0 * core::f32::consts::PI / 4096.0) - core::f32::consts::PI;
                let (s, c) = sin_cos_f32(a);
                let (y, x) = (radius * s, radius * c);
                assert_eq!(Real::atan2_bounded(y, x).to_bits(), atan2_f32(y, x).to_bits(), "{y} {x}");
            }
        }
    }

    #[test]
    fn bounded_sin_cos_is_the_checked_one_inside_its_range() {
        let n = 20_000;
        for i in 0..=n {
            let x = -SIN_COS_F32_VALID_RANGE + 2.0 * SIN_COS_F32_VALID_RANGE * (i as f32) / (n as f32);
            for v in [x, x * 1.0e-4, x * 1.0e-8] {
                let (s, c) = Real::sin_cos_bounded(v);
                let (s_want, c_want) = sin_cos_f32(v);
                assert_eq!((s.to_bits(), c.to_bits()), (s_want.to_bits(), c_want.to_bits()), "{v}");
            }
        }
    }

    #[test]
    fn all_finite_agrees_with_is_finite() {
        let values =
            [0.0f32, -0.0, 1.0, -3.5, f32::MAX, -f32::MAX, 1.0e-45, f32::INFINITY, f32::NEG_INFINITY, f32::NAN];
        for a in values {
            for b in values {
                for c in values {
                    let want = a.is_finite() && b.is_finite() && c.is_finite();
                    assert_eq!(<f32 as Arith>::all_finite([a, b, c]), want, "{a} {b} {c}");
                    let wide = [f64::from(a), f64::from(b), f64::from(c)];
                    assert_eq!(<f64 as Arith>::all_finite(wide), want, "{a} {b} {c} (f64)");
                }
            }
        }
        assert!(<f64 as Arith>::all_finite([f64::MAX, -f64::MAX, 5e-324]));
        assert!(!<f64 as Arith>::all_finite([f64::MAX, f64::NAN, 0.0]));
    }

    #[test]
    fn sqrt_error_over_all_binades() {
        // Every 4099th positive finite bit pattern (about 520,000 values,
        // subnormals and the largest values included) plus the last one.
        let mut worst = 0.0f64;
        let mut bits = 1u32;
        while bits < f32::INFINITY.to_bits() {
            let x = f32::from_bits(bits);
            worst = worst.max(rel_err(sqrt_f32(x), libm::sqrt(f64::from(x))));
            bits += 4099;
        }
        let x = f32::MAX;
        worst = worst.max(rel_err(sqrt_f32(x), libm::sqrt(f64::from(x))));
        assert!(worst <= f64::from(SQRT_F32_MAX_REL_ERROR), "worst {worst:e}");
        // The bound is tight, not loose: it is within 4x of what is seen.
        assert!(worst > f64::from(SQRT_F32_MAX_REL_ERROR) / 4.0, "worst {worst:e}");
    }

    #[test]
    fn sin_cos_error_over_valid_range() {
        let mut worst = 0.0f64;
        let n = 400_000;
        for i in 0..=n {
            // Dense on [-2pi, 2pi], where joint angles live ...
            let x = -2.0 * core::f32::consts::TAU + 4.0 * core::f32::consts::TAU * (i as f32) / (n as f32);
            // ... and sparse out to the edge of the valid range.
            let y = -SIN_COS_F32_VALID_RANGE + 2.0 * SIN_COS_F32_VALID_RANGE * (i as f32) / (n as f32);
            for v in [x, y] {
                let (s, c) = sin_cos_f32(v);
                let (ws, wc) = libm::sincos(f64::from(v));
                worst = worst.max((f64::from(s) - ws).abs()).max((f64::from(c) - wc).abs());
            }
        }
        assert!(worst <= f64::from(SIN_COS_F32_MAX_ABS_ERROR), "worst {worst:e}");
        assert!(worst > f64::from(SIN_COS_F32_MAX_ABS_ERROR) / 4.0, "worst {worst:e}");
    }

    #[test]
    fn sin_cos_quadrant_boundaries_and_specials() {
        use core::f32::consts::{FRAC_PI_2, FRAC_PI_4, PI};
        for x in [0.0, FRAC_PI_4, FRAC_PI_2, PI, -PI, -FRAC_PI_2, 3.0 * FRAC_PI_4, -3.0 * FRAC_PI_4] {
            let (s, c) = sin_cos_f32(x);
            let (ws, wc) = libm::sincos(f64::from(x));
            assert!((f64::from(s) - ws).abs() <= f64::from(SIN_COS_F32_MAX_ABS_ERROR));
            assert!((f64::from(c) - wc).abs() <= f64::from(SIN_COS_F32_MAX_ABS_ERROR));
        }
        // Tiny arguments keep full relative precision in the sine.
        let (s, c) = sin_cos_f32(1e-20);
        assert_eq!(s, 1e-20);
        assert_eq!(c, 1.0);
        for bad in [f32::NAN, f32::INFINITY, f32::NEG_INFINITY] {
            let (s, c) = sin_cos_f32(bad);
            assert!(s.is_nan() && c.is_nan());
        }
        // Outside the valid range: NaN, never a value of unknown accuracy.
        for big in [f32::MAX, -f32::MAX, 3.0e9, -1.0e20, SIN_COS_F32_VALID_RANGE * 1.001] {
            let (s, c) = sin_cos_f32(big);
            assert!(s.is_nan() && c.is_nan());
        }
        let (s, _) = sin_cos_f32(SIN_COS_F32_VALID_RANGE);
        assert!(s.is_finite());
    }

    #[test]
    fn sqrt_first_guess_error() {
        // The relative error of the guess is the same in every other
        // binade (the guess scales by 2 when x scales by 4), so every f32
        // in [1, 4) covers all inputs. Moroz et al. publish 6.50196699e-4
        // in exact arithmetic; evaluated in f32 it measures 6.50206e-4.
        const PUBLISHED: f64 = 6.503e-4;
        const AFTER_NEWTON: (f64, f64) = (7.0e-7, 8.0e-7);
        let (mut guess, mut newton, mut root) = (0.0f64, 0.0f64, 0.0f64);
        let mut bits = 1.0f32.to_bits();
        while bits < 4.0f32.to_bits() {
            let x = f32::from_bits(bits);
            let want = 1.0 / libm::sqrt(f64::from(x));
            let mut y = f32::from_bits(0x5f1f_fff9_u32.wrapping_sub(x.to_bits() >> 1));
            y = y * (MOROZ_K1 * (MOROZ_K2 - x * y * y));
            guess = guess.max(rel_err(y, want));
            y = y * (1.5 - 0.5 * x * y * y);
            newton = newton.max(rel_err(y, want));
            root = root.max(rel_err(sqrt_f32(x), libm::sqrt(f64::from(x))));
            bits += 1;
        }
        assert!(guess <= PUBLISHED && guess > 0.99 * PUBLISHED, "guess {guess:e}");
        assert!(newton > AFTER_NEWTON.0 && newton < AFTER_NEWTON.1, "newton {newton:e}");
        assert!(root <= f64::from(SQRT_F32_MAX_REL_ERROR), "root {root:e}");
    }

    /// Absolute error of `atan2_f32(y, x)` against libm's f64 `atan2`.
    fn atan2_err(y: f32, x: f32) -> f64 {
        (f64::from(atan2_f32(y, x)) - libm::atan2(f64::from(y), f64::from(x))).abs()
    }

    #[test]
    fn atan2_angle_splits() {
        // Each HI + LO must carry k pi/4 to far beyond f32 precision: LO,
        // itself rounded to 24 bits, leaves at most 2^-25 |LO| < 4e-15.
        // The f64 reference (pi within 1.3e-16) and sum add below 1e-15.
        const PI_F64: f64 = core::f64::consts::PI;
        let pairs = [(PIO4_HI, PIO4_LO), (PIO2_HI, PIO2_LO), (PI3O4_HI, PI3O4_LO), (PI_HI, PI_LO)];
        for (k, (hi, lo)) in pairs.into_iter().enumerate() {
            let want = (k as f64 + 1.0) * PI_F64 / 4.0;
            assert_eq!(f64::from(hi), f64::from(want as f32), "hi is k pi/4 rounded");
            assert!((f64::from(hi) + f64::from(lo) - want).abs() < 4e-15, "k = {}", k + 1);
        }
    }

    #[test]
    fn atan_polynomial_error() {
        // The polynomial alone, f32 coefficients evaluated in f64, on the
        // reduced interval: near the Remez fit error of 4.94e-9.
        const FIT: (f64, f64) = (4.5e-9, 6e-9);
        let n = 100_000;
        let mut worst = 0.0f64;
        for i in 0..=n {
            let r = 0.414_22 * f64::from(i) / f64::from(n);
            let z = r * r;
            let (a3, a5, a7, a9) = (f64::from(A3), f64::from(A5), f64::from(A7), f64::from(A9));
            let p = r + r * z * (a3 + z * (a5 + z * (a7 + z * a9)));
            worst = worst.max((p - libm::atan(r)).abs());
        }
        assert!(worst > FIT.0 && worst < FIT.1, "worst {worst:e}");
    }

    #[test]
    fn atan2_error_around_the_circle() {
        // 2^21 angles evenly spread around the full turn (every octant,
        // both signs of each coordinate) on radii from tiny to huge.
        let n = 1 << 19;
        let mut worst = 0.0f64;
        for radius in [1e-30, 1.0, 0.7, 3.0e4, 1e36] {
            for i in 0..n {
                let t = core::f64::consts::TAU * (f64::from(i) + 0.37) / f64::from(n) - core::f64::consts::PI;
                let (s, c) = libm::sincos(t);
                worst = worst.max(atan2_err((radius * s) as f32, (radius * c) as f32));
            }
        }
        assert!(worst <= f64::from(ATAN2_F32_MAX_ABS_ERROR), "worst {worst:e}");
        assert!(worst > f64::from(ATAN2_F32_MAX_ABS_ERROR) / 4.0, "worst {worst:e}");
    }

    #[test]
    fn atan2_error_on_random_bit_patterns() {
        // Arbitrary finite pairs, including subnormals and ratios far
        // beyond 1e30 either way: a linear congruential generator
        // (constants of Numerical Recipes, 2nd ed., section 7.1) over the
        // raw bits.
        let mut state = 0x2545_f491_u32;
        let mut next = || {
            state = state.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
            state
        };
        let mut worst = 0.0f64;
        let mut count = 0;
        while count < 400_000 {
            let (y, x) = (f32::from_bits(next()), f32::from_bits(next()));
            if y.is_finite() && x.is_finite() {
                worst = worst.max(atan2_err(y, x));
                count += 1;
            }
        }
        assert!(worst <= f64::from(ATAN2_F32_MAX_ABS_ERROR), "worst {worst:e}");
    }

    #[test]
    fn atan2_octant_boundaries_and_extreme_ratios() {
        let mut worst = 0.0f64;
        for base in [TAN_PI_8, TAN_3PI_8, 1.0] {
            let mut v = base;
            // Eight f32 steps either side of each boundary ratio.
            for _ in 0..8 {
                v = f32::from_bits(v.to_bits() - 1);
            }
            for _ in 0..16 {
                for (sy, sx) in [(1.0, 1.0), (1.0, -1.0), (-1.0, 1.0), (-1.0, -1.0)] {
                    worst = worst.max(atan2_err(sy * v, sx * 1.0)).max(atan2_err(sy * 1.0, sx * v));
                }
                v = f32::from_bits(v.to_bits() + 1);
            }
        }
        for e in -40..=40 {
            let ratio = libm::powf(10.0, e as f32);
            for (y, x) in [(ratio, 1.0), (1.0, ratio), (-ratio, 1.0), (ratio, -1.0), (-1.0, -ratio)] {
                worst = worst.max(atan2_err(y, x));
            }
        }
        for (y, x) in
            [(f32::MAX, f32::MAX), (f32::MAX, -f32::MAX), (f32::MAX, 1.0), (1e-45, f32::MAX), (-1e-45, -1e-45)]
        {
            worst = worst.max(atan2_err(y, x));
        }
        assert!(worst <= f64::from(ATAN2_F32_MAX_ABS_ERROR), "worst {worst:e}");
        // Tiny angles keep their relative accuracy.
        assert_eq!(atan2_f32(1e-30, 1.0), 1e-30);
        assert_eq!(atan2_f32(-1e-30, 2.0), -5e-31);
    }

    #[test]
    fn atan2_special_values_follow_libm() {
        let inf = f32::INFINITY;
        let specials = [0.0, -0.0, 1.0, -1.0, inf, -inf, 1e-45, -3e38];
        for y in specials {
            for x in specials {
                let (got, want) = (atan2_f32(y, x), libm::atan2f(y, x));
                assert!((f64::from(got) - f64::from(want)).abs() <= f64::from(ATAN2_F32_MAX_ABS_ERROR), "{y} {x}");
                assert_eq!(got.is_sign_negative(), want.is_sign_negative(), "sign of atan2({y}, {x})");
            }
        }
        assert_eq!(atan2_f32(0.0, 0.0).to_bits(), 0.0f32.to_bits());
        assert_eq!(atan2_f32(-0.0, 0.0).to_bits(), (-0.0f32).to_bits());
        assert_eq!(atan2_f32(0.0, -0.0), core::f32::consts::PI);
        assert_eq!(atan2_f32(-0.0, -1.0), -core::f32::consts::PI);
        assert_eq!(atan2_f32(inf, inf), core::f32::consts::FRAC_PI_4);
        assert_eq!(atan2_f32(-inf, -inf), -3.0 * core::f32::consts::FRAC_PI_4);
        for (y, x) in [(f32::NAN, 1.0), (1.0, f32::NAN), (f32::NAN, inf), (inf, f32::NAN), (0.0, f32::NAN)] {
            assert!(atan2_f32(y, x).is_nan(), "{y} {x}");
        }
    }
}
