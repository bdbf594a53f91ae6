//! deltakin on a Cortex-M4F, as a motion controller would use it.
//!
//! - The robot is built once at start-up (validated, constants computed)
//!   and moved into a setpoint stream with a queue of four moves.
//! - SysTick interrupts at the servo rate (4 kHz); its handler takes the
//!   next setpoint from the stream and hands the joint angles to the
//!   drives (here: kept in the shared state, where a real controller
//!   would write its drive interface). One setpoint per tick, bounded
//!   cost, no loop.
//! - The main loop plans: whenever the queue has room, it validates the
//!   next move of a small program on a copy of the stream (the whole move
//!   is checked, which takes far longer than a tick) while the ticks go
//!   on, then queues it in a short critical section.
//! - Every error is reported over semihosting and nothing is clamped: the
//!   program holds one move that the robot cannot reach, on purpose; it is
//!   refused, named, and skipped. A stream fault or a missed move ends the
//!   run with a failure status.
//!
//! Moves are numbered from 0 in the order of `PROGRAM`.
//!
//! Build and run (see `ci/example-qemu.sh`, which also sets up the Cortex-M
//! toolchain on a machine without rustup targets):
//!
//! ```text
//! cd examples/cortex-m4f && cargo run --release
//! ```
//!
//! QEMU's SysTick runs on the host's clock, not the chip's: the run shows
//! the structure and the results, not the chip's timing (for instruction
//! counts, see `ci/target-report.sh`).
#![no_std]
#![no_main]

use core::cell::RefCell;
use core::panic::PanicInfo;

use cortex_m::interrupt::{self, Mutex};
use cortex_m::peripheral::syst::SystClkSource;
use cortex_m_rt::{entry, exception};
use cortex_m_semihosting::{debug, hprintln};
use deltakin::motion::{Bounds, JointRateLimits, Law, MotionError, Move, Stream, StreamSetpoint};
use deltakin::{Geometry, Limits, Robot};

/// Servo rate (Hz).
const RATE_HZ: u32 = 4000;
/// SysTick clock on the MPS2 AN386 board (the core clock, 25 MHz).
const CORE_HZ: u32 = 25_000_000;
/// Moves the queue holds, the one running included.
const QUEUE: usize = 4;
/// Where the platform rests at power-up (mm).
const HOME: [f32; 3] = [0.0, 0.0, -700.0];
/// Pick and place stations of the demo's 25 / 305 / 25 mm cycle (mm).
const PICK: [f32; 3] = [-152.5, 60.0, -760.0];
const PLACE: [f32; 3] = [152.5, 60.0, -760.0];
/// A point 1200 mm below the base: beyond the 280 + 720 mm arms.
const OUT_OF_REACH: [f32; 3] = [0.0, 0.0, -1200.0];
/// Which move of the program is expected to be refused.
const REFUSED_ON_PURPOSE: usize = 3;
/// Largest distance (mm) between the last setpoint and home that counts
/// as "arrived": a move ends exactly on its target, so this only absorbs
/// the f32 rounding of the last position.
const ARRIVAL_MM: f32 = 1e-3;
/// Safety stop for the main loop (ticks): the program needs about 10,000.
const MAX_TICKS: u32 = 40_000;

/// Path bounds of the Cartesian moves (mm/s, mm/s^2, mm/s^3).
const FAST: Bounds<f32> = Bounds { speed: 2500.0, accel: 40_000.0, jerk: 2.0e6 };
const GENTLE: Bounds<f32> = Bounds { speed: 500.0, accel: 5_000.0, jerk: 1.0e5 };

/// The program the main loop feeds to the queue, moves 0 to 6.
const PROGRAM: [Move<f32>; 7] = [
    Move::Line { to: PICK, law: Law::SCurve, bounds: GENTLE },
    Move::Pick { to: PLACE, lift: 25.0, blend_radius: 10.0, law: Law::SCurve, bounds: FAST },
    Move::Dwell { duration: 0.05 },
    Move::Line { to: OUT_OF_REACH, law: Law::SCurve, bounds: GENTLE },
    Move::Pick { to: PICK, lift: 25.0, blend_radius: 10.0, law: Law::SCurve, bounds: FAST },
    Move::Dwell { duration: 0.05 },
    Move::Line { to: HOME, law: Law::Poly7, bounds: GENTLE },
];

/// What the tick and the main loop share.
struct Shared {
    stream: Stream<f32, QUEUE>,
    /// The last setpoint sent to the drives.
    last: Option<StreamSetpoint<f32>>,
    ticks: u32,
    setpoints: u32,
    /// A fault the stream reported in the tick (the queue is then cleared).
    fault: Option<MotionError>,
}

static SHARED: Mutex<RefCell<Option<Shared>>> = Mutex::new(RefCell::new(None));

#[entry]
fn main() -> ! {
    let status = run();
    debug::exit(status);
    loop {
        cortex_m::asm::wfi();
    }
}

#[panic_handler]
fn panic(info: &PanicInfo) -> ! {
    hprintln!("error: panic: {}", info);
    debug::exit(debug::EXIT_FAILURE);
    loop {
        cortex_m::asm::wfi();
    }
}

/// The demo robot (an invented tray loader), every limit named.
fn robot() -> Result<Robot<f32>, deltakin::Error> {
    Robot::new(
        Geometry { base_radius: 160.0, platform_radius: 40.0, upper_arm: 280.0, lower_arm: 720.0 },
        Limits {
            joint_min: [(-35.0f32).to_radians(); 3],
            joint_max: [85.0f32.to_radians(); 3],
            passive_cone: 40.0f32.to_radians(),
            min_serial_margin: 0.1,
            min_parallel_margin: 0.1,
        },
    )
}

fn run() -> debug::ExitStatus {
    let Some(mut core) = cortex_m::Peripherals::take() else {
        hprintln!("error: core peripherals already taken");
        return debug::EXIT_FAILURE;
    };
    // Start-up: build once, or report why not.
    let robot = match robot() {
        Ok(r) => r,
        Err(e) => {
            hprintln!("error: robot refused: {}", e);
            return debug::EXIT_FAILURE;
        }
    };
    let rates = JointRateLimits { speed: [720.0f32.to_radians(); 3], accel: [15_000.0f32.to_radians(); 3] };
    let period = 1.0 / RATE_HZ as f32;
    let stream = match Stream::new(robot, period, rates, HOME) {
        Ok(s) => s,
        Err(e) => {
            hprintln!("error: stream refused: {}", e);
            return debug::EXIT_FAILURE;
        }
    };
    interrupt::free(|cs| {
        SHARED.borrow(cs).replace(Some(Shared { stream, last: None, ticks: 0, setpoints: 0, fault: None }));
    });
    hprintln!("deltakin on Cortex-M4F: {} moves, servo rate {} Hz, queue of {}", PROGRAM.len(), RATE_HZ, QUEUE);

    // The servo tick.
    let syst = &mut core.SYST;
    syst.set_clock_source(SystClkSource::Core);
    syst.set_reload(CORE_HZ / RATE_HZ - 1);
    syst.clear_current();
    syst.enable_interrupt();
    syst.enable_counter();

    // Planning, between ticks.
    let mut refused = [false; PROGRAM.len()];
    // The stream numbers the moves it accepts (from 0); the program's
    // numbers count the refused one too.
    let mut stream_ids: [Option<u32>; PROGRAM.len()] = [None; PROGRAM.len()];
    let mut next = 0usize;
    let status = loop {
        let (room, idle, ticks, fault) = interrupt::free(|cs| match SHARED.borrow(cs).borrow().as_ref() {
            Some(s) => (!s.stream.is_full(), s.stream.is_empty(), s.ticks, s.fault),
            None => (false, true, 0, None),
        });
        if let Some(e) = fault {
            hprintln!("error: stream fault, platform held at the last setpoint: {}", e);
            break debug::EXIT_FAILURE;
        }
        if ticks > MAX_TICKS {
            hprintln!("error: still running after {} ticks", ticks);
            break debug::EXIT_FAILURE;
        }
        match PROGRAM.get(next) {
            Some(mv) if room => {
                match plan_and_queue(mv) {
                    Ok(id) => {
                        if let Some(slot) = stream_ids.get_mut(next) {
                            *slot = id;
                        }
                    }
                    Err(e) => {
                        // A firmware would raise a fault to the cell
                        // controller; this one reports and goes on.
                        hprintln!("move {} refused: {}", next, e);
                        if let Some(flag) = refused.get_mut(next) {
                            *flag = true;
                        }
                    }
                }
                next += 1;
            }
            Some(_) => cortex_m::asm::wfi(),
            None if idle => break debug::EXIT_SUCCESS,
            None => cortex_m::asm::wfi(),
        }
    };
    syst.disable_interrupt();
    syst.disable_counter();
    if status != debug::EXIT_SUCCESS {
        return status;
    }
    report(&refused, &stream_ids)
}

/// Validates `mv` on a copy of the stream (long: outside any critical
/// section, so the ticks go on), then queues it (short). Returns the
/// stream's number for the move.
fn plan_and_queue(mv: &Move<f32>) -> Result<Option<u32>, MotionError> {
    let Some(copy) = interrupt::free(|cs| SHARED.borrow(cs).borrow().as_ref().map(|s| s.stream.clone())) else {
        return Ok(None);
    };
    let planned = copy.plan(mv)?;
    interrupt::free(|cs| match SHARED.borrow(cs).borrow_mut().as_mut() {
        Some(s) => s.stream.push_planned(planned).map(Some),
        None => Ok(None),
    })
}

#[exception]
fn SysTick() {
    interrupt::free(|cs| {
        if let Some(s) = SHARED.borrow(cs).borrow_mut().as_mut() {
            s.ticks = s.ticks.wrapping_add(1);
            match s.stream.next_setpoint() {
                Ok(Some(step)) => {
                    // Here a controller writes step.setpoint.joints (rad)
                    // and joint_rates (rad/s) to its drives.
                    s.setpoints = s.setpoints.wrapping_add(1);
                    s.last = Some(step);
                }
                Ok(None) => {}
                Err(e) => s.fault = Some(e),
            }
        }
    });
}

/// Prints what ran and checks it: every move but the one refused on
/// purpose was accepted, and the platform arrived home.
fn report(refused: &[bool; PROGRAM.len()], stream_ids: &[Option<u32>; PROGRAM.len()]) -> debug::ExitStatus {
    let Some((last, setpoints, ticks)) =
        interrupt::free(|cs| SHARED.borrow(cs).borrow().as_ref().map(|s| (s.last, s.setpoints, s.ticks)))
    else {
        return debug::EXIT_FAILURE;
    };
    let Some(last) = last else {
        hprintln!("error: no setpoint was emitted");
        return debug::EXIT_FAILURE;
    };
    let p = last.setpoint.position;
    let j = last.setpoint.joints.map(f32::to_degrees);
    hprintln!("{} setpoints in {} ticks ({} s of motion)", setpoints, ticks, setpoints as f32 / RATE_HZ as f32);
    let program_move = stream_ids.iter().position(|&id| id == Some(last.move_id));
    hprintln!(
        "last setpoint: program move {:?} (stream move {}), cycle {}",
        program_move,
        last.move_id,
        last.setpoint.cycle
    );
    hprintln!("  position {} {} {} mm", p[0], p[1], p[2]);
    hprintln!("  joints   {} {} {} deg", j[0], j[1], j[2]);
    let off = p.iter().zip(HOME.iter()).map(|(a, b)| (a - b).abs()).fold(0.0f32, f32::max);
    let unexpected = refused.iter().enumerate().any(|(i, &r)| r != (i == REFUSED_ON_PURPOSE));
    if unexpected {
        hprintln!("error: the moves refused are not the one refused on purpose (move {})", REFUSED_ON_PURPOSE);
        return debug::EXIT_FAILURE;
    }
    // Written so that a NaN distance fails too.
    let arrived = off <= ARRIVAL_MM;
    if !arrived || !last.setpoint.end_of_move || program_move != Some(PROGRAM.len() - 1) {
        hprintln!("error: the platform ended {} mm from home", off);
        return debug::EXIT_FAILURE;
    }
    hprintln!("done: home reached, move {} refused as expected", REFUSED_ON_PURPOSE);
    debug::EXIT_SUCCESS
}
