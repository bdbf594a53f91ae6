//! The panic handler of bare-metal builds (feature `panic-handler`).
//!
//! Never reached: the core proves its hot paths panic-free (`ci/no-panic.sh`)
//! and this crate does not panic. Should it happen anyway, the core stops
//! here, in an endless loop a watchdog or a debugger will find.

#[panic_handler]
fn stop(_: &core::panic::PanicInfo<'_>) -> ! {
    loop {
        core::hint::spin_loop();
    }
}
