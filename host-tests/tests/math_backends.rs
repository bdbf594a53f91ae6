//! Accuracy of three f32 math backends for the functions the solvers
//! need, against libm's f64 functions as the reference (libm's
//! double-precision `sqrt`, `atan2`, `sin` and `cos` are within 1 ulp of
//! the exact value, about 1e-16 relative: far below every error measured
//! here):
//!
//! * `micromath` 2: fast approximations meant for small code;
//! * `libm` (the Rust port of MUSL): `sqrtf`, `atan2f`, `sinf`/`cosf`;
//! * deltakin's own kernels: `sqrt_f32`, `atan2_f32` and `sin_cos_f32`.
//!
//! Why the solvers use libm and their own kernels, not micromath: f32
//! carries a joint angle near 1 rad to about 6e-8 rad (half an ulp), and
//! the solvers are meant to lose little beyond that: deltakin's documented
//! f32 joint error over the whole guarded workspace is 2e-5 rad
//! (`bounds::F32_JOINT_ERR_RAD`), which already includes the amplification
//! near the workspace edges. Kernels with errors near 1e-7 fit that budget.
//! micromath's approximations are four to six orders of magnitude coarser
//! (measured: 2.8e-3 rad for atan2, 1.1e-3 for sine and cosine, 6 %
//! relative for the square root, as asserted below); a 2.8e-3 rad joint
//! error alone moves the elbow of the demo robot's 280 mm upper arm by
//! 0.8 mm. The speed of the three
//! backends is in `benches/math_backends.rs`.
//!
//! Each test measures the largest error over a dense input range and
//! asserts it between two named bounds: below the upper bound is the
//! accuracy claim; above the lower bound shows the sample does reach the
//! backend's real worst case, so the measurement would notice if it were
//! run on the wrong function.

use std::f64::consts::{PI, TAU};

use deltakin::scalar::{
    ATAN2_F32_MAX_ABS_ERROR, SIN_COS_F32_MAX_ABS_ERROR, SQRT_F32_MAX_REL_ERROR, atan2_f32, sin_cos_f32, sqrt_f32,
};
use deltakin_harness::bounds::F32_JOINT_ERR_RAD;
use micromath::F32Ext;

/// Samples per range.
const SAMPLES: usize = 1_000_000;

// --- square root: relative error over [1e-6, 1e6] ---------------------------------

/// The square-root range, in decades: 1e-6 to 1e6.
const SQRT_DECADES: (f64, f64) = (-6.0, 6.0);

/// micromath's `sqrt` halves the exponent and mantissa bits together,
/// a linear interpolation of the root within each binade pair; its own
/// documentation states an average deviation of about 5 %. Measured:
/// 6.07 % at worst.
const MICROMATH_SQRT_REL: (f64, f64) = (3e-2, 1e-1);
/// libm's `sqrtf` is correctly rounded (IEEE 754 requires it of square
/// root), so its relative error is at most half an ulp, 2^-24 = 5.96e-8
/// (measured 5.96e-8). A dense sample comes within a factor of two.
const LIBM_SQRTF_REL: (f64, f64) = (2.98e-8, 5.97e-8);
/// deltakin's `sqrt_f32`: below its published bound (measured 8.9e-8);
/// the lower bound is the one a correctly rounded root reaches.
const OWN_SQRT_REL: (f64, f64) = (2.98e-8, SQRT_F32_MAX_REL_ERROR as f64);

/// Largest relative error of `f` against f64 square root, on `SAMPLES`
/// values spread evenly in log10 over `SQRT_DECADES`.
fn sqrt_max_rel(f: impl Fn(f32) -> f32) -> f64 {
    let (lo, hi) = SQRT_DECADES;
    (0..SAMPLES)
        .map(|i| {
            let x = 10f64.powf(lo + (hi - lo) * i as f64 / (SAMPLES - 1) as f64) as f32;
            let want = libm::sqrt(f64::from(x));
            ((f64::from(f(x)) - want) / want).abs()
        })
        .fold(0.0, f64::max)
}

// --- atan2: absolute error (rad) over the full circle ----------------------------

/// Radii of the circles sampled (mm-sized numbers and small ones).
const ATAN2_RADII: [f64; 3] = [1e-2, 1.0, 500.0];

/// micromath's `atan2` uses a rational first-quadrant approximation; its
/// documentation states a maximum error of 0.002 rad for atan2 and
/// 0.162 deg (2.8e-3 rad) for the underlying normalised form. Measured:
/// 2.83e-3 rad, the second figure.
const MICROMATH_ATAN2_ABS: (f64, f64) = (1e-3, 1e-2);
/// libm's `atan2f`: about one ulp of the result, whose ulp just below pi
/// is 2^-22 = 2.4e-7 rad; measured 2.48e-7 there, so the upper bound is
/// 1.5 ulp near pi. Rounding the result alone costs up to half an ulp
/// (1.2e-7 near pi), so a dense sample sees at least a third of that.
const LIBM_ATAN2F_ABS: (f64, f64) = (4e-8, 3.6e-7);
/// deltakin's `atan2_f32`: below its published bound (measured 1.81e-7);
/// the lower bound is the same rounding floor as for libm.
const OWN_ATAN2_ABS: (f64, f64) = (4e-8, ATAN2_F32_MAX_ABS_ERROR as f64);

/// Largest absolute error of `f(y, x)` against f64 atan2, on `SAMPLES`
/// angles around the full turn for each radius in `ATAN2_RADII`. The
/// reference gets the same (rounded) f32 inputs, and the difference is
/// taken modulo 2 pi, since pi and -pi name the same direction.
fn atan2_max_abs(f: impl Fn(f32, f32) -> f32) -> f64 {
    let mut worst = 0.0f64;
    for r in ATAN2_RADII {
        for i in 0..SAMPLES {
            let a = -PI + TAU * i as f64 / SAMPLES as f64;
            let (y, x) = ((r * a.sin()) as f32, (r * a.cos()) as f32);
            let want = libm::atan2(f64::from(y), f64::from(x));
            let d = f64::from(f(y, x)) - want;
            let d = d - TAU * (d / TAU).round();
            worst = worst.max(d.abs());
        }
    }
    worst
}

// --- sine and cosine: absolute error over [-pi, pi] ------------------------------

/// micromath's `sin`/`cos` use a corrected parabola per half period
/// (the method its source cites); measured 1.09e-3 absolute.
const MICROMATH_SIN_COS_ABS: (f64, f64) = (5e-4, 5e-3);
/// libm's `sinf`/`cosf` evaluate in double precision and round once,
/// so the error is about half an ulp of the result; for results in
/// `[1/2, 1)` that is 2^-25 = 2.98e-8 (measured 2.99e-8). The upper bound
/// allows one ulp.
const LIBM_SIN_COS_ABS: (f64, f64) = (2e-8, 6.0e-8);
/// deltakin's `sin_cos_f32`: below its published bound; above what a
/// correctly rounded result reaches.
const OWN_SIN_COS_ABS: (f64, f64) = (2e-8, SIN_COS_F32_MAX_ABS_ERROR as f64);

/// Largest absolute error of either output of `f` against f64 sine and
/// cosine, on `SAMPLES` angles evenly over `[-pi, pi]`.
fn sin_cos_max_abs(f: impl Fn(f32) -> (f32, f32)) -> f64 {
    (0..SAMPLES)
        .map(|i| {
            let x = (-PI + TAU * i as f64 / (SAMPLES - 1) as f64) as f32;
            let (s, c) = f(x);
            let (ws, wc) = libm::sincos(f64::from(x));
            (f64::from(s) - ws).abs().max((f64::from(c) - wc).abs())
        })
        .fold(0.0, f64::max)
}

/// Asserts `lo < measured <= hi` and prints the measurement (visible with
/// `--nocapture`).
fn assert_between(what: &str, measured: f64, (lo, hi): (f64, f64)) {
    println!("{what}: max error {measured:.3e} (bounds {lo:.1e} .. {hi:.2e})");
    assert!(measured > lo && measured <= hi, "{what}: max error {measured:e} outside ({lo:e}, {hi:e}]");
}

#[test]
fn sqrt_relative_error() {
    let micromath = sqrt_max_rel(F32Ext::sqrt);
    let own = sqrt_max_rel(sqrt_f32);
    assert_between("sqrt micromath (relative)", micromath, MICROMATH_SQRT_REL);
    assert_between("sqrt libm sqrtf (relative)", sqrt_max_rel(libm::sqrtf), LIBM_SQRTF_REL);
    assert_between("sqrt deltakin sqrt_f32 (relative)", own, OWN_SQRT_REL);
    assert!(micromath > 1e5 * own);
}

#[test]
fn atan2_absolute_error() {
    let micromath = atan2_max_abs(F32Ext::atan2);
    let libm_f = atan2_max_abs(libm::atan2f);
    let own = atan2_max_abs(atan2_f32);
    assert_between("atan2 micromath (rad)", micromath, MICROMATH_ATAN2_ABS);
    assert_between("atan2 libm atan2f (rad)", libm_f, LIBM_ATAN2F_ABS);
    assert_between("atan2 deltakin atan2_f32 (rad)", own, OWN_ATAN2_ABS);
    // micromath alone would exceed the f32 joint-angle budget of the whole
    // solver; libm and deltakin's kernel leave almost all of it to the
    // rest of the algorithm.
    assert!(micromath > 10.0 * F32_JOINT_ERR_RAD && libm_f < 0.05 * F32_JOINT_ERR_RAD);
    assert!(own < 0.05 * F32_JOINT_ERR_RAD);
}

#[test]
fn sin_cos_absolute_error() {
    let micromath = sin_cos_max_abs(F32Ext::sin_cos);
    let own = sin_cos_max_abs(sin_cos_f32);
    assert_between("sin_cos micromath", micromath, MICROMATH_SIN_COS_ABS);
    assert_between("sin_cos libm sincosf", sin_cos_max_abs(libm::sincosf), LIBM_SIN_COS_ABS);
    assert_between("sin_cos deltakin sin_cos_f32", own, OWN_SIN_COS_ABS);
    assert!(micromath > 1e3 * own);
}
