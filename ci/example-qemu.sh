#!/usr/bin/env bash
# Builds the Cortex-M4F example (examples/cortex-m4f/: a robot built once,
# moves queued from the main loop, the setpoint stream stepped from the
# SysTick interrupt, errors over semihosting) for thumbv7em-none-eabihf and
# runs it under QEMU's MPS2 AN386 board. Fails when the build fails, the
# run times out, or the example ends with a failure status (it checks its
# own results: every move but the one refused on purpose accepted, the
# platform home at the end).
#
# Toolchain: ci/cross-env.sh (rustup target when present, else Debian's
# rustc with build-std, installing packages as needed); qemu-system-arm is
# installed with apt-get when missing. Builds go to target/example-cortex-m4f.
#
# Environment: EXAMPLE_QEMU_TIMEOUT (seconds, default 120), CROSS_ROUTE
# (see ci/cross-env.sh).
set -euo pipefail

cd "$(dirname "${BASH_SOURCE[0]}")/.."
REPO=$(pwd)
CROSS_LOG=example-qemu
# shellcheck source=ci/cross-env.sh
. ci/cross-env.sh

TARGET=thumbv7em-none-eabihf
TIMEOUT=${EXAMPLE_QEMU_TIMEOUT:-120}
need_command qemu-system-arm qemu-system-arm
cross_select "$TARGET"
cross_linker "$TARGET"

out="$REPO/target/example-cortex-m4f$CROSS_DIR_SUFFIX"
(
    cd examples/cortex-m4f
    env "${CROSS_ENV[@]}" cargo build --release --target "$TARGET" "${CROSS_FLAGS[@]}" --target-dir "$out"
)
elf="$out/$TARGET/release/deltakin-example-cortex-m4f"
log="$out/run.log"
status=0
timeout "$TIMEOUT" qemu-system-arm -machine mps2-an386 -cpu cortex-m4 -nographic -monitor none \
    -semihosting-config enable=on,target=native -kernel "$elf" > "$log" 2>&1 || status=$?
cat "$log"
if [ "$status" -ne 0 ]; then
    echo "example-qemu: the example failed (exit status $status)" >&2
    exit 1
fi
if ! grep -q '^done:' "$log"; then
    echo "example-qemu: the example ended without its 'done:' line" >&2
    exit 1
fi
echo "example-qemu: ok"
