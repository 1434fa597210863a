"""Headless Chromium for the end-to-end tests of keel's HTML pages: one start of the browser
renders a page to a PNG screenshot and returns its DOM; a small PNG reader (zlib and numpy) counts
the pixels that differ from the page's ground."""
import os
import shutil
import struct
import subprocess
import tempfile
import zlib

import numpy as np


def find_chromium():
    return shutil.which("chromium") or shutil.which("chromium-browser")


def render(chromium, html, png, window="900,3400", dump_dom=False):
    """Screenshot of the page `html` into `png`; its DOM after loading when `dump_dom`."""
    profile = tempfile.mkdtemp(prefix="keel-shot-")
    try:
        p = subprocess.run([chromium, "--headless", "--no-sandbox", "--disable-gpu",
                            "--disable-background-networking", "--disable-component-update",
                            "--disable-sync", "--no-first-run", "--hide-scrollbars",
                            f"--user-data-dir={profile}", f"--screenshot={png}",
                            f"--window-size={window}", *(["--dump-dom"] if dump_dom else []),
                            "file://" + os.path.abspath(html)],
                           capture_output=True, timeout=180, check=True)
    finally:
        shutil.rmtree(profile, ignore_errors=True)
    return p.stdout.decode("utf-8") if dump_dom else None


def png_pixels(path):
    """The pixels of an 8-bit RGB or RGBA PNG (not interlaced) as a height x width x channels
    array (PNG specification, filters 0 to 4)."""
    with open(path, "rb") as f:
        data = f.read()
    assert data[:8] == b"\x89PNG\r\n\x1a\n", "not a PNG file"
    pos, idat = 8, b""
    while pos < len(data):
        n, = struct.unpack(">I", data[pos:pos + 4])
        kind, body = data[pos + 4:pos + 8], data[pos + 8:pos + 8 + n]
        if kind == b"IHDR":
            width, height, depth, colour, _, _, interlace = struct.unpack(">IIBBBBB", body)
            assert depth == 8 and colour in (2, 6) and interlace == 0, "an 8-bit RGB(A) PNG"
        elif kind == b"IDAT":
            idat += body
        pos += 12 + n
    bpp = 3 if colour == 2 else 4
    stride = width * bpp
    raw = np.frombuffer(zlib.decompress(idat), dtype=np.uint8).reshape(height, stride + 1)
    out = np.zeros((height, stride), dtype=np.uint8)
    prev = np.zeros(stride, dtype=np.int64)
    for y in range(height):
        kind, line = raw[y, 0], raw[y, 1:].astype(np.int64)
        if kind == 0:
            row = line
        elif kind == 1:  # Sub: a running sum per channel
            row = np.cumsum(line.reshape(width, bpp), axis=0).reshape(stride) % 256
        elif kind == 2:  # Up
            row = (line + prev) % 256
        else:  # Average and Paeth depend on the byte just decoded: byte by byte
            row = line.tolist()
            up = prev.tolist()
            if kind == 3:
                for i in range(stride):
                    row[i] = (row[i] + ((row[i - bpp] if i >= bpp else 0) + up[i]) // 2) & 255
            else:
                for i in range(bpp):
                    row[i] = (row[i] + up[i]) & 255  # left and upper left are 0: Paeth gives up
                for i in range(bpp, stride):
                    a, b, c = row[i - bpp], up[i], up[i - bpp]
                    pa, pb, pc = abs(b - c), abs(a - c), abs(a + b - 2 * c)
                    row[i] = (row[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
            row = np.array(row, dtype=np.int64)
        out[y] = row
        prev = row
    return out.reshape(height, width, bpp)[:, :, :3]


def inked_pixels(path):
    """How many pixels of the PNG differ from its most common colour (the page's ground)."""
    px = png_pixels(path).reshape(-1, 3)
    packed = (px[:, 0].astype(np.int64) << 16) | (px[:, 1].astype(np.int64) << 8) | px[:, 2]
    values, counts = np.unique(packed, return_counts=True)
    ground = values[np.argmax(counts)]
    return int((packed != ground).sum()), len(packed)
