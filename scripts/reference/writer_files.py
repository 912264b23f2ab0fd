"""Image and projection files written by independent, general-purpose writers, for the readers'
tests: tifffile for TIFF, numpy's bytes with Python's gzip and zlib for NRRD and MetaImage.

Writes into <output folder>:
- tiff/<variant>.tif (or tiff/frames/f00..f02.tif): a 3 x 19 x 21 stack of one sample type
  in one layout, and tiff/<variant>.f32: the values tifffile was given, little-endian float32;
- tiff/fuzz-{zlib,big-endian,tiles}.tif: small stacks the hostile-input tests mutate;
- nrrd/v.nrrd (big-endian int16, gzip, 3D) with v.f32, nrrd/d.nhdr + d.raw (detached float64
  data after 8 bytes to skip) with d.f32, metaimage/m.mhd + m.raw (uint16, MSB first) and
  metaimage/z.mha (zlib-compressed float32) with m.f32.

Usage: python3 scripts/reference/writer_files.py <output folder>
"""
import gzip
import os
import sys
import zlib

import numpy as np
import tifffile

# name: (dtype, keyword arguments of tifffile.imwrite; None = one file per frame)
TIFF_VARIANTS = {
    "uint16-le": (np.uint16, {}),
    "int16-be": (np.int16, {"byteorder": ">"}),
    "uint8": (np.uint8, {}),
    "float32-be": (np.float32, {"byteorder": ">"}),
    "float32-strips": (np.float32, {"rowsperstrip": 2}),
    "uint16-deflate": (np.uint16, {"compression": "zlib"}),
    "uint16-deflate-predictor": (np.uint16, {"compression": "zlib", "predictor": True}),
    "uint16-tiles": (np.uint16, {"tile": (16, 16)}),
    "frames": (np.uint16, None),
}


def tiff_files(out):
    folder = os.path.join(out, "tiff")
    os.makedirs(folder, exist_ok=True)
    for name, (dtype, kwargs) in TIFF_VARIANTS.items():
        rng = np.random.default_rng(5)
        a = (rng.random((3, 19, 21)) * 250).astype(dtype)
        if kwargs is None:
            os.makedirs(os.path.join(folder, name), exist_ok=True)
            for k in range(a.shape[0]):
                tifffile.imwrite(os.path.join(folder, name, "f%02d.tif" % k), a[k], photometric="minisblack")
        else:
            tifffile.imwrite(os.path.join(folder, name + ".tif"), a, photometric="minisblack", **kwargs)
        a.astype("<f4").tofile(os.path.join(folder, name + ".f32"))
    a = (np.arange(3 * 9 * 10) % 251).reshape(3, 9, 10).astype(np.uint16)
    tifffile.imwrite(os.path.join(folder, "fuzz-zlib.tif"), a, photometric="minisblack", compression="zlib", predictor=True)
    tifffile.imwrite(os.path.join(folder, "fuzz-big-endian.tif"), a.astype(np.int16), photometric="minisblack", byteorder=">", rowsperstrip=4)
    tifffile.imwrite(os.path.join(folder, "fuzz-tiles.tif"), a, photometric="minisblack", tile=(16, 16))


def nrrd_files(out):
    folder = os.path.join(out, "nrrd")
    os.makedirs(folder, exist_ok=True)
    a = (np.arange(4 * 3 * 2).reshape(2, 3, 4) * 37 - 400).astype(">i2")
    hdr = ("NRRD0005\ntype: short\ndimension: 3\nsizes: 4 3 2\nendian: big\nencoding: gzip\n"
           "space directions: (0.5,0,0) (0,0.5,0) (0,0,2)\nspace origin: (-1,-2,3)\n\n")
    with open(os.path.join(folder, "v.nrrd"), "wb") as f:
        f.write(hdr.encode() + gzip.compress(a.tobytes(), mtime=0))
    a.astype("<f4").tofile(os.path.join(folder, "v.f32"))
    d = np.linspace(-1, 1, 30).reshape(5, 6).astype("<f8")
    with open(os.path.join(folder, "d.raw"), "wb") as f:
        f.write(b"JUNKJUNK" + d.tobytes())
    with open(os.path.join(folder, "d.nhdr"), "w") as f:
        f.write("NRRD0004\ntype: double\ndimension: 2\nsizes: 6 5\nencoding: raw\nendian: little\nbyte skip: 8\ndata file: d.raw\n")
    d.astype("<f4").tofile(os.path.join(folder, "d.f32"))


def metaimage_files(out):
    folder = os.path.join(out, "metaimage")
    os.makedirs(folder, exist_ok=True)
    a = (np.arange(7 * 4) * 911 % 65535).reshape(4, 7).astype(">u2")
    with open(os.path.join(folder, "m.raw"), "wb") as f:
        f.write(a.tobytes())
    with open(os.path.join(folder, "m.mhd"), "w") as f:
        f.write("ObjectType = Image\nNDims = 2\nBinaryData = True\nBinaryDataByteOrderMSB = True\nElementSpacing = 0.25 0.5\n"
                "Offset = 1 2\nDimSize = 7 4\nElementType = MET_USHORT\nElementDataFile = m.raw\n")
    z = zlib.compress(a.astype("<f4").tobytes())
    head = ("ObjectType = Image\nNDims = 2\nCompressedData = True\nCompressedDataSize = %d\nDimSize = 7 4\n"
            "ElementType = MET_FLOAT\nElementDataFile = LOCAL\n" % len(z))
    with open(os.path.join(folder, "z.mha"), "wb") as f:
        f.write(head.encode() + z)
    a.astype("<f4").tofile(os.path.join(folder, "m.f32"))


def main(out):
    os.makedirs(out, exist_ok=True)
    tiff_files(out)
    nrrd_files(out)
    metaimage_files(out)


if __name__ == "__main__":
    if len(sys.argv) != 2:
        raise SystemExit(__doc__)
    main(sys.argv[1])
