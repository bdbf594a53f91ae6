//! Picks the memory map of the emulated board for the target being built
//! and puts it where cortex-m-rt's link.x looks for `memory.x`.
use std::{env, fs, path::PathBuf};

fn main() {
    let target = env::var("TARGET").unwrap_or_default();
    let memory = if target.starts_with("thumbv6m") {
        // micro:bit (nRF51, Cortex-M0): 256 KiB flash, 16 KiB RAM.
        "MEMORY { FLASH : ORIGIN = 0x00000000, LENGTH = 256K\n RAM : ORIGIN = 0x20000000, LENGTH = 16K }\n"
    } else {
        // MPS2 AN386 (Cortex-M4): 4 MiB each.
        "MEMORY { FLASH : ORIGIN = 0x00000000, LENGTH = 4M\n RAM : ORIGIN = 0x20000000, LENGTH = 4M }\n"
    };
    let out = PathBuf::from(env::var("OUT_DIR").unwrap_or_default());
    fs::write(out.join("memory.x"), memory).unwrap_or_else(|e| panic!("memory.x: {e}"));
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=build.rs");
}
