//! `f64` for host tools: every function comes from `libm` (the Rust port
//! of the MUSL C math library), called explicitly so that the same code
//! runs with and without std. libm's double-precision `sqrt`, `atan2`,
//! `sin` and `cos` are within 1 ulp of the exact result.

use super::{Arith, Real};

impl Arith for f64 {
    const ZERO: Self = 0.0;
    const ONE: Self = 1.0;
    const TWO: Self = 2.0;
    const HALF: Self = 0.5;
    const PI: Self = core::f64::consts::PI;
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
            return f64::NAN;
        }
        // Exact below 2^24 (f32) and 2^53 (f64); otherwise rounded once.
        #[allow(clippy::cast_precision_loss)]
        let (n, d) = (num as f64, den as f64);
        n / d
    }

    #[inline]
    fn admits_geometry(_lower_arm: Self, _a: Self, _d: Self) -> bool {
        true
    }

    #[inline]
    fn abs(self) -> Self {
        libm::fabs(self)
    }

    #[inline]
    fn checked_div(self, rhs: Self) -> Option<Self> {
        let q = self / rhs;
        if q.is_finite() { Some(q) } else { None }
    }

    #[inline]
    fn is_finite(self) -> bool {
        f64::is_finite(self)
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
        if v.is_finite() { Some(v) } else { None }
    }

    #[inline]
    fn to_f64(self) -> f64 {
        self
    }
}

impl Real for f64 {
    #[inline]
    fn recip_internal(den: Self) -> Option<Self> {
        Self::ONE.checked_div(den)
    }

    #[inline]
    fn mul_recip_internal(num: Self, r: Self) -> Self {
        num * r
    }

    #[inline]
    fn sqrt(self) -> Self {
        libm::sqrt(self)
    }

    #[inline]
    fn atan2(self, x: Self) -> Self {
        libm::atan2(self, x)
    }

    #[inline]
    fn sin_cos(self) -> (Self, Self) {
        libm::sincos(self)
    }
}
