//! deltakin probe firmware: runs the hot paths of the core on an emulated
//! Cortex-M and prints, per call, the instructions executed (worst and
//! median over a fixed set of points) and the deepest stack use. See
//! `README.md` for the method and `ci/target-report.sh` for the driver.
//!
//! Output, one fact per line, parsed by the driver:
//!
//! ```text
//! probe scalar=f32 robot_bytes=N stream_bytes=N cal_ticks=N cal_instructions=N empty_ticks=N
//! call inverse points=N worst=N median=N stack=N
//! unavailable setpoint_step reason
//! ok
//! ```
//!
//! and, in a flash-baseline build where a stand-in replaces a call,
//!
//! ```text
//! stub inverse points=N worst=N median=N stack=N
//! ```
//!
//! A failed check prints `FAIL ...` and ends QEMU with a non-zero status.
#![no_std]
#![no_main]

use core::arch::asm;
use core::hint::black_box;
use core::panic::PanicInfo;
use cortex_m::peripheral::{SYST, syst::SystClkSource};
use cortex_m_rt::entry;
use cortex_m_semihosting::{debug, hprintln};
use deltakin::{Arith, Geometry, Limits, Robot};

#[allow(dead_code)] // only one scalar's table is used per build
mod points {
    include!(concat!(env!("OUT_DIR"), "/points.rs"));
}

/// The scalar under test and the raw-value decoders of its table.
#[cfg(not(feature = "fixed"))]
mod scalar {
    pub use crate::points::f32_table as table;
    pub type S = f32;
    pub type W = f32;
    pub type Raw = u32;
    pub const NAME: &str = "f32";
    pub fn wide(r: Raw) -> W {
        f32::from_bits(r)
    }
    pub fn narrow(r: Raw) -> S {
        f32::from_bits(r)
    }
}
#[cfg(feature = "fixed")]
mod scalar {
    pub use crate::points::fixed_table as table;
    use deltakin::{Fixed, FixedWide};
    pub type S = Fixed;
    pub type W = FixedWide;
    pub type Raw = i32;
    pub const NAME: &str = "fixed";
    pub fn wide(r: Raw) -> W {
        FixedWide::from_raw(r)
    }
    pub fn narrow(r: Raw) -> S {
        Fixed::from_raw(r)
    }
}
use scalar::{S, W, narrow, table, wide};

#[panic_handler]
fn panic(info: &PanicInfo) -> ! {
    hprintln!("FAIL panic: {}", info);
    halt(debug::EXIT_FAILURE)
}

/// SysTick is a 24-bit down-counter.
const RELOAD: u32 = 0x00ff_ffff;
/// Word painted below the stack pointer before each call.
const PAINT: u32 = 0x5a3c_c3a5;
/// Bytes painted below the caller's stack pointer: the window a call's
/// stack depth is measured in. A call that reaches the window's end is
/// reported as a failure rather than under-measured.
#[cfg(not(small_ram))]
const WINDOW_BYTES: usize = 16 * 1024;
/// The micro:bit has 16 KiB of RAM in all.
#[cfg(small_ram)]
const WINDOW_BYTES: usize = 4 * 1024;
/// Iterations of the calibration loop (two instructions each): the
/// difference of two lengths, so the call overhead cancels.
const CAL_SHORT: u32 = 1_000;
const CAL_LONG: u32 = 6_000;
/// Setpoints the step measurement can hold (one per control cycle).
const MAX_STEPS: usize = 1_100;
/// Larger of the point count and the step capacity: size of the sample buffer.
const SAMPLES: usize = if table::INSIDE.len() > MAX_STEPS { table::INSIDE.len() } else { MAX_STEPS };

/// One measured call: SysTick ticks elapsed and stack bytes used below
/// the caller's stack pointer.
struct Measured {
    ticks: u32,
    stack: u32,
}

/// Runs `f` once between two SysTick reads, with the stack window below
/// the current stack pointer painted before and scanned after. The paint
/// and scan loops are assembly so they touch no stack themselves.
#[inline(never)]
fn measure(f: &mut dyn FnMut()) -> Measured {
    let sp: usize;
    // SAFETY: reads the stack pointer.
    unsafe { asm!("mov {0}, sp", out(reg) sp, options(nomem, nostack, preserves_flags)) };
    let bottom = sp - WINDOW_BYTES;
    // SAFETY: writes words in [bottom, sp), free stack below the current
    // frame (nothing runs there: no interrupt is enabled), inside RAM
    // (the window is far smaller than the stack the link script leaves).
    unsafe {
        asm!(
            // r0: address, r1: end, r2: pattern.
            "2:",
            "str r2, [r0]",
            "adds r0, #4",
            "cmp r0, r1",
            "bne 2b",
            inout("r0") bottom => _,
            in("r1") sp,
            in("r2") PAINT,
            options(nostack),
        );
    }
    let t0 = SYST::get_current();
    f();
    let t1 = SYST::get_current();
    let lowest: usize;
    // SAFETY: reads words in [bottom, sp), stops at the first one changed.
    unsafe {
        asm!(
            // r0: address, r1: end, r2: pattern, r3: word read.
            "2:",
            "ldr r3, [r0]",
            "cmp r3, r2",
            "bne 3f",
            "adds r0, #4",
            "cmp r0, r1",
            "bne 2b",
            "3:",
            inout("r0") bottom => lowest,
            in("r1") sp,
            in("r2") PAINT,
            out("r3") _,
            options(nostack, readonly),
        );
    }
    Measured { ticks: t0.wrapping_sub(t1) & RELOAD, stack: (sp - lowest) as u32 }
}

/// Exactly `2 n` instructions for `n >= 1`: a subtract and a taken branch
/// per iteration (the last branch falls through).
#[inline(never)]
fn spin(n: u32) {
    // SAFETY: a register-only countdown loop.
    unsafe { asm!("2:", "subs r0, #1", "bne 2b", inout("r0") n => _, options(nomem, nostack)) };
}

/// Converts SysTick ticks to instructions with the calibration.
struct Clock {
    /// Ticks of an empty measured call.
    empty: u32,
    /// `cal_ticks` ticks elapse per `cal_instructions` instructions.
    cal_ticks: u32,
    cal_instructions: u32,
}

impl Clock {
    fn calibrate() -> Self {
        let run = |n: u32| measure(&mut || spin(black_box(n)));
        let short = run(CAL_SHORT);
        let long = run(CAL_LONG);
        let empty = measure(&mut || black_box(())).ticks;
        Self { empty, cal_ticks: long.ticks - short.ticks, cal_instructions: 2 * (CAL_LONG - CAL_SHORT) }
    }

    /// Instructions in a measured call, rounded to nearest.
    fn instructions(&self, ticks: u32) -> u32 {
        let net = u64::from(ticks.saturating_sub(self.empty));
        let c = u64::from(self.cal_ticks);
        ((net * u64::from(self.cal_instructions) + c / 2) / c) as u32
    }
}

/// Worst and median over the recorded samples, deepest stack.
struct Stats<'a> {
    samples: &'a mut [u32],
    len: usize,
    stack: u32,
}

impl<'a> Stats<'a> {
    fn new(samples: &'a mut [u32]) -> Self {
        Self { samples, len: 0, stack: 0 }
    }

    fn record(&mut self, clock: &Clock, m: &Measured) {
        match self.samples.get_mut(self.len) {
            Some(slot) => *slot = clock.instructions(m.ticks),
            None => fail("probe: more samples than the buffer holds"),
        }
        self.len += 1;
        self.stack = self.stack.max(m.stack);
        if m.stack as usize >= WINDOW_BYTES {
            fail("probe: a call used the whole stack window");
        }
    }

    /// Prints the call's line: `call NAME ...`, or `stub NAME ...` in a
    /// build where a stand-in replaced the call (flash baselines print too,
    /// so they keep the same statistics code). The median of an even count
    /// is the lower of the two middle samples.
    fn report(self, built: bool, call: &str) {
        let Self { samples, len, stack } = self;
        let s = &mut samples[..len];
        s.sort_unstable();
        let (worst, median) = match (s.last(), s.get(s.len().saturating_sub(1) / 2)) {
            (Some(&w), Some(&m)) => (w, m),
            _ => fail("probe: no samples"),
        };
        let kind = if built { "call" } else { "stub" };
        hprintln!("{} {} points={} worst={} median={} stack={}", kind, call, len, worst, median, stack);
    }
}

/// Ends QEMU with `status` (semihosting); on hardware without a debugger,
/// sleeps.
fn halt(status: debug::ExitStatus) -> ! {
    debug::exit(status);
    loop {
        cortex_m::asm::wfi();
    }
}

fn fail(what: &str) -> ! {
    hprintln!("FAIL {}", what);
    halt(debug::EXIT_FAILURE)
}

fn fail_at(what: &str, i: usize) -> ! {
    hprintln!("FAIL {} (point {})", what, i);
    halt(debug::EXIT_FAILURE)
}

fn close<A: Arith>(a: [A; 3], b: [A; 3], tol: A) -> bool {
    a.iter().zip(b.iter()).all(|(&x, &y)| (x - y).abs() <= tol)
}

fn demo_robot() -> Robot<S> {
    let [b, p, u, l] = table::GEOMETRY.map(wide);
    let [lo, hi, cone, serial, parallel] = table::LIMITS.map(narrow);
    let geometry = Geometry { base_radius: b, platform_radius: p, upper_arm: u, lower_arm: l };
    match Robot::new(
        geometry,
        Limits {
            joint_min: [lo; 3],
            joint_max: [hi; 3],
            passive_cone: cone,
            min_serial_margin: serial,
            min_parallel_margin: parallel,
        },
    ) {
        Ok(r) => r,
        Err(_) => fail("the demo robot is refused"),
    }
}

/// Guarded inverse kinematics: the joints, or `None` when refused. In a
/// build without the `inverse` feature (the flash baseline) it returns the
/// expected answer instead, so the rest of the probe stays identical.
#[inline(always)]
fn inverse(robot: &Robot<S>, p: [W; 3], _expected: Option<[S; 3]>) -> Option<[S; 3]> {
    #[cfg(feature = "inverse")]
    {
        robot.inverse(p).ok().map(|s| s.joints)
    }
    #[cfg(not(feature = "inverse"))]
    {
        black_box((robot, p));
        black_box(_expected)
    }
}

/// Guarded forward kinematics: the position, or `None` when refused (the
/// baseline returns the expected answer, as for [`inverse`]).
#[inline(always)]
fn forward(robot: &Robot<S>, j: [S; 3], _expected: [W; 3]) -> Option<[W; 3]> {
    #[cfg(feature = "forward")]
    {
        robot.forward(j).ok().map(|s| s.position)
    }
    #[cfg(not(feature = "forward"))]
    {
        black_box((robot, j));
        Some(black_box(_expected))
    }
}

#[cfg(feature = "step")]
const STREAM_BYTES: usize = core::mem::size_of::<deltakin::motion::Stream<S, 2, f32>>();
#[cfg(not(feature = "step"))]
const STREAM_BYTES: usize = 0;

/// One setpoint step per control cycle over a short stretch of the demo
/// pick cycle (`examples/firmware_loop.rs`) at 1 kHz: a line from rest to
/// the pick station, then one pick-and-place cycle to the place station.
/// Planning (`push`) runs outside the measurement, in f32 (soft float on
/// the Cortex-M0); the per-cycle step runs in the probe's scalar.
#[cfg(feature = "step")]
fn setpoint_steps(robot: Robot<S>, clock: &Clock, stats: &mut Stats) {
    use deltakin::motion::{Bounds, JointRateLimits, Law, Move, Stream};
    const HOME: [f32; 3] = [0.0, 0.0, -700.0];
    const PICK: [f32; 3] = [-152.5, 60.0, -760.0];
    const PLACE: [f32; 3] = [152.5, 60.0, -760.0];
    let to_wide = |p: [f32; 3]| p.map(|v| W::from_f64(f64::from(v)).unwrap_or(W::ZERO));
    const PERIOD_S: f32 = 1.0e-3;
    let deg = |v: f32| v.to_radians();
    let fast = Bounds { speed: 2500.0, accel: 40_000.0, jerk: 2.0e6 };
    let gentle = Bounds { speed: 500.0, accel: 5_000.0, jerk: 1.0e5 };
    let program = [
        Move::Line { to: PICK, law: Law::SCurve, bounds: gentle },
        Move::Pick { to: PLACE, lift: 25.0, blend_radius: 10.0, law: Law::SCurve, bounds: fast },
    ];
    let limits = JointRateLimits { speed: [deg(720.0); 3], accel: [deg(15_000.0); 3] };
    let mut stream: Stream<S, 2, f32> = match Stream::new(robot, PERIOD_S, limits, to_wide(HOME)) {
        Ok(s) => s,
        Err(_) => fail("step: the stream refuses the demo start"),
    };
    let mut planned_cycles = 0u32;
    for mv in &program {
        match stream.push(mv) {
            Ok(a) => planned_cycles += a.cycles,
            Err(_) => fail("step: a demo move is refused"),
        }
    }
    let mut last = None;
    loop {
        let mut out = Ok(None);
        let m = measure(&mut || out = stream.next_setpoint());
        match out {
            Err(_) => fail_at("step: the stream faults", stats.len),
            Ok(None) => break,
            Ok(Some(s)) => {
                stats.record(clock, &m);
                last = Some(s.setpoint.position);
            }
        }
    }
    if stats.len != planned_cycles as usize {
        fail("step: setpoint count differs from the planned cycles");
    }
    // Each move ends exactly on its target (the stream's documented promise).
    if last != Some(to_wide(PLACE)) {
        fail("step: the stream does not end on the place station");
    }
}

#[entry]
fn main() -> ! {
    let mut cp = match cortex_m::Peripherals::take() {
        Some(cp) => cp,
        None => fail("peripherals taken twice"),
    };
    let syst = &mut cp.SYST;
    syst.set_clock_source(SystClkSource::Core);
    syst.set_reload(RELOAD);
    syst.clear_current();
    syst.enable_counter();

    let clock = Clock::calibrate();
    let robot = demo_robot();
    hprintln!(
        "probe scalar={} robot_bytes={} stream_bytes={} cal_ticks={} cal_instructions={} empty_ticks={}",
        scalar::NAME,
        core::mem::size_of::<Robot<S>>(),
        STREAM_BYTES,
        clock.cal_ticks,
        clock.cal_instructions,
        clock.empty
    );
    let mut buffer = [0u32; SAMPLES];
    let joint_tol = narrow(table::JOINT_TOL);
    let position_tol = wide(table::POSITION_TOL);

    // Guarded inverse kinematics: every inside point passes with the host's
    // joints, every outside point is refused.
    let mut stats = Stats::new(&mut buffer);
    for (i, [p, j]) in table::INSIDE.iter().enumerate() {
        let (p, j) = (p.map(wide), j.map(narrow));
        let mut out = None;
        let m = measure(&mut || out = inverse(&robot, black_box(p), Some(j)));
        match out {
            Some(got) if close(got, j, joint_tol) => stats.record(&clock, &m),
            Some(_) => fail_at("inverse: joints differ from the host's", i),
            None => fail_at("inverse: an inside point is refused", i),
        }
    }
    for (i, p) in table::OUTSIDE.iter().enumerate() {
        if inverse(&robot, black_box(p.map(wide)), None).is_some() {
            fail_at("inverse: an outside point passes", i);
        }
    }
    stats.report(cfg!(feature = "inverse"), "inverse");

    // Guarded forward kinematics at the inside points' joints.
    let mut stats = Stats::new(&mut buffer);
    for (i, [p, j]) in table::INSIDE.iter().enumerate() {
        let (p, j) = (p.map(wide), j.map(narrow));
        let mut out = None;
        let m = measure(&mut || out = forward(&robot, black_box(j), p));
        match out {
            Some(got) if close(got, p, position_tol) => stats.record(&clock, &m),
            Some(_) => fail_at("forward: position differs from the host's", i),
            None => fail_at("forward: an inside pose is refused", i),
        }
    }
    stats.report(cfg!(feature = "forward"), "forward");

    #[cfg(feature = "step")]
    {
        let mut stats = Stats::new(&mut buffer);
        setpoint_steps(robot, &clock, &mut stats);
        stats.report(true, "setpoint_step");
    }

    hprintln!("ok");
    halt(debug::EXIT_SUCCESS)
}
