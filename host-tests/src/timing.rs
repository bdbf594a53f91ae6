//! Host timing for `deltakin report`: the per-call time of guarded IK,
//! guarded FK and one setpoint-stream step, per number type, over the
//! accepted sweep points.
//!
//! Method: at each point the call is repeated in a batch of
//! [`BATCH`] calls between two [`Instant`] readings and the elapsed time
//! divided by the batch size, so the clock's resolution and the cost of
//! reading it (tens of ns) are spread over the batch. Each point is timed
//! [`REPEATS`] times and the fastest batch kept: an interrupt or a
//! preemption during one batch is not the call's cost. The median, 99.9th
//! percentile (nearest rank) and worst are then taken over the points.
//! Inputs and results pass through [`black_box`] so the calls are not
//! folded away. The repeated input keeps the branch predictor and caches
//! warm, as in a control loop that moves a little each cycle.
//!
//! These are figures of this machine and this build (run the report in
//! `--release`); a debug build is many times slower. Timing runs on one
//! thread after the sweeps, with nothing else of the report running.

use std::hint::black_box;
use std::time::Instant;

use deltakin::motion::{Bounds, JointRateLimits, Law, Move, Stream};
use deltakin::{Arith, Fixed, Real, Robot};
use serde::Serialize;

use crate::config::RobotFile;
use crate::progress;
use crate::stats::percentile;

/// Calls per timed batch.
pub const BATCH: usize = 64;
/// Batches per point; the fastest counts.
pub const REPEATS: usize = 3;
/// At most this many points per kinematics call (evenly strided): enough
/// for the median and the worst over the whole accepted volume (the
/// 99.9th percentile is then the third-largest), at a third of the time
/// 8,000 took; timing was most of the report's wall time.
pub const MAX_POINTS: usize = 2500;
/// At most this many points for the setpoint step (each needs a
/// validated move, which costs a few hundred setpoints).
pub const MAX_STREAM_POINTS: usize = 800;
/// Control rates at which the share of a cycle is shown (Hz).
pub const RATES_HZ: [f64; 4] = [1000.0, 2000.0, 4000.0, 8000.0];
/// Period of the timed stream (s); 1 kHz.
const STREAM_PERIOD_S: f64 = 1e-3;
/// The timed stream's move: this far (mm) towards the sweep centre.
const STREAM_STEP_MM: f64 = 0.5;

/// Time per call of one call in one number type.
#[derive(Clone, Debug, Serialize)]
pub struct CallTiming {
    /// `"inverse"`, `"forward"` or `"setpoint_step"`.
    pub call: &'static str,
    /// `"f32"`, `"f64"` or `"fixed"`.
    pub scalar: &'static str,
    /// Points timed.
    pub points: usize,
    /// Median over the points of the per-call time (ns).
    pub median_ns: f64,
    /// 99.9th percentile over the points (ns).
    pub p999_ns: f64,
    /// Slowest point (ns).
    pub worst_ns: f64,
    /// Share of a control cycle the worst per-call time takes, at each of
    /// [`RATES_HZ`] (a fraction: 0.01 is 1 %).
    pub worst_cycle_share: [f64; 4],
    /// Same for the median.
    pub median_cycle_share: [f64; 4],
}

/// Every timing of a report.
#[derive(Clone, Debug, Serialize)]
pub struct HostTiming {
    /// Calls per batch.
    pub batch: usize,
    /// Batches per point (the fastest counts).
    pub repeats: usize,
    /// Control rates of the cycle shares (Hz).
    pub rates_hz: [f64; 4],
    /// Whether the harness was built with optimisations.
    pub optimised_build: bool,
    /// One entry per call and number type.
    pub calls: Vec<CallTiming>,
}

/// Every `k`-th point so that at most `max` remain.
fn stride(points: &[[f64; 3]], max: usize) -> Vec<[f64; 3]> {
    let k = points.len().div_ceil(max.max(1)).max(1);
    points.iter().step_by(k).copied().collect()
}

/// Fastest of [`REPEATS`] batches of `BATCH` runs of `f` (ns per run).
fn time_point(f: &mut dyn FnMut()) -> f64 {
    f(); // warm up
    let mut best = f64::INFINITY;
    for _ in 0..REPEATS {
        let start = Instant::now();
        for _ in 0..BATCH {
            f();
        }
        #[allow(clippy::cast_precision_loss)]
        let per_call = start.elapsed().as_secs_f64() * 1e9 / BATCH as f64;
        best = best.min(per_call);
    }
    best
}

fn summarise(call: &'static str, scalar: &'static str, mut ns: Vec<f64>) -> CallTiming {
    ns.sort_by(f64::total_cmp);
    let median = percentile(&ns, 0.5);
    let worst = ns.last().copied().unwrap_or(0.0);
    let share = |t: f64| RATES_HZ.map(|hz| t * 1e-9 * hz);
    CallTiming {
        call,
        scalar,
        points: ns.len(),
        median_ns: median,
        p999_ns: percentile(&ns, 0.999),
        worst_ns: worst,
        worst_cycle_share: share(worst),
        median_cycle_share: share(median),
    }
}

fn conv3<T: Arith>(p: [f64; 3]) -> Option<[T; 3]> {
    Some([T::from_f64(p[0])?, T::from_f64(p[1])?, T::from_f64(p[2])?])
}

/// Guarded IK at each position (mm) that the type can hold.
fn time_inverse<S: Real>(robot: &Robot<S>, positions: &[[f64; 3]], name: &'static str) -> CallTiming {
    let bar = progress::bar(positions.len(), &format!("timing IK {name}"));
    let ns = positions
        .iter()
        .filter_map(|&p| conv3::<S::Wide>(p))
        .map(|p| {
            bar.inc(1);
            time_point(&mut || {
                let _ = black_box(robot.inverse(black_box(p)));
            })
        })
        .collect();
    bar.finish_and_clear();
    summarise("inverse", name, ns)
}

/// Guarded FK at each joint triple (rad).
fn time_forward<S: Real>(robot: &Robot<S>, joints: &[[f64; 3]], name: &'static str) -> CallTiming {
    let bar = progress::bar(joints.len(), &format!("timing FK {name}"));
    let ns = joints
        .iter()
        .filter_map(|&t| conv3::<S>(t))
        .map(|t| {
            bar.inc(1);
            time_point(&mut || {
                let _ = black_box(robot.forward(black_box(t)));
            })
        })
        .collect();
    bar.finish_and_clear();
    summarise("forward", name, ns)
}

/// One `Stream::next_setpoint` at each position: a slow straight line of
/// [`STREAM_STEP_MM`] towards `centre` starts there, and the first
/// `BATCH` cycles of a fresh copy of the stream are timed. Points where
/// the move is refused (it would leave the guarded volume) are skipped.
fn time_setpoint<S: Real<Wide = S>>(
    robot: &Robot<S>,
    positions: &[[f64; 3]],
    centre: [f64; 3],
    name: &'static str,
) -> CallTiming {
    let bar = progress::bar(positions.len(), &format!("timing setpoint {name}"));
    let c = |v: f64| S::from_f64(v).unwrap_or(S::ZERO);
    let limits = JointRateLimits { speed: [c(720f64.to_radians()); 3], accel: [c(15_000f64.to_radians()); 3] };
    // 0.5 mm at 1 mm/s: several hundred cycles at 1 kHz, more than a
    // timed point uses.
    let bounds = Bounds { speed: c(1.0), accel: c(100.0), jerk: c(1e4) };
    let mut ns = Vec::with_capacity(positions.len());
    for &p in positions {
        bar.inc(1);
        let d = [0, 1, 2].map(|k| centre[k] - p[k]);
        let len = (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt();
        if len < STREAM_STEP_MM {
            continue;
        }
        let to = [0, 1, 2].map(|k| p[k] + STREAM_STEP_MM * d[k] / len);
        let (Some(start), Some(to)) = (conv3::<S>(p), conv3::<S>(to)) else { continue };
        let Ok(mut stream) = Stream::<S, 2>::new(*robot, c(STREAM_PERIOD_S), limits, start) else { continue };
        if stream.push(&Move::Line { to, law: Law::Trapezoid, bounds }).is_err() {
            continue;
        }
        // Each batch steps a fresh copy from the start; the first warms up.
        let mut copies: Vec<Stream<S, 2>> = vec![stream; REPEATS + 1];
        let mut best = f64::INFINITY;
        for (r, copy) in copies.iter_mut().enumerate() {
            let start = Instant::now();
            for _ in 0..BATCH {
                let _ = black_box(black_box(&mut *copy).next_setpoint());
            }
            #[allow(clippy::cast_precision_loss)]
            let per_call = start.elapsed().as_secs_f64() * 1e9 / BATCH as f64;
            if r > 0 {
                best = best.min(per_call);
            }
        }
        ns.push(best);
    }
    bar.finish_and_clear();
    summarise("setpoint_step", name, ns)
}

/// Times every call in every number type the robot allows: IK and the
/// setpoint step at `positions` (mm), FK at `joints` (rad); `centre` is a
/// well-inside position the timed stream moves towards.
///
/// # Errors
/// When the robot cannot be built in f32 or f64.
pub fn run(
    file: &RobotFile,
    positions: &[[f64; 3]],
    joints: &[[f64; 3]],
    centre: [f64; 3],
) -> Result<HostTiming, crate::config::ConfigError> {
    let r32 = file.robot::<f32>()?;
    let r64 = file.robot::<f64>()?;
    let rfx = file.robot::<Fixed>().ok();
    let pos = stride(positions, MAX_POINTS);
    let jnt = stride(joints, MAX_POINTS);
    let few = stride(positions, MAX_STREAM_POINTS);
    let mut calls = vec![time_inverse(&r32, &pos, "f32"), time_inverse(&r64, &pos, "f64")];
    if let Some(r) = &rfx {
        calls.push(time_inverse(r, &pos, "fixed"));
    }
    calls.push(time_forward(&r32, &jnt, "f32"));
    calls.push(time_forward(&r64, &jnt, "f64"));
    if let Some(r) = &rfx {
        calls.push(time_forward(r, &jnt, "fixed"));
    }
    calls.push(time_setpoint(&r32, &few, centre, "f32"));
    calls.push(time_setpoint(&r64, &few, centre, "f64"));
    Ok(HostTiming {
        batch: BATCH,
        repeats: REPEATS,
        rates_hz: RATES_HZ,
        optimised_build: !cfg!(debug_assertions),
        calls,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stride_keeps_at_most_max_points_evenly() {
        let v: Vec<[f64; 3]> = (0..1000).map(|i| [f64::from(i); 3]).collect();
        let s = stride(&v, 300);
        assert!(s.len() <= 300 && s.len() >= 250, "{}", s.len());
        assert_eq!(s[1][0] - s[0][0], 4.0);
        assert_eq!(stride(&v, 5000).len(), 1000);
    }

    #[test]
    fn cycle_shares_scale_with_the_rate() {
        let t = summarise("inverse", "f32", vec![100.0, 200.0, 1000.0]);
        assert_eq!((t.median_ns, t.worst_ns), (200.0, 1000.0));
        // 1000 ns of a 1 ms cycle is 0.1 %; of a 125 us cycle 0.8 %.
        const REL: f64 = 1e-12;
        assert!((t.worst_cycle_share[0] - 1e-3).abs() < REL);
        assert!((t.worst_cycle_share[3] - 8e-3).abs() < REL);
    }
}
