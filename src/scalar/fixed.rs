//! Fixed point for microcontrollers without a floating-point unit.
//!
//! Two 32-bit formats, each a signed `i32` with `i32::MIN` reserved as
//! "not a number" (NaN): the symmetric range is `[-(2^31 - 1), 2^31 - 1]`
//! LSBs.
//!
//! | type | format | range | LSB | used for |
//! |---|---|---|---|---|
//! | [`Fixed`] | Q7.25 | +-64 | 2.98e-8 | the solvers' internal values (lower-arm units), angles (rad), margins |
//! | [`FixedWide`] | Q18.14 | +-131 072 | 6.10e-5 | API quantities: mm, mm/s, rad/s, N, N*mm |
//!
//! # Why two formats (the decision)
//! Inside, deltakin works in lengths normalised by the lower arm (see
//! `robot.rs`), so its values are of order one; at the API it takes and
//! returns millimetres, up to a few thousand. One 32-bit format cannot do
//! both: holding 8000 mm needs 14 integer bits, which leaves 17 fraction
//! bits, an LSB of 7.6e-6 lower arms, and the angle target (5 urad) would
//! be lost to rounding in the first product. So the scalar trait names a
//! second type, [`crate::Arith::Wide`], for API quantities with a physical
//! unit, and converts at the edges with three hooks; floats set
//! `Wide = Self` and keep their results bit for bit. Only the edges change:
//! the solvers, guards and Jacobian stay generic.
//!
//! # Range analysis (why Q7.25 for the internal type)
//! In lower-arm units write `a` for the upper arm, `d` for
//! `base_radius - platform_radius`, and `R = sqrt((|d| + a)^2 + a^2)`, the
//! largest distance of a forward-kinematics sphere centre from the origin.
//! The largest intermediate values are:
//!
//! * inverse kinematics: the arm-plane point is within `1 + a < 2` of the
//!   actuator axis for any reachable target, so squares and their sum stay
//!   below 4, `|K| <= rho <= 2`, and the numerators of `cos`/`sin` below 4;
//! * forward kinematics: centre differences `|u|, |v| <= 2R`; `|n| = |u x v|`
//!   is twice the centre triangle's area, at most `(3 sqrt3 / 2) R^2`;
//!   `|u|^2 |v x n|` is at most `4 R^2 * 2R * 2.6 R^2 = 20.8 R^5`, the
//!   largest product, and the circumcentre numerator is `2 |n|^2 r_c <=
//!   13.5 R^4` at any pose that assembles.
//!
//! The envelope demands `R <= 1.25` ([`Fixed::ENVELOPE_MAX_R`]), so every
//! value stays below `20.8 * 1.25^5 = 63.5 < 64`: seven integer bits (sign
//! included) suffice, and the 25 fraction bits left give the resolution.
//! Q8.24 with `R <= 1.4` was tried first; its rounding left the forward
//! kinematics of a 2000 mm arm at 5.0 um worst case, on the target, so one
//! integer bit went back to resolution. The envelope covers upper arms up
//! to 0.7 of the lower arm with `d` up to 0.33 of it, or 0.6 with `d` up to
//! 0.5: the ratios of practical rotary deltas (lower/upper of 1.5 to 3.5). Outside the proven range the operations are checked
//! (below), so an out-of-envelope input gives an error, never a wrapped
//! value.
//!
//! # Resolution for a 1 m class robot (lower arm 1000 mm)
//! * Q7.25 internal length: 2.98e-8 lower arms = 0.03 um; angle: 0.03 urad.
//! * Q18.14 API length: 6.1e-5 mm = 0.061 um; its range +-131 m covers
//!   positions, velocities to 131 m/s and torques to 131 N*m.
//! * Measured worst case against the independent f64 reference (host
//!   tests, `host-tests/tests/fixed_point.rs`, 20,000 random machines and
//!   guarded poses at and between the corners of the envelope, both
//!   margins at least 0.1), for the dimensions as the robot holds them:
//!   joint angle 3.8 urad (bound 5 urad); platform position 3.9 um on a
//!   4000 mm lower arm, 0.9e-6 lower arms (bound 5 um over the whole
//!   envelope). The position error is constant in lower-arm units and
//!   largest with a wide base, the arms near vertical and the parallel
//!   margin near its 0.1 guard, where the platform lies close to the plane
//!   of the sphere centres and the intersection amplifies the centres'
//!   rounding about 26 times. Three things keep the arithmetic from adding
//!   to that (forward kinematics was at 17.6 um before them): the
//!   reciprocal of the centre triangle's `2 |n|` keeps a 30-bit mantissa
//!   ([`crate::Real::recip_internal`]), `h^2` comes from exact squares
//!   ([`crate::Real::height_sq`]), and one Newton step on the sphere
//!   equations closes the solution ([`crate::Real::REFINES_FORWARD`]).
//! * Dimensions are held in Q18.14 (61 nm): a dimension given to finer
//!   precision is rounded by up to 31 nm, which on a small machine at a
//!   low serial margin turns a joint by more than the bound (13 urad on a
//!   50 mm arm with a 10 mm upper arm at margin 0.1). That is a different
//!   machine, not an arithmetic error: give dimensions the robot can hold.
//!
//! # Cost on a Cortex-M0 (no FPU, 32 x 32 -> 32 bit multiply, no divide)
//! No operation of the solvers calls the 64-bit library multiply or
//! divide (a robot's construction does, once):
//! products are four 16 x 16 bit partial products with the rounding done
//! on 32-bit words, quotients a reciprocal from a 16-entry seed and three
//! Newton steps with a fixed correction (a 31-step long division as its
//! never-taken fallback), the square root a 28-step digit-by-digit loop on 32-bit words,
//! and `atan2` / `sin_cos` CORDIC loops cut short with a one-step finish
//! (see `cordic.rs`). Measured with `ci/target-report.sh` (QEMU
//! instruction counts, worst case over the probe's poses): guarded inverse
//! kinematics 13 424 -> 10 421 instructions, forward 13 115 -> 10 107;
//! with the per-arm model 11 703 and 10 481; with the leaner checked
//! product (both magnitudes below 2^31: one-word cross sum) and the
//! division by a Newton-iterated reciprocal 10 982, and forward 12 866
//! with the precision work above (the Newton step of the forward
//! kinematics costs about 2 500). What remains is mostly the
//! straight-line checked arithmetic of the solvers and guards (about 85
//! checked products per inverse kinematics, about 20 instructions each
//! plus the checks of the sums around them), the three square roots (a
//! 28-step loop), the divisions and the three `atan2` (about 450 each).
//! The reciprocal division gains less than its operation count suggests
//! (about 50 instructions a division); written with 64-bit products it was
//! slower than the 31-step loop, because the compiler turned them into
//! calls to the library multiply ([`mul_words`] keeps them on words).
//!
//! # Overflow policy
//! Every operator is checked and never panics: `+`, `-`, `*` (64-bit
//! product, rounded to nearest, ties towards +inf), unary `-`, `abs` and
//! [`crate::Arith::checked_div`] return NaN when the exact result is out of
//! range or an operand is NaN. NaN compares unordered (like a float NaN),
//! `is_finite` is `false` for it, and the generic solvers already turn a
//! non-finite value or a failed comparison into an [`crate::Error`]. No
//! operation wraps or saturates silently. Within the validated envelope
//! the range analysis above shows that no NaN arises from overflow.
//!
//! # Conversions at the edges (rounding rule)
//! Every constructor rounds to the nearest representable value, ties away
//! from zero, and returns `None` (never a wrapped value) when the result
//! is outside the range; see each function. Back-conversions to integers
//! round the same way; conversions to `f32` round to nearest-even (the
//! `as` rule) and map NaN to `f32::NAN`.

use core::cmp::Ordering;
use core::ops::{Add, Mul, Neg, Sub};

use super::cordic::{self, FRAC, NAN};
use super::{Arith, Real};

/// Q7.25 fixed point: the internal scalar of the fixed-point path. See the
/// module documentation for the format, the range analysis and the
/// overflow policy. `Robot<Fixed>` takes lengths as [`FixedWide`].
#[derive(Clone, Copy, Debug)]
pub struct Fixed(i32);

/// Q18.14 fixed point: API quantities of the fixed-point path
/// (millimetres, mm/s, rad/s, newtons, N*mm). Same overflow policy as
/// [`Fixed`].
#[derive(Clone, Copy, Debug)]
pub struct FixedWide(i32);

/// A normalised reciprocal of a positive [`FixedWide`] value `D` (raw):
/// `m = round(2^(k + 30) / D)` with `k` the bit length of `D`, so
/// `2^30 <= m <= 2^31`; a quotient is then one 64-bit product and a shift.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct FixedRecip {
    m: i64,
    k: u32,
}

const WIDE_FRAC: u32 = 14;
const ONE_RAW: i32 = 1 << FRAC;
const WIDE_ONE_RAW: i32 = 1 << WIDE_FRAC;

/// `raw` as an `i32` value, or NaN when outside `(i32::MIN, i32::MAX]`.
#[inline]
fn narrow(raw: i64) -> i32 {
    if raw > i64::from(i32::MAX) || raw <= i64::from(i32::MIN) {
        NAN
    } else {
        #[allow(clippy::cast_possible_truncation)] // range checked above
        let v = raw as i32;
        v
    }
}

/// The exact product of two `u32` as a `u64`, from four 16 x 16 -> 32
/// bit partial products (schoolbook multiplication, e.g. D. E. Knuth, The
/// Art of Computer Programming vol. 2, 4.3.1, algorithm M with base
/// 2^16). A Cortex-M0 multiplies 32 x 32 -> 32 bits only, so a plain
/// `u64` product there is a call to the general 64 x 64 bit library
/// routine; this form is four `MULS` and a few additions. Exact for every
/// input (each partial product is below 2^32 and the middle sum below
/// 3 * 2^16).
#[inline]
pub(super) fn mul_u32_wide(a: u32, b: u32) -> u64 {
    let (a0, a1) = (a & 0xFFFF, a >> 16);
    let (b0, b1) = (b & 0xFFFF, b >> 16);
    let (p00, p01, p10, p11) = (a0 * b0, a0 * b1, a1 * b0, a1 * b1);
    // Each term below 2^16: the sum is below 3 * 2^16.
    let mid = (p00 >> 16) + (p01 & 0xFFFF) + (p10 & 0xFFFF);
    let lo = (mid << 16) | (p00 & 0xFFFF);
    // The full product is below 2^64, so its high word cannot overflow.
    let hi = p11 + (p01 >> 16) + (p10 >> 16) + (mid >> 16);
    (u64::from(hi) << 32) | u64::from(lo)
}

/// The high and low words of `a * b`, on 32-bit words only (four 16 x 16
/// bit partial products, as [`mul_u32_wide`], without forming a 64-bit
/// value that a compiler could hand to the library multiply).
#[inline]
fn mul_words(a: u32, b: u32) -> (u32, u32) {
    let (a0, a1, b0, b1) = (a & 0xFFFF, a >> 16, b & 0xFFFF, b >> 16);
    // Each partial product below 2^32; the cross sum's carry is 2^48.
    let (mid, c1) = (a0 * b1).overflowing_add(a1 * b0);
    let (lo, c2) = (a0 * b0).overflowing_add(mid << 16);
    // The whole product is below 2^64: no overflow.
    let hi = a1 * b1 + (mid >> 16) + (u32::from(c1) << 16) + u32::from(c2);
    (hi, lo)
}

/// `floor(n / d)` when it is below 2^31, else `None`; `0 < d < 2^31`.
/// Exact.
///
/// Division by a reciprocal (D. E. Knuth, The Art of Computer Programming
/// vol. 2, 4.3.3 and its Newton iteration for the reciprocal): `d` is
/// normalised to `dn = d 2^k` in `[2^31, 2^32)`, its reciprocal `R ~
/// 2^63 / dn` comes from a 16-entry seed (relative error below 3.1 %) and
/// three Newton steps `R <- R (2 - dn R)` on 32-bit words. The estimate
/// `hi(n' R)` (`n'` the top 32 bits of `n` that matter), less a margin of
/// two, is at most the quotient and within [`QUOTIENT_FIXUPS`] of it;
/// that many fixed correction steps on the exact remainder bring it up.
/// Should a remainder still be out of place, the bit-by-bit division
/// ([`div_u64_by_u31_bitwise`]) answers instead: exact either way, in
/// bounded time.
#[inline]
fn div_u64_by_u31(n: u64, d: u32) -> Option<u32> {
    if d == 0 || d >= 1 << 31 || n >> 31 >= u64::from(d) {
        return None;
    }
    let mut q = quotient_estimate(n, d);
    let (hi, lo) = mul_words(q, d);
    let Some(mut rem) = n.checked_sub((u64::from(hi) << 32) | u64::from(lo)) else {
        return div_u64_by_u31_bitwise(n, d);
    };
    for _ in 0..QUOTIENT_FIXUPS {
        if rem >= u64::from(d) {
            rem -= u64::from(d);
            q += 1;
        }
    }
    if rem >= u64::from(d) {
        return div_u64_by_u31_bitwise(n, d);
    }
    Some(q)
}

/// Correction steps after the reciprocal estimate of [`div_u64_by_u31`]:
/// the largest correction over the tests' sweep is 4
/// (`reciprocal_division_needs_few_corrections`).
const QUOTIENT_FIXUPS: u32 = 6;

/// A lower estimate of `floor(n / d)` (`0 < d < 2^31`, `n < d 2^31`):
/// `hi(n' R)` less two units for the rounding of the Newton steps.
#[inline]
fn quotient_estimate(n: u64, d: u32) -> u32 {
    let k = d.leading_zeros(); // 1..=31
    let dn = d << k; // [2^31, 2^32)
    let r = reciprocal_q31(dn);
    // n < d 2^31 < 2^(63 - k): the bits from 2^(31 - k) up fit a word.
    #[allow(clippy::cast_possible_truncation)] // below 2^32, see above
    let top = (n >> (31 - k)) as u32;
    mul_words(top, r).0.saturating_sub(2)
}

/// `round(2^37 / (33 + 2 i))`: `2^31` over the middle of the `i`-th
/// sixteenth of `[1/2, 1)`, the seed of [`reciprocal_q31`].
const RECIP_SEED: [u32; 16] = [
    4_164_816_772,
    3_926_827_242,
    3_714_566_310,
    3_524_075_730,
    3_352_169_597,
    3_196_254_732,
    3_054_198_966,
    2_924_233_053,
    2_804_876_601,
    2_694_881_441,
    2_593_187_801,
    2_498_890_063,
    2_411_209_710,
    2_329_473_788,
    2_253_097_598,
    2_181_570_690,
];

/// `R ~ 2^63 / dn` to within about `2^-29` relative, for `dn` in
/// `[2^31, 2^32)`, as `u32` (the top clamped).
#[inline]
fn reciprocal_q31(dn: u32) -> u32 {
    // The four bits below the leading one pick the seed.
    let mut r = RECIP_SEED.get(((dn >> 27) & 0xF) as usize).copied().unwrap_or(1 << 31);
    for _ in 0..3 {
        // p = dn R / 2^32 ~ 2^31 (D R in Q.31 with D = dn / 2^32), in
        // (2^30, 2^32) for any R within 3.1 % of 1 / D or below it.
        let p = mul_words(dn, r).0;
        // 2 - D R in Q.31 (p > 0).
        let e = p.wrapping_neg();
        // R (2 - D R) <= 1 / D: at most 2^32 in Q.31, clamped to a word.
        let (hi, lo) = mul_words(r, e);
        r = if hi >= 1 << 31 { u32::MAX } else { (hi << 1) | (lo >> 31) };
    }
    r
}

/// `floor(n / d)` when it is below 2^31, else `None`; `0 < d < 2^31`: the
/// fallback of [`div_u64_by_u31`], one quotient bit per step.
///
/// Restoring (shift-and-subtract) long division, one quotient bit per
/// step, e.g. D. E. Knuth, The Art of Computer Programming vol. 2, 4.3.1.
/// The bits of `n` above the 31 lowest form the first partial remainder
/// (the quotient fits 31 bits exactly when that is below `d`); then a
/// fixed 31 steps bring down one bit each. Every quantity stays in 32 bits
/// (the remainder below `2d < 2^32`): a Cortex-M0 has no divide
/// instruction, and a general 64-bit division there is a long library
/// call. Exact.
#[inline]
fn div_u64_by_u31_bitwise(n: u64, d: u32) -> Option<u32> {
    if n >> 31 >= u64::from(d) {
        return None;
    }
    // Below d < 2^31.
    #[allow(clippy::cast_possible_truncation)]
    let mut rem = (n >> 31) as u32;
    // The 31 low bits of n, top first.
    #[allow(clippy::cast_possible_truncation)]
    let mut low = (n as u32) << 1;
    let mut q = 0u32;
    for _ in 0..31 {
        // rem < d, so the shifted value is below 2d < 2^32.
        rem = (rem << 1) | (low >> 31);
        low <<= 1;
        q <<= 1;
        if rem >= d {
            rem -= d;
            q |= 1;
        }
    }
    Some(q)
}

/// `(p + 2^(s-1)) >> s`: a shift rounding to nearest, ties towards +inf.
/// `s` is 1..=62 at every call site, and `|p| < 2^62` there.
#[inline]
fn shift_round(p: i64, s: u32) -> i64 {
    (p + (1i64 << (s - 1))) >> s
}

/// `n / d` rounded to nearest, ties away from zero; `d > 0`.
#[inline]
fn div_round(n: i64, d: i64) -> i64 {
    let half = d / 2;
    if n >= 0 { (n + half) / d } else { (n - half) / d }
}

/// Shared operator bodies for both formats (`F` fraction bits).
/// 32-bit checked sum: the exact sum when it is representable, else NaN
/// (a wrapped sum is detected by `checked_add`, the reserved value by the
/// comparison).
#[inline]
fn add_raw(a: i32, b: i32) -> i32 {
    if a == NAN || b == NAN {
        return NAN;
    }
    a.checked_add(b).unwrap_or(NAN)
}

/// 32-bit checked difference, as [`add_raw`].
#[inline]
fn sub_raw(a: i32, b: i32) -> i32 {
    if a == NAN || b == NAN {
        return NAN;
    }
    a.checked_sub(b).unwrap_or(NAN)
}

/// `a * b >> shift`, rounded to nearest with ties towards +inf, or NaN
/// when out of range; `shift` is 1..=31.
///
/// The magnitude product `P = |a| |b| < 2^62` comes as two words from
/// four 16 x 16 bit partial products (as [`mul_u32_wide`], with fewer
/// carries: both magnitudes are below 2^31). Rounding `+-P / 2^s` to nearest, ties
/// up, is `sign * floor((P + 2^(s-1) - neg) / 2^s)` with `neg` 1 for a
/// negative product (`floor((h - P) / 2^s) = -floor((P + h - 1) / 2^s)`),
/// so the whole rounding runs on the magnitude in 32-bit words, with the
/// same result as the 64-bit signed form. The quotient is representable
/// exactly when it is below 2^31, i.e. when the high word is below
/// `2^(s-1)`.
#[inline]
fn mul_raw(a: i32, b: i32, shift: u32) -> i32 {
    if a == NAN || b == NAN {
        return NAN;
    }
    let neg = (a ^ b) < 0;
    // Magnitudes below 2^31 (NaN excluded above): the high halves are
    // below 2^15, so each cross product is below 2^31 and their sum below
    // 2^32, one 32-bit word; the high product is below 2^30. Four `MULS`
    // and no 64-bit arithmetic on a Cortex-M0.
    let (ua, ub) = (a.unsigned_abs(), b.unsigned_abs());
    let (a0, a1, b0, b1) = (ua & 0xFFFF, ua >> 16, ub & 0xFFFF, ub >> 16);
    let mid = a0 * b1 + a1 * b0;
    let (lo, c1) = (a0 * b0).overflowing_add(mid << 16);
    // Below 2^31: the rounding term.
    let c = (1u32 << (shift - 1)) - u32::from(neg);
    let (lo, c2) = lo.overflowing_add(c);
    // Below 2^30 + 2^16 + 2: no overflow.
    let hi = a1 * b1 + (mid >> 16) + u32::from(c1) + u32::from(c2);
    if hi >= 1 << (shift - 1) {
        return NAN;
    }
    // Below 2^31 by the test above.
    #[allow(clippy::cast_possible_wrap)]
    let q = ((hi << (32 - shift)) | (lo >> shift)) as i32;
    if neg { -q } else { q }
}

/// `l^2 - (x^2 + y^2 + z^2)` in Q7.25 from the exact squares, rounded
/// to nearest (ties away from zero), or NaN when an operand is NaN or the
/// result is out of range. Each square is below 2^62, so the sum of the
/// three is below 2^64 and the difference is formed on magnitudes
/// without overflow.
#[inline]
fn height_sq_raw(l: i32, v: [i32; 3]) -> i32 {
    let [x, y, z] = v;
    if l == NAN || x == NAN || y == NAN || z == NAN {
        return NAN;
    }
    let sq = |c: i32| {
        let m = c.unsigned_abs();
        mul_u32_wide(m, m)
    };
    let (ll, s) = (sq(l), sq(x) + sq(y) + sq(z));
    let (mag, neg) = if ll >= s { (ll - s, false) } else { (s - ll, true) };
    // round(mag / 2^25), half away from zero; below 2^40.
    let q = (mag >> FRAC) + ((mag >> (FRAC - 1)) & 1);
    // Below 2^31, both signs are representable (-(2^31 - 1) is not NaN).
    match i32::try_from(q) {
        Ok(q) => {
            if neg {
                -q
            } else {
                q
            }
        }
        Err(_) => NAN,
    }
}

/// `(a << frac) / b`, rounded, or `None`.
#[inline]
fn div_raw(a: i32, b: i32, frac: u32) -> Option<i32> {
    if a == NAN || b == NAN || b == 0 {
        return None;
    }
    // Rounded to nearest, ties away from zero, is symmetric in the signs:
    // round(|a| 2^frac / |b|) = floor((|a| 2^frac + floor(|b| / 2)) / |b|),
    // negated when the signs differ. |a| 2^frac < 2^56; 0 < |b| < 2^31.
    let (ua, d) = (a.unsigned_abs(), b.unsigned_abs());
    let q = div_u64_by_u31((u64::from(ua) << frac) + u64::from(d / 2), d)?;
    // q < 2^31: both signs are representable.
    #[allow(clippy::cast_possible_wrap)]
    let q = q as i32;
    Some(if (a ^ b) < 0 { -q } else { q })
}

/// `num * 2^frac / den`, rounded to nearest, or NaN when `den` is 0 or the
/// quotient is out of range.
#[inline]
fn ratio_raw(num: u32, den: u32, frac: u32) -> i32 {
    if den == 0 {
        return NAN;
    }
    // num < 2^32, frac <= 25: the shifted numerator is below 2^57.
    if den < 1 << 31 {
        // The 32-bit long division; a quotient of 2^31 or more is NaN.
        return match div_u64_by_u31((u64::from(num) << frac) + u64::from(den / 2), den) {
            #[allow(clippy::cast_possible_wrap)] // below 2^31
            Some(q) => q as i32,
            None => NAN,
        };
    }
    let (n, d) = (u64::from(num) << frac, u64::from(den));
    let q = (n + d / 2) / d;
    match i64::try_from(q) {
        Ok(q) => narrow(q),
        Err(_) => NAN,
    }
}

/// `round(v * 2^frac)` or `None` when not finite or out of range.
fn from_f64_raw(v: f64, frac: u32) -> Option<i32> {
    // libm::round: ties away from zero.
    let s = libm::round(v * f64::from(1u32 << frac));
    if !(libm::fabs(s) <= f64::from(i32::MAX)) {
        return None;
    }
    // An integer within the i32 range: the conversion is exact.
    #[allow(clippy::cast_possible_truncation)]
    let r = s as i32;
    Some(r)
}

fn to_f64_raw(raw: i32, frac: u32) -> f64 {
    if raw == NAN { f64::NAN } else { f64::from(raw) / f64::from(1u32 << frac) }
}

fn cmp_raw(a: i32, b: i32) -> Option<Ordering> {
    if a == NAN || b == NAN { None } else { Some(a.cmp(&b)) }
}

macro_rules! impl_ops {
    ($t:ident, $frac:expr) => {
        impl PartialEq for $t {
            #[inline]
            fn eq(&self, other: &Self) -> bool {
                self.0 != NAN && self.0 == other.0
            }
        }

        impl PartialOrd for $t {
            #[inline]
            fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
                cmp_raw(self.0, other.0)
            }
        }

        impl Add for $t {
            type Output = Self;
            #[inline]
            fn add(self, rhs: Self) -> Self {
                Self(add_raw(self.0, rhs.0))
            }
        }

        impl Sub for $t {
            type Output = Self;
            #[inline]
            fn sub(self, rhs: Self) -> Self {
                Self(sub_raw(self.0, rhs.0))
            }
        }

        impl Mul for $t {
            type Output = Self;
            #[inline]
            fn mul(self, rhs: Self) -> Self {
                Self(mul_raw(self.0, rhs.0, $frac))
            }
        }

        impl Neg for $t {
            type Output = Self;
            #[inline]
            fn neg(self) -> Self {
                // NaN stays NaN; every other value has a negation.
                Self(if self.0 == NAN { NAN } else { -self.0 })
            }
        }

        impl $t {
            /// Not a number: the reserved raw value `i32::MIN`, the result
            /// of any failed operation.
            pub const NAN: Self = Self(NAN);
            /// The largest value.
            pub const MAX: Self = Self(i32::MAX);

            /// The value with raw bits `raw` (`raw / 2^fraction_bits`).
            #[must_use]
            pub const fn from_raw(raw: i32) -> Self {
                Self(raw)
            }

            /// The raw bits.
            #[must_use]
            pub const fn to_raw(self) -> i32 {
                self.0
            }

            /// From `f32`, rounded to nearest (ties away from zero);
            /// `None` for a non-finite or out-of-range value.
            #[must_use]
            pub fn from_f32(v: f32) -> Option<Self> {
                from_f64_raw(f64::from(v), $frac).map(Self)
            }

            /// To `f32`, rounded to nearest-even; NaN maps to `f32::NAN`.
            #[must_use]
            pub fn to_f32(self) -> f32 {
                if self.0 == NAN {
                    f32::NAN
                } else {
                    #[allow(clippy::cast_precision_loss)]
                    let v = self.0 as f32;
                    v / (1u32 << $frac) as f32
                }
            }

            /// `round(v * 2^frac / per_unit)`, or `None` out of range.
            #[inline]
            fn scaled_int(v: i64, per_unit: i64) -> Option<Self> {
                // v * 2^frac / per_unit, rounded; |v| < 2^31, so the
                // numerator is below 2^55.
                let q = narrow(div_round(v << $frac, per_unit));
                if q == NAN { None } else { Some(Self(q)) }
            }

            #[inline]
            fn to_scaled_int(self, per_unit: i64) -> Option<i32> {
                if self.0 == NAN {
                    return None;
                }
                // |raw| * per_unit < 2^31 * 2^20 = 2^51.
                let v = div_round(i64::from(self.0) * per_unit, 1i64 << $frac);
                let v = narrow(v);
                if v == NAN { None } else { Some(v) }
            }
        }
    };
}

impl_ops!(Fixed, FRAC);
impl_ops!(FixedWide, WIDE_FRAC);

impl FixedWide {
    /// From whole millimetres; `None` beyond +-131 071 mm. Exact.
    #[must_use]
    pub const fn from_mm(mm: i32) -> Option<Self> {
        if mm > 131_071 || mm < -131_071 { None } else { Some(Self(mm << WIDE_FRAC)) }
    }

    /// From whole micrometres, rounded to nearest (ties away from zero;
    /// error at most half an LSB, 0.03 um); `None` beyond +-131 071 mm.
    #[must_use]
    pub fn from_um(um: i32) -> Option<Self> {
        Self::scaled_int(i64::from(um), 1000)
    }

    /// To whole millimetres, rounded to nearest (ties away from zero);
    /// `None` for NaN.
    #[must_use]
    pub fn to_mm(self) -> Option<i32> {
        self.to_scaled_int(1)
    }

    /// To whole micrometres, rounded to nearest (ties away from zero);
    /// `None` for NaN. Never out of range (131 071 mm = 1.3e8 um).
    #[must_use]
    pub fn to_um(self) -> Option<i32> {
        self.to_scaled_int(1000)
    }
}

/// Largest counts per revolution accepted by the encoder conversions
/// (2^24, keeping every product inside 64 bits).
pub const MAX_COUNTS_PER_REV: u32 = 1 << 24;

/// 2 pi in Q.32 (`round(2 pi * 2^32)`), for the encoder conversions.
const TWO_PI_Q32: i64 = 26_986_075_409;

impl Fixed {
    /// Largest `R = sqrt((|d| + a)^2 + a^2)` (lower-arm units) of the
    /// validated envelope; see the module documentation.
    pub const ENVELOPE_MAX_R: f64 = 1.25;
    /// Smallest upper arm of the envelope, in lower-arm units (keeps
    /// `1 / (2a)` at most 2.5).
    pub const ENVELOPE_MIN_A: f64 = 0.2;
    /// Shortest lower arm of the envelope (mm).
    pub const ENVELOPE_MIN_LOWER_ARM_MM: i32 = 50;
    /// Longest lower arm of the envelope (mm). Targets are then at most
    /// `131 071 / 4000 = 32` lower arms away, inside the Q7.25 range, and
    /// internal lengths keep 0.12 um resolution.
    pub const ENVELOPE_MAX_LOWER_ARM_MM: i32 = 4000;

    /// From whole microradians, rounded to nearest (ties away from zero);
    /// `None` beyond +-64 rad.
    #[must_use]
    pub fn from_urad(urad: i32) -> Option<Self> {
        Self::scaled_int(i64::from(urad), 1_000_000)
    }

    /// To whole microradians, rounded to nearest (ties away from zero);
    /// `None` for NaN or beyond +-2147 rad (never for an angle).
    #[must_use]
    pub fn to_urad(self) -> Option<i32> {
        self.to_scaled_int(1_000_000)
    }

    /// A joint angle from an encoder reading: `counts * 2 pi /
    /// counts_per_rev` radians, rounded to nearest (error at most 0.51
    /// LSB: the quotient is rounded in Q.32, then to Q7.25).
    ///
    /// `None` when `counts_per_rev` is 0 or above [`MAX_COUNTS_PER_REV`],
    /// or the angle is beyond +-64 rad.
    #[must_use]
    pub fn from_counts(counts: i32, counts_per_rev: u32) -> Option<Self> {
        if counts_per_rev == 0 || counts_per_rev > MAX_COUNTS_PER_REV {
            return None;
        }
        let cpr = i64::from(counts_per_rev);
        let c = i64::from(counts);
        let (turns, rest) = (c / cpr, c % cpr);
        // |turns| * 2 pi < 2^31 * 2^35 would overflow: refuse early, the
        // angle is out of range anyway beyond 10 turns.
        if turns.abs() > 11 {
            return None;
        }
        // |rest| < 2^24 and TWO_PI_Q32 < 2^35: product below 2^59.
        let frac_q32 = div_round(rest * TWO_PI_Q32, cpr);
        let total_q32 = turns * TWO_PI_Q32 + frac_q32;
        let raw = narrow(div_round(total_q32, 1 << (32 - FRAC)));
        if raw == NAN { None } else { Some(Self(raw)) }
    }

    /// The encoder reading nearest this angle: `round(theta *
    /// counts_per_rev / (2 pi))`, ties away from zero. `None` for NaN, for
    /// `counts_per_rev` 0 or above [`MAX_COUNTS_PER_REV`].
    #[must_use]
    pub fn to_counts(self, counts_per_rev: u32) -> Option<i32> {
        if self.0 == NAN || counts_per_rev == 0 || counts_per_rev > MAX_COUNTS_PER_REV {
            return None;
        }
        // counts = raw * cpr * 2^(32 - FRAC) / TWO_PI_Q32. |raw| * cpr <
        // 2^31 * 2^24 = 2^55, so take two bits off the divisor instead of
        // shifting the numerator by all of 32 - FRAC (relative error of
        // the divisor below 2^-33).
        let n = i64::from(self.0) * i64::from(counts_per_rev);
        let q = div_round(n << (30 - FRAC), TWO_PI_Q32 >> 2);
        let v = narrow(q);
        if v == NAN { None } else { Some(v) }
    }
}

impl Arith for Fixed {
    const ZERO: Self = Self(0);
    const ONE: Self = Self(ONE_RAW);
    const TWO: Self = Self(2 * ONE_RAW);
    const HALF: Self = Self(ONE_RAW / 2);
    const PI: Self = Self(cordic::PI_RAW);

    type Wide = FixedWide;
    type Recip = FixedRecip;

    /// Q7.25 times Q18.14 to Q18.14, rounded; NaN when out of range.
    #[inline]
    fn mul_wide(self, w: FixedWide) -> FixedWide {
        FixedWide(mul_raw(self.0, w.0, FRAC))
    }

    /// `None` unless `den > 0`.
    fn recip(den: FixedWide) -> Option<FixedRecip> {
        FixedWide::reciprocal(den)
    }

    /// `num / den` in Q7.25, rounded: one 64-bit product and a shift;
    /// relative error of the reciprocal below 2^-31, so below 0.1 LSB for
    /// quotients under 4.
    #[inline]
    fn mul_recip(num: FixedWide, r: FixedRecip) -> Self {
        Self(r.apply(num.0, FRAC))
    }

    /// One 64-bit division, rounded to nearest (half an LSB).
    #[inline]
    fn ratio(num: u32, den: u32) -> Self {
        Self(ratio_raw(num, den, FRAC))
    }

    /// The validated envelope: lower arm within
    /// [`Fixed::ENVELOPE_MIN_LOWER_ARM_MM`] and
    /// [`Fixed::ENVELOPE_MAX_LOWER_ARM_MM`], `a >=`
    /// [`Fixed::ENVELOPE_MIN_A`], and `(|d| + a)^2 + a^2 <=`
    /// [`Fixed::ENVELOPE_MAX_R`]`^2`, all computed with checked operations.
    fn admits_geometry(lower_arm: FixedWide, a: Self, d: Self) -> bool {
        let (lo, hi) = (Self::ENVELOPE_MIN_LOWER_ARM_MM << WIDE_FRAC, Self::ENVELOPE_MAX_LOWER_ARM_MM << WIDE_FRAC);
        let min_a = Self(6_710_887); // 0.2 in Q7.25, rounded up
        let max_r2 = Self(52_428_800); // 1.5625 in Q7.25, exact
        let s = d.abs() + a;
        let r2 = s * s + a * a;
        lower_arm.0 >= lo && lower_arm.0 <= hi && a >= min_a && r2 <= max_r2
    }

    #[inline]
    fn abs(self) -> Self {
        if self.0 < 0 { -self } else { self }
    }

    #[inline]
    fn checked_div(self, rhs: Self) -> Option<Self> {
        div_raw(self.0, rhs.0, FRAC).map(Self)
    }

    #[inline]
    fn is_finite(self) -> bool {
        self.0 != NAN
    }

    fn from_f64(v: f64) -> Option<Self> {
        from_f64_raw(v, FRAC).map(Self)
    }

    fn to_f64(self) -> f64 {
        to_f64_raw(self.0, FRAC)
    }
}

impl FixedRecip {
    /// The reciprocal of the raw value `d > 0` with a 30-bit mantissa: `m =
    /// round(2^(k + 29) / d)`, `k` the bit length of `d`, so `2^29 < m <=
    /// 2^30` (the quotient fits the 31-bit long division) and the relative
    /// error of `m` is below `2^-30`. `None` for `d <= 0` (NaN included).
    #[inline]
    fn of_positive_raw(d: i32) -> Option<Self> {
        if d <= 0 {
            return None;
        }
        let k = 32 - d.leading_zeros(); // 1..=31
        #[allow(clippy::cast_sign_loss)] // d > 0
        let du = d as u32;
        // 2^(k + 29) / d < 2^30: the quotient is below 2^31.
        let m = div_u64_by_u31((1u64 << (k + 29)) + u64::from(du / 2), du)?;
        // As `m = round(2^(k' + 30) / d)` with `k' = k - 1`: same form as
        // [`FixedWide::reciprocal`], for [`FixedRecip::apply`].
        Some(Self { m: i64::from(m), k: k - 1 })
    }

    /// `num * 2^frac / D`, rounded, or NaN when out of range.
    #[inline]
    fn apply(self, num: i32, frac: u32) -> i32 {
        if num == NAN {
            return NAN;
        }
        // |num| < 2^31, m <= 2^31: product below 2^62. num and D share
        // their format, so num * m / 2^(k + 30) is the plain quotient and
        // the result in Q.frac needs a shift of k + 30 - frac (>= 5).
        let shift = self.k + 30 - frac;
        #[allow(clippy::cast_sign_loss, clippy::cast_possible_truncation)] // 2^30 <= m <= 2^31
        let m = self.m as u32;
        #[allow(clippy::cast_possible_wrap)] // below 2^62
        let p = mul_u32_wide(num.unsigned_abs(), m) as i64;
        narrow(shift_round(if num < 0 { -p } else { p }, shift))
    }
}

impl FixedWide {
    fn reciprocal(den: Self) -> Option<FixedRecip> {
        if den.0 <= 0 {
            return None;
        }
        #[allow(clippy::cast_sign_loss)] // den > 0
        let d = den.0 as u64;
        let k = 32 - den.0.leading_zeros(); // 1..=31
        // 2^(k + 30) / d lies in (2^30, 2^31]; k + 30 <= 61.
        let m = ((1u64 << (k + 30)) + d / 2) / d;
        #[allow(clippy::cast_possible_wrap)] // m <= 2^31
        Some(FixedRecip { m: m as i64, k })
    }
}

impl Arith for FixedWide {
    const ZERO: Self = Self(0);
    const ONE: Self = Self(WIDE_ONE_RAW);
    const TWO: Self = Self(2 * WIDE_ONE_RAW);
    const HALF: Self = Self(WIDE_ONE_RAW / 2);
    const PI: Self = Self(51_472);

    type Wide = Self;
    type Recip = FixedRecip;

    #[inline]
    fn mul_wide(self, w: Self) -> Self {
        self * w
    }

    fn recip(den: Self) -> Option<FixedRecip> {
        Self::reciprocal(den)
    }

    #[inline]
    fn mul_recip(num: Self, r: FixedRecip) -> Self {
        Self(r.apply(num.0, WIDE_FRAC))
    }

    #[inline]
    fn ratio(num: u32, den: u32) -> Self {
        Self(ratio_raw(num, den, WIDE_FRAC))
    }

    /// `FixedWide` is an API type only (it does not implement
    /// [`crate::Real`], so no robot runs on it); nothing to refuse.
    fn admits_geometry(_lower_arm: Self, _a: Self, _d: Self) -> bool {
        true
    }

    #[inline]
    fn abs(self) -> Self {
        if self.0 < 0 { -self } else { self }
    }

    #[inline]
    fn checked_div(self, rhs: Self) -> Option<Self> {
        div_raw(self.0, rhs.0, WIDE_FRAC).map(Self)
    }

    #[inline]
    fn is_finite(self) -> bool {
        self.0 != NAN
    }

    fn from_f64(v: f64) -> Option<Self> {
        from_f64_raw(v, WIDE_FRAC).map(Self)
    }

    fn to_f64(self) -> f64 {
        to_f64_raw(self.0, WIDE_FRAC)
    }
}

impl Real for Fixed {
    const REFINES_FORWARD: bool = true;

    /// `None` unless `den > 0`. One division on 32-bit words (no 64-bit
    /// library division).
    #[inline]
    fn recip_internal(den: Self) -> Option<FixedRecip> {
        FixedRecip::of_positive_raw(den.0)
    }

    /// One 32 x 32 -> 64 bit product from partial products and a rounding
    /// shift.
    #[inline]
    fn mul_recip_internal(num: Self, r: FixedRecip) -> Self {
        Self(r.apply(num.0, FRAC))
    }

    /// Digit-by-digit root: correctly rounded, NaN for a
    /// negative argument.
    #[inline]
    fn sqrt(self) -> Self {
        Self(cordic::sqrt(self.0))
    }

    /// Exact sum of squares in Q.50 and a correctly rounded root (at most
    /// 0.5 LSB below a length of 8): a vector of length 0.1 keeps its full
    /// relative precision, where three rounded Q7.25 squares would cost 50
    /// LSBs of it. NaN from a length of 64 on.
    #[inline]
    fn length3(v: [Self; 3]) -> Self {
        Self(cordic::length3(v.map(|c| c.0)))
    }

    /// Exact sum and difference of the squares in Q.50, rounded once to
    /// nearest (ties away from zero): 0.5 LSB. NaN when out of range.
    #[inline]
    fn height_sq(l: Self, v: [Self; 3]) -> Self {
        Self(height_sq_raw(l.0, v.map(|c| c.0)))
    }

    /// CORDIC vectoring, error at most
    /// [`super::ATAN2_MAX_ERROR_LSB`] LSB.
    #[inline]
    fn atan2(self, x: Self) -> Self {
        Self(cordic::atan2(self.0, x.0))
    }

    /// CORDIC rotation with explicit wrap, error at most
    /// [`super::SIN_COS_MAX_ERROR_LSB`] LSB.
    #[inline]
    fn sin_cos(self) -> (Self, Self) {
        let (s, c) = cordic::sin_cos(self.0);
        (Self(s), Self(c))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn operators_are_checked_and_never_wrap() {
        let big = Fixed::from_f64(50.0).unwrap();
        assert!(!(big + big).is_finite());
        assert!(!(-big - big).is_finite());
        assert!(!(big * big).is_finite());
        assert!(!(Fixed::NAN + Fixed::ONE).is_finite());
        assert!(!(-Fixed::NAN).is_finite());
        assert_eq!(Fixed::ONE.checked_div(Fixed::ZERO), None);
        assert_eq!(big.checked_div(Fixed::from_f64(0.5).unwrap()), None);
        assert_eq!(Fixed::MAX.abs(), Fixed::MAX);
        assert!((-Fixed::MAX).abs() == Fixed::MAX);
        // NaN is unordered and unequal, like a float NaN.
        assert!(!(Fixed::NAN >= Fixed::ZERO) && !(Fixed::NAN <= Fixed::ZERO));
        assert!(Fixed::NAN != Fixed::NAN);
        let w = FixedWide::from_mm(100_000).unwrap();
        assert!(!(w + w).is_finite());
        assert!(!Fixed::TWO.mul_wide(w).is_finite());
    }

    const LSB: f64 = 1.0 / 33_554_432.0;

    /// Operands for the word-level checks: edge values and a
    /// pseudo-random sweep (a 32-bit linear congruential generator,
    /// constants from Numerical Recipes, 2nd ed., section 7.1).
    fn operands() -> impl Iterator<Item = i32> {
        let edges = [0, 1, -1, 2, -2, 0xFFFF, -0xFFFF, 0x10000, -0x10000, i32::MAX, -i32::MAX, 1 << 25, -(1 << 25)];
        let mut x = 12_345u32;
        let sweep = (0..3000).map(move |i| {
            x = x.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
            // Spread the magnitudes: shift right by 0..=30 bits.
            #[allow(clippy::cast_possible_wrap)]
            let v = (x as i32) >> (i % 31);
            if v == NAN { 0 } else { v }
        });
        edges.into_iter().chain(sweep)
    }

    #[test]
    fn word_level_products_and_quotients_match_64_bit_arithmetic() {
        for a in operands() {
            for b in operands().step_by(7) {
                let p = i64::from(a) * i64::from(b);
                assert_eq!(mul_u32_wide(a.unsigned_abs(), b.unsigned_abs()), p.unsigned_abs());
                for shift in [FRAC, WIDE_FRAC] {
                    assert_eq!(mul_raw(a, b, shift), narrow(shift_round(p, shift)), "{a} * {b} >> {shift}");
                }
                for frac in [FRAC, WIDE_FRAC] {
                    let want = if b == 0 {
                        None
                    } else {
                        let (n, d) = (i64::from(a) << frac, i64::from(b));
                        let q = narrow(if d > 0 { div_round(n, d) } else { div_round(-n, -d) });
                        if q == NAN { None } else { Some(q) }
                    };
                    assert_eq!(div_raw(a, b, frac), want, "{a} / {b} at {frac}");
                }
            }
        }
        assert_eq!(add_raw(i32::MAX, 1), NAN);
        assert_eq!(sub_raw(-i32::MAX, 1), NAN);
        assert_eq!(add_raw(-(1 << 30), -(1 << 30)), NAN);
        assert_eq!(add_raw(i32::MAX, -i32::MAX), 0);
        assert_eq!(mul_raw(NAN, 0, FRAC), NAN);
        assert_eq!(div_raw(1, NAN, FRAC), None);
    }

    #[test]
    fn reciprocal_division_needs_few_corrections() {
        let mut worst = 0u32;
        let mut x = 777u32;
        let mut next = || {
            // Numerical Recipes LCG, as `operands`.
            x = x.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
            x
        };
        for i in 0..200_000u32 {
            let d = (next() >> (1 + i % 31)).max(1);
            // n below d 2^31, spread over magnitudes.
            let wide = (u64::from(next()) << 32) | u64::from(next());
            let n = (wide % (u64::from(d) << 31)) >> (i % 40);
            let want = u32::try_from(n / u64::from(d)).unwrap();
            let est = quotient_estimate(n, d);
            assert!(est <= want, "{n} / {d}: estimate {est} above {want}");
            worst = worst.max(want - est);
            assert_eq!(div_u64_by_u31(n, d), Some(want), "{n} / {d}");
        }
        for d in [1u32, 2, 3, (1 << 30) - 1, 1 << 30, (1 << 31) - 1] {
            for n in [0u64, 1, u64::from(d) - 1, (u64::from(d) << 31) - 1] {
                let want = u32::try_from(n / u64::from(d)).unwrap();
                worst = worst.max(want - quotient_estimate(n, d));
                assert_eq!(div_u64_by_u31(n, d), Some(want), "{n} / {d}");
            }
            assert_eq!(div_u64_by_u31(u64::from(d) << 31, d), None);
        }
        // Within the fixed corrections, and not loose either (the margin
        // of two plus a unit or two of truncation).
        assert!((2..=QUOTIENT_FIXUPS).contains(&worst), "largest correction {worst}");
    }

    #[test]
    fn mul_words_is_the_exact_product() {
        for a in operands() {
            for b in operands().step_by(13) {
                let (ua, ub) = (a.unsigned_abs(), b.unsigned_abs());
                let (hi, lo) = mul_words(ua, ub);
                assert_eq!((u64::from(hi) << 32) | u64::from(lo), u64::from(ua) * u64::from(ub));
            }
        }
        assert_eq!(mul_words(u32::MAX, u32::MAX), (u32::MAX - 1, 1));
    }

    #[test]
    fn height_sq_is_the_exact_difference_rounded_once() {
        let shifted = |k: usize| operands().skip(k).chain(operands()).step_by(3);
        for (((l, x), y), z) in operands().zip(shifted(1)).zip(shifted(2)).zip(shifted(7)) {
            let v = [x, y, z];
            let exact: i128 = i128::from(l).pow(2) - v.iter().map(|&c| i128::from(c).pow(2)).sum::<i128>();
            // Half away from zero, on the magnitude.
            let mag = exact.unsigned_abs();
            let q = (mag >> FRAC) + ((mag >> (FRAC - 1)) & 1);
            let want = i32::try_from(q).map_or(NAN, |q| if exact < 0 { -q } else { q });
            assert_eq!(height_sq_raw(l, v), want, "{l} {v:?}");
        }
        assert_eq!(height_sq_raw(NAN, [0, 0, 0]), NAN);
        assert_eq!(height_sq_raw(ONE_RAW, [0, NAN, 0]), NAN);
        let h = Fixed::height_sq(Fixed::ONE, [0.6, 0.0, 0.8].map(|c| Fixed::from_f64(c).unwrap()));
        assert!(h.to_f64().abs() <= LSB);
    }

    #[test]
    fn internal_reciprocal_quotients_keep_their_relative_precision() {
        for den in [1, 2, 3, 0x7FFF, 0x1_0000, 4_362_076, ONE_RAW, ONE_RAW + 1, i32::MAX] {
            let r = Fixed::recip_internal(Fixed::from_raw(den)).unwrap();
            for num in operands().step_by(11) {
                let got = Fixed::mul_recip_internal(Fixed::from_raw(num), r).to_raw();
                let want = f64::from(num) * f64::from(ONE_RAW) / f64::from(den);
                if want.abs() >= f64::from(i32::MAX) - 1.0 {
                    continue;
                }
                // Half an LSB of rounding plus 2^-29 of the quotient.
                let bound = 0.5 + want.abs() * 2f64.powi(-29) + 1e-9;
                assert!((f64::from(got) - want).abs() <= bound, "{num} / {den}: {got} vs {want}");
            }
        }
        assert_eq!(Fixed::recip_internal(Fixed::ZERO), None);
        assert_eq!(Fixed::recip_internal(-Fixed::ONE), None);
        assert_eq!(Fixed::recip_internal(Fixed::NAN), None);
    }

    #[test]
    fn products_and_quotients_round_to_nearest() {
        let third = Fixed::ONE.checked_div(Fixed::from_f64(3.0).unwrap()).unwrap();
        assert!((third.to_f64() - 1.0 / 3.0).abs() <= 0.5 * LSB);
        let x = Fixed::from_f64(1.234_567).unwrap();
        let y = Fixed::from_f64(-2.345_678).unwrap();
        assert!(((x * y).to_f64() - x.to_f64() * y.to_f64()).abs() <= 0.5 * LSB);
        let q = x.checked_div(y).unwrap();
        assert!((q.to_f64() - x.to_f64() / y.to_f64()).abs() <= 0.5 * LSB);
    }

    #[test]
    fn reciprocal_quotient_is_accurate() {
        for den_mm in [50.0, 199.99, 720.0, 1234.5678, 4000.0] {
            let den = FixedWide::from_f64(den_mm).unwrap();
            let r = Fixed::recip(den).unwrap();
            for num_mm in [0.0, 1.0, -37.5, 720.0, 3999.0, -8000.0] {
                let num = FixedWide::from_f64(num_mm).unwrap();
                let got = Fixed::mul_recip(num, r).to_f64();
                let want = num.to_f64() / den.to_f64();
                if want.abs() >= 64.0 {
                    assert!(got.is_nan(), "{num_mm}/{den_mm} must be out of range");
                    continue;
                }
                assert!((got - want).abs() <= 1.0 * LSB, "{num_mm}/{den_mm}: {got} vs {want}");
            }
        }
        assert_eq!(Fixed::recip(FixedWide::ZERO), None);
        assert_eq!(Fixed::recip(-FixedWide::ONE), None);
        // Quotient out of range: NaN, not a wrapped value.
        let r = Fixed::recip(FixedWide::from_mm(100).unwrap()).unwrap();
        assert!(!Fixed::mul_recip(FixedWide::from_mm(131_000).unwrap(), r).is_finite());
    }

    #[test]
    fn ratios_round_to_nearest() {
        for (n, d) in [(0u32, 7u32), (1, 3), (2, 3), (255, 256), (1 << 28, 1 << 28), (123_456_789, 268_435_455)] {
            let want = f64::from(n) / f64::from(d);
            assert!((Fixed::ratio(n, d).to_f64() - want).abs() <= 0.5 * LSB, "{n}/{d}");
        }
        assert_eq!(Fixed::ratio(5, 5), Fixed::ONE);
        assert!(!Fixed::ratio(1, 0).is_finite());
        assert!(!Fixed::ratio(u32::MAX, 1).is_finite());
        assert_eq!(FixedWide::ratio(3, 4).to_f64(), 0.75);
    }

    #[test]
    fn edge_conversions_round_as_documented() {
        assert_eq!(FixedWide::from_mm(720).unwrap().to_f64(), 720.0);
        assert_eq!(FixedWide::from_mm(131_072), None);
        assert_eq!(FixedWide::from_mm(-131_072), None);
        let w = FixedWide::from_um(1).unwrap();
        assert_eq!(w.to_raw(), 16); // 16.384 rounds to 16
        assert_eq!(FixedWide::from_um(-1).unwrap().to_raw(), -16);
        assert_eq!(FixedWide::from_um(123_456_789).unwrap().to_um(), Some(123_456_789));
        assert_eq!(FixedWide::from_um(i32::MAX), None);
        assert_eq!(FixedWide::from_f64(2.5).unwrap().to_mm(), Some(3));
        assert_eq!(FixedWide::from_f64(-2.5).unwrap().to_mm(), Some(-3));
        assert_eq!(FixedWide::NAN.to_mm(), None);
        assert_eq!(FixedWide::from_f32(f32::NAN), None);
        assert_eq!(FixedWide::from_f32(1.0e6), None);
        assert_eq!(FixedWide::from_f32(-812.25).unwrap().to_f32(), -812.25);
        assert!(Fixed::NAN.to_f32().is_nan());
        assert_eq!(Fixed::from_urad(1_000_000).unwrap(), Fixed::ONE);
        assert_eq!(Fixed::from_f64(-0.000_123_456).unwrap().to_urad(), Some(-123));
        assert_eq!(Fixed::from_f64(63.9).unwrap().to_urad(), Some(63_900_000));
    }

    #[test]
    fn encoder_counts_round_trip() {
        for cpr in [4096u32, 10_000, 131_072, MAX_COUNTS_PER_REV] {
            let cpr_i = i32::try_from(cpr).unwrap();
            for counts in [0, 1, -1, cpr_i / 4, -cpr_i / 3, cpr_i / 2, cpr_i, 7 * cpr_i + 5, -(10 * cpr_i)] {
                let a = Fixed::from_counts(counts, cpr).unwrap();
                let want = f64::from(counts) * 2.0 * core::f64::consts::PI / f64::from(cpr);
                assert!((a.to_f64() - want).abs() <= 0.51 * LSB, "{counts}/{cpr}");
                // Back: exact when one count is wider than an LSB.
                if cpr <= 1 << 20 {
                    assert_eq!(a.to_counts(cpr), Some(counts), "{counts}/{cpr}");
                }
            }
        }
        assert_eq!(Fixed::from_counts(1, 0), None);
        assert_eq!(Fixed::from_counts(1, MAX_COUNTS_PER_REV + 1), None);
        assert_eq!(Fixed::from_counts(i32::MAX, 4096), None);
        assert_eq!(Fixed::NAN.to_counts(4096), None);
    }
}
