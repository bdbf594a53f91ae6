//! Puts `memory.x` where cortex-m-rt's `link.x` looks for it (the build's
//! output directory, added to the linker's search path).
use std::{env, fs, path::PathBuf};

fn main() {
    let out = PathBuf::from(env::var("OUT_DIR").unwrap_or_default());
    fs::copy("memory.x", out.join("memory.x")).unwrap_or_else(|e| panic!("memory.x: {e}"));
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=memory.x");
    println!("cargo:rerun-if-changed=build.rs");
}
