#!/usr/bin/env bash
# Target timing and footprint: builds the probe firmware (ci/firmware/) for
# each Cortex-M target and scalar, runs it under QEMU, and writes
# target/target-report.json plus a table on stdout. Method: ci/firmware/README.md.
#
#   thumbv7em-none-eabihf on mps2-an386 (Cortex-M4F), f32
#   thumbv6m-none-eabi    on microbit   (Cortex-M0),  fixed point, and f32 (soft float)
#
# For each: instructions per call (worst, median) of guarded inverse and
# forward kinematics and of one setpoint step, stack bytes per
# call, the flash each call pulls in (a probe built with that call alone
# against one with none), flash of inverse + forward together, and the size
# of a Robot value. Measures only; the gates live in the report.
#
# JSON schema (other tools read it; keep it):
#   {"targets":[{"target":T,"board":B,"scalar":S,"robot_bytes":N,
#     "calls":[{"call":"inverse"|"forward"|"setpoint_step","points":N,
#               "worst_instructions":N,"median_instructions":N,
#               "stack_bytes":N,"flash_bytes":N}, ...],
#     "flash_kinematics_bytes":N}, ...]}
# A call the build does not offer is left out of "calls".
#
# Toolchain: ci/cross-env.sh (rustup targets when present, else Debian's
# rustc with build-std, installing packages as needed); qemu-system-arm is
# installed with apt-get when missing. Builds go to target/firmware.
#
# Environment: PROBE_ICOUNT_SHIFT (default 6), PROBE_QEMU_TIMEOUT (seconds
# per run, default 300), CROSS_ROUTE (see ci/cross-env.sh).
set -euo pipefail

cd "$(dirname "${BASH_SOURCE[0]}")/.."
REPO=$(pwd)
started=$SECONDS
CROSS_LOG=target-report
# shellcheck source=ci/cross-env.sh
. ci/cross-env.sh

ICOUNT_SHIFT=${PROBE_ICOUNT_SHIFT:-6}
QEMU_TIMEOUT=${PROBE_QEMU_TIMEOUT:-300}
TARGET_DIR=$REPO/target/firmware
OUT_JSON=$REPO/target/target-report.json
WORK=$TARGET_DIR/report
mkdir -p "$WORK"

need_command qemu-system-arm qemu-system-arm
SIZE_TOOL=$(command -v llvm-size || command -v size || true)
if [ -z "$SIZE_TOOL" ]; then
    apt_install binutils
    SIZE_TOOL=$(command -v size)
fi

# target board cpu scalar
CONFIGS=(
    "thumbv7em-none-eabihf mps2-an386 cortex-m4 f32"
    "thumbv6m-none-eabi microbit cortex-m0 fixed"
    "thumbv6m-none-eabi microbit cortex-m0 f32"
)

# build TARGET FEATURES NAME: builds the probe with exactly FEATURES (comma
# separated, may be empty) and copies the ELF to $WORK/NAME.elf.
build() {
    local target=$1 features=$2 name=$3
    (
        cd ci/firmware
        env "${CROSS_ENV[@]}" cargo build --quiet --release --target "$target" "${CROSS_FLAGS[@]}" \
            --target-dir "$TARGET_DIR$CROSS_DIR_SUFFIX" --no-default-features --features "$features"
    )
    cp "$TARGET_DIR$CROSS_DIR_SUFFIX/$target/release/deltakin-probe" "$WORK/$name.elf"
}

# flash_of ELF: bytes of .text + .rodata (code and constants in flash).
flash_of() {
    "$SIZE_TOOL" -A "$1" | awk '$1 == ".text" || $1 == ".rodata" {s += $2} END {print s + 0}'
}

# field KEY LINE: the value of KEY=value in a probe output line.
field() {
    local key=$1 line=$2 word
    for word in $line; do
        if [ "${word%%=*}" = "$key" ]; then
            echo "${word#*=}"
            return
        fi
    done
    echo "target-report: no $key in '$line'" >&2
    exit 1
}

# with FEATURE...: the feature list plus the scalar's feature.
with() {
    local list=$scalar_feature f
    for f in "$@"; do list="${list:+$list,}$f"; done
    echo "$list"
}

json_targets=()
table_rows=()
summary=()
declare -A worst_of=()
for config in "${CONFIGS[@]}"; do
    read -r target board cpu scalar <<< "$config"
    tag="$target-$scalar"
    echo "target-report: $tag on $board"
    cross_select "$target"
    cross_linker "$target"
    scalar_feature=""
    if [ "$scalar" = fixed ]; then
        scalar_feature="fixed"
    fi

    # The measured run: every call.
    build "$target" "$(with inverse forward step)" "$tag"
    log=$WORK/$tag.log
    status=0
    timeout "$QEMU_TIMEOUT" qemu-system-arm -machine "$board" -cpu "$cpu" -nographic -monitor none \
        -semihosting-config enable=on,target=native -icount shift="$ICOUNT_SHIFT" \
        -kernel "$WORK/$tag.elf" > "$log" 2>&1 || status=$?
    if [ "$status" -ne 0 ] || ! grep -qx ok "$log"; then
        echo "target-report: the probe failed on $tag (exit status $status):" >&2
        cat "$log" >&2
        exit 1
    fi

    # Flash: one build per call against a baseline with none.
    build "$target" "$(with)" "$tag-none"
    base=$(flash_of "$WORK/$tag-none.elf")
    declare -A flash=()
    for call in inverse forward; do
        build "$target" "$(with "$call")" "$tag-$call"
        flash[$call]=$(($(flash_of "$WORK/$tag-$call.elf") - base))
    done
    build "$target" "$(with step)" "$tag-step"
    flash[setpoint_step]=$(($(flash_of "$WORK/$tag-step.elf") - base))
    build "$target" "$(with inverse forward)" "$tag-kinematics"
    kinematics=$(($(flash_of "$WORK/$tag-kinematics.elf") - base))

    probe_line=$(grep '^probe ' "$log")
    robot_bytes=$(field robot_bytes "$probe_line")
    calls_json=()
    while read -r _ call rest; do
        points=$(field points "$rest")
        worst=$(field worst "$rest")
        median=$(field median "$rest")
        stack=$(field stack "$rest")
        fl=${flash[$call]:?no flash figure for $call}
        calls_json+=("$(printf '{"call":"%s","points":%d,"worst_instructions":%d,"median_instructions":%d,"stack_bytes":%d,"flash_bytes":%d}' \
            "$call" "$points" "$worst" "$median" "$stack" "$fl")")
        table_rows+=("$(printf '%-22s %-11s %-6s %-14s %6d %8d %8d %7d %7d' \
            "$target" "$board" "$scalar" "$call" "$points" "$worst" "$median" "$stack" "$fl")")
        worst_of["$target/$scalar/$call"]=$worst
    done < <(grep '^call ' "$log")
    while read -r _ call reason; do
        table_rows+=("$(printf '%-22s %-11s %-6s %-14s %s' "$target" "$board" "$scalar" "$call" "not available: $reason")")
    done < <(grep '^unavailable ' "$log")
    joined=$(IFS=,; echo "${calls_json[*]}")
    json_targets+=("$(printf '{"target":"%s","board":"%s","scalar":"%s","robot_bytes":%d,"calls":[%s],"flash_kinematics_bytes":%d}' \
        "$target" "$board" "$scalar" "$robot_bytes" "$joined" "$kinematics")")
    stream_bytes=$(field stream_bytes "$probe_line")
    stream_note=""
    if [ "$stream_bytes" -gt 0 ]; then
        stream_note=" (a Stream<_, 2>: $stream_bytes)"
    fi
    summary+=("$(printf '%-22s %-6s a Robot value takes %d bytes of RAM%s; inverse + forward + guards take %d bytes of flash' \
        "$target" "$scalar" "$robot_bytes" "$stream_note" "$kinematics")")
    unset flash
done

joined=$(IFS=,; echo "${json_targets[*]}")
printf '{"targets":[%s]}\n' "$joined" > "$OUT_JSON"

echo
echo "Instructions per call under QEMU (-icount shift=$ICOUNT_SHIFT; instructions, a lower bound on cycles),"
echo "stack per call and the flash each call pulls in (.text + .rodata over a probe that calls nothing):"
printf '%-22s %-11s %-6s %-14s %6s %8s %8s %7s %7s\n' target board scalar call points worst median stack flash
printf '%s\n' "${table_rows[@]}"
echo
printf '%s\n' "${summary[@]}"
for call in inverse forward; do
    fixed=${worst_of[thumbv6m-none-eabi/fixed/$call]:-}
    soft=${worst_of[thumbv6m-none-eabi/f32/$call]:-}
    if [ -n "$fixed" ] && [ -n "$soft" ]; then
        awk -v c="$call" -v a="$fixed" -v b="$soft" \
            'BEGIN {printf "Cortex-M0 %s worst case: fixed point %d / soft-float f32 %d = %.2f\n", c, a, b, a / b}'
    fi
done
echo
echo "target-report: wrote $OUT_JSON in $((SECONDS - started)) s"
