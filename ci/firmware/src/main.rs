#![no_std]
#![no_main]

use core::panic::PanicInfo;
use cortex_m::peripheral::{SYST, syst::SystClkSource};
use cortex_m_rt::entry;
use cortex_m_semihosting::{debug, hprintln};
use deltakin::{Geometry, Limits, Robot};

#[panic_handler]
fn panic(_: &PanicInfo) -> ! {
    hprintln!("PANIC");
    debug::exit(debug::EXIT_FAILURE);
    loop {}
}

const RELOAD: u32 = 0x00ff_ffff;

#[inline(never)]
fn ticks_of<R>(syst: &SYST, f: impl FnOnce() -> R) -> (u32, R) {
    let t0 = SYST::get_current();
    let r = f();
    let t1 = SYST::get_current();
    let _ = syst;
    (t0.wrapping_sub(t1) & RELOAD, r)
}

/// 1000 `nop`s, for calibrating ticks per instruction.
#[inline(never)]
fn nops_1000() {
    for _ in 0..100 {
        cortex_m::asm::nop();
        cortex_m::asm::nop();
        cortex_m::asm::nop();
        cortex_m::asm::nop();
        cortex_m::asm::nop();
        cortex_m::asm::nop();
        cortex_m::asm::nop();
        cortex_m::asm::nop();
        cortex_m::asm::nop();
        cortex_m::asm::nop();
    }
}

#[entry]
fn main() -> ! {
    let mut cp = cortex_m::Peripherals::take().unwrap();
    let syst = &mut cp.SYST;
    syst.set_clock_source(SystClkSource::Core);
    syst.set_reload(RELOAD);
    syst.clear_current();
    syst.enable_counter();

    let robot: Robot<f32> = Robot::new(
        Geometry { base_radius: 160.0, platform_radius: 40.0, upper_arm: 280.0, lower_arm: 720.0 },
        Limits::uniform(-0.61, 1.48, 0.698, 0.1, 0.1),
    ).unwrap();
    let (empty, _) = ticks_of(syst, || core::hint::black_box(0));
    let mut worst = 0;
    let mut ik_ok = 0u32;
    for i in 0..5 {
        let p = core::hint::black_box([10.0 * i as f32, -20.0, -700.0]);
        let (t, r) = ticks_of(syst, || robot.inverse(p));
        ik_ok += u32::from(r.is_ok());
        worst = worst.max(t - empty);
    }
    let mut fk_worst = 0;
    let mut fk_ok = 0u32;
    for i in 0..5 {
        let j = core::hint::black_box([0.1 * i as f32, 0.3, 0.45]);
        let (t, r) = ticks_of(syst, || robot.forward(j));
        fk_ok += u32::from(r.is_ok());
        fk_worst = fk_worst.max(t - empty);
    }
    let (nop_ticks, _) = ticks_of(syst, nops_1000);
    hprintln!("empty {} ik_worst_ticks {} fk_worst_ticks {} nop1000_ticks {} ok {}/5 {}/5", empty, worst, fk_worst, nop_ticks - empty, ik_ok, fk_ok);
    debug::exit(debug::EXIT_SUCCESS);
    loop {}
}
