#!/usr/bin/env bash
# Benchmark of the host replay tool on long logs: rows per second, peak memory
# (Maximum resident set size from /usr/bin/time -v), size of the SVG plot and of the
# summary. Prints a Markdown table (the one in README.md, "Long logs").
#
#   bash examples/bench_replay.sh              # 2 000 000 and 10 000 000 rows
#   bash examples/bench_replay.sh 500000       # other lengths
#
# The logs are generated (pressure only, 50 Hz, a slow swing of +-300 Pa with +-1.5 Pa
# of noise from a fixed seed) into target/bench-replay/, and for the first length a
# copy with a 301-digit time on its third line: every row after it is then refused
# (time not after the previous row), the case where each message would repeat the
# number. Each run writes its table, plot and summary there; the table is removed
# after the run. Rows per second are given by wall-clock time and by CPU time (user +
# system): on a machine shared with other work the wall-clock figure varies with the
# load; the CPU figure much less.
set -euo pipefail
cd "$(dirname "$0")/.."

lengths=("$@")
if [ ${#lengths[@]} -eq 0 ]; then
    lengths=(2000000 10000000)
fi
dir=target/bench-replay
mkdir -p "$dir"
cargo build --release --example replay >&2
tool=target/release/examples/replay

# generate LOG ROWS [ABSURD]: the log, with a 301-digit time on line 3 if ABSURD=1
generate() {
    awk -v rows="$2" -v absurd="${3:-0}" 'BEGIN {
        srand(1)
        print "time_s,pressure_pa"
        big = "1"; for (k = 0; k < 300; k++) big = big "0"
        for (i = 0; i < rows; i++) {
            if (absurd && i == 1) { print big ",95000"; continue }
            printf "%.2f,%.1f\n", i * 0.02, 95000 + 300 * sin(i / 50000) + (rand() - 0.5) * 3
        }
    }' > "$1"
}

# run LOG ROWS LABEL OPTIONS...: one table row
run() {
    local log=$1 rows=$2 label=$3
    shift 3
    local base=${log%.csv}
    /usr/bin/time -v "$tool" "$log" --quiet "$@" 2> "$base.time" || {
        cat "$base.time" >&2
        exit 1
    }
    local wall cpu rss svg summary
    wall=$(awk -F': ' '/Elapsed \(wall clock\)/ {
        n = split($2, p, ":"); s = 0
        for (k = 1; k <= n; k++) s = s * 60 + p[k]
        print s }' "$base.time")
    cpu=$(awk -F': ' '/(User|System) time \(seconds\)/ { s += $2 } END { print s }' "$base.time")
    rss=$(awk -F': ' '/Maximum resident set size/ { print $2 }' "$base.time")
    svg=$(stat -c %s "$base.svg")
    summary=$(stat -c %s "$base.summary.txt")
    rm -f "$base.out.csv"
    awk -v rows="$rows" -v wall="$wall" -v cpu="$cpu" -v rss="$rss" -v svg="$svg" \
        -v summary="$summary" -v label="$label" 'BEGIN {
        printf "| %s | %d | %.2f | %.2f | %.2f | %.1f | %.0f | %.1f |\n", label, rows,
            wall, rows / wall / 1e6, rows / cpu / 1e6, rss / 1024, svg / 1024, summary / 1024
    }'
}

echo "| log and options | rows | wall time (s) | M rows/s (wall) | M rows/s (CPU) | peak memory (MB) | SVG (KB) | summary (KB) |"
echo "| --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: |"
first=1
for rows in "${lengths[@]}"; do
    log=$dir/pressure-$rows.csv
    generate "$log" "$rows"
    run "$log" "$rows" "pressure only, --preset balloon" --preset balloon
    run "$log" "$rows" "pressure only, --preset drone" --preset drone
    run "$log" "$rows" "pressure only, --preset hike" --preset hike
    run "$log" "$rows" "pressure only, --filter off --model standard" \
        --preset hike --filter off --model standard
    if [ $first -eq 1 ]; then
        absurd=$dir/absurd-$rows.csv
        generate "$absurd" "$rows" 1
        run "$absurd" "$rows" "301-digit time on line 3, --preset balloon" --preset balloon
        rm -f "$absurd"
        first=0
    fi
    rm -f "$log"
done
