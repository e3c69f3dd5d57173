#!/usr/bin/env python3
"""Where the instructions of a function go: a flat profile from a QEMU instruction trace.

Usage:
    qemu-system-arm <machine args> -semihosting-config enable=on,target=native \\
        -icount shift=0 -accel tcg,one-insn-per-tb=on -d exec,nochain -D /dev/stderr \\
        -kernel FW.elf \\
        2>&1 >/dev/null | profile.py FW.elf WINDOW CALLS [TOP [SKIP]]

(qemu-system-riscv32 for RISC-V; QEMU before 8.1 takes `-singlestep` instead of
`-accel tcg,one-insn-per-tb=on`.) With one instruction per translation block and
`-d exec,nochain` QEMU logs every guest instruction it executes
("Trace ...: [flags/PC/...]"). This script maps each PC to the function symbol that holds
it (from the ELF symbol table, no binutils needed) and counts instructions while the
program is inside WINDOW: from an instruction in a function whose name is WINDOW
(e.g. `lib_process_drone`, the firmware's never-inlined wrapper around `Drone::process`)
until an instruction in any other firmware function (the caller). Everything the window
calls (library, maths, soft-float, memcpy) is counted under its own function. Counts are
divided by CALLS to give instructions per call. SKIP (default 0) leaves out the first
SKIP calls of the window function (a warm-up); the CALLS calls after them are counted,
later ones are not (the linker may fold wrappers with the same code into one, which the
firmware then calls more often). Names are printed mangled; pipe through `c++filt` to
read them.
"""

import bisect
import collections
import re
import sys

import elf_sizes
from elf_sizes import symbol_table

TRACE = re.compile(r"Trace \d+: \S+ \[[0-9a-f]+/([0-9a-f]+)/")


def functions(path):
    """Sorted (start, size, name) of the function symbols of a 32-bit ELF file (the
    Thumb bit of ARM function addresses cleared; RISC-V addresses are even already)."""
    return sorted((value & ~1, size, name)
                  for name, value, size, info, _shndx in symbol_table(path)
                  if info & 0xF == 2 and size)  # STT_FUNC


# Groups for the summary, first match wins (patterns on mangled names).
GROUPS = [
    ("memory copies (memcpy / memset)", r"memcpy|memset|memclr|memmove"),
    ("f64 soft-float",
     r"__aeabi_d|__aeabi_f2d|__aeabi_[ul]+2d|__aeabi_i2d|df3|^fmin$|^fmax$|4fmin|4fmax"),
    ("maths (libm / micromath, compiler-builtins fminf / fmaxf)",
     r"4libm|9micromath|^fminf$|^fmaxf$"),
    ("f32 soft-float and its integer helpers (cores without an FPU)",
     r"__aeabi_f|sf3|sf2|sfsi|sisf|__aeabi_lmul|__clzsi2|__muldi3"),
    ("Kalman filter", r"6filter6kalman"),
    ("height model (atmosphere, geopotential, sounding, humidity)",
     r"10atmosphere|12geopotential|8sounding|8humidity|5model"),
    ("trackers (phases, totals, hike, ground reference)", r"6flight|5track|6ground"),
    ("time base (integer microseconds)", r"8isohypse4time"),
    ("use type's body (uses::*, process inlined into the wrapper)", r"lib_process|4uses"),
    ("other", r""),
]


def group_of(name):
    return elf_sizes.group_of(name, GROUPS)


def main(argv):
    if len(argv) < 3:
        print(__doc__)
        return 2
    elf, window, calls = argv[0], argv[1], int(argv[2])
    top = int(argv[3]) if len(argv) > 3 else 40
    skip = int(argv[4]) if len(argv) > 4 else 0
    entries = 0
    funcs = functions(elf)
    starts = [f[0] for f in funcs]
    counts = collections.Counter()
    inside = False
    # Match the mangled path component (length prefix + name), so that the window
    # `lib_process_drone` does not also take in `lib_process_drone_reuse`.
    component = f"{len(window)}{window}"
    names = {}  # program counter -> function name, filled as the trace goes
    for line in sys.stdin:
        m = TRACE.search(line)
        if not m:
            continue
        pc = int(m.group(1), 16)
        name = names.get(pc)
        if name is None:
            i = bisect.bisect_right(starts, pc) - 1
            name = funcs[i][2] if i >= 0 and pc < funcs[i][0] + funcs[i][1] else "?"
            names[pc] = name
        if component in name:
            if not inside:
                entries += 1
                if entries > skip + calls:
                    break
            inside = True
        elif "isohypse_firmware" in name:
            inside = False
        if inside and skip < entries <= skip + calls:
            counts[name] += 1
    # The rest of the trace is not needed: read it without parsing, so that QEMU runs to
    # its end.
    while sys.stdin.buffer.read(1 << 20):
        pass
    total = sum(counts.values())
    print(f"instructions inside {window}: {total} in {calls} calls = {total / calls:.1f} per call")
    groups = collections.Counter()
    for name, c in counts.items():
        groups[group_of(name)] += c
    print("| where | instructions per call | share |")
    print("| --- | ---: | ---: |")
    for label, _ in GROUPS:
        c = groups.get(label, 0)
        if c:
            print(f"| {label} | {c / calls:.1f} | {100.0 * c / total:.1f} % |")
    print()
    print("| function | instructions per call | share |")
    print("| --- | ---: | ---: |")
    for name, c in counts.most_common(top):
        print(f"| {name} | {c / calls:.1f} | {100.0 * c / total:.1f} % |")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
