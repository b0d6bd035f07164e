#!/usr/bin/python3
"""png_margin.py PNG [PX] - the text and marks of a figure stay off its edges:
prints how many dark pixels (any channel of RGB below 200) lie within PX
pixels (default 6) of each edge, as "left right top bottom", for check_plot.sh.

A PNG reader of our own in a few lines (zlib and the five row filters of
the PNG specification, W3C PNG 2nd ed. section 9; 8-bit RGB or RGBA, not
interlaced, what gnuplot's pngcairo writes), so the test needs nothing that
Debian's python3 does not have.
"""
import struct
import sys
import zlib


def read_png(path):
    d = open(path, "rb").read()
    if d[:8] != b"\x89PNG\r\n\x1a\n":
        sys.exit("png_margin: %s is not a PNG" % path)
    pos, idat = 8, b""
    while pos < len(d):
        n, kind = struct.unpack(">I4s", d[pos:pos + 8])
        body = d[pos + 8:pos + 8 + n]
        if kind == b"IHDR":
            w, h, depth, ctype, _, _, interlace = struct.unpack(">IIBBBBB", body)
        elif kind == b"IDAT":
            idat += body
        pos += 12 + n
    if depth != 8 or interlace != 0 or ctype not in (2, 6):
        sys.exit("png_margin: %s: only 8-bit RGB/RGBA, not interlaced" % path)
    bpp = 3 if ctype == 2 else 4
    raw, stride = zlib.decompress(idat), w * bpp
    rows, prev = [], bytearray(stride)
    for y in range(h):
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
                line[i] = (line[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
        rows.append(line)
        prev = line
    return w, h, bpp, rows


def main():
    w, h, bpp, rows = read_png(sys.argv[1])
    px = int(sys.argv[2]) if len(sys.argv) > 2 else 6

    def dark(x, y):
        return min(rows[y][x * bpp:x * bpp + 3]) < 200

    left = sum(dark(x, y) for y in range(h) for x in range(px))
    right = sum(dark(x, y) for y in range(h) for x in range(w - px, w))
    top = sum(dark(x, y) for y in range(px) for x in range(w))
    bottom = sum(dark(x, y) for y in range(h - px, h) for x in range(w))
    print(left, right, top, bottom)


main()
