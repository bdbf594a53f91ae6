//! Bounded-time square root, arc tangent and sine/cosine for the
//! fixed-point scalar [`super::Fixed`] (Q7.25: raw `i32`, 25 fraction bits,
//! `i32::MIN` reserved as "not a number").
//!
//! * Square root: the binary digit-by-digit (restoring) method, one result
//!   bit per step, 28 steps, on 32-bit words; see e.g. J. W. Crenshaw,
//!   "Integer Square Roots", Embedded Systems Programming, February 1998.
//!   Rounded to nearest from the remainder.
//! * `atan2`: CORDIC in vectoring mode and `sin_cos`: CORDIC in rotation
//!   mode, after J. E. Volder, "The CORDIC Trigonometric Computing
//!   Technique", IRE Transactions on Electronic Computers EC-8(3), 1959.
//!   Shifts, additions and a table of `atan(2^-i)`: no multiplication in
//!   the iterations and no divide instruction. Both stop about half way
//!   and finish the small angle left in one step (the standard CORDIC
//!   shortcut: below 2^-n the arc tangent and the sine equal their
//!   argument to within the cube of it): `atan2` as a quotient by a fixed
//!   20-step long division, `sin_cos` as one first-order rotation with
//!   two 16-bit-split multiplications.
//!
//! Every loop has a constant trip count; nothing here can overflow (each
//! bound is stated beside the operation) and nothing panics. The error
//! bounds below are measured by this file's tests against libm's `f64`
//! functions over dense sweeps of the whole valid range, in units of the
//! last place of Q7.25 (1 LSB = 2^-25 = 2.98e-8).

/// Largest error of the fixed-point square root in LSBs of Q7.25 over
/// every input sampled (the result is the correctly rounded root, so at
/// most half an LSB).
pub const SQRT_MAX_ERROR_LSB: f64 = 0.5;
/// Largest error of the fixed-point `atan2` in LSBs of Q7.25, asserted
/// over all octants and magnitudes from one LSB to the largest
/// representable; the largest seen is 0.85 LSB (2.5e-8 rad; 1.0 LSB
/// with the earlier 28 CORDIC steps and no final division).
pub const ATAN2_MAX_ERROR_LSB: f64 = 2.0;
/// Largest error of either output of the fixed-point `sin_cos` in LSBs of
/// Q7.25, asserted over the whole representable range; the largest seen
/// is 0.96 LSB (2.9e-8; 0.79 LSB with the earlier 30 steps and no
/// first-order rest rotation, 0.87 LSB with 16 steps and the rotation).
pub const SIN_COS_MAX_ERROR_LSB: f64 = 1.5;

/// The reserved "not a number" raw value.
pub(crate) const NAN: i32 = i32::MIN;

use super::fixed::mul_u32_wide;

/// Fraction bits of the angle accumulator (Q3.29: +-4 rad, enough for
/// +-pi/2 plus the first rotation's overshoot).
const ANGLE_BITS: u32 = 29;

/// `round(atan(2^-i) * 2^29)` for `i = 0..30`, computed with f64 and
/// checked against libm by `atan_table_matches_libm`.
const ATAN_Q29: [i32; 30] = [
    421_657_428,
    248_918_915,
    131_521_918,
    66_762_579,
    33_510_843,
    16_771_758,
    8_387_925,
    4_194_219,
    2_097_141,
    1_048_575,
    524_288,
    262_144,
    131_072,
    65_536,
    32_768,
    16_384,
    8_192,
    4_096,
    2_048,
    1_024,
    512,
    256,
    128,
    64,
    32,
    16,
    8,
    4,
    2,
    1,
];

/// Iterations of the vectoring CORDIC. After `n` steps the angle left is
/// below `atan(2^-(n-1))`, 2^-10 for 11 steps; that rest is then taken as
/// the quotient `y / x` (see [`atan2`]), whose difference from the arc
/// tangent, `t^3 / 3 < 2^-31.5`, is below a fiftieth of an output LSB.
const ATAN2_STEPS: usize = 11;
/// Quotient bits of the final `y / x` of [`atan2`]: `|y| / x < 2^-9`
/// (the rest angle below 2^-10 plus the rounding of the steps), so the
/// quotient in Q3.29 is below 2^20.
const ATAN2_REST_BITS: u32 = 20;
/// Iterations of the rotating CORDIC: residual angle below
/// `atan(2^-13) < 2^-13`, then one first-order rotation by the rest (see
/// [`sin_cos`]).
const SIN_COS_STEPS: usize = 14;

/// `round(2^30 * prod_{i<14} 1/sqrt(1 + 2^-2i))`, the inverse CORDIC gain
/// for [`SIN_COS_STEPS`] steps in Q1.30; checked by
/// `cordic_gain_and_constants_match`.
const INV_GAIN_Q30: i32 = 652_032_876;

/// Fraction bits of the scalar (Q7.25).
pub(crate) const FRAC: u32 = 25;

/// pi in Q7.25 and in Q3.29, 2 pi in Q3.29 (as i64), 2^32 / (2 pi).
pub(crate) const PI_RAW: i32 = 105_414_357;
const PI_Q29: i32 = 1_686_629_713;
const TWO_PI_Q29: i64 = 3_373_259_426;
const INV_TWO_PI_Q32: i64 = 683_565_276;

/// Square root of a Q7.25 value, correctly rounded to Q7.25.
///
/// * Input: `x >= 0` (any representable value, up to 64). A negative
///   input or "not a number" returns "not a number".
/// * Method: digit-by-digit on the 56-bit radicand `x * 2^25` (whose root
///   is the Q7.25 root), 28 steps on 32-bit words, then round to nearest: the remainder
///   `x*2^25 - r^2` exceeds `r` exactly when the root is at least `r + 1/2`.
/// * Error: at most 0.5 LSB (the exact root, rounded).
///
/// # Panics
/// Never.
#[must_use]
pub(crate) fn sqrt(x: i32) -> i32 {
    if x < 0 {
        return NAN;
    }
    // The radicand x * 2^25 equals y * 2^24 with y = 2x < 2^32: its 28
    // base-4 digits are the 16 of y, top first, then 12 zeros.
    #[allow(clippy::cast_sign_loss)] // x >= 0
    let y = (x as u32) << 1;
    let (rem, root) = root_steps(0, 0, y, 28);
    round_root(rem, root)
}

/// `steps` steps of the digit-by-digit square root, bringing down the
/// base-4 digits of `y` from its top (then zeros): the partial remainder
/// and root after them. The caller keeps the whole radicand below 2^56
/// (28 digits), so the root stays below 2^28.
///
/// Every quantity stays in 32 bits (a 64-bit remainder costs several
/// instructions per operation on a Cortex-M0). `steps` is a constant at
/// every call site.
#[inline(always)]
fn root_steps(mut rem: u32, mut root: u32, mut y: u32, steps: u32) -> (u32, u32) {
    for _ in 0..steps {
        // Invariant: rem <= 2 * root and root < 2^28 (the root of a
        // radicand below 2^56), so rem < 2^29 + 1 and the shifted
        // remainder below 2^31 + 8; the trial value is below 2^30 + 1.
        rem = (rem << 2) | (y >> 30);
        y <<= 2;
        let trial = (root << 2) | 1;
        // Branch-free select: the difference is below 2^29 + 3 when
        // rem >= trial (rem <= 8 root + 3, trial = 4 root + 1) and wraps to
        // at least 2^32 - 2^30 - 1 otherwise, so its top bit is the
        // "keep rem" flag.
        let diff = rem.wrapping_sub(trial);
        let keep = diff >> 31;
        rem = diff.wrapping_add(trial & keep.wrapping_neg());
        root = (root << 1) | (keep ^ 1);
    }
    (rem, root)
}

/// The root rounded to nearest from the final remainder: `rem = radicand
/// - root^2` exceeds `root` exactly when the exact root is at least
/// `root + 1/2`. `root <= 2^28`, so the result is a valid raw value.
#[inline(always)]
fn round_root(rem: u32, root: u32) -> i32 {
    let root = if rem > root { root + 1 } else { root };
    // root <= 2^28 < 2^31.
    #[allow(clippy::cast_possible_wrap)]
    let r = root as i32;
    r
}

/// Euclidean length `sqrt(x^2 + y^2 + z^2)` of a Q7.25 vector, correctly
/// rounded to Q7.25.
///
/// * Input: any three values; "not a number" in any of them, or a length
///   of 64 or more, returns "not a number".
/// * Method: the exact sum of the three squares in Q.50 (three 32 x 32 ->
///   64 bit products from 16-bit partial products, no rounding), then the
///   digit-by-digit root of that 56-bit radicand in 28 steps on 32-bit
///   words, as [`sqrt`]. Squaring each component in Q7.25 first would
///   round each square to an absolute half LSB, which for a short vector
///   (length 0.1: squares near 0.01) is a relative error of 1e-6 in the
///   sum and 5e-7 in the length, 50 times the resolution; the forward
///   kinematics normalise such a vector on machines with a short upper
///   arm. Lengths of 8 or more (radicand 2^56 or more) take the same
///   method on 64-bit words (32 steps).
/// * Error: at most 0.5 LSB (the exact root, rounded).
///
/// # Panics
/// Never.
#[must_use]
pub(crate) fn length3(v: [i32; 3]) -> i32 {
    let [x, y, z] = v;
    if x == NAN || y == NAN || z == NAN {
        return NAN;
    }
    let sq = |c: i32| {
        let m = c.unsigned_abs();
        mul_u32_wide(m, m)
    };
    // Each square is at most (2^31 - 1)^2 < 2^62: the sum is below 2^64.
    let s = sq(x) + sq(y) + sq(z);
    if s >> 56 != 0 {
        // Length 8 or more (never in the solvers' envelope, where the
        // longest vector normalised is below 4.1): the same method on
        // 64-bit words, 32 steps, root below 2^32 and remainder below
        // 2^33. The result is representable below a length of 64.
        let (mut rem, mut root, mut y) = (0u64, 0u64, s);
        for _ in 0..32 {
            rem = (rem << 2) | (y >> 62);
            y <<= 2;
            let trial = (root << 2) | 1;
            root <<= 1;
            if rem >= trial {
                rem -= trial;
                root |= 1;
            }
        }
        let root = if rem > root { root + 1 } else { root };
        return match i32::try_from(root) {
            Ok(r) => r,
            Err(_) => NAN,
        };
    }
    // Radicand below 2^56: 12 base-4 digits in the high word (24 bits,
    // moved to its top), then the 16 of the low word.
    #[allow(clippy::cast_possible_truncation)] // the high word is below 2^24, the low word is the cut
    let (hi, lo) = ((s >> 32) as u32, s as u32);
    let (rem, root) = root_steps(0, 0, hi << 8, 12);
    let (rem, root) = root_steps(rem, root, lo, 16);
    round_root(rem, root)
}

/// Four-quadrant arc tangent of `y / x`, both Q7.25, result Q7.25 radians
/// in `[-pi, pi]`. `atan2(0, 0)` is 0; `atan2(0, x < 0)` is `+pi`.
///
/// * Method: scale `(x, y)` by a power of two so the larger magnitude lies
///   in `[2^28, 2^29)` (the angle does not change), turn the vector into
///   the right half-plane (adding `+-pi` to the result), then
///   [`ATAN2_STEPS`] CORDIC vectoring steps drive `y` towards zero while
///   the table angles add up to the result in Q3.29; the small angle left
///   is `atan(y / x) = y / x` to within `(y / x)^3 / 3`, found by a
///   fixed 20-step long division. The CORDIC gain grows the
///   vector to at most `1.647 * sqrt(2) * 2^29 < 2^31`, so no step can
///   overflow. The sum `+-pi` is clamped into `[-pi, pi]` (explicit wrap).
/// * Error: [`ATAN2_MAX_ERROR_LSB`].
///
/// # Panics
/// Never.
#[must_use]
pub(crate) fn atan2(y: i32, x: i32) -> i32 {
    if y == NAN || x == NAN {
        return NAN;
    }
    if y == 0 && x == 0 {
        return 0;
    }
    let (ux, uy) = (x.unsigned_abs(), y.unsigned_abs());
    let big = if ux > uy { ux } else { uy };
    // big is in [1, 2^31); put its top bit at position 28.
    let lz = big.leading_zeros(); // 1..=31
    let (mut vx, mut vy) = if lz >= 3 {
        let s = lz - 3;
        // |x|, |y| <= big < 2^(31 - lz), shifted below 2^29.
        (x << s, y << s)
    } else {
        let s = 3 - lz;
        (x >> s, y >> s)
    };
    // Into the right half-plane: (x, y) -> (-x, -y) is a turn by pi.
    let offset = if vx < 0 {
        vx = -vx;
        vy = -vy;
        if y >= 0 { PI_RAW } else { -PI_RAW }
    } else {
        0
    };
    let mut z: i32 = 0;
    for (i, &step) in ATAN_Q29.iter().take(ATAN2_STEPS).enumerate() {
        let (dx, dy) = (vy >> i, vx >> i);
        if vy >= 0 {
            vx += dx;
            vy -= dy;
            z += step;
        } else {
            vx -= dx;
            vy += dy;
            z -= step;
        }
    }
    // The rest angle atan(vy / vx), |vy| / vx < 2^-9, as the quotient
    // vy * 2^29 / vx (Q3.29): restoring long division of |vy| * 2^9 (below
    // vx) by vx, one bit per step, in 32 bits (vx < 1.65 * sqrt2 * 2^29 <
    // 2^31, so the doubled remainder stays below 2^32). vx > 2^28 after
    // the first step; max(.., 1) keeps the division defined regardless.
    #[allow(clippy::cast_sign_loss)] // vx > 0 after the steps
    let den = (vx.max(1)) as u32;
    let num = vy.unsigned_abs() << (ANGLE_BITS - ATAN2_REST_BITS);
    // A rest outside the proven bound (never seen) saturates the quotient
    // instead of producing a wrong digit.
    let mut rem = if num < den { num } else { den - 1 };
    let mut q = 0u32;
    for _ in 0..ATAN2_REST_BITS {
        rem <<= 1;
        q <<= 1;
        if rem >= den {
            rem -= den;
            q |= 1;
        }
    }
    // q < 2^20.
    #[allow(clippy::cast_possible_wrap)]
    let q = q as i32;
    z += if vy >= 0 { q } else { -q };
    // |z| <= sum of the table < 1.75 rad; to Q7.25 rounding to nearest.
    let z25 = (z + (1 << (ANGLE_BITS - FRAC - 1))) >> (ANGLE_BITS - FRAC);
    let out = z25 + offset;
    out.clamp(-PI_RAW, PI_RAW)
}

/// `+-(m * c)` exactly, for `m < 2^32` and `0 <= c < 2^32`.
#[inline]
fn signed_wide(m: u32, c: i64, negative: bool) -> i64 {
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)] // 0 <= c < 2^32
    let p = mul_u32_wide(m, c as u32);
    // The callers keep the product below 2^62.
    #[allow(clippy::cast_possible_wrap)]
    let p = p as i64;
    if negative { -p } else { p }
}

/// Sine and cosine of a Q7.25 angle (radians), both Q7.25.
///
/// * Input: any representable angle (`|theta| < 64`); "not a number"
///   returns two of them.
/// * Method: explicit wrap to `[-pi, pi]` in Q3.29 by subtracting
///   `k * 2 pi`, `k = round(theta / (2 pi))` found with a multiplication by
///   `1/(2 pi)` (no division); a half-turn flip into `[-pi/2, pi/2]`; then
///   [`SIN_COS_STEPS`] CORDIC rotation steps from `(1/gain, 0)` in Q1.30,
///   then one first-order rotation by the angle left (below 2^-13),
///   rounded to Q7.25. Magnitudes stay below `2^30` throughout.
/// * Error: [`SIN_COS_MAX_ERROR_LSB`] on either output.
///
/// # Panics
/// Never.
#[must_use]
pub(crate) fn sin_cos(theta: i32) -> (i32, i32) {
    if theta == NAN {
        return (NAN, NAN);
    }
    let t = i64::from(theta);
    // |t| < 2^31 and INV_TWO_PI_Q32 < 2^30: the product is below 2^61.
    // Both products here come from 32 x 32 -> 64 bit partial products
    // (a general 64-bit multiplication is a library call on a Cortex-M0).
    let k = (signed_wide(theta.unsigned_abs(), INV_TWO_PI_Q32, theta < 0) + (1 << (31 + FRAC))) >> (32 + FRAC);
    // |k| <= 11; r in Q3.29 lies within pi (+ a rounding hair) of zero.
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)] // |k| <= 11
    let k_abs = k.unsigned_abs() as u32;
    let r64 = (t << (ANGLE_BITS - FRAC)) - signed_wide(k_abs, TWO_PI_Q29, k < 0);
    #[allow(clippy::cast_possible_truncation)] // |r64| < 1.7e9 < 2^31
    let mut r = r64 as i32;
    let half_pi = PI_Q29 / 2;
    let flip = if r > half_pi {
        r -= PI_Q29;
        true
    } else if r < -half_pi {
        r += PI_Q29;
        true
    } else {
        false
    };
    let (mut x, mut y) = (INV_GAIN_Q30, 0i32);
    for (i, &step) in ATAN_Q29.iter().take(SIN_COS_STEPS).enumerate() {
        let (dx, dy) = (y >> i, x >> i);
        if r >= 0 {
            x -= dx;
            y += dy;
            r -= step;
        } else {
            x += dx;
            y -= dy;
            r += step;
        }
    }
    // The rest |r| < 2^-13 rad (raw below 2^16) as a first-order rotation:
    // x - y r, y + x r. Dropping r^2 / 2 and r^3 / 6 costs below 2^-27,
    // a quarter of an output LSB at most. v * r / 2^29 splits v into its
    // high half (|v >> 16| <= 2^14) and the top 14 bits of its low half so
    // each partial product stays below 2^30.
    let rot = |v: i32| (((v >> 16) * r) >> (ANGLE_BITS - 16)) + ((((v & 0xFFFF) >> 2) * r) >> (ANGLE_BITS - 2));
    let (dx, dy) = (rot(y), rot(x));
    x -= dx;
    y += dy;
    // Q1.30 to Q7.25, rounding to nearest; |x|, |y| <= 2^30.
    let half = 1 << (29 - FRAC);
    let (s, c) = ((y + half) >> (30 - FRAC), (x + half) >> (30 - FRAC));
    if flip { (-s, -c) } else { (s, c) }
}

#[cfg(test)]
mod tests {
    use super::*;

    const LSB: f64 = 1.0 / 33_554_432.0;

    fn to_f(raw: i32) -> f64 {
        f64::from(raw) * LSB
    }

    /// Error in LSBs of the Q7.25 `got` against the exact `want`.
    fn err_lsb(got: i32, want: f64) -> f64 {
        (to_f(got) - want).abs() / LSB
    }

    #[test]
    fn atan_table_matches_libm() {
        for (i, &v) in ATAN_Q29.iter().enumerate() {
            let want = libm::atan(libm::ldexp(1.0, -(i as i32))) * f64::from(1u32 << 29);
            assert!((f64::from(v) - want).abs() <= 0.5, "{i}");
        }
    }

    #[test]
    fn cordic_gain_and_constants_match() {
        let mut k = 1.0;
        for i in 0..SIN_COS_STEPS {
            k /= libm::sqrt(1.0 + libm::ldexp(1.0, -2 * i as i32));
        }
        assert!((f64::from(INV_GAIN_Q30) - k * f64::from(1u32 << 30)).abs() <= 0.5);
        let pi = core::f64::consts::PI;
        assert!((f64::from(PI_RAW) - pi / LSB).abs() <= 0.5);
        assert!((f64::from(PI_Q29) - pi * f64::from(1u32 << 29)).abs() <= 0.5);
        assert!((TWO_PI_Q29 as f64 - 2.0 * pi * f64::from(1u32 << 29)).abs() <= 0.5);
        assert!((INV_TWO_PI_Q32 as f64 - 4_294_967_296.0 / (2.0 * pi)).abs() <= 0.5);
    }

    #[test]
    fn sqrt_is_correctly_rounded() {
        let mut worst = 0.0f64;
        // Every small value, a dense sweep, and the extremes.
        let dense = (0..=4096).chain((0..=200_000).map(|i| i * 10_737)).chain([i32::MAX - 1, i32::MAX]);
        for x in dense {
            worst = worst.max(err_lsb(sqrt(x), libm::sqrt(to_f(x))));
        }
        assert!(worst <= SQRT_MAX_ERROR_LSB, "worst {worst} LSB");
        assert_eq!(sqrt(0), 0);
        assert_eq!(sqrt(1 << FRAC), 1 << FRAC);
        assert_eq!(sqrt(4 << FRAC), 2 << FRAC);
        assert_eq!(sqrt(-1), NAN);
        assert_eq!(sqrt(NAN), NAN);
    }

    #[test]
    fn length3_is_correctly_rounded_from_the_exact_sum_of_squares() {
        let exact = |v: [i32; 3]| v.iter().map(|&c| f64::from(c) * f64::from(c)).sum::<f64>().sqrt() * LSB;
        let mut worst = 0.0f64;
        let mut x = 987_654_321u32;
        let mut next = |shift: u32| {
            // A 32-bit linear congruential generator (Numerical Recipes,
            // 2nd ed., section 7.1), spread over magnitudes by `shift`.
            x = x.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
            #[allow(clippy::cast_possible_wrap)]
            let v = (x as i32) >> shift;
            if v == NAN { 0 } else { v }
        };
        for i in 0..300_000u32 {
            let shift = 3 + i % 26;
            let v = [next(shift), next(shift + i % 3), next(shift)];
            let want = exact(v);
            let got = length3(v);
            if want >= 64.0 - LSB {
                assert!(got == NAN || err_lsb(got, want) <= SQRT_MAX_ERROR_LSB, "{v:?}");
                continue;
            }
            let e = err_lsb(got, want);
            assert!(e <= SQRT_MAX_ERROR_LSB, "{v:?}: {e} LSB");
            worst = worst.max(e);
        }
        assert!(worst > 0.4, "a sweep this dense must meet ties: worst {worst}");
        let one = 1 << FRAC;
        assert_eq!(length3([0, 0, 0]), 0);
        assert_eq!(length3([one, 0, 0]), one);
        assert_eq!(length3([0, -3 * one, 4 * one]), 5 * one);
        assert_eq!(length3([1, 1, 1]), 2); // sqrt(3) LSB rounds to 2
        assert_eq!(length3([NAN, 0, 0]), NAN);
        assert_eq!(length3([i32::MAX, i32::MAX, 0]), NAN);
        assert_eq!(length3([-i32::MAX, 0, 0]), i32::MAX);
    }

    /// All octants, magnitudes from the smallest to the largest, angles
    /// near +-pi and on the axes.
    #[test]
    fn atan2_error_over_all_octants_and_magnitudes() {
        let mut worst = 0.0f64;
        let mut check = |y: i32, x: i32| {
            let want = libm::atan2(to_f(y), to_f(x));
            let e = err_lsb(atan2(y, x), want);
            assert!(e <= ATAN2_MAX_ERROR_LSB, "atan2({y}, {x}): {e} LSB");
            worst = worst.max(e);
        };
        let n = 2_000;
        for &mag in &[1.0e-6, 1.0e-3, 0.37, 1.0, 3.0, 17.0, 63.9] {
            for i in 0..n {
                let a = -core::f64::consts::PI + 2.0 * core::f64::consts::PI * f64::from(i) / f64::from(n);
                let (s, c) = libm::sincos(a);
                check((s * mag / LSB) as i32, (c * mag / LSB) as i32);
            }
        }
        // Tiny integer vectors, every combination.
        for y in -20..=20 {
            for x in -20..=20 {
                if (x, y) != (0, 0) {
                    check(y, x);
                }
            }
        }
        // Near +-pi: x large negative, y a few LSB either side of zero.
        let m = i32::MAX;
        for y in [-3, -1, 1, 3, 1000, -1000] {
            check(y, -m);
            check(y, -(1 << FRAC));
        }
        // The largest valid arguments, on axes and diagonals.
        for (y, x) in [(m, m), (-m, m), (m, -m), (-m, -m), (m, 0), (-m, 0), (0, m), (0, -m), (m, 1), (1, -m)] {
            check(y, x);
        }
        assert_eq!(atan2(0, 0), 0);
        assert_eq!(atan2(0, -5), PI_RAW);
        assert_eq!(atan2(NAN, 1), NAN);
        assert!(worst > ATAN2_MAX_ERROR_LSB / 4.0, "bound too loose: worst {worst}");
    }

    #[test]
    fn sin_cos_error_over_the_whole_range() {
        let mut worst = 0.0f64;
        let mut check = |t: i32| {
            let (ws, wc) = libm::sincos(to_f(t));
            let (s, c) = sin_cos(t);
            let e = err_lsb(s, ws).max(err_lsb(c, wc));
            assert!(e <= SIN_COS_MAX_ERROR_LSB, "sin_cos({t}): {e} LSB");
            worst = worst.max(e);
        };
        // Dense over [-2 pi, 2 pi] (joint angles), sparse to the limits.
        let two_pi = (2.0 * core::f64::consts::PI / LSB) as i32;
        for i in -200_000..=200_000 {
            check(i * (two_pi / 100_000));
            check(i * (i32::MAX / 200_000));
        }
        for t in [0, 1, -1, 7, PI_RAW, -PI_RAW, PI_RAW - 1, -PI_RAW + 1, PI_RAW / 2, -PI_RAW / 2, i32::MAX, -i32::MAX] {
            check(t);
        }
        assert_eq!(sin_cos(NAN), (NAN, NAN));
        assert!(worst > SIN_COS_MAX_ERROR_LSB / 4.0, "bound too loose: worst {worst}");
    }
}
