#!/usr/bin/env bash
# Link-time panic-freedom check (issue 10): builds tests/no_panic in release mode. Every
# wrapper there is `#[no_panic]`: if the optimised code of a wrapped library function can
# still reach a panic, the link fails with "ERROR[no-panic]: detected panic in function
# `<wrapper>`" and this script exits non-zero. Functions that cannot be proven are listed
# in tests/no_panic/src/main.rs with the reason.
#
# Host only, release only (optimisations and LTO remove the panic paths that are
# provably dead; a debug build keeps them all), unwinding panics (the default on the
# host; the crate's own profile sets it explicitly).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --manifest-path tests/no_panic/Cargo.toml
# run it once: each wrapper is called with opaque inputs
cargo run --release --quiet --manifest-path tests/no_panic/Cargo.toml >/dev/null
checked=$(grep -c '^#\[no_panic\]' tests/no_panic/src/main.rs)
echo "no-panic: ${checked} wrapped functions proven free of reachable panics"
