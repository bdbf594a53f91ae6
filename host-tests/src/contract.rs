//! The setpoint contract: what every setpoint a deltakin stream emits must
//! satisfy, re-checked from the emitted numbers alone, independently of how
//! the stream planned and validated them.
//!
//! Used by the fuzz target (`ci/fuzz/fuzz_targets/core_inputs.rs`, which
//! includes this file as a module: it depends on `deltakin` and `core`
//! only) and by the tests below. Feed it every emitted setpoint in order
//! ([`Contract::check`]), a held rest cycle whenever the stream is idle
//! ([`Contract::hold`]), and call [`Contract::finish`] at the end. It
//! checks, for setpoint `k` with joints `theta_k`, Jacobian joint rates
//! `w_k` and period `T`, starting and ending at rest:
//!
//! 1. **Guards.** The joints pass the guarded forward kinematics and the
//!    position passes the guarded inverse kinematics (joint ranges,
//!    passive-joint cones, serial and parallel margins). One of the two is
//!    what the stream computed the setpoint with; the other re-derives the
//!    pose, and a re-derivation that fails only within rounding of a
//!    limit ([`Rounding::GUARD_SLACK`]) is accepted (a serial margin by
//!    its size when the re-derived pose crossed the base plane, where the
//!    margin's sign flips by definition).
//! 2. **Joint speed.** `|w_k| <= V` and `|theta_k - theta_{k-1}| / T <= V`
//!    (plus the slacks below).
//! 3. **Joint acceleration.** `|w_k - w_{k-1}| / T <= A` and
//!    `|theta_{k+1} - 2 theta_k + theta_{k-1}| / T^2 <= A`.
//! 4. **Consistency.** `|(theta_k - theta_{k-1}) / T - (w_k + w_{k-1}) / 2|
//!    <= CONSISTENCY_FACTOR * A * T + 2 e / T`: the rates are the
//!    derivative of the joints. `A T / 4` is the exact bound for a rate
//!    whose change stays within `A` (reached between two rests); `e` is
//!    the documented joint accuracy of the type ([`Rounding::JOINT_NOISE`]),
//!    which the stream may not tell apart from motion.
//!
//! # Tolerances
//! * [`LIMIT_ROUNDING_REL`] on every limit: the stream compares in its
//!   planning type (`f32` or `f64`), after rounding the reciprocal of the
//!   limit and the product; a few roundings of `2^-24` each.
//! * Conversion of the rates to the planning type (fixed point streams
//!   plan in `f32`): the stream's acceleration check sees each rate
//!   rounded by `2^-24` relative, so `(|w_k| + |w_{k-1}|) * 2^-24 / T` is
//!   allowed on top of `A` for the rate differences.
//! * Joint-angle noise `n_k` per setpoint: the emitted angles are rounded
//!   results of the stream's own arithmetic (IK in `f32`, say), so finite
//!   differences of them carry that rounding divided by `T` (first
//!   differences: `(n_k + n_{k-1}) / T`) or `T^2` (second differences:
//!   `(n_{k+1} + 2 n_k + n_{k-1}) / T^2`). `n_k` is measured, not
//!   assumed: the distance from the emitted angles to an `f64` inverse
//!   kinematics of the emitted position (at most [`Rounding::JOINT_NOISE`],
//!   so a joint that disagrees with its position is not taken for
//!   rounding), plus the position's own rounding
//!   ([`Rounding::POSITION_ULPS`] units of the position type) mapped
//!   through the Jacobian. Where the `f64` solve is unavailable,
//!   [`Rounding::JOINT_NOISE`] (the documented accuracy bound) stands in.
//! * Sampling: the stream checks its limits at the samples only. A rate
//!   bounded by `V` at two samples and changing by at most `A` between
//!   them averages at most `V + A T / 4` over the period, and its
//!   integral differs from the trapezoid estimate `T (w_k + w_{k-1}) / 2`
//!   by at most `A T^2 / 4`: [`CONSISTENCY_FACTOR`] is that `1/4`; the
//!   same `A T / 4` is allowed on the first differences. A real fault (a joint that jumps
//!   in one cycle, a rate of the wrong sign or scale) is orders of
//!   magnitude beyond these.

use core::fmt;

use deltakin::motion::{JointRateLimits, Setpoint};
use deltakin::{Arith, Fixed, Geometry, Limits, Real, Robot, Solution};

/// Relative slack on every joint speed and acceleration limit: the stream
/// compares in `f32` (or `f64`), a few roundings of `2^-24`.
pub const LIMIT_ROUNDING_REL: f64 = 1e-6;

/// Relative rounding of a joint rate converted to `f32` for the stream's
/// limit comparisons (fixed point; below it for floats).
const RATE_TO_PLANNING_REL: f64 = 1.0 / 16_777_216.0;

/// Bound on the trapezoid-rule error of the joint angles, in units of
/// `A * T` (see the module docs: exact for a rate changing by at most `A`
/// per second, reached between two rests).
pub const CONSISTENCY_FACTOR: f64 = 0.25;

/// How precisely a number type's setpoints can be re-checked.
pub trait Rounding: Real {
    /// Slack on a margin or a passive-joint cosine (both dimensionless,
    /// of order one) when a pose is re-derived in the other direction
    /// (forward from the joints, inverse from the position): two solves'
    /// rounding near a limit.
    const GUARD_SLACK: f64;
    /// Joint-angle error (rad) assumed when no `f64` solve measures it:
    /// the documented accuracy bound of this type's inverse kinematics
    /// (`host-tests/src/bounds.rs`).
    const JOINT_NOISE: f64;
    /// Absolute resolution of a position (mm): 0 for floats, the LSB for
    /// fixed point.
    const POSITION_LSB: f64;
    /// Relative resolution of a position: the unit roundoff for floats,
    /// that of the path fraction (Q7.25) for fixed point.
    const POSITION_REL: f64;
    /// Units ([`Rounding::POSITION_LSB`] plus [`Rounding::POSITION_REL`]
    /// times the largest coordinate) a path position may be off its exact
    /// value: the interpolation `start + sigma * (end - start)` rounds
    /// `sigma`, the product and the sum, with `|end - start|` up to twice
    /// the coordinates; four covers it.
    const POSITION_ULPS: f64 = 4.0;
}

impl Rounding for f32 {
    const GUARD_SLACK: f64 = 1e-4;
    const JOINT_NOISE: f64 = 1e-5;
    const POSITION_LSB: f64 = 0.0;
    const POSITION_REL: f64 = 1.0 / 16_777_216.0;
}

impl Rounding for f64 {
    const GUARD_SLACK: f64 = 1e-9;
    const JOINT_NOISE: f64 = 1e-13;
    const POSITION_LSB: f64 = 0.0;
    const POSITION_REL: f64 = 1.0 / 9_007_199_254_740_992.0;
}

impl Rounding for Fixed {
    const GUARD_SLACK: f64 = 1e-4;
    const JOINT_NOISE: f64 = 5e-6;
    /// Q18.14 millimetres.
    const POSITION_LSB: f64 = 1.0 / 16_384.0;
    /// Q7.25 path fraction.
    const POSITION_REL: f64 = 1.0 / 33_554_432.0;
}

/// Which check a setpoint failed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Broken {
    /// The guarded forward kinematics of the joints, or the guarded
    /// inverse kinematics of the position, refused the pose (beyond the
    /// rounding slack).
    Guard {
        /// `"forward"` or `"inverse"`.
        solve: &'static str,
        /// The core's error.
        error: deltakin::Error,
    },
    /// A joint speed above its limit.
    Speed {
        /// `"jacobian rate"` or `"joint difference"`.
        from: &'static str,
        /// The speed (rad/s).
        value: f64,
        /// The limit with every slack (rad/s).
        allowed: f64,
    },
    /// A joint acceleration above its limit.
    Accel {
        /// `"rate difference"` or `"second difference"`.
        from: &'static str,
        /// The acceleration (rad/s^2).
        value: f64,
        /// The limit with every slack (rad/s^2).
        allowed: f64,
    },
    /// The joints moved by a different amount than the rates say.
    Inconsistent {
        /// `(theta_k - theta_{k-1}) / T` (rad/s).
        difference: f64,
        /// `(w_k + w_{k-1}) / 2` (rad/s).
        mean_rate: f64,
        /// The largest difference allowed (rad/s).
        allowed: f64,
    },
    /// A number of the setpoint is not finite.
    NonFinite,
}

/// A broken contract: which setpoint (0 is the rest pose before the
/// first, the index counts every checked and held cycle), which arm and
/// what.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Violation {
    /// Cycle index from the start (1 for the first emitted setpoint).
    pub cycle: u64,
    /// The arm (0 for a guard or non-finite fault).
    pub arm: usize,
    /// What failed.
    pub broken: Broken,
}

impl fmt::Display for Violation {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let (cycle, arm) = (self.cycle, self.arm);
        match self.broken {
            Broken::Guard { solve, error } => {
                write!(f, "cycle {cycle}: guarded {solve} kinematics refuses it: {error}")
            }
            Broken::Speed { from, value, allowed } => {
                write!(f, "cycle {cycle}, arm {arm}: {from} speed {value:e} rad/s > {allowed:e}")
            }
            Broken::Accel { from, value, allowed } => {
                write!(f, "cycle {cycle}, arm {arm}: {from} acceleration {value:e} rad/s^2 > {allowed:e}")
            }
            Broken::Inconsistent { difference, mean_rate, allowed } => write!(
                f,
                "cycle {cycle}, arm {arm}: joint difference / T = {difference:e} rad/s, mean rate {mean_rate:e} \
                 (allowed gap {allowed:e})"
            ),
            Broken::NonFinite => write!(f, "cycle {cycle}: a number is not finite"),
        }
    }
}

/// Whether two positions lie on different sides of the base plane (or
/// one on it): the serial margin's sign is that of the side.
fn crossed<W: Arith>(a: [W; 3], b: [W; 3]) -> bool {
    let (za, zb) = (a[2].to_f64(), b[2].to_f64());
    (za > 0.0) != (zb > 0.0)
}

/// `value <= allowed`, false for NaN.
fn within(value: f64, allowed: f64) -> bool {
    matches!(value.partial_cmp(&allowed), Some(core::cmp::Ordering::Less | core::cmp::Ordering::Equal))
}

/// One cycle as the checker keeps it (f64; exact for every number type).
#[derive(Clone, Copy, Debug, PartialEq)]
struct Sample {
    joints: [f64; 3],
    rates: [f64; 3],
    noise: [f64; 3],
}

/// The contract checker of one stream (see the module docs).
#[derive(Clone, Debug)]
pub struct Contract<S: Rounding> {
    robot: Robot<S>,
    /// The same robot in f64, to measure the joint-angle noise.
    reference: Option<Robot<f64>>,
    cos_cone: f64,
    period: f64,
    speed: [f64; 3],
    accel: [f64; 3],
    /// The cycle before the last, and the last one.
    before: Sample,
    last: Sample,
    cycle: u64,
}

fn to_f64<A: Arith>(v: [A; 3]) -> [f64; 3] {
    v.map(A::to_f64)
}

impl<S: Rounding> Contract<S> {
    /// A checker for a stream of `robot` at rest with joints
    /// `start_joints`, one setpoint every `period` seconds, within
    /// `limits` (rad/s, rad/s^2).
    #[must_use]
    pub fn new(robot: Robot<S>, period: f64, limits: &JointRateLimits<f64>, start_joints: [S; 3]) -> Self {
        let g = robot.geometry();
        let l = robot.limits();
        let reference = Robot::new(
            Geometry {
                base_radius: g.base_radius.to_f64(),
                platform_radius: g.platform_radius.to_f64(),
                upper_arm: g.upper_arm.to_f64(),
                lower_arm: g.lower_arm.to_f64(),
            },
            Limits {
                joint_min: to_f64(l.joint_min),
                joint_max: to_f64(l.joint_max),
                passive_cone: l.passive_cone.to_f64(),
                min_serial_margin: l.min_serial_margin.to_f64(),
                min_parallel_margin: l.min_parallel_margin.to_f64(),
            },
        )
        .ok();
        let rest = Sample { joints: to_f64(start_joints), rates: [0.0; 3], noise: [0.0; 3] };
        Self {
            cos_cone: l.passive_cone.to_f64().cos(),
            robot,
            reference,
            period,
            speed: limits.speed,
            accel: limits.accel,
            before: rest,
            last: rest,
            cycle: 0,
        }
    }

    /// Checks the next emitted setpoint.
    ///
    /// # Errors
    /// The first check it fails.
    pub fn check(&mut self, sp: &Setpoint<S>) -> Result<(), Violation> {
        self.cycle += 1;
        let v = |arm, broken| Violation { cycle: self.cycle, arm, broken };
        let finite = sp.joints.iter().all(|x| x.is_finite())
            && sp.position.iter().all(|x| x.is_finite())
            && sp.joint_rates.iter().all(|x| x.is_finite());
        if !finite {
            return Err(v(0, Broken::NonFinite));
        }
        self.guards(sp).map_err(|broken| v(0, broken))?;
        let sample = Sample { joints: to_f64(sp.joints), rates: to_f64(sp.joint_rates), noise: self.noise(sp) };
        self.advance(sample)
    }

    /// One cycle at rest where the last setpoint left the platform (the
    /// stream is idle).
    ///
    /// # Errors
    /// The first rate check the stop fails (a stream that was not at rest).
    pub fn hold(&mut self) -> Result<(), Violation> {
        self.cycle += 1;
        let held = Sample { rates: [0.0; 3], ..self.last };
        self.advance(held)
    }

    /// The end of the stream: the platform stays at rest (two held cycles
    /// close the second differences).
    ///
    /// # Errors
    /// As [`Contract::hold`].
    pub fn finish(&mut self) -> Result<(), Violation> {
        self.hold()?;
        self.hold()
    }

    /// Checks the limits between the last two samples and `next`, then
    /// makes `next` the last.
    fn advance(&mut self, next: Sample) -> Result<(), Violation> {
        let t = self.period;
        let (b, l) = (self.before, self.last);
        for arm in 0..3 {
            let err = |broken| Err(Violation { cycle: self.cycle, arm, broken });
            let (speed, accel) = (self.speed[arm], self.accel[arm]);
            let speed_limit = speed * (1.0 + LIMIT_ROUNDING_REL);
            let accel_limit = accel * (1.0 + LIMIT_ROUNDING_REL);
            let w = next.rates[arm];
            if !within(w.abs(), speed_limit) {
                return err(Broken::Speed { from: "jacobian rate", value: w.abs(), allowed: speed_limit });
            }
            let dw = (w - l.rates[arm]).abs() / t;
            let dw_allowed = accel_limit + (w.abs() + l.rates[arm].abs()) * RATE_TO_PLANNING_REL / t;
            if !within(dw, dw_allowed) {
                return err(Broken::Accel { from: "rate difference", value: dw, allowed: dw_allowed });
            }
            let sampling = CONSISTENCY_FACTOR * accel * t;
            let noise1 = (next.noise[arm] + l.noise[arm]) / t;
            let diff = (next.joints[arm] - l.joints[arm]) / t;
            let diff_allowed = speed_limit + sampling + noise1;
            if !within(diff.abs(), diff_allowed) {
                return err(Broken::Speed { from: "joint difference", value: diff.abs(), allowed: diff_allowed });
            }
            let mean = 0.5 * (w + l.rates[arm]);
            let rounding = 2.0 * S::JOINT_NOISE / t;
            let gap_allowed =
                (sampling + rounding.max(noise1)) * (1.0 + LIMIT_ROUNDING_REL) + mean.abs() * LIMIT_ROUNDING_REL;
            if !within((diff - mean).abs(), gap_allowed) {
                return err(Broken::Inconsistent { difference: diff, mean_rate: mean, allowed: gap_allowed });
            }
            let second = (next.joints[arm] - 2.0 * l.joints[arm] + b.joints[arm]).abs() / (t * t);
            // Each joint carries up to the type's rounding `e` (as in the
            // consistency gap above): `e + 2e + e` over `T^2`.
            let noise2 = (next.noise[arm] + 2.0 * l.noise[arm] + b.noise[arm]) / (t * t);
            let rounding2 = 4.0 * S::JOINT_NOISE / (t * t);
            let second_allowed = accel_limit + noise2.max(rounding2);
            if !within(second, second_allowed) {
                return err(Broken::Accel { from: "second difference", value: second, allowed: second_allowed });
            }
        }
        self.before = l;
        self.last = next;
        Ok(())
    }

    /// Both guarded solves accept the pose, or the one that refuses does
    /// so only within rounding of a limit.
    fn guards(&self, sp: &Setpoint<S>) -> Result<(), Broken> {
        let forward = self.robot.forward(sp.joints);
        let inverse = self.robot.inverse(sp.position);
        if let Err(error) = forward {
            // The joints are the setpoint's own: their ranges hold exactly.
            let unguarded = self.robot.forward_unguarded(sp.joints);
            let ok = unguarded.is_ok_and(|s| self.margins_hold(&s, crossed(sp.position, s.position)));
            if !self.joints_in_range(sp.joints, 0.0) || !ok {
                return Err(Broken::Guard { solve: "forward", error });
            }
        }
        if let Err(error) = inverse {
            let unguarded = self.robot.inverse_unguarded(sp.position);
            let ok = unguarded.is_ok_and(|s| {
                let crossed = forward.is_ok_and(|f| crossed(f.position, sp.position));
                self.joints_in_range(s.joints, S::JOINT_NOISE) && self.margins_hold(&s, crossed)
            });
            if !ok {
                return Err(Broken::Guard { solve: "inverse", error });
            }
        }
        Ok(())
    }

    fn joints_in_range(&self, joints: [S; 3], slack: f64) -> bool {
        let l = self.robot.limits();
        (0..3).all(|i| {
            let t = joints[i].to_f64();
            t >= l.joint_min[i].to_f64() - slack && t <= l.joint_max[i].to_f64() + slack
        })
    }

    /// The margins of `s` within [`Rounding::GUARD_SLACK`] of the limits;
    /// `crossed`: the re-derived pose lies on the other side of the base
    /// plane than the setpoint, where the serial margin's sign flips by
    /// definition, so its size is compared.
    fn margins_hold(&self, s: &Solution<S>, crossed: bool) -> bool {
        let l = self.robot.limits();
        let slack = S::GUARD_SLACK;
        let m = &s.margins;
        let serial = |v: S| if crossed { v.to_f64().abs() } else { v.to_f64() };
        m.serial.iter().all(|&v| serial(v) >= l.min_serial_margin.to_f64() - slack)
            && m.parallel.to_f64() >= l.min_parallel_margin.to_f64() - slack
            && m.passive_tilt_cos.iter().flatten().all(|c| c.to_f64() >= self.cos_cone - slack)
    }

    /// The joint-angle noise of a setpoint (rad, per arm): see the module
    /// docs.
    fn noise(&self, sp: &Setpoint<S>) -> [f64; 3] {
        let fallback = [S::JOINT_NOISE; 3];
        let Some(reference) = &self.reference else { return fallback };
        let p = to_f64(sp.position);
        let Ok(exact) = reference.inverse_unguarded(p) else { return fallback };
        let largest = p.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let delta = S::POSITION_ULPS * (S::POSITION_LSB + S::POSITION_REL * largest);
        let mut lever = [0.0; 3];
        for axis in 0..3 {
            let mut unit = [0.0; 3];
            unit[axis] = 1.0;
            let Ok(column) = exact.jacobian.joint_rates(unit) else { return fallback };
            for (l, c) in lever.iter_mut().zip(column) {
                *l += c.abs();
            }
        }
        let joints = to_f64(sp.joints);
        // Capped at the documented bound: joints that disagree with the
        // position by more are not rounding, and must not widen the limits.
        let n = [0, 1, 2].map(|i| (joints[i] - exact.joints[i]).abs().min(S::JOINT_NOISE) + delta * lever[i]);
        if n.iter().all(|v| v.is_finite()) { n } else { fallback }
    }
}

#[cfg(test)]
mod tests {
    use deltakin::motion::Stream;

    use super::*;
    use crate::config::RobotFile;
    use crate::plan::{DEMO_MOVES_TOML, MovesFile};

    /// Streams the demo moves in `S` (planned in `P`) at `rate_hz`
    /// through the checker; `tamper` may change each setpoint first.
    fn demo_through_contract<S: Rounding, P: Real<Wide = P>>(
        rate_hz: f64,
        tamper: impl Fn(u64, &mut Setpoint<S>),
    ) -> Result<u64, Violation> {
        let robot = RobotFile::demo().robot::<S>().unwrap();
        let file = MovesFile::parse(DEMO_MOVES_TOML).unwrap();
        let limits = file.joint_rate_limits::<P>().unwrap();
        let start = file.start_mm.map(|v| S::Wide::from_f64(v).unwrap());
        let period = P::from_f64(1.0 / rate_hz).unwrap();
        let mut stream: Stream<S, 16, P> = Stream::new(robot, period, limits, start).unwrap();
        stream.set_corner_tolerance(file.cartesian.corner_tolerance_mm.and_then(P::from_f64)).unwrap();
        for m in file.moves_in::<P>().unwrap() {
            stream.push(&m).unwrap();
        }
        let limits_f64 = JointRateLimits { speed: to_f64(limits.speed), accel: to_f64(limits.accel) };
        let mut contract = Contract::new(robot, period.to_f64(), &limits_f64, robot.inverse(start).unwrap().joints);
        let mut n = 0;
        while let Some(step) = stream.next_setpoint().unwrap() {
            n += 1;
            let mut sp = step.setpoint;
            tamper(n, &mut sp);
            contract.check(&sp)?;
        }
        contract.finish()?;
        Ok(n)
    }

    #[test]
    fn the_demo_moves_keep_the_contract_in_every_number_type() {
        for rate in [1000.0, 4000.0] {
            assert!(demo_through_contract::<f32, f32>(rate, |_, _| {}).unwrap() > 1000);
            assert!(demo_through_contract::<f64, f64>(rate, |_, _| {}).unwrap() > 1000);
            assert!(demo_through_contract::<Fixed, f32>(rate, |_, _| {}).unwrap() > 1000);
        }
    }

    /// Setpoint of the demo (at 1 kHz) that the tampering tests change: in
    /// the middle of the first line, moving.
    const TAMPERED: u64 = 200;

    #[test]
    fn a_joint_that_jumps_breaks_the_contract() {
        // 1 mrad in one 1 ms cycle is 1 rad/s more than the rates say.
        let jump = |n: u64, sp: &mut Setpoint<f64>| {
            if n == TAMPERED {
                sp.joints[1] += 1e-3;
            }
        };
        let v = demo_through_contract::<f64, f64>(1000.0, jump).unwrap_err();
        assert_eq!((v.cycle, v.arm), (TAMPERED, 1), "{v}");
        assert!(matches!(v.broken, Broken::Inconsistent { .. } | Broken::Speed { .. }), "{v}");
    }

    #[test]
    fn rates_of_the_wrong_sign_break_the_contract() {
        let flip = |n: u64, sp: &mut Setpoint<f64>| {
            if n == TAMPERED {
                sp.joint_rates = sp.joint_rates.map(|w| -w);
            }
        };
        let v = demo_through_contract::<f64, f64>(1000.0, flip).unwrap_err();
        assert_eq!(v.cycle, TAMPERED, "{v}");
    }

    #[test]
    fn a_position_beyond_the_guards_breaks_the_contract() {
        let away = |n: u64, sp: &mut Setpoint<f32>| {
            if n == TAMPERED {
                sp.position[2] = -1300.0;
            }
        };
        let v = demo_through_contract::<f32, f32>(1000.0, away).unwrap_err();
        assert_eq!(v.cycle, TAMPERED, "{v}");
        assert!(matches!(v.broken, Broken::Guard { solve: "inverse", .. }), "{v}");
    }
}
