#!/usr/bin/env bash
# Builds the deltakin core library without default features for the two
# Cortex-M targets deltakin serves:
#   thumbv7em-none-eabihf  (Cortex-M4F/M7, single-precision FPU)
#   thumbv6m-none-eabi     (Cortex-M0/M0+, no FPU, no hardware divide)
#
# Route 1: the active toolchain already has the target's `core` (or rustup
#          can add it): a plain `cargo build --target T`.
# Route 2: otherwise Debian's Rust compiler and library sources
#          (packages rustc-web, rust-web-src; lld for later linking) build
#          `core` for the target with `-Z build-std=core`. The packages are
#          installed only when /usr/bin/rustc is missing.
#
# Output goes to target/cross (route 2: target/cross/debian) so the host
# build in target/ stays valid.
#
# Prints the .text size of the built rlib for each target. That is only
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
DEBIAN_RUSTC=/usr/bin/rustc
ROUTE=${CROSS_ROUTE:-auto}
case "$ROUTE" in
    auto | rustup | debian) ;;
    *)
        echo "cross-build: CROSS_ROUTE must be auto, rustup or debian, not '$ROUTE'" >&2
        exit 1
        ;;
esac

# The minimum supported Rust version, from the workspace manifest.
msrv=$(sed -n 's/^rust-version *= *"\([0-9.]*\)".*/\1/p' Cargo.toml | head -n 1)
if [ -z "$msrv" ]; then
    echo "cross-build: no rust-version in Cargo.toml" >&2
    exit 1
fi

# version_at_least HAVE WANT: true when HAVE >= WANT (dotted numbers).
version_at_least() {
    [ "$(printf '%s\n%s\n' "$2" "$1" | sort -V | head -n 1)" = "$2" ]
}

# True when the active toolchain has a prebuilt `core` for target $1.
has_target_std() {
    local sysroot
    sysroot=$(rustc --print sysroot) || return 1
    compgen -G "$sysroot/lib/rustlib/$1/lib/libcore-*.rlib" > /dev/null
}

install_debian_rust() {
    echo "cross-build: installing Debian's rustc-web, rust-web-src and lld"
    local started=$SECONDS
    export DEBIAN_FRONTEND=noninteractive
    # Wait for another apt run instead of failing on its lock.
    apt-get -o DPkg::Lock::Timeout=600 update -qq
    apt-get -o DPkg::Lock::Timeout=600 install -y -qq --no-install-recommends \
        rustc-web rust-web-src lld > /dev/null
    echo "cross-build: apt took $((SECONDS - started)) s"
}

# The version of Debian's rustc, e.g. 1.96.0.
debian_rustc_version() {
    local v
    v=$("$DEBIAN_RUSTC" --version | awk '{print $2}')
    echo "${v%%+*}"
}

ensure_debian_rustc() {
    if [ ! -x "$DEBIAN_RUSTC" ]; then
        install_debian_rust
    fi
    local have
    have=$(debian_rustc_version)
    if ! version_at_least "$have" "$msrv"; then
        # Debian's plain `rustc` package is far older than rustc-web (which
        # bookworm updates through its security archive); try replacing it.
        echo "cross-build: $DEBIAN_RUSTC $have is older than rust-version $msrv"
        install_debian_rust
        have=$(debian_rustc_version)
    fi
    echo "cross-build: Debian rustc $have (crate rust-version $msrv)"
    if ! version_at_least "$have" "$msrv"; then
        echo "cross-build: $DEBIAN_RUSTC $have is older than rust-version $msrv" >&2
        exit 1
    fi
}

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

debian_ready=false
for target in "${TARGETS[@]}"; do
    echo "cross-build: $target"
    if [ "$ROUTE" != debian ] && ! has_target_std "$target" && command -v rustup > /dev/null; then
        # Offline machines refuse quickly; never let a hung download block CI.
        timeout 120 rustup target add "$target" > /dev/null 2>&1 || true
    fi
    if [ "$ROUTE" != debian ] && has_target_std "$target"; then
        echo "cross-build: $target with the active toolchain's prebuilt core"
        out="$TARGET_DIR"
        cargo build -p deltakin --lib --release --no-default-features --target "$target" --target-dir "$out"
    elif [ "$ROUTE" = rustup ]; then
        echo "cross-build: no prebuilt core for $target and CROSS_ROUTE=rustup" >&2
        exit 1
    else
        if [ "$debian_ready" = false ]; then
            ensure_debian_rustc
            debian_ready=true
        fi
        echo "cross-build: $target with $DEBIAN_RUSTC, building core from source"
        # A directory of its own: the two compilers would rebuild each other's output.
        out="$TARGET_DIR/debian"
        RUSTC="$DEBIAN_RUSTC" RUSTC_BOOTSTRAP=1 cargo build -p deltakin --lib --release --no-default-features \
            --target "$target" -Z build-std=core --target-dir "$out"
    fi
    print_text_size "$target" "$out"
done
echo "cross-build: all targets built"
