#!/usr/bin/env bash
# Host cost against a textbook baseline: x86 instructions per call of
# deltakin's guarded f32 inverse and forward kinematics and of a plain
# textbook f64 closed form (benches/shared/textbook.rs: half-angle IK,
# three-sphere FK, no guards) over the same points (the bench points of
# benches/shared/demo_robot.rs), counted by callgrind (deterministic), and
# the two ratios beside the goal (<= 1.0). The time ratio, in the same
# comparison: `cargo bench --bench kinematics -- versus_textbook`.
#
# Method: ci/host-cost/ runs one call over every point PASSES times after
# the same setup as a run that calls nothing; the difference of the two
# runs' instruction counts divided by the number of calls is the cost per
# call, call overhead and the loop included (the same for both sides).
#
# Writes target/host-cost.json:
#   {"points":N,"calls":[{"call":C,"instructions_per_call":X},...],
#    "inverse_ratio":R,"forward_ratio":R,"goal":1.0}
# Environment: HOST_COST_PASSES (default 20). Installs valgrind with
# apt-get when it is missing.
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
REPO=$(pwd)
PASSES=${HOST_COST_PASSES:-20}

if ! command -v valgrind > /dev/null; then
    echo "host-cost: installing valgrind"
    export DEBIAN_FRONTEND=noninteractive
    apt-get -o DPkg::Lock::Timeout=600 update -qq
    apt-get -o DPkg::Lock::Timeout=600 install -y -qq --no-install-recommends valgrind > /dev/null
fi

(cd ci/host-cost && cargo build --release --quiet)
BIN=$REPO/ci/host-cost/target/release/deltakin-host-cost

# instructions CALL: total instructions of one run (callgrind's "refs").
instructions() {
    valgrind --tool=callgrind --callgrind-out-file=/dev/null "$BIN" "$1" "$PASSES" 2>&1 >/dev/null |
        awk '/Collected :/ {print $NF; found = 1} END {if (!found) exit 1}'
}

base=$(instructions none)
calls=$("$BIN" inverse_f32 "$PASSES")
points=$((calls / PASSES))
declare -A per=()
for call in inverse_f32 inverse_textbook forward_f32 forward_textbook; do
    total=$(instructions "$call")
    per[$call]=$(awk -v t="$total" -v b="$base" -v n="$calls" 'BEGIN {printf "%.1f", (t - b) / n}')
done
ratio() { awk -v a="$1" -v b="$2" 'BEGIN {printf "%.2f", a / b}'; }
ik_ratio=$(ratio "${per[inverse_f32]}" "${per[inverse_textbook]}")
fk_ratio=$(ratio "${per[forward_f32]}" "${per[forward_textbook]}")

echo "x86 instructions per call (callgrind; $points points x $PASSES passes; call and loop included):"
printf '  %-8s %14s %14s %8s %6s\n' call "guarded f32" "textbook f64" ratio goal
printf '  %-8s %14s %14s %8s %6s\n' inverse "${per[inverse_f32]}" "${per[inverse_textbook]}" "$ik_ratio" "<= 1.0"
printf '  %-8s %14s %14s %8s %6s\n' forward "${per[forward_f32]}" "${per[forward_textbook]}" "$fk_ratio" "<= 1.0"

mkdir -p target
printf '{"points":%d,"calls":[%s],"inverse_ratio":%s,"forward_ratio":%s,"goal":1.0}\n' "$points" \
    "$(for c in inverse_f32 inverse_textbook forward_f32 forward_textbook; do
        printf '{"call":"%s","instructions_per_call":%s}' "$c" "${per[$c]}"
    done | sed 's/}{/},{/g')" "$ik_ratio" "$fk_ratio" > target/host-cost.json
echo "host-cost: wrote target/host-cost.json"
