//! A motion-controller loop as firmware would write it, run on the host:
//! a fixed-rate tick pulls one setpoint from the stream, and whenever the
//! queue has room the next move of a small program is validated and
//! appended while the current one runs. Nothing in the loop allocates:
//! the stream is a fixed-size value, the program a fixed array, the
//! statistics fixed arrays; printing happens after the loop.
//!
//! On a microcontroller the tick would be a timer interrupt writing the
//! joint setpoints to the drives, and the planning (`push`, which checks
//! the whole move before accepting it) would run in the main loop between
//! ticks; here both run inline.
//!
//! The machine and the moves are the invented demo scenario (the demo
//! robot of `examples/demo_robot.toml`).
//!
//! Run: `cargo run --release --example firmware_loop`

use deltakin::motion::{Bounds, JointRateLimits, Law, Move, Stream};
use deltakin::{ArmCorrection, Corrections, Geometry, Limits, Robot};

/// Servo rate (Hz) and period (s).
const RATE_HZ: u32 = 4000;
/// Where the platform rests at power-up (mm).
const HOME: [f32; 3] = [0.0, 0.0, -700.0];
/// Pick and place stations of the 25 / 305 / 25 mm benchmark cycle (mm).
const PICK: [f32; 3] = [-152.5, 60.0, -760.0];
const PLACE: [f32; 3] = [152.5, 60.0, -760.0];
/// Moves the queue holds, the one running included.
const QUEUE: usize = 4;
/// Safety stop: the program below needs far fewer ticks.
const MAX_TICKS: u32 = 200_000;

fn deg(v: f32) -> f32 {
    v.to_radians()
}

/// The per-arm corrections a calibration wrote for this machine (the
/// robot file's `[arm_corrections]` table, here in mm and rad). The demo
/// robot is nominal: all zero.
const CORRECTIONS: Corrections<f32> = [ArmCorrection::ZERO; 3];

fn robot() -> Robot<f32> {
    let geometry = Geometry { base_radius: 160.0, platform_radius: 40.0, upper_arm: 280.0, lower_arm: 720.0 };
    let limits = Limits {
        joint_min: [deg(-35.0); 3],
        joint_max: [deg(85.0); 3],
        passive_cone: deg(40.0),
        min_serial_margin: 0.1,
        min_parallel_margin: 0.1,
    };
    match Robot::with_corrections(geometry, CORRECTIONS, limits) {
        Ok(r) => r,
        Err(e) => panic!("demo robot: {e}"),
    }
}

fn main() {
    let fast = Bounds { speed: 2500.0, accel: 40_000.0, jerk: 2.0e6 };
    let gentle = Bounds { speed: 500.0, accel: 5_000.0, jerk: 1.0e5 };
    let joint = Bounds { speed: deg(180.0), accel: deg(1500.0), jerk: deg(30_000.0) };
    let pick = |to| Move::Pick { to, lift: 25.0, blend_radius: 10.0, law: Law::SCurve, bounds: fast };
    let program: [Move<f32>; 9] = [
        Move::Line { to: PICK, law: Law::SCurve, bounds: gentle },
        Move::Dwell { duration: 0.05 },
        pick(PLACE),
        Move::Dwell { duration: 0.05 },
        pick(PICK),
        Move::Dwell { duration: 0.05 },
        pick(PLACE),
        Move::Line { to: HOME, law: Law::Poly7, bounds: gentle },
        Move::Joint { to: [deg(20.0), deg(20.0), deg(20.0)], law: Law::Trapezoid, bounds: joint },
    ];
    let limits = JointRateLimits { speed: [deg(720.0); 3], accel: [deg(15_000.0); 3] };
    let period = 1.0 / RATE_HZ as f32;
    let mut stream: Stream<f32, QUEUE> = match Stream::new(robot(), period, limits, HOME) {
        Ok(s) => s,
        Err(e) => panic!("stream: {e}"),
    };

    let mut next = 0usize;
    let mut ticks = 0u32;
    let mut setpoints = 0u32;
    let mut cycles_per_move = [0u32; 9];
    let mut scaled = [false; 9];
    let mut peak_rate = [0.0f32; 3];
    while ticks < MAX_TICKS {
        ticks += 1;
        // Planning: top up the queue.
        if let Some(mv) = program.get(next).filter(|_| !stream.is_full()) {
            match stream.push(mv) {
                Ok(accepted) => {
                    if let Some(flag) = scaled.get_mut(next) {
                        *flag = accepted.time_scaled;
                    }
                    next += 1;
                }
                Err(e) => panic!("move {next} refused: {e}"),
            }
        }
        // The servo tick.
        match stream.next_setpoint() {
            Ok(Some(step)) => {
                setpoints += 1;
                for (peak, w) in peak_rate.iter_mut().zip(step.setpoint.joint_rates) {
                    *peak = peak.max(w.abs());
                }
                if let Some(c) = cycles_per_move.get_mut(step.move_id as usize).filter(|_| step.setpoint.end_of_move) {
                    *c = step.setpoint.cycle;
                }
            }
            Ok(None) if next == program.len() => break,
            Ok(None) => {}
            Err(e) => panic!("stream fault: {e}"),
        }
    }

    println!("{setpoints} setpoints in {ticks} ticks at {RATE_HZ} Hz ({:.3} s of motion)", setpoints as f32 * period);
    for (i, (c, s)) in cycles_per_move.iter().zip(scaled.iter()).enumerate() {
        println!("move {i}: {c:6} cycles{}", if *s { ", slowed to respect the joint limits" } else { "" });
    }
    let peaks = peak_rate.map(f32::to_degrees);
    println!("peak joint speeds: {:.1} {:.1} {:.1} deg/s (limit 720)", peaks[0], peaks[1], peaks[2]);
    let tail = stream.tail();
    println!("rests at x {:.3} y {:.3} z {:.3} mm", tail[0], tail[1], tail[2]);
}
