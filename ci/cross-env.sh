# Shared by the cross-compiling CI scripts (source it; it runs nothing on
# its own): picks how to build for a Cortex-M target on this machine and
# installs what is missing.
#
# Route 1 ("rustup"): the active toolchain already has the target's `core`
#          (or rustup can add it): a plain `cargo build --target T`.
# Route 2 ("debian"): otherwise Debian's Rust compiler and library sources
#          (packages rustc-web, rust-web-src) build `core` for the target
#          with `-Z build-std=core`. The packages are installed only when
#          /usr/bin/rustc is missing or older than the crate's rust-version.
#
# CROSS_ROUTE=debian forces route 2 (to check it on a machine that has
# route 1); CROSS_ROUTE=rustup refuses route 2; the default is auto.
#
# After `cross_select TARGET`:
#   CROSS_ROUTE_USED   rustup or debian
#   CROSS_ENV          array of VAR=value to run cargo under (`env "${CROSS_ENV[@]}" cargo ...`)
#   CROSS_FLAGS        array of extra cargo build flags
#   CROSS_DIR_SUFFIX   appended to a target dir: the two compilers would
#                      rebuild each other's output in a shared one
# `cross_linker TARGET` adds to CROSS_ENV the linker for a firmware link.
#
# Every message is prefixed with $CROSS_LOG (default "cross").

CROSS_REPO=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
CROSS_DEBIAN_RUSTC=/usr/bin/rustc
CROSS_LOG=${CROSS_LOG:-cross}
CROSS_ROUTE=${CROSS_ROUTE:-auto}
case "$CROSS_ROUTE" in
    auto | rustup | debian) ;;
    *)
        echo "$CROSS_LOG: CROSS_ROUTE must be auto, rustup or debian, not '$CROSS_ROUTE'" >&2
        exit 1
        ;;
esac

# The minimum supported Rust version, from the workspace manifest.
CROSS_MSRV=$(sed -n 's/^rust-version *= *"\([0-9.]*\)".*/\1/p' "$CROSS_REPO/Cargo.toml" | head -n 1)
if [ -z "$CROSS_MSRV" ]; then
    echo "$CROSS_LOG: no rust-version in Cargo.toml" >&2
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

# apt_install PACKAGE...: installs Debian packages, waiting for another apt
# run instead of failing on its lock.
apt_install() {
    echo "$CROSS_LOG: installing $*"
    local started=$SECONDS
    export DEBIAN_FRONTEND=noninteractive
    apt-get -o DPkg::Lock::Timeout=600 update -qq
    apt-get -o DPkg::Lock::Timeout=600 install -y -qq --no-install-recommends "$@" > /dev/null
    echo "$CROSS_LOG: apt took $((SECONDS - started)) s"
}

# need_command COMMAND PACKAGE: installs PACKAGE when COMMAND is missing.
need_command() {
    if ! command -v "$1" > /dev/null; then
        apt_install "$2"
    fi
}

# The version of Debian's rustc, e.g. 1.96.0.
debian_rustc_version() {
    local v
    v=$("$CROSS_DEBIAN_RUSTC" --version | awk '{print $2}')
    echo "${v%%+*}"
}

ensure_debian_rustc() {
    if [ ! -x "$CROSS_DEBIAN_RUSTC" ]; then
        apt_install rustc-web rust-web-src lld
    fi
    local have
    have=$(debian_rustc_version)
    if ! version_at_least "$have" "$CROSS_MSRV"; then
        # Debian's plain `rustc` package is far older than rustc-web (which
        # bookworm updates through its security archive); try replacing it.
        echo "$CROSS_LOG: $CROSS_DEBIAN_RUSTC $have is older than rust-version $CROSS_MSRV"
        apt_install rustc-web rust-web-src lld
        have=$(debian_rustc_version)
    fi
    echo "$CROSS_LOG: Debian rustc $have (crate rust-version $CROSS_MSRV)"
    if ! version_at_least "$have" "$CROSS_MSRV"; then
        echo "$CROSS_LOG: $CROSS_DEBIAN_RUSTC $have is older than rust-version $CROSS_MSRV" >&2
        exit 1
    fi
    # build-std needs the library sources.
    local src
    src=$("$CROSS_DEBIAN_RUSTC" --print sysroot)/lib/rustlib/src/rust/library/core
    if [ ! -d "$src" ]; then
        apt_install rust-web-src
    fi
}

cross_debian_ready=false

cross_select() {
    local target=$1
    if [ "$CROSS_ROUTE" != debian ] && ! has_target_std "$target" && command -v rustup > /dev/null; then
        # Offline machines refuse quickly; never let a hung download block CI.
        timeout 120 rustup target add "$target" > /dev/null 2>&1 || true
    fi
    if [ "$CROSS_ROUTE" != debian ] && has_target_std "$target"; then
        echo "$CROSS_LOG: $target with the active toolchain's prebuilt core"
        CROSS_ROUTE_USED=rustup
        CROSS_ENV=()
        CROSS_FLAGS=()
        CROSS_DIR_SUFFIX=""
    elif [ "$CROSS_ROUTE" = rustup ]; then
        echo "$CROSS_LOG: no prebuilt core for $target and CROSS_ROUTE=rustup" >&2
        exit 1
    else
        if [ "$cross_debian_ready" = false ]; then
            ensure_debian_rustc
            cross_debian_ready=true
        fi
        echo "$CROSS_LOG: $target with $CROSS_DEBIAN_RUSTC, building core from source"
        CROSS_ROUTE_USED=debian
        CROSS_ENV=(RUSTC="$CROSS_DEBIAN_RUSTC" RUSTC_BOOTSTRAP=1)
        CROSS_FLAGS=(-Z build-std=core)
        CROSS_DIR_SUFFIX=/debian
    fi
}

# cross_linker TARGET: a firmware link needs an LLD; the system's ld.lld,
# else the rustup toolchain's rust-lld, else Debian's lld package.
cross_linker() {
    local target=$1 linker
    if ! command -v ld.lld > /dev/null; then
        if [ "$CROSS_ROUTE_USED" = rustup ]; then
            linker=rust-lld
        else
            apt_install lld
        fi
    fi
    if [ -n "${linker:-}" ]; then
        local var
        var=CARGO_TARGET_$(echo "$target" | tr '[:lower:]-' '[:upper:]_')_LINKER
        CROSS_ENV+=("$var=$linker")
    fi
}
