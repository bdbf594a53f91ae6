#!/usr/bin/env bash
# Coverage-guided fuzzing of the core (libFuzzer through cargo fuzz).
#   bash ci/fuzz.sh [SECONDS]    default 60
# Installs cargo-fuzz when missing. cargo fuzz wants nightly features; on a
# stable toolchain RUSTC_BOOTSTRAP=1 unlocks them. The sanitizer is off: the
# core has no unsafe code, and what we look for are panics, non-finite
# accepted results and broken setpoint contracts (asserted in the target
# with host-tests/src/contract.rs).
set -euo pipefail
cd "$(dirname "$0")/.."
secs="${1:-60}"
command -v cargo-fuzz >/dev/null 2>&1 || cargo install cargo-fuzz --locked
export RUSTC_BOOTSTRAP=1
# Past crashes first: each must now pass.
for f in ci/fuzz/regressions/*; do
  cargo fuzz run --fuzz-dir ci/fuzz --sanitizer none core_inputs "$f" >/dev/null 2>&1 \
    || { echo "fuzz regression $f fails again"; exit 1; }
done
mkdir -p ci/fuzz/corpus/core_inputs target
cargo fuzz run --fuzz-dir ci/fuzz --sanitizer none core_inputs ci/fuzz/corpus/core_inputs -- \
  -max_total_time="$secs" -print_final_stats=1 > target/fuzz.log 2>&1 || { tail -40 target/fuzz.log; exit 1; }
grep -E "^(Done|stat::number_of_executed_units)" target/fuzz.log
