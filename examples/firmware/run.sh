#!/usr/bin/env bash
# Builds the isohypse firmware for four cores (Cortex-M4F, Cortex-M0, Cortex-M33, RISC-V
# rv32imc), runs it on QEMU, and prints instruction counts (deterministic: QEMU -icount
# shift=0) and the library's flash / RAM.
#
#   examples/firmware/run.sh                     # libm backend, all four cores
#   BACKENDS="libm micromath" examples/firmware/run.sh
#   TARGETS=thumbv6m-none-eabi examples/firmware/run.sh
#
# Installs what it needs when missing: the Rust targets (rustup), qemu-system-arm and
# qemu-system-misc (apt-get; qemu-system-riscv32). Exits non-zero when a build fails, a
# run fails (results differ from the host's, or the timer calibration is off), a run
# times out, or two runs of the same firmware print different output.
# Profile: release, opt-level "s", lto = true, codegen-units = 1 (Cargo.toml); override
# the opt-level with CARGO_PROFILE_RELEASE_OPT_LEVEL=3.

set -euo pipefail

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
cd "$here"

TARGETS="${TARGETS:-thumbv7em-none-eabihf thumbv6m-none-eabi thumbv8m.main-none-eabihf riscv32imc-unknown-none-elf}"
BACKENDS="${BACKENDS:-libm}"
RUN_TIMEOUT="${RUN_TIMEOUT:-120}"
export CARGO_TARGET_DIR="${CARGO_TARGET_DIR:-$here/target}"
out="$CARGO_TARGET_DIR/firmware-run"
mkdir -p "$out"

say() { printf '\n== %s\n' "$*"; }

# ---- prerequisites -------------------------------------------------------------------
as_root() {
    if [ "$(id -u)" = 0 ]; then "$@"; elif command -v sudo >/dev/null; then sudo "$@"; else
        echo "error: need root to run: $*" >&2; return 1; fi
}
apt_install() {
    say "installing $* (apt-get)"
    as_root env DEBIAN_FRONTEND=noninteractive apt-get update -q
    as_root env DEBIAN_FRONTEND=noninteractive apt-get install -y -q "$@" || apt_install_backports "$@"
}
# A machine that holds a newer QEMU package from the release's backports (qemu-utils, for
# one) cannot take the release's own qemu-system-*: its Breaks forbid the older version.
# Then the same packages come from the backports suite of the archive the machine already
# uses, through a copy of its apt sources in a temporary folder (the machine's own apt
# configuration stays as it is).
apt_install_backports() {
    local codename dir uri keyring
    codename="$(. /etc/os-release && echo "${VERSION_CODENAME:-}")"
    [ -n "$codename" ] || return 1
    # the archive (URIs and Signed-By) of the stanza that holds the release itself
    read -r uri keyring < <(awk -v c="$codename" '
        /^URIs:/ {u = $2} /^Signed-By:/ {k = $2}
        /^Suites:/ {for (i = 2; i <= NF; i++) if ($i == c) hit = 1}
        /^$/ {if (hit && u) {print u, k; exit} hit = 0; u = ""; k = ""}
        END {if (hit && u) print u, k}' /etc/apt/sources.list.d/*.sources 2>/dev/null) || true
    if [ -z "${uri:-}" ]; then
        uri="$(sed -E 's/\[[^]]*\] //' /etc/apt/sources.list 2>/dev/null |
            awk -v c="$codename" '$1 == "deb" && $3 == c {print $2; exit}')"
    fi
    [ -n "${uri:-}" ] || return 1
    say "installing $* from $codename-backports (apt-get)"
    dir="$(mktemp -d)"
    chmod 755 "$dir" # apt downloads as its own user
    mkdir -p "$dir/parts" "$dir/lists/partial" "$dir/archives/partial"
    cp /etc/apt/sources.list.d/*.sources /etc/apt/sources.list.d/*.list "$dir/parts/" 2>/dev/null || true
    {
        echo "Types: deb"
        echo "URIs: $uri"
        echo "Suites: $codename-backports"
        echo "Components: main"
        if [ -n "${keyring:-}" ]; then echo "Signed-By: $keyring"; fi
    } >"$dir/parts/backports.sources"
    local opts=(-o "Dir::Etc::sourceparts=$dir/parts"
        -o "Dir::State::lists=$dir/lists" -o "Dir::Cache::archives=$dir/archives")
    as_root env DEBIAN_FRONTEND=noninteractive apt-get "${opts[@]}" update -q
    as_root env DEBIAN_FRONTEND=noninteractive apt-get "${opts[@]}" install -y -q \
        --no-install-recommends -t "$codename-backports" "$@"
    as_root rm -rf "$dir"
}
if command -v rustup >/dev/null; then
    installed="$(rustup target list --installed)"
    for t in $TARGETS; do
        grep -qx "$t" <<<"$installed" || rustup target add "$t"
    done
fi
case " $TARGETS " in *" thumb"*)
    command -v qemu-system-arm >/dev/null || apt_install qemu-system-arm ;;
esac
case " $TARGETS " in *" riscv"*)
    command -v qemu-system-riscv32 >/dev/null || apt_install qemu-system-misc ;;
esac
command -v python3 >/dev/null || apt_install python3
command -v timeout >/dev/null || apt_install coreutils

# ---- per-target settings ---------------------------------------------------------------
qemu_bin() {
    case "$1" in
        riscv32*) echo qemu-system-riscv32 ;;
        *) echo qemu-system-arm ;;
    esac
}
qemu_args() {
    case "$1" in
        thumbv7em-none-eabihf) echo "-machine mps2-an386 -cpu cortex-m4" ;;
        thumbv6m-none-eabi) echo "-machine microbit" ;;
        thumbv8m.main-none-eabihf) echo "-machine mps2-an505" ;;
        # -bios none: no SBI firmware; the boot ROM jumps to the ELF at 0x8000_0000
        riscv32imc-unknown-none-elf) echo "-machine virt -bios none" ;;
        *) echo "unsupported target $1" >&2; return 1 ;;
    esac
}
core_name() {
    case "$1" in
        thumbv7em-none-eabihf) echo "Cortex-M4F" ;;
        thumbv6m-none-eabi) echo "Cortex-M0" ;;
        thumbv8m.main-none-eabihf) echo "Cortex-M33" ;;
        riscv32imc-unknown-none-elf) echo "RISC-V (rv32imc)" ;;
    esac
}

# build TARGET NAME CARGO-FEATURE-ARGS...: builds the measuring firmware and copies the
# ELF to $out/NAME.elf
build() {
    local target="$1" name="$2"
    shift 2
    cargo build --quiet --release --target "$target" --bin isohypse-firmware "$@"
    cp "$CARGO_TARGET_DIR/$target/release/isohypse-firmware" "$out/$name.elf"
}

# The flash probes (src/bin/probe.rs, probe_balloon.rs, probe_walk.rs): one use type each.
PROBES="probe probe_balloon probe_walk"

# build_probes TARGET NAME SUFFIX BIN... -- CARGO-FEATURE-ARGS...: builds the probes BIN
# in one cargo call and copies each ELF to $out/NAME-BIN$SUFFIX.elf ("_" in BIN as "-":
# NAME-probe.elf, NAME-probe-balloon.elf, ...)
build_probes() {
    local target="$1" name="$2" suffix="$3" bins=() b
    shift 3
    while [ "$1" != -- ]; do bins+=("$1"); shift; done
    shift
    cargo build --quiet --release --target "$target" "${bins[@]/#/--bin=}" "$@"
    for b in "${bins[@]}"; do
        cp "$CARGO_TARGET_DIR/$target/release/$b" "$out/$name-${b//_/-}$suffix.elf"
    done
}

# run_elf TARGET ELF LOG: runs ELF on the target's QEMU board with the instruction count
# on, output to LOG; sets rc to QEMU's exit status (124 = timeout).
run_elf() {
    rc=0
    # shellcheck disable=SC2046
    timeout "$RUN_TIMEOUT" "$(qemu_bin "$1")" $(qemu_args "$1") \
        -nographic -monitor none -serial none \
        -semihosting-config enable=on,target=native \
        -icount shift=0 \
        -kernel "$2" >"$3" 2>&1 || rc=$?
}

features_for() { # backend -> cargo args
    if [ "$1" = micromath ]; then echo "--features micromath"; else echo "--features libm"; fi
}

status=0
for t in $TARGETS; do qemu_bin "$t"; done | sort -u | while read -r q; do "$q" --version | head -n 1; done
rustc --version

# ---- builds and runs -----------------------------------------------------------------
for backend in $BACKENDS; do
    for target in $TARGETS; do
        name="$target-$backend"
        say "build $name"
        # shellcheck disable=SC2046
        build "$target" "$name" --no-default-features --features breakdown \
            $(features_for "$backend")
        # shellcheck disable=SC2046
        build "$target" "$name-size" --no-default-features $(features_for "$backend")
        # shellcheck disable=SC2046
        build "$target" "$name-size-drone" --no-default-features --features drone-only \
            $(features_for "$backend")
        # shellcheck disable=SC2046
        build "$target" "$name-size-baseline" --no-default-features --features baseline-only \
            $(features_for "$backend")
        # shellcheck disable=SC2046,SC2086
        build_probes "$target" "$name" "" $PROBES -- --no-default-features \
            $(features_for "$backend")
        # shellcheck disable=SC2046,SC2086
        build_probes "$target" "$name" -empty $PROBES -- --no-default-features \
            --features probe-empty $(features_for "$backend")
        # shellcheck disable=SC2046
        build_probes "$target" "$name" -reuse probe -- --no-default-features \
            --features probe-reuse $(features_for "$backend")

        say "run $name on QEMU ($(core_name "$target"))"
        for attempt in 1 2; do
            run_elf "$target" "$out/$name.elf" "$out/$name.run$attempt.txt"
            if [ "$rc" != 0 ]; then break; fi
        done
        cat "$out/$name.run1.txt"
        if [ "$rc" != 0 ]; then
            echo "FAIL: $name exited with status $rc (124 = timeout)" >&2
            if [ "$attempt" != 1 ]; then cat "$out/$name.run$attempt.txt" >&2; fi
            status=1
        elif ! cmp -s "$out/$name.run1.txt" "$out/$name.run2.txt"; then
            echo "FAIL: $name printed different output on a second run (not deterministic)" >&2
            diff "$out/$name.run1.txt" "$out/$name.run2.txt" >&2 || true
            status=1
        else
            echo "(second run printed the same output, byte for byte)"
        fi

        # The drone-only build links the drone alone; it must still agree bit for bit
        # with the host.
        say "run $name-size-drone on QEMU (the drone alone)"
        run_elf "$target" "$out/$name-size-drone.elf" "$out/$name-drone.run.txt"
        grep -E "^check |^goal: state" "$out/$name-drone.run.txt" || true
        if [ "$rc" != 0 ]; then
            cat "$out/$name-drone.run.txt" >&2
            echo "FAIL: $name-size-drone exited with status $rc (124 = timeout)" >&2
            status=1
        fi

        # Each flash probe runs its eight samples through its use type and exits.
        for b in $PROBES; do
            probe="$name-${b//_/-}"
            run_elf "$target" "$out/$probe.elf" "$out/$probe.run.txt"
            if [ "$rc" != 0 ]; then
                cat "$out/$probe.run.txt" >&2
                echo "FAIL: $probe exited with status $rc (124 = timeout)" >&2
                status=1
            else
                echo "flash probe ($probe): ran, exit status 0"
            fi
        done
    done
done

# ---- summary tables -------------------------------------------------------------------
# counts TABLE from a run log: "name<TAB>count<TAB>ratio" per row of the counts table
counts() {
    awk -F' [|] ' '/^instructions per call/ {on = 1; next}
        on && /^\| / && !/^\| (row|---)/ {name = $1; sub(/^\| /, "", name); print name "\t" $2 "\t" $3; next}
        on && /^\| / {seen = 1; next}
        on && seen {exit}' "$1"
}

for backend in $BACKENDS; do
    say "instructions per call, backend $backend (QEMU -icount shift=0; ratio vs the row named in the firmware output)"
    header="| row |"; sep="| --- |"
    files=()
    for target in $TARGETS; do
        header="$header $(core_name "$target") instr. | ratio |"; sep="$sep ---: | ---: |"
        f="$out/$target-$backend.counts.tsv"
        counts "$out/$target-$backend.run1.txt" >"$f"
        files+=("$f")
    done
    echo "$header"; echo "$sep"
    first="${files[0]}"
    while IFS=$'\t' read -r name count ratio; do
        line="| $name | $count | $ratio |"
        for f in "${files[@]:1}"; do
            other="$(awk -F'\t' -v n="$name" '$1 == n {print $2 " | " $3}' "$f")"
            line="$line ${other:- | } |"
        done
        echo "$line"
    done <"$first"
done

# table NAME-REGEX from a run log: the rows of the table printed after the line that
# matches, as "name<TAB>col2<TAB>col3..." (header and separator rows left out)
table_rows() {
    awk -v start="$1" '$0 ~ start {on = 1; next}
        on && /^\| / && !/^\| (row|type|---)/ {line = $0; sub(/^\| /, "", line); sub(/ \|$/, "", line);
            gsub(/ \| /, "\t", line); print line; next}
        on && !/^\| / && seen {exit}
        on && /^\| / {seen = 1}' "$2"
}
# side_by_side START BACKEND COLUMN... : joins one table from every target's log by row name
side_by_side() {
    local start="$1" backend="$2"
    shift 2
    local files=() header="| row |" sep="| --- |"
    for target in $TARGETS; do
        for col in "$@"; do
            header="$header $(core_name "$target") $col |"; sep="$sep ---: |"
        done
        f="$out/$target-$backend.$(echo "$start" | tr -c 'a-z' '_').tsv"
        table_rows "$start" "$out/$target-$backend.run1.txt" >"$f"
        files+=("$f")
    done
    echo "$header"; echo "$sep"
    while IFS=$'\t' read -r name rest; do
        line="| $name | ${rest//$'\t'/ | } |"
        for f in "${files[@]:1}"; do
            other="$(awk -F'\t' -v n="$name" '$1 == n {sub(/^[^\t]*\t/, ""); gsub(/\t/, " | "); print}' "$f")"
            line="$line ${other:- } |"
        done
        echo "$line"
    done <"${files[0]}"
}

for backend in $BACKENDS; do
    say "per-sample rows, backend $backend: calls, instructions per call, ratio vs the baseline formula, instructions of forming the inputs (subtracted)"
    side_by_side "^per-sample instructions per call" "$backend" calls instr. ratio "inputs subtr."
    say "state sizes, backend $backend (size_of on the target, bytes)"
    side_by_side "^state sizes on" "$backend" bytes
done

say "flash and RAM: firmware with the library calls minus the same firmware without them"
pairs=()
for backend in $BACKENDS; do
    for target in $TARGETS; do
        pairs+=("$(core_name "$target") $target $backend, all rows (Drone + Balloon<64> + Walk, settings in flash)=$out/$target-$backend-size.elf:$out/$target-$backend-size-baseline.elf")
        pairs+=("$(core_name "$target") $target $backend, the drone only (Drone, two settings)=$out/$target-$backend-size-drone.elf:$out/$target-$backend-size-baseline.elf")
        pairs+=("$(core_name "$target") $target $backend, flash probe: Drone alone minus an empty loop (src/bin/probe.rs)=$out/$target-$backend-probe.elf:$out/$target-$backend-probe-empty.elf")
        pairs+=("$(core_name "$target") $target $backend, flash probe, Kalman gain reuse on (feature probe-reuse)=$out/$target-$backend-probe-reuse.elf:$out/$target-$backend-probe-empty.elf")
        pairs+=("$(core_name "$target") $target $backend, flash probe: Balloon<64> alone minus an empty loop (src/bin/probe_balloon.rs)=$out/$target-$backend-probe-balloon.elf:$out/$target-$backend-probe-balloon-empty.elf")
        pairs+=("$(core_name "$target") $target $backend, flash probe: Walk alone minus an empty loop (src/bin/probe_walk.rs)=$out/$target-$backend-probe-walk.elf:$out/$target-$backend-probe-walk-empty.elf")
    done
done
python3 "$here/elf_sizes.py" --symbols "${pairs[@]}"

# ---- optional profile: where the use types' instructions go --------------------------
# PROFILE=1: re-runs the firmware with QEMU's per-instruction trace and prints a flat
# profile of `Drone::process` and `Balloon::<64>::process` (profile.py): the drone from
# the drone-only build (the check's 200 calls after its 2 000-sample warm-up), the
# balloon from the full build (400 calls: the check and the measured row). QEMU writes
# a line per instruction: a few minutes per trace on the Cortex-M4F and M33, up to
# 17 minutes on the Cortex-M0 (PROFILE_TIMEOUT, default 2700 s, per trace).
# One guest instruction per translation block, so that QEMU logs each one: `-accel
# tcg,one-insn-per-tb=on` from QEMU 8.1 on, `-singlestep` before.
one_insn() {
    if "$1" --help | grep -q one-insn-per-tb; then echo "-accel tcg,one-insn-per-tb=on"; else echo "-singlestep"; fi
}
if [ "${PROFILE:-0}" = 1 ]; then
    for backend in $BACKENDS; do
        for target in $TARGETS; do
            for spec in "size-drone lib_process_drone 200 2000" "elf lib_process_balloon 400 0"; do
                read -r variant window calls skip <<<"$spec"
                elf="$out/$target-$backend.elf"
                [ "$variant" = elf ] || elf="$out/$target-$backend-$variant.elf"
                say "profile of $window ($(core_name "$target"), $backend)"
                # shellcheck disable=SC2046
                timeout "${PROFILE_TIMEOUT:-2700}" "$(qemu_bin "$target")" $(qemu_args "$target") \
                    -nographic -monitor none -serial none \
                    -semihosting-config enable=on,target=native \
                    -icount shift=0 $(one_insn "$(qemu_bin "$target")") -d exec,nochain -D /dev/stderr \
                    -kernel "$elf" 2>&1 >/dev/null |
                    python3 "$here/profile.py" "$elf" "$window" "$calls" 25 "$skip" |
                    { if command -v c++filt >/dev/null; then c++filt; else cat; fi; } |
                    sed -E 's/::h[0-9a-f]{16}//'
            done
        done
    done
fi

if [ "$status" != 0 ]; then
    say "FAILED (see messages above)"
else
    say "all runs passed"
fi
exit "$status"
