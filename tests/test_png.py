"""The plots' PNG writer (cvsim.png) against Pillow's PNG decoder, an independent
reading of the format (W3C, Portable Network Graphics (PNG) Specification, 2nd ed., 2003;
ISO/IEC 15948:2004)."""
import io
import struct
import zlib

import numpy as np
import pytest
from PIL import Image

from cvsim.png import png_bytes


def _decode(data: bytes) -> Image.Image:
    image = Image.open(io.BytesIO(data))
    image.load()  # Pillow checks every chunk's CRC-32 and the zlib stream here
    return image


@pytest.mark.parametrize("shape", [(1, 1, 3), (1, 7, 4), (13, 1, 3), (37, 53, 3), (64, 48, 4)])
def test_random_pixels_read_back_exactly(shape):
    # random bytes: every difference between rows wraps modulo 256 somewhere
    pixels = np.random.default_rng(7).integers(0, 256, shape, dtype=np.uint8)
    image = _decode(png_bytes(pixels))
    assert image.mode == ("RGB" if shape[2] == 3 else "RGBA")
    assert image.size == (shape[1], shape[0])
    assert np.array_equal(np.asarray(image), pixels)


def test_opaque_image_is_written_without_alpha_and_reads_back():
    pixels = np.full((20, 30, 4), 255, dtype=np.uint8)
    pixels[5:9, 3:25, :3] = (0, 114, 178)
    data = png_bytes(pixels)
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    assert data[12:16] == b"IHDR" and data[25] == 2  # colour type 2: truecolour (sec. 11.2.2)
    image = _decode(data)
    assert image.mode == "RGB"
    assert np.array_equal(np.asarray(image), pixels[:, :, :3])


def test_alpha_kept_when_not_opaque():
    pixels = np.full((4, 4, 4), 255, dtype=np.uint8)
    pixels[1, 2, 3] = 0
    data = png_bytes(pixels)
    assert data[25] == 6  # truecolour with alpha
    assert np.array_equal(np.asarray(_decode(data)), pixels)


def test_resolution_and_text_read_back():
    pixels = np.zeros((3, 5, 3), dtype=np.uint8)
    image = _decode(png_bytes(pixels, dpi=150, text={"Software": "cvsim test (Matplotlib x)"}))
    # pHYs holds whole pixels per metre: 150 dpi is 5906 per metre, read back as 150.01 dpi
    assert image.info["dpi"] == pytest.approx((150.0, 150.0), abs=0.02)
    assert image.info["Software"] == "cvsim test (Matplotlib x)"


def test_rows_are_up_filtered():
    """The IDAT stream holds each row less the row above it (filter type 2, sec. 9.2),
    each row led by its filter type byte; the first row less a row of zeros."""
    pixels = np.array([[[10, 20, 30], [200, 100, 0]],
                       [[5, 20, 40], [250, 90, 1]]], dtype=np.uint8)
    data = png_bytes(pixels)
    at, idat = 8, None
    while at < len(data):
        length, kind = struct.unpack(">I4s", data[at:at + 8])
        if kind == b"IDAT":
            idat = data[at + 8:at + 8 + length]
        at += 12 + length
    raw = zlib.decompress(idat)
    assert raw == bytes([2, 10, 20, 30, 200, 100, 0,
                         2, 251, 0, 10, 50, 246, 1])  # 5 - 10 = -5 = 251 modulo 256


@pytest.mark.parametrize("bad", [np.zeros((2, 2, 3), dtype=np.float64),
                                 np.zeros((2, 2), dtype=np.uint8),
                                 np.zeros((2, 2, 2), dtype=np.uint8),
                                 np.zeros((0, 2, 3), dtype=np.uint8)])
def test_refuses_what_is_not_an_image(bad):
    with pytest.raises(ValueError):
        png_bytes(bad)
