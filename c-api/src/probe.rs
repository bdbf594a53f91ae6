//! Cortex-M only (feature `probe`): the Rust calls behind the C entry
//! points, timed with SysTick inside the library, so that the C example can
//! time the C entry points the same way and print the overhead of the C
//! interface (method: `c-api/README.md`, "Overhead").
//!
//! Each probe reads the SysTick current value (counting down), makes the
//! one core call on its inputs through `black_box` (so the call is neither
//! folded nor dropped), and reads SysTick again; it writes the tick
//! difference to `ticks`. `deltakin_probe_empty` measures the same with no
//! call, to subtract. The caller configures SysTick (core clock, reload
//! 0xFFFFFF) and keeps each measurement below one reload period.

use core::hint::black_box;
use core::ptr;

use deltakin::{Fixed, FixedWide};

use crate::access::{held, held_mut, output};
use crate::kinematics::triple;
use crate::status::DeltakinStatus;
use crate::storage::{DeltakinRobotF32, DeltakinRobotQ, DeltakinStreamF32};

/// SysTick current value register (Armv7-M architecture reference manual,
/// B3.3, from memory: 0xE000E018).
const SYST_CVR: usize = 0xE000_E018;

fn now() -> u32 {
    // SAFETY: SysTick's current value register exists on every Cortex-M
    // (this module builds only for `target_arch = "arm"`); a volatile read
    // has no side effect.
    unsafe { ptr::read_volatile(SYST_CVR as *const u32) }
}

/// Times `f` in SysTick ticks (a down-counter).
#[inline(always)]
fn ticks_of<R>(f: impl FnOnce() -> R) -> u32 {
    let start = now();
    black_box(f());
    let end = now();
    start.wrapping_sub(end) & 0x00FF_FFFF
}

/// Writes `t` to `ticks`; status.
///
/// # Safety
/// `ticks` is null or writable.
unsafe fn give(ticks: *mut u32, t: u32) -> DeltakinStatus {
    // SAFETY: caller's contract.
    match unsafe { output(ticks) } {
        Ok(out) => {
            *out = t;
            DeltakinStatus::Ok
        }
        Err(s) => s,
    }
}

/// Ticks of an empty measurement.
///
/// # Safety
/// `ticks` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_probe_empty(ticks: *mut u32) -> DeltakinStatus {
    let t = ticks_of(|| black_box(0u32));
    // SAFETY: caller's contract.
    unsafe { give(ticks, t) }
}

/// Ticks of the core's `Robot::<f32>::inverse` at `target_mm`.
///
/// # Safety
/// As `deltakin_inverse_f32`; `ticks` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_probe_inverse_f32(
    robot: *const DeltakinRobotF32,
    target_mm: *const f32,
    ticks: *mut u32,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    let (Ok(robot), Ok(t)) = (unsafe { held(robot) }, unsafe { triple(target_mm) }) else {
        return DeltakinStatus::NullPointer;
    };
    let robot = black_box(robot);
    let t = black_box(t);
    let n = ticks_of(|| robot.inverse(t));
    // SAFETY: caller's contract.
    unsafe { give(ticks, n) }
}

/// Ticks of the core's `Robot::<f32>::forward` at `joints_rad`.
///
/// # Safety
/// As `deltakin_forward_f32`; `ticks` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_probe_forward_f32(
    robot: *const DeltakinRobotF32,
    joints_rad: *const f32,
    ticks: *mut u32,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    let (Ok(robot), Ok(j)) = (unsafe { held(robot) }, unsafe { triple(joints_rad) }) else {
        return DeltakinStatus::NullPointer;
    };
    let robot = black_box(robot);
    let j = black_box(j);
    let n = ticks_of(|| robot.forward(j));
    // SAFETY: caller's contract.
    unsafe { give(ticks, n) }
}

/// Ticks of the core's `Robot::<Fixed>::inverse` at `target_mm` (Q18.14).
///
/// # Safety
/// As `deltakin_inverse_q`; `ticks` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_probe_inverse_q(
    robot: *const DeltakinRobotQ,
    target_mm: *const i32,
    ticks: *mut u32,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    let (Ok(robot), Ok(t)) = (unsafe { held(robot) }, unsafe { triple(target_mm) }) else {
        return DeltakinStatus::NullPointer;
    };
    let robot = black_box(robot);
    let t = black_box(t.map(FixedWide::from_raw));
    let n = ticks_of(|| robot.inverse(t));
    // SAFETY: caller's contract.
    unsafe { give(ticks, n) }
}

/// Ticks of the core's `Robot::<Fixed>::forward` at `joints_rad` (Q7.25).
///
/// # Safety
/// As `deltakin_forward_q`; `ticks` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_probe_forward_q(
    robot: *const DeltakinRobotQ,
    joints_rad: *const i32,
    ticks: *mut u32,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    let (Ok(robot), Ok(j)) = (unsafe { held(robot) }, unsafe { triple(joints_rad) }) else {
        return DeltakinStatus::NullPointer;
    };
    let robot = black_box(robot);
    let j = black_box(j.map(Fixed::from_raw));
    let n = ticks_of(|| robot.forward(j));
    // SAFETY: caller's contract.
    unsafe { give(ticks, n) }
}

/// Ticks of one `Stream::next_setpoint` of the f32 stream (consumes one
/// setpoint, like `deltakin_stream_next_f32`).
///
/// # Safety
/// As `deltakin_stream_next_f32`; `ticks` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_probe_stream_next_f32(
    stream: *mut DeltakinStreamF32,
    ticks: *mut u32,
) -> DeltakinStatus {
    // SAFETY: caller's contract.
    let Ok(stream) = (unsafe { held_mut(stream) }) else {
        return DeltakinStatus::NullPointer;
    };
    let stream = black_box(stream);
    let n = ticks_of(|| stream.next_setpoint());
    // SAFETY: caller's contract.
    unsafe { give(ticks, n) }
}
