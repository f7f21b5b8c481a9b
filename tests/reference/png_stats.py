#!/usr/bin/python3
"""Prints 'WIDTH HEIGHT DISTINCT_COLOURS NON_BACKGROUND_FRACTION' of an 8-bit RGB or RGBA PNG.

Decoded by hand from the PNG specification (W3C PNG 2nd edition: IHDR, IDAT zlib stream, the five
scanline filters with the Paeth predictor, section 9), so the browser test needs no imaging module.
The background is the most common colour.
"""
import collections
import struct
import sys
import zlib


def decode(path):
    data = open(path, "rb").read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        raise SystemExit(f"{path}: not a PNG")
    pos, idat, header = 8, b"", None
    while pos < len(data):
        length, kind = struct.unpack(">I4s", data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + length]
        if kind == b"IHDR":
            header = struct.unpack(">IIBBBBB", body)
        elif kind == b"IDAT":
            idat += body
        pos += 12 + length
    width, height, depth, colour, _, _, interlace = header
    if depth != 8 or colour not in (2, 6) or interlace != 0:
        raise SystemExit(f"{path}: depth {depth} colour type {colour} interlace {interlace} not handled")
    bpp = 3 if colour == 2 else 4
    raw = zlib.decompress(idat)
    stride = width * bpp
    rows, prev, pos = [], bytearray(stride), 0
    for _ in range(height):
        ftype = raw[pos]
        line = bytearray(raw[pos + 1:pos + 1 + stride])
        pos += 1 + stride
        for i in range(stride):
            a = line[i - bpp] if i >= bpp else 0
            b = prev[i]
            c = prev[i - bpp] if i >= bpp else 0
            if ftype == 1:
                line[i] = (line[i] + a) & 255
            elif ftype == 2:
                line[i] = (line[i] + b) & 255
            elif ftype == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif ftype == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                pred = a if pa <= pb and pa <= pc else (b if pb <= pc else c)
                line[i] = (line[i] + pred) & 255
        rows.append(bytes(line))
        prev = line
    return width, height, bpp, rows


def main():
    width, height, bpp, rows = decode(sys.argv[1])
    counts = collections.Counter()
    for row in rows:
        for x in range(0, width * bpp, bpp):
            counts[row[x:x + 3]] += 1
    background = counts.most_common(1)[0][1]
    total = width * height
    print(width, height, len(counts), (total - background) / total)


if __name__ == "__main__":
    main()
