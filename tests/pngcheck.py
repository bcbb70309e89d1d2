"""A small PNG reader for screenshot checks (zlib and numpy only), and pixel measures.

Headless Chromium writes 8-bit, non-interlaced RGB or RGBA PNGs.  The reader follows the
PNG specification (W3C Recommendation, 2nd edition, 2003): chunks §5.3, IHDR §11.2.2,
the five scanline filter types §9.2 (None, Sub, Up, Average, Paeth).  Sub and Up are
decoded a whole scanline at a time with numpy; Average and Paeth depend on the byte
just decoded and are decoded byte by byte.

Shared by the tests that open pages in a browser (tests/test_widgets.py; the design
review's tests have a private copy of the same reader).
"""

from __future__ import annotations

import struct
import zlib

import numpy as np

__all__ = ["png_pixels", "non_white_fraction", "distinct_colours", "colour_count"]

_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def _chunks(data: bytes):
    pos = len(_SIGNATURE)
    while pos + 8 <= len(data):
        (length,) = struct.unpack(">I", data[pos:pos + 4])
        kind = data[pos + 4:pos + 8]
        yield kind, data[pos + 8:pos + 8 + length]
        pos += 12 + length  # length, type, data, CRC
        if kind == b"IEND":
            return


def _unfilter_slow(kind: int, line: bytes, up: bytes, bpp: int) -> bytes:
    out = bytearray(line)
    for i in range(len(out)):
        a = out[i - bpp] if i >= bpp else 0
        b = up[i]
        if kind == 3:  # Average
            out[i] = (out[i] + ((a + b) >> 1)) & 0xFF
            continue
        c = up[i - bpp] if i >= bpp else 0  # Paeth
        p = a + b - c
        pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
        pred = a if (pa <= pb and pa <= pc) else (b if pb <= pc else c)
        out[i] = (out[i] + pred) & 0xFF
    return bytes(out)


def png_pixels(data: bytes) -> np.ndarray:
    """Decode a PNG to an ``(height, width, 3)`` uint8 RGB array (alpha dropped)."""
    if data[:8] != _SIGNATURE:
        raise ValueError("not a PNG file")
    header, idat = None, []
    for kind, body in _chunks(data):
        if kind == b"IHDR":
            header = struct.unpack(">IIBBBBB", body)
        elif kind == b"IDAT":
            idat.append(body)
    if header is None:
        raise ValueError("a PNG without IHDR")
    width, height, depth, colour, _compression, _filter, interlace = header
    if depth != 8 or interlace != 0 or colour not in (2, 6):
        raise ValueError(f"unsupported PNG: depth {depth}, colour type {colour}, "
                         f"interlace {interlace}")
    bpp = 3 if colour == 2 else 4
    stride = width * bpp
    raw = zlib.decompress(b"".join(idat))
    if len(raw) != height * (stride + 1):
        raise ValueError("PNG data of the wrong length")
    out = np.zeros((height, stride), dtype=np.uint8)
    prev = np.zeros(stride, dtype=np.uint8)
    for y in range(height):
        start = y * (stride + 1)
        kind = raw[start]
        line = np.frombuffer(raw, dtype=np.uint8, count=stride, offset=start + 1)
        if kind == 0:
            cur = line
        elif kind == 1:  # Sub: running sum of each channel along the row, modulo 256
            cur = (np.cumsum(line.reshape(-1, bpp), axis=0, dtype=np.int64) % 256)
            cur = cur.astype(np.uint8).ravel()
        elif kind == 2:  # Up
            cur = line + prev  # uint8 arithmetic wraps modulo 256
        elif kind in (3, 4):
            cur = np.frombuffer(_unfilter_slow(kind, line.tobytes(), prev.tobytes(), bpp),
                                dtype=np.uint8)
        else:
            raise ValueError(f"unknown PNG filter type {kind} on row {y}")
        out[y] = cur
        prev = out[y]
    return out.reshape(height, width, bpp)[..., :3]


def non_white_fraction(img: np.ndarray, threshold: int = 245) -> float:
    """Fraction of pixels with any channel below ``threshold``."""
    return float((img.min(axis=2) < threshold).mean())


def distinct_colours(img: np.ndarray, bits: int = 4) -> int:
    """Number of distinct colours after quantising each channel to ``bits`` bits."""
    q = (img >> (8 - bits)).astype(np.uint32).reshape(-1, 3)
    return int(np.unique((q[:, 0] << 16) | (q[:, 1] << 8) | q[:, 2]).size)


def colour_count(img: np.ndarray, hex_colour: str, tol: int = 6) -> int:
    """Pixels within ``tol`` (each channel) of a ``#RRGGBB`` colour."""
    h = hex_colour.lstrip("#")
    rgb = np.array([int(h[i:i + 2], 16) for i in (0, 2, 4)])
    return int((np.abs(img.astype(np.int16) - rgb).max(axis=2) <= tol).sum())
