"""PNG files from pixels: the plots' writer.

A PNG file (W3C, *Portable Network Graphics (PNG) Specification*, 2nd ed., 2003, also
ISO/IEC 15948:2004) is the 8-byte signature and a list of chunks, each its length, type,
data and a CRC-32 of type and data (sec. 5). Here: IHDR (size, 8 bits per sample,
colour type 2 truecolour or 6 truecolour with alpha, sec. 11.2.2), pHYs (pixels per metre,
sec. 11.3.5.3), tEXt (keyword and Latin-1 text, sec. 11.3.4.3), one IDAT (the zlib stream
of the filtered rows, sec. 10) and IEND.

Every row is filtered with the "Up" filter (type 2, sec. 9.2: each byte less the byte
above it, modulo 256; the row above the first is zeros), computed for the whole image at
once. Plots are mostly flat colour, which "Up" turns into long runs of zeros, so one
filter for every row compresses them about as well as choosing a filter per row (which
is what makes a general encoder slow): the demo's overview, 1650 x 1200 pixels, is
written in about half the time Pillow takes at the same zlib level, in a file a tenth
smaller (benchmarks/bench_outputs.py). An image whose alpha is 255 everywhere is written
without its alpha channel (the plots are opaque).
"""
from __future__ import annotations

import struct
import zlib

import numpy as np

SIGNATURE = b"\x89PNG\r\n\x1a\n"
#: filter type "Up" (PNG sec. 9.2)
UP = 2
#: zlib level: 3 is about as fast as 1 for these images and a little smaller
LEVEL = 3
INCH = 0.0254  # [m]


def png_bytes(pixels: np.ndarray, dpi: float | None = None,
              text: dict[str, str] | None = None, level: int = LEVEL) -> bytes:
    """The PNG file of ``pixels`` (height x width x 3 or 4, uint8, RGB or RGBA, rows from
    the top), with its resolution ``dpi`` [pixels per inch] and ``text`` (keyword: text,
    Latin-1) when given."""
    pixels = np.asarray(pixels)
    if pixels.dtype != np.uint8 or pixels.ndim != 3 or pixels.shape[2] not in (3, 4):
        raise ValueError(f"pixels must be height x width x 3 or 4 of uint8, not "
                         f"{pixels.shape} of {pixels.dtype}")
    height, width, channels = pixels.shape
    if height == 0 or width == 0:
        raise ValueError("an image needs at least one pixel")
    if channels == 4 and int(pixels[:, :, 3].min()) == 255:
        pixels, channels = pixels[:, :, :3], 3  # opaque: the alpha channel says nothing
    rows = np.ascontiguousarray(pixels).reshape(height, width * channels)
    filtered = np.empty((height, width * channels + 1), dtype=np.uint8)
    filtered[:, 0] = UP
    filtered[0, 1:] = rows[0]
    np.subtract(rows[1:], rows[:-1], out=filtered[1:, 1:])  # uint8: modulo 256
    parts = [SIGNATURE,
             _chunk(b"IHDR", struct.pack(">IIBBBBB", width, height, 8,
                                         6 if channels == 4 else 2, 0, 0, 0))]
    if dpi is not None:
        per_metre = round(dpi / INCH)
        parts.append(_chunk(b"pHYs", struct.pack(">IIB", per_metre, per_metre, 1)))
    for key, value in (text or {}).items():
        parts.append(_chunk(b"tEXt", key.encode("latin-1") + b"\0" + value.encode("latin-1")))
    parts.append(_chunk(b"IDAT", zlib.compress(filtered.data, level)))
    parts.append(_chunk(b"IEND", b""))
    return b"".join(parts)


def _chunk(kind: bytes, data: bytes) -> bytes:
    return (struct.pack(">I", len(data)) + kind + data
            + struct.pack(">I", zlib.crc32(data, zlib.crc32(kind))))


__all__ = ["png_bytes"]
