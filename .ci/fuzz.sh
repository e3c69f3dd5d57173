#!/usr/bin/env bash
# Fuzzing (issue 10): builds the cargo-fuzz targets in tests/fuzz and runs each for
# FUZZ_SECONDS (default 30) seconds, then prints the number of executions and whether
# any input crashed. Exit status: 0 if nothing crashed; 1 on a crash or a build failure.
#
#   .ci/fuzz.sh                  # all targets, 30 s each
#   FUZZ_SECONDS=600 .ci/fuzz.sh uses
#
# Needs a nightly toolchain (libFuzzer instrumentation) and cargo-fuzz; installs both if
# missing. The ONLY case in which it skips (exit 0 with a message) is a machine where
# rustup cannot download the nightly toolchain (offline CI runner).
# A crash leaves its input in tests/fuzz/artifacts/<target>/; replay it with
#   cargo +nightly fuzz run --fuzz-dir tests/fuzz <target> <artifact>
set -euo pipefail
cd "$(dirname "$0")/.."

seconds="${FUZZ_SECONDS:-30}"
# A fixed seed makes a CI run repeatable on the same machine (the time bound still
# decides how many inputs run); FUZZ_SEED=0 lets libFuzzer pick one.
seed="${FUZZ_SEED:-1}"
targets=("$@")
if [ ${#targets[@]} -eq 0 ]; then
    targets=(uses replay_csv)
fi

if ! cargo +nightly --version >/dev/null 2>&1; then
    echo "fuzz: installing the nightly toolchain (rustup toolchain install nightly --profile minimal)"
    if ! rustup toolchain install nightly --profile minimal; then
        echo "fuzz: SKIPPED: rustup cannot download the nightly toolchain (offline?)."
        echo "fuzz: cargo-fuzz needs nightly; nothing was fuzzed."
        exit 0
    fi
fi
if ! cargo +nightly fuzz --version >/dev/null 2>&1; then
    echo "fuzz: installing cargo-fuzz"
    cargo install cargo-fuzz --locked
fi
cargo +nightly fuzz --version

# Seeds for the CSV reader: the demo logs' first lines, each behind a first byte that
# picks the preset (balloon, drone, hike) and the filter / strict options.
seed_dir=tests/fuzz/corpus/replay_csv
mkdir -p "$seed_dir"
for f in examples/data/*.csv; do
    name=$(basename "$f" .csv)
    for choice in 00 01 02 04 08; do
        out="$seed_dir/seed-$name-$choice"
        { printf "\\x$choice"; head -c 3000 "$f" | sed '$d'; } > "$out"
    done
done

status=0
summary=()
for target in "${targets[@]}"; do
    corpus="tests/fuzz/corpus/$target"
    mkdir -p "$corpus"
    log=$(mktemp)
    echo "=== fuzz target '$target', ${seconds} s ==="
    if cargo +nightly fuzz run --fuzz-dir tests/fuzz "$target" "$corpus" -- \
        -max_total_time="$seconds" -seed="$seed" -print_final_stats=1 -rss_limit_mb=2048 >"$log" 2>&1; then
        result="no crash"
    else
        result="CRASHED (input in tests/fuzz/artifacts/$target/)"
        status=1
        grep -E "panicked at|^SUMMARY|Test unit written" "$log" || tail -n 40 "$log"
    fi
    execs=$(grep -oE "stat::number_of_executed_units: *[0-9]+" "$log" | grep -oE "[0-9]+$" | tail -n 1)
    cov=$(grep -oE "cov: [0-9]+" "$log" | tail -n 1)
    line="$target: ${execs:-?} executions in ${seconds} s, ${cov:-cov: ?}, $result"
    echo "$line"
    summary+=("$line")
    rm -f "$log"
done

echo
echo "=== fuzz summary ==="
printf '%s\n' "${summary[@]}"
exit "$status"
