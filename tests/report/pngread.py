"""A minimal PNG reader for the report test (8-bit RGB or RGBA, non-interlaced: what Chromium's
screenshots are), after the PNG specification (ISO/IEC 15948, filters in section 9)."""

import struct
import zlib

import numpy as np


def read_png(path):
    data = open(path, "rb").read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        raise ValueError(f"{path}: not a PNG file")
    pos = 8
    idat = b""
    width = height = None
    channels = 0
    while pos < len(data):
        (length,) = struct.unpack(">I", data[pos:pos + 4])
        kind = data[pos + 4:pos + 8]
        body = data[pos + 8:pos + 8 + length]
        pos += 12 + length
        if kind == b"IHDR":
            width, height, depth, colour, _, _, interlace = struct.unpack(">IIBBBBB", body)
            if depth != 8 or colour not in (2, 6) or interlace != 0:
                raise ValueError(f"{path}: unsupported PNG (depth {depth}, colour type {colour})")
            channels = 3 if colour == 2 else 4
        elif kind == b"IDAT":
            idat += body
        elif kind == b"IEND":
            break
    raw = zlib.decompress(idat)
    stride = width * channels
    out = bytearray(height * stride)
    prev = bytearray(stride)
    c = channels
    for y in range(height):
        f = raw[y * (stride + 1)]
        cur = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        if f == 1:  # Sub
            for x in range(c, stride):
                cur[x] = (cur[x] + cur[x - c]) & 255
        elif f == 2:  # Up
            cur = bytearray(((np.frombuffer(bytes(cur), np.uint8).astype(np.uint16)
                              + np.frombuffer(bytes(prev), np.uint8)) & 255).astype(np.uint8))
        elif f == 3:  # Average
            for x in range(stride):
                left = cur[x - c] if x >= c else 0
                cur[x] = (cur[x] + ((left + prev[x]) >> 1)) & 255
        elif f == 4:  # Paeth
            for x in range(stride):
                a = cur[x - c] if x >= c else 0
                b = prev[x]
                d = prev[x - c] if x >= c else 0
                pa = abs(b - d)
                pb = abs(a - d)
                pc = abs(a + b - 2 * d)
                pred = a if (pa <= pb and pa <= pc) else (b if pb <= pc else d)
                cur[x] = (cur[x] + pred) & 255
        elif f != 0:
            raise ValueError(f"{path}: bad filter {f} on row {y}")
        out[y * stride:(y + 1) * stride] = cur
        prev = cur
    img = np.frombuffer(bytes(out), dtype=np.uint8).reshape(height, width, channels)
    return img[:, :, :3].copy()
