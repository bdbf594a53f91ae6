//! Time laws: how far along a path the motion is at time `t`.
//!
//! Every law here moves a distance `L` from rest to rest and is planned in
//! closed form from bounds on speed, acceleration and jerk. The distance is
//! in whatever unit the path uses (millimetres along a Cartesian path,
//! radians for a joint move), the bounds in that unit per second, per
//! second squared and per second cubed.
//!
//! * [`Law::Trapezoid`]: constant acceleration, cruise, constant
//!   deceleration (a triangle when the speed bound is not reached).
//!   Position and velocity are continuous, acceleration steps. Jerk is
//!   ignored.
//! * [`Law::SCurve`]: the seven-segment jerk-limited ("double S") law:
//!   jerk `+j, 0, -j` while accelerating, cruise, and the mirror image
//!   while decelerating. Position, velocity and acceleration are
//!   continuous. The three cases (speed bound reached; only the
//!   acceleration bound reached; neither) are each solved in closed form
//!   (one square root, or one cube root), following L. Biagiotti and
//!   C. Melchiorri, "Trajectory Planning for Automatic Machines and
//!   Robots", Springer, 2008, section 3.4 (double S trajectory), for zero
//!   start and end speeds.
//! * [`Law::Poly7`]: the 4-5-6-7 polynomial
//!   `s = L (35 u^4 - 84 u^5 + 70 u^6 - 20 u^7)`, `u = t/T`, with zero
//!   velocity, acceleration and jerk at both ends (Biagiotti and
//!   Melchiorri, section 2.1, polynomial of degree seven). Its peaks are
//!   `35/16 L/T` (speed, at `u = 1/2`), `84/(5 sqrt 5) L/T^2` (acceleration,
//!   at `u = (5 - sqrt 5)/10`) and `105/2 L/T^3` (jerk, at `u = 1/2`);
//!   the duration is the smallest `T` that keeps all three inside their
//!   bounds.
//!
//! All three laws are point-symmetric about their midpoint, so the second
//! half is evaluated as `L - s(T - t)`: the law arrives at exactly `L` at
//! `t = T` whatever the rounding.
//!
//! Evaluation costs a few comparisons and at most about 15 multiplications
//! and additions; no loop, no division, no transcendental function.

use super::error::{MotionError, MotionFault, MoveFault};
use crate::scalar::{Arith, Real};

/// Which time law a move follows.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "serde", serde(rename_all = "snake_case"))]
pub enum Law {
    /// Trapezoidal velocity: speed and acceleration bounds.
    Trapezoid,
    /// Seven-segment jerk-limited S-curve: speed, acceleration and jerk
    /// bounds.
    SCurve,
    /// The 4-5-6-7 polynomial: speed, acceleration and jerk bounds.
    Poly7,
}

/// Bounds on the path speed (unit/s), acceleration (unit/s^2) and jerk
/// (unit/s^3), each positive. [`Law::Trapezoid`] ignores the jerk.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "serde", serde(deny_unknown_fields))]
pub struct Bounds<S> {
    /// Largest speed along the path.
    pub speed: S,
    /// Largest acceleration along the path.
    pub accel: S,
    /// Largest jerk along the path.
    pub jerk: S,
}

/// Position, velocity and acceleration along the path at one instant.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LawSample<S> {
    /// Distance travelled, in `[0, L]`.
    pub pos: S,
    /// Speed along the path (unit/s), never negative.
    pub vel: S,
    /// Acceleration along the path (unit/s^2).
    pub acc: S,
}

/// The piecewise-polynomial laws (trapezoid: `tj = 0`).
#[derive(Clone, Copy, Debug, PartialEq)]
struct Segments<S> {
    /// Jerk phase duration (s), 0 for the trapezoid.
    tj: S,
    /// Whole acceleration phase (s).
    ta: S,
    /// `ta - tj`.
    ta_minus_tj: S,
    /// Peak speed and acceleration reached.
    vp: S,
    ap: S,
    /// `j/2`, `j/6`, `ap/2` and the position and speed at `t = tj`.
    j: S,
    j_half: S,
    j_sixth: S,
    ap_half: S,
    s1: S,
    v1: S,
    /// Position at the end of the acceleration phase, `vp ta / 2`.
    sa: S,
}

#[derive(Clone, Copy, Debug, PartialEq)]
struct Poly<S> {
    inv_t: S,
    /// `L * [35, -84, 70, -20]`.
    c: [S; 4],
    /// `140 L / T` and `420 L / T^2`.
    kv: S,
    ka: S,
}

#[derive(Clone, Copy, Debug, PartialEq)]
enum Shape<S> {
    Segments(Segments<S>),
    Poly(Poly<S>),
    /// No motion: a dwell.
    Hold,
}

/// A planned time law: fixed length and duration, evaluated at any time.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Profile<S> {
    length: S,
    duration: S,
    half: S,
    shape: Shape<S>,
}

/// `S::from_f64` or an [`MotionFault::Unrepresentable`] error.
pub(crate) fn constant<S: Arith>(v: f64) -> Result<S, MotionError> {
    S::from_f64(v).ok_or(MotionError::before_sampling(MotionFault::Unrepresentable))
}

/// Checked division for planning: a non-representable quotient is an
/// [`MotionFault::Unrepresentable`] error.
pub(crate) fn div<S: Arith>(a: S, b: S) -> Result<S, MotionError> {
    a.checked_div(b).ok_or(MotionError::before_sampling(MotionFault::Unrepresentable))
}

/// Number of range-reduction steps in [`cbrt`]: each multiplies the
/// argument by 8 or 1/8, so 48 steps cover `8^48 ~ 2^144`, more than the
/// whole positive `f32` range from its smallest normal number.
const CBRT_REDUCTION_STEPS: usize = 48;
/// Newton steps in [`cbrt`] after the linear first guess (relative error
/// of the guess below 6 %; the error squares each step: 4e-3, 1.5e-5,
/// 2.5e-10, below f64 rounding after the fourth).
const CBRT_NEWTON_STEPS: usize = 5;

/// Cube root of a non-negative number, for planning only.
///
/// Method: range reduction by exact factors of 8 into `[1/8, 1)` with a
/// fixed number of steps, the linear interpolant of `x^(1/3)` between the
/// ends of that interval as first guess, then a fixed number of Newton
/// steps `y <- (2y + m/y^2)/3` (Newton's method for `y^3 = m`; any
/// numerical analysis text, e.g. W. H. Press et al., "Numerical Recipes",
/// 3rd ed., 2007, section 9.4). Accuracy: a few units of the last place of
/// `S` (measured against libm's `cbrt` in the tests: below 4e-7 relative
/// in f32, below 1e-15 in f64) for `x` in `[1e-30, 1e30]`. Cost: 48
/// comparisons and multiplications, five divisions.
///
/// # Errors
/// [`MotionFault::Unrepresentable`] for a negative or non-finite `x` or
/// when a step cannot be represented.
pub(crate) fn cbrt<S: Real>(x: S) -> Result<S, MotionError> {
    let bad = MotionError::before_sampling(MotionFault::Unrepresentable);
    if !(x >= S::ZERO) || !x.is_finite() {
        return Err(bad);
    }
    if !(x > S::ZERO) {
        return Ok(S::ZERO);
    }
    let eighth = S::HALF * S::HALF * S::HALF;
    let eight = S::TWO * S::TWO * S::TWO;
    let (mut m, mut scale) = (x, S::ONE);
    for _ in 0..CBRT_REDUCTION_STEPS {
        if m >= S::ONE {
            m = m * eighth;
            scale = scale * S::TWO;
        } else if m < eighth {
            m = m * eight;
            scale = scale * S::HALF;
        }
    }
    // Interpolant through (1/8, 1/2) and (1, 1): y = 3/7 + 4/7 m.
    let mut y = constant::<S>(3.0 / 7.0)? + constant::<S>(4.0 / 7.0)? * m;
    let third = constant::<S>(1.0 / 3.0)?;
    for _ in 0..CBRT_NEWTON_STEPS {
        y = (S::TWO * y + div(m, y * y)?) * third;
    }
    Ok(y * scale)
}

fn positive<S: Arith>(v: S) -> Result<S, MotionError> {
    if !v.is_finite() {
        return Err(MotionError::invalid(MoveFault::NonFinite));
    }
    if !(v > S::ZERO) {
        return Err(MotionError::invalid(MoveFault::NotPositive));
    }
    Ok(v)
}

impl<S: Real> Profile<S> {
    /// Plans `law` over a distance `length` (> 0) within `bounds`.
    ///
    /// # Errors
    /// [`MoveFault::NonFinite`] or [`MoveFault::NotPositive`] for a bad
    /// length or bound (the jerk is checked for the trapezoid too);
    /// [`MotionFault::Unrepresentable`] when an intermediate value does
    /// not fit the number type.
    pub fn plan(law: Law, length: S, bounds: Bounds<S>) -> Result<Self, MotionError> {
        let l = positive(length)?;
        let (v, a, j) = (positive(bounds.speed)?, positive(bounds.accel)?, positive(bounds.jerk)?);
        let shape = match law {
            Law::Trapezoid => Shape::Segments(trapezoid(l, v, a)?),
            Law::SCurve => Shape::Segments(s_curve(l, v, a, j)?),
            Law::Poly7 => Shape::Poly(poly7(l, v, a, j)?),
        };
        let duration = match shape {
            Shape::Segments(g) => {
                // Cruise time from the exact balance L = vp (ta + tv).
                let tv = (div(l, g.vp)? - g.ta).max_of(S::ZERO);
                S::TWO * g.ta + tv
            }
            Shape::Poly(p) => div(S::ONE, p.inv_t)?,
            Shape::Hold => S::ZERO,
        };
        Ok(Self { length: l, duration, half: duration * S::HALF, shape })
    }

    /// A dwell: no motion for `duration` seconds (> 0).
    ///
    /// # Errors
    /// [`MoveFault::NonFinite`] or [`MoveFault::NotPositive`].
    pub fn hold(duration: S) -> Result<Self, MotionError> {
        let d = positive(duration)?;
        Ok(Self { length: S::ZERO, duration: d, half: d * S::HALF, shape: Shape::Hold })
    }

    /// The distance the law covers.
    #[must_use]
    pub const fn length(&self) -> S {
        self.length
    }

    /// The duration (s).
    #[must_use]
    pub const fn duration(&self) -> S {
        self.duration
    }

    /// Position, velocity and acceleration at time `t` (s). Before 0 the
    /// law is at rest at 0, after its duration at rest at its length.
    ///
    /// # Panics
    /// Never.
    #[must_use]
    pub fn sample(&self, t: S) -> LawSample<S> {
        let rest = |pos| LawSample { pos, vel: S::ZERO, acc: S::ZERO };
        if !(t > S::ZERO) {
            return rest(S::ZERO);
        }
        if !(t < self.duration) {
            return rest(self.length);
        }
        let mirrored = t > self.half;
        let tf = if mirrored { self.duration - t } else { t };
        let f = match &self.shape {
            Shape::Segments(g) => g.first_half(tf),
            Shape::Poly(p) => p.eval(tf),
            Shape::Hold => rest(S::ZERO),
        };
        if mirrored { LawSample { pos: self.length - f.pos, vel: f.vel, acc: -f.acc } } else { f }
    }
}

impl<S: Real> Segments<S> {
    fn new(tj: S, ta: S, vp: S, ap: S, j: S, sixth: S) -> Self {
        let ap_half = ap * S::HALF;
        Self {
            tj,
            ta,
            ta_minus_tj: ta - tj,
            vp,
            ap,
            j,
            j_half: j * S::HALF,
            j_sixth: j * sixth,
            ap_half,
            s1: ap * tj * tj * sixth,
            v1: ap_half * tj,
            sa: vp * ta * S::HALF,
        }
    }

    /// The law for `0 <= t <= T/2`: jerk phase, constant acceleration,
    /// jerk phase, cruise.
    fn first_half(&self, t: S) -> LawSample<S> {
        if t < self.tj {
            let t2 = t * t;
            LawSample { pos: self.j_sixth * t2 * t, vel: self.j_half * t2, acc: self.j * t }
        } else if t < self.ta_minus_tj {
            let d = t - self.tj;
            LawSample { pos: self.s1 + (self.v1 + self.ap_half * d) * d, vel: self.v1 + self.ap * d, acc: self.ap }
        } else if t < self.ta {
            let u = self.ta - t;
            let u2 = u * u;
            LawSample {
                pos: self.sa - self.vp * u + self.j_sixth * u2 * u,
                vel: self.vp - self.j_half * u2,
                acc: self.j * u,
            }
        } else {
            LawSample { pos: self.sa + self.vp * (t - self.ta), vel: self.vp, acc: S::ZERO }
        }
    }
}

impl<S: Real> Poly<S> {
    /// `L / T` for a law of length `l`.
    fn kv_unit(&self, l: S) -> S {
        l * self.inv_t
    }

    fn eval(&self, t: S) -> LawSample<S> {
        let u = t * self.inv_t;
        let w = S::ONE - u;
        let (u2, w2) = (u * u, w * w);
        let [c0, c1, c2, c3] = self.c;
        LawSample {
            pos: u2 * u2 * (c0 + u * (c1 + u * (c2 + u * c3))),
            vel: self.kv * u2 * u * w2 * w,
            acc: self.ka * u2 * w2 * (w - u),
        }
    }
}

/// Trapezoid: `ta = v/a` when `L >= v^2/a`, else the triangle
/// `ta = sqrt(L/a)`.
fn trapezoid<S: Real>(l: S, v: S, a: S) -> Result<Segments<S>, MotionError> {
    let sixth = constant::<S>(1.0 / 6.0)?;
    let ta_full = div(v, a)?;
    let (ta, vp) = if l >= v * ta_full {
        (ta_full, v)
    } else {
        let ta = div(l, a)?.sqrt();
        (ta, a * ta)
    };
    Ok(Segments::new(S::ZERO, ta, vp, a, S::ZERO, sixth))
}

/// Seven-segment S-curve, rest to rest (Biagiotti and Melchiorri 2008,
/// section 3.4, with `v0 = v1 = 0`).
fn s_curve<S: Real>(l: S, v: S, a: S, j: S) -> Result<Segments<S>, MotionError> {
    let sixth = constant::<S>(1.0 / 6.0)?;
    // Case 1: the speed bound is reached.
    let (tj, ta) = if v * j >= a * a {
        let tj = div(a, j)?;
        (tj, tj + div(v, a)?)
    } else {
        let tj = div(v, j)?.sqrt();
        (tj, S::TWO * tj)
    };
    if l >= v * ta {
        return Ok(Segments::new(tj, ta, v, j * tj, j, sixth));
    }
    // Case 2: only the acceleration bound is reached,
    // L = a (ta - tj) ta  =>  ta = tj/2 + sqrt(tj^2/4 + L/a).
    let tj = div(a, j)?;
    if l >= S::TWO * a * tj * tj {
        let h = tj * S::HALF;
        let ta = h + (h * h + div(l, a)?).sqrt();
        return Ok(Segments::new(tj, ta, a * (ta - tj), a, j, sixth));
    }
    // Case 3: neither bound is reached, L = 2 j tj^3.
    let tj = cbrt(div(l, S::TWO * j)?)?;
    let ap = j * tj;
    Ok(Segments::new(tj, S::TWO * tj, ap * tj, ap, j, sixth))
}

/// 4-5-6-7 polynomial: the smallest duration inside all three bounds.
fn poly7<S: Real>(l: S, v: S, a: S, j: S) -> Result<Poly<S>, MotionError> {
    let t_v = constant::<S>(35.0 / 16.0)? * div(l, v)?;
    let t_a = (constant::<S>(POLY7_PEAK_ACCEL)? * div(l, a)?).sqrt();
    let t_j = cbrt(constant::<S>(52.5)? * div(l, j)?)?;
    let t = t_v.max_of(t_a).max_of(t_j);
    let inv_t = div(S::ONE, t)?;
    let c = [constant::<S>(35.0)? * l, constant::<S>(-84.0)? * l, constant::<S>(70.0)? * l, constant::<S>(-20.0)? * l];
    let kv = constant::<S>(140.0)? * l * inv_t;
    let ka = constant::<S>(420.0)? * l * inv_t * inv_t;
    Ok(Poly { inv_t, c, kv, ka })
}

/// Sub-cycle resolution of the streamed time: every phase boundary of a
/// planned law is rounded to `1 / 2^TICK_BITS` of a cycle (1/1024), which
/// moves the law's position by at most `peak speed * period / 2048`
/// (0.25 um at 2 m/s and 4 kHz) against the exact law; the streamed law
/// itself stays continuous and lands exactly on its end. Moves last at
/// most [`super::MAX_MOVE_CYCLES`] = 2^20 cycles, so tick counts stay
/// at most 2^30, where [`Arith::ratio`] is valid.
pub(crate) const TICK_BITS: u32 = 10;

/// One phase of a piecewise-cubic law, in normalised units: with
/// `u = (ticks - start) / len` in `[0, 1]`, the fraction of the path
/// covered is `c0 + u (c1 + u (c2 + u c3))` and the path speed (path
/// unit/s, already time scaled) `w0 + u (w1 + u w2)`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Piece<S: Arith> {
    start: u32,
    len: u32,
    c: [S; 4],
    w: [S::Wide; 3],
}

#[derive(Clone, Copy, Debug, PartialEq)]
enum Curve<S: Arith> {
    /// The first half of a trapezoid or S-curve: jerk, constant
    /// acceleration, jerk, cruise.
    Cubic([Piece<S>; 4]),
    /// The first half of the 4-5-6-7 polynomial: with `u = ticks / half`,
    /// `s = u^4 (c0 + u (c1 + u (c2 + u c3)))` and speed
    /// `(u (2 - u))^3 kv`.
    Poly7 {
        c: [S; 4],
        kv: S::Wide,
    },
    Hold,
}

/// A planned law as the stream evaluates it, in any [`Real`] type
/// including fixed point: time is an integer count of ticks (never a
/// scalar), each phase is a polynomial in its own normalised time
/// `u in [0, 1]` with coefficients of order one, the position is the
/// fraction `sigma in [0, 1]` of the path and the speed is in path units
/// per second ([`Arith::Wide`]). Built from a [`Profile`] planned in a
/// float type ([`Profile::timing`]).
///
/// Every value stays small: a phase's coefficients `c` are the parts of
/// the path fraction it covers (each at most 1 in size), its `w` parts of
/// the peak speed. The second half of the move is the mirror image of the
/// first (`sigma(T - t) = 1 - sigma(t)`), evaluated from the end, so the
/// last cycle lands on `sigma = 1` exactly.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Timing<S: Arith> {
    /// Ticks in the whole move and in its first half.
    total: u32,
    half: u32,
    /// Speed at the midpoint (the peak).
    v_mid: S::Wide,
    curve: Curve<S>,
}

/// `B::from_f64(a.to_f64())` or an [`MotionFault::Unrepresentable`] error:
/// the conversion between the planning type and the streaming types.
pub(crate) fn convert<B: Arith, A: Arith>(a: A) -> Result<B, MotionError> {
    constant::<B>(a.to_f64())
}

impl<P: Real> Profile<P> {
    /// The law prepared for streaming over `cycles` cycles, stretched in
    /// time by `stretch` (`cycles * period / duration`): speeds are
    /// divided by it.
    ///
    /// # Errors
    /// [`MotionFault::Unrepresentable`] when a coefficient does not fit
    /// `S`, or `cycles` is above [`super::MAX_MOVE_CYCLES`].
    pub(crate) fn timing<S: Real>(&self, cycles: u32, stretch: P) -> Result<Timing<S>, MotionError> {
        let bad = MotionError::before_sampling(MotionFault::Unrepresentable);
        if cycles == 0 || cycles > super::MAX_MOVE_CYCLES {
            return Err(bad);
        }
        let total = cycles << TICK_BITS;
        let half = total / 2;
        let inv_stretch = div(P::ONE, stretch)?;
        let (curve, v_mid) = match &self.shape {
            Shape::Hold => (Curve::Hold, P::ZERO),
            Shape::Poly(p) => {
                // With tau = u / 2: 35 tau^4 - 84 tau^5 + 70 tau^6 - 20 tau^7.
                let c = [35.0 / 16.0, -84.0 / 32.0, 70.0 / 64.0, -20.0 / 128.0];
                // 140 L/T tau^3 (1 - tau)^3 = 140/64 L/T (u (2 - u))^3.
                let kv = constant::<P>(140.0 / 64.0)? * p.kv_unit(self.length) * inv_stretch;
                let c = [constant::<S>(c[0])?, constant::<S>(c[1])?, constant::<S>(c[2])?, constant::<S>(c[3])?];
                (Curve::Poly7 { c, kv: convert(kv)? }, kv)
            }
            Shape::Segments(g) => {
                let inv_l = div(P::ONE, self.length)?;
                let ticks_per_s = f64::from(total) / self.duration.to_f64();
                let tick = |t: P| -> u32 {
                    let v = libm::round(t.to_f64() * ticks_per_s);
                    // Clamped into [0, half]: the conversion is in range.
                    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
                    let v = v.clamp(0.0, f64::from(half)) as u32;
                    v
                };
                let (tj, ta) = (g.tj, g.ta);
                // Boundaries in ticks, each in [0, half] and made monotone.
                let b1 = tick(tj);
                let b2 = tick(g.ta_minus_tj).max(b1);
                let b3 = tick(ta).max(b2);
                let b = [0, b1, b2, b3, half];
                // Phase start states (position, speed, acceleration), jerk
                // and duration, in path units and seconds.
                let d1 = g.ta_minus_tj - tj;
                let p2 = g.s1 + (g.v1 + g.ap_half * d1) * d1;
                let v2 = g.v1 + g.ap * d1;
                let phases = [
                    (P::ZERO, P::ZERO, P::ZERO, g.j, tj),
                    (g.s1, g.v1, g.ap, P::ZERO, d1),
                    (p2, v2, g.ap, -g.j, tj),
                    (g.sa, g.vp, P::ZERO, P::ZERO, (self.half - ta).max_of(P::ZERO)),
                ];
                let sixth = constant::<P>(1.0 / 6.0)?;
                let mut pieces = [Piece { start: 0, len: 0, c: [S::ZERO; 4], w: [S::Wide::ZERO; 3] }; 4];
                for (i, (piece, &(p0, v0, a0, j, d))) in pieces.iter_mut().zip(phases.iter()).enumerate() {
                    let (start, end) = match (b.get(i), b.get(i + 1)) {
                        (Some(&s), Some(&e)) => (s, e),
                        _ => return Err(bad),
                    };
                    let d2 = d * d;
                    *piece = Piece {
                        start,
                        len: end - start,
                        c: [
                            convert(p0 * inv_l)?,
                            convert(v0 * d * inv_l)?,
                            convert(a0 * d2 * P::HALF * inv_l)?,
                            convert(j * d2 * d * sixth * inv_l)?,
                        ],
                        w: [
                            convert(v0 * inv_stretch)?,
                            convert(a0 * d * inv_stretch)?,
                            convert(j * d2 * P::HALF * inv_stretch)?,
                        ],
                    };
                }
                (Curve::Cubic(pieces), g.vp * inv_stretch)
            }
        };
        Ok(Timing { total, half, v_mid: convert(v_mid)?, curve })
    }
}

impl<S: Real> Piece<S> {
    #[inline]
    fn eval(&self, ticks: u32) -> (S, S::Wide) {
        let u = S::ratio(ticks - self.start, self.len);
        let [c0, c1, c2, c3] = self.c;
        let [w0, w1, w2] = self.w;
        (c0 + u * (c1 + u * (c2 + u * c3)), w0 + u.mul_wide(w1 + u.mul_wide(w2)))
    }
}

impl<S: Real> Timing<S> {
    /// The path fraction `sigma in [0, 1]` and the path speed (path
    /// unit/s) at the end of cycle `cycle` (0 ..= the move's cycles).
    /// A few comparisons, one [`Arith::ratio`] and about ten
    /// multiplications; no loop that depends on the input.
    #[inline]
    pub(crate) fn sample(&self, cycle: u32) -> (S, S::Wide) {
        let q = cycle.min(self.total >> TICK_BITS) << TICK_BITS;
        let mirrored = q > self.half;
        let f = if mirrored { self.total - q } else { q };
        let (s, v) = match &self.curve {
            Curve::Hold => return (S::ZERO, S::Wide::ZERO),
            _ if f >= self.half => (S::HALF, self.v_mid),
            Curve::Poly7 { c, kv } => {
                let u = S::ratio(f, self.half);
                let [c0, c1, c2, c3] = *c;
                let u2 = u * u;
                let g = u * (S::TWO - u);
                (u2 * u2 * (c0 + u * (c1 + u * (c2 + u * c3))), (g * g * g).mul_wide(*kv))
            }
            Curve::Cubic(pieces) => {
                let [p0, p1, p2, p3] = pieces;
                let p = if f < p1.start {
                    p0
                } else if f < p2.start {
                    p1
                } else if f < p3.start {
                    p2
                } else {
                    p3
                };
                p.eval(f)
            }
        };
        if mirrored { (S::ONE - s, v) } else { (s, v) }
    }
}

/// Peak of `|s''|` of the unit 4-5-6-7 polynomial, `84 / (5 sqrt 5)`.
pub const POLY7_PEAK_ACCEL: f64 = 7.513_188_404_399_293;

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative error allowed in the f64 cube root.
    const CBRT_F64_REL: f64 = 1e-15;
    /// Relative error allowed in the f32 cube root.
    const CBRT_F32_REL: f64 = 4e-7;

    #[test]
    fn cube_root_matches_libm() {
        let mut x = 1e-30_f64;
        while x < 1e30 {
            let got = cbrt(x).unwrap();
            assert!((got / libm::cbrt(x) - 1.0).abs() < CBRT_F64_REL, "{x}");
            let x32 = x as f32;
            let got32 = f64::from(cbrt(x32).unwrap());
            assert!((got32 / libm::cbrt(f64::from(x32)) - 1.0).abs() < CBRT_F32_REL, "{x32}");
            x *= 1.37;
        }
        assert_eq!(cbrt(0.0_f64).unwrap(), 0.0);
        assert!(cbrt(-1.0_f64).is_err());
    }

    #[test]
    fn poly7_peak_accel_constant_is_the_maximum() {
        // a(u) = 420 u^2 (1-u)^2 (1-2u), maximum at u = (5 - sqrt 5)/10.
        let u = (5.0 - 5.0_f64.sqrt()) / 10.0;
        let peak = 420.0 * u * u * (1.0 - u) * (1.0 - u) * (1.0 - 2.0 * u);
        assert!((peak - POLY7_PEAK_ACCEL).abs() < 1e-12);
        let dense = (0..=100_000).map(|i| {
            let u = f64::from(i) / 100_000.0;
            420.0 * u * u * (1.0 - u) * (1.0 - u) * (1.0 - 2.0 * u)
        });
        assert!(dense.fold(0.0_f64, f64::max) <= POLY7_PEAK_ACCEL);
    }

    /// The closed-form duration, written out independently in f64.
    fn closed_form_duration(law: Law, l: f64, v: f64, a: f64, j: f64) -> f64 {
        match law {
            Law::Trapezoid => {
                if l >= v * v / a {
                    l / v + v / a
                } else {
                    2.0 * (l / a).sqrt()
                }
            }
            Law::SCurve => {
                // Full speed: accel phase of a/j + v/a (or 2 sqrt(v/j)),
                // total L/v + accel phase.
                let ta = if v * j >= a * a { a / j + v / a } else { 2.0 * (v / j).sqrt() };
                if l >= v * ta {
                    l / v + ta
                } else if l >= 2.0 * a * a * a / (j * j) {
                    let tj = a / j;
                    2.0 * (tj / 2.0 + (tj * tj / 4.0 + l / a).sqrt())
                } else {
                    4.0 * (l / (2.0 * j)).cbrt()
                }
            }
            Law::Poly7 => (35.0 / 16.0 * l / v).max((POLY7_PEAK_ACCEL * l / a).sqrt()).max((52.5 * l / j).cbrt()),
        }
    }

    /// (length, speed, accel, jerk) cases covering every branch: cruise,
    /// acceleration-limited, jerk-limited, and a short triangle.
    const CASES: [(f64, f64, f64, f64); 5] = [
        (305.0, 2000.0, 30_000.0, 1.0e6),
        (40.0, 2000.0, 30_000.0, 1.0e6),
        (2.0, 2000.0, 30_000.0, 1.0e6),
        (500.0, 800.0, 50_000.0, 2.0e5),
        (1.2, 6.0, 60.0, 900.0),
    ];
    /// Samples per profile in the dense checks.
    const SAMPLES: u32 = 20_000;

    struct Tol {
        /// Relative tolerance on limits and durations.
        rel: f64,
    }

    fn check_profiles<S: Real>(tol: &Tol) {
        let f = |v: f64| S::from_f64(v).unwrap();
        for law in [Law::Trapezoid, Law::SCurve, Law::Poly7] {
            for &(l, v, a, j) in &CASES {
                let p = Profile::plan(law, f(l), Bounds { speed: f(v), accel: f(a), jerk: f(j) }).unwrap();
                let t_total = p.duration().to_f64();
                let expected = closed_form_duration(law, l, v, a, j);
                assert!((t_total / expected - 1.0).abs() < tol.rel, "{law:?} {l}: {t_total} vs {expected}");
                // Exact arrival and rest at both ends.
                let end = p.sample(p.duration());
                assert_eq!(end.pos.to_f64(), p.length().to_f64());
                assert_eq!(end.vel.to_f64(), 0.0);
                let start = p.sample(S::ZERO);
                assert_eq!(start.pos.to_f64(), 0.0);
                let dt = t_total / f64::from(SAMPLES);
                let mut prev = start;
                let (mut peak_v, mut peak_a) = (0.0_f64, 0.0_f64);
                for i in 1..=SAMPLES {
                    let g = p.sample(f(dt * f64::from(i)));
                    let (pos, vel, acc) = (g.pos.to_f64(), g.vel.to_f64(), g.acc.to_f64());
                    // Limits on every sample.
                    assert!(vel >= 0.0 && vel <= v * (1.0 + tol.rel), "{law:?} {l}: v {vel}");
                    assert!(acc.abs() <= a * (1.0 + tol.rel), "{law:?} {l}: a {acc}");
                    assert!(pos >= 0.0 && pos <= l * (1.0 + tol.rel));
                    // Continuity: no jump larger than the next derivative's bound allows.
                    let (dp, dv, da) = (pos - prev.pos.to_f64(), vel - prev.vel.to_f64(), acc - prev.acc.to_f64());
                    let slack = tol.rel * l;
                    assert!(dp >= -slack && dp <= v * dt * (1.0 + tol.rel) + slack, "{law:?} {l}: dp {dp} at {i}");
                    assert!(dv.abs() <= a * dt * (1.0 + tol.rel) + tol.rel * v, "{law:?} {l}: dv {dv} at {i}");
                    if law != Law::Trapezoid {
                        assert!(da.abs() <= j * dt * (1.0 + tol.rel) + tol.rel * a, "{law:?} {l}: da {da} at {i}");
                    }
                    // The velocity is the derivative of the position.
                    let mean_v = 0.5 * (vel + prev.vel.to_f64());
                    assert!((dp / dt - mean_v).abs() <= 0.5 * a * dt + 8.0 * tol.rel * l / dt, "{law:?} {l}: {i}");
                    peak_v = peak_v.max(vel);
                    peak_a = peak_a.max(acc.abs());
                    prev = g;
                }
                // Each law uses at least one bound fully (the duration is the
                // shortest the law allows), up to the sampling.
                let used = (peak_v / v).max(peak_a / a);
                assert!(used > 0.97 || law != Law::Trapezoid, "{law:?} {l}: peak use {used}");
            }
        }
    }

    #[test]
    fn profiles_in_f64_keep_limits_continuity_duration_and_arrival() {
        check_profiles::<f64>(&Tol { rel: 1e-9 });
    }

    #[test]
    fn profiles_in_f32_keep_limits_continuity_duration_and_arrival() {
        check_profiles::<f32>(&Tol { rel: 2e-5 });
    }

    /// Streams each case's law at `PERIOD_S` through [`Timing`] in `S` and
    /// compares every cycle with the law planned and sampled in f64.
    /// `tol_rel` is the rounding of `S` relative to the length and the
    /// peak speed; the boundary rounding to ticks adds up to half a tick
    /// of time (see [`TICK_BITS`]).
    fn check_timing<S: Real>(tol_rel: f64, tol_speed_abs: f64) {
        const PERIOD_S: f64 = 2.5e-4;
        let mut worst = (0.0_f64, 0.0_f64);
        for law in [Law::Trapezoid, Law::SCurve, Law::Poly7] {
            for &(l, v, a, j) in &CASES {
                let p = Profile::plan(law, l, Bounds { speed: v, accel: a, jerk: j }).unwrap();
                let cycles = (p.duration() / PERIOD_S).ceil();
                let stretch = cycles * PERIOD_S / p.duration();
                #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
                let timing = p.timing::<S>(cycles as u32, stretch).unwrap();
                let half_tick_s = PERIOD_S / f64::from(2u32 << TICK_BITS);
                let (tol_pos, tol_vel) =
                    (tol_rel * l + v * half_tick_s, tol_rel * v + a * half_tick_s * 4.0 + tol_speed_abs);
                for k in 0..=cycles as u32 {
                    let want = p.sample(f64::from(k) * PERIOD_S / stretch);
                    let (sigma, speed) = timing.sample(k);
                    let (pos, vel) = (sigma.to_f64() * l, speed.to_f64());
                    let (e_pos, e_vel) = ((pos - want.pos).abs(), (vel - want.vel / stretch).abs());
                    assert!(e_pos <= tol_pos, "{law:?} {l}: cycle {k}: {pos} vs {}", want.pos);
                    assert!(e_vel <= tol_vel, "{law:?} {l}: cycle {k}: {vel} vs {}", want.vel / stretch);
                    worst = (worst.0.max(e_pos / l), worst.1.max(e_vel / v));
                }
                let (end, end_speed) = timing.sample(cycles as u32);
                assert_eq!((end.to_f64(), end_speed.to_f64()), (1.0, 0.0), "exact arrival at rest");
            }
        }
        assert!(worst.0 > 0.0, "the comparison must see some rounding");
    }

    #[test]
    fn streamed_timing_matches_the_law_in_every_type() {
        check_timing::<f64>(1e-12, 0.0);
        check_timing::<f32>(1e-6, 0.0);
        // Q7.25 fraction (LSB 3e-8) and Q18.14 speed (LSB 6.1e-5 path
        // units/s) rounding, a few operations each.
        check_timing::<crate::Fixed>(2e-6, 4.0 * 6.1e-5);
    }

    #[test]
    fn bad_bounds_are_refused() {
        let b = Bounds { speed: 1.0, accel: 1.0, jerk: 1.0 };
        let e = Profile::plan(Law::SCurve, 0.0, b).unwrap_err();
        assert_eq!(e.fault, MotionFault::InvalidMove(MoveFault::NotPositive));
        let e = Profile::plan(Law::Trapezoid, 1.0, Bounds { accel: f64::NAN, ..b }).unwrap_err();
        assert_eq!(e.fault, MotionFault::InvalidMove(MoveFault::NonFinite));
    }
}
