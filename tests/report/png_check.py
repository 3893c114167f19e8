#!/usr/bin/env python3
"""Checks that a PNG screenshot is not blank: decodes it with zlib and struct only (PNG spec,
W3C/ISO 15948: IHDR, IDAT, filters 0-4) and prints figures about its pixels.

usage: png_check.py FILE.png [HEX_COLOUR ...]
Exit 0 when the image has enough distinct colours and variance and every named colour covers
some pixels (within a small tolerance), 1 otherwise."""
import struct
import sys
import zlib


def read_png(path):
    data = open(path, "rb").read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        raise ValueError("not a PNG file")
    pos, idat, width = 8, b"", None
    while pos < len(data):
        (length,) = struct.unpack(">I", data[pos:pos + 4])
        kind = data[pos + 4:pos + 8]
        body = data[pos + 8:pos + 8 + length]
        pos += 12 + length
        if kind == b"IHDR":
            width, height, depth, ctype, _, _, interlace = struct.unpack(">IIBBBBB", body)
            if depth != 8 or ctype not in (2, 6) or interlace != 0:
                raise ValueError("unsupported PNG: depth %d colour type %d interlace %d" % (depth, ctype, interlace))
            bpp = 3 if ctype == 2 else 4
        elif kind == b"IDAT":
            idat += body
        elif kind == b"IEND":
            break
    raw = zlib.decompress(idat)
    stride = width * bpp
    rows, prev = [], bytearray(stride)
    for y in range(height):
        f = raw[y * (stride + 1)]
        line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):
            a = line[i - bpp] if i >= bpp else 0
            b = prev[i]
            c = prev[i - bpp] if i >= bpp else 0
            if f == 1:
                line[i] = (line[i] + a) & 255
            elif f == 2:
                line[i] = (line[i] + b) & 255
            elif f == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif f == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                line[i] = (line[i] + (a if pa <= pb and pa <= pc else (b if pb <= pc else c))) & 255
        rows.append(bytes(line))
        prev = line
    return width, height, bpp, rows


def main():
    path, wanted = sys.argv[1], sys.argv[2:]
    w, h, bpp, rows = read_png(path)
    counts = {}
    total = s = s2 = 0
    for r in rows:
        for i in range(0, len(r), bpp * 2):  # every other pixel is plenty
            px = (r[i], r[i + 1], r[i + 2])
            counts[px] = counts.get(px, 0) + 1
            lum = 0.299 * px[0] + 0.587 * px[1] + 0.114 * px[2]
            total += 1
            s += lum
            s2 += lum * lum
    mean = s / total
    var = s2 / total - mean * mean
    common = sum(1 for c in counts.values() if c >= 20)
    print("png: %dx%d, %d distinct colours (%d with >= 20 samples), luminance mean %.1f variance %.1f"
          % (w, h, len(counts), common, mean, var))
    ok = common >= 12 and var >= 100.0
    for hexc in wanted:
        t = tuple(int(hexc.lstrip("#")[k:k + 2], 16) for k in (0, 2, 4))
        n = sum(c for px, c in counts.items() if max(abs(px[k] - t[k]) for k in range(3)) <= 12)
        print("png: colour %s covers %d samples" % (hexc, n))
        ok = ok and n >= 50
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
