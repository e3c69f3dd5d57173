#!/usr/bin/env python3
"""Flash and RAM of firmware ELF files, from their section headers (no binutils needed).

Usage: elf_sizes.py LABEL=FULL.elf:BASELINE.elf ...

For each pair it prints the sections of both builds and the difference, which is the
library's share of the firmware: the full build calls the library, the baseline build is
the same firmware with every library call left out (cargo feature `baseline-only`).

flash = every allocated section that is stored in flash: .vector_table, .text, .rodata,
        and the initial values of .data;
RAM   = .data + .bss + .uninit (statics; the stack is not counted).
"""

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


def totals(secs):
    flash = sum(v for k, v in secs.items() if k in FLASH_SECTIONS)
    ram = sum(v for k, v in secs.items() if k in RAM_SECTIONS)
    return flash, ram


def main(argv):
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
        rows.append((label, ff - bf, fr - br, ff, fr))
    print("library's share of the firmware (ELF with library calls minus ELF without)")
    print("| build | library flash (bytes) | library RAM (bytes) | whole firmware flash | whole firmware RAM |")
    print("| --- | ---: | ---: | ---: | ---: |")
    for label, f, r, ff, fr in rows:
        print(f"| {label} | {f} | {r} | {ff} | {fr} |")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
