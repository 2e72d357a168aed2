"""Reading PNG files with the standard library: size, and whether the picture has content."""

from __future__ import annotations

import struct
import zlib
from pathlib import Path

SIGNATURE = b"\x89PNG\r\n\x1a\n"


def png_info(data: bytes) -> tuple[int, int, int]:
    """``(width, height, distinct byte values in the decompressed pixel data)``."""
    assert data[:8] == SIGNATURE, "not a PNG file"
    pos, width, height, idat = 8, 0, 0, b""
    while pos < len(data):
        (length,) = struct.unpack(">I", data[pos:pos + 4])
        kind = data[pos + 4:pos + 8]
        body = data[pos + 8:pos + 8 + length]
        if kind == b"IHDR":
            width, height = struct.unpack(">II", body[:8])
        elif kind == b"IDAT":
            idat += body
        pos += 12 + length
    return width, height, len(set(zlib.decompress(idat)))


def assert_nontrivial_png(path: Path, width: int | None = None,
                          height: int | None = None) -> None:
    """A real picture: a PNG of the expected size with more than a few distinct values."""
    data = path.read_bytes()
    w, h, distinct = png_info(data)
    assert len(data) > 20_000, f"{path} is only {len(data)} bytes"
    if width is not None:
        assert w == width
    if height is not None:
        assert h == height
    assert distinct > 50, f"{path} looks blank ({distinct} distinct byte values)"
