#!/usr/bin/env python3
"""Draws Spallcast's application icon (assets/icon/spallcast.png, 128x128 RGBA) with the standard
library only: an ink-blue rounded square with a pale spectrum trace whose peaks rise toward a
violet spall mark. Run from the repository root: python3 assets/icon/make_icon.py"""
import math
import struct
import zlib
from pathlib import Path

N = 128
INK = (0x12, 0x2C, 0x4F)
TRACE = (0xE8, 0xEE, 0xF4)
SPALL = (0x8E, 0x2C, 0xA8)


def inside_rounded(x, y, r=22):
    cx = min(max(x, r), N - 1 - r)
    cy = min(max(y, r), N - 1 - r)
    return (x - cx) ** 2 + (y - cy) ** 2 <= r * r


def trace_y(x):
    # A floor with three peaks growing to the right, like harmonics of a defect tone.
    base = 96.0
    y = base - 3.0 * math.sin(x * 0.9)
    for centre, height in ((34, 22), (62, 38), (90, 58)):
        y -= height * math.exp(-((x - centre) / 3.2) ** 2)
    return y


def pixel(x, y):
    if not inside_rounded(x, y):
        return (0, 0, 0, 0)
    if (x - 101) ** 2 + (y - 28) ** 2 <= 10 ** 2:
        return SPALL + (255,)
    if 14 <= x <= 114:
        # distance to the trace, sampled along x
        d = min(math.hypot(x - xs / 4.0, y - trace_y(xs / 4.0)) for xs in range(4 * x - 12, 4 * x + 13))
        if d <= 2.2:
            return TRACE + (255,)
    return INK + (255,)


def png(width, height, rows):
    raw = b"".join(b"\x00" + bytes(c for px in row for c in px) for row in rows)

    def chunk(kind, data):
        body = kind + data
        return struct.pack(">I", len(data)) + body + struct.pack(">I", zlib.crc32(body) & 0xFFFFFFFF)

    header = struct.pack(">IIBBBBB", width, height, 8, 6, 0, 0, 0)
    return b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", header) + chunk(b"IDAT", zlib.compress(raw, 9)) + chunk(b"IEND", b"")


if __name__ == "__main__":
    out = Path(__file__).with_name("spallcast.png")
    out.write_bytes(png(N, N, [[pixel(x, y) for x in range(N)] for y in range(N)]))
    print(f"wrote {out}")
