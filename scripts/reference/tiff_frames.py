"""Detector-frame TIFF files in the layouts lab and C-arm systems write: LZW and PackBits
compression, horizontal differencing, tiles, BigTIFF, either byte order.

tifffile (Debian python3-tifffile) lays out the files: strips or tiles, TIFF or BigTIFF, byte
order, predictor. Debian carries no imagecodecs, so tifffile cannot encode LZW or PackBits
itself; those pieces are encoded by libtiff through Pillow (Debian python3-pil): each piece's
bytes, as tifffile hands them over (file byte order, predictor applied), become one strip of an
8-bit image that libtiff compresses, and that strip is what tifffile writes. libtiff's LZW and
PackBits are the TIFF 6.0 codecs (sections 13 and 9); PackBits packs each row on its own, as
TIFF requires, because the 8-bit image has the piece's rows.

The frames (values a test can recompute): v(k, j, i) = (4099 k + 977 j + 131 i + (i j mod 17))
mod 65536 for frame k, row j, column i; 3 frames of 20 rows of 24 columns, as uint16, or as
float32 v / 7 - 100. "large" is one 96 x 128 uint16 frame of numpy.random.RandomState(5) values,
long enough for LZW codes of 12 bits and a Clear code.

Every classic-TIFF file is read back by libtiff (Pillow) and, where it can decode, by tifffile,
and must give the frames it was made from.

Usage: python3 scripts/reference/tiff_frames.py <output folder>
"""
import io
import os
import sys

import numpy as np
import tifffile
from PIL import Image, TiffImagePlugin


def frames(dtype="uint16"):
    k, j, i = np.meshgrid(np.arange(3), np.arange(20), np.arange(24), indexing="ij")
    v = (4099 * k + 977 * j + 131 * i + (i * j) % 17) % 65536
    return v.astype(np.uint16) if dtype == "uint16" else (v / 7 - 100).astype(np.float32)


def large():
    return np.random.RandomState(5).randint(0, 65536, size=(96, 128)).astype(np.uint16)


def libtiff_encoder(pillow_name):
    """A tifffile compressor whose bytes come from libtiff (through Pillow)."""

    def encode(data, *args, **kwargs):
        a = np.ascontiguousarray(data)
        rows = a.shape[0]
        raw = a.tobytes()
        image = Image.frombytes("L", (len(raw) // rows, rows), raw)
        buffer = io.BytesIO()
        image.save(buffer, format="TIFF", compression=pillow_name)
        written = tifffile.TiffFile(io.BytesIO(buffer.getvalue())).pages[0]
        if len(written.dataoffsets) != 1:
            raise SystemExit("libtiff split a piece into %d strips" % len(written.dataoffsets))
        start = written.dataoffsets[0]
        return buffer.getvalue()[start : start + written.databytecounts[0]]

    return encode


VARIANTS = [
    # name, data, tifffile options
    ("stack-plain.tif", frames, dict(rowsperstrip=8)),
    ("stack-lzw.tif", frames, dict(compression="lzw", rowsperstrip=8)),
    ("stack-lzw-predictor-be.tif", frames, dict(compression="lzw", predictor=True, byteorder=">", rowsperstrip=8)),
    ("stack-packbits.tif", frames, dict(compression="packbits", rowsperstrip=8)),
    ("stack-tiled-plain.tif", frames, dict(tile=(16, 16))),
    ("stack-tiled-lzw.tif", frames, dict(compression="lzw", tile=(16, 16))),
    ("stack-bigtiff.tif", frames, dict(bigtiff=True, rowsperstrip=8)),
    ("stack-bigtiff-deflate.tif", frames, dict(bigtiff=True, compression="zlib", predictor=True)),
    ("stack-bigtiff-packbits-be.tif", frames, dict(bigtiff=True, compression="packbits", byteorder=">", rowsperstrip=8)),
    ("stack-bigtiff-tiled-lzw-predictor.tif", frames, dict(bigtiff=True, compression="lzw", predictor=True, tile=(16, 16))),
    ("float-lzw.tif", lambda: frames("float32"), dict(compression="lzw", rowsperstrip=8)),
    ("large-plain.tif", large, dict()),
    ("large-lzw.tif", large, dict(compression="lzw")),
]


def check(path, data, options):
    """The file read back by libtiff (Pillow; classic TIFF) and tifffile (what it can decode) gives `data`."""
    stack = data.reshape((-1,) + data.shape[-2:])
    if not options.get("bigtiff"):
        with Image.open(path) as im:
            for k in range(stack.shape[0]):
                im.seek(k)
                back = np.array(im)
                if not np.array_equal(back.astype(stack.dtype), stack[k]):
                    raise SystemExit("%s: libtiff reads frame %d differently" % (path, k))
    if options.get("compression") in (None, "zlib", "packbits"):
        if not np.array_equal(tifffile.imread(path).reshape(stack.shape), stack):
            raise SystemExit("%s: tifffile reads it differently" % path)


def main(out):
    os.makedirs(out, exist_ok=True)
    TiffImagePlugin.WRITE_LIBTIFF = True
    codecs = tifffile.TIFF.COMPRESSORS._codecs
    codecs[5] = libtiff_encoder("tiff_lzw")
    codecs[32773] = libtiff_encoder("packbits")
    for name, make, options in VARIANTS:
        data = make()
        path = os.path.join(out, name)
        tifffile.imwrite(path, data, photometric="minisblack", metadata=None, software=False, **options)
        check(path, data, options)


if __name__ == "__main__":
    if len(sys.argv) != 2:
        raise SystemExit(__doc__)
    main(sys.argv[1])
