#!/usr/bin/env bash
# The C interface (c-api/): header up to date, the C example on the host
# and on an emulated Cortex-M4F, and the overhead of the C entry points.
#
# 1. regenerates c-api/include/deltakin.h with cbindgen (installed with
#    `cargo install cbindgen --locked` when missing) and fails when it
#    differs from the committed header;
# 2. writes the Rust API's expected results (cargo example `expected`);
# 3. builds libdeltakin_c.a for the host (profile c-api: panic=abort, fat
#    LTO), builds c-api/examples/deltakin_demo.c with `cc`, runs it;
# 4. builds the library for thumbv7em-none-eabihf (features panic-handler
#    and probe), the same C program with arm-none-eabi-gcc
#    (gcc-arm-none-eabi and libnewlib-arm-none-eabi installed when
#    missing), runs it under QEMU mps2-an386 with -icount, and keeps its
#    output, overhead figures included, in target/c-api-demo/m4f.txt.
set -euo pipefail
cd "$(dirname "$0")/.."
CROSS_LOG=c-api
# shellcheck source=ci/cross-env.sh
source ci/cross-env.sh
out=target/c-api-demo
mkdir -p "$out"

echo "c-api: header"
if ! command -v cbindgen > /dev/null; then
    cargo install cbindgen --locked
fi
cbindgen --config c-api/cbindgen.toml --crate deltakin-c --output c-api/include/deltakin.h c-api
git diff --exit-code -- c-api/include/deltakin.h || {
    echo "c-api: include/deltakin.h is out of date: run ci/c-api.sh and commit the header" >&2
    exit 1
}

echo "c-api: expected results from the Rust API"
cargo run -q -p deltakin-c --example expected > "$out/expected.h"

echo "c-api: host"
cargo build -q -p deltakin-c --profile c-api
cc -std=c11 -O2 -Wall -Wextra -Werror -D_DEFAULT_SOURCE -Ic-api/include -I"$out" -Ic-api/examples \
    c-api/examples/deltakin_demo.c c-api/examples/platform_host.c target/c-api/libdeltakin_c.a \
    -lpthread -ldl -lm -o "$out/demo-host"
"$out/demo-host" | tee "$out/host.txt"

echo "c-api: Cortex-M4F"
need_command arm-none-eabi-gcc gcc-arm-none-eabi
if ! compgen -G "/usr/lib/arm-none-eabi/newlib/thumb/v7e-m+fp/hard/libc.a" > /dev/null; then
    apt_install libnewlib-arm-none-eabi
fi
need_command qemu-system-arm qemu-system-arm
target=thumbv7em-none-eabihf
cross_select "$target"
tdir=target/c-api-cross$CROSS_DIR_SUFFIX
env "${CROSS_ENV[@]}" cargo build -q -p deltakin-c --profile c-api --target "$target" \
    --features panic-handler,probe "${CROSS_FLAGS[@]}" --target-dir "$tdir"
arm-none-eabi-gcc -std=gnu11 -O2 -Wall -Wextra -Werror -mcpu=cortex-m4 -mthumb -mfloat-abi=hard \
    -mfpu=fpv4-sp-d16 -DDELTAKIN_PROBE -Ic-api/include -I"$out" -Ic-api/examples \
    -nostartfiles -T c-api/examples/mps2-an386.ld -Wl,--gc-sections --specs=nosys.specs \
    c-api/examples/deltakin_demo.c c-api/examples/platform_m4f.c "$tdir/$target/c-api/libdeltakin_c.a" \
    -lm -o "$out/demo-m4f.elf"
timeout 600 qemu-system-arm -machine mps2-an386 -cpu cortex-m4 -nographic -monitor none -serial none \
    -semihosting-config enable=on,target=native -icount shift=6 -kernel "$out/demo-m4f.elf" 2>&1 \
    | tee "$out/m4f.txt"
# (QEMU writes semihosting output to its stderr; the exit status is the
# program's, through SYS_EXIT.)
grep -q '^PASS' "$out/m4f.txt"
echo "c-api: ok (host and Cortex-M4F)"
