//! The benchmark pick cycle and the highest pick rate a drive sustains.
//!
//! # The cycle
//! 25 mm up, 305 mm across, 25 mm down, and back (common practice for
//! rating pick robots): two pick moves from `centre - (152.5, 0, 0)` to
//! `centre + (152.5, 0, 0)` and back, along x, corners blended at 10 mm,
//! planned by deltakin's stream (f64, at the servo rate) with the moves
//! file's Cartesian bounds and joint limits, with a hold (the gripper's
//! dwell) at each end. One cycle is the round trip; the rate is in cycles
//! per minute.
//!
//! # The search (method)
//! The cycle is planned once; it is then played `k` times faster by a time
//! stretch (see [`super::profile`]: rates times `k`, accelerations times
//! `k^2`, motion time over `k`; the holds keep their length), which is
//! what replanning with all speed, acceleration and jerk bounds scaled by
//! `k`, `k^2`, `k^3` gives. For each `k` every arm's figures are held
//! against the drive (see [`super::verdict`]); the highest use over the
//! checks and arms, `u(k)`, grows with `k` (inertial torque as `k^2`,
//! speed as `k`). The search brackets `u(k) = 1` by doubling or halving
//! from `k = 1`, then bisects to a relative width of 1e-6. The moves
//! file's own joint and Cartesian bounds do not cap `k`: the question is
//! what the drive can do. Outside `k` in [1/1024, 1024] the search stops
//! and says so.

use deltakin::{Dynamics, Robot};

use super::profile::Profile;
use super::verdict::{ArmFigures, Use, highest_of};
use crate::cli::ScalarKind;
use crate::config::RobotFile;
use crate::drive::Drive;
use crate::plan::{self, MoveEntry, MovesFile};

/// Across (mm) of the benchmark cycle.
pub const ACROSS_MM: f64 = 305.0;
/// Lift (mm) of the benchmark cycle.
pub const LIFT_MM: f64 = 25.0;
/// Corner blend radius (mm) of the benchmark cycle.
pub const BLEND_MM: f64 = 10.0;
/// Bracket of the stretch search.
const K_RANGE: (f64, f64) = (1.0 / 1024.0, 1024.0);
/// Relative width at which the bisection stops.
const K_REL_WIDTH: f64 = 1e-6;

/// The planned benchmark cycle.
#[derive(Clone, Debug)]
pub struct Bench {
    /// Its profile (motion at the moves file's bounds, then the holds).
    pub profile: Profile,
    /// Centre of the cycle (mm).
    pub centre_mm: [f64; 3],
    /// Each end's hold (s).
    pub dwell_s: f64,
}

/// The highest rate found.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Highest {
    /// The drive sustains the cycle up to stretch `k`; the binding check
    /// and its arm at `k`.
    At {
        /// Stretch.
        k: f64,
        /// Cycles per minute at `k`.
        per_minute: f64,
        /// The arm whose check binds.
        arm: usize,
        /// The binding check at `k`.
        binding: Use,
    },
    /// Beyond 1024 times faster than the moves file's bounds (no drive
    /// limit reached).
    Unbounded,
    /// Not even 1024 times slower (a limit is broken at rest: holding
    /// torque over the rated torque, for example); the check at the
    /// slowest stretch.
    Never {
        /// The arm.
        arm: usize,
        /// The broken check.
        binding: Use,
    },
}

impl Bench {
    /// Plans the benchmark cycle centred at `centre_mm` with the bounds of
    /// `moves` at `rate_hz`, with a hold of `dwell_s` at each end.
    ///
    /// # Errors
    /// The planner's or the core's message (a centre too close to the
    /// workspace's edge is refused by the stream's guards).
    pub fn plan(
        robot_file: &RobotFile,
        robot: &Robot<f64>,
        dynamics: &Dynamics<f64>,
        moves: &MovesFile,
        rate_hz: f64,
        centre_mm: [f64; 3],
        dwell_s: f64,
    ) -> Result<Self, String> {
        let half = ACROSS_MM / 2.0;
        let a = [centre_mm[0] - half, centre_mm[1], centre_mm[2]];
        let b = [centre_mm[0] + half, centre_mm[1], centre_mm[2]];
        let pick = |to_mm| MoveEntry::Pick {
            to_mm,
            lift_mm: LIFT_MM,
            blend_radius_mm: BLEND_MM,
            law: None,
            speed_mm_s: None,
            accel_mm_s2: None,
            jerk_mm_s3: None,
        };
        let cycle = MovesFile { start_mm: a, moves: vec![pick(b), pick(a)], ..moves.clone() };
        let (rows, _) = plan::plan_with::<f64, f64>(robot_file, &cycle, rate_hz, ScalarKind::F64).map_err(|e| {
            format!("benchmark cycle at ({}, {}, {}) mm: {e}", centre_mm[0], centre_mm[1], centre_mm[2])
        })?;
        let mut profile = Profile::from_rows(robot, dynamics, &rows, 1.0 / rate_hz)?;
        for end in [b, a] {
            let joints = robot.inverse(end).map_err(|e| e.to_string())?.joints;
            profile.hold(robot, dynamics, joints, dwell_s)?;
        }
        Ok(Bench { profile, centre_mm, dwell_s })
    }

    /// Every arm's figures at stretch `k`.
    ///
    /// # Errors
    /// The core's message if a torque cannot be computed.
    pub fn figures(&self, dynamics: &Dynamics<f64>, drive: &Drive, k: f64) -> Result<[ArmFigures; 3], String> {
        let loads = self.profile.loads(dynamics, k)?;
        Ok([0, 1, 2].map(|arm| ArmFigures::of(arm, &self.profile, &loads, &drive.arms[arm])))
    }

    /// The highest use at stretch `k` and its arm.
    fn highest(&self, dynamics: &Dynamics<f64>, drive: &Drive, k: f64) -> Result<(usize, Use), String> {
        Ok(highest_of(&self.figures(dynamics, drive, k)?, drive))
    }

    /// Cycles per minute at stretch `k`.
    #[must_use]
    pub fn per_minute(&self, k: f64) -> f64 {
        60.0 / self.profile.cycle_s(k)
    }

    /// The highest rate the drive sustains (see the module docs).
    ///
    /// # Errors
    /// The core's message if a torque cannot be computed.
    pub fn highest_rate(&self, dynamics: &Dynamics<f64>, drive: &Drive) -> Result<Highest, String> {
        let fits = |k: f64| -> Result<bool, String> { Ok(self.highest(dynamics, drive, k)?.1.ratio() <= 1.0) };
        let (mut lo, mut hi) = (1.0, 1.0);
        if fits(1.0)? {
            while fits(hi)? {
                lo = hi;
                hi *= 2.0;
                if hi > K_RANGE.1 {
                    return Ok(Highest::Unbounded);
                }
            }
        } else {
            while !fits(lo)? {
                hi = lo;
                lo /= 2.0;
                if lo < K_RANGE.0 {
                    let (arm, binding) = self.highest(dynamics, drive, hi)?;
                    return Ok(Highest::Never { arm, binding });
                }
            }
        }
        while (hi - lo) > K_REL_WIDTH * lo {
            let mid = 0.5 * (lo + hi);
            if fits(mid)? {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let (arm, binding) = self.highest(dynamics, drive, lo)?;
        Ok(Highest::At { k: lo, per_minute: self.per_minute(lo), arm, binding })
    }
}
