#!/usr/bin/env bash
# Builds the deltakin core library without default features, then with each
# optional integration (defmt, serde, both), for the two Cortex-M targets
# deltakin serves:
#   thumbv7em-none-eabihf  (Cortex-M4F/M7, single-precision FPU)
#   thumbv6m-none-eabi     (Cortex-M0/M0+, no FPU, no hardware divide)
#
# How the targets are built (the active toolchain's prebuilt core, or
# Debian's rustc building core from source) is chosen by ci/cross-env.sh,
# shared with ci/target-report.sh; see there.
#
# Output goes to target/cross (route 2: target/cross/debian) so the host
# build in target/ stays valid.
#
# Prints the .text size of the built rlib (no features) for each target. That is only
# the code no caller can inline or instantiate itself (the error
# messages' formatting, about half a kilobyte): the solvers are generic
# and the f32 kernels small, so they are compiled into the crate that
# uses them. It is not the firmware footprint.
#
# Usage: ci/cross-build.sh [TARGET...]   (default: both targets)
#   CROSS_ROUTE=debian forces route 2 (to check it on a machine that has
#   route 1); CROSS_ROUTE=rustup refuses route 2.
set -euo pipefail

cd "$(dirname "${BASH_SOURCE[0]}")/.."

TARGETS=("$@")
if [ "${#TARGETS[@]}" -eq 0 ]; then
    TARGETS=(thumbv7em-none-eabihf thumbv6m-none-eabi)
fi
TARGET_DIR=target/cross
CROSS_LOG=cross-build
# shellcheck source=ci/cross-env.sh
. ci/cross-env.sh

print_text_size() {
    local target=$1 dir=$2 rlib
    rlib="$dir/$target/release/libdeltakin.rlib"
    if [ ! -f "$rlib" ]; then
        echo "cross-build: $rlib missing" >&2
        exit 1
    fi
    local tool
    tool=$(command -v llvm-size || command -v size || true)
    if [ -z "$tool" ]; then
        echo "cross-build: $target built (no size tool to measure $rlib)"
        return
    fi
    # Sum .text* sections over the object files in the archive (the
    # metadata member has none).
    local text
    text=$("$tool" -A "$rlib" 2> /dev/null | awk '$1 ~ /^\.text/ {s += $2} END {print s + 0}')
    echo "cross-build: $target ok, $rlib .text = $text bytes (not the firmware footprint)"
}

for target in "${TARGETS[@]}"; do
    echo "cross-build: $target"
    cross_select "$target"
    out="$TARGET_DIR$CROSS_DIR_SUFFIX"
    env "${CROSS_ENV[@]}" cargo build -p deltakin --lib --release --no-default-features \
        --target "$target" "${CROSS_FLAGS[@]}" --target-dir "$out"
    print_text_size "$target" "$out"
    # The optional integrations a firmware crate switches on (std and
    # no-panic are host-only: std needs a target std, no-panic a host link).
    for features in defmt serde defmt,serde; do
        env "${CROSS_ENV[@]}" cargo build -p deltakin --lib --release --no-default-features \
            --features "$features" --target "$target" "${CROSS_FLAGS[@]}" --target-dir "$out"
        echo "cross-build: $target --features $features ok"
    done
done
echo "cross-build: all targets built"
