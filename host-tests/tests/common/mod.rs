//! Shared by the property-test files: case counts and runner settings.

// Each test file uses what it needs of this.
#![allow(dead_code)]

use proptest::test_runner::{Config, RngSeed};

/// Seed used unless `PROPTEST_RNG_SEED` names another.
pub const SEED: u64 = 0x6465_6c74_616b_696e;

/// The number of cases to run: `PROPTEST_CASES` when it is set, else
/// `default` (the file's own count). proptest reads the variable only into
/// `Config::default()`, so a count written into a config would hide it.
///
/// # Panics
/// When `PROPTEST_CASES` is set but is not a positive whole number: a
/// typo must not silently run the default count.
#[must_use]
pub fn cases(default: u32) -> u32 {
    match std::env::var("PROPTEST_CASES") {
        Ok(v) => match v.trim().parse::<u32>() {
            Ok(n) if n > 0 => n,
            _ => panic!("PROPTEST_CASES must be a positive whole number, not {v:?}"),
        },
        Err(_) => default,
    }
}

/// A runner configuration for `default` cases (or `PROPTEST_CASES`), with
/// the fixed [`SEED`] unless `PROPTEST_RNG_SEED` sets one, no failure
/// files, and no tolerance for rejected draws: every strategy in these
/// files maps its random numbers into valid inputs, so a single rejection
/// is a bug in a generator.
#[must_use]
pub fn config(default: u32) -> Config {
    let base = Config::default();
    let rng_seed = match base.rng_seed {
        RngSeed::Fixed(s) => RngSeed::Fixed(s),
        RngSeed::Random => RngSeed::Fixed(SEED),
    };
    Config {
        cases: cases(default),
        failure_persistence: None,
        rng_seed,
        max_global_rejects: 0,
        max_local_rejects: 0,
        ..base
    }
}
