#!/usr/bin/env python3
"""Fails (exit 1) unless every PNG given exists, decodes, and is not blank.

Blank means: fewer than 16 distinct colours, or one colour covering more than 97% of the
pixels. Standard library only (zlib); handles 8-bit RGB/RGBA, non-interlaced PNGs.
"""
import struct
import sys
import zlib


def decode(path):
    with open(path, "rb") as f:
        data = f.read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        raise ValueError("not a PNG")
    pos, idat, width, height, ctype = 8, b"", 0, 0, 0
    while pos < len(data):
        (length,) = struct.unpack(">I", data[pos:pos + 4])
        kind = data[pos + 4:pos + 8]
        body = data[pos + 8:pos + 8 + length]
        if kind == b"IHDR":
            width, height, depth, ctype, _, _, interlace = struct.unpack(">IIBBBBB", body)
            if depth != 8 or ctype not in (2, 6) or interlace:
                raise ValueError(f"unsupported PNG (depth {depth}, colour type {ctype}, interlace {interlace})")
        elif kind == b"IDAT":
            idat += body
        pos += 12 + length
    bpp = 4 if ctype == 6 else 3
    raw = zlib.decompress(idat)
    stride = width * bpp
    rows, prev = [], bytearray(stride)
    for y in range(height):
        ft = raw[y * (stride + 1)]
        line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):
            a = line[i - bpp] if i >= bpp else 0
            b = prev[i]
            c = prev[i - bpp] if i >= bpp else 0
            if ft == 1:
                line[i] = (line[i] + a) & 255
            elif ft == 2:
                line[i] = (line[i] + b) & 255
            elif ft == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif ft == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                line[i] = (line[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
        rows.append(bytes(line))
        prev = line
    return width, height, bpp, rows


def check(path):
    width, height, bpp, rows = decode(path)
    if width < 200 or height < 200:
        return f"{path}: only {width}x{height} pixels"
    counts = {}
    for row in rows[::4]:
        for x in range(0, width * bpp, 4 * bpp):
            px = row[x:x + 3]
            counts[px] = counts.get(px, 0) + 1
    total = sum(counts.values())
    top = max(counts.values())
    if len(counts) < 16 or top > 0.97 * total:
        return f"{path}: looks blank ({len(counts)} colours, the commonest covers {100 * top / total:.1f}%)"
    print(f"ok: {path}: {width}x{height}, {len(counts)} colours, commonest {100 * top / total:.1f}%")
    return None


def main(paths):
    if not paths:
        print("usage: check_png.py FILE.png ...", file=sys.stderr)
        return 2
    bad = []
    for p in paths:
        try:
            err = check(p)
        except (OSError, ValueError, zlib.error) as e:
            err = f"{p}: {e}"
        if err:
            bad.append(err)
    for b in bad:
        print(f"FAIL: {b}", file=sys.stderr)
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
