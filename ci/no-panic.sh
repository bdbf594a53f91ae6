#!/usr/bin/env bash
# The no-panic proof: builds ci/no-panic (deltakin with the `no-panic`
# feature, which puts #[no_panic] on the public hot paths) as a host release
# binary with fat LTO and one codegen unit. The link fails, naming the
# function, if the compiler cannot prove a marked function panic-free.
set -euo pipefail
cd "$(dirname "$0")/no-panic"
cargo build --release --quiet
./target/release/deltakin-no-panic
