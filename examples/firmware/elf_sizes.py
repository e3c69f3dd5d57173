#!/usr/bin/env python3
"""Flash and RAM of firmware ELF files, from their section headers (no binutils needed).

Usage: elf_sizes.py [--symbols] LABEL=FULL.elf:BASELINE.elf ...

For each pair it prints the sections of both builds and the difference, which is the
library's share of the firmware: the full build calls the library, the baseline build is
the same firmware with every library call left out (cargo feature `baseline-only`; for
the flash probes, `probe-empty`).

flash = every allocated section that is stored in flash: .vector_table, .text, .rodata,
        and the initial values of .data;
RAM   = .data + .bss + .uninit (statics; the stack is not counted).

With --symbols it also splits the difference by where the symbols come from (from the
ELF symbol table; names matched on their mangled form): the library (`isohypse::` and the
firmware's never-inlined `lib_process` wrappers around the use types' `process`), the maths
crates, the compiler's soft-float routines, core's formatting, and the firmware itself
(harness code that the baseline build does not have, e.g. the loop that checks the
outputs against the host's).
"""

import re
import struct
import sys

SHF_ALLOC = 0x2
SHT_NOBITS = 8
RAM_SECTIONS = {".data", ".bss", ".uninit"}
FLASH_SECTIONS = {".vector_table", ".text", ".rodata", ".data"}


def sections(path):
    """{name: size} of the allocated sections of a 32-bit little-endian ELF file."""
    with open(path, "rb") as f:
        data = f.read()
    if data[:4] != b"\x7fELF" or data[4] != 1 or data[5] != 1:
        raise SystemExit(f"{path}: not a 32-bit little-endian ELF file")
    shoff, = struct.unpack_from("<I", data, 0x20)
    shentsize, shnum, shstrndx = struct.unpack_from("<HHH", data, 0x2E)
    headers = []
    for i in range(shnum):
        name, _type, flags, _addr, _off, size = struct.unpack_from(
            "<IIIIII", data, shoff + i * shentsize)
        _n, _t, _f, _a, stroff, _s = struct.unpack_from(
            "<IIIIII", data, shoff + shstrndx * shentsize)
        headers.append((name, flags, size, stroff))
    out = {}
    for name_off, flags, size, stroff in headers:
        if not flags & SHF_ALLOC:
            continue
        start = stroff + name_off
        name = data[start:data.index(b"\0", start)].decode()
        out[name] = out.get(name, 0) + size
    return out


def symbol_table(path):
    """(name, value, size, info, shndx) of every symbol of a 32-bit little-endian ELF
    file (also used by profile.py)."""
    with open(path, "rb") as f:
        data = f.read()
    shoff, = struct.unpack_from("<I", data, 0x20)
    shentsize, shnum, _ = struct.unpack_from("<HHH", data, 0x2E)
    secs = [struct.unpack_from("<IIIIIIIIII", data, shoff + i * shentsize)
            for i in range(shnum)]
    for sec in secs:
        if sec[1] != 2:  # SHT_SYMTAB
            continue
        strtab_off = secs[sec[6]][4]
        for j in range(sec[5] // 16):
            name, value, size, info, _other, shndx = struct.unpack_from(
                "<IIIBBH", data, sec[4] + j * 16)
            start = strtab_off + name
            n = data[start:data.index(b"\0", start)].decode(errors="replace")
            yield n, value, size, info, shndx


def symbols(path):
    """{mangled name: size} of the sized symbols of a 32-bit little-endian ELF file."""
    out = {}
    for n, _value, size, _info, shndx in symbol_table(path):
        if size == 0 or shndx == 0:
            continue
        out[n] = out.get(n, 0) + size
    return out


GROUPS = [
    ("library (isohypse)", r"8isohypse|lib_process"),
    ("maths (libm, micromath, compiler-builtins fmin / fmax)",
     r"4libm|9micromath|^fm(in|ax)f?$"),
    ("soft-float / memory routines (compiler_builtins)",
     r"compiler_builtins|^__(?!cortex_m_rt)"),
    ("core formatting", r"3fmt"),
    ("firmware harness and demo data", r""),
]


# Design notes: library code in flash, a drone's whole per-sample path, <= 8 KiB on
# thumbv7em-none-eabihf.
GOAL_FLASH_BYTES = 8192


def group_of(name, groups=None):
    """The first group (of `groups`, default GROUPS) whose pattern matches the mangled
    symbol name; the last group catches the rest (also used by profile.py)."""
    groups = GROUPS if groups is None else groups
    for label, pattern in groups:
        if re.search(pattern, name):
            return label
    return groups[-1][0]


def symbol_split(full_path, base_path):
    """Prints the symbol-size difference grouped by origin."""
    a, b = symbols(full_path), symbols(base_path)
    sums = {}
    for name in set(a) | set(b):
        d = a.get(name, 0) - b.get(name, 0)
        # demo data tables get new hashes per build: count them as harness
        sums[group_of(name)] = sums.get(group_of(name), 0) + d
    print("| where from | bytes (symbol sizes, with minus without) |")
    print("| --- | ---: |")
    for label, _ in GROUPS:
        print(f"| {label} | {sums.get(label, 0)} |")
    print(f"| total of sized symbols | {sum(sums.values())} |")
    print()


def totals(secs):
    flash = sum(v for k, v in secs.items() if k in FLASH_SECTIONS)
    ram = sum(v for k, v in secs.items() if k in RAM_SECTIONS)
    return flash, ram


def main(argv):
    split = "--symbols" in argv
    argv = [a for a in argv if a != "--symbols"]
    if not argv:
        print(__doc__)
        return 2
    rows = []
    for arg in argv:
        label, _, pair = arg.partition("=")
        full_path, _, base_path = pair.partition(":")
        full, base = sections(full_path), sections(base_path)
        names = [".vector_table", ".text", ".rodata", ".data", ".bss", ".uninit"]
        print(f"{label}: section sizes, bytes")
        print("| section | with library | without | library |")
        print("| --- | ---: | ---: | ---: |")
        for n in names:
            a, b = full.get(n, 0), base.get(n, 0)
            print(f"| {n} | {a} | {b} | {a - b} |")
        (ff, fr), (bf, br) = totals(full), totals(base)
        print(f"| flash | {ff} | {bf} | {ff - bf} |")
        print(f"| RAM (statics) | {fr} | {br} | {fr - br} |")
        print()
        if split:
            print(f"{label}: the difference by origin")
            symbol_split(full_path, base_path)
        rows.append((label, ff - bf, fr - br, ff, fr))
    print("library's share of the firmware (ELF with library calls minus ELF without)")
    print("| build | library flash (bytes) | library RAM (bytes) | whole firmware flash | whole firmware RAM |")
    print("| --- | ---: | ---: | ---: | ---: |")
    for label, f, r, ff, fr in rows:
        print(f"| {label} | {f} | {r} | {ff} | {fr} |")
    # the design notes' flash goal is stated for the Cortex-M4F build of the drone
    for label, f, _, _, _ in rows:
        if "flash probe: Drone alone" in label and "thumbv7em" in label:
            verdict = "met" if f <= GOAL_FLASH_BYTES else "not met"
            print(f"goal: library flash <= {GOAL_FLASH_BYTES} bytes (8 KiB) on the "
                  f"Cortex-M4F (design notes): {label}: {f} bytes, {verdict}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
