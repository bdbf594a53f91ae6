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
    for i in 0..5 {
        let p = core::hint::black_box([10.0 * i as f32, -20.0, -700.0]);
        let (t, r) = ticks_of(syst, || robot.inverse(p));
        let _ = core::hint::black_box(r);
        worst = worst.max(t - empty);
    }
    hprintln!("empty {} ik_worst_ticks {}", empty, worst);
    debug::exit(debug::EXIT_SUCCESS);
    loop {}
}
